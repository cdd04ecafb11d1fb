//! `heft audit` and the lint findings of `heft check`, as a user runs them.

use crate::common;

use std::path::Path;
use std::process::Command;

/// The exit code and standard output of `heft`.
fn heft(args: &[&str]) -> (i32, String) {
    let (code, out, _) = common::heft(args);
    (code, out)
}

#[test]
fn a_clean_sheet_audits_with_exit_zero_and_every_conversion() {
    let (code, out) = heft(&["audit", "sheets/cart_train.heft"]);
    assert_eq!(code, 0, "{out}");
    assert!(
        out.starts_with("Conversion audit: Parts-cart train"),
        "{out}"
    );
    // 1 lbf = 4.4482216152605 N exactly (NIST SP 811, 2008, App. B; 1959 pound, CGPM 1901 g0).
    assert!(out.contains("1450 lbf"), "{out}");
    assert!(out.contains("1 lbf = 4.4482216152605 N"), "{out}");
    assert!(
        out.contains("International Yard and Pound Agreement, 1959"),
        "{out}"
    );
    assert!(out.contains("Gravity values used"), "{out}");
    assert!(out.contains("US customary"), "{out}");
    // 5 written lbf, 1 mph, 6 results shown in lbf, lbm or ft/s^2 on this sheet.
    assert!(
        out.contains("Summary: 12 conversions (12 exact by definition, 0 rounded); 1 gravity value; 13 cells, 0 errors, 0 warnings; 3 checks: 3 passed; 0 notes"),
        "{out}"
    );
    assert!(out.contains("Checked by:"), "{out}");
    assert!(out.contains("Caution"), "{out}");
}

#[test]
fn warnings_make_the_audit_exit_one_and_show_rounded_factors() {
    let (code, out) = heft(&["audit", "tests/sheets/audit/bad/gc_divides_twice.heft"]);
    assert_eq!(code, 1, "{out}");
    assert!(out.contains("ROUNDED"), "{out}");
    assert!(out.contains("warning[hand-conversion-factor]"), "{out}");
    assert!(out.contains("1 rounded"), "{out}");
}

#[test]
fn infos_alone_do_not_fail_the_audit() {
    let (code, out) = heft(&["audit", "sheets/slide_fixture.heft"]);
    assert_eq!(code, 0, "{out}");
    assert!(out.contains("mixed-systems"), "{out}");
}

#[test]
fn check_shows_lint_findings_and_fails_only_when_asked() {
    let sheet = "tests/sheets/audit/bad/weight_by_9_81.heft";
    let (code, out) = heft(&["check", sheet]);
    assert_eq!(code, 0, "{out}");
    assert!(out.contains("warning[hand-conversion-factor]"), "{out}");
    assert!(out.contains("write `m_pos * g0` (= 4.707 kN)"), "{out}");
    assert!(out.contains("1 warning"), "{out}");
    let (code, _) = heft(&["check", "--deny-warnings", sheet]);
    assert_eq!(code, 1);
    let (_, json) = heft(&["check", "--json", sheet]);
    let json: serde_json::Value = serde_json::from_str(&json).expect("valid JSON");
    assert_eq!(json["diagnostics"][0]["code"], "hand-conversion-factor");
    assert_eq!(json["diagnostics"][0]["severity"], "warning");
    assert_eq!(json["diagnostics"][0]["line"], 5);
    assert_eq!(json["diagnostics"][0]["column"], 17);
}

#[test]
fn audit_json_follows_its_schema() {
    let (code, out) = heft(&[
        "audit",
        "--json",
        "tests/sheets/audit/bad/slug_by_32_2.heft",
    ]);
    assert_eq!(code, 1);
    let json: serde_json::Value = serde_json::from_str(&out).expect("valid JSON");
    assert_eq!(json["schema"], "heft-audit/1");
    assert_eq!(json["passed"], false);
    assert_eq!(json["title"], "Drum on the maintenance hoist");
    let conversions = json["conversions"].as_array().expect("conversions");
    let typed = conversions
        .iter()
        .find(|c| c["kind"] == "hand-typed")
        .expect("the hand-typed 32.2");
    assert_eq!(typed["written"], "/ 32.2");
    assert_eq!(typed["typed_factor"], 32.2);
    assert_eq!(typed["exactness"], "rounded");
    // g0 in ft/s² is 196133/6096 exactly (CGPM 1901 g0, 1959 foot).
    assert_eq!(typed["factor_exact"], "196133/6096");
    let error = typed["relative_error"].as_f64().unwrap_or(f64::NAN);
    assert!((error - 0.0008065955).abs() < 1e-9, "{error}");
    let drum = conversions
        .iter()
        .find(|c| c["written"] == "800 lbf")
        .expect("800 lbf");
    assert_eq!(drum["exactness"], "exact");
    assert_eq!(drum["si_unit"], "N");
    assert_eq!(drum["line"], 5);
    assert!(
        drum["sources"][0]
            .as_str()
            .is_some_and(|s| s.contains("NIST SP 811"))
    );
    let gravity = json["gravity"].as_array().expect("gravity");
    assert!(
        gravity
            .iter()
            .any(|g| g["kind"] == "bare number" && g["written"] == "32.2")
    );
    assert!(gravity.iter().any(|g| g["kind"] == "unit defined with g0"));
    let systems = json["systems"].as_array().expect("systems");
    assert!(systems.iter().any(|s| s["system"] == "US customary"));
    let summary = &json["summary"];
    assert_eq!(summary["rounded"], 1);
    assert_eq!(summary["warnings"], 1);
    assert_eq!(summary["errors"], 1);
    assert_eq!(
        summary["conversions"].as_u64(),
        Some(conversions.len() as u64)
    );
    let codes: Vec<&str> = json["diagnostics"]
        .as_array()
        .into_iter()
        .flatten()
        .filter_map(|d| d["code"].as_str())
        .collect();
    assert_eq!(codes, ["mass-weight-mixup", "hand-conversion-factor"]);
}

#[test]
fn the_audit_text_of_a_mixed_sheet() {
    let source = std::fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("tests/sheets/audit/bad/gravity_9_81_and_32_2.heft"),
    )
    .expect("corpus sheet");
    let evaluated = heftsheet::pipeline::run(&source);
    let text = heftsheet::cli::audit_text("gravity_9_81_and_32_2.heft", &evaluated);
    insta::assert_snapshot!(text);
}

#[test]
fn the_documented_audit_example_is_what_heft_audit_prints() {
    let readme =
        std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("docs/audit.md"))
            .expect("docs/audit.md");
    let section = readme
        .split("## Auditing a sheet")
        .nth(1)
        .expect("an Auditing a sheet section");
    let blocks: Vec<&str> = section.split("```").collect();
    // Blocks alternate text and code: [text, sheet, text, output, …].
    let (sheet, printed) = (blocks[1].trim_start_matches('\n'), blocks[3]);
    let dir = std::env::temp_dir().join(format!("heft-audit-readme-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    std::fs::write(dir.join("plate.heft"), sheet).expect("write the sheet");
    let output = Command::new(env!("CARGO_BIN_EXE_heft"))
        .args(["audit", "--color", "never", "plate.heft"])
        .current_dir(&dir)
        .output()
        .expect("the heft binary runs");
    assert_eq!(output.status.code(), Some(1));
    assert_eq!(
        String::from_utf8_lossy(&output.stdout).trim(),
        printed.trim(),
        "docs/audit.md's example output is stale"
    );
}
