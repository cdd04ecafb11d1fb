//! Load cases, tolerances and sensitivity, checked against exhaustive
//! sampling and closed-form derivatives.

// Reference values here come from std's maths functions, independent of
// the libm that heft uses.
#![allow(clippy::disallowed_methods)]

use crate::common;

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
                bounds.method == heftsheet::eval::RangeMethod::WorstCorners,
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
    let (first_order_low, first_order_high) = t.first_order.expect("a first-order estimate");
    assert_close(first_order_high, nominal + spread, 1e-12);
    assert_close(first_order_low, nominal - spread, 1e-12);
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

// ---------------------------------------------------------------------------
// Verdicts: an unknown is never a pass, and a check is judged everywhere.

/// A check's verdict by its statement.
#[track_caller]
fn check_status(sheet: &Evaluated, statement: &str) -> heftsheet::eval::CheckStatus {
    sheet
        .checks
        .iter()
        .find(|c| c.statement() == statement)
        .map(|c| c.status)
        .unwrap_or_else(|| panic!("no check `{statement}`"))
}

#[test]
fn a_solved_result_is_judged_at_the_worst_case_of_its_tolerances() {
    // Closed form: 2 T = m g0, so T = m g0 / 2 with m = 100 kg ± 10 %: the
    // worst case is 110 kg × 9.80665 / 2 = 539.37 N > 500 N. The solved T
    // and the hand formula T_hand are the same quantity and must agree.
    let sheet = run(
        "m = 100 kg ± 10 %\nW [N] = m * g0\nsolve T [N] ~ 500:\n  2 * T = W\nend\n\
         T_hand [N] = W / 2\ncheck T <= 500 N\ncheck T_hand <= 500 N\n",
    );
    use heftsheet::eval::{CheckStatus, RangeMethod};
    assert_eq!(check_status(&sheet, "T <= 500 N"), CheckStatus::Failed);
    assert_eq!(check_status(&sheet, "T_hand <= 500 N"), CheckStatus::Failed);
    let solved = sheet.checks[0]
        .worst
        .clone()
        .expect("a worst case through the solve block");
    let by_hand = sheet.checks[1].worst.clone().expect("a worst case");
    assert_eq!(solved.method, RangeMethod::Corners(2));
    assert_close(
        solved.worst_utilization.unwrap_or(f64::NAN),
        110.0 * 9.80665 / 2.0 / 500.0,
        1e-12,
    );
    assert_close(
        solved.worst_utilization.unwrap_or(f64::NAN),
        by_hand.worst_utilization.unwrap_or(f64::NAN),
        1e-12,
    );
    let t_range = range(&sheet, "T");
    assert_eq!(t_range.method, RangeMethod::Corners(2));
    assert_close(t_range.low, 90.0 * 9.80665 / 2.0, 1e-12);
    assert_close(t_range.high, 110.0 * 9.80665 / 2.0, 1e-12);
    assert!(!sheet.is_clean());
}

#[test]
fn a_solved_result_has_the_first_order_range_and_sensitivities_of_its_closed_form() {
    // Oracle: each solved unknown beside the closed form of the same
    // quantity written as a formula, whose first-order range and
    // sensitivities come from the ordinary derivative pass. Terminal speed
    // of quadratic drag, c v² = m g0 (closed form v = √(m g0 / c)), with
    // the mass and the drag coefficient toleranced; and a linear
    // two-cart balance (a = F / (m1 + m2), T = m2 F / (m1 + m2)).
    let sheet = run(
        "m = 80 kg ± 5 %\nc = 0.25 kg/m ± 0.02 kg/m\nsolve v [m/s] ~ 10:\n  c * v^2 = m * g0\nend\n\
         v_hand [m/s] = sqrt(m * g0 / c)\ncheck v <= 60 m/s\ncheck v_hand <= 60 m/s\n\
         F = 900 N ± 50 N\nm1 = 120 kg ± 10 kg\nm2 = 60 kg\nsolve a [m/s^2], T [N]:\n  F - T = m1 * a\n  T = m2 * a\nend\n\
         T_hand [N] = m2 * F / (m1 + m2)\ncheck T <= 400 N\ncheck T_hand <= 400 N\n",
    );
    for (solved, by_hand) in [("v", "v_hand"), ("T", "T_hand")] {
        let (solved_range, hand_range) = (range(&sheet, solved), range(&sheet, by_hand));
        let (low, high) = solved_range
            .first_order
            .unwrap_or_else(|| panic!("`{solved}` has no first-order range"));
        let (hand_low, hand_high) = hand_range.first_order.unwrap_or((f64::NAN, f64::NAN));
        assert_close(low, hand_low, 1e-12);
        assert_close(high, hand_high, 1e-12);
        assert_eq!(
            solved_range.sensitivities.len(),
            hand_range.sensitivities.len(),
            "{solved}"
        );
        for (a, b) in solved_range
            .sensitivities
            .iter()
            .zip(&hand_range.sensitivities)
        {
            assert_eq!(a.input, b.input, "{solved}: the same ranking");
            assert_close(a.derivative, b.derivative, 1e-10);
            assert_close(a.share, b.share, 1e-10);
        }
    }
    // And by hand: ∂v/∂m = v / (2m) at the nominal point.
    let v = (80.0_f64 * 9.80665 / 0.25).sqrt();
    let by_mass = range(&sheet, "v")
        .sensitivities
        .iter()
        .find(|s| sheet.cell_at(s.input).name == "m")
        .map_or(f64::NAN, |s| s.derivative);
    assert_close(by_mass, v / (2.0 * 80.0), 1e-12);
}

#[test]
fn vector_and_simulated_results_are_judged_at_their_corners() {
    // A sling force as a vector: |F| = T / cos(θ) hand-checked at the worst
    // corner T = 1.1 × 4 kN, θ = 32° (5.188 kN > 5.1 kN; nominal 4.619 kN); a run's peak speed for a free fall
    // from h (closed form v = sqrt(2 g0 h)) with h ± 5 %.
    let sheet = run(
        "T = 4 kN ± 10 %\nθ = 30 deg ± 2 deg\nF = vec(T * tan(θ), T)\ncheck mag(F) <= 5.1 kN\n\
         h = 2 m ± 5 %\nsimulate t from 0 s to 5 s:\n  y' = v\n  v' = g0\n  y(0) = 0 m\n  v(0) = 0 m/s\n  stop when y >= h\n  tolerance 1e-9\nend\n\
         v_hit = v at stop\ncheck v_hit <= 6.35 m/s\n",
    );
    use heftsheet::eval::CheckStatus;
    let magnitude = 4.4 / 32f64.to_radians().cos();
    assert!(
        magnitude > 5.1,
        "the worst corner fails by hand: {magnitude}"
    );
    assert_eq!(
        check_status(&sheet, "mag(F) <= 5.1 kN"),
        CheckStatus::Failed
    );
    let worst = sheet.checks[0].worst.clone().expect("a worst case");
    assert_close(worst.lhs.high, magnitude * 1000.0, 1e-9);
    // sqrt(2 × 9.80665 × 2.1) = 6.4177 m/s > 6.35; nominal sqrt(2 g0 2) = 6.2629.
    assert_eq!(
        check_status(&sheet, "v_hit <= 6.35 m/s"),
        CheckStatus::Failed
    );
    let worst = sheet.checks[1]
        .worst
        .clone()
        .expect("a worst case through the run");
    assert_close(worst.lhs.high, (2.0f64 * 9.80665 * 2.1).sqrt(), 1e-7);
    let id = sheet.cell("F").map(|c| c.id);
    let components = sheet
        .vector_ranges
        .iter()
        .find(|(cell, _)| Some(*cell) == id)
        .map(|(_, c)| c.clone())
        .expect("F's components have ranges");
    assert_close(components[1].0, 3600.0, 1e-12);
    assert_close(components[1].1, 4400.0, 1e-12);
}

#[test]
fn a_worst_case_beyond_the_corner_limit_is_unknown_never_passed() {
    // Eleven toleranced inputs reach a solved result: 2^11 corners is beyond
    // the limit, so the check cannot be judged at its worst case.
    let mut source = String::new();
    let names: Vec<String> = (0..11).map(|k| format!("m_{k}")).collect();
    for name in &names {
        source.push_str(&format!("{name} = 10 kg ± 1 %\n"));
    }
    source.push_str(&format!(
        "solve T [N] ~ 500:\n  2 * T = ({}) * g0\nend\ncheck T <= 5 kN\n",
        names.join(" + ")
    ));
    let sheet = run(&source);
    use heftsheet::eval::CheckStatus;
    assert_eq!(sheet.checks[0].status, CheckStatus::Unknown);
    assert_eq!(sheet.checks[0].passed(), None);
    assert!(common::codes(&sheet).contains(&"check-unknown"));
    let summary = sheet.summary();
    assert_eq!((summary.passed, summary.unknown), (0, 1));
    assert!(!sheet.is_clean());
    assert!(
        heftsheet::present::summary_line(&summary).contains("1 unknown"),
        "{}",
        heftsheet::present::summary_line(&summary)
    );
}

#[test]
fn non_smooth_functions_range_over_the_argument_they_take() {
    // max and min take one argument or the other over the box; their range
    // is that of the hull (closed form from the bounds: max of [2, 3] and
    // [5, 9] is [5, 9], min is [2, 3]); abs of [-1, 2] is [0, 2]; hypot of
    // [3, 4] and [4, 5] is [5, sqrt(41)].
    let sheet = run(
        "+++\ncase_results = [\"F_gov\", \"F_low\", \"a\", \"h\"]\n+++\n\
         F_wind = 2 kN .. 3 kN\nF_snow = 5 kN .. 9 kN\nF_gov [kN] = max(F_wind, F_snow)\n\
         F_low [kN] = min(F_wind, F_snow)\nx = -1 .. 2\na = abs(x)\n\
         p = 3 .. 4\nq = 4 .. 5\nh = hypot(p, q)\ncheck F_gov <= 8.5 kN\n",
    );
    let of = |name: &str| {
        let r = range(&sheet, name);
        r.shown_bounds()
    };
    let (low, high) = of("F_gov");
    assert_close(low, 5000.0, 1e-12);
    assert_close(high, 9000.0, 1e-12);
    let (low, high) = of("F_low");
    assert_close(low, 2000.0, 1e-12);
    assert_close(high, 3000.0, 1e-12);
    let (low, high) = of("a");
    assert!(
        low.abs() < 1e-12 && (high - 2.0).abs() < 1e-12,
        "[{low}, {high}]"
    );
    let (low, high) = of("h");
    assert_close(low, 5.0, 1e-12);
    assert_close(high, 41f64.sqrt(), 1e-12);
    // The governing force follows the snow load: 9 kN / 8.5 kN = 105.9 %.
    let worst = sheet.checks[0].worst.clone().expect("worst case");
    assert!(!worst.passes);
    assert_close(
        worst.worst_utilization.unwrap_or(f64::NAN),
        9.0 / 8.5,
        1e-12,
    );
    let snow = sheet.cell("F_snow").map(|c| c.id);
    let derivative = range(&sheet, "F_gov")
        .sensitivities
        .iter()
        .find(|s| Some(s.input) == snow)
        .map(|s| s.derivative);
    assert_eq!(derivative, Some(1.0));
}

#[test]
fn a_case_override_may_use_a_cell_written_later_in_the_file() {
    // N_req = SF m (g0 + a) / (2 μ): in case `oily`, μ = 0.10 (defined at
    // the end of the file), so N_req = 2 × 12 × 11.80665 / 0.2 = 1416.8 N.
    let source = "SF = 2\nm_part = 12 kg\na_up = 2 m/s^2\nN_avail = 1300 N\nμ = 0.25 .. 0.3\n\
                  N_req [N] = SF * m_part * (g0 + a_up) / (2 * μ)\ncheck N_avail >= N_req\n\
                  case oily \"oily parts\":\n  μ = μ_oily\nend\nμ_oily = 0.10\n";
    let sheet = heftsheet::pipeline::run(source);
    assert!(sheet.cases[0].evaluated);
    let n_req = sheet.cases[0].results[1]
        .value
        .and_then(|v| v.scalar())
        .map(|q| q.si);
    assert_close(
        n_req.unwrap_or(f64::NAN),
        2.0 * 12.0 * (9.80665 + 2.0) / 0.2,
        1e-12,
    );
    use heftsheet::eval::{CheckStatus, Place};
    assert_eq!(sheet.checks[0].status, CheckStatus::Failed);
    assert_eq!(sheet.checks[0].fails, vec![Place::Case(0)]);
    assert_eq!(sheet.governing, vec![Some(0)]);
    // μ_oily is used by the case: no unused-input note.
    assert!(
        !common::codes(&sheet).contains(&"unused-input"),
        "{:?}",
        common::codes(&sheet)
    );
}

#[test]
fn a_check_failing_only_in_a_load_case_fails_the_sheet_everywhere() {
    // A spreader's lower sling: V_2 = m (g0 + a) / 2 / cos(θ). As written
    // (a = 0.3 m/s²) it holds even at 1648 kg (8.86 kN); in the jerk case
    // (a = 1.2 m/s²) it holds at 1600 kg (9.37 kN) and fails only at the
    // worst tolerance, 1648 kg (9.65 kN > 9.4 kN).
    let source = "+++\ntitle = \"Spreader lower slings\"\n+++\n\
                  m = 1600 kg ± 3 %\na = 0.3 m/s^2\nθ = 20 deg\n\
                  V_2 [kN] = m * (g0 + a) / 2 / cos(θ)\nWLL_lower = 9.4 kN\n\
                  check V_2 <= WLL_lower \"lower sling\"\n\
                  case jerk \"snatch on lifting\":\n  a = 1.2 m/s^2\nend\n";
    let sheet = heftsheet::pipeline::run(source);
    use heftsheet::eval::{CheckStatus, Place};
    assert_eq!(sheet.checks[0].as_written_status(), CheckStatus::Passed);
    assert_eq!(sheet.checks[0].status, CheckStatus::Failed);
    assert_eq!(sheet.checks[0].fails, vec![Place::CaseWorstCase(0)]);
    assert_eq!(sheet.checks[0].passed(), Some(false));
    let summary = sheet.summary();
    assert_eq!((summary.passed, summary.failed), (0, 1));
    assert!(
        heftsheet::present::summary_line(&summary).ends_with("1 check: 0 passed, 1 failed"),
        "{}",
        heftsheet::present::summary_line(&summary)
    );
    let report = heftsheet::report::render(&sheet, heftsheet::report::Format::Markdown);
    assert!(
        report.contains("FAIL (in case \\`jerk\\` at the worst case of its tolerances)"),
        "{report}"
    );
    let mut live = heftsheet::live::LiveSheet::open(source);
    let revision = live.revision();
    live.set_lints(revision, source, &heftsheet::audit::lint(&sheet));
    assert_eq!(live.summary().failed, 1);
}

#[test]
fn a_cell_used_only_by_a_load_case_is_not_an_unused_input() {
    // The demo's rated load is used only by the proof case's override.
    let sheet = heftsheet::pipeline::run(
        &std::fs::read_to_string(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/sheets/gantry_cases.heft"
        ))
        .expect("demo sheet"),
    );
    assert!(
        !common::codes(&sheet).contains(&"unused-input"),
        "{:?}",
        common::codes(&sheet)
    );
}

#[test]
fn small_things_a_checker_sees() {
    // A check against zero has no utilization.
    let sheet = run("a = 0.4 m/s^2\ncheck a > 0 m/s^2\n");
    assert_eq!(sheet.checks[0].utilization, None);
    // A result no tolerance reaches has no range, beside one that has.
    let sheet = run("x = 0 .. 3\nk = 413.8 N\ny = 2 * x\ncheck y <= 5\n");
    let k = sheet.cell("k").map(|c| c.id).expect("k");
    assert!(sheet.ranges[k].is_none(), "{:?}", sheet.ranges[k]);
    // `0 .. 3` is shown from 0, not from the outward-rounded -5e-324.
    let (low, high) = range(&sheet, "x").shown_bounds();
    assert_eq!((low, high), (0.0, 3.0));
    // A crossing that the guaranteed (not exact) bounds show is said to be
    // a bound: y = x·x over x ∈ [-1, 2] has bounds, not corners, at its top.
    let sheet = run("x = -1 .. 2\ny = x * x - x\ncheck y < 1.5\n");
    let message = sheet
        .diagnostics
        .iter()
        .find(|d| d.code.as_str() == "check-failed")
        .map(|d| d.message.clone())
        .unwrap_or_default();
    if !message.is_empty() {
        assert!(
            message.contains("bound") || message.contains("corner"),
            "a failure found from bounds says so: {message}"
        );
    }
}

#[test]
fn an_interval_power_holds_the_exact_power() {
    // f64::powi errs by many units in the last place at high powers; the
    // interval must still hold the exact power of its (double) input,
    // computed here in exact rational arithmetic.
    use heftsheet::numeric::Interval;
    use heftsheet::numeric::Number;
    let x = 1.1f64;
    use num_bigint::BigInt;
    use num_rational::BigRational;
    use num_traits::ToPrimitive;
    let exact = BigRational::from_float(x).expect("finite");
    for power in [2, 7, 20, 40, 63] {
        let mut value = BigRational::from_integer(BigInt::from(1));
        for _ in 0..power {
            value *= &exact;
        }
        let interval = Interval::point(x).powi(power);
        let low = BigRational::from_float(interval.lo).expect("finite");
        let high = BigRational::from_float(interval.hi).expect("finite");
        assert!(
            low <= value && value <= high,
            "1.1^{power}: [{}, {}] misses {}",
            interval.lo,
            interval.hi,
            value.to_f64().unwrap_or(f64::NAN)
        );
    }
}

/// `n` toleranced masses summed in a chain (`s_k = s_{k-1} + m_k`), so
/// every input reaches every later sum: n inputs over 2n + 1 cells.
fn toleranced_chain(n: usize) -> String {
    let mut source = String::from("s_0 = 0 kg\n");
    for k in 1..=n {
        source.push_str(&format!(
            "m_{k} = 10 kg ± 1 %\ns_{k} = s_{} + m_{k}\n",
            k - 1
        ));
    }
    source
}

#[test]
fn a_tolerance_analysis_beyond_its_bound_is_unknown_never_passed() {
    // A chain of toleranced inputs whose (input, cell) pairs exceed the
    // bound: the checks they reach are unknown with the reason, and a check
    // no tolerance reaches is still judged.
    use heftsheet::blocks::MAX_TOLERANCE_PAIRS;
    use heftsheet::eval::CheckStatus;
    let n_inputs = 2_400;
    let mut source = toleranced_chain(n_inputs);
    source.push_str(&format!(
        "check s_{n_inputs} <= 1e6 kg\nq = 1 kg\ncheck q <= 2 kg\n"
    ));
    let sheet = run(&source);
    assert!(n_inputs * sheet.n_cells() > MAX_TOLERANCE_PAIRS);
    assert_eq!(sheet.checks[0].status, CheckStatus::Unknown);
    assert_eq!(sheet.checks[0].passed(), None);
    assert_eq!(sheet.checks[1].status, CheckStatus::Passed);
    assert!(common::codes(&sheet).contains(&"check-unknown"));
    assert_eq!(sheet.summary().passed, 1);
    assert!(!sheet.is_clean());
}

#[test]
fn load_cases_share_the_tolerance_bound_and_the_ones_past_it_are_unknown() {
    // Each analysis follows 1,000 toleranced inputs through 2,001 cells:
    // the sheet as written and the first cases fit in the bound, the
    // later cases do not, and their checks are unknown, never passed.
    use heftsheet::blocks::MAX_TOLERANCE_PAIRS;
    use heftsheet::eval::CheckStatus;
    let n_inputs = 1_000;
    let mut source = toleranced_chain(n_inputs);
    source.push_str(&format!("check s_{n_inputs} <= 1e6 kg\n"));
    let n_cases = 6;
    for case in 0..n_cases {
        source.push_str(&format!(
            "case c{case}:\n  m_1 = {} kg ± 2 %\nend\n",
            11 + case
        ));
    }
    let sheet = run(&source);
    let pairs = n_inputs * sheet.n_cells();
    let fitting = MAX_TOLERANCE_PAIRS / pairs; // analyses within the bound
    assert!(fitting >= 2 && fitting < n_cases + 1, "{fitting}");
    let judged: Vec<CheckStatus> = sheet.cases.iter().map(|c| c.checks[0].status).collect();
    for (index, status) in judged.iter().enumerate() {
        // the as-written analysis is the first; case `index` is analysis index + 2
        let expected = if index + 2 <= fitting {
            CheckStatus::Passed
        } else {
            CheckStatus::Unknown
        };
        assert_eq!(*status, expected, "case c{index}: {judged:?}");
    }
    assert_eq!(sheet.checks[0].status, CheckStatus::Unknown);
    assert_eq!(sheet.summary().passed, 0);
}

#[test]
fn a_case_whose_worst_case_is_unknown_is_unknown_in_the_case_table_too() {
    // Twelve toleranced inputs reach a solved result in the case as well:
    // the case's own verdict (the case table, JSON, report, notebook) is
    // unknown, like the sheet's, never passed.
    use heftsheet::eval::CheckStatus;
    let mut source = String::from("m = 10 kg ± 1 %\n");
    let names: Vec<String> = (0..11).map(|k| format!("p_{k}")).collect();
    for name in &names {
        source.push_str(&format!("{name} = 1 kg ± 1 %\n"));
    }
    source.push_str(&format!(
        "solve T [N] ~ 500:\n  2 * T = (m + {}) * g0\nend\ncheck T <= 5 kN\ncase heavy:\n  m = 12 kg\nend\n",
        names.join(" + ")
    ));
    let sheet = run(&source);
    let in_case = &sheet.cases[0].checks[0];
    assert_eq!(in_case.holds, Some(true));
    assert!(in_case.worst_unknown.is_some());
    assert_eq!(in_case.status, CheckStatus::Unknown);
    assert_eq!(sheet.checks[0].status, CheckStatus::Unknown);
    let path = std::env::temp_dir().join(format!("heft-case-unknown-{}.heft", std::process::id()));
    std::fs::write(&path, &source).unwrap();
    let (code, json, _) = common::heft(&["check", "--json", path.to_str().unwrap()]);
    std::fs::remove_file(&path).ok();
    assert_eq!(code, 1);
    let json: serde_json::Value = serde_json::from_str(&json).unwrap();
    assert_eq!(json["cases"][0]["checks"][0]["status"], "unknown");
    assert_eq!(
        json["cases"][0]["checks"][0]["passed"],
        serde_json::Value::Null
    );
}
