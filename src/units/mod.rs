//! Units and quantities: dimensions, the unit catalog with exact definitions
//! and their sources, runtime quantities, display units, the built-in
//! functions (one table with every rule per function), and the typed bridge
//! to uom. Pure and span-free: callers attach source places to errors.

mod catalog;
mod dimension;
mod display;
mod factor;
pub mod functions;
mod quantity;
mod typed;
mod value;

pub use catalog::{AMBIGUOUS, Ambiguity, Catalog, UnitDef, UnitSystem, catalog, sources};
pub use dimension::{BASE_NAMES, Dimension, SI_BASE_SYMBOLS};
pub use display::{
    DisplaySystem, DisplayUnit, correctly_rounded, format_figures, format_significant, percent,
    pick_unit,
};
pub use factor::ExactFactor;
pub use quantity::{Quantity, QuantityError};
pub use typed::TypedQuantity;
pub use value::{Value, ValueError, VectorQuantity};

/// Standard acceleration of gravity, 9.80665 m/s² exactly (3rd CGPM, 1901).
pub const STANDARD_GRAVITY: f64 = 9.80665;

/// A unit expression looked up in the catalog: its dimension and the SI
/// value of one of it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ResolvedUnit {
    /// The dimension.
    pub dimension: Dimension,
    /// The SI value of one of this unit.
    pub si_factor: f64,
}

/// Why a unit expression could not be resolved; `factor` is the index of the
/// offending factor in the expression.
#[derive(Clone, Debug, PartialEq)]
pub struct UnitError {
    /// Index of the offending factor.
    pub factor: usize,
    /// What is wrong with it.
    pub kind: UnitErrorKind,
}

/// The kinds of unit error.
#[derive(Clone, Debug, PartialEq)]
pub enum UnitErrorKind {
    /// Not in the catalog; with the likely intended unit if one is close.
    Unknown {
        /// What the user probably meant.
        suggestion: Option<String>,
    },
    /// Refused because it could mean several units.
    Ambiguous(&'static Ambiguity),
    /// The exponents overflow.
    Overflow,
}

/// Looks up a product of `(symbol, exponent)` factors.
pub fn resolve<'a>(
    factors: impl IntoIterator<Item = (&'a str, i32)>,
) -> Result<ResolvedUnit, UnitError> {
    let catalog = catalog();
    let mut resolved = ResolvedUnit {
        dimension: Dimension::NONE,
        si_factor: 1.0,
    };
    for (index, (symbol, exponent)) in factors.into_iter().enumerate() {
        let error = |kind| UnitError {
            factor: index,
            kind,
        };
        let Some(unit) = catalog.get(symbol) else {
            return Err(error(match catalog.ambiguity(symbol) {
                Some(ambiguity) => UnitErrorKind::Ambiguous(ambiguity),
                None => UnitErrorKind::Unknown {
                    suggestion: catalog.closest(symbol),
                },
            }));
        };
        let dimension = unit
            .dimension
            .checked_powi(exponent)
            .ok_or_else(|| error(UnitErrorKind::Overflow))?;
        resolved.dimension = resolved
            .dimension
            .checked_mul(dimension)
            .ok_or_else(|| error(UnitErrorKind::Overflow))?;
        resolved.si_factor *= unit.si_factor.powi(exponent);
    }
    Ok(resolved)
}

/// The exact SI factor of a product of catalog units (`None` if a symbol is
/// not in the catalog, or an exponent is beyond what a dimension holds, so
/// the unit cannot be used anyway).
pub fn exact_factor<'a>(factors: impl IntoIterator<Item = (&'a str, i32)>) -> Option<ExactFactor> {
    let catalog = catalog();
    factors
        .into_iter()
        .try_fold(ExactFactor::one(), |product, (symbol, exponent)| {
            if exponent.unsigned_abs() > i8::MAX.unsigned_abs().into() {
                return None;
            }
            Some(product.times(&catalog.get(symbol)?.factor.powi(exponent)))
        })
}

/// Writes a product of unit factors in heft unit syntax: `kg*m/s^2`,
/// `lbf*s/ft`, `1/s`, `N/(m*s)`; "1" for an empty product.
pub fn format_unit_product(factors: &[(&str, i32)]) -> String {
    let power = |symbol: &str, exponent: i32| {
        if exponent == 1 {
            symbol.to_string()
        } else {
            format!("{symbol}^{exponent}")
        }
    };
    let numerator: Vec<String> = factors
        .iter()
        .filter(|(_, e)| *e > 0)
        .map(|(s, e)| power(s, *e))
        .collect();
    let denominator: Vec<String> = factors
        .iter()
        .filter(|(_, e)| *e < 0)
        .map(|(s, e)| power(s, -e))
        .collect();
    let top = if numerator.is_empty() {
        "1".to_string()
    } else {
        numerator.join("*")
    };
    match denominator.len() {
        0 => top,
        1 => format!("{top}/{}", denominator[0]),
        _ => format!("{top}/({})", denominator.join("*")),
    }
}

/// A built-in named constant.
#[derive(Clone, Copy, Debug)]
pub struct Constant {
    /// The name used in formulas.
    pub name: &'static str,
    /// Its value.
    pub value: Quantity,
    /// What it is.
    pub description: &'static str,
    /// Where the value comes from.
    pub source: &'static str,
}

/// The built-in constants: `g0` and `pi`.
pub const CONSTANTS: [Constant; 2] = [
    Constant {
        name: "g0",
        value: Quantity {
            si: STANDARD_GRAVITY,
            dimension: Dimension::ACCELERATION,
        },
        description: "standard acceleration of gravity, 9.80665 m/s² exactly",
        source: sources::CGPM_1901,
    },
    Constant {
        name: "pi",
        value: Quantity {
            si: std::f64::consts::PI,
            dimension: Dimension::NONE,
        },
        description: "π",
        source: "mathematics",
    },
];

/// The built-in constant with this name.
pub fn constant(name: &str) -> Option<&'static Constant> {
    CONSTANTS.iter().find(|constant| constant.name == name)
}
