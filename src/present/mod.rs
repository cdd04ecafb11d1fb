//! Facts every output shows, computed once: a check's verdict in words,
//! its utilization as shown, the summary line, and a finding on one line. The command line, the
//! JSON, the report and the notebook all take them from here, so no two can
//! word the same fact differently.

pub mod tables;

use crate::base::{Code, Diagnostic, Severity};
use crate::eval::{CaseOutcome, CheckResult, CheckStatus, Place, Summary, count};
use crate::units::percent;

mod sweep;
pub use sweep::{margin_text, sweep_utilization, sweep_value, sweep_verdict};

/// The verdict with where it comes from: `PASS`, `FAIL (as written)`,
/// `FAIL (in case `estop` at the worst case of its tolerances)`,
/// `UNKNOWN (at the worst case of the tolerances)`, `ERROR`, `BLOCKED`.
pub fn verdict_label(check: &CheckResult, cases: &[CaseOutcome]) -> String {
    match check.status {
        CheckStatus::Passed => "PASS".to_string(),
        CheckStatus::Failed => format!("FAIL ({})", failing_places(check, cases)),
        CheckStatus::Unknown => format!("UNKNOWN ({})", unknown_places(check, cases)),
        CheckStatus::Error => "ERROR".to_string(),
        CheckStatus::Blocked { .. } => "BLOCKED".to_string(),
    }
}

/// Where the check fails or could not be established, in words: "fails in
/// case `estop` at the worst case of its tolerances". Empty for a check
/// that passed everywhere.
pub fn verdict_text(check: &CheckResult, cases: &[CaseOutcome]) -> String {
    let mut parts = Vec::new();
    if !check.fails.is_empty() {
        parts.push(format!("fails {}", failing_places(check, cases)));
    }
    if !check.unknowns.is_empty() {
        parts.push(format!("not established {}", unknown_places(check, cases)));
    }
    parts.join("; ")
}

/// "as written, in case `estop`": where it fails.
fn failing_places(check: &CheckResult, cases: &[CaseOutcome]) -> String {
    places_text(check.fails.iter().copied(), cases)
}

/// Where it could not be established.
fn unknown_places(check: &CheckResult, cases: &[CaseOutcome]) -> String {
    places_text(check.unknowns.iter().map(|u| u.place), cases)
}

/// Places in words, joined with commas.
fn places_text(places: impl Iterator<Item = Place>, cases: &[CaseOutcome]) -> String {
    places
        .map(|place| place.describe(cases))
        .collect::<Vec<_>>()
        .join(", ")
}

/// A check's utilization as written, `76.9 %`, or `None` where it has none
/// (a ratio to or of zero, or no value).
pub fn utilization(check: &CheckResult) -> Option<String> {
    check.utilization.map(percent)
}

/// `12 cells, 1 error, 0 warnings; 5 checks: 4 passed, 1 failed`.
pub fn summary_line(summary: &Summary) -> String {
    let mut line = format!(
        "{}, {}, {}",
        count(summary.cells, "cell"),
        count(summary.errors, "error"),
        count(summary.warnings, "warning")
    );
    if summary.checks == 0 {
        line.push_str("; no checks");
        return line;
    }
    line.push_str(&format!(
        "; {}: {} passed",
        count(summary.checks, "check"),
        summary.passed
    ));
    if summary.failed > 0 {
        line.push_str(&format!(", {} failed", summary.failed));
    }
    if summary.unknown > 0 {
        line.push_str(&format!(", {} unknown", summary.unknown));
    }
    line
}

/// `warning [hand-conversion-factor]`: a finding's severity and code, as
/// every output names them.
pub fn finding_kind(severity: Severity, code: Code) -> String {
    format!("{} [{code}]", severity.as_str())
}

/// `warning [code]: message (help: …)`: a finding on one line.
pub fn finding_line(diagnostic: &Diagnostic) -> String {
    let kind = finding_kind(diagnostic.severity, diagnostic.code);
    match &diagnostic.help {
        Some(help) => format!("{kind}: {} (help: {help})", diagnostic.message),
        None => format!("{kind}: {}", diagnostic.message),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::eval::Summary;

    #[test]
    fn the_summary_line_counts_in_the_singular_and_the_plural() {
        let one = Summary {
            cells: 1,
            errors: 1,
            warnings: 1,
            infos: 0,
            checks: 1,
            passed: 0,
            failed: 0,
            unknown: 1,
        };
        assert_eq!(
            summary_line(&one),
            "1 cell, 1 error, 1 warning; 1 check: 0 passed, 1 unknown"
        );
        assert!(!one.is_clean());
        let many = Summary {
            cells: 3,
            checks: 2,
            passed: 2,
            ..Summary::default()
        };
        assert_eq!(
            summary_line(&many),
            "3 cells, 0 errors, 0 warnings; 2 checks: 2 passed"
        );
        assert!(many.is_clean());
        assert_eq!(
            summary_line(&Summary {
                cells: 2,
                ..Summary::default()
            }),
            "2 cells, 0 errors, 0 warnings; no checks"
        );
    }
}
