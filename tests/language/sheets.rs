//! Data-driven sheet tests. Every `tests/sheets/ok/*.heft` and `sheets/*.heft`
//! must evaluate with no error or warning (infos are allowed); every cell of
//! an ok sheet must also have the value its annotation states,
//! `… // expect: = 1.96133 m/s^2 ± 1e-8 %` (coherent SI, relative tolerance;
//! each sheet names the closed form and tool the numbers came from). Every
//! `tests/sheets/err/*.heft` must give exactly the diagnostic codes its
//! annotations name, on the lines that carry them: `… // expect: code, code`
//! (or `# expect:` in a header).

use crate::common;

use std::collections::BTreeMap;
use std::path::Path;

use heftsheet::base::Severity;
use heftsheet::blocks::evaluate_source;
use heftsheet::eval::CellStatus;

/// What the evaluation of the sheet at `path` finds (its `use` lines read
/// sheets beside it, as on the command line).
fn produced(path: &Path) -> BTreeMap<(usize, String), usize> {
    let source = common::read_file(path);
    let loader = heftsheet::include::FileLoader::for_sheet(path);
    findings(
        &heftsheet::blocks::evaluate_source_with(&source, &loader),
        Severity::Info,
    )
}

/// What `heft check` reports of the sheet at `path`, the audit's lints included.
fn found_with_lints(path: &Path, severity: Severity) -> BTreeMap<(usize, String), usize> {
    let bytes = std::fs::read(path).unwrap_or_else(|error| panic!("{}: {error}", path.display()));
    findings(&heftsheet::pipeline::run_file_bytes(&bytes, path), severity)
}

fn findings(
    evaluated: &heftsheet::eval::Evaluated,
    severity: Severity,
) -> BTreeMap<(usize, String), usize> {
    let mut found = BTreeMap::new();
    for diagnostic in evaluated
        .diagnostics
        .iter()
        .filter(|d| d.severity >= severity)
    {
        let line = evaluated.lines.line_of(diagnostic.span.start()) + 1;
        *found
            .entry((line, diagnostic.code.as_str().to_string()))
            .or_insert(0) += 1;
    }
    found
}

#[test]
fn clean_sheets_have_no_findings() {
    let mut paths = common::sheets_in("tests/sheets/ok");
    paths.extend(common::sheets_in("sheets"));
    assert!(
        paths.len() >= 10,
        "expected at least 10 clean sheets, found {}",
        paths.len()
    );
    for path in paths {
        let found = found_with_lints(&path, Severity::Warning);
        assert!(
            found.is_empty(),
            "{}: unexpected findings {found:?}",
            path.display()
        );
    }
}

/// What differs between the cells of `source` and its value annotations:
/// a cell that did not evaluate to a scalar, a cell without an annotation,
/// two cells on one line, a value or dimension off its annotation, an
/// annotation on a line with no cell. Empty when every cell is as stated.
/// An annotation it cannot read is an error.
fn value_mismatches(source: &str, path: Option<&Path>) -> Result<Vec<String>, String> {
    let mut expected = common::expected_values(source)?;
    let evaluated = match path {
        Some(path) => heftsheet::blocks::evaluate_source_with(
            source,
            &heftsheet::include::FileLoader::for_sheet(path),
        ),
        None => evaluate_source(source),
    };
    let mut mismatches = Vec::new();
    let mut lines_seen = BTreeMap::new();
    for cell in evaluated.cells() {
        let (name, line) = (cell.name, cell.line);
        // A parts list's quantities and a lift's weight, centre and
        // positions (`skid[pump].m`, `pick(cg)`, `pick[A]`) are written in
        // their block's lines; the annotations hold what is computed from
        // them (the aggregates, each lift point's load on its line).
        if name.contains(['[', '(']) {
            continue;
        }
        if let Some(other) = lines_seen.insert(line, name) {
            mismatches.push(format!(
                "line {line}: `{other}` and `{name}` share the line; give each its own"
            ));
            continue;
        }
        let annotation = expected.remove(&line);
        let Some(value) = cell.value.filter(|_| cell.status == CellStatus::Ok) else {
            mismatches.push(format!(
                "line {line}: `{name}` has no scalar value ({:?})",
                cell.status
            ));
            continue;
        };
        let Some(want) = annotation else {
            mismatches.push(format!(
                "line {line}: `{name}` = {} SI has no `{}` annotation",
                value.si,
                common::VALUE_MARKER
            ));
            continue;
        };
        if value.dimension != want.dimension {
            mismatches.push(format!(
                "line {line}: `{name}` is {}, its annotation `{}` is {}",
                value.dimension.describe(),
                want.text,
                want.dimension.describe()
            ));
            continue;
        }
        let error = (value.si - want.si).abs();
        if error.is_nan() || error > want.relative * want.si.abs() {
            mismatches.push(format!(
                "line {line}: `{name}` = {} SI, annotation `{}`: off by {:e} relative",
                value.si,
                want.text,
                error / want.si.abs()
            ));
        }
    }
    for (line, want) in expected {
        mismatches.push(format!(
            "line {line}: annotation `{}` on a line with no cell",
            want.text
        ));
    }
    Ok(mismatches)
}

#[test]
fn clean_corpus_cells_have_their_annotated_values() {
    let paths = common::sheets_in("tests/sheets/ok");
    assert!(
        paths.len() >= 9,
        "expected at least 9 ok sheets, found {}",
        paths.len()
    );
    let mut failures = Vec::new();
    for path in &paths {
        let source = common::read_file(path);
        match value_mismatches(&source, Some(path)) {
            Ok(mismatches) => failures.extend(
                mismatches
                    .into_iter()
                    .map(|mismatch| format!("{}: {mismatch}", path.display())),
            ),
            Err(error) => failures.push(format!("{}: {error}", path.display())),
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

/// The value check itself: a sheet as stated passes, and each way a sheet
/// can differ from its annotations is reported.
#[test]
fn value_annotations_catch_each_kind_of_difference() {
    // 12 kg · 9.80665 m/s² = 117.6798 N exactly (CGPM 1901 standard gravity).
    let as_stated = "m = 12 kg                 // expect: = 12 kg ± 1e-8 %\n\
                     W [lbf] = m * g0          // expect: = 117.6798 N ± 1e-8 %\n";
    assert_eq!(value_mismatches(as_stated, None), Ok(vec![]));
    let differing = [
        // 117.6798 N with a digit changed.
        (
            "m = 12 kg  // expect: = 12 kg ± 1e-8 %\nW = m * g0  // expect: = 117.6799 N ± 1e-8 %",
            "off by",
        ),
        // The right number in the wrong dimension.
        (
            "m = 12 kg  // expect: = 12 kg ± 1e-8 %\nW = m * g0  // expect: = 117.6798 kg ± 1e-8 %",
            "is a force, its annotation `117.6798 kg ± 1e-8 %` is a mass",
        ),
        (
            "m = 12 kg  // expect: = 12 kg ± 1e-8 %\nW = m * g0",
            "has no",
        ),
        (
            "m = 12 kg  // expect: = 12 kg ± 1e-8 %\n// expect: = 3 N ± 1 %",
            "on a line with no cell",
        ),
        (
            "m = 12 kg + 1 s  // expect: = 12 kg ± 1e-8 %",
            "has no scalar value",
        ),
    ];
    for (source, kind) in differing {
        let mismatches = value_mismatches(source, None);
        assert!(
            mismatches
                .as_ref()
                .is_ok_and(|found| found.len() == 1 && found[0].contains(kind)),
            "{source}: expected one `{kind}`, got {mismatches:?}"
        );
    }
    let unreadable = [
        (
            "m = 12 kg  // expect: = 12 kg",
            "no `± PERCENT %` tolerance",
        ),
        (
            "m = 12 kg  // expect: = 12 kg ± 0.01 kg",
            "must be relative",
        ),
        ("m = 12 kg  // expect: = 12 kg ± 0 %", "a tolerance of 0 %"),
        ("m = 12 kg  // expect: = 12000 g ± 1e-8 %", "coherent SI"),
        ("m = 12 kg  // expect: = 12 kgg ± 1e-8 %", "unit `kgg`"),
        (
            "m = 12 kg  // expect: = twelve kg ± 1e-8 %",
            "`twelve` is not a number",
        ),
        (
            "m = 12 kg  // expect: = 12 * 1 kg ± 1e-8 %",
            "unit `* 1 kg`",
        ),
        ("m = 12 kg  // expect: undefined-name", "expects values"),
        ("m = 12 kg  // expect:= 12 kg ± 1e-8 %", "expects values"),
    ];
    for (source, reason) in unreadable {
        let read = value_mismatches(source, None);
        assert!(
            read.as_ref().is_err_and(|error| error.contains(reason)),
            "{source}: expected an error naming `{reason}`, got {read:?}"
        );
    }
}

#[test]
fn broken_sheets_give_exactly_their_annotated_codes() {
    let paths = common::sheets_in("tests/sheets/err");
    assert!(!paths.is_empty());
    let mut failures = Vec::new();
    for path in &paths {
        let source = common::read_file(path);
        let expected = common::expected_findings(&source);
        assert!(
            !expected.is_empty(),
            "{} has no `expect:` annotation",
            path.display()
        );
        let found = produced(path);
        if expected != found {
            failures.push(format!(
                "{}:\n  expected {expected:?}\n  found    {found:?}",
                path.display()
            ));
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn every_error_code_is_exercised_by_the_corpus() {
    let mut seen = std::collections::BTreeSet::new();
    // Lint codes are exercised by the audit corpus (tests/audit/audit_corpus.rs).
    let mut paths = common::sheets_in("tests/sheets/err");
    paths.extend(common::sheets_in("tests/sheets/audit/bad"));
    for path in paths {
        let source = common::read_file(&path);
        seen.extend(
            common::expected_findings(&source)
                .into_keys()
                .map(|(_, code)| code),
        );
    }
    for code in heftsheet::base::Code::ALL {
        if code == heftsheet::base::Code::EncodingError {
            continue; // needs invalid bytes; covered in tests/language/robustness.rs
        }
        if code == heftsheet::base::Code::SolveTooLarge {
            continue; // needs a 2,001-unknown block; covered in tests/language/robustness.rs
        }
        assert!(
            seen.contains(code.as_str()),
            "no corpus sheet produces `{code}`"
        );
    }
}
