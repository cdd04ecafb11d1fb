//! Syntax: source text → statements with spans. Knows nothing of units or
//! values; pest types never leave this module.

pub mod ast;
mod build;
mod parser;
mod span;
mod split;

pub use span::{LineColumn, LineIndex, Span};
pub use split::{parse, parse_expression, parse_unit, HeaderBlock, ParsedSheet, MAX_NESTING, MAX_OPERATORS};
