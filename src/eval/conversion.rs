//! The facts `heft convert` shows: a quantity converted to a unit, the
//! exact factor between a written quantity's unit and the target, and
//! every unit involved. Read from the syntax here, so the command only
//! formats them.

use super::{evaluate_parsed, evaluate_unit};
use crate::base::Diagnostic;
use crate::syntax::ast::{ExprKind, UnitExpr};
use crate::units::{self, Dimension, ExactFactor, Quantity};

/// A quantity converted to a unit.
#[derive(Clone, Debug)]
pub struct Conversion {
    /// The quantity, in SI.
    pub value: Quantity,
    /// Its value in the target unit (rounded once, from SI).
    pub converted: f64,
    /// For a quantity written as a number and a unit (`3 slug`): the exact
    /// factor and result; `None` for an expression.
    pub written: Option<WrittenConversion>,
    /// Every unit symbol involved, the target's last, each once.
    pub symbols: Vec<String>,
}

/// The exact conversion of a quantity written as a number and a unit.
#[derive(Clone, Debug)]
pub struct WrittenConversion {
    /// The number as written.
    pub number: String,
    /// The unit as written.
    pub unit: String,
    /// 1 of the written unit in the target unit, exactly.
    pub factor: ExactFactor,
    /// The number times the factor, exactly.
    pub result: ExactFactor,
}

/// Why a conversion could not be made.
#[derive(Clone, Debug)]
pub enum ConversionError {
    /// The quantity does not read (its diagnostic, spans in its text).
    Quantity(Diagnostic),
    /// The unit does not read (its diagnostic, spans in its text).
    Unit(Diagnostic),
    /// The two are of different dimensions.
    Mismatch {
        /// The quantity's dimension.
        value: Dimension,
        /// The unit's dimension.
        target: Dimension,
    },
}

/// Converts `quantity_text` (`"3 slug"`, `"(2 kN) / g0"`) to `unit_text`.
pub fn convert(quantity_text: &str, unit_text: &str) -> Result<Conversion, ConversionError> {
    let expr = crate::syntax::parse_expression(quantity_text).map_err(ConversionError::Quantity)?;
    let value = evaluate_parsed(&expr, quantity_text).map_err(ConversionError::Quantity)?;
    let (target, resolved) = evaluate_unit(unit_text).map_err(ConversionError::Unit)?;
    if value.dimension != resolved.dimension {
        return Err(ConversionError::Mismatch {
            value: value.dimension,
            target: resolved.dimension,
        });
    }
    let mut symbols: Vec<String> = Vec::new();
    let mut written = None;
    if let ExprKind::Quantity {
        number_span, unit, ..
    } = &expr.kind
        && let (Some(from), Some(to)) = (exact(unit), exact(&target))
    {
        let number = number_span.text(quantity_text).to_string();
        let factor = from.over(&to);
        let result = ExactFactor::decimal(&number).times(&factor);
        written = Some(WrittenConversion {
            number,
            unit: unit.span.text(quantity_text).to_string(),
            factor,
            result,
        });
        symbols.extend(unit.factors.iter().map(|f| f.symbol.to_string()));
    } else {
        expr.walk(&mut |node| {
            if let ExprKind::Quantity { unit, .. } | ExprKind::UnitValue(unit) = &node.kind {
                symbols.extend(unit.factors.iter().map(|f| f.symbol.to_string()));
            }
        });
    }
    symbols.extend(target.factors.iter().map(|f| f.symbol.to_string()));
    let mut seen = std::collections::HashSet::new();
    symbols.retain(|symbol| seen.insert(symbol.clone()));
    Ok(Conversion {
        value,
        converted: value.si / resolved.si_factor,
        written,
        symbols,
    })
}

fn exact(unit: &UnitExpr) -> Option<ExactFactor> {
    units::exact_factor(unit.symbols())
}
