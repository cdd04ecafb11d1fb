//! Sweep blocks and margins: every margin against the sheet written with the
//! margin's value in place of the input (evaluated through the public API,
//! utilization ≈ 100 %) and against the closed-form root where there is
//! one; table rows against the sheet with each point's value written in;
//! a point that cannot be established is never a pass; a sweep changes no
//! verdict.

use crate::common::{assert_close, run, run_clean};
use heftsheet::Evaluated;
use heftsheet::eval::{CheckStatus, Crossing, Margin, SweepReport, VerifiedMargin};

/// Standard acceleration of gravity, m/s² (3rd CGPM, 1901; exact).
const G0: f64 = 9.80665;

/// The sheet of `template` with `{INPUT}` replaced by `input` and `{SWEEP}`
/// by `sweep` (empty for the sheet as written).
fn sheet(template: &str, input: &str, sweep: &str) -> String {
    template.replace("{INPUT}", input).replace("{SWEEP}", sweep)
}

/// The only sweep of an evaluated sheet.
#[track_caller]
fn only_sweep(evaluated: &Evaluated) -> &SweepReport {
    assert_eq!(evaluated.sweeps.len(), 1, "expected one sweep");
    &evaluated.sweeps[0]
}

/// The crossings of a check's margin (panics if it has none).
#[track_caller]
fn crossings(sweep: &SweepReport, check: usize) -> &[Crossing] {
    match &sweep.margins[check] {
        Margin::Crossings(crossings) => crossings,
        other => panic!("expected crossings, got {other:?}"),
    }
}

/// The verified margin of a crossing.
#[track_caller]
fn verified(crossing: &Crossing) -> VerifiedMargin {
    match &crossing.at {
        Ok(margin) => *margin,
        Err(reason) => panic!("margin not verified: {reason}"),
    }
}

/// The oracle: the sheet written with the margin's value (SI, every digit)
/// in place of the input, evaluated through the public API, puts check
/// `check` at 100 % utilization within `tolerance`.
#[track_caller]
fn assert_margin_on_the_sheet(
    template: &str,
    input_line: impl Fn(f64) -> String,
    margin: f64,
    check: usize,
    tolerance: f64,
) {
    let written = run_clean_but_checks(&sheet(template, &input_line(margin), ""));
    let utilization = written.checks[check]
        .utilization
        .unwrap_or_else(|| panic!("no utilization at the margin"));
    assert_close(utilization, 1.0, tolerance);
}

/// Evaluates a sheet that may fail checks but has no other finding.
#[track_caller]
fn run_clean_but_checks(source: &str) -> Evaluated {
    let evaluated = run(source);
    let others: Vec<String> = evaluated
        .diagnostics
        .iter()
        .filter(|d| d.code.as_str() != "check-failed")
        .map(|d| format!("{}: {}", d.code, d.message))
        .collect();
    assert!(others.is_empty(), "unexpected findings: {others:#?}");
    evaluated
}

/// A hoist rope: T = (m_load + m_hook) (g0 + a) against its working load
/// limit, so u(a) = m (g0 + a) / WLL, linear in a: u = 1 at
/// a* = WLL / m − g0 (Newton's second law, closed form).
const HOIST: &str = "m_load = 1200 kg
m_hook = 45 kg
{INPUT}
WLL_rope = 16 kN
T_rope [kN] = (m_load + m_hook) * (g0 + a_lift)
check T_rope <= WLL_rope
{SWEEP}
";

#[test]
fn a_linear_utilizations_margin_is_its_closed_form_root_and_verified_on_the_sheet() {
    let sweep = "sweep a_lift from 0 m/s^2 to 4 m/s^2 count 17:\n  show T_rope\nend";
    let evaluated = run_clean(&sheet(HOIST, "a_lift = 0.6 m/s^2", sweep));
    let study = only_sweep(&evaluated);
    assert_eq!(study.points.len(), 17);
    let found = crossings(study, 0);
    assert_eq!(found.len(), 1);
    assert!(found[0].passes_below);
    let margin = verified(&found[0]);
    // Closed form: a* = WLL / (m_load + m_hook) − g0.
    let closed_form = 16_000.0 / 1245.0 - G0;
    assert_close(margin.input, closed_form, 1e-9);
    assert_close(margin.utilization, 1.0, 1e-6);
    assert_margin_on_the_sheet(
        HOIST,
        |a| format!("a_lift = {a:?} m/s^2"),
        margin.input,
        0,
        1e-9,
    );
    // Just below it passes, just above it fails, on the sheet itself.
    let below = run(&sheet(
        HOIST,
        &format!("a_lift = {:?} m/s^2", margin.input * (1.0 - 1e-6)),
        "",
    ));
    let above = run(&sheet(
        HOIST,
        &format!("a_lift = {:?} m/s^2", margin.input * (1.0 + 1e-6)),
        "",
    ));
    assert_eq!(below.checks[0].status, CheckStatus::Passed);
    assert_eq!(above.checks[0].status, CheckStatus::Failed);
    assert_eq!(
        heftsheet::present::margin_text(study, &study.margins[0], 4),
        "passes up to a_lift = 3.045 m/s^2"
    );
}

/// A general linear utilization u(x) = (a + b x) / WLL: F = F0 + k x on a
/// stop, whose root is x* = (WLL − F0) / k (closed form).
const SPRING_STOP: &str = "F0 = 1.2 kN
k = 35 kN/m
{INPUT}
WLL = 4 kN
F [kN] = F0 + k * x
check F <= WLL
{SWEEP}
";

#[test]
fn a_linear_margin_in_a_plus_b_x_form_matches_wll_minus_a_over_b() {
    let sweep = "sweep x from 0 mm to 200 mm step 25 mm:\nend";
    let evaluated = run_clean(&sheet(SPRING_STOP, "x = 40 mm", sweep));
    let study = only_sweep(&evaluated);
    assert_eq!(study.points.len(), 9);
    assert_eq!(study.short_last_step, None);
    let margin = verified(&crossings(study, 0)[0]);
    // Closed form: x* = (WLL − F0) / k = 2.8 kN / (35 kN/m) = 0.08 m.
    assert_close(margin.input, (4_000.0 - 1_200.0) / 35_000.0, 1e-9);
    assert_margin_on_the_sheet(
        SPRING_STOP,
        |x| format!("x = {x:?} m"),
        margin.input,
        0,
        1e-9,
    );
}

/// Drag on a panel carried at speed v: F = ½ ρ C_d A v², quadratic, so
/// u = 1 at v* = sqrt(2 F_max / (ρ C_d A)) (closed form).
const PANEL_DRAG: &str = "rho = 1.2 kg/m^3
C_d = 1.28
A_panel = 2.4 m^2
{INPUT}
F_max = 180 N
F_drag [N] = 0.5 * rho * C_d * A_panel * v^2
check F_drag <= F_max
{SWEEP}
";

#[test]
fn a_quadratic_margin_matches_its_square_root_closed_form() {
    let sweep = "sweep v from 1 m/s to 12 m/s count 12:\nend";
    let evaluated = run_clean(&sheet(PANEL_DRAG, "v = 5 m/s", sweep));
    let margin = verified(&crossings(only_sweep(&evaluated), 0)[0]);
    let closed_form = (2.0 * 180.0 / (1.2 * 1.28 * 2.4_f64)).sqrt();
    assert_close(margin.input, closed_form, 1e-9);
    assert_margin_on_the_sheet(
        PANEL_DRAG,
        |v| format!("v = {v:?} m/s"),
        margin.input,
        0,
        1e-9,
    );
}

/// Two sling legs at angle θ from the horizontal: T = W / (2 sin θ), so
/// the check passes from θ* = asin(W / (2 WLL)) (statics, closed form).
const SLING: &str = "m_load = 2000 kg
W [kN] = m_load * g0
{INPUT}
WLL_leg = 16 kN
T_leg [kN] = W / (2 * sin(θ))
check T_leg <= WLL_leg
{SWEEP}
";

#[test]
// std's asin is the independent reference value for the closed form.
#[allow(clippy::disallowed_methods)]
fn a_decreasing_utilization_passes_from_its_margin() {
    let sweep = "sweep θ from 20 deg to 80 deg count 13:\n  show T_leg\nend";
    let evaluated = run_clean(&sheet(SLING, "θ = 60 deg", sweep));
    let study = only_sweep(&evaluated);
    let found = crossings(study, 0);
    assert_eq!(found.len(), 1);
    assert!(!found[0].passes_below);
    let margin = verified(&found[0]);
    let closed_form = (2000.0 * G0 / (2.0 * 16_000.0)).asin();
    assert_close(margin.input, closed_form, 1e-9);
    assert_margin_on_the_sheet(SLING, |t| format!("θ = {t:?} rad"), margin.input, 0, 1e-9);
    let text = heftsheet::present::margin_text(study, &study.margins[0], 4);
    assert!(text.starts_with("passes from θ = "), "{text}");
    assert!(text.ends_with(" deg"), "{text}");
}

/// A utilization with a minimum inside the range: u(x) = ((x/L − 1)² + ½)
/// for F = F0 ((x/L − 1)² + ½) against F0, so u = 1 at x = L (1 ± √½).
const TWO_CROSSINGS: &str = "F0 = 10 kN
L = 1 m
{INPUT}
F [kN] = F0 * ((x / L - 1)^2 + 0.5)
check F <= F0
{SWEEP}
";

#[test]
fn several_crossings_are_each_found_and_verified() {
    let sweep = "sweep x from 0 m to 3 m count 31:\nend";
    let evaluated = run_clean(&sheet(TWO_CROSSINGS, "x = 1 m", sweep));
    let study = only_sweep(&evaluated);
    let found = crossings(study, 0);
    assert_eq!(found.len(), 2);
    assert!(!found[0].passes_below && found[1].passes_below);
    let root = 0.5_f64.sqrt();
    for (crossing, closed_form) in found.iter().zip([1.0 - root, 1.0 + root]) {
        let margin = verified(crossing);
        assert_close(margin.input, closed_form, 1e-9);
        assert_margin_on_the_sheet(
            TWO_CROSSINGS,
            |x| format!("x = {x:?} m"),
            margin.input,
            0,
            1e-9,
        );
    }
    let text = heftsheet::present::margin_text(study, &study.margins[0], 4);
    assert_eq!(
        text,
        "reaches 100 % at x = 0.2929 m (passing above), x = 1.707 m (passing below)"
    );
}

#[test]
fn table_rows_equal_the_sheet_with_each_value_written_in() {
    let sweep =
        "sweep a_lift from 0 m/s^2 to 4 m/s^2 count 9:\n  show T_rope, T_rope / WLL_rope\nend";
    let evaluated = run_clean(&sheet(HOIST, "a_lift = 0.6 m/s^2", sweep));
    let study = only_sweep(&evaluated);
    for point in [&study.points[0], &study.points[3], &study.points[8]] {
        let written = run(&sheet(
            HOIST,
            &format!("a_lift = {:?} m/s^2", point.input),
            "",
        ));
        let tension = written
            .cell("T_rope")
            .and_then(|cell| cell.value)
            .map(|q| q.si);
        let shown: Vec<Option<f64>> = point
            .shown
            .iter()
            .map(|v| v.and_then(|v| v.scalar()).map(|q| q.si))
            .collect();
        assert_eq!(shown[0], tension);
        assert_eq!(shown[1], tension.map(|t| t / 16_000.0));
        assert_eq!(point.checks[0].utilization, written.checks[0].utilization);
        assert_eq!(point.checks[0].status, written.checks[0].status);
    }
    // The bounds are exact: 0 and 4 m/s².
    assert_eq!(study.points[0].input, 0.0);
    assert_eq!(study.points[8].input, 4.0);
}

#[test]
fn a_point_that_cannot_be_evaluated_is_unknown_never_a_pass() {
    // Below 1 m the square root is out of its domain: those points fail to
    // evaluate, and their check is not established.
    let source = "x = 2 m
d [m] = sqrt(x * 1 m - 1 m^2)
check d <= 3 m
sweep x from 0 m to 4 m count 9:
  show d
end
";
    let evaluated = run_clean(source);
    let study = only_sweep(&evaluated);
    let mut unknown = 0;
    for point in &study.points {
        let check = point.checks[0];
        if point.input < 1.0 {
            unknown += 1;
            assert_eq!(check.passed(), None, "at x = {}", point.input);
            assert_eq!(check.utilization, None);
            assert_eq!(point.shown[0], None);
        } else {
            assert_eq!(check.passed(), Some(true), "at x = {}", point.input);
        }
    }
    assert_eq!(unknown, 2);
    assert_eq!(
        study.margins[0],
        Margin::NotEstablished {
            unknown_points: 2,
            crossings: Vec::new()
        }
    );
    // The check uses a cell that failed there.
    assert_eq!(
        heftsheet::present::sweep_verdict(&study.points[0].checks[0]),
        "BLOCKED"
    );
}

#[test]
fn a_margin_across_a_jump_is_reported_unverified_never_as_a_number() {
    // F jumps from F0/2 to 3 F0/2 at x = 1 m: the utilization never equals
    // 100 %, so no margin can be verified.
    let source = "F0 = 10 kN
x = 0.5 m
s = (x - 1 m) / abs(x - 1 m)
F [kN] = F0 * (1 + s / 2)
check F <= F0
sweep x from 0.05 m to 2.05 m count 5:
end
";
    let evaluated = run_clean(source);
    let study = only_sweep(&evaluated);
    let found = crossings(study, 0);
    assert_eq!(found.len(), 1);
    assert!(found[0].at.is_err(), "{:?}", found[0].at);
    let text = heftsheet::present::margin_text(study, &study.margins[0], 4);
    assert!(text.contains("margin not verified"), "{text}");
}

#[test]
fn a_sweep_changes_no_verdict_and_adds_no_finding() {
    // The rope fails over part of the range; the sheet as written passes.
    let with = run(&sheet(
        HOIST,
        "a_lift = 0.6 m/s^2",
        "sweep a_lift from 0 m/s^2 to 6 m/s^2 count 13:\nend",
    ));
    let without = run(&sheet(HOIST, "a_lift = 0.6 m/s^2", ""));
    assert!(with.diagnostics.is_empty() && without.diagnostics.is_empty());
    assert_eq!(with.summary(), without.summary());
    assert_eq!(with.checks[0].status, CheckStatus::Passed);
    assert!(matches!(only_sweep(&with).margins[0], Margin::Crossings(_)));
    // Failing over the whole range, passing over the whole range.
    let fails = run_clean(&sheet(
        HOIST,
        "a_lift = 0.6 m/s^2",
        "sweep a_lift from 4 m/s^2 to 6 m/s^2 count 3:\nend",
    ));
    assert_eq!(only_sweep(&fails).margins[0], Margin::FailsThroughout);
    let passes = run_clean(&sheet(
        HOIST,
        "a_lift = 0.6 m/s^2",
        "sweep a_lift from 0 m/s^2 to 2 m/s^2 count 3:\nend",
    ));
    assert_eq!(only_sweep(&passes).margins[0], Margin::PassesThroughout);
}

#[test]
fn a_step_that_does_not_divide_the_range_keeps_the_end_and_says_so() {
    let even = run_clean(&sheet(
        HOIST,
        "a_lift = 0.6 m/s^2",
        "sweep a_lift from 0.2 m/s^2 to 1.4 m/s^2 step 0.1 m/s^2:\nend",
    ));
    let study = only_sweep(&even);
    assert_eq!(study.points.len(), 13);
    assert_eq!(study.short_last_step, None);
    let uneven = run_clean(&sheet(
        HOIST,
        "a_lift = 0.6 m/s^2",
        "sweep a_lift from 0 m/s^2 to 1 m/s^2 step 0.3 m/s^2:\nend",
    ));
    let study = only_sweep(&uneven);
    let inputs: Vec<f64> = study.points.iter().map(|p| p.input).collect();
    assert_eq!(inputs.len(), 5);
    assert_eq!(inputs[4], 1.0);
    assert_close(inputs[3], 0.9, 1e-12);
    assert_close(study.short_last_step.unwrap_or(f64::NAN), 0.1, 1e-9);
    // Downwards: the same step, from the first bound to the second.
    let down = run_clean(&sheet(
        HOIST,
        "a_lift = 0.6 m/s^2",
        "sweep a_lift from 1 m/s^2 to 0 m/s^2 step 0.25 m/s^2:\nend",
    ));
    let inputs: Vec<f64> = only_sweep(&down).points.iter().map(|p| p.input).collect();
    assert_eq!(inputs, vec![1.0, 0.75, 0.5, 0.25, 0.0]);
}

#[test]
fn a_plain_number_input_sweeps_with_plain_bounds() {
    // The rope's share with n parts of rope: T = W / n; plain numbers
    // before `to` and `count` are numbers, not units.
    let source = "W = 30 kN
n_falls = 3
T [kN] = W / n_falls
check T <= 12 kN
sweep n_falls from 1 to 4 count 4:
  show T
end
";
    let evaluated = run_clean(source);
    let study = only_sweep(&evaluated);
    let inputs: Vec<f64> = study.points.iter().map(|p| p.input).collect();
    assert_eq!(inputs, vec![1.0, 2.0, 3.0, 4.0]);
    let margin = verified(&crossings(study, 0)[0]);
    // Closed form: W / n = 12 kN at n = 2.5.
    assert_close(margin.input, 2.5, 1e-9);
}

#[test]
fn tolerances_still_apply_at_every_point_and_the_margin_is_at_the_worst_case() {
    // With m_load ± 3 %, the rope check is judged at the heaviest load:
    // u = 1.03 m_load (g0 + a) / WLL... with m_hook exact, so
    // a* = WLL / (1.03 m_load + m_hook) − g0 (closed form).
    let template = HOIST.replace("m_load = 1200 kg", "m_load = 1200 kg ± 3 %");
    let evaluated = run_clean(&sheet(
        &template,
        "a_lift = 0.6 m/s^2",
        "sweep a_lift from 0 m/s^2 to 4 m/s^2 count 9:\nend",
    ));
    let margin = verified(&crossings(only_sweep(&evaluated), 0)[0]);
    let closed_form = 16_000.0 / (1.03 * 1200.0 + 45.0) - G0;
    assert_close(margin.input, closed_form, 1e-9);
}

#[test]
fn a_load_case_on_the_sheet_is_not_part_of_a_sweep_point() {
    // The case raises the load; the sweep studies the sheet as written.
    let source = format!(
        "{}case heavy:\n  m_load = 1250 kg\nend\n",
        sheet(
            HOIST,
            "a_lift = 0.6 m/s^2",
            "sweep a_lift from 0 m/s^2 to 4 m/s^2 count 9:\nend"
        )
    );
    let evaluated = run_clean(&source);
    let margin = verified(&crossings(only_sweep(&evaluated), 0)[0]);
    assert_close(margin.input, 16_000.0 / 1245.0 - G0, 1e-9);
}

#[test]
fn the_ok_corpus_skids_cog_margins_are_the_lever_rules_closed_forms() {
    let source =
        crate::common::read_file(std::path::Path::new("tests/sheets/ok/skid_cog_sweep.heft"));
    let evaluated = run_clean(&source);
    let study = only_sweep(&evaluated);
    let weight = 3200.0 * G0;
    // Lever rule: R_A = W (1 − x/L) reaches 20 kN at x = L (1 − 20 kN / W)
    // and passes from there; R_B = W x / L reaches it at x = 20 kN L / W.
    let from_a = verified(&crossings(study, 0)[0]);
    assert!(!crossings(study, 0)[0].passes_below);
    assert_close(from_a.input, 4.0 * (1.0 - 20_000.0 / weight), 1e-9);
    let up_to_b = verified(&crossings(study, 1)[0]);
    assert!(crossings(study, 1)[0].passes_below);
    assert_close(up_to_b.input, 20_000.0 * 4.0 / weight, 1e-9);
    // The sheet written with each margin in place of x_cg puts that check
    // at 100 %.
    for (check, margin) in [(0, from_a), (1, up_to_b)] {
        let written = run(&source.replace("x_cg = 1.6 m", &format!("x_cg = {:?} m", margin.input)));
        let utilization = written.checks[check].utilization.unwrap_or(f64::NAN);
        assert_close(utilization, 1.0, 1e-9);
    }
}

/// A chain of `n` cells from `x`, each the one before plus 1 mm, and a
/// check on the last that fails from x = 100 m − (n − 2) mm.
fn long_chain(n: usize, sweep: &str) -> String {
    let mut source = String::from("x = 1 m\nc0 = x\n");
    for k in 1..n - 1 {
        source.push_str(&format!("c{k} = c{} + 1 mm\n", k - 1));
    }
    source.push_str(&format!("check c{} <= 100 m\n{sweep}\n", n - 2));
    source
}

#[test]
fn a_sweep_past_the_cell_evaluation_limit_is_refused_and_names_it() {
    use heftsheet::blocks::{MAX_SWEEP_CELL_EVALUATIONS, MAX_SWEEP_POINTS};
    // 1,000 points of a 25,000-cell sheet: 25 million cell evaluations.
    let n_cells = 25_000;
    assert!(MAX_SWEEP_POINTS * n_cells > MAX_SWEEP_CELL_EVALUATIONS);
    let evaluated = run(&long_chain(
        n_cells,
        "sweep x from 0 m to 20 m count 1000:\nend",
    ));
    let refused: Vec<_> = evaluated
        .diagnostics
        .iter()
        .filter(|d| d.code.as_str() == "sweep-too-large")
        .collect();
    assert_eq!(refused.len(), 1, "{:?}", evaluated.diagnostics);
    assert!(
        refused[0].message.contains("20000000"),
        "{}",
        refused[0].message
    );
    assert!(only_sweep(&evaluated).points.is_empty());
}

#[test]
fn a_margin_search_past_the_evaluation_limit_says_so_and_gives_no_number() {
    use heftsheet::blocks::MAX_SWEEP_CELL_EVALUATIONS;
    // Two points of a 60,000-cell sheet are cheap, but one margin search
    // may take 403 evaluations of it: more than the margins' budget.
    let n_cells = 60_000;
    assert!(403 * n_cells > MAX_SWEEP_CELL_EVALUATIONS);
    let evaluated = run_clean(&long_chain(
        n_cells,
        "sweep x from 0 m to 1000 m count 2:\nend",
    ));
    let study = only_sweep(&evaluated);
    assert_eq!(study.points.len(), 2);
    let found = crossings(study, 0);
    assert_eq!(found.len(), 1);
    let reason = found[0].at.clone().err().unwrap_or_default();
    assert!(reason.starts_with("not searched"), "{reason}");
}
