//! `heft check --json`: one JSON object with a stable schema.

use serde::Serialize;

use crate::base::Diagnostic;
use crate::base::LineIndex;
use crate::eval::Evaluated;

/// The version of the JSON schema; bumped only for incompatible changes.
pub const SCHEMA: &str = "heft-check/1";

#[derive(Serialize)]
struct Report<'a> {
    schema: &'static str,
    file: &'a str,
    title: Option<&'a str>,
    revision: Option<&'a str>,
    display: &'static str,
    sig_figs: u32,
    clean: bool,
    summary: JsonSummary,
    cells: Vec<Cell<'a>>,
    checks: Vec<Check<'a>>,
    solves: Vec<Solve<'a>>,
    cases: Vec<JsonCase<'a>>,
    runs: Vec<super::runs::JsonRun<'a>>,
    diagnostics: Vec<JsonDiagnostic<'a>>,
    review: JsonReview,
}

/// The counts every presentation shows (shared by `heft check` and
/// `heft audit`).
#[derive(Serialize)]
pub(super) struct JsonSummary {
    cells: usize,
    errors: usize,
    warnings: usize,
    infos: usize,
    checks: usize,
    passed: usize,
    failed: usize,
    unknown: usize,
}

impl From<crate::eval::Summary> for JsonSummary {
    fn from(summary: crate::eval::Summary) -> Self {
        JsonSummary {
            cells: summary.cells,
            errors: summary.errors,
            warnings: summary.warnings,
            infos: summary.infos,
            checks: summary.checks,
            passed: summary.passed,
            failed: summary.failed,
            unknown: summary.unknown,
        }
    }
}

/// A place where a check was judged.
#[derive(Serialize)]
struct JsonPlace<'a> {
    place: &'static str,
    /// The load case's name (absent for the sheet as written).
    #[serde(skip_serializing_if = "Option::is_none")]
    case: Option<&'a str>,
    /// Why it could not be established (absent for a failure).
    #[serde(skip_serializing_if = "Option::is_none")]
    reason: Option<&'a str>,
}

/// The checker's record: fingerprint, every review mark, the sign-off in force.
#[derive(Serialize)]
struct JsonReview {
    fingerprint: String,
    marks: Vec<JsonMark>,
    signoff: Option<JsonSignOff>,
}

#[derive(Serialize)]
struct JsonMark {
    kind: &'static str,
    open: bool,
    line: usize,
    about: String,
    text: Option<String>,
    by: String,
    on: String,
}

#[derive(Serialize)]
struct JsonSignOff {
    by: String,
    on: String,
    line: usize,
    current: bool,
    changed: Vec<String>,
    added: Vec<String>,
    removed: Vec<String>,
    affected: Vec<String>,
}

#[derive(Serialize)]
struct Cell<'a> {
    name: &'a str,
    line: usize,
    formula: &'a str,
    description: Option<&'a str>,
    unit: &'a str,
    value: Option<f64>,
    si: Option<f64>,
    dimension: serde_json::Map<String, serde_json::Value>,
    /// Components of a vector value, in `unit` (absent for scalars).
    #[serde(skip_serializing_if = "Option::is_none")]
    vector: Option<Vec<f64>>,
    /// Components of a vector value in SI units (absent for scalars).
    #[serde(skip_serializing_if = "Option::is_none")]
    si_vector: Option<Vec<f64>>,
    status: &'static str,
    blocked_by: Option<&'a str>,
    /// The range over the tolerances, in `unit` (absent when none).
    #[serde(skip_serializing_if = "Option::is_none")]
    range: Option<Range>,
}

#[derive(Serialize)]
struct Range {
    low: f64,
    high: f64,
    first_order_low: Option<f64>,
    first_order_high: Option<f64>,
    exact: bool,
    /// `guaranteed`, `worst-corners` or `corners` (found at the corners,
    /// not guaranteed between them).
    method: &'static str,
    sensitivities: Vec<JsonSensitivity>,
}

#[derive(Serialize)]
struct JsonSensitivity {
    input: String,
    derivative_si: f64,
    normalized: Option<f64>,
    share: f64,
}

#[derive(Serialize)]
struct JsonCase<'a> {
    name: &'a str,
    label: Option<&'a str>,
    line: usize,
    evaluated: bool,
    results: Vec<JsonCaseValue<'a>>,
    checks: Vec<JsonCaseCheck>,
}

#[derive(Serialize)]
struct JsonCaseValue<'a> {
    name: &'a str,
    unit: &'a str,
    value: Option<f64>,
    low: Option<f64>,
    high: Option<f64>,
}

#[derive(Serialize)]
struct JsonCaseCheck {
    line: usize,
    status: &'static str,
    passed: Option<bool>,
    utilization: Option<f64>,
    worst_utilization: Option<f64>,
}

#[derive(Serialize)]
struct Solve<'a> {
    line: usize,
    unknowns: Vec<&'a str>,
    status: &'static str,
    linear: bool,
    iterations: usize,
    condition: Option<f64>,
    equations: Vec<SolveEquation<'a>>,
}

#[derive(Serialize)]
struct SolveEquation<'a> {
    equation: &'a str,
    line: usize,
    residual_si: Option<f64>,
}

#[derive(Serialize)]
struct Check<'a> {
    line: usize,
    label: Option<&'a str>,
    expression: String,
    /// The verdict over the sheet as written, its tolerances and its cases.
    status: &'static str,
    passed: Option<bool>,
    /// Everywhere the check fails.
    fails: Vec<JsonPlace<'a>>,
    /// Everywhere it could not be established, with the reason.
    unknown: Vec<JsonPlace<'a>>,
    utilization: Option<f64>,
    /// At the worst case of the tolerances (absent without tolerances).
    #[serde(skip_serializing_if = "Option::is_none")]
    worst_utilization: Option<f64>,
    /// The load case with the highest utilization (absent without cases;
    /// null for the sheet as written).
    #[serde(skip_serializing_if = "Option::is_none")]
    governing_case: Option<Option<&'a str>>,
}

/// A diagnostic as JSON (shared by `heft check` and `heft audit`).
#[derive(Serialize)]
pub(super) struct JsonDiagnostic<'a> {
    severity: &'static str,
    code: &'static str,
    line: usize,
    column: usize,
    message: &'a str,
    help: Option<&'a str>,
}

/// A JSON document as pretty text ending in a line break, every hidden
/// control in its strings written as a `\uXXXX` escape
/// ([`crate::base::visible::visible_json`]), so the text reads back exact and
/// shows safely.
pub fn text(report: &impl Serialize) -> String {
    let mut text = serde_json::to_string_pretty(report)
        .unwrap_or_else(|error| format!("{{\"error\": \"{error}\"}}"));
    text.push('\n');
    crate::base::visible::visible_json(&text).into_owned()
}

/// Serializes an evaluated sheet.
pub fn check_report(file_name: &str, source: &str, evaluated: &Evaluated) -> String {
    let lines = &evaluated.lines;
    let cells = json_cells(evaluated);
    let checks = json_checks(evaluated);
    let cases = json_cases(evaluated);
    let solves = json_solves(evaluated);
    let summary = evaluated.summary();
    let report = Report {
        schema: SCHEMA,
        file: file_name,
        title: evaluated.header().title.as_deref(),
        revision: evaluated.header().revision.as_deref(),
        display: evaluated.header().display.label(),
        sig_figs: evaluated.header().sig_figs,
        clean: summary.is_clean(),
        summary: summary.into(),
        cells,
        checks,
        solves,
        cases,
        runs: super::runs::json_runs(evaluated, lines),
        diagnostics: evaluated
            .diagnostics
            .iter()
            .map(|d| diagnostic(d, source, lines))
            .collect(),
        review: review(evaluated),
    };
    super::json::text(&report)
}

/// Every cell: value, unit, dimension, range, sensitivities.
fn json_cells(evaluated: &Evaluated) -> Vec<Cell<'_>> {
    evaluated
        .cells()
        .map(|cell| {
            let ok = cell.status == crate::eval::CellStatus::Ok;
            let value = cell.value.filter(|_| ok);
            let vector = cell.vector.filter(|_| ok);
            let dimension = cell
                .any_value()
                .filter(|_| ok)
                .map(|v| v.dimension())
                .unwrap_or_default();
            Cell {
                name: cell.name,
                line: cell.line,
                formula: cell.formula,
                description: cell.description,
                unit: &cell.display.text,
                value: value.map(|v| cell.display.rounded_value_of(v.si)),
                si: value.map(|v| v.si),
                dimension: dimension
                    .nonzero_exponents()
                    .map(|(name, exponent)| (name.to_string(), serde_json::Value::from(exponent)))
                    .collect(),
                vector: vector.map(|v| {
                    v.components()
                        .iter()
                        .map(|&c| cell.display.rounded_value_of(c))
                        .collect()
                }),
                si_vector: vector.map(|v| v.components().to_vec()),
                range: evaluated
                    .ranges
                    .get(cell.id)
                    .and_then(Option::as_ref)
                    .map(|range| Range {
                        low: cell.display.rounded_value_of(range.low),
                        high: cell.display.rounded_value_of(range.high),
                        first_order_low: range
                            .first_order
                            .map(|(low, _)| cell.display.rounded_value_of(low)),
                        first_order_high: range
                            .first_order
                            .map(|(_, high)| cell.display.rounded_value_of(high)),
                        exact: range.method == crate::eval::RangeMethod::WorstCorners,
                        method: match range.method {
                            crate::eval::RangeMethod::Guaranteed => "guaranteed",
                            crate::eval::RangeMethod::WorstCorners => "worst-corners",
                            crate::eval::RangeMethod::Corners(_) => "corners",
                        },
                        sensitivities: range
                            .sensitivities
                            .iter()
                            .map(|s| JsonSensitivity {
                                input: evaluated.cell_at(s.input).name.to_string(),
                                derivative_si: s.derivative,
                                normalized: s.normalized,
                                share: s.share,
                            })
                            .collect(),
                    }),
                status: cell.status.as_str(),
                blocked_by: match cell.status {
                    crate::eval::CellStatus::Blocked { by } => Some(evaluated.cell_at(by).name),
                    _ => None,
                },
            }
        })
        .collect()
}

/// Every check: sides, utilization, verdict and where it comes from.
fn json_checks(evaluated: &Evaluated) -> Vec<Check<'_>> {
    let lines = &evaluated.lines;
    evaluated
        .checks
        .iter()
        .enumerate()
        .map(|(index, check)| Check {
            line: lines.line_of(check.span.start()) + 1,
            label: check.label.as_deref(),
            expression: check.statement(),
            status: check.status.as_str(),
            passed: check.passed(),
            fails: check
                .fails
                .iter()
                .map(|&place| json_place(evaluated, place, None))
                .collect(),
            unknown: check
                .unknowns
                .iter()
                .map(|u| json_place(evaluated, u.place, Some(&u.reason)))
                .collect(),
            utilization: check.utilization,
            worst_utilization: check.worst.as_ref().and_then(|w| w.worst_utilization),
            governing_case: (!evaluated.cases.is_empty()).then(|| {
                evaluated
                    .governing
                    .get(index)
                    .copied()
                    .flatten()
                    .map(|case| evaluated.cases[case].name.as_str())
            }),
        })
        .collect()
}

/// Every load case: its results and its checks.
fn json_cases(evaluated: &Evaluated) -> Vec<JsonCase<'_>> {
    let lines = &evaluated.lines;
    evaluated
        .cases
        .iter()
        .map(|case| JsonCase {
            name: &case.name,
            label: case.label.as_deref(),
            line: lines.line_of(evaluated.sheet().statements[case.statement].span.start()) + 1,
            evaluated: case.evaluated,
            results: evaluated
                .case_results
                .iter()
                .zip(&case.results)
                .map(|(&id, result)| {
                    let cell = evaluated.cell_at(id);
                    JsonCaseValue {
                        name: cell.name,
                        unit: &cell.display.text,
                        value: result
                            .value
                            .and_then(|v| v.scalar())
                            .map(|q| cell.display.rounded_value_of(q.si)),
                        low: result
                            .range
                            .as_ref()
                            .map(|r| cell.display.rounded_value_of(r.low)),
                        high: result
                            .range
                            .as_ref()
                            .map(|r| cell.display.rounded_value_of(r.high)),
                    }
                })
                .collect(),
            checks: evaluated
                .checks
                .iter()
                .zip(&case.checks)
                .map(|(check, case_check)| JsonCaseCheck {
                    line: lines.line_of(check.span.start()) + 1,
                    status: case_check.status.as_str(),
                    passed: match case_check.status {
                        crate::eval::CheckStatus::Passed => Some(true),
                        crate::eval::CheckStatus::Failed => Some(false),
                        _ => None,
                    },
                    utilization: case_check.utilization,
                    worst_utilization: case_check.worst.as_ref().and_then(|w| w.worst_utilization),
                })
                .collect(),
        })
        .collect()
}

/// Every solve block: status, unknowns, equations and residuals.
fn json_solves(evaluated: &Evaluated) -> Vec<Solve<'_>> {
    let lines = &evaluated.lines;
    evaluated
        .solves
        .iter()
        .map(|solve| Solve {
            line: lines.line_of(solve.span.start()) + 1,
            unknowns: solve
                .unknowns
                .iter()
                .map(|&id| evaluated.cell_at(id).name)
                .collect(),
            status: match solve.status {
                crate::eval::SolveStatus::Solved => "solved",
                crate::eval::SolveStatus::Failed => "failed",
                crate::eval::SolveStatus::NotRun => "not-run",
            },
            linear: solve.linear,
            iterations: solve.iterations,
            condition: solve.condition,
            equations: solve
                .equations
                .iter()
                .map(|equation| SolveEquation {
                    equation: &equation.text,
                    line: lines.line_of(equation.span.start()) + 1,
                    residual_si: equation.residual.map(|r| r.si),
                })
                .collect(),
        })
        .collect()
}

/// A place where a check fails or could not be established.
fn json_place<'a>(
    evaluated: &'a Evaluated,
    place: crate::eval::Place,
    reason: Option<&'a str>,
) -> JsonPlace<'a> {
    let (kind, case) = place.kind();
    JsonPlace {
        place: kind,
        case: case
            .and_then(|index| evaluated.cases.get(index))
            .map(|c| c.name.as_str()),
        reason,
    }
}

/// A diagnostic with its line and column.
pub(super) fn diagnostic<'a>(
    diagnostic: &'a Diagnostic,
    source: &str,
    lines: &LineIndex,
) -> JsonDiagnostic<'a> {
    let position = lines.line_column(source, diagnostic.span.start());
    JsonDiagnostic {
        severity: diagnostic.severity.as_str(),
        code: diagnostic.code.as_str(),
        line: position.line,
        column: position.column,
        message: &diagnostic.message,
        help: diagnostic.help.as_deref(),
    }
}

fn review(evaluated: &Evaluated) -> JsonReview {
    let review = crate::review::Review::of(evaluated);
    let marks = review
        .marks
        .iter()
        .map(|mark| JsonMark {
            kind: mark.kind.keyword(),
            open: mark.open,
            line: mark.line,
            about: super::review::target_text(evaluated, mark.target),
            text: mark.text.clone(),
            by: mark.by.clone(),
            on: mark.on.clone(),
        })
        .collect();
    let signoff = review.signoff().map(|signoff| {
        let changes = match &signoff.state {
            crate::review::SignOffState::Current => None,
            crate::review::SignOffState::Stale(changes) => Some(changes.clone()),
        };
        let current = changes.is_none();
        let changes = changes.unwrap_or_default();
        JsonSignOff {
            by: signoff.by.clone(),
            on: signoff.on.clone(),
            line: signoff.line,
            current,
            changed: changes.changed,
            added: changes.added,
            removed: changes.removed,
            affected: changes.affected,
        }
    });
    JsonReview {
        fingerprint: review.fingerprint,
        marks,
        signoff,
    }
}
