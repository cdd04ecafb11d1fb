//! The questions the notebook asks before it quits, saves over a file,
//! or restores unsaved work, and the saving and recovering their answers
//! decide.

use ratatui::crossterm::event::KeyEvent;

use super::super::keys::{Action, Scope, action_for};
use super::super::strings as text;
use super::{App, Effect, History, Mode};
use crate::live::LiveSheet;

/// A question the notebook is waiting on.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Question {
    /// Quit with unsaved changes?
    QuitUnsaved,
    /// The file changed on disk: overwrite?
    Overwrite,
    /// Restore unsaved work from an earlier session?
    Recover,
    /// Restore further unsaved work, kept by another earlier session?
    RecoverNext,
    /// The file is read-only: save over it?
    ReplaceReadOnly,
}

impl Question {
    /// The question as shown.
    pub fn prompt(self) -> &'static str {
        match self {
            Question::QuitUnsaved => text::ASK_QUIT,
            Question::Overwrite => text::ASK_OVERWRITE,
            Question::Recover => text::ASK_RECOVER,
            Question::RecoverNext => text::ASK_RECOVER_NEXT,
            Question::ReplaceReadOnly => text::ASK_READ_ONLY,
        }
    }
}

/// What the user allowed the save under way to do, by answering a question.
#[derive(Clone, Copy, Debug, Default)]
pub(super) struct SaveGrants {
    /// Write over a file that changed on disk.
    overwrite: bool,
    /// Write over a read-only file.
    read_only: bool,
}

impl App {
    /// Saves with what the user allowed so far (`granted`).
    pub(super) fn save(&mut self) -> Vec<Effect> {
        let SaveGrants {
            overwrite,
            read_only,
        } = self.granted;
        if !self.is_dirty() && !self.is_new_file() && !overwrite && !read_only {
            self.say(text::NOTHING_TO_SAVE);
            return Vec::new();
        }
        vec![Effect::Save {
            text: self.live.text(),
            expected: self.disk,
            overwrite,
            replace_read_only: read_only,
        }]
    }

    pub(super) fn quit(&mut self) -> Vec<Effect> {
        if self.is_dirty() {
            self.mode = Mode::Ask(Question::QuitUnsaved);
            Vec::new()
        } else {
            vec![Effect::DropRecovery, Effect::Quit]
        }
    }

    pub(super) fn answer(&mut self, question: Question, key: &KeyEvent) -> Vec<Effect> {
        match (question, action_for(Scope::Question, key)) {
            // Unsaved work kept from a crash must be restored or dropped:
            // the first edit would otherwise write over the copy.
            (Question::Recover | Question::RecoverNext, Some(Action::Close)) => Vec::new(),
            (_, Some(Action::Close)) => {
                self.mode = Mode::Browse;
                self.quit_after_save = false;
                Vec::new()
            }
            (Question::QuitUnsaved, Some(Action::AnswerSave)) => {
                self.mode = Mode::Browse;
                self.quit_after_save = true;
                self.granted = SaveGrants::default();
                self.save()
            }
            (Question::QuitUnsaved, Some(Action::AnswerDiscard)) => {
                vec![Effect::DropRecovery, Effect::Quit]
            }
            (Question::Overwrite, Some(Action::AnswerOverwrite)) => {
                self.mode = Mode::Browse;
                self.granted.overwrite = true;
                self.save()
            }
            (Question::ReplaceReadOnly, Some(Action::AnswerOverwrite)) => {
                self.mode = Mode::Browse;
                self.granted.read_only = true;
                self.save()
            }
            (Question::Recover | Question::RecoverNext, Some(Action::AnswerRestore)) => {
                self.restore_kept_copy()
            }
            (Question::Recover | Question::RecoverNext, Some(Action::AnswerDiscard)) => {
                self.discard_kept_copy()
            }
            _ => Vec::new(),
        }
    }

    /// Restores the kept copy on offer; any others stay on disk, offered
    /// at the next opening (restoring a second would replace the first).
    fn restore_kept_copy(&mut self) -> Vec<Effect> {
        self.mode = Mode::Browse;
        if self.recovered.is_empty() {
            return Vec::new();
        }
        let kept = self.recovered.remove(0);
        self.live = LiveSheet::open_with_files(&kept.text, self.live.files());
        self.history = History::default();
        self.select(0);
        let restored = match self.recovered.len() {
            0 => text::RESTORED.to_string(),
            n_left => text::restored_others_left(n_left),
        };
        self.recovered.clear();
        let notice = self.opening_notice.take();
        self.say(text::with_notice(&restored, notice));
        vec![
            Effect::AdoptCopy {
                path: kept.path,
                text: kept.text,
            },
            self.lint_request(),
        ]
    }

    /// Discards the kept copy on offer and offers the next, if any.
    fn discard_kept_copy(&mut self) -> Vec<Effect> {
        if self.recovered.is_empty() {
            self.mode = Mode::Browse;
            return Vec::new();
        }
        let kept = self.recovered.remove(0);
        if self.recovered.is_empty() {
            self.mode = Mode::Browse;
            let notice = self.opening_notice.take();
            self.say(text::with_notice(text::DISCARDED, notice));
        } else {
            self.mode = Mode::Ask(Question::RecoverNext);
        }
        vec![Effect::DiscardCopy(kept.path)]
    }
}
