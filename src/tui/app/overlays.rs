//! The overlays over the sheet: finding a cell by name, the list of
//! findings, and the help; each gets the keys while it is open.

use ratatui::crossterm::event::KeyEvent;
use tui_input::{Input, InputRequest};

use super::super::keys::{Action, Scope, action_for};
use super::super::strings as text;
use super::{App, Mode, typed_char};
use crate::live::Finding;
use crate::sheet::CellId;

/// The find overlay.
#[derive(Clone, Debug)]
pub struct FindState {
    /// The name typed so far.
    pub query: Input,
    /// Matching cells, best first.
    pub matches: Vec<CellId>,
    /// The selected match.
    pub selected: usize,
}

/// The findings overlay.
#[derive(Clone, Debug)]
pub struct FindingsState {
    /// Every finding, by line.
    pub list: Vec<Finding>,
    /// The selected finding.
    pub selected: usize,
}

impl App {
    pub(super) fn find_matches(&self, query: &str) -> Vec<CellId> {
        let query = query.to_lowercase();
        let mut matches: Vec<(usize, usize, CellId)> = (0..self.live.n_cells())
            .filter_map(|id| {
                let name = self.live.cell(id).name;
                let lower = name.to_lowercase();
                let at = lower.find(&query)?;
                Some((usize::from(at != 0), name.len(), id))
            })
            .collect();
        matches.sort_unstable();
        matches.truncate(MAX_MATCHES);
        matches.into_iter().map(|(_, _, id)| id).collect()
    }

    pub(super) fn find_key(&mut self, key: &KeyEvent) {
        let Mode::Find(state) = &mut self.mode else {
            return;
        };
        match action_for(Scope::Find, key) {
            Some(Action::Up) => state.selected = state.selected.saturating_sub(1),
            Some(Action::Down) => {
                state.selected = (state.selected + 1).min(state.matches.len().saturating_sub(1))
            }
            Some(Action::Close) => self.mode = Mode::Browse,
            Some(Action::Jump) => {
                let chosen = state.matches.get(state.selected).copied();
                self.mode = Mode::Browse;
                match chosen {
                    Some(id) => self.jump_to_statement(self.live.cell_statement(id)),
                    None => self.say(text::NO_MATCH),
                }
            }
            action => {
                let request = match (action, typed_char(key)) {
                    (Some(Action::DeleteBack), _) => InputRequest::DeletePrevChar,
                    (_, Some(c)) => InputRequest::InsertChar(c),
                    _ => return,
                };
                state.query.handle(request);
                let query = state.query.value().to_string();
                let matches = self.find_matches(&query);
                if let Mode::Find(state) = &mut self.mode {
                    state.matches = matches;
                    state.selected = 0;
                }
            }
        }
    }

    pub(super) fn findings_key(&mut self, key: &KeyEvent) {
        let page = self.areas().overlay_rows().max(1);
        let Mode::Findings(state) = &mut self.mode else {
            return;
        };
        let last = state.list.len().saturating_sub(1);
        match action_for(Scope::Findings, key) {
            Some(Action::Up) => state.selected = state.selected.saturating_sub(1),
            Some(Action::Down) => state.selected = (state.selected + 1).min(last),
            Some(Action::PageUp) => state.selected = state.selected.saturating_sub(page),
            Some(Action::PageDown) => state.selected = (state.selected + page).min(last),
            Some(Action::Close) => self.mode = Mode::Browse,
            Some(Action::Jump) => {
                let finding = state.list.get(state.selected).cloned();
                self.mode = Mode::Browse;
                if let Some(finding) = finding {
                    match finding.statement {
                        Some(statement) => self.jump_to_statement(statement),
                        None => self.say(text::in_header(finding.line, &finding.message)),
                    }
                }
            }
            _ => {}
        }
    }

    /// The help scrolls by a line; it never scrolls past its last page.
    pub(super) fn help_key(&mut self, scroll: usize, key: &KeyEvent) {
        match action_for(Scope::Help, key) {
            Some(Action::Up) => {
                self.mode = Mode::Help {
                    scroll: scroll.saturating_sub(1),
                }
            }
            Some(Action::Down) => {
                let overlay = self.areas().overlay;
                let inner_width = usize::from(overlay.width.saturating_sub(2));
                let n_lines = super::super::view::help_lines(self.theme, inner_width).len();
                let last = n_lines.saturating_sub(usize::from(overlay.height.saturating_sub(2)));
                self.mode = Mode::Help {
                    scroll: (scroll + 1).min(last),
                }
            }
            Some(Action::Close) => self.mode = Mode::Browse,
            _ => {}
        }
    }
}

/// Most matches the find overlay lists.
const MAX_MATCHES: usize = 200;
