//! Revision diff: what changed between two evaluated revisions of a sheet.
//!
//! Cells are matched by name: added, removed, and changed in formula,
//! declared unit or description. Every result present in both revisions
//! whose value moved is listed with old and new value and the change in %,
//! including results whose own formula did not change (then the cells it
//! uses that moved are named). Checks are matched by their comparison as
//! written (blanks collapsed), else by label; those whose status or
//! utilization changed are listed.

mod tables;
mod used;

use std::collections::HashMap;

pub use tables::{TableChange, TableChangeKind};

use crate::eval::formula::ShownValue;
use crate::eval::{CellResult, CellStatus, CheckResult, CheckStatus, Evaluated};
use crate::review;
pub use used::{UseChange, UsedCellChange, UsedSide, compare_uses};

/// How a cell's definition changed.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum CellChangeKind {
    /// Only in the new revision.
    Added,
    /// Only in the old revision.
    Removed,
    /// In both, with a different formula, unit or description.
    Edited,
    /// In both with the same definition, but its result moved.
    ResultOnly,
}

impl CellChangeKind {
    /// `added`, `removed`, `edited` or `result`, as in the JSON output.
    pub fn as_str(self) -> &'static str {
        match self {
            CellChangeKind::Added => "added",
            CellChangeKind::Removed => "removed",
            CellChangeKind::Edited => "edited",
            CellChangeKind::ResultOnly => "result",
        }
    }
}

/// An old and a new text, for a part that changed.
#[derive(Clone, Debug, PartialEq, Eq, serde::Serialize, schemars::JsonSchema)]
pub struct Edit {
    /// Before (`None`, in JSON `null`, where the part was absent).
    pub old: Option<String>,
    /// After (`None`, in JSON `null`, where the part is absent).
    pub new: Option<String>,
}

/// A result in one revision: as shown, and in SI for comparing.
#[derive(Clone, Debug, PartialEq)]
pub struct DiffValue {
    /// As the sheet shows it.
    pub shown: ShownValue,
    /// In coherent SI units.
    pub si: f64,
}

/// One cell that differs between the revisions.
#[derive(Clone, Debug, PartialEq)]
pub struct CellChange {
    /// The cell's name.
    pub name: String,
    /// Added, removed, edited or result only.
    pub kind: CellChangeKind,
    /// The formula, if it changed.
    pub formula: Option<Edit>,
    /// The declared unit, if it changed.
    pub unit: Option<Edit>,
    /// The description, if it changed.
    pub description: Option<Edit>,
    /// The old result, if there was one.
    pub old_value: Option<DiffValue>,
    /// The new result, if there is one.
    pub new_value: Option<DiffValue>,
    /// (new − old) / |old| in percent, when both exist, agree in
    /// dimension and old is not zero.
    pub change_percent: Option<f64>,
    /// Whether the result's dimension changed.
    pub dimension_changed: bool,
    /// For a cell whose definition did not change: the cells it uses whose
    /// result moved.
    pub moved_inputs: Vec<String>,
}

impl CellChange {
    /// Whether the cell has a result in both revisions and it moved.
    pub fn result_moved(&self) -> bool {
        self.old_value.is_some()
            && self.new_value.is_some()
            && value_moved(&self.old_value, &self.new_value)
    }
}

/// One check whose outcome differs, or that was added or removed.
#[derive(Clone, Debug, PartialEq)]
pub struct CheckChange {
    /// The comparison as written in the new revision (or the old, if removed).
    pub expression: String,
    /// The label.
    pub label: Option<String>,
    /// Outcome before (None if the check is new).
    pub old_status: Option<CheckOutcome>,
    /// Outcome after (None if the check was removed).
    pub new_status: Option<CheckOutcome>,
    /// Utilization before.
    pub old_utilization: Option<f64>,
    /// Utilization after.
    pub new_utilization: Option<f64>,
}

impl CheckChange {
    /// Whether pass/fail changed (or the check came or went).
    pub fn status_changed(&self) -> bool {
        self.old_status != self.new_status
    }
}

/// The whole difference between two revisions.
#[derive(Clone, Debug, PartialEq)]
pub struct RevisionDiff {
    /// The old revision's mark.
    pub old_revision: Option<String>,
    /// The new revision's mark.
    pub new_revision: Option<String>,
    /// The old sheet's fingerprint.
    pub old_fingerprint: String,
    /// The new sheet's fingerprint.
    pub new_fingerprint: String,
    /// Cells that differ: new revision's order first, then removed ones.
    pub cells: Vec<CellChange>,
    /// Checks that differ.
    pub checks: Vec<CheckChange>,
    /// Cells in both revisions with nothing changed.
    pub n_unchanged: usize,
    /// Used sheets that differ (by alias), with their cells that moved.
    pub uses: Vec<UseChange>,
    /// Tables that differ: rows added, removed or edited, or the head.
    pub tables: Vec<TableChange>,
}

impl RevisionDiff {
    /// Whether the revisions have the same content (same fingerprint).
    pub fn is_same(&self) -> bool {
        self.old_fingerprint == self.new_fingerprint
    }

    /// Number of cells of a kind.
    pub fn count(&self, kind: CellChangeKind) -> usize {
        self.cells.iter().filter(|cell| cell.kind == kind).count()
    }
}

/// Compares two evaluated revisions.
pub fn compare(old: &Evaluated, new: &Evaluated) -> RevisionDiff {
    let old_values: HashMap<&str, Option<DiffValue>> = old
        .cells()
        .map(|cell| (cell.name, value_of(old, &cell)))
        .collect();
    // Whether each new cell's result moved (a new cell counts as moved).
    let moved: HashMap<&str, bool> = new
        .cells()
        .map(|cell| {
            let now = value_of(new, &cell);
            let moved = old_values
                .get(cell.name)
                .is_none_or(|before| value_moved(before, &now));
            (cell.name, moved)
        })
        .collect();
    let mut cells = Vec::new();
    let mut n_unchanged = 0;
    for cell in new.cells() {
        let new_value = value_of(new, &cell);
        let Some(old_cell) = old.cell(cell.name) else {
            cells.push(CellChange {
                name: cell.name.to_string(),
                kind: CellChangeKind::Added,
                formula: Some(edit(None, Some(cell.formula))),
                unit: declared_unit(&cell).map(|unit| edit(None, Some(unit))),
                description: cell.description.map(|d| edit(None, Some(d))),
                old_value: None,
                new_value,
                change_percent: None,
                dimension_changed: false,
                moved_inputs: Vec::new(),
            });
            continue;
        };
        let old_value = old_values.get(cell.name).cloned().flatten();
        let formula = differs(Some(old_cell.formula), Some(cell.formula));
        let unit = differs(declared_unit(&old_cell), declared_unit(&cell));
        let description = differs(old_cell.description, cell.description);
        let value_moved = value_moved(&old_value, &new_value);
        let dimension_changed = matches!(
            (old_cell.value, cell.value),
            (Some(a), Some(b)) if a.dimension != b.dimension
        );
        let edited = formula.is_some() || unit.is_some() || description.is_some();
        if !edited && !value_moved {
            n_unchanged += 1;
            continue;
        }
        let change_percent = match (&old_value, &new_value) {
            (Some(a), Some(b)) if !dimension_changed && a.si != 0.0 => {
                Some((b.si - a.si) / a.si.abs() * 100.0)
            }
            _ => None,
        };
        let moved_inputs = if edited {
            Vec::new()
        } else {
            cell.uses
                .iter()
                .map(|&used| new.cell_at(used).name)
                .filter(|name| moved.get(name).copied().unwrap_or(true))
                .map(str::to_string)
                .collect()
        };
        cells.push(CellChange {
            name: cell.name.to_string(),
            kind: if edited {
                CellChangeKind::Edited
            } else {
                CellChangeKind::ResultOnly
            },
            formula,
            unit,
            description,
            old_value,
            new_value,
            change_percent,
            dimension_changed,
            moved_inputs,
        });
    }
    for cell in old.cells() {
        if new.cell(cell.name).is_none() {
            cells.push(CellChange {
                name: cell.name.to_string(),
                kind: CellChangeKind::Removed,
                formula: Some(edit(Some(cell.formula), None)),
                unit: declared_unit(&cell).map(|unit| edit(Some(unit), None)),
                description: cell.description.map(|d| edit(Some(d), None)),
                old_value: value_of(old, &cell),
                new_value: None,
                change_percent: None,
                dimension_changed: false,
                moved_inputs: Vec::new(),
            });
        }
    }
    RevisionDiff {
        old_revision: old.header().revision.clone(),
        new_revision: new.header().revision.clone(),
        old_fingerprint: review::fingerprint(old.source(), old.sheet()),
        new_fingerprint: review::fingerprint(new.source(), new.sheet()),
        cells,
        checks: compare_checks(old, new),
        n_unchanged,
        uses: compare_uses(old, new),
        tables: tables::compare_tables(old, new),
    }
}

fn compare_checks(old: &Evaluated, new: &Evaluated) -> Vec<CheckChange> {
    let mut unmatched_old: Vec<bool> = vec![true; old.checks.len()];
    let find = |check: &CheckResult, unmatched: &[bool]| {
        let key = expression(check);
        old.checks
            .iter()
            .enumerate()
            .find(|(index, candidate)| unmatched[*index] && expression(candidate) == key)
            .or_else(|| {
                old.checks.iter().enumerate().find(|(index, candidate)| {
                    unmatched[*index] && check.label.is_some() && candidate.label == check.label
                })
            })
            .map(|(index, _)| index)
    };
    let mut changes = Vec::new();
    for check in &new.checks {
        match find(check, &unmatched_old) {
            Some(index) => {
                unmatched_old[index] = false;
                let before = &old.checks[index];
                let change = CheckChange {
                    expression: expression(check),
                    label: check.label.clone(),
                    old_status: Some(status(before)),
                    new_status: Some(status(check)),
                    old_utilization: before.utilization,
                    new_utilization: check.utilization,
                };
                if change.status_changed() || change.old_utilization != change.new_utilization {
                    changes.push(change);
                }
            }
            None => changes.push(CheckChange {
                expression: expression(check),
                label: check.label.clone(),
                old_status: None,
                new_status: Some(status(check)),
                old_utilization: None,
                new_utilization: check.utilization,
            }),
        }
    }
    for (index, check) in old.checks.iter().enumerate() {
        if unmatched_old[index] {
            changes.push(CheckChange {
                expression: expression(check),
                label: check.label.clone(),
                old_status: Some(status(check)),
                new_status: None,
                old_utilization: check.utilization,
                new_utilization: None,
            });
        }
    }
    changes
}

/// `lhs op rhs` with blanks collapsed, as the matching key and the label of a check.
fn expression(check: &CheckResult) -> String {
    let text = format!(
        "{} {} {}",
        check.lhs_text,
        check.comparison.symbol(),
        check.rhs_text
    );
    text.split_whitespace().collect::<Vec<_>>().join(" ")
}

/// A check's outcome in one revision: its status without the cell that
/// blocks it, which names a cell of that revision only.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum CheckOutcome {
    /// It passed.
    Pass,
    /// It failed.
    Fail,
    /// It could not be established somewhere: never a pass.
    Unknown,
    /// A side could not be evaluated.
    Error,
    /// A side uses a failed cell.
    Blocked,
}

impl CheckOutcome {
    /// `pass`, `FAIL`, `UNKNOWN`, `error` or `blocked`, as in the text and
    /// the JSON.
    pub fn as_str(self) -> &'static str {
        match self {
            CheckOutcome::Pass => "pass",
            CheckOutcome::Fail => "FAIL",
            CheckOutcome::Unknown => "UNKNOWN",
            CheckOutcome::Error => "error",
            CheckOutcome::Blocked => "blocked",
        }
    }
}

/// A check's outcome.
pub fn status(check: &CheckResult) -> CheckOutcome {
    match check.status {
        CheckStatus::Passed => CheckOutcome::Pass,
        CheckStatus::Failed => CheckOutcome::Fail,
        CheckStatus::Unknown => CheckOutcome::Unknown,
        CheckStatus::Error => CheckOutcome::Error,
        CheckStatus::Blocked { .. } => CheckOutcome::Blocked,
    }
}

/// Relative changes up to this size are floating-point rounding (a ratio
/// whose inputs moved together), not a change of result.
pub const ROUNDING_NOISE: f64 = 1e-12;

/// Whether a result differs between revisions: in its shown value or unit,
/// by more than rounding noise, or by being there at all.
fn value_moved(old: &Option<DiffValue>, new: &Option<DiffValue>) -> bool {
    match (old, new) {
        (Some(a), Some(b)) => {
            let scale = a.si.abs().max(b.si.abs());
            a.shown != b.shown || (a.si - b.si).abs() > ROUNDING_NOISE * scale
        }
        (None, None) => false,
        _ => true,
    }
}

fn value_of(evaluated: &Evaluated, cell: &CellResult<'_>) -> Option<DiffValue> {
    let value = cell.value.filter(|_| cell.status == CellStatus::Ok)?;
    Some(DiffValue {
        shown: evaluated.shown_value(cell.id)?,
        si: value.si,
    })
}

fn declared_unit<'a>(cell: &CellResult<'a>) -> Option<&'a str> {
    cell.declared_unit.then_some(&*cell.display.text)
}

fn edit(old: Option<&str>, new: Option<&str>) -> Edit {
    Edit {
        old: old.map(str::to_string),
        new: new.map(str::to_string),
    }
}

/// An [`Edit`] if the two differ (blanks collapsed before comparing).
fn differs(old: Option<&str>, new: Option<&str>) -> Option<Edit> {
    let collapse = |text: &str| text.split_whitespace().collect::<Vec<_>>().join(" ");
    (old.map(collapse) != new.map(collapse)).then(|| edit(old, new))
}
