//! The terminal notebook: its live sheet, state and update logic, drawing
//! (insta snapshots in `snapshots/` beside this file), file handling, and
//! the real binary in a pseudo-terminal.

mod live;
mod notebook;
mod notebook_files;
mod notebook_terminal;
mod notebook_view;
