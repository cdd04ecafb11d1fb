//! The sheet table: one row per statement, with its state mark, name,
//! formula and value; only the rows on screen are formatted.

use ratatui::Frame;
use ratatui::layout::Rect;
use ratatui::text::{Line, Span};
use ratatui::widgets::Paragraph;
use unicode_width::UnicodeWidthStr;

use super::super::app::{App, Focus};
use super::super::strings as text;
use super::fit::{fit, pad, pad_left};
use super::values::{cell_value, check_text, mark_of, mark_style, utilization_text};
use crate::live::Row;

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

pub(super) fn draw_sheet(app: &App, frame: &mut Frame, area: Rect) {
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
