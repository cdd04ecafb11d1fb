//! The terminal notebook: open a sheet, edit it and watch every result
//! update, audit its findings, and save it back as plain text.
//!
//! Elm-shaped: one [`App`] model, one closed [`Message`] enum, an
//! [`update`] without I/O that returns [`Effect`]s, and a pure [`view()`](fn@view).
//! File I/O ([`files`]) and the terminal (`terminal`) live in the event
//! loop only. Words are in `strings`, keys in [`keys`], colours in
//! [`theme`], screen areas in `layout`.

pub mod app;
pub mod files;
pub mod keys;
pub(crate) mod layout;
pub(crate) mod strings;
pub(crate) mod terminal;
pub mod theme;
pub mod view;

pub use app::{App, Effect, Message, update};
pub use terminal::run;
pub use view::view;
