//! Data-driven sheet tests. Every `tests/sheets/ok/*.heft` and `sheets/*.heft`
//! must evaluate with no error or warning (infos are allowed); every `tests/sheets/err/*.heft`
//! must give exactly the diagnostic codes its annotations name, on the lines
//! that carry them: `… // expect: code, code` (or `# expect:` in a header).

use crate::common;

use std::collections::BTreeMap;

use heftsheet::base::Severity;
use heftsheet::blocks::evaluate_source;

fn produced(source: &str) -> BTreeMap<(usize, String), usize> {
    found_at_least(source, Severity::Info)
}

fn found_at_least(source: &str, severity: Severity) -> BTreeMap<(usize, String), usize> {
    findings(&evaluate_source(source), severity)
}

/// What `heft check` reports, the audit's lints included.
fn found_with_lints(source: &str, severity: Severity) -> BTreeMap<(usize, String), usize> {
    findings(&heftsheet::pipeline::run(source), severity)
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
        let source = common::read_file(&path);
        let found = found_with_lints(&source, Severity::Warning);
        assert!(
            found.is_empty(),
            "{}: unexpected findings {found:?}",
            path.display()
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
        let found = produced(&source);
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
