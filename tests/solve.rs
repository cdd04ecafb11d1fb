//! Solve blocks and vectors against closed-form Newton's-second-law results
//! (standard results, each named beside its check; expected values worked in
//! 40-digit arithmetic from the formulas quoted). Every case runs twice: in
//! SI units, and with the same inputs written in FPS units (exact
//! conversions), which must give the same answers after conversion.

mod common;

use common::{assert_close, run, run_clean, si};

/// Agreement demanded of solved results (expected values have 10 digits).
const CLOSE: f64 = 5e-10;

/// An input written in SI, or in FPS with the exact 1959/1901 factors.
#[derive(Clone, Copy)]
enum System {
    Si,
    Fps,
}

const LBM: f64 = 0.45359237;
const LBF: f64 = 0.45359237 * 9.80665;
const FT: f64 = 0.3048;

impl System {
    fn mass(self, kg: f64) -> String {
        match self {
            System::Si => format!("{kg:e} kg"),
            System::Fps => format!("{:e} lbm", kg / LBM),
        }
    }
    fn force(self, newtons: f64) -> String {
        match self {
            System::Si => format!("{newtons:e} N"),
            System::Fps => format!("{:e} lbf", newtons / LBF),
        }
    }
    fn acceleration(self, si: f64) -> String {
        match self {
            System::Si => format!("{si:e} m/s^2"),
            System::Fps => format!("{:e} ft/s^2", si / FT),
        }
    }
    fn drag(self, kg_per_m: f64) -> String {
        match self {
            System::Si => format!("{kg_per_m:e} kg/m"),
            System::Fps => format!("{:e} lbm/ft", kg_per_m / LBM * FT),
        }
    }
    /// Unit for unknowns of each kind.
    fn units(self) -> (&'static str, &'static str, &'static str) {
        match self {
            System::Si => ("m/s^2", "N", "m/s"),
            System::Fps => ("ft/s^2", "lbf", "ft/s"),
        }
    }
}

const SYSTEMS: [System; 2] = [System::Si, System::Fps];

#[test]
fn two_masses_over_a_frictionless_pulley() {
    // Closed form (Atwood machine): a = (m1 − m2) g / (m1 + m2), T = 2 m1 m2 g / (m1 + m2).
    for system in SYSTEMS {
        let (acc, force, _) = system.units();
        let sheet = run_clean(&format!(
            "m1 = {}\nm2 = {}\nsolve a [{acc}], T [{force}]:\n  m1 * g0 - T = m1 * a\n  T - m2 * g0 = m2 * a\nend\n",
            system.mass(12.0),
            system.mass(8.0),
        ));
        assert_close(si(&sheet, "a"), 1.961330000, CLOSE);
        assert_close(si(&sheet, "T"), 94.14384000, CLOSE);
        assert!(sheet.solves[0].linear, "a linear system is recognised");
        assert!(sheet.solves[0].iterations <= 2);
    }
}

#[test]
fn block_on_an_incline_with_kinetic_friction_pulled_at_an_angle() {
    // Closed form (x up the slope, y normal): N = m g cos α − P sin β,
    // a = [P cos β − m g sin α − μk N] / m up-slope; sliding down,
    // a_down = [m g sin α − P cos β − μk N] / m. m = 40 kg, α = 25°, β = 15°, μk = 0.30.
    for system in SYSTEMS {
        let (acc, force, _) = system.units();
        let up = run_clean(&format!(
            "m = {}\nP = {}\nα = 25 deg\nβ = 15 deg\nμ = 0.30\n\
             solve a [{acc}], N [{force}] ~ 200:\n\
               N + P * sin(β) = m * g0 * cos(α)\n\
               P * cos(β) - m * g0 * sin(α) - μ * N = m * a\n\
             end\n",
            system.mass(40.0),
            system.force(350.0),
        ));
        assert_close(si(&up, "N"), 264.9270646, CLOSE);
        assert_close(si(&up, "a"), 2.320428619, CLOSE);
        let down = run_clean(&format!(
            "m = {}\nP = {}\nα = 25 deg\nβ = 15 deg\nμ = 0.30\n\
             solve a_down [{acc}], N [{force}] ~ 200:\n\
               N + P * sin(β) = m * g0 * cos(α)\n\
               m * g0 * sin(α) - P * cos(β) - μ * N = m * a_down\n\
             end\n",
            system.mass(40.0),
            system.force(50.0),
        ));
        assert_close(si(&down, "N"), 342.5727781, CLOSE);
        assert_close(si(&down, "a_down"), 0.3677662576, CLOSE);
    }
}

#[test]
fn crate_pulled_across_a_floor_at_an_angle() {
    // Closed form: T cos θ − μ N = m a, T sin θ + N − m g = 0. m = 80 kg,
    // μ = 0.35, θ = 20°: for a = 0.5 m/s², T = 296.9476097 N, N = 682.9699360 N;
    // for T = 400 N, a = 1.864670855 m/s², N = 647.7239427 N.
    for system in SYSTEMS {
        let (acc, force, _) = system.units();
        let for_tension = run_clean(&format!(
            "m = {}\na = {}\nμ = 0.35\nθ = 20 deg\n\
             solve T [{force}] ~ 100, N [{force}] ~ 100:\n  T * cos(θ) - μ * N = m * a\n  T * sin(θ) + N = m * g0\nend\n",
            system.mass(80.0),
            system.acceleration(0.5),
        ));
        assert_close(si(&for_tension, "T"), 296.9476097, CLOSE);
        assert_close(si(&for_tension, "N"), 682.9699360, CLOSE);
        let for_acceleration = run_clean(&format!(
            "m = {}\nT = {}\nμ = 0.35\nθ = 20 deg\n\
             solve a [{acc}], N [{force}] ~ 100:\n  T * cos(θ) - μ * N = m * a\n  T * sin(θ) + N = m * g0\nend\n",
            system.mass(80.0),
            system.force(400.0),
        ));
        assert_close(si(&for_acceleration, "a"), 1.864670855, CLOSE);
        assert_close(si(&for_acceleration, "N"), 647.7239427, CLOSE);
    }
}

#[test]
fn two_cart_train_with_rolling_resistance() {
    // Closed form for a system of particles: a = [F − g (C_A m_A + C_B m_B)] / (m_A + m_B),
    // T_AB = m_B (a + C_B g). F = 600 N, m_A = 150 kg, m_B = 100 kg.
    for system in SYSTEMS {
        let (acc, force, _) = system.units();
        for (c_a, c_b, a, coupling) in [
            (0.015, 0.015, 2.252900250, 240.0000000),
            (0.020, 0.010, 2.243093600, 234.1160100),
        ] {
            let sheet = run_clean(&format!(
                "F = {}\nm_A = {}\nm_B = {}\nC_A = {c_a}\nC_B = {c_b}\n\
                 solve a [{acc}], T_AB [{force}]:\n\
                   F - T_AB - C_A * m_A * g0 = m_A * a\n\
                   T_AB - C_B * m_B * g0 = m_B * a\n\
                 end\n",
                system.force(600.0),
                system.mass(150.0),
                system.mass(100.0),
            ));
            assert_close(si(&sheet, "a"), a, CLOSE);
            assert_close(si(&sheet, "T_AB"), coupling, CLOSE);
        }
    }
}

#[test]
fn load_on_two_slings_as_a_vector_balance() {
    // Closed form (two legs at θ from horizontal): T = W / (2 sin θ); with unequal
    // legs (Lami's theorem) T1 = W cos θ2 / sin(θ1 + θ2), T2 = W cos θ1 / sin(θ1 + θ2).
    // W = 20 kN; θ = 60° gives 11547.00538 N; θ1 = 60°, θ2 = 45° give 14641.01615 N and 10352.76180 N.
    for system in SYSTEMS {
        let (_, force, _) = system.units();
        let sheet = run_clean(&format!(
            "W = {w}\nθ1 = 60 deg\nθ2 = 45 deg\n\
             solve T1 [{force}] ~ 1000, T2 [{force}] ~ 1000:\n\
               polar(T1, 180 deg - θ1) + polar(T2, θ2) + vec(0 N, -W) = vec(0 N, 0 N)\n\
             end\n\
             body hook: F1, F2, F_load\n\
             F1 = polar(T1, 180 deg - θ1)\nF2 = polar(T2, θ2)\nF_load = vec(0 N, -W)\n\
             T_equal [{force}] = W / (2 * sin(60 deg))\n",
            w = system.force(20_000.0),
        ));
        assert_close(si(&sheet, "T1"), 14641.01615, CLOSE);
        assert_close(si(&sheet, "T2"), 10352.76180, CLOSE);
        assert_close(si(&sheet, "T_equal"), 11547.00538, CLOSE);
        // The free body's resultant closes to zero.
        let bodies = sheet.free_bodies();
        assert_eq!(bodies.len(), 1);
        assert_eq!(bodies[0].forces.len(), 3);
        let resultant = bodies[0]
            .resultant
            .map(|r| r.magnitude().si)
            .unwrap_or(f64::NAN);
        assert!(resultant < 1e-6, "ΣF = {resultant}");
    }
}

#[test]
fn quadratic_drag_balance_solved_for_speed() {
    // Closed form (terminal speed): c v² = m g gives v_t = √(m g / c);
    // m = 5 kg, c = 0.02 kg/m: v_t = 49.51426562 m/s.
    for system in SYSTEMS {
        let (_, _, speed) = system.units();
        let sheet = run_clean(&format!(
            "m = {}\nc = {}\nsolve v [{speed}] ~ 10:\n  c * v^2 = m * g0\nend\n",
            system.mass(5.0),
            system.drag(0.02),
        ));
        assert_close(si(&sheet, "v"), 49.51426562, CLOSE);
        assert!(!sheet.solves[0].linear);
    }
}

#[test]
fn unknowns_are_cells_both_ways() {
    // Cells before and after a block may use its unknowns and feed its equations,
    // in any file order.
    let sheet = run_clean(
        "T_twice = 2 * T\nsolve a [m/s^2], T [N]:\n  F - T = m * a\n  T = m2 * a\nend\nF = 100 N\nm = 30 kg\nm2 = 20 kg\n",
    );
    // a = F / (m + m2) = 2 m/s², T = m2 a = 40 N, by hand.
    assert_close(si(&sheet, "a"), 2.0, 1e-12);
    assert_close(si(&sheet, "T_twice"), 80.0, 1e-12);
}

#[test]
fn a_broken_block_blocks_its_users_not_the_sheet() {
    let sheet = run("other = 3 kg\nsolve a [m/s^2]:\n  m * a = 10 N\nend\nuse_a = a * 2\n");
    assert_eq!(common::codes(&sheet), ["undefined-name"]);
    assert_eq!(si(&sheet, "other"), 3.0);
    assert!(matches!(
        sheet.cell("use_a").map(|c| c.status),
        Some(heftsheet::eval::CellStatus::Blocked { .. })
    ));
}

#[test]
fn vectors_add_scale_and_take_components() {
    // Vector algebra by hand: (120, −40) + 40 N at slope 3:4 = (120 + 32, −40 + 24).
    let sheet = run_clean(
        "F = vec(120 N, -40 N)\nG = polar(40 N, 3:4)\nR = F + G\nRx = R.x\nRy = R.y\n\
         d = dot(F, G)\nc = cross(F, G)\ncz = c.z\nk = mag(G)\nu = unit(G)\nθ [deg] = angle(G)\n\
         S = 2 * F / 4\nSx = S.x\nV3 = vec(1 m, 2 m, 3 m)\nV3z = V3.z\n",
    );
    assert_close(si(&sheet, "Rx"), 152.0, 1e-12);
    assert_close(si(&sheet, "Ry"), -16.0, 1e-12);
    assert_close(si(&sheet, "d"), 120.0 * 32.0 - 40.0 * 24.0, 1e-12);
    assert_close(si(&sheet, "cz"), 120.0 * 24.0 + 40.0 * 32.0, 1e-12);
    assert_close(si(&sheet, "k"), 40.0, 1e-12);
    assert_close(si(&sheet, "θ"), (3.0f64).atan2(4.0), 1e-12);
    assert_close(si(&sheet, "Sx"), 60.0, 1e-12);
    assert_close(si(&sheet, "V3z"), 3.0, 1e-12);
}

#[test]
fn vector_mistakes_are_reported() {
    for (source, code) in [
        ("F = vec(1 N, 2 kg)", "mass-weight-mixup"),
        ("F = vec(1 N, 2 m)", "dimension-mismatch"),
        ("F = vec(1 N, 2 N)\nx = F + 1 N", "dimension-mismatch"),
        ("F = vec(1 N, 2 N)\nx = F * F", "dimension-mismatch"),
        ("F = vec(1 N, 2 N)\nx = F.z", "dimension-mismatch"),
        ("x = unit(vec(0 N, 0 N))", "out-of-domain"),
        (
            "F = vec(1 N, 2 N)\ncheck F <= 3 N \"vector check\"",
            "dimension-mismatch",
        ),
        ("x = sqrt(vec(1 m, 2 m))", "dimension-mismatch"),
    ] {
        let sheet = run(source);
        assert_eq!(common::codes(&sheet), [code], "{source}");
    }
}
