//! Plots of simulate runs as SVG, for reports and the notebook: one panel
//! per plotted series, stacked on a shared time axis, with the run's events
//! marked. Reads the evaluated model only; returns the SVG as a string.

mod svg;
mod sweep;

use crate::eval::{Evaluated, RunStatus};

pub use svg::{Panel, PlotSpec, nice_ticks, render};
pub use sweep::sweep_svg;

/// The SVG plot of run `index` of an evaluated sheet (the series its
/// `plot` line chose, else every state), or `None` if there is no such run
/// or it produced no trajectory.
pub fn run_svg(evaluated: &Evaluated, index: usize) -> Option<String> {
    let run = evaluated.runs.get(index)?;
    if run.plot.is_empty() || !matches!(run.status, RunStatus::Reached | RunStatus::Stopped) {
        return None;
    }
    let head = run.title.clone();
    let title = match &evaluated.header().title {
        Some(title) => format!("{title} — {head}"),
        None => head,
    };
    let time_factor = run.time_display.si_factor;
    let panels = run
        .plot
        .iter()
        .map(|series| Panel {
            label: if series.column.display.text.is_empty() {
                series.column.label.clone()
            } else {
                format!("{} [{}]", series.column.label, series.column.display.text)
            },
            points: series
                .points
                .iter()
                .map(|&(t, value)| (t / time_factor, series.column.display.value_of(value)))
                .collect(),
            guides: Vec::new(),
        })
        .collect();
    let mut markers: Vec<(f64, String)> = run
        .events
        .iter()
        .flat_map(|event| {
            let label = event.name.clone().unwrap_or_else(|| {
                if event.stops {
                    "stop".to_string()
                } else {
                    event.condition.clone()
                }
            });
            event
                .times
                .iter()
                .take(20)
                .map(move |&t| (t / time_factor, label.clone()))
        })
        .collect();
    markers.sort_by(|a, b| a.0.total_cmp(&b.0));
    let time_label = evaluated.cell_at(run.time).name;
    let (start, end) = (
        run.trajectory.as_ref()?.start() / time_factor,
        run.trajectory.as_ref()?.end() / time_factor,
    );
    Some(render(&PlotSpec {
        title,
        time_label: if run.time_display.text.is_empty() {
            time_label.to_string()
        } else {
            format!("{time_label} [{}]", run.time_display.text)
        },
        time_range: (start, end),
        panels,
        markers,
    }))
}
