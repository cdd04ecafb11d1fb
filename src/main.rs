//! The `heft` command: parse the arguments and hand over to the library.

use std::process::ExitCode;

use clap::Parser;

/// mimalloc: a sheet is many small syntax-tree nodes, and it allocates them
/// markedly faster than the system allocator (see the benchmark notes).
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

fn main() -> ExitCode {
    heftsheet::allocator::configure();
    heftsheet::cli::run(heftsheet::cli::Args::parse())
}
