//! End to end: the real `heft` binary in a pseudo-terminal, read back
//! through a terminal emulator. Open a demo sheet, change an input, see a
//! dependent value change, save, and check that the saved file differs from
//! the original only on that line.

use std::io::{Read, Write};
use std::num::NonZeroU16;
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant};

use portable_pty::{Child, CommandBuilder, PtySize, native_pty_system};

const ROWS: NonZeroU16 = NonZeroU16::new(24).expect("24 rows");
const COLUMNS: NonZeroU16 = NonZeroU16::new(80).expect("80 columns");
/// Generous: a debug build on a busy two-core machine.
const PATIENCE: Duration = Duration::from_secs(30);

/// The notebook running in a pseudo-terminal, with the screen it draws.
struct Session {
    child: Box<dyn Child + Send + Sync>,
    writer: Box<dyn Write + Send>,
    screen: Arc<Mutex<vt100::Parser>>,
}

impl Session {
    fn start(file: &std::path::Path) -> Session {
        let pair = native_pty_system()
            .openpty(PtySize {
                rows: ROWS.get(),
                cols: COLUMNS.get(),
                pixel_width: 0,
                pixel_height: 0,
            })
            .expect("a pseudo-terminal");
        let mut command = CommandBuilder::new(env!("CARGO_BIN_EXE_heft"));
        command.arg(file);
        command.env("TERM", "xterm-256color");
        command.env("NO_COLOR", "1");
        let child = pair.slave.spawn_command(command).expect("heft starts");
        drop(pair.slave);
        let mut reader = pair.master.try_clone_reader().expect("reader");
        let writer = pair.master.take_writer().expect("writer");
        let screen = Arc::new(Mutex::new(vt100::Parser::new(ROWS, COLUMNS, 0)));
        let feed = Arc::clone(&screen);
        std::thread::spawn(move || {
            let mut buffer = [0u8; 8192];
            while let Ok(n) = reader.read(&mut buffer) {
                if n == 0 {
                    break;
                }
                if let Ok(mut parser) = feed.lock() {
                    parser.process(&buffer[..n]);
                }
            }
        });
        // The master must outlive the child; keep it alive with the session.
        std::mem::forget(pair.master);
        Session {
            child,
            writer,
            screen,
        }
    }

    fn contents(&self) -> String {
        self.screen
            .lock()
            .map(|parser| parser.screen().contents())
            .unwrap_or_default()
    }

    /// Finds the cell `name` and selects it.
    fn go_to(&mut self, name: &str) {
        self.send("f");
        self.send(name);
        self.send(ENTER);
    }

    /// Waits until the screen shows `text`.
    #[track_caller]
    fn wait_for(&mut self, text: &str) {
        let deadline = Instant::now() + PATIENCE;
        while Instant::now() < deadline {
            if self.contents().contains(text) {
                return;
            }
            std::thread::sleep(Duration::from_millis(50));
        }
        let screen = self.contents();
        let _ = self.child.kill();
        panic!("the screen never showed {text:?}; it shows:\n{screen}");
    }

    fn send(&mut self, keys: &str) {
        self.writer
            .write_all(keys.as_bytes())
            .expect("keys reach heft");
        self.writer.flush().expect("keys reach heft");
        // One read per key press is how a person types; give the loop time.
        std::thread::sleep(Duration::from_millis(100));
    }

    /// Waits for heft to exit and returns whether it succeeded.
    fn wait_exit(&mut self) -> bool {
        let deadline = Instant::now() + PATIENCE;
        while Instant::now() < deadline {
            if let Ok(Some(status)) = self.child.try_wait() {
                return status.success();
            }
            std::thread::sleep(Duration::from_millis(50));
        }
        let _ = self.child.kill();
        panic!("heft did not exit; the screen shows:\n{}", self.contents());
    }

    /// Stops heft at once, as `kill -9` does: no handler runs, nothing is
    /// written on the way out.
    fn kill_hard(&mut self) {
        let pid = self.child.process_id().expect("heft's process id");
        let status = std::process::Command::new("kill")
            .args(["-KILL", &pid.to_string()])
            .status()
            .expect("kill runs");
        assert!(status.success(), "heft is killed");
        let _ = self.child.wait();
    }
}

/// Waits until `file` exists and contains `text`; `None` if it never does
/// within `patience`.
fn wait_for_file(file: &std::path::Path, text: &str, patience: Duration) -> Option<String> {
    let deadline = Instant::now() + patience;
    while Instant::now() < deadline {
        if let Ok(contents) = std::fs::read_to_string(file)
            && contents.contains(text)
        {
            return Some(contents);
        }
        std::thread::sleep(Duration::from_millis(20));
    }
    None
}

/// The names in `directory`, sorted.
fn names_in(directory: &std::path::Path) -> Vec<String> {
    let mut names: Vec<String> = std::fs::read_dir(directory)
        .expect("list")
        .filter_map(|entry| Some(entry.ok()?.file_name().to_string_lossy().into_owned()))
        .collect();
    names.sort();
    names
}

/// The lines that differ between two texts of the same length in lines:
/// (1-based line, before, after).
fn changed_lines<'a>(before: &'a str, after: &'a str) -> Vec<(usize, &'a str, &'a str)> {
    before
        .lines()
        .zip(after.lines())
        .enumerate()
        .filter(|(_, (old, new))| old != new)
        .map(|(line, (old, new))| (line + 1, old, new))
        .collect()
}

/// A demo sheet's text copied to `name` in a fresh temporary folder.
fn demo_copy(name: &str, text: &str) -> (tempfile::TempDir, std::path::PathBuf) {
    let directory = tempfile::tempdir().expect("a temporary directory");
    let file = directory.path().join(name);
    std::fs::write(&file, text).expect("the demo sheet is copied");
    (directory, file)
}

const ENTER: &str = "\r";
const CLEAR_FIELD: &str = "\u{15}";

#[test]
fn edit_an_input_watch_the_result_change_and_save_one_line() {
    let original = include_str!("../../sheets/skid_lift.heft");
    let (directory, file) = demo_copy("skid_lift.heft", original);

    let mut heft = Session::start(&file);
    heft.wait_for("Compressor skid lift");
    // Bring T_up into view: T_up = m_tot (g0 + a_up)
    // = 1892 kg × (9.80665 + 0.35) m/s² = 19.22 kN (Newton's second law).
    heft.go_to("T_up");
    heft.wait_for("19.22 kN");

    // Its input a_up is on screen too; edit it there.
    heft.go_to("a_up");
    heft.send("=");
    heft.send(CLEAR_FIELD);
    heft.send("0.5 m/s^2");
    heft.send(ENTER);
    // With a_up = 0.5 m/s²: 1892 kg × 10.30665 m/s² = 19.50 kN (shown to 4
    // significant figures, its trailing zero kept), and the file is marked
    // modified.
    heft.wait_for("19.50 kN");
    heft.wait_for("modified");
    assert!(!heft.contents().contains("19.22 kN"));

    heft.send("s");
    heft.wait_for("saved skid_lift.heft");
    heft.send("q");
    assert!(heft.wait_exit(), "heft exits cleanly");

    let saved = std::fs::read_to_string(&file).expect("the saved sheet");
    let changed = changed_lines(original, &saved);
    assert_eq!(
        changed,
        vec![(
            20,
            "a_up   = 0.35 m/s^2            \"start-of-hoist acceleration\"",
            "a_up   = 0.5 m/s^2            \"start-of-hoist acceleration\""
        )]
    );
    assert_eq!(saved.lines().count(), original.lines().count());
    assert_eq!(saved.len(), original.len() - 1);
    // Saved and quit cleanly: no recovery copy, lock or temporary file is
    // left behind.
    assert_eq!(names_in(directory.path()), vec!["skid_lift.heft"]);
}

#[test]
fn quitting_with_unsaved_changes_asks_and_a_kept_copy_survives_a_kill() {
    let original = include_str!("../../sheets/cart_train.heft");
    let (directory, file) = demo_copy("cart.heft", original);

    let mut heft = Session::start(&file);
    heft.wait_for("Parts-cart train");
    heft.go_to("F_draw");
    heft.send("=");
    heft.send(CLEAR_FIELD);
    heft.send("240 lbf");
    heft.send(ENTER);
    heft.wait_for("modified");
    heft.send("q");
    heft.wait_for("Unsaved changes");
    heft.send("\u{1b}");
    // A crash now (the process killed) keeps the edit beside the file.
    heft.child.kill().expect("heft is stopped");
    let _ = heft.child.wait();
    let kept = std::fs::read_to_string(directory.path().join(".cart.heft.heft-unsaved"))
        .expect("a recovery copy");
    assert!(kept.contains("F_draw = 240 lbf"), "{kept}");
    assert_eq!(std::fs::read_to_string(&file).expect("sheet"), original);

    // The next session offers it back.
    let mut again = Session::start(&file);
    again.wait_for("Unsaved work from an earlier session");
    again.send("r");
    again.wait_for("restored");
    again.send("q");
    again.wait_for("Unsaved changes");
    again.send("s");
    assert!(again.wait_exit());
    assert_eq!(std::fs::read_to_string(&file).expect("sheet"), kept);
}

#[test]
fn text_typed_without_enter_survives_a_kill() {
    let original = include_str!("../../sheets/cart_train.heft");
    let (directory, file) = demo_copy("cart.heft", original);

    let mut heft = Session::start(&file);
    heft.wait_for("Parts-cart train");
    heft.go_to("F_draw");
    heft.send("=");
    heft.send(CLEAR_FIELD);
    heft.send("251 lbf");
    heft.wait_for("251 lbf");
    // No Enter: the line being typed reaches the recovery copy by itself,
    // at most a few hundred milliseconds after the last key.
    let copy = directory.path().join(".cart.heft.heft-unsaved");
    let kept = wait_for_file(&copy, "F_draw = 251 lbf", Duration::from_secs(5));
    heft.kill_hard();
    let kept = kept.expect("the typed line reached the recovery copy within 5 s");
    assert_eq!(std::fs::read_to_string(&file).expect("sheet"), original);

    let mut again = Session::start(&file);
    again.wait_for("Unsaved work from an earlier session");
    again.send("r");
    again.wait_for("restored");
    again.send("q");
    again.wait_for("Unsaved changes");
    again.send("s");
    assert!(again.wait_exit());
    assert_eq!(std::fs::read_to_string(&file).expect("sheet"), kept);
    // The killed notebook's stale lock and its adopted copy are gone too.
    assert_eq!(names_in(directory.path()), vec!["cart.heft"]);
}

#[test]
fn two_notebooks_on_one_sheet_are_told_of_each_other_and_lose_nothing() {
    let original = include_str!("../../sheets/skid_lift.heft");
    let (directory, file) = demo_copy("hoist.heft", original);

    let mut first = Session::start(&file);
    first.wait_for("Compressor skid lift");
    let mut second = Session::start(&file);
    second.wait_for("another notebook has this sheet open");
    // The first hears of the second within a few seconds.
    first.wait_for("another notebook opened this sheet");

    // Each changes a different input and keeps it (Enter).
    for (heft, value) in [(&mut second, "0.6 m/s^2"), (&mut first, "0.4 m/s^2")] {
        heft.go_to("a_up");
        heft.send("=");
        heft.send(CLEAR_FIELD);
        heft.send(value);
        heft.send(ENTER);
        heft.wait_for("modified");
    }
    let second_copy = directory.path().join(".hoist.heft.heft-unsaved-1");
    let kept = wait_for_file(&second_copy, "a_up   = 0.6 m/s^2", PATIENCE)
        .expect("the second notebook keeps its own copy");
    // The first saves and quits: the second's copy is untouched.
    first.send("s");
    first.wait_for("saved hoist.heft");
    first.send("q");
    assert!(first.wait_exit());
    assert_eq!(
        std::fs::read_to_string(&second_copy).expect("the second's copy"),
        kept
    );
    // The second dies; the next notebook offers its work.
    second.kill_hard();
    let mut third = Session::start(&file);
    third.wait_for("Unsaved work from an earlier session");
    third.send("r");
    third.wait_for("restored");
    third.send("q");
    third.wait_for("Unsaved changes");
    third.send("d");
    assert!(third.wait_exit());
    assert!(
        std::fs::read_to_string(&file)
            .expect("sheet")
            .contains("a_up   = 0.4 m/s^2"),
        "the first notebook's save"
    );
}

const DOWN: &str = "\u{1b}[B";
const HOME: &str = "\u{1b}[H";
const RIGHT: &str = "\u{1b}[C";
const DELETE: &str = "\u{1b}[3~";
const KEEP: &str = "\u{13}";

#[test]
fn edit_a_solve_block_in_its_editor_keep_it_with_ctrl_s_and_save_one_line() {
    let original = include_str!("../../sheets/lift_slide_clamp.heft");
    let (_directory, file) = demo_copy("clamp.heft", original);

    let mut heft = Session::start(&file);
    heft.wait_for("Jaw clamp force");
    // The solve block gives N_req = SF m (g0 + a) / (2 μ)
    // = 2 × 11.7934 kg × 13.00665 m/s² / 0.5 = 613.6 N (26 lbm = 11.7934 kg,
    // the 1959 pound; closed form).
    heft.go_to("N_req");
    heft.wait_for("613.6 N");
    heft.send("e");
    heft.wait_for("block · lines 28–30");
    heft.wait_for("Ctrl+S keep");
    // To the equation; four friction faces instead of two.
    heft.send(DOWN);
    heft.send(HOME);
    for _ in 0.."  SF * m_part * (g0 + a_up) = ".len() {
        heft.send(RIGHT);
    }
    heft.send(DELETE);
    heft.send("4");
    heft.send(KEEP);
    // Half the force: 306.8 N.
    heft.wait_for("306.8 N");
    heft.send("s");
    heft.wait_for("saved clamp.heft");
    heft.send("q");
    assert!(heft.wait_exit(), "heft exits cleanly");

    let saved = std::fs::read_to_string(&file).expect("the saved sheet");
    let changed = changed_lines(original, &saved);
    assert_eq!(
        changed,
        vec![(
            29,
            "  SF * m_part * (g0 + a_up) = 2 * μ_jaw * N_req",
            "  SF * m_part * (g0 + a_up) = 4 * μ_jaw * N_req"
        )]
    );
    assert_eq!(saved.len(), original.len());
}

#[test]
fn a_termination_signal_gives_the_terminal_back_and_keeps_the_typed_text() {
    let original = include_str!("../../sheets/cart_train.heft");
    let (directory, file) = demo_copy("cart.heft", original);
    let mut heft = Session::start(&file);
    heft.wait_for("Parts-cart train");
    let on_screen = |heft: &Session| {
        heft.screen
            .lock()
            .map(|parser| {
                let screen = parser.screen();
                (
                    screen.alternate_screen(),
                    screen.mouse_protocol_mode() != vt100::MouseProtocolMode::None,
                )
            })
            .unwrap_or_default()
    };
    assert_eq!(
        on_screen(&heft),
        (true, true),
        "the notebook took the screen and the mouse"
    );
    heft.go_to("F_draw");
    heft.send("=");
    heft.send(CLEAR_FIELD);
    heft.send("252 lbf");
    heft.wait_for("252 lbf");
    let pid = heft.child.process_id().expect("heft's process id");
    let status = std::process::Command::new("kill")
        .args(["-TERM", &pid.to_string()])
        .status()
        .expect("kill runs");
    assert!(status.success());
    assert!(!heft.wait_exit(), "stopped by a signal is not a clean exit");
    std::thread::sleep(Duration::from_millis(200));
    assert_eq!(
        on_screen(&heft),
        (false, false),
        "the main screen and the mouse are given back"
    );
    let copy = directory.path().join(".cart.heft.heft-unsaved");
    let kept = std::fs::read_to_string(&copy).expect("the recovery copy");
    assert!(kept.contains("F_draw = 252 lbf"), "{kept}");
    assert_eq!(std::fs::read_to_string(&file).expect("sheet"), original);
}
