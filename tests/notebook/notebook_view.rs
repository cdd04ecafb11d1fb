//! The notebook's drawing, on ratatui's TestBackend, against snapshots at
//! 80×24 and 160×48 (text; styles are checked separately for colour).

use heftsheet::tui::files::{Fingerprint, Opened};
use heftsheet::tui::theme::Theme;
use heftsheet::tui::{App, Message, update, view};
use ratatui::Terminal;
use ratatui::backend::TestBackend;
use ratatui::crossterm::event::{KeyCode, KeyEvent, KeyModifiers};
use ratatui::layout::Rect;
use ratatui::style::Color;

const SKID_LIFT: &str = include_str!("../../sheets/skid_lift.heft");
const CART_TRAIN: &str = include_str!("../../sheets/cart_train.heft");

const BROKEN: &str = "\
+++
title = \"Bench fixture, broken on purpose\"
revision = \"B\"
+++
# Clamp
m_part = 12 kg          \"part on the slide\"
a_slide = 3 m/s^2       \"slide acceleration\"
F_hold [lbf] = m_part   \"weight, not a force\"
F_need [N] = m_part * a_slide + mu
check F_need <= 40 N \"clamp rating\"
";

fn app(text: &str, width: u16, height: u16, colour: bool) -> App {
    App::new(
        Opened {
            path: "sheets/demo.heft".into(),
            text: text.to_string(),
            disk: Some(Fingerprint::of(text.as_bytes())),
            recovery: Vec::new(),
            notices: Vec::new(),
        },
        Rect::new(0, 0, width, height),
        Theme::new(colour),
    )
}

fn keys(app: &mut App, keys: &[KeyCode]) {
    for &code in keys {
        update(app, Message::Key(KeyEvent::new(code, KeyModifiers::NONE)));
    }
}

fn typed(app: &mut App, text: &str) {
    for c in text.chars() {
        keys(app, &[KeyCode::Char(c)]);
    }
}

fn find(app: &mut App, name: &str) {
    keys(app, &[KeyCode::Char('f')]);
    typed(app, name);
    keys(app, &[KeyCode::Enter]);
}

/// Carries out the lint the notebook asks for, as its event loop does on
/// its lint thread (the findings' fixes are verified there).
fn linted(app: &mut App) {
    if let heftsheet::tui::app::Effect::Lint { revision, text } = app.lint_request() {
        update(
            app,
            heftsheet::tui::app::lint(revision, text, &heftsheet::sheet::NoFiles),
        );
    }
}

fn draw(app: &App) -> Terminal<TestBackend> {
    let area = app.viewport();
    let mut terminal = Terminal::new(TestBackend::new(area.width, area.height)).expect("terminal");
    terminal.draw(|frame| view(app, frame)).expect("draw");
    terminal
}

#[test]
fn demo_sheet_at_80_by_24() {
    let app = app(SKID_LIFT, 80, 24, false);
    insta::assert_snapshot!(draw(&app).backend());
}

#[test]
fn a_selected_cell_at_160_by_48() {
    let mut app = app(SKID_LIFT, 160, 48, false);
    find(&mut app, "T_brake");
    insta::assert_snapshot!(draw(&app).backend());
}

#[test]
fn a_selected_cell_at_80_by_24() {
    let mut app = app(SKID_LIFT, 80, 24, false);
    find(&mut app, "T_brake");
    insta::assert_snapshot!(draw(&app).backend());
}

#[test]
fn a_weight_typed_as_a_mass_is_flagged_while_editing_80_by_24() {
    let mut app = app(SKID_LIFT, 80, 24, false);
    find(&mut app, "m_tot");
    keys(&mut app, &[KeyCode::Enter, KeyCode::End]);
    typed(&mut app, " + WLL");
    linted(&mut app);
    insta::assert_snapshot!(draw(&app).backend());
}

#[test]
fn findings_and_a_broken_sheet_at_80_by_24() {
    let mut app = app(BROKEN, 80, 24, false);
    linted(&mut app);
    find(&mut app, "F_hold");
    insta::assert_snapshot!("broken_sheet_80x24", draw(&app).backend());
    keys(&mut app, &[KeyCode::Char('!')]);
    insta::assert_snapshot!("findings_overlay_80x24", draw(&app).backend());
}

#[test]
fn a_broken_sheet_at_160_by_48() {
    let mut app = app(BROKEN, 160, 48, false);
    linted(&mut app);
    find(&mut app, "F_hold");
    insta::assert_snapshot!(draw(&app).backend());
}

#[test]
fn fps_view_with_more_figures_at_160_by_48() {
    let mut app = app(CART_TRAIN, 160, 48, false);
    keys(
        &mut app,
        &[
            KeyCode::Char('u'),
            KeyCode::Char('u'),
            KeyCode::Char('+'),
            KeyCode::End,
        ],
    );
    insta::assert_snapshot!(draw(&app).backend());
}

#[test]
fn help_at_80_by_24_and_160_by_48() {
    let mut small = app(SKID_LIFT, 80, 24, false);
    keys(&mut small, &[KeyCode::Char('?')]);
    insta::assert_snapshot!("help_80x24", draw(&small).backend());
    let mut large = app(SKID_LIFT, 160, 48, false);
    keys(&mut large, &[KeyCode::Char('?')]);
    insta::assert_snapshot!("help_160x48", draw(&large).backend());
}

#[test]
fn find_overlay_and_quit_question_at_80_by_24() {
    let mut app = app(SKID_LIFT, 80, 24, false);
    keys(&mut app, &[KeyCode::Char('f')]);
    typed(&mut app, "t");
    insta::assert_snapshot!("find_80x24", draw(&app).backend());
    keys(
        &mut app,
        &[KeyCode::Esc, KeyCode::Char('x'), KeyCode::Char('q')],
    );
    insta::assert_snapshot!("quit_question_80x24", draw(&app).backend());
}

#[test]
fn a_new_empty_sheet_at_80_by_24() {
    let app = App::new(
        Opened {
            path: "new_fixture.heft".into(),
            text: String::new(),
            disk: None,
            recovery: Vec::new(),
            notices: Vec::new(),
        },
        Rect::new(0, 0, 80, 24),
        Theme::new(false),
    );
    insta::assert_snapshot!(draw(&app).backend());
}

/// Every foreground colour used in the frame.
fn colours(terminal: &Terminal<TestBackend>) -> Vec<Color> {
    let mut colours: Vec<Color> = terminal
        .backend()
        .buffer()
        .content()
        .iter()
        .map(|cell| cell.fg)
        .filter(|&fg| fg != Color::Reset)
        .collect();
    colours.sort_by_key(|c| format!("{c:?}"));
    colours.dedup();
    colours
}

#[test]
fn without_colour_only_emphasis_remains_and_the_text_is_the_same() {
    let mut plain = app(BROKEN, 80, 24, false);
    let mut coloured = app(BROKEN, 80, 24, true);
    find(&mut plain, "F_hold");
    find(&mut coloured, "F_hold");
    let (plain, coloured) = (draw(&plain), draw(&coloured));
    assert!(colours(&plain).is_empty(), "{:?}", colours(&plain));
    assert_eq!(plain.backend().to_string(), coloured.backend().to_string());
    // Colour uses only the terminal's own base colours, which follow its
    // light or dark scheme, and never sets a background.
    let used = colours(&coloured);
    assert!(used.contains(&Color::Red), "errors are red: {used:?}");
    assert!(
        used.iter()
            .all(|c| matches!(c, Color::Red | Color::Green | Color::Magenta))
    );
    assert!(
        coloured
            .backend()
            .buffer()
            .content()
            .iter()
            .all(|cell| cell.bg == Color::Reset)
    );
}

#[test]
fn a_frame_of_a_ten_thousand_row_sheet_draws_only_what_shows() {
    let mut text = String::from("# Long\nm0 = 1 kg\n");
    for i in 1..10_000 {
        text.push_str(&format!("m{i} [kg] = m{} + 1 kg\n", i - 1));
    }
    let mut app = app(&text, 80, 24, false);
    keys(&mut app, &[KeyCode::End]);
    let terminal = draw(&app);
    let screen = terminal.backend().to_string();
    assert!(screen.contains("m9999"), "{screen}");
    assert!(screen.contains("10000 kg"), "{screen}");
}

#[test]
fn tiny_and_odd_terminal_sizes_draw_without_panicking() {
    for (width, height) in [
        (1, 1),
        (2, 3),
        (10, 4),
        (20, 6),
        (40, 10),
        (79, 23),
        (119, 30),
        (120, 30),
        (300, 100),
    ] {
        for setup in [
            &[][..],
            &[KeyCode::Char('?')],
            &[KeyCode::Char('!')],
            &[KeyCode::Char('f')],
            &[KeyCode::Enter],
        ] {
            let mut app = app(BROKEN, width, height, true);
            keys(&mut app, &[KeyCode::Down, KeyCode::Down, KeyCode::Down]);
            keys(&mut app, setup);
            draw(&app);
        }
    }
}

/// The frame's text, row by row.
fn screen_text(app: &App) -> String {
    let terminal = draw(app);
    let buffer = terminal.backend().buffer();
    let area = buffer.area;
    (0..area.height)
        .map(|y| {
            (0..area.width)
                .map(|x| buffer[(x, y)].symbol().to_string())
                .collect::<String>()
        })
        .collect::<Vec<_>>()
        .join("\n")
}

#[test]
fn a_sweeps_row_shows_its_margins_in_the_detail() {
    let sheet = include_str!("../../sheets/hoist_sweep.heft");
    let mut app = app(sheet, 160, 48, false);
    find(&mut app, "F_tip");
    // The sweep's row comes a few rows below the last cell.
    let mut screen = String::new();
    for _ in 0..8 {
        keys(&mut app, &[KeyCode::Down]);
        screen = screen_text(&app);
        if screen.contains("passes up to") {
            break;
        }
    }
    // The margin `heft check` gives: 18 kN / 1475 kg − g0 (closed form).
    assert!(
        screen.contains("passes up to a_start = 2.397 m/s^2"),
        "{screen}"
    );
    assert!(screen.contains("13 values; a study"), "{screen}");
    assert!(screen.contains("sweep a_start from 0 m/s^2"), "{screen}");
}

#[test]
fn the_detail_shows_ranges_load_cases_and_verdicts() {
    let gantry = include_str!("../../sheets/gantry_cases.heft");
    let mut app = app(gantry, 160, 48, false);
    find(&mut app, "T_rope");
    let screen = screen_text(&app);
    // T_rope's range over the tolerances, as `heft check` gives it, and its
    // value in each case.
    let evaluated = heftsheet::pipeline::run(gantry);
    let id = evaluated.cell("T_rope").map(|c| c.id).expect("T_rope");
    let range = evaluated.ranges[id].clone().expect("a range");
    let high = heftsheet::units::format_significant(range.high / 1000.0, 4);
    assert!(screen.contains("range"), "{screen}");
    assert!(
        screen.contains(&format!("{high} kN")),
        "{high} in\n{screen}"
    );
    assert!(screen.contains("exact: worst corners"), "{screen}");
    assert!(
        screen.contains("load cases") && screen.contains("estop"),
        "{screen}"
    );
    // The row under F_beam is the rope check.
    find(&mut app, "F_beam");
    keys(&mut app, &[KeyCode::Down]);
    let screen = screen_text(&app);
    assert!(screen.contains("worst case"), "{screen}");
    assert!(
        screen.contains("*estop"),
        "the governing case is marked\n{screen}"
    );
    assert!(
        screen.contains("verdict") && screen.contains("PASS"),
        "{screen}"
    );
}

#[test]
fn a_block_and_a_new_header_in_the_editor_of_several_lines_at_80_by_24() {
    let mut block = app(
        include_str!("../../sheets/lift_slide_clamp.heft"),
        80,
        24,
        false,
    );
    find(&mut block, "N_req");
    keys(
        &mut block,
        &[KeyCode::Char('e'), KeyCode::Down, KeyCode::End],
    );
    typed(&mut block, " +*");
    // The lines with their numbers, the keys on the lower border, the
    // cursor's place and the error of the line typed on the bottom line.
    insta::assert_snapshot!("block_editor_80x24", draw(&block).backend());
    let mut header = app("", 80, 24, false);
    keys(&mut header, &[KeyCode::Char('T')]);
    typed(&mut header, "Bench hoist hook");
    insta::assert_snapshot!("new_header_editor_80x24", draw(&header).backend());
    let mut terminal = draw(&header);
    // The cursor is in the title's quotes: "title = \"" is 9 columns, after
    // the line number's gutter and the border.
    terminal.show_cursor().expect("cursor");
    let position = terminal.get_cursor_position().expect("cursor");
    assert_eq!(position.y, header.areas().detail.y + 2);
    assert_eq!(
        position.x,
        header.areas().detail.x + 1 + 2 + 9 + "Bench hoist hook".len() as u16
    );
}

/// The hostile corpus's sheet with controls in every text field, drawn with
/// every row selected and the findings and help open: no cell of the
/// screen holds a character a terminal would obey (C0, DEL, C1, the
/// bidirectional controls, line and paragraph separators).
#[test]
fn sheet_text_never_reaches_the_screen_as_a_control() {
    let text = std::fs::read_to_string("tests/sheets/hostile/controls_everywhere.heft")
        .expect("the corpus sheet");
    let obeyed = |c: char| {
        c.is_control()
            || matches!(c, '\u{061C}' | '\u{200E}' | '\u{200F}' | '\u{202A}'..='\u{202E}' | '\u{2066}'..='\u{2069}' | '\u{2028}' | '\u{2029}')
    };
    for (width, height) in [(80, 24), (160, 48)] {
        let mut notebook = app(&text, width, height, true);
        let mut terminal = Terminal::new(TestBackend::new(width, height)).expect("a test terminal");
        let mut screens = 0;
        let mut shown = String::new();
        let mut look = |notebook: &App| {
            terminal
                .draw(|frame| view(notebook, frame))
                .expect("the notebook draws");
            for cell in terminal.backend().buffer().content() {
                assert!(
                    !cell.symbol().chars().any(obeyed),
                    "{:?} drawn at {width}×{height}",
                    cell.symbol()
                );
                shown.push_str(cell.symbol());
            }
            screens += 1;
        };
        look(&notebook);
        for _ in 0..40 {
            keys(&mut notebook, &[KeyCode::Down]);
            look(&notebook);
        }
        for key in ['!', '?', 'T'] {
            keys(&mut notebook, &[KeyCode::Char(key)]);
            look(&notebook);
            keys(&mut notebook, &[KeyCode::Esc]);
        }
        assert!(screens > 40);
        // The hostile text itself was on screen, around its controls.
        for words in ["tension", "rope holds", "pass", "cm0gLXJmIH4="] {
            assert!(
                shown.contains(words),
                "`{words}` never drawn at {width}×{height}"
            );
        }
    }
}
