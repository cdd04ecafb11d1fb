//! The event loop: the real terminal, its events, and the effects that
//! need I/O. The terminal is restored on every exit: quitting, an error, a
//! panic, and a termination signal (SIGTERM, SIGHUP, SIGINT, SIGQUIT), on
//! which the unsaved text is kept in the recovery copy first. Only a signal
//! no program can catch (`kill -9`) leaves the terminal as it was.

use std::io::{self, IsTerminal};
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::mpsc::{self, Receiver, Sender};
use std::time::{Duration, Instant};

use ratatui::DefaultTerminal;
use ratatui::crossterm::event::{
    self, DisableMouseCapture, EnableMouseCapture, Event, KeyEventKind,
};
use ratatui::crossterm::execute;
use ratatui::layout::Rect;

use super::app::{self, App, Effect, Message, update};
use super::files::{SaveError, Session};
use super::strings;
use super::theme::Theme;
use super::view::view;
use crate::sheet::SheetLoader;

/// Opens `path` in the notebook and runs it until the user quits; the
/// notebook's lock on the sheet goes when it ends.
pub fn run(path: &Path, colour: bool) -> io::Result<()> {
    if !io::stdout().is_terminal() || !io::stdin().is_terminal() {
        return Err(io::Error::other(strings::NEEDS_TERMINAL));
    }
    let (session, opened) = Session::start(path)?;
    let mut upkeep = Upkeep::new(&session);
    let stop = Arc::new(AtomicBool::new(false));
    for signal in signal_hook::consts::TERM_SIGNALS
        .iter()
        .chain(&[signal_hook::consts::SIGHUP])
    {
        signal_hook::flag::register(*signal, Arc::clone(&stop))?;
    }
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
    // The sheets `use` lines name and the tables' files are read beside
    // the sheet (`include::FileLoader`), a table's file once, as it opens.
    let mut app = App::new(
        opened,
        Rect::new(0, 0, size.width, size.height),
        Theme::new(colour),
    );
    let linter = Linter::start(app.live_loader());
    if let Effect::Lint { revision, text } = app.lint_request() {
        linter.request(revision, text);
    }
    let outcome = event_loop(
        &mut terminal,
        &mut app,
        &session,
        &linter,
        &mut upkeep,
        &stop,
    );
    let _ = execute!(io::stdout(), DisableMouseCapture);
    ratatui::try_restore()?;
    outcome
}

/// How long the loop waits for a terminal event before it looks for lint
/// findings.
const LINT_POLL: Duration = Duration::from_millis(40);
/// How soon text being typed reaches the recovery copy: a crash while
/// typing loses at most this much of it (plus one [`LINT_POLL`]).
const RECOVERY_DELAY: Duration = Duration::from_millis(300);
/// How often the loop looks for another notebook opening the sheet.
const OTHERS_POLL: Duration = Duration::from_secs(3);

/// The loop's chores between events: the recovery copy of text being
/// typed, and telling the user of another notebook on the sheet.
struct Upkeep {
    /// When the text being typed is to be written to the recovery copy.
    recovery_due: Option<Instant>,
    /// When other notebooks were last looked for.
    others_checked: Instant,
    /// The lock files of the other notebooks known to the user.
    others_known: Vec<PathBuf>,
}

impl Upkeep {
    fn new(session: &Session) -> Upkeep {
        Upkeep {
            recovery_due: None,
            others_checked: Instant::now(),
            others_known: session
                .other_notebooks()
                .into_iter()
                .map(|other| other.lock)
                .collect(),
        }
    }

    /// Does the chores that are due; returns what to tell the app, if any.
    fn run_due(&mut self, app: &App, session: &Session) -> Option<Message> {
        let now = Instant::now();
        if self.recovery_due.is_some_and(|due| now >= due) {
            self.recovery_due = None;
            if let Performed::Answer(message) = keep_or_drop(app.recovery_effect(), session) {
                return Some(message);
            }
        }
        if now.duration_since(self.others_checked) >= OTHERS_POLL {
            self.others_checked = now;
            let others = session.other_notebooks();
            let newcomer = others
                .iter()
                .find(|other| !self.others_known.contains(&other.lock))
                .cloned();
            self.others_known = others.into_iter().map(|other| other.lock).collect();
            if let Some(other) = newcomer {
                return Some(Message::Notice(strings::other_notebook_opened(&other)));
            }
        }
        None
    }
}

fn event_loop(
    terminal: &mut DefaultTerminal,
    app: &mut App,
    session: &Session,
    linter: &Linter,
    upkeep: &mut Upkeep,
    stop: &AtomicBool,
) -> io::Result<()> {
    loop {
        terminal.draw(|frame| view(app, frame))?;
        let message = loop {
            if stop.load(Ordering::Relaxed) {
                // Keep what is typed, then leave through the normal exit,
                // which gives the terminal back.
                let _ = keep_or_drop(app.recovery_effect(), session);
                return Err(io::Error::other(strings::STOPPED_BY_SIGNAL));
            }
            // First, so that a stream of keys does not put it off.
            if let Some(message) = upkeep.run_due(app, session) {
                break message;
            }
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
                match perform(effect, session, linter, upkeep) {
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

fn perform(effect: Effect, session: &Session, linter: &Linter, upkeep: &mut Upkeep) -> Performed {
    match effect {
        Effect::Lint { revision, text } => {
            linter.request(revision, text);
            Performed::Done
        }
        Effect::Save {
            text,
            expected,
            overwrite,
            replace_read_only,
        } => Performed::Answer(
            match session.save(&text, expected, overwrite, replace_read_only) {
                Ok(fingerprint) => Message::Saved(fingerprint),
                Err(SaveError::ChangedOnDisk) => Message::SaveRefused,
                Err(SaveError::ReadOnly) => Message::SaveReadOnly,
                Err(SaveError::Io(error)) => {
                    Message::SaveFailed(strings::save_failed(session.path(), &error))
                }
            },
        ),
        Effect::KeepRecoverySoon => {
            upkeep
                .recovery_due
                .get_or_insert_with(|| Instant::now() + RECOVERY_DELAY);
            Performed::Done
        }
        Effect::KeepRecovery(_) | Effect::DropRecovery => {
            // The copy is now in step with the text: nothing more is due.
            upkeep.recovery_due = None;
            keep_or_drop(effect, session)
        }
        Effect::AdoptCopy { path, text } => recovery_outcome(session, session.adopt(&path, &text)),
        Effect::DiscardCopy(path) => recovery_outcome(session, session.discard(&path)),
        Effect::Quit => Performed::Quit,
    }
}

/// Carries out [`Effect::KeepRecovery`] or [`Effect::DropRecovery`].
fn keep_or_drop(effect: Effect, session: &Session) -> Performed {
    match effect {
        Effect::KeepRecovery(text) => recovery_outcome(session, session.keep_recovery(&text)),
        Effect::DropRecovery => recovery_outcome(session, session.drop_recovery()),
        _ => Performed::Done,
    }
}

fn recovery_outcome(session: &Session, outcome: io::Result<()>) -> Performed {
    match outcome {
        Ok(()) => Performed::Done,
        Err(error) => Performed::Answer(Message::RecoveryFailed(strings::recovery_failed(
            session.path(),
            &error,
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
    fn start(loader: Arc<dyn SheetLoader + Send + Sync>) -> Linter {
        let (requests, waiting) = mpsc::channel::<(u64, String)>();
        let (answer, answers) = mpsc::channel();
        std::thread::spawn(move || {
            while let Ok(mut request) = waiting.recv() {
                while let Ok(newer) = waiting.try_recv() {
                    request = newer;
                }
                let (revision, text) = request;
                if answer.send(app::lint(revision, text, &*loader)).is_err() {
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
