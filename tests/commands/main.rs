//! The `heft` binary as a user runs it: `check`, `audit`, `report`,
//! `signoff`, simulate output, every command on hostile sheets, and the
//! JSON outputs against their committed schemas. Insta snapshots of the
//! rendered text live in `snapshots/` beside this file.

#[path = "../common/mod.rs"]
mod common;

mod angles_cli;
mod audit_cli;
mod cli;
mod hostile;
mod review_cli;
mod schemas;
mod simulate_cli;
