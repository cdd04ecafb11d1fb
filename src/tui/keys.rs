//! Every key binding, in one table: the help overlay is drawn from it, and
//! `update` looks keys up in it, so the two never disagree.

use ratatui::crossterm::event::{KeyCode, KeyEvent, KeyModifiers};

/// Where a key applies: the focused pane or overlay gets a key first.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Scope {
    /// The sheet table.
    Sheet,
    /// The list of cells used and using, in the detail pane.
    Links,
    /// The one-line editor.
    Editor,
    /// The find overlay.
    Find,
    /// The findings overlay.
    Findings,
    /// The help overlay.
    Help,
    /// A question at the bottom of the screen.
    Question,
}

impl Scope {
    /// The heading of this scope in the help overlay.
    pub fn title(self) -> &'static str {
        match self {
            Scope::Sheet => "in the sheet",
            Scope::Links => "in the detail pane's links (Tab)",
            Scope::Editor => "while editing (a line, a block's lines or the header)",
            Scope::Find => "finding a cell",
            Scope::Findings => "in the findings list",
            Scope::Help => "in this help",
            Scope::Question => "when asked a question",
        }
    }

    /// Every scope, in help order.
    pub const ALL: [Scope; 7] = [
        Scope::Sheet,
        Scope::Links,
        Scope::Editor,
        Scope::Find,
        Scope::Findings,
        Scope::Help,
        Scope::Question,
    ];
}

/// What a key does.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Action {
    /// Select the row above.
    Up,
    /// Select the row below.
    Down,
    /// Up by a screenful.
    PageUp,
    /// Down by a screenful.
    PageDown,
    /// The first row.
    First,
    /// The last row.
    Last,
    /// Edit what matters most on the row: a cell's formula, else the line.
    EditMain,
    /// Edit a cell's formula.
    EditFormula,
    /// Edit a cell's unit.
    EditUnit,
    /// Edit a cell's description.
    EditDescription,
    /// Rename a cell.
    EditName,
    /// Edit the whole line as text, or a block's lines.
    EditLine,
    /// Edit the `+++` header (or add one).
    EditHeader,
    /// Add a cell after the selected row.
    AddCell,
    /// Add a heading after the selected row.
    AddHeading,
    /// Add a note after the selected row.
    AddNote,
    /// Add a check after the selected row.
    AddCheck,
    /// Delete the selected row's line.
    Delete,
    /// Undo the last edit.
    Undo,
    /// Redo what was undone.
    Redo,
    /// Show values as written, all in SI, or all in FPS.
    CycleUnits,
    /// One more significant figure.
    MoreFigures,
    /// One fewer significant figure.
    FewerFigures,
    /// Find a cell by name.
    Find,
    /// List every finding.
    Findings,
    /// Show this help.
    Help,
    /// Move into the detail pane's links.
    FocusLinks,
    /// Go back to where the last jump came from.
    JumpBack,
    /// Save the file.
    Save,
    /// Leave the notebook.
    Quit,
    /// Go to the selected link, match or finding.
    Jump,
    /// Close the overlay or leave the links.
    Close,
    /// Keep the edit; in a block or the header, break the line.
    Keep,
    /// Keep the edit, a block's or the header's too.
    KeepAll,
    /// Undo the edit in progress and close the editor.
    Cancel,
    /// Cursor one character left.
    CursorLeft,
    /// Cursor one character right.
    CursorRight,
    /// Cursor to the start.
    CursorStart,
    /// Cursor to the end.
    CursorEnd,
    /// Cursor to the line above (on the first line, to its start).
    LineUp,
    /// Cursor to the line below (on the last line, to its end).
    LineDown,
    /// Delete the character before the cursor.
    DeleteBack,
    /// Delete the character under the cursor.
    DeleteForward,
    /// Clear the whole field.
    ClearField,
    /// Answer: save, then quit.
    AnswerSave,
    /// Answer: discard (quit without saving, or drop the kept copy).
    AnswerDiscard,
    /// Answer: overwrite the file that changed on disk.
    AnswerOverwrite,
    /// Answer: restore the kept copy.
    AnswerRestore,
}

/// A key: its code and the modifiers that must be held (Shift is ignored
/// for characters, since it is what makes them).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Key {
    /// The key.
    pub code: KeyCode,
    /// The modifiers.
    pub modifiers: KeyModifiers,
}

const fn plain(code: KeyCode) -> Key {
    Key {
        code,
        modifiers: KeyModifiers::NONE,
    }
}

const fn ch(c: char) -> Key {
    plain(KeyCode::Char(c))
}

const fn ctrl(c: char) -> Key {
    Key {
        code: KeyCode::Char(c),
        modifiers: KeyModifiers::CONTROL,
    }
}

const fn alt(code: KeyCode) -> Key {
    Key {
        code,
        modifiers: KeyModifiers::ALT,
    }
}

/// One line of the table.
#[derive(Clone, Copy, Debug)]
pub struct Binding {
    /// Where it applies.
    pub scope: Scope,
    /// The keys (the first is shown first in help).
    pub keys: &'static [Key],
    /// What it does.
    pub action: Action,
    /// What help says about it.
    pub help: &'static str,
}

const fn bind(scope: Scope, keys: &'static [Key], action: Action, help: &'static str) -> Binding {
    Binding {
        scope,
        keys,
        action,
        help,
    }
}

use Action as A;
use KeyCode as K;
use Scope as S;

/// Every binding.
pub const BINDINGS: &[Binding] = &[
    bind(S::Sheet, &[plain(K::Up)], A::Up, "previous row"),
    bind(S::Sheet, &[plain(K::Down)], A::Down, "next row"),
    bind(S::Sheet, &[plain(K::PageUp)], A::PageUp, "a screen up"),
    bind(
        S::Sheet,
        &[plain(K::PageDown)],
        A::PageDown,
        "a screen down",
    ),
    bind(S::Sheet, &[plain(K::Home)], A::First, "first row"),
    bind(S::Sheet, &[plain(K::End)], A::Last, "last row"),
    bind(
        S::Sheet,
        &[plain(K::Enter)],
        A::EditMain,
        "edit: a cell's formula, else the line or the block",
    ),
    bind(S::Sheet, &[ch('=')], A::EditFormula, "edit the formula"),
    bind(S::Sheet, &[ch('[')], A::EditUnit, "edit the unit"),
    bind(
        S::Sheet,
        &[ch('"')],
        A::EditDescription,
        "edit the description",
    ),
    bind(
        S::Sheet,
        &[ch('n')],
        A::EditName,
        "rename the cell (uses are not renamed)",
    ),
    bind(
        S::Sheet,
        &[ch('e')],
        A::EditLine,
        "edit the whole line, or a block's lines, as text",
    ),
    bind(
        S::Sheet,
        &[ch('T')],
        A::EditHeader,
        "edit the +++ header: title, revision… (adds one)",
    ),
    bind(
        S::Sheet,
        &[ch('a')],
        A::AddCell,
        "add a cell below (after a block's end)",
    ),
    bind(S::Sheet, &[ch('h')], A::AddHeading, "add a heading below"),
    bind(S::Sheet, &[ch('t')], A::AddNote, "add a note (text) below"),
    bind(S::Sheet, &[ch('c')], A::AddCheck, "add a check below"),
    bind(
        S::Sheet,
        &[ch('x'), plain(K::Delete)],
        A::Delete,
        "delete the row (a block: all of its lines)",
    ),
    bind(S::Sheet, &[ch('<')], A::Undo, "undo"),
    bind(S::Sheet, &[ch('>')], A::Redo, "redo"),
    bind(
        S::Sheet,
        &[ch('u')],
        A::CycleUnits,
        "units: as written → all SI → all FPS",
    ),
    bind(
        S::Sheet,
        &[ch('+')],
        A::MoreFigures,
        "one more significant figure",
    ),
    bind(
        S::Sheet,
        &[ch('-')],
        A::FewerFigures,
        "one fewer significant figure",
    ),
    bind(S::Sheet, &[ch('f')], A::Find, "find a cell by name"),
    bind(S::Sheet, &[ch('!')], A::Findings, "list every finding"),
    bind(
        S::Sheet,
        &[plain(K::Tab)],
        A::FocusLinks,
        "go to the links: uses, used by",
    ),
    bind(
        S::Sheet,
        &[plain(K::Backspace)],
        A::JumpBack,
        "back to where the last jump came from",
    ),
    bind(S::Sheet, &[ch('s')], A::Save, "save"),
    bind(S::Sheet, &[ch('?'), plain(K::F(1))], A::Help, "these keys"),
    bind(
        S::Sheet,
        &[ch('q')],
        A::Quit,
        "quit (asks if there are unsaved changes)",
    ),
    bind(S::Links, &[plain(K::Up)], A::Up, "previous link"),
    bind(S::Links, &[plain(K::Down)], A::Down, "next link"),
    bind(
        S::Links,
        &[plain(K::Enter)],
        A::Jump,
        "jump to the linked cell or check",
    ),
    bind(
        S::Links,
        &[plain(K::Tab), plain(K::Esc)],
        A::Close,
        "back to the sheet",
    ),
    bind(
        S::Links,
        &[plain(K::Backspace)],
        A::JumpBack,
        "back to where the last jump came from",
    ),
    bind(
        S::Editor,
        &[plain(K::Enter)],
        A::Keep,
        "keep the edit; in a block or header: new line",
    ),
    bind(
        S::Editor,
        &[ctrl('s'), alt(K::Enter)],
        A::KeepAll,
        "keep the edit, a block's or the header's too",
    ),
    bind(
        S::Editor,
        &[plain(K::Esc)],
        A::Cancel,
        "undo this edit and close",
    ),
    bind(
        S::Editor,
        &[plain(K::Up)],
        A::LineUp,
        "line above (on the first line: its start)",
    ),
    bind(
        S::Editor,
        &[plain(K::Down)],
        A::LineDown,
        "line below (on the last line: its end)",
    ),
    bind(S::Editor, &[plain(K::Left)], A::CursorLeft, "cursor left"),
    bind(
        S::Editor,
        &[plain(K::Right)],
        A::CursorRight,
        "cursor right",
    ),
    bind(
        S::Editor,
        &[plain(K::Home), ctrl('a')],
        A::CursorStart,
        "cursor to the start",
    ),
    bind(
        S::Editor,
        &[plain(K::End), ctrl('e')],
        A::CursorEnd,
        "cursor to the end",
    ),
    bind(
        S::Editor,
        &[plain(K::Backspace)],
        A::DeleteBack,
        "delete before the cursor, or join the line above",
    ),
    bind(
        S::Editor,
        &[plain(K::Delete)],
        A::DeleteForward,
        "delete under the cursor, or join the line below",
    ),
    bind(
        S::Editor,
        &[ctrl('u')],
        A::ClearField,
        "clear the field (in a block: the line)",
    ),
    bind(S::Find, &[plain(K::Up)], A::Up, "previous match"),
    bind(S::Find, &[plain(K::Down)], A::Down, "next match"),
    bind(S::Find, &[plain(K::Enter)], A::Jump, "go to the match"),
    bind(S::Find, &[plain(K::Esc)], A::Close, "close"),
    bind(
        S::Find,
        &[plain(K::Backspace)],
        A::DeleteBack,
        "delete a letter",
    ),
    bind(S::Findings, &[plain(K::Up)], A::Up, "previous finding"),
    bind(S::Findings, &[plain(K::Down)], A::Down, "next finding"),
    bind(S::Findings, &[plain(K::PageUp)], A::PageUp, "a screen up"),
    bind(
        S::Findings,
        &[plain(K::PageDown)],
        A::PageDown,
        "a screen down",
    ),
    bind(S::Findings, &[plain(K::Enter)], A::Jump, "go to the line"),
    bind(S::Findings, &[plain(K::Esc), ch('!')], A::Close, "close"),
    bind(S::Help, &[plain(K::Up)], A::Up, "scroll up"),
    bind(S::Help, &[plain(K::Down)], A::Down, "scroll down"),
    bind(
        S::Help,
        &[plain(K::Esc), ch('?'), ch('q')],
        A::Close,
        "close",
    ),
    bind(
        S::Question,
        &[ch('s')],
        A::AnswerSave,
        "unsaved changes on quit: save, then quit",
    ),
    bind(
        S::Question,
        &[ch('d')],
        A::AnswerDiscard,
        "quit without saving / drop the kept copy",
    ),
    bind(
        S::Question,
        &[ch('o')],
        A::AnswerOverwrite,
        "file changed on disk or read-only: save over it",
    ),
    bind(
        S::Question,
        &[ch('r')],
        A::AnswerRestore,
        "restore work kept from an earlier session",
    ),
    bind(
        S::Question,
        &[plain(K::Esc)],
        A::Close,
        "not now (the kept copy must be restored or dropped)",
    ),
];

/// The keys the bottom line suggests, most used first, with one word each.
pub const HINTS: &[(Action, &str)] = &[
    (A::EditMain, "edit"),
    (A::AddCell, "add"),
    (A::Delete, "delete"),
    (A::Undo, "undo"),
    (A::Save, "save"),
    (A::Find, "find"),
    (A::Findings, "findings"),
    (A::CycleUnits, "units"),
    (A::Help, "keys"),
    (A::Quit, "quit"),
];

impl Key {
    /// Whether a key event is this key.
    pub fn matches(&self, event: &KeyEvent) -> bool {
        match event.code {
            KeyCode::Char(c) => {
                self.code == KeyCode::Char(c)
                    && event.modifiers.difference(KeyModifiers::SHIFT) == self.modifiers
            }
            code => self.code == code && event.modifiers == self.modifiers,
        }
    }

    /// The key as help shows it.
    pub fn label(&self) -> String {
        let name = match self.code {
            KeyCode::Up => "↑".to_string(),
            KeyCode::Down => "↓".to_string(),
            KeyCode::Left => "←".to_string(),
            KeyCode::Right => "→".to_string(),
            KeyCode::PageUp => "PgUp".to_string(),
            KeyCode::PageDown => "PgDn".to_string(),
            KeyCode::Home => "Home".to_string(),
            KeyCode::End => "End".to_string(),
            KeyCode::Enter => "Enter".to_string(),
            KeyCode::Esc => "Esc".to_string(),
            KeyCode::Tab => "Tab".to_string(),
            KeyCode::Backspace => "Backspace".to_string(),
            KeyCode::Delete => "Del".to_string(),
            KeyCode::F(n) => format!("F{n}"),
            KeyCode::Char(c) => c.to_string(),
            other => format!("{other:?}"),
        };
        // A letter held with Ctrl or Alt is written as on the key: Ctrl+S.
        let held = self
            .modifiers
            .intersects(KeyModifiers::CONTROL | KeyModifiers::ALT);
        let name = if held && matches!(self.code, KeyCode::Char(_)) {
            name.to_uppercase()
        } else {
            name
        };
        if self.modifiers.contains(KeyModifiers::CONTROL) {
            format!("Ctrl+{name}")
        } else if self.modifiers.contains(KeyModifiers::ALT) {
            format!("Alt+{name}")
        } else {
            name
        }
    }
}

/// The action `event` has in `scope`, if any.
pub fn action_for(scope: Scope, event: &KeyEvent) -> Option<Action> {
    BINDINGS
        .iter()
        .filter(|binding| binding.scope == scope)
        .find(|binding| binding.keys.iter().any(|key| key.matches(event)))
        .map(|binding| binding.action)
}

/// The first key bound to `action` in `scope`, as help shows it.
pub fn key_for(scope: Scope, action: Action) -> String {
    BINDINGS
        .iter()
        .find(|binding| binding.scope == scope && binding.action == action)
        .and_then(|binding| binding.keys.first())
        .map(Key::label)
        .unwrap_or_default()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn no_key_means_two_things_in_one_scope() {
        for scope in Scope::ALL {
            let keys: Vec<Key> = BINDINGS
                .iter()
                .filter(|binding| binding.scope == scope)
                .flat_map(|binding| binding.keys.iter().copied())
                .collect();
            for (index, key) in keys.iter().enumerate() {
                assert!(
                    !keys[index + 1..].contains(key),
                    "{key:?} is bound twice in {scope:?}"
                );
            }
        }
    }

    #[test]
    fn shifted_characters_match_their_binding() {
        let event = KeyEvent::new(KeyCode::Char('<'), KeyModifiers::SHIFT);
        assert_eq!(action_for(Scope::Sheet, &event), Some(Action::Undo));
        let control = KeyEvent::new(KeyCode::Char('s'), KeyModifiers::CONTROL);
        assert_eq!(action_for(Scope::Sheet, &control), None);
        let header = KeyEvent::new(KeyCode::Char('T'), KeyModifiers::SHIFT);
        assert_eq!(action_for(Scope::Sheet, &header), Some(Action::EditHeader));
    }

    #[test]
    fn the_block_editor_hint_names_the_keys_bound() {
        let keep = key_for(Scope::Editor, Action::KeepAll);
        assert_eq!(keep, "Ctrl+S");
        assert!(
            crate::tui::strings::EDIT_BLOCK_KEYS.contains(&format!("{keep} keep")),
            "{}",
            crate::tui::strings::EDIT_BLOCK_KEYS
        );
        let alt_enter = KeyEvent::new(KeyCode::Enter, KeyModifiers::ALT);
        assert_eq!(action_for(Scope::Editor, &alt_enter), Some(Action::KeepAll));
        let enter = KeyEvent::new(KeyCode::Enter, KeyModifiers::NONE);
        assert_eq!(action_for(Scope::Editor, &enter), Some(Action::Keep));
    }
}
