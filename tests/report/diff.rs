//! Revision diff across two revisions of the skid-lift demo sheet
//! (`sheets/skid_lift.heft`, revision A, and the fixture
//! `tests/revisions/skid_lift_rev_b.heft`, revision B).

use crate::common;

use std::path::Path;

use heftsheet::blocks::evaluate_source;
use heftsheet::diff::{self, CellChange, CellChangeKind, CheckOutcome, RevisionDiff};

fn read(relative: &str) -> String {
    std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join(relative))
        .unwrap_or_else(|error| panic!("{relative}: {error}"))
}

fn revisions() -> RevisionDiff {
    let old = evaluate_source(&read("sheets/skid_lift.heft"));
    let new = evaluate_source(&read("tests/revisions/skid_lift_rev_b.heft"));
    diff::compare(&old, &new)
}

fn cell<'a>(diff: &'a RevisionDiff, name: &str) -> &'a CellChange {
    diff.cells
        .iter()
        .find(|cell| cell.name == name)
        .unwrap_or_else(|| panic!("`{name}` is not in the diff"))
}

const G0: f64 = 9.80665; // standard gravity, m/s², exact (3rd CGPM 1901)

#[test]
fn added_removed_and_edited_cells() {
    let diff = revisions();
    assert_eq!(diff.old_revision.as_deref(), Some("A"));
    assert_eq!(diff.new_revision.as_deref(), Some("B"));
    assert!(!diff.is_same());
    assert_eq!(cell(&diff, "m_hook").kind, CellChangeKind::Added);
    assert_eq!(cell(&diff, "W_hoist").kind, CellChangeKind::Removed);
    let m_tot = cell(&diff, "m_tot");
    assert_eq!(m_tot.kind, CellChangeKind::Edited);
    let formula = m_tot.formula.as_ref().expect("formula edit");
    assert_eq!(formula.old.as_deref(), Some("m_skid + m_rig"));
    assert_eq!(formula.new.as_deref(), Some("m_skid + m_rig + m_hook"));
    let m_rig = cell(&diff, "m_rig");
    let description = m_rig.description.as_ref().expect("description edit");
    assert_eq!(
        description.new.as_deref(),
        Some("long spreader bar, shackles, slings")
    );
    // Unchanged: m_skid, a_brake, WLL_hoist, dyn_factor (a ratio whose inputs move together).
    assert_eq!(diff.n_unchanged, 4);
    assert!(diff.cells.iter().all(|c| c.name != "dyn_factor"));
}

#[test]
fn results_whose_formula_did_not_change_but_whose_inputs_did() {
    let diff = revisions();
    // T_up = m_tot (g0 + a_up), Newton's second law for an accelerating hoist
    // (closed form): A: 1892 kg, 0.35 m/s²; B: 1933 kg, 0.5 m/s².
    let old_t = 1892.0 * (G0 + 0.35);
    let new_t = 1933.0 * (G0 + 0.5);
    let t_up = cell(&diff, "T_up");
    assert_eq!(t_up.kind, CellChangeKind::ResultOnly);
    assert!(t_up.formula.is_none());
    assert_eq!(t_up.moved_inputs, ["m_tot", "a_up"]);
    common::assert_close(t_up.old_value.as_ref().expect("old").si, old_t, 1e-12);
    common::assert_close(t_up.new_value.as_ref().expect("new").si, new_t, 1e-12);
    let percent = t_up.change_percent.expect("a % change");
    common::assert_close(percent, (new_t - old_t) / old_t * 100.0, 1e-9);
    // W = m g0 moves with the mass alone.
    let w = cell(&diff, "W");
    common::assert_close(
        w.change_percent.expect("%"),
        (1933.0 - 1892.0) / 1892.0 * 100.0,
        1e-9,
    );
}

#[test]
fn checks_that_changed_status() {
    let diff = revisions();
    let braking = diff
        .checks
        .iter()
        .find(|check| check.expression == "T_brake <= WLL")
        .expect("the braking check");
    assert!(braking.status_changed());
    assert_eq!(braking.old_status.map(CheckOutcome::as_str), Some("pass"));
    assert_eq!(braking.new_status.map(CheckOutcome::as_str), Some("FAIL"));
    // Utilization T_brake / WLL: A: 1892 (g0 + 0.8) / 25000; B: 1933 (g0 + 0.8) / 20000.
    common::assert_close(
        braking.old_utilization.expect("old"),
        1892.0 * (G0 + 0.8) / 25_000.0,
        1e-12,
    );
    common::assert_close(
        braking.new_utilization.expect("new"),
        1933.0 * (G0 + 0.8) / 20_000.0,
        1e-12,
    );
    let hoisting = diff
        .checks
        .iter()
        .find(|check| check.expression == "T_up <= WLL")
        .expect("the hoisting check");
    assert!(
        !hoisting.status_changed(),
        "still passes, at a higher utilization"
    );
}

#[test]
fn a_sheet_compared_with_itself_has_no_changes() {
    let source = read("sheets/cart_train.heft");
    let diff = diff::compare(&evaluate_source(&source), &evaluate_source(&source));
    assert!(diff.is_same());
    assert!(diff.cells.is_empty());
    assert!(diff.checks.is_empty());
    assert_eq!(diff.n_unchanged, evaluate_source(&source).n_cells());
}

/// The exit code and standard output of `heft`.
fn heft(args: &[&str]) -> (i32, String) {
    let (code, out, _) = common::heft(args);
    (code, out)
}

#[test]
fn heft_diff_as_text_and_json() {
    let (code, text) = heft(&[
        "diff",
        "sheets/skid_lift.heft",
        "tests/revisions/skid_lift_rev_b.heft",
    ]);
    assert_eq!(code, 1, "revisions that differ exit 1");
    assert!(text.contains("added    m_hook"), "{text}");
    assert!(text.contains("removed  W_hoist"), "{text}");
    assert!(
        text.contains("T_up     19.22 kN → 19.92 kN  +3.68 %  (inputs moved: m_tot, a_up)"),
        "{text}"
    );
    assert!(text.contains("T_brake <= WLL: pass → FAIL"), "{text}");

    let (code, json) = heft(&[
        "diff",
        "--json",
        "sheets/skid_lift.heft",
        "tests/revisions/skid_lift_rev_b.heft",
    ]);
    assert_eq!(code, 1);
    let json: serde_json::Value = serde_json::from_str(&json).expect("valid JSON");
    assert_eq!(json["schema"], "heft-diff/1");
    assert_eq!(json["old"]["revision"], "A");
    assert_eq!(json["new"]["revision"], "B");
    let cells = json["cells"].as_array().expect("cells");
    let t_up = cells.iter().find(|c| c["name"] == "T_up").expect("T_up");
    assert_eq!(t_up["change"], "result");
    assert_eq!(t_up["new"]["unit"], "kN");
    let checks = json["checks"].as_array().expect("checks");
    assert!(
        checks
            .iter()
            .any(|c| c["status_changed"] == true && c["new_status"] == "FAIL")
    );

    let (code, text) = heft(&["diff", "sheets/cart_train.heft", "sheets/cart_train.heft"]);
    assert_eq!(code, 0, "the same content exits 0");
    assert!(text.contains("same content"));
}
