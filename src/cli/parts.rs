//! Parts lists and lifts in `heft check --json`: each block's items (or
//! points) with the names of their cells, whose values are in `cells`.

use schemars::JsonSchema;
use serde::Serialize;

use crate::eval::{Evaluated, OutlineItem};

/// A parts list or a lift.
#[derive(Serialize, JsonSchema)]
pub(super) struct JsonMembers<'a> {
    /// The line of its `parts` or `lift`.
    line: usize,
    /// Whether it is a lift (else a parts list).
    lift: bool,
    /// Its name.
    name: &'a str,
    /// Its label.
    label: Option<&'a str>,
    /// The column headings after the item's or point's name: a list's
    /// quantities; a lift's `position` and `load`.
    columns: &'a [String],
    /// One row per item or point.
    rows: Vec<JsonMemberRow<'a>>,
    /// For a lift: the cells of the weight it carries and of its centre of gravity.
    carried: Option<[&'a str; 2]>,
    /// The sheet's cells that use the block's cells (a list's aggregates).
    used_by: Vec<&'a str>,
}

/// An item of a parts list or a point of a lift.
#[derive(Serialize, JsonSchema)]
struct JsonMemberRow<'a> {
    /// The item's or point's name.
    name: &'a str,
    /// Its description.
    description: Option<&'a str>,
    /// The name of its cell in each column (in `cells`), or null.
    cells: Vec<Option<&'a str>>,
}

/// Every parts list and lift, in file order.
pub(super) fn json_members(evaluated: &Evaluated) -> Vec<JsonMembers<'_>> {
    let name = |id: usize| evaluated.cell_at(id).name;
    evaluated
        .outline
        .iter()
        .filter_map(|item| match item {
            OutlineItem::Members(report) => Some(report),
            _ => None,
        })
        .map(|report| JsonMembers {
            line: evaluated.lines.line_of(report.span.start()) + 1,
            lift: report.is_lift,
            name: &report.name,
            label: report.label.as_deref(),
            columns: &report.columns,
            rows: report
                .rows
                .iter()
                .map(|row| JsonMemberRow {
                    name: &row.name,
                    description: row.description.as_deref(),
                    cells: row.cells.iter().map(|id| id.map(name)).collect(),
                })
                .collect(),
            carried: report
                .carried
                .map(|(weight, centre)| [name(weight), name(centre)]),
            used_by: report.users.iter().map(|&id| name(id)).collect(),
        })
        .collect()
}
