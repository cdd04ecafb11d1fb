//! Parts lists and lifts through the library API: the centre of gravity
//! against Σ mᵢ rᵢ / Σ mᵢ, the lift loads against the lever rule and the
//! planar statics (a property over generated lifts: the loads add up to
//! the weight and their moment about the centre of gravity vanishes), the
//! tolerances and load cases reaching the loads, and the diagnostics of a
//! lift that tips.

use heftsheet::eval::CheckStatus;
use proptest::prelude::*;

use crate::common::{self, assert_close, codes, run, run_clean, si};

/// Standard gravity, 9.80665 m/s² exactly (3rd CGPM, 1901).
const G0: f64 = 9.80665;

fn skid(pump_mass: &str, motor_shift: &str) -> String {
    format!(
        "parts skid \"pump skid\":\n\
         \x20 pump  : m = {pump_mass}, r = vec(1.20 m, 0.40 m)  \"pump and base\"\n\
         \x20 motor : m = 460 kg, r = vec(2.10 m + dx_motor, 0.40 m)\n\
         \x20 frame : m = 390 kg, r = vec(1.50 m, 0.40 m)\n\
         end\n\
         dx_motor = {motor_shift}\n\
         m_skid = sum(skid: m)\n\
         r_cg = sum(skid: m * r) / sum(skid: m)\n\
         x_cg = r_cg.x\n\
         x_far = max(skid: r.x)\n\
         x_near = min(skid: r.x)\n\
         n_items = count(skid) * 1\n\
         W_skid = m_skid * g0\n\
         lift pick of W_skid at r_cg \"spreader\":\n\
         \x20 A = vec(0.25 m, 0.40 m)\n\
         \x20 B = vec(3.35 m, 0.40 m)\n\
         end\n"
    )
}

#[test]
fn the_centre_of_gravity_is_the_mass_weighted_mean_position() {
    let evaluated = run_clean(&skid("820 kg", "0 m"));
    // Closed form Σ mᵢ xᵢ / Σ mᵢ; exactly 507/334 m (Python fractions.Fraction).
    let (masses, xs) = ([820.0, 460.0, 390.0], [1.20, 2.10, 1.50]);
    let total: f64 = masses.iter().sum();
    let moment: f64 = masses.iter().zip(xs).map(|(m, x)| m * x).sum();
    assert_close(si(&evaluated, "m_skid"), 1670.0, 1e-15);
    assert_close(si(&evaluated, "x_cg"), moment / total, 1e-14);
    assert_close(si(&evaluated, "x_cg"), 507.0 / 334.0, 1e-14);
    assert_close(si(&evaluated, "x_far"), 2.10, 1e-15);
    assert_close(si(&evaluated, "x_near"), 1.20, 1e-15);
    assert_close(si(&evaluated, "n_items"), 3.0, 0.0);
}

#[test]
fn two_point_loads_follow_the_lever_rule() {
    let evaluated = run_clean(&skid("820 kg", "0 m"));
    // Lever rule along AB: R_A = W (x_B − x_cg) / (x_B − x_A), R_B = W − R_A.
    let weight = 1670.0 * G0;
    let x_cg = 507.0 / 334.0;
    let (x_a, x_b) = (0.25, 3.35);
    assert_close(
        si(&evaluated, "pick_A"),
        weight * (x_b - x_cg) / (x_b - x_a),
        1e-13,
    );
    assert_close(
        si(&evaluated, "pick_B"),
        weight * (x_cg - x_a) / (x_b - x_a),
        1e-13,
    );
    // Python fractions.Fraction, exactly: 9678.530862903226 N and 6698.5746370967745 N.
    assert_close(si(&evaluated, "pick_A"), 9678.530862903226, 1e-13);
    assert_close(si(&evaluated, "pick_B"), 6698.5746370967745, 1e-13);
}

#[test]
fn three_point_loads_solve_the_planar_statics() {
    let source = "W = 16377.1055 N\n\
                  lift lugs of W at vec(507 m / 334, 0.40 m):\n\
                  \x20 P = vec(0.20 m, 0.10 m)\n\
                  \x20 Q = vec(3.10 m, 0.20 m)\n\
                  \x20 S = vec(1.60 m, 1.00 m)\n\
                  end\n";
    let evaluated = run_clean(source);
    // sympy Matrix.LUsolve of [1 1 1; x_P x_Q x_S; y_P y_Q y_S] R = W (1, x_cg, y_cg),
    // exact rationals, printed to 15 digits.
    assert_close(si(&evaluated, "lugs_P"), 6402.51165587044, 1e-13);
    assert_close(si(&evaluated, "lugs_Q"), 5080.00351214575, 1e-13);
    assert_close(si(&evaluated, "lugs_S"), 4894.59033198381, 1e-13);
}

#[test]
fn a_tolerance_on_a_part_reaches_the_lift_loads() {
    let toleranced = run(&skid("820 kg ± 5 %", "0 m"));
    let range = toleranced.ranges[toleranced.sheet().names["pick_A"]]
        .clone()
        .expect("a range for pick_A");
    // Oracle: the sheet with the pump's mass written at each end of its tolerance.
    let low = si(&run_clean(&skid("779 kg", "0 m")), "pick_A");
    let high = si(&run_clean(&skid("861 kg", "0 m")), "pick_A");
    assert_close(range.low, low.min(high), 1e-12);
    assert_close(range.high, low.max(high), 1e-12);
}

#[test]
fn a_load_case_moves_the_loads() {
    let mut source = skid("820 kg", "0 m");
    source.push_str(
        "check pick_B <= 6.8 kN \"right lug\"\n\
         case shifted \"motor moved to the far end\":\n\
         \x20 dx_motor = 1.0 m\n\
         end\n",
    );
    let evaluated = run(&source);
    // As written 6.699 kN passes; with the motor 1 m further the load on B is
    // the lever rule with x_cg moved by 460 kg · 1 m / 1670 kg.
    let x_cg = 507.0 / 334.0 + 460.0 / 1670.0;
    let shifted = 1670.0 * G0 * (x_cg - 0.25) / 3.10;
    assert!(shifted > 6800.0, "the case must fail the check: {shifted}");
    assert_eq!(evaluated.checks[0].status, CheckStatus::Failed);
    let case = &evaluated.cases[0];
    let written = run_clean(&skid("820 kg", "1.0 m"));
    assert_close(si(&written, "pick_B"), shifted, 1e-13);
    assert!(case.evaluated);
}

#[test]
fn a_centre_of_gravity_beyond_the_points_tips_the_load() {
    let source = "W = 10 kN\n\
                  lift overhang of W at vec(4 m, 0 m):\n\
                  \x20 A = vec(0 m, 0 m)\n\
                  \x20 B = vec(3 m, 0 m)\n\
                  end\n";
    let evaluated = run(source);
    assert_eq!(codes(&evaluated), ["lift-tips"]);
    // Lever rule: R_A = W (3 − 4) / 3 < 0, the push-down the message names.
    assert_close(si(&evaluated, "overhang_A"), -10_000.0 / 3.0, 1e-14);
}

#[test]
fn a_tolerance_that_carries_the_centre_past_a_point_tips_the_load() {
    let source = "W = 10 kN\n\
                  x_cg = 2.9 m ± 0.2 m\n\
                  lift near_end of W at vec(x_cg, 0 m):\n\
                  \x20 A = vec(0 m, 0 m)\n\
                  \x20 B = vec(3 m, 0 m)\n\
                  end\n";
    let evaluated = run(source);
    let tips: Vec<_> = evaluated
        .diagnostics
        .iter()
        .filter(|d| d.code.as_str() == "lift-tips")
        .collect();
    assert_eq!(tips.len(), 1, "{:?}", codes(&evaluated));
    assert!(tips[0].message.contains("low end of its tolerances"));
}

#[test]
fn min_and_max_of_values_still_work() {
    let evaluated = run_clean("a = 2 m\nb = 3 m\nc = max(a, b)\nd = min(a, b, 1 m)\n");
    assert_close(si(&evaluated, "c"), 3.0, 0.0);
    assert_close(si(&evaluated, "d"), 1.0, 0.0);
}

#[test]
fn a_cell_named_like_the_keywords_is_a_cell() {
    let evaluated = run_clean("lift = 2 m\nparts = 3\nx = lift * parts\n");
    assert_close(si(&evaluated, "x"), 6.0, 0.0);
}

#[test]
fn the_notebook_recomputes_an_edited_aggregate() {
    let source = skid("820 kg", "0 m");
    let mut live = heftsheet::LiveSheet::open(&source);
    let line = source
        .lines()
        .position(|line| line.starts_with("m_skid"))
        .expect("the m_skid line");
    live.replace_line(line, "m_skid = sum(skid: m) + 10 kg")
        .expect("the edit applies");
    let id = live.sheet().names["m_skid"];
    let value = live.cell(id).value.expect("m_skid has a value");
    assert_close(value.si, 1680.0, 1e-15);
    let full = run(&live.text());
    assert_close(si(&full, "m_skid"), 1680.0, 1e-15);
}

/// A lift of `n_points` points at generated positions, carrying `weight`
/// at `centre`.
fn lift_sheet(weight: f64, centre: (f64, f64), points: &[(f64, f64)]) -> String {
    let mut source = format!(
        "W = {weight:e} N\nlift gen of W at vec({:e} m, {:e} m):\n",
        centre.0, centre.1
    );
    for (k, (x, y)) in points.iter().enumerate() {
        source.push_str(&format!("  P{k} = vec({x:e} m, {y:e} m)\n"));
    }
    source.push_str("end\n");
    source
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(128))]

    /// Statics as the oracle: for any determinate lift, the loads add up to
    /// the weight and their moment about the centre of gravity vanishes
    /// (Σ Rᵢ (pᵢ − g) = 0), whether or not the centre lies between them.
    #[test]
    fn lift_loads_balance_the_weight_and_its_moment(
        weight in 100.0f64..1e6,
        centre in (-5.0f64..5.0, -5.0f64..5.0),
        points in prop::collection::vec((-5.0f64..5.0, -5.0f64..5.0), 2..=3),
    ) {
        let points = if points.len() == 2 {
            // Two points: the centre on their line (else the load rolls).
            let (a, b) = (points[0], points[1]);
            prop_assume!(libm::hypot(b.0 - a.0, b.1 - a.1) > 0.1);
            points
        } else {
            let (a, b, c) = (points[0], points[1], points[2]);
            let area = (b.0 - a.0) * (c.1 - a.1) - (b.1 - a.1) * (c.0 - a.0);
            prop_assume!(area.abs() > 0.5);
            points
        };
        let centre = if points.len() == 2 {
            let (a, b) = (points[0], points[1]);
            let t = centre.0 / 5.0;
            (a.0 + t * (b.0 - a.0), a.1 + t * (b.1 - a.1))
        } else {
            centre
        };
        let evaluated = run(&lift_sheet(weight, centre, &points));
        let loads: Vec<f64> = (0..points.len()).map(|k| si(&evaluated, &format!("gen_P{k}"))).collect();
        let total: f64 = loads.iter().sum();
        prop_assert!((total - weight).abs() <= 1e-9 * weight, "ΣR = {total}, W = {weight}");
        let size = points.iter().map(|p| p.0.abs().max(p.1.abs())).fold(1.0, f64::max);
        let moment_x: f64 = loads.iter().zip(&points).map(|(r, p)| r * (p.0 - centre.0)).sum();
        let moment_y: f64 = loads.iter().zip(&points).map(|(r, p)| r * (p.1 - centre.1)).sum();
        let scale = size * loads.iter().map(|r| r.abs()).sum::<f64>();
        prop_assert!(moment_x.abs() <= 1e-9 * scale && moment_y.abs() <= 1e-9 * scale,
            "moment about the centre ({moment_x}, {moment_y}) for loads {loads:?}");
        // A negative load is reported as the load tipping, never silently.
        let tips = evaluated.diagnostics.iter().any(|d| d.code.as_str() == "lift-tips");
        prop_assert_eq!(tips, loads.iter().any(|r| *r < 0.0));
    }
}

#[test]
fn the_demo_skid_sheet_is_clean() {
    let source = common::read_file(std::path::Path::new("sheets/pump_skid.heft"));
    let evaluated = run(&source);
    assert!(evaluated.diagnostics.is_empty(), "{:?}", codes(&evaluated));
}
