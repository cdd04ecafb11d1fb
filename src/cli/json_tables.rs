//! The tables of `heft check --json`: each table's columns and rows as
//! written, and every reading of it.

use schemars::JsonSchema;
use serde::Serialize;

use super::json_words;
use crate::eval::Evaluated;
use crate::present::tables::reading_place;

/// A table of the sheet.
#[derive(Serialize, JsonSchema)]
pub(super) struct JsonTable<'a> {
    /// Its name.
    name: &'a str,
    /// The line of its head.
    line: usize,
    /// Its description, if written.
    description: Option<&'a str>,
    /// The CSV file it is read from, as the sheet names it (null when its rows are written in the sheet).
    file: Option<&'a str>,
    /// The key columns' names, in order.
    keys: Vec<&'a str>,
    /// Its columns.
    columns: Vec<JsonColumn<'a>>,
    /// Its rows: one number per column, in the column's unit.
    rows: Vec<Vec<f64>>,
    /// Whether it can be read (rows read, keys sorted, grid complete, units known).
    readable: bool,
    /// Every reading of it by the sheet as written, in file order.
    reads: Vec<JsonTableRead<'a>>,
}

/// A column of a table.
#[derive(Serialize, JsonSchema)]
struct JsonColumn<'a> {
    /// Its name.
    name: &'a str,
    /// Its unit as written (empty for plain numbers).
    unit: &'a str,
}

/// A reading of a table: `lookup(chart.capacity, R, L, least)`.
#[derive(Serialize, JsonSchema)]
struct JsonTableRead<'a> {
    /// The line of the lookup.
    line: usize,
    /// The cell it is written in, or `line N` for a check.
    place: String,
    /// The column read.
    column: &'a str,
    /// How it is read.
    reading: json_words::Reading,
    /// The keys given, in the key columns' units, in key order.
    keys: Vec<f64>,
    /// The rows read, counted from 1 in the table's order.
    rows: Vec<usize>,
    /// The value read, in the column's unit.
    value: f64,
    /// The value read, in coherent SI units.
    si: f64,
}

/// Every table with its readings.
pub(super) fn json_tables(evaluated: &Evaluated) -> Vec<JsonTable<'_>> {
    let round = crate::units::correctly_rounded;
    evaluated
        .tables()
        .iter()
        .enumerate()
        .map(|(index, table)| JsonTable {
            name: &table.name,
            line: evaluated
                .lines
                .line_of(evaluated.sheet().statements[table.statement].span.start())
                + 1,
            description: table.description.as_deref(),
            file: table.file.as_deref(),
            keys: table
                .keys
                .iter()
                .map(|&key| table.columns[key].name.as_str())
                .collect(),
            columns: table
                .columns
                .iter()
                .map(|column| JsonColumn {
                    name: &column.name,
                    unit: &column.unit_text,
                })
                .collect(),
            rows: table.rows.clone(),
            readable: evaluated.table_readable(index),
            reads: evaluated
                .table_reads
                .iter()
                .filter(|read| read.table == index)
                .map(|read| JsonTableRead {
                    line: evaluated.lines.line_of(read.span.start()) + 1,
                    place: reading_place(evaluated, read),
                    column: &table.columns[read.column].name,
                    reading: read.reading.into(),
                    keys: read
                        .keys_in_column_units
                        .iter()
                        .map(|&k| round(k))
                        .collect(),
                    rows: read.rows.iter().map(|row| row + 1).collect(),
                    value: round(read.value_in_column_unit),
                    si: read.value.si,
                })
                .collect(),
        })
        .collect()
}
