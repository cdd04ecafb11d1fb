//! Angles shown as angles: a cell without a declared unit whose value is
//! an angle — an inverse trigonometric function's result (any function
//! whose table entry says `Angles::Gives`), a value written in `deg`,
//! `rad` or `rev`, or one derived from those through `+`, `−`, a sign, or
//! `×` and `÷` by a plain number — is shown in degrees. Display only: the
//! value stays a plain number in radians and every calculation is unchanged.
//! A declared unit (`[rad]`) always wins, and a value written as one
//! quantity (`θ = 60 deg`) shows as written.

use super::Evaluator;
use crate::sheet::CellId;
use crate::syntax::ast::{BinaryOp, Expr, ExprKind, Target, UnitExpr};
use crate::units::functions::{self, Angles};
use crate::units::{self, DisplayUnit};

/// How many cells' formulas one question follows back (display only: past
/// it a value is shown as a plain number, never wrongly as an angle).
const FOLLOWED_CELLS: usize = 32;

impl Evaluator<'_> {
    /// The degree, if cell `id` (no unit declared) holds an angle.
    pub(super) fn angle_display(&self, id: CellId) -> Option<DisplayUnit> {
        let expr = self.sheet.cell(id).expr?;
        let mut budget = FOLLOWED_CELLS;
        if !self.is_angle(expr, &mut budget) {
            return None;
        }
        let degree = units::resolve([("deg", 1)]).ok()?;
        Some(DisplayUnit {
            text: self.shared_text("deg"),
            si_factor: degree.si_factor,
        })
    }

    fn is_angle(&self, expr: &Expr, budget: &mut usize) -> bool {
        match &expr.kind {
            ExprKind::Quantity { unit, .. } | ExprKind::UnitValue(unit) => is_angle_unit(unit),
            ExprKind::Call { function, .. } => {
                functions::function(&function.text).is_some_and(|f| f.angles == Angles::Gives)
            }
            ExprKind::Name(name) => match name.target {
                Target::Cell(used) => self.cell_is_angle(used, budget),
                _ => false,
            },
            ExprKind::Negate(inner) => self.is_angle(inner, budget),
            ExprKind::Binary { op, lhs, rhs } => match op {
                BinaryOp::Add | BinaryOp::Subtract => {
                    let (left, right) = (self.is_angle(lhs, budget), self.is_angle(rhs, budget));
                    (left || right) && !(is_named_plain(lhs, left) || is_named_plain(rhs, right))
                }
                BinaryOp::Multiply => {
                    (self.is_angle(lhs, budget) && is_plain_number(rhs))
                        || (is_plain_number(lhs) && self.is_angle(rhs, budget))
                }
                BinaryOp::Divide => self.is_angle(lhs, budget) && is_plain_number(rhs),
                BinaryOp::Power => false,
            },
            ExprKind::Conditional(conditional) => {
                self.is_angle(&conditional.then, budget)
                    && self.is_angle(&conditional.otherwise, budget)
            }
            _ => false,
        }
    }

    fn cell_is_angle(&self, id: CellId, budget: &mut usize) -> bool {
        if *budget == 0 {
            return false;
        }
        *budget -= 1;
        let cell = self.sheet.cell(id);
        match (cell.unit, cell.expr) {
            (Some(unit), _) => is_angle_unit(unit),
            (None, Some(expr)) => self.is_angle(expr, budget),
            (None, None) => false,
        }
    }
}

/// A plain number as written: `2`, `0.5`.
fn is_plain_number(expr: &Expr) -> bool {
    match &expr.kind {
        ExprKind::Number(_) => true,
        ExprKind::Negate(inner) => is_plain_number(inner),
        _ => false,
    }
}

/// A cell that is not an angle added to one (`θ + k`): the sum is then not
/// shown as an angle.
fn is_named_plain(expr: &Expr, is_angle: bool) -> bool {
    !is_angle && matches!(expr.kind, ExprKind::Name(_))
}

/// `deg`, `rad`, `rev` (alone: `rad/s` is an angular speed, not an angle).
fn is_angle_unit(unit: &UnitExpr) -> bool {
    matches!(&*unit.factors, [factor] if factor.exponent == 1 && matches!(&*factor.symbol, "deg" | "°" | "rad" | "rev"))
}
