//! `heft diff OLD NEW [--json]`: what changed between two revisions.

use std::fmt::Write as _;
use std::io;
use std::path::Path;

use schemars::JsonSchema;
use serde::Serialize;

use super::{EXIT_CLEAN, EXIT_FINDINGS, json_words, load_sheet, print};
use crate::diff::{self, CellChangeKind, DiffValue, Edit, RevisionDiff};
use crate::report::math;
use crate::units::format_significant;

/// The version of the diff's JSON schema; bumped only for incompatible changes.
pub const SCHEMA: &str = "heft-diff/1";

/// Runs `heft diff`: exit 0 when the revisions have the same content, 1 when
/// they differ, 2 when a file cannot be read.
pub fn run(old_path: &Path, new_path: &Path, as_json: bool) -> io::Result<u8> {
    let old = load_sheet(old_path)?;
    let new = load_sheet(new_path)?;
    let diff = diff::compare(&old, &new);
    let old_name = old_path.display().to_string();
    let new_name = new_path.display().to_string();
    let text = if as_json {
        json(&diff, &old_name, &new_name)
    } else {
        text(&diff, &old_name, &new_name)
    };
    print(&text, false)?;
    Ok(if diff.is_same() {
        EXIT_CLEAN
    } else {
        EXIT_FINDINGS
    })
}

/// The used sheets that differ, each with its cells that moved.
fn write_uses(out: &mut String, uses: &[diff::UseChange]) {
    if uses.is_empty() {
        return;
    }
    let _ = writeln!(out, "\nUsed sheets");
    let side = |side: &Option<diff::UsedSide>| {
        side.as_ref().map_or_else(
            || "(not used)".to_string(),
            |side| {
                let revision = side
                    .revision
                    .as_deref()
                    .map(|r| format!(" revision {r}"))
                    .unwrap_or_default();
                let fingerprint = side
                    .fingerprint
                    .as_deref()
                    .map_or("not read", |f| f.get(..8).unwrap_or(f));
                format!("{}{revision} ({fingerprint})", side.path)
            },
        )
    };
    for used in uses {
        let _ = writeln!(
            out,
            "  {}: {} → {}",
            used.alias,
            side(&used.old),
            side(&used.new)
        );
        for cell in &used.cells {
            let value = |v: &Option<String>| v.clone().unwrap_or_else(|| "—".to_string());
            let _ = writeln!(
                out,
                "    {}.{}  {} → {}",
                used.alias,
                cell.name,
                value(&cell.old),
                value(&cell.new)
            );
        }
    }
}

fn shown(value: &Option<DiffValue>) -> String {
    value
        .as_ref()
        .map_or_else(|| "—".to_string(), |v| math::shown(&v.shown))
}

fn percent(change: Option<f64>) -> String {
    change.map_or_else(String::new, |p| {
        let sign = if p > 0.0 { "+" } else { "" };
        format!("{sign}{} %", format_significant(p, 3))
    })
}

fn edit_text(part: &str, edit: &Edit) -> String {
    let side = |text: &Option<String>| {
        text.as_deref()
            .map_or_else(|| "(none)".to_string(), |t| format!("`{t}`"))
    };
    format!("{part} {} → {}", side(&edit.old), side(&edit.new))
}

/// The diff as text.
pub fn text(diff: &RevisionDiff, old_name: &str, new_name: &str) -> String {
    let mut out = String::new();
    let revision = |r: &Option<String>| {
        r.as_deref()
            .map(|r| format!(" (revision {r})"))
            .unwrap_or_default()
    };
    let _ = writeln!(
        out,
        "{old_name}{} → {new_name}{}",
        revision(&diff.old_revision),
        revision(&diff.new_revision)
    );
    if diff.is_same() {
        let _ = writeln!(
            out,
            "\nsame content (fingerprint {})",
            &diff.new_fingerprint
        );
        return out;
    }
    write_uses(&mut out, &diff.uses);
    let edits: Vec<_> = diff
        .cells
        .iter()
        .filter(|c| c.kind != CellChangeKind::ResultOnly)
        .collect();
    if !edits.is_empty() {
        let _ = writeln!(out, "\nCells");
        for cell in edits {
            let mut parts = Vec::new();
            match cell.kind {
                CellChangeKind::Added => parts.push(format!(
                    "= {}",
                    cell.formula
                        .as_ref()
                        .and_then(|f| f.new.clone())
                        .unwrap_or_default()
                )),
                CellChangeKind::Removed => parts.push(format!(
                    "was = {}",
                    cell.formula
                        .as_ref()
                        .and_then(|f| f.old.clone())
                        .unwrap_or_default()
                )),
                CellChangeKind::Edited | CellChangeKind::ResultOnly => {
                    parts.extend(cell.formula.as_ref().map(|e| edit_text("formula", e)));
                    parts.extend(cell.unit.as_ref().map(|e| edit_text("unit", e)));
                    parts.extend(
                        cell.description
                            .as_ref()
                            .map(|e| edit_text("description", e)),
                    );
                }
            }
            let _ = writeln!(
                out,
                "  {:<8} {}  {}",
                cell.kind.as_str(),
                cell.name,
                parts.join("; ")
            );
        }
    }
    if !diff.tables.is_empty() {
        let _ = writeln!(out, "\nTables");
        for table in &diff.tables {
            let _ = writeln!(out, "  {:<8} {}", table.change.as_str(), table.name);
            if let Some(head) = &table.head {
                let _ = writeln!(out, "    {}", edit_text("head", head));
            }
            for row in &table.rows {
                let _ = writeln!(out, "    {}", edit_text("row", row));
            }
        }
    }
    let results: Vec<_> = diff.cells.iter().filter(|c| c.result_moved()).collect();
    let width = results
        .iter()
        .map(|c| c.name.chars().count())
        .max()
        .unwrap_or(0);
    if !results.is_empty() {
        let _ = writeln!(out, "\nResults");
        for cell in results {
            let why = match cell.kind {
                CellChangeKind::ResultOnly if !cell.moved_inputs.is_empty() => {
                    format!("inputs moved: {}", cell.moved_inputs.join(", "))
                }
                CellChangeKind::ResultOnly => "inputs moved".to_string(),
                _ => "definition changed".to_string(),
            };
            let dimension = if cell.dimension_changed {
                "  DIMENSION CHANGED"
            } else {
                ""
            };
            let _ = writeln!(
                out,
                "  {:<width$}  {} → {}  {}{dimension}  ({why})",
                cell.name,
                shown(&cell.old_value),
                shown(&cell.new_value),
                percent(cell.change_percent)
            );
        }
    }
    if !diff.checks.is_empty() {
        let _ = writeln!(out, "\nChecks");
        for check in &diff.checks {
            let status = |s: Option<diff::CheckOutcome>| {
                s.map_or("(none)", diff::CheckOutcome::as_str).to_string()
            };
            let utilization =
                |u: Option<f64>| u.map_or_else(|| "—".to_string(), crate::units::percent);
            let flag = if check.status_changed() {
                "  STATUS CHANGED"
            } else {
                ""
            };
            let label = check
                .label
                .as_deref()
                .map(|l| format!("  {l}"))
                .unwrap_or_default();
            let _ = writeln!(
                out,
                "  {}: {} → {}, utilization {} → {}{flag}{label}",
                check.expression,
                status(check.old_status),
                status(check.new_status),
                utilization(check.old_utilization),
                utilization(check.new_utilization)
            );
        }
    }
    let n_status = diff.checks.iter().filter(|c| c.status_changed()).count();
    let _ = writeln!(
        out,
        "\ncells: {} added, {} removed, {} edited; results: {} changed, {} unchanged; {} changed status",
        diff.count(CellChangeKind::Added),
        diff.count(CellChangeKind::Removed),
        diff.count(CellChangeKind::Edited),
        diff.cells
            .iter()
            .filter(|c| c.old_value.is_some()
                && c.new_value.is_some()
                && c.old_value != c.new_value)
            .count(),
        diff.n_unchanged,
        crate::eval::count(n_status, "check")
    );
    out
}

/// `heft diff --json`: what changed between two revisions.
#[derive(Serialize, JsonSchema)]
#[schemars(title = "heft-diff/1")]
struct JsonDiff<'a> {
    /// The format's name.
    #[schemars(extend("const" = SCHEMA))]
    schema: &'static str,
    /// The earlier revision.
    old: JsonSide<'a>,
    /// The later revision.
    new: JsonSide<'a>,
    /// Whether the two have the same content (the same fingerprint; exit code 0).
    same: bool,
    /// Cells that differ: the new revision's order first, then removed ones.
    cells: Vec<JsonCell<'a>>,
    /// Checks whose status or utilization changed, or that came or went.
    checks: Vec<JsonCheck<'a>>,
    /// Cells in both revisions with nothing changed.
    unchanged: usize,
    /// Sheets used (`use` lines) that differ, by alias, with their cells
    /// whose values moved.
    uses: &'a [diff::UseChange],
    /// Tables that differ: each with `change` (`added`, `removed` or
    /// `edited`), its head before and after where it changed, and the rows
    /// that differ as written.
    tables: &'a [crate::diff::TableChange],
}

/// One revision.
#[derive(Serialize, JsonSchema)]
struct JsonSide<'a> {
    /// The file as named on the command line.
    file: &'a str,
    /// The header's revision mark.
    revision: Option<&'a str>,
    /// The content fingerprint (as in `heft-check/1`'s `review`).
    fingerprint: &'a str,
}

/// One cell that differs between the revisions.
#[derive(Serialize, JsonSchema)]
struct JsonCell<'a> {
    /// The cell's name.
    name: &'a str,
    /// How its definition changed (`result`: only its result moved).
    change: json_words::CellChange,
    /// The formula, where it changed.
    formula: Option<&'a Edit>,
    /// The declared unit, where it changed.
    unit: Option<&'a Edit>,
    /// The description, where it changed.
    description: Option<&'a Edit>,
    /// The result in the old revision, if it had one.
    old: Option<JsonValue<'a>>,
    /// The result in the new revision, if it has one.
    new: Option<JsonValue<'a>>,
    /// (new − old) / |old| in percent, when both exist, agree in dimension
    /// and old is not zero.
    change_percent: Option<f64>,
    /// Whether the result's dimension changed.
    dimension_changed: bool,
    /// For a cell whose definition did not change: the cells it uses whose
    /// result moved.
    moved_inputs: &'a [String],
}

/// A result in one revision.
#[derive(Serialize, JsonSchema)]
struct JsonValue<'a> {
    /// The number as the sheet shows it.
    shown: String,
    /// The unit it is shown in.
    unit: &'a str,
    /// The value in coherent SI units.
    si: f64,
}

/// One check that differs.
#[derive(Serialize, JsonSchema)]
struct JsonCheck<'a> {
    /// The comparison as written, blanks collapsed (the new revision's, or
    /// the old one's if it was removed).
    expression: &'a str,
    /// The check's label.
    label: Option<&'a str>,
    /// The outcome before (null if the check is new).
    old_status: Option<json_words::Outcome>,
    /// The outcome after (null if the check was removed).
    new_status: Option<json_words::Outcome>,
    /// Whether the outcome changed (or the check came or went).
    status_changed: bool,
    /// The utilization before.
    old_utilization: Option<f64>,
    /// The utilization after.
    new_utilization: Option<f64>,
}

fn json_value(value: &Option<DiffValue>) -> Option<JsonValue<'_>> {
    value.as_ref().map(|v| JsonValue {
        shown: v.shown.number.clone(),
        unit: &v.shown.unit,
        si: v.si,
    })
}

/// The JSON Schema of `heft-diff/1`.
pub(super) fn schema() -> String {
    super::json::schema_text::<JsonDiff<'static>>()
}

/// The diff as one JSON object (`heft-diff/1`).
pub fn json(diff: &RevisionDiff, old_name: &str, new_name: &str) -> String {
    let report = JsonDiff {
        schema: SCHEMA,
        old: JsonSide {
            file: old_name,
            revision: diff.old_revision.as_deref(),
            fingerprint: &diff.old_fingerprint,
        },
        new: JsonSide {
            file: new_name,
            revision: diff.new_revision.as_deref(),
            fingerprint: &diff.new_fingerprint,
        },
        same: diff.is_same(),
        cells: diff
            .cells
            .iter()
            .map(|cell| JsonCell {
                name: &cell.name,
                change: cell.kind.into(),
                formula: cell.formula.as_ref(),
                unit: cell.unit.as_ref(),
                description: cell.description.as_ref(),
                old: json_value(&cell.old_value),
                new: json_value(&cell.new_value),
                change_percent: cell.change_percent,
                dimension_changed: cell.dimension_changed,
                moved_inputs: &cell.moved_inputs,
            })
            .collect(),
        checks: diff
            .checks
            .iter()
            .map(|check| JsonCheck {
                expression: &check.expression,
                label: check.label.as_deref(),
                old_status: check.old_status.map(Into::into),
                new_status: check.new_status.map(Into::into),
                status_changed: check.status_changed(),
                old_utilization: check.old_utilization,
                new_utilization: check.new_utilization,
            })
            .collect(),
        unchanged: diff.n_unchanged,
        uses: &diff.uses,
        tables: &diff.tables,
    };
    super::json::text(&report)
}
