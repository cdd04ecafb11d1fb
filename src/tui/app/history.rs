//! Undo and redo: the [`History`] of kept changes, each one [`Splice`]
//! whatever it covered, where the file was last saved, and the steps
//! that apply a change, delete a statement, and undo or redo.

use super::super::strings as text;
use super::{App, Effect};
use crate::live::{EditError, Splice};

/// Undo and redo, and where the file was last saved.
#[derive(Clone, Debug, Default)]
pub struct History {
    changes: Vec<Splice>,
    /// How many changes are applied.
    done: usize,
    /// `done` when the text last matched the file on disk; `None` if never.
    saved: Option<usize>,
}

impl History {
    /// The history of a text just read from its file: nothing to undo,
    /// saved as it is.
    pub(super) fn opened() -> History {
        History {
            saved: Some(0),
            ..History::default()
        }
    }

    /// Whether the text is as it was last saved (or read).
    pub(super) fn is_saved(&self) -> bool {
        self.saved == Some(self.done)
    }

    /// The text as it is now was saved.
    pub(super) fn mark_saved(&mut self) {
        self.saved = Some(self.done);
    }

    pub(super) fn record(&mut self, change: Splice) {
        self.changes.truncate(self.done);
        if self.saved.is_some_and(|saved| saved > self.done) {
            self.saved = None;
        }
        self.changes.push(change);
        self.done += 1;
    }

    /// Number of changes that can be undone.
    pub fn undoable(&self) -> usize {
        self.done
    }

    /// Number of changes that can be redone.
    pub fn redoable(&self) -> usize {
        self.changes.len() - self.done
    }

    /// The last change made (or redone) and not undone.
    pub fn last_change(&self) -> Option<&Splice> {
        self.done
            .checked_sub(1)
            .and_then(|index| self.changes.get(index))
    }
}

impl App {
    /// Applies a change to the sheet. A header edit that changes the
    /// significant figures shows the new number.
    pub(super) fn apply_splice(&mut self, splice: &Splice) -> Result<(), EditError> {
        let sig_figs = self.live.header().sig_figs;
        self.live.apply(splice)?;
        if self.live.header().sig_figs != sig_figs {
            self.sig_figs = self.live.header().sig_figs;
        }
        Ok(())
    }

    /// Deletes the selected statement: its line, or all of a block's lines.
    pub(super) fn delete_selected(&mut self) -> Vec<Effect> {
        let Some(statement) = self.selected_statement() else {
            self.say(text::NOTHING_TO_DELETE);
            return Vec::new();
        };
        let lines = self.live.statement_lines(statement);
        let result = self
            .live
            .document()
            .plan(lines.start, lines.len(), &[])
            .and_then(|splice| self.apply_splice(&splice).map(|()| splice));
        match result {
            Ok(splice) => {
                self.say(text::deleted_lines(splice.before.len()));
                self.history.record(splice);
                let row = self.selected;
                self.select(row);
                self.recovery_effects()
            }
            Err(error) => {
                self.say(error.to_string());
                Vec::new()
            }
        }
    }

    pub(super) fn undo(&mut self) -> Vec<Effect> {
        let Some(change) = self.history.last_change().cloned() else {
            self.say(text::NOTHING_TO_UNDO);
            return Vec::new();
        };
        let result = self.apply_splice(&change.inverse());
        self.after_history_step(result, change.first, -1, text::UNDONE)
    }

    pub(super) fn redo(&mut self) -> Vec<Effect> {
        let Some(change) = self.history.changes.get(self.history.done).cloned() else {
            self.say(text::NOTHING_TO_REDO);
            return Vec::new();
        };
        let result = self.apply_splice(&change);
        self.after_history_step(result, change.first, 1, text::REDONE)
    }

    fn after_history_step(
        &mut self,
        result: Result<(), EditError>,
        line: usize,
        step: isize,
        done: &str,
    ) -> Vec<Effect> {
        match result {
            Ok(()) => {
                self.history.done = self.history.done.saturating_add_signed(step);
                self.say(done);
                self.select_line(line.min(self.live.document().n_lines().saturating_sub(1)));
                self.recovery_effects()
            }
            Err(error) => {
                self.say(error.to_string());
                Vec::new()
            }
        }
    }
}
