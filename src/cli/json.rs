//! `heft check --json`: one JSON object with a stable schema.

use std::collections::BTreeMap;

use schemars::{JsonSchema, Schema, generate::SchemaSettings, transform::RecursiveTransform};
use serde::Serialize;

use super::json_words;
use crate::base::Diagnostic;
use crate::base::LineIndex;
use crate::eval::Evaluated;

/// The version of the JSON schema; bumped only for incompatible changes.
pub const SCHEMA: &str = "heft-check/1";

/// `heft check --json`: an evaluated sheet.
#[derive(Serialize, JsonSchema)]
#[schemars(title = "heft-check/1")]
struct Report<'a> {
    /// The format's name.
    #[schemars(extend("const" = SCHEMA))]
    schema: &'static str,
    /// The sheet file as named on the command line.
    file: &'a str,
    /// The header's title.
    title: Option<&'a str>,
    /// The header's revision mark.
    revision: Option<&'a str>,
    /// The unit system results are shown in when a cell declares none.
    display: json_words::Display,
    /// The significant figures results are shown with.
    sig_figs: u32,
    /// No error and every check passed.
    clean: bool,
    /// The counts every front end shows.
    summary: JsonSummary,
    /// Every cell, in the sheet's order.
    cells: Vec<Cell<'a>>,
    /// Every check, in the sheet's order.
    checks: Vec<Check<'a>>,
    /// Every solve block.
    solves: Vec<Solve<'a>>,
    /// Every load case.
    cases: Vec<JsonCase<'a>>,
    /// Every simulate block's run.
    runs: Vec<super::runs::JsonRun<'a>>,
    /// Every parts list and lift.
    parts: Vec<super::parts::JsonMembers<'a>>,
    /// Every sweep block's study (never a verdict of the sheet).
    sweeps: Vec<super::sweep_json::JsonSweep<'a>>,
    /// Every table, with each reading of it.
    tables: Vec<super::json_tables::JsonTable<'a>>,
    /// Every finding, sorted by position.
    diagnostics: Vec<JsonDiagnostic<'a>>,
    /// The checker's record.
    review: JsonReview,
    /// Every sheet a `use` line names, in the sheet's order.
    uses: Vec<JsonUse<'a>>,
}

/// A sheet a `use` line names.
#[derive(Serialize, JsonSchema)]
struct JsonUse<'a> {
    /// The name its cells are read under (`gear` in `gear.WLL`).
    alias: &'a str,
    /// The path as written on the `use` line.
    path: &'a str,
    /// Its title, if it was read and has one.
    title: Option<&'a str>,
    /// Its revision mark, if it was read and has one.
    revision: Option<&'a str>,
    /// Its fingerprint (covering the sheets it uses), or null if it could
    /// not be read.
    fingerprint: Option<&'a str>,
    /// How many errors it has on its own.
    errors: usize,
    /// Why it could not be read, if so.
    #[serde(skip_serializing_if = "Option::is_none")]
    problem: Option<&'a str>,
}

fn uses(evaluated: &Evaluated) -> Vec<JsonUse<'_>> {
    evaluated
        .sheet()
        .imports
        .iter()
        .map(|import| {
            let used = import.sheet();
            JsonUse {
                alias: &import.alias.text,
                path: &import.path,
                title: used.and_then(|used| used.title.as_deref()),
                revision: used.and_then(|used| used.revision.as_deref()),
                fingerprint: used.map(|used| used.fingerprint.as_str()),
                errors: used.map_or(0, |used| used.errors.len()),
                problem: import
                    .loaded
                    .as_ref()
                    .err()
                    .map(|problem| problem.message.as_str()),
            }
        })
        .collect()
}

/// The counts every presentation shows (shared by `heft check` and
/// `heft audit`).
#[derive(Serialize, JsonSchema)]
pub(super) struct JsonSummary {
    /// Cells.
    cells: usize,
    /// Findings of severity `error`.
    errors: usize,
    /// Findings of severity `warning`.
    warnings: usize,
    /// Findings of severity `info`.
    infos: usize,
    /// Checks.
    checks: usize,
    /// Checks that passed.
    passed: usize,
    /// Checks that failed.
    failed: usize,
    /// Checks that could not be established (never a pass).
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
#[derive(Serialize, JsonSchema)]
struct JsonPlace<'a> {
    /// Which place.
    place: json_words::Place,
    /// The load case's name (absent for the sheet as written).
    #[serde(skip_serializing_if = "Option::is_none")]
    case: Option<&'a str>,
    /// Why it could not be established (absent for a failure).
    #[serde(skip_serializing_if = "Option::is_none")]
    reason: Option<&'a str>,
}

/// The checker's record: fingerprint, every review mark, the sign-off in force.
#[derive(Serialize, JsonSchema)]
struct JsonReview {
    /// The fingerprint of the sheet's content, which a sign-off records.
    fingerprint: String,
    /// Every review mark, in the sheet's order.
    marks: Vec<JsonMark>,
    /// The sign-off in force, or null.
    signoff: Option<JsonSignOff>,
}

/// A review mark.
#[derive(Serialize, JsonSchema)]
struct JsonMark {
    /// What the mark says.
    kind: json_words::MarkKind,
    /// Whether it still needs the preparer's attention.
    open: bool,
    /// Its line.
    line: usize,
    /// The item it is attached to.
    about: String,
    /// Its text, if written.
    text: Option<String>,
    /// Who wrote it.
    by: String,
    /// When, as written.
    on: String,
}

/// The sign-off in force, and what changed since it was given.
#[derive(Serialize, JsonSchema)]
struct JsonSignOff {
    /// The checker.
    by: String,
    /// The date, as written.
    on: String,
    /// Its line.
    line: usize,
    /// Whether the sheet is still the one signed.
    current: bool,
    /// Cells whose own line changed since (all four lists are empty when
    /// `current`).
    changed: Vec<String>,
    /// Cells that were not there when it was signed.
    added: Vec<String>,
    /// Cells that were signed but are gone.
    removed: Vec<String>,
    /// Cells whose line did not change but that use a changed or added cell.
    affected: Vec<String>,
}

/// A cell.
#[derive(Serialize, JsonSchema)]
struct Cell<'a> {
    /// Its name.
    name: &'a str,
    /// Its line.
    line: usize,
    /// Its formula as written.
    formula: &'a str,
    /// Its description, if written.
    description: Option<&'a str>,
    /// The unit it is shown in (declared, or chosen by the display system).
    unit: &'a str,
    /// A scalar value in `unit`, rounded to 15 significant digits (null for
    /// a vector or where there is none).
    value: Option<f64>,
    /// The scalar value in coherent SI units.
    si: Option<f64>,
    /// The exponent of each SI base quantity, those that are not zero
    /// (empty for a plain number or where there is no value).
    #[schemars(extend("propertyNames" = { "enum": crate::units::BASE_NAMES }))]
    dimension: BTreeMap<&'static str, i8>,
    /// Components of a vector value, in `unit` (absent for scalars).
    #[serde(skip_serializing_if = "Option::is_none")]
    vector: Option<Vec<f64>>,
    /// Components of a vector value in SI units (absent for scalars).
    #[serde(skip_serializing_if = "Option::is_none")]
    si_vector: Option<Vec<f64>>,
    /// Whether it evaluated.
    status: json_words::CellStatus,
    /// The failed cell at the root, for a blocked cell.
    blocked_by: Option<&'a str>,
    /// The range over the tolerances, in `unit` (absent when none).
    #[serde(skip_serializing_if = "Option::is_none")]
    range: Option<Range>,
}

/// A result's range over its inputs' tolerances.
#[derive(Serialize, JsonSchema)]
struct Range {
    /// The lower bound, in the cell's unit.
    low: f64,
    /// The upper bound, in the cell's unit.
    high: f64,
    /// The first-order (linearised) lower bound, where exact derivatives
    /// are known.
    first_order_low: Option<f64>,
    /// The first-order upper bound.
    first_order_high: Option<f64>,
    /// Whether the bounds are exact up to rounding (`method` is
    /// `worst-corners`).
    exact: bool,
    /// How the bounds were found, which says what they promise.
    method: json_words::RangeMethod,
    /// The inputs ranked by their share of the range, largest first.
    sensitivities: Vec<JsonSensitivity>,
}

/// How much one toleranced input moves a result.
#[derive(Serialize, JsonSchema)]
struct JsonSensitivity {
    /// The input cell.
    input: String,
    /// ∂result/∂input at the nominal point, in SI units.
    derivative_si: f64,
    /// ∂ln result/∂ln input (null where the result or the input is zero).
    normalized: Option<f64>,
    /// The input's share of the first-order range, from 0 to 1.
    share: f64,
}

/// A load case.
#[derive(Serialize, JsonSchema)]
struct JsonCase<'a> {
    /// Its name.
    name: &'a str,
    /// Its label, if written.
    label: Option<&'a str>,
    /// Its line.
    line: usize,
    /// Whether the case could be evaluated at all.
    evaluated: bool,
    /// The case's results.
    results: Vec<JsonCaseValue<'a>>,
    /// Every check of the sheet, judged in this case.
    checks: Vec<JsonCaseCheck>,
}

/// A result in a load case.
#[derive(Serialize, JsonSchema)]
struct JsonCaseValue<'a> {
    /// The cell.
    name: &'a str,
    /// The unit the values are in.
    unit: &'a str,
    /// The value at the case's nominal inputs.
    value: Option<f64>,
    /// The lower bound over the case's tolerances.
    low: Option<f64>,
    /// The upper bound over the case's tolerances.
    high: Option<f64>,
}

/// A check judged in a load case.
#[derive(Serialize, JsonSchema)]
struct JsonCaseCheck {
    /// The check's line.
    line: usize,
    /// Its verdict in this case.
    status: json_words::CheckStatus,
    /// True for `passed`, false for `failed`, else null.
    passed: Option<bool>,
    /// Its utilization at the case's nominal values.
    utilization: Option<f64>,
    /// At the worst case of the case's tolerances.
    worst_utilization: Option<f64>,
}

/// A solve block.
#[derive(Serialize, JsonSchema)]
struct Solve<'a> {
    /// The line of its `solve`.
    line: usize,
    /// The cells it solves for.
    unknowns: Vec<&'a str>,
    /// How it ended.
    status: json_words::SolveStatus,
    /// Whether the system is linear in its unknowns (solved in one step).
    linear: bool,
    /// Newton iterations taken.
    iterations: usize,
    /// The condition number of the scaled Jacobian at the solution.
    condition: Option<f64>,
    /// Its equations (a vector equation gives one per component).
    equations: Vec<SolveEquation<'a>>,
}

/// An equation of a solve block.
#[derive(Serialize, JsonSchema)]
struct SolveEquation<'a> {
    /// The equation as written, with `.x`/`.y`/`.z` for a vector component.
    equation: &'a str,
    /// Its line.
    line: usize,
    /// Left minus right at the solution, in SI units.
    residual_si: Option<f64>,
}

/// A check.
#[derive(Serialize, JsonSchema)]
struct Check<'a> {
    /// Its line.
    line: usize,
    /// Its label, if written.
    label: Option<&'a str>,
    /// The comparison as written.
    expression: String,
    /// The verdict over the sheet as written, its tolerances and its cases.
    status: json_words::CheckStatus,
    /// True for `passed`, false for `failed`, else null.
    passed: Option<bool>,
    /// Everywhere the check fails.
    fails: Vec<JsonPlace<'a>>,
    /// Everywhere it could not be established, with the reason.
    unknown: Vec<JsonPlace<'a>>,
    /// At the nominal values: left over right for `<` and `<=`, right
    /// over left for `>` and `>=`.
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
#[derive(Serialize, JsonSchema)]
pub(super) struct JsonDiagnostic<'a> {
    /// How serious it is.
    severity: json_words::Severity,
    /// Its stable code.
    code: json_words::Code,
    /// The line it points at (from 1).
    line: usize,
    /// The column it points at (from 1, in characters).
    column: usize,
    /// What is wrong.
    message: &'a str,
    /// What to do about it, with a checked fix where there is one.
    help: Option<&'a str>,
}

/// The JSON Schema of an output type, for the serialized form, as pretty
/// text ending in a line break. The descriptions are the types' doc
/// comments, each paragraph on one line.
pub(super) fn schema_text<T: JsonSchema>() -> String {
    let schema = SchemaSettings::draft2020_12()
        .for_serialize()
        .with_transform(RecursiveTransform(one_line_paragraphs))
        .into_generator()
        .into_root_schema_for::<T>();
    text(&schema)
}

/// Joins the lines a doc comment was wrapped into, keeping its paragraphs.
fn one_line_paragraphs(schema: &mut Schema) {
    if let Some(serde_json::Value::String(description)) = schema.get_mut("description") {
        *description = description
            .split("\n\n")
            .map(|paragraph| paragraph.split('\n').collect::<Vec<_>>().join(" "))
            .collect::<Vec<_>>()
            .join("\n\n");
    }
}

/// The JSON Schema of `heft-check/1`.
pub(super) fn schema() -> String {
    schema_text::<Report<'static>>()
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
        display: evaluated.header().display.into(),
        sig_figs: evaluated.header().sig_figs,
        clean: summary.is_clean(),
        summary: summary.into(),
        cells,
        checks,
        solves,
        cases,
        runs: super::runs::json_runs(evaluated, lines),
        parts: super::parts::json_members(evaluated),
        sweeps: super::sweep_json::json_sweeps(evaluated),
        tables: super::json_tables::json_tables(evaluated),
        diagnostics: evaluated
            .diagnostics
            .iter()
            .map(|d| diagnostic(d, source, lines))
            .collect(),
        review: review(evaluated),
        uses: uses(evaluated),
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
                dimension: dimension.nonzero_exponents().collect(),
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
                        method: range.method.into(),
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
                status: cell.status.into(),
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
            status: check.status.into(),
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
                    status: case_check.status.into(),
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
            status: solve.status.into(),
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
    let (place, case) = json_words::Place::of(place);
    JsonPlace {
        place,
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
        severity: diagnostic.severity.into(),
        code: json_words::Code(diagnostic.code),
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
            kind: mark.kind.into(),
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
