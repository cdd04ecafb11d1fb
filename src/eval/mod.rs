//! Evaluation: walks each cell's formula in dependency order, checks the
//! dimension at every operation, attaches source spans to every error, and
//! produces the plain [`Evaluated`] model that presentation reads.

mod explain;
pub mod functions;
mod incremental;
mod model;

pub use incremental::{CellField, EditError, FieldEditor, Finding, LiveSheet, Row};
pub use model::{
    CellOutcome, CellResult, CellStatus, CheckResult, CheckStatus, Evaluated, OutlineItem,
};

use std::cell::RefCell;
use std::sync::Arc;

use rustc_hash::FxHashMap;

use explain::{DeclaredMismatch, Operand, Style, declared_mismatch, mismatch};
use functions::{CallError, function};

use crate::diag::{Code, Diagnostic};
use crate::sheet::{CellId, Item, Sheet};
use crate::syntax::ast::{
    BinaryOp, Comparison, Expr, ExprKind, NameRef, StatementKind, Target, UnitExpr,
};
use crate::syntax::{LineIndex, Span};
use crate::units::{
    self, DisplayUnit, Quantity, QuantityError, ResolvedUnit, UnitErrorKind, pick_unit,
};

type Evaluation = Result<Quantity, Box<Diagnostic>>;

/// Parses, links and evaluates a sheet's source text in one call.
pub fn evaluate_source(source: &str) -> Evaluated {
    evaluate(Arc::new(Sheet::parse(source)), Arc::from(source))
}

/// Evaluates every cell and check of a linked sheet.
pub fn evaluate(sheet: Arc<Sheet>, source: Arc<str>) -> Evaluated {
    let mut evaluator = Evaluator::new(&sheet, &source);
    for &id in &sheet.order.order {
        evaluator.evaluate_cell(id);
    }
    let checks = (0..sheet.checks.len())
        .map(|index| evaluator.evaluate_check(index))
        .collect();
    evaluator.finish(checks, &sheet, &source)
}

struct Evaluator<'a> {
    sheet: &'a Sheet,
    source: &'a str,
    /// Units already looked up, by their text: a sheet repeats a few units
    /// many times.
    unit_cache: RefCell<FxHashMap<&'a str, ResolvedUnit>>,
    /// Display texts already shared, by their text.
    unit_texts: RefCell<FxHashMap<&'a str, Arc<str>>>,
    style: Style,
    values: Vec<Option<Quantity>>,
    statuses: Vec<CellStatus>,
    diagnostics: Vec<Diagnostic>,
}

/// Evaluates one expression on its own, with the built-in constants but no
/// cells (`heft convert "100 lbm * g0" lbf`).
pub fn evaluate_expression(text: &str) -> Result<Quantity, Diagnostic> {
    let expr = crate::syntax::parse_expression(text)?;
    let (sheet, source) = (Arc::new(Sheet::parse("")), Arc::from(text));
    Evaluator::new(&sheet, &source)
        .eval(&expr)
        .map_err(|diagnostic| *diagnostic)
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

impl<'a> Evaluator<'a> {
    fn new(sheet: &'a Sheet, source: &'a str) -> Self {
        Evaluator {
            sheet,
            source,
            unit_cache: RefCell::default(),
            unit_texts: RefCell::default(),
            style: Style {
                system: sheet.header.display,
                sig_figs: sheet.header.sig_figs,
            },
            values: vec![None; sheet.cells.len()],
            statuses: vec![CellStatus::Error; sheet.cells.len()],
            diagnostics: sheet.diagnostics.clone(),
        }
    }

    fn evaluate_cell(&mut self, id: CellId) {
        if self.sheet.broken[id] {
            self.statuses[id] = CellStatus::Error;
            return;
        }
        if let Some(blocker) = self.blocker(&self.sheet.uses[id]) {
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

    /// The failed cell at the root of whatever stops these uses, if any.
    fn blocker(&self, uses: &[CellId]) -> Option<CellId> {
        uses.iter().find_map(|&used| match self.statuses[used] {
            CellStatus::Ok => None,
            CellStatus::Error => Some(used),
            CellStatus::Blocked { by } => Some(by),
        })
    }

    fn compute_cell(&self, id: CellId) -> Evaluation {
        let cell = self.sheet.cell(id);
        let value = self.eval(&cell.expr)?;
        if let Some(unit) = &cell.unit {
            let declared = self.resolve_unit(unit)?;
            if declared.dimension != value.dimension {
                let formula_is_name = matches!(cell.expr.kind, ExprKind::Name(_));
                return Err(Box::new(declared_mismatch(
                    &DeclaredMismatch {
                        name: &cell.name.text,
                        unit_text: unit.span.text(self.source),
                        unit_span: unit.span,
                        unit_si_factor: declared.si_factor,
                        declared: declared.dimension,
                        formula: cell.expr.span.text(self.source),
                        formula_span: cell.expr.span,
                        formula_is_name,
                        value,
                    },
                    self.style,
                )));
            }
        }
        Ok(value)
    }

    fn evaluate_check(&mut self, index: usize) -> CheckResult {
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
        if lhs.dimension != rhs.dimension {
            let left = Operand {
                span: check.lhs.span,
                text: &result.lhs_text,
                value: lhs,
            };
            let right = Operand {
                span: check.rhs.span,
                text: &result.rhs_text,
                value: rhs,
            };
            self.diagnostics
                .push(mismatch("compare", &left, &right, self.style));
            return result;
        }
        result.display = self.check_display_unit(&check.lhs, &check.rhs, lhs);
        let (a, b) = (lhs.si, rhs.si);
        let passed = match check.comparison {
            Comparison::AtMost => a <= b,
            Comparison::Below => a < b,
            Comparison::AtLeast => a >= b,
            Comparison::Above => a > b,
        };
        let (numerator, denominator) = match check.comparison {
            Comparison::AtMost | Comparison::Below => (a, b),
            Comparison::AtLeast | Comparison::Above => (b, a),
        };
        result.utilization = (denominator != 0.0)
            .then(|| numerator / denominator)
            .filter(|u| u.is_finite());
        result.lhs = Some(lhs);
        result.rhs = Some(rhs);
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
            let utilization = result
                .utilization
                .map(|u| {
                    format!(
                        " (utilization {} %)",
                        units::format_significant(u * 100.0, 4)
                    )
                })
                .unwrap_or_default();
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
                    let id = *id;
                    let unit = self.sheet.cell(id).unit.as_ref()?;
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

    fn eval(&self, expr: &Expr) -> Evaluation {
        let value = match &expr.kind {
            ExprKind::Number(value) => Quantity::number(*value),
            ExprKind::Quantity { value, unit, .. } => {
                let unit = self.resolve_unit(unit)?;
                Quantity::new(value * unit.si_factor, unit.dimension)
            }
            ExprKind::UnitValue(unit) => {
                let unit = self.resolve_unit(unit)?;
                Quantity::new(unit.si_factor, unit.dimension)
            }
            ExprKind::Name(name) => self.lookup(name, expr.span)?,
            // Linking marks such cells broken, so this only guards the invariant.
            ExprKind::Invalid => {
                return Err(Box::new(Diagnostic::error(
                    Code::ParseError,
                    expr.span,
                    "this formula did not parse",
                )));
            }
            ExprKind::Negate(inner) => -self.eval(inner)?,
            ExprKind::Binary { op, lhs, rhs } => self.binary(*op, lhs, rhs, expr.span)?,
            ExprKind::Call {
                function: name,
                args,
            } => self.call(&name.text, name.span, args, expr.span)?,
        };
        if value.si.is_finite() {
            Ok(value)
        } else {
            Err(Box::new(
                Diagnostic::error(
                    Code::NotFinite,
                    expr.span,
                    format!("`{}` is not a finite number", expr.span.text(self.source)),
                )
                .with_help("a value overflowed; check the exponents and units of the inputs"),
            ))
        }
    }

    fn lookup(&self, name: &NameRef, span: Span) -> Evaluation {
        let value = match name.target {
            Target::Cell(id) => self.values[id],
            Target::Constant(index) => units::CONSTANTS.get(index).map(|constant| constant.value),
            Target::Unresolved => units::constant(&name.text).map(|constant| constant.value),
        };
        value.ok_or_else(|| {
            Box::new(Diagnostic::error(
                Code::UndefinedName,
                span,
                format!("`{}` is not defined", name.text),
            ))
        })
    }

    fn binary(&self, op: BinaryOp, lhs: &Expr, rhs: &Expr, span: Span) -> Evaluation {
        let (left, right) = (self.eval(lhs)?, self.eval(rhs)?);
        let result = match op {
            BinaryOp::Add => left.try_add(right),
            BinaryOp::Subtract => left.try_sub(right),
            BinaryOp::Multiply => left.try_mul(right),
            BinaryOp::Divide => left.try_div(right),
            BinaryOp::Power => left.try_pow(right),
        };
        result.map_err(|error| {
            Box::new(self.operation_error(error, op, (lhs, left), (rhs, right), span))
        })
    }

    fn operation_error(
        &self,
        error: QuantityError,
        op: BinaryOp,
        (lhs, left): (&Expr, Quantity),
        (rhs, right): (&Expr, Quantity),
        span: Span,
    ) -> Diagnostic {
        let text = |expr: &Expr| expr.span.text(self.source);
        match error {
            QuantityError::Mismatch { .. } => {
                let action = if op == BinaryOp::Add { "add" } else { "subtract" };
                mismatch(
                    action,
                    &Operand { span: lhs.span, text: text(lhs), value: left },
                    &Operand { span: rhs.span, text: text(rhs), value: right },
                    self.style,
                )
            }
            QuantityError::DivisionByZero => Diagnostic::error(
                Code::DivisionByZero,
                rhs.span,
                format!("division by zero: `{}` is 0", text(rhs)),
            )
            .with_label(span, "in this division"),
            QuantityError::BadExponent if !right.dimension.is_dimensionless() => Diagnostic::error(
                Code::DimensionMismatch,
                rhs.span,
                format!("an exponent must be a plain number, but `{}` is {}", text(rhs), right.dimension.describe()),
            ),
            QuantityError::BadExponent => Diagnostic::error(
                Code::DimensionMismatch,
                span,
                format!(
                    "`{}` is {}; raising it to the power {} gives a dimension with fractional exponents",
                    text(lhs),
                    left.dimension.describe(),
                    units::format_significant(right.si, 6)
                ),
            )
            .with_help("a quantity with a unit can only be raised to a whole power (or a root that keeps whole exponents)"),
            QuantityError::DimensionOverflow => Diagnostic::error(
                Code::DimensionMismatch,
                span,
                "the dimension's exponents grow too large here".to_string(),
            ),
        }
    }

    fn call(&self, name: &str, name_span: Span, args: &[Expr], span: Span) -> Evaluation {
        let Some(function) = function(name) else {
            let mut diagnostic = Diagnostic::error(
                Code::BadCall,
                name_span,
                format!("there is no function `{name}`"),
            );
            let closest = functions::FUNCTIONS
                .iter()
                .map(|f| (strsim::jaro_winkler(f.name, name), f.name))
                .filter(|(score, _)| *score > 0.8)
                .max_by(|a, b| a.0.total_cmp(&b.0));
            if let Some((_, similar)) = closest {
                diagnostic = diagnostic.with_help(format!("did you mean `{similar}`?"));
            } else if self.sheet.names.contains_key(name) {
                diagnostic = diagnostic.with_help(format!("to multiply, write `{name} * (…)`"));
            }
            return Err(Box::new(diagnostic));
        };
        if !function.arity.accepts(args.len()) {
            return Err(Box::new(Diagnostic::error(
                Code::BadCall,
                span,
                format!(
                    "`{name}` takes {}, not {}",
                    function.arity.describe(),
                    args.len()
                ),
            )));
        }
        let values = args
            .iter()
            .map(|arg| self.eval(arg))
            .collect::<Result<Vec<_>, _>>()?;
        (function.apply)(&values).map_err(|error| {
            let arg_text = |index: usize| args[index].span.text(self.source);
            Box::new(match error {
                CallError::NotDimensionless { argument } => Diagnostic::error(
                    Code::DimensionMismatch,
                    args[argument].span,
                    format!(
                        "`{name}` needs a plain number, but `{}` is {} ({})",
                        arg_text(argument),
                        values[argument].dimension.describe(),
                        self.style.show(values[argument]),
                    ),
                )
                .with_help(
                    "angles are plain numbers: write them with `deg` or `rad`, e.g. `sin(30 deg)`",
                ),
                CallError::Mismatch { argument } => mismatch(
                    &format!("mix in `{name}`"),
                    &Operand {
                        span: args[0].span,
                        text: arg_text(0),
                        value: values[0],
                    },
                    &Operand {
                        span: args[argument].span,
                        text: arg_text(argument),
                        value: values[argument],
                    },
                    self.style,
                ),
                CallError::OddRoot => Diagnostic::error(
                    Code::DimensionMismatch,
                    args[0].span,
                    format!(
                        "the square root of {} has no whole-unit dimension",
                        values[0].dimension.describe()
                    ),
                ),
                CallError::Domain { argument, expected } => Diagnostic::error(
                    Code::OutOfDomain,
                    args[argument].span,
                    format!(
                        "`{name}` needs {expected}, but `{}` is {}",
                        arg_text(argument),
                        self.style.show(values[argument])
                    ),
                ),
            })
        })
    }

    fn resolve_unit(&self, unit: &UnitExpr) -> Result<ResolvedUnit, Box<Diagnostic>> {
        let text = unit.span.text(self.source);
        if let Some(resolved) = self.unit_cache.borrow().get(text) {
            return Ok(*resolved);
        }
        let resolved = self.resolve_unit_uncached(unit)?;
        self.unit_cache.borrow_mut().insert(text, resolved);
        Ok(resolved)
    }

    /// One shared copy of each unit text a sheet displays.
    fn shared_text(&self, text: &'a str) -> Arc<str> {
        Arc::clone(
            self.unit_texts
                .borrow_mut()
                .entry(text)
                .or_insert_with(|| Arc::from(text)),
        )
    }

    fn resolve_unit_uncached(&self, unit: &UnitExpr) -> Result<ResolvedUnit, Box<Diagnostic>> {
        units::resolve(
            unit.factors
                .iter()
                .map(|factor| (&*factor.symbol, factor.exponent)),
        )
        .map_err(|error| {
            let factor = &unit.factors[error.factor];
            Box::new(match error.kind {
                UnitErrorKind::Unknown { suggestion } => {
                    let diagnostic = Diagnostic::error(
                        Code::UnknownUnit,
                        factor.span,
                        format!("`{}` is not a unit heft knows", factor.symbol),
                    );
                    match suggestion {
                        Some(suggestion) => {
                            diagnostic.with_help(format!("did you mean `{suggestion}`?"))
                        }
                        None => diagnostic.with_help("run `heft units` to list every unit"),
                    }
                }
                UnitErrorKind::Ambiguous(ambiguity) => Diagnostic::error(
                    Code::AmbiguousUnit,
                    factor.span,
                    format!("`{}` is ambiguous, so heft does not guess", factor.symbol),
                )
                .with_help(format!("write {}", ambiguity.choices)),
                UnitErrorKind::Overflow => Diagnostic::error(
                    Code::DimensionMismatch,
                    unit.span,
                    "the unit's exponents are too large",
                ),
            })
        })
    }

    fn finish(
        mut self,
        checks: Vec<CheckResult>,
        sheet: &Arc<Sheet>,
        source: &Arc<str>,
    ) -> Evaluated {
        let lines = LineIndex::new(source);
        let outcomes = (0..sheet.cells.len())
            .map(|id| {
                let value = self.values[id];
                let (display, is_input) = self.display_unit(id, value);
                CellOutcome {
                    value,
                    status: self.statuses[id],
                    display,
                    is_input,
                }
            })
            .collect();
        let outline = sheet
            .items
            .iter()
            .map(|item| match *item {
                Item::Heading(index) => match &sheet.statements[index].kind {
                    StatementKind::Heading { level, text } => OutlineItem::Heading {
                        level: *level,
                        text: text.clone(),
                    },
                    _ => OutlineItem::Invalid {
                        span: sheet.statements[index].span,
                    },
                },
                Item::Note(index) => match &sheet.statements[index].kind {
                    StatementKind::Note { text } => OutlineItem::Note { text: text.clone() },
                    _ => OutlineItem::Invalid {
                        span: sheet.statements[index].span,
                    },
                },
                Item::Cell(id) => OutlineItem::Cell(id),
                Item::Check(index) => OutlineItem::Check(index),
                Item::Invalid(index) => OutlineItem::Invalid {
                    span: sheet.statements[index].span,
                },
            })
            .collect();
        let mut diagnostics = std::mem::take(&mut self.diagnostics);
        diagnostics.sort_by_key(|diagnostic| (diagnostic.span.start(), diagnostic.code));
        Evaluated {
            sheet: Arc::clone(sheet),
            source: Arc::clone(source),
            outcomes,
            checks,
            outline,
            diagnostics,
            lines,
        }
    }

    /// The unit a cell is shown in, and whether it is an input: a declared unit
    /// wins; an input written as one quantity (`1850 kg`) shows as written;
    /// everything else gets the display system's readable unit.
    fn display_unit(&self, id: CellId, value: Option<Quantity>) -> (DisplayUnit, bool) {
        let cell = self.sheet.cell(id);
        let literal_unit = match &cell.expr.kind {
            ExprKind::Number(_) => Some(None),
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
        if let Some(declared) = cell.unit.as_ref().and_then(written) {
            return (declared, is_input);
        }
        if let Some(Some(unit)) = literal_unit
            && let Some(as_written) = written(unit)
        {
            return (as_written, true);
        }
        let display = match value {
            Some(value) => pick_unit(value.dimension, value.si, self.style.system),
            None => DisplayUnit::none(),
        };
        (display, is_input)
    }
}
