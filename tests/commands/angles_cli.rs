//! Angles that cannot be mistaken, end to end through the binary: inverse
//! trigonometric results shown in degrees unless a unit is declared, values
//! written in `deg`/`rad`/`rev` shown as written, what is derived from an
//! angle by `+`, `−` and plain factors shown as an angle, trigonometry of a
//! plain number beyond a turn warned with the `deg` fix, and a plain 1/s
//! shown in rpm warned with both readings. Piecewise formulas in `heft
//! check` and the report.
//!
//! Reference values: sin 30° = 1/2, so asin(1/2) = 30° = π/6 rad; atan2(1, 1)
//! = 45°; 1 deg = π/180 rad (NIST SP 811, 2008, table 6); 1 rpm = π/30 rad/s.

// The reference values use std's maths functions, independent of heft's libm.
#![allow(clippy::disallowed_methods)]

use crate::common::heft;

/// Writes `text` to a sheet of its own in a fresh folder; returns its path.
fn sheet(name: &str, text: &str) -> (tempfile::TempDir, String) {
    let dir = tempfile::tempdir().expect("a temporary folder");
    let path = dir.path().join(format!("{name}.heft"));
    std::fs::write(&path, text).expect("write the sheet");
    let path = path.to_string_lossy().into_owned();
    (dir, path)
}

/// The line of `heft check` that shows cell `name`.
fn shown_line<'o>(output: &'o str, name: &str) -> &'o str {
    output
        .lines()
        .find(|line| line.trim_start().starts_with(&format!("{name} ")))
        .unwrap_or_else(|| panic!("no line for {name} in\n{output}"))
}

/// The JSON object of cell `name` from `heft check --json`.
fn json_cell(json: &serde_json::Value, name: &str) -> serde_json::Value {
    json["cells"]
        .as_array()
        .and_then(|cells| cells.iter().find(|c| c["name"] == name))
        .cloned()
        .unwrap_or_else(|| panic!("no cell {name}"))
}

const ANGLES: &str = "\
ratio = 0.5
θ = asin(ratio)             \"from the rise and the leg\"
θ_r [rad] = asin(ratio)
φ = atan2(1 m, 1 m)
θ_w = 60 deg
ψ = 2 * θ - φ / 2
s = sin(θ)
";

#[test]
fn inverse_trigonometry_shows_in_degrees_unless_a_unit_is_declared() {
    let (_dir, path) = sheet("angles", ANGLES);
    let (code, out, err) = heft(&["check", &path]);
    assert_eq!(code, 0, "{out}{err}");
    assert!(shown_line(&out, "θ").contains("→ 30.00 deg"), "{out}");
    assert!(shown_line(&out, "θ_r").contains("→ 0.5236 rad"), "{out}");
    assert!(shown_line(&out, "φ").contains("→ 45.00 deg"), "{out}");
    assert!(shown_line(&out, "θ_w").contains("60 deg"), "{out}");
    // 2 × 30° − 45° / 2 = 37.5°: derived by + − and plain factors.
    assert!(shown_line(&out, "ψ").contains("→ 37.50 deg"), "{out}");
    // A sine is a plain number, not an angle.
    assert!(shown_line(&out, "s").contains("→ 0.5000"), "{out}");
    assert!(!shown_line(&out, "s").contains("deg"), "{out}");
}

#[test]
fn the_value_stays_radians_inside_and_in_json() {
    let (_dir, path) = sheet("angles", ANGLES);
    let (_, out, _) = heft(&["check", "--json", &path]);
    let json: serde_json::Value = serde_json::from_str(&out).expect("JSON");
    let theta = json_cell(&json, "θ");
    assert_eq!(theta["unit"], "deg");
    let shown = theta["value"].as_f64().expect("a value");
    let si = theta["si"].as_f64().expect("an SI value");
    assert!((shown - 30.0).abs() < 1e-12, "{theta}");
    assert!((si - std::f64::consts::PI / 6.0).abs() < 1e-15, "{theta}");
    // The calculation is unchanged: sin of it is exactly what sin(π/6) gives.
    let s = json_cell(&json, "s")["si"].as_f64().expect("a value");
    assert!((s - (std::f64::consts::PI / 6.0).sin()).abs() < 1e-15);
    let psi = json_cell(&json, "ψ")["si"].as_f64().expect("a value");
    assert!((psi - (2.0 * std::f64::consts::PI / 6.0 - std::f64::consts::PI / 8.0)).abs() < 1e-15);
}

#[test]
fn trigonometry_of_a_plain_number_beyond_a_turn_warns_with_the_deg_fix() {
    let (_dir, path) = sheet("beyond", "θ = 35\ns = sin(θ)\n");
    let (_, out, _) = heft(&["check", &path]);
    assert!(out.contains("warning[degrees-as-radians]"), "{out}");
    assert!(out.contains("35 deg"), "the deg fix: {out}");
    // sin 35° = 0.573576…, the number the fix gives.
    let expected = format!("{:.4}", (35.0f64).to_radians().sin());
    assert!(out.contains(&expected), "{expected} in {out}");
}

#[test]
fn a_plain_one_per_second_shown_in_rpm_offers_both_readings() {
    let (_dir, path) = sheet("drum", "v = 0.5 m/s\nD = 0.6 m\nn [rpm] = v / (pi * D)\n");
    let (_, out, _) = heft(&["check", &path]);
    assert!(out.contains("warning[ambiguous-angular-speed]"), "{out}");
    // As radians per second: 0.5 / (π · 0.6) rad/s = 2.533 rpm; as
    // revolutions: 0.26526 rev/s = 15.92 rev/min.
    let radians = 0.5 / (std::f64::consts::PI * 0.6) * 30.0 / std::f64::consts::PI;
    let turns = 0.5 / (std::f64::consts::PI * 0.6) * 60.0;
    assert!(
        out.contains(&format!("{radians:.3} rpm")),
        "{radians:.3} in {out}"
    );
    assert!(
        out.contains(&format!("{turns:.2} rpm")),
        "{turns:.2} in {out}"
    );
    assert!(out.contains("* 1 rev") && out.contains("* 1 rad"), "{out}");
}

#[test]
fn check_and_the_report_show_a_piecewise_formula_and_its_branch() {
    let text = "v_hoist = 0.6 m/s\nphi_dyn = if v_hoist <= 0.25 m/s then 1.10 else if v_hoist <= 1 m/s then 1.25 else 1.40\n";
    let (dir, path) = sheet("piecewise", text);
    let (code, out, err) = heft(&["check", &path]);
    assert_eq!(code, 0, "{out}{err}");
    assert!(shown_line(&out, "phi_dyn").contains("→ 1.250"), "{out}");
    let report = dir.path().join("piecewise.md");
    let report_path = report.to_string_lossy().into_owned();
    let (code, out, err) = heft(&["report", &path, "-o", &report_path]);
    assert_eq!(code, 0, "{out}{err}");
    let markdown = std::fs::read_to_string(&report).expect("the report");
    assert!(
        markdown.contains("if v<sub>hoist</sub> ≤ 0.25 m/s then 1.10 else if"),
        "{markdown}"
    );
    assert!(
        markdown.contains("0.6 m/s ≤ 0.25 m/s does not hold; 0.6 m/s ≤ 1 m/s holds, so 1.25"),
        "{markdown}"
    );
}
