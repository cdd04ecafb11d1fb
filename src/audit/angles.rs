//! Angles, which heft's units cannot tell from plain numbers (a radian is
//! 1): a number in degrees given as radians to a function that takes an
//! angle (`sin`, `cos`, `tan`, `polar`: its entry in the function table
//! says so), and a plain 1/s shown as an angular speed, where 1/s may be
//! revolutions or radians per second. Whether a formula says it holds an
//! angle is read from what it is written with: an angle unit (`deg`, `rad`,
//! `rev`, `rpm`, from the catalog: the dimensionless units other than `%`,
//! and units whose factor holds π), a function that gives an angle (`asin`,
//! `atan2`, `angle`, …), a slope, or a cell that does.

use std::cell::RefCell;

use super::context::{Context, Owner};
use super::rewrite::evaluate_rewritten;
use crate::base::{Code, Diagnostic, Fix, FixValue};
use crate::sheet::CellId;
use crate::syntax::ast::{Expr, ExprKind, Target, UnitExpr};
use crate::units::functions::{self, Angles};
use crate::units::{self, Dimension, format_significant};

/// One turn in radians: a plain angle beyond it is more likely degrees.
const TURN: f64 = std::f64::consts::TAU;

/// What the function named `name` does with angles, as its entry in the
/// function table says (an unknown name: nothing).
fn angles_of(name: &str) -> Angles {
    functions::function(name).map_or(Angles::Neither, |function| function.angles)
}

/// Whether expressions and cells say they hold an angle, with each cell's
/// answer kept (a long chain is read once).
pub(super) struct AngleWords<'c, 'a> {
    context: &'c Context<'a>,
    /// Whether `pi` counts as saying so (`2 * pi * f * t` is radians; in
    /// `v / (pi * D)` it is a circumference).
    count_pi: bool,
    /// Per cell: unknown, being read (a loop), no, yes.
    cells: RefCell<Vec<u8>>,
}

const UNKNOWN: u8 = 0;
const READING: u8 = 1;
const NO: u8 = 2;
const YES: u8 = 3;

impl<'c, 'a> AngleWords<'c, 'a> {
    pub fn new(context: &'c Context<'a>, count_pi: bool) -> Self {
        AngleWords {
            context,
            count_pi,
            cells: RefCell::new(vec![UNKNOWN; context.sheet.cells.len()]),
        }
    }

    /// Whether `expr` is written with an angle.
    pub fn in_expr(&self, expr: &Expr) -> bool {
        match &expr.kind {
            ExprKind::Quantity { unit, .. } | ExprKind::UnitValue(unit) => is_angle_unit(unit),
            ExprKind::Name(name) => match name.target {
                Target::Cell(id) => self.in_cell(id),
                Target::Constant(index) => {
                    self.count_pi && units::CONSTANTS.get(index).is_some_and(|c| c.name == "pi")
                }
                // A used sheet's cell is a value here, not a formula.
                Target::Imported { .. } | Target::Unresolved => false,
            },
            ExprKind::Slope { .. } => true,
            ExprKind::Call { function, args } => match angles_of(&function.text) {
                Angles::Gives => true,
                // The angle is taken, not given: `polar(F, θ)` is a vector
                // in the units of `F`.
                Angles::Takes(angle) => args
                    .iter()
                    .enumerate()
                    .any(|(at, arg)| at != angle && self.in_expr(arg)),
                Angles::Neither => args.iter().any(|arg| self.in_expr(arg)),
            },
            ExprKind::Negate(inner) => self.in_expr(inner),
            ExprKind::Binary { lhs, rhs, .. } => self.in_expr(lhs) || self.in_expr(rhs),
            ExprKind::Component { vector, .. } => self.in_expr(vector),
            ExprKind::RunQuery(query) => self.in_expr(&query.value),
            // The value is one of the branches; the test only chooses.
            ExprKind::Conditional(conditional) => {
                self.in_expr(&conditional.then) || self.in_expr(&conditional.otherwise)
            }
            // A table's column has its own unit; its keys do not make it an angle.
            ExprKind::Lookup(_) | ExprKind::Number(_) | ExprKind::Invalid => false,
        }
    }

    /// Whether cell `id` is declared or written with an angle.
    pub fn in_cell(&self, id: CellId) -> bool {
        match self.cells.borrow()[id] {
            NO | READING => return false,
            YES => return true,
            _ => {}
        }
        self.cells.borrow_mut()[id] = READING;
        let cell = self.context.sheet.cell(id);
        let says =
            cell.unit.is_some_and(is_angle_unit) || cell.expr.is_some_and(|e| self.in_expr(e));
        self.cells.borrow_mut()[id] = if says { YES } else { NO };
        says
    }
}

/// A unit written with an angle: `deg`, `rad/s`, `rpm`.
fn is_angle_unit(unit: &UnitExpr) -> bool {
    let catalog = units::catalog();
    unit.factors.iter().any(|factor| {
        catalog.get(&factor.symbol).is_some_and(|def| {
            (def.dimension.is_dimensionless() && def.symbol != "%") || def.factor.pi_power != 0
        })
    })
}

/// Whether a name or description says degrees: `θ_deg`, "degrees", "°".
fn says_degrees(name: &str, description: Option<&str>) -> bool {
    let suffix = name.rsplit_once('_').map(|(_, suffix)| suffix);
    matches!(suffix, Some("deg" | "degrees"))
        || description.is_some_and(|text| {
            let text = text.to_lowercase();
            text.contains("degree")
                || text.contains("deg ")
                || text.ends_with("deg")
                || text.contains('°')
        })
}

/// `sin(θ)` (or `polar(F, θ)`) where `θ` is a plain number written without an angle unit that
/// is beyond a turn, or a cell named or described in degrees: taken as
/// radians, it is almost surely degrees.
pub(super) fn degrees_as_radians(
    context: &Context<'_>,
    words: &AngleWords<'_, '_>,
    owner: Owner,
    node: &Expr,
) -> Option<Diagnostic> {
    let ExprKind::Call { function, args } = &node.kind else {
        return None;
    };
    let Angles::Takes(angle) = angles_of(&function.text) else {
        return None;
    };
    let argument = args.get(angle)?;
    if words.in_expr(argument) {
        return None;
    }
    let argument_text = context.text(argument.span);
    let value = evaluate_rewritten(context, owner, argument_text)?;
    if !value.dimension.is_dimensionless() {
        return None;
    }
    let input = match &argument.kind {
        ExprKind::Name(name) => match name.target {
            Target::Cell(id) => Some(id),
            _ => None,
        },
        _ => None,
    };
    let described = input.is_some_and(|id| {
        let cell = context.sheet.cell(id);
        says_degrees(&cell.name.text, cell.description.map(|d| d.text.as_str()))
    });
    let beyond_a_turn = value.si.abs() > TURN;
    if !described && !beyond_a_turn {
        return None;
    }
    let function_name = function.text.as_str();
    let reason = if described {
        format!("`{argument_text}` is named or described in degrees")
    } else {
        "a plain angle beyond a turn (2π) is more likely degrees".to_string()
    };
    let number = format_significant(value.si, 4);
    let taken = if matches!(argument.kind, ExprKind::Number(_)) {
        number.clone()
    } else {
        format!("`{argument_text}` = {number}")
    };
    let message = format!(
        "`{function_name}` takes {taken} as radians ({number} rad = {}°), but {reason}: in degrees it would be {number}°",
        format_significant(value.si.to_degrees(), 4),
    );
    // The fix: write the degrees where the number is typed.
    let typed_input = input.and_then(|id| {
        let cell = context.sheet.formula_cell(id)?;
        matches!(cell.expr.kind, ExprKind::Number(_))
            .then(|| (cell.name.text.as_str(), cell.expr.span))
    });
    let giving = match owner {
        Owner::Cell(id) => Some(FixValue::Cell(context.sheet.cell(id).name.text.to_string())),
        Owner::Check(..) => None,
    };
    let fix = match typed_input {
        Some((name, span)) => {
            let degrees = format!("{} deg", context.text(span));
            Fix::replace(span, degrees.clone())
                .showing(Some(format!("{name} = {degrees}")))
                .giving(giving)
        }
        None if matches!(argument.kind, ExprKind::Number(_)) => {
            Fix::replace(argument.span, format!("{argument_text} deg")).showing(None)
        }
        None => Fix::replace(argument.span, format!("({argument_text}) * 1 deg")).showing(None),
    };
    Some(
        Diagnostic::warning(Code::DegreesAsRadians, argument.span, message)
            .with_label(function.span, "takes radians")
            .with_help("write an angle with its unit: `60 deg`, or `1.047 rad` if it is in radians")
            .with_fix(fix.with_lead("if it is in degrees, ")),
    )
}

/// A cell shown in an angular speed (`[rpm]`, `[rad/s]`) whose formula is
/// a plain 1/s written with no angle: revolutions or radians per second?
/// heft reads radians; both readings are given.
pub(super) fn ambiguous_angular_speed(
    context: &Context<'_>,
    words: &AngleWords<'_, '_>,
    id: CellId,
) -> Option<Diagnostic> {
    let cell = context.sheet.formula_cell(id)?;
    let unit = cell.unit.as_ref()?;
    if !is_angle_unit(unit) || context.resolve(unit)?.dimension != Dimension::FREQUENCY {
        return None;
    }
    if words.in_expr(&cell.expr) {
        return None;
    }
    let value = context.value(id)?;
    let formula = context.text(cell.expr.span);
    let owner = Owner::Cell(id);
    let bracketed = if matches!(cell.expr.kind, ExprKind::Name(_)) {
        formula.to_string()
    } else {
        format!("({formula})")
    };
    let as_revolutions = evaluate_rewritten(context, owner, &format!("{bracketed} * 1 rev"))?;
    let name = &cell.name.text;
    let unit_text = context.text(unit.span);
    Some(
        Diagnostic::warning(
            Code::AmbiguousAngularSpeed,
            cell.expr.span,
            format!(
                "`{name}` is shown in {unit_text}, but `{formula}` is a plain rate ({} 1/s) written with no angle: as radians per second it is {} (what heft shows), as revolutions per second {}",
                format_significant(value.si, context.sig_figs),
                context.show_for(owner, value),
                context.show_for(owner, as_revolutions),
            ),
        )
        .with_label(unit.span, "an angular speed")
        .with_help(format!(
            "say which: write `{bracketed} * 1 rev` if it counts revolutions, `{bracketed} * 1 rad` if radians"
        )),
    )
}

/// A check that compares a plain 1/s written with no angle with an angular
/// speed (`check n <= 20 rpm`): the same question as for a cell.
pub(super) fn ambiguous_angular_speed_in_check(
    context: &Context<'_>,
    words: &AngleWords<'_, '_>,
    index: usize,
) -> Option<Diagnostic> {
    let check = context.sheet.check(index);
    let sides = [(0, &check.lhs, &check.rhs), (1, &check.rhs, &check.lhs)];
    let (side, plain, angular) = sides
        .into_iter()
        .find(|(_, plain, angular)| words.in_expr(angular) && !words.in_expr(plain))?;
    let owner = Owner::Check(index, side);
    let value = evaluate_rewritten(context, owner, context.text(plain.span))?;
    if value.dimension != Dimension::FREQUENCY {
        return None;
    }
    let (angular_text, angular_unit) = context.written_unit(angular)?;
    if angular_unit.dimension != Dimension::FREQUENCY {
        return None;
    }
    let plain_text = context.text(plain.span);
    let bracketed = if matches!(plain.kind, ExprKind::Name(_)) {
        plain_text.to_string()
    } else {
        format!("({plain_text})")
    };
    let as_revolutions = value.si * std::f64::consts::TAU;
    Some(
        Diagnostic::warning(
            Code::AmbiguousAngularSpeed,
            plain.span,
            format!(
                "this check compares `{plain_text}`, a plain rate ({} 1/s) written with no angle, with an angular speed in {angular_text}: as radians per second it is {} (what heft compares), as revolutions per second {}",
                format_significant(value.si, context.sig_figs),
                context.show_in(value.si, angular_text, angular_unit.si_factor),
                context.show_in(as_revolutions, angular_text, angular_unit.si_factor),
            ),
        )
        .with_label(angular.span, "an angular speed")
        .with_help(format!(
            "say which: write `{bracketed} * 1 rev` if it counts revolutions, `{bracketed} * 1 rad` if radians"
        )),
    )
}
