//! Solve blocks and vectors against closed-form Newton's-second-law results
//! (standard results, each named beside its check; expected values worked in
//! 40-digit arithmetic from the formulas quoted). Every case runs twice: in
//! SI units, and with the same inputs written in FPS units (exact
//! conversions), which must give the same answers after conversion.

// Reference values here come from std's maths functions, independent of
// the libm that heft uses.
#![allow(clippy::disallowed_methods)]

use crate::common;

use common::{assert_close, codes, run, run_clean, si};

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

/// The diagnostics of `code` in `evaluated`, as messages.
fn messages(evaluated: &heftsheet::eval::Evaluated, code: &str) -> Vec<String> {
    evaluated
        .diagnostics
        .iter()
        .filter(|d| d.code.as_str() == code)
        .map(|d| d.message.clone())
        .collect()
}

#[test]
fn a_plain_guess_is_taken_in_the_unknowns_own_unit() {
    // A rope holding a load of 500 N drawn aside by 219.3 N: T sin θ = H,
    // T cos θ = W, so θ = atan2(H, W) = 23.68225632831837°, T = hypot(H, W)
    // = 545.9784702714934 N (closed form; mpmath at 30 digits).
    let sheet = run(
        "W = 500 N\nH = 219.3 N\nsolve T [N] ~ 500, θ [deg] ~ 20:\n  T * sin(θ) = H\n  T * cos(θ) = W\nend\n",
    );
    assert_close(si(&sheet, "θ").to_degrees(), 23.68225632831837, 1e-12);
    assert_close(si(&sheet, "T"), 545.9784702714934, 1e-12);
    // Every angle and ratio unit reads a plain guess in itself: 20 deg, 20 %,
    // 400 mrad, 0.06 rev all start near 0.41 rad and reach the one root.
    // (T = −546 N at θ + 180° also solves the equations, and the search for
    // other roots from ten times the guess may name it.)
    for (unit, guess) in [("°", "20"), ("%", "40"), ("mrad", "400"), ("rev", "0.06")] {
        let sheet = run(&format!(
            "W = 500 N\nH = 219.3 N\nsolve T [N] ~ 500, θ [{unit}] ~ {guess}:\n  T * sin(θ) = H\n  T * cos(θ) = W\nend\n"
        ));
        assert_close(si(&sheet, "θ").to_degrees(), 23.68225632831837, 1e-12);
        assert!(codes(&sheet).iter().all(|&code| code == "several-roots"));
    }
    // A guess with a unit is taken as written.
    let sheet = run(
        "W = 500 N\nH = 219.3 N\nsolve T [N] ~ 500, θ [deg] ~ 0.4 rad:\n  T * sin(θ) = H\n  T * cos(θ) = W\nend\n",
    );
    assert_close(si(&sheet, "θ").to_degrees(), 23.68225632831837, 1e-12);
}

#[test]
fn a_capstan_friction_coefficient_is_solved_whatever_its_guess() {
    // Capstan equation T2 = T1·e^(μθ) with θ = 3 rad: μ = ln(T2/T1)/3 =
    // ln 2 / 3 = 0.2310490601866484 (closed form; mpmath). A far guess once
    // froze the equation's scale at e^30 and called a residual of kN solved.
    for guess in [
        "mu [%] ~ 10",
        "mu [%] ~ 1000",
        "mu [%] ~ 1",
        "mu [%] ~ 5000",
    ] {
        let sheet = run(&format!(
            "T1 = 1000 N\nT2 = 2000 N\nsolve {guess}:\n  T2 = T1 * exp(mu * 3)\nend\n"
        ));
        match sheet.cell("mu").map(|c| c.status) {
            Some(heftsheet::eval::CellStatus::Ok) => {
                assert_close(si(&sheet, "mu"), 0.2310490601866484, 1e-10)
            }
            other => assert!(
                !messages(&sheet, "no-convergence").is_empty(),
                "guess {guess}: {other:?} without a no-convergence error"
            ),
        }
    }
}

#[test]
fn a_catenary_is_solved_or_refused_never_wrong() {
    // Cable of length 41 m over a 40 m span: 41 = 2a·sinh(20/a), written
    // with exp, a = 51.83231498737497 m (mpmath findroot at 30 digits).
    for guess in ["2", "10", "50", "500"] {
        let sheet = run(&format!(
            "L = 41 m\nS = 40 m\nsolve a [m] ~ {guess}:\n  L = a * (exp(S / (2 * a)) - exp(-S / (2 * a)))\nend\n"
        ));
        if sheet.cell("a").map(|c| c.status) == Some(heftsheet::eval::CellStatus::Ok) {
            // The equation is even in a's sign (−a solves it too), and a far
            // guess may reach either.
            assert_close(si(&sheet, "a").abs(), 51.83231498737497, 1e-9);
        } else {
            assert_eq!(messages(&sheet, "no-convergence").len(), 1, "guess {guess}");
        }
    }
}

#[test]
fn a_system_with_no_root_is_not_solved() {
    // x² + 1 m² = 0 has no real root; from a far guess the residual at x = 0
    // (1 m²) is tiny beside the guess's 10¹² m² scale, but it is not zero.
    for guess in ["1", "1e6"] {
        let sheet = run(&format!(
            "solve x [m] ~ {guess}:\n  x^2 + 1 m^2 = 0 m^2\nend\n"
        ));
        assert_ne!(
            sheet.cell("x").map(|c| c.status),
            Some(heftsheet::eval::CellStatus::Ok),
            "guess {guess}"
        );
        assert_eq!(messages(&sheet, "no-convergence").len(), 1, "guess {guess}");
        assert!(sheet.solves[0].status != heftsheet::eval::SolveStatus::Solved);
    }
}

#[test]
fn ill_conditioned_systems_and_double_roots_are_warned() {
    // Two nearly parallel equations: the matrix [[1, 1], [1, 1 + 1e-10]] has
    // condition number ≈ 4e10 (σ_max/σ_min from mpmath.svd_r at 40 digits:
    // 4.0000000002e10), which costs about 10 of the 16 significant digits.
    let sheet =
        run("solve x [m], y [m]:\n  x + y = 2 m\n  x + 1.0000000001 * y = 2.0000000001 m\nend\n");
    let warned = messages(&sheet, "ill-conditioned");
    assert_eq!(warned.len(), 1, "{:?}", sheet.diagnostics);
    assert!(
        warned[0].contains("4e10") || warned[0].contains("4.0e10"),
        "{}",
        warned[0]
    );
    assert!(warned[0].contains("digits"), "{}", warned[0]);
    // A double root: x² − 4 m·x + 4 m² = 0 touches zero at 2 m, and its
    // terms (4 m², 8 m², 4 m²) fix x only to the square root of the
    // residual tolerance. It is one root, not several.
    let sheet = run("solve x [m] ~ 1:\n  x^2 - 4 m * x + 4 m^2 = 0 m^2\nend\n");
    assert_close(si(&sheet, "x"), 2.0, 1e-5);
    assert_eq!(
        codes(&sheet),
        ["ill-conditioned"],
        "{:?}",
        sheet.diagnostics
    );
    // Written as a square, the same root is well-conditioned: a relative
    // change in its terms (2 m) moves it as little.
    let sheet = run_clean("solve x [m] ~ 1:\n  (x - 2 m)^2 = 0 m^2\nend\n");
    assert_close(si(&sheet, "x"), 2.0, 1e-9);
    // A well-posed system gets no such warning.
    let sheet = run_clean("solve x [m], y [m]:\n  x + y = 2 m\n  x - y = 1 m\nend\n");
    assert_close(si(&sheet, "x"), 1.5, 1e-14);
}

#[test]
fn another_root_is_named_only_when_it_solves_the_equations() {
    // x² = 4 m² has roots ±2 m; the search for others keeps the guess's
    // sign, and m·x² − 5 m²·x + 6 m³ = 0 has the roots 2 m and 3 m.
    let sheet = run("solve x [m] ~ 1.5:\n  x^2 - 5 m * x + 6 m^2 = 0 m^2\nend\n");
    assert_close(si(&sheet, "x"), 2.0, 1e-12);
    let warned = messages(&sheet, "several-roots");
    assert_eq!(warned.len(), 1, "{:?}", sheet.diagnostics);
    // The named other root, read back from the message, solves the equation.
    let other: f64 = warned[0]
        .rsplit("but x = ")
        .next()
        .and_then(|rest| rest.split_whitespace().next())
        .and_then(|number| number.parse().ok())
        .unwrap_or(f64::NAN);
    assert_close(other, 3.0, 1e-9);
}

#[test]
fn residuals_of_one_dimension_share_one_unit() {
    let sheet = run_clean(
        "m = 2000 kg\nsolve T1 [kN], T2 [kN]:\n  T1 + T2 = m * g0\n  T1 - T2 = 5 N\nend\n",
    );
    let units: Vec<String> = sheet.solves[0]
        .equations
        .iter()
        .map(|e| e.display.text.to_string())
        .collect();
    assert_eq!(units[0], units[1], "{units:?}");
}
