//! Editing: the [`EditSession`] over some consecutive lines of the file
//! (a field, a line, a block, the header, or new lines), its multi-line
//! editor, and the notebook's steps that start, apply, and keep or cancel
//! an edit.

use std::collections::VecDeque;
use std::ops::Range;

use ratatui::crossterm::event::KeyEvent;
use tui_input::{Input, InputRequest};

use super::super::keys::{Action, Scope, action_for};
use super::super::strings as text;
use super::{App, Effect, Mode, typed_char};
use crate::live::{CellField, FieldEditor, Row, Splice, WrittenLine};
use crate::sheet::CellId;

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
                self.n_shown() > 1 || crate::sheet::edit::opens_block(self.input.value())
            }
        }
    }

    pub(super) fn is_changed(&self) -> bool {
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

    /// The cursor to `line`, keeping its column; returns the line it left.
    fn cursor_to(&mut self, line: String) -> String {
        let column = self.input.cursor();
        let left = std::mem::replace(&mut self.input, Input::new(line).with_cursor(column));
        left.value().to_string()
    }

    /// The cursor to the line above, keeping its column; on the first line,
    /// to its start.
    fn line_up(&mut self) {
        match self.above.pop() {
            Some(line) => {
                let left = self.cursor_to(line);
                self.below.push_front(left);
            }
            None => self.input = self.input.clone().with_cursor(0),
        }
    }

    /// The cursor to the line below, keeping its column; on the last line,
    /// to its end.
    fn line_down(&mut self) {
        match self.below.pop_front() {
            Some(line) => {
                let left = self.cursor_to(line);
                self.above.push(left);
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

impl App {
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

    pub(super) fn edit_field(&mut self, field: CellField) {
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

    /// The text of the file's `lines`, as written.
    fn line_texts(&self, lines: Range<usize>) -> Vec<String> {
        let written = self.live.document().written_lines(lines);
        written.into_iter().map(|line| line.text).collect()
    }

    /// Edits the selected statement as text: its line, or all of a block's
    /// lines.
    pub(super) fn edit_line(&mut self) {
        let Some(statement) = self.selected_statement() else {
            return;
        };
        let lines = self.live.statement_lines(statement);
        let shown = self.line_texts(lines.clone());
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
    pub(super) fn edit_header(&mut self) {
        let (first, n_lines, shown): (usize, usize, Vec<String>) =
            match self.live.document().header_lines() {
                Some(lines) => (lines.start, lines.len(), self.line_texts(lines.clone())),
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

    pub(super) fn add_line(&mut self, initial: &str, prompt: &'static str) {
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

    pub(super) fn editor_key(&mut self, key: &KeyEvent) -> Vec<Effect> {
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
