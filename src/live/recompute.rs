//! Recomputing after an edit: one cell or check and what depends on it
//! when the order holds, or the sheet relinked and evaluated whole.

use super::*;

impl LiveSheet {
    /// A cell keeps its name and gets a new formula, unit or description:
    /// resolve its names and keep the order if its uses still come first.
    pub(super) fn update_cell(
        &mut self,
        id: CellId,
        old_span: Span,
        new: &mut CellDef,
        parse_diagnostic: Option<&Diagnostic>,
    ) -> Change {
        if self.whole_sheet_only
            || new.tolerance.is_some()
            || !self.sheet.order.cycles.is_empty()
            || self.sheet.names.get(new.name.text.as_str()) != Some(&id)
        {
            return Change::Relink;
        }
        let Some((uses, diagnostics, ok)) =
            self.resolve_line([&mut new.expr], old_span, parse_diagnostic)
        else {
            return Change::Relink;
        };
        if uses.iter().any(|&used| self.rank[used] >= self.rank[id]) {
            return Change::Relink;
        }
        self.swap_statement_diagnostics(old_span, diagnostics.into_iter());
        self.sheet.broken[id] = !ok || matches!(new.expr.kind, ExprKind::Invalid);
        rewire(&mut self.dependents, &self.sheet.uses[id], &uses, id);
        self.sheet.uses[id] = uses;
        Change::Cell(id)
    }

    /// A check gets a new comparison or label.
    pub(super) fn update_check(
        &mut self,
        check: usize,
        old_span: Span,
        new: &mut CheckDef,
        parse_diagnostic: Option<&Diagnostic>,
    ) -> Change {
        if self.whole_sheet_only {
            return Change::Relink;
        }
        let Some((uses, diagnostics, ok)) =
            self.resolve_line([&mut new.lhs, &mut new.rhs], old_span, parse_diagnostic)
        else {
            return Change::Relink;
        };
        self.swap_statement_diagnostics(old_span, diagnostics.into_iter());
        self.sheet.broken_checks[check] = !ok;
        rewire(
            &mut self.check_dependents,
            &self.sheet.check_uses[check],
            &uses,
            check,
        );
        self.sheet.check_uses[check] = uses;
        Change::Check(check)
    }

    /// Links `statements` afresh and evaluates the whole sheet.
    pub(super) fn relink(&mut self, statements: Vec<Statement>) {
        let mut diagnostics = self.header_diagnostics.clone();
        diagnostics.extend(self.parse_diagnostics.iter().flatten().cloned());
        let header = std::mem::take(&mut self.sheet.header);
        self.sheet = Sheet::link_with(
            header,
            statements,
            diagnostics,
            &*self.loader,
            Arc::clone(&self.files),
        );
        let n_cells = self.sheet.cells.len();
        let n_checks = self.sheet.checks.len();
        self.dependents = vec![Vec::new(); n_cells];
        for (id, uses) in self.sheet.uses.iter().enumerate() {
            for &used in uses {
                self.dependents[used].push(id);
            }
        }
        self.check_dependents = vec![Vec::new(); n_cells];
        for (check, uses) in self.sheet.check_uses.iter().enumerate() {
            for &used in uses {
                self.check_dependents[used].push(check);
            }
        }
        self.rank = vec![0; n_cells];
        for (position, id) in self.sheet.cell_order().enumerate() {
            self.rank[id] = position as u32;
        }
        self.whole_sheet_only = self.sheet.nodes.len() != n_cells
            || !self.sheet.cases.is_empty()
            || (0..n_cells).any(|id| self.sheet.tolerance(id).is_some())
            || self
                .sheet
                .items
                .iter()
                .any(|item| matches!(item, Item::Sweep(_)))
            // A table's readings are judged with the sheet's.
            || !self.sheet.tables.is_empty()
            // A parts list's and a lift's judgement runs with the sheet's.
            || self
                .sheet
                .cells
                .iter()
                .any(|origin| matches!(origin, CellOrigin::Member { .. }));
        self.rows = presentation_order(&self.sheet);
        self.row_positions = vec![0; self.rows.len()];
        for (position, &statement) in self.rows.iter().enumerate() {
            self.row_positions[statement as usize] = position as u32;
        }
        self.visited = vec![0; n_cells];
        self.visited_checks = vec![0; n_checks];
        self.visit_stamp = 0;
        self.evaluate_all();
    }

    /// Evaluates every node and check, then the tolerances and load
    /// cases, as `heft check` does.
    pub(super) fn evaluate_all(&mut self) {
        let n_cells = self.sheet.cells.len();
        let arena = self.document.arena();
        let mut evaluator = crate::blocks::evaluator(&self.sheet, arena);
        // The sheet's own findings are kept in `self.sheet.diagnostics`.
        evaluator.diagnostics.clear();
        self.cell_findings = vec![Vec::new(); n_cells];
        // A table column's unknown unit is found as the evaluator starts.
        self.block_findings = evaluator.table_unit_problems();
        for &node in &self.sheet.order.order {
            evaluator.run_node(node);
            if evaluator.diagnostics.is_empty() {
                continue;
            }
            let found = std::mem::take(&mut evaluator.diagnostics);
            match self.sheet.nodes[node] {
                Node::Cell(id) => self.cell_findings[id] = found,
                _ => self.block_findings.extend(found),
            }
        }
        self.check_findings = vec![Vec::new(); self.sheet.checks.len()];
        let mut checks: Vec<CheckResult> = (0..self.sheet.checks.len())
            .map(|check| {
                let result = evaluator.evaluate_check(check);
                self.check_findings[check] = std::mem::take(&mut evaluator.diagnostics);
                result
            })
            .collect();
        if self.whole_sheet_only {
            self.judgement = evaluator.judge_sheet(&mut checks);
            self.block_findings.append(&mut evaluator.diagnostics);
            // What a withdrawn lift's statics formulas found while the nodes ran.
            if !self.judgement.withdrawn.is_empty() {
                let withdrawn = &self.judgement.withdrawn;
                for findings in &mut self.cell_findings {
                    findings.retain(|finding| !crate::blocks::is_withdrawn(withdrawn, finding));
                }
            }
        } else {
            self.judgement = crate::blocks::SheetJudgement::default();
            for (index, check) in checks.iter_mut().enumerate() {
                crate::eval::verdict::judge_check(&self.sheet, index, check, &[]);
            }
        }
        self.checks = checks;
        (self.displays, self.inputs) = evaluator.display_units();
        self.values = evaluator.values;
        self.statuses = evaluator.statuses;
        self.spreads = evaluator.spreads;
        self.last_evaluated = n_cells;
    }

    /// Re-evaluates `cells` and everything downstream of them, in dependency
    /// order, then `checks` and every check that uses a re-evaluated cell.
    pub(super) fn recompute(&mut self, cells: &[CellId], checks: &[usize]) {
        self.visit_stamp = self.visit_stamp.wrapping_add(1);
        if self.visit_stamp == 0 {
            self.visited.fill(0);
            self.visited_checks.fill(0);
            self.visit_stamp = 1;
        }
        let stamp = self.visit_stamp;
        let mut affected = Vec::new();
        let mut stack = cells.to_vec();
        while let Some(id) = stack.pop() {
            if self.visited[id] == stamp {
                continue;
            }
            self.visited[id] = stamp;
            affected.push(id);
            stack.extend_from_slice(&self.dependents[id]);
        }
        affected.sort_unstable_by_key(|&id| self.rank[id]);
        let mut affected_checks = Vec::new();
        for &check in checks
            .iter()
            .chain(affected.iter().flat_map(|&id| &self.check_dependents[id]))
        {
            if self.visited_checks[check] != stamp {
                self.visited_checks[check] = stamp;
                affected_checks.push(check);
            }
        }

        let arena = self.document.arena();
        let mut evaluator = crate::blocks::with_blocks(Evaluator::resume(
            &self.sheet,
            arena,
            std::mem::take(&mut self.values),
            std::mem::take(&mut self.statuses),
            std::mem::take(&mut self.spreads),
        ));
        for &id in &affected {
            evaluator.values[id] = None;
            evaluator.evaluate_cell(id);
            self.cell_findings[id] = std::mem::take(&mut evaluator.diagnostics);
            let (display, is_input) = evaluator.display_unit(id, evaluator.values[id]);
            self.displays[id] = display;
            self.inputs[id] = is_input;
        }
        for &check in &affected_checks {
            let mut result = evaluator.evaluate_check(check);
            crate::eval::verdict::judge_check(&self.sheet, check, &mut result, &[]);
            self.checks[check] = result;
            self.check_findings[check] = std::mem::take(&mut evaluator.diagnostics);
        }
        self.values = evaluator.values;
        self.statuses = evaluator.statuses;
        self.spreads = evaluator.spreads;
        self.last_evaluated = affected.len();
    }
}
