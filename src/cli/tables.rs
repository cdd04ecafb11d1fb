//! The Tables part of `heft check`: each table (its keys, where its rows
//! come from, the range of each key) and every reading of it (where, the
//! reading used, the keys, the rows read and the value).

use std::fmt::Write as _;

use super::check::{BOLD, DIM, Painter};
use crate::eval::Evaluated;
use crate::present::tables::{
    in_column_unit, keys_given, reading_label, reading_place, reading_words, rows_read,
};
use crate::units::format_significant;

/// Writes the tables and their readings; nothing for a sheet without tables.
pub(super) fn write_tables(out: &mut String, evaluated: &Evaluated, painter: &Painter) {
    let tables = evaluated.tables();
    if tables.is_empty() {
        return;
    }
    let sig_figs = evaluated.header().sig_figs;
    let _ = writeln!(out, "\n{}", painter.paint(BOLD, "Tables"));
    for (index, table) in tables.iter().enumerate() {
        let source = match &table.file {
            Some(file) => format!("from {file}"),
            None => "written in the sheet".to_string(),
        };
        let ranges: Vec<String> = table
            .keys
            .iter()
            .zip(&table.axes)
            .map(|(&key, axis)| {
                let column = &table.columns[key];
                let shown = |value: Option<&f64>| {
                    value.map_or("—".to_string(), |v| format_significant(*v, sig_figs))
                };
                let unit = match column.unit_text.as_str() {
                    "" => String::new(),
                    unit => format!(" {unit}"),
                };
                format!(
                    "{} {} to {}{unit}",
                    column.name,
                    shown(axis.first()),
                    shown(axis.last())
                )
            })
            .collect();
        let usable = if evaluated.table_readable(index) {
            ""
        } else {
            "; cannot be read (see the findings)"
        };
        let _ = writeln!(
            out,
            "  {}  {} rows, {source}; {}{usable}",
            painter.paint(BOLD, &table.name),
            table.rows.len(),
            ranges.join(", ")
        );
        for read in evaluated
            .table_reads
            .iter()
            .filter(|read| read.table == index)
        {
            let value = in_column_unit(table, read.column, read.value_in_column_unit, sig_figs);
            let _ = writeln!(
                out,
                "    {} = lookup({}) at {} → {value}",
                reading_place(evaluated, read),
                reading_label(table, read),
                keys_given(table, read, sig_figs)
            );
            let _ = writeln!(
                out,
                "      {}",
                painter.paint(
                    DIM,
                    &format!(
                        "{}; read {}",
                        reading_words(read.reading),
                        rows_read(table, read)
                    )
                )
            );
        }
    }
}
