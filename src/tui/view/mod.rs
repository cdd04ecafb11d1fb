//! Drawing: a pure function of the [`App`]. Only the rows on screen are
//! formatted, so a frame costs the same for ten cells or a hundred
//! thousand.

use ratatui::Frame;
use ratatui::layout::{Position, Rect};
use ratatui::style::Style;
use ratatui::text::{Line, Span};
use ratatui::widgets::{Block, Borders, Clear, Paragraph};
use unicode_width::{UnicodeWidthChar, UnicodeWidthStr};

use super::app::{App, EditSession, Focus, Link, Mode, UnitsView};
use super::keys::{BINDINGS, HINTS, Scope, key_for};
use super::layout::{Areas, areas};
use super::strings as text;
use super::theme::Theme;
use crate::base::Severity;
use crate::eval::{
    CellResult, CellStatus, CheckResult, CheckStatus, Finding, LiveSheet, Row, format_result,
    format_value,
};
use crate::units::{DisplaySystem, format_significant, pick_unit};

/// Draws the whole notebook.
pub fn view(app: &App, frame: &mut Frame) {
    let areas = areas(frame.area());
    draw_title(app, frame, areas.title);
    draw_sheet(app, frame, areas.sheet);
    draw_detail(app, frame, areas.detail);
    if let Mode::Editing(session) = app.mode()
        && session.is_multiline()
    {
        draw_lines_editor(app, frame, areas.detail, session);
    }
    draw_status(app, frame, areas.status);
    draw_bottom(app, frame, areas.bottom);
    match app.mode() {
        Mode::Help { scroll } => draw_help(app, frame, &areas, *scroll),
        Mode::Findings(state) => draw_findings(app, frame, &areas, &state.list, state.selected),
        Mode::Find(state) => draw_find(app, frame, &areas, state),
        _ => {}
    }
}

/// `text` cut to `width` columns, with `…` where it was cut.
fn fit(text: &str, width: usize) -> String {
    if text.width() <= width {
        return text.to_string();
    }
    let mut out = String::new();
    let mut used = 0;
    for c in text.chars() {
        let w = c.width().unwrap_or(0);
        if used + w + 1 > width {
            break;
        }
        out.push(c);
        used += w;
    }
    if width > 0 {
        out.push('…');
    }
    out
}

/// `text` fitted and padded to exactly `width` columns.
fn pad(text: &str, width: usize) -> String {
    let fitted = fit(text, width);
    let fill = width.saturating_sub(fitted.width());
    format!("{fitted}{}", " ".repeat(fill))
}

/// `text` fitted and right-aligned in `width` columns.
fn pad_left(text: &str, width: usize) -> String {
    let fitted = fit(text, width);
    let fill = width.saturating_sub(fitted.width());
    format!("{}{fitted}", " ".repeat(fill))
}

/// `text` cut into pieces of at most `room` columns (at least one piece),
/// between words where it can be and inside a word that is too long.
fn wrap(text: &str, room: usize) -> Vec<String> {
    let room = room.max(1);
    let mut pieces = Vec::new();
    let mut current = String::new();
    let mut used = 0;
    for word in text.split(' ') {
        if !current.is_empty() && used + 1 + word.width() > room {
            pieces.push(std::mem::take(&mut current));
            used = 0;
        }
        if !current.is_empty() {
            current.push(' ');
            used += 1;
        }
        for c in word.chars() {
            let w = c.width().unwrap_or(0);
            if !current.is_empty() && used + w > room {
                pieces.push(std::mem::take(&mut current));
                used = 0;
            }
            current.push(c);
            used += w;
        }
    }
    pieces.push(current);
    pieces
}

/// A value in a display unit: `19.22 kN`.
fn shown(si: f64, unit: &crate::units::DisplayUnit, sig_figs: u32) -> String {
    let number = format_significant(unit.value_of(si), sig_figs);
    if unit.text.is_empty() {
        number
    } else {
        format!("{number} {}", unit.text)
    }
}

/// A cell's value as the table and detail show it.
fn cell_value(live: &LiveSheet, cell: &CellResult<'_>, units: UnitsView, sig_figs: u32) -> String {
    match (cell.any_value(), cell.status) {
        (Some(value), _) if cell.is_input => {
            format_value(value, &live.display_unit(cell.id, units.system()), sig_figs)
        }
        (Some(value), _) => {
            format_result(value, &live.display_unit(cell.id, units.system()), sig_figs)
        }
        (None, CellStatus::Blocked { by }) => {
            format!("{} ({})", text::NO_VALUE, live.cell(by).name)
        }
        (None, _) => text::NO_VALUE.to_string(),
    }
}

fn mark_style(theme: Theme, mark: &str) -> Style {
    match mark {
        text::MARK_OK | text::MARK_PASS => theme.good(),
        text::MARK_WARNING => theme.warning(),
        text::MARK_ERROR | text::MARK_FAIL | text::MARK_UNKNOWN => theme.bad(),
        text::MARK_BLOCKED => theme.blocked(),
        _ => Style::default(),
    }
}

/// The state mark of statement `index`.
fn mark_of(live: &LiveSheet, index: usize, row: &Row<'_>) -> &'static str {
    let severity = live.statement_severity(index);
    let own = match row {
        Row::Cell(cell) => match cell.status {
            CellStatus::Ok => text::MARK_OK,
            CellStatus::Error => text::MARK_ERROR,
            CellStatus::Blocked { .. } => text::MARK_BLOCKED,
        },
        Row::Check(_, check) => match check.status {
            CheckStatus::Passed => text::MARK_PASS,
            CheckStatus::Failed => text::MARK_FAIL,
            CheckStatus::Unknown => text::MARK_UNKNOWN,
            CheckStatus::Error => text::MARK_ERROR,
            CheckStatus::Blocked { .. } => text::MARK_BLOCKED,
        },
        Row::Invalid { .. } => text::MARK_ERROR,
        Row::Block { .. } => text::MARK_OK,
        Row::Review { .. } => text::MARK_NOTE,
        Row::Note { .. } => text::MARK_NOTE,
        Row::Heading { .. } => "",
    };
    match (own, severity) {
        (text::MARK_OK | text::MARK_PASS | "" | text::MARK_NOTE, Some(Severity::Error)) => {
            text::MARK_ERROR
        }
        (text::MARK_OK | text::MARK_PASS | "" | text::MARK_NOTE, Some(Severity::Warning)) => {
            text::MARK_WARNING
        }
        _ => own,
    }
}

fn draw_title(app: &App, frame: &mut Frame, area: Rect) {
    let header = app.live().header();
    // A header being filled in may hold empty fields for a moment.
    let title = header
        .title
        .as_deref()
        .filter(|title| !title.trim().is_empty())
        .unwrap_or(text::UNTITLED);
    let revision = header
        .revision
        .as_deref()
        .filter(|revision| !revision.trim().is_empty())
        .map(|revision| format!(" · rev {revision}"))
        .unwrap_or_default();
    let state = if app.is_dirty() {
        text::STATE_MODIFIED
    } else if app.is_new_file() {
        text::STATE_NEW
    } else {
        text::STATE_SAVED
    };
    let right = format!("{} · {state} ", app.file_name());
    let width = usize::from(area.width);
    let left_width = width.saturating_sub(right.width() + 1);
    let left = pad(
        &format!(" {} │ {title}{revision}", text::APP_NAME),
        left_width,
    );
    let line = Line::from(vec![
        Span::raw(left),
        Span::raw(" "),
        Span::raw(fit(&right, width.saturating_sub(left_width + 1))),
    ]);
    frame.render_widget(Paragraph::new(line).style(app.theme().title_bar()), area);
}

/// Column widths of the sheet table.
struct Columns {
    mark: usize,
    name: usize,
    formula: usize,
    value: usize,
}

fn columns(app: &App, width: usize, rows: &[u32]) -> Columns {
    let live = app.live();
    let longest_name = rows
        .iter()
        .filter_map(|&statement| match live.row(statement as usize) {
            Row::Cell(cell) => Some(cell.name.width()),
            Row::Check(..) => Some(5),
            _ => None,
        })
        .max()
        .unwrap_or(4);
    let mark = 5;
    let value = (width / 4).clamp(10, 26);
    let name = longest_name.clamp(4, (width / 5).max(6));
    let formula = width.saturating_sub(mark + name + value + 3);
    Columns {
        mark,
        name,
        formula,
        value,
    }
}

fn draw_sheet(app: &App, frame: &mut Frame, area: Rect) {
    if area.height == 0 {
        return;
    }
    let theme = app.theme();
    let live = app.live();
    let width = usize::from(area.width);
    let visible = usize::from(area.height.saturating_sub(1));
    let end = (app.scroll() + visible).min(live.rows().len());
    let shown_rows = &live.rows()[app.scroll().min(end)..end];
    let columns = columns(app, width, shown_rows);
    let mut lines = Vec::with_capacity(visible + 1);
    lines.push(Line::styled(
        format!(
            "{} {} {} {}",
            pad(text::COLUMN_STATE, columns.mark),
            pad(text::COLUMN_NAME, columns.name),
            pad(text::COLUMN_FORMULA, columns.formula),
            pad_left(text::COLUMN_VALUE, columns.value),
        ),
        theme.label(),
    ));
    if live.rows().is_empty() {
        lines.push(Line::raw(fit(text::EMPTY_SHEET, width)));
    }
    for (offset, &statement) in shown_rows.iter().enumerate() {
        let statement = statement as usize;
        let row = live.row(statement);
        let mark = mark_of(live, statement, &row);
        let wide = columns.name + columns.formula + columns.value + 2;
        let mut spans = vec![
            Span::styled(pad(mark, columns.mark), mark_style(theme, mark)),
            Span::raw(" "),
        ];
        match &row {
            Row::Cell(cell) => {
                spans.push(Span::raw(pad(cell.name, columns.name)));
                spans.push(Span::raw(" "));
                spans.push(Span::raw(pad(cell.formula, columns.formula)));
                spans.push(Span::raw(" "));
                spans.push(Span::raw(pad_left(
                    &cell_value(live, cell, app.units(), app.sig_figs()),
                    columns.value,
                )));
            }
            Row::Check(_, check) => {
                spans.push(Span::raw(pad(text::ROW_CHECK, columns.name)));
                spans.push(Span::raw(" "));
                spans.push(Span::raw(pad(&check_text(check), columns.formula)));
                spans.push(Span::raw(" "));
                spans.push(Span::raw(pad_left(&utilization_text(check), columns.value)));
            }
            Row::Heading { level, text } => {
                let indent = if *level > 1 { "  " } else { "" };
                let style = if *level > 1 {
                    theme.label()
                } else {
                    theme.heading()
                };
                spans.push(Span::styled(fit(&format!("{indent}{text}"), wide), style));
            }
            Row::Note { text } | Row::Review { text } => {
                spans.push(Span::styled(fit(text.trim(), wide), theme.note()))
            }
            // A block that does not parse is shown by its first line.
            Row::Invalid { text } => spans.push(Span::raw(fit(
                text.lines().next().unwrap_or_default().trim(),
                wide,
            ))),
            Row::Block { head } => spans.push(Span::styled(fit(head.trim(), wide), theme.label())),
        }
        let mut line = Line::from(spans);
        if app.scroll() + offset == app.selected() {
            let selected = if app.focus() == Focus::Sheet {
                theme.selected()
            } else {
                theme.label()
            };
            line = line.patch_style(selected);
            // Selection covers the whole row, past the last span.
            let used: usize = line.width();
            if used < width {
                line.push_span(Span::styled(" ".repeat(width - used), selected));
            }
        }
        lines.push(line);
    }
    frame.render_widget(Paragraph::new(lines), area);
}

/// `T_up <= WLL`.
fn check_text(check: &CheckResult) -> String {
    format!(
        "{} {} {}",
        check.lhs_text,
        check.comparison.symbol(),
        check.rhs_text
    )
}

/// `76.9 %` of the allowed, or nothing.
fn utilization_text(check: &CheckResult) -> String {
    check
        .utilization
        .map(crate::units::percent)
        .unwrap_or_else(|| text::NO_VALUE.to_string())
}

/// Width of the labels in the detail pane.
const LABEL_WIDTH: usize = 12;

/// The detail pane's content: lines, and where each link was drawn.
struct Detail {
    title: String,
    lines: Vec<Line<'static>>,
    hotspots: Vec<(Rect, Link)>,
}

impl Detail {
    fn labelled(&mut self, theme: Theme, label: &str, value: String, style: Style, width: usize) {
        let room = width.saturating_sub(LABEL_WIDTH).max(1);
        for (index, piece) in wrap(&value, room).into_iter().enumerate() {
            let label_text = if index == 0 { label } else { "" };
            self.lines.push(Line::from(vec![
                Span::styled(pad(label_text, LABEL_WIDTH), theme.label()),
                Span::styled(piece, style),
            ]));
        }
    }

    /// Lays `links` out after `label`, as many to a line as fit.
    fn links(&mut self, app: &App, inner: Rect, label: &str, links: &[(usize, Link, String)]) {
        let theme = app.theme();
        let width = usize::from(inner.width);
        if links.is_empty() {
            self.lines.push(Line::from(vec![
                Span::styled(pad(label, LABEL_WIDTH), theme.label()),
                Span::raw(text::NONE),
            ]));
            return;
        }
        let mut spans = vec![Span::styled(pad(label, LABEL_WIDTH), theme.label())];
        let mut x = LABEL_WIDTH;
        for (index, link, name) in links {
            let name = fit(name, width.saturating_sub(LABEL_WIDTH).max(1));
            let w = name.width();
            if x > LABEL_WIDTH && x + w > width {
                self.lines.push(Line::from(std::mem::take(&mut spans)));
                spans.push(Span::raw(" ".repeat(LABEL_WIDTH)));
                x = LABEL_WIDTH;
            }
            let selected = app.focus() == Focus::Links && app.link_selected() == *index;
            let style = if selected {
                theme.selected()
            } else {
                theme.link()
            };
            let y = self.lines.len();
            if let (Ok(column), Ok(row)) = (u16::try_from(x), u16::try_from(y))
                && row < inner.height
            {
                self.hotspots.push((
                    Rect::new(
                        inner.x + column,
                        inner.y + row,
                        u16::try_from(w)
                            .unwrap_or(u16::MAX)
                            .min(inner.width.saturating_sub(column)),
                        1,
                    ),
                    *link,
                ));
            }
            spans.push(Span::styled(name, style));
            spans.push(Span::raw("  "));
            x += w + 2;
        }
        self.lines.push(Line::from(spans));
    }

    fn findings(&mut self, theme: Theme, findings: &[Finding], width: usize) {
        if findings.is_empty() {
            self.labelled(
                theme,
                text::LABEL_FINDINGS,
                text::NONE.to_string(),
                Style::default(),
                width,
            );
            return;
        }
        for finding in findings {
            let style = match finding.severity {
                Severity::Error => theme.bad(),
                Severity::Warning => theme.warning(),
                Severity::Info => Style::default(),
            };
            self.labelled(
                theme,
                finding.severity.as_str(),
                format!("[{}] {}", finding.code, finding.message),
                style,
                width,
            );
            if let Some(help) = &finding.help {
                self.labelled(
                    theme,
                    text::LABEL_FIX,
                    help.clone(),
                    Style::default(),
                    width,
                );
            }
        }
    }
}

fn link_name(live: &LiveSheet, link: Link) -> String {
    match link {
        Link::Uses(id) | Link::UsedByCell(id) => live.cell(id).name.to_string(),
        Link::UsedByCheck(check) => text::check_name(check),
    }
}

fn detail(app: &App, inner: Rect) -> Detail {
    let live = app.live();
    let theme = app.theme();
    let width = usize::from(inner.width);
    let mut detail = Detail {
        title: text::PANE_DETAIL.to_string(),
        lines: Vec::new(),
        hotspots: Vec::new(),
    };
    let Some(statement) = app.selected_statement() else {
        return detail;
    };
    let links: Vec<(usize, Link, String)> = app
        .links()
        .into_iter()
        .enumerate()
        .map(|(index, link)| (index, link, link_name(live, link)))
        .collect();
    let (uses, used_by): (Vec<_>, Vec<_>) = links
        .into_iter()
        .partition(|(_, link, _)| matches!(link, Link::Uses(_)));
    let findings = live.statement_findings(statement);
    match live.row(statement) {
        Row::Cell(cell) => {
            let unit = if cell.declared_unit {
                format!(
                    " [{}]",
                    live.cell_field(cell.id, crate::eval::CellField::Unit)
                )
            } else {
                String::new()
            };
            detail.title = format!("{}{unit} · {}", cell.name, text::line_name(cell.line));
            let description = cell.description.map(str::to_string).unwrap_or_else(|| {
                if cell.is_input {
                    text::INPUT.to_string()
                } else {
                    String::new()
                }
            });
            if !description.is_empty() {
                detail
                    .lines
                    .push(Line::styled(fit(&description, width), theme.note()));
            }
            detail.labelled(
                theme,
                text::LABEL_FORMULA,
                cell.formula.to_string(),
                Style::default(),
                width,
            );
            if !cell.uses.is_empty() || cell.formula.contains(char::is_alphabetic) && !cell.is_input
            {
                detail.labelled(
                    theme,
                    text::LABEL_WITH_VALUES,
                    live.substituted_formula(cell.id, app.units().system(), app.sig_figs()),
                    Style::default(),
                    width,
                );
            }
            let result = match (cell.any_value(), cell.status) {
                (Some(value), _) => {
                    let in_system = |system| {
                        format_value(
                            value,
                            &pick_unit(value.dimension(), value.magnitude_si(), system),
                            app.sig_figs(),
                        )
                    };
                    format!(
                        "{}   {} {}   {} {}",
                        cell_value(live, &cell, app.units(), app.sig_figs()),
                        text::LABEL_SI,
                        in_system(DisplaySystem::Si),
                        text::LABEL_FPS,
                        in_system(DisplaySystem::Fps)
                    )
                }
                (None, CellStatus::Blocked { by }) => {
                    format!("{} {}", text::BLOCKED_BY, live.cell(by).name)
                }
                (None, _) => text::NO_VALUE.to_string(),
            };
            detail.labelled(theme, text::LABEL_RESULT, result, theme.label(), width);
            let judgement = live.judgement();
            let unit = live.display_unit(cell.id, app.units().system());
            if let Some(range) = judgement.ranges.get(cell.id).and_then(Option::as_ref) {
                let (low, high) = range.shown_bounds();
                detail.labelled(
                    theme,
                    text::LABEL_RANGE,
                    format!(
                        "{} … {} ({})",
                        shown(low, &unit, app.sig_figs()),
                        shown(high, &unit, app.sig_figs()),
                        range.method.describe()
                    ),
                    Style::default(),
                    width,
                );
            } else if let Some((_, components)) = judgement
                .vector_ranges
                .iter()
                .find(|(id, _)| *id == cell.id)
            {
                let parts: Vec<String> = components
                    .iter()
                    .zip(["x", "y", "z"])
                    .map(|(&(low, high), axis)| {
                        format!(
                            "{axis} {} … {}",
                            shown(low, &unit, app.sig_figs()),
                            shown(high, &unit, app.sig_figs())
                        )
                    })
                    .collect();
                detail.labelled(
                    theme,
                    text::LABEL_RANGE,
                    format!("{} (found at the corners)", parts.join(", ")),
                    Style::default(),
                    width,
                );
            }
            if let Some(position) = judgement.case_results.iter().position(|&id| id == cell.id) {
                let values: Vec<String> = judgement
                    .cases
                    .iter()
                    .map(|case| {
                        let value = case.results.get(position).and_then(|r| r.value);
                        let shown = value.map_or(text::NO_VALUE.to_string(), |v| {
                            format_value(v, &unit, app.sig_figs())
                        });
                        format!("{} {shown}", case.name)
                    })
                    .collect();
                if !values.is_empty() {
                    detail.labelled(
                        theme,
                        text::LABEL_CASES,
                        values.join(", "),
                        Style::default(),
                        width,
                    );
                }
            }
            detail.links(app, inner, text::LABEL_USES, &uses);
            detail.links(app, inner, text::LABEL_USED_BY, &used_by);
        }
        Row::Check(index, check) => {
            detail.title = format!(
                "{} · {}",
                text::check_name(index),
                text::line_name(live.statement_line(statement) + 1)
            );
            if let Some(label) = &check.label {
                detail
                    .lines
                    .push(Line::styled(fit(label, width), theme.note()));
            }
            detail.labelled(
                theme,
                text::LABEL_COMPARES,
                check_text(check),
                Style::default(),
                width,
            );
            if let (Some(lhs), Some(rhs)) = (check.lhs, check.rhs) {
                let unit = match app.units().system() {
                    Some(system) => pick_unit(lhs.dimension, lhs.si, system),
                    None => check.display.clone(),
                };
                detail.labelled(
                    theme,
                    text::LABEL_WITH_VALUES,
                    format!(
                        "{} {} {}",
                        shown(lhs.si, &unit, app.sig_figs()),
                        check.comparison.symbol(),
                        shown(rhs.si, &unit, app.sig_figs())
                    ),
                    Style::default(),
                    width,
                );
            }
            let mark = mark_of(live, statement, &Row::Check(index, check));
            detail.labelled(
                theme,
                text::LABEL_UTILIZATION,
                format!("{}   {mark}", utilization_text(check)),
                mark_style(theme, mark),
                width,
            );
            let judgement = live.judgement();
            if let Some(worst) = &check.worst {
                let utilization = worst
                    .worst_utilization
                    .map_or(text::NO_VALUE.to_string(), crate::units::percent);
                detail.labelled(
                    theme,
                    text::LABEL_WORST,
                    format!("{utilization} ({})", worst.method.describe()),
                    Style::default(),
                    width,
                );
            }
            let per_case: Vec<String> = judgement
                .cases
                .iter()
                .enumerate()
                .filter_map(|(case_index, case)| {
                    let in_case = case.checks.get(index)?;
                    let utilization = in_case
                        .governing_utilization()
                        .map_or(text::NO_VALUE.to_string(), crate::units::percent);
                    let governs =
                        judgement.governing.get(index).copied().flatten() == Some(case_index);
                    Some(format!(
                        "{}{} {utilization} {}",
                        if governs { "*" } else { "" },
                        case.name,
                        in_case.status.as_str()
                    ))
                })
                .collect();
            if !per_case.is_empty() {
                detail.labelled(
                    theme,
                    text::LABEL_CASES,
                    per_case.join(", "),
                    Style::default(),
                    width,
                );
            }
            detail.labelled(
                theme,
                text::LABEL_VERDICT,
                check.verdict_label(&judgement.cases),
                mark_style(theme, mark),
                width,
            );
            detail.links(app, inner, text::LABEL_USES, &uses);
        }
        Row::Block { .. } => {
            let lines = live.statement_lines(statement);
            detail.title = text::lines_name(lines.start + 1, lines.end);
            for id in live.block_cells(statement) {
                let cell = live.cell(id);
                detail.labelled(
                    theme,
                    cell.name,
                    cell_value(live, &cell, app.units(), app.sig_figs()),
                    Style::default(),
                    width,
                );
            }
        }
        Row::Heading { .. } | Row::Note { .. } | Row::Review { .. } | Row::Invalid { .. } => {
            let lines = live.statement_lines(statement);
            detail.title = text::lines_name(lines.start + 1, lines.end);
            for (index, line) in live.statement_text(statement).lines().enumerate() {
                detail.labelled(
                    theme,
                    if index == 0 { text::LABEL_LINE } else { "" },
                    line.to_string(),
                    Style::default(),
                    width,
                );
            }
        }
    }
    detail.findings(theme, &findings, width);
    let caution = wrap(crate::CAUTION, width.saturating_sub(LABEL_WIDTH));
    let height = usize::from(inner.height);
    // A tall pane also lists the sheet's other findings.
    let others: Vec<Finding> = if live.n_findings() > findings.len() {
        live.findings()
            .into_iter()
            .filter(|finding| finding.statement != Some(statement))
            .collect()
    } else {
        Vec::new()
    };
    let room = height.saturating_sub(detail.lines.len() + caution.len() + 3);
    if !others.is_empty() && room >= 3 {
        detail.lines.push(Line::raw(""));
        detail
            .lines
            .push(Line::styled(text::LABEL_ELSEWHERE, theme.label()));
        for finding in others.iter().take(room - 2) {
            let style = match finding.severity {
                Severity::Error => theme.bad(),
                Severity::Warning => theme.warning(),
                Severity::Info => Style::default(),
            };
            detail.lines.push(Line::from(vec![
                Span::raw(pad(&text::line_name(finding.line), LABEL_WIDTH)),
                Span::styled(
                    fit(
                        &format!("[{}] {}", finding.code, finding.message),
                        width.saturating_sub(LABEL_WIDTH),
                    ),
                    style,
                ),
            ]));
        }
    }
    // And the checks, failed and most used first.
    let room = height.saturating_sub(detail.lines.len() + caution.len() + 3);
    if live.n_checks() > 0 && room >= 3 {
        let mut checks: Vec<usize> = (0..live.n_checks()).collect();
        checks.sort_by(|&a, &b| {
            let key = |index: usize| {
                let check = live.check(index);
                (
                    check.passed() != Some(false),
                    -check.utilization.unwrap_or(0.0),
                )
            };
            key(a)
                .partial_cmp(&key(b))
                .unwrap_or(std::cmp::Ordering::Equal)
        });
        detail.lines.push(Line::raw(""));
        detail
            .lines
            .push(Line::styled(text::LABEL_CHECKS, theme.label()));
        for index in checks.into_iter().take(room - 2) {
            let check = live.check(index);
            let statement = live.check_statement(index);
            let mark = mark_of(live, statement, &Row::Check(index, check));
            let label = check.label.as_deref().unwrap_or_default();
            detail.lines.push(Line::from(vec![
                Span::styled(pad(mark, 5), mark_style(theme, mark)),
                Span::raw(pad_left(&utilization_text(check), 8)),
                Span::raw("  "),
                Span::raw(fit(
                    &format!("{}  {label}", check_text(check)),
                    width.saturating_sub(15),
                )),
            ]));
        }
    }
    if detail.lines.len() + caution.len() < height {
        detail.lines.push(Line::raw(""));
        for piece in caution {
            detail.lines.push(Line::from(vec![
                Span::raw(" ".repeat(LABEL_WIDTH)),
                Span::styled(piece, theme.caution()),
            ]));
        }
    }
    detail
}

fn detail_block(title: &str) -> Block<'_> {
    Block::default()
        .borders(Borders::TOP | Borders::LEFT)
        .title(format!(" {title} "))
}

/// Where each link of the detail pane drawn in `area` is, for the mouse.
pub fn link_hotspots(app: &App, area: Rect) -> Vec<(Rect, Link)> {
    let inner = detail_block("").inner(area);
    detail(app, inner).hotspots
}

fn draw_detail(app: &App, frame: &mut Frame, area: Rect) {
    let inner = detail_block("").inner(area);
    let detail = detail(app, inner);
    let block = detail_block(&detail.title).border_style(app.theme().quiet());
    frame.render_widget(Paragraph::new(detail.lines).block(block), area);
}

fn draw_status(app: &App, frame: &mut Frame, area: Rect) {
    let live = app.live();
    let theme = app.theme();
    let summary = live.summary();
    let (errors, warnings) = (summary.errors, summary.warnings);
    let (passed, failed, unknown) = (summary.passed, summary.failed, summary.unknown);
    let mut spans = vec![
        Span::styled(
            text::count(errors, "error"),
            if errors > 0 {
                theme.bad()
            } else {
                Style::default()
            },
        ),
        Span::raw(" · "),
        Span::styled(
            text::count(warnings, "warning"),
            if warnings > 0 {
                theme.warning()
            } else {
                Style::default()
            },
        ),
        Span::raw(" · checks "),
        Span::styled(
            format!("{passed} pass"),
            if passed > 0 {
                theme.good()
            } else {
                Style::default()
            },
        ),
        Span::raw(" "),
        Span::styled(
            format!("{failed} fail"),
            if failed > 0 {
                theme.bad()
            } else {
                Style::default()
            },
        ),
        Span::styled(
            if unknown > 0 {
                format!(" {unknown} {}", text::UNKNOWN)
            } else {
                String::new()
            },
            theme.bad(),
        ),
        Span::raw(format!(
            " · {} · {} {}",
            app.units().label(),
            app.sig_figs(),
            text::SIG_FIGS
        )),
    ];
    let used: usize = spans.iter().map(|span| span.width()).sum();
    let width = usize::from(area.width);
    let hint = match app.mode() {
        Mode::Editing(session) if session.is_multiline() => text::EDIT_BLOCK_KEYS,
        Mode::Editing(_) => text::EDIT_KEYS,
        _ => text::HINT_HELP,
    };
    if used + hint.width() < width {
        spans.push(Span::raw(" ".repeat(width - used - hint.width())));
        spans.push(Span::styled(hint, theme.key()));
    }
    frame.render_widget(Paragraph::new(Line::from(spans)), area);
}

fn draw_bottom(app: &App, frame: &mut Frame, area: Rect) {
    let theme = app.theme();
    let width = usize::from(area.width);
    match app.mode() {
        Mode::Editing(session) if session.is_multiline() => {
            // The lines are in the editor above; here, where the cursor is
            // and the first finding on the lines edited.
            let first = session.first + 1;
            let last = session.first + session.n_shown();
            let finding = app
                .live()
                .findings()
                .into_iter()
                .find(|finding| (first..=last).contains(&finding.line));
            let mut spans = vec![
                Span::styled(format!("{} › ", session.prompt), theme.label()),
                Span::raw(text::line_of(session.cursor_row() + 1, session.n_shown())),
            ];
            if let Some(finding) = finding {
                let style = match finding.severity {
                    Severity::Error => theme.bad(),
                    Severity::Warning => theme.warning(),
                    Severity::Info => Style::default(),
                };
                spans.push(Span::raw(" · "));
                spans.push(Span::styled(
                    format!("{}: {}", text::line_name(finding.line), finding.message),
                    style,
                ));
            }
            let line = Line::from(spans);
            frame.render_widget(Paragraph::new(fit_line(line, width)), area);
        }
        Mode::Editing(session) => {
            let prompt = format!("{} › ", session.prompt);
            let prompt = fit(&prompt, width / 2);
            let room = width.saturating_sub(prompt.width() + 1).max(1);
            let scroll = session.input.visual_scroll(room);
            let shown: String = session.input.value().chars().skip(scroll).collect();
            let line = Line::from(vec![
                Span::styled(prompt.clone(), theme.label()),
                Span::styled(fit(&shown, room), theme.input()),
            ]);
            frame.render_widget(Paragraph::new(line), area);
            let cursor = prompt.width() + session.input.visual_cursor().saturating_sub(scroll);
            frame.set_cursor_position(Position::new(
                area.x
                    + u16::try_from(cursor)
                        .unwrap_or(area.width)
                        .min(area.width.saturating_sub(1)),
                area.y,
            ));
        }
        Mode::Ask(question) => {
            frame.render_widget(
                Paragraph::new(fit(question.prompt(), width)).style(theme.question()),
                area,
            );
        }
        _ => {
            let line = match app.message() {
                Some(message) => Line::raw(fit(message, width)),
                None => hints(theme, width),
            };
            frame.render_widget(Paragraph::new(line), area);
        }
    }
}

/// `line` cut to `width` columns.
fn fit_line(line: Line<'static>, width: usize) -> Line<'static> {
    let mut used = 0;
    let mut spans = Vec::new();
    for span in line.spans {
        let room = width.saturating_sub(used);
        if room == 0 {
            break;
        }
        let fitted = fit(&span.content, room);
        used += fitted.width();
        spans.push(Span::styled(fitted, span.style));
    }
    Line::from(spans)
}

/// The editor of several lines (a block's, the header's), over the detail
/// pane: as tall as the lines, up to the pane, each line with its number
/// in the file, and the keys that end the edit on its lower border; it
/// scrolls to keep the cursor's line in view.
fn draw_lines_editor(app: &App, frame: &mut Frame, pane: Rect, session: &EditSession) {
    let theme = app.theme();
    let n_shown = session.n_shown();
    let wanted = u16::try_from(n_shown + 2).unwrap_or(u16::MAX);
    let area = Rect::new(pane.x, pane.y, pane.width, wanted.min(pane.height));
    let title = format!(
        " {} · {} ",
        session.prompt,
        text::lines_name(session.first + 1, session.first + n_shown)
    );
    let block = Block::bordered()
        .title(title)
        .title_bottom(Line::styled(
            format!(" {} ", text::EDIT_BLOCK_KEYS),
            theme.key(),
        ))
        .border_style(theme.label());
    let inner = block.inner(area);
    let rows = usize::from(inner.height).max(1);
    let cursor_row = session.cursor_row();
    let scroll = (cursor_row + 1).saturating_sub(rows);
    let gutter = (session.first + n_shown).to_string().len() + 1;
    let room = usize::from(inner.width).saturating_sub(gutter).max(1);
    let mut lines = Vec::with_capacity(rows);
    let mut cursor = None;
    for (index, text) in session.lines().enumerate().skip(scroll).take(rows) {
        let number = Span::styled(
            format!("{:>width$} ", session.first + index + 1, width = gutter - 1),
            theme.quiet(),
        );
        let shown = if index == cursor_row {
            let shift = session.input.visual_scroll(room);
            cursor = Some((
                gutter + session.input.visual_cursor().saturating_sub(shift),
                index - scroll,
            ));
            Span::styled(
                fit(&text.chars().skip(shift).collect::<String>(), room),
                theme.input(),
            )
        } else {
            Span::raw(fit(text, room))
        };
        lines.push(Line::from(vec![number, shown]));
    }
    frame.render_widget(Clear, area);
    frame.render_widget(Paragraph::new(lines).block(block), area);
    if let Some((column, row)) = cursor {
        frame.set_cursor_position(Position::new(
            inner.x
                + u16::try_from(column)
                    .unwrap_or(inner.width)
                    .min(inner.width.saturating_sub(1)),
            inner.y + u16::try_from(row).unwrap_or(0),
        ));
    }
}

/// The most used keys, as many as fit.
fn hints(theme: Theme, width: usize) -> Line<'static> {
    let mut spans = Vec::new();
    let mut used = 0;
    for &(action, word) in HINTS {
        let key = key_for(Scope::Sheet, action);
        let w = key.width() + word.width() + 3;
        if used + w > width {
            break;
        }
        spans.push(Span::styled(key, theme.key()));
        spans.push(Span::raw(format!(" {word}   ")));
        used += w;
    }
    Line::from(spans)
}

fn overlay_block(title: String) -> Block<'static> {
    Block::bordered().title(format!(" {title} "))
}

/// The help text: every binding, by scope, then the caution.
pub fn help_lines(theme: Theme, width: usize) -> Vec<Line<'static>> {
    let keys_of = |binding: &super::keys::Binding| {
        let keys: Vec<String> = binding.keys.iter().map(|key| key.label()).collect();
        format!("  {}", keys.join(" "))
    };
    // The keys column fits the longest keys, with two blanks after them.
    let keys_width = BINDINGS
        .iter()
        .map(|binding| keys_of(binding).width() + 2)
        .max()
        .unwrap_or(16);
    let mut lines = Vec::new();
    for scope in Scope::ALL {
        lines.push(Line::styled(scope.title().to_string(), theme.heading()));
        for binding in BINDINGS.iter().filter(|binding| binding.scope == scope) {
            lines.push(Line::from(vec![
                Span::styled(pad(&keys_of(binding), keys_width), theme.key()),
                Span::raw(fit(binding.help, width.saturating_sub(keys_width))),
            ]));
        }
    }
    lines.push(Line::raw(""));
    for piece in wrap(crate::CAUTION, width.max(20)) {
        lines.push(Line::styled(piece, theme.caution()));
    }
    lines
}

fn draw_help(app: &App, frame: &mut Frame, areas: &Areas, scroll: usize) {
    let area = areas.overlay;
    let block = overlay_block(format!("{} · {}", text::PANE_HELP, text::HELP_FOOTER));
    let inner = block.inner(area);
    let lines = help_lines(app.theme(), usize::from(inner.width));
    let scroll = scroll.min(lines.len().saturating_sub(usize::from(inner.height)));
    frame.render_widget(Clear, area);
    frame.render_widget(
        Paragraph::new(lines)
            .block(block)
            .scroll((u16::try_from(scroll).unwrap_or(u16::MAX), 0)),
        area,
    );
}

fn draw_findings(app: &App, frame: &mut Frame, areas: &Areas, list: &[Finding], selected: usize) {
    let area = areas.overlay;
    let theme = app.theme();
    let block = overlay_block(format!("{} ({})", text::PANE_FINDINGS, list.len()));
    let inner = block.inner(area);
    let width = usize::from(inner.width);
    // The selected finding in full, with its fix, under the list.
    let mut full: Vec<Line> = Vec::new();
    if let Some(finding) = list.get(selected) {
        full.push(Line::styled("─".repeat(width), theme.quiet()));
        for piece in wrap(
            &format!("{}: {}", text::line_name(finding.line), finding.message),
            width,
        ) {
            full.push(Line::raw(piece));
        }
        if let Some(help) = &finding.help {
            for piece in wrap(&format!("{}: {help}", text::LABEL_FIX), width) {
                full.push(Line::raw(piece));
            }
        }
    }
    let rows = usize::from(inner.height).saturating_sub(full.len()).max(1);
    let first = selected.saturating_sub(rows.saturating_sub(1));
    let mut lines: Vec<Line> = list
        .iter()
        .enumerate()
        .skip(first)
        .take(rows)
        .map(|(index, finding)| {
            let style = match finding.severity {
                Severity::Error => theme.bad(),
                Severity::Warning => theme.warning(),
                Severity::Info => Style::default(),
            };
            let place = format!("{:>5}:{:<3} ", finding.line, finding.column);
            let kind = format!("{} [{}] ", finding.severity.as_str(), finding.code);
            let rest = width.saturating_sub(place.width() + kind.width());
            let mut line = Line::from(vec![
                Span::raw(place),
                Span::styled(kind, style),
                Span::raw(pad(&finding.message, rest)),
            ]);
            if index == selected {
                line = line.patch_style(theme.selected());
            }
            line
        })
        .collect();
    lines.resize(rows, Line::raw(""));
    lines.extend(full);
    frame.render_widget(Clear, area);
    frame.render_widget(Paragraph::new(lines).block(block), area);
}

fn draw_find(app: &App, frame: &mut Frame, areas: &Areas, state: &super::app::FindState) {
    let area = areas.overlay;
    let theme = app.theme();
    let live = app.live();
    let block = overlay_block(text::PANE_FIND.to_string());
    let inner = block.inner(area);
    let width = usize::from(inner.width);
    let prompt = text::FIND_PROMPT;
    let mut lines = vec![Line::from(vec![
        Span::styled(prompt, theme.label()),
        Span::styled(state.query.value().to_string(), theme.input()),
    ])];
    let rows = usize::from(inner.height.saturating_sub(1));
    let first = state.selected.saturating_sub(rows.saturating_sub(1));
    if state.matches.is_empty() {
        lines.push(Line::raw(text::NO_MATCH));
    }
    for (index, &id) in state.matches.iter().enumerate().skip(first).take(rows) {
        let cell = live.cell(id);
        let value = cell_value(live, &cell, app.units(), app.sig_figs());
        let name_width = (width / 3).max(8);
        let mut line = Line::from(vec![
            Span::raw(pad(cell.name, name_width)),
            Span::raw(" "),
            Span::raw(pad(&value, width.saturating_sub(name_width + 1))),
        ]);
        if index == state.selected {
            line = line.patch_style(theme.selected());
        }
        lines.push(line);
    }
    frame.render_widget(Clear, area);
    frame.render_widget(Paragraph::new(lines).block(block), area);
    let cursor = prompt.width() + state.query.visual_cursor();
    frame.set_cursor_position(Position::new(
        inner.x
            + u16::try_from(cursor)
                .unwrap_or(0)
                .min(inner.width.saturating_sub(1)),
        inner.y,
    ));
}
