//! The evaluated sheet: plain data that every presentation (CLI, JSON,
//! notebook, report) reads. Nothing here refers to the syntax tree.

use crate::diag::{Diagnostic, Severity};
use std::sync::Arc;

use crate::sheet::{CellId, Header, Sheet};
use crate::syntax::ast::Comparison;
use crate::syntax::{LineIndex, Span};
use crate::units::{DisplayUnit, Quantity};

/// The state of a cell after evaluation.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum CellStatus {
    /// Evaluated.
    Ok,
    /// Its own formula or definition is wrong; a diagnostic says why.
    Error,
    /// It uses a cell that failed; `by` is the failed cell at the root.
    Blocked {
        /// The failed cell.
        by: CellId,
    },
}

impl CellStatus {
    /// `ok`, `error` or `blocked`, as in the JSON output.
    pub fn as_str(self) -> &'static str {
        match self {
            CellStatus::Ok => "ok",
            CellStatus::Error => "error",
            CellStatus::Blocked { .. } => "blocked",
        }
    }
}

/// What evaluation computed for one cell.
#[derive(Clone, Debug)]
pub struct CellOutcome {
    /// The value, if it could be computed.
    pub value: Option<Quantity>,
    /// Ok, error or blocked.
    pub status: CellStatus,
    /// The unit the value is shown in.
    pub display: DisplayUnit,
    /// Whether the cell is an input (a number or quantity as written).
    pub is_input: bool,
}

/// One evaluated cell as presentation sees it: what was written and what
/// was computed, borrowed from the [`Evaluated`] sheet.
#[derive(Clone, Copy, Debug)]
pub struct CellResult<'a> {
    /// The cell's id.
    pub id: CellId,
    /// The cell's name.
    pub name: &'a str,
    /// Its whole statement.
    pub span: Span,
    /// 1-based line of the statement.
    pub line: usize,
    /// The formula as written.
    pub formula: &'a str,
    /// The description, if any.
    pub description: Option<&'a str>,
    /// Whether the cell declares its unit in brackets.
    pub declared_unit: bool,
    /// Whether the cell is an input (a number or quantity as written).
    pub is_input: bool,
    /// The unit the value is shown in.
    pub display: &'a DisplayUnit,
    /// The value, if it could be computed.
    pub value: Option<Quantity>,
    /// Ok, error or blocked.
    pub status: CellStatus,
    /// The cells its formula uses.
    pub uses: &'a [CellId],
}

/// The state of a check after evaluation.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum CheckStatus {
    /// The comparison holds.
    Passed,
    /// The comparison does not hold.
    Failed,
    /// A side could not be evaluated; a diagnostic says why.
    Error,
    /// A side uses a failed cell.
    Blocked {
        /// The failed cell.
        by: CellId,
    },
}

/// One evaluated check.
#[derive(Clone, Debug)]
pub struct CheckResult {
    /// The whole statement.
    pub span: Span,
    /// The label, if any.
    pub label: Option<String>,
    /// The left side as written.
    pub lhs_text: String,
    /// The right side as written.
    pub rhs_text: String,
    /// The comparison.
    pub comparison: Comparison,
    /// The left side's value.
    pub lhs: Option<Quantity>,
    /// The right side's value.
    pub rhs: Option<Quantity>,
    /// The unit both sides are shown in.
    pub display: DisplayUnit,
    /// A/B for `<` and `<=`, B/A for `>` and `>=`.
    pub utilization: Option<f64>,
    /// Passed, failed, error or blocked.
    pub status: CheckStatus,
}

impl CheckResult {
    /// `Some(true)` if passed, `Some(false)` if failed, `None` if it could
    /// not be evaluated.
    pub fn passed(&self) -> Option<bool> {
        match self.status {
            CheckStatus::Passed => Some(true),
            CheckStatus::Failed => Some(false),
            CheckStatus::Error | CheckStatus::Blocked { .. } => None,
        }
    }
}

/// The sheet's content in file order.
#[derive(Clone, Debug, PartialEq)]
pub enum OutlineItem {
    /// A heading.
    Heading {
        /// 1 for `#`, 2 for `##`.
        level: u8,
        /// Its text.
        text: String,
    },
    /// A note.
    Note {
        /// Its text.
        text: String,
    },
    /// A cell, by id.
    Cell(CellId),
    /// A check, by index.
    Check(usize),
    /// A line that did not parse.
    Invalid {
        /// Where it is.
        span: Span,
    },
}

/// Everything evaluation found out about a sheet. It owns the linked sheet
/// and its source, and lends out [`CellResult`] views of each cell.
#[derive(Clone, Debug)]
pub struct Evaluated {
    pub(super) sheet: Arc<Sheet>,
    pub(super) source: Arc<str>,
    pub(super) outcomes: Vec<CellOutcome>,
    /// Checks, in file order.
    pub checks: Vec<CheckResult>,
    /// Headings, notes, cells and checks in file order.
    pub outline: Vec<OutlineItem>,
    /// Every finding, sorted by position.
    pub diagnostics: Vec<Diagnostic>,
    /// Line index of the source, for line/column output.
    pub lines: LineIndex,
}

impl Evaluated {
    /// The sheet's header.
    pub fn header(&self) -> &Header {
        &self.sheet.header
    }

    /// The linked sheet that was evaluated.
    pub fn sheet(&self) -> &Sheet {
        &self.sheet
    }

    /// The source text.
    pub fn source(&self) -> &str {
        &self.source
    }

    /// Number of cells.
    pub fn n_cells(&self) -> usize {
        self.outcomes.len()
    }

    /// The cell with this id.
    pub fn cell_at(&self, id: CellId) -> CellResult<'_> {
        let cell = self.sheet.cell(id);
        let outcome = &self.outcomes[id];
        let span = self.sheet.cell_span(id);
        CellResult {
            id,
            name: &cell.name.text,
            span,
            line: self.lines.line_of(span.start()) + 1,
            formula: cell.expr.span.text(&self.source),
            description: cell.description.as_ref().map(|d| d.text.as_str()),
            declared_unit: cell.unit.is_some(),
            is_input: outcome.is_input,
            display: &outcome.display,
            value: outcome.value,
            status: outcome.status,
            uses: &self.sheet.uses[id],
        }
    }

    /// Every cell, by id (file order).
    pub fn cells(&self) -> impl ExactSizeIterator<Item = CellResult<'_>> {
        (0..self.outcomes.len()).map(|id| self.cell_at(id))
    }

    /// Cell ids in evaluation (dependency) order.
    pub fn order(&self) -> &[CellId] {
        &self.sheet.order.order
    }

    /// The cell with this name.
    pub fn cell(&self, name: &str) -> Option<CellResult<'_>> {
        self.sheet.names.get(name).map(|&id| self.cell_at(id))
    }

    /// Number of diagnostics of this severity.
    pub fn count(&self, severity: Severity) -> usize {
        self.diagnostics
            .iter()
            .filter(|d| d.severity == severity)
            .count()
    }

    /// Whether the sheet has no errors and every check passed.
    pub fn is_clean(&self) -> bool {
        self.count(Severity::Error) == 0
            && self.checks.iter().all(|check| check.passed() == Some(true))
    }
}
