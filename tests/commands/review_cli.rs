//! `heft report`, `heft signoff` and the review listing of `heft check`, as
//! a user runs them.

use crate::common;

use std::path::PathBuf;

use common::heft;

fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("heft-review-cli-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("scratch dir");
    dir.join(name)
}

#[test]
fn report_writes_html_or_markdown_by_extension() {
    for (name, marker) in [
        ("skid.html", "<!DOCTYPE html>"),
        ("skid.md", "# Compressor skid lift"),
    ] {
        let out = scratch(name);
        let out_text = out.display().to_string();
        let (code, stdout, _) = heft(&["report", "sheets/skid_lift.heft", "-o", &out_text]);
        assert_eq!(code, 0, "{stdout}");
        let written = std::fs::read_to_string(&out).expect("report written");
        assert!(written.starts_with(marker), "{name}");
    }
}

#[test]
fn report_refuses_an_unknown_format_and_never_overwrites_the_sheet() {
    let sheet = scratch("keep.heft");
    std::fs::write(&sheet, "m = 3 kg\n").expect("write sheet");
    let sheet_text = sheet.display().to_string();
    let (code, _, stderr) = heft(&["report", &sheet_text, "-o", &sheet_text]);
    assert_eq!(code, 2);
    assert!(stderr.contains(".html or .md"), "{stderr}");
    let as_html = scratch("keep.html");
    std::fs::copy(&sheet, &as_html).expect("copy");
    let html_text = as_html.display().to_string();
    let (code, _, stderr) = heft(&["report", &html_text, "-o", &html_text]);
    assert_eq!(code, 2);
    assert!(stderr.contains("would overwrite the sheet"), "{stderr}");
    assert_eq!(
        std::fs::read_to_string(&sheet).expect("sheet"),
        "m = 3 kg\n"
    );
    assert_eq!(
        std::fs::read_to_string(&as_html).expect("sheet"),
        "m = 3 kg\n"
    );
}

#[test]
fn report_refuses_an_output_that_is_the_sheet_under_another_name() {
    // A hard link and a symbolic link name the sheet's own file: writing the
    // report there would replace the sheet's text.
    let sheet = scratch("linked.heft");
    std::fs::write(&sheet, "m = 3 kg\n").expect("write sheet");
    let hard = scratch("linked_hard.md");
    let _ = std::fs::remove_file(&hard);
    std::fs::hard_link(&sheet, &hard).expect("hard link");
    let soft = scratch("linked_soft.html");
    let _ = std::fs::remove_file(&soft);
    std::os::unix::fs::symlink(&sheet, &soft).expect("symbolic link");
    let sheet_text = sheet.display().to_string();
    for output in [&hard, &soft] {
        let output_text = output.display().to_string();
        let (code, _, stderr) = heft(&["report", &sheet_text, "-o", &output_text]);
        assert_eq!(code, 2, "{output_text}: {stderr}");
        assert!(stderr.contains("would overwrite the sheet"), "{stderr}");
        assert_eq!(
            std::fs::read_to_string(&sheet).expect("sheet"),
            "m = 3 kg\n",
            "{output_text}"
        );
    }
}

#[test]
fn report_of_a_sheet_with_findings_is_written_and_exits_one() {
    let out = scratch("broken.md");
    let out_text = out.display().to_string();
    let (code, _, _) = heft(&[
        "report",
        "tests/sheets/err/failing_check.heft",
        "-o",
        &out_text,
    ]);
    assert_eq!(code, 1);
    let written = std::fs::read_to_string(&out).expect("report written");
    assert!(written.contains("FAIL"));
}

#[test]
fn check_lists_open_marks_and_the_signoff_state() {
    let (code, out, _) = heft(&["check", "sheets/skid_lift.heft"]);
    assert_eq!(code, 0, "open marks do not fail the calculation");
    assert!(out.contains("open question on a_up (line 21)"), "{out}");
    assert!(
        out.contains("open change   on check T_brake <= WLL"),
        "{out}"
    );
    assert!(out.contains("2 open of 3 review marks"), "{out}");
    assert!(out.contains("not signed off"), "{out}");
    let (_, out, _) = heft(&["check", "sheets/cart_train.heft"]);
    assert!(
        out.contains("signed off by J. Ferreira on 2026-11-20"),
        "{out}"
    );
    assert!(out.contains("current"), "{out}");
}

#[test]
fn signoff_prints_a_line_that_makes_the_sheet_signed_and_a_later_edit_stale() {
    let sheet = scratch("signed.heft");
    let original = "m = 120 kg \"plate\"\na = 0.4 m/s^2\nT [kN] = m * (g0 + a)\ncheck T <= 5 kN\n";
    std::fs::write(&sheet, original).expect("write sheet");
    let sheet_text = sheet.display().to_string();
    let (code, line, _) = heft(&[
        "signoff",
        &sheet_text,
        "--by",
        "K. Brandt",
        "--on",
        "2026-12-04",
    ]);
    assert_eq!(code, 0);
    assert!(line.starts_with("signoff by \"K. Brandt\" on 2026-12-04 fingerprint "));
    assert_eq!(
        std::fs::read_to_string(&sheet).expect("sheet"),
        original,
        "signoff never writes the sheet"
    );

    std::fs::write(&sheet, format!("{original}{line}")).expect("sign");
    let (_, out, _) = heft(&["check", &sheet_text]);
    assert!(
        out.contains("signed off by K. Brandt on 2026-12-04 (line 5): current"),
        "{out}"
    );

    let edited = format!("{original}{line}").replace("0.4 m/s^2", "0.7 m/s^2");
    std::fs::write(&sheet, edited).expect("edit");
    let (_, out, _) = heft(&["check", &sheet_text]);
    assert!(out.contains("STALE"), "{out}");
    assert!(out.contains("changed a; results affected T"), "{out}");
    let report = scratch("signed.md");
    let report_text = report.display().to_string();
    heft(&["report", &sheet_text, "-o", &report_text]);
    let written = std::fs::read_to_string(&report).expect("report");
    assert!(
        written.contains("STALE"),
        "the report says the sign-off is stale"
    );
    assert!(written.contains("changed a; results affected T"));
}

#[test]
fn signoff_refuses_a_sheet_with_errors_and_bad_arguments() {
    let (code, out, stderr) = heft(&[
        "signoff",
        "tests/sheets/err/failing_check.heft",
        "--by",
        "K",
        "--on",
        "2026-12-04",
    ]);
    assert_eq!(code, 1);
    assert!(out.is_empty());
    assert!(
        stderr.contains("signed off only when it is clean"),
        "{stderr}"
    );
    let (code, _, stderr) = heft(&[
        "signoff",
        "sheets/skid_lift.heft",
        "--by",
        "K",
        "--on",
        "04/12/2026",
    ]);
    assert_eq!(code, 2);
    assert!(stderr.contains("YYYY-MM-DD"), "{stderr}");
    let (code, _, _) = heft(&[
        "signoff",
        "sheets/skid_lift.heft",
        "--by",
        "two\nlines",
        "--on",
        "2026-12-04",
    ]);
    assert_eq!(code, 2);
}

#[test]
fn signoff_refuses_while_a_required_change_or_question_is_open() {
    let sheet = scratch("open_marks.heft");
    std::fs::write(
        &sheet,
        "m = 120 kg\nT [kN] = m * g0\ncheck T <= 5 kN\n\
         review change \"Use the weighed mass, 126 kg\" by \"K. Brandt\" on 2026-12-02\n\
         review question \"Which sling?\" by \"K. Brandt\" on 2026-12-02\n",
    )
    .expect("scratch sheet");
    let path = sheet.to_string_lossy().to_string();
    let (code, out, stderr) = heft(&["signoff", &path, "--by", "K. Brandt", "--on", "2026-12-04"]);
    assert_eq!(code, 1, "{stderr}");
    assert!(out.is_empty(), "no sign-off line is printed: {out}");
    assert!(stderr.contains("2 open review marks"), "{stderr}");
    assert!(
        stderr.contains("line 4: change on check T <= 5 kN: Use the weighed mass, 126 kg"),
        "{stderr}"
    );
    assert!(
        stderr.contains("line 5: question on check T <= 5 kN: Which sling?"),
        "{stderr}"
    );
    // Answered, the sheet can be signed.
    let answered = std::fs::read_to_string(&sheet).expect("sheet")
        + "review resolved \"Weighed mass used\" by \"K. Brandt\" on 2026-12-03\n";
    std::fs::write(&sheet, answered).expect("scratch sheet");
    let (code, out, stderr) = heft(&["signoff", &path, "--by", "K. Brandt", "--on", "2026-12-04"]);
    assert_eq!(code, 0, "{stderr}");
    assert!(out.starts_with("signoff by"), "{out}");
}

#[test]
fn check_json_carries_the_review_record() {
    let (_, out, _) = heft(&["check", "--json", "sheets/skid_lift.heft"]);
    let json: serde_json::Value = serde_json::from_str(&out).expect("valid JSON");
    let review = &json["review"];
    assert_eq!(review["fingerprint"].as_str().map(str::len), Some(64));
    let marks = review["marks"].as_array().expect("marks");
    assert_eq!(marks.len(), 3);
    assert_eq!(marks[0]["kind"], "question");
    assert_eq!(marks[0]["open"], true);
    assert_eq!(marks[0]["about"], "a_up");
    assert_eq!(review["signoff"], serde_json::Value::Null);
    let (_, out, _) = heft(&["check", "--json", "sheets/cart_train.heft"]);
    let json: serde_json::Value = serde_json::from_str(&out).expect("valid JSON");
    assert_eq!(json["review"]["signoff"]["current"], true);
    assert_eq!(json["review"]["signoff"]["by"], "J. Ferreira");
}
