//! Compiling piecewise formulas: the test's comparisons become `Compare`,
//! `And`, `Or` and `Not` on a stack of truths, and both branches are
//! compiled (so both are checked for their dimension once) and joined by
//! `Select`, which keeps the branch the test picks, or, over a box that
//! straddles the test, both across the jump.

use super::{CompileError, Input, Op};
use crate::eval::Evaluator;
use crate::syntax::ast::{Conditional, NameRef, Test, TestKind};
use crate::units::{Quantity, Value};

impl Evaluator<'_> {
    /// `if TEST then A else B`, with the sample of the branch the test picks
    /// at the sample values.
    pub(super) fn compile_conditional(
        &self,
        conditional: &Conditional,
        input_of: &dyn Fn(&NameRef) -> Option<Input>,
        ops: &mut Vec<Op>,
    ) -> Result<Quantity, CompileError> {
        self.compile_test(&conditional.test, input_of, ops)?;
        let then = self.compile_branch(&conditional.then, input_of, ops)?;
        let otherwise = self.compile_branch(&conditional.otherwise, input_of, ops)?;
        if then.dimension != otherwise.dimension {
            return Err(CompileError::Diagnostic(Box::new(self.branch_mismatch(
                (&conditional.then, Value::Scalar(then)),
                (&conditional.otherwise, Value::Scalar(otherwise)),
            ))));
        }
        ops.push(Op::Select(conditional.test.span));
        Ok(if self.test_holds(&conditional.test)? {
            then
        } else {
            otherwise
        })
    }

    /// A branch; one that cannot be computed at the sample values (a branch
    /// not taken there) leaves the formula to the interpreter.
    fn compile_branch(
        &self,
        branch: &crate::syntax::ast::Expr,
        input_of: &dyn Fn(&NameRef) -> Option<Input>,
        ops: &mut Vec<Op>,
    ) -> Result<Quantity, CompileError> {
        match self.compile_into(branch, input_of, ops) {
            Err(CompileError::Diagnostic(diagnostic))
                if super::super::conditional::is_numeric_failure(diagnostic.code) =>
            {
                Err(CompileError::NeedsVectors(branch.span))
            }
            other => other,
        }
    }

    fn compile_test(
        &self,
        test: &Test,
        input_of: &dyn Fn(&NameRef) -> Option<Input>,
        ops: &mut Vec<Op>,
    ) -> Result<(), CompileError> {
        match &test.kind {
            TestKind::Compare { relation, lhs, rhs } => {
                let left = self.compile_into(lhs, input_of, ops)?;
                let right = self.compile_into(rhs, input_of, ops)?;
                if left.dimension != right.dimension {
                    return Err(CompileError::Diagnostic(Box::new(self.test_mismatch(
                        test.span,
                        (lhs, Value::Scalar(left)),
                        (rhs, Value::Scalar(right)),
                    ))));
                }
                ops.push(Op::Compare(*relation));
            }
            TestKind::All(parts) | TestKind::Any(parts) => {
                let join = if matches!(test.kind, TestKind::All(_)) {
                    Op::And
                } else {
                    Op::Or
                };
                for (place, part) in parts.iter().enumerate() {
                    self.compile_test(part, input_of, ops)?;
                    if place > 0 {
                        ops.push(join);
                    }
                }
            }
            TestKind::Not(inner) => {
                self.compile_test(inner, input_of, ops)?;
                ops.push(Op::Not);
            }
        }
        Ok(())
    }
}
