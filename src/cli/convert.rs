//! `heft convert "3 slug" lbm`: the converted value and the exact factor
//! chain, each unit with its definition and source.

use std::fmt::Write as _;
use std::io;

use super::{EXIT_CLEAN, EXIT_USAGE, print};
use crate::base::render::render;
use crate::eval::{Conversion, ConversionError, convert};
use crate::units::{self, catalog};

/// Runs `heft convert QUANTITY UNIT`.
pub fn run(quantity_text: &str, unit_text: &str, colour: bool) -> io::Result<u8> {
    match convert(quantity_text, unit_text) {
        Ok(conversion) => {
            print(
                &conversion_text(quantity_text, unit_text, &conversion),
                false,
            )?;
            Ok(EXIT_CLEAN)
        }
        Err(ConversionError::Quantity(diagnostic)) => {
            print(
                &render(&[diagnostic], "quantity", quantity_text, colour),
                colour,
            )?;
            Ok(EXIT_USAGE)
        }
        Err(ConversionError::Unit(diagnostic)) => {
            print(&render(&[diagnostic], "unit", unit_text, colour), colour)?;
            Ok(EXIT_USAGE)
        }
        Err(ConversionError::Mismatch { value, target }) => {
            print(
                &mismatch_text(quantity_text, value, unit_text, target),
                false,
            )?;
            Ok(EXIT_USAGE)
        }
    }
}

fn mismatch_text(
    quantity_text: &str,
    value: units::Dimension,
    unit_text: &str,
    target: units::Dimension,
) -> String {
    let mut text = format!(
        "cannot convert `{quantity_text}` ({}) to {unit_text} ({})\n",
        value.describe(),
        target.describe()
    );
    if value.checked_mul(units::Dimension::ACCELERATION) == Some(target) {
        let _ = writeln!(
            text,
            "help: a weight is mass × g0: try `heft convert \"({quantity_text}) * g0\" {unit_text}`"
        );
    } else if target.checked_mul(units::Dimension::ACCELERATION) == Some(value) {
        let _ = writeln!(
            text,
            "help: a mass is weight / g0: try `heft convert \"({quantity_text}) / g0\" {unit_text}`"
        );
    }
    text
}

fn conversion_text(quantity_text: &str, unit_text: &str, conversion: &Conversion) -> String {
    let mut text = format!("{quantity_text} = {} {unit_text}\n", conversion.converted);
    if let Some(written) = &conversion.written {
        let (factor, result, number, source_unit) = (
            &written.factor,
            &written.result,
            &written.number,
            &written.unit,
        );
        let _ = writeln!(
            text,
            "\nfactor: 1 {source_unit} = {} {unit_text}",
            factor.approximate_text(20)
        );
        if !factor.terminates() && factor.pi_power == 0 {
            let _ = writeln!(text, "        exactly {} {unit_text}", factor.exact_text());
        }
        let exactly = if result.terminates() || result.pi_power != 0 {
            result.exact_text()
        } else {
            format!(
                "{} (= {})",
                result.exact_text(),
                result.approximate_text(20)
            )
        };
        let _ = writeln!(
            text,
            "result: {number} {source_unit} = {exactly} {unit_text} exactly"
        );
    } else {
        let _ = writeln!(
            text,
            "\n(an expression: its units are listed below; the value is computed in SI and rounded once)"
        );
    }
    let _ = writeln!(text, "\nunits:");
    for symbol in &conversion.symbols {
        let Some(unit) = catalog().get(symbol) else {
            continue;
        };
        let si_units = unit.dimension.si_units();
        let si_units = if unit.dimension.is_dimensionless() {
            String::new()
        } else {
            format!(" {si_units}")
        };
        let _ = writeln!(text, "  {symbol:<5} {} ({})", unit.definition, unit.name);
        let _ = writeln!(
            text,
            "        1 {symbol} = {}{si_units}",
            unit.factor.approximate_text(20)
        );
        if !unit.factor.terminates() && unit.factor.pi_power == 0 {
            let _ = writeln!(
                text,
                "        exactly {}{si_units}",
                unit.factor.exact_text()
            );
        }
        let _ = writeln!(text, "        source: {}", unit.source);
    }
    text
}
