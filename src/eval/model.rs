//! The evaluated sheet: plain data that every presentation (CLI, JSON,
//! notebook, report) reads. Nothing here refers to the syntax tree.

use crate::diag::{Diagnostic, Severity};
use crate::sheet::{CellId, Header};
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

/// One evaluated cell.
#[derive(Clone, Debug)]
pub struct CellResult {
    /// The cell's name.
    pub name: String,
    /// Its whole statement.
    pub span: Span,
    /// 1-based line of the statement.
    pub line: usize,
    /// The formula as written.
    pub formula: String,
    /// The description, if any.
    pub description: Option<String>,
    /// Whether the cell declares its unit in brackets.
    pub declared_unit: bool,
    /// Whether the cell is an input (a number or quantity as written).
    pub is_input: bool,
    /// The unit the value is shown in.
    pub display: DisplayUnit,
    /// The value, if it could be computed.
    pub value: Option<Quantity>,
    /// Ok, error or blocked.
    pub status: CellStatus,
    /// The cells its formula uses.
    pub uses: Vec<CellId>,
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

/// Everything evaluation found out about a sheet.
#[derive(Clone, Debug)]
pub struct Evaluated {
    /// The header.
    pub header: Header,
    /// Cells, by id (file order).
    pub cells: Vec<CellResult>,
    /// Checks, in file order.
    pub checks: Vec<CheckResult>,
    /// Headings, notes, cells and checks in file order.
    pub outline: Vec<OutlineItem>,
    /// Cell ids in evaluation (dependency) order.
    pub order: Vec<CellId>,
    /// Every finding, sorted by position.
    pub diagnostics: Vec<Diagnostic>,
    /// Line index of the source, for line/column output.
    pub lines: LineIndex,
}

impl Evaluated {
    /// The cell with this name.
    pub fn cell(&self, name: &str) -> Option<&CellResult> {
        self.cells.iter().find(|cell| cell.name == name)
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
