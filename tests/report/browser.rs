//! The HTML report in a real browser: each demo sheet's report (and one full
//! of hostile text) is printed to PDF by headless Chromium, and the PDF's
//! text must hold every result and every check. Needs `chromium` and
//! `pdftotext` (Debian: `apt-get install chromium poppler-utils`); where
//! either cannot start, each test says so on standard error and passes,
//! unless `HEFT_REQUIRE_BROWSER=1` (set by `.ci/run`, which installs both)
//! makes it fail.

use crate::common;

use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

use heftsheet::blocks::evaluate_source;
use heftsheet::report::model::{Block, Document};
use heftsheet::report::{self, Format};
use heftsheet::review::Review;

/// Longest a browser may take to print one report.
const PRINT_TIMEOUT: Duration = Duration::from_secs(120);

/// Set (to anything but 0) to make a browser or pdftotext that cannot start
/// fail these tests instead of skipping them.
const REQUIRE_BROWSER: &str = "HEFT_REQUIRE_BROWSER";

fn browser() -> String {
    std::env::var("HEFT_CHROMIUM").unwrap_or_else(|_| "chromium".to_string())
}

/// Whether Chromium and pdftotext both start. When one does not, `what`
/// is skipped with a notice on standard error, or fails if
/// `HEFT_REQUIRE_BROWSER` is set (to anything but 0).
#[track_caller]
fn printing_tools_start(what: &str) -> bool {
    let problems: Vec<String> = [(browser(), "--version"), ("pdftotext".to_string(), "-v")]
        .into_iter()
        .filter_map(|(program, flag)| {
            let status = Command::new(&program)
                .arg(flag)
                .stdout(Stdio::null())
                .stderr(Stdio::null())
                .status();
            match status {
                Ok(status) if status.success() => None,
                Ok(status) => Some(format!("`{program} {flag}` ended with {status}")),
                Err(error) => Some(format!("cannot start `{program}` ({error})")),
            }
        })
        .collect();
    if problems.is_empty() {
        return true;
    }
    let why = format!(
        "{}; install Debian's chromium and poppler-utils, or set HEFT_CHROMIUM",
        problems.join("; ")
    );
    let required = std::env::var_os(REQUIRE_BROWSER).is_some_and(|v| !v.is_empty() && v != "0");
    assert!(
        !required,
        "{REQUIRE_BROWSER} is set, but {what} cannot run: {why}"
    );
    // Written to the process's standard error, not with `eprintln!`, which
    // the test harness captures for a passing test: a skip must be seen.
    let _ = writeln!(std::io::stderr(), "skipped {what}: {why}");
    false
}

fn scratch_dir(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("heft-browser-{}-{name}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("scratch dir");
    dir
}

/// Prints `html` to PDF with headless Chromium and returns the PDF's text.
fn print_to_text(name: &str, html: &str) -> String {
    let dir = scratch_dir(name);
    let page = dir.join("report.html");
    let pdf = dir.join("report.pdf");
    std::fs::write(&page, html).expect("write the report");
    let mut child = Command::new(browser())
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--no-first-run",
            "--no-pdf-header-footer",
        ])
        .arg(format!("--user-data-dir={}", dir.join("profile").display()))
        .arg(format!("--print-to-pdf={}", pdf.display()))
        .arg(format!("file://{}", page.display()))
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .unwrap_or_else(|error| {
            panic!(
                "cannot start `{}` ({error}); install Debian's chromium (apt-get install chromium) or set HEFT_CHROMIUM",
                browser()
            )
        });
    let started = Instant::now();
    loop {
        match child.try_wait() {
            Ok(Some(_)) => break,
            Ok(None) if started.elapsed() < PRINT_TIMEOUT => {
                std::thread::sleep(Duration::from_millis(100));
            }
            _ => {
                let _ = child.kill();
                panic!("the browser did not print {name} within {PRINT_TIMEOUT:?}");
            }
        }
    }
    assert!(pdf.exists(), "the browser wrote no PDF for {name}");
    let output = Command::new("pdftotext")
        .arg(&pdf)
        .arg("-")
        .output()
        .unwrap_or_else(|error| panic!("cannot run pdftotext ({error}); install poppler-utils"));
    assert!(output.status.success(), "pdftotext failed on {name}");
    let text = String::from_utf8_lossy(&output.stdout).into_owned();
    let _ = std::fs::remove_dir_all(&dir);
    collapse(&text)
}

/// Whitespace runs as one space, so text wrapped across lines still matches.
fn collapse(text: &str) -> String {
    text.split_whitespace().collect::<Vec<_>>().join(" ")
}

/// Every text of a result and a check the printed report must show.
fn expected_texts(document: &Document) -> Vec<String> {
    let mut texts = Vec::new();
    for block in document.sections.iter().flat_map(|section| &section.blocks) {
        match block {
            Block::Cell(cell) => texts.push(cell.result.plain()),
            Block::Check(check) => {
                texts.push(check.verdict.clone());
                texts.extend(check.label.clone());
                texts.extend(check.substituted.as_ref().map(|s| s.plain()));
                texts.extend(check.utilization.clone());
            }
            _ => {}
        }
    }
    texts.into_iter().map(|text| collapse(&text)).collect()
}

#[test]
fn printed_demo_reports_show_every_result_and_check() {
    if !printing_tools_start("printing the demo reports") {
        return;
    }
    let paths = common::sheets_in("sheets");
    assert!(paths.len() >= 3);
    for path in paths {
        let name = path
            .file_stem()
            .and_then(|stem| stem.to_str())
            .unwrap_or("sheet")
            .to_string();
        let evaluated = common::evaluate_sheet(&path);
        let document = report::document(&evaluated, &Review::of(&evaluated));
        let printed = print_to_text(&name, &report::html::write(&document));
        let expected = expected_texts(&document);
        assert!(
            expected.len() > evaluated.n_cells(),
            "{name}: too few texts to look for"
        );
        // pdftotext sometimes drops the blanks in a narrow table cell
        // ("0 N ≤ 1 N" reads "0N≤1N"): compare with blanks removed.
        let squeeze = |text: &str| {
            text.chars()
                .filter(|c| !c.is_whitespace())
                .collect::<String>()
        };
        let printed_squeezed = squeeze(&printed);
        let missing: Vec<&String> = expected
            .iter()
            .filter(|t| !printed.contains(t.as_str()) && !printed_squeezed.contains(&squeeze(t)))
            .collect();
        assert!(
            missing.is_empty(),
            "{name}: not in the printed report: {missing:?}\n---\n{printed}"
        );
        // Title, caution and page furniture reach the paper too.
        let title = evaluated.header().title.clone().unwrap_or_default();
        assert!(printed.contains(&title), "{name}: title missing");
        assert!(printed.contains("ASME B30"), "{name}: caution missing");
        assert!(
            printed.contains("Page 1 of"),
            "{name}: page numbers missing"
        );
    }
}

#[test]
fn printed_hostile_text_shows_as_text_and_runs_nothing() {
    if !printing_tools_start("printing the hostile report") {
        return;
    }
    let source = common::read_file(
        &Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/hostile_text.heft"),
    );
    let html = report::render(&evaluate_source(&source), Format::Html);
    let printed = print_to_text("hostile", &html);
    for shown in [
        "desc <script>alert('d')</script> \"quoted\" & <iframe src=x>",
        "force </div></section><h1>fake</h1>",
        "label <svg onload=alert(1)> & 'single'",
        "Heading <img src=x onerror=alert(1)> & more",
        "mark <script>alert('m')</script>",
    ] {
        assert!(
            printed.contains(shown),
            "not shown as text: {shown}\n---\n{printed}"
        );
    }
}
