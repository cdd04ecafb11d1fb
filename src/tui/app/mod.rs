//! The notebook's state and its update function. No I/O happens here:
//! `update` turns a [`Message`] into a new state and a list of [`Effect`]s
//! (save, keep a recovery copy, quit) that the event loop carries out and
//! answers with further messages.
//!
//! This file holds the model ([`App`], [`Mode`]), the messages and effects,
//! and `update`, which hands each key to the mode's handler: `browse`
//! (selection, links, the sheet's actions, the mouse), `edit` (the
//! [`EditSession`] and its editor), `overlays` (find, findings, help),
//! `questions` (and the saving and recovering they decide) and `history`
//! (undo and redo of splices).

mod browse;
mod edit;
mod history;
mod overlays;
mod questions;

use std::path::{Path, PathBuf};

use ratatui::crossterm::event::{KeyEvent, KeyModifiers, MouseEvent};
use ratatui::layout::Rect;

use super::files::{Fingerprint, KeptCopy, Opened};
use super::keys::{Scope, action_for};
use super::layout::{Areas, areas};
use super::strings as text;
use super::theme::Theme;
use crate::live::LiveSheet;
use crate::sheet::CellId;
use crate::units::DisplaySystem;

pub use edit::{EditSession, EditTarget};
pub use history::History;
pub use overlays::{FindState, FindingsState};
pub use questions::Question;
use questions::SaveGrants;

/// Something that happened: a key, the mouse, a new terminal size, or the
/// answer to an [`Effect`].
#[derive(Clone, Debug)]
pub enum Message {
    /// A key was pressed.
    Key(KeyEvent),
    /// The mouse was used.
    Mouse(MouseEvent),
    /// The terminal is now this many columns and rows.
    Resize(u16, u16),
    /// The file was saved; it now has this fingerprint.
    Saved(Fingerprint),
    /// The save was refused: the file changed on disk since it was opened.
    SaveRefused,
    /// The save was refused: the file is read-only.
    SaveReadOnly,
    /// The save failed.
    SaveFailed(String),
    /// The recovery copy could not be written.
    RecoveryFailed(String),
    /// Something to tell the user about the sheet's files (another
    /// notebook opened it).
    Notice(String),
    /// The lint findings of the text at `revision` (see [`lint`]).
    Linted {
        /// The revision linted.
        revision: u64,
        /// Its text, which the findings' spans point into.
        text: String,
        /// The lints and the evaluation findings' verified fixes.
        linted: crate::pipeline::Linted,
    },
}

/// Something for the event loop to do.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Effect {
    /// Save `text`, refusing if the file's fingerprint is no longer
    /// `expected` unless `overwrite`.
    Save {
        /// The whole text.
        text: String,
        /// The fingerprint the file should still have (`None`: not there).
        expected: Option<Fingerprint>,
        /// Save even if the file changed on disk.
        overwrite: bool,
        /// Save even if the file is read-only.
        replace_read_only: bool,
    },
    /// Keep this text as the recovery copy.
    KeepRecovery(String),
    /// Keep the text as it is being typed in the recovery copy soon: the
    /// event loop writes [`App::recovery_effect`] at most every few hundred
    /// milliseconds while typing goes on.
    KeepRecoverySoon,
    /// Remove the recovery copy.
    DropRecovery,
    /// The kept copy at `path` was restored as `text`: keep the text as
    /// this notebook's recovery copy, then remove the old copy.
    AdoptCopy {
        /// The kept copy's file.
        path: PathBuf,
        /// Its text.
        text: String,
    },
    /// Remove the kept copy at this path: the user discarded it.
    DiscardCopy(PathBuf),
    /// Run the audit lints over `text`, the text at `revision`, and answer
    /// with [`Message::Linted`] (see [`lint`]). The event loop runs them
    /// off the drawing thread, so typing never waits for them.
    Lint {
        /// The revision of the text.
        revision: u64,
        /// The whole text.
        text: String,
    },
    /// Leave the notebook.
    Quit,
}

/// How values are shown.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum UnitsView {
    /// Each cell in its declared or written unit, others in the sheet's system.
    AsWritten,
    /// Every value in SI units.
    Si,
    /// Every value in FPS units.
    Fps,
}

impl UnitsView {
    /// The system to force, if any.
    pub fn system(self) -> Option<DisplaySystem> {
        match self {
            UnitsView::AsWritten => None,
            UnitsView::Si => Some(DisplaySystem::Si),
            UnitsView::Fps => Some(DisplaySystem::Fps),
        }
    }

    /// The name in the status line.
    pub fn label(self) -> &'static str {
        match self {
            UnitsView::AsWritten => text::UNITS_SHEET,
            UnitsView::Si => text::UNITS_SI,
            UnitsView::Fps => text::UNITS_FPS,
        }
    }

    pub(super) fn next(self) -> Self {
        match self {
            UnitsView::AsWritten => UnitsView::Si,
            UnitsView::Si => UnitsView::Fps,
            UnitsView::Fps => UnitsView::AsWritten,
        }
    }
}

/// Which pane has the keys.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Focus {
    /// The sheet table.
    Sheet,
    /// The links in the detail pane.
    Links,
}

/// What the notebook is doing.
#[derive(Clone, Debug)]
pub enum Mode {
    /// Moving around the sheet.
    Browse,
    /// Editing a line.
    Editing(Box<EditSession>),
    /// Finding a cell by name.
    Find(FindState),
    /// Listing findings.
    Findings(FindingsState),
    /// Showing every key.
    Help {
        /// First help line shown.
        scroll: usize,
    },
    /// Waiting for an answer.
    Ask(Question),
}

/// A link in the detail pane.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Link {
    /// A cell this one uses.
    Uses(CellId),
    /// A cell that uses this one.
    UsedByCell(CellId),
    /// A check that uses this one.
    UsedByCheck(usize),
}

/// The whole state of the notebook.
#[derive(Debug)]
pub struct App {
    live: LiveSheet,
    path: PathBuf,
    file_name: String,
    disk: Option<Fingerprint>,
    recovered: Vec<KeptCopy>,
    opening_notice: Option<String>,
    granted: SaveGrants,
    selected: usize,
    scroll: usize,
    focus: Focus,
    link_selected: usize,
    mode: Mode,
    units: UnitsView,
    sig_figs: u32,
    history: History,
    message: Option<String>,
    viewport: Rect,
    jumps: Vec<usize>,
    theme: Theme,
    quit_after_save: bool,
}

impl App {
    /// The notebook on an opened sheet, for a terminal of `viewport` size.
    pub fn new(opened: Opened, viewport: Rect, theme: Theme) -> App {
        App::with_files(opened, std::sync::Arc::default(), viewport, theme)
    }

    /// The notebook on an opened sheet whose tables read `files` (read
    /// beside it by the event loop: [`crate::pipeline::read_sheet_files`]).
    pub fn with_files(
        opened: Opened,
        files: std::sync::Arc<crate::sheet::SheetFiles>,
        viewport: Rect,
        theme: Theme,
    ) -> App {
        let live = LiveSheet::open_with_files(&opened.text, files);
        let sig_figs = live.header().sig_figs;
        let file_name = opened
            .path
            .file_name()
            .map(|name| name.to_string_lossy().into_owned())
            .unwrap_or_else(|| opened.path.display().to_string());
        let mode = if opened.recovery.is_empty() {
            Mode::Browse
        } else {
            Mode::Ask(Question::Recover)
        };
        let opening_notice = (!opened.notices.is_empty()).then(|| opened.notices.join(" · "));
        App {
            live,
            path: opened.path,
            file_name,
            disk: opened.disk,
            recovered: opened.recovery,
            granted: SaveGrants::default(),
            selected: 0,
            scroll: 0,
            focus: Focus::Sheet,
            link_selected: 0,
            mode,
            units: UnitsView::AsWritten,
            sig_figs,
            history: History::opened(),
            message: Some(
                opening_notice
                    .clone()
                    .unwrap_or_else(|| text::OPENING_CAUTION.to_string()),
            ),
            opening_notice,
            viewport,
            jumps: Vec::new(),
            theme,
            quit_after_save: false,
        }
    }

    // ----- what the view reads -----

    /// The sheet.
    pub fn live(&self) -> &LiveSheet {
        &self.live
    }

    /// The file's path.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// The file's name as shown.
    pub fn file_name(&self) -> &str {
        &self.file_name
    }

    /// Whether the file does not exist on disk yet.
    pub fn is_new_file(&self) -> bool {
        self.disk.is_none()
    }

    /// Whether the text differs from the file on disk.
    pub fn is_dirty(&self) -> bool {
        let typing = match &self.mode {
            Mode::Editing(session) => session.is_changed(),
            _ => false,
        };
        typing || !self.history.is_saved()
    }

    /// The selected row (position in [`LiveSheet::rows`]).
    pub fn selected(&self) -> usize {
        self.selected
    }

    /// The statement of the selected row, if the sheet has any.
    pub fn selected_statement(&self) -> Option<usize> {
        self.live.rows().get(self.selected).map(|&s| s as usize)
    }

    /// The first row shown.
    pub fn scroll(&self) -> usize {
        self.scroll
    }

    /// Which pane has the keys.
    pub fn focus(&self) -> Focus {
        self.focus
    }

    /// The selected link, when the links have the keys.
    pub fn link_selected(&self) -> usize {
        self.link_selected
    }

    /// What the notebook is doing.
    pub fn mode(&self) -> &Mode {
        &self.mode
    }

    /// How values are shown.
    pub fn units(&self) -> UnitsView {
        self.units
    }

    /// Significant figures shown.
    pub fn sig_figs(&self) -> u32 {
        self.sig_figs
    }

    /// Undo and redo.
    pub fn history(&self) -> &History {
        &self.history
    }

    /// The last message, if any.
    pub fn message(&self) -> Option<&str> {
        self.message.as_deref()
    }

    /// The terminal size.
    pub fn viewport(&self) -> Rect {
        self.viewport
    }

    /// The styles.
    pub fn theme(&self) -> Theme {
        self.theme
    }

    /// The screen areas for the current size.
    pub fn areas(&self) -> Areas {
        areas(self.viewport)
    }

    // ----- changing state -----

    fn say(&mut self, message: impl Into<String>) {
        self.message = Some(message.into());
    }

    fn n_rows(&self) -> usize {
        self.live.rows().len()
    }

    fn visible_rows(&self) -> usize {
        self.areas().sheet_rows().max(1)
    }

    /// After an edit: keeps the recovery copy in step with the text and
    /// asks for the new text's lint findings.
    fn recovery_effects(&self) -> Vec<Effect> {
        vec![self.recovery_effect(), self.lint_request()]
    }

    /// Keeps the recovery copy in step with the text as it is now, typing
    /// included: the text while it differs from the file, none otherwise.
    pub fn recovery_effect(&self) -> Effect {
        if self.is_dirty() {
            Effect::KeepRecovery(self.live.text())
        } else {
            Effect::DropRecovery
        }
    }

    /// Asks for the lint findings of the text as it is now.
    pub fn lint_request(&self) -> Effect {
        Effect::Lint {
            revision: self.live.revision(),
            text: self.live.text(),
        }
    }
}

/// The character a key types, if it types one.
fn typed_char(key: &KeyEvent) -> Option<char> {
    match key.code {
        ratatui::crossterm::event::KeyCode::Char(c)
            if !key
                .modifiers
                .intersects(KeyModifiers::CONTROL | KeyModifiers::ALT) =>
        {
            Some(c)
        }
        _ => None,
    }
}

/// Applies `message` to `app`; returns what the event loop must do.
pub fn update(app: &mut App, message: Message) -> Vec<Effect> {
    match message {
        Message::Key(key) => {
            // Which handler gets the key, decided before any of them borrows the app.
            enum Handler {
                Editor,
                Find,
                Findings,
                Help(usize),
                Ask(Question),
                Browse,
            }
            let handler = match &app.mode {
                Mode::Editing(_) => Handler::Editor,
                Mode::Find(_) => Handler::Find,
                Mode::Findings(_) => Handler::Findings,
                Mode::Help { scroll } => Handler::Help(*scroll),
                Mode::Ask(question) => Handler::Ask(*question),
                Mode::Browse => Handler::Browse,
            };
            match handler {
                Handler::Editor => return app.editor_key(&key),
                Handler::Find => app.find_key(&key),
                Handler::Findings => app.findings_key(&key),
                Handler::Help(scroll) => app.help_key(scroll, &key),
                Handler::Ask(question) => return app.answer(question, &key),
                Handler::Browse => {
                    app.message = None;
                    if app.focus == Focus::Links
                        && let Some(effects) = app.links_action(action_for(Scope::Links, &key))
                    {
                        return effects;
                    }
                    if let Some(action) = action_for(Scope::Sheet, &key) {
                        return app.sheet_action(action);
                    }
                }
            }
        }
        Message::Mouse(event) => app.mouse(event),
        Message::Resize(width, height) => {
            app.viewport = Rect::new(0, 0, width, height);
            app.keep_selection_visible();
        }
        Message::Saved(fingerprint) => {
            app.disk = Some(fingerprint);
            app.granted = SaveGrants::default();
            app.history.mark_saved();
            app.say(format!("{} {}", text::SAVED, app.file_name));
            let mut effects = vec![Effect::DropRecovery];
            if app.quit_after_save {
                effects.push(Effect::Quit);
            }
            return effects;
        }
        Message::SaveRefused => app.mode = Mode::Ask(Question::Overwrite),
        Message::SaveReadOnly => app.mode = Mode::Ask(Question::ReplaceReadOnly),
        Message::SaveFailed(error) => {
            app.quit_after_save = false;
            app.granted = SaveGrants::default();
            app.say(error);
        }
        Message::RecoveryFailed(said) | Message::Notice(said) => app.say(said),
        Message::Linted {
            revision,
            text,
            linted,
        } => {
            app.live.set_lints(revision, &text, &linted.lints);
            app.live.set_fix_helps(revision, &text, &linted.fixed);
        }
    }
    Vec::new()
}

/// Carries out [`Effect::Lint`]: the audit lints (`heft audit`'s, and
/// `heft check`'s warnings) over a fresh evaluation of `text`, with every
/// fix verified ([`crate::pipeline::lint`]).
pub fn lint(revision: u64, text: String) -> Message {
    lint_with_files(revision, text, std::sync::Arc::default())
}

/// [`lint`] for a sheet whose tables read `files`.
pub fn lint_with_files(
    revision: u64,
    text: String,
    files: std::sync::Arc<crate::sheet::SheetFiles>,
) -> Message {
    let linted = crate::pipeline::lint_with_files(&text, files);
    Message::Linted {
        revision,
        text,
        linted,
    }
}
