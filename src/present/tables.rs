//! The words every output uses for a table and its readings: the reading
//! in words, the rows read, and where a reading is written.

use crate::eval::Reading;
use crate::eval::{Evaluated, TableRead};
use crate::sheet::Table;

/// What a reading does, in words: `least of the bracketing rows`.
pub fn reading_words(reading: Reading) -> &'static str {
    match reading {
        Reading::Exact => "exact: at a row's key",
        Reading::Linear => "linear: interpolated between the bracketing rows",
        Reading::Least => "least of the bracketing rows (conservative for a rating)",
        Reading::Greatest => "greatest of the bracketing rows (conservative for a demand)",
    }
}

/// A row's keys as written: `radius 12 m, boom 30 m`.
pub fn row_keys(table: &Table, row: usize) -> String {
    table
        .keys
        .iter()
        .map(|&key| {
            let column = &table.columns[key];
            let number = table.text(row, key);
            match column.unit_text.as_str() {
                "" => format!("{} {number}", column.name),
                unit => format!("{} {number} {unit}", column.name),
            }
        })
        .collect::<Vec<_>>()
        .join(", ")
}

/// The rows a reading read, with their keys and the column's values:
/// `row 4 (radius 12 m, boom 30 m: 8.6 t), row 5 (…)`.
pub fn rows_read(table: &Table, read: &TableRead) -> String {
    let column = &table.columns[read.column];
    read.rows
        .iter()
        .map(|&row| {
            let value = table.text(row, read.column).to_string();
            let value = match column.unit_text.as_str() {
                "" => value,
                unit => format!("{value} {unit}"),
            };
            format!(
                "{} ({}: {} {value})",
                table.row_name(row),
                row_keys(table, row),
                column.name
            )
        })
        .collect::<Vec<_>>()
        .join(", ")
}

/// A number in a column's unit, every figure shown: `11.20 m`.
pub fn in_column_unit(table: &Table, column: usize, value: f64, sig_figs: u32) -> String {
    let number = crate::units::format_figures(value, sig_figs);
    match table.columns[column].unit_text.as_str() {
        "" => number,
        unit => format!("{number} {unit}"),
    }
}

/// The keys a reading was given, in their columns' units: `radius 11.20 m, boom 30.00 m`.
pub fn keys_given(table: &Table, read: &TableRead, sig_figs: u32) -> String {
    read.keys_in_column_units
        .iter()
        .zip(&table.keys)
        .map(|(&key, &column)| {
            format!(
                "{} {}",
                table.columns[column].name,
                in_column_unit(table, column, key, sig_figs)
            )
        })
        .collect::<Vec<_>>()
        .join(", ")
}

/// The reading as written: `chart.capacity, least`.
pub fn reading_label(table: &Table, read: &TableRead) -> String {
    format!(
        "{}.{}, {}",
        table.name,
        table.columns[read.column].name,
        read.reading.word()
    )
}

/// The name of the cell a reading is written in, or `check on line N`.
pub fn reading_place(evaluated: &Evaluated, read: &TableRead) -> String {
    let sheet = evaluated.sheet();
    let statement = sheet.statements.iter().position(|statement| {
        statement.span.start() <= read.span.start() && read.span.end() <= statement.span.end()
    });
    let cell = statement.and_then(|statement| {
        (0..sheet.cells.len()).find(|&id| sheet.cell_statement(id) == statement)
    });
    match cell {
        Some(id) => sheet.cell(id).name.text.to_string(),
        None => format!("line {}", evaluated.lines.line_of(read.span.start()) + 1),
    }
}
