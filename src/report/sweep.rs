//! A sweep block in the report, where it is written: what was swept, the
//! table of the points (the input, the shown results, each check's
//! utilization and verdict), the plot, and each check's margin.

use super::model::{Block, Callout, Figure, Piece, Rich, Table, Tone};
use crate::eval::{Evaluated, Margin};
use crate::present::{margin_text, sweep_utilization, sweep_value, sweep_verdict};

/// The blocks of sweep `index`, or nothing if there is no such sweep.
pub(super) fn sweep_blocks(evaluated: &Evaluated, index: usize) -> Vec<Block> {
    let Some(sweep) = evaluated.sweeps.get(index) else {
        return Vec::new();
    };
    let sig_figs = evaluated.header().sig_figs;
    let mut intro = Rich::text("Sweep: ");
    intro.push(Piece::Code(sweep.title.clone()));
    if let Some(label) = &sweep.label {
        intro.push_text(&format!(" ({label})"));
    }
    let spacing = sweep
        .short_last_step
        .map(|short| {
            format!(
                " The range is not a whole number of steps: the last interval, to the end of the range, is {}.",
                sweep_value(sweep, short, sig_figs)
            )
        })
        .unwrap_or_default();
    intro.push_text(&format!(
        ". The sheet as written, evaluated at {} values of {} (each a load case setting only that input); a study, which changes no verdict.{spacing}",
        sweep.points.len(),
        sweep.variable_name
    ));
    let mut blocks = vec![Block::Paragraph(intro)];
    if sweep.points.is_empty() {
        blocks.push(Block::Callout(Callout {
            tone: Tone::Bad,
            text: Rich::text("The sweep could not run: see the findings."),
        }));
        return blocks;
    }
    let mut columns = vec![if sweep.display.text.is_empty() {
        sweep.variable_name.clone()
    } else {
        format!("{} [{}]", sweep.variable_name, sweep.display.text)
    }];
    columns.extend(sweep.shown.iter().map(|shown| {
        if shown.display.text.is_empty() {
            shown.label.clone()
        } else {
            format!("{} [{}]", shown.label, shown.display.text)
        }
    }));
    columns.extend((1..=evaluated.checks.len()).map(|n| format!("check {n}")));
    let rows = sweep
        .points
        .iter()
        .map(|point| {
            let mut cells = vec![Rich::text(crate::units::format_significant(
                sweep.display.value_of(point.input),
                sig_figs,
            ))];
            cells.extend(sweep.shown.iter().zip(&point.shown).map(|(shown, value)| {
                Rich::text(value.map_or_else(
                    || "unknown".to_string(),
                    |value| match value.scalar() {
                        Some(q) => {
                            crate::units::format_figures(shown.display.value_of(q.si), sig_figs)
                        }
                        None => crate::eval::format_value(value, &shown.display, sig_figs),
                    },
                ))
            }));
            cells.extend(point.checks.iter().map(|check| {
                Rich::text(format!(
                    "{} {}",
                    sweep_utilization(check),
                    sweep_verdict(check)
                ))
            }));
            cells
        })
        .collect();
    blocks.push(Block::Table(Table { columns, rows }));
    if let Some(svg) = crate::plot::sweep_svg(evaluated, index) {
        blocks.push(Block::Figure(Figure {
            svg,
            caption: format!("Utilization against {}", sweep.variable_name),
        }));
    }
    for (number, (check, margin)) in evaluated.checks.iter().zip(&sweep.margins).enumerate() {
        let tone = match margin {
            Margin::PassesThroughout => Tone::Good,
            Margin::FailsThroughout => Tone::Bad,
            Margin::Crossings(_) => Tone::Neutral,
            Margin::NotEstablished { .. } => Tone::Warning,
        };
        let mut text = Rich::text(format!("Check {}: ", number + 1));
        text.push(Piece::Code(format!(
            "{} {} {}",
            check.lhs_text,
            check.comparison.symbol(),
            check.rhs_text
        )));
        text.push_text(&format!(" {}.", margin_text(sweep, margin, sig_figs)));
        blocks.push(Block::Callout(Callout { tone, text }));
    }
    blocks
}
