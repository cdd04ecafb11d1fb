//! Piecewise formulas (`if … then … else …`): the value against a direct
//! computation in Rust over a grid, the sheet against the same formula
//! written as one cell per branch, ranges over tolerances that straddle a
//! test (the hull of both branches, never a pass where the worst branch
//! fails), through a solve block and a simulate block, and the dimension
//! rules of branches and tests.

use proptest::prelude::*;

use crate::common;

use common::{assert_close, codes, run, run_clean, si};
use heftsheet::eval::{CheckStatus, Evaluated};

/// Standard gravity, 9.80665 m/s² exactly (3rd CGPM, 1901).
const G0: f64 = 9.80665;

/// The dynamic factor by hoist speed class, written directly in Rust.
fn dynamic_factor(v: f64) -> f64 {
    if v <= 0.25 {
        1.10
    } else if v <= 1.0 {
        1.25
    } else {
        1.40
    }
}

fn hoist_sheet(v: f64) -> String {
    format!(
        "v_hoist = {v} m/s\n\
         m_load = 2500 kg\n\
         phi_dyn = if v_hoist <= 0.25 m/s then 1.10 else if v_hoist <= 1 m/s then 1.25 else 1.40\n\
         T_rope [kN] = phi_dyn * m_load * g0\n"
    )
}

#[track_caller]
fn status_of(sheet: &Evaluated, index: usize) -> CheckStatus {
    sheet.checks[index].status
}

#[test]
fn a_piecewise_value_equals_the_direct_computation_over_a_grid() {
    // Grid across every switch, the switches themselves included.
    let mut points: Vec<f64> = (0..=60).map(|k| f64::from(k) * 0.025).collect();
    points.extend([0.25, 1.0, 0.2500001, 0.9999999]);
    for v in points {
        let sheet = run_clean(&hoist_sheet(v));
        let expected = dynamic_factor(v);
        assert_eq!(si(&sheet, "phi_dyn"), expected, "v = {v}");
        assert_close(si(&sheet, "T_rope"), expected * 2500.0 * G0, 1e-15);
    }
}

#[test]
fn a_piecewise_value_equals_the_branch_written_as_its_own_cell() {
    // The same formula written as separate cells, one per branch: the
    // piecewise cell must equal the branch its test picks.
    let combined = |v: f64, m: f64| {
        format!(
            "v = {v} m/s\nm = {m} kg\n\
             slow = 0.5 * m * v^2\n\
             fast [J] = m * v * 1 m/s - 0.5 * m * (1 m/s)^2\n\
             E [J] = if v <= 1 m/s and not m > 900 kg then 0.5 * m * v^2 else m * v * 1 m/s - 0.5 * m * (1 m/s)^2\n"
        )
    };
    for v in [0.0, 0.3, 0.99, 1.0, 1.01, 2.5] {
        for m in [10.0, 899.0, 900.0, 901.0] {
            let sheet = run_clean(&combined(v, m));
            let branch = if v <= 1.0 && m <= 900.0 {
                "slow"
            } else {
                "fast"
            };
            assert_eq!(si(&sheet, "E"), si(&sheet, branch), "v = {v}, m = {m}");
        }
    }
}

#[test]
fn every_comparison_and_joining_word_decides_as_rust_does() {
    let relations = [
        ("<", f64::lt as fn(&f64, &f64) -> bool),
        ("<=", f64::le),
        (">", f64::gt),
        (">=", f64::ge),
        ("==", f64::eq),
        ("!=", f64::ne),
    ];
    for (symbol, holds) in relations {
        for (a, b) in [(1.0, 2.0), (2.0, 2.0), (3.0, 2.0)] {
            let sheet = run_clean(&format!(
                "a = {a} N\nb = {b} N\nx = if a {symbol} b then 1 else 0\n\
                 y = if not (a {symbol} b) or a > 10 N then 1 else 0\n\
                 z = if a {symbol} b and b {symbol} a then 1 else 0\n"
            ));
            let x = holds(&a, &b);
            assert_eq!(si(&sheet, "x"), f64::from(u8::from(x)), "{a} {symbol} {b}");
            assert_eq!(si(&sheet, "y"), f64::from(u8::from(!x || a > 10.0)));
            assert_eq!(si(&sheet, "z"), f64::from(u8::from(x && holds(&b, &a))));
        }
    }
}

#[test]
fn a_tolerance_that_straddles_the_test_takes_the_hull_and_never_passes_where_the_worst_branch_fails()
 {
    // v from 0.7 to 1.1 m/s straddles the 1 m/s switch: the rope sees 1.25
    // or 1.40 of the weight. The worst branch (1.40 × 1020 kg × g0 =
    // 14.004 kN) exceeds 13 kN though the nominal (12.26 kN) does not.
    let sheet = run("v_hoist = 0.9 m/s ± 0.2 m/s\nm_load = 1000 kg ± 2 %\n\
         phi_dyn = if v_hoist <= 0.25 m/s then 1.10 else if v_hoist <= 1 m/s then 1.25 else 1.40\n\
         T_rope [kN] = phi_dyn * m_load * g0\n\
         check T_rope <= 13 kN\n");
    let id = sheet.cell("T_rope").map(|c| c.id).expect("a cell");
    let range = sheet.ranges[id].clone().expect("a range");
    let low = 1.25 * 980.0 * G0;
    let high = 1.40 * 1020.0 * G0;
    assert!(range.low <= low * (1.0 + 1e-12) && range.high >= high * (1.0 - 1e-12));
    assert!(range.first_order.is_none(), "no first order across a jump");
    assert_ne!(status_of(&sheet, 0), CheckStatus::Passed);
    assert!(codes(&sheet).contains(&"range-straddles-condition"));
    // Where both branches hold the check, it passes.
    let passing = run("v_hoist = 0.9 m/s ± 0.2 m/s\nm_load = 1000 kg ± 2 %\n\
         phi_dyn = if v_hoist <= 1 m/s then 1.25 else 1.40\n\
         T_rope [kN] = phi_dyn * m_load * g0\n\
         check T_rope <= 15 kN\n");
    assert_eq!(status_of(&passing, 0), CheckStatus::Passed);
}

#[test]
fn a_tolerance_inside_one_branch_is_exact_and_first_order() {
    let sheet = run_clean(
        "v_hoist = 0.5 m/s ± 0.1 m/s\nm_load = 1000 kg ± 2 %\n\
         phi_dyn = if v_hoist <= 1 m/s then 1.25 else 1.40\n\
         T_rope [kN] = phi_dyn * m_load * g0\n\
         check T_rope <= 13 kN\n",
    );
    let id = sheet.cell("T_rope").map(|c| c.id).expect("a cell");
    let range = sheet.ranges[id].clone().expect("a range");
    assert_close(range.high, 1.25 * 1020.0 * G0, 1e-12);
    let (low, high) = range.first_order.expect("first order");
    assert_close(low, 1.25 * 980.0 * G0, 1e-12);
    assert_close(high, 1.25 * 1020.0 * G0, 1e-12);
    assert_eq!(status_of(&sheet, 0), CheckStatus::Passed);
}

#[test]
fn a_straddle_through_a_solve_block_makes_the_check_unknown() {
    // a = F/m − g0 from 0.59 to 5.79 m/s² straddles 3 m/s²; at the upper
    // corner 1.5 × 1560 N = 2340 N > 2000 N.
    let sheet = run(
        "m = 100 kg\nF = 1300 N ± 20 %\nsolve a [m/s^2] ~ 1:\n  F - m * g0 = m * a\nend\n\
         phi = if a <= 3 m/s^2 then 1.1 else 1.5\nF_des [N] = phi * F\ncheck F_des <= 2000 N\n",
    );
    assert_eq!(status_of(&sheet, 0), CheckStatus::Unknown);
    let message = sheet
        .diagnostics
        .iter()
        .find(|d| d.code.as_str() == "check-unknown")
        .map(|d| d.message.clone())
        .unwrap_or_default();
    assert!(
        message.contains("straddles the condition at line 6"),
        "{message}"
    );
}

#[test]
fn a_solve_block_and_a_run_use_the_branch_taken() {
    // Newton on T = phi·m·g0 with phi piecewise in the load: closed form.
    let sheet = run_clean(
        "m = 1200 kg\nsolve T [N] ~ 1000:\n  T = (if m > 1000 kg then 1.3 else 1.1) * m * g0\nend\n",
    );
    assert_close(si(&sheet, "T"), 1.3 * 1200.0 * G0, 1e-12);
    // A run whose rate's branch never switches: constant acceleration,
    // x = a t²/2 (closed form).
    let run_sheet = run_clean(
        "m = 10 kg\nF = 50 N\nsimulate t from 0 s to 2 s:\n  x' = v\n  v' = (if m < 20 kg then F else 2 * F) / m\n  x(0) = 0 m\n  v(0) = 0 m/s\nend\nx_end [m] = x at end\n",
    );
    assert_close(si(&run_sheet, "x_end"), 0.5 * 5.0 * 4.0, 1e-9);
}

#[test]
fn branches_of_different_dimensions_are_an_error_whichever_is_taken() {
    for v in ["0.1", "2"] {
        let sheet = run(&format!(
            "v = {v} m/s\nx = if v < 1 m/s then 2 m else 3 s\n"
        ));
        assert_eq!(codes(&sheet), ["branch-dimensions"], "v = {v}");
    }
    // A branch not taken may fail for its values; its dimension still counts.
    let sheet = run_clean("x = -1 m^2\ny [m] = if x < 0 m^2 then 0 m else sqrt(x)\n");
    assert_eq!(si(&sheet, "y"), 0.0);
    let sheet = run("x = 1 m^2\ny = if x > 0 m^2 then 1 m else 1 / (x - x)\n");
    assert_eq!(codes(&sheet), ["branch-dimensions"]);
}

#[test]
fn tests_compare_quantities_of_one_dimension() {
    let sheet = run("v = 1 m/s\nx = if v < 1 kg then 1 else 2\n");
    assert_eq!(codes(&sheet), ["condition-dimensions"]);
    let sheet = run("F = vec(1 N, 2 N)\nx = if F > 1 N then 1 else 2\n");
    assert_eq!(codes(&sheet), ["condition-dimensions"]);
    let sheet = run("v = 1 m/s\nx = if v < 2 m/s then 1\n");
    assert_eq!(codes(&sheet), ["parse-error"]);
}

#[test]
fn names_that_begin_like_the_keywords_stay_names() {
    let sheet = run_clean(
        "then_x = 2 m\nelse_y = 3 m\nif_z = 1 m\nand_w = 4 m\norder = 5 m\nnote = 6 m\n\
         total = if then_x < else_y and if_z < and_w or order > note then then_x + else_y else if_z\n",
    );
    assert_close(si(&sheet, "total"), 5.0, 1e-15);
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(48))]

    /// Random speeds and loads: the sheet's piecewise value is the Rust one.
    #[test]
    fn a_piecewise_value_matches_rust_at_random_points(v in 0.0f64..2.0, m in 1.0f64..5000.0) {
        let source = format!(
            "v_hoist = {v} m/s\nm_load = {m} kg\n\
             phi_dyn = if v_hoist <= 0.25 m/s then 1.10 else if v_hoist <= 1 m/s then 1.25 else 1.40\n\
             T_rope [kN] = phi_dyn * m_load * g0\n"
        );
        let sheet = run_clean(&source);
        let expected = dynamic_factor(v) * m * G0;
        let actual = si(&sheet, "T_rope");
        prop_assert!((actual - expected).abs() <= 1e-14 * expected);
    }
}

#[test]
fn a_chain_of_tests_past_the_limit_is_refused_not_a_crash() {
    // 64 `if`s in a statement are allowed; more is a parse error naming the
    // limit (as bracket nesting is), never a stack overflow.
    let chain = |n: usize| {
        let mut formula = String::from("x = 1 m\ny = ");
        for k in 0..n {
            formula.push_str(&format!("if x < {k} m then {k} else "));
        }
        formula.push_str("0\n");
        formula
    };
    let sheet = run_clean(&chain(64));
    assert_eq!(si(&sheet, "y"), 2.0);
    let sheet = run(&chain(10_000));
    assert_eq!(codes(&sheet), ["parse-error"]);
    let nots = format!(
        "x = 1 m\ny = if {} x < 2 m then 1 else 0\n",
        "not ".repeat(10_000)
    );
    assert_eq!(codes(&run(&nots)), ["parse-error"]);
}

#[test]
fn the_lints_read_both_branches() {
    // A rounded gravity in the branch not taken is still found.
    let sheet = heftsheet::run(
        "m_part = 50 kg\nv = 0.5 m/s\nF [N] = if v > 1 m/s then m_part * 9.81 m/s^2 else m_part * g0\n",
    );
    assert!(
        codes(&sheet).contains(&"rounded-gravity"),
        "{:?}",
        codes(&sheet)
    );
}

#[test]
fn a_rate_that_switches_branch_during_a_run_fails_and_says_why() {
    // The drive force drops at t = 2 s: a jump in the rate, which the
    // error control cannot step over; never a silently wrong run.
    let sheet = run(
        "m = 10 kg\nF = 50 N\nsimulate t from 0 s to 10 s:\n  x' = v\n  v' = (if t < 2 s then F else 0 N) / m\n  x(0) = 0 m\n  v(0) = 0 m/s\nend\nv_end [m/s] = v at end\n",
    );
    let failure = sheet
        .diagnostics
        .iter()
        .find(|d| d.code.as_str() == "integration-failed")
        .expect("the run fails");
    assert!(
        failure
            .help
            .as_deref()
            .unwrap_or("")
            .contains("switches branch")
    );
    assert!(
        sheet
            .cell("v_end")
            .is_some_and(|c| c.status != heftsheet::eval::CellStatus::Ok)
    );
}
