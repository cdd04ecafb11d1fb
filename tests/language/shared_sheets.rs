//! Shared sheets: `use "PATH" as NAME` and `NAME.cell`. The oracle is the
//! same sheet with the used values written in: reading a cell of another
//! sheet must give exactly what writing its value would. Then what must
//! never be silent: a ring of sheets, a missing file, a toleranced value,
//! an edit to a register under two sign-offs.

use std::path::{Path, PathBuf};

use heftsheet::base::Code;
use heftsheet::eval::{CellStatus, CheckStatus, Evaluated};
use heftsheet::review::{Review, SignOffState};

/// A fresh folder for one test's files.
fn folder(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("heft-shared-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("a scratch folder");
    dir
}

fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let path = dir.join(name);
    if let Some(parent) = path.parent() {
        std::fs::create_dir_all(parent).expect("a folder for the sheet");
    }
    std::fs::write(&path, text).expect("a sheet written");
    path
}

fn run(path: &Path) -> Evaluated {
    let bytes = std::fs::read(path).expect("a sheet to read");
    heftsheet::pipeline::run_file_bytes(&bytes, path)
}

fn codes(evaluated: &Evaluated) -> Vec<Code> {
    evaluated.diagnostics.iter().map(|d| d.code).collect()
}

const REGISTER: &str = "\
+++
title = \"Test register\"
revision = \"B\"
+++
WLL_sling = 2 t          \"round sling\"
m_spreader = 85 kg       \"spreader bar\"
F_rated [kN] = WLL_sling * g0
";

const USING: &str = "\
use \"gear/register.heft\" as gear
m_load = 1400 kg
m_tot = m_load + gear.m_spreader
F_leg [kN] = m_tot * g0 / 2
F_ratio = F_leg / gear.F_rated
check F_leg <= gear.WLL_sling * g0 \"each leg\"
";

#[test]
fn a_used_cell_reads_exactly_as_its_value_written_in() {
    let dir = folder("oracle");
    write(&dir, "gear/register.heft", REGISTER);
    let using = run(&write(&dir, "pick.heft", USING));
    assert!(using.diagnostics.is_empty(), "{:?}", using.diagnostics);
    // The oracle: the register's values written into the sheet by hand
    // (F_rated as its formula over the written rating).
    let written = USING
        .replace("use \"gear/register.heft\" as gear\n", "")
        .replace("gear.m_spreader", "85 kg")
        .replace("gear.WLL_sling", "2 t")
        .replace("gear.F_rated", "(2 t * g0)");
    let oracle = heftsheet::run(&written);
    assert!(oracle.diagnostics.is_empty(), "{:?}", oracle.diagnostics);
    for name in ["m_tot", "F_leg", "F_ratio"] {
        let (got, want) = (using.cell(name), oracle.cell(name));
        let got = got.and_then(|c| c.value).map(|q| q.si.to_bits());
        let want = want.and_then(|c| c.value).map(|q| q.si.to_bits());
        assert!(got.is_some() && got == want, "{name}: {got:?} vs {want:?}");
    }
    assert_eq!(
        using.checks[0].utilization.map(f64::to_bits),
        oracle.checks[0].utilization.map(f64::to_bits)
    );
}

#[test]
fn an_edit_to_the_register_makes_both_demo_signoffs_stale() {
    let dir = folder("signoffs");
    let sheets = Path::new(env!("CARGO_MANIFEST_DIR")).join("sheets");
    let register = std::fs::read_to_string(sheets.join("gear/register.heft")).expect("register");
    write(&dir, "gear/register.heft", &register);
    let users = ["motor_pick.heft", "trolley_gearbox_pick.heft"];
    for user in users {
        let text = std::fs::read_to_string(sheets.join(user)).expect("a demo sheet");
        let evaluated = run(&write(&dir, user, &text));
        let review = Review::of(&evaluated);
        assert_eq!(
            review.signoff().map(|s| &s.state),
            Some(&SignOffState::Current),
            "{user} is signed as it stands"
        );
    }
    // The register's chain hoist is re-rated: one line of one file.
    let edited = register.replace("m_chain_hoist = 21 kg", "m_chain_hoist = 24 kg");
    assert_ne!(edited, register);
    write(&dir, "gear/register.heft", &edited);
    for user in users {
        let evaluated = run(&dir.join(user));
        let review = Review::of(&evaluated);
        let Some(SignOffState::Stale(changes)) = review.signoff().map(|s| &s.state) else {
            panic!("{user}: the sign-off must be stale once the register changed");
        };
        assert_eq!(changes.changed, vec!["use/gear".to_string()], "{user}");
    }
}

#[test]
fn sheets_that_use_each_other_are_named_as_a_ring() {
    let dir = folder("ring");
    write(&dir, "b.heft", "use \"a.heft\" as a\ny = 2 m\n");
    let a = run(&write(
        &dir,
        "a.heft",
        "use \"b.heft\" as b\nz = b.y2 + 1 m\n",
    ));
    let ring = a
        .diagnostics
        .iter()
        .find(|d| d.code == Code::IncludeCycle)
        .expect("an include-cycle on a's use line");
    assert!(
        ring.message.contains("a.heft uses") && ring.message.contains("b.heft uses"),
        "{}",
        ring.message
    );
    let own = run(&write(
        &dir,
        "self.heft",
        "use \"self.heft\" as me\nx = 1 m\n",
    ));
    assert_eq!(codes(&own), vec![Code::IncludeCycle]);
}

#[test]
fn a_missing_sheet_or_one_without_a_folder_is_said_so() {
    let dir = folder("missing");
    let missing = run(&write(
        &dir,
        "pick.heft",
        "use \"nowhere.heft\" as gear\nx = gear.y\n",
    ));
    assert_eq!(
        codes(&missing),
        vec![Code::IncludeMissing, Code::UndefinedName]
    );
    let no_file = heftsheet::run("use \"gear.heft\" as gear\n");
    assert_eq!(codes(&no_file), vec![Code::IncludeMissing]);
    assert!(
        no_file.diagnostics[0]
            .message
            .contains("not read from a file")
    );
}

#[test]
fn a_toleranced_used_cell_is_never_read_as_its_nominal() {
    let dir = folder("tolerance");
    write(
        &dir,
        "inputs.heft",
        "m_load = 1900 kg ± 5 %\nm_rig = 40 kg\nm_both = m_load + m_rig\n",
    );
    let sheet = "use \"inputs.heft\" as job\n\
                 W [kN] = job.m_load * g0\n\
                 W_both [kN] = job.m_both * g0\n\
                 W_rig [kN] = job.m_rig * g0\n\
                 check W <= 19 kN \"nominal 18.63 kN passes; +5 % would not\"\n";
    let evaluated = run(&write(&dir, "pick.heft", sheet));
    for name in ["W", "W_both"] {
        let cell = evaluated.cell(name).expect("a cell");
        assert_eq!(cell.status, CellStatus::Error, "{name}");
    }
    assert_eq!(
        evaluated.cell("W_rig").map(|c| c.status),
        Some(CellStatus::Ok)
    );
    assert_ne!(evaluated.checks[0].status, CheckStatus::Passed);
    assert!(codes(&evaluated).contains(&Code::IncludeError));
}

#[test]
fn a_used_sheet_with_errors_is_an_error_on_the_use_line() {
    let dir = folder("errors");
    write(&dir, "gear.heft", "WLL = 2 t\nbad = WLL + 1 m\n");
    let evaluated = run(&write(
        &dir,
        "pick.heft",
        "use \"gear.heft\" as gear\nm = gear.WLL\n",
    ));
    assert_eq!(codes(&evaluated), vec![Code::IncludeError]);
    assert!(evaluated.diagnostics[0].message.contains("line 2"));
    // What could be read is read: the rating itself has a value.
    assert_eq!(evaluated.cell("m").map(|c| c.status), Some(CellStatus::Ok));
}

#[test]
fn a_load_case_cannot_override_a_used_cell() {
    let dir = folder("case");
    write(&dir, "gear/register.heft", REGISTER);
    let sheet = format!("{USING}case heavy:\n  gear.m_spreader = 120 kg\nend\n");
    let evaluated = run(&write(&dir, "pick.heft", &sheet));
    assert!(
        !evaluated.diagnostics.is_empty() && !evaluated.is_clean(),
        "overriding a used sheet's cell must be refused"
    );
}

#[test]
fn the_diff_names_the_used_sheet_and_its_cells_that_moved() {
    let (old_dir, new_dir) = (folder("diff-old"), folder("diff-new"));
    write(&old_dir, "gear/register.heft", REGISTER);
    write(
        &new_dir,
        "gear/register.heft",
        &REGISTER
            .replace("revision = \"B\"", "revision = \"C\"")
            .replace("WLL_sling = 2 t", "WLL_sling = 1.6 t"),
    );
    let old = run(&write(&old_dir, "pick.heft", USING));
    let new = run(&write(&new_dir, "pick.heft", USING));
    let diff = heftsheet::diff::compare(&old, &new);
    assert!(!diff.is_same(), "the fingerprint covers the used sheet");
    assert_eq!(diff.uses.len(), 1);
    let used = &diff.uses[0];
    assert_eq!(used.alias, "gear");
    assert_eq!(
        used.old.as_ref().and_then(|s| s.revision.as_deref()),
        Some("B")
    );
    assert_eq!(
        used.new.as_ref().and_then(|s| s.revision.as_deref()),
        Some("C")
    );
    let names: Vec<&str> = used.cells.iter().map(|c| c.name.as_str()).collect();
    assert_eq!(names, ["WLL_sling", "F_rated"]);
}
