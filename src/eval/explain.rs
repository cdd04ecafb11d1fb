//! Diagnostics for quantities that do not fit together, with the
//! mass-versus-weight case spelled out and a fix with its number.

use crate::base::Span;
use crate::base::{Code, Diagnostic, Fix};
use crate::units::{
    Dimension, DisplaySystem, DisplayUnit, Quantity, Value, format_significant, pick_unit,
};

/// How values are written in messages.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Style {
    /// Unit system for values without a unit of their own.
    pub system: DisplaySystem,
    /// Significant digits.
    pub sig_figs: u32,
}

impl Style {
    /// `1850 kg`, `4079 lbf`, `0.5` — rounded, in a readable unit.
    pub fn show(self, quantity: Quantity) -> String {
        self.show_value(Value::Scalar(quantity))
    }

    /// A scalar as [`Style::show`]; a vector as `(120, -40) N`.
    pub fn show_value(self, value: Value) -> String {
        let unit = pick_unit(value.dimension(), value.magnitude_si(), self.system);
        format_value(value, &unit, self.sig_figs)
    }

    /// `si` in a given unit: `4079 lbf`.
    pub fn show_in(self, si: f64, unit_text: &str, unit_si_factor: f64) -> String {
        with_unit(
            format_significant(si / unit_si_factor, self.sig_figs),
            unit_text,
        )
    }
}

fn with_unit(number: String, unit: &str) -> String {
    if unit.is_empty() {
        number
    } else {
        format!("{number} {unit}")
    }
}

/// A value in a given display unit, rounded to `sig_figs` without trailing
/// zeros: `19.22 kN`, `(120, -40) N` (a value as written, or in a message).
pub fn format_value(value: Value, unit: &DisplayUnit, sig_figs: u32) -> String {
    value_with(value, unit, &|number| format_significant(number, sig_figs))
}

/// A computed result in a display unit with all `sig_figs` figures shown:
/// `1.600 kN`, `(120.0, -40.00) N`.
pub fn format_result(value: Value, unit: &DisplayUnit, sig_figs: u32) -> String {
    value_with(value, unit, &|number| {
        crate::units::format_figures(number, sig_figs)
    })
}

fn value_with(value: Value, unit: &DisplayUnit, number: &dyn Fn(f64) -> String) -> String {
    match value {
        Value::Scalar(q) => with_unit(number(unit.value_of(q.si)), &unit.text),
        Value::Vector(v) => {
            let components: Vec<String> = v
                .components()
                .iter()
                .map(|&c| number(unit.value_of(c)))
                .collect();
            with_unit(format!("({})", components.join(", ")), &unit.text)
        }
    }
}

/// Whether `heavier` is `lighter` times an acceleration: a force against a
/// mass, a pressure against a mass per area, and so on.
pub(crate) fn differs_by_acceleration(heavier: Dimension, lighter: Dimension) -> bool {
    lighter.checked_mul(Dimension::ACCELERATION) == Some(heavier)
}

/// An operand as written, with its value.
pub(crate) struct Operand<'a> {
    /// Where it is written.
    pub span: Span,
    /// Its text.
    pub text: &'a str,
    /// Its value.
    pub value: Value,
}

/// `cannot add a mass (10 kg) and a force (5 N)`, with the weight/mass fixes
/// (one per reading) when the two differ by an acceleration.
pub(crate) fn mismatch(
    action: &str,
    left: &Operand<'_>,
    right: &Operand<'_>,
    style: Style,
) -> Diagnostic {
    let (l, r) = (left.value.dimension(), right.value.dimension());
    let describe = |operand: &Operand<'_>| {
        let kind = if operand.value.vector().is_some() {
            "a vector: "
        } else {
            ""
        };
        format!(
            "{kind}{} ({})",
            operand.value.dimension().describe(),
            style.show_value(operand.value)
        )
    };
    let message = format!("cannot {action} {} and {}", describe(left), describe(right));
    let weight_mass = if differs_by_acceleration(l, r) {
        Some((right, left))
    } else if differs_by_acceleration(r, l) {
        Some((left, right))
    } else {
        None
    };
    let (code, message) = match weight_mass {
        Some(_) if [l, r].contains(&Dimension::MASS) => (
            Code::MassWeightMixup,
            format!("{message}: a weight is not a mass"),
        ),
        Some(_) => (
            Code::MassWeightMixup,
            format!("{message}: they differ by an acceleration, as a weight differs from a mass"),
        ),
        None => (Code::DimensionMismatch, message),
    };
    let mut diagnostic = Diagnostic::error(code, left.span.to(right.span), message)
        .with_label(left.span, describe(left))
        .with_label(right.span, describe(right));
    if let Some((lighter, heavier)) = weight_mass {
        // Two readings; the first that verifies in the whole sheet is shown
        // (`audit::verify_fixes`), so a declared unit or a name decides.
        diagnostic = diagnostic
            .with_fix(
                Fix::replace(heavier.span, format!("({}) / g0", heavier.text))
                    .showing(None)
                    .with_lead(format!("if `{}` is a weight, ", heavier.text)),
            )
            .with_fix(
                Fix::replace(lighter.span, format!("({}) * g0", lighter.text))
                    .showing(None)
                    .with_lead(format!("if `{}` is a mass, ", lighter.text)),
            );
    }
    diagnostic
}

/// A cell whose formula's dimension differs from its declared unit.
pub(crate) struct DeclaredMismatch<'a> {
    /// The cell's name.
    pub name: &'a str,
    /// The declared unit as written, its span and SI factor.
    pub unit_text: &'a str,
    /// Where the unit is written.
    pub unit_span: Span,
    /// The declared dimension.
    pub declared: Dimension,
    /// The formula as written and where.
    pub formula: &'a str,
    /// Where the formula is written.
    pub formula_span: Span,
    /// Whether the formula is a single name (so the message can name it).
    pub formula_is_name: bool,
    /// What the formula gives.
    pub value: Value,
}

/// `W is a force but m_skid is a mass (1850 kg); a weight is mass × g0`,
/// with the fix `m_skid * g0` for [`crate::audit::verify_fixes`] to check.
pub(crate) fn declared_mismatch(cell: &DeclaredMismatch<'_>, style: Style) -> Diagnostic {
    let found = cell.value.dimension();
    let gives = if cell.formula_is_name {
        format!(
            "`{}` is {} ({})",
            cell.formula,
            found.describe(),
            style.show_value(cell.value)
        )
    } else {
        format!(
            "its formula gives {} ({})",
            found.describe(),
            style.show_value(cell.value)
        )
    };
    let declared = format!(
        "`{}` is {} (declared in {})",
        cell.name,
        cell.declared.describe(),
        cell.unit_text
    );
    let formula = if cell.formula_is_name {
        cell.formula.to_string()
    } else {
        format!("({})", cell.formula)
    };
    let diagnostic = if differs_by_acceleration(cell.declared, found) {
        let what = if found == Dimension::MASS {
            "a weight is mass × g0"
        } else {
            "multiplied by g0 it would fit"
        };
        Diagnostic::error(
            Code::MassWeightMixup,
            cell.formula_span,
            format!("{declared} but {gives}; {what}"),
        )
        .with_fix(Fix::replace(cell.formula_span, format!("{formula} * g0")))
    } else if differs_by_acceleration(found, cell.declared) {
        let what = if cell.declared == Dimension::MASS {
            "a mass is weight / g0"
        } else {
            "divided by g0 it would fit"
        };
        Diagnostic::error(
            Code::MassWeightMixup,
            cell.formula_span,
            format!("{declared} but {gives}; {what}"),
        )
        .with_fix(Fix::replace(cell.formula_span, format!("{formula} / g0")))
    } else {
        Diagnostic::error(
            Code::DeclaredUnitMismatch,
            cell.formula_span,
            format!("{declared} but {gives}"),
        )
        .with_help(format!(
            "change the unit in brackets to one for {}, such as [{}], or fix the formula",
            found.describe(),
            pick_unit(found, cell.value.magnitude_si(), style.system).text
        ))
    };
    diagnostic.with_label(
        cell.unit_span,
        format!("declared as {}", cell.declared.describe()),
    )
}
