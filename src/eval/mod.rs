//! The core evaluator: computes a cell's formula and a check's verdict with
//! the dimension checked at every operation and a source span on every
//! error, compiles formulas into programs, and holds the evaluated model's
//! types that analysis and presentation read. It runs no block: the whole
//! sheet's evaluation, which hands each solve, simulate and case node to its
//! block kind, is [`crate::blocks::evaluate`].

mod angle_display;
mod conditional;
mod conversion;
pub(crate) mod explain;
mod expr;
pub(crate) mod formula;
pub(crate) mod model;
pub mod program;
pub(crate) mod run_model;
pub(crate) mod sweep_model;
mod table;
pub(crate) mod verdict;

/// The operators and comparisons the evaluated model's formulas and checks
/// carry (`formula::Term`, [`CheckResult::comparison`]): the syntax's own,
/// so presentation reads them here and never the syntax tree.
pub use crate::syntax::ast::{BinaryOp, Comparison, Reading, Relation};
pub use conversion::{Conversion, ConversionError, WrittenConversion, convert};
pub use explain::{format_result, format_value};
pub use model::{
    CaseCheck, CaseOutcome, CaseValue, CellRange, CellResult, CellStatus, CheckRange, CheckResult,
    CheckStatus, EquationReport, Evaluated, FreeBody, MemberRow, MembersReport, OutlineItem, Place,
    RangeMethod, Sensitivity, SolveReport, SolveStatus, Spread, Unsettled,
};
pub use run_model::{PlotSeries, RunColumn, RunEvent, RunReport, RunRow, RunStatus, StateSlots};
pub use sweep_model::{
    Crossing, MARGIN_TOLERANCE, Margin, SweepCheck, SweepColumn, SweepPoint, SweepReport,
    VerifiedMargin,
};
pub use table::TableRead;
pub use verdict::{Summary, count, utilization_note};

use std::cell::{Cell, RefCell};
use std::sync::Arc;

use rustc_hash::FxHashMap;

use explain::{DeclaredMismatch, Operand, Style, declared_mismatch, mismatch};

use crate::base::Span;
use crate::base::{Code, Diagnostic};
use crate::sheet::{CellId, NodeId, Sheet};
use crate::syntax::ast::{
    Expr, ExprKind, NameRef, Override, RunQuery, Target, Tolerance, UnitExpr,
};
use crate::units::{self, DisplayUnit, Quantity, ResolvedUnit, Value, pick_unit};

/// A value, or the diagnostic that explains why there is none.
pub(crate) type Evaluation = Result<Value, Box<Diagnostic>>;

/// How an expression reading a finished run (`v at stop`, `max of x`) is
/// answered: the simulate block kind supplies it (see
/// `blocks::evaluator`), so the core evaluator runs no block itself.
pub(crate) type RunQueryAnswer =
    for<'e, 'q> fn(&'q Evaluator<'e>, &'q RunQuery, Span) -> Evaluation;

/// The answer where no block kind is attached (a lone expression, as in
/// `heft convert`): there is no run to read.
fn no_run_to_read(_: &Evaluator<'_>, _: &RunQuery, span: Span) -> Evaluation {
    Err(Box::new(Diagnostic::error(
        Code::BadRunQuery,
        span,
        "this value names no state of a simulate block",
    )))
}

/// Evaluates one expression on its own, with the built-in constants but no
/// cells (`heft convert "100 lbm * g0" lbf`). Vectors are refused.
pub fn evaluate_expression(text: &str) -> Result<Quantity, Diagnostic> {
    evaluate_parsed(&crate::syntax::parse_expression(text)?, text)
}

/// [`evaluate_expression`] of an expression already parsed from `text`.
fn evaluate_parsed(expr: &Expr, text: &str) -> Result<Quantity, Diagnostic> {
    let (sheet, source) = (Arc::new(Sheet::parse("")), Arc::from(text));
    match Evaluator::new(&sheet, &source)
        .eval(expr)
        .map_err(|diagnostic| *diagnostic)?
    {
        Value::Scalar(quantity) => Ok(quantity),
        Value::Vector(_) => Err(Diagnostic::error(
            Code::DimensionMismatch,
            expr.span,
            "expected a scalar, not a vector",
        )),
    }
}

/// Reads one unit expression on its own: the unit as parsed, and its
/// dimension and SI factor.
pub fn evaluate_unit(text: &str) -> Result<(UnitExpr, ResolvedUnit), Diagnostic> {
    let unit = crate::syntax::parse_unit(text)?;
    let (sheet, source) = (Arc::new(Sheet::parse("")), Arc::from(text));
    let resolved = Evaluator::new(&sheet, &source)
        .resolve_unit(&unit)
        .map_err(|diagnostic| *diagnostic)?;
    Ok((unit, resolved))
}

/// Whether `a COMPARISON b` is true: the one reading of `<`, `<=`, `>=`
/// and `>` for checks and for a simulate block's conditions at the start.
pub(crate) fn comparison_holds(comparison: Comparison, a: f64, b: f64) -> bool {
    match comparison {
        Comparison::AtMost => a <= b,
        Comparison::Below => a < b,
        Comparison::AtLeast => a >= b,
        Comparison::Above => a > b,
    }
}

/// The evaluation in progress: values and statuses by cell.
pub(crate) struct Evaluator<'a> {
    pub(crate) sheet: &'a Sheet,
    pub(crate) source: &'a str,
    /// Units already looked up, by their text: a sheet repeats a few units
    /// many times.
    pub(crate) unit_cache: RefCell<FxHashMap<&'a str, ResolvedUnit>>,
    /// Display texts already shared, by their text.
    pub(crate) unit_texts: RefCell<FxHashMap<&'a str, Arc<str>>>,
    pub(crate) style: Style,
    pub(crate) values: Vec<Option<Value>>,
    pub(crate) statuses: Vec<CellStatus>,
    /// Each cell's tolerance, as offsets below and above its value.
    pub(crate) spreads: Vec<Option<Spread>>,
    /// Formulas replaced by the load case being evaluated.
    pub(crate) overrides: FxHashMap<CellId, &'a Override>,
    /// The node order of the load case being evaluated, whose overrides may
    /// use cells the sheet's own order puts later; `None`: the sheet's.
    pub(crate) case_order: Option<Vec<NodeId>>,
    /// Toleranced inputs held at one value (SI) while the sheet is evaluated
    /// at a corner of the tolerances.
    pub(crate) pins: FxHashMap<CellId, f64>,
    pub(crate) solves: Vec<SolveReport>,
    pub(crate) diagnostics: Vec<Diagnostic>,
    /// Simulate blocks' runs, in evaluation order.
    pub(crate) runs: Vec<RunReport>,
    /// While a point of a run is probed: the run's first cell and number of
    /// cells (time and states), whose values `probe_values` then holds.
    pub(crate) probe_range: Cell<Option<(CellId, usize)>>,
    pub(crate) probe_values: RefCell<Vec<Value>>,
    /// How a run query is answered.
    pub(crate) run_query: RunQueryAnswer,
    /// While `Some`, how each piecewise formula's test came out, by where it
    /// is written (1: held, 2: did not, 3: both), for the corner search.
    pub(crate) tests_seen: RefCell<Option<FxHashMap<Span, u8>>>,
    /// The sheet's tables with their units resolved (`None`: unreadable).
    pub(crate) tables: Vec<Option<table::ReadableTable>>,
    /// The readings of tables by the sheet as written, by `lookup` span.
    pub(crate) table_reads: RefCell<Vec<TableRead>>,
}

impl<'a> Evaluator<'a> {
    pub(crate) fn new(sheet: &'a Sheet, source: &'a str) -> Self {
        let n_cells = sheet.cells.len();
        let mut evaluator = Evaluator::resume(
            sheet,
            source,
            vec![None; n_cells],
            vec![CellStatus::Error; n_cells],
            vec![None; n_cells],
        );
        evaluator.diagnostics = sheet.diagnostics.clone();
        if !sheet.tables.is_empty() {
            let (_, unit_problems) = table::readable_tables(sheet, &evaluator);
            evaluator.diagnostics.extend(unit_problems);
        }
        evaluator
    }

    /// An evaluator that carries on from earlier results, one per cell
    /// (the notebook's): nothing per cell is allocated, so re-evaluating a
    /// few cells of a large sheet costs only those cells. Starts with no
    /// diagnostics.
    pub(crate) fn resume(
        sheet: &'a Sheet,
        source: &'a str,
        values: Vec<Option<Value>>,
        statuses: Vec<CellStatus>,
        spreads: Vec<Option<Spread>>,
    ) -> Self {
        Evaluator {
            sheet,
            source,
            unit_cache: RefCell::default(),
            unit_texts: RefCell::default(),
            style: Style {
                system: sheet.header.display,
                sig_figs: sheet.header.sig_figs,
            },
            values,
            statuses,
            spreads,
            overrides: FxHashMap::default(),
            case_order: None,
            pins: FxHashMap::default(),
            solves: Vec::new(),
            diagnostics: Vec::new(),
            runs: Vec::new(),
            probe_range: Cell::new(None),
            probe_values: RefCell::new(Vec::new()),
            run_query: no_run_to_read,
            tests_seen: RefCell::new(None),
            tables: Vec::new(),
            table_reads: RefCell::new(Vec::new()),
        }
        .with_tables()
    }

    /// The findings of the sheet's tables' units (what [`Evaluator::new`]
    /// adds to the sheet's own).
    pub(crate) fn table_unit_problems(&self) -> Vec<Diagnostic> {
        if self.sheet.tables.is_empty() {
            return Vec::new();
        }
        table::readable_tables(self.sheet, self).1
    }

    /// The same evaluator with the sheet's tables' units resolved.
    fn with_tables(mut self) -> Self {
        if !self.sheet.tables.is_empty() {
            self.tables = table::readable_tables(self.sheet, &self).0;
        }
        self
    }

    /// The same evaluator, answering run queries with `answer`.
    pub(crate) fn answering_run_queries(mut self, answer: RunQueryAnswer) -> Self {
        self.run_query = answer;
        self
    }

    pub(crate) fn evaluate_cell(&mut self, id: CellId) {
        if self.sheet.broken[id] {
            self.statuses[id] = CellStatus::Error;
            return;
        }
        let blocker = match self.overrides.get(&id) {
            Some(replacement) => self.blocker(&crate::sheet::override_uses(replacement)),
            None => self.blocker(&self.sheet.uses[id]),
        };
        if let Some(blocker) = blocker {
            self.statuses[id] = CellStatus::Blocked { by: blocker };
            return;
        }
        match self.compute_cell(id) {
            Ok(value) => {
                self.values[id] = Some(value);
                self.statuses[id] = CellStatus::Ok;
            }
            Err(diagnostic) => {
                self.diagnostics.push(*diagnostic);
                self.statuses[id] = CellStatus::Error;
            }
        }
    }

    /// Gives every cell of a block the block's status; the cells of a
    /// block that did not succeed have no value.
    pub(crate) fn settle_block_cells(&mut self, cells: &[CellId], status: CellStatus) {
        for &id in cells {
            self.statuses[id] = status;
            if status != CellStatus::Ok {
                self.values[id] = None;
            }
        }
    }

    /// A cell's value in SI units, if it has a scalar one.
    pub(crate) fn scalar_si(&self, id: CellId) -> Option<f64> {
        self.values[id].and_then(|v| v.scalar()).map(|q| q.si)
    }

    /// The failed cell at the root of whatever stops these uses, if any.
    pub(crate) fn blocker(&self, uses: &[CellId]) -> Option<CellId> {
        uses.iter().find_map(|&used| match self.statuses[used] {
            CellStatus::Ok => None,
            CellStatus::Error => Some(used),
            CellStatus::Blocked { by } => Some(by),
        })
    }

    fn compute_cell(&mut self, id: CellId) -> Evaluation {
        let cell = self.sheet.cell(id);
        let (expr, tolerance) = match self.overrides.get(&id) {
            Some(replacement) => (Some(&replacement.expr), replacement.tolerance.as_deref()),
            None => (cell.expr, self.sheet.tolerance(id)),
        };
        let Some(expr) = expr else {
            return Err(Box::new(Diagnostic::error(
                Code::ParseError,
                cell.name.span,
                "this cell has no formula",
            )));
        };
        if let Some(body) = self.sheet.body(id) {
            self.check_forces(body)?;
        }
        let mut value = self.eval(expr)?;
        if let Some(tolerance) = tolerance {
            let (nominal, spread) = self.apply_tolerance(value, tolerance)?;
            value = Value::Scalar(nominal);
            self.spreads[id] = Some(spread);
            if let Some(&pinned) = self.pins.get(&id) {
                value = Value::Scalar(Quantity::new(pinned, nominal.dimension));
            }
        }
        if let Some(unit) = cell.unit {
            self.check_declared(cell.name.text.as_str(), unit, expr, value)?;
        }
        Ok(value)
    }

    /// The nominal value and spread of a cell with a tolerance: `± 3 %` is
    /// relative, `± 0.05 m` absolute, `.. 1900 kg` makes the formula the lower
    /// bound and the midpoint the nominal value.
    fn apply_tolerance(
        &self,
        value: Value,
        tolerance: &Tolerance,
    ) -> Result<(Quantity, Spread), Box<Diagnostic>> {
        let bad = |span, message: String| {
            Box::new(
                Diagnostic::error(Code::BadTolerance, span, message)
                    .with_help("write `± 3 %`, `± 0.05 m` (the value's unit) or `lower .. upper`"),
            )
        };
        let Value::Scalar(value) = value else {
            return Err(bad(
                tolerance.expr().span,
                "a tolerance needs a scalar value, not a vector".to_string(),
            ));
        };
        let bound = match self.eval(tolerance.expr())? {
            Value::Scalar(bound) => bound,
            Value::Vector(_) => {
                return Err(bad(
                    tolerance.expr().span,
                    "a tolerance is a scalar".to_string(),
                ));
            }
        };
        match tolerance {
            Tolerance::PlusMinus { amount, .. } => {
                let percent = matches!(&amount.kind, ExprKind::Quantity { unit, .. }
                    if unit.factors.len() == 1 && &*unit.factors[0].symbol == "%");
                let radius = if percent {
                    value.si.abs() * bound.si.abs()
                } else if bound.dimension == value.dimension {
                    bound.si.abs()
                } else {
                    return Err(bad(
                        amount.span,
                        format!(
                            "the tolerance is {} but the value is {}",
                            bound.dimension.describe(),
                            value.dimension.describe()
                        ),
                    ));
                };
                Ok((
                    value,
                    Spread {
                        below: radius,
                        above: radius,
                    },
                ))
            }
            Tolerance::Range { upper, .. } => {
                if bound.dimension != value.dimension {
                    return Err(bad(
                        upper.span,
                        format!(
                            "the upper bound is {} but the lower bound is {}",
                            bound.dimension.describe(),
                            value.dimension.describe()
                        ),
                    ));
                }
                if bound.si < value.si {
                    return Err(bad(
                        upper.span,
                        "the upper bound is below the lower bound".to_string(),
                    ));
                }
                let half = 0.5 * (bound.si - value.si);
                Ok((
                    Quantity::new(value.si + half, value.dimension),
                    Spread {
                        below: half,
                        above: half,
                    },
                ))
            }
        }
    }

    /// Fails unless `value` has the dimension of the declared `unit`.
    fn check_declared(
        &self,
        name: &str,
        unit: &UnitExpr,
        expr: &Expr,
        value: Value,
    ) -> Result<(), Box<Diagnostic>> {
        let declared = self.resolve_unit(unit)?;
        if declared.dimension == value.dimension() {
            return Ok(());
        }
        Err(Box::new(declared_mismatch(
            &DeclaredMismatch {
                name,
                unit_text: unit.span.text(self.source),
                unit_span: unit.span,
                declared: declared.dimension,
                formula: expr.span.text(self.source),
                formula_span: expr.span,
                formula_is_name: matches!(expr.kind, ExprKind::Name(_)),
                value,
            },
            self.style,
        )))
    }

    /// Every force listed on a body must be a force vector. A force that
    /// has no value is left to the resultant's own evaluation to report.
    fn check_forces(&self, body: &crate::syntax::ast::BodyDef) -> Result<(), Box<Diagnostic>> {
        for force in body.force_exprs() {
            let Ok(value) = self.eval(force) else {
                continue;
            };
            let text = force.span.text(self.source);
            let problem = match value {
                Value::Scalar(q) => Some(format!(
                    "`{text}` is a scalar ({}); a force on a body is a vector",
                    self.style.show(q)
                )),
                Value::Vector(v) if v.dimension != units::Dimension::FORCE => Some(format!(
                    "`{text}` is a vector of {}, not of force",
                    v.dimension.describe()
                )),
                Value::Vector(_) => None,
            };
            if let Some(message) = problem {
                return Err(Box::new(
                    Diagnostic::error(Code::BadForce, force.span, message)
                        .with_help("give each force its direction: vec(Fx, Fy) or polar(F, angle); a weight is vec(0 N, -m * g0)"),
                ));
            }
        }
        Ok(())
    }

    pub(crate) fn evaluate_check(&mut self, index: usize) -> CheckResult {
        let check = self.sheet.check(index);
        let span = self.sheet.check_span(index);
        let mut result = CheckResult {
            span,
            label: check.label.as_ref().map(|label| label.text.clone()),
            lhs_text: check.lhs.span.text(self.source).to_string(),
            rhs_text: check.rhs.span.text(self.source).to_string(),
            comparison: check.comparison,
            lhs: None,
            rhs: None,
            display: DisplayUnit::none(),
            utilization: None,
            status: CheckStatus::Error,
            holds: None,
            worst: None,
            worst_unknown: None,
            worst_corner: None,
            fails: Vec::new(),
            unknowns: Vec::new(),
        };
        if self.sheet.broken_checks[index] {
            return result;
        }
        if let Some(blocker) = self.blocker(&self.sheet.check_uses[index]) {
            result.status = CheckStatus::Blocked { by: blocker };
            return result;
        }
        let sides = self
            .eval(&check.lhs)
            .and_then(|lhs| Ok((lhs, self.eval(&check.rhs)?)));
        let (lhs, rhs) = match sides {
            Ok(sides) => sides,
            Err(diagnostic) => {
                self.diagnostics.push(*diagnostic);
                return result;
            }
        };
        let (Value::Scalar(lhs), Value::Scalar(rhs)) = (lhs, rhs) else {
            self.diagnostics.push(
                Diagnostic::error(
                    Code::DimensionMismatch,
                    span,
                    "a check compares scalars, not vectors",
                )
                .with_help("compare a magnitude or a component: mag(F) <= F_max, F.y >= 0 N"),
            );
            return result;
        };
        if lhs.dimension != rhs.dimension {
            let left = Operand {
                span: check.lhs.span,
                text: &result.lhs_text,
                value: Value::Scalar(lhs),
            };
            let right = Operand {
                span: check.rhs.span,
                text: &result.rhs_text,
                value: Value::Scalar(rhs),
            };
            self.diagnostics
                .push(mismatch("compare", &left, &right, self.style));
            return result;
        }
        result.display = self.check_display_unit(&check.lhs, &check.rhs, lhs);
        let (a, b) = (lhs.si, rhs.si);
        let passed = comparison_holds(check.comparison, a, b);
        let (numerator, denominator) = match check.comparison {
            Comparison::AtMost | Comparison::Below => (a, b),
            Comparison::AtLeast | Comparison::Above => (b, a),
        };
        // A ratio to or of zero (`a > 0 m/s^2`) is no utilization.
        result.utilization = (denominator != 0.0 && numerator != 0.0)
            .then(|| numerator / denominator)
            .filter(|u| u.is_finite());
        result.lhs = Some(lhs);
        result.rhs = Some(rhs);
        result.holds = Some(passed);
        result.status = if passed {
            CheckStatus::Passed
        } else {
            CheckStatus::Failed
        };
        if !passed {
            let shown = |text: &str, q: Quantity| {
                let value =
                    self.style
                        .show_in(q.si, &result.display.text, result.display.si_factor);
                if value == text {
                    value
                } else {
                    format!("{text} = {value}")
                }
            };
            let utilization = utilization_note(result.utilization);
            let label = result
                .label
                .as_deref()
                .map(|label| format!(": {label}"))
                .unwrap_or_default();
            self.diagnostics.push(
                Diagnostic::error(
                    Code::CheckFailed,
                    span,
                    format!(
                        "check failed{label}: {} is not {} {}{utilization}",
                        shown(&result.lhs_text, lhs),
                        check.comparison.symbol(),
                        shown(&result.rhs_text, rhs),
                    ),
                )
                .with_help("change the design or the inputs until the check passes; do not relax the check to make it pass"),
            );
        }
        result
    }

    /// A check shows its values in the unit of whichever side is a cell with
    /// a declared unit, else in the display system's unit.
    fn check_display_unit(&self, lhs: &Expr, rhs: &Expr, value: Quantity) -> DisplayUnit {
        [lhs, rhs]
            .into_iter()
            .find_map(|side| match &side.kind {
                ExprKind::Name(NameRef {
                    target: Target::Cell(id),
                    ..
                }) => {
                    let unit = self.sheet.cell(*id).unit?;
                    let resolved = self.resolve_unit(unit).ok()?;
                    Some(DisplayUnit {
                        text: self.shared_text(unit.span.text(self.source)),
                        si_factor: resolved.si_factor,
                    })
                }
                _ => None,
            })
            .unwrap_or_else(|| pick_unit(value.dimension, value.si, self.style.system))
    }

    /// Every cell's display unit and whether it is an input, by id.
    pub(crate) fn display_units(&self) -> (Vec<DisplayUnit>, Vec<bool>) {
        (0..self.values.len())
            .map(|id| self.display_unit(id, self.values[id]))
            .unzip()
    }

    /// The unit a cell is shown in, and whether it is an input: a declared unit
    /// wins; an input written as one quantity (`1850 kg`) shows as written;
    /// everything else gets the display system's readable unit.
    pub(crate) fn display_unit(&self, id: CellId, value: Option<Value>) -> (DisplayUnit, bool) {
        let cell = self.sheet.cell(id);
        let literal_unit = match cell
            .expr
            .map(|expr| &expr.kind)
            .unwrap_or(&ExprKind::Invalid)
        {
            ExprKind::Number(_) | ExprKind::Slope { .. } => Some(None),
            ExprKind::Quantity { unit, .. } => Some(Some(unit)),
            ExprKind::Negate(inner) => match &inner.kind {
                ExprKind::Number(_) => Some(None),
                ExprKind::Quantity { unit, .. } => Some(Some(unit)),
                _ => None,
            },
            _ => None,
        };
        let is_input = literal_unit.is_some();
        let written = |unit: &UnitExpr| {
            let text = self.shared_text(unit.span.text(self.source));
            self.resolve_unit(unit).ok().map(|resolved| DisplayUnit {
                text,
                si_factor: resolved.si_factor,
            })
        };
        if let Some(declared) = cell.unit.and_then(written) {
            return (declared, is_input);
        }
        if let Some(Some(unit)) = literal_unit
            && let Some(as_written) = written(unit)
        {
            return (as_written, true);
        }
        if let Some(Value::Scalar(q)) = value
            && q.dimension.is_dimensionless()
            && let Some(degrees) = self.angle_display(id)
        {
            return (degrees, is_input);
        }
        let display = match value {
            Some(value) => pick_unit(value.dimension(), value.magnitude_si(), self.style.system),
            None => DisplayUnit::none(),
        };
        (display, is_input)
    }
}
