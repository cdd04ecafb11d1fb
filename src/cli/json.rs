//! `heft check --json`: one JSON object with a stable schema.

use serde::Serialize;

use crate::diag::Diagnostic;
use crate::eval::Evaluated;
use crate::syntax::LineIndex;

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
    cells: Vec<Cell<'a>>,
    checks: Vec<Check<'a>>,
    solves: Vec<Solve<'a>>,
    runs: Vec<super::runs::JsonRun<'a>>,
    diagnostics: Vec<JsonDiagnostic<'a>>,
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
    passed: Option<bool>,
    utilization: Option<f64>,
}

#[derive(Serialize)]
struct JsonDiagnostic<'a> {
    severity: &'static str,
    code: &'static str,
    line: usize,
    column: usize,
    message: &'a str,
    help: Option<&'a str>,
}

/// Serializes an evaluated sheet.
pub fn check_report(file_name: &str, source: &str, evaluated: &Evaluated) -> String {
    let lines = &evaluated.lines;
    let cells = evaluated
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
                value: value.map(|v| cell.display.value_of(v.si)),
                si: value.map(|v| v.si),
                dimension: dimension
                    .nonzero_exponents()
                    .map(|(name, exponent)| (name.to_string(), serde_json::Value::from(exponent)))
                    .collect(),
                vector: vector.map(|v| {
                    v.components()
                        .iter()
                        .map(|&c| cell.display.value_of(c))
                        .collect()
                }),
                si_vector: vector.map(|v| v.components().to_vec()),
                status: cell.status.as_str(),
                blocked_by: match cell.status {
                    crate::eval::CellStatus::Blocked { by } => Some(evaluated.cell_at(by).name),
                    _ => None,
                },
            }
        })
        .collect();
    let checks = evaluated
        .checks
        .iter()
        .map(|check| Check {
            line: lines.line_of(check.span.start()) + 1,
            label: check.label.as_deref(),
            expression: format!(
                "{} {} {}",
                check.lhs_text,
                check.comparison.symbol(),
                check.rhs_text
            ),
            passed: check.passed(),
            utilization: check.utilization,
        })
        .collect();
    let solves = evaluated
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
        .collect();
    let report = Report {
        schema: SCHEMA,
        file: file_name,
        title: evaluated.header().title.as_deref(),
        revision: evaluated.header().revision.as_deref(),
        display: evaluated.header().display.label(),
        sig_figs: evaluated.header().sig_figs,
        clean: evaluated.is_clean(),
        cells,
        checks,
        solves,
        runs: super::runs::json_runs(evaluated, lines),
        diagnostics: evaluated
            .diagnostics
            .iter()
            .map(|d| diagnostic(d, source, lines))
            .collect(),
    };
    let mut text = serde_json::to_string_pretty(&report)
        .unwrap_or_else(|error| format!("{{\"error\": \"{error}\"}}"));
    text.push('\n');
    text
}

fn diagnostic<'a>(
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
