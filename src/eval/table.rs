//! Reading a table in a formula: `lookup(chart.capacity, R, L, least)`.
//! The table's numbers are the sheet's (`sheet::Table`, linked before any
//! cell); here each column's unit is resolved, each key's dimension checked
//! against its column's, and the grid read by `numeric::Grid` in SI. Every
//! reading of the sheet as written is kept for the outputs
//! ([`TableRead`]).

use super::{Evaluation, Evaluator};
use crate::base::{Code, Diagnostic, Span};
use crate::numeric::{Bracket, Grid, GridError, GridReading};
use crate::sheet::{Sheet, Table};
use crate::syntax::ast::{Lookup, Reading};
use crate::units::{self, Quantity, ResolvedUnit, Value};

/// One table as the evaluator reads it: its columns' units, and a grid
/// per column in SI.
#[derive(Clone, Debug)]
pub(crate) struct ReadableTable {
    units: Vec<ResolvedUnit>,
    grids: Vec<Grid>,
}

/// A reading of a table by the sheet as written: where, what, and the rows read.
#[derive(Clone, Debug, PartialEq)]
pub struct TableRead {
    /// The `lookup(…)` expression.
    pub span: Span,
    /// The table's index among the sheet's tables.
    pub table: usize,
    /// The column read.
    pub column: usize,
    /// How it was read.
    pub reading: Reading,
    /// The keys given, in the table's key order.
    pub keys: Vec<Quantity>,
    /// The rows read (indices into the table's rows), in row order.
    pub rows: Vec<usize>,
    /// The value read.
    pub value: Quantity,
    /// The keys in their columns' units, as the table writes them.
    pub keys_in_column_units: Vec<f64>,
    /// The value in its column's unit.
    pub value_in_column_unit: f64,
}

/// Resolves every table's column units and builds its grids; a table
/// whose unit is unknown, or that cannot be read, has none (its lookups
/// fail). The diagnostics are the unit errors.
pub(crate) fn readable_tables(
    sheet: &Sheet,
    evaluator: &Evaluator<'_>,
) -> (Vec<Option<ReadableTable>>, Vec<Diagnostic>) {
    let mut diagnostics = Vec::new();
    let tables = sheet
        .tables
        .iter()
        .map(|table| {
            let mut units = Vec::with_capacity(table.columns.len());
            for column in &table.columns {
                match &column.unit {
                    None => units.push(ResolvedUnit {
                        dimension: units::Dimension::NONE,
                        si_factor: 1.0,
                    }),
                    Some(unit) => match evaluator.resolve_unit_uncached(unit) {
                        Ok(resolved) => units.push(resolved),
                        Err(diagnostic) => {
                            let mut diagnostic = *diagnostic;
                            if let Some(file) = &table.file {
                                diagnostic.message = format!(
                                    "{} (column `{}` of {file})",
                                    diagnostic.message, column.name
                                );
                            }
                            diagnostics.push(diagnostic);
                        }
                    },
                }
            }
            (table.usable && units.len() == table.columns.len()).then(|| ReadableTable {
                grids: (0..table.columns.len())
                    .map(|column| grid(table, &units, column))
                    .collect(),
                units,
            })
        })
        .collect();
    (tables, diagnostics)
}

/// One column of a table as a grid over its keys, in SI.
fn grid(table: &Table, units: &[ResolvedUnit], column: usize) -> Grid {
    Grid {
        axes: table
            .axes
            .iter()
            .zip(&table.keys)
            .map(|(axis, &key)| axis.iter().map(|v| v * units[key].si_factor).collect())
            .collect(),
        values: table
            .grid_rows
            .iter()
            .map(|&row| table.rows[row][column] * units[column].si_factor)
            .collect(),
    }
}

impl ReadableTable {
    /// The SI value of one of the unit of the key on `axis`.
    pub(crate) fn key_factor(&self, axis: usize, table: &Table) -> f64 {
        table
            .keys
            .get(axis)
            .and_then(|&column| self.units.get(column))
            .map_or(1.0, |unit| unit.si_factor)
    }
}

impl Evaluator<'_> {
    /// The value of `lookup(…)`: each key checked against its column, the
    /// grid read as the lookup says, the result in the column's unit.
    pub(crate) fn read_table(&self, lookup: &Lookup, span: Span) -> Evaluation {
        let not_readable = || {
            Box::new(Diagnostic::error(
                Code::TableColumnUnknown,
                span,
                format!("table `{}` cannot be read", lookup.table.text),
            ))
        };
        let target = lookup.target.ok_or_else(not_readable)?;
        let table = &self.sheet.tables[target.table];
        let readable = self
            .tables
            .get(target.table)
            .and_then(Option::as_ref)
            .ok_or_else(not_readable)?;
        let mut point = Vec::with_capacity(lookup.keys.len());
        let mut keys = Vec::with_capacity(lookup.keys.len());
        for (axis, key) in lookup.keys.iter().enumerate() {
            let column = table.keys[axis];
            let unit = readable.units[column];
            let value = match self.eval(key)? {
                Value::Scalar(q) => q,
                Value::Vector(_) => {
                    return Err(Box::new(Diagnostic::error(
                        Code::DimensionMismatch,
                        key.span,
                        format!(
                            "a table's key is a scalar; `{}` is a vector",
                            key.span.text(self.source)
                        ),
                    )));
                }
            };
            if value.dimension != unit.dimension {
                return Err(Box::new(
                    Diagnostic::error(
                        Code::DimensionMismatch,
                        key.span,
                        format!(
                            "`{}` is {} ({}), and table `{}`'s key `{}` is {}",
                            key.span.text(self.source),
                            value.dimension.describe(),
                            self.style.show(value),
                            table.name,
                            table.columns[column].name,
                            column_dimension(&table.columns[column].unit_text, unit),
                        ),
                    )
                    .with_help("give the key in a unit of the column's dimension"),
                ));
            }
            point.push(value.si);
            keys.push(value);
        }
        let reading = match target.reading {
            Reading::Exact => GridReading::Exact,
            Reading::Linear => GridReading::Linear,
            Reading::Least => GridReading::Least,
            Reading::Greatest => GridReading::Greatest,
        };
        let read = readable.grids[target.column]
            .read(&point, reading)
            .map_err(|error| self.unreadable_key(lookup, table, &readable.units, &keys, error))?;
        let value = Quantity::new(read.value, readable.units[target.column].dimension);
        if self.pins.is_empty() && self.overrides.is_empty() && self.probe_range.get().is_none() {
            let mut rows: Vec<usize> = read.points.iter().map(|&p| table.grid_rows[p]).collect();
            rows.sort_unstable();
            rows.dedup();
            let keys_in_column_units = keys
                .iter()
                .zip(&table.keys)
                .map(|(key, &column)| key.si / readable.units[column].si_factor)
                .collect();
            let record = TableRead {
                span,
                table: target.table,
                column: target.column,
                reading: target.reading,
                keys,
                rows,
                value,
                keys_in_column_units,
                value_in_column_unit: read.value / readable.units[target.column].si_factor,
            };
            let mut reads = self.table_reads.borrow_mut();
            match reads.iter_mut().find(|kept| kept.span == span) {
                Some(kept) => *kept = record,
                None => reads.push(record),
            }
        }
        Ok(Value::Scalar(value))
    }

    /// Why a key cannot be read: outside the table, or between rows for an
    /// exact reading.
    fn unreadable_key(
        &self,
        lookup: &Lookup,
        table: &Table,
        units: &[ResolvedUnit],
        keys: &[Quantity],
        error: GridError,
    ) -> Box<Diagnostic> {
        let (axis, between) = match error {
            GridError::Outside { axis } => (axis, None),
            GridError::NotAKey { axis, bracket } => (axis, Some(bracket)),
        };
        let column = table.keys[axis];
        let unit_text = &table.columns[column].unit_text;
        let axis_keys = &table.axes[axis];
        let written = |raw: f64| {
            let number = units::format_significant(raw, self.style.sig_figs);
            if unit_text.is_empty() {
                number
            } else {
                format!("{number} {unit_text}")
            }
        };
        let given = keys
            .get(axis)
            .map_or(f64::NAN, |key| key.si / units[column].si_factor);
        let key_span = lookup
            .keys
            .get(axis)
            .map_or(lookup.table.span, |key| key.span);
        let key_text = key_span.text(self.source);
        let name = &table.columns[column].name;
        match between {
            None => {
                // The range as the table writes it: the grid is sorted, so
                // the first and last rows hold each key's extremes.
                let as_written = |row: usize| {
                    let number = table.text(row, column);
                    if unit_text.is_empty() {
                        number.to_string()
                    } else {
                        format!("{number} {unit_text}")
                    }
                };
                let (first, last) = (
                    as_written(0),
                    as_written(table.rows.len().saturating_sub(1)),
                );
                Box::new(
                    Diagnostic::error(
                        Code::TableKeyOutside,
                        key_span,
                        format!(
                            "`{key_text}` = {} is outside table `{}`: its {name} runs from {first} to {last}",
                            written(given),
                            table.name,
                        ),
                    )
                    .with_help(
                        "heft never extrapolates a table: use a chart that covers the value, or change the input",
                    ),
                )
            }
            Some(bracket) => {
                let sides = match bracket {
                    Bracket::Between { lower, .. } => format!(
                        " (between the rows at {} and {})",
                        written(axis_keys[lower]),
                        written(axis_keys.get(lower + 1).copied().unwrap_or(f64::NAN))
                    ),
                    Bracket::At(_) => String::new(),
                };
                Box::new(
                    Diagnostic::error(
                        Code::TableKeyOutside,
                        key_span,
                        format!(
                            "`{key_text}` = {} is no {name} of table `{}`{sides}, and an `exact` reading needs a row's key",
                            written(given),
                            table.name
                        ),
                    )
                    .with_help(
                        "read between rows with `least` (conservative for a rating), `greatest` or `linear`",
                    ),
                )
            }
        }
    }
}

/// `in m (a length)`, `a plain number`.
fn column_dimension(unit_text: &str, unit: ResolvedUnit) -> String {
    if unit_text.is_empty() {
        "a plain number".to_string()
    } else {
        format!("in {unit_text} ({})", unit.dimension.describe())
    }
}
