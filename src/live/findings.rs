//! The live sheet's findings: evaluation diagnostics and the lints that
//! arrive from the lint thread, by statement and in all, and its summary.

use super::*;

impl LiveSheet {
    /// Every finding, by line and column.
    pub fn findings(&self) -> Vec<Finding> {
        let mut by_start: Vec<(usize, usize, usize)> = self
            .sheet
            .statements
            .iter()
            .enumerate()
            .map(|(index, statement)| (statement.span.start(), statement.span.end(), index))
            .collect();
        by_start.sort_unstable();
        let statement_of = |span: Span| {
            let index = by_start.partition_point(|entry| entry.0 <= span.start());
            index
                .checked_sub(1)
                .map(|index| by_start[index])
                .filter(|&(_, end, _)| span.start() <= end)
                .map(|(_, _, statement)| statement)
        };
        let mut findings: Vec<Finding> = self
            .all_diagnostics()
            .map(|diagnostic| {
                let statement = if self.header_diagnostics.contains(diagnostic) {
                    None
                } else {
                    statement_of(diagnostic.span)
                };
                self.finding(diagnostic, statement)
            })
            .collect();
        findings.extend(self.lints.iter().cloned());
        findings.sort_by(|a, b| {
            (a.line, a.column, a.code, &a.message).cmp(&(b.line, b.column, b.code, &b.message))
        });
        findings
    }

    /// The findings that lie in statement `index`.
    /// Also those placed elsewhere that point a label here (the other
    /// members of a loop, the first of two cells of one name).
    pub fn statement_findings(&self, index: usize) -> Vec<Finding> {
        let span = self.sheet.statements[index].span;
        let mut findings: Vec<Finding> = self
            .statement_diagnostics(index)
            .filter_map(|d| {
                if within(d.span, span) {
                    Some(self.finding(d, Some(index)))
                } else if d.labels.iter().any(|label| within(label.span, span)) {
                    let owner = self
                        .sheet
                        .statements
                        .iter()
                        .position(|statement| within(d.span, statement.span));
                    Some(self.finding(d, owner))
                } else {
                    None
                }
            })
            .collect();
        findings.extend(self.statement_lints(index).cloned());
        findings.sort_by_key(|finding| (finding.line, finding.column));
        findings
    }

    /// The most serious finding in statement `index`, if any.
    pub fn statement_severity(&self, index: usize) -> Option<Severity> {
        let span = self.sheet.statements[index].span;
        self.statement_diagnostics(index)
            .filter(|d| span.start() <= d.span.start() && d.span.start() <= span.end())
            .map(|diagnostic| diagnostic.severity)
            .chain(self.statement_lints(index).map(|finding| finding.severity))
            .max()
    }

    /// Number of findings in the whole sheet.
    pub fn n_findings(&self) -> usize {
        self.all_diagnostics().count() + self.lints.len()
    }

    /// The counts the status line shows, from the same function as every
    /// other presentation.
    pub fn summary(&self) -> crate::eval::Summary {
        crate::eval::Summary::of(
            self.sheet.cells.len(),
            &self.checks,
            self.all_diagnostics()
                .map(|d| d.severity)
                .chain(self.lints.iter().map(|f| f.severity)),
        )
    }

    /// Ranges over the tolerances, load cases and governing cases, as the
    /// whole-sheet evaluation gives them (empty for a sheet with neither
    /// tolerances nor cases).
    pub fn judgement(&self) -> &crate::blocks::SheetJudgement {
        &self.judgement
    }

    /// Number of findings of `severity` in the whole sheet.
    pub fn count(&self, severity: Severity) -> usize {
        let lints = self.lints.iter().filter(|f| f.severity == severity);
        self.all_diagnostics()
            .filter(|diagnostic| diagnostic.severity == severity)
            .count()
            + lints.count()
    }

    /// Diagnostics that may lie in statement `index`: the sheet's (parse and
    /// link) and those of its own evaluation.
    pub(super) fn statement_diagnostics(&self, index: usize) -> impl Iterator<Item = &Diagnostic> {
        let own: &[Diagnostic] = match self.sheet.items[index] {
            Item::Cell(id) => &self.cell_findings[id],
            Item::Check(check) => &self.check_findings[check],
            _ => &[],
        };
        self.sheet
            .diagnostics
            .iter()
            .chain(own)
            .chain(&self.block_findings)
    }

    pub(super) fn all_diagnostics(&self) -> impl Iterator<Item = &Diagnostic> {
        self.sheet
            .diagnostics
            .iter()
            .chain(self.cell_findings.iter().flatten())
            .chain(self.check_findings.iter().flatten())
            .chain(&self.block_findings)
    }

    pub(super) fn finding(&self, diagnostic: &Diagnostic, statement: Option<usize>) -> Finding {
        let arena = self.document.arena();
        let (line, column) = match statement {
            Some(index) => {
                // A block's lines are contiguous in the arena (blocks are
                // always read whole), so its line breaks count its lines.
                let start = self.sheet.statements[index].span.start();
                let before = Span::new(start, diagnostic.span.start().max(start)).text(arena);
                let lines_before = before.matches('\n').count();
                let column = before.rsplit('\n').next().unwrap_or(before).chars().count();
                (self.statement_line(index) + 1 + lines_before, column + 1)
            }
            None => {
                let place = self
                    .opened_lines
                    .line_column(arena, diagnostic.span.start());
                (place.line, place.column)
            }
        };
        let help = if diagnostic.fixes.is_empty() {
            diagnostic.help.clone()
        } else {
            self.fix_helps
                .iter()
                .find(|(at_line, at_column, code, _)| {
                    (*at_line, *at_column, *code) == (line, column, diagnostic.code)
                })
                .map_or_else(|| diagnostic.help.clone(), |(.., help)| help.clone())
        };
        Finding {
            severity: diagnostic.severity,
            code: diagnostic.code,
            line,
            column,
            message: diagnostic.message.clone(),
            help,
            statement,
        }
    }

    /// Puts in the lint findings (`audit::lint` over a fresh evaluation) of
    /// `text`, the text at `revision`. Findings of an older revision are
    /// dropped, since lines may have moved; returns whether they were taken.
    pub fn set_lints(&mut self, revision: u64, text: &str, lints: &[Diagnostic]) -> bool {
        if revision != self.revision {
            return false;
        }
        let lines = LineIndex::new(text);
        self.lints = lints
            .iter()
            .map(|diagnostic| {
                let place = lines.line_column(text, diagnostic.span.start());
                let line = place.line - 1;
                let statement = self
                    .document
                    .statement_at_line(line)
                    .or_else(|| self.document.statements_before(line + 1).checked_sub(1));
                Finding {
                    severity: diagnostic.severity,
                    code: diagnostic.code,
                    line: place.line,
                    column: place.column,
                    message: diagnostic.message.clone(),
                    help: diagnostic.help.clone(),
                    statement,
                }
            })
            .collect();
        true
    }

    /// Puts in the verified help of the evaluation findings of `text` (the
    /// text at `revision`) that offer a fix, as [`crate::pipeline::lint`]
    /// gives them; returns whether they were taken.
    pub fn set_fix_helps(&mut self, revision: u64, text: &str, findings: &[Diagnostic]) -> bool {
        if revision != self.revision {
            return false;
        }
        let lines = LineIndex::new(text);
        self.fix_helps = findings
            .iter()
            .map(|diagnostic| {
                let place = lines.line_column(text, diagnostic.span.start());
                (
                    place.line,
                    place.column,
                    diagnostic.code,
                    diagnostic.help.clone(),
                )
            })
            .collect();
        true
    }

    /// The lint findings in statement `index`.
    pub(super) fn statement_lints(&self, index: usize) -> impl Iterator<Item = &Finding> {
        self.lints
            .iter()
            .filter(move |finding| finding.statement == Some(index))
    }
}
