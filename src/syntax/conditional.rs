//! The syntax of piecewise formulas: `if TEST then VALUE else OTHERWISE`,
//! where a test compares quantities (`<= < >= > == !=`) joined by `and`,
//! `or`, `not` and parentheses. `else if` chains are conditionals nested in
//! the `else` branch.

use super::ast::Expr;
use crate::base::Span;

/// A piecewise formula: `if v <= 1 m/s then 1.25 else 1.40`.
#[derive(Clone, Debug, PartialEq)]
pub struct Conditional {
    /// What decides the branch.
    pub test: Test,
    /// The value where the test holds.
    pub then: Expr,
    /// The value where it does not (another conditional for `else if`).
    pub otherwise: Expr,
}

/// A test of a conditional, with where it is written.
#[derive(Clone, Debug, PartialEq)]
pub struct Test {
    /// What the test is.
    pub kind: TestKind,
    /// Where it is written.
    pub span: Span,
}

/// The kinds of test.
#[derive(Clone, Debug, PartialEq)]
pub enum TestKind {
    /// Two quantities of one dimension compared: `v_hoist <= 0.25 m/s`.
    Compare {
        /// The comparison.
        relation: Relation,
        /// Left side.
        lhs: Expr,
        /// Right side.
        rhs: Expr,
    },
    /// Every part holds: `a < b and c > d`.
    All(Box<[Test]>),
    /// Some part holds: `a < b or c > d`.
    Any(Box<[Test]>),
    /// The part does not hold: `not a < b`.
    Not(Box<Test>),
}

/// The comparisons a test may make.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Relation {
    /// `<=`
    AtMost,
    /// `<`
    Below,
    /// `>=`
    AtLeast,
    /// `>`
    Above,
    /// `==`
    Equal,
    /// `!=`
    NotEqual,
}

impl Relation {
    /// The comparison as written.
    pub fn symbol(self) -> &'static str {
        match self {
            Relation::AtMost => "<=",
            Relation::Below => "<",
            Relation::AtLeast => ">=",
            Relation::Above => ">",
            Relation::Equal => "==",
            Relation::NotEqual => "!=",
        }
    }

    /// Whether `lhs RELATION rhs` holds for two numbers (false if either is NaN,
    /// except `!=`).
    pub fn holds(self, lhs: f64, rhs: f64) -> bool {
        match self {
            Relation::AtMost => lhs <= rhs,
            Relation::Below => lhs < rhs,
            Relation::AtLeast => lhs >= rhs,
            Relation::Above => lhs > rhs,
            Relation::Equal => lhs == rhs,
            Relation::NotEqual => lhs != rhs,
        }
    }
}

impl Test {
    /// Calls `visit` on each side of every comparison, in written order.
    pub fn for_each_side<'a>(&'a self, visit: &mut impl FnMut(&'a Expr)) {
        match &self.kind {
            TestKind::Compare { lhs, rhs, .. } => {
                visit(lhs);
                visit(rhs);
            }
            TestKind::All(parts) | TestKind::Any(parts) => {
                parts.iter().for_each(|part| part.for_each_side(visit))
            }
            TestKind::Not(inner) => inner.for_each_side(visit),
        }
    }

    /// Calls `visit` on each side of every comparison, mutably.
    pub fn for_each_side_mut(&mut self, visit: &mut impl FnMut(&mut Expr)) {
        match &mut self.kind {
            TestKind::Compare { lhs, rhs, .. } => {
                visit(lhs);
                visit(rhs);
            }
            TestKind::All(parts) | TestKind::Any(parts) => parts
                .iter_mut()
                .for_each(|part| part.for_each_side_mut(visit)),
            TestKind::Not(inner) => inner.for_each_side_mut(visit),
        }
    }
}
