//! The `heft` binary as a user runs it: exit codes, text, JSON, conversions.

use crate::common;

use std::path::Path;

use common::heft;

fn write_temp(name: &str, text: &str) -> String {
    let dir = std::env::temp_dir().join(format!("heft-cli-tests-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    let path = dir.join(name);
    std::fs::write(&path, text).expect("write temp sheet");
    path.display().to_string()
}

#[test]
fn a_clean_demo_sheet_exits_zero_with_its_results_and_the_caution() {
    let (code, out, _) = heft(&["check", "sheets/skid_lift.heft"]);
    assert_eq!(code, 0, "{out}");
    assert!(out.contains("T_up"));
    assert!(out.contains("19.22 kN"), "{out}");
    assert!(out.contains("pass"));
    assert!(out.contains("Caution"));
    assert!(out.contains("ASME B30"));
}

#[test]
fn errors_and_failed_checks_exit_one() {
    let (code, out, _) = heft(&["check", "tests/sheets/err/failing_check.heft"]);
    assert_eq!(code, 1);
    assert!(out.contains("FAIL"));
    assert!(out.contains("check-failed"));
    let (code, _, _) = heft(&["check", "tests/sheets/err/weight_as_mass_hoist.heft"]);
    assert_eq!(code, 1);
}

#[test]
fn usage_and_file_errors_exit_two() {
    let (code, _, err) = heft(&["check", "no/such/sheet.heft"]);
    assert_eq!(code, 2);
    assert!(err.contains("cannot read"), "{err}");
    let (code, _, _) = heft(&["check", "--no-such-flag", "sheets/skid_lift.heft"]);
    assert_eq!(code, 2);
    let (code, _, _) = heft(&["frobnicate"]);
    assert_eq!(code, 2);
}

#[test]
fn json_output_follows_the_schema() {
    let (code, out, _) = heft(&["check", "--json", "sheets/skid_lift.heft"]);
    assert_eq!(code, 0);
    let json: serde_json::Value = serde_json::from_str(&out).expect("valid JSON");
    let cells = json["cells"].as_array().expect("cells");
    let tension = cells.iter().find(|c| c["name"] == "T_up").expect("T_up");
    assert_eq!(tension["unit"], "kN");
    assert_eq!(tension["status"], "ok");
    assert_eq!(
        tension["dimension"],
        serde_json::json!({"length": 1, "mass": 1, "time": -2})
    );
    // T = (1850 + 42) kg × (9.80665 + 0.35) m/s² = 19217.1818 N, by hand.
    let si = tension["si"].as_f64().unwrap_or(f64::NAN);
    assert!((si - 1892.0 * 10.15665).abs() < 1e-9);
    assert!((tension["value"].as_f64().unwrap_or(f64::NAN) - si / 1000.0).abs() < 1e-12);
    assert!(tension["line"].as_u64().is_some());
    let checks = json["checks"].as_array().expect("checks");
    assert_eq!(checks.len(), 3);
    for check in checks {
        assert_eq!(check["passed"], true);
        assert!(
            check["utilization"]
                .as_f64()
                .is_some_and(|u| u > 0.0 && u < 1.0)
        );
        assert!(check["line"].as_u64().is_some());
        assert!(check["label"].is_string());
    }
    assert_eq!(json["diagnostics"], serde_json::json!([]));
}

#[test]
fn json_diagnostics_carry_code_line_and_column() {
    let path = write_temp("json_diag.heft", "m = 4 kg\nW [N] = m\nx = m / 0 kg\n");
    let (code, out, _) = heft(&["check", "--json", &path]);
    assert_eq!(code, 1);
    let json: serde_json::Value = serde_json::from_str(&out).expect("valid JSON");
    let diagnostics = json["diagnostics"].as_array().expect("diagnostics");
    assert_eq!(diagnostics[0]["code"], "mass-weight-mixup");
    assert_eq!(diagnostics[0]["line"], 2);
    assert_eq!(diagnostics[0]["column"], 9);
    assert_eq!(diagnostics[0]["severity"], "error");
    assert_eq!(diagnostics[1]["code"], "division-by-zero");
    let statuses: Vec<&str> = json["cells"]
        .as_array()
        .into_iter()
        .flatten()
        .filter_map(|c| c["status"].as_str())
        .collect();
    assert_eq!(statuses, ["ok", "error", "error"]);
}

#[test]
fn convert_prints_the_exact_factor_chain() {
    let (code, out, _) = heft(&["convert", "3 slug", "lbm"]);
    assert_eq!(code, 0);
    assert!(out.starts_with("3 slug = 96.5221456692913"), "{out}");
    assert!(out.contains("196133/6096"), "{out}");
    assert!(out.contains("1959"), "{out}");
    let (code, out, _) = heft(&["convert", "100 lbm * g0", "lbf"]);
    assert_eq!(code, 0);
    assert!(out.starts_with("100 lbm * g0 = 100 lbf"), "{out}");
    let (code, out, _) = heft(&["convert", "3 slug", "lbf"]);
    assert_eq!(code, 2);
    assert!(out.contains("a weight is mass × g0"), "{out}");
}

#[test]
fn rendered_diagnostics_point_at_the_right_characters() {
    // A line with θ, µ and ° before the error: carets must count characters.
    let source = "θ = 30°\nμ = 0.3 \"µ measured\"\nF [N] = μ * θ + 5 kg\n";
    let evaluated = heftsheet::blocks::evaluate_source(source);
    let text =
        heftsheet::base::render::render(&evaluated.diagnostics, "unicode.heft", source, false);
    insta::assert_snapshot!(text);
}

#[test]
fn the_text_report_of_a_broken_sheet() {
    let source = std::fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/sheets/err/blocked_chain.heft"),
    )
    .expect("corpus sheet");
    let evaluated = heftsheet::blocks::evaluate_source(&source);
    let text = heftsheet::cli::check_text("blocked_chain.heft", &source, &evaluated);
    insta::assert_snapshot!(text);
}

#[test]
fn the_notebook_needs_a_terminal_and_points_scripts_to_check() {
    // `cargo test` gives the binary pipes, not a terminal.
    for args in [
        &["sheets/skid_lift.heft"][..],
        &["edit", "sheets/skid_lift.heft"],
    ] {
        let (code, out, err) = heft(args);
        assert_eq!(code, 2, "{out}{err}");
        assert!(err.contains("the notebook needs a terminal"), "{err}");
        assert!(err.contains("heft check FILE"), "{err}");
    }
    let (code, _, err) = heft(&[]);
    assert_eq!(code, 2);
    assert!(err.contains("Usage"), "{err}");
    // The subcommands are unchanged by the bare-file form.
    assert_eq!(heft(&["check", "sheets/skid_lift.heft"]).0, 0);
}
