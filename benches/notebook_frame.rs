//! Key press to frame in the notebook on a 10,000-cell sheet: the update
//! for one key (with its recompute) and a full draw on ratatui's
//! TestBackend at 160×48.
//!
//! Run with `cargo bench --bench notebook_frame`; figures are recorded in docs/performance.md.

use criterion::{Criterion, criterion_group, criterion_main};
use heftsheet::tui::files::{self, Fingerprint, Opened};
use heftsheet::tui::theme::Theme;
use heftsheet::tui::{App, Effect, Message, update, view};
use ratatui::Terminal;
use ratatui::backend::TestBackend;
use ratatui::crossterm::event::{KeyCode, KeyEvent, KeyModifiers};
use ratatui::layout::Rect;

mod common;
use common::sectioned_sheet;

/// The binary uses mimalloc; measure with the same allocator and settings
/// (`heftsheet::allocator::configure`).
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

fn press(app: &mut App, code: KeyCode) {
    update(app, Message::Key(KeyEvent::new(code, KeyModifiers::NONE)));
}

fn notebook() -> (App, Terminal<TestBackend>) {
    let text = sectioned_sheet(100);
    let app = App::new(
        Opened {
            path: "generated.heft".into(),
            text: text.clone(),
            disk: Some(Fingerprint::of(text.as_bytes())),
            recovery: Vec::new(),
            notices: Vec::new(),
        },
        Rect::new(0, 0, 160, 48),
        Theme::new(true),
    );
    assert_eq!(app.live().n_cells(), 10_000);
    let terminal = Terminal::new(TestBackend::new(160, 48)).expect("terminal");
    (app, terminal)
}

/// Selects cell `name` through the find overlay.
fn select(app: &mut App, name: &str) {
    press(app, KeyCode::Char('f'));
    for c in name.chars() {
        press(app, KeyCode::Char(c));
    }
    press(app, KeyCode::Enter);
}

fn key_to_frame(c: &mut Criterion) {
    heftsheet::allocator::configure();
    let mut group = c.benchmark_group("notebook_frame_10k");

    // Typing in an input's formula: each key recomputes the 100 cells of
    // its section, then the frame is drawn.
    let (mut app, mut terminal) = notebook();
    select(&mut app, "m50");
    press(&mut app, KeyCode::Enter);
    press(&mut app, KeyCode::Home);
    let mut flip = false;
    group.bench_function("type a digit in an input", |b| {
        b.iter(|| {
            flip = !flip;
            press(
                &mut app,
                if flip {
                    KeyCode::Char('1')
                } else {
                    KeyCode::Delete
                },
            );
            terminal.draw(|frame| view(&app, frame)).expect("draw");
        })
    });
    assert_eq!(app.live().last_evaluated(), 100);

    // Moving the selection.
    let (mut app, mut terminal) = notebook();
    select(&mut app, "w50_50");
    let mut flip = false;
    group.bench_function("move the selection", |b| {
        b.iter(|| {
            flip = !flip;
            press(&mut app, if flip { KeyCode::Down } else { KeyCode::Up });
            terminal.draw(|frame| view(&app, frame)).expect("draw");
        })
    });

    // A structural edit: delete a line, then undo it; each relinks and
    // evaluates all 10,000 cells, and the event loop writes the recovery
    // copy (done here too, into a temporary directory).
    let (mut app, mut terminal) = notebook();
    select(&mut app, "w50_50");
    let directory = tempfile::tempdir().expect("a temporary directory");
    let sheet_path = directory.path().join("generated.heft");
    let (session, _) = files::Session::start(&sheet_path).expect("a notebook session");
    let mut flip = false;
    group.bench_function("delete a line or undo it (full relink)", |b| {
        b.iter(|| {
            flip = !flip;
            let key = KeyCode::Char(if flip { 'x' } else { '<' });
            let effects = update(
                &mut app,
                Message::Key(KeyEvent::new(key, KeyModifiers::NONE)),
            );
            for effect in effects {
                if let Effect::KeepRecovery(text) = effect {
                    session.keep_recovery(&text).expect("recovery copy");
                }
            }
            terminal.draw(|frame| view(&app, frame)).expect("draw");
        })
    });
    // The whole sheet, less the deleted cell when a deletion came last.
    assert!(app.live().last_evaluated() >= 9_999);
    group.finish();
}

criterion_group!(benches, key_to_frame);
criterion_main!(benches);
