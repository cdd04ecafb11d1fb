//! The sheet model: header, statements, the cells and checks they define,
//! the dependency graph between cells and the order to evaluate them in.

pub mod edit;
mod graph;
mod header;

use rustc_hash::FxHashMap as HashMap;

pub use graph::{EvaluationOrder, evaluation_order};
pub use header::{DEFAULT_SIG_FIGS, Header, read_header};

use crate::diag::{Code, Diagnostic};
use crate::syntax::ast::Statement;
use crate::syntax::ast::{CellDef, CheckDef, Expr, ExprKind, StatementKind, Target};
use crate::syntax::{self, ParsedSheet, Span};
use crate::units;

/// Index of a cell in [`Sheet::cells`].
pub type CellId = usize;

/// What a statement contributes to the sheet, in file order.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Item {
    /// A heading, at this statement index.
    Heading(usize),
    /// A note, at this statement index.
    Note(usize),
    /// A cell.
    Cell(CellId),
    /// A check, index into [`Sheet::checks`].
    Check(usize),
    /// A line that did not parse, at this statement index.
    Invalid(usize),
}

/// A whole sheet, parsed and linked: everything the evaluator needs.
#[derive(Clone, Debug)]
pub struct Sheet {
    /// The header (defaults where absent).
    pub header: Header,
    /// The statements in file order.
    pub statements: Vec<Statement>,
    /// Statement index of each cell.
    pub cells: Vec<usize>,
    /// Statement index of each check.
    pub checks: Vec<usize>,
    /// The sheet's items in file order.
    pub items: Vec<Item>,
    /// Cell by name (first definition wins).
    pub names: HashMap<String, CellId>,
    /// For each cell, the cells its formula uses (no repeats, in first-use order).
    pub uses: Vec<Vec<CellId>>,
    /// For each check, the cells it uses.
    pub check_uses: Vec<Vec<CellId>>,
    /// Cells that cannot be evaluated for a reason found before evaluation
    /// (duplicate, undefined name, cycle); their diagnostic is already given.
    pub broken: Vec<bool>,
    /// Checks that cannot be evaluated (undefined name).
    pub broken_checks: Vec<bool>,
    /// The order to evaluate cells in.
    pub order: EvaluationOrder,
    /// Findings from parsing and linking.
    pub diagnostics: Vec<Diagnostic>,
}

/// How many did-you-mean searches a sheet gets; each scans every name.
const MAX_SUGGESTIONS: usize = 64;

impl Sheet {
    /// Parses and links `source`. Never fails: problems become diagnostics.
    pub fn parse(source: &str) -> Sheet {
        let ParsedSheet {
            header,
            statements,
            mut diagnostics,
        } = syntax::parse(source);
        let header = read_header(source, header, &mut diagnostics);
        Sheet::link(header, statements, diagnostics)
    }

    /// Links parsed statements: names, dependencies and evaluation order.
    pub fn link(
        header: Header,
        mut statements: Vec<Statement>,
        mut diagnostics: Vec<Diagnostic>,
    ) -> Sheet {
        let mut cells = Vec::new();
        let mut checks = Vec::new();
        let mut items = Vec::with_capacity(statements.len());
        for (index, statement) in statements.iter().enumerate() {
            items.push(match statement.kind {
                StatementKind::Heading { .. } => Item::Heading(index),
                StatementKind::Note { .. } => Item::Note(index),
                StatementKind::Cell(_) => {
                    cells.push(index);
                    Item::Cell(cells.len() - 1)
                }
                StatementKind::Check(_) => {
                    checks.push(index);
                    Item::Check(checks.len() - 1)
                }
                StatementKind::Invalid => Item::Invalid(index),
            });
        }

        let mut broken = vec![false; cells.len()];
        let mut names: HashMap<String, CellId> = HashMap::default();
        names.reserve(cells.len());
        for (id, &statement) in cells.iter().enumerate() {
            let cell = cell_def(&statements[statement]);
            if let Some(&first) = names.get(&cell.name.text) {
                let first_span = cell_def(&statements[cells[first]]).name.span;
                diagnostics.push(
                    Diagnostic::error(
                        Code::DuplicateName,
                        cell.name.span,
                        format!("`{}` is already defined", cell.name.text),
                    )
                    .with_label(first_span, "first defined here")
                    .with_help("rename one of the two cells; names are case-sensitive"),
                );
                broken[id] = true;
            } else {
                names.insert(cell.name.text.clone(), id);
            }
        }

        let mut suggestions_left = MAX_SUGGESTIONS;
        let mut resolve_uses = |exprs: [Option<&mut Expr>; 2],
                                diagnostics: &mut Vec<Diagnostic>| {
            let mut uses = Vec::new();
            let mut ok = true;
            for expr in exprs.into_iter().flatten() {
                expr.walk_names_mut(&mut |name, span| {
                    if let Some(&id) = names.get(&*name.text) {
                        name.target = Target::Cell(id);
                        if !uses.contains(&id) {
                            uses.push(id);
                        }
                    } else if let Some(index) =
                        units::CONSTANTS.iter().position(|c| *c.name == *name.text)
                    {
                        name.target = Target::Constant(index);
                    } else {
                        ok = false;
                        let mut diagnostic = Diagnostic::error(
                            Code::UndefinedName,
                            span,
                            format!("`{}` is not defined", name.text),
                        );
                        if suggestions_left > 0 {
                            suggestions_left -= 1;
                            if let Some(similar) = did_you_mean(&name.text, &names) {
                                diagnostic =
                                    diagnostic.with_help(format!("did you mean `{similar}`?"));
                            }
                        }
                        diagnostics.push(diagnostic);
                    }
                });
            }
            (uses, ok)
        };

        let mut uses = Vec::with_capacity(cells.len());
        let mut check_uses = Vec::with_capacity(checks.len());
        let mut broken_checks = Vec::with_capacity(checks.len());
        for statement in &mut statements {
            match &mut statement.kind {
                StatementKind::Cell(cell) => {
                    let (cell_uses, ok) =
                        resolve_uses([Some(&mut cell.expr), None], &mut diagnostics);
                    let id = uses.len();
                    broken[id] |= !ok || matches!(cell.expr.kind, ExprKind::Invalid);
                    uses.push(cell_uses);
                }
                StatementKind::Check(check) => {
                    let (used, ok) = resolve_uses(
                        [Some(&mut check.lhs), Some(&mut check.rhs)],
                        &mut diagnostics,
                    );
                    check_uses.push(used);
                    broken_checks.push(!ok);
                }
                _ => {}
            }
        }

        let order = evaluation_order(&uses);
        for cycle in &order.cycles {
            let spans: Vec<Span> = cycle
                .iter()
                .map(|&id| cell_def(&statements[cells[id]]).name.span)
                .collect();
            let names_in_cycle: Vec<String> = cycle
                .iter()
                .map(|&id| format!("`{}`", cell_def(&statements[cells[id]]).name.text))
                .collect();
            let mut diagnostic = Diagnostic::error(
                Code::Cycle,
                spans[0],
                format!("these cells depend on each other in a loop: {}", cycle_text(&names_in_cycle)),
            )
            .with_help("a cell cannot use its own result, directly or through others; for simultaneous equations, solve for the unknowns");
            for &span in &spans[1..] {
                diagnostic = diagnostic.with_label(span, "part of the loop");
            }
            diagnostics.push(diagnostic);
            for &id in cycle {
                broken[id] = true;
            }
        }

        Sheet {
            header,
            statements,
            cells,
            checks,
            items,
            names,
            uses,
            check_uses,
            broken,
            broken_checks,
            order,
            diagnostics,
        }
    }

    /// The definition of a cell.
    pub fn cell(&self, id: CellId) -> &CellDef {
        cell_def(&self.statements[self.cells[id]])
    }

    /// The definition of a check.
    pub fn check(&self, index: usize) -> &CheckDef {
        check_def(&self.statements[self.checks[index]])
    }

    /// The span of a cell's whole statement.
    pub fn cell_span(&self, id: CellId) -> Span {
        self.statements[self.cells[id]].span
    }

    /// The span of a check's whole statement.
    pub fn check_span(&self, index: usize) -> Span {
        self.statements[self.checks[index]].span
    }
}

fn cell_def(statement: &Statement) -> &CellDef {
    match &statement.kind {
        StatementKind::Cell(cell) => cell,
        other => unreachable!("expected a cell statement, found {other:?}"),
    }
}

fn check_def(statement: &Statement) -> &CheckDef {
    match &statement.kind {
        StatementKind::Check(check) => check,
        other => unreachable!("expected a check statement, found {other:?}"),
    }
}

/// `a → b → c → a`.
fn cycle_text(names: &[String]) -> String {
    let mut text = names.join(" → ");
    if let Some(first) = names.first() {
        text.push_str(" → ");
        text.push_str(first);
    }
    text
}

/// The defined name or constant most like `name`.
fn did_you_mean(name: &str, names: &HashMap<String, CellId>) -> Option<String> {
    let candidates = names
        .keys()
        .map(String::as_str)
        .chain(units::CONSTANTS.iter().map(|constant| constant.name));
    let lower = name.to_lowercase();
    candidates
        .map(|candidate| {
            let score = if candidate.to_lowercase() == lower {
                2.0
            } else {
                strsim::jaro_winkler(name, candidate)
            };
            (score, candidate)
        })
        .filter(|(score, _)| *score >= 0.85)
        .max_by(|a, b| a.0.total_cmp(&b.0).then_with(|| b.1.cmp(a.1)))
        .map(|(_, candidate)| candidate.to_string())
}
