//! The conversion factors and gravity values engineers type by hand, each
//! with the exact conversion it approximates (taken from the unit catalog,
//! never typed here).

use super::context::{Context, Owner};
use super::rewrite::evaluate_rewritten;
use crate::syntax::ast::{BinaryOp, Expr, ExprKind};
use crate::units::{self, Dimension, ExactFactor};

/// A familiar conversion factor as typed by hand.
#[derive(Debug)]
pub struct HandFactor {
    /// The spellings that count as this factor: `2.2`, `2.2046`, ….
    pub values: &'static [f64],
    /// What it converts, in words that follow "looks like": "pounds-mass per kilogram".
    pub converts: &'static str,
    /// The conversion as a product of catalog units whose exact value the
    /// factor approximates: `kg/lbm` for 2.2.
    pub exact_units: &'static [(&'static str, i32)],
    /// The exact conversion for people: "1 kg = 2.2046226… lbm".
    pub exact_words: &'static str,
    /// What kind of value it is.
    pub family: Family,
    /// Only counts when the units on both sides differ by this factor
    /// (`12` between ft and in, `1000` between prefixes): such numbers are
    /// more often counts.
    pub needs_unit_evidence: bool,
}

impl HandFactor {
    /// The exact value the factor approximates.
    pub fn exact(&self) -> ExactFactor {
        units::exact_factor(self.exact_units.iter().copied()).unwrap_or_else(ExactFactor::one)
    }

    /// Whether it is a value of gravity (g0 in m/s² or ft/s², or g_c).
    pub fn is_gravity(&self) -> bool {
        self.family == Family::Gravity
    }
}

/// What kind of value a hand factor is.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Family {
    /// A value of standard gravity, or g_c.
    Gravity,
    /// A conversion between two units of this dimension.
    Conversion(Dimension),
    /// A decimal prefix step, for any dimension.
    Prefix,
}

/// Every factor the `hand-conversion-factor` lint looks for.
pub const HAND_FACTORS: &[HandFactor] = &[
    HandFactor {
        values: &[9.8, 9.81, 9.807, 9.8067, 9.80665],
        converts: "standard gravity in m/s²",
        exact_units: &[("kgf", 1), ("kg", -1)],
        exact_words: "g0 = 9.80665 m/s² exactly, 3rd CGPM 1901",
        family: Family::Gravity,
        needs_unit_evidence: false,
    },
    HandFactor {
        values: &[32.2, 32.17, 32.174, 32.1740, 32.17405, 32.174049],
        converts: "standard gravity in ft/s² or g_c",
        exact_units: &[("kgf", 1), ("kg", -1), ("ft", -1), ("s", 2)],
        exact_words: "g0 = g_c = 196133/6096 = 32.174048556… ft/s² exactly",
        family: Family::Gravity,
        needs_unit_evidence: false,
    },
    HandFactor {
        values: &[2.2, 2.204, 2.2046, 2.20462, 2.204623, 2.205],
        converts: "pounds-mass per kilogram",
        exact_units: &[("kg", 1), ("lbm", -1)],
        exact_words: "1 kg = 2.2046226218… lbm",
        family: Family::Conversion(Dimension::MASS),
        needs_unit_evidence: false,
    },
    HandFactor {
        values: &[0.454, 0.4536, 0.45359, 0.453592, 0.45359237],
        converts: "kilograms per pound-mass",
        exact_units: &[("lbm", 1), ("kg", -1)],
        exact_words: "1 lbm = 0.45359237 kg exactly",
        family: Family::Conversion(Dimension::MASS),
        needs_unit_evidence: false,
    },
    HandFactor {
        values: &[4.448, 4.4482, 4.44822, 4.448222, 4.45],
        converts: "newtons per pound-force",
        exact_units: &[("lbf", 1), ("N", -1)],
        exact_words: "1 lbf = 4.4482216152605 N exactly",
        family: Family::Conversion(Dimension::FORCE),
        needs_unit_evidence: false,
    },
    HandFactor {
        values: &[0.2248, 0.22481, 0.224809],
        converts: "pounds-force per newton",
        exact_units: &[("N", 1), ("lbf", -1)],
        exact_words: "1 N = 0.2248089431… lbf",
        family: Family::Conversion(Dimension::FORCE),
        needs_unit_evidence: false,
    },
    HandFactor {
        values: &[14.59, 14.594, 14.5939, 14.59390],
        converts: "kilograms per slug",
        exact_units: &[("slug", 1), ("kg", -1)],
        exact_words: "1 slug = 14.5939029372… kg",
        family: Family::Conversion(Dimension::MASS),
        needs_unit_evidence: false,
    },
    HandFactor {
        values: &[3.28, 3.281, 3.2808, 3.28084],
        converts: "feet per metre",
        exact_units: &[("m", 1), ("ft", -1)],
        exact_words: "1 m = 3.2808398950… ft",
        family: Family::Conversion(Dimension::LENGTH),
        needs_unit_evidence: false,
    },
    HandFactor {
        values: &[0.3048],
        converts: "metres per foot",
        exact_units: &[("ft", 1), ("m", -1)],
        exact_words: "1 ft = 0.3048 m exactly",
        family: Family::Conversion(Dimension::LENGTH),
        needs_unit_evidence: false,
    },
    HandFactor {
        values: &[25.4],
        converts: "millimetres per inch",
        exact_units: &[("in", 1), ("mm", -1)],
        exact_words: "1 in = 25.4 mm exactly",
        family: Family::Conversion(Dimension::LENGTH),
        needs_unit_evidence: false,
    },
    HandFactor {
        values: &[0.0254],
        converts: "metres per inch",
        exact_units: &[("in", 1), ("m", -1)],
        exact_words: "1 in = 0.0254 m exactly",
        family: Family::Conversion(Dimension::LENGTH),
        needs_unit_evidence: false,
    },
    HandFactor {
        values: &[39.37, 39.3701],
        converts: "inches per metre",
        exact_units: &[("m", 1), ("in", -1)],
        exact_words: "1 m = 39.3700787… in",
        family: Family::Conversion(Dimension::LENGTH),
        needs_unit_evidence: false,
    },
    HandFactor {
        values: &[6.895, 6.8948, 6.89476, 6.894757],
        converts: "kilopascals per psi",
        exact_units: &[("psi", 1), ("kPa", -1)],
        exact_words: "1 psi = 6.8947572931… kPa",
        family: Family::Conversion(Dimension::PRESSURE),
        needs_unit_evidence: false,
    },
    HandFactor {
        values: &[145.04, 145.038],
        converts: "psi per megapascal",
        exact_units: &[("MPa", 1), ("psi", -1)],
        exact_words: "1 MPa = 145.0377377… psi",
        family: Family::Conversion(Dimension::PRESSURE),
        needs_unit_evidence: false,
    },
    HandFactor {
        values: &[1.356, 1.3558, 1.35582],
        converts: "joules (newton-metres) per foot-pound-force",
        exact_units: &[("ft", 1), ("lbf", 1), ("J", -1)],
        exact_words: "1 ft·lbf = 1.3558179483314004 J exactly",
        family: Family::Conversion(Dimension::ENERGY),
        needs_unit_evidence: false,
    },
    HandFactor {
        values: &[0.7376, 0.73756],
        converts: "foot-pounds-force per joule",
        exact_units: &[("J", 1), ("ft", -1), ("lbf", -1)],
        exact_words: "1 J = 0.7375621492… ft·lbf",
        family: Family::Conversion(Dimension::ENERGY),
        needs_unit_evidence: false,
    },
    HandFactor {
        values: &[745.7, 746.0],
        converts: "watts per horsepower",
        exact_units: &[("hp", 1), ("W", -1)],
        exact_words: "1 hp = 550 ft·lbf/s = 745.69987158227022 W exactly",
        family: Family::Conversion(Dimension::POWER),
        needs_unit_evidence: false,
    },
    HandFactor {
        values: &[550.0],
        converts: "foot-pounds-force per second per horsepower",
        exact_units: &[("hp", 1), ("ft", -1), ("lbf", -1), ("s", 1)],
        exact_words: "1 hp = 550 ft·lbf/s exactly",
        family: Family::Conversion(Dimension::POWER),
        needs_unit_evidence: false,
    },
    HandFactor {
        values: &[1.609, 1.6093, 1.609344],
        converts: "kilometres per mile",
        exact_units: &[("mi", 1), ("km", -1)],
        exact_words: "1 mi = 1.609344 km exactly",
        family: Family::Conversion(Dimension::LENGTH),
        needs_unit_evidence: false,
    },
    HandFactor {
        values: &[12.0],
        converts: "inches per foot",
        exact_units: &[("ft", 1), ("in", -1)],
        exact_words: "1 ft = 12 in exactly",
        family: Family::Conversion(Dimension::LENGTH),
        needs_unit_evidence: true,
    },
    HandFactor {
        values: &[1000.0],
        converts: "an SI prefix step (kilo, milli)",
        exact_units: &[("kN", 1), ("N", -1)],
        exact_words: "1 kN = 1000 N, 1 m = 1000 mm exactly",
        family: Family::Prefix,
        needs_unit_evidence: true,
    },
];

/// The hand factor a bare number matches, if any.
pub(super) fn matching(value: f64) -> Option<&'static HandFactor> {
    HAND_FACTORS
        .iter()
        .find(|factor| factor.values.contains(&value))
}

/// A bare number in a formula that matches a [`HandFactor`], used as a
/// multiplier or a divisor.
#[derive(Clone, Copy, Debug)]
pub(super) struct HandFactorUse<'a> {
    /// The factor it matches.
    pub factor: &'static HandFactor,
    /// The number as written.
    pub number: &'a Expr,
    /// Its value.
    pub value: f64,
    /// The multiplication or division it takes part in.
    pub operation: &'a Expr,
    /// The other operand.
    pub other: &'a Expr,
    /// `*` or `/`.
    pub op: BinaryOp,
    /// Where the expression lives.
    pub owner: Owner,
    /// The whole expression (formula or check side).
    pub root: &'a Expr,
    /// Units on both sides of the conversion when they are known (the
    /// operand's written unit and the result's), as text.
    pub units_present: Option<(&'a str, &'a str)>,
}

/// Every hand-typed factor in the sheet's formulas and checks, in file order.
pub(super) fn find<'a>(context: &Context<'a>) -> Vec<HandFactorUse<'a>> {
    let mut found = Vec::new();
    for (owner, root) in context.expressions() {
        root.walk(&mut |node| visit(context, owner, root, node, &mut found));
    }
    found
}

/// Adds the hand-typed factor `node` multiplies or divides by, if any.
pub(super) fn visit<'a>(
    context: &Context<'a>,
    owner: Owner,
    root: &'a Expr,
    node: &'a Expr,
    found: &mut Vec<HandFactorUse<'a>>,
) {
    let ExprKind::Binary { op, lhs, rhs } = &node.kind else {
        return;
    };
    let candidates: &[(&Expr, &Expr)] = match op {
        BinaryOp::Multiply => &[(lhs, rhs), (rhs, lhs)],
        BinaryOp::Divide => &[(rhs, lhs)],
        _ => &[],
    };
    for &(number, other) in candidates {
        let ExprKind::Number(value) = number.kind else {
            continue;
        };
        let Some(factor) = matching(value) else {
            continue;
        };
        let units_present = units_around(context, owner, other);
        if factor.needs_unit_evidence
            && !units_present.is_some_and(|(_, from, _, to)| ratio_is(from / to, value))
        {
            continue;
        }
        if let Family::Conversion(family) = factor.family
            && !converts_plausibly(context, owner, other, family)
        {
            continue;
        }
        found.push(HandFactorUse {
            factor,
            number,
            value,
            operation: node,
            other,
            op: *op,
            owner,
            root,
            units_present: units_present.map(|(from, _, to, _)| (from, to)),
        });
    }
}

/// Whether a conversion factor of `family` (a mass for 2.2) could be meant
/// to convert `other`: it is of that dimension, a plain number, the other
/// of mass and force (the lbm/lbf mix-up), or a product with a factor of
/// that dimension (`m * g0 * h * 0.3048` converts `h`). `550 * F_bolt` (a
/// count times a force) is not a horsepower conversion. Checked only once a
/// number matches, so evaluating is rare.
fn converts_plausibly(
    context: &Context<'_>,
    owner: Owner,
    other: &Expr,
    family: Dimension,
) -> bool {
    let Some(dimension) = dimension_of(context, owner, other) else {
        return true;
    };
    let mass_and_force = [Dimension::MASS, Dimension::FORCE];
    dimension.is_dimensionless()
        || (mass_and_force.contains(&dimension) && mass_and_force.contains(&family))
        || already_converted(context, owner, other, family).is_some()
}

/// The part of `other` that is already a quantity of `family` (and so is
/// converted a second time by the factor): `other` itself, or one factor of
/// the product it is.
pub(super) fn already_converted<'e>(
    context: &Context<'_>,
    owner: Owner,
    other: &'e Expr,
    family: Dimension,
) -> Option<&'e Expr> {
    if dimension_of(context, owner, other) == Some(family) {
        return Some(other);
    }
    let mut factors = Vec::new();
    product_factors(other, &mut factors);
    if factors.len() < 2 {
        return None;
    }
    factors
        .into_iter()
        .find(|factor| dimension_of(context, owner, factor) == Some(family))
}

fn dimension_of(context: &Context<'_>, owner: Owner, expr: &Expr) -> Option<Dimension> {
    evaluate_rewritten(context, owner, context.text(expr.span)).map(|value| value.dimension)
}

/// The factors of a product or quotient: `m * g0 * h` → `m`, `g0`, `h`.
fn product_factors<'e>(expr: &'e Expr, factors: &mut Vec<&'e Expr>) {
    match &expr.kind {
        ExprKind::Binary {
            op: BinaryOp::Multiply | BinaryOp::Divide,
            lhs,
            rhs,
        } => {
            product_factors(lhs, factors);
            product_factors(rhs, factors);
        }
        _ => factors.push(expr),
    }
}

/// Whether `ratio` is `factor` or its inverse, to rounding.
fn ratio_is(ratio: f64, factor: f64) -> bool {
    let close = |a: f64| (a / factor - 1.0).abs() < 1e-9;
    close(ratio) || close(1.0 / ratio)
}

/// The unit `other` was written in and the unit the result is declared or
/// named in (with their SI factors), when both are known and of one
/// dimension.
fn units_around<'a>(
    context: &Context<'a>,
    owner: Owner,
    other: &Expr,
) -> Option<(&'a str, f64, &'a str, f64)> {
    let (from_text, from) = context.written_unit(other)?;
    let (to_text, to_factor) = match owner {
        Owner::Cell(id) => {
            let cell = context.sheet.cell(id);
            match cell.unit {
                Some(unit) => {
                    let resolved = context.resolve(unit)?;
                    (resolved.dimension == from.dimension)
                        .then_some((context.text(unit.span), resolved.si_factor))?
                }
                None => context.suffix_unit(&cell.name.text, from.dimension)?,
            }
        }
        Owner::Check(index, side) => {
            let check = context.sheet.check(index);
            let other_side = if side == 0 { &check.rhs } else { &check.lhs };
            let (text, resolved) = context.written_unit(other_side)?;
            (resolved.dimension == from.dimension).then_some((text, resolved.si_factor))?
        }
    };
    Some((from_text, from.si_factor, to_text, to_factor))
}
