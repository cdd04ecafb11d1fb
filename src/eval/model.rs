//! The evaluated sheet: plain data that every presentation (CLI, JSON,
//! notebook, report) reads. Nothing here refers to the syntax tree.

use crate::base::{Diagnostic, Severity};
use std::sync::Arc;

use crate::base::{LineIndex, Span};
use crate::sheet::{CellId, Header, Sheet};
use crate::syntax::ast::{Comparison, ExprKind, NameRef, Target};
use crate::units::{DisplayUnit, Quantity, Value, VectorQuantity};

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

/// The range of a result over its inputs' tolerances, in SI units.
#[derive(Clone, Debug, PartialEq)]
pub struct CellRange {
    /// Guaranteed lower bound.
    pub low: f64,
    /// Guaranteed upper bound.
    pub high: f64,
    /// The first-order (linearised) estimate of the lower and upper bounds,
    /// where exact derivatives are known.
    pub first_order: Option<(f64, f64)>,
    /// How the bounds were found, which says what they promise.
    pub method: RangeMethod,
    /// The inputs ranked by their share of the range, largest first.
    pub sensitivities: Vec<Sensitivity>,
}

/// How a range over the tolerances was found, which says what it promises.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum RangeMethod {
    /// Interval arithmetic with outward rounding: the true range lies
    /// inside (the bounds may be wider than it).
    Guaranteed,
    /// Proven monotone in every input over the box, so the bounds are the
    /// formula's values at its two worst corners: exact up to rounding.
    WorstCorners,
    /// The sheet evaluated at every corner of the toleranced inputs (this
    /// many); the extremes found there, not a guarantee: a result that is
    /// not monotone may go further between the corners.
    Corners(usize),
}

impl RangeMethod {
    /// Words for people: what the range promises.
    pub fn describe(self) -> String {
        match self {
            RangeMethod::Guaranteed => "guaranteed bounds".to_string(),
            RangeMethod::WorstCorners => "exact: worst corners".to_string(),
            RangeMethod::Corners(n) => {
                format!("found at the {n} corners, not guaranteed between them")
            }
        }
    }

    /// Whether the range is proven to hold the true range.
    pub fn is_guaranteed(self) -> bool {
        !matches!(self, RangeMethod::Corners(_))
    }
}

impl CellRange {
    /// The bounds to show: a bound that is only rounding away from zero
    /// against the other (outward rounding of `0 .. 3` gives −5e−324) is
    /// shown as zero.
    pub fn shown_bounds(&self) -> (f64, f64) {
        let scale = self.low.abs().max(self.high.abs());
        let snap = |bound: f64| {
            if bound.abs() <= 1e-12 * scale {
                0.0
            } else {
                bound
            }
        };
        (snap(self.low), snap(self.high))
    }
}

/// How much one toleranced input moves a result.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Sensitivity {
    /// The input cell.
    pub input: CellId,
    /// ∂result/∂input at the nominal point, in SI units.
    pub derivative: f64,
    /// ∂ln result/∂ln input (none where the result or input is zero).
    pub normalized: Option<f64>,
    /// This input's share of the first-order range (0 to 1).
    pub share: f64,
}

/// A check at the worst case of the tolerances.
#[derive(Clone, Debug, PartialEq)]
pub struct CheckRange {
    /// How the worst case was found (the less certain of its sides').
    pub method: RangeMethod,
    /// The left side's range.
    pub lhs: CellRange,
    /// The right side's range.
    pub rhs: CellRange,
    /// The utilization at the worst case.
    pub worst_utilization: Option<f64>,
    /// Whether the check holds at the worst case.
    pub passes: bool,
}

/// A load case's results.
#[derive(Clone, Debug)]
pub struct CaseOutcome {
    /// The case's statement index.
    pub statement: usize,
    /// Its name.
    pub name: String,
    /// Its label.
    pub label: Option<String>,
    /// The chosen results ([`Evaluated::case_results`]), in that order.
    pub results: Vec<CaseValue>,
    /// Every check, in file order.
    pub checks: Vec<CaseCheck>,
    /// Whether the case could be evaluated at all.
    pub evaluated: bool,
}

/// One chosen result in one case.
#[derive(Clone, Debug)]
pub struct CaseValue {
    /// The value, if it could be computed.
    pub value: Option<Value>,
    /// Its range over the tolerances, if any.
    pub range: Option<CellRange>,
}

/// One check in one case.
#[derive(Clone, Debug)]
pub struct CaseCheck {
    /// Passed, failed, unknown, error or blocked in this case (at the worst
    /// case where there are tolerances).
    pub status: CheckStatus,
    /// Whether the comparison holds at the nominal values of this case.
    pub holds: Option<bool>,
    /// Utilization at the nominal values.
    pub utilization: Option<f64>,
    /// The worst case, where there are tolerances.
    pub worst: Option<CheckRange>,
    /// Why the worst case could not be established, where tolerances reach
    /// the check but no range could be found.
    pub worst_unknown: Option<String>,
}

impl CaseCheck {
    /// The utilization that counts: at the worst case if there is one.
    pub fn governing_utilization(&self) -> Option<f64> {
        self.worst
            .as_ref()
            .and_then(|w| w.worst_utilization)
            .or(self.utilization)
    }
}

/// A tolerance as offsets from the nominal value, in SI units.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Spread {
    /// How far below the nominal value the true value may be.
    pub below: f64,
    /// How far above.
    pub above: f64,
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
    /// The value, if it is a scalar that could be computed.
    pub value: Option<Quantity>,
    /// The value, if it is a vector that could be computed.
    pub vector: Option<VectorQuantity>,
    /// Ok, error or blocked.
    pub status: CellStatus,
    /// The cells its formula uses.
    pub uses: &'a [CellId],
    /// The solve block that gives this cell, as an index into
    /// [`Evaluated::solves`], if it is an unknown.
    pub solved_by: Option<usize>,
    /// Its tolerance, if it has one.
    pub spread: Option<Spread>,
}

impl CellResult<'_> {
    /// The value, scalar or vector.
    pub fn any_value(&self) -> Option<Value> {
        self.value
            .map(Value::Scalar)
            .or(self.vector.map(Value::Vector))
    }
}

/// How a solve block ended.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum SolveStatus {
    /// Converged; the unknowns have values.
    Solved,
    /// Could not be solved; a diagnostic says why.
    Failed,
    /// Not attempted: a line did not parse or an input failed.
    NotRun,
}

/// One equation of a solve block and how well the solution satisfies it.
#[derive(Clone, Debug)]
pub struct EquationReport {
    /// The equation as written (`lhs = rhs`), with a `.x`/`.y`/`.z` suffix
    /// for each component of a vector equation.
    pub text: String,
    /// Where it is written.
    pub span: crate::base::Span,
    /// Left minus right at the solution, in SI units.
    pub residual: Option<Quantity>,
    /// The unit the residual is shown in.
    pub display: DisplayUnit,
}

/// What a solve block did.
#[derive(Clone, Debug)]
pub struct SolveReport {
    /// The block's statement index.
    pub statement: usize,
    /// The whole block.
    pub span: crate::base::Span,
    /// Its unknowns' cells.
    pub unknowns: Vec<CellId>,
    /// Its equations (vector equations give one per component).
    pub equations: Vec<EquationReport>,
    /// Newton iterations taken.
    pub iterations: usize,
    /// Condition number of the scaled Jacobian at the solution.
    pub condition: Option<f64>,
    /// Whether the system is linear in its unknowns (solved in one step).
    pub linear: bool,
    /// How it ended.
    pub status: SolveStatus,
}

/// A free body: the forces declared on it and their resultant.
#[derive(Clone, Debug)]
pub struct FreeBody<'a> {
    /// The body's cell (its value is the resultant).
    pub cell: CellId,
    /// The body's name.
    pub name: &'a str,
    /// Each force's name and value.
    pub forces: Vec<(&'a str, Option<VectorQuantity>)>,
    /// ΣF, if every force evaluated.
    pub resultant: Option<VectorQuantity>,
}

/// The state of a check after evaluation.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum CheckStatus {
    /// The comparison holds everywhere it was judged: as written, at the
    /// worst case of the tolerances and in every load case.
    Passed,
    /// The comparison does not hold somewhere it was judged.
    Failed,
    /// It holds wherever it could be judged, but somewhere (the worst case
    /// of the tolerances, a load case) it could not be established. Never
    /// a pass: [`CheckResult::unknowns`] says where and why.
    Unknown,
    /// A side could not be evaluated; a diagnostic says why.
    Error,
    /// A side uses a failed cell.
    Blocked {
        /// The failed cell.
        by: CellId,
    },
}

impl CheckStatus {
    /// `passed`, `failed`, `unknown`, `error` or `blocked`, as in the JSON.
    pub fn as_str(self) -> &'static str {
        match self {
            CheckStatus::Passed => "passed",
            CheckStatus::Failed => "failed",
            CheckStatus::Unknown => "unknown",
            CheckStatus::Error => "error",
            CheckStatus::Blocked { .. } => "blocked",
        }
    }
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
    /// The verdict over everything judged: passed, failed, unknown, error
    /// or blocked (as written). Set once the load cases are in.
    pub status: CheckStatus,
    /// Whether the comparison holds at the nominal values as written.
    pub holds: Option<bool>,
    /// The check at the worst case of the tolerances, if any input has one.
    pub worst: Option<CheckRange>,
    /// Why the worst case could not be established, where tolerances reach
    /// the check but no range could be found.
    pub worst_unknown: Option<String>,
    /// Where the worst case was found by evaluating the sheet at the
    /// corners of the tolerances: each input's value there (SI).
    pub worst_corner: Option<Vec<(CellId, f64)>>,
    /// Everywhere the check fails.
    pub fails: Vec<Place>,
    /// Everywhere the check could not be established, with the reason.
    pub unknowns: Vec<Unsettled>,
}

/// Where a check was judged.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Place {
    /// The sheet as written, at the nominal values.
    AsWritten,
    /// The sheet as written, at the worst case of the tolerances.
    WorstCase,
    /// A load case (index into [`Evaluated::cases`]), at its nominal values.
    Case(usize),
    /// A load case at the worst case of its tolerances.
    CaseWorstCase(usize),
}

/// A place where a check could not be established, and why.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Unsettled {
    /// Where.
    pub place: Place,
    /// Why, in words.
    pub reason: String,
}

impl CheckResult {
    /// The comparison as written: `T_up <= WLL`.
    pub fn statement(&self) -> String {
        format!(
            "{} {} {}",
            self.lhs_text,
            self.comparison.symbol(),
            self.rhs_text
        )
    }

    /// The utilization that counts: at the worst case if there is one.
    pub fn governing_utilization(&self) -> Option<f64> {
        self.worst
            .as_ref()
            .and_then(|w| w.worst_utilization)
            .or(self.utilization)
    }

    /// `Some(true)` if passed, `Some(false)` if failed, `None` if it could
    /// not be established (unknown, error or blocked).
    pub fn passed(&self) -> Option<bool> {
        match self.status {
            CheckStatus::Passed => Some(true),
            CheckStatus::Failed => Some(false),
            CheckStatus::Unknown | CheckStatus::Error | CheckStatus::Blocked { .. } => None,
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
    /// A solve block, by index into [`Evaluated::solves`].
    Solve(usize),
    /// A load case, by statement index.
    Case(usize),
    /// A line that did not parse.
    Invalid {
        /// Where it is.
        span: Span,
    },
    /// A simulate block, by index into [`Evaluated::runs`].
    Simulate(usize),
    /// A `use` line, by index into the sheet's imports.
    Use(usize),
    /// A sweep block, by index into [`Evaluated::sweeps`].
    Sweep(usize),
    /// A table, by index into the sheet's tables ([`Evaluated::tables`]).
    Table(usize),
    /// A parts list or a lift, with its rows.
    Members(Box<MembersReport>),
}

/// A parts list or a lift as the outputs show it: a table whose rows are
/// the items (or points) and whose columns are cells of the block.
#[derive(Clone, Debug, PartialEq)]
pub struct MembersReport {
    /// The block's statement index.
    pub statement: usize,
    /// The block's head line (`parts …:`, `lift …:`).
    pub span: Span,
    /// Whether it is a lift (else a parts list).
    pub is_lift: bool,
    /// The list's or lift's name.
    pub name: String,
    /// Its label, if any.
    pub label: Option<String>,
    /// The column headings after the item's name: a list's quantity names;
    /// a lift's `position` and `load`.
    pub columns: Vec<String>,
    /// One row per item or point.
    pub rows: Vec<MemberRow>,
    /// For a lift: the cells of its weight and centre of gravity.
    pub carried: Option<(CellId, CellId)>,
    /// Every cell of the block, in written order.
    pub cells: Box<[CellId]>,
    /// The sheet's cells that use the block's cells (a list's aggregates).
    pub users: Vec<CellId>,
}

/// One item of a parts list or one point of a lift.
#[derive(Clone, Debug, PartialEq)]
pub struct MemberRow {
    /// The item's or point's name.
    pub name: String,
    /// Its description, if any.
    pub description: Option<String>,
    /// The cell of each column, where the row has one.
    pub cells: Vec<Option<CellId>>,
}

fn tolerance_span(tolerance: &crate::syntax::ast::Tolerance) -> Span {
    match tolerance {
        crate::syntax::ast::Tolerance::PlusMinus { span, .. }
        | crate::syntax::ast::Tolerance::Range { span, .. } => *span,
    }
}

/// Everything evaluation found out about a sheet. It owns the linked sheet
/// and its source, and lends out [`CellResult`] views of each cell.
#[derive(Clone, Debug)]
pub struct Evaluated {
    pub(crate) sheet: Arc<Sheet>,
    pub(crate) source: Arc<str>,
    /// Per cell, by id (the evaluator's columns, moved, not copied): the
    /// value if it could be computed, the status, the spread of a cell with
    /// a tolerance, the unit the value is shown in, whether it is an input.
    pub(crate) values: Vec<Option<Value>>,
    pub(crate) statuses: Vec<CellStatus>,
    pub(crate) spreads: Vec<Option<Spread>>,
    pub(crate) displays: Vec<DisplayUnit>,
    pub(crate) inputs: Vec<bool>,
    /// Checks, in file order.
    pub checks: Vec<CheckResult>,
    /// Solve blocks, in evaluation order.
    pub solves: Vec<SolveReport>,
    /// Each cell's range over the tolerances (empty when no cell has one).
    pub ranges: Vec<Option<CellRange>>,
    /// Each vector cell's range by component (SI lowest and highest), found
    /// at the corners of the tolerances, by cell id.
    pub vector_ranges: Vec<(CellId, Vec<(f64, f64)>)>,
    /// The load cases, in file order.
    pub cases: Vec<CaseOutcome>,
    /// The cells tabulated for every case.
    pub case_results: Vec<CellId>,
    /// For each check, the case that governs it (highest utilization):
    /// `None` for the sheet as written, `Some(index into cases)` otherwise.
    pub governing: Vec<Option<usize>>,
    /// Simulate blocks' runs, in evaluation order.
    pub runs: Vec<super::RunReport>,
    /// Sweep blocks' studies, in file order: they never change a verdict.
    pub sweeps: Vec<super::SweepReport>,
    /// Headings, notes, cells, solve blocks and checks in file order.
    pub outline: Vec<OutlineItem>,
    /// Every finding, sorted by position.
    pub diagnostics: Vec<Diagnostic>,
    /// Line index of the source, for line/column output.
    pub lines: LineIndex,
    /// Every reading of a table by the sheet as written, in file order.
    pub table_reads: Vec<super::TableRead>,
    /// Whether each table can be read (its rows read and its units known).
    pub(crate) tables_readable: Vec<bool>,
}

impl Evaluated {
    /// The sheet's header.
    pub fn header(&self) -> &Header {
        &self.sheet.header
    }

    /// The sheet's tables, in file order.
    pub fn tables(&self) -> &[crate::sheet::Table] {
        &self.sheet.tables
    }

    /// Whether table `index` can be read: its rows read, its keys sorted,
    /// its grid complete and its units known.
    pub fn table_readable(&self, index: usize) -> bool {
        self.tables_readable.get(index).copied().unwrap_or(false)
    }

    /// The files the sheet read beside it.
    pub fn files(&self) -> &crate::sheet::SheetFiles {
        &self.sheet.files
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
        self.values.len()
    }

    /// The cell with this id.
    pub fn cell_at(&self, id: CellId) -> CellResult<'_> {
        let cell = self.sheet.cell(id);
        let value = self.values[id];
        let span = self.sheet.cell_span(id);
        let line_span = cell.name.span;
        CellResult {
            id,
            name: &cell.name.text,
            span,
            line: self.lines.line_of(line_span.start()) + 1,
            formula: formula_text(&self.sheet, id, &self.source),
            description: cell.description.map(|d| d.text.as_str()),
            declared_unit: cell.unit.is_some(),
            is_input: self.inputs[id],
            display: &self.displays[id],
            value: value.and_then(|v| v.scalar()),
            vector: value.and_then(|v| v.vector()),
            status: self.statuses[id],
            uses: &self.sheet.uses[id],
            solved_by: self
                .solves
                .iter()
                .position(|report| report.unknowns.contains(&id)),
            spread: self.spreads[id],
        }
    }

    /// Every cell, by id (file order).
    pub fn cells(&self) -> impl ExactSizeIterator<Item = CellResult<'_>> {
        (0..self.n_cells()).map(|id| self.cell_at(id))
    }

    /// Cell ids in evaluation (dependency) order; a solve block's unknowns
    /// come together.
    pub fn order(&self) -> Vec<CellId> {
        self.sheet.cell_order().collect()
    }

    /// An evaluator holding this model's values, to compute an expression
    /// over them (a force written as a formula on a body).
    fn evaluator_over_values(&self) -> super::Evaluator<'_> {
        super::Evaluator::resume(
            &self.sheet,
            &self.source,
            self.values.clone(),
            self.statuses.clone(),
            self.spreads.clone(),
        )
    }

    /// Every free body declared with `body`, in file order, each force with
    /// its value: a named force's is its cell's, an expression's is computed
    /// from the evaluated cells it uses.
    pub fn free_bodies(&self) -> Vec<FreeBody<'_>> {
        let mut evaluator: Option<super::Evaluator<'_>> = None;
        (0..self.n_cells())
            .filter_map(|id| {
                let body = self.sheet.body(id)?;
                let forces = body
                    .force_exprs()
                    .into_iter()
                    .map(|force| {
                        let value = match &force.kind {
                            ExprKind::Name(NameRef {
                                target: Target::Cell(cell),
                                ..
                            }) => self.values[*cell],
                            _ => evaluator
                                .get_or_insert_with(|| self.evaluator_over_values())
                                .eval(force)
                                .ok(),
                        };
                        (
                            force.span.text(&self.source),
                            value.and_then(|v| v.vector()),
                        )
                    })
                    .collect();
                Some(FreeBody {
                    cell: id,
                    name: &body.name.text,
                    forces,
                    resultant: self.values[id].and_then(|v| v.vector()),
                })
            })
            .collect()
    }

    /// The run of the simulate block that gives a cell (its time or a
    /// state), as an index into [`Evaluated::runs`].
    pub fn run_of(&self, id: CellId) -> Option<usize> {
        self.runs
            .iter()
            .position(|run| run.time == id || run.states.iter().any(|s| s.cell == id))
    }

    /// The cell with this name.
    pub fn cell(&self, name: &str) -> Option<CellResult<'_>> {
        self.sheet.names.get(name).map(|&id| self.cell_at(id))
    }

    /// The value of the cell `name` as a uom quantity (`Force`, `Mass`, …):
    /// `None` if there is no such cell, its value could not be computed, or
    /// its dimension is not `T`'s.
    pub fn quantity<T: crate::units::TypedQuantity>(&self, name: &str) -> Option<T> {
        let cell = self
            .cell(name)
            .filter(|cell| cell.status == CellStatus::Ok)?;
        cell.value?.to_typed()
    }

    /// Number of diagnostics of this severity.
    pub fn count(&self, severity: Severity) -> usize {
        self.diagnostics
            .iter()
            .filter(|d| d.severity == severity)
            .count()
    }

    /// The counts every presentation shows: cells, findings, and checks
    /// passed, failed and unknown.
    pub fn summary(&self) -> super::Summary {
        super::Summary::of(
            self.n_cells(),
            &self.checks,
            self.diagnostics.iter().map(|d| d.severity),
        )
    }

    /// Whether the sheet has no errors and every check passed everywhere it
    /// was judged.
    pub fn is_clean(&self) -> bool {
        self.summary().is_clean()
    }
}

/// A cell's formula as written, its tolerance included; `(solved)` or
/// `(simulated)` for a cell a block gives.
pub(crate) fn formula_text<'s>(sheet: &Sheet, id: CellId, source: &'s str) -> &'s str {
    match (sheet.cell(id).expr, sheet.tolerance(id)) {
        (Some(expr), Some(tolerance)) => expr.span.to(tolerance_span(tolerance)).text(source),
        (Some(expr), None) => expr.span.text(source),
        (None, _) if sheet.is_simulated(id) => "(simulated)",
        (None, _) => "(solved)",
    }
}
