//! The detail pane: everything about the selected row (a cell's formula,
//! values, range and cases; a check's comparison, utilization and
//! verdict; a block's cells; a line's text), its links, its findings,
//! then, as room allows, the sheet's other findings, its checks and the
//! caution.

use ratatui::Frame;
use ratatui::layout::Rect;
use ratatui::style::Style;
use ratatui::text::{Line, Span};
use ratatui::widgets::{Block, Borders, Paragraph};
use unicode_width::UnicodeWidthStr;

use super::super::app::{App, Focus, Link};
use super::super::strings as text;
use super::super::theme::Theme;
use super::fit::{fit, pad, pad_left, wrap};
use super::values::{cell_value, check_text, mark_of, mark_style, shown, utilization_text};
use crate::eval::{CellResult, CellStatus, CheckResult, format_value};
use crate::live::{CellField, Finding, LiveSheet, Row};
use crate::sheet::CellId;
use crate::units::{DisplaySystem, DisplayUnit, pick_unit};

/// Width of the labels in the detail pane.
const LABEL_WIDTH: usize = 12;

/// The detail pane's content as it is built for the pane's inner area
/// `inner`: its title, its lines, and where each link was drawn.
struct Detail<'a> {
    app: &'a App,
    inner: Rect,
    title: String,
    lines: Vec<Line<'static>>,
    hotspots: Vec<(Rect, Link)>,
}

/// The detail pane for the selected row, laid out in `inner`.
fn detail(app: &App, inner: Rect) -> Detail<'_> {
    let live = app.live();
    let mut detail = Detail {
        app,
        inner,
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
            detail.cell(&cell);
            detail.links(text::LABEL_USES, &uses);
            detail.links(text::LABEL_USED_BY, &used_by);
        }
        Row::Check(index, check) => {
            detail.check(statement, index, check);
            detail.links(text::LABEL_USES, &uses);
        }
        Row::Block { .. } => detail.block_cells(statement),
        Row::Heading { .. } | Row::Note { .. } | Row::Review { .. } | Row::Invalid { .. } => {
            detail.statement_text(statement)
        }
    }
    detail.findings(&findings);
    let caution = wrap(crate::CAUTION, detail.width().saturating_sub(LABEL_WIDTH));
    // A tall pane also lists the sheet's other findings, and the checks.
    detail.other_findings(statement, findings.len(), caution.len());
    detail.all_checks(caution.len());
    detail.caution(caution);
    detail
}

impl Detail<'_> {
    fn width(&self) -> usize {
        usize::from(self.inner.width)
    }

    fn theme(&self) -> Theme {
        self.app.theme()
    }

    /// The rows left for a list below the lines so far, keeping room for
    /// the caution (`caution_len` lines) and the blank lines between.
    fn room_left(&self, caution_len: usize) -> usize {
        usize::from(self.inner.height).saturating_sub(self.lines.len() + caution_len + 3)
    }

    /// `value` after `label`, wrapped under it.
    fn labelled(&mut self, label: &str, value: String, style: Style) {
        let theme = self.theme();
        let room = self.width().saturating_sub(LABEL_WIDTH).max(1);
        for (index, piece) in wrap(&value, room).into_iter().enumerate() {
            let label_text = if index == 0 { label } else { "" };
            self.lines.push(Line::from(vec![
                Span::styled(pad(label_text, LABEL_WIDTH), theme.label()),
                Span::styled(piece, style),
            ]));
        }
    }

    /// `value` after `label`, unstyled.
    fn plain(&mut self, label: &str, value: String) {
        self.labelled(label, value, Style::default());
    }

    /// A line of its own in the note style (a description, a check's label).
    fn note(&mut self, note: &str) {
        let line = Line::styled(fit(note, self.width()), self.theme().note());
        self.lines.push(line);
    }

    /// A blank line, then a heading for a list of the whole sheet.
    fn list_heading(&mut self, heading: &'static str) {
        self.lines.push(Line::raw(""));
        let line = Line::styled(heading, self.theme().label());
        self.lines.push(line);
    }

    /// Lays `links` out after `label`, as many to a line as fit.
    fn links(&mut self, label: &str, links: &[(usize, Link, String)]) {
        let (app, inner, theme, width) = (self.app, self.inner, self.theme(), self.width());
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

    /// The findings on the selected row, each with its fix.
    fn findings(&mut self, findings: &[Finding]) {
        if findings.is_empty() {
            self.plain(text::LABEL_FINDINGS, text::NONE.to_string());
            return;
        }
        for finding in findings {
            let style = self.theme().severity(finding.severity);
            self.labelled(
                finding.severity.as_str(),
                format!("[{}] {}", finding.code, finding.message),
                style,
            );
            if let Some(help) = &finding.help {
                self.plain(text::LABEL_FIX, help.clone());
            }
        }
    }

    /// A cell: its description, formula, the formula with values, the
    /// result in the view's units and in SI and FPS, its range and its
    /// load cases.
    fn cell(&mut self, cell: &CellResult<'_>) {
        let app = self.app;
        let live = app.live();
        let unit = if cell.declared_unit {
            format!(" [{}]", live.cell_field(cell.id, CellField::Unit))
        } else {
            String::new()
        };
        self.title = format!("{}{unit} · {}", cell.name, text::line_name(cell.line));
        let description = cell.description.map(str::to_string).unwrap_or_else(|| {
            if cell.is_input {
                text::INPUT.to_string()
            } else {
                String::new()
            }
        });
        if !description.is_empty() {
            self.note(&description);
        }
        self.plain(text::LABEL_FORMULA, cell.formula.to_string());
        if !cell.uses.is_empty() || cell.formula.contains(char::is_alphabetic) && !cell.is_input {
            self.plain(
                text::LABEL_WITH_VALUES,
                live.substituted_formula(cell.id, app.units().system(), app.sig_figs()),
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
                    cell_value(live, cell, app.units(), app.sig_figs()),
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
        self.labelled(text::LABEL_RESULT, result, self.theme().label());
        let unit = live.display_unit(cell.id, app.units().system());
        self.cell_range(cell.id, &unit);
        self.cell_cases(cell.id, &unit);
    }

    /// A cell's range under its tolerances: its bounds, or a vector's
    /// bounds on each axis.
    fn cell_range(&mut self, id: CellId, unit: &DisplayUnit) {
        let sig_figs = self.app.sig_figs();
        let judgement = self.app.live().judgement();
        if let Some(range) = judgement.ranges.get(id).and_then(Option::as_ref) {
            let (low, high) = range.shown_bounds();
            self.plain(
                text::LABEL_RANGE,
                format!(
                    "{} … {} ({})",
                    shown(low, unit, sig_figs),
                    shown(high, unit, sig_figs),
                    range.method.describe()
                ),
            );
        } else if let Some((_, components)) = judgement
            .vector_ranges
            .iter()
            .find(|(vector, _)| *vector == id)
        {
            let parts: Vec<String> = components
                .iter()
                .zip(["x", "y", "z"])
                .map(|(&(low, high), axis)| {
                    format!(
                        "{axis} {} … {}",
                        shown(low, unit, sig_figs),
                        shown(high, unit, sig_figs)
                    )
                })
                .collect();
            self.plain(
                text::LABEL_RANGE,
                format!("{} (found at the corners)", parts.join(", ")),
            );
        }
    }

    /// A cell's value in each load case.
    fn cell_cases(&mut self, id: CellId, unit: &DisplayUnit) {
        let sig_figs = self.app.sig_figs();
        let judgement = self.app.live().judgement();
        let Some(position) = judgement.case_results.iter().position(|&cell| cell == id) else {
            return;
        };
        let values: Vec<String> = judgement
            .cases
            .iter()
            .map(|case| {
                let value = case.results.get(position).and_then(|r| r.value);
                let shown = value.map_or(text::NO_VALUE.to_string(), |v| {
                    format_value(v, unit, sig_figs)
                });
                format!("{} {shown}", case.name)
            })
            .collect();
        if !values.is_empty() {
            self.plain(text::LABEL_CASES, values.join(", "));
        }
    }

    /// Check `index`, statement `statement`: its label, comparison, the
    /// comparison with values, utilization, worst case under tolerances,
    /// load cases and verdict.
    fn check(&mut self, statement: usize, index: usize, check: &CheckResult) {
        let app = self.app;
        let live = app.live();
        let theme = self.theme();
        self.title = format!(
            "{} · {}",
            text::check_name(index),
            text::line_name(live.statement_line(statement) + 1)
        );
        if let Some(label) = &check.label {
            self.note(label);
        }
        self.plain(text::LABEL_COMPARES, check_text(check));
        if let (Some(lhs), Some(rhs)) = (check.lhs, check.rhs) {
            let unit = match app.units().system() {
                Some(system) => pick_unit(lhs.dimension, lhs.si, system),
                None => check.display.clone(),
            };
            self.plain(
                text::LABEL_WITH_VALUES,
                format!(
                    "{} {} {}",
                    shown(lhs.si, &unit, app.sig_figs()),
                    check.comparison.symbol(),
                    shown(rhs.si, &unit, app.sig_figs())
                ),
            );
        }
        let mark = mark_of(live, statement, &Row::Check(index, check));
        self.labelled(
            text::LABEL_UTILIZATION,
            format!("{}   {mark}", utilization_text(check)),
            mark_style(theme, mark),
        );
        if let Some(worst) = &check.worst {
            let utilization = worst
                .worst_utilization
                .map_or(text::NO_VALUE.to_string(), crate::units::percent);
            self.plain(
                text::LABEL_WORST,
                format!("{utilization} ({})", worst.method.describe()),
            );
        }
        self.check_cases(index);
        self.labelled(
            text::LABEL_VERDICT,
            crate::present::verdict_label(check, &live.judgement().cases),
            mark_style(theme, mark),
        );
    }

    /// Check `index` in each load case, the governing case starred.
    fn check_cases(&mut self, index: usize) {
        let judgement = self.app.live().judgement();
        let per_case: Vec<String> = judgement
            .cases
            .iter()
            .enumerate()
            .filter_map(|(case_index, case)| {
                let in_case = case.checks.get(index)?;
                let utilization = in_case
                    .governing_utilization()
                    .map_or(text::NO_VALUE.to_string(), crate::units::percent);
                let governs = judgement.governing.get(index).copied().flatten() == Some(case_index);
                Some(format!(
                    "{}{} {utilization} {}",
                    if governs { "*" } else { "" },
                    case.name,
                    in_case.status.as_str()
                ))
            })
            .collect();
        if !per_case.is_empty() {
            self.plain(text::LABEL_CASES, per_case.join(", "));
        }
    }

    /// A block: the values of the cells it defines.
    fn block_cells(&mut self, statement: usize) {
        let app = self.app;
        let live = app.live();
        let lines = live.statement_lines(statement);
        self.title = text::lines_name(lines.start + 1, lines.end);
        for id in live.block_cells(statement) {
            let cell = live.cell(id);
            self.plain(
                cell.name,
                cell_value(live, &cell, app.units(), app.sig_figs()),
            );
        }
        // A sweep: its points and each check's margin over them.
        let sweeps = &live.judgement().sweeps;
        if let Some(sweep) = sweeps.iter().find(|sweep| sweep.statement == statement) {
            self.plain(
                text::LABEL_SWEEP_POINTS,
                text::sweep_points(sweep.points.len()),
            );
            for (index, margin) in sweep.margins.iter().enumerate() {
                self.plain(
                    &text::sweep_check_name(index + 1),
                    crate::present::margin_text(sweep, margin, app.sig_figs()),
                );
            }
        }
    }

    /// A heading, note, review mark or line that does not parse: its text.
    fn statement_text(&mut self, statement: usize) {
        let live = self.app.live();
        let lines = live.statement_lines(statement);
        self.title = text::lines_name(lines.start + 1, lines.end);
        for (index, line) in live.statement_text(statement).lines().enumerate() {
            self.plain(
                if index == 0 { text::LABEL_LINE } else { "" },
                line.to_string(),
            );
        }
    }

    /// The sheet's findings on other rows than `statement` (which has
    /// `n_own`), if there are any and room for three lines.
    fn other_findings(&mut self, statement: usize, n_own: usize, caution_len: usize) {
        let live = self.app.live();
        let (theme, width) = (self.theme(), self.width());
        let others: Vec<Finding> = if live.n_findings() > n_own {
            live.findings()
                .into_iter()
                .filter(|finding| finding.statement != Some(statement))
                .collect()
        } else {
            Vec::new()
        };
        let room = self.room_left(caution_len);
        if others.is_empty() || room < 3 {
            return;
        }
        self.list_heading(text::LABEL_ELSEWHERE);
        for finding in others.iter().take(room - 2) {
            let style = theme.severity(finding.severity);
            self.lines.push(Line::from(vec![
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

    /// The sheet's checks, failed and most used first, if there is room
    /// for three lines.
    fn all_checks(&mut self, caution_len: usize) {
        let live = self.app.live();
        let (theme, width) = (self.theme(), self.width());
        let room = self.room_left(caution_len);
        if live.n_checks() == 0 || room < 3 {
            return;
        }
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
        self.list_heading(text::LABEL_CHECKS);
        for index in checks.into_iter().take(room - 2) {
            let check = live.check(index);
            let statement = live.check_statement(index);
            let mark = mark_of(live, statement, &Row::Check(index, check));
            let label = check.label.as_deref().unwrap_or_default();
            self.lines.push(Line::from(vec![
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

    /// The caution, wrapped into `caution`, if it fits below the lines.
    fn caution(&mut self, caution: Vec<String>) {
        if self.lines.len() + caution.len() >= usize::from(self.inner.height) {
            return;
        }
        let style = self.theme().caution();
        self.lines.push(Line::raw(""));
        for piece in caution {
            self.lines.push(Line::from(vec![
                Span::raw(" ".repeat(LABEL_WIDTH)),
                Span::styled(piece, style),
            ]));
        }
    }
}

fn link_name(live: &LiveSheet, link: Link) -> String {
    match link {
        Link::Uses(id) | Link::UsedByCell(id) => live.cell(id).name.to_string(),
        Link::UsedByCheck(check) => text::check_name(check),
    }
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

pub(super) fn draw_detail(app: &App, frame: &mut Frame, area: Rect) {
    let inner = detail_block("").inner(area);
    let detail = detail(app, inner);
    let block = detail_block(&detail.title).border_style(app.theme().quiet());
    frame.render_widget(Paragraph::new(detail.lines).block(block), area);
}
