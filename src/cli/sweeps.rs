//! Sweep blocks on the command line: each sweep's table (the input, the
//! shown results, every check's utilization and verdict at each point)
//! and each check's margin, in `heft check`; and a sweep's plot for
//! `heft check --svg --run LINE`.

use std::fmt::Write as _;

use super::check::{BOLD, DIM, FAIL, PASS, Painter};
use crate::base::visible::visible;
use crate::eval::{CheckStatus, Evaluated, Margin};
use crate::present::{margin_text, sweep_utilization, sweep_value, sweep_verdict};
use crate::units::format_significant;

/// Every sweep's table and margins, after the load cases.
pub(super) fn write_sweeps(out: &mut String, evaluated: &Evaluated, painter: &Painter) {
    let sig_figs = evaluated.header().sig_figs;
    for sweep in &evaluated.sweeps {
        let line = evaluated.lines.line_of(sweep.head.start()) + 1;
        let label = sweep
            .label
            .as_deref()
            .map(|l| format!("  {}", painter.paint(DIM, &visible(l))))
            .unwrap_or_default();
        let _ = writeln!(
            out,
            "\n{} (line {line}){label}",
            painter.paint(BOLD, &visible(&sweep.title))
        );
        if sweep.points.is_empty() {
            let _ = writeln!(out, "  not run: see the findings");
            continue;
        }
        let mut notes = vec![format!(
            "{} points; a study of the sheet as written: it changes no verdict",
            sweep.points.len()
        )];
        if let Some(short) = sweep.short_last_step {
            notes.push(format!(
                "the range is not a whole number of steps: the last interval is {}",
                sweep_value(sweep, short, sig_figs)
            ));
        }
        let _ = writeln!(out, "  {}", painter.paint(DIM, &notes.join("; ")));
        let unit = |text: &str| {
            if text.is_empty() {
                String::new()
            } else {
                format!(" [{text}]")
            }
        };
        let mut headings = vec![format!(
            "{}{}",
            sweep.variable_name,
            unit(&sweep.display.text)
        )];
        headings.extend(
            sweep
                .shown
                .iter()
                .map(|shown| format!("{}{}", shown.label, unit(&shown.display.text))),
        );
        headings.extend((1..=evaluated.checks.len()).map(|n| format!("check {n}")));
        // Every row's texts first, so each column is as wide as its widest.
        let rows: Vec<Vec<(String, CheckStatus)>> = sweep
            .points
            .iter()
            .map(|point| {
                let mut cells = vec![(
                    format_significant(sweep.display.value_of(point.input), sig_figs),
                    CheckStatus::Passed,
                )];
                cells.extend(sweep.shown.iter().zip(&point.shown).map(|(shown, value)| {
                    let text = value.map_or_else(
                        || "unknown".to_string(),
                        |value| match value.scalar() {
                            Some(q) => {
                                crate::units::format_figures(shown.display.value_of(q.si), sig_figs)
                            }
                            None => crate::eval::format_value(value, &shown.display, sig_figs),
                        },
                    );
                    (text, CheckStatus::Passed)
                }));
                cells.extend(point.checks.iter().map(|check| {
                    (
                        format!("{} {}", sweep_utilization(check), sweep_verdict(check)),
                        check.status,
                    )
                }));
                cells
            })
            .collect();
        let widths: Vec<usize> = headings
            .iter()
            .enumerate()
            .map(|(column, heading)| {
                rows.iter()
                    .filter_map(|row| row.get(column))
                    .map(|(text, _)| text.chars().count())
                    .chain(std::iter::once(heading.chars().count()))
                    .max()
                    .unwrap_or(0)
                    .max(8)
                    + 2
            })
            .collect();
        let mut header = String::from(" ");
        for (heading, width) in headings.iter().zip(&widths) {
            let _ = write!(header, "{:>width$}", visible(heading));
        }
        let _ = writeln!(out, "{}", painter.paint(DIM, &header));
        let first_check = 1 + sweep.shown.len();
        for row in &rows {
            let mut line = String::from(" ");
            for (column, ((text, status), width)) in row.iter().zip(&widths).enumerate() {
                let padded = format!("{text:>width$}");
                if column < first_check {
                    line.push_str(&padded);
                } else {
                    let style = match status {
                        CheckStatus::Passed => DIM,
                        _ => FAIL,
                    };
                    line.push_str(&painter.paint(style, &padded));
                }
            }
            let _ = writeln!(out, "{line}");
        }
        for (number, (check, margin)) in evaluated.checks.iter().zip(&sweep.margins).enumerate() {
            let style = match margin {
                Margin::PassesThroughout => PASS,
                Margin::FailsThroughout | Margin::NotEstablished { .. } => FAIL,
                Margin::Crossings(_) => BOLD,
            };
            let _ = writeln!(
                out,
                "  check {}: {} {} {}: {}",
                number + 1,
                visible(&check.lhs_text),
                check.comparison.symbol(),
                visible(&check.rhs_text),
                painter.paint(style, &margin_text(sweep, margin, sig_figs))
            );
        }
    }
}

/// The plot a `--svg` request means when it is for a sweep: `--run LINE`
/// naming a sweep's line, or no line given and no simulate block to plot.
/// `None` when the request is for a simulate run.
pub(super) fn sweep_svg(
    evaluated: &Evaluated,
    line: Option<usize>,
) -> Option<Result<String, String>> {
    let lines: Vec<usize> = evaluated
        .sweeps
        .iter()
        .map(|sweep| evaluated.lines.line_of(sweep.head.start()) + 1)
        .collect();
    let index = match line {
        Some(line) => lines.iter().position(|&l| l == line)?,
        None if evaluated.runs.is_empty() && !lines.is_empty() => 0,
        None => return None,
    };
    Some(
        crate::plot::sweep_svg(evaluated, index)
            .ok_or_else(|| "the sweep did not run, so there is nothing to plot".to_string()),
    )
}
