//! Edits to the live sheet: a field, a line, a splice of whole lines; each
//! replaces the statements it touches and hands what changed to the
//! recompute.

use super::*;

impl LiveSheet {
    /// Replaces one field of cell `id` (see [`CellField`]); the rest of its
    /// line is kept as written.
    pub fn set_cell_field(
        &mut self,
        id: CellId,
        field: CellField,
        value: &str,
    ) -> Result<(), EditError> {
        let statement = self.sheet.cell_statement(id);
        let span = self.sheet.cell_span(id);
        let Some(cell) = self.own_line_cell(id) else {
            return Err(EditError::NotOwnLine {
                line: self.statement_line(statement),
            });
        };
        let line_text = edit::with_cell_field(
            cell,
            span.text(self.document.arena()),
            span.start(),
            field,
            value,
        );
        self.replace_line(self.statement_line(statement), &line_text)
    }

    /// Replaces the text of 0-based `line` (a body line).
    pub fn replace_line(&mut self, line: usize, text: &str) -> Result<(), EditError> {
        self.document.check_body_lines(line, 1)?;
        let splice = self.document.plan(line, 1, &[text])?;
        self.apply(&splice)
    }

    /// Inserts `text` as a new line before 0-based `at` (at the end when
    /// `at` is the number of lines).
    pub fn insert_line(&mut self, at: usize, text: &str) -> Result<(), EditError> {
        self.document.check_body_lines(at, 0)?;
        let splice = self.document.plan(at, 0, &[text])?;
        self.apply(&splice)
    }

    /// Removes 0-based `line` (a body line).
    pub fn remove_line(&mut self, line: usize) -> Result<(), EditError> {
        self.document.check_body_lines(line, 1)?;
        let splice = self.document.plan(line, 1, &[])?;
        self.apply(&splice)
    }

    /// Applies `splice` (made with `Document::plan`, or the inverse of
    /// one applied before): any lines, a block's or the header's included.
    /// A change of one statement line among one-line statements is
    /// evaluated incrementally; a change that touches the header, a
    /// block's first or `end` line, or a sheet with blocks reads the whole
    /// text again.
    pub fn apply(&mut self, splice: &Splice) -> Result<(), EditError> {
        if splice.is_empty() {
            return Ok(());
        }
        let first = splice.first;
        let touches_header = first < self.document.body_start() || self.document.header_unclosed();
        let n_removed = splice
            .before
            .iter()
            .enumerate()
            .filter(|(offset, line)| self.document.is_statement(first + offset, &line.text))
            .count();
        let index = self.document.statements_before(first);
        self.document.apply(splice)?;
        self.begin_edit();
        let regroups = splice.before.iter().chain(&splice.after).any(|line| {
            syntax::is_block_line(&line.text) || syntax::is_header_delimiter(&line.text)
        });
        if touches_header || regroups || self.needs_reopen() {
            self.reopen();
            return Ok(());
        }
        let mut added = Vec::new();
        for (offset, line) in splice.after.iter().enumerate() {
            if !self.document.is_statement(first + offset, &line.text) {
                continue;
            }
            let Some(span) = self.document.line_span(first + offset) else {
                continue;
            };
            let (kind, diagnostic) = syntax::parse_line(&line.text, span.start());
            added.push((Statement { span, kind }, diagnostic));
        }
        match (n_removed, added.len()) {
            (0, 0) => {}
            (1, 1) if splice.before.len() == 1 && splice.after.len() == 1 => {
                if let Some((statement, diagnostic)) = added.pop() {
                    self.replace_statement(index, statement, diagnostic);
                }
            }
            _ => {
                let mut statements = std::mem::take(&mut self.sheet.statements);
                let (new_statements, new_diagnostics): (Vec<_>, Vec<_>) = added.into_iter().unzip();
                statements.splice(index..index + n_removed, new_statements);
                self.parse_diagnostics
                    .splice(index..index + n_removed, new_diagnostics);
                self.relink(statements);
            }
        }
        self.compact_if_worthwhile();
        Ok(())
    }

    /// The 0-based lines of statement `index`: one line, or a block's
    /// lines from its first to its `end` (blank and comment lines between
    /// included).
    pub fn statement_lines(&self, index: usize) -> std::ops::Range<usize> {
        let first = self.statement_line(index);
        first..first + self.statement_text(index).matches('\n').count() + 1
    }

    /// Rebuilds the arena from the text (every span is then fresh). The
    /// text is unchanged, so its lint findings stay.
    pub fn compact(&mut self) {
        let lints = std::mem::take(&mut self.lints);
        let fix_helps = std::mem::take(&mut self.fix_helps);
        self.reopen();
        self.lints = lints;
        self.fix_helps = fix_helps;
    }

    /// Starts an edit: a new revision, whose lint findings are not known yet.
    pub(super) fn begin_edit(&mut self) {
        self.last_evaluated = 0;
        self.revision = next_revision();
        self.lints.clear();
        self.fix_helps.clear();
    }

    /// The revision of the text, unique in the process: answers about an
    /// older text (or another sheet's) are told apart by it.
    pub fn revision(&self) -> u64 {
        self.revision
    }

    pub(super) fn compact_if_worthwhile(&mut self) {
        let unused = self.document.unused_bytes();
        if unused > COMPACT_AFTER_BYTES && unused > self.document.arena().len() / 2 {
            self.compact();
        }
    }

    /// Whether the text must be read again: the header's extent may have
    /// changed, or statements span several lines (blocks), which the
    /// line-by-line paths do not handle. An edit that writes a block's
    /// first or `end` line reads it again too.
    pub(super) fn needs_reopen(&self) -> bool {
        self.document.header_unclosed()
            || self.document.first_statement_opens_header()
            || self.document.has_blocks()
    }

    pub(super) fn reopen(&mut self) {
        let text = self.document.text();
        let revision = self.revision;
        // A line just added at the end of a file without a final break is
        // empty and unbroken; the text read afresh would drop it.
        let unbroken_empty_end = self.document.ends_in_unbroken_empty_line();
        *self = LiveSheet::open_with_files(&text, std::sync::Arc::clone(&self.files));
        if unbroken_empty_end {
            self.document.restore_unbroken_empty_line();
        }
        self.revision = revision;
    }

    /// Puts `statement` in place of statement `index`, recomputing as little
    /// as the change allows.
    pub(super) fn replace_statement(
        &mut self,
        index: usize,
        mut statement: Statement,
        parse_diagnostic: Option<Diagnostic>,
    ) {
        let old_span = self.sheet.statements[index].span;
        let item = self.sheet.items[index];
        let old_is_inert = matches!(item, Item::Heading(_) | Item::Note(_) | Item::Invalid(_));
        let change = match (item, &mut statement.kind) {
            (_, StatementKind::Heading { .. }) if old_is_inert => {
                self.sheet.items[index] = Item::Heading(index);
                Change::Inert
            }
            (_, StatementKind::Note { .. }) if old_is_inert => {
                self.sheet.items[index] = Item::Note(index);
                Change::Inert
            }
            (_, StatementKind::Invalid) if old_is_inert => {
                self.sheet.items[index] = Item::Invalid(index);
                Change::Inert
            }
            (Item::Cell(id), StatementKind::Cell(new))
                if self.sheet.cell(id).name.text == new.name.text =>
            {
                self.update_cell(id, old_span, new, parse_diagnostic.as_ref())
            }
            (Item::Check(check), StatementKind::Check(new)) => {
                self.update_check(check, old_span, new, parse_diagnostic.as_ref())
            }
            _ => Change::Relink,
        };
        if let Change::Inert = change {
            self.swap_statement_diagnostics(old_span, parse_diagnostic.iter().cloned());
        }
        self.parse_diagnostics[index] = parse_diagnostic;
        match change {
            Change::Relink => {
                let mut statements = std::mem::take(&mut self.sheet.statements);
                statements[index] = statement;
                self.relink(statements);
            }
            Change::Inert => self.sheet.statements[index] = statement,
            Change::Cell(id) => {
                self.sheet.statements[index] = statement;
                self.recompute(&[id], &[]);
            }
            Change::Check(check) => {
                self.sheet.statements[index] = statement;
                self.recompute(&[], &[check]);
            }
        }
    }

    /// Removes the sheet diagnostics that lie in `old_span` and adds `new`.
    pub(super) fn swap_statement_diagnostics(
        &mut self,
        old_span: Span,
        new: impl Iterator<Item = Diagnostic>,
    ) {
        self.sheet.diagnostics.retain(|d| !within(d.span, old_span));
        self.sheet.diagnostics.extend(new);
    }

    /// Whether the undefined names of an edited statement get the same
    /// did-you-mean here as a full link would give them (it gives one to the
    /// first few undefined names only).
    pub(super) fn undefined_names_fit(&self, old_span: Span, new_undefined: usize) -> bool {
        if new_undefined == 0 {
            return true;
        }
        let existing = self
            .sheet
            .diagnostics
            .iter()
            .filter(|d| d.code == Code::UndefinedName && !within(d.span, old_span))
            .count();
        existing + new_undefined <= MAX_SUGGESTIONS
    }

    /// Resolves the names of one edited line's `exprs`: the cells they use,
    /// the line's diagnostics (its parse diagnostic first) and whether every
    /// name was defined; `None` when the line's undefined names would
    /// overrun the sheet's did-you-mean budget, so only a relink is right.
    pub(super) fn resolve_line<'e>(
        &self,
        exprs: impl IntoIterator<Item = &'e mut Expr>,
        old_span: Span,
        parse_diagnostic: Option<&Diagnostic>,
    ) -> Option<(Vec<CellId>, Vec<Diagnostic>, bool)> {
        let mut uses = Vec::new();
        let mut diagnostics: Vec<Diagnostic> = parse_diagnostic.into_iter().cloned().collect();
        let before = diagnostics.len();
        // `undefined_names_fit` checks the sheet's did-you-mean budget after.
        let mut suggestions_left = MAX_SUGGESTIONS;
        let ok = resolve_names(
            exprs,
            &self.sheet.names,
            &mut uses,
            &mut diagnostics,
            &mut suggestions_left,
        );
        self.undefined_names_fit(old_span, diagnostics.len() - before)
            .then_some((uses, diagnostics, ok))
    }
}
