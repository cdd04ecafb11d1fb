//! Load cases, tolerances and sensitivity, checked against exhaustive
//! sampling and closed-form derivatives.

mod common;

use common::{assert_close, run, run_clean, si};
use heftsheet::eval::Evaluated;

/// The range of a cell, which must have one.
#[track_caller]
fn range(sheet: &Evaluated, name: &str) -> heftsheet::eval::CellRange {
    let id = sheet
        .cell(name)
        .map(|c| c.id)
        .unwrap_or_else(|| panic!("no cell {name}"));
    sheet
        .ranges
        .get(id)
        .cloned()
        .flatten()
        .unwrap_or_else(|| panic!("{name} has no range"))
}

/// Evaluates `template` with each `{input}` replaced by a literal value (SI
/// number with `unit`) over a grid across its tolerance, and returns the
/// target cell's SI values.
fn sample(
    template: &str,
    inputs: &[(&str, f64, f64, &str)],
    target: &str,
    points: usize,
) -> Vec<f64> {
    let mut values = Vec::new();
    let mut index = vec![0usize; inputs.len()];
    loop {
        let mut source = template.to_string();
        for ((name, low, high, unit), &i) in inputs.iter().zip(&index) {
            let value = low + (high - low) * i as f64 / (points - 1) as f64;
            source = source.replace(&format!("{{{name}}}"), &format!("{value:e} {unit}"));
        }
        values.push(si(&run(&source), target));
        // Next grid point.
        let mut k = 0;
        while k < index.len() {
            index[k] += 1;
            if index[k] < points {
                break;
            }
            index[k] = 0;
            k += 1;
        }
        if k == index.len() {
            return values;
        }
    }
}

/// The sheet with tolerances, and the same sheet with `{name}` placeholders.
struct Case<'a> {
    toleranced: &'a str,
    template: &'a str,
    inputs: &'a [(&'a str, f64, f64, &'a str)],
    target: &'a str,
    monotone: bool,
}

#[test]
fn bounds_contain_every_sampled_value_and_are_tight_when_monotone() {
    // Exhaustive check: an 11-point grid per input (every corner included)
    // must lie inside the computed bounds; for formulas monotone in every
    // input the bounds must equal the sampled extremes (they sit at corners).
    let cases = [
        Case {
            toleranced: "+++\ncase_results = [\"T\"]\n+++\nm = 1850 kg ± 3 %\na = 0.35 m/s^2 ± 0.05 m/s^2\nT = m * (g0 + a)\n",
            template: "m = {m}\na = {a}\nT = m * (g0 + a)\n",
            inputs: &[("m", 1794.5, 1905.5, "kg"), ("a", 0.30, 0.40, "m/s^2")],
            target: "T",
            monotone: true,
        },
        Case {
            // x appears twice: the natural interval extension alone over-widens.
            toleranced: "+++\ncase_results = [\"y\"]\n+++\nx = 2 kg ± 50 %\ny = x / (x + 1 kg)\n",
            template: "x = {x}\ny = x / (x + 1 kg)\n",
            inputs: &[("x", 1.0, 3.0, "kg")],
            target: "y",
            monotone: true,
        },
        Case {
            toleranced: "+++\ncase_results = [\"T\"]\n+++\nW = 20 kN ± 3 %\nθ = 50 deg ± 8 deg\nT = W / (2 * sin(θ))\n",
            template: "W = {W}\nθ = {θ}\nT = W / (2 * sin(θ))\n",
            inputs: &[("W", 19_400.0, 20_600.0, "N"), ("θ", 42.0, 58.0, "deg")],
            target: "T",
            monotone: true,
        },
        Case {
            // Not monotone: sin peaks at 90° inside the range.
            toleranced: "+++\ncase_results = [\"s\"]\n+++\nθ = 80 deg ± 20 deg\ns = sin(θ)\n",
            template: "θ = {θ}\ns = sin(θ)\n",
            inputs: &[("θ", 60.0, 100.0, "deg")],
            target: "s",
            monotone: false,
        },
        Case {
            // Not monotone, and x used twice: (x − 2 m)² has its minimum inside.
            toleranced: "+++\ncase_results = [\"q\"]\n+++\nx = 2 m ± 1 m\nq = (x - 2 m) * (x - 2 m) + x * 1 m\n",
            template: "x = {x}\nq = (x - 2 m) * (x - 2 m) + x * 1 m\n",
            inputs: &[("x", 1.0, 3.0, "m")],
            target: "q",
            monotone: false,
        },
    ];
    for case in cases {
        let sheet = run_clean(case.toleranced);
        let bounds = range(&sheet, case.target);
        let samples = sample(case.template, case.inputs, case.target, 11);
        let (low, high) = samples
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), &v| {
                (l.min(v), h.max(v))
            });
        let slack = 1e-12 * low.abs().max(high.abs());
        assert!(
            bounds.low <= low + slack && bounds.high >= high - slack,
            "{}: [{}, {}] must hold [{low}, {high}]",
            case.target,
            bounds.low,
            bounds.high
        );
        if case.monotone {
            assert!(
                bounds.at_corners,
                "{}: a monotone result is refined to its corners",
                case.target
            );
            assert_close(bounds.low, low, 1e-9);
            assert_close(bounds.high, high, 1e-9);
        }
    }
}

#[test]
fn derivatives_match_closed_form_results() {
    // Closed form: T = m (g + a) gives ∂T/∂m = g + a and ∂T/∂a = m; for two
    // equal slings T = W / (2 sin θ), ∂T/∂θ = −W cos θ / (2 sin² θ).
    let sheet = run_clean(
        "+++\ncase_results = [\"T\", \"T_sling\"]\n+++\nm = 250 kg ± 2 %\na = 1.2 m/s^2 ± 0.1 m/s^2\nT = m * (g0 + a)\n\
         W = 20 kN\nθ = 60 deg ± 2 deg\nT_sling = W / (2 * sin(θ))\n",
    );
    let derivative = |result: &str, input: &str| {
        let input_id = sheet.cell(input).map(|c| c.id);
        range(&sheet, result)
            .sensitivities
            .iter()
            .find(|s| Some(s.input) == input_id)
            .map(|s| s.derivative)
            .unwrap_or(f64::NAN)
    };
    assert_close(derivative("T", "m"), 9.80665 + 1.2, 1e-12);
    assert_close(derivative("T", "a"), 250.0, 1e-12);
    let theta = 60f64.to_radians();
    assert_close(
        derivative("T_sling", "θ"),
        -20_000.0 * theta.cos() / (2.0 * theta.sin().powi(2)),
        1e-12,
    );
    // Normalized sensitivity ∂ln T/∂ln m = 1 for T ∝ m.
    let m_id = sheet.cell("m").map(|c| c.id);
    let normalized = range(&sheet, "T")
        .sensitivities
        .iter()
        .find(|s| Some(s.input) == m_id)
        .and_then(|s| s.normalized);
    assert_close(normalized.unwrap_or(f64::NAN), 1.0, 1e-12);
    // First-order range: T ± (|∂T/∂m| Δm + |∂T/∂a| Δa).
    let t = range(&sheet, "T");
    let nominal = si(&sheet, "T");
    let spread = (9.80665 + 1.2) * 5.0 + 250.0 * 0.1;
    assert_close(t.first_order_high, nominal + spread, 1e-12);
    assert_close(t.first_order_low, nominal - spread, 1e-12);
}

#[test]
fn a_proof_load_case_at_125_percent() {
    // Common practice, no document: overhead hoists are proof tested at 125 %
    // of their rated load. The proof case must give 1.25 times the static
    // rope tension of the rated case and govern the static check.
    let sheet = run_clean(
        "m_rated = 2000 kg\nm = m_rated\nT_static [kN] = m * g0\nWLL = 30 kN\n\
         check T_static <= WLL \"rope, static\"\n\
         case proof \"proof test at 125 % of rated load\":\n  m = 1.25 * m_rated\nend\n",
    );
    assert_eq!(sheet.cases.len(), 1);
    let proof = &sheet.cases[0];
    let static_tension = proof.results[0]
        .value
        .and_then(|v| v.scalar())
        .map(|q| q.si)
        .unwrap_or(f64::NAN);
    assert_close(static_tension, 1.25 * si(&sheet, "T_static"), 1e-12);
    assert_eq!(sheet.governing, vec![Some(0)]);
}

#[test]
fn a_check_fails_at_its_worst_case_even_when_nominal_passes() {
    let sheet = run("m = 1000 kg ± 5 %\nW = m * g0\ncheck W <= 10 kN \"just passes nominally\"\n");
    // Nominal: 9806.65 N ≤ 10 kN; worst: 1050 kg × g0 = 10297 N > 10 kN.
    assert_eq!(common::codes(&sheet), ["check-failed"]);
    let worst = sheet.checks[0].worst.clone().expect("a worst case");
    assert!(!worst.passes);
    assert_close(
        worst.worst_utilization.unwrap_or(f64::NAN),
        1050.0 * 9.80665 / 10_000.0,
        1e-12,
    );
}

#[test]
fn the_governing_case_is_the_one_with_the_highest_utilization() {
    let sheet = run_clean(
        &std::fs::read_to_string(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/sheets/gantry_cases.heft"
        ))
        .expect("demo sheet"),
    );
    let names: Vec<&str> = sheet.cases.iter().map(|c| c.name.as_str()).collect();
    assert_eq!(names, ["proof", "estop", "empty"]);
    // The emergency stop, not the proof test, governs both checks: its worst-case
    // rope tension is (1906 + 95) kg × (g0 + 3.6 m/s²) / 2, by hand.
    let estop = sheet.cases.iter().position(|c| c.name == "estop");
    assert_eq!(sheet.governing, vec![estop, estop]);
    let worst = sheet.cases[1].checks[0].worst.clone().expect("worst case");
    assert_close(
        worst.lhs.high,
        (1850.0 * 1.03 + 95.0) * (9.80665 + 3.6) / 2.0,
        1e-9,
    );
}
