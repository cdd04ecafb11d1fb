//! The syntax of tables: a table of numbers with units, written in the
//! sheet or read from a CSV file beside it, and a reading of one of its
//! columns (`lookup(chart.capacity, R, L, least)`).

use super::{Description, Expr, Ident, UnitExpr};
use crate::base::Span;

/// A table: `table chart by radius, boom "load chart": … end`, or
/// `table slings by angle from "sling_chart.csv" "sling capacity"`.
#[derive(Clone, Debug, PartialEq)]
pub struct TableBlock {
    /// The table's name, used in `lookup(NAME.column, …)`.
    pub name: Ident,
    /// The key columns' names, one or two, in written order.
    pub keys: Vec<Ident>,
    /// The optional description.
    pub description: Option<Description>,
    /// Where its rows come from.
    pub source: TableSource,
    /// Whether every line parsed and a written table is closed by `end`.
    pub complete: bool,
    /// The `table …` line.
    pub head: Span,
}

/// Where a table's columns and rows are written.
#[derive(Clone, Debug, PartialEq)]
pub enum TableSource {
    /// In the sheet, between the head and `end`.
    Written {
        /// The first line: the columns.
        columns: Vec<ColumnHead>,
        /// The rows that parsed, in written order.
        rows: Vec<TableRow>,
    },
    /// In a CSV file beside the sheet: `from "sling_chart.csv"`.
    File {
        /// The path as written, relative to the sheet's folder.
        path: Description,
    },
}

/// A column's head: `radius [m]`, or a plain `count`.
#[derive(Clone, Debug, PartialEq)]
pub struct ColumnHead {
    /// The column's name.
    pub name: Ident,
    /// Its unit; a plain number when absent.
    pub unit: Option<UnitExpr>,
    /// The whole head.
    pub span: Span,
}

/// A row of numbers: `6 | 30 | 12.0`.
#[derive(Clone, Debug, PartialEq)]
pub struct TableRow {
    /// Each cell's number and where it is written.
    pub cells: Vec<(f64, Span)>,
    /// Each cell's number as written (`12.0`).
    pub texts: Vec<String>,
    /// The whole line.
    pub span: Span,
}

/// How a table is read between (or at) its rows. The sheet always says
/// which: heft never chooses a reading.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Reading {
    /// `exact`: the key must equal a row's key.
    Exact,
    /// `linear`: linear interpolation between the bracketing rows
    /// (bilinear for two keys).
    Linear,
    /// `least`: the smallest value among the bracketing rows, the
    /// conservative reading of a rating table.
    Least,
    /// `greatest`: the largest value among the bracketing rows, the
    /// conservative reading of a demand table.
    Greatest,
}

impl Reading {
    /// Every reading, in the order the language guide lists them.
    pub const ALL: [Reading; 4] = [
        Reading::Exact,
        Reading::Linear,
        Reading::Least,
        Reading::Greatest,
    ];

    /// The word as written in a sheet.
    pub fn word(self) -> &'static str {
        match self {
            Reading::Exact => "exact",
            Reading::Linear => "linear",
            Reading::Least => "least",
            Reading::Greatest => "greatest",
        }
    }

    /// The reading a word names, if any.
    pub fn from_word(word: &str) -> Option<Reading> {
        Reading::ALL
            .into_iter()
            .find(|reading| reading.word() == word)
    }
}

/// A reading of a table's column: `lookup(chart.capacity, R_pick, L_boom, least)`.
#[derive(Clone, Debug, PartialEq)]
pub struct Lookup {
    /// The table's name.
    pub table: Ident,
    /// The column read.
    pub column: Ident,
    /// The key arguments, in the order of the table's key columns.
    pub keys: Vec<Expr>,
    /// The last argument when it is a bare word: the reading (linking
    /// checks the word, and whether it is a key after all).
    pub reading_word: Option<Ident>,
    /// What linking found: the table, the column and the reading; `None`
    /// until linked, or when the lookup is broken (its error reported).
    pub target: Option<LookupTarget>,
}

/// A linked lookup: indices into the sheet's tables and the table's columns.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct LookupTarget {
    /// The table's index among the sheet's tables.
    pub table: usize,
    /// The column's index in the table.
    pub column: usize,
    /// How it is read.
    pub reading: Reading,
}
