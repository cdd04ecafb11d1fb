//! Traps a sheet can fall into without an error, each caught with a
//! warning: hand-typed conversion factors of any dimension (the list is the
//! unit catalog's own conversions), degrees given to a trig function as
//! radians, and a plain 1/s shown as an angular speed. Scenarios are
//! invented.

use crate::common;

use heftsheet::base::{Code, Diagnostic};
use heftsheet::pipeline::run as check_source;
use heftsheet::units::{UnitSystem, catalog};

fn findings(source: &str, code: Code) -> Vec<Diagnostic> {
    check_source(source)
        .diagnostics
        .into_iter()
        .filter(|d| d.code == code)
        .collect()
}

/// The hand-typed factor `heft audit` lists for `source`, with its
/// relative error.
fn audited_factor(source: &str) -> (f64, f64) {
    let typed = common::the_hand_typed_conversion(source);
    (
        typed.typed_factor.unwrap_or(f64::NAN),
        typed.relative_error.unwrap_or(f64::NAN),
    )
}

#[test]
fn factors_of_other_dimensions_are_found_in_check_and_audit() {
    // Each factor against its exact value from the definitions: 1 ft =
    // 0.3048 m (1959 agreement), so m/s² → ft/s² is 1/0.3048 = 3.2808399;
    // 1 bar = 1e5 Pa (SI Brochure Table 8) and 1 psi = 6894.7572931684 Pa
    // (1959 pound, CGPM 1901 g0, NIST SP 811 App. B), so bar → psi is
    // 14.503774; 1 lbf = 4.4482216152605 N, so kN → lbf is 224.80894.
    let cases = [
        (
            "a_lift_m = 1.2 m/s^2\na_lift [ft/s^2] = a_lift_m * 3.281\n",
            3.281,
            1.0 / 0.3048,
        ),
        (
            "p = 6 bar\np_psi [psi] = p * 14.5\n",
            14.5,
            1e5 / 6_894.757_293_168_361,
        ),
        (
            "F = 12 kN\nF_lbf [lbf] = F * 224.8\n",
            224.8,
            1000.0 / 4.448_221_615_260_5,
        ),
        // With nothing but the operand's dimension to go on: a computed
        // acceleration times the foot factor.
        (
            "F = 300 N\nm = 120 kg\na = F / m\na_ft = a * 3.281\n",
            3.281,
            1.0 / 0.3048,
        ),
    ];
    for (source, typed, exact) in cases {
        assert_eq!(
            findings(source, Code::HandConversionFactor).len(),
            1,
            "heft check misses the factor in\n{source}"
        );
        let (factor, error) = audited_factor(source);
        assert_eq!(factor, typed);
        common::assert_close(error, (typed - exact) / exact, 1e-9);
    }
}

#[test]
fn heft_check_and_heft_audit_both_report_the_bar_to_psi_factor() {
    let dir = tempfile::tempdir().expect("a temporary folder");
    let path = dir.path().join("clamp_supply.heft");
    std::fs::write(
        &path,
        "p_line = 6 bar \"shop air\"\np_psi [psi] = p_line * 14.5 \"for the US chart\"\n",
    )
    .expect("the sheet is written");
    let file = path.to_string_lossy().to_string();
    for command in ["check", "audit"] {
        let (_, out, _) = common::heft(&[command, &file]);
        assert!(
            out.contains("hand-conversion-factor") && out.contains("`14.5`"),
            "heft {command}:\n{out}"
        );
    }
}

/// Whether a unit is one catalog unit spelled another way (`°` for `deg`).
fn is_alias(symbol: &str) -> bool {
    let units = catalog().units();
    let Some(index) = units.iter().position(|u| u.symbol == symbol) else {
        return false;
    };
    units[..index]
        .iter()
        .any(|u| u.dimension == units[index].dimension && u.factor == units[index].factor)
}

#[test]
fn every_conversion_between_catalog_units_of_two_systems_is_a_hand_factor() {
    // The oracle is the catalog itself: for every two units of one dimension,
    // one US customary and one not, the factor between them typed to 4
    // figures times a quantity in the first, shown in the second, is found,
    // and so it is with the result's unit left out, except for integer
    // factors (12 in per ft), which count only with both units written.
    let mut n_pairs = 0;
    let mut n_unshown = 0;
    let mut missed = Vec::new();
    for from in catalog().units() {
        for to in catalog().units() {
            let across =
                (from.system == UnitSystem::UsCustomary) != (to.system == UnitSystem::UsCustomary);
            if !across
                || from.dimension != to.dimension
                || from.symbol == "%"
                || to.symbol == "%"
                || is_alias(&from.symbol)
                || is_alias(&to.symbol)
            {
                continue;
            }
            let factor = from.si_factor / to.si_factor;
            let typed = heftsheet::units::format_significant(factor, 4);
            let source = format!("x = 7 {}\ny [{}] = x * {typed}\n", from.symbol, to.symbol);
            n_pairs += 1;
            if findings(&source, Code::HandConversionFactor).len() != 1 {
                missed.push(source);
            }
            // Without the result's unit only the list derived from the
            // catalog can tell; an integer factor or its reciprocal is then
            // taken for a count.
            let integer = |f: f64| (f - f.round()).abs() < 1e-9 * f;
            if !integer(factor) && !integer(1.0 / factor) {
                let source = format!(
                    "x = 7 {}
y = x * {typed}
",
                    from.symbol
                );
                n_unshown += 1;
                if findings(&source, Code::HandConversionFactor).len() != 1 {
                    missed.push(source);
                }
            }
        }
    }
    assert!(missed.is_empty(), "missed:\n{}", missed.join("\n"));
    assert!(n_pairs > 100, "{n_pairs} pairs");
    println!(
        "catalog factor oracle: {n_pairs} unit pairs with both units written, {n_unshown} with only the operand's, all found"
    );
}

#[test]
fn the_derived_list_holds_the_familiar_factors_with_their_exact_values() {
    // Exact values from the definitions (1959 agreement, CGPM 1901, NIST SP
    // 811 App. B): each familiar rounded factor is in the list derived from
    // the catalog, with the exact value it rounds.
    let expected: [(&str, &str, f64); 6] = [
        ("kg", "lbm", 1.0 / 0.453_592_37),
        ("ft*lbf", "J", 0.3048 * 4.448_221_615_260_5),
        ("hp", "W", 745.699_871_582_270_2),
        ("in^2", "mm^2", 645.16),
        ("rpm", "rad/s", std::f64::consts::PI / 30.0),
        ("psi", "kPa", 6.894_757_293_168_361),
    ];
    for (from, to, exact) in expected {
        let factor = heftsheet::audit::hand_factors()
            .find(|f| f.from == from && f.to == to)
            .unwrap_or_else(|| panic!("no {from} → {to} factor"));
        common::assert_close(factor.exact().to_f64(), exact, 1e-15);
    }
}

#[test]
fn coefficients_are_still_not_conversion_factors() {
    // Common practice: load and dynamic factors, halves and thirds of a
    // length, an orifice coefficient; none is a conversion, whatever
    // catalog ratio it happens to be near.
    for source in [
        "n = 4\nk = n * 1.2\n",
        "F = 3 kN\nF_d = F * 1.25\n",
        "L = 6 m\nL_3 = L * 0.333\n",
        "A = 0.002 m^2\nh = 1.5 m\nQ = 0.62 * A * sqrt(2 * g0 * h)\n",
        "x = 3 m\ny = x * 2.5\n",
        "t = 4 s\nt_all = t * 57.3\n",
    ] {
        let found = findings(source, Code::HandConversionFactor);
        assert!(found.is_empty(), "{source}: {found:#?}");
    }
}

/// The number after `(`name` = ` or `(= ` in a help.
fn number_in(help: &str, after: &str) -> f64 {
    let start = help
        .find(after)
        .map(|at| at + after.len())
        .unwrap_or_else(|| panic!("no `{after}` in {help}"));
    let rest = &help[start..];
    let end = rest.find([' ', ')']).unwrap_or(rest.len());
    rest[..end].parse().expect("a number")
}

#[test]
fn an_angle_in_degrees_given_to_sin_is_a_warning_with_the_degrees_fix() {
    // Two legs at 60° from horizontal carry W / (2 sin 60°) = 10 kN / √3 =
    // 5.7735027 kN each (closed-form statics); taken as 60 rad, heft would
    // show −16.40 kN with no word.
    let source = "W = 10 kN\nθ = 60 \"degrees\"\nT [kN] = W / (2 * sin(θ))\n";
    let found = findings(source, Code::DegreesAsRadians);
    assert_eq!(found.len(), 1, "{found:#?}");
    let help = found[0].help.as_deref().unwrap_or("");
    assert!(help.contains("`θ = 60 deg`"), "{help}");
    let leg = number_in(help, "(`T` = ");
    let exact = 10.0 / 3f64.sqrt();
    assert!(
        (leg - exact).abs() <= 0.5e-3,
        "{leg} is not {exact} to 4 figures"
    );
    // The fix, applied, gives that number and no warning.
    let fixed = source.replace("θ = 60 ", "θ = 60 deg ");
    let evaluated = heftsheet::pipeline::run(&fixed);
    common::assert_close(common::si(&evaluated, "T"), exact * 1000.0, 1e-12);
    assert!(findings(&fixed, Code::DegreesAsRadians).is_empty());
}

#[test]
fn a_plain_angle_beyond_a_turn_is_taken_for_degrees_and_a_radian_one_is_not() {
    // 75 as radians is nearly 12 turns: more likely degrees; 1.2 and
    // 2π f t (with π, so radians) are left alone, and so is an angle
    // written with its unit.
    assert_eq!(
        findings("W = 5 kN\nH = W * cos(75)\n", Code::DegreesAsRadians).len(),
        1
    );
    for source in [
        "W = 5 kN\nH = W * cos(1.2)\n",
        "f = 3 Hz\nt = 2 s\ny = sin(2 * pi * f * t)\n",
        "θ = 75 deg \"degrees\"\ny = cos(θ)\n",
        "h = 2 m\nL = 3 m\nθ = atan(h / L)\ny = cos(θ)\n",
    ] {
        let found = findings(source, Code::DegreesAsRadians);
        assert!(found.is_empty(), "{source}: {found:#?}");
    }
}

#[test]
fn a_plain_rate_shown_in_rpm_gives_both_readings() {
    // A drum of diameter D under a belt at v turns v / (π D) = 0.26526 rev/s
    // = 15.915 rev/min (closed form); read as radians per second the same
    // number is 0.26526 × 60 / (2π) = 2.5330 rpm, which heft shows.
    let source = "v = 0.5 m/s\nD = 0.6 m\nn [rpm] = v / (pi * D)\n";
    let found = findings(source, Code::AmbiguousAngularSpeed);
    assert_eq!(found.len(), 1, "{found:#?}");
    let per_second = 0.5 / (std::f64::consts::PI * 0.6);
    let revolutions = heftsheet::units::format_significant(per_second * 60.0, 4);
    let radians =
        heftsheet::units::format_significant(per_second * 60.0 / std::f64::consts::TAU, 4);
    assert_eq!((revolutions.as_str(), radians.as_str()), ("15.92", "2.533"));
    let message = &found[0].message;
    assert!(
        message.contains(&format!("{radians} rpm"))
            && message.contains(&format!("{revolutions} rpm")),
        "{message}"
    );
    // Saying which silences it, and `* 1 rev` gives the drum's speed.
    let fixed = source.replace("(pi * D)\n", "(pi * D) * 1 rev\n");
    assert!(findings(&fixed, Code::AmbiguousAngularSpeed).is_empty());
    let evaluated = heftsheet::pipeline::run(&fixed);
    common::assert_close(common::shown(&evaluated, "n"), per_second * 60.0, 1e-12);
    // A rate written with an angle is no question.
    for source in [
        "n = 1750 rpm\nω [rad/s] = n * 2\n",
        "θ = 90 deg\nt = 2 s\nω [rad/s] = θ / t\n",
    ] {
        let found = findings(source, Code::AmbiguousAngularSpeed);
        assert!(found.is_empty(), "{source}: {found:#?}");
    }
}

#[test]
fn a_check_of_a_plain_rate_against_an_angular_speed_gives_both_readings() {
    // The same drum: 0.26526 1/s is 2.533 rpm as radians per second and
    // 15.92 rpm as revolutions per second (closed form, as above); the
    // check passes either way here, but says which reading it judged.
    let source =
        "v = 0.5 m/s\nD = 0.6 m\nn = v / (pi * D)\ncheck n <= 20 rpm \"gearbox input limit\"\n";
    let found = findings(source, Code::AmbiguousAngularSpeed);
    assert_eq!(found.len(), 1, "{found:#?}");
    assert!(
        found[0].message.contains("2.533 rpm") && found[0].message.contains("15.92 rpm"),
        "{}",
        found[0].message
    );
    let said = source.replace("check n <=", "check n * 1 rev <=");
    assert!(findings(&said, Code::AmbiguousAngularSpeed).is_empty());
}

#[test]
fn a_polar_direction_in_degrees_is_a_warning_too() {
    // polar(40 N, 30°) = (34.64, 20) N (closed form); polar(40 N, 30) is
    // 30 rad and points elsewhere.
    let source = "F = polar(40 N, 30)\nF_x = F.x\n";
    assert_eq!(findings(source, Code::DegreesAsRadians).len(), 1);
    let written = "F = polar(40 N, 30 deg)\nF_x = F.x\n";
    assert!(findings(written, Code::DegreesAsRadians).is_empty());
    let evaluated = heftsheet::pipeline::run(written);
    common::assert_close(
        common::si(&evaluated, "F_x"),
        40.0 * 3f64.sqrt() / 2.0,
        1e-12,
    );
}
