//! The fixes heft offers: one per line, and each gives the number the sheet
//! gives with it applied. Three sheets where an unchecked fix gave the wrong
//! number, against values worked from the unit definitions, and an oracle
//! over every sheet in the repository: every fix offered, applied, leaves its
//! line without an error and without a hand-typed factor. Scenarios are
//! invented.

use crate::common;

use heftsheet::base::{Code, Diagnostic, Severity};
use heftsheet::eval::Evaluated;
use heftsheet::pipeline;

/// The findings of `line` (1-based) that offer a fix.
fn fixes_on_line(evaluated: &Evaluated, line: usize) -> Vec<&Diagnostic> {
    evaluated
        .diagnostics
        .iter()
        .filter(|d| evaluated.lines.line_of(d.span.start()) + 1 == line && !d.fixes.is_empty())
        .collect()
}

/// `source` with a diagnostic's fix applied.
fn applied(source: &str, diagnostic: &Diagnostic) -> String {
    let fix = &diagnostic.fixes[0];
    format!(
        "{}{}{}",
        &source[..fix.span.start()],
        fix.replacement,
        &source[fix.span.end()..]
    )
}

/// The number and unit of the `(= 3084 kg)` in a help.
fn stated_value(help: &str) -> (f64, String) {
    let start = help
        .find("(= ")
        .map(|at| at + 3)
        .expect("the help gives a number");
    let end = start + help[start..].find(')').expect("a closing bracket");
    let (number, unit) = help[start..end]
        .split_once(' ')
        .unwrap_or((&help[start..end], ""));
    (number.parse().expect("a number"), unit.to_string())
}

/// The name and number of a `(`T` = 5.774 kN)` in a help.
fn named_value(help: &str) -> Option<(String, f64)> {
    let start = help.find("(`")? + 2;
    let rest = &help[start..];
    let (name, rest) = rest.split_once("` = ")?;
    let number = rest.split([' ', ')']).next()?;
    Some((name.to_string(), number.parse().ok()?))
}

/// The one fix of line `line`: every finding there that offers a fix offers
/// the same rewrite, and says so with the same number. Returns the help of
/// the first and the fixed sheet's text.
#[track_caller]
fn the_one_fix(source: &str, line: usize) -> (String, String) {
    let evaluated = pipeline::run(source);
    let offering = fixes_on_line(&evaluated, line);
    assert!(!offering.is_empty(), "no fix on line {line} of\n{source}");
    let fixed: Vec<String> = offering.iter().map(|d| applied(source, d)).collect();
    assert!(
        fixed.windows(2).all(|pair| pair[0] == pair[1]),
        "two different fixes on line {line}: {fixed:#?}"
    );
    let values: Vec<(f64, String)> = offering
        .iter()
        .map(|d| stated_value(d.help.as_deref().unwrap_or("")))
        .collect();
    assert!(
        values.windows(2).all(|pair| pair[0] == pair[1]),
        "{values:?}"
    );
    (
        offering[0].help.clone().unwrap_or_default(),
        fixed[0].clone(),
    )
}

/// Whether `shown` is `exact` rounded to the 4 significant figures the sheet
/// shows: within half a unit of the last figure.
#[track_caller]
fn assert_shown_to_four_figures(shown: f64, exact: f64) {
    let digits = libm::log10(exact.abs()).floor() as i32;
    let half_unit = 0.5 * 10f64.powi(digits - 3);
    assert!(
        (shown - exact).abs() <= half_unit * (1.0 + 1e-9),
        "{shown} is not {exact} to 4 figures"
    );
}

#[test]
fn a_crate_weight_in_pounds_divided_by_2_2_gets_the_mass_fix() {
    // 6800 lbf is the weight of 6800 lbm, since 1 lbf = 1 lbm × g0 (1959
    // pound 0.45359237 kg, CGPM 1901 g0 = 9.80665 m/s²): its mass is
    // 6800 × 0.45359237 kg = 3084.428116 kg. Dividing by g0 as well as by
    // 2.2 would give 1402 kg, a second conversion.
    let source = "W_crate = 6800 lbf\nm_crate [kg] = W_crate / 2.2\n";
    let (help, fixed) = the_one_fix(source, 2);
    assert!(help.contains("`W_crate / g0`"), "{help}");
    let (shown, unit) = stated_value(&help);
    assert_eq!(unit, "kg");
    assert_shown_to_four_figures(shown, 6800.0 * 0.453_592_37);
    let mass = common::si(&pipeline::run(&fixed), "m_crate");
    common::assert_close(mass, 6800.0 * 4.448_221_615_260_5 / 9.806_65, 1e-12);
}

#[test]
fn a_box_mass_times_9_81_declared_in_kilonewtons_gets_the_weight_fix() {
    // W = m g0 = 1402 kg × 9.80665 m/s² (CGPM 1901) = 13749.9233 N =
    // 13.75 kN; multiplying by g0 on top of 9.81 would give 134.9 kN.
    let source = "m_box = 1402 kg\nW_box [kN] = m_box * 9.81\n";
    let (help, fixed) = the_one_fix(source, 2);
    assert!(help.contains("`m_box * g0`"), "{help}");
    let (shown, unit) = stated_value(&help);
    assert_eq!(unit, "kN");
    assert_shown_to_four_figures(shown, 1402.0 * 9.806_65 / 1000.0);
    let weight = common::si(&pipeline::run(&fixed), "W_box");
    common::assert_close(weight, 1402.0 * 9.806_65, 1e-12);
}

#[test]
fn a_plate_weight_divided_by_32_2_declared_in_pounds_mass_gets_the_mass_fix() {
    // 500 lbf / g0 = 500 lbm exactly (1 lbf = 1 lbm × g0 by definition,
    // 1959 pound with CGPM 1901 g0); dividing by g0 on top of 32.2 would
    // give 15.53 lbm.
    let source = "W_plate = 500 lbf\nm_plate [lbm] = W_plate / 32.2\n";
    let (help, fixed) = the_one_fix(source, 2);
    assert!(help.contains("`W_plate / g0`"), "{help}");
    let (shown, unit) = stated_value(&help);
    assert_eq!(unit, "lbm");
    assert_shown_to_four_figures(shown, 500.0);
    let mass = common::si(&pipeline::run(&fixed), "m_plate");
    common::assert_close(mass, 500.0 * 0.453_592_37, 1e-12);
}

#[test]
fn a_fix_that_would_convert_a_second_time_is_not_offered() {
    // The declared-unit error alone would suggest `(W_crate / 2.2) / g0`:
    // with the 2.2 still there that is a second conversion, so it is never
    // the help of any finding.
    let evaluated = pipeline::run("W_crate = 6800 lbf\nm_crate [kg] = W_crate / 2.2\n");
    for diagnostic in &evaluated.diagnostics {
        let help = diagnostic.help.as_deref().unwrap_or("");
        assert!(!help.contains("2.2) / g0"), "{help}");
        assert!(!help.contains("1402"), "{help}");
    }
}

/// Every sheet of the repository: the demo sheets, and the corpora and
/// fixtures under `tests/`.
fn every_sheet() -> Vec<std::path::PathBuf> {
    common::sheets_below(&["sheets", "tests"])
}

/// Errors (verdicts aside) and hand-typed factors of `line` (0-based).
fn line_findings(evaluated: &Evaluated, line: usize) -> (usize, usize) {
    let on_line = evaluated
        .diagnostics
        .iter()
        .filter(|d| evaluated.lines.line_of(d.span.start()) == line);
    let mut errors = 0;
    let mut factors = 0;
    for diagnostic in on_line {
        let verdict = matches!(diagnostic.code, Code::CheckFailed | Code::CheckUnknown);
        if diagnostic.severity == Severity::Error && !verdict {
            errors += 1;
        }
        if diagnostic.code == Code::HandConversionFactor {
            factors += 1;
        }
    }
    (errors, factors)
}

#[test]
fn every_fix_offered_in_the_repository_fixes_its_line() {
    let mut n_sheets = 0;
    let mut n_fixes = 0;
    let mut failures = Vec::new();
    for path in every_sheet() {
        let source = common::read_file(&path);
        n_sheets += 1;
        let evaluated = common::run_as(&source, &path);
        let mut fixed_lines: std::collections::BTreeMap<usize, String> = Default::default();
        for diagnostic in evaluated.diagnostics.iter().filter(|d| !d.fixes.is_empty()) {
            n_fixes += 1;
            let line = evaluated.lines.line_of(diagnostic.span.start());
            let fix_line = evaluated.lines.line_of(diagnostic.fixes[0].span.start());
            let fixed_source = applied(&source, diagnostic);
            let fixed = common::run_as(&fixed_source, &path);
            let place = format!("{}:{}", path.display(), line + 1);
            let fixed_text = fixed_source.lines().nth(fix_line).unwrap_or("").to_string();
            if let Some(other) = fixed_lines.insert(line, fixed_text.clone())
                && other != fixed_text
            {
                failures.push(format!("{place}: two fixes, `{other}` and `{fixed_text}`"));
            }
            for at in [line, fix_line] {
                let (errors_before, factors_before) = line_findings(&evaluated, at);
                let (errors_after, factors_after) = line_findings(&fixed, at);
                if errors_after > 0 {
                    failures.push(format!(
                        "{place}: `{fixed_text}` leaves {errors_after} error(s) (had {errors_before})"
                    ));
                }
                if factors_after > 0 && factors_after >= factors_before {
                    failures.push(format!("{place}: `{fixed_text}` keeps a hand-typed factor"));
                }
            }
            // A number the help gives for a named cell is that cell's.
            if let Some(help) = diagnostic.help.as_deref()
                && let Some((name, shown)) = named_value(help)
            {
                let cell_value = fixed.cell(&name).and_then(|cell| {
                    let value = cell.value?;
                    let unit = heftsheet::units::pick_unit(
                        value.dimension,
                        value.si,
                        fixed.header().display,
                    );
                    let in_unit = if cell.declared_unit {
                        cell.display.value_of(value.si)
                    } else {
                        unit.value_of(value.si)
                    };
                    heftsheet::units::format_significant(in_unit, fixed.header().sig_figs)
                        .parse::<f64>()
                        .ok()
                });
                if cell_value != Some(shown) {
                    failures.push(format!(
                        "{place}: the help gives `{name}` = {shown}, the fixed sheet {cell_value:?} ({help})"
                    ));
                }
            }
            // The number the help gives is the fixed sheet's.
            if let Some(help) = diagnostic.help.as_deref()
                && help.contains("(= ")
            {
                let (shown, _) = stated_value(help);
                let stated_anywhere = fixed.cells().any(|cell| {
                    cell.value.is_some_and(|v| {
                        let unit =
                            heftsheet::units::pick_unit(v.dimension, v.si, fixed.header().display);
                        [cell.display.value_of(v.si), unit.value_of(v.si)]
                            .iter()
                            .any(|&value| {
                                heftsheet::units::format_significant(value, fixed.header().sig_figs)
                                    .parse::<f64>()
                                    .is_ok_and(|rounded| rounded == shown)
                            })
                    })
                }) || fixed.checks.iter().any(|check| {
                    [check.lhs, check.rhs].iter().flatten().any(|v| {
                        let unit =
                            heftsheet::units::pick_unit(v.dimension, v.si, fixed.header().display);
                        heftsheet::units::format_significant(
                            unit.value_of(v.si),
                            fixed.header().sig_figs,
                        )
                        .parse::<f64>()
                        .is_ok_and(|rounded| rounded == shown)
                    })
                });
                if !stated_anywhere {
                    failures.push(format!(
                        "{place}: the help's {shown} is no value of the fixed sheet ({help})"
                    ));
                }
            }
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
    assert!(n_sheets >= 100, "only {n_sheets} sheets found");
    assert!(n_fixes >= 20, "only {n_fixes} fixes offered");
    println!("fix oracle: {n_fixes} fixes verified over {n_sheets} sheets");
}

#[test]
fn the_notebook_shows_the_verified_fix_once_linted_and_no_unchecked_one_before() {
    let source = "W_crate = 6800 lbf\nm_crate [kg] = W_crate / 2.2\n";
    let full = pipeline::run(source);
    let expected: Vec<(Code, Option<String>)> = full
        .diagnostics
        .iter()
        .map(|d| (d.code, d.help.clone()))
        .collect();
    let mut live = heftsheet::live::LiveSheet::open(source);
    // Before the lint thread answers, the declared-unit error offers no fix.
    let unchecked = live.findings();
    assert!(unchecked.iter().all(|f| f.help.is_none()), "{unchecked:#?}");
    let revision = live.revision();
    let linted = pipeline::lint(source);
    assert!(live.set_lints(revision, source, &linted.lints));
    assert!(live.set_fix_helps(revision, source, &linted.fixed));
    let mut shown: Vec<(Code, Option<String>)> = live
        .findings()
        .into_iter()
        .map(|f| (f.code, f.help))
        .collect();
    let mut expected = expected;
    shown.sort();
    expected.sort();
    assert_eq!(shown, expected);
}

#[test]
fn past_the_limit_a_finding_says_its_fix_was_not_checked_and_offers_none() {
    // 40 crates, two findings each: more fixes than heft checks for one
    // sheet. Every finding either shows a checked fix (kept in `fixes`) or
    // says it was not checked; none shows an unchecked rewrite.
    let mut source = String::new();
    for n in 0..40 {
        source.push_str(&format!(
            "W_{n} = {} lbf\nm_{n} [kg] = W_{n} / 2.2\n",
            100 + n
        ));
    }
    let limit = heftsheet::audit::checked_fixes(source.len());
    assert_eq!(limit, heftsheet::audit::MAX_CHECKED_FIXES);
    let evaluated = pipeline::run(&source);
    let (mut shown, mut unchecked) = (0, 0);
    for diagnostic in &evaluated.diagnostics {
        let help = diagnostic.help.as_deref().unwrap_or("");
        if diagnostic.fixes.is_empty() {
            assert!(help.contains("checks at most"), "{help}");
            assert!(!help.contains("write"), "{help}");
            unchecked += 1;
        } else {
            assert!(help.starts_with("write `W_"), "{help}");
            shown += 1;
        }
    }
    assert!(
        shown >= limit / 2 && unchecked > 0,
        "{shown} shown, {unchecked} not checked"
    );
}
