//! Syntax: source text → statements with spans. Knows nothing of units or
//! values; pest types never leave this module.

pub mod ast;
mod build;
mod conditional;
mod lines;
mod parser;
mod parts;
mod simulate;
mod split;
mod sweep;
mod table;

pub(crate) use lines::Quotes;
pub use lines::{MAX_NESTING, MAX_OPERATORS};
pub use parts::{LiftCell, lift_cell_name};
pub use split::{
    HeaderBlock, ParsedSheet, is_block_head, is_block_line, is_header_delimiter, is_statement_line,
    parse, parse_expression, parse_line, parse_unit, table_files,
};
pub use table::parse_column_head;
