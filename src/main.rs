//! The `heft` command: parse the arguments and hand over to the library.

use std::process::ExitCode;

use clap::Parser;

fn main() -> ExitCode {
    heftsheet::cli::run(heftsheet::cli::Args::parse())
}
