//! Piecewise formulas in the interpreter: the test decides the branch, and
//! the branch not taken is still checked for its dimension, so a formula
//! whose branches disagree is an error whatever the inputs are.

use super::{Evaluation, Evaluator};
use crate::base::{Code, Diagnostic, Span};
use crate::syntax::ast::{Conditional, Expr, Test, TestKind};
use crate::units::Value;

impl Evaluator<'_> {
    /// The value of `if TEST then A else B`: the taken branch's value, once
    /// the other branch is known to have the same dimension.
    pub(crate) fn conditional(&self, conditional: &Conditional) -> Evaluation {
        let holds = self.test_holds(&conditional.test)?;
        if let Some(seen) = self.tests_seen.borrow_mut().as_mut() {
            *seen.entry(conditional.test.span).or_default() |= if holds { 1 } else { 2 };
        }
        let (taken, other) = if holds {
            (&conditional.then, &conditional.otherwise)
        } else {
            (&conditional.otherwise, &conditional.then)
        };
        let value = self.eval(taken)?;
        match self.eval(other) {
            Ok(other_value) => {
                if !same_kind(value, other_value) {
                    return Err(Box::new(
                        self.branch_mismatch((taken, value), (other, other_value)),
                    ));
                }
            }
            // A branch not taken may fail where it is not taken (a square
            // root of what is negative there); what is wrong whatever the
            // inputs (a dimension, a name, a unit) is reported. Its dimension
            // is then read from its compiled program, whose dimension check
            // does not divide by the values.
            Err(diagnostic) if is_numeric_failure(diagnostic.code) => {
                if let (Value::Scalar(taken_value), Ok(program)) =
                    (value, self.compile(other, &|name| self.input_for(name)))
                    && program.dimension != taken_value.dimension
                {
                    let sample = crate::units::Quantity::new(1.0, program.dimension);
                    return Err(Box::new(
                        self.branch_mismatch((taken, value), (other, Value::Scalar(sample))),
                    ));
                }
            }
            Err(diagnostic) => return Err(diagnostic),
        }
        Ok(value)
    }

    /// Whether `test` holds. Every comparison is evaluated (none is skipped
    /// by `and` or `or`), so each is checked for its dimensions.
    pub(crate) fn test_holds(&self, test: &Test) -> Result<bool, Box<Diagnostic>> {
        match &test.kind {
            TestKind::Compare { relation, lhs, rhs } => {
                let (left, right) = (self.eval(lhs)?, self.eval(rhs)?);
                match (left, right) {
                    (Value::Scalar(a), Value::Scalar(b)) if a.dimension == b.dimension => {
                        Ok(relation.holds(a.si, b.si))
                    }
                    _ => Err(Box::new(self.test_mismatch(
                        test.span,
                        (lhs, left),
                        (rhs, right),
                    ))),
                }
            }
            TestKind::All(parts) => {
                let holds = parts
                    .iter()
                    .map(|part| self.test_holds(part))
                    .collect::<Result<Vec<_>, _>>()?;
                Ok(holds.iter().all(|&h| h))
            }
            TestKind::Any(parts) => {
                let holds = parts
                    .iter()
                    .map(|part| self.test_holds(part))
                    .collect::<Result<Vec<_>, _>>()?;
                Ok(holds.iter().any(|&h| h))
            }
            TestKind::Not(inner) => Ok(!self.test_holds(inner)?),
        }
    }

    pub(super) fn branch_mismatch(
        &self,
        (taken, value): (&Expr, Value),
        (other, other_value): (&Expr, Value),
    ) -> Diagnostic {
        // Point at the later branch, the one written against the first.
        let ((first, first_value), (second, second_value)) =
            if taken.span.start() <= other.span.start() {
                ((taken, value), (other, other_value))
            } else {
                ((other, other_value), (taken, value))
            };
        let describe = |value: Value| match value {
            Value::Scalar(q) => q.dimension.describe(),
            Value::Vector(v) => format!("a vector of {}", v.dimension.describe()),
        };
        let text = |expr: &Expr| expr.span.text(self.source);
        Diagnostic::error(
            Code::BranchDimensions,
            second.span,
            format!(
                "the branches of this `if` differ: `{}` is {}, but `{}` is {}",
                text(first),
                describe(first_value),
                text(second),
                describe(second_value)
            ),
        )
        .with_label(
            first.span,
            format!("this branch is {}", describe(first_value)),
        )
        .with_help(
            "every branch must have one dimension, whichever is taken: give each the same unit",
        )
    }

    pub(super) fn test_mismatch(
        &self,
        span: Span,
        (lhs, left): (&Expr, Value),
        (rhs, right): (&Expr, Value),
    ) -> Diagnostic {
        let text = |expr: &Expr| expr.span.text(self.source);
        let describe = |value: Value| match value {
            Value::Scalar(q) => format!("{} ({})", q.dimension.describe(), self.style.show(q)),
            Value::Vector(_) => "a vector".to_string(),
        };
        let vectors = left.vector().is_some() || right.vector().is_some();
        Diagnostic::error(
            Code::ConditionDimensions,
            span,
            format!(
                "this test compares `{}`, {}, with `{}`, {}",
                text(lhs),
                describe(left),
                text(rhs),
                describe(right)
            ),
        )
        .with_label(lhs.span, describe(left))
        .with_label(rhs.span, describe(right))
        .with_help(if vectors {
            "a test compares scalars: compare a magnitude (mag(v)) or a component (v.x)"
        } else {
            "a test compares two quantities of one dimension"
        })
    }
}

/// Whether two values could be branches of one formula: both scalars or both
/// vectors of as many components, of one dimension.
fn same_kind(a: Value, b: Value) -> bool {
    match (a, b) {
        (Value::Scalar(a), Value::Scalar(b)) => a.dimension == b.dimension,
        (Value::Vector(a), Value::Vector(b)) => {
            a.dimension == b.dimension && a.n_components == b.n_components
        }
        _ => false,
    }
}

/// A failure that depends on the values, not on how the formula is written.
pub(super) fn is_numeric_failure(code: Code) -> bool {
    matches!(
        code,
        Code::DivisionByZero | Code::OutOfDomain | Code::NotFinite | Code::NotInRun
    )
}
