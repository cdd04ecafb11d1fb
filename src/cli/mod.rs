//! The command line: arguments, dispatch, and text for people. I/O and exit
//! codes live here and nowhere below.

mod audit;
mod check;
mod convert;
mod diff;
mod json;
mod json_tables;
mod json_words;
mod parts;
mod report;
mod review;
mod runs;
mod sweep_json;
mod sweeps;
mod tables;
mod units_list;

use std::io::{self, IsTerminal, Write};
use std::path::{Path, PathBuf};
use std::process::ExitCode;

use clap::{Parser, Subcommand, ValueEnum};

/// heft: unit-checked calculation sheets for lifts, hoists, carts and fixtures.
#[derive(Debug, Parser)]
#[command(name = "heft", version, about, long_about = None)]
#[command(args_conflicts_with_subcommands = true, arg_required_else_help = true)]
pub struct Args {
    /// What to do.
    #[command(subcommand)]
    pub command: Option<Command>,
    /// A sheet to open in the notebook (a new file name starts an empty sheet).
    pub file: Option<PathBuf>,
    /// When to colour the output.
    #[arg(long, global = true, value_enum, default_value_t = Colour::Auto)]
    pub color: Colour,
}

/// Colour choice.
#[derive(Clone, Copy, Debug, PartialEq, Eq, ValueEnum)]
pub enum Colour {
    /// Colour when writing to a terminal and NO_COLOR is not set.
    Auto,
    /// Always colour.
    Always,
    /// Never colour.
    Never,
}

/// The commands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Evaluate a sheet and print its cells, checks and findings.
    Check {
        /// The sheet file (.heft).
        file: PathBuf,
        /// Print one JSON object instead of text.
        #[arg(long)]
        json: bool,
        /// Exit 1 on warnings as well as errors.
        #[arg(long)]
        deny_warnings: bool,
        /// Print every step of a simulate run as CSV instead of the report.
        #[arg(long, conflicts_with_all = ["json", "svg"])]
        csv: bool,
        /// Print the plot of a simulate run as SVG instead of the report.
        #[arg(long, conflicts_with = "json")]
        svg: bool,
        /// With --csv or --svg: the run whose `simulate` line is LINE
        /// (default: the sheet's first simulate block).
        #[arg(long, value_name = "LINE")]
        run: Option<usize>,
    },
    /// Convert a quantity to another unit and show the exact factor chain.
    Convert {
        /// The quantity, e.g. "3 slug" or "100 lbm * g0".
        quantity: String,
        /// The unit to convert to, e.g. lbm.
        unit: String,
    },
    /// List every unit heft knows, with its definition and source.
    Units,
    /// Write the calc report of a sheet as self-contained HTML or Markdown.
    Report {
        /// The sheet file (.heft).
        file: PathBuf,
        /// The report file; its extension picks the format (.html or .md).
        #[arg(short, long)]
        output: PathBuf,
    },
    /// Compare two revisions of a sheet: cells, results (with % change) and checks.
    Diff {
        /// The earlier revision.
        old: PathBuf,
        /// The later revision.
        new: PathBuf,
        /// Print one JSON object instead of text.
        #[arg(long)]
        json: bool,
    },
    /// Print the sign-off line that records a check of the sheet as it stands.
    Signoff {
        /// The sheet file (.heft).
        file: PathBuf,
        /// The checker's name.
        #[arg(long)]
        by: String,
        /// The date of the check, YYYY-MM-DD.
        #[arg(long)]
        on: String,
    },
    /// Print the conversion audit a checker signs: every conversion with its
    /// exact factor and source, the unit systems and gravity values used,
    /// and every finding.
    Audit {
        /// The sheet file (.heft).
        file: PathBuf,
        /// Print one JSON object (schema `heft-audit/1`) instead of text.
        #[arg(long)]
        json: bool,
    },
    /// Open a sheet in the terminal notebook (the same as `heft FILE`).
    Edit {
        /// The sheet file; a new name starts an empty sheet.
        file: PathBuf,
    },
}

/// The text report of `heft check`, without colour (for tests and tools).
pub fn check_text(file_name: &str, source: &str, evaluated: &crate::eval::Evaluated) -> String {
    check::text_report(file_name, source, evaluated, false)
}

/// The text report of `heft audit`, without colour (for tests and tools).
pub fn audit_text(file_name: &str, evaluated: &crate::eval::Evaluated) -> String {
    audit::audit_text(file_name, evaluated)
}

/// The JSON Schema (draft 2020-12) of each JSON output, generated from the
/// types that print it: its format's name (`heft-check/1`, `heft-audit/1`,
/// `heft-diff/1`) and the schema as pretty JSON text ending in a line break.
/// `docs/schemas/` holds these, one file per format (`heft-check-1.schema.json`
/// for `heft-check/1`); a test fails when a committed file differs.
pub fn json_schemas() -> [(&'static str, String); 3] {
    [
        (json::SCHEMA, json::schema()),
        (audit::SCHEMA, audit::schema()),
        (diff::SCHEMA, diff::schema()),
    ]
}

/// Exit code: the sheet is clean.
pub const EXIT_CLEAN: u8 = 0;
/// Exit code: the sheet has errors or failed checks.
pub const EXIT_FINDINGS: u8 = 1;
/// Exit code: bad usage or a file that cannot be read.
pub const EXIT_USAGE: u8 = 2;

/// Runs a parsed command line and returns the process exit code.
pub fn run(args: Args) -> ExitCode {
    let colour = match args.color {
        Colour::Always => true,
        Colour::Never => false,
        Colour::Auto => {
            io::stdout().is_terminal() && std::env::var_os("NO_COLOR").is_none_or(|v| v.is_empty())
        }
    };
    let notebook_colour = match args.color {
        Colour::Always => true,
        Colour::Never => false,
        Colour::Auto => std::env::var_os("NO_COLOR").is_none_or(|v| v.is_empty()),
    };
    let outcome = match (args.command, args.file) {
        (
            Some(Command::Check {
                file,
                json,
                deny_warnings,
                csv,
                svg,
                run,
            }),
            _,
        ) => {
            let output = match (json, csv, svg) {
                (true, _, _) => check::Output::Json,
                (_, true, _) => check::Output::Csv { run },
                (_, _, true) => check::Output::Svg { run },
                _ => check::Output::Text,
            };
            check::run(&file, output, deny_warnings, colour)
        }
        (Some(Command::Convert { quantity, unit }), _) => convert::run(&quantity, &unit, colour),
        (Some(Command::Units), _) => units_list::run(),
        (Some(Command::Report { file, output }), _) => report::run(&file, &output),
        (Some(Command::Diff { old, new, json }), _) => diff::run(&old, &new, json),
        (Some(Command::Signoff { file, by, on }), _) => review::run_signoff(&file, &by, &on),
        (Some(Command::Audit { file, json }), _) => audit::run(&file, json, colour),
        (Some(Command::Edit { file }), _) | (None, Some(file)) => {
            crate::tui::run(&file, notebook_colour).map(|()| EXIT_CLEAN)
        }
        (None, None) => Err(io::Error::other(
            "give a sheet to open, or a command; see `heft --help`",
        )),
    };
    match outcome {
        Ok(code) => ExitCode::from(code),
        Err(error) if error.kind() == io::ErrorKind::BrokenPipe => ExitCode::from(EXIT_CLEAN),
        Err(error) => {
            eprint(&format!("heft: {error}\n"), false);
            ExitCode::from(EXIT_USAGE)
        }
    }
}

/// Reads a sheet and runs it through the pipeline, turning a missing or
/// unreadable file into a message.
fn load_sheet(path: &Path) -> io::Result<crate::eval::Evaluated> {
    let bytes = std::fs::read(path).map_err(|error| {
        io::Error::new(
            error.kind(),
            format!("cannot read {}: {error}", path.display()),
        )
    })?;
    if bytes.len() > crate::base::MAX_SOURCE_LEN {
        return Err(io::Error::new(
            io::ErrorKind::InvalidData,
            format!("{} is larger than 4 GiB", path.display()),
        ));
    }
    Ok(crate::pipeline::run_file_bytes(&bytes, path))
}

/// Writes a command's text to standard output, every hidden control shown
/// as an escape and only heft's own colour sequences kept
/// ([`crate::base::visible::visible_output`]). JSON is already safe
/// ([`json::text`]) and passes through unchanged.
fn print(text: &str, colour: bool) -> io::Result<()> {
    let mut stdout = io::stdout().lock();
    stdout.write_all(crate::base::visible::visible_output(text, colour).as_bytes())?;
    stdout.flush()
}

/// Writes a message to standard error, as [`print`] does.
fn eprint(text: &str, colour: bool) {
    let _ = io::stderr().write_all(crate::base::visible::visible_output(text, colour).as_bytes());
}
