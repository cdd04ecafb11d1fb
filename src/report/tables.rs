//! The report's tables: each table in place, its rows with the rows read
//! in bold, and a section listing every reading (where, which column, the
//! reading, the keys, the rows read and the value).

use super::model::{Block, Piece, Rich, Section, Table};
use crate::eval::Evaluated;
use crate::present::tables::{
    in_column_unit, keys_given, reading_label, reading_place, reading_words, rows_read,
};

/// A table where the sheet writes it: what it is, then its rows, the rows
/// any reading read in bold with the cells that read them.
pub(super) fn table_blocks(evaluated: &Evaluated, index: usize) -> Vec<Block> {
    let Some(table) = evaluated.tables().get(index) else {
        return Vec::new();
    };
    let statement = &evaluated.sheet().statements[table.statement];
    let description = table
        .description
        .as_ref()
        .map(|description| format!(" ({description})"));
    let source = match &table.file {
        Some(file) => format!(", read from {file} (its bytes are part of the sheet's fingerprint)"),
        None => String::new(),
    };
    let mut intro = Rich::text("Table ");
    intro.push(Piece::Code(table.name.to_string()));
    intro.push_text(&format!(
        "{}, by {}{source}; line {}.",
        description.unwrap_or_default(),
        table.key_names(),
        evaluated.lines.line_of(statement.span.start()) + 1
    ));
    let mut blocks = vec![Block::Paragraph(intro)];
    if table.columns.is_empty() {
        return blocks;
    }
    let reads: Vec<_> = evaluated
        .table_reads
        .iter()
        .filter(|read| read.table == index)
        .collect();
    let mut columns: Vec<String> = table
        .columns
        .iter()
        .map(crate::sheet::Column::heading)
        .collect();
    columns.push("read by".to_string());
    let rows = (0..table.rows.len())
        .map(|row| {
            let readers: Vec<String> = reads
                .iter()
                .filter(|read| read.rows.contains(&row))
                .map(|read| {
                    format!(
                        "{} ({})",
                        reading_place(evaluated, read),
                        reading_label(table, read)
                    )
                })
                .collect();
            let read = !readers.is_empty();
            let mut shown: Vec<Rich> = (0..table.columns.len())
                .map(|column| {
                    let text = table.text(row, column).to_string();
                    if read {
                        Rich(vec![Piece::Strong(text)])
                    } else {
                        Rich::text(text)
                    }
                })
                .collect();
            shown.push(Rich::text(readers.join("; ")));
            shown
        })
        .collect();
    blocks.push(Block::Table(Table { columns, rows }));
    blocks
}

/// Every reading of a table, after the summary: none when the sheet reads none.
pub(super) fn readings_section(evaluated: &Evaluated) -> Option<Section> {
    if evaluated.table_reads.is_empty() {
        return None;
    }
    let sig_figs = evaluated.header().sig_figs;
    let rows = evaluated
        .table_reads
        .iter()
        .filter_map(|read| {
            let table = evaluated.tables().get(read.table)?;
            Some(vec![
                Rich::text(reading_place(evaluated, read)),
                Rich(vec![Piece::Code(reading_label(table, read))]),
                Rich::text(reading_words(read.reading)),
                Rich::text(keys_given(table, read, sig_figs)),
                Rich::text(rows_read(table, read)),
                Rich(vec![Piece::Strong(in_column_unit(
                    table,
                    read.column,
                    read.value_in_column_unit,
                    sig_figs,
                ))]),
            ])
        })
        .collect();
    Some(Section {
        title: Some(Rich::text("Table readings")),
        level: 1,
        appendix: false,
        blocks: vec![
            Block::Paragraph(Rich::text(
                "Every value read from a table, the reading the sheet chose (heft never chooses one) and the rows it read. A key outside a table is an error: no table is extrapolated.",
            )),
            Block::Table(Table {
                columns: ["in", "table", "reading", "keys", "rows read", "value"]
                    .map(String::from)
                    .to_vec(),
                rows,
            }),
        ],
    })
}
