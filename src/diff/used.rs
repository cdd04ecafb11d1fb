//! What changed in the sheets two revisions use: for each `use` alias, the
//! used sheet's path, revision and fingerprint on both sides, and each of
//! its cells whose value as shown differs (added, removed or moved).

use crate::eval::Evaluated;
use crate::sheet::{Import, UsedSheet};

/// A used sheet as one revision reads it.
#[derive(Clone, Debug, PartialEq, Eq, serde::Serialize, schemars::JsonSchema)]
pub struct UsedSide {
    /// The path as written on the `use` line.
    pub path: String,
    /// Its revision mark, if any.
    pub revision: Option<String>,
    /// Its fingerprint, or null if it could not be read.
    pub fingerprint: Option<String>,
}

/// A cell of a used sheet whose value differs between the revisions.
#[derive(Clone, Debug, PartialEq, Eq, serde::Serialize, schemars::JsonSchema)]
pub struct UsedCellChange {
    /// Its name in the used sheet (read as `ALIAS.name`).
    pub name: String,
    /// Its value as shown before, or null where it was absent or had none.
    pub old: Option<String>,
    /// Its value as shown after, or null where it is absent or has none.
    pub new: Option<String>,
}

/// A used sheet (by alias) that differs between the revisions.
#[derive(Clone, Debug, PartialEq, Eq, serde::Serialize, schemars::JsonSchema)]
pub struct UseChange {
    /// The alias its cells are read under.
    pub alias: String,
    /// In the old revision, or null where the old one did not use it.
    pub old: Option<UsedSide>,
    /// In the new revision, or null where the new one does not use it.
    pub new: Option<UsedSide>,
    /// Its cells whose values differ.
    pub cells: Vec<UsedCellChange>,
}

/// Every used sheet whose fingerprint (or presence) differs.
pub fn compare_uses(old: &Evaluated, new: &Evaluated) -> Vec<UseChange> {
    let (old_imports, new_imports) = (&old.sheet().imports, &new.sheet().imports);
    let find = |imports: &'_ [Import], alias: &str| -> Option<Import> {
        imports
            .iter()
            .find(|import| import.alias.text == alias)
            .cloned()
    };
    let mut aliases: Vec<&str> = new_imports
        .iter()
        .chain(old_imports)
        .map(|import| import.alias.text.as_str())
        .collect();
    aliases.dedup();
    let mut seen = Vec::new();
    let mut changes = Vec::new();
    for alias in aliases {
        if seen.contains(&alias) {
            continue;
        }
        seen.push(alias);
        let (before, after) = (find(old_imports, alias), find(new_imports, alias));
        let side = |import: &Option<Import>| {
            import.as_ref().map(|import| UsedSide {
                path: import.path.clone(),
                revision: import.sheet().and_then(|used| used.revision.clone()),
                fingerprint: import.sheet().map(|used| used.fingerprint.clone()),
            })
        };
        let (old_side, new_side) = (side(&before), side(&after));
        if old_side == new_side {
            continue;
        }
        changes.push(UseChange {
            alias: alias.to_string(),
            cells: cell_changes(
                before.as_ref().and_then(Import::sheet),
                after.as_ref().and_then(Import::sheet),
            ),
            old: old_side,
            new: new_side,
        });
    }
    changes
}

/// The cells whose shown values differ between two versions of a sheet.
fn cell_changes(old: Option<&UsedSheet>, new: Option<&UsedSheet>) -> Vec<UsedCellChange> {
    let shown = |sheet: Option<&UsedSheet>, name: &str| {
        sheet
            .and_then(|sheet| sheet.export(name))
            .and_then(|(_, export)| export.shown.as_ref())
            .map(|(number, unit)| format!("{number} {unit}").trim_end().to_string())
    };
    let mut names: Vec<&str> = Vec::new();
    for sheet in [new, old].into_iter().flatten() {
        for export in &sheet.exports {
            if !names.contains(&export.name.as_str()) {
                names.push(&export.name);
            }
        }
    }
    names
        .into_iter()
        .filter_map(|name| {
            let (before, after) = (shown(old, name), shown(new, name));
            (before != after).then(|| UsedCellChange {
                name: name.to_string(),
                old: before,
                new: after,
            })
        })
        .collect()
}
