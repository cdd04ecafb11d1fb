//! Reports and the review workflow: the Markdown and HTML reports (insta
//! snapshots in `snapshots/` beside this file), the HTML printed by a real
//! browser, review marks and sign-off, and the revision diff.

#[path = "../common/mod.rs"]
mod common;

mod browser;
mod diff;
mod report;
mod review;
