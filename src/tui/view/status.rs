//! The lines around the panes: the title bar, the status line (counts,
//! units, figures, the help hint) and the bottom line (the message, a
//! question, the edit prompt, or the most used keys).

use ratatui::Frame;
use ratatui::layout::Rect;
use ratatui::style::Style;
use ratatui::text::{Line, Span};
use ratatui::widgets::Paragraph;
use unicode_width::UnicodeWidthStr;

use super::super::app::{App, Mode};
use super::super::keys::{HINTS, Scope, key_for};
use super::super::strings as text;
use super::super::theme::Theme;
use super::editor;
use super::fit::{fit, pad};

pub(super) fn draw_title(app: &App, frame: &mut Frame, area: Rect) {
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

pub(super) fn draw_status(app: &App, frame: &mut Frame, area: Rect) {
    let live = app.live();
    let theme = app.theme();
    let summary = live.summary();
    let (errors, warnings) = (summary.errors, summary.warnings);
    let (passed, failed, unknown) = (summary.passed, summary.failed, summary.unknown);
    // A count is coloured only when it is not zero.
    let counted = |count: usize, shown: String, style: Style| {
        Span::styled(shown, if count > 0 { style } else { Style::default() })
    };
    let mut spans = vec![
        counted(errors, text::count(errors, "error"), theme.bad()),
        Span::raw(" · "),
        counted(warnings, text::count(warnings, "warning"), theme.warning()),
        Span::raw(" · checks "),
        counted(passed, format!("{passed} pass"), theme.good()),
        Span::raw(" "),
        counted(failed, format!("{failed} fail"), theme.bad()),
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

pub(super) fn draw_bottom(app: &App, frame: &mut Frame, area: Rect) {
    let theme = app.theme();
    let width = usize::from(area.width);
    match app.mode() {
        Mode::Editing(session) if session.is_multiline() => {
            editor::draw_lines_position(app, frame, area, session)
        }
        Mode::Editing(session) => editor::draw_prompt(app, frame, area, session),
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
