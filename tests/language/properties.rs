//! Algebraic properties of units and quantities, checked on random input.

use heftsheet::blocks::evaluate_source;
use heftsheet::eval::{evaluate_expression, evaluate_unit};
use heftsheet::units::{Dimension, Quantity, catalog};
use proptest::prelude::*;

fn unit_symbols() -> Vec<String> {
    catalog()
        .units()
        .iter()
        .map(|unit| unit.symbol.clone())
        .filter(|s| s != "%" && s != "°")
        .collect()
}

fn dimension() -> impl Strategy<Value = Dimension> {
    proptest::array::uniform7(-4i8..=4).prop_map(|exponents| Dimension { exponents })
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(256))]

    #[test]
    fn converting_to_a_unit_and_back_is_the_identity(value in -1e9f64..1e9, index in 0usize..200) {
        let symbols = unit_symbols();
        let symbol = &symbols[index % symbols.len()];
        let quantity = evaluate_expression(&format!("{value:e} {symbol}")).map_err(|d| TestCaseError::fail(d.message))?;
        let (_, unit) = evaluate_unit(symbol).map_err(|d| TestCaseError::fail(d.message))?;
        let back = quantity.si / unit.si_factor;
        prop_assert!((back - value).abs() <= 1e-12 * value.abs().max(1e-300), "{value} {symbol} → {back}");
    }

    #[test]
    fn the_dimension_of_a_product_adds_exponents(a in dimension(), b in dimension()) {
        let product = Quantity::new(2.0, a).try_mul(Quantity::new(3.0, b)).map_err(|_| TestCaseError::fail("overflow"))?;
        for i in 0..7 {
            prop_assert_eq!(product.dimension.exponents[i], a.exponents[i] + b.exponents[i]);
        }
        let quotient = product.try_div(Quantity::new(3.0, b)).map_err(|_| TestCaseError::fail("overflow"))?;
        prop_assert_eq!(quotient.dimension, a);
    }

    #[test]
    fn a_printed_result_reads_back_as_the_same_quantity(value in -1e6f64..1e6, index in 0usize..200, fps in any::<bool>()) {
        // Evaluate a cell, print its value in its display unit at full precision,
        // and read that text back: the same SI value must come out.
        let symbols = unit_symbols();
        let symbol = &symbols[index % symbols.len()];
        let display = if fps { "FPS" } else { "SI" };
        let sheet = evaluate_source(&format!("+++\ndisplay = \"{display}\"\n+++\nx = {value:e} {symbol}\ny = x * 1\n"));
        let cell = sheet.cell("y").ok_or_else(|| TestCaseError::fail("no y"))?;
        let si = cell.value.map(|v| v.si).ok_or_else(|| TestCaseError::fail("no value"))?;
        let printed = format!("{} {}", cell.display.value_of(si), cell.display.text);
        let again = evaluate_expression(printed.trim()).map_err(|d| TestCaseError::fail(format!("{printed}: {}", d.message)))?;
        prop_assert!((again.si - si).abs() <= 1e-12 * si.abs().max(1e-300), "{printed}: {} vs {si}", again.si);
        prop_assert_eq!(again.dimension, cell.value.map(|v| v.dimension).unwrap_or_default());
    }
}
