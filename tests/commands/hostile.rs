//! The hostile corpus (`tests/sheets/hostile/`) and a bounded fuzzing
//! property, through the real binary and every command: each run ends on
//! its own with exit code 0, 1 or 2 within a time bound, and nothing from a
//! sheet reaches the terminal or a text file as a control sequence.

use crate::common;

use std::io::Read;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

use proptest::prelude::*;

/// What every hostile text field of `controls_everywhere.heft` holds (the
/// corpus's generator wrote it there): a carriage return and erase-line
/// that would rewrite a printed verdict, an OSC 52 clipboard write, a
/// clear-screen, a right-to-left override, a C1 CSI, DEL, backspaces, NUL.
const PAYLOAD: &str = "\r\x1b[K \x1b]52;c;cm0gLXJmIH4=\x07 \x1b[2J \u{202e}pass\u{202c} \u{9b}31m \x7f \x08\x08\x08\x00 end";

/// The longest any command may take on a corpus sheet (a debug-profile
/// binary on a busy 2-core machine; a run takes well under a second).
const TIME_BOUND: Duration = Duration::from_secs(30);

struct Outcome {
    code: i32,
    stdout: Vec<u8>,
    stderr: Vec<u8>,
}

/// Runs the binary in `dir`, failing the test if it runs past `bound` or
/// ends on a signal (an abort or a crash).
fn heft_in(dir: &Path, args: &[&str], bound: Duration) -> Outcome {
    let mut child = Command::new(env!("CARGO_BIN_EXE_heft"))
        .args(args)
        .current_dir(dir)
        .env_remove("NO_COLOR")
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("the heft binary runs");
    let mut stdout = child.stdout.take().expect("stdout is piped");
    let mut stderr = child.stderr.take().expect("stderr is piped");
    let out = std::thread::spawn(move || {
        let mut bytes = Vec::new();
        let _ = stdout.read_to_end(&mut bytes);
        bytes
    });
    let err = std::thread::spawn(move || {
        let mut bytes = Vec::new();
        let _ = stderr.read_to_end(&mut bytes);
        bytes
    });
    let started = Instant::now();
    let status = loop {
        if let Some(status) = child.try_wait().expect("the child can be waited for") {
            break status;
        }
        if started.elapsed() > bound {
            let _ = child.kill();
            panic!("`heft {}` ran past {bound:?}", args.join(" "));
        }
        std::thread::sleep(Duration::from_millis(5));
    };
    let code = status
        .code()
        .unwrap_or_else(|| panic!("`heft {}` ended on a signal: {status}", args.join(" ")));
    Outcome {
        code,
        stdout: out.join().unwrap_or_default(),
        stderr: err.join().unwrap_or_default(),
    }
}

/// The characters a terminal or viewer obeys rather than shows, as the
/// test sees them (its own list, not heft's): C0 but the line break, DEL,
/// C1, the bidirectional controls of Unicode UAX #9, line and paragraph
/// separators.
fn is_obeyed(c: char) -> bool {
    (c.is_control() && c != '\n')
        || matches!(c, '\u{061C}' | '\u{200E}' | '\u{200F}' | '\u{202A}'..='\u{202E}' | '\u{2066}'..='\u{2069}' | '\u{2028}' | '\u{2029}')
}

/// `text` without its select-graphic-rendition sequences (`ESC [ … m`).
fn without_colour(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    let mut rest = text;
    while let Some(at) = rest.find("\x1b[") {
        out.push_str(&rest[..at]);
        let body = &rest[at + 2..];
        let length = body
            .bytes()
            .take_while(|b| b.is_ascii_digit() || *b == b';')
            .count();
        if body.as_bytes().get(length) == Some(&b'm') {
            rest = &body[length + 1..];
        } else {
            out.push_str("\x1b[");
            rest = body;
        }
    }
    out.push_str(rest);
    out
}

/// Asserts `bytes` hold nothing a terminal would obey; with `colour`, only
/// colour sequences are allowed, and nothing else.
#[track_caller]
fn assert_shows_safely(bytes: &[u8], colour: bool, what: &str) {
    let text = String::from_utf8_lossy(bytes);
    let text = if colour {
        without_colour(&text)
    } else {
        text.into_owned()
    };
    if let Some((at, c)) = text.char_indices().find(|&(_, c)| is_obeyed(c)) {
        let from = text[..at]
            .char_indices()
            .rev()
            .nth(40)
            .map_or(0, |(i, _)| i);
        panic!(
            "{what}: U+{:04X} reaches the output at byte {at}, after {:?}",
            u32::from(c),
            &text[from..at]
        );
    }
}

fn corpus() -> Vec<PathBuf> {
    let sheets = common::sheets_in("tests/sheets/hostile");
    assert!(sheets.len() >= 7, "the corpus shrank: {sheets:?}");
    sheets
}

fn temp_dir(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("heft-hostile-{}-{name}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("a temporary folder");
    dir
}

/// Every command on `sheet` (a file name in `dir`): exit codes, output
/// shown safely, colour output that differs from plain output only by
/// colour, report files free of hidden controls.
fn every_command(dir: &Path, sheet: &str) -> Vec<(String, Outcome)> {
    let commands: Vec<Vec<&str>> = vec![
        vec!["check", sheet],
        vec!["check", "--json", sheet],
        vec!["check", "--color", "always", sheet],
        vec!["check", "--csv", sheet],
        vec!["audit", sheet],
        vec!["audit", "--json", sheet],
        vec!["audit", "--color", "always", sheet],
        vec!["report", sheet, "-o", "out.md"],
        vec!["report", sheet, "-o", "out.html"],
        vec!["diff", sheet, sheet],
        vec!["diff", "--json", sheet, sheet],
        vec!["signoff", sheet, "--by", "A. Checker", "--on", "2026-12-03"],
    ];
    let mut outcomes = Vec::new();
    for args in commands {
        let what = format!("`heft {}`", args.join(" "));
        let outcome = heft_in(dir, &args, TIME_BOUND);
        assert!(
            [0, 1, 2].contains(&outcome.code),
            "{what} exited {}",
            outcome.code
        );
        let colour = args.contains(&"always");
        assert_shows_safely(&outcome.stdout, colour, &format!("{what}, standard output"));
        assert_shows_safely(&outcome.stderr, colour, &format!("{what}, standard error"));
        if args[0] == "report" && outcome.code != 2 {
            let written = std::fs::read(dir.join(args[3])).expect("the report was written");
            assert_shows_safely(&written, false, &format!("{what}, the report file"));
        }
        outcomes.push((args.join(" "), outcome));
    }
    let plain = |command: &str| {
        outcomes
            .iter()
            .find(|(c, _)| c == command)
            .map(|(_, o)| String::from_utf8_lossy(&o.stdout).into_owned())
            .unwrap_or_default()
    };
    for command in ["check", "audit"] {
        assert_eq!(
            without_colour(&plain(&format!("{command} --color always {sheet}"))),
            plain(&format!("{command} {sheet}")),
            "`heft {command}` in colour is not the plain text plus colour on {sheet}"
        );
    }
    outcomes
}

#[test]
fn every_command_on_the_hostile_corpus_ends_cleanly_and_shows_text_safely() {
    let dir = temp_dir("corpus");
    for sheet in corpus() {
        let name = sheet
            .file_name()
            .and_then(|n| n.to_str())
            .expect("a UTF-8 name");
        std::fs::copy(&sheet, dir.join(name)).expect("copy a corpus sheet");
        every_command(&dir, name);
    }
}

#[test]
fn json_keeps_the_hostile_text_exact() {
    let source = std::fs::read_to_string("tests/sheets/hostile/controls_everywhere.heft")
        .expect("the corpus sheet");
    assert!(
        source.contains(PAYLOAD),
        "the corpus sheet holds the payload"
    );
    let dir = temp_dir("json");
    std::fs::write(dir.join("sheet.heft"), &source).expect("write the sheet");
    let outcome = heft_in(&dir, &["check", "--json", "sheet.heft"], TIME_BOUND);
    let json: serde_json::Value =
        serde_json::from_slice(&outcome.stdout).expect("`heft check --json` prints JSON");
    let label = json["checks"][0]["label"]
        .as_str()
        .expect("the check's label");
    assert_eq!(label, format!("rope holds {PAYLOAD}"));
    let cell = json["cells"]
        .as_array()
        .and_then(|cells| cells.iter().find(|c| c["name"] == "T_rope"))
        .expect("the cell T_rope");
    assert_eq!(cell["description"], format!("tension {PAYLOAD}"));
}

#[test]
fn a_rewritten_verdict_cannot_pass_for_a_pass() {
    // The attack as reported: a failing check whose label returns the
    // carriage and erases the line, then prints a passing line.
    let dir = temp_dir("verdict");
    std::fs::write(
        dir.join("sheet.heft"),
        "F = 30 kN\nWLL = 25 kN\ncheck F <= WLL \"\r\x1b[K     pass  F <= WLL:  utilization 76.9 %\"\n",
    )
    .expect("write the sheet");
    let outcome = heft_in(&dir, &["check", "sheet.heft"], TIME_BOUND);
    assert_eq!(outcome.code, 1);
    let text = String::from_utf8_lossy(&outcome.stdout);
    let verdict = text
        .lines()
        .find(|line| line.contains("F <= WLL:"))
        .expect("the check's line");
    // What a terminal shows is the line as printed: it starts with FAIL.
    assert!(verdict.trim_start().starts_with("FAIL"), "{verdict}");
    assert!(verdict.contains("\\u{d}\\u{1b}[K"), "{verdict}");
}

#[test]
fn a_hostile_file_name_is_shown_escaped() {
    let dir = temp_dir("name");
    let name = "hoist\x1b]52;c;cm0=\x07\u{202e}.heft";
    std::fs::write(dir.join(name), "m = 4 kg\nbad = m +\n").expect("write the sheet");
    let outcomes = every_command(&dir, name);
    let (_, check) = &outcomes[0];
    assert!(
        String::from_utf8_lossy(&check.stdout)
            .contains("hoist\\u{1b}]52;c;cm0=\\u{7}\\u{202e}.heft")
    );
}

#[test]
fn descriptions_keep_every_backslash_but_their_escapes() {
    let evaluated = heftsheet::blocks::evaluate_source(
        "m = 4 kg \"scale C:\\new\\table, \\\"tared\\\", 1\\\\2\"\n",
    );
    let cell = evaluated.cell("m").expect("the cell m");
    assert_eq!(
        cell.description,
        Some("scale C:\\new\\table, \"tared\", 1\\2")
    );
}

/// Lines the fuzzer builds sheets from: valid statements of every kind,
/// broken ones, hostile text, and the header.
const FRAGMENTS: &[&str] = &[
    "m = 1850 kg \"load\"",
    "a = 0.35 m/s^2 ± 0.05 m/s^2",
    "W [kN] = m * g0",
    "T [lbf] = m * (g0 + a)",
    "check W <= 25 kN \"rope\"",
    "check T <= 2 kip",
    "x = max(m, 3 lbm) / 2",
    "solve s [m] ~ 1:",
    "  s * s = 2 m^2",
    "end",
    "case heavy \"heavier\":",
    "  m = 2 t",
    "simulate t from 0 s to 1 s:",
    "  y' = v",
    "  v' = -g0",
    "  y(0) = 0 m",
    "  v(0) = 1 m/s",
    "  stop when y <= 0 m",
    "body b: W, T",
    "+++",
    "title = \"\\u001b[2J\"",
    "# heading \u{1b}[31m",
    "> note \r\u{1b}[K",
    "m2 = 3 kg \"\u{202e}\u{9b}\u{7}\"",
    "v = 1 m^99999",
    "z = ((((1",
    "u [(((m)))] = 1 m",
    "review question \"why\" by \"K\" on 2026-12-02",
    "q = 1 m^2147483647*m",
    "\u{feff}k = 1",
];

fn fuzz_line() -> impl Strategy<Value = String> {
    prop_oneof![
        4 => proptest::sample::select(FRAGMENTS).prop_map(str::to_string),
        1 => "\\PC{0,40}",
        1 => proptest::collection::vec(any::<u8>(), 0..24)
            .prop_map(|bytes| String::from_utf8_lossy(&bytes).into_owned()),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 24, ..ProptestConfig::default() })]

    /// Sheets built from statement fragments, hostile text and random
    /// bytes, through every command: exit 0, 1 or 2, no signal, within the
    /// time bound, and no hidden control in the output.
    #[test]
    fn every_command_ends_cleanly_on_generated_sheets(
        lines in proptest::collection::vec(fuzz_line(), 1..16),
        seed in any::<u32>(),
    ) {
        let dir = temp_dir(&format!("fuzz-{seed}"));
        std::fs::write(dir.join("fuzz.heft"), lines.join("\n")).expect("write the sheet");
        every_command(&dir, "fuzz.heft");
        let _ = std::fs::remove_dir_all(&dir);
    }
}

#[test]
fn a_file_of_carriage_returns_alone_is_said_to_be_one() {
    // Line breaks written as CR alone (old Mac files): heft reads one line
    // and says why, rather than an unexplained parse error.
    let evaluated =
        heftsheet::blocks::evaluate_source("m = 4 kg\rW [N] = m * g0\rcheck W <= 50 N\r");
    let finding = evaluated
        .diagnostics
        .iter()
        .find(|d| d.code.as_str() == "encoding-error")
        .expect("the file's line breaks are named");
    assert!(
        finding.message.contains("carriage return alone"),
        "{}",
        finding.message
    );
    assert_eq!(evaluated.summary().passed, 0);
}

#[test]
fn findings_on_a_very_long_line_show_an_excerpt_and_count_the_rest() {
    // 10,000 undefined names on one 69 KB line: each finding shows the text
    // around its own name, three per line are drawn and the rest counted,
    // so the output stays small (it was 1 GB: the whole line per finding).
    let names: Vec<String> = (0..10_000).map(|k| format!("u{k}")).collect();
    let dir = temp_dir("long-line");
    std::fs::write(
        dir.join("long.heft"),
        format!("x = max({})\n", names.join(", ")),
    )
    .unwrap();
    let outcome = heft_in(&dir, &["check", "long.heft"], TIME_BOUND);
    assert_eq!(outcome.code, 1);
    let shown = String::from_utf8_lossy(&outcome.stdout).into_owned()
        + &String::from_utf8_lossy(&outcome.stderr);
    assert!(shown.len() < 200_000, "{} bytes", shown.len());
    // Every line of the findings is short (the sheet's own table row
    // shows the formula as written, whole).
    let findings = &shown[shown.find("error[").expect("a finding")..];
    assert!(findings.lines().all(|line| line.chars().count() < 400));
    assert_eq!(shown.matches("error[undefined-name]").count(), 3);
    assert!(
        shown.contains("9997 more"),
        "{}",
        &shown[shown.len().saturating_sub(2000)..]
    );
    // The JSON lists every one.
    let json = heft_in(&dir, &["check", "--json", "long.heft"], TIME_BOUND);
    let json: serde_json::Value = serde_json::from_slice(&json.stdout).unwrap();
    let listed = json["diagnostics"].as_array().map_or(0, Vec::len);
    assert_eq!(listed, 10_000);
    std::fs::remove_dir_all(&dir).ok();
}
