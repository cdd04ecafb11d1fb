//! `heft convert "3 slug" lbm`: the converted value and the exact factor
//! chain, each unit with its definition and source.

use std::fmt::Write as _;
use std::io;

use super::{EXIT_CLEAN, EXIT_USAGE, print};
use crate::base::render::render;
use crate::eval;
use crate::syntax::ast::{ExprKind, UnitExpr};
use crate::units::{self, ExactFactor, Quantity, catalog};

/// Runs `heft convert QUANTITY UNIT`.
pub fn run(quantity_text: &str, unit_text: &str, colour: bool) -> io::Result<u8> {
    let value = match eval::evaluate_expression(quantity_text) {
        Ok(value) => value,
        Err(diagnostic) => {
            print(
                &render(&[diagnostic], "quantity", quantity_text, colour),
                colour,
            )?;
            return Ok(EXIT_USAGE);
        }
    };
    let (target, resolved) = match eval::evaluate_unit(unit_text) {
        Ok(unit) => unit,
        Err(diagnostic) => {
            print(&render(&[diagnostic], "unit", unit_text, colour), colour)?;
            return Ok(EXIT_USAGE);
        }
    };
    if value.dimension != resolved.dimension {
        print(
            &mismatch_text(quantity_text, value, unit_text, resolved.dimension),
            false,
        )?;
        return Ok(EXIT_USAGE);
    }
    print(
        &conversion_text(quantity_text, value, unit_text, &target, resolved.si_factor),
        false,
    )?;
    Ok(EXIT_CLEAN)
}

fn mismatch_text(
    quantity_text: &str,
    value: Quantity,
    unit_text: &str,
    target: units::Dimension,
) -> String {
    let mut text = format!(
        "cannot convert `{quantity_text}` ({}) to {unit_text} ({})\n",
        value.dimension.describe(),
        target.describe()
    );
    if value.dimension.checked_mul(units::Dimension::ACCELERATION) == Some(target) {
        let _ = writeln!(
            text,
            "help: a weight is mass × g0: try `heft convert \"({quantity_text}) * g0\" {unit_text}`"
        );
    } else if target.checked_mul(units::Dimension::ACCELERATION) == Some(value.dimension) {
        let _ = writeln!(
            text,
            "help: a mass is weight / g0: try `heft convert \"({quantity_text}) / g0\" {unit_text}`"
        );
    }
    text
}

fn conversion_text(
    quantity_text: &str,
    value: Quantity,
    unit_text: &str,
    target: &UnitExpr,
    target_si: f64,
) -> String {
    let converted = value.si / target_si;
    let mut text = format!("{quantity_text} = {converted} {unit_text}\n");
    let target_exact = exact(target);
    let literal = crate::syntax::parse_expression(quantity_text)
        .ok()
        .and_then(|expr| match expr.kind {
            ExprKind::Quantity {
                number_span, unit, ..
            } => Some((number_span.text(quantity_text).to_string(), unit)),
            _ => None,
        });
    let mut involved: Vec<String> = Vec::new();
    if let Some((number, unit)) = &literal
        && let (Some(from), Some(to)) = (exact(unit), target_exact.as_ref())
    {
        let factor = from.over(to);
        let source_unit = unit.span.text(quantity_text);
        let _ = writeln!(
            text,
            "\nfactor: 1 {source_unit} = {} {unit_text}",
            factor.approximate_text(20)
        );
        if !factor.terminates() && factor.pi_power == 0 {
            let _ = writeln!(text, "        exactly {} {unit_text}", factor.exact_text());
        }
        let result = ExactFactor::decimal(number).times(&factor);
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
        involved.extend(unit.factors.iter().map(|f| f.symbol.to_string()));
    } else {
        let _ = writeln!(
            text,
            "\n(an expression: its units are listed below; the value is computed in SI and rounded once)"
        );
        if let Ok(expr) = crate::syntax::parse_expression(quantity_text) {
            expr.walk(&mut |node| {
                if let ExprKind::Quantity { unit, .. } | ExprKind::UnitValue(unit) = &node.kind {
                    involved.extend(unit.factors.iter().map(|f| f.symbol.to_string()));
                }
            });
        }
    }
    involved.extend(target.factors.iter().map(|f| f.symbol.to_string()));
    let mut seen = std::collections::HashSet::new();
    involved.retain(|symbol| seen.insert(symbol.clone()));
    let _ = writeln!(text, "\nunits:");
    for symbol in involved {
        let Some(unit) = catalog().get(&symbol) else {
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

fn exact(unit: &UnitExpr) -> Option<ExactFactor> {
    units::exact_factor(unit.symbols())
}
