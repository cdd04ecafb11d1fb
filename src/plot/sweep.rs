//! The plot of a sweep: each check's utilization against the swept input,
//! with the 100 % line and each verified margin marked, then each shown
//! result, one panel each on the input's axis.

use super::svg::{Panel, PlotSpec, render};
use crate::eval::{Evaluated, Margin};
use crate::units::Value;

/// The SVG plot of sweep `index`, or `None` if there is no such sweep or
/// it has no points.
pub fn sweep_svg(evaluated: &Evaluated, index: usize) -> Option<String> {
    let sweep = evaluated.sweeps.get(index)?;
    let (first, last) = (sweep.points.first()?, sweep.points.last()?);
    let x = |si: f64| sweep.display.value_of(si);
    let mut panels: Vec<Panel> = Vec::new();
    for (check, result) in evaluated.checks.iter().enumerate() {
        let points: Vec<(f64, f64)> = sweep
            .points
            .iter()
            .map(|point| {
                let u = point.checks.get(check).and_then(|c| c.utilization);
                (x(point.input), u.map_or(f64::NAN, |u| u * 100.0))
            })
            .collect();
        if points.iter().all(|p| !p.1.is_finite()) {
            continue; // no utilization anywhere: a check against zero
        }
        let label = result.label.clone().unwrap_or_else(|| {
            format!(
                "{} {} {}",
                result.lhs_text,
                result.comparison.symbol(),
                result.rhs_text
            )
        });
        panels.push(Panel {
            label: format!("utilization [%] of {label}"),
            points,
            guides: vec![(100.0, "100 %".to_string())],
        });
    }
    for (column, shown) in sweep.shown.iter().enumerate() {
        let points: Vec<(f64, f64)> = sweep
            .points
            .iter()
            .map(|point| {
                let value = match point.shown.get(column).copied().flatten() {
                    Some(Value::Scalar(q)) => shown.display.value_of(q.si),
                    _ => f64::NAN,
                };
                (x(point.input), value)
            })
            .collect();
        if points.iter().all(|p| !p.1.is_finite()) {
            continue;
        }
        panels.push(Panel {
            label: if shown.display.text.is_empty() {
                shown.label.clone()
            } else {
                format!("{} [{}]", shown.label, shown.display.text)
            },
            points,
            guides: Vec::new(),
        });
    }
    if panels.is_empty() {
        return None;
    }
    let sig_figs = evaluated.header().sig_figs;
    let mut markers: Vec<(f64, String)> = sweep
        .margins
        .iter()
        .enumerate()
        .flat_map(|(check, margin)| {
            let crossings = match margin {
                Margin::Crossings(crossings) | Margin::NotEstablished { crossings, .. } => {
                    crossings.as_slice()
                }
                Margin::PassesThroughout | Margin::FailsThroughout => &[],
            };
            crossings
                .iter()
                .filter_map(|crossing| crossing.at.as_ref().ok())
                .map(move |margin| {
                    let shown = crate::present::sweep_value(sweep, margin.input, sig_figs);
                    (
                        x(margin.input),
                        format!("check {}: 100 % at {shown}", check + 1),
                    )
                })
        })
        .collect();
    markers.sort_by(|a, b| a.0.total_cmp(&b.0));
    let head = sweep.label.clone().unwrap_or_else(|| sweep.title.clone());
    let title = match &evaluated.header().title {
        Some(title) => format!("{title} — {head}"),
        None => head,
    };
    let (start, end) = (x(first.input), x(last.input));
    Some(render(&PlotSpec {
        title,
        time_label: if sweep.display.text.is_empty() {
            sweep.variable_name.clone()
        } else {
            format!("{} [{}]", sweep.variable_name, sweep.display.text)
        },
        time_range: (start.min(end), start.max(end)),
        panels,
        markers,
    }))
}
