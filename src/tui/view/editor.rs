//! An edit on screen: the editor of several lines over the detail pane,
//! and the bottom line while editing (the prompt with the field or line
//! being typed, or, for several lines, where the cursor is).

use ratatui::Frame;
use ratatui::layout::Rect;
use ratatui::text::{Line, Span};
use ratatui::widgets::{Block, Clear, Paragraph};
use unicode_width::UnicodeWidthStr;

use super::super::app::{App, EditSession};
use super::super::strings as text;
use super::fit::{fit, fit_line};
use super::set_cursor;

/// The editor of several lines (a block's, the header's), over the detail
/// pane: as tall as the lines, up to the pane, each line with its number
/// in the file, and the keys that end the edit on its lower border; it
/// scrolls to keep the cursor's line in view.
pub(super) fn draw_lines_editor(app: &App, frame: &mut Frame, pane: Rect, session: &EditSession) {
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
        set_cursor(frame, inner, column, row);
    }
}

/// The bottom line under the editor of several lines: the lines are in
/// the editor above, so here is where the cursor is and the first finding
/// on the lines edited.
pub(super) fn draw_lines_position(app: &App, frame: &mut Frame, area: Rect, session: &EditSession) {
    let theme = app.theme();
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
        let style = theme.severity(finding.severity);
        spans.push(Span::raw(" · "));
        spans.push(Span::styled(
            format!("{}: {}", text::line_name(finding.line), finding.message),
            style,
        ));
    }
    let line = Line::from(spans);
    frame.render_widget(
        Paragraph::new(fit_line(line, usize::from(area.width))),
        area,
    );
}

/// The bottom line editing one line or field: the prompt, then the text
/// scrolled to keep the cursor in view, with the terminal's cursor on it.
pub(super) fn draw_prompt(app: &App, frame: &mut Frame, area: Rect, session: &EditSession) {
    let theme = app.theme();
    let width = usize::from(area.width);
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
    set_cursor(frame, area, cursor, 0);
}
