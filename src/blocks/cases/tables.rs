//! Tables read across a tolerance. A reading is a step function (`exact`,
//! `least`, `greatest`) or piecewise linear (`linear`): the interval engine
//! does not follow it, so a lookup's range is found at the corners of the
//! tolerances. That is exact only where the column read is monotone, in one
//! direction per key, over every row the keys' ranges can reach (then the
//! reading is monotone in each key, and its extremes are at corners).
//! Anywhere else the range is dropped and every check it reaches is
//! unknown, with the reason: an unknown is never a pass.

use crate::eval::Evaluator;
use crate::eval::model::{CellRange, CheckResult};
use crate::numeric::{Bracket, bracket};
use crate::sheet::{CellId, Node, Table};
use crate::syntax::ast::{Expr, ExprKind, Lookup, StatementKind, Target};
use crate::units::Value;

impl Evaluator<'_> {
    /// Drops the ranges of cells whose table readings the corners cannot
    /// bound (and of everything after them), and makes the checks they
    /// reach unknown unless a corner already fails them.
    pub(super) fn bound_table_readings(
        &self,
        reached: &[bool],
        cell_ranges: &mut [Option<CellRange>],
        checks: &mut [CheckResult],
    ) {
        if self.sheet.tables.is_empty() {
            return;
        }
        let mut unbounded: Vec<Option<String>> = vec![None; self.sheet.cells.len()];
        for &node in self.node_order() {
            let cells = self.sheet.nodes[node].cells();
            let inherited = cells.iter().find_map(|&id| {
                self.uses_of(id)
                    .iter()
                    .find_map(|&used| unbounded[used].clone())
            });
            let own = match &self.sheet.nodes[node] {
                Node::Cell(id) => self
                    .cell_expr(*id)
                    .and_then(|expr| self.unbounded_in(expr, reached, cell_ranges)),
                Node::Solve { statement, .. } | Node::Simulate { statement, .. } => {
                    let reads_table =
                        statement_reads_table(&self.sheet.statements[*statement].kind);
                    (reads_table && cells.iter().any(|&id| reached[id])).then(|| {
                        "a tolerance reaches a table read inside a solve or simulate block, whose reading heft does not bound".to_string()
                    })
                }
            };
            if let Some(reason) = inherited.or(own) {
                for &id in cells {
                    unbounded[id] = Some(reason.clone());
                    cell_ranges[id] = None;
                }
            }
        }
        for (index, result) in checks.iter_mut().enumerate() {
            if result.worst.as_ref().is_some_and(|worst| !worst.passes) {
                continue;
            }
            let check = self.sheet.check(index);
            let reason = self.sheet.check_uses[index]
                .iter()
                .find_map(|&id| unbounded[id].clone())
                .or_else(|| self.unbounded_in(&check.lhs, reached, cell_ranges))
                .or_else(|| self.unbounded_in(&check.rhs, reached, cell_ranges));
            if let Some(reason) = reason {
                result.worst = None;
                result.worst_unknown = Some(reason);
            }
        }
    }

    /// A cell's formula, or its load case's replacement.
    fn cell_expr(&self, id: CellId) -> Option<&Expr> {
        match self.overrides.get(&id) {
            Some(replacement) => Some(&replacement.expr),
            None => self.sheet.cell(id).expr,
        }
    }

    /// Why a lookup in `expr` cannot be bounded at the corners, if one cannot.
    fn unbounded_in(
        &self,
        expr: &Expr,
        reached: &[bool],
        cell_ranges: &[Option<CellRange>],
    ) -> Option<String> {
        let mut reason = None;
        expr.walk(&mut |node| {
            if reason.is_none()
                && let ExprKind::Lookup(lookup) = &node.kind
            {
                reason = self.unbounded_lookup(lookup, reached, cell_ranges);
            }
        });
        reason
    }

    /// Why one lookup cannot be bounded at the corners: a key the
    /// tolerances reach through a formula (its range is not a cell's), a
    /// key range beyond the table, or a column not monotone over the rows
    /// the key ranges reach.
    fn unbounded_lookup(
        &self,
        lookup: &Lookup,
        reached: &[bool],
        cell_ranges: &[Option<CellRange>],
    ) -> Option<String> {
        let target = lookup.target?;
        let table = &self.sheet.tables[target.table];
        let mut spans = Vec::with_capacity(lookup.keys.len());
        let mut varies = false;
        for (axis, key) in lookup.keys.iter().enumerate() {
            let mut reaches = false;
            key.walk(&mut |node| {
                if let ExprKind::Name(name) = &node.kind
                    && let Target::Cell(id) = name.target
                {
                    reaches |= reached[id];
                }
            });
            let (low, high) = if reaches {
                varies = true;
                let range = match &key.kind {
                    ExprKind::Name(name) => match name.target {
                        Target::Cell(id) => cell_ranges[id].as_ref(),
                        _ => None,
                    },
                    _ => None,
                };
                match range {
                    Some(range) => (range.low, range.high),
                    None => {
                        return Some(format!(
                            "a tolerance reaches the key `{}` of table `{}` through a formula; heft bounds a table reading over a tolerance only when each key is a cell",
                            key.span.text(self.source),
                            table.name
                        ));
                    }
                }
            } else {
                match self.eval(key).ok()? {
                    Value::Scalar(q) => (q.si, q.si),
                    Value::Vector(_) => return None,
                }
            };
            let factor = self
                .tables
                .get(target.table)?
                .as_ref()?
                .key_factor(axis, table);
            spans.push(match reachable_rows(&table.axes[axis], low / factor, high / factor) {
                Some(rows) => rows,
                None => {
                    return Some(format!(
                        "the tolerance of `{}` reaches beyond table `{}`'s {} (a table is never extrapolated)",
                        key.span.text(self.source),
                        table.name,
                        table.columns[table.keys[axis]].name
                    ));
                }
            });
        }
        if !varies {
            return None;
        }
        (!monotone_over(table, target.column, &spans)).then(|| {
            format!(
                "table `{}`'s {} is not monotone over the rows the tolerances reach, so its reading is not bounded by the corners",
                table.name, table.columns[target.column].name
            )
        })
    }
}

/// Whether a statement reads a table anywhere.
fn statement_reads_table(kind: &StatementKind) -> bool {
    let mut found = false;
    let mut look = |expr: &Expr| {
        expr.walk(&mut |node| found |= matches!(node.kind, ExprKind::Lookup(_)));
    };
    match kind {
        StatementKind::Solve(block) => {
            for equation in &block.equations {
                look(&equation.lhs);
                look(&equation.rhs);
            }
        }
        StatementKind::Simulate(block) => {
            for state in &block.states {
                look(&state.rate);
            }
            for event in &block.events {
                look(&event.lhs);
                look(&event.rhs);
            }
            for initial in &block.initial_values {
                look(&initial.value);
            }
        }
        _ => {}
    }
    found
}

/// The indices of an axis's keys that readings over `[low, high]` use:
/// from the row at or below `low` to the row at or above `high`; `None`
/// when the range leaves the axis.
fn reachable_rows(axis: &[f64], low: f64, high: f64) -> Option<(usize, usize)> {
    let first = match bracket(axis, low)? {
        Bracket::At(index) | Bracket::Between { lower: index, .. } => index,
    };
    let last = match bracket(axis, high)? {
        Bracket::At(index) => index,
        Bracket::Between { lower, .. } => lower + 1,
    };
    Some((first, last))
}

/// Whether `column` is monotone along each key over the index ranges
/// `spans`, in one direction per key throughout.
fn monotone_over(table: &Table, column: usize, spans: &[(usize, usize)]) -> bool {
    let value = |indices: &[usize]| -> f64 {
        let flat = match indices {
            [i] => *i,
            [i, j] => i * table.axes[1].len() + j,
            _ => usize::MAX,
        };
        table
            .grid_rows
            .get(flat)
            .and_then(|&row| table.rows.get(row))
            .map_or(f64::NAN, |cells| cells[column])
    };
    for (axis, &(first, last)) in spans.iter().enumerate() {
        let others: Vec<usize> = match spans.len() {
            1 => vec![0],
            _ => {
                let (a, b) = spans[1 - axis];
                (a..=b).collect()
            }
        };
        let (mut rises, mut falls) = (false, false);
        for &other in &others {
            for index in first..last {
                let point = |at: usize| -> Vec<usize> {
                    match (spans.len(), axis) {
                        (1, _) => vec![at],
                        (_, 0) => vec![at, other],
                        _ => vec![other, at],
                    }
                };
                let (here, next) = (value(&point(index)), value(&point(index + 1)));
                if next.is_nan() || here.is_nan() {
                    return false;
                }
                rises |= next > here;
                falls |= next < here;
            }
        }
        if rises && falls {
            return false;
        }
    }
    true
}
