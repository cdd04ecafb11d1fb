//! The verdict of every check over everything it was judged in: the sheet
//! as written, the worst case of its tolerances and every load case. A check
//! passes only where every one of these was established and holds; a place
//! where heft could not establish it makes the check unknown, never passed.
//! Every presentation (command line, JSON, report, notebook) counts checks
//! through [`Summary`], so none can disagree with another; the words for a
//! verdict are [`crate::present`]'s.

use super::model::{CaseOutcome, CheckResult, CheckStatus, Place, Unsettled};
use crate::base::{Code, Diagnostic, Severity};
use crate::sheet::Sheet;

impl Place {
    /// Where, in words: "as written", "in case `estop` at the worst case of
    /// the tolerances".
    pub fn describe(self, cases: &[CaseOutcome]) -> String {
        let case = |index: usize| {
            cases.get(index).map_or_else(
                || "a load case".to_string(),
                |c| format!("in case `{}`", c.name),
            )
        };
        match self {
            Place::AsWritten => "as written".to_string(),
            Place::WorstCase => "at the worst case of the tolerances".to_string(),
            Place::Case(index) => case(index),
            Place::CaseWorstCase(index) => {
                format!("{} at the worst case of its tolerances", case(index))
            }
        }
    }
}

/// Judges every check over the sheet as written and every load case, and
/// adds a `check-unknown` error for each check some place could not settle.
pub(crate) fn judge(
    sheet: &Sheet,
    checks: &mut [CheckResult],
    cases: &[CaseOutcome],
    diagnostics: &mut Vec<Diagnostic>,
) {
    for (index, check) in checks.iter_mut().enumerate() {
        judge_check(sheet, index, check, cases);
        if check.status == CheckStatus::Unknown {
            diagnostics.push(unknown_diagnostic(check, cases));
        }
    }
}

/// Sets one check's verdict, failures and unknown places.
pub(crate) fn judge_check(
    sheet: &Sheet,
    index: usize,
    check: &mut CheckResult,
    cases: &[CaseOutcome],
) {
    let mut fails = Vec::new();
    let mut unknowns = Vec::new();
    let name = |id| sheet.cell(id).name.text.to_string();
    match check.holds {
        Some(false) => fails.push(Place::AsWritten),
        Some(true) if check.worst.as_ref().is_some_and(|w| !w.passes) => {
            fails.push(Place::WorstCase)
        }
        _ => {}
    }
    if let Some(reason) = &check.worst_unknown {
        unknowns.push(Unsettled {
            place: Place::WorstCase,
            reason: reason.clone(),
        });
    }
    for (case_index, case) in cases.iter().enumerate() {
        let unsettled = |reason: String| Unsettled {
            place: Place::Case(case_index),
            reason,
        };
        let Some(in_case) = case.checks.get(index).filter(|_| case.evaluated) else {
            unknowns.push(unsettled(
                "the load case could not be evaluated (see its findings)".to_string(),
            ));
            continue;
        };
        match (in_case.status, in_case.holds) {
            (CheckStatus::Blocked { by }, _) => unknowns.push(unsettled(format!(
                "it uses `{}`, which fails in this case",
                name(by)
            ))),
            (_, None) => unknowns.push(unsettled(
                "it could not be evaluated in this case".to_string(),
            )),
            (_, Some(false)) => fails.push(Place::Case(case_index)),
            (_, Some(true)) => {
                if in_case.worst.as_ref().is_some_and(|w| !w.passes) {
                    fails.push(Place::CaseWorstCase(case_index));
                }
                if let Some(reason) = &in_case.worst_unknown {
                    unknowns.push(Unsettled {
                        place: Place::CaseWorstCase(case_index),
                        reason: reason.clone(),
                    });
                }
            }
        }
    }
    check.status = match check.status {
        CheckStatus::Error | CheckStatus::Blocked { .. } => check.status,
        _ if !fails.is_empty() => CheckStatus::Failed,
        _ if !unknowns.is_empty() => CheckStatus::Unknown,
        _ => CheckStatus::Passed,
    };
    check.fails = fails;
    check.unknowns = unknowns;
}

/// The error of a check that could not be established somewhere.
fn unknown_diagnostic(check: &CheckResult, cases: &[CaseOutcome]) -> Diagnostic {
    let places: Vec<String> = check
        .unknowns
        .iter()
        .map(|u| format!("{}: {}", u.place.describe(cases), u.reason))
        .collect();
    Diagnostic::error(
        Code::CheckUnknown,
        check.span,
        format!(
            "check not established: {} {} {} could not be judged {}",
            check.lhs_text,
            check.comparison.symbol(),
            check.rhs_text,
            places.join("; ")
        ),
    )
    .with_help("heft cannot say that this check holds, so it counts as not passed: make what it needs computable there (fewer toleranced inputs reaching it, a formula instead of a block), or judge that place by hand and record it with a review mark")
}

impl CheckResult {
    /// The verdict in the sheet as written alone (nominal values and the
    /// worst case of its tolerances), leaving the load cases out.
    pub fn as_written_status(&self) -> CheckStatus {
        match (self.status, self.holds) {
            (CheckStatus::Error | CheckStatus::Blocked { .. }, _) => self.status,
            (_, None) => CheckStatus::Error,
            (_, Some(false)) => CheckStatus::Failed,
            _ if self.worst.as_ref().is_some_and(|w| !w.passes) => CheckStatus::Failed,
            _ if self.worst_unknown.is_some() => CheckStatus::Unknown,
            _ => CheckStatus::Passed,
        }
    }
}

/// The counts every presentation shows: cells, findings by severity, and
/// checks passed, failed and not established.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Summary {
    /// Cells.
    pub cells: usize,
    /// Errors (failed checks and checks not established included).
    pub errors: usize,
    /// Warnings.
    pub warnings: usize,
    /// Notes.
    pub infos: usize,
    /// Checks.
    pub checks: usize,
    /// Checks that passed everywhere they were judged.
    pub passed: usize,
    /// Checks that fail somewhere.
    pub failed: usize,
    /// Checks not established: unknown somewhere, or not evaluated (an
    /// error or a blocked value as written).
    pub unknown: usize,
}

impl Summary {
    /// The counts of `checks` and of findings of each severity.
    pub fn of(
        cells: usize,
        checks: &[CheckResult],
        severities: impl Iterator<Item = Severity>,
    ) -> Summary {
        let mut summary = Summary {
            cells,
            checks: checks.len(),
            ..Summary::default()
        };
        for severity in severities {
            match severity {
                Severity::Error => summary.errors += 1,
                Severity::Warning => summary.warnings += 1,
                Severity::Info => summary.infos += 1,
            }
        }
        for check in checks {
            match check.passed() {
                Some(true) => summary.passed += 1,
                Some(false) => summary.failed += 1,
                None => summary.unknown += 1,
            }
        }
        summary
    }

    /// Whether the sheet is clean: no errors and every check passed.
    pub fn is_clean(&self) -> bool {
        self.errors == 0 && self.passed == self.checks
    }
}

/// `1 cell`, `2 cells`, `0 errors`.
pub fn count(n: usize, noun: &str) -> String {
    format!("{n} {noun}{}", if n == 1 { "" } else { "s" })
}

/// ` (utilization 107.9 %)`, or nothing.
pub fn utilization_note(utilization: Option<f64>) -> String {
    utilization
        .map(|u| {
            format!(
                " (utilization {} %)",
                crate::units::format_significant(u * 100.0, 4)
            )
        })
        .unwrap_or_default()
}
