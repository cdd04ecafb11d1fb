//! The audit corpus: mistaken sheets under `tests/sheets/audit/bad/`, each
//! line annotated `// expect: code, code` with every finding it must give,
//! and clean sheets in mixed SI/FPS under `tests/sheets/audit/clean/` that
//! must give no warning or error (their infos are annotated the same way).
//! Precision and recall over the whole corpus are printed and must be 100 %.
//! The scenarios are invented.

use crate::common;

use std::collections::BTreeMap;

use heftsheet::base::{Code, Severity};
use heftsheet::pipeline::run as check_source;

/// (line, code) → how many times, as `heft check` reports them.
fn produced(source: &str) -> BTreeMap<(usize, String), usize> {
    let evaluated = check_source(source);
    let mut found = BTreeMap::new();
    for diagnostic in &evaluated.diagnostics {
        let line = evaluated.lines.line_of(diagnostic.span.start()) + 1;
        *found
            .entry((line, diagnostic.code.as_str().to_string()))
            .or_insert(0) += 1;
    }
    found
}

/// True positives, false positives and false negatives of one sheet.
fn score(
    expected: &BTreeMap<(usize, String), usize>,
    produced: &BTreeMap<(usize, String), usize>,
) -> (usize, usize, usize) {
    let mut counts = (0, 0, 0);
    for (key, &n) in produced {
        let wanted = expected.get(key).copied().unwrap_or(0);
        counts.0 += n.min(wanted);
        counts.1 += n.saturating_sub(wanted);
    }
    for (key, &n) in expected {
        counts.2 += n.saturating_sub(produced.get(key).copied().unwrap_or(0));
    }
    counts
}

const LINTS: [Code; 7] = [
    Code::MassWeightMixup,
    Code::HandConversionFactor,
    Code::GravityInconsistent,
    Code::RoundedGravity,
    Code::MixedSystems,
    Code::UnusedInput,
    Code::ShadowedConstant,
];

#[test]
fn the_corpus_is_found_with_full_precision_and_recall() {
    let bad = common::sheets_in("tests/sheets/audit/bad");
    let clean = common::sheets_in("tests/sheets/audit/clean");
    assert!(bad.len() >= 25, "{} mistaken sheets, want 25", bad.len());
    assert!(clean.len() >= 10, "{} clean sheets, want 10", clean.len());
    let (mut true_positives, mut false_positives, mut false_negatives) = (0, 0, 0);
    let mut per_code: BTreeMap<String, (usize, usize, usize)> = BTreeMap::new();
    let mut failures = Vec::new();
    for path in bad.iter().chain(&clean) {
        let source = common::read_file(path);
        let (want, got) = (common::expected_findings(&source), produced(&source));
        let (tp, fp, fn_) = score(&want, &got);
        true_positives += tp;
        false_positives += fp;
        false_negatives += fn_;
        for code in want.keys().chain(got.keys()).map(|(_, code)| code) {
            per_code.entry(code.clone()).or_default();
        }
        for (code, entry) in per_code.iter_mut() {
            let only = |map: &BTreeMap<(usize, String), usize>| {
                map.iter()
                    .filter(|((_, c), _)| c == code)
                    .map(|(k, v)| (k.clone(), *v))
                    .collect::<BTreeMap<_, _>>()
            };
            let (tp, fp, fn_) = score(&only(&want), &only(&got));
            entry.0 += tp;
            entry.1 += fp;
            entry.2 += fn_;
        }
        if want != got {
            failures.push(format!(
                "{}:\n  expected {want:?}\n  found    {got:?}",
                path.display()
            ));
        }
    }
    let ratio = |a: usize, b: usize| if b == 0 { 1.0 } else { a as f64 / b as f64 };
    let precision = ratio(true_positives, true_positives + false_positives);
    let recall = ratio(true_positives, true_positives + false_negatives);
    println!(
        "audit corpus: {} mistaken + {} clean sheets, {true_positives} findings expected and found, \
         {false_positives} false positives, {false_negatives} missed: precision {:.1} %, recall {:.1} %",
        bad.len(),
        clean.len(),
        precision * 100.0,
        recall * 100.0
    );
    for (code, (tp, fp, fn_)) in &per_code {
        println!(
            "  {code:<24} found {tp:>3}  false {fp:>2}  missed {fn_:>2}  precision {:>5.1} %  recall {:>5.1} %",
            ratio(*tp, tp + fp) * 100.0,
            ratio(*tp, tp + fn_) * 100.0
        );
    }
    assert!(
        precision == 1.0 && recall == 1.0,
        "precision {:.1} %, recall {:.1} %\n{}",
        precision * 100.0,
        recall * 100.0,
        failures.join("\n")
    );
}

#[test]
fn every_lint_is_exercised_by_the_mistaken_sheets() {
    let mut seen = std::collections::BTreeSet::new();
    for path in common::sheets_in("tests/sheets/audit/bad") {
        let source = common::read_file(&path);
        seen.extend(
            common::expected_findings(&source)
                .into_keys()
                .map(|(_, code)| code),
        );
    }
    for code in LINTS {
        assert!(
            seen.contains(code.as_str()),
            "no mistaken sheet gives `{code}`"
        );
    }
}

#[test]
fn clean_sheets_and_demo_sheets_give_no_warning() {
    let mut paths = common::sheets_in("tests/sheets/audit/clean");
    paths.extend(common::sheets_in("tests/sheets/ok"));
    paths.extend(common::sheets_in("sheets"));
    for path in paths {
        let evaluated = common::run_sheet(&path);
        let loud: Vec<String> = evaluated
            .diagnostics
            .iter()
            .filter(|d| d.severity >= Severity::Warning)
            .map(|d| format!("{} {}: {}", d.severity.as_str(), d.code, d.message))
            .collect();
        assert!(loud.is_empty(), "{}: {loud:#?}", path.display());
    }
}

#[test]
fn clean_sheets_mix_si_and_fps_units() {
    for path in common::sheets_in("tests/sheets/audit/clean") {
        let source = common::read_file(&path);
        let audit = heftsheet::audit::conversion_audit(&check_source(&source));
        let systems: Vec<&str> = audit.systems.iter().map(|s| s.system.label()).collect();
        assert!(
            systems.contains(&"US customary")
                && (systems.contains(&"SI") || systems.contains(&"metric (non-SI)")),
            "{} uses only {systems:?}",
            path.display()
        );
    }
}
