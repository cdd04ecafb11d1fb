//! What changed in a sheet's tables between two revisions: tables matched
//! by name; within one, rows matched by their keys (a row whose keys are
//! in both revisions with other values is edited), and the columns, keys
//! and file compared as written.

use crate::eval::Evaluated;
use crate::sheet::Table;

/// One table that differs between the revisions.
#[derive(Clone, Debug, PartialEq, Eq, serde::Serialize, schemars::JsonSchema)]
pub struct TableChange {
    /// The table's name.
    pub name: String,
    /// Added, removed or edited.
    pub change: TableChangeKind,
    /// Its head (keys, columns and file) before and after, where it changed.
    pub head: Option<super::Edit>,
    /// The rows that differ: each as written (`10 | 30 | 9.6`) before and after.
    pub rows: Vec<super::Edit>,
}

/// How a table changed.
#[derive(Clone, Copy, Debug, PartialEq, Eq, serde::Serialize, schemars::JsonSchema)]
#[serde(rename_all = "lowercase")]
pub enum TableChangeKind {
    /// Only in the new revision.
    Added,
    /// Only in the old revision.
    Removed,
    /// In both, with rows or its head changed.
    Edited,
}

impl TableChangeKind {
    /// `added`, `removed` or `edited`, as in the JSON output.
    pub fn as_str(self) -> &'static str {
        match self {
            TableChangeKind::Added => "added",
            TableChangeKind::Removed => "removed",
            TableChangeKind::Edited => "edited",
        }
    }
}

/// A table's head as written: `by radius, boom: radius [m] | boom [m] | capacity [t] (from chart.csv)`.
fn head(table: &Table) -> String {
    let columns: Vec<String> = table
        .columns
        .iter()
        .map(crate::sheet::Column::heading)
        .collect();
    let file = table
        .file
        .as_ref()
        .map(|file| format!(" (from {file})"))
        .unwrap_or_default();
    format!("by {}: {}{file}", table.key_names(), columns.join(" | "))
}

/// A row as written.
fn row_text(table: &Table, row: usize) -> String {
    (0..table.columns.len())
        .map(|column| table.text(row, column))
        .collect::<Vec<_>>()
        .join(" | ")
}

/// A row's keys, for matching rows across revisions.
fn row_keys(table: &Table, row: usize) -> Vec<u64> {
    table
        .keys
        .iter()
        .map(|&key| table.rows[row][key].to_bits())
        .collect()
}

/// Every table that differs, the new revision's order first, then removed ones.
pub fn compare_tables(old: &Evaluated, new: &Evaluated) -> Vec<TableChange> {
    let mut changes = Vec::new();
    for table in new.tables() {
        let Some(before) = old.tables().iter().find(|t| t.name == table.name) else {
            changes.push(TableChange {
                name: table.name.to_string(),
                change: TableChangeKind::Added,
                head: Some(super::Edit {
                    old: None,
                    new: Some(head(table)),
                }),
                rows: (0..table.rows.len())
                    .map(|row| super::Edit {
                        old: None,
                        new: Some(row_text(table, row)),
                    })
                    .collect(),
            });
            continue;
        };
        let head_edit = (head(before) != head(table)).then(|| super::Edit {
            old: Some(head(before)),
            new: Some(head(table)),
        });
        let mut rows = Vec::new();
        let same_keys = before.keys.len() == table.keys.len();
        for row in 0..table.rows.len() {
            let now = row_text(table, row);
            let earlier = same_keys
                .then(|| {
                    (0..before.rows.len())
                        .find(|&old_row| row_keys(before, old_row) == row_keys(table, row))
                })
                .flatten();
            match earlier {
                Some(old_row) if row_text(before, old_row) == now => {}
                Some(old_row) => rows.push(super::Edit {
                    old: Some(row_text(before, old_row)),
                    new: Some(now),
                }),
                None => rows.push(super::Edit {
                    old: None,
                    new: Some(now),
                }),
            }
        }
        for old_row in 0..before.rows.len() {
            let kept = same_keys
                && (0..table.rows.len())
                    .any(|row| row_keys(before, old_row) == row_keys(table, row));
            if !kept {
                rows.push(super::Edit {
                    old: Some(row_text(before, old_row)),
                    new: None,
                });
            }
        }
        if head_edit.is_some() || !rows.is_empty() {
            changes.push(TableChange {
                name: table.name.to_string(),
                change: TableChangeKind::Edited,
                head: head_edit,
                rows,
            });
        }
    }
    for table in old.tables() {
        if !new.tables().iter().any(|t| t.name == table.name) {
            changes.push(TableChange {
                name: table.name.to_string(),
                change: TableChangeKind::Removed,
                head: Some(super::Edit {
                    old: Some(head(table)),
                    new: None,
                }),
                rows: Vec::new(),
            });
        }
    }
    changes
}
