//! Parsing a table written in the sheet: its head, its columns line, then
//! its rows, each line on its own so every line's error is reported.

use super::ast::{ColumnHead, StatementKind, TableBlock, TableRow, TableSource};
use super::build;
use super::lines::BlockLines;
use super::parser::Rule;
use crate::base::{Code, Diagnostic, Span};

/// Parses a table block; the statement is kept (marked incomplete) even
/// when lines fail, so lookups of it still link.
pub(super) fn parse_table_block(
    source: &str,
    block: &BlockLines,
) -> (StatementKind, Vec<Diagnostic>) {
    let mut diagnostics = Vec::new();
    let mut complete = block.end.is_some();
    if !complete {
        diagnostics.push(
            Diagnostic::error(Code::ParseError, block.head, "this table is never closed")
                .with_help("end the table with a line `end`"),
        );
    }
    let head = match super::split::parse_block_line(
        source,
        block.head,
        Rule::table_line_head,
        build::table_head,
    ) {
        Ok(head) => head,
        Err(diagnostic) => {
            diagnostics.push(diagnostic.with_help(
                "write `table NAME by KEY:` or `table NAME by KEY1, KEY2 \"description\":`",
            ));
            return (StatementKind::Invalid, diagnostics);
        }
    };
    let mut lines = block.body.iter();
    let columns = match lines.next() {
        Some(&line) => match super::split::parse_block_line(
            source,
            line,
            Rule::table_columns,
            build::column_heads,
        ) {
            Ok(columns) => columns,
            Err(diagnostic) => {
                diagnostics.push(diagnostic.with_help(
                    "a table's first line names its columns: `radius [m] | capacity [t]`",
                ));
                complete = false;
                Vec::new()
            }
        },
        None => {
            diagnostics.push(
                Diagnostic::error(Code::TableRowError, block.head, "this table has no columns")
                    .with_help(
                        "name the columns on the first line (`radius [m] | capacity [t]`), then give the rows",
                    ),
            );
            complete = false;
            Vec::new()
        }
    };
    let mut rows = Vec::with_capacity(block.body.len());
    for &line in lines {
        match parse_row(source, line, &columns) {
            Ok(row) => rows.push(row),
            Err(diagnostic) => {
                complete = false;
                diagnostics.push(*diagnostic);
            }
        }
    }
    let table = TableBlock {
        name: head.name,
        keys: head.keys,
        description: head.description,
        source: TableSource::Written { columns, rows },
        complete,
        head: block.head,
    };
    (StatementKind::Table(Box::new(table)), diagnostics)
}

/// Parses one column head on its own (`radius [m]`), spans from the start
/// of `text`: a table's CSV file names its columns as the sheet's column
/// line does.
pub fn parse_column_head(text: &str) -> Result<ColumnHead, Diagnostic> {
    let line = Span::new(0, text.len());
    let mut columns =
        super::split::parse_block_line(text, line, Rule::table_columns, build::column_heads)?;
    match (columns.pop(), columns.is_empty()) {
        (Some(column), true) => Ok(column),
        _ => Err(Diagnostic::error(
            Code::ParseError,
            line,
            "expected one column (`name [unit]`)",
        )),
    }
}

/// A row of numbers separated by `|`, one per column. Written by hand, not
/// with the grammar: each cell that is not a number gets its own message.
fn parse_row(
    source: &str,
    line: Span,
    columns: &[ColumnHead],
) -> Result<TableRow, Box<Diagnostic>> {
    let text = line.text(source);
    let code = text.split("//").next().unwrap_or(text).trim_end();
    let mut cells = Vec::with_capacity(columns.len());
    let mut texts = Vec::with_capacity(columns.len());
    let mut start = 0;
    for piece in code.split('|') {
        let blank = piece.len() - piece.trim_start().len();
        let trimmed = piece.trim();
        let at = line.start() + start + blank;
        let span = Span::new(at, at + trimmed.len());
        start += piece.len() + 1;
        match trimmed.parse::<f64>() {
            Ok(value)
                if value.is_finite()
                    && trimmed.starts_with(|c: char| {
                        c.is_ascii_digit() || matches!(c, '-' | '+' | '.')
                    }) =>
            {
                cells.push((value, span));
                texts.push(trimmed.to_string());
            }
            _ => {
                let column = columns.get(cells.len()).map_or(String::new(), |column| {
                    format!(" in column `{}`", column.name.text)
                });
                return Err(Box::new(
                    Diagnostic::error(
                        Code::TableRowError,
                        if trimmed.is_empty() { line } else { span },
                        format!("`{trimmed}`{column} is not a number"),
                    )
                    .with_help("a table's cells are plain numbers (the unit is the column's): `6 | 30 | 12.0`"),
                ));
            }
        }
    }
    if !columns.is_empty() && cells.len() != columns.len() {
        return Err(Box::new(
            Diagnostic::error(
                Code::TableRowError,
                Span::new(line.start(), line.start() + code.len()),
                format!(
                    "this row has {} cells, and the table has {} columns",
                    cells.len(),
                    columns.len()
                ),
            )
            .with_help("give one number per column, separated by `|`"),
        ));
    }
    Ok(TableRow {
        cells,
        texts,
        span: Span::new(line.start(), line.start() + code.len()),
    })
}
