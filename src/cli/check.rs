//! `heft check`: the sheet's cells in dependency order, its checks, its
//! findings and the caution, as text or JSON.

use std::fmt::Write as _;
use std::io;
use std::path::Path;

use anstyle::{AnsiColor, Style};

use super::{EXIT_CLEAN, EXIT_FINDINGS, EXIT_USAGE, eprint, json, load_sheet, print, runs};
use crate::base::visible::{visible, visible_output};
use crate::base::{Severity, render::render};
use crate::eval::{
    CellStatus, CheckStatus, Evaluated, OutlineItem, RangeMethod, SolveStatus, format_result,
    format_value,
};
use crate::units::Value;
use crate::units::format_significant;

/// What `heft check` prints.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Output {
    /// The text report.
    Text,
    /// The JSON report.
    Json,
    /// Every step of a simulate run as CSV (`run`: the line of its block).
    Csv {
        /// The `simulate` line of the run, if not the first.
        run: Option<usize>,
    },
    /// A simulate run's plot as SVG.
    Svg {
        /// The `simulate` line of the run, if not the first.
        run: Option<usize>,
    },
}

/// Runs `heft check FILE`.
pub fn run(path: &Path, output: Output, deny_warnings: bool, colour: bool) -> io::Result<u8> {
    let evaluated = load_sheet(path)?;
    let source = evaluated.source();
    let file_name = path.display().to_string();
    let text = match output {
        Output::Json => json::check_report(&file_name, source, &evaluated),
        Output::Text => text_report(&file_name, source, &evaluated, colour),
        Output::Csv { run } | Output::Svg { run } => {
            // The data goes to standard output; findings go to standard error.
            if !evaluated.diagnostics.is_empty() {
                eprint(
                    &render(&evaluated.diagnostics, &file_name, source, colour),
                    colour,
                );
            }
            let sweep_plot = match output {
                Output::Svg { run } => super::sweeps::sweep_svg(&evaluated, run),
                _ => None,
            };
            if let Some(plot) = sweep_plot {
                match plot {
                    Ok(svg) => svg,
                    Err(message) => {
                        eprint(&format!("heft: {file_name}: {message}\n"), false);
                        return Ok(EXIT_FINDINGS);
                    }
                }
            } else {
                let index = match runs::pick_run(&evaluated, run) {
                    Ok(index) => index,
                    Err(message) => {
                        eprint(&format!("heft: {file_name}: {message}\n"), false);
                        return Ok(EXIT_USAGE);
                    }
                };
                let data = if matches!(output, Output::Csv { .. }) {
                    runs::csv(&evaluated, index)
                } else {
                    crate::plot::run_svg(&evaluated, index)
                };
                match data {
                    Some(data) => data,
                    None => {
                        eprint(
                            &format!(
                                "heft: {file_name}: the simulate run did not finish, so there is nothing to export\n"
                            ),
                            false,
                        );
                        return Ok(EXIT_FINDINGS);
                    }
                }
            }
        }
    };
    print(&text, colour)?;
    let failed = !evaluated.is_clean() || (deny_warnings && evaluated.count(Severity::Warning) > 0);
    // The process ends next and the operating system takes the memory back
    // at once; freeing a large sheet node by node would only add time.
    std::mem::forget(evaluated);
    Ok(if failed { EXIT_FINDINGS } else { EXIT_CLEAN })
}

/// Paints text when colour is on.
pub(super) struct Painter {
    /// Whether to colour.
    pub colour: bool,
}

impl Painter {
    /// `text` in `style`, or plain. Sheet text in it must have passed
    /// [`visible`]; any other hidden control but a line break or a colour
    /// already in it is shown as an escape ([`visible_output`]).
    pub fn paint(&self, style: Style, text: &str) -> String {
        let text = visible_output(text, true);
        if self.colour {
            format!("{style}{text}{style:#}")
        } else {
            text.into_owned()
        }
    }
}

pub(super) const BOLD: Style = Style::new().bold();
pub(super) const PASS: Style = Style::new()
    .bold()
    .fg_color(Some(anstyle::Color::Ansi(AnsiColor::Green)));
pub(super) const FAIL: Style = Style::new()
    .bold()
    .fg_color(Some(anstyle::Color::Ansi(AnsiColor::Red)));
pub(super) const DIM: Style = Style::new().dimmed();

/// The file name and the header's project, revision and date, as the
/// first line under the title shows them (sheet text through [`visible`]).
pub(super) fn sheet_facts(header: &crate::sheet::Header, file_name: &str) -> Vec<String> {
    let mut facts = vec![visible(file_name).into_owned()];
    facts.extend(
        header
            .project
            .as_ref()
            .map(|p| format!("project {}", visible(p))),
    );
    facts.extend(
        header
            .revision
            .as_ref()
            .map(|r| format!("revision {}", visible(r))),
    );
    facts.extend(
        header
            .date
            .as_ref()
            .map(|d| format!("dated {}", visible(d))),
    );
    facts
}

/// The text report of `heft check`.
pub fn text_report(file_name: &str, source: &str, evaluated: &Evaluated, colour: bool) -> String {
    let painter = Painter { colour };
    let header = evaluated.header();
    let sig_figs = header.sig_figs;
    let mut out = String::new();
    let title = header.title.as_deref().unwrap_or("(untitled sheet)");
    let _ = writeln!(out, "{}", painter.paint(BOLD, &visible(title)));
    let mut facts = sheet_facts(header, file_name);
    facts.push(format!(
        "display {}, {sig_figs} significant figures",
        header.display.label()
    ));
    let _ = writeln!(out, "{}", painter.paint(DIM, &facts.join(" · ")));
    write_uses(&mut out, evaluated, &painter);

    write_cells(&mut out, evaluated, &painter);
    super::tables::write_tables(&mut out, evaluated, &painter);

    write_checks(&mut out, evaluated, &painter);

    write_cases(&mut out, evaluated, &painter);
    write_sensitivities(&mut out, evaluated, &painter);
    super::sweeps::write_sweeps(&mut out, evaluated, &painter);
    out.push_str(&super::review::review_text(evaluated));

    if !evaluated.diagnostics.is_empty() {
        let _ = writeln!(out);
        out.push_str(&render(&evaluated.diagnostics, file_name, source, colour));
    }

    write_summary(&mut out, evaluated, &painter);
    let _ = writeln!(out, "\n{}", painter.paint(DIM, &wrap(crate::CAUTION, 78)));
    out
}

/// One line per `use` line: the used sheet, its title block and the start
/// of its fingerprint, so the output says which revision it rests on.
pub(super) fn write_uses(out: &mut String, evaluated: &Evaluated, painter: &Painter) {
    for import in &evaluated.sheet().imports {
        let about = match &import.loaded {
            Ok(used) => {
                let mut facts = vec![format!("uses {} as {}", used.path, import.alias.text)];
                facts.extend(used.title.as_ref().map(|title| format!("“{title}”")));
                facts.extend(used.revision.as_ref().map(|r| format!("revision {r}")));
                facts.push(format!(
                    "fingerprint {}",
                    used.fingerprint.get(..8).unwrap_or(&used.fingerprint)
                ));
                facts.join(" · ")
            }
            Err(_) => format!("uses {} as {}: not read", import.path, import.alias.text),
        };
        let _ = writeln!(out, "{}", painter.paint(DIM, &visible(&about)));
    }
}

/// Which heading each cell sits under (its position in the outline), to
/// print headings in dependency order.
fn section_of_cells(evaluated: &Evaluated) -> Vec<Option<usize>> {
    let mut section_of = vec![None; evaluated.n_cells()];
    let mut current = None;
    for (position, item) in evaluated.outline.iter().enumerate() {
        match item {
            OutlineItem::Heading { .. } => current = Some(position),
            OutlineItem::Cell(id) => section_of[*id] = current,
            OutlineItem::Solve(report) => {
                for &id in &evaluated.solves[*report].unknowns {
                    section_of[id] = current;
                }
            }
            OutlineItem::Members(report) => {
                for &id in &report.cells {
                    section_of[id] = current;
                }
            }
            OutlineItem::Simulate(run) => {
                let run = &evaluated.runs[*run];
                section_of[run.time] = current;
                for state in &run.states {
                    section_of[state.cell] = current;
                }
            }
            _ => {}
        }
    }
    section_of
}

/// The cells in dependency order under their headings, with each solve
/// block and run before its first cell.
fn write_cells(out: &mut String, evaluated: &Evaluated, painter: &Painter) {
    let sig_figs = evaluated.header().sig_figs;
    let section_of = section_of_cells(evaluated);
    let name_width = evaluated
        .cells()
        .map(|c| c.name.chars().count())
        .max()
        .unwrap_or(0)
        .min(24);
    let formula_width = evaluated
        .cells()
        .map(|c| c.formula.chars().count())
        .max()
        .unwrap_or(0)
        .min(36);
    let mut printed_section = None;
    let mut seen_sections = std::collections::HashSet::new();
    let mut printed_block = None;
    let mut printed_run = None;
    for id in evaluated.order() {
        let cell = evaluated.cell_at(id);
        if section_of[id] != printed_section {
            printed_section = section_of[id];
            if let Some(position) = printed_section {
                let first_time = seen_sections.insert(position);
                write_section(out, evaluated, position, first_time, painter);
            }
        }
        if let Some(report) = cell.solved_by
            && cell.solved_by != printed_block
        {
            printed_block = cell.solved_by;
            write_solve_block(out, evaluated, report, painter);
        }
        let range = evaluated.ranges.get(id).and_then(Option::as_ref);
        if let Some(run) = evaluated.run_of(id)
            && Some(run) != printed_run
        {
            printed_run = Some(run);
            runs::write_run(out, evaluated, run, &|text| painter.paint(BOLD, text));
        }
        let value = match (cell.status, cell.any_value()) {
            (CellStatus::Ok, Some(value)) => {
                let shown = if cell.is_input {
                    format_value(value, cell.display, sig_figs)
                } else {
                    format_result(value, cell.display, sig_figs)
                };
                match range {
                    Some(range) if range.high > range.low => {
                        let (low, high) = range.shown_bounds();
                        let found = match range.method {
                            RangeMethod::Corners(_) => ", at corners",
                            _ => "",
                        };
                        format!(
                            "{shown} [{} … {}{found}]",
                            format_significant(cell.display.value_of(low), sig_figs),
                            format_significant(cell.display.value_of(high), sig_figs)
                        )
                    }
                    _ => shown,
                }
            }
            (CellStatus::Blocked { by }, _) => {
                format!("(blocked by {})", evaluated.cell_at(by).name)
            }
            _ => painter.paint(FAIL, "(error)"),
        };
        let description = cell
            .description
            .map(|d| format!("  {}", painter.paint(DIM, &visible(d))))
            .unwrap_or_default();
        let name = format!("{:<name_width$}", visible(cell.name));
        if cell.is_input
            && cell.status == CellStatus::Ok
            && !cell.declared_unit
            && cell.spread.is_none()
        {
            let _ = writeln!(
                out,
                "  {name} = {:<formula_width$}{description}",
                visible(cell.formula)
            );
        } else {
            let _ = writeln!(
                out,
                "  {name} = {:<formula_width$} → {}{description}",
                visible(cell.formula),
                painter.paint(BOLD, &value)
            );
        }
    }
}

/// Every check with its sides, utilization, verdict and label.
fn write_checks(out: &mut String, evaluated: &Evaluated, painter: &Painter) {
    let sig_figs = evaluated.header().sig_figs;
    if !evaluated.checks.is_empty() {
        let _ = writeln!(out, "\n{}", painter.paint(BOLD, "Checks"));
        for check in &evaluated.checks {
            let mark = match check.status {
                CheckStatus::Passed => painter.paint(PASS, "   pass"),
                CheckStatus::Failed => painter.paint(FAIL, "   FAIL"),
                CheckStatus::Unknown => painter.paint(FAIL, "UNKNOWN"),
                CheckStatus::Blocked { .. } => "     --".to_string(),
                CheckStatus::Error => painter.paint(FAIL, "    err"),
            };
            let detail = match (check.status, check.lhs, check.rhs) {
                (CheckStatus::Blocked { by }, _, _) => {
                    format!("blocked by {}", evaluated.cell_at(by).name)
                }
                (_, Some(lhs), Some(rhs)) => {
                    let show = |si: f64| {
                        let number = format_significant(si / check.display.si_factor, sig_figs);
                        if check.display.text.is_empty() {
                            number
                        } else {
                            format!("{number} {}", check.display.text)
                        }
                    };
                    let utilization = crate::present::utilization(check)
                        .map(|shown| format!("   utilization {shown}"))
                        .unwrap_or_default();
                    let worst = check
                        .worst
                        .as_ref()
                        .and_then(|w| w.worst_utilization.map(|u| (u, w.method)))
                        .map(|(u, method)| {
                            let found = match method {
                                RangeMethod::Corners(_) => " (found at its corners)",
                                _ => "",
                            };
                            format!(
                                ", {} at the worst case of the tolerances{found}",
                                crate::units::percent(u)
                            )
                        })
                        .unwrap_or_default();
                    format!(
                        "{} {} {}{utilization}{worst}",
                        show(lhs.si),
                        check.comparison.symbol(),
                        show(rhs.si)
                    )
                }
                _ => "could not be evaluated".to_string(),
            };
            let verdict = crate::present::verdict_text(check, &evaluated.cases);
            let verdict = if verdict.is_empty() || check.status == CheckStatus::Error {
                String::new()
            } else {
                format!("; {}", painter.paint(FAIL, &visible(&verdict)))
            };
            let label = check
                .label
                .as_deref()
                .map(|l| format!("  {}", painter.paint(DIM, &visible(l))))
                .unwrap_or_default();
            let _ = writeln!(
                out,
                "  {mark}  {}:  {detail}{verdict}{label}",
                visible(&check.statement())
            );
        }
    }
}

/// The counts, then every check that is not passed and where.
fn write_summary(out: &mut String, evaluated: &Evaluated, painter: &Painter) {
    let summary = evaluated.summary();
    let style = if summary.is_clean() { PASS } else { FAIL };
    let _ = writeln!(
        out,
        "\n{}",
        painter.paint(style, &crate::present::summary_line(&summary))
    );
    for check in &evaluated.checks {
        let verdict = crate::present::verdict_text(check, &evaluated.cases);
        let verdict = match check.status {
            CheckStatus::Passed => continue,
            CheckStatus::Error => "could not be evaluated".to_string(),
            CheckStatus::Blocked { by } => format!("blocked by {}", evaluated.cell_at(by).name),
            CheckStatus::Failed | CheckStatus::Unknown => verdict,
        };
        let _ = writeln!(
            out,
            "  {} {}: {}",
            painter.paint(FAIL, "-"),
            visible(&check.statement()),
            visible(&verdict)
        );
    }
}

/// The load-case table: the chosen results and every check per case, with
/// the governing case of each check marked.
fn write_cases(out: &mut String, evaluated: &Evaluated, painter: &Painter) {
    if evaluated.cases.is_empty() {
        return;
    }
    let sig_figs = evaluated.header().sig_figs;
    let _ = writeln!(out, "\n{}", painter.paint(BOLD, "Load cases"));
    for (index, case) in evaluated.cases.iter().enumerate() {
        let label = case
            .label
            .as_deref()
            .map(|l| format!("  {}", painter.paint(DIM, &visible(l))))
            .unwrap_or_default();
        let note = if case.evaluated {
            ""
        } else {
            "  (not evaluated: see the findings)"
        };
        let _ = writeln!(out, "  {}. {}{label}{note}", index + 1, visible(&case.name));
    }
    let columns: Vec<&str> = std::iter::once("as written")
        .chain(evaluated.cases.iter().map(|c| c.name.as_str()))
        .collect();
    let width = columns
        .iter()
        .map(|c| c.chars().count())
        .max()
        .unwrap_or(8)
        .max(12)
        + 2;
    let row_label_width = 40;
    let mut header = format!("  {:<row_label_width$}", "");
    for column in &columns {
        header.push_str(&format!("{column:>width$}"));
    }
    let _ = writeln!(out, "{}", painter.paint(DIM, &header));
    for (position, &id) in evaluated.case_results.iter().enumerate() {
        let cell = evaluated.cell_at(id);
        let unit = if cell.display.text.is_empty() {
            String::new()
        } else {
            format!(" [{}]", cell.display.text)
        };
        let mut row = format!("  {:<row_label_width$}", format!("{}{unit}", cell.name));
        let shown = |value: Option<crate::units::Value>| match value.and_then(|v| v.scalar()) {
            Some(q) if cell.is_input => format_significant(cell.display.value_of(q.si), sig_figs),
            Some(q) => crate::units::format_figures(cell.display.value_of(q.si), sig_figs),
            None => "—".to_string(),
        };
        row.push_str(&format!("{:>width$}", shown(cell.any_value())));
        for case in &evaluated.cases {
            row.push_str(&format!(
                "{:>width$}",
                shown(case.results.get(position).and_then(|r| r.value))
            ));
        }
        let _ = writeln!(out, "{row}");
    }
    for (index, check) in evaluated.checks.iter().enumerate() {
        let label = check.label.clone().unwrap_or_else(|| {
            format!(
                "{} {} {}",
                check.lhs_text,
                check.comparison.symbol(),
                check.rhs_text
            )
        });
        let label = visible(&label).into_owned();
        let label: String = if label.chars().count() > row_label_width - 4 {
            label
                .chars()
                .take(row_label_width - 5)
                .chain(std::iter::once('…'))
                .collect()
        } else {
            label
        };
        let mut row = format!("  {:<row_label_width$}", format!("{label} %"));
        let governing = evaluated.governing.get(index).copied().flatten();
        let cell = |status: CheckStatus, utilization: Option<f64>, governs: bool| {
            let number =
                utilization.map_or("—".to_string(), |u| format_significant(u * 100.0, 3));
            let mark = match status {
                CheckStatus::Failed => " FAIL",
                CheckStatus::Passed => "",
                _ => " ?",
            };
            let governs = if governs { "*" } else { "" };
            format!("{governs}{number}{mark}")
        };
        row.push_str(&format!(
            "{:>width$}",
            cell(
                check.as_written_status(),
                check.governing_utilization(),
                governing.is_none()
            )
        ));
        for (case_index, case) in evaluated.cases.iter().enumerate() {
            let text = match case.checks.get(index) {
                Some(c) => cell(
                    c.status,
                    c.governing_utilization(),
                    governing == Some(case_index),
                ),
                None => "—".to_string(),
            };
            row.push_str(&format!("{text:>width$}"));
        }
        let _ = writeln!(out, "{row}");
    }
    let tolerances = if evaluated.ranges.is_empty() {
        ""
    } else {
        " (at the worst case of the tolerances)"
    };
    let _ = writeln!(
        out,
        "{}",
        painter.paint(
            DIM,
            &format!("  * governing case: highest utilization{tolerances}")
        )
    );
}

/// For the chosen results, their range and the inputs ranked by influence.
fn write_sensitivities(out: &mut String, evaluated: &Evaluated, painter: &Painter) {
    if evaluated.ranges.is_empty() {
        return;
    }
    let sig_figs = evaluated.header().sig_figs;
    let mut section = String::new();
    for &id in &evaluated.case_results {
        let Some(range) = evaluated
            .ranges
            .get(id)
            .and_then(Option::as_ref)
            .filter(|r| r.high > r.low)
        else {
            continue;
        };
        let cell = evaluated.cell_at(id);
        let unit = |si: f64| format_significant(cell.display.value_of(si), sig_figs);
        let (low, high) = range.shown_bounds();
        let first_order = range
            .first_order
            .map(|(low, high)| format!("; first order {} to {}", unit(low), unit(high)))
            .unwrap_or_default();
        let _ = writeln!(
            section,
            "  {} from {} to {} {} ({}){first_order}",
            cell.name,
            unit(low),
            unit(high),
            cell.display.text,
            range.method.describe(),
        );
        for sensitivity in range.sensitivities.iter().filter(|s| s.share > 0.0) {
            let input = evaluated.cell_at(sensitivity.input);
            let normalized = sensitivity
                .normalized
                .map(|n| {
                    format!(
                        "∂ln {}/∂ln {} = {}",
                        cell.name,
                        input.name,
                        format_significant(n, 3)
                    )
                })
                .unwrap_or_else(|| "—".to_string());
            let _ = writeln!(
                section,
                "    {:<16} {:>5} % of the range   {normalized}",
                input.name,
                format_significant(sensitivity.share * 100.0, 3)
            );
        }
    }
    if !section.is_empty() {
        let _ = writeln!(
            out,
            "\n{}",
            painter.paint(BOLD, "Tolerances and sensitivity")
        );
        out.push_str(&section);
    }
}
/// Prints a solve block: its equations with their residuals, and how the
/// solver did.
fn write_solve_block(out: &mut String, evaluated: &Evaluated, index: usize, painter: &Painter) {
    let report = &evaluated.solves[index];
    let sig_figs = evaluated.header().sig_figs;
    let unknowns: Vec<&str> = report
        .unknowns
        .iter()
        .map(|&id| evaluated.cell_at(id).name)
        .collect();
    let how = match report.status {
        SolveStatus::Solved => {
            let method = if report.linear {
                "linear system"
            } else {
                "Newton's method"
            };
            let condition = report
                .condition
                .map(|c| format!(", condition {}", format_significant(c, 3)))
                .unwrap_or_default();
            let plural = if report.iterations == 1 { "" } else { "s" };
            format!(
                "{method}, {} iteration{plural}{condition}",
                report.iterations
            )
        }
        SolveStatus::Failed => painter.paint(FAIL, "not solved"),
        SolveStatus::NotRun => "not run".to_string(),
    };
    let _ = writeln!(
        out,
        "  {} {}  ({how})",
        painter.paint(BOLD, "solve"),
        unknowns.join(", ")
    );
    let width = report
        .equations
        .iter()
        .map(|e| e.text.chars().count())
        .max()
        .unwrap_or(0)
        .min(48);
    for equation in &report.equations {
        let residual = equation
            .residual
            .map(|r| {
                format!(
                    "   residual {}",
                    format_value(Value::Scalar(r), &equation.display, sig_figs)
                )
            })
            .unwrap_or_default();
        let _ = writeln!(
            out,
            "    {:<width$}{}",
            visible(&equation.text),
            painter.paint(DIM, &residual)
        );
    }
}

/// Prints a heading and, the first time, the notes right after it.
fn write_section(
    out: &mut String,
    evaluated: &Evaluated,
    position: usize,
    first_time: bool,
    painter: &Painter,
) {
    let OutlineItem::Heading { level, text } = &evaluated.outline[position] else {
        return;
    };
    let marks = "#".repeat(usize::from(*level));
    let continued = if first_time { "" } else { " (continued)" };
    let _ = writeln!(
        out,
        "\n{}",
        painter.paint(BOLD, &format!("{marks} {}{continued}", visible(text)))
    );
    if first_time {
        for item in &evaluated.outline[position + 1..] {
            match item {
                OutlineItem::Note { text } => {
                    let _ = writeln!(
                        out,
                        "  {}",
                        painter.paint(DIM, &format!("> {}", visible(text)))
                    );
                }
                OutlineItem::Heading { .. } => break,
                _ => {}
            }
        }
    }
}

/// Wraps text at `width` columns on spaces.
pub(super) fn wrap(text: &str, width: usize) -> String {
    let mut lines = Vec::new();
    let mut line = String::new();
    for word in text.split_whitespace() {
        if !line.is_empty() && line.chars().count() + 1 + word.chars().count() > width {
            lines.push(std::mem::take(&mut line));
        }
        if !line.is_empty() {
            line.push(' ');
        }
        line.push_str(word);
    }
    lines.push(line);
    lines.join("\n")
}
