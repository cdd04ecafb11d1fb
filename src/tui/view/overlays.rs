//! The overlays over the panes: the help (every key, from the bindings
//! table), the list of findings with the selected one in full, and find
//! by name.

use ratatui::Frame;
use ratatui::text::{Line, Span};
use ratatui::widgets::{Block, Clear, Paragraph};
use unicode_width::UnicodeWidthStr;

use super::super::app::{App, FindState};
use super::super::keys::{BINDINGS, Binding, Scope};
use super::super::layout::Areas;
use super::super::strings as text;
use super::super::theme::Theme;
use super::fit::{fit, pad, wrap};
use super::set_cursor;
use super::values::cell_value;
use crate::live::Finding;

fn overlay_block(title: String) -> Block<'static> {
    Block::bordered().title(format!(" {title} "))
}

/// The help text: every binding, by scope, then the caution.
pub fn help_lines(theme: Theme, width: usize) -> Vec<Line<'static>> {
    let keys_of = |binding: &Binding| {
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

pub(super) fn draw_help(app: &App, frame: &mut Frame, areas: &Areas, scroll: usize) {
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

pub(super) fn draw_findings(
    app: &App,
    frame: &mut Frame,
    areas: &Areas,
    list: &[Finding],
    selected: usize,
) {
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
            let style = theme.severity(finding.severity);
            let place = format!("{:>5}:{:<3} ", finding.line, finding.column);
            let kind = format!(
                "{} ",
                crate::present::finding_kind(finding.severity, finding.code)
            );
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

pub(super) fn draw_find(app: &App, frame: &mut Frame, areas: &Areas, state: &FindState) {
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
    set_cursor(frame, inner, cursor, 0);
}
