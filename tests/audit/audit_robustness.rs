//! The lints and the conversion audit never panic and never change a value,
//! whatever the sheet: random token soups of the words the lints look for.

use heftsheet::audit::conversion_audit;
use heftsheet::blocks::evaluate_source;
use heftsheet::pipeline::run as check_source;
use proptest::prelude::*;

/// Words, numbers and units the lints react to, and glue between them.
const TOKENS: &[&str] = &[
    "m",
    "m_a",
    "W",
    "W_b",
    "F_c",
    "T_d",
    "g",
    "g0",
    "pi",
    "π",
    "g_n",
    "x",
    "= ",
    " * ",
    " / ",
    " + ",
    " - ",
    "(",
    ")",
    "\n",
    " ",
    "9.81",
    "32.2",
    "32.174",
    "2.2",
    "0.4536",
    "4.448",
    "12",
    "1000",
    "0.3048",
    "25.4",
    "550",
    "0",
    "-",
    "kg",
    " lbm",
    " lbf",
    " kgf",
    " m/s^2",
    " ft/s^2",
    " kN",
    " ft",
    " in",
    " t",
    " psi",
    "[N]",
    "[lbf]",
    "[kg]",
    "check ",
    " <= ",
    "\"weight\"",
    "\"mass of the load\"",
    "sqrt(",
    "max(",
    ", ",
    "# H\n",
    "// c\n",
];

proptest! {
    #![proptest_config(ProptestConfig::with_cases(512))]

    #[test]
    fn lints_and_audit_never_panic_or_change_values(picks in proptest::collection::vec(0..TOKENS.len(), 0..60)) {
        let source: String = picks.iter().map(|&i| TOKENS[i]).collect();
        let plain = evaluate_source(&source);
        let linted = check_source(&source);
        let _ = conversion_audit(&linted);
        prop_assert_eq!(plain.n_cells(), linted.n_cells());
        for (a, b) in plain.cells().zip(linted.cells()) {
            prop_assert_eq!(a.value.map(|v| v.si.to_bits()), b.value.map(|v| v.si.to_bits()));
            prop_assert_eq!(a.status, b.status);
        }
        // The lints only add findings, and keep them sorted by position.
        prop_assert!(linted.diagnostics.len() >= plain.diagnostics.len());
        prop_assert!(linted.diagnostics.windows(2).all(|w| w[0].span.start() <= w[1].span.start()));
    }
}

#[test]
fn a_downward_gravity_is_compared_by_its_size() {
    // Sign conventions differ; g = -9.80665 m/s² is standard gravity pointing down.
    let evaluated = check_source("g = -9.80665 m/s^2\nm = 2 kg\nW = -m * g\nW_0 = m * g0\n");
    let codes: Vec<&str> = evaluated
        .diagnostics
        .iter()
        .map(|d| d.code.as_str())
        .collect();
    assert!(codes.is_empty(), "{codes:?}");
}
