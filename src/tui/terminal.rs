//! The event loop: the real terminal, its events, and the effects that
//! need I/O. The terminal is restored on every exit, panics included.

use std::io::{self, IsTerminal};
use std::path::Path;
use std::sync::mpsc::{self, Receiver, Sender};
use std::time::Duration;

use ratatui::DefaultTerminal;
use ratatui::crossterm::event::{
    self, DisableMouseCapture, EnableMouseCapture, Event, KeyEventKind,
};
use ratatui::crossterm::execute;
use ratatui::layout::Rect;

use super::app::{self, App, Effect, Message, update};
use super::files::{self, SaveError};
use super::strings;
use super::theme::Theme;
use super::view::view;

/// Opens `path` in the notebook and runs it until the user quits.
pub fn run(path: &Path, colour: bool) -> io::Result<()> {
    if !io::stdout().is_terminal() || !io::stdin().is_terminal() {
        return Err(io::Error::other(strings::NEEDS_TERMINAL));
    }
    let opened = files::open(path)?;
    let mut terminal = ratatui::try_init()?;
    // ratatui's hook leaves raw mode and the alternate screen; also give
    // the mouse back, then report the panic as usual.
    let hook = std::panic::take_hook();
    std::panic::set_hook(Box::new(move |info| {
        let _ = execute!(io::stdout(), DisableMouseCapture);
        hook(info);
    }));
    let _ = execute!(io::stdout(), EnableMouseCapture);
    let size = terminal.size()?;
    let mut app = App::new(
        opened,
        Rect::new(0, 0, size.width, size.height),
        Theme::new(colour),
    );
    let linter = Linter::start();
    if let Effect::Lint { revision, text } = app.lint_request() {
        linter.request(revision, text);
    }
    let outcome = event_loop(&mut terminal, &mut app, path, &linter);
    let _ = execute!(io::stdout(), DisableMouseCapture);
    ratatui::try_restore()?;
    outcome
}

/// How long the loop waits for a terminal event before it looks for lint
/// findings.
const LINT_POLL: Duration = Duration::from_millis(40);

fn event_loop(
    terminal: &mut DefaultTerminal,
    app: &mut App,
    path: &Path,
    linter: &Linter,
) -> io::Result<()> {
    loop {
        terminal.draw(|frame| view(app, frame))?;
        let message = loop {
            if event::poll(LINT_POLL)? {
                match event::read()? {
                    Event::Key(key) if key.kind != KeyEventKind::Release => {
                        break Message::Key(key);
                    }
                    Event::Mouse(mouse) => break Message::Mouse(mouse),
                    Event::Resize(width, height) => break Message::Resize(width, height),
                    _ => continue,
                }
            }
            if let Ok(linted) = linter.answers.try_recv() {
                break linted;
            }
        };
        let mut pending = update(app, message);
        while !pending.is_empty() {
            let mut next = Vec::new();
            for effect in pending {
                match perform(effect, path, linter) {
                    Performed::Quit => return Ok(()),
                    Performed::Answer(message) => next.extend(update(app, message)),
                    Performed::Done => {}
                }
            }
            pending = next;
        }
    }
}

/// What carrying out an effect led to.
enum Performed {
    Done,
    Answer(Message),
    Quit,
}

fn perform(effect: Effect, path: &Path, linter: &Linter) -> Performed {
    match effect {
        Effect::Lint { revision, text } => {
            linter.request(revision, text);
            Performed::Done
        }
        Effect::Save {
            text,
            expected,
            overwrite,
        } => Performed::Answer(match files::save(path, &text, expected, overwrite) {
            Ok(fingerprint) => Message::Saved(fingerprint),
            Err(SaveError::ChangedOnDisk) => Message::SaveRefused,
            Err(SaveError::Io(error)) => Message::SaveFailed(strings::save_failed(path, &error)),
        }),
        Effect::KeepRecovery(text) => recovery_outcome(path, files::keep_recovery(path, &text)),
        Effect::DropRecovery => recovery_outcome(path, files::drop_recovery(path)),
        Effect::Quit => Performed::Quit,
    }
}

fn recovery_outcome(path: &Path, outcome: io::Result<()>) -> Performed {
    match outcome {
        Ok(()) => Performed::Done,
        Err(error) => Performed::Answer(Message::RecoveryFailed(strings::recovery_failed(
            path, &error,
        ))),
    }
}

/// Runs the lints on a thread of its own, so that typing never waits for
/// them; of the requests waiting, only the newest text is linted.
struct Linter {
    requests: Sender<(u64, String)>,
    answers: Receiver<Message>,
}

impl Linter {
    fn start() -> Linter {
        let (requests, waiting) = mpsc::channel::<(u64, String)>();
        let (answer, answers) = mpsc::channel();
        std::thread::spawn(move || {
            while let Ok(mut request) = waiting.recv() {
                while let Ok(newer) = waiting.try_recv() {
                    request = newer;
                }
                let (revision, text) = request;
                if answer.send(app::lint(revision, text)).is_err() {
                    break;
                }
            }
        });
        Linter { requests, answers }
    }

    /// Asks for the lint findings of `text` at `revision`. If the thread
    /// has gone, the notebook carries on without lint findings.
    fn request(&self, revision: u64, text: String) {
        let _ = self.requests.send((revision, text));
    }
}
