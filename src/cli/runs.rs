//! Simulate runs for people and tools: the block's summary and table in
//! `heft check`, its JSON, and `heft check --csv` (every step of a run).

use std::fmt::Write as _;

use schemars::JsonSchema;
use serde::Serialize;

use super::json_words;
use crate::base::LineIndex;
use crate::eval::{Evaluated, RunReport, RunStatus, format_value};
use crate::units::{Value, format_significant};

/// The one-line summary of how a run went, without its head.
pub fn summary(evaluated: &Evaluated, run: &RunReport) -> String {
    let sig_figs = evaluated.header().sig_figs;
    let time = |t: f64| {
        format_value(
            Value::Scalar(crate::units::Quantity::new(
                t,
                crate::units::Dimension::TIME,
            )),
            &run.time_display,
            sig_figs,
        )
    };
    let work = format!(
        "Dormand–Prince 5(4){}, {} step{} ({} rejected), {} evaluations, tolerance {}",
        if run.compiled { "" } else { ", interpreted" },
        run.stats.accepted,
        if run.stats.accepted == 1 { "" } else { "s" },
        run.stats.rejected,
        run.stats.evaluations,
        format_significant(run.relative_tolerance, 3)
    );
    match (run.status, run.final_time()) {
        (RunStatus::Reached, Some(end)) => format!("{work}; reached t = {}", time(end)),
        (RunStatus::Stopped, Some(end)) => {
            let by = run
                .stopped_by
                .and_then(|event| run.events.get(event))
                .map(|event| match &event.name {
                    Some(name) => format!("{name}: {}", event.condition),
                    None => event.condition.clone(),
                })
                .unwrap_or_default();
            format!("{work}; stopped at t = {} where {by}", time(end))
        }
        (RunStatus::Failed, Some(end)) => format!("failed at t = {}", time(end)),
        _ => "not run".to_string(),
    }
}

/// Writes a run's head, summary, table and events (indented under it).
pub fn write_run(
    out: &mut String,
    evaluated: &Evaluated,
    index: usize,
    bold: &dyn Fn(&str) -> String,
) {
    let run = &evaluated.runs[index];
    let _ = writeln!(out, "  {}  ({})", bold(&run.title), summary(evaluated, run));
    for state in &run.states {
        let note = state
            .start_description
            .as_deref()
            .map(|d| format!("  {d}"))
            .unwrap_or_default();
        let _ = writeln!(out, "    {}(0) = {}{note}", state.column.label, state.start);
    }
    if run.rows.is_empty() {
        return;
    }
    let sig_figs = evaluated.header().sig_figs;
    let header_of = |label: &str, unit: &str| {
        if unit.is_empty() {
            label.to_string()
        } else {
            format!("{label} [{unit}]")
        }
    };
    let mut table: Vec<Vec<String>> = Vec::with_capacity(run.rows.len() + 1);
    let time_label = evaluated.cell_at(run.time).name;
    table.push(
        std::iter::once(header_of(time_label, &run.time_display.text))
            .chain(
                run.columns
                    .iter()
                    .map(|column| header_of(&column.label, &column.display.text)),
            )
            .collect(),
    );
    let mut notes = Vec::with_capacity(run.rows.len() + 1);
    notes.push(String::new());
    for row in &run.rows {
        let number = |si: f64, factor: f64| format_significant(si / factor, sig_figs);
        let mut cells = vec![number(row.time, run.time_display.si_factor)];
        for (value, column) in row.values.iter().zip(&run.columns) {
            cells.push(match value {
                Some(Value::Scalar(q)) => number(q.si, column.display.si_factor),
                Some(Value::Vector(v)) => format!(
                    "({})",
                    v.components()
                        .iter()
                        .map(|&c| number(c, column.display.si_factor))
                        .collect::<Vec<_>>()
                        .join(", ")
                ),
                None => "—".to_string(),
            });
        }
        let note = if row.values.iter().all(Option::is_none) && !row.values.is_empty() {
            "after the run ended".to_string()
        } else {
            row.events
                .iter()
                .filter_map(|&event| run.events.get(event))
                .map(|event| match &event.description {
                    Some(description) => format!("{}  {description}", event.label()),
                    None => event.label(),
                })
                .collect::<Vec<_>>()
                .join("; ")
        };
        table.push(cells);
        notes.push(note);
    }
    let n_columns = table[0].len();
    let widths: Vec<usize> = (0..n_columns)
        .map(|column| {
            table
                .iter()
                .map(|row| row[column].chars().count())
                .max()
                .unwrap_or(0)
        })
        .collect();
    for (row, note) in table.iter().zip(&notes) {
        let mut line = String::from("  ");
        for (cell, width) in row.iter().zip(&widths) {
            let _ = write!(line, "  {cell:>width$}");
        }
        if !note.is_empty() {
            let _ = write!(line, "   {note}");
        }
        let _ = writeln!(out, "{line}");
    }
    for event in run.events.iter().filter(|event| event.times.is_empty()) {
        let _ = writeln!(out, "    {} did not happen", event.label());
    }
}

/// A simulate block's run, in the `heft-check/1` JSON (`runs`).
#[derive(Serialize, JsonSchema)]
pub struct JsonRun<'a> {
    /// The line of its `simulate`.
    line: usize,
    /// The name of its time variable.
    time: &'a str,
    /// The names of its states.
    states: Vec<&'a str>,
    /// Each state's starting value as written.
    starts: Vec<JsonStart<'a>>,
    /// How the run ended.
    status: json_words::RunStatus,
    /// The start time in seconds (null when the range could not be evaluated).
    start_s: Option<f64>,
    /// The end time asked for, in seconds (null as `start_s`).
    end_s: Option<f64>,
    /// Where the run ended, in seconds (null when nothing was integrated).
    final_time_s: Option<f64>,
    /// The stop condition that ended it, as `name: condition` or
    /// `stop: condition`.
    stopped_by: Option<String>,
    /// Accepted integration steps.
    steps: usize,
    /// Rejected integration steps.
    rejected_steps: usize,
    /// Evaluations of the rates.
    evaluations: usize,
    /// The integrator's relative tolerance.
    relative_tolerance: f64,
    /// Whether the rates ran compiled (false: interpreted).
    compiled: bool,
    /// Its stop conditions and named events, and when they happened.
    events: Vec<JsonEvent<'a>>,
    /// The run's table, as `heft check` shows it.
    table: JsonTable<'a>,
}

/// A state's starting value.
#[derive(Serialize, JsonSchema)]
struct JsonStart<'a> {
    /// The state.
    state: &'a str,
    /// Its starting value as written.
    value: &'a str,
    /// Its description, if written.
    description: Option<&'a str>,
}

/// A stop condition or named event.
#[derive(Serialize, JsonSchema)]
struct JsonEvent<'a> {
    /// Its name, if it has one.
    name: Option<&'a str>,
    /// The condition as written.
    condition: &'a str,
    /// Its description, if written.
    description: Option<&'a str>,
    /// Its line.
    line: usize,
    /// Whether it ends the run.
    stops: bool,
    /// Every time it happened, in seconds.
    times_s: &'a [f64],
}

/// A run's table.
#[derive(Serialize, JsonSchema)]
struct JsonTable<'a> {
    /// The unit of the rows' `time`.
    time_unit: &'a str,
    /// The columns after the time.
    columns: Vec<JsonColumn<'a>>,
    /// The rows.
    rows: Vec<JsonRow>,
}

/// A column of a run's table.
#[derive(Serialize, JsonSchema)]
struct JsonColumn<'a> {
    /// What it shows, as written.
    label: &'a str,
    /// The unit its values are in.
    unit: &'a str,
}

/// A row of a run's table.
#[derive(Serialize, JsonSchema)]
struct JsonRow {
    /// The time, in the table's `time_unit`.
    time: f64,
    /// One value per column, in its unit (null after the run ended).
    values: Vec<Option<JsonRowValue>>,
    /// The events that happened at this row.
    events: Vec<String>,
}

/// A value in a run's table: a number, or a vector's components.
#[derive(Serialize, JsonSchema)]
#[serde(untagged)]
enum JsonRowValue {
    /// A scalar.
    Scalar(f64),
    /// A vector's components.
    Vector(Vec<f64>),
}

/// Every run of the sheet as JSON objects.
pub fn json_runs<'a>(evaluated: &'a Evaluated, lines: &LineIndex) -> Vec<JsonRun<'a>> {
    evaluated
        .runs
        .iter()
        .map(|run| JsonRun {
            line: lines.line_of(run.span.start()) + 1,
            time: evaluated.cell_at(run.time).name,
            states: run
                .states
                .iter()
                .map(|state| evaluated.cell_at(state.cell).name)
                .collect(),
            starts: run
                .states
                .iter()
                .map(|state| JsonStart {
                    state: &state.column.label,
                    value: &state.start,
                    description: state.start_description.as_deref(),
                })
                .collect(),
            status: run.status.into(),
            start_s: run.range.map(|(start, _)| start),
            end_s: run.range.map(|(_, end)| end),
            final_time_s: run.final_time(),
            stopped_by: run
                .stopped_by
                .and_then(|event| run.events.get(event))
                .map(|event| event.label()),
            steps: run.stats.accepted,
            rejected_steps: run.stats.rejected,
            evaluations: run.stats.evaluations,
            relative_tolerance: run.relative_tolerance,
            compiled: run.compiled,
            events: run
                .events
                .iter()
                .map(|event| JsonEvent {
                    name: event.name.as_deref(),
                    condition: &event.condition,
                    description: event.description.as_deref(),
                    line: lines.line_of(event.span.start()) + 1,
                    stops: event.stops,
                    times_s: &event.times,
                })
                .collect(),
            table: JsonTable {
                time_unit: &run.time_display.text,
                columns: run
                    .columns
                    .iter()
                    .map(|column| JsonColumn {
                        label: &column.label,
                        unit: &column.display.text,
                    })
                    .collect(),
                rows: run
                    .rows
                    .iter()
                    .map(|row| JsonRow {
                        time: run.time_display.rounded_value_of(row.time),
                        values: row
                            .values
                            .iter()
                            .zip(&run.columns)
                            .map(|(value, column)| match value {
                                Some(Value::Scalar(q)) => Some(JsonRowValue::Scalar(
                                    column.display.rounded_value_of(q.si),
                                )),
                                Some(Value::Vector(v)) => Some(JsonRowValue::Vector(
                                    v.components()
                                        .iter()
                                        .map(|&c| column.display.rounded_value_of(c))
                                        .collect(),
                                )),
                                None => None,
                            })
                            .collect(),
                        events: row
                            .events
                            .iter()
                            .filter_map(|&event| run.events.get(event))
                            .map(|event| event.label())
                            .collect(),
                    })
                    .collect(),
            },
        })
        .collect()
}

/// Picks a run: the one whose `simulate` line is `line`, else the first.
/// The error names the lines there are.
pub fn pick_run(evaluated: &Evaluated, line: Option<usize>) -> Result<usize, String> {
    let lines: Vec<usize> = evaluated
        .runs
        .iter()
        .map(|run| evaluated.lines.line_of(run.span.start()) + 1)
        .collect();
    if lines.is_empty() {
        return Err("the sheet has no simulate block".to_string());
    }
    match line {
        None => Ok(0),
        Some(line) => lines.iter().position(|&l| l == line).ok_or_else(|| {
            format!(
                "no simulate block starts on line {line}; simulate blocks start on line{} {}",
                if lines.len() == 1 { "" } else { "s" },
                lines
                    .iter()
                    .map(usize::to_string)
                    .collect::<Vec<_>>()
                    .join(", ")
            )
        }),
    }
}

/// Every step of a run as CSV: the time and each state (a vector state as
/// one column per component), in their display units at full precision,
/// with event occurrences as extra rows named in the last column.
pub fn csv(evaluated: &Evaluated, index: usize) -> Option<String> {
    let run = evaluated.runs.get(index)?;
    if !matches!(run.status, RunStatus::Reached | RunStatus::Stopped) {
        return None;
    }
    let trajectory = run.trajectory.as_ref()?;
    let mut out = String::new();
    let quote = |text: &str| {
        if text.contains([',', '"', '\n']) {
            format!("\"{}\"", text.replace('"', "\"\""))
        } else {
            text.to_string()
        }
    };
    let unit = |label: &str, unit: &str| {
        if unit.is_empty() {
            label.to_string()
        } else {
            format!("{label} [{unit}]")
        }
    };
    let mut header = vec![unit(
        evaluated.cell_at(run.time).name,
        &run.time_display.text,
    )];
    for state in &run.states {
        let name = &state.column.label;
        if state.n_components == 1 {
            header.push(unit(name, &state.column.display.text));
        } else {
            for axis in ["x", "y", "z"].iter().take(state.n_components) {
                header.push(unit(&format!("{name}.{axis}"), &state.column.display.text));
            }
        }
    }
    header.push("event".to_string());
    let _ = writeln!(
        out,
        "{}",
        header
            .iter()
            .map(|h| quote(h))
            .collect::<Vec<_>>()
            .join(",")
    );
    let mut events: Vec<(f64, String)> = run
        .events
        .iter()
        .flat_map(|event| event.times.iter().map(|&t| (t, event.label())))
        .collect();
    events.sort_by(|a, b| a.0.total_cmp(&b.0));
    let mut events = events.into_iter().peekable();
    let mut state = vec![0.0; trajectory.n_components()];
    let write_row = |out: &mut String, t: f64, y: &[f64], event: &str| {
        let mut fields = vec![run.time_display.value_of(t).to_string()];
        for slots in &run.states {
            for &value in &y[slots.first..slots.first + slots.n_components] {
                fields.push(slots.column.display.value_of(value).to_string());
            }
        }
        fields.push(quote(event));
        let _ = writeln!(out, "{}", fields.join(","));
    };
    for (boundary, &t) in trajectory.times().iter().enumerate() {
        while let Some((at, label)) = events.next_if(|(at, _)| *at < t) {
            trajectory.state_at(at, &mut state);
            write_row(&mut out, at, &state, &label);
        }
        let mut here = Vec::new();
        while let Some((_, label)) = events.next_if(|(at, _)| *at == t) {
            here.push(label);
        }
        write_row(
            &mut out,
            t,
            trajectory.state_at_boundary(boundary),
            &here.join("; "),
        );
    }
    Some(out)
}
