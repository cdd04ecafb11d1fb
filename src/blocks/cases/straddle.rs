//! Tolerances whose box straddles the test of a piecewise formula: the
//! ranges that depend on it are the hull of both branches (the interval
//! engine joins them at `Select`) and carry no first-order estimate; this
//! says so, once per test, naming the results.

use super::ranges::{RangeOf, Ranges};
use crate::base::{Code, Diagnostic, Span};
use crate::eval::Evaluator;
use crate::eval::model::CellRange;
use crate::sheet::CellId;

impl Evaluator<'_> {
    /// An info finding at each straddled test, naming the cells whose range
    /// it reaches and the checks whose sides it reaches.
    pub(super) fn note_straddles(
        &mut self,
        ranges: &Ranges,
        cell_ranges: &[Option<CellRange>],
        straddled_checks: &[(usize, Span)],
        case: Option<&str>,
    ) {
        let mut tests: Vec<(Span, Vec<String>)> = Vec::new();
        let mut note = |span: Span, what: String| match tests.iter_mut().find(|(s, _)| *s == span) {
            Some((_, names)) => names.push(what),
            None => tests.push((span, vec![what])),
        };
        for (id, range) in cell_ranges.iter().enumerate() {
            if range.is_some()
                && let Some(span) = RangeOf::Cell(id).straddled(ranges)
            {
                note(span, format!("`{}`", self.sheet.cell(id).name.text));
            }
        }
        for &(index, span) in straddled_checks {
            let line = self.line_of(self.sheet.check(index).lhs.span) + 1;
            note(span, format!("the check at line {line}"));
        }
        let in_case = case
            .map(|name| format!(" in case `{name}`"))
            .unwrap_or_default();
        for (span, names) in tests {
            self.diagnostics.push(
                Diagnostic::info(
                    Code::RangeStraddlesCondition,
                    span,
                    format!(
                        "the tolerances{in_case} straddle this test: it holds for part of their range, not all, so {} take both branches into account (the hull of their values); no first-order estimate or sensitivity is given across it",
                        names.join(", ")
                    ),
                )
                .with_help("a check on such a result passes only if it holds on both branches"),
            );
        }
    }

    fn line_of(&self, span: Span) -> usize {
        crate::base::LineIndex::new(self.source).line_of(span.start())
    }
}

impl Evaluator<'_> {
    /// Where cell `id` is written: its case's replacement, or the statement
    /// that defines it (a block's, for its unknowns and states).
    fn written_at(&self, id: CellId) -> Span {
        if let Some(replacement) = self.overrides.get(&id) {
            return replacement.expr.span;
        }
        self.sheet.statements[self.sheet.cell_statement(id)].span
    }

    /// The first of `straddled` (tests that held at some corners and not at
    /// others) written in check `index` or in a cell it depends on.
    pub(super) fn straddled_for_check(&self, index: usize, straddled: &[Span]) -> Option<Span> {
        let check = self.sheet.check(index);
        let own = check.lhs.span.to(check.rhs.span);
        let upstream = self.upstream_of(self.sheet.check_uses[index].clone());
        straddled.iter().copied().find(|test| {
            within(*test, own)
                || upstream
                    .iter()
                    .any(|&id| within(*test, self.written_at(id)))
        })
    }

    /// The same for cell `id`.
    pub(super) fn straddled_for_cell(&self, id: CellId, straddled: &[Span]) -> Option<Span> {
        let upstream = self.upstream_of(vec![id]);
        straddled.iter().copied().find(|test| {
            upstream
                .iter()
                .any(|&id| within(*test, self.written_at(id)))
        })
    }

    /// `start` and every cell they depend on.
    fn upstream_of(&self, start: Vec<CellId>) -> Vec<CellId> {
        let mut seen = vec![false; self.sheet.cells.len()];
        let mut stack = start;
        let mut found = Vec::new();
        while let Some(id) = stack.pop() {
            if id >= seen.len() || seen[id] {
                continue;
            }
            seen[id] = true;
            found.push(id);
            stack.extend(self.uses_of(id));
        }
        found
    }

    /// The message of a range that straddles a test between its corners.
    pub(super) fn straddle_reason(&self, test: Span) -> String {
        format!(
            "the range straddles the condition at line {}: its test holds at some corners of the tolerances and not at others, and through a solve or simulate block heft cannot bound both branches between the corners",
            self.line_of(test) + 1
        )
    }
}

/// Whether `inner` lies within `outer`.
fn within(inner: Span, outer: Span) -> bool {
    outer.start() <= inner.start() && inner.end() <= outer.end()
}
