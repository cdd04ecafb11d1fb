//! The audit's numbers against their outside sources: exact factors from the
//! published definitions, the errors of common-practice rounded factors, and
//! the numbers the lints' fixes give, worked by hand from closed forms.
//! Scenarios are invented.

use crate::common;

use heftsheet::audit::{ConversionKind, Exactness, GravityKind, conversion_audit};
use heftsheet::base::{Code, Severity};
use heftsheet::pipeline::run as check_source;

/// Relative agreement demanded of figures quoted to 4 significant digits.
const FOUR_DIGITS: f64 = 5e-4;

fn assert_close(actual: f64, expected: f64, relative: f64) {
    let error = ((actual - expected) / expected).abs();
    assert!(
        error <= relative,
        "{actual} differs from {expected} by {error:e} relative (allowed {relative:e})"
    );
}

/// The conversion written as `written` in the audit of `source`.
fn written_entry(source: &str, written: &str) -> heftsheet::audit::ConversionEntry {
    let audit = conversion_audit(&check_source(source));
    audit
        .conversions
        .into_iter()
        .find(|c| c.kind == ConversionKind::Written && c.written == written)
        .unwrap_or_else(|| panic!("no written conversion `{written}`"))
}

#[test]
fn written_quantities_carry_their_exact_published_factors() {
    let source = "W = 1450 lbf\np = 90 psi\nm = 6.5 slug\nL = 14 ft\nv = 5 mph\nP = 2 hp\nd = 3 in\nm2 = 38 lbm\n";
    // NIST SP 811 (2008) App. B with the 1959 yard-and-pound agreement and
    // standard gravity (3rd CGPM 1901): 1 lbf = 0.45359237 kg × 9.80665 m/s²
    // = 4.4482216152605 N exactly.
    let lbf = written_entry(source, "1450 lbf");
    assert_eq!(lbf.factor_exact, "4.4482216152605");
    assert_eq!(lbf.exactness, Exactness::Exact);
    assert_close(
        lbf.si_value.unwrap_or(f64::NAN),
        1450.0 * 4.4482216152605,
        1e-15,
    );
    assert!(lbf.sources.iter().any(|s| s.contains("NIST SP 811")));
    // psi = lbf/in² = 8896443230521/1290320000 Pa: a repeating decimal
    // (exact arithmetic from the same definitions; SP 811 prints 6.894 757 E+03).
    let psi = written_entry(source, "90 psi");
    assert_eq!(psi.factor_exact, "8896443230521/1290320000");
    assert_eq!(psi.exactness, Exactness::ExactFraction);
    assert_close(
        psi.si_value.unwrap_or(f64::NAN),
        90.0 * 8896443230521.0 / 1290320000.0, // 6894.7572931683613367 Pa per psi
        1e-15,
    );
    // slug = lbf·s²/ft = 8896443230521/609600000000 kg (SP 811: 1.459 390 E+01).
    let slug = written_entry(source, "6.5 slug");
    assert_eq!(slug.factor_exact, "8896443230521/609600000000");
    // 1959 agreement: 1 ft = 0.3048 m, 1 in = 0.0254 m, 1 lb = 0.45359237 kg exactly.
    assert_eq!(written_entry(source, "14 ft").factor_exact, "0.3048");
    assert_eq!(written_entry(source, "3 in").factor_exact, "0.0254");
    assert_eq!(written_entry(source, "38 lbm").factor_exact, "0.45359237");
    // mph = 1609.344 m / 3600 s = 0.44704 m/s exactly (1959 mile).
    assert_eq!(written_entry(source, "5 mph").factor_exact, "0.44704");
    // SP 811: hp = 550 ft·lbf/s = 745.69987158227022 W exactly.
    let hp = written_entry(source, "2 hp");
    assert_eq!(hp.factor_exact, "745.69987158227022");
    assert!(hp.sources.iter().any(|s| s.contains("550 ft·lbf/s")));
}

#[test]
fn hand_typed_factors_are_rounded_by_the_published_amounts() {
    // Exact values from the definitions (1959 agreement, CGPM 1901, NIST SP
    // 811 App. B); the rounded factors are common practice. Their relative
    // errors were worked in exact rational arithmetic.
    let cases = [
        ("m_a = 10 kg\nx_a = m_a * 2.2\n", -0.2096786e-2), // 1 kg = 2.2046226218… lb
        ("m_b = 10 lbm\nx_b = m_b * 0.4536\n", 0.001682127e-2), // 1 lb = 0.45359237 kg
        ("F_c = 10 lbf\nx_c = F_c * 4.448\n", -0.004982109e-2), // 1 lbf = 4.4482216152605 N
        ("L_d = 10 m\nx_d = L_d * 3.281\n", 0.00488e-2),   // 1 m = 1250/381 ft
        ("p_e = 10 psi\nx_e = p_e * 6.895\n", 0.003520165e-2), // 1 psi = 6.894757… kPa
        ("E_f = 10 J\nx_f = E_f * 1.356\n", 0.01342744e-2), // 1 ft·lbf = 1.3558179483314004 J
        ("P_g = 10 W\nx_g = P_g / 746\n", 0.04024788e-2),  // 1 hp = 745.69987158227022 W
        ("F_h = 10 lbf\nx_h = F_h / 32.174\n", -0.000150918e-2), // g_c = 196133/6096
        ("m_i = 10 kg\nx_i = m_i * 9.81\n", 0.03416049e-2), // g0 = 9.80665 m/s²
        ("W_j = 10 lbf\nx_j = W_j / 32.2\n", 0.08065955e-2), // g0 = 32.174048556… ft/s²
    ];
    for (source, expected) in cases {
        let typed = common::the_hand_typed_conversion(source);
        assert_eq!(typed.exactness, Exactness::Rounded);
        assert_close(
            typed.relative_error.unwrap_or(f64::NAN),
            expected,
            FOUR_DIGITS,
        );
    }
}

#[test]
fn rounded_gravities_against_standard_gravity() {
    // Common-practice gravities against g0 = 9.80665 m/s² exactly (3rd CGPM
    // 1901), with 1 ft = 0.3048 m (1959): relative errors worked exactly.
    for (literal, expected) in [
        ("9.81 m/s^2", 0.03416049e-2),
        ("9.8 m/s^2", -0.06781113e-2),
        ("32.2 ft/s^2", 0.08065955e-2),
        ("32.17 ft/s^2", -0.0125833e-2),
    ] {
        let source = format!("g = {literal}\nm = 3 kg\nW = m * g\n");
        let evaluated = check_source(&source);
        let audit = conversion_audit(&evaluated);
        let gravity = audit
            .gravity
            .iter()
            .find(|g| g.kind == GravityKind::Cell)
            .unwrap_or_else(|| panic!("no gravity cell in {source}"));
        assert_close(gravity.relative_to_g0(), expected, FOUR_DIGITS);
        let rounded = evaluated
            .diagnostics
            .iter()
            .filter(|d| d.code == Code::RoundedGravity)
            .count();
        assert_eq!(rounded, 1, "{literal}");
    }
}

#[test]
fn two_rule_of_thumb_gravities_are_reported_with_their_spread() {
    // 32.2 ft/s² = 9.81456 m/s² (1959 foot), +0.04648 % from 9.81 m/s²:
    // both common practice, worked exactly.
    let evaluated = check_source(
        "g = 9.81 m/s^2\nm_A = 120 kg\nm_B = 260 lbm\nW_A = m_A * g\nW_B = m_B * 32.2 ft/s^2\n",
    );
    let finding = evaluated
        .diagnostics
        .iter()
        .find(|d| d.code == Code::GravityInconsistent)
        .expect("two gravities");
    assert_eq!(finding.severity, Severity::Warning);
    assert!(finding.message.contains("0.046 %"), "{}", finding.message);
    assert_eq!(evaluated.lines.line_of(finding.span.start()) + 1, 5);
}

fn help_of(source: &str, code: Code) -> String {
    let evaluated = check_source(source);
    let finding = evaluated
        .diagnostics
        .iter()
        .find(|d| d.code == code)
        .unwrap_or_else(|| panic!("no {code} in {source}"));
    finding.help.clone().unwrap_or_default()
}

#[test]
fn fixes_give_the_closed_form_numbers() {
    // F = m a / g_c with m in lbm is m a in lbf: 95 lbm × 12 ft/s² / g_c
    // = 95 × 12 × 6096/196133 lbf = 35.43228320 lbf (identity from the
    // definitions of lbf and slug).
    let help = help_of(
        "+++\ndisplay = \"FPS\"\n+++\nm = 95 lbm\na = 12 ft/s^2\nF [lbf] = m * a / 32.174\n",
        Code::HandConversionFactor,
    );
    assert!(
        help.contains("`m * a`") && help.contains("= 35.43 lbf"),
        "{help}"
    );
    // W = m g0: 480 kg × 9.80665 m/s² = 4707.192 N (CGPM 1901 g0).
    let help = help_of("m = 480 kg\nW = m * 9.81\n", Code::HandConversionFactor);
    assert!(
        help.contains("`m * g0`") && help.contains("= 4.707 kN"),
        "{help}"
    );
    // A mass written in lbf: 120 lbf is the weight of 120 lbm = 54.4310844 kg (1959 pound).
    let help = help_of("m_part = 120 lbf\n", Code::MassWeightMixup);
    assert!(
        help.contains("`m_part = 120 lbm`") && help.contains("54.43 kg"),
        "{help}"
    );
    // A weight named W that holds a mass: (65 + 88) kg × g0 = 1500.41745 N.
    let help = help_of(
        "m_a = 65 kg\nm_b = 88 kg\nW_tot = m_a + m_b\n",
        Code::MassWeightMixup,
    );
    assert!(
        help.contains("(m_a + m_b) * g0") && help.contains("= 1.5 kN"),
        "{help}"
    );
    // m = W / g0 for W = 800 lbf is 800 lbm = 24.86476014 slug (closed form, hoist case).
    let help = help_of(
        "W = 800 lbf\nm [slug] = W / 32.2\n",
        Code::HandConversionFactor,
    );
    assert!(
        help.contains("`W / g0`") && help.contains("= 24.86 slug"),
        "{help}"
    );
}

#[test]
fn a_factor_on_a_bare_number_is_replaced_by_its_unit_not_dropped() {
    // 92.6 / 2.2046 means "92.6 lb in kg": the honest fix is 92.6 lbm =
    // 92.6 × 0.45359237 kg = 42.00265 kg (1959 pound). Dropping the factor
    // alone would give 92.6 kg, 2.2× off, so the help must not offer that.
    let source = "m_rig = 92.6 / 2.2046 * 1 kg\n";
    let help = help_of(source, Code::HandConversionFactor);
    assert!(
        help.contains("its unit in place of the factor `2.2046`"),
        "{help}"
    );
    assert!(help.contains("a different value"), "{help}");
    assert!(!help.starts_with("write"), "{help}");
    // The value itself is left as written: 92.6 / 2.2046 kg = 42.00308 kg.
    let evaluated = check_source(source);
    let value = evaluated
        .cell("m_rig")
        .and_then(|cell| cell.value)
        .expect("m_rig evaluates");
    assert_close(value.si, 92.6 / 2.2046, 1e-12);
    assert!((value.si - 92.6 * 0.453_592_37).abs() > 1e-4);
}

#[test]
fn counts_and_halves_are_not_conversion_factors() {
    // Common practice: 12 bolts, 1000 strokes, ½ k x², 2 legs are counts and
    // coefficients, not conversions; nothing here may be reported.
    let evaluated = check_source(
        "F_bolt = 4 kN\nF_group = 12 * F_bolt\nE_cycle = 30 J\nE_shift = 1000 * E_cycle\n\
         k = 2 N/mm\nx = 5 mm\nE = 0.5 * k * x^2\nW = 20 kN\nT = W / 2\nL = 8 ft\nL_4 = 4 * L\n",
    );
    let findings: Vec<_> = evaluated
        .diagnostics
        .iter()
        .filter(|d| d.severity >= Severity::Warning)
        .map(|d| d.message.clone())
        .collect();
    assert!(findings.is_empty(), "{findings:#?}");
}

#[test]
fn twelve_counts_as_a_factor_only_between_feet_and_inches() {
    let flagged = |source: &str| {
        check_source(source)
            .diagnostics
            .iter()
            .any(|d| d.code == Code::HandConversionFactor)
    };
    assert!(flagged("L_ft = 14 ft\nL_in [in] = L_ft * 12\n"));
    assert!(flagged("L = 14 ft\nL_in = L * 12\n"));
    assert!(!flagged("L = 14 ft\nL_total [ft] = L * 12\n"));
    assert!(flagged("F = 18 kN\nF_N [N] = F * 1000\n"));
    assert!(!flagged("F = 18 kN\nF_sum [kN] = F * 1000\n"));
}

#[test]
fn the_lints_leave_evaluation_alone() {
    // The lints add findings; values are those of the evaluator alone.
    let source = "m = 480 kg\nW = m * 9.81\n";
    let plain = heftsheet::blocks::evaluate_source(source);
    let linted = check_source(source);
    let value = |e: &heftsheet::eval::Evaluated| e.cell("W").and_then(|c| c.value).map(|v| v.si);
    assert_eq!(value(&plain), value(&linted));
    assert_close(value(&linted).unwrap_or(f64::NAN), 480.0 * 9.81, 1e-15);
    assert!(plain.diagnostics.is_empty());
    assert_eq!(linted.count(Severity::Warning), 1);
}

#[test]
fn a_factor_of_another_kind_of_quantity_is_a_coefficient() {
    // Common practice: a number that multiplies another kind of quantity
    // (550 bolts of 3 kN, 25.4 cycles of 4 s) is a count, not a conversion.
    let flagged = |source: &str| {
        check_source(source)
            .diagnostics
            .iter()
            .any(|d| d.code == Code::HandConversionFactor)
    };
    assert!(!flagged("F_bolt = 3 kN\nF_all = 550 * F_bolt\n"));
    assert!(!flagged("t_cycle = 4 s\nt_shift = t_cycle * 25.4\n"));
    assert!(flagged("P = 12 kW\nP_hp = P / 745.7\n"));
    assert!(flagged("W = 140 lbf\nm = W * 0.4536\n"));
    assert!(flagged("x = 2.2 * 100\n"));
}

#[test]
fn a_factor_inside_a_product_is_found() {
    // E = m g0 h with h already in feet: `* 0.3048` converts h a second time
    // (1 ft = 0.3048 m exactly, 1959 agreement).
    let evaluated = check_source("m = 20 kg\nh = 6 ft\nE [J] = m * g0 * h * 0.3048\n");
    let finding = evaluated
        .diagnostics
        .iter()
        .find(|d| d.code == Code::HandConversionFactor)
        .expect("the 0.3048 is found");
    // Without it: 20 kg × 9.80665 m/s² × 1.8288 m = 358.6895 J.
    assert!(
        finding
            .help
            .as_deref()
            .is_some_and(|h| h.contains("`m * g0 * h` (= 358.7 J)")),
        "{finding:?}"
    );
}
