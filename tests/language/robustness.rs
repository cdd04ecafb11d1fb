//! No input panics or hangs: hostile, huge and malformed sheets each give a
//! result or a clean diagnostic.

use crate::common;

use common::{codes, run, si};
use heftsheet::blocks::evaluate_source;
use heftsheet::eval::CellStatus;
use proptest::prelude::*;

#[test]
fn an_empty_sheet_is_fine() {
    let evaluated = run("");
    assert_eq!(evaluated.n_cells(), 0);
    assert!(evaluated.diagnostics.is_empty());
    assert!(evaluated.is_clean());
}

#[test]
fn invalid_utf8_is_reported_and_the_rest_still_evaluates() {
    let mut bytes = b"m = 4 kg\nbad = 3 \xff\xfe kg\nW = m * g0\n".to_vec();
    bytes.extend_from_slice("F = W * 2\n".as_bytes());
    let (text, problem) = heftsheet::decode_source(&bytes);
    let problem = problem.expect("invalid UTF-8 must be reported");
    assert_eq!(problem.code.as_str(), "encoding-error");
    assert_eq!(problem.span.start(), 17);
    let evaluated = evaluate_source(&text);
    assert!((si(&evaluated, "F") - 4.0 * 9.80665 * 2.0).abs() < 1e-12);
}

#[test]
fn ten_thousand_nested_brackets_are_refused_cleanly() {
    let source = format!(
        "x = {}1{}\ny = 2 kg\n",
        "(".repeat(10_000),
        ")".repeat(10_000)
    );
    let evaluated = run(&source);
    assert_eq!(codes(&evaluated), ["parse-error"]);
    assert_eq!(si(&evaluated, "y"), 2.0);
}

#[test]
fn long_operator_chains_are_refused_cleanly() {
    for chain in [
        format!("x = {}1", "-".repeat(100_000)),
        format!("x = 2{}", "^2".repeat(100_000)),
        format!("x = 1{}", " + 1".repeat(100_000)),
        format!("x = {}", "sqrt(".repeat(5_000)),
        format!("x = 1 {}", "kg*".repeat(100_000)),
    ] {
        let evaluated = run(&chain);
        assert_eq!(codes(&evaluated), ["parse-error"], "{}", &chain[..20]);
    }
}

#[test]
fn a_chain_just_inside_the_limits_evaluates() {
    let sum = format!(
        "x = 1{}",
        " + 1".repeat(heftsheet::syntax::MAX_OPERATORS - 1)
    );
    assert_eq!(si(&run(&sum), "x"), heftsheet::syntax::MAX_OPERATORS as f64);
    let nested = format!(
        "x = {}2{}",
        "(".repeat(heftsheet::syntax::MAX_NESTING),
        ")".repeat(heftsheet::syntax::MAX_NESTING)
    );
    assert_eq!(si(&run(&nested), "x"), 2.0);
}

#[test]
fn a_million_cell_dependency_chain_evaluates() {
    let mut source = String::from("c0 = 1 kg\n");
    for i in 1..1_000_000 {
        source.push_str(&format!("c{i} = c{} + 1 kg\n", i - 1));
    }
    let evaluated = run(&source);
    assert!(evaluated.diagnostics.is_empty());
    assert_eq!(si(&evaluated, "c999999"), 1_000_000.0);
}

#[test]
fn a_million_cell_chain_written_backwards_evaluates() {
    // Every cell uses the one after it: the order must be worked out in full.
    let n = 1_000_000;
    let mut source = String::new();
    for i in 0..n - 1 {
        source.push_str(&format!("c{i} = c{} + 1 kg\n", i + 1));
    }
    source.push_str(&format!("c{} = 1 kg\n", n - 1));
    let evaluated = run(&source);
    assert!(evaluated.diagnostics.is_empty());
    assert_eq!(si(&evaluated, "c0"), n as f64);
}

#[test]
fn a_long_cycle_is_one_diagnostic() {
    let n = 100_000;
    let mut source = String::new();
    for i in 0..n {
        source.push_str(&format!("c{i} = c{} + 1 kg\n", (i + 1) % n));
    }
    source.push_str("after = c5 * 2\n");
    let evaluated = run(&source);
    assert_eq!(codes(&evaluated), ["cycle"]);
    assert!(matches!(
        evaluated.cell("after").map(|c| c.status),
        Some(CellStatus::Blocked { .. })
    ));
}

/// Words and symbols of the language, for token soups.
const TOKENS: &[&str] = &[
    "m", "x_1", "θ", "g0", "pi", "check", "=", "+", "-", "*", "/", "^", "(", ")", "[", "]", ",",
    "\"", "\"desc\"", "<=", ">", "1", "0", "2.5e3", "1e999", "kg", "lbf", "lb", "m/s^2", "s^-2",
    "sqrt", "atan2", "#", ">", "//", "+++", "\n", "\t", " ", "µ", "°", "%", "kN*m", "(kg", "e",
    ".", "..", "deg", "[kN]", "max(", "\r\n",
];

proptest! {
    #![proptest_config(ProptestConfig::with_cases(512))]

    #[test]
    fn random_bytes_never_panic(bytes in proptest::collection::vec(any::<u8>(), 0..400)) {
        let (text, _) = heftsheet::decode_source(&bytes);
        let evaluated = evaluate_source(&text);
        for diagnostic in &evaluated.diagnostics {
            prop_assert!(diagnostic.span.end() <= text.len() + 1);
        }
    }

    #[test]
    fn token_soups_never_panic(picks in proptest::collection::vec(0..TOKENS.len(), 0..80)) {
        let text: String = picks.iter().map(|&i| TOKENS[i]).collect::<Vec<_>>().join(" ");
        let evaluated = evaluate_source(&text);
        for diagnostic in &evaluated.diagnostics {
            prop_assert!(diagnostic.span.end() <= text.len() + 1);
            prop_assert!(text.is_char_boundary(diagnostic.span.start().min(text.len())));
        }
        // Rendering must not panic either.
        let _ = heftsheet::base::render::render(&evaluated.diagnostics, "soup.heft", &text, false);
    }
}

#[test]
fn huge_unit_exponents_end_with_the_unit_error() {
    // `m^2147483647` once made `heft audit` compute 0.3048-style exact
    // factors by 2^31 multiplications (minutes); exponents beyond what a
    // dimension holds now have no factor, and powers are taken by squaring.
    let dir = std::env::temp_dir().join(format!("heft-exponents-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("scratch folder");
    for (name, sheet) in [
        ("huge.heft", "v = 1 m^2147483647*m\n"),
        ("feet.heft", "v = 1 ft^10000\n"),
    ] {
        let path = dir.join(name);
        std::fs::write(&path, sheet).expect("write sheet");
        let path = path.display().to_string();
        for command in ["check", "audit"] {
            let (code, stdout, _) = common::heft(&[command, &path]);
            assert_eq!(code, 1, "{command} {sheet}: {stdout}");
            assert!(stdout.contains("too large"), "{command} {sheet}: {stdout}");
        }
    }
    let (code, _, stderr) = common::heft(&["convert", "1 m", "ft^10000"]);
    assert_eq!(code, 2, "{stderr}");
}

#[test]
fn deep_components_units_and_long_bodies_are_refused_cleanly() {
    // Each once overflowed the stack (abort, exit 134): 15,000 components,
    // a declared unit nested 28,000 deep, a body of 15,000 forces.
    let components = format!("F = vec(1 N, 2 N)\nG = F{}\n", ".x".repeat(15_000));
    let unit = format!(
        "m [{}kg{}] = 3 kg\n",
        "(".repeat(28_000),
        ")".repeat(28_000)
    );
    let body = format!(
        "F = vec(1 N, 2 N)\nbody B: {}\n",
        vec!["F"; 15_000].join(", ")
    );
    for (sheet, expected) in [
        (&components, "operators"),
        (&unit, "nest more than"),
        (&body, "at most 1000 forces"),
    ] {
        let evaluated = run(sheet);
        assert!(
            evaluated
                .diagnostics
                .iter()
                .any(|d| d.code.as_str() == "parse-error" && d.message.contains(expected)),
            "{expected}: {:?}",
            codes(&evaluated)
        );
    }
    // Just inside the limits, the same constructs evaluate.
    let components = "F = vec(1 N, 2 N)\nG = F.x\n";
    assert_eq!(si(&run(components), "G"), 1.0);
    let body = format!(
        "F = vec(1 N, 2 N)\nbody B: {}\nB_x = B.x\n",
        vec!["F"; 1000].join(", ")
    );
    assert_eq!(si(&run(&body), "B_x"), 1000.0);
    // A deep unit given to `heft convert`.
    let deep = format!("{}m{}", "(".repeat(27_000), ")".repeat(27_000));
    let (code, stdout, stderr) = common::heft(&["convert", "1 m", &deep]);
    assert_eq!(code, 2);
    assert!(
        stdout.contains("nest more than") || stderr.contains("nest more than"),
        "the nesting limit is named"
    );
}

#[test]
fn a_solve_block_past_the_unknown_limit_is_refused_not_attempted() {
    // One unknown more than the limit, in a chain that is trivially
    // solvable: refused with its own code and the block's place, every
    // unknown an error, nothing half-solved.
    use heftsheet::blocks::MAX_SOLVE_UNKNOWNS;
    let n = MAX_SOLVE_UNKNOWNS + 1;
    let names: Vec<String> = (0..n).map(|i| format!("x_{i} [m] ~ 1 m")).collect();
    let mut source = format!("solve {}:\n  x_0 = 2 m\n", names.join(", "));
    for i in 1..n {
        source.push_str(&format!("  x_{i} = x_{} + 1 m\n", i - 1));
    }
    source.push_str("end\ncheck x_0 <= 3 m\n");
    let evaluated = run(&source);
    let found = codes(&evaluated);
    assert!(found.contains(&"solve-too-large"), "{found:?}");
    let refusal = evaluated
        .diagnostics
        .iter()
        .find(|d| d.code.as_str() == "solve-too-large")
        .map(|d| d.span.start());
    assert_eq!(refusal, Some(0));
    assert!(
        evaluated
            .cell("x_0")
            .is_some_and(|c| c.status == CellStatus::Error)
    );
    assert_eq!(evaluated.summary().passed, 0);
}
