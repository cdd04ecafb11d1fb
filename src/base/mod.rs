//! The foundation the rest of heft stands on: byte spans and line numbers
//! of the source, diagnostics as data, the one renderer that turns them
//! into text, and the one door from sheet text to a terminal. It imports
//! nothing of the crate.

pub(crate) mod diag;
pub mod render;
pub(crate) mod span;
pub(crate) mod visible;

pub use diag::{Code, Diagnostic, Fix, FixValue, Label, Severity};
pub use span::{LineColumn, LineIndex, MAX_SOURCE_LEN, Span};
