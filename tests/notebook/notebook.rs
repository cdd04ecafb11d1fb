//! The notebook's state and update logic, driven by messages without a
//! terminal: every key of the key table, and what each action must do.

use heftsheet::eval::CellStatus;
use heftsheet::live::{LineEnding, Row, WrittenLine};
use heftsheet::tui::app::{Focus, Mode, Question, UnitsView};
use heftsheet::tui::files::{Fingerprint, KeptCopy, Opened};
use heftsheet::tui::keys::{Action, BINDINGS, Key, Scope};
use heftsheet::tui::theme::Theme;
use heftsheet::tui::{App, Effect, Message, update};
use ratatui::crossterm::event::{
    KeyCode, KeyEvent, KeyModifiers, MouseButton, MouseEvent, MouseEventKind,
};
use ratatui::layout::Rect;

const SKID_LIFT: &str = include_str!("../../sheets/skid_lift.heft");

/// A sheet with findings: an undefined name, a weight used as a mass, a
/// failed check.
const BROKEN: &str = "\
# Broken on purpose
m = 10 kg
W [lbf] = m
F [N] = m * a_missing
check m <= 5 kg \"too heavy\"
";

fn opened(text: &str) -> Opened {
    Opened {
        path: "demo.heft".into(),
        text: text.to_string(),
        disk: Some(Fingerprint::of(text.as_bytes())),
        recovery: Vec::new(),
        notices: Vec::new(),
    }
}

/// The notebook on a file that does not exist yet.
fn new_sheet_app() -> App {
    let opened = Opened {
        path: "new.heft".into(),
        text: String::new(),
        disk: None,
        recovery: Vec::new(),
        notices: Vec::new(),
    };
    App::new(opened, Rect::new(0, 0, 80, 24), Theme::new(false))
}

fn app_for(text: &str) -> App {
    App::new(opened(text), Rect::new(0, 0, 80, 24), Theme::new(false))
}

fn key(code: KeyCode) -> Message {
    Message::Key(KeyEvent::new(code, KeyModifiers::NONE))
}

fn press(app: &mut App, code: KeyCode) -> Vec<Effect> {
    update(app, key(code))
}

fn press_char(app: &mut App, c: char) -> Vec<Effect> {
    press(app, KeyCode::Char(c))
}

/// Types `text` a key at a time; returns the last key's effects.
fn type_text(app: &mut App, text: &str) -> Vec<Effect> {
    text.chars().fold(Vec::new(), |_, c| press_char(app, c))
}

fn clear_field(app: &mut App) {
    update(
        app,
        Message::Key(KeyEvent::new(KeyCode::Char('u'), KeyModifiers::CONTROL)),
    );
}

/// Selects the row of cell `name`.
fn select_cell(app: &mut App, name: &str) {
    press_char(app, 'f');
    type_text(app, name);
    press(app, KeyCode::Enter);
    assert_eq!(selected_name(app).as_deref(), Some(name));
}

fn selected_name(app: &App) -> Option<String> {
    let statement = app.selected_statement()?;
    match app.live().row(statement) {
        Row::Cell(cell) => Some(cell.name.to_string()),
        _ => None,
    }
}

fn value_of(app: &App, name: &str) -> f64 {
    let id = app.live().cell_named(name).expect("cell");
    app.live().cell(id).value.expect("a value").si
}

/// The lines that differ between two texts.
fn changed_lines<'a>(before: &'a str, after: &'a str) -> Vec<(&'a str, &'a str)> {
    before
        .lines()
        .zip(after.lines())
        .filter(|(a, b)| a != b)
        .collect()
}

// ----- every binding does something -----

/// An app in the state where `scope`'s keys apply, with room to move.
fn app_in_scope(scope: Scope, key: &Key) -> App {
    let mut app = app_for(SKID_LIFT);
    match scope {
        Scope::Sheet => select_cell(&mut app, "T_brake"),
        Scope::Links => {
            select_cell(&mut app, "T_brake");
            select_cell(&mut app, "m_tot");
            press(&mut app, KeyCode::Tab);
            press(&mut app, KeyCode::Down);
        }
        Scope::Editor => {
            select_cell(&mut app, "a_up");
            press(&mut app, KeyCode::Enter);
            press(&mut app, KeyCode::Left);
            press(&mut app, KeyCode::Left);
        }
        Scope::Find => {
            press_char(&mut app, 'f');
            press_char(&mut app, 'a');
            press(&mut app, KeyCode::Down);
        }
        Scope::Findings => {
            app = app_for(&format!("{BROKEN}{}", "x = 1\n".repeat(3)));
            press_char(&mut app, '!');
            press(&mut app, KeyCode::Down);
        }
        Scope::Help => {
            press_char(&mut app, '?');
            press(&mut app, KeyCode::Down);
        }
        Scope::Question => {
            let question = match key.code {
                KeyCode::Char('o') => Question::Overwrite,
                KeyCode::Char('r') => Question::Recover,
                _ => Question::QuitUnsaved,
            };
            match question {
                Question::Recover => {
                    let mut with_copy = opened(SKID_LIFT);
                    with_copy.recovery = vec![KeptCopy {
                        path: ".demo.heft.heft-unsaved".into(),
                        text: SKID_LIFT.replace("1850 kg", "1900 kg"),
                    }];
                    app = App::new(with_copy, Rect::new(0, 0, 80, 24), Theme::new(false));
                }
                Question::Overwrite => {
                    select_cell(&mut app, "a_up");
                    press(&mut app, KeyCode::Enter);
                    type_text(&mut app, "1");
                    press(&mut app, KeyCode::Enter);
                    update(&mut app, Message::SaveRefused);
                }
                Question::QuitUnsaved => {
                    select_cell(&mut app, "a_up");
                    press(&mut app, KeyCode::Enter);
                    type_text(&mut app, "1");
                    press(&mut app, KeyCode::Enter);
                    press_char(&mut app, 'q');
                }
                // Their keys are tested with the questions chosen above.
                Question::RecoverNext | Question::ReplaceReadOnly => {
                    unreachable!("not chosen for any key")
                }
            }
            assert!(matches!(app.mode(), Mode::Ask(q) if *q == question));
        }
    }
    app
}

#[test]
fn every_key_in_the_table_changes_the_state_or_asks_for_an_effect() {
    for binding in BINDINGS {
        for key in binding.keys {
            let mut app = app_in_scope(binding.scope, key);
            let before = format!("{app:?}");
            let effects = update(
                &mut app,
                Message::Key(KeyEvent::new(key.code, key.modifiers)),
            );
            let after = format!("{app:?}");
            assert!(
                before != after || !effects.is_empty(),
                "{} in {:?} ({:?}) did nothing",
                key.label(),
                binding.scope,
                binding.action
            );
        }
    }
}

// ----- what each action does -----

#[test]
fn arrows_pages_and_ends_move_the_selection_and_keep_it_on_screen() {
    let mut app = app_for(SKID_LIFT);
    assert_eq!(app.selected(), 0);
    press(&mut app, KeyCode::Down);
    assert_eq!(app.selected(), 1);
    press(&mut app, KeyCode::Up);
    press(&mut app, KeyCode::Up);
    assert_eq!(app.selected(), 0);
    press(&mut app, KeyCode::PageDown);
    assert_eq!(app.selected(), 9, "a page is the 10 visible rows less one");
    press(&mut app, KeyCode::End);
    let last = app.live().rows().len() - 1;
    assert_eq!(app.selected(), last);
    assert!(app.scroll() + app.areas().sheet_rows() > last);
    assert!(app.scroll() > 0);
    press(&mut app, KeyCode::PageUp);
    assert_eq!(app.selected(), last - 9);
    press(&mut app, KeyCode::Home);
    assert_eq!((app.selected(), app.scroll()), (0, 0));
}

#[test]
fn editing_an_input_updates_its_dependents_while_typing_and_keeps_one_line_changed() {
    let mut app = app_for(SKID_LIFT);
    select_cell(&mut app, "a_up");
    let before = value_of(&app, "T_up");
    press(&mut app, KeyCode::Enter);
    let Mode::Editing(session) = app.mode() else {
        panic!("Enter on a cell edits its formula");
    };
    assert_eq!(session.input.value(), "0.35 m/s^2");
    clear_field(&mut app);
    type_text(&mut app, "0.5 m/s^2");
    // Already recomputed before Enter: T = m (g0 + a), so ΔT = m_tot × 0.15 m/s²
    // (Newton's second law, closed form).
    let after = value_of(&app, "T_up");
    let m_tot = value_of(&app, "m_tot");
    assert!((after - before - m_tot * 0.15).abs() < 1e-9 * after);
    assert!(app.is_dirty());
    let effects = press(&mut app, KeyCode::Enter);
    assert!(matches!(app.mode(), Mode::Browse));
    assert!(matches!(
        effects.as_slice(),
        [Effect::KeepRecovery(_), Effect::Lint { .. }]
    ));
    assert_eq!(app.history().undoable(), 1);
    let text = app.live().text();
    assert_eq!(
        changed_lines(SKID_LIFT, &text),
        vec![(
            "a_up   = 0.35 m/s^2            \"start-of-hoist acceleration\"",
            "a_up   = 0.5 m/s^2            \"start-of-hoist acceleration\""
        )]
    );
}

#[test]
fn escape_puts_the_line_back_exactly() {
    let mut app = app_for(SKID_LIFT);
    select_cell(&mut app, "m_rig");
    press_char(&mut app, '=');
    type_text(&mut app, " + 3 kg");
    assert_ne!(app.live().text(), SKID_LIFT);
    let effects = press(&mut app, KeyCode::Esc);
    assert_eq!(app.live().text(), SKID_LIFT);
    assert!(!app.is_dirty());
    assert_eq!(app.history().undoable(), 0);
    assert_eq!(effects, vec![Effect::DropRecovery, app.lint_request()]);
}

/// Carries out every lint effect as the event loop does (there on a thread
/// of its own) and hands the answer back; returns the other effects.
fn with_lints(app: &mut App, effects: Vec<Effect>) -> Vec<Effect> {
    let mut others = Vec::new();
    for effect in effects {
        match effect {
            Effect::Lint { revision, text } => {
                update(app, heftsheet::tui::app::lint(revision, text));
            }
            other => others.push(other),
        }
    }
    others
}

#[test]
fn audit_lints_show_once_linted_and_only_for_the_text_they_were_run_on() {
    let mut app = app_for(SKID_LIFT);
    let clean = app.live().n_findings();
    select_cell(&mut app, "m_rig");
    press_char(&mut app, '=');
    clear_field(&mut app);
    // A hand-typed pound-to-kilogram factor: a lint, not an evaluation error.
    let typing = type_text(&mut app, "92.6 / 2.2046 * 1 k");
    let stale = typing
        .iter()
        .find(|effect| matches!(effect, Effect::Lint { .. }))
        .cloned()
        .expect("every keystroke asks for lints");
    press_char(&mut app, 'g');
    let effects = press(&mut app, KeyCode::Enter);
    assert_eq!(app.live().n_findings(), clean, "lints arrive later");
    // An answer about an older text is dropped: its lines may have moved.
    with_lints(&mut app, vec![stale]);
    assert_eq!(app.live().n_findings(), clean);
    with_lints(&mut app, effects);
    let findings = app.live().findings();
    let statement = app
        .live()
        .cell_statement(app.live().cell_named("m_rig").expect("m_rig"));
    let lint = findings
        .iter()
        .find(|finding| finding.code == heftsheet::base::Code::HandConversionFactor)
        .unwrap_or_else(|| panic!("no hand-typed factor lint in {findings:#?}"));
    assert_eq!(lint.statement, Some(statement));
    assert_eq!(lint.line, app.live().statement_line(statement) + 1);
    assert!(
        app.live()
            .statement_findings(statement)
            .iter()
            .any(|finding| finding.code == heftsheet::base::Code::HandConversionFactor)
    );
    // The next edit drops them until the new text is linted.
    press(&mut app, KeyCode::Char('<'));
    assert_eq!(app.live().n_findings(), clean);
}

#[test]
fn invalid_input_is_kept_and_marked_until_fixed() {
    let mut app = app_for(SKID_LIFT);
    select_cell(&mut app, "m_rig");
    press(&mut app, KeyCode::Enter);
    press(&mut app, KeyCode::End);
    type_text(&mut app, " +* 3");
    press(&mut app, KeyCode::Enter);
    assert!(app.live().text().contains("m_rig  = 42 kg +* 3"));
    let id = app.live().cell_named("m_rig").expect("m_rig");
    assert_eq!(app.live().cell(id).status, CellStatus::Error);
    let m_tot = app.live().cell_named("m_tot").expect("m_tot");
    assert_eq!(
        app.live().cell(m_tot).status,
        CellStatus::Blocked { by: id }
    );
    // Fix it. A formula that does not parse runs to the end of the line
    // (the description cannot be told apart), so the field shows it all.
    press(&mut app, KeyCode::Enter);
    let Mode::Editing(session) = app.mode() else {
        panic!("Enter edits");
    };
    assert_eq!(
        session.input.value(),
        "42 kg +* 3                 \"spreader bar, shackles, slings\""
    );
    press(&mut app, KeyCode::Home);
    for _ in 0..5 {
        press(&mut app, KeyCode::Right);
    }
    for _ in 0..5 {
        press(&mut app, KeyCode::Delete);
    }
    press(&mut app, KeyCode::Enter);
    assert_eq!(app.live().cell(m_tot).status, CellStatus::Ok);
    assert_eq!(app.live().text(), SKID_LIFT);
}

#[test]
fn unit_description_and_name_edits_change_only_their_field() {
    let mut app = app_for(SKID_LIFT);
    select_cell(&mut app, "W");
    press_char(&mut app, '[');
    clear_field(&mut app);
    type_text(&mut app, "lbf");
    press(&mut app, KeyCode::Enter);
    press_char(&mut app, '"');
    clear_field(&mut app);
    type_text(&mut app, "static weight, \"dead\" load");
    press(&mut app, KeyCode::Enter);
    press_char(&mut app, 'n');
    clear_field(&mut app);
    type_text(&mut app, "W_static");
    press(&mut app, KeyCode::Enter);
    let text = app.live().text();
    assert_eq!(
        changed_lines(SKID_LIFT, &text),
        vec![(
            "W        [kN] = m_tot * g0                  \"static weight\"",
            "W_static        [lbf] = m_tot * g0                  \"static weight, \\\"dead\\\" load\""
        )]
    );
    assert_eq!(app.history().undoable(), 3);
    // The cell that used W now names an undefined cell, with a suggestion.
    let findings = app.live().findings();
    assert!(
        findings
            .iter()
            .any(|f| f.message.contains("`W` is not defined"))
    );
}

#[test]
fn field_keys_on_a_heading_say_it_is_not_a_cell_and_e_edits_its_line() {
    let mut app = app_for(SKID_LIFT);
    assert!(matches!(
        app.live().row(app.selected_statement().expect("a row")),
        Row::Heading { .. }
    ));
    press_char(&mut app, '=');
    assert!(matches!(app.mode(), Mode::Browse));
    assert!(app.message().is_some_and(|m| m.contains("not a cell")));
    press_char(&mut app, 'e');
    let Mode::Editing(session) = app.mode() else {
        panic!("e edits the line");
    };
    assert_eq!(session.input.value(), "# Inputs");
    clear_field(&mut app);
    type_text(&mut app, "# Inputs (weighed)");
    press(&mut app, KeyCode::Enter);
    assert_eq!(
        changed_lines(SKID_LIFT, &app.live().text()),
        vec![("# Inputs", "# Inputs (weighed)")]
    );
}

#[test]
fn adding_a_cell_heading_note_and_check_inserts_lines_below_the_selection() {
    let mut app = app_for(SKID_LIFT);
    select_cell(&mut app, "W_hoist");
    press_char(&mut app, 'a');
    type_text(
        &mut app,
        "margin [kN] = W_hoist - T_brake \"hoist reserve\"",
    );
    press(&mut app, KeyCode::Enter);
    assert!(app.live().cell_named("margin").is_some());
    assert!(value_of(&app, "margin") > 0.0);
    press_char(&mut app, 'h');
    type_text(&mut app, "Reserve");
    press(&mut app, KeyCode::Enter);
    press_char(&mut app, 't');
    type_text(
        &mut app,
        "Reserve is the hoist rating less the braking tension.",
    );
    press(&mut app, KeyCode::Enter);
    press_char(&mut app, 'c');
    type_text(&mut app, "margin >= 5 kN \"reserve\"");
    press(&mut app, KeyCode::Enter);
    let text = app.live().text();
    let added: Vec<&str> = text
        .lines()
        .filter(|line| !SKID_LIFT.contains(line))
        .collect();
    assert_eq!(
        added,
        vec![
            "margin [kN] = W_hoist - T_brake \"hoist reserve\"",
            "# Reserve",
            "> Reserve is the hoist rating less the braking tension.",
            "check margin >= 5 kN \"reserve\"",
        ]
    );
    assert_eq!(app.live().n_checks(), 4);
    assert_eq!(app.history().undoable(), 4);
    // Esc on a new line leaves nothing behind.
    press_char(&mut app, 'a');
    type_text(&mut app, "half = typed");
    press(&mut app, KeyCode::Esc);
    assert_eq!(app.live().text(), text);
}

#[test]
fn delete_undo_and_redo_restore_the_text_exactly() {
    let mut app = app_for(SKID_LIFT);
    select_cell(&mut app, "dyn_factor");
    press_char(&mut app, 'x');
    assert!(app.live().cell_named("dyn_factor").is_none());
    let deleted = app.live().text();
    press_char(&mut app, '<');
    assert_eq!(app.live().text(), SKID_LIFT);
    assert!(!app.is_dirty(), "back to the saved text");
    press_char(&mut app, '>');
    assert_eq!(app.live().text(), deleted);
    press_char(&mut app, '>');
    assert_eq!(app.message(), Some("nothing to redo"));
    press_char(&mut app, '<');
    press_char(&mut app, '<');
    assert_eq!(app.message(), Some("nothing to undo"));
    // A new edit after an undo drops the redo.
    select_cell(&mut app, "m_rig");
    press_char(&mut app, 'x');
    assert_eq!(app.history().redoable(), 0);
}

#[test]
fn unit_view_and_significant_figures_change_the_display_not_the_file() {
    let mut app = app_for(SKID_LIFT);
    assert_eq!(app.units(), UnitsView::AsWritten);
    press_char(&mut app, 'u');
    assert_eq!(app.units(), UnitsView::Si);
    press_char(&mut app, 'u');
    assert_eq!(app.units(), UnitsView::Fps);
    let id = app.live().cell_named("T_up").expect("T_up");
    let unit = app.live().display_unit(id, app.units().system());
    assert_eq!(&*unit.text, "lbf");
    press_char(&mut app, 'u');
    assert_eq!(app.units(), UnitsView::AsWritten);
    assert_eq!(app.sig_figs(), 4);
    press_char(&mut app, '+');
    assert_eq!(app.sig_figs(), 5);
    for _ in 0..20 {
        press_char(&mut app, '-');
    }
    assert_eq!(app.sig_figs(), 1);
    for _ in 0..20 {
        press_char(&mut app, '+');
    }
    assert_eq!(app.sig_figs(), 15);
    assert_eq!(app.live().text(), SKID_LIFT);
    assert!(!app.is_dirty());
}

/// Opens find, types `query` and returns the names it matches, in order.
fn find(app: &mut App, query: &str) -> Vec<String> {
    press_char(app, 'f');
    type_text(app, query);
    let Mode::Find(state) = app.mode() else {
        panic!("f finds");
    };
    state
        .matches
        .iter()
        .map(|&id| app.live().cell(id).name.to_string())
        .collect()
}

#[test]
fn find_narrows_by_name_and_jumps() {
    let mut app = app_for(SKID_LIFT);
    assert_eq!(
        find(&mut app, "BRAKE"),
        vec!["a_brake", "T_brake"],
        "case ignored, then file order"
    );
    press(&mut app, KeyCode::Down);
    press(&mut app, KeyCode::Enter);
    assert_eq!(selected_name(&app).as_deref(), Some("T_brake"));
    assert_eq!(
        find(&mut app, "m_"),
        vec!["m_rig", "m_tot", "m_skid"],
        "prefix first, then shorter"
    );
    press(&mut app, KeyCode::Esc);
    press_char(&mut app, 'f');
    type_text(&mut app, "zz");
    press(&mut app, KeyCode::Backspace);
    press(&mut app, KeyCode::Backspace);
    press(&mut app, KeyCode::Esc);
    assert!(matches!(app.mode(), Mode::Browse));
    assert_eq!(selected_name(&app).as_deref(), Some("T_brake"));
}

#[test]
fn findings_list_every_finding_and_jump_to_each() {
    let mut app = app_for(BROKEN);
    press_char(&mut app, '!');
    let Mode::Findings(state) = app.mode() else {
        panic!("! lists findings");
    };
    let codes: Vec<&str> = state.list.iter().map(|f| f.code.as_str()).collect();
    assert_eq!(
        codes,
        vec!["mass-weight-mixup", "undefined-name", "check-failed"]
    );
    assert_eq!(state.list[0].line, 3);
    press(&mut app, KeyCode::Down);
    press(&mut app, KeyCode::Enter);
    assert_eq!(selected_name(&app).as_deref(), Some("F"));
    // Backspace goes back to where the jump came from.
    press(&mut app, KeyCode::Backspace);
    assert_eq!(app.selected(), 0);
    let mut clean = app_for(SKID_LIFT);
    press_char(&mut clean, '!');
    assert!(matches!(clean.mode(), Mode::Browse));
    assert_eq!(clean.message(), Some("no findings"));
}

#[test]
fn links_jump_to_what_a_cell_uses_and_what_uses_it() {
    let mut app = app_for(SKID_LIFT);
    select_cell(&mut app, "T_brake");
    press(&mut app, KeyCode::Tab);
    assert_eq!(app.focus(), Focus::Links);
    // Links: uses m_tot, a_brake; used by dyn_factor, check 2.
    press(&mut app, KeyCode::Down);
    press(&mut app, KeyCode::Down);
    press(&mut app, KeyCode::Enter);
    assert_eq!(selected_name(&app).as_deref(), Some("dyn_factor"));
    assert_eq!(app.focus(), Focus::Sheet);
    press(&mut app, KeyCode::Backspace);
    assert_eq!(selected_name(&app).as_deref(), Some("T_brake"));
    press(&mut app, KeyCode::Tab);
    press(&mut app, KeyCode::Esc);
    assert_eq!(app.focus(), Focus::Sheet);
}

#[test]
fn saving_asks_the_loop_and_clears_the_modified_mark() {
    let mut app = app_for(SKID_LIFT);
    let effects = press_char(&mut app, 's');
    assert!(effects.is_empty());
    assert!(app.message().is_some_and(|m| m.contains("nothing to save")));
    select_cell(&mut app, "m_skid");
    press(&mut app, KeyCode::Enter);
    clear_field(&mut app);
    type_text(&mut app, "1900 kg");
    press(&mut app, KeyCode::Enter);
    let effects = press_char(&mut app, 's');
    let [
        Effect::Save {
            text,
            expected,
            overwrite,
            replace_read_only,
        },
    ] = effects.as_slice()
    else {
        panic!("s saves: {effects:?}");
    };
    assert_eq!(*expected, Some(Fingerprint::of(SKID_LIFT.as_bytes())));
    assert!(!overwrite);
    assert!(!replace_read_only);
    assert_eq!(changed_lines(SKID_LIFT, text).len(), 1);
    let effects = update(&mut app, Message::Saved(Fingerprint::of(text.as_bytes())));
    assert_eq!(effects, vec![Effect::DropRecovery]);
    assert!(!app.is_dirty());
}

#[test]
fn a_file_changed_on_disk_is_overwritten_only_when_asked() {
    let mut app = app_for(SKID_LIFT);
    select_cell(&mut app, "m_skid");
    press(&mut app, KeyCode::Enter);
    type_text(&mut app, "0");
    press(&mut app, KeyCode::Enter);
    press_char(&mut app, 's');
    update(&mut app, Message::SaveRefused);
    assert!(matches!(app.mode(), Mode::Ask(Question::Overwrite)));
    press(&mut app, KeyCode::Esc);
    assert!(matches!(app.mode(), Mode::Browse));
    assert!(app.is_dirty());
    press_char(&mut app, 's');
    update(&mut app, Message::SaveRefused);
    let effects = press_char(&mut app, 'o');
    assert!(matches!(
        effects.as_slice(),
        [Effect::Save {
            overwrite: true,
            ..
        }]
    ));
}

#[test]
fn quitting_with_unsaved_changes_asks() {
    let mut clean = app_for(SKID_LIFT);
    assert_eq!(
        press_char(&mut clean, 'q'),
        vec![Effect::DropRecovery, Effect::Quit]
    );

    let mut app = app_for(SKID_LIFT);
    select_cell(&mut app, "m_rig");
    press_char(&mut app, 'x');
    assert!(press_char(&mut app, 'q').is_empty());
    assert!(matches!(app.mode(), Mode::Ask(Question::QuitUnsaved)));
    press(&mut app, KeyCode::Esc);
    assert!(matches!(app.mode(), Mode::Browse));
    press_char(&mut app, 'q');
    assert_eq!(
        press_char(&mut app, 'd'),
        vec![Effect::DropRecovery, Effect::Quit]
    );

    let mut saving = app_for(SKID_LIFT);
    select_cell(&mut saving, "m_rig");
    press_char(&mut saving, 'x');
    press_char(&mut saving, 'q');
    let effects = press_char(&mut saving, 's');
    let [Effect::Save { text, .. }] = effects.as_slice() else {
        panic!("s saves first: {effects:?}");
    };
    let effects = update(
        &mut saving,
        Message::Saved(Fingerprint::of(text.as_bytes())),
    );
    assert_eq!(effects, vec![Effect::DropRecovery, Effect::Quit]);
}

#[test]
fn kept_work_from_a_crash_is_offered_and_restored() {
    let kept = SKID_LIFT.replace("m_rig  = 42 kg", "m_rig  = 47 kg");
    let mut with_copy = opened(SKID_LIFT);
    with_copy.recovery = vec![KeptCopy {
        path: ".demo.heft.heft-unsaved".into(),
        text: kept.clone(),
    }];
    let mut app = App::new(
        with_copy.clone(),
        Rect::new(0, 0, 80, 24),
        Theme::new(false),
    );
    assert!(matches!(app.mode(), Mode::Ask(Question::Recover)));
    press(&mut app, KeyCode::Esc);
    assert!(
        matches!(app.mode(), Mode::Ask(Question::Recover)),
        "must choose"
    );
    let effects = press_char(&mut app, 'r');
    assert_eq!(app.live().text(), kept);
    assert!(app.is_dirty());
    // The restored text becomes this notebook's own recovery copy.
    assert_eq!(
        effects.first(),
        Some(&Effect::AdoptCopy {
            path: ".demo.heft.heft-unsaved".into(),
            text: kept.clone(),
        })
    );

    let mut declined = App::new(with_copy, Rect::new(0, 0, 80, 24), Theme::new(false));
    assert_eq!(
        press_char(&mut declined, 'd'),
        vec![Effect::DiscardCopy(".demo.heft.heft-unsaved".into())]
    );
    assert_eq!(declined.live().text(), SKID_LIFT);
}

#[test]
fn a_new_file_starts_empty_and_grows() {
    let mut app = new_sheet_app();
    assert!(app.is_new_file());
    assert!(app.live().rows().is_empty());
    press(&mut app, KeyCode::Enter);
    type_text(&mut app, "m = 20 kg");
    press(&mut app, KeyCode::Enter);
    press_char(&mut app, 'a');
    type_text(&mut app, "W [N] = m * g0");
    press(&mut app, KeyCode::Enter);
    assert_eq!(app.live().text(), "m = 20 kg\nW [N] = m * g0\n");
    // W = m g0 = 20 kg × 9.80665 m/s² = 196.133 N (standard gravity, CGPM 1901).
    assert!((value_of(&app, "W") - 196.133).abs() < 1e-9);
    let effects = press_char(&mut app, 's');
    assert!(matches!(
        effects.as_slice(),
        [Effect::Save { expected: None, .. }]
    ));
}

#[test]
fn history_records_one_change_per_kept_edit() {
    let mut app = app_for(SKID_LIFT);
    select_cell(&mut app, "a_brake");
    press(&mut app, KeyCode::Enter);
    clear_field(&mut app);
    type_text(&mut app, "1.2 m/s^2");
    press(&mut app, KeyCode::Enter);
    let line = app
        .live()
        .statement_line(app.selected_statement().expect("a row"));
    assert_eq!(app.history().undoable(), 1);
    press_char(&mut app, '<');
    press_char(&mut app, '>');
    // The change is recorded by line, with both texts.
    let text = app.live().text();
    let kept = "a_brake = 1.2 m/s^2            \"deceleration when the brake stops a descent\"";
    assert_eq!(text.lines().nth(line), Some(kept));
    let change = app.history().last_change().expect("a change");
    assert_eq!(change.first, line);
    assert_eq!(change.before.len(), 1);
    assert_eq!(
        change.after,
        vec![WrittenLine {
            text: kept.to_string(),
            ending: LineEnding::Lf
        }]
    );
}

#[test]
fn the_mouse_selects_rows_scrolls_and_follows_links() {
    let mut app = app_for(SKID_LIFT);
    let click = |column, row| {
        Message::Mouse(MouseEvent {
            kind: MouseEventKind::Down(MouseButton::Left),
            column,
            row,
            modifiers: KeyModifiers::NONE,
        })
    };
    // Row 0 is the title, row 1 the column headings, row 2 the first sheet row.
    update(&mut app, click(10, 5));
    assert_eq!(app.selected(), 3);
    update(
        &mut app,
        Message::Mouse(MouseEvent {
            kind: MouseEventKind::ScrollDown,
            column: 10,
            row: 5,
            modifiers: KeyModifiers::NONE,
        }),
    );
    assert_eq!(app.selected(), 6);
    select_cell(&mut app, "W");
    let hotspots = heftsheet::tui::view::link_hotspots(&app, app.areas().detail);
    let (area, _) = hotspots.first().copied().expect("W uses m_tot");
    update(&mut app, click(area.x, area.y));
    assert_eq!(selected_name(&app).as_deref(), Some("m_tot"));
}

#[test]
fn a_smaller_terminal_keeps_the_selection_in_view() {
    let mut app = app_for(SKID_LIFT);
    press(&mut app, KeyCode::End);
    update(&mut app, Message::Resize(80, 12));
    assert_eq!(app.viewport(), Rect::new(0, 0, 80, 12));
    let visible = app.areas().sheet_rows();
    assert!(app.selected() >= app.scroll() && app.selected() < app.scroll() + visible);
}

#[test]
fn a_failed_save_or_recovery_copy_is_reported() {
    let mut app = app_for(SKID_LIFT);
    update(
        &mut app,
        Message::SaveFailed("could not save demo.heft: disk full".into()),
    );
    assert_eq!(app.message(), Some("could not save demo.heft: disk full"));
    update(&mut app, Message::RecoveryFailed("no room".into()));
    assert_eq!(app.message(), Some("no room"));
}

#[test]
fn help_opens_scrolls_and_closes() {
    let mut app = app_for(SKID_LIFT);
    press_char(&mut app, '?');
    assert!(matches!(app.mode(), Mode::Help { scroll: 0 }));
    press(&mut app, KeyCode::Down);
    assert!(matches!(app.mode(), Mode::Help { scroll: 1 }));
    // Scrolling stops at the last screenful, so Up answers at once.
    for _ in 0..500 {
        press(&mut app, KeyCode::Down);
    }
    let Mode::Help { scroll: bottom } = *app.mode() else {
        panic!("still in help");
    };
    assert!(bottom > 1 && bottom < 200, "{bottom}");
    press(&mut app, KeyCode::Up);
    assert!(matches!(app.mode(), Mode::Help { scroll } if *scroll == bottom - 1));
    press(&mut app, KeyCode::Esc);
    assert!(matches!(app.mode(), Mode::Browse));
    assert!(BINDINGS.iter().any(|b| b.action == Action::Help));
}

// ----- undo and redo over random edits -----

use proptest::prelude::*;

/// One edit made with the notebook's keys.
#[derive(Clone, Debug)]
enum KeyEdit {
    Formula {
        row: usize,
        text: &'static str,
    },
    Unit {
        row: usize,
        text: &'static str,
    },
    Add {
        row: usize,
        kind: char,
        text: &'static str,
    },
    Delete {
        row: usize,
    },
    WholeLine {
        row: usize,
        text: &'static str,
    },
}

const TEXTS: &[&str] = &[
    "2 kN",
    "m_tot * 3",
    "(1 +",
    "m_skid / 0",
    "W + m_rig",
    "12 lbm",
    "",
];

fn key_edit() -> impl Strategy<Value = KeyEdit> {
    let text = proptest::sample::select(TEXTS);
    prop_oneof![
        (any::<usize>(), text.clone()).prop_map(|(row, text)| KeyEdit::Formula { row, text }),
        (
            any::<usize>(),
            proptest::sample::select(&["kN", "", "lbf", "bad unit"][..])
        )
            .prop_map(|(row, text)| KeyEdit::Unit { row, text }),
        (
            any::<usize>(),
            proptest::sample::select(&['a', 'h', 't', 'c'][..]),
            text.clone()
        )
            .prop_map(|(row, kind, text)| KeyEdit::Add { row, kind, text }),
        any::<usize>().prop_map(|row| KeyEdit::Delete { row }),
        (any::<usize>(), text).prop_map(|(row, text)| KeyEdit::WholeLine { row, text }),
    ]
}

fn go_to_row(app: &mut App, row: usize) {
    let n_rows = app.live().rows().len().max(1);
    press(app, KeyCode::Home);
    for _ in 0..row % n_rows {
        press(app, KeyCode::Down);
    }
}

fn apply_key_edit(app: &mut App, edit: &KeyEdit) {
    let (row, start, clear, text) = match *edit {
        KeyEdit::Formula { row, text } => (row, '=', true, text),
        KeyEdit::Unit { row, text } => (row, '[', true, text),
        KeyEdit::Add { row, kind, text } => (row, kind, false, text),
        KeyEdit::WholeLine { row, text } => (row, 'e', true, text),
        KeyEdit::Delete { row } => (row, 'x', false, ""),
    };
    go_to_row(app, row);
    press_char(app, start);
    // A field key on a row that is not a cell only leaves a message.
    if matches!(app.mode(), Mode::Editing(_)) {
        if clear {
            clear_field(app);
        }
        type_text(app, text);
        press(app, KeyCode::Enter);
    }
    assert!(matches!(app.mode(), Mode::Browse), "{edit:?}");
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(64))]

    #[test]
    fn undo_walks_back_through_every_text_and_redo_forward(
        edits in proptest::collection::vec(key_edit(), 1..10),
    ) {
        let mut app = app_for(SKID_LIFT);
        let mut texts = vec![app.live().text()];
        for edit in &edits {
            apply_key_edit(&mut app, edit);
            let text = app.live().text();
            if texts.last() != Some(&text) {
                texts.push(text);
            }
        }
        prop_assert_eq!(app.history().undoable(), texts.len() - 1);
        for expected in texts.iter().rev().skip(1) {
            press_char(&mut app, '<');
            prop_assert_eq!(&app.live().text(), expected);
        }
        prop_assert!(!app.is_dirty());
        for expected in texts.iter().skip(1) {
            press_char(&mut app, '>');
            prop_assert_eq!(&app.live().text(), expected);
        }
    }
}

// ----- blocks and the header -----

const LIFT_SLIDE: &str = include_str!("../../sheets/lift_slide_clamp.heft");
const GANTRY_CASES: &str = include_str!("../../sheets/gantry_cases.heft");
const HOIST_RUNUP: &str = include_str!("../../sheets/hoist_runup.heft");

fn ctrl(c: char) -> Message {
    Message::Key(KeyEvent::new(KeyCode::Char(c), KeyModifiers::CONTROL))
}

/// Selects the first block row whose first line starts with `head`.
fn select_block(app: &mut App, head: &str) {
    press(app, KeyCode::Home);
    for _ in 0..app.live().rows().len() {
        let statement = app.selected_statement().expect("a row");
        if let Row::Block { head: first } = app.live().row(statement)
            && first.trim_start().starts_with(head)
        {
            return;
        }
        press(app, KeyCode::Down);
    }
    panic!("no block starting {head:?}");
}

/// The text with lines `lines` (0-based) taken out.
fn without_lines(text: &str, lines: std::ops::Range<usize>) -> String {
    text.split_inclusive('\n')
        .enumerate()
        .filter(|(index, _)| !lines.contains(index))
        .map(|(_, line)| line)
        .collect()
}

fn session(app: &App) -> &heftsheet::tui::app::EditSession {
    match app.mode() {
        Mode::Editing(session) => session,
        other => panic!("not editing: {other:?}"),
    }
}

#[test]
fn x_deletes_every_line_of_a_block_and_undo_puts_them_back() {
    for (sheet, head, n_lines) in [
        (LIFT_SLIDE, "solve", 3),
        (GANTRY_CASES, "case proof", 4),
        (HOIST_RUNUP, "simulate", 10),
    ] {
        let mut app = app_for(sheet);
        select_block(&mut app, head);
        let statement = app.selected_statement().expect("the block");
        let lines = app.live().statement_lines(statement);
        assert_eq!(lines.len(), n_lines, "{head}");
        let n_statements = app.live().n_statements();
        press_char(&mut app, 'x');
        assert_eq!(
            app.message(),
            Some(format!("deleted {n_lines} lines (< undoes)").as_str())
        );
        // The whole block went, and nothing of it is left as an orphan row.
        let deleted = app.live().text();
        assert_eq!(deleted, without_lines(sheet, lines));
        assert_eq!(app.live().n_statements(), n_statements - 1);
        assert!(
            !app.live()
                .rows()
                .iter()
                .any(|&s| matches!(app.live().row(s as usize), Row::Invalid { .. })),
            "no orphan rows after deleting the {head} block"
        );
        press_char(&mut app, '<');
        assert_eq!(app.message(), Some("undone"));
        assert_eq!(app.live().text(), sheet, "undo restores the {head} block");
        assert!(!app.is_dirty());
        press_char(&mut app, '>');
        assert_eq!(app.live().text(), deleted);
    }
}

#[test]
fn adding_on_a_block_row_inserts_after_its_end() {
    let mut app = app_for(LIFT_SLIDE);
    select_block(&mut app, "solve");
    let statement = app.selected_statement().expect("the block");
    let end = app.live().statement_lines(statement).end;
    let unknown = value_of(&app, "N_req");
    for (key, typed, written) in [
        (
            'a',
            "N_spare [N] = F_cyl - N_req",
            "N_spare [N] = F_cyl - N_req",
        ),
        ('h', "Reserve", "# Reserve"),
        (
            't',
            "Spare clamp force per jaw.",
            "> Spare clamp force per jaw.",
        ),
        (
            'c',
            "N_spare >= 0 N \"spare\"",
            "check N_spare >= 0 N \"spare\"",
        ),
    ] {
        select_block(&mut app, "solve");
        press_char(&mut app, key);
        type_text(&mut app, typed);
        press(&mut app, KeyCode::Enter);
        let text = app.live().text();
        assert_eq!(text.lines().nth(end), Some(written), "{key}");
        assert_eq!(text.lines().nth(end - 1), Some("end"), "{key}");
    }
    // The block still reads as it did: its unknown is solved as before.
    assert_eq!(value_of(&app, "N_req"), unknown);
    assert!(value_of(&app, "N_spare") > 0.0);
    assert_eq!(app.live().count(heftsheet::base::Severity::Error), 0);
}

#[test]
fn e_edits_a_block_in_a_multi_line_editor_and_ctrl_s_keeps_it() {
    let mut app = app_for(LIFT_SLIDE);
    let before = value_of(&app, "N_req");
    select_block(&mut app, "solve");
    press_char(&mut app, 'e');
    let editing = session(&app);
    assert!(editing.is_multiline());
    assert_eq!(
        editing.lines().collect::<Vec<_>>(),
        vec![
            "solve N_req [N] ~ 100:",
            "  SF * m_part * (g0 + a_up) = 2 * μ_jaw * N_req",
            "end"
        ]
    );
    // To the equation, and make it four friction faces instead of two.
    press(&mut app, KeyCode::Down);
    press(&mut app, KeyCode::Home);
    for _ in 0.."  SF * m_part * (g0 + a_up) = ".len() {
        press(&mut app, KeyCode::Right);
    }
    press(&mut app, KeyCode::Delete);
    press_char(&mut app, '4');
    // Applied while typing: SF m (g + a) = 4 μ N halves N (closed form).
    assert!((value_of(&app, "N_req") - before / 2.0).abs() < 1e-9 * before);
    // Enter breaks the line; Backspace joins it again.
    press(&mut app, KeyCode::Enter);
    assert_eq!(session(&app).n_shown(), 4);
    assert!(matches!(app.mode(), Mode::Editing(_)));
    press(&mut app, KeyCode::Backspace);
    assert_eq!(session(&app).n_shown(), 3);
    update(&mut app, ctrl('s'));
    assert!(matches!(app.mode(), Mode::Browse));
    assert_eq!(
        changed_lines(LIFT_SLIDE, &app.live().text()),
        vec![(
            "  SF * m_part * (g0 + a_up) = 2 * μ_jaw * N_req",
            "  SF * m_part * (g0 + a_up) = 4 * μ_jaw * N_req"
        )]
    );
    assert_eq!(app.history().undoable(), 1);
    assert_eq!(app.history().last_change().expect("kept").before.len(), 1);
    press_char(&mut app, '<');
    assert_eq!(app.live().text(), LIFT_SLIDE);
    assert_eq!(value_of(&app, "N_req"), before);
}

#[test]
fn escape_puts_a_block_back_exactly() {
    let crlf = LIFT_SLIDE.replace('\n', "\r\n");
    let sheet = crlf.trim_end();
    let mut app = app_for(sheet);
    select_block(&mut app, "solve");
    press(&mut app, KeyCode::Enter);
    assert!(
        session(&app).is_multiline(),
        "Enter on a block edits its lines"
    );
    press(&mut app, KeyCode::Down);
    press(&mut app, KeyCode::End);
    press(&mut app, KeyCode::Enter);
    type_text(&mut app, "  N_req = 3 N");
    press(&mut app, KeyCode::Down);
    update(&mut app, ctrl('u'));
    assert_ne!(app.live().text(), sheet);
    press(&mut app, KeyCode::Esc);
    assert_eq!(app.live().text(), sheet);
    assert_eq!(app.history().undoable(), 0);
    // Kept, then undone, the CRLF breaks and the missing final break are exact.
    select_block(&mut app, "solve");
    press_char(&mut app, 'e');
    press(&mut app, KeyCode::Down);
    press(&mut app, KeyCode::End);
    press(&mut app, KeyCode::Enter);
    type_text(&mut app, "  // checked against the jaw supplier's table");
    update(&mut app, ctrl('s'));
    let kept = app.live().text();
    assert!(kept.contains("N_req\r\n  // checked against the jaw supplier's table\r\nend\r\n"));
    press_char(&mut app, '<');
    assert_eq!(app.live().text(), sheet);
    press_char(&mut app, '>');
    assert_eq!(app.live().text(), kept);
}

#[test]
fn a_block_that_does_not_parse_stays_as_typed_and_is_marked() {
    let mut app = app_for(LIFT_SLIDE);
    select_block(&mut app, "solve");
    press_char(&mut app, 'e');
    press(&mut app, KeyCode::Down);
    press(&mut app, KeyCode::End);
    type_text(&mut app, " +* ");
    update(&mut app, ctrl('s'));
    let text = app.live().text();
    assert!(text.contains("2 * μ_jaw * N_req +* \nend\n"), "{text}");
    let statement = app.selected_statement().expect("the block");
    assert!(matches!(app.live().row(statement), Row::Block { .. }));
    assert_eq!(
        app.live().statement_severity(statement),
        Some(heftsheet::base::Severity::Error)
    );
    // A block whose head does not parse is kept whole too, marked as an
    // invalid row shown by its first line, and x still deletes all of it.
    let mut app = app_for(GANTRY_CASES);
    select_block(&mut app, "case estop");
    press_char(&mut app, 'e');
    type_text(&mut app, " oops");
    update(&mut app, ctrl('s'));
    let text = app.live().text();
    assert!(text.contains("heaviest part\": oops\n  a_lift = 3.2 m/s^2 ± 0.4 m/s^2\nend\n"));
    let statement = app.selected_statement().expect("the block");
    assert!(matches!(app.live().row(statement), Row::Invalid { .. }));
    assert_eq!(app.live().statement_lines(statement).len(), 3);
    press_char(&mut app, 'x');
    press_char(&mut app, '<');
    press_char(&mut app, '<');
    assert_eq!(app.live().text(), GANTRY_CASES);
}

#[test]
fn a_new_line_that_opens_a_block_grows_into_a_block_editor() {
    let mut app = app_for(SKID_LIFT);
    select_cell(&mut app, "W_hoist");
    press_char(&mut app, 'a');
    type_text(&mut app, "solve x_b [m] ~ 1:");
    assert!(session(&app).is_multiline());
    press(&mut app, KeyCode::Enter);
    assert_eq!(session(&app).n_shown(), 2, "Enter broke the line");
    type_text(&mut app, "  2 * x_b = 3 m");
    press(&mut app, KeyCode::Enter);
    type_text(&mut app, "end");
    update(
        &mut app,
        Message::Key(KeyEvent::new(KeyCode::Enter, KeyModifiers::ALT)),
    );
    assert!(matches!(app.mode(), Mode::Browse));
    // 2 x = 3 m gives x = 1.5 m.
    let x = app.live().cell_named("x_b").expect("x_b");
    assert!((app.live().cell(x).value.expect("solved").si - 1.5).abs() < 1e-9);
    assert_eq!(app.history().undoable(), 1);
    assert_eq!(app.history().last_change().expect("kept").after.len(), 3);
    press_char(&mut app, '<');
    assert_eq!(app.live().text(), SKID_LIFT);
}

#[test]
fn a_new_sheet_gets_a_header_with_t_and_its_title_shows() {
    let mut app = new_sheet_app();
    // Esc leaves nothing behind; kept untouched, nothing is added either.
    press_char(&mut app, 'T');
    assert!(session(&app).is_multiline());
    press(&mut app, KeyCode::Esc);
    assert_eq!(app.live().text(), "");
    press_char(&mut app, 'T');
    update(&mut app, ctrl('s'));
    assert_eq!(app.live().text(), "");
    assert_eq!(
        app.message(),
        Some("no header added: nothing was typed into it")
    );
    assert_eq!(app.history().undoable(), 0);
    // The cursor starts in the title's quotes.
    press_char(&mut app, 'T');
    type_text(&mut app, "Bench hoist hook");
    assert_eq!(
        app.live().header().title.as_deref(),
        Some("Bench hoist hook"),
        "applied while typing"
    );
    press(&mut app, KeyCode::Down);
    press(&mut app, KeyCode::Left);
    type_text(&mut app, "A");
    press(&mut app, KeyCode::Down);
    press(&mut app, KeyCode::End);
    press(&mut app, KeyCode::Left);
    type_text(&mut app, "J. Ortiz");
    update(&mut app, ctrl('s'));
    assert_eq!(
        app.live().text(),
        "+++\ntitle = \"Bench hoist hook\"\nrevision = \"A\"\nprepared_by = \"J. Ortiz\"\n+++\n"
    );
    let header = app.live().header();
    assert_eq!(header.revision.as_deref(), Some("A"));
    assert_eq!(header.prepared_by.as_deref(), Some("J. Ortiz"));
    // Cells go below it.
    press_char(&mut app, 'a');
    type_text(&mut app, "m = 20 kg");
    press(&mut app, KeyCode::Enter);
    assert!(app.live().text().ends_with("+++\nm = 20 kg\n"));
    press_char(&mut app, '<');
    press_char(&mut app, '<');
    assert_eq!(app.live().text(), "");
}

#[test]
fn t_edits_an_existing_header_whole_and_keeps_the_other_lines() {
    let mut app = app_for(SKID_LIFT);
    let header = app.live().document().header_lines().expect("a header");
    press_char(&mut app, 'T');
    let editing = session(&app);
    assert_eq!(editing.first, header.start);
    assert_eq!(editing.n_shown(), header.len());
    assert!(editing.input.value().starts_with("title"));
    // The cursor is in the title's quotes.
    type_text(&mut app, ", rev B");
    // A new key after the project line.
    press(&mut app, KeyCode::Down);
    press(&mut app, KeyCode::End);
    press(&mut app, KeyCode::Enter);
    type_text(&mut app, "checked_by = \"P. Mensah\"");
    update(&mut app, ctrl('s'));
    let text = app.live().text();
    assert_eq!(
        changed_lines(SKID_LIFT, &text).first().copied(),
        Some((
            "title = \"Compressor skid lift, north bay gantry\"",
            "title = \"Compressor skid lift, north bay gantry, rev B\""
        ))
    );
    assert_eq!(
        without_lines(&text, 3..4),
        SKID_LIFT.replace("gantry\"", "gantry, rev B\""),
        "only the title changed and one line came in"
    );
    assert_eq!(text.lines().nth(3), Some("checked_by = \"P. Mensah\""));
    assert_eq!(app.live().header().checked_by.as_deref(), Some("P. Mensah"));
    press_char(&mut app, '<');
    assert_eq!(app.live().text(), SKID_LIFT);
}

#[test]
fn a_header_edit_of_sig_figs_shows_at_once_and_a_click_on_the_title_opens_it() {
    let mut app = app_for(SKID_LIFT);
    let click = Message::Mouse(MouseEvent {
        kind: MouseEventKind::Down(MouseButton::Left),
        column: 10,
        row: 0,
        modifiers: KeyModifiers::NONE,
    });
    update(&mut app, click);
    assert!(matches!(
        session(&app).target,
        heftsheet::tui::app::EditTarget::Header
    ));
    press(&mut app, KeyCode::Esc);
    assert_eq!(app.sig_figs(), 4, "the header's sig_figs");
    press_char(&mut app, 'T');
    while session(&app).cursor_row() < 7 {
        press(&mut app, KeyCode::Down);
    }
    assert_eq!(session(&app).input.value(), "sig_figs = 4");
    update(&mut app, ctrl('u'));
    type_text(&mut app, "sig_figs = 6");
    update(&mut app, ctrl('s'));
    assert_eq!(app.sig_figs(), 6);
    press_char(&mut app, '<');
    assert_eq!(app.sig_figs(), 4);
    assert_eq!(app.live().text(), SKID_LIFT);
}

// ----- random key-driven edits over every block kind -----

/// A sheet with a statement of every kind the notebook shows: the header,
/// headings, notes, cells, a solve block, vectors and a free body, a load
/// case, a simulate block, a run query and a check (invented figures:
/// a = (30 N − 0.1 × 12 kg × 9.80665 m/s²) / 12 kg = 1.519 m/s²).
const EVERY_KIND: &str = "\
+++
title = \"Trolley on the bench rail\"
revision = \"A\"
prepared_by = \"test\"
+++
// Invented figures: a small trolley pushed along a bench rail.
# Inputs
m = 12 kg              \"trolley\"
F = 30 N               \"push\"
μ = 0.1                \"rolling resistance\"
> The push is steady.

solve a [m/s^2] ~ 1:
  F - μ * m * g0 = m * a
end

f_push = vec(F, 0 N)                  \"push\"
f_roll = vec(-μ * m * g0, 0 N)        \"rolling resistance\"
body trolley: f_push, f_roll          \"trolley on the rail\"

case heavy \"a heavier trolley\":
  m = 20 kg
end

simulate t from 0 s to 2 s:
  x' = v
  v' = a
  x(0) = 0 m
  v(0) = 0 m/s
end

x_end [m] = x at end                  \"travel in two seconds\"
check a >= 0.5 m/s^2 \"it starts briskly\"
";

/// The sheet, with CRLF breaks and no final break, or without its header.
fn every_kind_variant(variant: usize) -> String {
    match variant % 3 {
        0 => EVERY_KIND.to_string(),
        1 => EVERY_KIND.replace('\n', "\r\n").trim_end().to_string(),
        _ => EVERY_KIND
            .split_once("+++\n// Invented")
            .map(|(_, body)| format!("// Invented{body}"))
            .expect("the header's end"),
    }
}

/// A key in the editor.
#[derive(Clone, Debug)]
enum EditorKey {
    Type(&'static str),
    Enter,
    Backspace,
    Delete,
    Up,
    Down,
    Left,
    Right,
    Home,
    End,
    ClearLine,
}

/// One thing done with the notebook's keys.
#[derive(Clone, Debug)]
enum BlockOp {
    Delete {
        row: usize,
    },
    Undo,
    Redo,
    Add {
        row: usize,
        kind: char,
        text: &'static str,
    },
    Edit {
        row: usize,
        keys: Vec<EditorKey>,
        keep: bool,
    },
    Header {
        keys: Vec<EditorKey>,
        keep: bool,
    },
}

const CHUNKS: &[&str] = &[
    "x",
    " = 2 m",
    "end",
    "solve q [m] ~ 1:",
    "  2 * q = 3 m",
    "case light:",
    "  m = 8 kg",
    "+++",
    "title = \"T\"",
    "(",
    "μ",
];

fn editor_key() -> impl Strategy<Value = EditorKey> + Clone {
    prop_oneof![
        3 => proptest::sample::select(CHUNKS).prop_map(EditorKey::Type),
        2 => Just(EditorKey::Enter),
        1 => Just(EditorKey::Backspace),
        1 => Just(EditorKey::Delete),
        1 => Just(EditorKey::Up),
        1 => Just(EditorKey::Down),
        1 => Just(EditorKey::Left),
        1 => Just(EditorKey::Right),
        1 => Just(EditorKey::Home),
        1 => Just(EditorKey::End),
        1 => Just(EditorKey::ClearLine),
    ]
}

fn block_op() -> impl Strategy<Value = BlockOp> {
    let keys = proptest::collection::vec(editor_key(), 0..5);
    prop_oneof![
        2 => any::<usize>().prop_map(|row| BlockOp::Delete { row }),
        2 => Just(BlockOp::Undo),
        1 => Just(BlockOp::Redo),
        2 => (
            any::<usize>(),
            proptest::sample::select(&['a', 'h', 't', 'c'][..]),
            proptest::sample::select(CHUNKS)
        )
            .prop_map(|(row, kind, text)| BlockOp::Add { row, kind, text }),
        // Kept more often than put back, so that edits pile up for undo.
        4 => (any::<usize>(), keys.clone(), proptest::bool::weighted(0.75))
            .prop_map(|(row, keys, keep)| BlockOp::Edit { row, keys, keep }),
        1 => (keys, proptest::bool::weighted(0.75))
            .prop_map(|(keys, keep)| BlockOp::Header { keys, keep }),
    ]
}

fn press_editor_key(app: &mut App, key: &EditorKey) {
    let code = match key {
        EditorKey::Type(text) => {
            type_text(app, text);
            return;
        }
        EditorKey::ClearLine => {
            update(app, ctrl('u'));
            return;
        }
        EditorKey::Enter => KeyCode::Enter,
        EditorKey::Backspace => KeyCode::Backspace,
        EditorKey::Delete => KeyCode::Delete,
        EditorKey::Up => KeyCode::Up,
        EditorKey::Down => KeyCode::Down,
        EditorKey::Left => KeyCode::Left,
        EditorKey::Right => KeyCode::Right,
        EditorKey::Home => KeyCode::Home,
        EditorKey::End => KeyCode::End,
    };
    press(app, code);
}

/// A text's lines as (text, break); the last break is "" in a file
/// without a final one.
fn split_lines(text: &str) -> Vec<(&str, &str)> {
    text.split_inclusive('\n')
        .map(|line| {
            let body = line
                .strip_suffix('\n')
                .map_or(line, |l| l.strip_suffix('\r').unwrap_or(l));
            (body, &line[body.len()..])
        })
        .collect()
}

/// Checks that `after` is `before` with at most the lines `range` of
/// `before` replaced: every other line byte for byte, except that the line
/// which becomes or stops being the last of a file without a final break
/// gains or loses that break.
fn only_lines_changed(
    before: &str,
    after: &str,
    range: std::ops::Range<usize>,
) -> Result<(), TestCaseError> {
    let (old, new) = (split_lines(before), split_lines(after));
    let n_suffix = old.len() - range.end;
    prop_assert!(new.len() >= range.start + n_suffix, "lines were lost");
    for index in 0..range.start {
        let last = index + 1 == old.len() || index + 1 == new.len();
        prop_assert_eq!(old[index].0, new[index].0, "line {} changed", index + 1);
        prop_assert!(
            last || old[index].1 == new[index].1,
            "line {}'s break",
            index + 1
        );
    }
    for offset in 0..n_suffix {
        let (was, is) = (old[range.end + offset], new[new.len() - n_suffix + offset]);
        prop_assert_eq!(was, is, "line {} changed", range.end + offset + 1);
    }
    Ok(())
}

/// A row as the notebook shows it, in words.
fn row_words(row: Row<'_>) -> String {
    match row {
        Row::Heading { level, text } => format!("heading {level} {text}"),
        Row::Note { text } => format!("note {text}"),
        Row::Cell(cell) => format!("cell {} = {}", cell.name, cell.formula),
        Row::Check(index, check) => format!("check {index} {:?}", check.status),
        Row::Block { head } => format!("block {head}"),
        Row::Review { text } => format!("review {text}"),
        Row::Invalid { text } => format!("invalid {text}"),
    }
}

/// Checks that the live sheet is what its text reads as afresh: the same
/// statements on the same lines, rows of the same kind, header and findings.
fn reparses_to_the_rows_shown(app: &App) -> Result<(), TestCaseError> {
    let live = app.live();
    let text = live.text();
    let fresh = heftsheet::live::LiveSheet::open(&text);
    prop_assert_eq!(
        live.n_statements(),
        fresh.n_statements(),
        "statements of\n{}",
        text
    );
    let mut rows = live.rows().to_vec();
    rows.sort_unstable();
    prop_assert_eq!(rows, (0..live.n_statements() as u32).collect::<Vec<_>>());
    for statement in 0..live.n_statements() {
        prop_assert_eq!(
            live.statement_text(statement),
            fresh.statement_text(statement)
        );
        prop_assert_eq!(
            live.statement_lines(statement),
            fresh.statement_lines(statement)
        );
        prop_assert_eq!(
            row_words(live.row(statement)),
            row_words(fresh.row(statement))
        );
    }
    prop_assert_eq!(live.header(), fresh.header());
    let places = |sheet: &heftsheet::live::LiveSheet| {
        let mut found: Vec<_> = sheet
            .findings()
            .into_iter()
            .map(|f| (f.line, f.column, f.code, f.message))
            .collect();
        found.sort();
        found
    };
    prop_assert_eq!(places(live), places(&fresh), "findings of\n{}", text);
    prop_assert!(live.rows().is_empty() || app.selected() < live.rows().len());
    Ok(())
}

/// Does `op`; returns the lines of the text before it that it may change
/// (`None`: any, as for a redo).
fn do_block_op(app: &mut App, op: &BlockOp) -> Option<std::ops::Range<usize>> {
    let selected_lines = |app: &App| {
        app.selected_statement()
            .map(|statement| app.live().statement_lines(statement))
    };
    let finish = |app: &mut App, keep: bool| {
        if matches!(app.mode(), Mode::Editing(_)) {
            if keep {
                update(app, ctrl('s'));
            } else {
                press(app, KeyCode::Esc);
            }
        }
    };
    match op {
        BlockOp::Delete { row } => {
            go_to_row(app, *row);
            let lines = selected_lines(app);
            press_char(app, 'x');
            Some(lines.unwrap_or(0..0))
        }
        BlockOp::Undo => {
            let change = app.history().last_change().cloned();
            press_char(app, '<');
            Some(change.map_or(0..0, |c| c.first..c.first + c.after.len()))
        }
        BlockOp::Redo => {
            press_char(app, '>');
            None
        }
        BlockOp::Add { row, kind, text } => {
            go_to_row(app, *row);
            let at = selected_lines(app)
                .map_or(app.live().document().n_lines(), |lines| lines.end)
                .max(app.live().document().editable_from());
            press_char(app, *kind);
            type_text(app, text);
            // A block head typed here breaks the line on Enter: Ctrl+S keeps.
            press(app, KeyCode::Enter);
            finish(app, true);
            Some(at..at)
        }
        BlockOp::Edit { row, keys, keep } => {
            go_to_row(app, *row);
            let lines = selected_lines(app);
            press_char(app, 'e');
            for key in keys {
                // Enter keeps a one-line edit; the keys after it are not typed.
                if !matches!(app.mode(), Mode::Editing(_)) {
                    break;
                }
                press_editor_key(app, key);
            }
            finish(app, *keep);
            Some(lines.unwrap_or(0..0))
        }
        BlockOp::Header { keys, keep } => {
            let lines = app.live().document().header_lines().unwrap_or(0..0);
            press_char(app, 'T');
            for key in keys {
                press_editor_key(app, key);
            }
            finish(app, *keep);
            Some(lines)
        }
    }
}

#[test]
fn the_untouched_lines_check_catches_a_change_outside_the_edit() {
    let before = "a\nb\nc";
    assert!(only_lines_changed(before, "a\nB\nc", 1..2).is_ok());
    assert!(
        only_lines_changed(before, "a\nb", 2..3).is_ok(),
        "b may lose its break"
    );
    assert!(only_lines_changed(before, "a\nb\nX\nc", 2..2).is_ok());
    assert!(only_lines_changed(before, "A\nB\nc", 1..2).is_err());
    assert!(only_lines_changed(before, "a\nB\nC", 1..2).is_err());
    assert!(only_lines_changed(before, "a\r\nB\nc", 1..2).is_err());
    assert!(only_lines_changed(before, "a\nB\nc\n", 1..2).is_err());
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(64))]

    #[test]
    fn random_key_edits_of_blocks_and_the_header_keep_every_other_line_and_undo_exactly(
        variant in 0..3usize,
        ops in proptest::collection::vec(block_op(), 1..7),
    ) {
        let original = every_kind_variant(variant);
        let mut app = app_for(&original);
        reparses_to_the_rows_shown(&app)?;
        for op in &ops {
            let before = app.live().text();
            let lines = do_block_op(&mut app, op);
            prop_assert!(matches!(app.mode(), Mode::Browse), "{:?} left the editor open", op);
            let after = app.live().text();
            if let Some(lines) = lines {
                only_lines_changed(&before, &after, lines)?;
            }
            reparses_to_the_rows_shown(&app)?;
        }
        let last = app.live().text();
        let n_changes = app.history().undoable();
        for _ in 0..n_changes {
            press_char(&mut app, '<');
        }
        prop_assert_eq!(app.live().text(), original.clone(), "undo all the way");
        prop_assert!(!app.is_dirty());
        reparses_to_the_rows_shown(&app)?;
        for _ in 0..n_changes {
            press_char(&mut app, '>');
        }
        prop_assert_eq!(app.live().text(), last, "redo all the way");
    }
}

#[test]
fn a_byte_order_mark_is_read_past_and_kept_through_an_edit() {
    // A sheet saved by an editor that writes a UTF-8 byte-order mark: the
    // header reads, the mark is no finding, and an edit keeps it in place.
    let text = "\u{feff}+++\ntitle = \"Marked\"\n+++\nm = 4 kg\nW [N] = m * g0\n";
    let mut app = app_for(text);
    assert_eq!(app.live().n_findings(), 0, "{:?}", app.live().findings());
    assert_eq!(app.live().header().title.as_deref(), Some("Marked"));
    select_cell(&mut app, "m");
    press(&mut app, KeyCode::Enter);
    clear_field(&mut app);
    type_text(&mut app, "5 kg");
    press(&mut app, KeyCode::Enter);
    let edited = app.live().text();
    assert_eq!(edited, text.replace("m = 4 kg", "m = 5 kg"));
    assert!(edited.starts_with('\u{feff}'));
}

#[test]
fn a_line_added_after_the_last_of_a_file_without_a_final_break_undoes_to_the_same_bytes() {
    // The sheet with blocks is read afresh on every edit; the new, still
    // empty last line of a file without a final break must survive that
    // (it was dropped, the typed text refused and a stray break left).
    let with_blocks = every_kind_variant(1);
    for text in [
        "m = 1 kg\r\nW = m * g0",
        "m = 1 kg\nW = m * g0",
        "m = 1 kg\r\nW = m * g0\r\n",
        "",
        with_blocks.as_str(),
    ] {
        let mut app = app_for(text);
        press(&mut app, KeyCode::End);
        press_char(&mut app, 'a');
        type_text(&mut app, "x = 2");
        press(&mut app, KeyCode::Enter);
        let added = app.live().text();
        assert!(added.trim_end().ends_with("x = 2"), "{added:?}");
        assert_eq!(app.history().undoable(), 1);
        press_char(&mut app, '<');
        assert_eq!(app.live().text(), text, "after adding {added:?}");
    }
}
