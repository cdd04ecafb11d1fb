//! Simulate blocks against closed-form solutions of their equations of
//! motion. Each check names where its expected value comes from; tabulated
//! values were computed from the closed forms in 40-digit arithmetic and are
//! given to 10 significant figures.

// Reference values here come from std's maths functions, independent of
// the libm that heft uses.
#![allow(clippy::disallowed_methods)]

use heftsheet::base::{Code, Severity};
use heftsheet::blocks::evaluate_source;
use heftsheet::eval::{Evaluated, RunStatus};

/// g0, exactly (3rd CGPM, 1901).
const G0: f64 = 9.80665;

fn evaluate_clean(source: &str) -> Evaluated {
    let evaluated = evaluate_source(source);
    let findings: Vec<String> = evaluated
        .diagnostics
        .iter()
        .filter(|d| d.severity >= Severity::Warning)
        .map(|d| format!("{}: {}", d.code, d.message))
        .collect();
    assert!(findings.is_empty(), "{findings:?}");
    evaluated
}

/// A cell's value in SI units.
fn si(evaluated: &Evaluated, name: &str) -> f64 {
    evaluated
        .cell(name)
        .and_then(|cell| cell.value)
        .unwrap_or_else(|| panic!("`{name}` has no value"))
        .si
}

#[track_caller]
fn assert_relative(actual: f64, expected: f64, tolerance: f64, what: &str) {
    let error = ((actual - expected) / expected).abs();
    assert!(
        error <= tolerance,
        "{what}: {actual} vs {expected}, relative error {error:e} > {tolerance:e}"
    );
}

/// A 5 kg test weight falling from rest with drag c v², c = 0.02 kg/m.
fn drop_sheet(tolerance: &str, until: &str, extra: &str) -> String {
    format!(
        "m = 5 kg\nc = 0.02 kg/m\nv_t = sqrt(m * g0 / c)\n\
         simulate t from 0 s to {until}:\n  x' = v\n  v' = g0 - c / m * v * abs(v)\n  x(0) = 0 m\n  v(0) = 0 m/s\n  tolerance {tolerance}\n{extra}end\n"
    )
}

#[test]
fn the_hyperbolic_closed_form_of_a_drag_drop_written_in_the_sheet_agrees_with_its_run() {
    // m v' = m g − c v² from rest (standard result): v = v_t tanh(g t / v_t),
    // x = (v_t²/g) ln cosh(g t / v_t), so the time to fall h is
    // t = (v_t / g) acosh(exp(g h / v_t²)). The sheet writes the closed form
    // with its own tanh, cosh and acosh; the test checks both against the
    // run and against std's hyperbolic functions.
    let source = format!(
        "{}h = 40 m\n\
         t_fall = v_t / g0 * acosh(exp(g0 * h / v_t^2))\n\
         t_end = t at stop\n\
         v_end = v at stop\n\
         v_fall = v_t * tanh(g0 * t_end / v_t)\n\
         x_fall = v_t^2 / g0 * ln(cosh(g0 * t_end / v_t))\n",
        drop_sheet("1e-10", "10 s", "  stop when x >= 40 m\n")
    );
    let evaluated = evaluate_clean(&source);
    assert_eq!(evaluated.runs[0].status, RunStatus::Stopped);
    let v_t = (5.0 * G0 / 0.02_f64).sqrt();
    let t_closed = v_t / G0 * (G0 * 40.0 / (v_t * v_t)).exp().acosh();
    assert_relative(
        si(&evaluated, "t_fall"),
        t_closed,
        1e-14,
        "acosh in the sheet",
    );
    assert_relative(
        si(&evaluated, "t_end"),
        t_closed,
        1e-8,
        "the run's stop time",
    );
    assert_relative(
        si(&evaluated, "v_fall"),
        si(&evaluated, "v_end"),
        1e-8,
        "tanh vs the run",
    );
    assert_relative(si(&evaluated, "x_fall"), 40.0, 1e-8, "ln cosh vs the stop");
}

#[test]
fn quadratic_drag_from_rest_follows_the_closed_form_within_the_tolerance() {
    // Closed form of m v' = m g − c v² from rest (standard result):
    // v_t = √(m g / c), v = v_t tanh(g t / v_t), x = (v_t²/g) ln cosh(g t / v_t).
    let v_t = (5.0 * G0 / 0.02_f64).sqrt();
    for tolerance in [1e-6, 1e-8, 1e-10] {
        let source = drop_sheet(
            &format!("{tolerance:e}"),
            "10 s",
            "  table at 0.5 s, 1 s, 2 s, 5 s, 10 s\n",
        );
        let evaluated = evaluate_clean(&source);
        let run = &evaluated.runs[0];
        assert_eq!(run.status, RunStatus::Reached);
        let mut n_rows = 0;
        for row in run.rows.iter().filter(|row| row.time > 0.0) {
            let t = row.time;
            let x = row.values[0]
                .and_then(|v| v.scalar())
                .map_or(f64::NAN, |q| q.si);
            let v = row.values[1]
                .and_then(|v| v.scalar())
                .map_or(f64::NAN, |q| q.si);
            let v_exact = v_t * (G0 * t / v_t).tanh();
            let x_exact = v_t * v_t / G0 * (G0 * t / v_t).cosh().ln();
            assert_relative(v, v_exact, tolerance, &format!("v({t} s) at {tolerance:e}"));
            assert_relative(x, x_exact, tolerance, &format!("x({t} s) at {tolerance:e}"));
            n_rows += 1;
        }
        assert_eq!(n_rows, 5);
    }
}

#[test]
fn quadratic_drag_matches_tabulated_values() {
    // Closed form above, evaluated in 40-digit arithmetic (10 s.f.):
    // t, v(t) in m/s, x(t) in m.
    let table = [
        (0.5, 4.887359228, 1.223832924),
        (1.0, 9.680403343, 4.871599590),
        (2.0, 18.64802100, 19.12087941),
        (5.0, 37.50626179, 106.6005242),
        (10.0, 47.66386087, 326.5714493),
    ];
    let source = drop_sheet("1e-10", "10 s", "")
        + "v1 = v at 0.5 s\nx1 = x at 0.5 s\nv2 = v at 1 s\nx2 = x at 1 s\nv3 = v at 2 s\nx3 = x at 2 s\nv4 = v at 5 s\nx4 = x at 5 s\nv5 = v at end\nx5 = x at end\n";
    let evaluated = evaluate_clean(&source);
    for (index, (t, v, x)) in table.into_iter().enumerate() {
        // 10 significant figures, so a relative error of 1e-9 at most.
        assert_relative(
            si(&evaluated, &format!("v{}", index + 1)),
            v,
            1e-9,
            &format!("v({t} s)"),
        );
        assert_relative(
            si(&evaluated, &format!("x{}", index + 1)),
            x,
            1e-9,
            &format!("x({t} s)"),
        );
    }
}

#[test]
fn terminal_speed_and_the_time_to_reach_99_percent_of_it() {
    // Closed form: v_t = √(m g / c) = 49.51426562 m/s; 99 % of v_t is reached
    // at t = (v_t/g) artanh(0.99) = 13.36308021 s, after falling
    // (v_t²/2g) ln(1/(1 − 0.99²)) = 489.6294434 m (40-digit arithmetic).
    let source = drop_sheet("1e-9", "60 s", "  event near when v >= 0.99 * v_t\n")
        + "v_end [m/s] = v at end\nt_near [s] = t at near\nx_near [m] = x at near\n";
    let evaluated = evaluate_clean(&source);
    assert_relative(si(&evaluated, "v_t"), 49.51426562, 1e-9, "v_t");
    // tanh(60 s · g / v_t) = 1 − 1e-10: the run ends at terminal speed.
    assert_relative(si(&evaluated, "v_end"), 49.51426562, 1e-9, "v at 60 s");
    assert_relative(
        si(&evaluated, "t_near"),
        13.36308021,
        1e-9,
        "time to 99 % of v_t",
    );
    assert_relative(
        si(&evaluated, "x_near"),
        489.6294434,
        1e-9,
        "fall to 99 % of v_t",
    );
}

#[test]
fn a_stop_condition_is_located_inside_the_step_to_the_tolerance() {
    // Inverting the closed form: x reaches h at t = (v_t/g) acosh(exp(g h / v_t²)),
    // where the speed is v_t tanh(g t / v_t).
    let v_t = (5.0 * G0 / 0.02_f64).sqrt();
    let h = 100.0;
    let t_exact = v_t / G0 * (G0 * h / (v_t * v_t)).exp().acosh();
    let v_exact = v_t * (G0 * t_exact / v_t).tanh();
    for tolerance in [1e-6, 1e-9] {
        let source = drop_sheet(
            &format!("{tolerance:e}"),
            "20 s",
            "  stop when x >= 100 m\n",
        ) + "t_floor [s] = t at stop\nv_floor [m/s] = v at stop\nx_floor [m] = x at stop\n";
        let evaluated = evaluate_clean(&source);
        assert_eq!(evaluated.runs[0].status, RunStatus::Stopped);
        assert_relative(si(&evaluated, "t_floor"), t_exact, tolerance, "stop time");
        assert_relative(
            si(&evaluated, "v_floor"),
            v_exact,
            tolerance,
            "speed at the stop",
        );
        assert_relative(
            si(&evaluated, "x_floor"),
            h,
            tolerance,
            "height at the stop",
        );
        // The stop is not at a step boundary found by stepping past it: the
        // run ends exactly where the condition was located.
        assert_eq!(
            evaluated.runs[0].final_time(),
            Some(si(&evaluated, "t_floor"))
        );
    }
}

/// The test fixture of 4 kg on 1600 N/m from x0 = 0.02 m, v0 = 0.5 m/s,
/// with damping `c` (N·s/m).
fn spring_sheet(c: f64, periods: f64, tolerance: &str, extra: &str) -> String {
    format!(
        "m = 4 kg\nk = 1600 N/m\nc = {c} N*s/m\n\
         simulate t from 0 s to {:.12} s:\n  x' = v\n  v' = -(k * x + c * v) / m\n  x(0) = 0.02 m\n  v(0) = 0.5 m/s\n  tolerance {tolerance}\n{extra}end\n",
        periods * std::f64::consts::PI / 10.0
    )
}

#[test]
fn undamped_spring_mass_position_amplitude_and_period() {
    // Standard result of linear vibration: x = x0 cos ωt + (v0/ω) sin ωt with
    // ω = √(k/m) = 20 rad/s, amplitude X = √(x0² + (v0/ω)²) = 0.03201562119 m,
    // period 2π/ω = 0.3141592654 s; tabulated x(t) from 40-digit arithmetic.
    let tolerance = 1e-8;
    let source = spring_sheet(0.0, 10.0, "1e-8", "  event rise when x >= 0 m\n")
        + "x1 = x at 0.05 s\nx2 = x at 0.1 s\nx3 = x at 0.25 s\nx4 = x at 0.5 s\nX = max of x\nX_low = min of x\nt_peak = t at max of x\n";
    let evaluated = evaluate_clean(&source);
    let amplitude = 0.03201562119;
    for (name, expected) in [
        ("x1", 0.03184282074),
        ("x2", 0.01440949894),
        ("x3", -0.01829986316),
        ("x4", -0.03038195835),
    ] {
        // Errors are bounded relative to the amplitude (errors are scaled by
        // each state's largest size).
        let error = (si(&evaluated, name) - expected).abs();
        assert!(error <= tolerance * amplitude, "{name}: error {error:e}");
    }
    assert_relative(si(&evaluated, "X"), amplitude, tolerance, "amplitude");
    assert_relative(
        si(&evaluated, "X_low"),
        -amplitude,
        tolerance,
        "lowest point",
    );
    // The peak is where ωt = φ + 2πn, φ = atan2(v0/ω, x0) = 0.8960553846 rad.
    let phase = 0.8960553846;
    let t_peak = si(&evaluated, "t_peak");
    let cycles = (t_peak * 20.0 - phase) / (2.0 * std::f64::consts::PI);
    assert!((cycles - cycles.round()).abs() < 1e-3, "peak at {t_peak} s");
    // Successive upward zero crossings are one period apart. x starts
    // positive, so the condition holds at the start and happens there first.
    let crossings = &evaluated.runs[0].events[0].times;
    assert_eq!(crossings.first(), Some(&0.0));
    let crossings = &crossings[1..];
    assert!(crossings.len() >= 9, "{crossings:?}");
    for pair in crossings.windows(2) {
        assert_relative(pair[1] - pair[0], 0.3141592654, tolerance, "period");
    }
}

#[test]
fn damped_spring_mass_decays_by_the_logarithmic_decrement() {
    // Standard result: ζ = c / (2√(k m)) = 0.3, ω_d = ω√(1 − ζ²) =
    // 19.07878403 rad/s, damped period 0.3293283942 s, and successive peaks
    // shrink by the log decrement 2πζ/√(1 − ζ²) = 1.975970365; tabulated
    // x(t) from the closed form in 40-digit arithmetic.
    let tolerance = 1e-9;
    let source = spring_sheet(48.0, 6.0, "1e-9", "  event peak when v <= 0 m/s\n")
        + "x1 = x at 0.05 s\nx2 = x at 0.1 s\nx3 = x at 0.25 s\nx4 = x at 0.5 s\n";
    let evaluated = evaluate_clean(&source);
    for (name, expected) in [
        ("x1", 0.02820826114),
        ("x2", 0.01320074965),
        ("x3", -0.006983521036),
        ("x4", -0.001174239163),
    ] {
        let error = (si(&evaluated, name) - expected).abs();
        // Bounded relative to the largest size x reaches (about 0.029 m).
        assert!(error <= tolerance * 0.03, "{name}: error {error:e}");
    }
    let run = &evaluated.runs[0];
    let Some(trajectory) = &run.trajectory else {
        panic!("the run has a trajectory");
    };
    let peaks: Vec<(f64, f64)> = run.events[0]
        .times
        .iter()
        .map(|&t| {
            let mut state = [0.0; 2];
            trajectory.state_at(t, &mut state);
            (t, state[0])
        })
        .collect();
    assert!(peaks.len() >= 3, "{peaks:?}");
    for pair in peaks.windows(2) {
        assert_relative(pair[1].0 - pair[0].0, 0.3293283942, 1e-7, "damped period");
        // Relative error of a ratio of two small peaks: looser than the tolerance.
        assert_relative(
            (pair[0].1 / pair[1].1).ln(),
            1.975970365,
            1e-6,
            "log decrement",
        );
    }
}

#[test]
fn constant_force_motion_in_fps_units_is_exact_to_rounding() {
    // Newton's second law with a constant force: a = F/m, x = v0 t + a t²/2.
    // 20 lbf on 180 lbm is a = 20 g_c/180 ft/s² (lbf = lbm·g0 by definition,
    // NIST SP 811 App. B); the crate reaches 12 ft at the positive root of
    // a t²/2 + v0 t − 12 ft = 0.
    let source = "m = 180 lbm\nF = 20 lbf\n\
        simulate t from 0 s to 10 s:\n  x' = v\n  v' = F / m\n  x(0) = 0 ft\n  v(0) = 1.5 ft/s\n  stop when x >= 12 ft\nend\n\
        t_12 [s] = t at stop\nv_12 [ft/s] = v at stop\n";
    let evaluated = evaluate_clean(source);
    let g_c = G0 / 0.3048; // ft/s², exact by the 1959 definition of the foot
    let a = 20.0 * g_c / 180.0; // ft/s²
    let (v0, d) = (1.5, 12.0);
    let t_stop = (-v0 + (v0 * v0 + 2.0 * a * d).sqrt()) / a;
    assert_relative(si(&evaluated, "t_12"), t_stop, 1e-12, "time to 12 ft");
    assert_relative(
        si(&evaluated, "v_12") / 0.3048,
        v0 + a * t_stop,
        1e-12,
        "speed at 12 ft",
    );
}

#[test]
fn a_time_after_a_stop_is_not_in_the_run() {
    let source = "a = 2 m/s^2\nsimulate t from 0 s to 10 s:\n  x' = v\n  v' = a\n  x(0) = 0 m\n  v(0) = 0 m/s\n  stop when x >= 1 m\nend\nlate = x at 3 s\n";
    let evaluated = evaluate_source(source);
    let codes: Vec<Code> = evaluated.diagnostics.iter().map(|d| d.code).collect();
    assert_eq!(codes, vec![Code::NotInRun]);
    // x = a t²/2 reaches 1 m at t = 1 s; the message says where the run ended.
    assert!(
        evaluated.diagnostics[0].message.contains("1 s"),
        "{}",
        evaluated.diagnostics[0].message
    );
}

#[test]
fn energy_of_an_undamped_oscillator_holds_over_1000_periods() {
    // Conservation of mechanical energy: k x²/2 + m v²/2 is constant for the
    // undamped oscillator (closed form). The tolerance bounds the error
    // accumulated over the whole run, so the energy drifts by less than it.
    for (tolerance, text) in [(1e-6, "1e-6"), (1e-8, "1e-8")] {
        let source = spring_sheet(0.0, 1000.0, text, "")
            + "E0 [J] = (k * x^2 / 2 + m * v^2 / 2) at start\nE1 [J] = (k * x^2 / 2 + m * v^2 / 2) at end\n";
        let evaluated = evaluate_clean(&source);
        let (e0, e1) = (si(&evaluated, "E0"), si(&evaluated, "E1"));
        // E = k X²/2 with X = 0.03201562119 m: 0.82 J (closed form).
        assert_relative(e0, 1600.0 * 0.03201562119_f64.powi(2) / 2.0, 1e-9, "E0");
        assert_relative(
            e1,
            e0,
            tolerance,
            &format!("energy after 1000 periods at {text}"),
        );
        assert!(evaluated.runs[0].compiled);
    }
}

#[test]
fn vector_states_fly_a_parabola() {
    // A thrown part under g0 alone: r = r0 + v0 t + g t²/2 (uniformly
    // accelerated motion); it lands (r.y = 0) at t = 2 v0y / g0.
    let source = "v0 = vec(3 m/s, 4 m/s)\n\
        simulate t from 0 s to 5 s:\n  r' = v\n  v' = vec(0 m/s^2, -g0)\n  r(0) = vec(0 m, 0 m)\n  v(0) = v0\n  stop when r.y <= 0 m\nend\n\
        t_land [s] = t at stop\nrange [m] = (r at stop).x\nh_top [m] = max of r.y\n";
    // The stop condition holds at the start (r.y = 0): the run must refuse.
    let refused = evaluate_source(source);
    assert!(
        refused
            .diagnostics
            .iter()
            .any(|d| d.code == Code::BadSimulation),
        "{:?}",
        refused.diagnostics
    );
    let source = source.replace("r(0) = vec(0 m, 0 m)", "r(0) = vec(0 m, 1 mm)");
    let evaluated = evaluate_clean(&source);
    assert!(!evaluated.runs[0].compiled, "vector states are interpreted");
    let g = G0;
    // From 1 mm up: 0.001 + 4 t − g t²/2 = 0.
    let t_land = (4.0 + (16.0 + 2.0 * g * 0.001_f64).sqrt()) / g;
    assert_relative(si(&evaluated, "t_land"), t_land, 1e-9, "time of flight");
    assert_relative(si(&evaluated, "range"), 3.0 * t_land, 1e-9, "range");
    assert_relative(
        si(&evaluated, "h_top"),
        0.001 + 16.0 / (2.0 * g),
        1e-9,
        "highest point",
    );
}

#[test]
fn a_stiff_system_is_reported_instead_of_crawling() {
    // A 1 kg slider on a soft spring with a very strong damper: eigenvalues
    // near −10⁶ s⁻¹ and −10⁻⁴ s⁻¹, the classic stiff pair.
    let source = "m = 1 kg\nk = 100 N/m\nc = 1e6 N*s/m\n\
        simulate t from 0 s to 100 s:\n  x' = v\n  v' = -(k * x + c * v) / m\n  x(0) = 1 m\n  v(0) = 0 m/s\nend\nx_end = x at end\n";
    let evaluated = evaluate_source(source);
    let codes: Vec<Code> = evaluated.diagnostics.iter().map(|d| d.code).collect();
    assert_eq!(codes, vec![Code::StiffSystem]);
    assert_eq!(evaluated.runs[0].status, RunStatus::Failed);
    assert!(evaluated.runs[0].stats.accepted < 10_000);
    assert!(matches!(
        evaluated.cell("x_end").map(|c| c.status),
        Some(heftsheet::eval::CellStatus::Blocked { .. })
    ));
}

#[test]
fn run_queries_read_points_extremes_and_work_inside_formulas_and_checks() {
    let source = "m = 4 kg\nk = 1600 N/m\n\
        simulate t from 0 s to 0.2 s:\n  x' = v\n  v' = -k / m * x\n  x(0) = 0.02 m\n  v(0) = 0 m/s\nend\n\
        x_first [m] = x at start\nF_peak [N] = k * (max of abs(x))\nt_low [s] = t at min of x\n\
        check (max of x) <= 0.03 m \"never further out than it started\"\n";
    let evaluated = evaluate_clean(source);
    assert_eq!(si(&evaluated, "x_first"), 0.02);
    // Released from rest at 0.02 m: the spring force peaks at k · 0.02 m = 32 N,
    // and x is lowest half a period later, at π/ω = π/20 s (closed form).
    assert_relative(si(&evaluated, "F_peak"), 32.0, 1e-6, "peak force");
    assert_relative(
        si(&evaluated, "t_low"),
        std::f64::consts::PI / 20.0,
        1e-4,
        "time of the low point",
    );
    assert_eq!(evaluated.checks[0].passed(), Some(true));
}

mod hostile {
    use heftsheet::blocks::evaluate_source;
    use proptest::prelude::*;

    const HEADS: &[&str] = &[
        "simulate t from 0 s to 2 s:",
        "simulate t from 2 s to 0 s:",
        "simulate t from 0 to 2:",
        "simulate from 0 s to 2 s:",
        "simulate t from 0 kg to 2 s:",
    ];

    const LINES: &[&str] = &[
        "x' = v",
        "v' = -k / m * x",
        "x(0) = 1 m",
        "v(0) = 0 m/s",
        "stop when x <= 0 m",
        "event e when v >= 1 m/s",
        "tolerance 1e-9",
        "tolerance x 1 mm",
        "table every 0.1 s",
        "table at 1 s, 3 s: x, k * x",
        "plot x, v, k * x",
        "x' = v * v",
        "v' = 1 m^2/s^3 / x",
        "y(0) = 2",
        "x'' = 1",
        "stop x",
        "table every 0 s",
        "tolerance -1",
        "v' = (x at end) / (1 s^2)",
        "v' = vec(1 m/s^2, 0 m/s^2)",
        "event e when x >= 1 kg",
        "plot",
    ];

    const AFTER: &[&str] = &[
        "a = x at stop",
        "b = max of v",
        "c = t at e",
        "d = x",
        "f = (x + 1 m) at 1 s",
        "check (min of x) <= 2 m",
    ];

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(96))]
        #[test]
        fn any_mix_of_simulate_lines_is_evaluated_without_panicking(
            head in 0..HEADS.len(),
            lines in proptest::collection::vec(0..LINES.len(), 0..10),
            close in any::<bool>(),
            after in proptest::collection::vec(0..AFTER.len(), 0..4),
        ) {
            let mut sheet = String::from("k = 100 N/m\nm = 1 kg\n");
            sheet.push_str(HEADS[head]);
            sheet.push('\n');
            for line in lines {
                sheet.push_str("  ");
                sheet.push_str(LINES[line]);
                sheet.push('\n');
            }
            if close {
                sheet.push_str("end\n");
            }
            for line in after {
                sheet.push_str(AFTER[line]);
                sheet.push('\n');
            }
            let evaluated = evaluate_source(&sheet);
            for diagnostic in &evaluated.diagnostics {
                prop_assert!(diagnostic.span.end() <= sheet.len());
                prop_assert!(!diagnostic.message.is_empty());
            }
            // Every cell is accounted for: a value, or a status saying why not.
            for cell in evaluated.cells() {
                let has_value = cell.any_value().is_some();
                prop_assert_eq!(has_value, cell.status == heftsheet::eval::CellStatus::Ok, "{}", cell.name);
            }
        }
    }
}

/// A part thrown straight up at `v0` from y = 0 under g0 alone, with the
/// block's other lines in `extra`.
fn throw_sheet(v0: &str, y0: &str, tolerance: &str, extra: &str) -> String {
    format!(
        "v0 = {v0}\n\
         simulate t from 0 s to 5 s:\n  y' = v\n  v' = -g0\n  y(0) = {y0}\n  v(0) = v0\n  tolerance {tolerance}\n{extra}end\n"
    )
}

#[test]
fn a_strict_stop_equal_at_the_start_waits_until_it_is_strictly_true() {
    // Uniformly accelerated motion: y = v0 t − g t²/2 is back at 0, and
    // below it just after, at t = 2 v0 / g (closed form).
    let source = throw_sheet(
        "6 m/s",
        "0 m",
        "1e-9",
        "  stop when y < 0 m \"back below the start\"\n",
    ) + "t_back [s] = t at stop\nv_back [m/s] = v at stop\n";
    let evaluated = evaluate_clean(&source);
    assert_eq!(evaluated.runs[0].status, RunStatus::Stopped);
    let t_back = 2.0 * 6.0 / G0;
    // Located to the tolerance times the run's length (5 s).
    let error = (si(&evaluated, "t_back") - t_back).abs();
    assert!(error <= 1e-9 * 5.0, "stop at {}", si(&evaluated, "t_back"));
    assert_relative(si(&evaluated, "v_back"), -6.0, 1e-9, "speed coming back");
}

#[test]
fn a_strict_event_equal_at_the_start_is_not_recorded_there() {
    // `y < 0 m` is false at the start (y = 0 m exactly) and becomes true at
    // 2 v0 / g; `y <= 0 m` holds at the start and becomes true again then.
    let source = throw_sheet(
        "6 m/s",
        "0 m",
        "1e-9",
        "  event below when y < 0 m\n  event back when y <= 0 m\n",
    );
    let evaluated = evaluate_clean(&source);
    let t_back = 2.0 * 6.0 / G0;
    let below = &evaluated.runs[0].events[0].times;
    assert_eq!(below.len(), 1, "{below:?}");
    assert!((below[0] - t_back).abs() <= 1e-9 * 5.0, "{below:?}");
    let back = &evaluated.runs[0].events[1].times;
    assert_eq!(back.len(), 2, "{back:?}");
    assert_eq!(back[0], 0.0);
    assert!((back[1] - t_back).abs() <= 1e-9 * 5.0, "{back:?}");
}

#[test]
fn a_condition_that_becomes_strictly_true_at_once_happens_at_the_start() {
    // Thrown down from y = 0: y < 0 is false at t = 0 and true at every
    // moment after, so it becomes true at the start itself.
    let source = throw_sheet("-2 m/s", "0 m", "1e-6", "  event below when y < 0 m\n");
    let evaluated = evaluate_clean(&source);
    assert_eq!(evaluated.runs[0].events[0].times, vec![0.0]);
    // As a stop, the run would be empty: refused, and the message says it is
    // equal at the start rather than already true.
    let source = throw_sheet("-2 m/s", "0 m", "1e-6", "  stop when y < 0 m\n");
    let evaluated = evaluate_source(&source);
    let codes: Vec<Code> = evaluated.diagnostics.iter().map(|d| d.code).collect();
    assert_eq!(codes, vec![Code::BadSimulation]);
    let message = &evaluated.diagnostics[0].message;
    assert!(message.contains("equal at the start"), "{message}");
    assert!(message.contains("as soon as the run starts"), "{message}");
    assert_eq!(evaluated.runs[0].status, RunStatus::NotRun);
    // Non-strict and equal at the start: it holds there, as before.
    let source = throw_sheet("6 m/s", "0 m", "1e-6", "  stop when y <= 0 m\n");
    let evaluated = evaluate_source(&source);
    let message = &evaluated.diagnostics[0].message;
    assert!(message.contains("already holds at the start"), "{message}");
}

#[test]
fn a_condition_that_touches_its_threshold_without_crossing_follows_its_strictness() {
    // The left side is t − 1 s before 1 s, exactly 0 s from 1 s to 2 s, and
    // 2 s − t after: it touches zero and turns back without ever being
    // positive. `>= 0 s` holds from 1 s to 2 s (one event, at 1 s); `> 0 s`
    // never holds.
    let source = "simulate t from 0 s to 3 s:\n  x' = 1 m/s\n  x(0) = 0 m\n\
        event touch when min(t - 1 s, 0 s) + min(2 s - t, 0 s) >= 0 s\n\
        event over when min(t - 1 s, 0 s) + min(2 s - t, 0 s) > 0 s\nend\n";
    let evaluated = evaluate_clean(source);
    let touch = &evaluated.runs[0].events[0].times;
    assert_eq!(touch.len(), 1, "{touch:?}");
    assert!((touch[0] - 1.0).abs() <= 1e-12, "{touch:?}");
    assert_eq!(evaluated.runs[0].events[1].times, Vec::<f64>::new());
}

#[test]
fn the_apex_of_a_throw_is_located_to_the_tolerance() {
    // Uniformly accelerated motion: the apex is at t = v0 / g with height
    // v0² / 2g (closed form). Times are located to the tolerance times the
    // run's length (5 s).
    for tolerance in [1e-6, 1e-9, 1e-12] {
        let source = throw_sheet("6 m/s", "0 m", &format!("{tolerance:e}"), "")
            + "t_top [s] = t at max of y\nh_top [m] = max of y\nv_top [m/s] = v at max of y\n";
        let evaluated = evaluate_clean(&source);
        let error = (si(&evaluated, "t_top") - 6.0 / G0).abs();
        assert!(
            error <= tolerance * 5.0,
            "apex time at {tolerance:e}: error {error:e} s"
        );
        assert_relative(
            si(&evaluated, "h_top"),
            36.0 / (2.0 * G0),
            tolerance,
            "apex height",
        );
        // The speed at the apex is zero, to the tolerance times the speed's scale (6 m/s).
        let v_top = si(&evaluated, "v_top").abs();
        assert!(
            v_top <= tolerance * 6.0,
            "speed at the apex at {tolerance:e}: {v_top:e}"
        );
    }
    // The same throw with vector states (interpreted: no exact slope, so the
    // slope comes from differences), drifting sideways at 2 m/s. The speed
    // √(2² + v_y²) is least at the apex too.
    for tolerance in [1e-6, 1e-9, 1e-12] {
        let source = format!(
            "v0 = vec(2 m/s, 6 m/s)\n\
             simulate t from 0 s to 5 s:\n  r' = v\n  v' = vec(0 m/s^2, -g0)\n  r(0) = vec(0 m, 0 m)\n  v(0) = v0\n  tolerance {tolerance:e}\nend\n\
             t_top [s] = t at max of r.y\nt_slow [s] = t at min of mag(v)\n"
        );
        let evaluated = evaluate_clean(&source);
        assert!(!evaluated.runs[0].compiled);
        for name in ["t_top", "t_slow"] {
            let error = (si(&evaluated, name) - 6.0 / G0).abs();
            assert!(
                error <= tolerance * 5.0,
                "{name} with vector states at {tolerance:e}: error {error:e} s"
            );
        }
    }
}

#[test]
fn the_first_peak_of_a_damped_oscillation_is_located_to_the_tolerance() {
    // Damped free vibration (standard result): with σ = ζω = c/2m = 6 s⁻¹,
    // ω_d = √(k/m − σ²), B = (v0 + σ x0)/ω_d, the speed is
    // e^−σt (v0 cos ω_d t − (σB + x0 ω_d) sin ω_d t), so the first peak is at
    // t_p = atan2(v0, σB + x0 ω_d)/ω_d; it is the largest x of the run.
    let (m, k, c, x0, v0) = (4.0_f64, 1600.0_f64, 48.0, 0.02, 0.5);
    let sigma = c / (2.0 * m);
    let omega_d = (k / m - sigma * sigma).sqrt();
    let b = (v0 + sigma * x0) / omega_d;
    let t_peak = v0.atan2(sigma * b + x0 * omega_d) / omega_d;
    let x_peak =
        (-sigma * t_peak).exp() * (x0 * (omega_d * t_peak).cos() + b * (omega_d * t_peak).sin());
    let length = 2.0 * std::f64::consts::PI / 10.0;
    for tolerance in [1e-6, 1e-9, 1e-12] {
        let source = spring_sheet(c, 2.0, &format!("{tolerance:e}"), "")
            + "t_p [s] = t at max of x\nx_p [m] = max of x\nk_p [N] = k * x at max of x\n";
        let evaluated = evaluate_clean(&source);
        let error = (si(&evaluated, "t_p") - t_peak).abs();
        assert!(
            error <= tolerance * length,
            "peak time at {tolerance:e}: error {error:e} s"
        );
        assert_relative(si(&evaluated, "x_p"), x_peak, tolerance, "peak");
        assert_relative(
            si(&evaluated, "k_p"),
            k * x_peak,
            tolerance,
            "spring force at the peak",
        );
    }
}

/// Oracles: a run against itself at half the tolerance, and a condition's
/// outcome against a direct evaluation of its truth.
mod oracle {
    use super::{evaluate_clean, spring_sheet, throw_sheet};
    use crate::common;
    use heftsheet::base::Code;
    use heftsheet::blocks::evaluate_source;
    use heftsheet::eval::{Evaluated, RunReport, RunStatus};
    use heftsheet::syntax::ast::{Expr, ExprKind};
    use heftsheet::units::{Dimension, Value};

    /// The repository's sheets with simulate blocks.
    fn repository_sheets() -> Vec<(String, String)> {
        let mut sheets = Vec::new();
        for folder in ["sheets", "tests/sheets/ok"] {
            for path in common::sheets_in(folder) {
                let text = common::read_file(&path);
                if text
                    .lines()
                    .any(|line| line.trim_start().starts_with("simulate "))
                {
                    sheets.push((path.display().to_string(), text));
                }
            }
        }
        sheets
    }

    /// Generated sheets: drag with a stop and an event, a damped spring's
    /// extremes, a throw with a strict stop, a vector throw; each at two
    /// tolerances (and one with the default tolerance).
    fn generated_sheets() -> Vec<(String, String)> {
        let mut sheets = Vec::new();
        for (index, tolerance) in ["1e-6", "1e-9"].into_iter().enumerate() {
            let mass = 4.0 + 3.0 * index as f64;
            sheets.push((
                format!("generated drop {tolerance}"),
                format!(
                    "m = {mass} kg\nc = 0.02 kg/m\nv_t = sqrt(m * g0 / c)\n\
                     simulate t from 0 s to 30 s:\n  x' = v\n  v' = g0 - c / m * v * abs(v)\n  x(0) = 0 m\n  v(0) = 0 m/s\n  tolerance {tolerance}\n  stop when x >= 500 m\n  event near when v >= 0.9 * v_t\nend\n\
                     t_floor = t at stop\nv_floor = v at stop\nt_near = t at near\nx_near = x at near\nv_mid = v at 3 s\n"
                ),
            ));
            sheets.push((
                format!("generated damped spring {tolerance}"),
                spring_sheet(12.0 + 30.0 * index as f64, 4.0, tolerance, "  event back when x < 0 m\n")
                    + "t_p = t at max of x\nx_p = max of x\nx_low = min of x\nt_low = t at min of x\nF_p = k * x at max of x\nE_end = (k * x^2 / 2 + m * v^2 / 2) at end\nt_back = t at back\n",
            ));
            sheets.push((
                format!("generated throw {tolerance}"),
                throw_sheet("7 m/s", "0 m", tolerance, "  stop when y < 0 m\n")
                    + "t_back = t at stop\nt_top = t at max of y\nh_top = max of y\nv_end = v at end\n",
            ));
            sheets.push((
                format!("generated vector throw {tolerance}"),
                format!(
                    "v0 = vec(3 m/s, 5 m/s)\n\
                     simulate t from 0 s to 3 s:\n  r' = v\n  v' = vec(0 m/s^2, -g0)\n  r(0) = vec(0 m, 1 m)\n  v(0) = v0\n  tolerance {tolerance}\n  stop when r.y <= 0 m\nend\n\
                     t_land = t at stop\nx_land = (r at stop).x\nt_top = t at max of r.y\n"
                ),
            ));
        }
        sheets.push((
            "generated drop, default tolerance".to_string(),
            "m = 5 kg\nc = 0.02 kg/m\n\
             simulate t from 0 s to 10 s:\n  x' = v\n  v' = g0 - c / m * v * abs(v)\n  x(0) = 0 m\n  v(0) = 0 m/s\n  stop when x >= 100 m\nend\n\
             t_floor = t at stop\nv_top = max of v\n"
                .to_string(),
        ));
        sheets
    }

    /// The runs in file order (the order of their blocks in the text).
    fn runs_in_file_order(evaluated: &Evaluated) -> Vec<&RunReport> {
        let mut runs: Vec<&RunReport> = evaluated.runs.iter().collect();
        runs.sort_by_key(|run| run.statement);
        runs
    }

    /// The sheet with each block's relative tolerance halved: its
    /// `tolerance` line replaced, or one added after the block's head.
    fn with_halved_tolerances(source: &str, evaluated: &Evaluated) -> String {
        let runs = runs_in_file_order(evaluated);
        let mut out = String::new();
        let mut block: Option<(usize, bool)> = None; // (run index, tolerance written)
        let mut n_blocks = 0;
        for line in source.lines() {
            let trimmed = line.trim();
            let head = trimmed.starts_with("simulate ");
            if head {
                block = Some((n_blocks, false));
                n_blocks += 1;
                out.push_str(line);
                out.push('\n');
                let run = runs[n_blocks - 1];
                let written = source[run.span.start()..run.span.end()]
                    .lines()
                    .any(|l| relative_tolerance_line(l.trim(), run));
                if !written {
                    out.push_str(&format!("  tolerance {:e}\n", run.relative_tolerance / 2.0));
                }
                continue;
            }
            if let Some((index, _)) = block {
                if trimmed == "end" || trimmed.starts_with("end ") {
                    block = None;
                } else if relative_tolerance_line(trimmed, runs[index]) {
                    out.push_str(&format!(
                        "  tolerance {:e}\n",
                        runs[index].relative_tolerance / 2.0
                    ));
                    continue;
                }
            }
            out.push_str(line);
            out.push('\n');
        }
        out
    }

    /// `tolerance 1e-8` (not `tolerance x 1 mm`, which names a state).
    fn relative_tolerance_line(line: &str, run: &RunReport) -> bool {
        let Some(rest) = line.strip_prefix("tolerance ") else {
            return false;
        };
        let first = rest.split_whitespace().next().unwrap_or("");
        !run.states.iter().any(|state| state.column.label == first)
    }

    /// The run queries a cell's formula holds.
    fn run_queries(expr: &Expr) -> Vec<&heftsheet::syntax::ast::RunQuery> {
        let mut queries = Vec::new();
        expr.walk(&mut |node| {
            if let ExprKind::RunQuery(query) = &node.kind {
                queries.push(&**query);
            }
        });
        queries
    }

    /// The largest magnitude of a state's components over the run.
    fn peak_of_state(run: &RunReport, state: usize) -> f64 {
        let slots = &run.states[state];
        let Some(trajectory) = &run.trajectory else {
            return 0.0;
        };
        (0..=trajectory.n_steps())
            .flat_map(|boundary| {
                trajectory.state_at_boundary(boundary)
                    [slots.first..slots.first + slots.n_components]
                    .to_vec()
            })
            .fold(0.0, |peak: f64, v| peak.max(v.abs()))
    }

    fn components(value: Option<Value>) -> Vec<f64> {
        match value {
            Some(Value::Scalar(q)) => vec![q.si],
            Some(Value::Vector(v)) => v.components().to_vec(),
            None => Vec::new(),
        }
    }

    /// Halving the tolerance moves every run-query result, every state's
    /// end value, the end time and every event time by less than the
    /// tolerance times its scale: for a time, the run's length; for a
    /// state, the largest size it reaches; for a query `E at …` or `max of
    /// E`, the largest size of E over the run; for a formula with a query
    /// inside, its own size. Returns the number of results compared.
    #[track_caller]
    fn check_against_half_tolerance(name: &str, source: &str) -> usize {
        // The scale of each whole-formula query: one extra cell per query.
        let first = evaluate_clean(source);
        let mut scaled = source.to_string();
        let mut scale_cells = Vec::new();
        for cell in first.cells() {
            let Some(expr) = first.sheet().cell(cell.id).expr else {
                continue;
            };
            if let ExprKind::RunQuery(query) = &expr.kind {
                // The whole formula is one query: its scale is the largest
                // size of the value it reads.
                let value_text = query.value.span.text(first.source());
                let scale_name = format!("oracle_scale_{}", cell.id);
                scaled.push_str(&format!("{scale_name} = max of abs({value_text})\n"));
                scale_cells.push((cell.name.to_string(), Some(scale_name), query.block));
            } else if let Some(query) = run_queries(expr).first() {
                scale_cells.push((cell.name.to_string(), None, query.block));
            }
        }
        let coarse = evaluate_clean(&scaled);
        let fine = evaluate_clean(&with_halved_tolerances(&scaled, &coarse));
        let coarse_runs = runs_in_file_order(&coarse);
        let fine_runs = runs_in_file_order(&fine);
        assert_eq!(coarse_runs.len(), fine_runs.len(), "{name}");
        let mut n_compared = 0;
        let mut compare = |what: &str, a: f64, b: f64, bound: f64| {
            assert!(
                (a - b).abs() <= bound,
                "{name}: {what} moved from {a} to {b} at half the tolerance, by {:e} > {bound:e}",
                (a - b).abs()
            );
            n_compared += 1;
        };
        for (run, half) in coarse_runs.iter().zip(&fine_runs) {
            assert_eq!(
                half.relative_tolerance,
                run.relative_tolerance / 2.0,
                "{name}"
            );
            assert_eq!(run.status, half.status, "{name}: {}", run.title);
            let tolerance = run.relative_tolerance;
            let (start, end) = run.range.unwrap_or((0.0, 0.0));
            let length = run.final_time().unwrap_or(end) - start;
            let time = |evaluated: &Evaluated, id| {
                evaluated
                    .cells()
                    .nth(id)
                    .and_then(|cell| cell.value)
                    .map_or(f64::NAN, |q| q.si)
            };
            compare(
                &format!("{}: the end time", run.title),
                time(&coarse, run.time),
                time(&fine, half.time),
                tolerance * length,
            );
            for (index, state) in run.states.iter().enumerate() {
                let peak = peak_of_state(run, index);
                let a = components(coarse.cells().nth(state.cell).and_then(|c| c.any_value()));
                let b = components(
                    fine.cells()
                        .nth(half.states[index].cell)
                        .and_then(|c| c.any_value()),
                );
                assert_eq!(a.len(), b.len(), "{name}");
                for (a, b) in a.into_iter().zip(b) {
                    compare(
                        &format!("the end value of {}", state.column.label),
                        a,
                        b,
                        tolerance * peak,
                    );
                }
            }
            for (event, half_event) in run.events.iter().zip(&half.events) {
                assert_eq!(
                    event.times.len(),
                    half_event.times.len(),
                    "{name}: {}",
                    event.label()
                );
                for (a, b) in event.times.iter().zip(&half_event.times) {
                    compare(
                        &format!("the time of {}", event.label()),
                        *a,
                        *b,
                        tolerance * length,
                    );
                }
            }
        }
        for (cell_name, scale_name, block) in scale_cells {
            let run = coarse_runs
                .iter()
                .find(|run| Some(run.statement) == block)
                .unwrap_or_else(|| panic!("{name}: the run of {cell_name}"));
            let tolerance = run.relative_tolerance;
            let value = |evaluated: &Evaluated| {
                evaluated
                    .cell(&cell_name)
                    .and_then(|c| c.value)
                    .unwrap_or_else(|| panic!("{name}: {cell_name}"))
            };
            let (a, b) = (value(&coarse), value(&fine));
            let (start, _) = run.range.unwrap_or((0.0, 0.0));
            let length = run.final_time().unwrap_or(start) - start;
            let scale = if a.dimension == Dimension::TIME {
                length
            } else if let Some(scale_name) = scale_name {
                coarse
                    .cell(&scale_name)
                    .and_then(|c| c.value)
                    .map_or(f64::NAN, |q| q.si)
            } else {
                a.si.abs().max(b.si.abs())
            };
            compare(&cell_name, a.si, b.si, tolerance * scale);
        }
        n_compared
    }

    #[test]
    fn halving_the_tolerance_moves_every_result_by_less_than_the_tolerance() {
        let repository = repository_sheets();
        assert!(
            repository.len() >= 3,
            "the demo sheets have simulate blocks"
        );
        let generated = generated_sheets();
        let mut n_results = 0;
        for (name, source) in repository.iter().chain(&generated) {
            n_results += check_against_half_tolerance(name, source);
        }
        println!(
            "half-tolerance oracle: {} repository sheets, {} generated sheets, {n_results} results compared",
            repository.len(),
            generated.len()
        );
    }

    /// What a condition should do in a run, from its direct truth.
    #[derive(Clone, Copy, Debug)]
    enum Outcome {
        /// Happen at the start (a stop: refused, the run would be empty).
        AtStart,
        /// Happen at the start or by this time: it becomes true at once
        /// after the start, and the computed states show it a little later.
        AtStartOrBy(f64),
        /// Happen at this time.
        Later(f64),
        /// Not happen in the run.
        Never,
    }

    /// How a state moves in a boundary case: x' = u with u a constant
    /// speed, or from rest at a constant acceleration.
    #[derive(Clone, Copy, Debug)]
    enum Motion {
        Speed(f64),
        Acceleration(f64),
    }

    impl Motion {
        /// The block's rate lines and starting speed.
        fn lines(self) -> String {
            match self {
                Motion::Speed(u) => format!("  x' = {u:?} m/s\n"),
                Motion::Acceleration(a) => {
                    format!("  x' = w\n  w' = {a:?} m/s^2\n  w(0) = 0 m/s\n")
                }
            }
        }

        /// Which way x goes first: +1, −1 or 0 (it stays).
        fn direction(self) -> f64 {
            let rate = match self {
                Motion::Speed(u) => u,
                Motion::Acceleration(a) => a,
            };
            if rate == 0.0 { 0.0 } else { rate.signum() }
        }

        /// When x has moved `distance` (≥ 0) its way: uniform motion,
        /// x = u t, or uniformly accelerated from rest, x = a t²/2.
        fn time_to_move(self, distance: f64) -> f64 {
            match self {
                Motion::Speed(u) => distance / u.abs(),
                Motion::Acceleration(a) => (2.0 * distance / a.abs()).sqrt(),
            }
        }
    }

    /// `x CMP threshold` with x(0) at, just beside and away from the
    /// threshold, each comparison, as a stop and as an event, for several
    /// motions: what the run does must agree with the condition's truth
    /// evaluated directly on the closed-form path x(t). The truth at the
    /// start uses heft's own values of the two sides, compared here; the
    /// first time it becomes true is where x reaches the threshold moving
    /// towards the side where it holds (the start itself when x starts on
    /// the threshold and a strict condition holds at once after; and, as
    /// docs/language.md says, a change sooner than the time resolution of the run
    /// after its start counts as at the start).
    #[test]
    fn conditions_at_their_threshold_agree_with_their_direct_truth() {
        let threshold = 1.5_f64;
        let span = 2.0_f64;
        let tolerance = 1e-9;
        // The shortest time the run resolves (docs/language.md: ten units in the last
        // place of the run's length).
        let resolution = 10.0 * f64::EPSILON * span;
        let offsets = [
            0.0,
            f64::EPSILON * threshold,
            -f64::EPSILON * threshold,
            1e-9 * threshold,
            -1e-9 * threshold,
            1e-3 * threshold,
            -1e-3 * threshold,
            0.5,
            -0.5,
        ];
        let motions = [
            Motion::Speed(1.0),
            Motion::Speed(-1.0),
            Motion::Speed(0.0),
            Motion::Acceleration(1.0),
            Motion::Acceleration(-1.0),
        ];
        let comparisons = ["<", "<=", ">", ">="];
        let (mut n_cases, mut n_at_start, mut n_at_once, mut n_later, mut n_never) =
            (0, 0, 0, 0, 0);
        for offset in offsets {
            let x0 = threshold + offset;
            for motion in motions {
                for comparison in comparisons {
                    for stops in [false, true] {
                        let condition = if stops {
                            format!("  stop when x {comparison} h\n")
                        } else {
                            format!("  event e when x {comparison} h\n")
                        };
                        let source = format!(
                            "h = {threshold:?} m\nx_start = {x0:?} m\n\
                             simulate t from 0 s to {span:?} s:\n{}  x(0) = {x0:?} m\n  tolerance {tolerance:e}\n{condition}end\n",
                            motion.lines()
                        );
                        let evaluated = evaluate_source(&source);
                        let value = |name: &str| {
                            evaluated
                                .cell(name)
                                .and_then(|cell| cell.value)
                                .map_or(f64::NAN, |q| q.si)
                        };
                        let (x_start, h) = (value("x_start"), value("h"));
                        // The direct truth of the condition at x.
                        let holds = |x: f64| match comparison {
                            "<" => x < h,
                            "<=" => x <= h,
                            ">" => x > h,
                            _ => x >= h,
                        };
                        // Which way x must go for it to hold.
                        let true_side = if comparison.starts_with('<') {
                            -1.0
                        } else {
                            1.0
                        };
                        let holds_at_start = holds(x_start);
                        let direction = motion.direction();
                        // The first time it becomes true after the start.
                        let becomes_true = if holds_at_start {
                            None
                        } else if x_start == h {
                            (direction == true_side).then_some(0.0)
                        } else if (h - x_start).signum() == direction {
                            Some(motion.time_to_move((h - x_start).abs()))
                        } else {
                            None
                        }
                        .filter(|&t| t <= span)
                        .map(|t| if t <= resolution { 0.0 } else { t });
                        let what = format!("{source}\n(x(0) = {x_start:?}, h = {h:?})");
                        // How sharply the change can be timed: to the
                        // tolerance, and no sooner than the computed x has
                        // moved by its last digits (from rest that takes a
                        // while: docs/language.md, "how a condition is decided").
                        let digits = motion.time_to_move(8.0 * f64::EPSILON * h.abs());
                        let window = tolerance * span + digits;
                        let expected = match becomes_true {
                            _ if holds_at_start => Outcome::AtStart,
                            Some(t) if t + digits <= resolution => Outcome::AtStart,
                            Some(t) if t <= window => Outcome::AtStartOrBy(t + window),
                            Some(t) => Outcome::Later(t),
                            None => Outcome::Never,
                        };
                        let run = &evaluated.runs[0];
                        // What happened: at the start, later (when), never.
                        let happened = if stops {
                            match run.status {
                                RunStatus::NotRun => {
                                    let codes: Vec<Code> =
                                        evaluated.diagnostics.iter().map(|d| d.code).collect();
                                    assert_eq!(codes, vec![Code::BadSimulation], "{what}");
                                    let message = &evaluated.diagnostics[0].message;
                                    let reason = if holds_at_start {
                                        "already holds at the start"
                                    } else {
                                        "as soon as the run starts"
                                    };
                                    assert!(message.contains(reason), "{what}\n{message}");
                                    Some(0.0)
                                }
                                RunStatus::Stopped => run.final_time(),
                                status => {
                                    assert_eq!(status, RunStatus::Reached, "{what}");
                                    None
                                }
                            }
                        } else {
                            assert!(
                                evaluated.diagnostics.is_empty(),
                                "{what}\n{:?}",
                                evaluated.diagnostics
                            );
                            let times = &run.events[0].times;
                            // x moves one way only, so the condition becomes
                            // true at most once.
                            assert!(times.len() <= 1, "{what}\nevent times {times:?}");
                            times.first().copied()
                        };
                        match (expected, happened) {
                            (Outcome::AtStart, Some(t)) => {
                                assert_eq!(t, 0.0, "{what}");
                                n_at_start += 1;
                            }
                            (Outcome::AtStartOrBy(latest), Some(t)) => {
                                assert!(t <= latest, "{what}\nat {t:e} s, not by {latest:e} s");
                                n_at_once += 1;
                            }
                            (Outcome::Later(expected), Some(t)) => {
                                assert!(
                                    t > 0.0 && (t - expected).abs() <= window,
                                    "{what}\nat {t:e} s, the condition becomes true at {expected:e} s"
                                );
                                n_later += 1;
                            }
                            (Outcome::Never, None) => n_never += 1,
                            (expected, happened) => {
                                panic!("{what}\nexpected {expected:?}, the run gave {happened:?}")
                            }
                        }
                        n_cases += 1;
                    }
                }
            }
        }
        println!(
            "boundary oracle: {n_cases} cases ({n_at_start} at the start, {n_at_once} at once after it, {n_later} later, {n_never} never)"
        );
        assert_eq!(
            n_cases,
            offsets.len() * motions.len() * comparisons.len() * 2
        );
    }
}

#[test]
fn a_run_keeps_a_bounded_number_of_coefficients_whatever_its_size() {
    // The trajectory keeps COEFFICIENTS numbers per component per step:
    // the step limit keeps their number under the bound for any number of
    // components, and a small run keeps the full step limit.
    use heftsheet::blocks::{MAX_KEPT_COEFFICIENTS, MAX_STEPS, step_limit};
    use heftsheet::numeric::COEFFICIENTS;
    assert_eq!(step_limit(2), MAX_STEPS);
    for n in [1, 2, 7, 40, 80, 1_000, 5_000, 100_000] {
        let steps = step_limit(n);
        assert!((1..=MAX_STEPS).contains(&steps), "{n}: {steps}");
        assert!(
            steps * COEFFICIENTS * n <= MAX_KEPT_COEFFICIENTS,
            "{n}: {steps}"
        );
    }
    assert!(step_limit(80) < MAX_STEPS);
}
