//! The report's view of a parts list or a lift: a table of its items (each
//! quantity's value) with the sheet's cells that total over the list, or a
//! table of a lift's points with each point's position and vertical load.
//! Every number is a cell's value as the sheet evaluated it.

use super::math;
use super::model::{Block, Callout, Piece, Rich, Table, Tone};
use crate::eval::{Evaluated, MembersReport};
use crate::sheet::CellId;

/// The blocks that show a parts list or a lift.
pub(super) fn members_blocks(evaluated: &Evaluated, report: &MembersReport) -> Vec<Block> {
    let shown = |id: Option<CellId>| {
        id.and_then(|id| evaluated.shown_value(id))
            .map_or_else(|| Rich::text("—"), |value| Rich::text(math::shown(&value)))
    };
    let mut heading = Rich(vec![Piece::Text(
        if report.is_lift {
            "Lift "
        } else {
            "Parts list "
        }
        .to_string(),
    )]);
    heading.push(Piece::Code(report.name.clone()));
    if let Some(label) = &report.label {
        heading.push_text(&format!(": {label}"));
    }
    if let Some((weight, centre)) = report.carried {
        heading.push_text(" — carries ");
        heading.extend(shown(Some(weight)));
        heading.push_text(" at ");
        heading.extend(shown(Some(centre)));
        heading.push_text(". Each point's vertical load from statics (two points: the lever rule along their line; three: area coordinates).");
    }
    let mut blocks = vec![Block::Paragraph(heading)];
    let mut columns = vec![if report.is_lift { "point" } else { "item" }.to_string()];
    columns.extend(report.columns.iter().cloned());
    columns.push("description".to_string());
    let rows = report
        .rows
        .iter()
        .map(|row| {
            let mut cells = vec![Rich::text(row.name.clone())];
            cells.extend(row.cells.iter().map(|&id| shown(id)));
            cells.push(Rich::text(row.description.clone().unwrap_or_default()));
            cells
        })
        .collect();
    blocks.push(Block::Table(Table { columns, rows }));
    if !report.users.is_empty() && !report.is_lift {
        let rows = report
            .users
            .iter()
            .map(|&id| {
                let cell = evaluated.cell_at(id);
                vec![
                    Rich(vec![Piece::Code(cell.name.to_string())]),
                    Rich(vec![Piece::Code(cell.formula.to_string())]),
                    shown(Some(id)),
                ]
            })
            .collect();
        blocks.push(Block::Table(Table {
            columns: vec![
                "over the list".to_string(),
                "as written".to_string(),
                "value".to_string(),
            ],
            rows,
        }));
    }
    if report.is_lift && report.rows.len() >= 4 {
        blocks.push(Block::Callout(Callout {
            tone: Tone::Bad,
            text: Rich::text(
                "Four or more lift points are statically indeterminate: the shares depend on the rigging, so no loads are given.",
            ),
        }));
    }
    blocks
}
