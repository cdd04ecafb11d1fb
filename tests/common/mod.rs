//! Helpers shared by the integration tests: one place that runs a sheet
//! through the public API, so a refactor touches one function. Each test
//! binary (`tests/AREA/main.rs`) takes this file in with
//! `#[path = "../common/mod.rs"] mod common;` and uses the part it needs.

#![allow(dead_code)]

use std::path::{Path, PathBuf};

use heftsheet::blocks::evaluate_source;
use heftsheet::eval::{CellStatus, Evaluated};

/// Evaluates `source` and returns the model.
#[track_caller]
pub fn run(source: &str) -> Evaluated {
    evaluate_source(source)
}

/// Evaluates `source`, asserts it has no diagnostics at all, and returns it.
#[track_caller]
pub fn run_clean(source: &str) -> Evaluated {
    let evaluated = evaluate_source(source);
    let codes: Vec<String> = evaluated
        .diagnostics
        .iter()
        .map(|d| format!("{} {}: {}", d.severity.as_str(), d.code, d.message))
        .collect();
    assert!(codes.is_empty(), "expected no diagnostics, got {codes:#?}");
    evaluated
}

/// The SI value of cell `name`, which must have evaluated.
#[track_caller]
pub fn si(evaluated: &Evaluated, name: &str) -> f64 {
    let cell = evaluated
        .cell(name)
        .unwrap_or_else(|| panic!("no cell `{name}`"));
    assert_eq!(
        cell.status,
        CellStatus::Ok,
        "cell `{name}` did not evaluate"
    );
    cell.value.map(|v| v.si).unwrap_or(f64::NAN)
}

/// The value of cell `name` in its display unit.
#[track_caller]
pub fn shown(evaluated: &Evaluated, name: &str) -> f64 {
    let cell = evaluated
        .cell(name)
        .unwrap_or_else(|| panic!("no cell `{name}`"));
    cell.display.value_of(si(evaluated, name))
}

/// Asserts `actual` is within `relative` of `expected`.
#[track_caller]
pub fn assert_close(actual: f64, expected: f64, relative: f64) {
    let error = if expected == 0.0 {
        actual.abs()
    } else {
        ((actual - expected) / expected).abs()
    };
    assert!(
        error <= relative,
        "{actual} differs from {expected} by {error:e} relative (allowed {relative:e})"
    );
}

/// The codes of all diagnostics, in order.
pub fn codes(evaluated: &Evaluated) -> Vec<&'static str> {
    evaluated
        .diagnostics
        .iter()
        .map(|d| d.code.as_str())
        .collect()
}

/// Runs the `heft` binary from the project folder with colour off; returns
/// the exit code, standard output and standard error.
pub fn heft(args: &[&str]) -> (i32, String, String) {
    let output = std::process::Command::new(env!("CARGO_BIN_EXE_heft"))
        .args(args)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .env("NO_COLOR", "1")
        .output()
        .expect("the heft binary runs");
    (
        output.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&output.stdout).into_owned(),
        String::from_utf8_lossy(&output.stderr).into_owned(),
    )
}

/// The text of the file at `path`. Panics naming the path when it cannot be
/// read, so an unreadable corpus sheet fails its test instead of passing as
/// an empty one.
#[track_caller]
/// The pipeline over the sheet at `path` as `heft check` runs it: its
/// `use` lines read the sheets beside it.
pub fn run_sheet(path: &Path) -> Evaluated {
    run_as(&read_file(path), path)
}

/// The pipeline over `text` as if it were the sheet at `path` (its `use`
/// lines read the sheets beside that file).
pub fn run_as(text: &str, path: &Path) -> Evaluated {
    heftsheet::pipeline::run_with(text, &heftsheet::include::FileLoader::for_sheet(path))
}

/// The evaluation of the sheet at `path`, without the lints, its `use`
/// lines reading the sheets beside it.
pub fn evaluate_sheet(path: &Path) -> Evaluated {
    heftsheet::blocks::evaluate_source_with(
        &read_file(path),
        &heftsheet::include::FileLoader::for_sheet(path),
    )
}

pub fn read_file(path: &Path) -> String {
    std::fs::read_to_string(path)
        .unwrap_or_else(|error| panic!("cannot read {}: {error}", path.display()))
}

/// The entries of `folder`; panics naming the folder when it or an entry
/// cannot be read.
fn entries_of(folder: &Path) -> Vec<PathBuf> {
    std::fs::read_dir(folder)
        .unwrap_or_else(|error| panic!("cannot read {}: {error}", folder.display()))
        .map(|entry| {
            entry
                .unwrap_or_else(|error| panic!("cannot list {}: {error}", folder.display()))
                .path()
        })
        .collect()
}

fn is_sheet(path: &Path) -> bool {
    path.extension().is_some_and(|ext| ext == "heft")
}

/// The `.heft` files in `dir` (relative to the crate), sorted.
pub fn sheets_in(dir: &str) -> Vec<PathBuf> {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join(dir);
    let mut paths: Vec<PathBuf> = entries_of(&root)
        .into_iter()
        .filter(|path| is_sheet(path))
        .collect();
    paths.sort();
    paths
}

/// The `.heft` files in `dirs` (relative to the crate) and every folder
/// below them, sorted.
pub fn sheets_below(dirs: &[&str]) -> Vec<PathBuf> {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let mut folders: Vec<PathBuf> = dirs.iter().map(|dir| root.join(dir)).collect();
    let mut paths = Vec::new();
    while let Some(folder) = folders.pop() {
        for path in entries_of(&folder) {
            if path.is_dir() {
                folders.push(path);
            } else if is_sheet(&path) {
                paths.push(path);
            }
        }
    }
    paths.sort();
    paths
}

/// (line, code) → how many times, from the sheet's `// expect: code, …`
/// annotations (`# expect:` in the TOML header).
pub fn expected_findings(source: &str) -> std::collections::BTreeMap<(usize, String), usize> {
    let mut expected = std::collections::BTreeMap::new();
    for (index, line) in source.lines().enumerate() {
        for marker in ["// expect:", "# expect:"] {
            if let Some(at) = line.find(marker) {
                for code in line[at + marker.len()..].split(',') {
                    *expected
                        .entry((index + 1, code.trim().to_string()))
                        .or_insert(0) += 1;
                }
            }
        }
    }
    expected
}

/// A cell's expected value, from an ok-corpus annotation
/// `// expect: = 1.96133 m/s^2 ± 1e-8 %`.
#[derive(Clone, Debug)]
pub struct ExpectedValue {
    /// The annotation after `=`, as written (for messages).
    pub text: String,
    /// The expected value in coherent SI units.
    pub si: f64,
    /// Its dimension, from the unit written (none for a plain number).
    pub dimension: heftsheet::units::Dimension,
    /// The relative difference allowed: the stated percentage over 100.
    pub relative: f64,
}

/// The marker of a value annotation; the value follows it.
pub const VALUE_MARKER: &str = "// expect: =";

/// line (1-based) → expected value, from the sheet's
/// `// expect: = NUMBER UNIT ± PERCENT %` annotations: NUMBER as Rust reads
/// an `f64`, UNIT a coherent SI unit (`N`, `m/s^2`, `N*m`, `rad`; none for
/// a plain number), PERCENT the relative tolerance. heft's unit parser reads
/// only the unit, for its dimension, and the unit's factor must be exactly 1,
/// so every number is in SI and the sheet's own unit factors are checked
/// rather than trusted. Any other line that mentions `expect:` (a finding
/// code, a typo) is an error, as is an annotation it cannot read; the error
/// names the line, so a corpus sheet never passes with an annotation skipped.
pub fn expected_values(
    source: &str,
) -> Result<std::collections::BTreeMap<usize, ExpectedValue>, String> {
    let mut expected = std::collections::BTreeMap::new();
    for (index, line) in source.lines().enumerate() {
        let line_number = index + 1;
        if !line.contains("expect:") {
            continue;
        }
        let Some(at) = line.find(VALUE_MARKER) else {
            return Err(format!(
                "line {line_number}: an ok sheet expects values (`{VALUE_MARKER} 12 N ± 1e-8 %`), not `{}`",
                line.trim()
            ));
        };
        let text = line[at + VALUE_MARKER.len()..].trim();
        let value = expected_value(text)
            .map_err(|error| format!("line {line_number}: `{text}`: {error}"))?;
        expected.insert(line_number, value);
    }
    Ok(expected)
}

/// One annotation's `NUMBER UNIT ± PERCENT %`.
fn expected_value(text: &str) -> Result<ExpectedValue, String> {
    let (quantity, tolerance) = text
        .split_once('±')
        .or_else(|| text.split_once("+/-"))
        .ok_or("no `± PERCENT %` tolerance")?;
    let percent = tolerance
        .trim()
        .strip_suffix('%')
        .ok_or("the tolerance must be relative, in `%`")?
        .trim();
    let percent: f64 = percent
        .parse()
        .map_err(|_| format!("`{percent}` is not a number"))?;
    if percent.is_nan() || percent <= 0.0 || percent >= 100.0 {
        return Err(format!(
            "a tolerance of {percent} % is not above 0 and below 100"
        ));
    }
    let quantity = quantity.trim();
    let (number, unit) = quantity.split_once(' ').unwrap_or((quantity, ""));
    let number: f64 = number
        .parse()
        .map_err(|_| format!("`{number}` is not a number"))?;
    if !number.is_finite() {
        return Err(format!("`{number}` is not finite"));
    }
    let unit = unit.trim();
    let dimension = if unit.is_empty() {
        heftsheet::units::Dimension::NONE
    } else {
        let (_, resolved) = heftsheet::eval::evaluate_unit(unit)
            .map_err(|diagnostic| format!("unit `{unit}`: {}", diagnostic.message))?;
        if resolved.si_factor != 1.0 {
            return Err(format!(
                "`{unit}` is {} SI units; write the expected value in coherent SI",
                resolved.si_factor
            ));
        }
        resolved.dimension
    };
    Ok(ExpectedValue {
        text: text.to_string(),
        si: number,
        dimension,
        relative: percent / 100.0,
    })
}

/// The one hand-typed conversion `heft audit` lists for `source` (panics
/// unless there is exactly one).
#[track_caller]
pub fn the_hand_typed_conversion(source: &str) -> heftsheet::audit::ConversionEntry {
    let audit = heftsheet::audit::conversion_audit(&heftsheet::pipeline::run(source));
    let mut typed: Vec<_> = audit
        .conversions
        .into_iter()
        .filter(|c| c.kind == heftsheet::audit::ConversionKind::HandTyped)
        .collect();
    assert_eq!(typed.len(), 1, "{source}: {typed:#?}");
    typed.remove(0)
}
