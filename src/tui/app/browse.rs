//! Moving around the sheet: the selection and its scrolling, the links
//! of the selected row, jumps and jumping back, the sheet's and the
//! links pane's actions, and the mouse.

use ratatui::crossterm::event::{MouseButton, MouseEvent, MouseEventKind};
use ratatui::layout::Position;
use tui_input::Input;

use super::super::keys::Action;
use super::super::strings as text;
use super::{App, Effect, FindState, FindingsState, Focus, Link, Mode, SaveGrants};
use crate::live::{CellField, Row};

/// Rows moved by one turn of the mouse wheel.
const WHEEL_ROWS: usize = 3;

impl App {
    /// The links of the selected row: cells it uses, then cells and checks
    /// that use it.
    pub fn links(&self) -> Vec<Link> {
        let Some(statement) = self.selected_statement() else {
            return Vec::new();
        };
        match self.live.row(statement) {
            Row::Cell(cell) => {
                // Users in file order, whatever order edits left the edges in.
                let mut dependents = self.live.dependents(cell.id).to_vec();
                dependents.sort_unstable();
                let mut checks = self.live.check_dependents(cell.id).to_vec();
                checks.sort_unstable();
                cell.uses
                    .iter()
                    .map(|&id| Link::Uses(id))
                    .chain(dependents.into_iter().map(Link::UsedByCell))
                    .chain(checks.into_iter().map(Link::UsedByCheck))
                    .collect()
            }
            Row::Check(check, _) => self
                .live
                .check_uses(check)
                .iter()
                .map(|&id| Link::Uses(id))
                .collect(),
            _ => Vec::new(),
        }
    }

    pub(super) fn select(&mut self, row: usize) {
        self.selected = row.min(self.n_rows().saturating_sub(1));
        self.link_selected = 0;
        self.keep_selection_visible();
    }

    pub(super) fn keep_selection_visible(&mut self) {
        let visible = self.visible_rows();
        if self.selected < self.scroll {
            self.scroll = self.selected;
        } else if self.selected >= self.scroll + visible {
            self.scroll = self.selected + 1 - visible;
        }
        self.scroll = self.scroll.min(self.n_rows().saturating_sub(visible));
    }

    fn select_statement(&mut self, statement: usize) {
        if let Some(row) = self.live.row_position(statement) {
            self.select(row);
        }
    }

    /// Selects the statement on 0-based `line`, or the nearest before it.
    pub(super) fn select_line(&mut self, line: usize) {
        let statement = self
            .live
            .statement_at_line(line)
            .or_else(|| self.live.document().statements_before(line).checked_sub(1));
        match statement {
            Some(statement) => self.select_statement(statement),
            None => self.select(0),
        }
    }

    pub(super) fn jump_to_statement(&mut self, statement: usize) {
        if let Some(current) = self.selected_statement() {
            self.jumps.push(current);
        }
        self.focus = Focus::Sheet;
        self.select_statement(statement);
    }

    fn move_selection(&mut self, action: Action) {
        let page = self.visible_rows().saturating_sub(1).max(1);
        let last = self.n_rows().saturating_sub(1);
        let row = match action {
            Action::Up => self.selected.saturating_sub(1),
            Action::Down => (self.selected + 1).min(last),
            Action::PageUp => self.selected.saturating_sub(page),
            Action::PageDown => (self.selected + page).min(last),
            Action::First => 0,
            Action::Last => last,
            _ => self.selected,
        };
        self.select(row);
    }

    fn follow_link(&mut self, link: Link) {
        let statement = match link {
            Link::Uses(id) | Link::UsedByCell(id) => self.live.cell_statement(id),
            Link::UsedByCheck(check) => self.live.check_statement(check),
        };
        self.jump_to_statement(statement);
    }

    pub(super) fn sheet_action(&mut self, action: Action) -> Vec<Effect> {
        match action {
            Action::Up
            | Action::Down
            | Action::PageUp
            | Action::PageDown
            | Action::First
            | Action::Last => self.move_selection(action),
            Action::EditMain => match self.selected_statement().map(|s| self.live.row(s)) {
                Some(Row::Cell(_)) => self.edit_field(CellField::Formula),
                Some(_) => self.edit_line(),
                None => self.add_line("", text::ADD_CELL),
            },
            Action::EditFormula => self.edit_field(CellField::Formula),
            Action::EditUnit => self.edit_field(CellField::Unit),
            Action::EditDescription => self.edit_field(CellField::Description),
            Action::EditName => self.edit_field(CellField::Name),
            Action::EditLine => self.edit_line(),
            Action::EditHeader => self.edit_header(),
            Action::AddCell => self.add_line("", text::ADD_CELL),
            Action::AddHeading => self.add_line("# ", text::ADD_HEADING),
            Action::AddNote => self.add_line("> ", text::ADD_NOTE),
            Action::AddCheck => self.add_line("check ", text::ADD_CHECK),
            Action::Delete => return self.delete_selected(),
            Action::Undo => return self.undo(),
            Action::Redo => return self.redo(),
            Action::CycleUnits => {
                self.units = self.units.next();
                self.say(self.units.label());
            }
            Action::MoreFigures => self.sig_figs = (self.sig_figs + 1).min(15),
            Action::FewerFigures => self.sig_figs = self.sig_figs.saturating_sub(1).max(1),
            Action::Find => {
                self.mode = Mode::Find(FindState {
                    query: Input::default(),
                    matches: self.find_matches(""),
                    selected: 0,
                })
            }
            Action::Findings => {
                let list = self.live.findings();
                if list.is_empty() {
                    self.say(text::NO_FINDINGS);
                } else {
                    self.mode = Mode::Findings(FindingsState { list, selected: 0 });
                }
            }
            Action::Help => self.mode = Mode::Help { scroll: 0 },
            Action::FocusLinks => {
                if self.links().is_empty() {
                    self.say(text::NO_LINKS);
                } else {
                    self.focus = Focus::Links;
                    self.link_selected = 0;
                }
            }
            Action::JumpBack => match self.jumps.pop() {
                Some(statement) if statement < self.live.n_statements() => {
                    self.select_statement(statement)
                }
                _ => self.say(text::NO_JUMP_BACK),
            },
            Action::Save => {
                self.granted = SaveGrants::default();
                return self.save();
            }
            Action::Quit => return self.quit(),
            _ => {}
        }
        Vec::new()
    }

    /// The links pane gets the key first; returns `None` if it did not use it.
    pub(super) fn links_action(&mut self, action: Option<Action>) -> Option<Vec<Effect>> {
        let links = self.links();
        match action? {
            Action::Up => self.link_selected = self.link_selected.saturating_sub(1),
            Action::Down => {
                self.link_selected = (self.link_selected + 1).min(links.len().saturating_sub(1))
            }
            Action::Jump => {
                if let Some(&link) = links.get(self.link_selected) {
                    self.follow_link(link);
                }
            }
            Action::Close => self.focus = Focus::Sheet,
            Action::JumpBack => {
                self.focus = Focus::Sheet;
                return Some(self.sheet_action(Action::JumpBack));
            }
            _ => return None,
        }
        Some(Vec::new())
    }

    pub(super) fn mouse(&mut self, event: MouseEvent) {
        if !matches!(self.mode, Mode::Browse) {
            return;
        }
        let position = Position::new(event.column, event.row);
        let areas = self.areas();
        match event.kind {
            MouseEventKind::Down(MouseButton::Left) => {
                if areas.title.contains(position) {
                    self.edit_header();
                } else if let Some(row) = areas.sheet_row_at(position) {
                    let row = self.scroll + row;
                    if row < self.n_rows() {
                        self.focus = Focus::Sheet;
                        self.select(row);
                    }
                } else if areas.detail.contains(position) {
                    let hotspots = super::super::view::link_hotspots(self, areas.detail);
                    if let Some(&(_, link)) =
                        hotspots.iter().find(|(area, _)| area.contains(position))
                    {
                        self.follow_link(link);
                    }
                }
            }
            MouseEventKind::ScrollDown => {
                let row = (self.selected + WHEEL_ROWS).min(self.n_rows().saturating_sub(1));
                self.select(row);
            }
            MouseEventKind::ScrollUp => self.select(self.selected.saturating_sub(WHEEL_ROWS)),
            _ => {}
        }
    }
}
