//! The checker's workflow kept in the sheet: review marks on cells, checks
//! and headings, and sign-offs that record the fingerprint of what was
//! checked. [`Review::of`] reads them from an evaluated sheet and works out
//! which marks are open and whether each sign-off still holds.
//!
//! A review mark belongs to the nearest cell, check or heading above it (a
//! mark above all of them is about the whole sheet), so a checker writes it
//! right under what it is about. Syntax:
//!
//! ```text
//! review question "Where does 0.35 m/s^2 come from?" by "K. Brandt" on 2026-12-02
//! review change "Use the rating plate: 3.0 t" by "K. Brandt" on 2026-12-02
//! review accepted by "K. Brandt" on 2026-12-02
//! review resolved "Data sheet attached" by "R. Okafor" on 2026-12-03
//! signoff by "K. Brandt" on 2026-12-04 fingerprint <64 hex> cells m_skid:1a2b3c4d …
//! ```

use std::collections::{BTreeMap, HashSet};

use crate::eval::{Evaluated, OutlineItem};
use crate::sheet::CellId;
use crate::syntax::ast::{ExprKind, StatementKind, Target};

pub use crate::sheet::fingerprint::{
    CELL_DIGEST_LEN, fingerprint, normalized_text, statement_digest,
};
pub use crate::syntax::ast::ReviewKind;

/// What a review mark is attached to.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum MarkTarget {
    /// The sheet as a whole (the mark comes before any cell, check or heading).
    Sheet,
    /// A cell.
    Cell(CellId),
    /// A check, by index in [`Evaluated::checks`].
    Check(usize),
    /// A heading, by index in [`Evaluated::outline`].
    Heading(usize),
}

/// One review mark, read from the sheet.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Mark {
    /// Question, change, accepted or resolved.
    pub kind: ReviewKind,
    /// What the checker says, if anything.
    pub text: Option<String>,
    /// Who wrote it.
    pub by: String,
    /// When (`YYYY-MM-DD`).
    pub on: String,
    /// 1-based line of the mark.
    pub line: usize,
    /// What it is about.
    pub target: MarkTarget,
    /// Whether it is still open: a question or a required change with no
    /// `accepted` or `resolved` mark on the same target after it.
    pub open: bool,
}

/// Whether a sign-off still covers the sheet.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum SignOffState {
    /// The sheet's fingerprint is the one that was signed.
    Current,
    /// The sheet changed after it was signed.
    Stale(Changes),
}

/// What changed since a sign-off, as far as its cell digests tell.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct Changes {
    /// Cells whose own line changed (formula, unit or description).
    pub changed: Vec<String>,
    /// Cells that were not there when it was signed.
    pub added: Vec<String>,
    /// Cells that were signed but are gone.
    pub removed: Vec<String>,
    /// Cells whose line did not change but that use a changed or added cell.
    pub affected: Vec<String>,
    /// Whether the sign-off recorded cell digests at all.
    pub digests_recorded: bool,
}

impl Changes {
    /// Whether no cell, load case or check changed (so the header, a
    /// heading, a note or a comment did).
    pub fn only_other_text(&self) -> bool {
        self.changed.is_empty() && self.added.is_empty() && self.removed.is_empty()
    }
}

/// A digest key as people read it: `m_skid`, `case estop`, `check 2`.
pub fn digest_key_text(key: &str) -> String {
    match key.split_once('/') {
        Some(("case", name)) => format!("case {name}"),
        Some(("check", number)) => format!("check {number}"),
        _ => key.to_string(),
    }
}

/// One sign-off, read from the sheet, with its state.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SignOffRecord {
    /// The checker.
    pub by: String,
    /// When (`YYYY-MM-DD`).
    pub on: String,
    /// 1-based line of the sign-off.
    pub line: usize,
    /// The fingerprint that was signed.
    pub signed_fingerprint: String,
    /// Current or stale, with what changed.
    pub state: SignOffState,
}

/// The review state of a sheet: its fingerprint, marks and sign-offs.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Review {
    /// The sheet's fingerprint now (64 hex digits).
    pub fingerprint: String,
    /// Every review mark, in file order.
    pub marks: Vec<Mark>,
    /// Every sign-off, in file order; the last one is the one in force.
    pub signoffs: Vec<SignOffRecord>,
}

impl Review {
    /// Reads the review marks and sign-offs of an evaluated sheet.
    pub fn of(evaluated: &Evaluated) -> Review {
        let sheet = evaluated.sheet();
        let source = evaluated.source();
        let fingerprint = fingerprint(source, sheet);
        let mut marks = Vec::new();
        let mut signoffs = Vec::new();
        let mut target = MarkTarget::Sheet;
        // Outline items are the statements other than marks and sign-offs, in order.
        let mut outline_index = 0;
        let (mut next_cell, mut next_check) = (0, 0);
        let mut digests_now = None;
        for (statement_index, statement) in sheet.statements.iter().enumerate() {
            let line = evaluated.lines.line_of(statement.span.start()) + 1;
            match &statement.kind {
                StatementKind::Review(mark) => {
                    marks.push(Mark {
                        kind: mark.kind,
                        text: mark.text.as_ref().map(|text| text.text.clone()),
                        by: mark.by.text.clone(),
                        on: mark.on.text.to_string(),
                        line,
                        target,
                        open: mark.kind.is_open(),
                    });
                    continue;
                }
                StatementKind::SignOff(signoff) => {
                    let signed = signoff.fingerprint.text.to_ascii_lowercase();
                    let state = if signed == fingerprint {
                        SignOffState::Current
                    } else {
                        let now = digests_now.get_or_insert_with(|| sheet_digests(evaluated));
                        SignOffState::Stale(changes_since(
                            evaluated,
                            now,
                            signoff
                                .cell_digests
                                .iter()
                                .map(|(name, digest)| (name.text.as_str(), digest.text.as_str())),
                        ))
                    };
                    signoffs.push(SignOffRecord {
                        by: signoff.by.text.clone(),
                        on: signoff.on.text.to_string(),
                        line,
                        signed_fingerprint: signed.to_string(),
                        state,
                    });
                    continue;
                }
                StatementKind::Cell(_)
                | StatementKind::Body(_)
                | StatementKind::Solve(_)
                | StatementKind::Simulate(_)
                | StatementKind::Parts(_)
                | StatementKind::Lift(_) => {
                    // A solve block defines all its unknowns; a mark below it
                    // is about the first.
                    let first = next_cell;
                    while next_cell < sheet.cells.len()
                        && sheet.cell_statement(next_cell) == statement_index
                    {
                        next_cell += 1;
                    }
                    if next_cell > first {
                        target = MarkTarget::Cell(first);
                    }
                }
                StatementKind::Check(_) => {
                    if sheet.checks.get(next_check) == Some(&statement_index) {
                        target = MarkTarget::Check(next_check);
                        next_check += 1;
                    }
                }
                StatementKind::Heading { .. } => {
                    if matches!(
                        evaluated.outline.get(outline_index),
                        Some(OutlineItem::Heading { .. })
                    ) {
                        target = MarkTarget::Heading(outline_index);
                    }
                }
                StatementKind::Note { .. }
                | StatementKind::Case(_)
                | StatementKind::Use(_)
                | StatementKind::Sweep(_)
                | StatementKind::Table(_)
                | StatementKind::Invalid => {}
            }
            outline_index += 1;
        }
        // An `accepted` or `resolved` mark answers the open marks before it
        // on the same target.
        let mut answered: HashSet<MarkTarget> = HashSet::new();
        for mark in marks.iter_mut().rev() {
            if mark.kind.is_open() {
                mark.open = !answered.contains(&mark.target);
            } else {
                answered.insert(mark.target);
            }
        }
        Review {
            fingerprint,
            marks,
            signoffs,
        }
    }

    /// The marks still open (questions and required changes).
    pub fn open_marks(&self) -> impl Iterator<Item = &Mark> {
        self.marks.iter().filter(|mark| mark.open)
    }

    /// The sign-off in force: the last one in the file.
    pub fn signoff(&self) -> Option<&SignOffRecord> {
        self.signoffs.last()
    }
}

/// Each cell's name and current digest, in file order, then each load
/// case's (`case/NAME`), each check's (`check/N`, its place among the
/// checks from 1) and each used sheet's (`use/ALIAS`, the first digits of
/// its fingerprint), so a stale sign-off can say which of them changed.
pub fn sheet_digests(evaluated: &Evaluated) -> Vec<(String, String)> {
    let sheet = evaluated.sheet();
    let source = evaluated.source();
    let cells = evaluated.cells().map(|cell| {
        (
            cell.name.to_string(),
            statement_digest(cell.span.text(source)),
        )
    });
    let cases = sheet.cases.iter().filter_map(|&statement| {
        let case = sheet.case_block(statement)?;
        Some((
            format!("case/{}", case.name.text),
            statement_digest(sheet.statements[statement].span.text(source)),
        ))
    });
    let checks = (0..sheet.checks.len()).map(|index| {
        (
            format!("check/{}", index + 1),
            statement_digest(sheet.check_span(index).text(source)),
        )
    });
    let uses = sheet.imports.iter().filter_map(|import| {
        let used = import.sheet()?;
        Some((
            format!("use/{}", import.alias.text),
            used.fingerprint.chars().take(CELL_DIGEST_LEN).collect(),
        ))
    });
    cells.chain(cases).chain(checks).chain(uses).collect()
}

/// Whether cell `id`'s formula reads a cell of one of the `used` sheets.
fn reads_used_sheet(evaluated: &Evaluated, id: CellId, used: &[usize]) -> bool {
    let Some(expr) = evaluated.sheet().cell(id).expr else {
        return false;
    };
    let mut reads = false;
    expr.walk(&mut |node| {
        if let ExprKind::Name(name) = &node.kind
            && let Target::Imported { sheet, .. } = name.target
        {
            reads |= used.contains(&(sheet as usize));
        }
    });
    reads
}

/// What changed between the signed digests and the sheet now.
fn changes_since<'a>(
    evaluated: &Evaluated,
    now: &[(String, String)],
    signed: impl Iterator<Item = (&'a str, &'a str)>,
) -> Changes {
    let signed: BTreeMap<&str, String> = signed
        .map(|(name, digest)| (name, digest.to_ascii_lowercase()))
        .collect();
    let mut changes = Changes {
        digests_recorded: !signed.is_empty(),
        ..Changes::default()
    };
    if !changes.digests_recorded {
        return changes;
    }
    // A sign-off written before load cases and checks had digests names
    // cells only; those others are then not "added".
    let others_recorded = signed.keys().any(|key| key.contains('/'));
    let mut touched = vec![false; now.len()];
    for (id, (name, digest)) in now.iter().enumerate() {
        if !others_recorded && name.contains('/') {
            continue;
        }
        match signed.get(name.as_str()) {
            Some(old) if old == digest => {}
            Some(_) => {
                changes.changed.push(name.clone());
                touched[id] = true;
            }
            None => {
                changes.added.push(name.clone());
                touched[id] = true;
            }
        }
    }
    let current: HashSet<&str> = now.iter().map(|(name, _)| name.as_str()).collect();
    changes.removed = signed
        .keys()
        .filter(|name| !current.contains(*name))
        .map(|name| name.to_string())
        .collect();
    // A cell that reads a changed used sheet is affected by it.
    let mut affected = vec![false; now.len()];
    let changed_uses: Vec<usize> = evaluated
        .sheet()
        .imports
        .iter()
        .enumerate()
        .filter(|(_, import)| {
            let key = format!("use/{}", import.alias.text);
            changes.changed.contains(&key) || changes.added.contains(&key)
        })
        .map(|(index, _)| index)
        .collect();
    if !changed_uses.is_empty() {
        for (id, affected) in affected.iter_mut().enumerate().take(evaluated.n_cells()) {
            *affected = reads_used_sheet(evaluated, id, &changed_uses);
        }
    }
    // Walk in dependency order so an effect reaches everything downstream.
    for id in evaluated.order() {
        if touched[id] {
            continue;
        }
        let uses = evaluated.cell_at(id).uses;
        if uses.iter().any(|&used| touched[used] || affected[used]) {
            affected[id] = true;
        }
    }
    changes.affected = (0..now.len())
        .filter(|&id| affected[id])
        .map(|id| now[id].0.clone())
        .collect();
    changes
}

/// The sign-off line a checker adds to record that they checked the sheet
/// as it stands: `signoff by "…" on DATE fingerprint … cells name:digest …`.
pub fn signoff_line(evaluated: &Evaluated, by: &str, on: &str) -> String {
    let mut line = format!(
        "signoff by {} on {on} fingerprint {}",
        quoted(by),
        fingerprint(evaluated.source(), evaluated.sheet())
    );
    let digests = sheet_digests(evaluated);
    if !digests.is_empty() {
        line.push_str(" cells");
        for (name, digest) in digests {
            line.push(' ');
            line.push_str(&name);
            line.push(':');
            line.push_str(&digest);
        }
    }
    line
}

/// `text` as a sheet's quoted string: `"` and `\` escaped with `\`.
pub fn quoted(text: &str) -> String {
    let mut out = String::with_capacity(text.len() + 2);
    out.push('"');
    for c in text.chars() {
        if c == '"' || c == '\\' {
            out.push('\\');
        }
        out.push(c);
    }
    out.push('"');
    out
}
