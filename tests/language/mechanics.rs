//! Newton's-second-law results computed by heft sheets, checked against
//! closed-form solutions (expected values worked in 40-digit arithmetic from
//! the formulas quoted beside each check). Scenarios are invented.

use crate::common;

use common::{assert_close, run_clean, shown};

/// Agreement demanded of closed-form results (the expected values are given
/// to 10 significant digits).
const CLOSE: f64 = 5e-10;

#[test]
fn hoist_tension_accelerating_and_slowing() {
    // Closed form, Newton's second law on a hoisted load: T = m (g + a),
    // a positive upward; dynamic factor T/W = 1 + a/g.
    let sheet = run_clean(
        "m = 250 kg\na = 1.2 m/s^2\nW [N] = m * g0\nT_up [N] = m * (g0 + a)\nT_slow [N] = m * (g0 - a)\nfactor = T_up / W\n",
    );
    assert_close(shown(&sheet, "W"), 2451.662500, CLOSE);
    assert_close(shown(&sheet, "T_up"), 2751.662500, CLOSE);
    assert_close(shown(&sheet, "T_slow"), 2151.662500, CLOSE);
    assert_close(shown(&sheet, "factor"), 1.122365946, CLOSE);
}

#[test]
fn hoist_tension_in_fps_units_matches_si() {
    // Closed form T = W (1 + a/g) with W = 800 lbf, a = 4 ft/s²: 899.4590405 lbf;
    // m = W/g = 24.86476014 slug; the same worked in SI is 4000.993146 N.
    let sheet = run_clean(
        "W = 800 lbf\na = 4 ft/s^2\nm [slug] = W / g0\nT [lbf] = W * (1 + a / g0)\nT_si [N] = m * (g0 + a)\n",
    );
    assert_close(shown(&sheet, "T"), 899.4590405, CLOSE);
    assert_close(shown(&sheet, "m"), 24.86476014, CLOSE);
    assert_close(shown(&sheet, "T_si"), 4000.993146, CLOSE);
}

#[test]
fn two_masses_over_a_pulley() {
    // Closed form (Atwood machine): a = (m1 − m2) g / (m1 + m2),
    // T = 2 m1 m2 g / (m1 + m2); time over d from rest t = √(2 d / a).
    for (m1, m2, a, t, time) in [
        (12.0, 8.0, 1.961330000, 94.14384000, 1.236759605),
        (7.5, 4.2, 2.765978205, 52.80503846, 1.041444787),
    ] {
        let sheet = run_clean(&format!(
            "m1 = {m1} kg\nm2 = {m2} kg\nd = 1.5 m\n\
             a [m/s^2] = (m1 - m2) * g0 / (m1 + m2)\n\
             T [N] = 2 * m1 * m2 * g0 / (m1 + m2)\n\
             t [s] = sqrt(2 * d / a)\n\
             check m1 * g0 - T - m1 * a <= 1e-9 N \"heavy side balances\"\n"
        ));
        assert_close(shown(&sheet, "a"), a, CLOSE);
        assert_close(shown(&sheet, "T"), t, CLOSE);
        assert_close(shown(&sheet, "t"), time, CLOSE);
    }
}

#[test]
fn two_cart_train_with_rolling_resistance() {
    // Closed form for a system of two carts: a = [F − g (C_A m_A + C_B m_B)] / (m_A + m_B),
    // coupling T_AB = m_B (a + C_B g); with C_A = C_B, T_AB = F m_B / (m_A + m_B).
    for (c_a, c_b, a, coupling) in [
        (0.015, 0.015, 2.252900250, 240.0000000),
        (0.020, 0.010, 2.243093600, 234.1160100),
    ] {
        let sheet = run_clean(&format!(
            "F = 600 N\nm_A = 150 kg\nm_B = 100 kg\nC_A = {c_a}\nC_B = {c_b}\n\
             a [m/s^2] = (F - g0 * (C_A * m_A + C_B * m_B)) / (m_A + m_B)\n\
             T_AB [N] = m_B * (a + C_B * g0)\n"
        ));
        assert_close(shown(&sheet, "a"), a, CLOSE);
        assert_close(shown(&sheet, "T_AB"), coupling, CLOSE);
    }
}

#[test]
fn two_sling_lift() {
    // Closed form for two equal legs at θ from horizontal: T = W / (2 sin θ),
    // H = W / (2 tan θ).
    let sheet = run_clean(
        "W = 20 kN\nθ = 60 deg\nT [N] = W / (2 * sin(θ))\nH [N] = W / (2 * tan(θ))\n\
         W_fps = 4000 lbf\nθ_fps = 45 deg\nT_fps [lbf] = W_fps / (2 * sin(θ_fps))\n",
    );
    assert_close(shown(&sheet, "T"), 11547.00538, CLOSE);
    assert_close(shown(&sheet, "H"), 5773.502692, CLOSE);
    assert_close(shown(&sheet, "T_fps"), 2828.427125, CLOSE);
}

#[test]
fn crate_pulled_at_an_angle_same_answer_in_fps_and_si() {
    // Closed form for a rope at θ above horizontal with friction μ:
    // T = m (a + μ g) / (cos θ + μ sin θ), N = m g − T sin θ.
    // W = 180 lbf, a = 1.5 ft/s², μ = 0.35, θ = 20°: T = 67.38897368 lbf, N = 156.9516136 lbf.
    let fps = run_clean(
        "W = 180 lbf\nm [slug] = W / g0\na = 1.5 ft/s^2\nμ = 0.35\nθ = 20 deg\n\
         T [lbf] = m * (a + μ * g0) / (cos(θ) + μ * sin(θ))\nN [lbf] = W - T * sin(θ)\n",
    );
    let si = run_clean(
        "m = 81.6466266 kg\na = 0.4572 m/s^2\nμ = 0.35\nθ = 20 deg\n\
         T [N] = m * (a + μ * g0) / (cos(θ) + μ * sin(θ))\nT_lbf [lbf] = T\n",
    );
    assert_close(shown(&fps, "T"), 67.38897368, CLOSE);
    assert_close(shown(&fps, "N"), 156.9516136, CLOSE);
    assert_close(shown(&si, "T"), 299.7610894, CLOSE);
    assert_close(shown(&si, "T_lbf"), 67.38897368, CLOSE);
}

#[test]
fn a_mass_in_lbm_times_an_acceleration_in_ft_per_s2() {
    // Identity from the definitions: 1 slug = g_c lbm with g_c = 196133/6096
    // = 32.174048556… lbm·ft/(lbf·s²), so m a with m in lbm is m a / g_c lbf.
    let sheet = run_clean("m = 180 lbm\na = 1.5 ft/s^2\nF [lbf] = m * a\n");
    assert_close(shown(&sheet, "F"), 180.0 * 1.5 * 6096.0 / 196133.0, 1e-12);
}

#[test]
fn a_body_lists_forces_as_expressions_and_sums_them() {
    // A lifting hook held by a sling pulling along −e_A, its load's weight,
    // and a tag line: ΣF = −T_A e_A + W + F_tag, by hand:
    // x: −12 kN · 0.6 + 0 + 7.2 kN = 0; y: −12 kN · 0.8 − 9 kN + 0 = −18.6 kN.
    let sheet = run_clean(
        "T_A = 12 kN\ne_A = vec(0.6, 0.8)\nW = vec(0 N, -9 kN)\n\
         body hook: -T_A * e_A, W, vec(7.2 kN, 0 N)\n\
         hook_x = hook.x\nhook_y = hook.y\n",
    );
    assert_close(common::si(&sheet, "hook_x"), 0.0, 1e-12);
    assert_close(common::si(&sheet, "hook_y"), -18_600.0, 1e-12);
    // Each force keeps its own value for the free-body drawing.
    let bodies = sheet.free_bodies();
    let forces: Vec<(&str, Option<[f64; 2]>)> = bodies[0]
        .forces
        .iter()
        .map(|(text, value)| (*text, value.map(|v| [v.si[0], v.si[1]])))
        .collect();
    assert_eq!(
        forces,
        [
            ("-T_A * e_A", Some([-7_200.0, -9_600.0])),
            ("W", Some([0.0, -9_000.0])),
            ("vec(7.2 kN, 0 N)", Some([7_200.0, 0.0])),
        ]
    );
}
