//! Expression evaluation: values, operators, names, functions and units,
//! with the dimension checked at every step and a span on every error.

use std::sync::Arc;

use super::explain::{Operand, mismatch};
use super::{Evaluation, Evaluator};
use crate::base::Span;
use crate::base::{Code, Diagnostic};
use crate::syntax::ast::{BinaryOp, Expr, ExprKind, NameRef, Target, UnitExpr};
use crate::units::functions::{self, CallError, function};
use crate::units::{self, Quantity, QuantityError, ResolvedUnit, UnitErrorKind, Value, ValueError};

impl<'a> Evaluator<'a> {
    /// The value of a run's time or state while a point of its run is probed.
    pub(crate) fn probed(&self, id: crate::sheet::CellId) -> Option<Value> {
        let (first, len) = self.probe_range.get()?;
        if id < first || id >= first + len {
            return None;
        }
        self.probe_values.borrow().get(id - first).copied()
    }

    /// Evaluates an expression, checking dimensions at every operation.
    pub(crate) fn eval(&self, expr: &Expr) -> Evaluation {
        let value = match &expr.kind {
            ExprKind::Number(value) => Value::Scalar(Quantity::number(*value)),
            ExprKind::Quantity { value, unit, .. } => {
                let unit = self.resolve_unit(unit)?;
                Value::Scalar(Quantity::new(value * unit.si_factor, unit.dimension))
            }
            ExprKind::UnitValue(unit) => {
                let unit = self.resolve_unit(unit)?;
                Value::Scalar(Quantity::new(unit.si_factor, unit.dimension))
            }
            ExprKind::Slope { rise, run } => {
                if *rise == 0.0 && *run == 0.0 {
                    return Err(Box::new(
                        Diagnostic::error(
                            Code::OutOfDomain,
                            expr.span,
                            "a slope of 0:0 has no direction",
                        )
                        .with_help("write the rise and run of the direction, e.g. 3:4"),
                    ));
                }
                Value::Scalar(Quantity::number(libm::atan2(*rise, *run)))
            }
            ExprKind::Component { vector, axis } => match self.eval(vector)? {
                Value::Vector(v) if *axis < usize::from(v.n_components) => {
                    Value::Scalar(v.component(*axis))
                }
                Value::Vector(v) => {
                    return Err(Box::new(
                        Diagnostic::error(
                            Code::DimensionMismatch,
                            expr.span,
                            format!(
                                "`{}` is a 2D vector: it has no z component",
                                vector.span.text(self.source)
                            ),
                        )
                        .with_help(format!(
                            "{} has x and y",
                            self.style.show_value(Value::Vector(v))
                        )),
                    ));
                }
                Value::Scalar(q) => {
                    return Err(Box::new(Diagnostic::error(
                        Code::DimensionMismatch,
                        expr.span,
                        format!(
                            "`{}` is a scalar ({}), so it has no components",
                            vector.span.text(self.source),
                            self.style.show(q)
                        ),
                    )));
                }
            },
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
            ExprKind::RunQuery(query) => (self.run_query)(self, query, expr.span)?,
            ExprKind::Conditional(conditional) => self.conditional(conditional)?,
            ExprKind::Lookup(lookup) => self.read_table(lookup, expr.span)?,
        };
        if value.is_finite() {
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
            Target::Cell(id) => self.probed(id).or(self.values[id]),
            Target::Constant(index) => units::CONSTANTS
                .get(index)
                .map(|constant| Value::Scalar(constant.value)),
            Target::Imported { sheet, cell } => return self.imported(name, sheet, cell, span),
            Target::Unresolved => {
                units::constant(&name.text).map(|constant| Value::Scalar(constant.value))
            }
        };
        value.ok_or_else(|| {
            Box::new(Diagnostic::error(
                Code::UndefinedName,
                span,
                format!("`{}` is not defined", name.text),
            ))
        })
    }

    /// The value of a used sheet's cell (`gear.WLL`), or why it cannot be
    /// read here: its sheet gave it none, or it has a tolerance, which does
    /// not cross sheets (reading its nominal value would drop the range a
    /// check must be judged over).
    fn imported(&self, name: &NameRef, sheet: u32, cell: u32, span: Span) -> Evaluation {
        let import = self.sheet.imports.get(sheet as usize);
        let used = import.and_then(|import| import.sheet());
        let export = used.and_then(|used| used.exports.get(cell as usize));
        let (Some(used), Some(export)) = (used, export) else {
            return Err(Box::new(Diagnostic::error(
                Code::UndefinedName,
                span,
                format!("`{}` is not defined", name.text),
            )));
        };
        let problem = if export.toleranced {
            format!(
                "`{}` has a tolerance in {} (line {}), and tolerances do not cross sheets",
                name.text, used.path, export.line
            )
        } else if let Some(value) = export.value {
            return Ok(value);
        } else {
            format!(
                "`{}` has no value: {} cannot establish it (line {})",
                name.text, used.path, export.line
            )
        };
        Err(Box::new(
            Diagnostic::error(Code::IncludeError, span, problem).with_help(
                "write the value with its tolerance in this sheet, or correct the used sheet",
            ),
        ))
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
        error: ValueError,
        op: BinaryOp,
        (lhs, left): (&Expr, Value),
        (rhs, right): (&Expr, Value),
        span: Span,
    ) -> Diagnostic {
        let text = |expr: &Expr| expr.span.text(self.source);
        let error = match error {
            ValueError::Quantity(error) => error,
            ValueError::VectorAndScalar => {
                let (vector, scalar) = if left.vector().is_some() {
                    (lhs, rhs)
                } else {
                    (rhs, lhs)
                };
                return Diagnostic::error(
                    Code::DimensionMismatch,
                    span,
                    format!(
                        "cannot {} a vector (`{}`) and a scalar (`{}`)",
                        op_word(op),
                        text(vector),
                        text(scalar)
                    ),
                )
                .with_help("make both vectors (vec(…), polar(…)) or both scalars (mag(v), v.x)");
            }
            ValueError::VectorProduct => {
                return Diagnostic::error(
                    Code::DimensionMismatch,
                    span,
                    format!("cannot {} `{}` by `{}`: that is not defined for vectors", op_word(op), text(lhs), text(rhs)),
                )
                .with_help("use dot(a, b) or cross(a, b) for products of two vectors; a vector divides only by a scalar");
            }
            ValueError::VectorPower => {
                return Diagnostic::error(
                    Code::DimensionMismatch,
                    span,
                    "a vector cannot be raised to a power",
                )
                .with_help("square the magnitude instead: mag(v)^2 or dot(v, v)");
            }
        };
        let (left_q, right_q) = (
            Quantity::new(left.magnitude_si(), left.dimension()),
            Quantity::new(
                right.scalar().map_or(right.magnitude_si(), |q| q.si),
                right.dimension(),
            ),
        );
        match error {
            QuantityError::Mismatch { .. } => {
                mismatch(
                    op_word(op),
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
            QuantityError::BadExponent if !right_q.dimension.is_dimensionless() => Diagnostic::error(
                Code::DimensionMismatch,
                rhs.span,
                format!("an exponent must be a plain number, but `{}` is {}", text(rhs), right_q.dimension.describe()),
            ),
            QuantityError::BadExponent => Diagnostic::error(
                Code::DimensionMismatch,
                span,
                format!(
                    "`{}` is {}; raising it to the power {} gives a dimension with fractional exponents",
                    text(lhs),
                    left_q.dimension.describe(),
                    units::format_significant(right_q.si, 6)
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
        let result = function.call(&values);
        result.map_err(|error| {
            let arg_text = |index: usize| args[index].span.text(self.source);
            Box::new(match error {
                CallError::NotDimensionless { argument } => Diagnostic::error(
                    Code::DimensionMismatch,
                    args[argument].span,
                    format!(
                        "`{name}` needs a plain number, but `{}` is {} ({})",
                        arg_text(argument),
                        values[argument].dimension().describe(),
                        self.style.show_value(values[argument]),
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
                        values[0].dimension().describe()
                    ),
                ),
                CallError::NotScalar { argument } => Diagnostic::error(
                    Code::DimensionMismatch,
                    args[argument].span,
                    format!(
                        "`{name}` needs a scalar, but `{}` is a vector",
                        arg_text(argument)
                    ),
                )
                .with_help("take a component (v.x) or the magnitude (mag(v))"),
                CallError::NotVector { argument } => Diagnostic::error(
                    Code::DimensionMismatch,
                    args[argument].span,
                    format!(
                        "`{name}` needs a vector, but `{}` is a scalar",
                        arg_text(argument)
                    ),
                )
                .with_help("build one with vec(x, y) or polar(magnitude, angle)"),
                CallError::Domain { argument, expected } => Diagnostic::error(
                    Code::OutOfDomain,
                    args[argument].span,
                    format!(
                        "`{name}` needs {expected}, but `{}` is {}",
                        arg_text(argument),
                        self.style.show_value(values[argument])
                    ),
                ),
            })
        })
    }

    pub(crate) fn resolve_unit(&self, unit: &UnitExpr) -> Result<ResolvedUnit, Box<Diagnostic>> {
        let text = unit.span.text(self.source);
        if let Some(resolved) = self.unit_cache.borrow().get(text) {
            return Ok(*resolved);
        }
        let resolved = self.resolve_unit_uncached(unit)?;
        self.unit_cache.borrow_mut().insert(text, resolved);
        Ok(resolved)
    }

    /// One shared copy of each unit text a sheet displays.
    pub(crate) fn shared_text(&self, text: &'a str) -> Arc<str> {
        Arc::clone(
            self.unit_texts
                .borrow_mut()
                .entry(text)
                .or_insert_with(|| Arc::from(text)),
        )
    }

    pub(crate) fn resolve_unit_uncached(
        &self,
        unit: &UnitExpr,
    ) -> Result<ResolvedUnit, Box<Diagnostic>> {
        units::resolve(unit.symbols()).map_err(|error| {
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
                    format!(
                        "the unit's exponents are too large: each base dimension's exponent must lie within ±{}",
                        i8::MAX
                    ),
                )
                .with_help("write the unit with smaller powers; no physical quantity needs more"),
            })
        })
    }
}

/// The verb for an operator in messages.
fn op_word(op: BinaryOp) -> &'static str {
    match op {
        BinaryOp::Add => "add",
        BinaryOp::Subtract => "subtract",
        BinaryOp::Multiply => "multiply",
        BinaryOp::Divide => "divide",
        BinaryOp::Power => "raise",
    }
}
