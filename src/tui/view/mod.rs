//! Drawing: a pure function of the [`App`]. Only the rows on screen are
//! formatted, so a frame costs the same for ten cells or a hundred
//! thousand.
//!
//! This file lays the parts out: `table` (the sheet table), `detail` (the
//! detail pane and its link hotspots), `editor` (an edit on screen),
//! `status` (the title bar, status and bottom lines), `overlays` (help,
//! findings, find); `values` and `fit` hold what several of them share.

mod detail;
mod editor;
mod fit;
mod overlays;
mod status;
mod table;
mod values;

use ratatui::Frame;
use ratatui::layout::{Position, Rect};

use super::app::{App, Mode};
use super::layout::areas;

pub use detail::link_hotspots;
pub use overlays::help_lines;

/// Draws the whole notebook.
pub fn view(app: &App, frame: &mut Frame) {
    let areas = areas(frame.area());
    status::draw_title(app, frame, areas.title);
    table::draw_sheet(app, frame, areas.sheet);
    detail::draw_detail(app, frame, areas.detail);
    if let Mode::Editing(session) = app.mode()
        && session.is_multiline()
    {
        editor::draw_lines_editor(app, frame, areas.detail, session);
    }
    status::draw_status(app, frame, areas.status);
    status::draw_bottom(app, frame, areas.bottom);
    match app.mode() {
        Mode::Help { scroll } => overlays::draw_help(app, frame, &areas, *scroll),
        Mode::Findings(state) => {
            overlays::draw_findings(app, frame, &areas, &state.list, state.selected)
        }
        Mode::Find(state) => overlays::draw_find(app, frame, &areas, state),
        _ => {}
    }
}

/// The terminal's cursor at `column` and `row` of `area`, kept inside the
/// area's width.
pub(super) fn set_cursor(frame: &mut Frame, area: Rect, column: usize, row: usize) {
    frame.set_cursor_position(Position::new(
        area.x
            + u16::try_from(column)
                .unwrap_or(area.width)
                .min(area.width.saturating_sub(1)),
        area.y + u16::try_from(row).unwrap_or(0),
    ));
}
