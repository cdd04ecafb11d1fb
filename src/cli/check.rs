//! `heft check`: the sheet's cells in dependency order, its checks, its
//! findings and the caution, as text or JSON.

use std::fmt::Write as _;
use std::io;
use std::path::Path;

use anstyle::{AnsiColor, Style};

use super::{EXIT_CLEAN, EXIT_FINDINGS, json, print, read_sheet};
use crate::diag::{Severity, render::render};
use crate::eval::{CellStatus, CheckStatus, Evaluated, OutlineItem};
use crate::units::format_significant;

/// Runs `heft check FILE`.
pub fn run(path: &Path, as_json: bool, deny_warnings: bool, colour: bool) -> io::Result<u8> {
    let (source, encoding_problem) = read_sheet(path)?;
    let mut evaluated = crate::audit::check_source(&source);
    if let Some(diagnostic) = encoding_problem {
        evaluated.diagnostics.insert(0, diagnostic);
    }
    let file_name = path.display().to_string();
    let text = if as_json {
        json::check_report(&file_name, &source, &evaluated)
    } else {
        text_report(&file_name, &source, &evaluated, colour)
    };
    print(&text)?;
    let failed = !evaluated.is_clean() || (deny_warnings && evaluated.count(Severity::Warning) > 0);
    Ok(if failed { EXIT_FINDINGS } else { EXIT_CLEAN })
}

/// Paints text when colour is on.
pub(super) struct Painter {
    /// Whether to colour.
    pub colour: bool,
}

impl Painter {
    /// `text` in `style`, or plain.
    pub fn paint(&self, style: Style, text: &str) -> String {
        if self.colour {
            format!("{style}{text}{style:#}")
        } else {
            text.to_string()
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

/// The text report of `heft check`.
pub fn text_report(file_name: &str, source: &str, evaluated: &Evaluated, colour: bool) -> String {
    let painter = Painter { colour };
    let header = evaluated.header();
    let sig_figs = header.sig_figs;
    let mut out = String::new();
    let title = header.title.as_deref().unwrap_or("(untitled sheet)");
    let _ = writeln!(out, "{}", painter.paint(BOLD, title));
    let mut facts = vec![file_name.to_string()];
    facts.extend(header.project.as_ref().map(|p| format!("project {p}")));
    facts.extend(header.revision.as_ref().map(|r| format!("revision {r}")));
    facts.extend(header.date.as_ref().map(|d| format!("dated {d}")));
    facts.push(format!(
        "display {}, {sig_figs} significant figures",
        header.display.label()
    ));
    let _ = writeln!(out, "{}", painter.paint(DIM, &facts.join(" · ")));

    // Which heading each cell sits under, to print headings in dependency order.
    let mut section_of = vec![None; evaluated.n_cells()];
    let mut current = None;
    for (position, item) in evaluated.outline.iter().enumerate() {
        match item {
            OutlineItem::Heading { .. } => current = Some(position),
            OutlineItem::Cell(id) => section_of[*id] = current,
            _ => {}
        }
    }
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
    for &id in evaluated.order() {
        let cell = evaluated.cell_at(id);
        if section_of[id] != printed_section {
            printed_section = section_of[id];
            if let Some(position) = printed_section {
                let first_time = seen_sections.insert(position);
                write_section(&mut out, evaluated, position, first_time, &painter);
            }
        }
        let value = match (cell.status, cell.value) {
            (CellStatus::Ok, Some(value)) => {
                let number = format_significant(cell.display.value_of(value.si), sig_figs);
                if cell.display.text.is_empty() {
                    number
                } else {
                    format!("{number} {}", cell.display.text)
                }
            }
            (CellStatus::Blocked { by }, _) => {
                format!("(blocked by {})", evaluated.cell_at(by).name)
            }
            _ => painter.paint(FAIL, "(error)"),
        };
        let description = cell
            .description
            .map(|d| format!("  {}", painter.paint(DIM, d)))
            .unwrap_or_default();
        let name = format!("{:<name_width$}", cell.name);
        if cell.is_input && cell.status == CellStatus::Ok && !cell.declared_unit {
            let _ = writeln!(
                out,
                "  {name} = {:<formula_width$}{description}",
                cell.formula
            );
        } else {
            let _ = writeln!(
                out,
                "  {name} = {:<formula_width$} → {}{description}",
                cell.formula,
                painter.paint(BOLD, &value)
            );
        }
    }

    if !evaluated.checks.is_empty() {
        let _ = writeln!(out, "\n{}", painter.paint(BOLD, "Checks"));
        for check in &evaluated.checks {
            let (mark, detail) = match (check.status, check.lhs, check.rhs) {
                (CheckStatus::Passed | CheckStatus::Failed, Some(lhs), Some(rhs)) => {
                    let show = |si: f64| {
                        let number = format_significant(si / check.display.si_factor, sig_figs);
                        if check.display.text.is_empty() {
                            number
                        } else {
                            format!("{number} {}", check.display.text)
                        }
                    };
                    let utilization = check
                        .utilization
                        .map(|u| format!("   utilization {} %", format_significant(u * 100.0, 3)))
                        .unwrap_or_default();
                    let mark = if check.status == CheckStatus::Passed {
                        painter.paint(PASS, "pass")
                    } else {
                        painter.paint(FAIL, "FAIL")
                    };
                    (
                        mark,
                        format!(
                            "{} {} {}{utilization}",
                            show(lhs.si),
                            check.comparison.symbol(),
                            show(rhs.si)
                        ),
                    )
                }
                (CheckStatus::Blocked { by }, _, _) => (
                    "  --".to_string(),
                    format!("blocked by {}", evaluated.cell_at(by).name),
                ),
                _ => (
                    painter.paint(FAIL, " err"),
                    "could not be evaluated".to_string(),
                ),
            };
            let label = check
                .label
                .as_deref()
                .map(|l| format!("  {}", painter.paint(DIM, l)))
                .unwrap_or_default();
            let _ = writeln!(
                out,
                "  {mark}  {} {} {}:  {detail}{label}",
                check.lhs_text,
                check.comparison.symbol(),
                check.rhs_text
            );
        }
    }

    if !evaluated.diagnostics.is_empty() {
        let _ = writeln!(out);
        out.push_str(&render(&evaluated.diagnostics, file_name, source, colour));
    }

    let n_errors = evaluated.count(Severity::Error);
    let n_warnings = evaluated.count(Severity::Warning);
    let n_passed = evaluated
        .checks
        .iter()
        .filter(|c| c.status == CheckStatus::Passed)
        .count();
    let plural = |n: usize, word: &str| format!("{n} {word}{}", if n == 1 { "" } else { "s" });
    let summary = format!(
        "{} cells, {}, {}; {} of {} passed",
        evaluated.n_cells(),
        plural(n_errors, "error"),
        plural(n_warnings, "warning"),
        plural(n_passed, "check"),
        evaluated.checks.len()
    );
    let style = if evaluated.is_clean() { PASS } else { FAIL };
    let _ = writeln!(out, "\n{}", painter.paint(style, &summary));
    let _ = writeln!(out, "\n{}", painter.paint(DIM, &wrap(crate::CAUTION, 78)));
    out
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
        painter.paint(BOLD, &format!("{marks} {text}{continued}"))
    );
    if first_time {
        for item in &evaluated.outline[position + 1..] {
            match item {
                OutlineItem::Note { text } => {
                    let _ = writeln!(out, "  {}", painter.paint(DIM, &format!("> {text}")));
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
