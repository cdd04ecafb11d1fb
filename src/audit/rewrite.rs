//! The number a suggested fix would give: the rewritten formula is evaluated
//! by the real evaluator, in a small sheet that gives each cell the formula
//! uses as an input with its evaluated value in coherent SI units. So a fix
//! is computed with exactly the rules the sheet is.

use std::fmt::Write as _;

use super::context::{Context, Owner};
use crate::blocks::evaluate_source;
use crate::eval::CellStatus;
use crate::units::Quantity;

/// The value of `formula` (heft expression text) where `owner` stands, or
/// `None` if a cell it needs has no value or the formula fails.
pub(super) fn evaluate_rewritten(
    context: &Context<'_>,
    owner: Owner,
    formula: &str,
) -> Option<Quantity> {
    let mut sheet = String::new();
    let mut needed: Vec<usize> = context.uses(owner).to_vec();
    // A cell named like a constant shadows it in the sheet; keep that so.
    for constant in crate::units::CONSTANTS {
        if let Some(&id) = context.sheet.names.get(constant.name)
            && !needed.contains(&id)
        {
            needed.push(id);
        }
    }
    for id in needed {
        let value = context.value(id)?;
        let name = &context.sheet.cell(id).name.text;
        // Base units with their exponents, negative ones too (`s^-1`):
        // a unit cannot start with `1/`.
        let units: String = crate::units::SI_BASE_SYMBOLS
            .iter()
            .zip(value.dimension.exponents)
            .filter(|(_, exponent)| *exponent != 0)
            .map(|(symbol, exponent)| match exponent {
                1 => (*symbol).to_string(),
                _ => format!("{symbol}^{exponent}"),
            })
            .collect::<Vec<_>>()
            .join("*");
        let units = if units.is_empty() {
            units
        } else {
            format!(" {units}")
        };
        let _ = writeln!(sheet, "{name} = {:e}{units}", value.si);
    }
    let result_name = (0..)
        .map(|n| format!("fix_result_{n}"))
        .find(|name| !context.sheet.names.contains_key(name.as_str()))?;
    let _ = writeln!(sheet, "{result_name} = {formula}");
    let evaluated = evaluate_source(&sheet);
    let cell = evaluated.cell(&result_name)?;
    (cell.status == CellStatus::Ok)
        .then_some(cell.value)
        .flatten()
}
