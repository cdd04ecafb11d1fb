//! The unit catalog against published definitions. Each check names its
//! source; values are copied here so the tests need nothing outside the repo.

// Reference values are copied with all the digits their source gives.
#![allow(clippy::excessive_precision)]

use crate::common;

use common::{assert_close, run_clean, shown, si};
use heftsheet::eval::{evaluate_expression, evaluate_unit};
use heftsheet::units::{Dimension, ExactFactor, Quantity, catalog, exact_factor};

/// Relative tolerance that tells exact definitions from NIST's 7-digit
/// table values (which differ by up to 4.3e-7).
const EXACT: f64 = 1e-12;

fn si_factor(unit: &str) -> f64 {
    evaluate_unit(unit)
        .map(|(_, resolved)| resolved.si_factor)
        .unwrap_or(f64::NAN)
}

fn convert(quantity: &str, unit: &str) -> f64 {
    let value =
        evaluate_expression(quantity).unwrap_or_else(|d| panic!("{quantity}: {}", d.message));
    let (_, target) = evaluate_unit(unit).unwrap_or_else(|d| panic!("{unit}: {}", d.message));
    assert_eq!(value.dimension, target.dimension, "{quantity} → {unit}");
    value.si / target.si_factor
}

#[test]
fn yard_and_pound_definitions_1959() {
    // International Yard and Pound Agreement, 1 July 1959; NIST SP 811 (2008) App. B.
    assert_close(si_factor("in"), 0.0254, EXACT);
    assert_close(si_factor("ft"), 0.3048, EXACT);
    assert_close(si_factor("yd"), 0.9144, EXACT);
    assert_close(si_factor("mi"), 1609.344, EXACT);
    assert_close(si_factor("lbm"), 0.45359237, EXACT);
}

#[test]
fn standard_gravity_and_gravitational_units() {
    // 3rd CGPM (1901): g_n = 980.665 cm/s²; kgf = 1 kg × g_n; lbf = 1 lb × g_n.
    let g0 = evaluate_expression("g0").map(|q| q.si).unwrap_or(f64::NAN);
    assert_eq!(g0, 9.80665);
    assert_close(si_factor("kgf"), 9.80665, EXACT);
    // NIST SP 811 App. B: lbf = 4.4482216152605 N (exact by the definitions).
    assert_close(si_factor("lbf"), 4.4482216152605, EXACT);
    // NIST SP 811 App. B: kip = 1000 lbf.
    assert_close(si_factor("kip"), 4448.2216152605, EXACT);
}

#[test]
fn slug_is_a_derived_unit() {
    // 1 slug = 1 lbf·s²/ft: 14.593902937206364829 kg = 196133/6096 lbm (exact arithmetic
    // on the 1959 and 1901 definitions, as tabulated in shared REFERENCE §1.2).
    assert_close(si_factor("slug"), 14.593902937206364829, EXACT);
    assert_close(convert("1 slug", "lbm"), 32.174048556430446194, EXACT);
    let factor = exact_factor([("slug", 1)]).map(|f| f.over(&ExactFactor::decimal("0.45359237")));
    assert_eq!(
        factor.map(|f| f.exact_text()),
        Some("196133/6096".to_string())
    );
}

#[test]
fn pressure_power_and_energy_units() {
    // Exact by derivation from the 1959 and 1901 definitions; NIST SP 811 App. B
    // prints the 7-digit roundings 6.894 757 E+03, 4.788 026 E+01, 7.456 999 E+02.
    assert_close(si_factor("psi"), 6894.7572931683613367, EXACT);
    assert_close(si_factor("ksi"), 6894757.2931683613367, EXACT);
    assert_close(si_factor("psf"), 47.880258980335842616, EXACT);
    assert_close(si_factor("ft*lbf"), 1.3558179483314004, EXACT);
    // NIST SP 811: horsepower = 550 ft·lbf/s.
    assert_close(si_factor("hp"), 745.69987158227022, EXACT);
    assert_close(convert("1 MPa", "psi"), 145.03773773020921515, EXACT);
}

#[test]
fn inverse_conversions() {
    // Exact fractions from the definitions (shared REFERENCE §1.2).
    assert_close(convert("1 kg", "lbm"), 2.2046226218487758072, EXACT);
    assert_close(convert("1 N", "lbf"), 0.22480894309971048291, EXACT);
    assert_close(convert("1 m", "ft"), 3.2808398950131233596, EXACT);
    assert_close(convert("1 kgf", "lbf"), 2.2046226218487758072, EXACT);
    assert_close(convert("g0", "ft/s^2"), 32.174048556430446194, EXACT);
}

#[test]
fn a_weight_of_w_lbf_is_a_mass_of_w_lbm() {
    // lbf is defined with standard gravity, so 100 lbm × g0 is 100 lbf exactly
    // (to rounding), not the 99.99998 that 7-digit factors give.
    assert_close(convert("100 lbm * g0", "lbf"), 100.0, EXACT);
    let sheet = run_clean("m = 100 lbm\nW [lbf] = m * g0\n");
    assert_close(shown(&sheet, "W"), 100.0, EXACT);
}

#[test]
fn angles_and_speeds() {
    // SI Brochure: 1° = π/180 rad. NIST SP 811 B.8: rpm = π/30 rad/s (2π rad per 60 s).
    assert_close(si_factor("deg"), std::f64::consts::PI / 180.0, EXACT);
    assert_close(si_factor("rpm"), std::f64::consts::PI / 30.0, EXACT);
    // mph = mi/h = 0.44704 m/s (1959 mile).
    assert_close(si_factor("mph"), 0.44704, EXACT);
    let sheet = run_clean("θ = 30 deg\ns = sin(θ)\n");
    assert_close(si(&sheet, "s"), 0.5, EXACT);
}

#[test]
fn prefixed_si_units() {
    // SI Brochure prefixes.
    assert_close(si_factor("kN"), 1e3, EXACT);
    assert_close(si_factor("MPa"), 1e6, EXACT);
    assert_close(si_factor("mm"), 1e-3, EXACT);
    assert_close(si_factor("t"), 1e3, EXACT);
    assert_close(si_factor("bar"), 1e5, EXACT);
    assert_close(si_factor("h"), 3600.0, EXACT);
    // SI Brochure (9th ed., 2019), Table 7: deca = 10¹, mega = 10⁶; the
    // decanewton of lashing and rigging ratings, the megagram (= 1 t).
    assert_close(si_factor("daN"), 10.0, EXACT);
    assert_close(si_factor("Mg"), 1e3, EXACT);
    assert_close(convert("1 Mg", "t"), 1.0, EXACT);
}

#[test]
fn every_catalog_factor_agrees_with_its_exact_value() {
    for unit in catalog().units() {
        assert_close(unit.si_factor, unit.factor.to_f64(), 1e-15);
        assert!(unit.si_factor > 0.0, "{}", unit.symbol);
    }
}

#[test]
fn uom_agrees_on_si_units() {
    // uom's SI coefficients are exact decimals; ours must match them.
    use uom::si::f64 as si;
    use uom::si::{force, length, mass, pressure};
    let value = |text: &str| evaluate_expression(text).map(|q| q.si).unwrap_or(f64::NAN);
    assert_close(
        si::Force::new::<force::kilonewton>(1.0).value,
        value("1 kN"),
        1e-15,
    );
    assert_close(
        si::Pressure::new::<pressure::megapascal>(1.0).value,
        value("1 MPa"),
        1e-15,
    );
    assert_close(
        si::Length::new::<length::millimeter>(1.0).value,
        value("1 mm"),
        1e-15,
    );
    assert_close(si::Mass::new::<mass::ton>(1.0).value, value("1 t"), 1e-15);
    assert_close(
        si::Force::new::<force::kilogram_force>(1.0).value,
        value("1 kgf"),
        1e-15,
    );
    assert_close(
        si::Length::new::<length::foot>(1.0).value,
        value("1 ft"),
        1e-15,
    );
}

#[test]
fn uom_customary_mass_and_force_factors_are_rounded() {
    // Pins the known difference (uom 0.38 stores the 7-digit NIST table values,
    // pound 0.4535924 kg): if an upgrade makes them exact, this fails and the
    // catalog could take them from uom.
    use uom::si::f64 as si;
    use uom::si::{force, mass};
    let pound = si::Mass::new::<mass::pound>(1.0).value;
    let pound_force = si::Force::new::<force::pound_force>(1.0).value;
    let slug = si::Mass::new::<mass::slug>(1.0).value;
    assert!(
        (pound / 0.45359237 - 1.0).abs() > 1e-8,
        "uom pound is now exact: {pound}"
    );
    assert!(
        (pound_force / 4.4482216152605 - 1.0).abs() > 1e-9,
        "uom lbf is now exact: {pound_force}"
    );
    assert!(
        (slug / 14.593902937206364829 - 1.0).abs() > 1e-8,
        "uom slug is now exact: {slug}"
    );
}

#[test]
fn typed_bridge_to_uom() {
    use uom::si::f64::{Force, Mass};
    let sheet = run_clean("m = 250 kg\nW = m * g0\n");
    let cell = sheet
        .cell("W")
        .and_then(|c| c.value)
        .unwrap_or(Quantity::number(0.0));
    let force: Option<Force> = cell.to_typed();
    assert_close(force.map(|f| f.value).unwrap_or(f64::NAN), 2451.6625, EXACT);
    let not_a_mass: Option<Mass> = cell.to_typed();
    assert!(not_a_mass.is_none());
    assert_eq!(cell.dimension, Dimension::FORCE);
}

#[test]
fn common_practice_gravities_agree_to_half_a_tenth_of_a_percent() {
    // Common practice, no source: g ≈ 9.81 m/s² and g ≈ 32.2 ft/s² are the
    // rounded values engineers use; they differ by about 0.046 %.
    let spread = convert("32.2 ft/s^2", "m/s^2") / 9.81 - 1.0;
    assert!(spread > 0.0 && spread < 0.0005, "{spread}");
    assert_close(spread, 0.0004648, 1e-3);
}

#[test]
fn results_keep_their_trailing_figures_and_json_reads_back_as_written() {
    use heftsheet::units::{correctly_rounded, format_figures, format_significant};
    // A result at 5 significant figures shows all five; an input as written
    // drops the zeros it was not written with.
    assert_eq!(format_figures(1.6, 5), "1.6000");
    assert_eq!(format_significant(1.6, 5), "1.6");
    assert_eq!(format_figures(19.5, 4), "19.50");
    assert_eq!(format_figures(3590.0, 4), "3590");
    assert_eq!(format_figures(1.5e-10, 4), "1.500e-10");
    assert_eq!(format_figures(0.0, 4), "0");
    // 24 in = 0.6096 m exactly (1959 agreement: 1 in = 25.4 mm); in f64
    // arithmetic 24 × 0.0254 / 0.0254 is 23.999999999999996, which JSON must
    // not print.
    let round_trip = 24.0 * 0.0254 / 0.0254;
    assert_ne!(round_trip, 24.0);
    assert_eq!(correctly_rounded(round_trip), 24.0);
    let sheet = std::env::temp_dir().join(format!("heft-24in-{}.heft", std::process::id()));
    std::fs::write(&sheet, "L = 24 in\nh [in] = L * 1\n").expect("scratch sheet");
    let (code, out, _) = common::heft(&["check", "--json", &sheet.to_string_lossy()]);
    assert_eq!(code, 0, "{out}");
    let json: serde_json::Value = serde_json::from_str(&out).expect("JSON");
    for cell in json["cells"].as_array().expect("cells") {
        assert_eq!(cell["value"].as_f64(), Some(24.0), "{cell}");
    }
}
