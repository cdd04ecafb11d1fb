//! The notebook's state and its update function. No I/O happens here:
//! `update` turns a [`Message`] into a new state and a list of [`Effect`]s
//! (save, keep a recovery copy, quit) that the event loop carries out and
//! answers with further messages.

use std::collections::VecDeque;
use std::path::{Path, PathBuf};

use ratatui::crossterm::event::{KeyEvent, KeyModifiers, MouseButton, MouseEvent, MouseEventKind};
use ratatui::layout::{Position, Rect};
use tui_input::{Input, InputRequest};

use super::files::{Fingerprint, KeptCopy, Opened};
use super::keys::{Action, Scope, action_for};
use super::layout::{Areas, areas};
use super::strings as text;
use super::theme::Theme;
use crate::eval::{
    CellField, EditError, FieldEditor, Finding, LiveSheet, Row, Splice, WrittenLine,
};
use crate::sheet::CellId;
use crate::syntax;
use crate::units::DisplaySystem;

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

    fn next(self) -> Self {
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

/// What an edit is changing.
#[derive(Clone, Debug)]
pub enum EditTarget {
    /// One field of a cell.
    Field(CellId, Box<FieldEditor>),
    /// A one-line statement's whole line.
    Line,
    /// New lines, inserted for this edit.
    NewLine,
    /// A block's lines, from its first line to its `end`.
    Block,
    /// The `+++` header block, or a new one.
    Header,
}

/// An edit in progress over some consecutive lines of the file: one line,
/// a block's lines, or the header. Every keystroke is applied to the sheet
/// at once, so results update while typing; Esc puts the lines back as
/// they were.
#[derive(Clone, Debug)]
pub struct EditSession {
    /// What is edited.
    pub target: EditTarget,
    /// The first 0-based line of the file the edit covers.
    pub first: usize,
    /// The lines as they were when the edit began (none for new lines).
    pub original: Vec<WrittenLine>,
    /// How many lines of the file the edit covers now.
    pub n_lines: usize,
    /// The lines above the cursor's, in order.
    pub above: Vec<String>,
    /// The line with the cursor (for a field, the field's text).
    pub input: Input,
    /// The lines below the cursor's, in order.
    pub below: VecDeque<String>,
    /// What the prompt says.
    pub prompt: &'static str,
}

impl EditSession {
    /// The lines as typed so far (for a field, its line with the field put in).
    pub fn texts(&self) -> Vec<String> {
        match &self.target {
            EditTarget::Field(_, editor) => vec![editor.line_with(self.input.value())],
            _ => self.lines().map(str::to_string).collect(),
        }
    }

    /// The lines the editor shows, in order.
    pub fn lines(&self) -> impl Iterator<Item = &str> {
        self.above
            .iter()
            .map(String::as_str)
            .chain(std::iter::once(self.input.value()))
            .chain(self.below.iter().map(String::as_str))
    }

    /// How many lines the editor shows.
    pub fn n_shown(&self) -> usize {
        self.above.len() + 1 + self.below.len()
    }

    /// The 0-based line of the editor the cursor is on.
    pub fn cursor_row(&self) -> usize {
        self.above.len()
    }

    /// Whether this is an editor of several lines, where Enter breaks the
    /// line rather than keeping the edit: for a block or the header, once
    /// a line was broken, and for a line typed as a block's first line.
    pub fn is_multiline(&self) -> bool {
        match self.target {
            EditTarget::Block | EditTarget::Header => true,
            EditTarget::Field(..) => false,
            EditTarget::Line | EditTarget::NewLine => {
                self.n_shown() > 1 || syntax::is_block_head(self.input.value())
            }
        }
    }

    fn is_changed(&self) -> bool {
        let texts = self.texts();
        texts.len() != self.original.len()
            || texts
                .iter()
                .zip(&self.original)
                .any(|(typed, line)| *typed != line.text)
    }

    /// The byte where the cursor is in the cursor's line.
    fn cursor_byte(&self) -> usize {
        let value = self.input.value();
        value
            .char_indices()
            .nth(self.input.cursor())
            .map_or(value.len(), |(at, _)| at)
    }

    fn at_line_end(&self) -> bool {
        self.input.cursor() == self.input.value().chars().count()
    }

    /// Enter in a block: the cursor's line is cut in two at the cursor.
    fn break_line(&mut self) {
        let value = self.input.value();
        let (left, right) = value.split_at(self.cursor_byte());
        let (left, right) = (left.to_string(), right.to_string());
        self.above.push(left);
        self.input = Input::new(right).with_cursor(0);
    }

    /// The cursor to the line above, keeping its column; on the first line,
    /// to its start.
    fn line_up(&mut self) {
        let column = self.input.cursor();
        match self.above.pop() {
            Some(line) => {
                let current =
                    std::mem::replace(&mut self.input, Input::new(line).with_cursor(column));
                self.below.push_front(current.value().to_string());
            }
            None => self.input = self.input.clone().with_cursor(0),
        }
    }

    /// The cursor to the line below, keeping its column; on the last line,
    /// to its end.
    fn line_down(&mut self) {
        let column = self.input.cursor();
        match self.below.pop_front() {
            Some(line) => {
                let current =
                    std::mem::replace(&mut self.input, Input::new(line).with_cursor(column));
                self.above.push(current.value().to_string());
            }
            None => self.input = Input::new(self.input.value().to_string()),
        }
    }

    /// Backspace at the start of a line: it joins the line above.
    fn join_above(&mut self) {
        if let Some(line) = self.above.pop() {
            let column = line.chars().count();
            self.input = Input::new(line + self.input.value()).with_cursor(column);
        }
    }

    /// Delete at the end of a line: the line below joins it.
    fn join_below(&mut self) {
        if let Some(line) = self.below.pop_front() {
            let column = self.input.cursor();
            self.input = Input::new(self.input.value().to_string() + &line).with_cursor(column);
        }
    }
}

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
    fn record(&mut self, change: Splice) {
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

/// What the user allowed the save under way to do, by answering a question.
#[derive(Clone, Copy, Debug, Default)]
struct SaveGrants {
    /// Write over a file that changed on disk.
    overwrite: bool,
    /// Write over a read-only file.
    read_only: bool,
}

/// Rows moved by one turn of the mouse wheel.
const WHEEL_ROWS: usize = 3;

impl App {
    /// The notebook on an opened sheet, for a terminal of `viewport` size.
    pub fn new(opened: Opened, viewport: Rect, theme: Theme) -> App {
        let live = LiveSheet::open(&opened.text);
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
            history: History {
                saved: Some(0),
                ..History::default()
            },
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
        typing || self.history.saved != Some(self.history.done)
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

    fn select(&mut self, row: usize) {
        self.selected = row.min(self.n_rows().saturating_sub(1));
        self.link_selected = 0;
        self.keep_selection_visible();
    }

    fn keep_selection_visible(&mut self) {
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
    fn select_line(&mut self, line: usize) {
        let statement = self
            .live
            .statement_at_line(line)
            .or_else(|| self.live.document().statements_before(line).checked_sub(1));
        match statement {
            Some(statement) => self.select_statement(statement),
            None => self.select(0),
        }
    }

    fn jump_to_statement(&mut self, statement: usize) {
        if let Some(current) = self.selected_statement() {
            self.jumps.push(current);
        }
        self.focus = Focus::Sheet;
        self.select_statement(statement);
    }

    /// The 0-based line a new line goes to: below the selected row (after
    /// a block's `end`).
    fn insertion_line(&self) -> usize {
        let below = self
            .selected_statement()
            .map_or(self.live.document().n_lines(), |s| {
                self.live.statement_lines(s).end
            });
        below.max(self.live.document().editable_from())
    }

    /// Starts editing the `n_lines` lines of the file from `first`, showing
    /// `shown` in the editor with the cursor on line `row` at `column`
    /// (characters; `None`: the line's end).
    fn start_edit(
        &mut self,
        target: EditTarget,
        first: usize,
        n_lines: usize,
        shown: Vec<String>,
        (row, column): (usize, Option<usize>),
        prompt: &'static str,
    ) {
        let original = self.live.document().written_lines(first..first + n_lines);
        let mut below: VecDeque<String> = shown.into();
        let row = row.min(below.len().saturating_sub(1));
        let above: Vec<String> = below.drain(..row).collect();
        let line = below.pop_front().unwrap_or_default();
        let input = match column {
            Some(column) => Input::new(line).with_cursor(column),
            None => Input::new(line),
        };
        let session = EditSession {
            target,
            first,
            original,
            n_lines,
            above,
            input,
            below,
            prompt,
        };
        self.message = None;
        self.mode = Mode::Editing(Box::new(session));
        if n_lines == 0 {
            // New lines: they go into the file at once, as typed.
            self.apply_typing();
        }
    }

    fn edit_field(&mut self, field: CellField) {
        let Some(statement) = self.selected_statement() else {
            return;
        };
        let Row::Cell(cell) = self.live.row(statement) else {
            self.say(text::NOT_A_CELL);
            return;
        };
        let Some(editor) = self.live.field_editor(cell.id, field) else {
            self.edit_line();
            return;
        };
        let initial = editor.value();
        let line = self.live.statement_line(statement);
        let prompt = match field {
            CellField::Formula => text::EDIT_FORMULA,
            CellField::Unit => text::EDIT_UNIT,
            CellField::Description => text::EDIT_DESCRIPTION,
            CellField::Name => text::EDIT_NAME,
        };
        self.start_edit(
            EditTarget::Field(cell.id, Box::new(editor)),
            line,
            1,
            vec![initial],
            (0, None),
            prompt,
        );
    }

    /// Edits the selected statement as text: its line, or all of a block's
    /// lines.
    fn edit_line(&mut self) {
        let Some(statement) = self.selected_statement() else {
            return;
        };
        let lines = self.live.statement_lines(statement);
        let shown: Vec<String> = self
            .live
            .document()
            .written_lines(lines.clone())
            .into_iter()
            .map(|line| line.text)
            .collect();
        let (target, prompt) = if lines.len() > 1 {
            (EditTarget::Block, text::EDIT_BLOCK)
        } else {
            (EditTarget::Line, text::EDIT_LINE)
        };
        self.start_edit(target, lines.start, lines.len(), shown, (0, None), prompt);
    }

    /// Edits the `+++` header as a block of lines; a sheet without one gets
    /// [`text::NEW_HEADER`] at its top, to fill in. The cursor starts in
    /// the title.
    fn edit_header(&mut self) {
        let (first, n_lines, shown): (usize, usize, Vec<String>) =
            match self.live.document().header_lines() {
                Some(lines) => {
                    let shown = self
                        .live
                        .document()
                        .written_lines(lines.clone())
                        .into_iter()
                        .map(|line| line.text)
                        .collect();
                    (lines.start, lines.len(), shown)
                }
                None => (
                    0,
                    0,
                    text::NEW_HEADER
                        .iter()
                        .map(|line| line.to_string())
                        .collect(),
                ),
            };
        let cursor = title_cursor(&shown);
        self.start_edit(
            EditTarget::Header,
            first,
            n_lines,
            shown,
            cursor,
            text::EDIT_HEADER,
        );
    }

    fn add_line(&mut self, initial: &str, prompt: &'static str) {
        let line = self.insertion_line();
        self.start_edit(
            EditTarget::NewLine,
            line,
            0,
            vec![initial.to_string()],
            (0, None),
            prompt,
        );
    }

    /// Applies a change to the sheet. A header edit that changes the
    /// significant figures shows the new number.
    fn apply_splice(&mut self, splice: &Splice) -> Result<(), EditError> {
        let sig_figs = self.live.header().sig_figs;
        self.live.apply(splice)?;
        if self.live.header().sig_figs != sig_figs {
            self.sig_figs = self.live.header().sig_figs;
        }
        Ok(())
    }

    /// Applies the text typed so far to the sheet.
    fn apply_typing(&mut self) {
        let Mode::Editing(session) = &self.mode else {
            return;
        };
        let (first, n_lines, texts) = (session.first, session.n_lines, session.texts());
        let lines: Vec<&str> = texts.iter().map(String::as_str).collect();
        let result = self
            .live
            .document()
            .plan(first, n_lines, &lines)
            .and_then(|splice| self.apply_splice(&splice));
        match result {
            Ok(()) => {
                if let Mode::Editing(session) = &mut self.mode {
                    session.n_lines = texts.len();
                }
            }
            Err(error) => self.say(error.to_string()),
        }
        self.select_line(first);
    }

    fn finish_edit(&mut self, keep: bool) -> Vec<Effect> {
        let Mode::Editing(session) = std::mem::replace(&mut self.mode, Mode::Browse) else {
            return Vec::new();
        };
        let first = session.first;
        let current = self
            .live
            .document()
            .written_lines(first..first + session.n_lines);
        let blank = current.iter().all(|line| line.text.trim().is_empty());
        // A new line, a block or a header kept with nothing in it goes;
        // a one-line statement kept blank stays a blank line.
        let removes =
            keep && blank && !matches!(session.target, EditTarget::Field(..) | EditTarget::Line);
        let untouched_new_header = matches!(session.target, EditTarget::Header)
            && session.original.is_empty()
            && current
                .iter()
                .map(|line| line.text.as_str())
                .eq(text::NEW_HEADER.iter().copied());
        let kept = if !keep || untouched_new_header {
            session.original.clone()
        } else if removes {
            Vec::new()
        } else {
            current.clone()
        };
        let settle = Splice {
            first,
            before: current,
            after: kept.clone(),
        }
        .trimmed();
        let result = self.apply_splice(&settle);
        let change = Splice {
            first,
            before: session.original,
            after: kept,
        }
        .trimmed();
        match result {
            Err(error) => self.say(error.to_string()),
            Ok(()) if !keep => {}
            Ok(()) if untouched_new_header => self.say(text::NO_HEADER_ADDED),
            Ok(()) => {
                let one_line = change.after.len() == 1
                    && !matches!(session.target, EditTarget::Header)
                    && !change.after[0].text.trim().is_empty();
                if removes && !change.before.is_empty() {
                    self.say(text::deleted_lines(change.before.len()));
                } else if one_line && self.live.statement_at_line(change.first).is_none() {
                    self.say(text::COMMENT_ADDED);
                }
                if !change.is_empty() {
                    self.history.record(change);
                }
            }
        }
        self.select_line(first.min(self.live.document().n_lines().saturating_sub(1)));
        self.recovery_effects()
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

    /// Deletes the selected statement: its line, or all of a block's lines.
    fn delete_selected(&mut self) -> Vec<Effect> {
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

    fn undo(&mut self) -> Vec<Effect> {
        let Some(change) = self.history.last_change().cloned() else {
            self.say(text::NOTHING_TO_UNDO);
            return Vec::new();
        };
        let result = self.apply_splice(&change.inverse());
        self.after_history_step(result, change.first, -1, text::UNDONE)
    }

    fn redo(&mut self) -> Vec<Effect> {
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

    /// Saves with what the user allowed so far (`granted`).
    fn save(&mut self) -> Vec<Effect> {
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

    fn quit(&mut self) -> Vec<Effect> {
        if self.is_dirty() {
            self.mode = Mode::Ask(Question::QuitUnsaved);
            Vec::new()
        } else {
            vec![Effect::DropRecovery, Effect::Quit]
        }
    }

    fn find_matches(&self, query: &str) -> Vec<CellId> {
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

    fn sheet_action(&mut self, action: Action) -> Vec<Effect> {
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
    fn links_action(&mut self, action: Option<Action>) -> Option<Vec<Effect>> {
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

    fn editor_key(&mut self, key: &KeyEvent) -> Vec<Effect> {
        let action = action_for(Scope::Editor, key);
        let Mode::Editing(session) = &mut self.mode else {
            return Vec::new();
        };
        let at_start = session.input.cursor() == 0;
        let at_end = session.at_line_end();
        let request = match action {
            Some(Action::KeepAll) => return self.finish_edit(true),
            Some(Action::Keep) if !session.is_multiline() => return self.finish_edit(true),
            Some(Action::Cancel) => return self.finish_edit(false),
            Some(Action::Keep) => {
                session.break_line();
                self.apply_typing();
                return vec![self.lint_request()];
            }
            Some(Action::LineUp) => {
                session.line_up();
                return Vec::new();
            }
            Some(Action::LineDown) => {
                session.line_down();
                return Vec::new();
            }
            Some(Action::CursorLeft) if at_start && !session.above.is_empty() => {
                session.line_up();
                session.input = Input::new(session.input.value().to_string());
                return Vec::new();
            }
            Some(Action::CursorRight) if at_end && !session.below.is_empty() => {
                session.line_down();
                session.input = session.input.clone().with_cursor(0);
                return Vec::new();
            }
            Some(Action::DeleteBack) if at_start && !session.above.is_empty() => {
                session.join_above();
                self.apply_typing();
                return vec![self.lint_request()];
            }
            Some(Action::DeleteForward) if at_end && !session.below.is_empty() => {
                session.join_below();
                self.apply_typing();
                return vec![self.lint_request()];
            }
            Some(Action::CursorLeft) => InputRequest::GoToPrevChar,
            Some(Action::CursorRight) => InputRequest::GoToNextChar,
            Some(Action::CursorStart) => InputRequest::GoToStart,
            Some(Action::CursorEnd) => InputRequest::GoToEnd,
            Some(Action::DeleteBack) => InputRequest::DeletePrevChar,
            Some(Action::DeleteForward) => InputRequest::DeleteNextChar,
            Some(Action::ClearField) => InputRequest::DeleteLine,
            _ => match typed_char(key) {
                Some(c) => InputRequest::InsertChar(c),
                None => return Vec::new(),
            },
        };
        let changed = session
            .input
            .handle(request)
            .is_some_and(|state| state.value);
        if changed {
            self.apply_typing();
            return vec![self.lint_request(), Effect::KeepRecoverySoon];
        }
        Vec::new()
    }

    fn find_key(&mut self, key: &KeyEvent) {
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

    fn findings_key(&mut self, key: &KeyEvent) {
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

    fn answer(&mut self, question: Question, key: &KeyEvent) -> Vec<Effect> {
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
        self.live = LiveSheet::open(&kept.text);
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

    fn mouse(&mut self, event: MouseEvent) {
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
                    let hotspots = super::view::link_hotspots(self, areas.detail);
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

/// Where the cursor starts in a header: in the title's value (before its
/// closing quote), else at the end of the line after the opening `+++`.
fn title_cursor(lines: &[String]) -> (usize, Option<usize>) {
    let title = lines
        .iter()
        .position(|line| line.trim_start().starts_with("title"));
    match title {
        Some(row) => {
            let line = lines[row].trim_end();
            let length = line.chars().count();
            let column = if line.ends_with('"') && length > 0 {
                length - 1
            } else {
                length
            };
            (row, Some(column))
        }
        None => (1, None),
    }
}

/// Most matches the find overlay lists.
const MAX_MATCHES: usize = 200;

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
                Handler::Help(scroll) => match action_for(Scope::Help, &key) {
                    Some(Action::Up) => {
                        app.mode = Mode::Help {
                            scroll: scroll.saturating_sub(1),
                        }
                    }
                    Some(Action::Down) => {
                        let overlay = app.areas().overlay;
                        let inner_width = usize::from(overlay.width.saturating_sub(2));
                        let n_lines = super::view::help_lines(app.theme, inner_width).len();
                        let last =
                            n_lines.saturating_sub(usize::from(overlay.height.saturating_sub(2)));
                        app.mode = Mode::Help {
                            scroll: (scroll + 1).min(last),
                        }
                    }
                    Some(Action::Close) => app.mode = Mode::Browse,
                    _ => {}
                },
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
            app.history.saved = Some(app.history.done);
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
    let linted = crate::pipeline::lint(&text);
    Message::Linted {
        revision,
        text,
        linted,
    }
}
