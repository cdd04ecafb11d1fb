//! Sweep blocks in the `heft-check/1` JSON (`sweeps`): each point's input,
//! shown results and checks, and each check's margin, values in the units
//! `heft check` shows them in.

use schemars::JsonSchema;
use serde::Serialize;

use super::json_words;
use crate::eval::{Evaluated, Margin, SweepReport};
use crate::units::{DisplayUnit, Value};

/// A sweep block's study.
#[derive(Serialize, JsonSchema)]
pub struct JsonSweep<'a> {
    /// The line of its `sweep`.
    line: usize,
    /// The head as written, without its label and colon.
    title: &'a str,
    /// Its label, if written.
    label: Option<&'a str>,
    /// The swept input's name.
    variable: &'a str,
    /// The unit the input's values are in.
    unit: &'a str,
    /// Whether it ran (false: a finding says why; `points` is empty).
    evaluated: bool,
    /// With `step`: the length of the last, shorter interval when the
    /// range is not a whole number of steps (in `unit`).
    short_last_step: Option<f64>,
    /// The results shown at every point.
    shown: Vec<JsonSweepColumn<'a>>,
    /// The points, in sweep order.
    points: Vec<JsonSweepPoint>,
    /// Each check's margin over the range, in check order.
    margins: Vec<JsonMargin>,
}

/// A shown result.
#[derive(Serialize, JsonSchema)]
struct JsonSweepColumn<'a> {
    /// The expression as written.
    expression: &'a str,
    /// The unit its values are in.
    unit: &'a str,
}

/// The sheet at one value of the input.
#[derive(Serialize, JsonSchema)]
struct JsonSweepPoint {
    /// The input's value.
    input: f64,
    /// Each shown result's value (null where it could not be computed or
    /// is a vector).
    shown: Vec<Option<f64>>,
    /// Each check at this point, in check order.
    checks: Vec<JsonSweepCheck>,
}

/// A check at one point.
#[derive(Serialize, JsonSchema)]
struct JsonSweepCheck {
    /// Its verdict at this point (at the worst case of the tolerances).
    status: json_words::CheckStatus,
    /// True for `passed`, false for `failed`, else null: never a pass
    /// where it could not be established.
    passed: Option<bool>,
    /// The utilization that decides it (null where not established).
    utilization: Option<f64>,
}

/// A check's margin over the range.
#[derive(Serialize, JsonSchema)]
struct JsonMargin {
    /// The check's line.
    check_line: usize,
    /// What the range shows.
    kind: json_words::MarginKind,
    /// The margin in words, as `heft check` prints it.
    text: String,
    /// Points where the check could not be established.
    unknown_points: usize,
    /// Where its verdict changes between neighbouring points.
    crossings: Vec<JsonCrossing>,
}

/// Where a check's verdict changes, and the input at 100 % utilization.
#[derive(Serialize, JsonSchema)]
struct JsonCrossing {
    /// The neighbouring points' input values that bracket it.
    between: [f64; 2],
    /// Whether the check passes on the side of smaller input values.
    passes_below: bool,
    /// Whether the margin was verified by evaluating the sheet there.
    verified: bool,
    /// The input value at 100 % utilization, when verified (else null).
    input: Option<f64>,
    /// The utilization the sheet gives there, when verified.
    utilization: Option<f64>,
    /// Why it could not be verified.
    reason: Option<String>,
}

/// A value in a display unit, as JSON prints it.
fn shown_value(value: Option<Value>, display: &DisplayUnit) -> Option<f64> {
    value
        .and_then(|v| v.scalar())
        .map(|q| display.rounded_value_of(q.si))
}

/// Every sweep of the sheet.
pub fn json_sweeps(evaluated: &Evaluated) -> Vec<JsonSweep<'_>> {
    let lines = &evaluated.lines;
    let sig_figs = evaluated.header().sig_figs;
    let check_lines: Vec<usize> = evaluated
        .checks
        .iter()
        .map(|check| lines.line_of(check.span.start()) + 1)
        .collect();
    evaluated
        .sweeps
        .iter()
        .map(|sweep| JsonSweep {
            line: lines.line_of(sweep.head.start()) + 1,
            title: &sweep.title,
            label: sweep.label.as_deref(),
            variable: &sweep.variable_name,
            unit: &sweep.display.text,
            evaluated: !sweep.points.is_empty(),
            short_last_step: sweep
                .short_last_step
                .map(|short| sweep.display.rounded_value_of(short)),
            shown: sweep
                .shown
                .iter()
                .map(|column| JsonSweepColumn {
                    expression: &column.label,
                    unit: &column.display.text,
                })
                .collect(),
            points: sweep
                .points
                .iter()
                .map(|point| JsonSweepPoint {
                    input: sweep.display.rounded_value_of(point.input),
                    shown: sweep
                        .shown
                        .iter()
                        .zip(&point.shown)
                        .map(|(column, value)| shown_value(*value, &column.display))
                        .collect(),
                    checks: point
                        .checks
                        .iter()
                        .map(|check| JsonSweepCheck {
                            status: check.status.into(),
                            passed: check.passed(),
                            utilization: check.utilization.map(crate::units::correctly_rounded),
                        })
                        .collect(),
                })
                .collect(),
            margins: sweep
                .margins
                .iter()
                .zip(&check_lines)
                .map(|(margin, &check_line)| json_margin(sweep, margin, check_line, sig_figs))
                .collect(),
        })
        .collect()
}

/// One check's margin.
fn json_margin(
    sweep: &SweepReport,
    margin: &Margin,
    check_line: usize,
    sig_figs: u32,
) -> JsonMargin {
    let (unknown_points, crossings) = match margin {
        Margin::PassesThroughout | Margin::FailsThroughout => (0, &[][..]),
        Margin::Crossings(crossings) => (0, crossings.as_slice()),
        Margin::NotEstablished {
            unknown_points,
            crossings,
        } => (*unknown_points, crossings.as_slice()),
    };
    let value = |si: f64| sweep.display.rounded_value_of(si);
    JsonMargin {
        check_line,
        kind: margin.into(),
        text: crate::present::margin_text(sweep, margin, sig_figs),
        unknown_points,
        crossings: crossings
            .iter()
            .map(|crossing| JsonCrossing {
                between: [value(crossing.between.0), value(crossing.between.1)],
                passes_below: crossing.passes_below,
                verified: crossing.at.is_ok(),
                input: crossing.at.as_ref().ok().map(|m| value(m.input)),
                utilization: crossing
                    .at
                    .as_ref()
                    .ok()
                    .map(|m| crate::units::correctly_rounded(m.utilization)),
                reason: crossing.at.as_ref().err().cloned(),
            })
            .collect(),
    }
}
