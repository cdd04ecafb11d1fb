//! Syntax: source text → statements with spans. Knows nothing of units or
//! values; pest types never leave this module.

pub mod ast;
mod build;
mod lines;
mod parser;
mod simulate;
mod split;
mod table;

pub use lines::{MAX_NESTING, MAX_OPERATORS};
pub use split::{
    HeaderBlock, ParsedSheet, is_block_head, is_block_line, is_header_delimiter, is_statement_line,
    parse, parse_expression, parse_line, parse_unit, table_files,
};
pub use table::parse_column_head;
