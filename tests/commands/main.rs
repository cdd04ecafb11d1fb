//! The `heft` binary as a user runs it: `check`, `audit`, `report`,
//! `signoff`, simulate output, and every command on hostile sheets. Insta
//! snapshots of the rendered text live in `snapshots/` beside this file.

#[path = "../common/mod.rs"]
mod common;

mod audit_cli;
mod cli;
mod hostile;
mod review_cli;
mod simulate_cli;
