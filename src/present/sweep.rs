//! A sweep's facts in words, once for every output: a point's verdict, the
//! input's value as shown, and each check's margin over the range ("passes
//! up to x_cg = 1.134 m").

use crate::eval::{CheckStatus, Crossing, Margin, SweepCheck, SweepReport};
use crate::units::{format_significant, percent};

/// The swept input's value (SI) as shown: `1.134 m`.
pub fn sweep_value(sweep: &SweepReport, si: f64, sig_figs: u32) -> String {
    let number = format_significant(sweep.display.value_of(si), sig_figs);
    if sweep.display.text.is_empty() {
        number
    } else {
        format!("{number} {}", sweep.display.text)
    }
}

/// A check at a point of a sweep: `PASS`, `FAIL`, `UNKNOWN`, `ERROR` or
/// `BLOCKED` (never a pass where it could not be established).
pub fn sweep_verdict(check: &SweepCheck) -> &'static str {
    match check.status {
        CheckStatus::Passed => "PASS",
        CheckStatus::Failed => "FAIL",
        CheckStatus::Unknown => "UNKNOWN",
        CheckStatus::Error => "ERROR",
        CheckStatus::Blocked { .. } => "BLOCKED",
    }
}

/// A check's utilization at a point, `92.4 %`, or `—` where there is none.
pub fn sweep_utilization(check: &SweepCheck) -> String {
    check.utilization.map_or_else(|| "—".to_string(), percent)
}

/// A check's margin over the sweep in words: "passes up to x_cg =
/// 1.134 m", "passes from …", "passes over the whole range (13 points)",
/// "fails over the whole range", several crossings listed, or why a
/// margin could not be verified.
pub fn margin_text(sweep: &SweepReport, margin: &Margin, sig_figs: u32) -> String {
    let n = sweep.points.len();
    match margin {
        Margin::PassesThroughout => format!("passes over the whole range (at all {n} points)"),
        Margin::FailsThroughout => format!("fails over the whole range (at all {n} points)"),
        Margin::Crossings(crossings) => crossings_text(sweep, crossings, sig_figs),
        Margin::NotEstablished {
            unknown_points,
            crossings,
        } => {
            let mut text = format!(
                "not established over the range: unknown at {unknown_points} of {n} points"
            );
            if !crossings.is_empty() {
                text.push_str("; where known, it ");
                text.push_str(&crossings_text(sweep, crossings, sig_figs));
            }
            text
        }
    }
}

/// One or several crossings in words.
fn crossings_text(sweep: &SweepReport, crossings: &[Crossing], sig_figs: u32) -> String {
    let name = &sweep.variable_name;
    let value = |si| sweep_value(sweep, si, sig_figs);
    if let [crossing] = crossings
        && let Ok(margin) = &crossing.at
    {
        let direction = if crossing.passes_below {
            "up to"
        } else {
            "from"
        };
        return format!("passes {direction} {name} = {}", value(margin.input));
    }
    let parts: Vec<String> = crossings
        .iter()
        .map(|crossing| {
            let side = if crossing.passes_below {
                "passing below"
            } else {
                "passing above"
            };
            match &crossing.at {
                Ok(margin) => format!("{name} = {} ({side})", value(margin.input)),
                Err(reason) => format!(
                    "between {name} = {} and {} ({side}; margin not verified: {reason})",
                    value(crossing.between.0),
                    value(crossing.between.1)
                ),
            }
        })
        .collect();
    format!("reaches 100 % at {}", parts.join(", "))
}
