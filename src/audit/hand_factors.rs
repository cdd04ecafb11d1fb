//! The conversion factors and gravity values engineers type by hand. The
//! list is derived from the unit catalog, never typed here: every ratio
//! between two ways of writing one dimension (a catalog unit, the coherent
//! SI unit, or, where a side has no unit of its own for work, torque or
//! area, a length times a force or a length squared: `ft*lbf`, `in^2`),
//! plus standard gravity in m/s² and ft/s².
//! A bare number counts as one when it is that ratio rounded to the figures
//! it is written with (three or more; two within 0.5 % for gravity and mass
//! and force factors: `2.2`, `9.8`);
//! an integer ratio or its reciprocal (`12`, `60`, `1000`) counts only when
//! the units on both sides show that conversion. Those units also catch a
//! conversion of any dimension (`a * 3.281` from m/s² to ft/s²).

use std::sync::LazyLock;

use super::context::{Context, Owner};
use super::rewrite::evaluate_rewritten;
use crate::syntax::ast::{BinaryOp, Expr, ExprKind};
use crate::units::{self, Dimension, ExactFactor, SI_BASE_SYMBOLS, UnitSystem};

/// A conversion factor as engineers type it by hand.
#[derive(Clone, Debug)]
pub struct HandFactor {
    /// The unit converted from, in heft syntax: `kg`, `ft*lbf`, `m/s^2`.
    pub from: String,
    /// The unit converted to: `lbm`.
    pub to: String,
    /// The conversion as a product of catalog units (`kg/lbm` for 2.2): its
    /// exact value is the number of `to` in one `from`.
    pub exact_units: Vec<(String, i32)>,
    /// What kind of value it is.
    pub family: Family,
}

impl HandFactor {
    /// The exact value the factor approximates.
    pub fn exact(&self) -> ExactFactor {
        units::exact_factor(self.exact_units()).unwrap_or_else(ExactFactor::one)
    }

    /// [`HandFactor::exact_units`] as borrowed symbols.
    pub fn exact_units(&self) -> Vec<(&str, i32)> {
        self.exact_units
            .iter()
            .map(|(symbol, exponent)| (symbol.as_str(), *exponent))
            .collect()
    }

    /// Whether it is a value of gravity (g0 in m/s² or ft/s², or g_c).
    pub fn is_gravity(&self) -> bool {
        self.family == Family::Gravity
    }

    /// What it converts, in words that follow "looks like": `the kg → lbm
    /// factor`, `standard gravity in ft/s² or g_c`.
    pub fn converts(&self) -> String {
        match self.family {
            Family::Gravity if self.to == "m/s^2" => "standard gravity in m/s²".to_string(),
            Family::Gravity => "standard gravity in ft/s² or g_c".to_string(),
            Family::Conversion(_) | Family::Prefix => {
                format!("the {} → {} factor", self.from, self.to)
            }
        }
    }

    /// The exact conversion for people: `1 kg = 2.2046226218… lbm`.
    pub fn exact_words(&self) -> String {
        let exact = self.exact();
        match self.family {
            Family::Gravity if self.to == "m/s^2" => {
                "g0 = 9.80665 m/s² exactly, 3rd CGPM 1901".to_string()
            }
            Family::Gravity => format!(
                "g0 = g_c = {} = {} ft/s² exactly",
                exact.exact_text(),
                exact.approximate_text(11)
            ),
            Family::Conversion(_) | Family::Prefix if exact.terminates() => {
                format!(
                    "1 {} = {} {} exactly",
                    self.from,
                    exact.exact_text(),
                    self.to
                )
            }
            Family::Conversion(_) | Family::Prefix => format!(
                "1 {} = {} {}",
                self.from,
                exact.approximate_text(11),
                self.to
            ),
        }
    }
}

/// What kind of value a hand factor is.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Family {
    /// A value of standard gravity, or g_c.
    Gravity,
    /// A conversion between two units of this dimension.
    Conversion(Dimension),
    /// A power of ten between two units (a prefix step), for any dimension.
    Prefix,
}

/// A factor of the list with its value, for the search by value.
struct Listed {
    factor: HandFactor,
    value: f64,
    /// An integer, or one over an integer (`12`, `1/12`): more often a count
    /// than a conversion, so it needs the units to show it.
    needs_unit_evidence: bool,
    /// How a rounding of it must be written to count.
    evidence: Evidence,
}

/// One way of writing a dimension: a unit, a coherent SI unit, a product.
struct Writing {
    /// Whether it is a product or a coherent SI unit rather than a unit of
    /// the catalog: such a writing converts only to the other side.
    compound: bool,
    /// Whether it is US customary (else SI, metric or shared).
    customary: bool,
    text: String,
    symbols: Vec<(String, i32)>,
    factor: ExactFactor,
    dimension: Dimension,
}

/// Every factor the `hand-conversion-factor` lint looks for, derived from
/// the unit catalog (see the module's documentation), by value.
pub fn hand_factors() -> impl Iterator<Item = &'static HandFactor> {
    listed().iter().map(|listed| &listed.factor)
}

fn listed() -> &'static [Listed] {
    static LIST: LazyLock<Vec<Listed>> = LazyLock::new(build_list);
    &LIST
}

fn build_list() -> Vec<Listed> {
    let catalog = units::catalog();
    let mut metric: Vec<Writing> = Vec::new();
    let mut customary: Vec<Writing> = Vec::new();
    for unit in catalog.units() {
        // Two spellings of one unit (`deg` and `°`, `µm` and `um`) are one.
        let seen = metric
            .iter()
            .chain(&customary)
            .any(|writing| writing.dimension == unit.dimension && writing.factor == unit.factor);
        if seen || unit.symbol == "%" {
            continue;
        }
        let writing = Writing {
            compound: false,
            customary: unit.system == UnitSystem::UsCustomary,
            text: unit.symbol.clone(),
            symbols: vec![(unit.symbol.clone(), 1)],
            factor: unit.factor.clone(),
            dimension: unit.dimension,
        };
        match unit.system {
            UnitSystem::UsCustomary => customary.push(writing),
            UnitSystem::Si | UnitSystem::Metric | UnitSystem::Shared => metric.push(writing),
        }
    }
    // Work and torque (a length times a force) and area (a length squared)
    // where a side has no unit of its own for them: `ft*lbf`, `in^2`.
    let products = |side: &[Writing]| -> Vec<Writing> {
        let of = |dimension: Dimension| side.iter().filter(move |w| w.dimension == dimension);
        let mut made = Vec::new();
        for length in of(Dimension::LENGTH) {
            let mut partners: Vec<&Writing> = of(Dimension::FORCE).collect();
            partners.push(length);
            for partner in partners {
                let Some(dimension) = length.dimension.checked_mul(partner.dimension) else {
                    continue;
                };
                if side.iter().any(|writing| writing.dimension == dimension) {
                    continue;
                }
                let square = std::ptr::eq(length, partner);
                let mut symbols = length.symbols.clone();
                symbols.extend(partner.symbols.iter().cloned());
                made.push(Writing {
                    compound: true,
                    customary: length.customary,
                    text: if square {
                        format!("{}^2", length.text)
                    } else {
                        format!("{}*{}", length.text, partner.text)
                    },
                    symbols,
                    factor: length.factor.times(&partner.factor),
                    dimension,
                });
            }
        }
        made
    };
    let metric_products = products(&metric);
    let customary_products = products(&customary);
    metric.extend(metric_products);
    customary.extend(customary_products);
    // The coherent SI unit of every dimension written, where no unit is it.
    let mut dimensions: Vec<Dimension> = metric
        .iter()
        .chain(&customary)
        .map(|writing| writing.dimension)
        .collect();
    dimensions.sort_unstable();
    dimensions.dedup();
    for dimension in dimensions {
        let coherent = metric
            .iter()
            .any(|writing| writing.dimension == dimension && writing.factor == ExactFactor::one());
        if !coherent && !dimension.is_dimensionless() {
            metric.push(Writing {
                compound: true,
                customary: false,
                text: dimension.si_units(),
                symbols: SI_BASE_SYMBOLS
                    .iter()
                    .zip(dimension.exponents)
                    .filter(|(_, exponent)| *exponent != 0)
                    .map(|(symbol, exponent)| ((*symbol).to_string(), i32::from(exponent)))
                    .collect(),
                factor: ExactFactor::one(),
                dimension,
            });
        }
    }

    // An angular speed converts to rad/s, not to Hz (1 rpm is 1/60 Hz of
    // revolutions but π/30 rad/s): the rpm factors are named so.
    metric.push(Writing {
        compound: false,
        customary: false,
        text: "rad/s".to_string(),
        symbols: vec![("rad".to_string(), 1), ("s".to_string(), -1)],
        factor: ExactFactor::one(),
        dimension: Dimension::FREQUENCY,
    });
    let hertz_and_rpm = |a: &Writing, b: &Writing| a.text == "rpm" && b.text.ends_with("Hz");

    let mut list = vec![
        gravity("m/s^2", &[("kgf", 1), ("kg", -1)]),
        gravity("ft/s^2", &[("kgf", 1), ("kg", -1), ("ft", -1), ("s", 2)]),
    ];
    let all: Vec<&Writing> = metric.iter().chain(&customary).collect();
    for from in &all {
        for to in &all {
            let across = from.customary != to.customary;
            if from.dimension != to.dimension
                || std::ptr::eq(*from, *to)
                || ((from.compound || to.compound) && !across)
                || hertz_and_rpm(from, to)
                || hertz_and_rpm(to, from)
            {
                continue;
            }
            let exact = from.factor.over(&to.factor);
            if exact == ExactFactor::one() {
                continue;
            }
            let family = if is_power_of_ten(&exact) {
                Family::Prefix
            } else {
                Family::Conversion(from.dimension)
            };
            let mut exact_units = from.symbols.clone();
            exact_units.extend(to.symbols.iter().map(|(s, e)| (s.clone(), -e)));
            list.push(listed_factor(
                HandFactor {
                    from: from.text.clone(),
                    to: to.text.clone(),
                    exact_units,
                    family,
                },
                &exact,
            ));
        }
    }
    list.sort_by(|a, b| a.value.total_cmp(&b.value));
    list
}

fn gravity(unit: &str, exact_units: &[(&str, i32)]) -> Listed {
    let factor = HandFactor {
        from: "g0".to_string(),
        to: unit.to_string(),
        exact_units: exact_units
            .iter()
            .map(|(symbol, exponent)| ((*symbol).to_string(), *exponent))
            .collect(),
        family: Family::Gravity,
    };
    let exact = factor.exact();
    listed_factor(factor, &exact)
}

fn listed_factor(factor: HandFactor, exact: &ExactFactor) -> Listed {
    let integer_or_reciprocal =
        exact.pi_power == 0 && (exact.ratio.is_integer() || exact.ratio.recip().is_integer());
    let two_figures = match factor.family {
        Family::Gravity => true,
        Family::Conversion(dimension) => [Dimension::MASS, Dimension::FORCE].contains(&dimension),
        Family::Prefix => false,
    };
    Listed {
        value: exact.to_f64(),
        needs_unit_evidence: integer_or_reciprocal || factor.family == Family::Prefix,
        evidence: if two_figures {
            Evidence::TwoFigures
        } else {
            Evidence::ThreeFigures
        },
        factor,
    }
}

/// Whether an exact factor is 10^n for some integer n.
fn is_power_of_ten(exact: &ExactFactor) -> bool {
    if exact.pi_power != 0 {
        return false;
    }
    let ten = num_bigint::BigInt::from(10);
    let is_power = |mut n: num_bigint::BigInt| {
        while n > num_bigint::BigInt::from(1) && (&n % &ten) == num_bigint::BigInt::from(0) {
            n /= &ten;
        }
        n == num_bigint::BigInt::from(1)
    };
    is_power(exact.ratio.numer().clone()) && is_power(exact.ratio.denom().clone())
}

/// The significant figures of a number as written: `2.2` → 2, `0.4536` →
/// 4, `746` → 3, `1000` → 1, `9.80` → 3.
pub(super) fn significant_figures(written: &str) -> usize {
    let mantissa = written
        .trim_start_matches(['-', '+'])
        .split(['e', 'E'])
        .next()
        .unwrap_or("");
    let digits: String = mantissa.chars().filter(char::is_ascii_digit).collect();
    let significant = digits.trim_start_matches('0');
    let significant = if mantissa.contains('.') {
        significant
    } else {
        significant.trim_end_matches('0')
    };
    significant.len().max(1)
}

/// `value` rounded to `figures` significant figures.
fn rounded(value: f64, figures: usize) -> f64 {
    if value == 0.0 || !value.is_finite() {
        return value;
    }
    let exponent = libm::log10(value.abs()).floor() as i32 - (figures as i32 - 1);
    let scale = 10f64.powi(exponent.abs());
    if exponent >= 0 {
        (value / scale).round() * scale
    } else {
        (value * scale).round() / scale
    }
}

/// How sure a bare number must be to count as a rounding of a factor.
#[derive(Clone, Copy, PartialEq, Eq)]
pub(super) enum Evidence {
    /// The units on both sides show the conversion: any exact spelling, and
    /// two figures within 0.5 % (`a [ft/s^2] = a_m * 3.3`).
    Units,
    /// A gravity or a mass or force factor, the classic two-figure
    /// roundings (`2.2`, `9.8`): two figures within 0.5 %, exact from two.
    TwoFigures,
    /// Any other factor: three figures or more (two figures are more often a
    /// coefficient: `1.2`, `0.62`), exact from two.
    ThreeFigures,
}

/// Whether `typed`, written with `figures` significant figures, is `exact`
/// as engineers round it (see [`Evidence`]).
pub(super) fn is_rounding_of(typed: f64, figures: usize, exact: f64, evidence: Evidence) -> bool {
    let same = |a: f64, b: f64| ((a - b) / b).abs() < 1e-12;
    if same(typed, exact) {
        return evidence == Evidence::Units || figures >= 2;
    }
    let close_two = || same(rounded(exact, 2), typed) && ((typed - exact) / exact).abs() <= 0.005;
    match figures {
        0 | 1 => false,
        2 => evidence != Evidence::ThreeFigures && close_two(),
        _ => same(rounded(exact, figures), typed),
    }
}

/// The listed factors a bare number written as `written` could be, most
/// likely first: (factor, whether it needs the units to show it).
fn matching(value: f64, written: &str) -> Vec<(&'static HandFactor, bool)> {
    let figures = significant_figures(written);
    let list = listed();
    // A rounding to `figures` figures lies within half a unit of its last
    // figure of the exact value.
    let half_unit = 0.5 * 10f64.powi(libm::log10(value.abs()).floor() as i32 - figures as i32 + 1);
    let (low, high) = (value - half_unit * 1.000_001, value + half_unit * 1.000_001);
    let first = list.partition_point(|listed| listed.value < low);
    let mut found: Vec<(&'static Listed, f64)> = list[first..]
        .iter()
        .take_while(|listed| listed.value <= high)
        .filter(|listed| is_rounding_of(value, figures, listed.value, listed.evidence))
        .map(|listed| (listed, ((value - listed.value) / listed.value).abs()))
        .collect();
    // Gravity first, then the closest.
    found.sort_by(|(a, error_a), (b, error_b)| {
        (!a.factor.is_gravity())
            .cmp(&!b.factor.is_gravity())
            .then(error_a.total_cmp(error_b))
    });
    found
        .into_iter()
        .map(|(listed, _)| (&listed.factor, listed.needs_unit_evidence))
        .collect()
}

/// A bare number in a formula that matches a [`HandFactor`], used as a
/// multiplier or a divisor.
#[derive(Clone, Debug)]
pub(super) struct HandFactorUse<'a> {
    /// The factor it matches (from the list, or the conversion between the
    /// units on both sides).
    pub factor: std::borrow::Cow<'static, HandFactor>,
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
        let written = context.text(number.span);
        let units_present = units_around(context, owner, other);
        let shown = units_present.and_then(|(from, from_factor, to, to_factor)| {
            shown_by_units(value, written, (from, from_factor), (to, to_factor))
        });
        let factor = match shown {
            Some(factor) => std::borrow::Cow::Owned(factor),
            None => {
                let listed = matching(value, written)
                    .into_iter()
                    .filter(|&(_, needs_unit_evidence)| !needs_unit_evidence)
                    .map(|(factor, _)| factor)
                    .filter(|factor| match factor.family {
                        Family::Conversion(family) => {
                            converts_plausibly(context, owner, other, family)
                        }
                        Family::Gravity | Family::Prefix => true,
                    })
                    .min_by_key(|factor| match factor.family {
                        // The conversion of the operand's own dimension first.
                        Family::Conversion(family) => !dimension_of(context, owner, other)
                            .is_some_and(|dimension| converts_dimension(dimension, family)),
                        Family::Gravity | Family::Prefix => false,
                    });
                match listed {
                    Some(factor) => std::borrow::Cow::Borrowed(factor),
                    None => continue,
                }
            }
        };
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

/// Whether a conversion of `family` converts `dimension`: the same, or the
/// same per second or per second squared (time is written alike in every
/// system, so 3.281 converts m/s² to ft/s² as it converts m to ft, and
/// 6.283 rev/s to rad/s as rev to rad).
fn converts_dimension(dimension: Dimension, family: Dimension) -> bool {
    let Some(quotient) = dimension.checked_div(family) else {
        return false;
    };
    let only_time = quotient
        .exponents
        .iter()
        .enumerate()
        .all(|(base, &e)| base == 2 || e == 0);
    only_time && quotient.exponents[2] <= 0
}

/// The conversion between the units on both sides (the operand's written
/// unit and the result's) when `value`, written as `written`, is it or its
/// inverse as engineers round it: a factor of any dimension, integers and
/// prefix steps included (`L_in [in] = L_ft * 12`).
fn shown_by_units(
    value: f64,
    written: &str,
    (from, from_factor): (&str, f64),
    (to, to_factor): (&str, f64),
) -> Option<HandFactor> {
    let ratio = from_factor / to_factor;
    let figures = significant_figures(written);
    let (from, to) = if is_rounding_of(value, figures, ratio, Evidence::Units) {
        (from, to)
    } else if is_rounding_of(value, figures, 1.0 / ratio, Evidence::Units) {
        (to, from)
    } else {
        return None;
    };
    let symbols = |text: &str| -> Option<Vec<(String, i32)>> {
        let unit = crate::syntax::parse_unit(text).ok()?;
        Some(
            unit.symbols()
                .map(|(symbol, exponent)| (symbol.to_string(), exponent))
                .collect(),
        )
    };
    let from_symbols = symbols(from)?;
    let dimension = units::resolve(from_symbols.iter().map(|(s, e)| (s.as_str(), *e)))
        .ok()?
        .dimension;
    let mut exact_units = from_symbols;
    exact_units.extend(symbols(to)?.into_iter().map(|(s, e)| (s, -e)));
    let exact = units::exact_factor(exact_units.iter().map(|(s, e)| (s.as_str(), *e)))?;
    if exact == ExactFactor::one() {
        return None;
    }
    Some(HandFactor {
        from: from.to_string(),
        to: to.to_string(),
        exact_units,
        family: if is_power_of_ten(&exact) {
            Family::Prefix
        } else {
            Family::Conversion(dimension)
        },
    })
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
    if dimension_of(context, owner, other).is_some_and(|d| converts_dimension(d, family)) {
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
