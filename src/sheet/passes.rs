//! The passes of linking that stand on their own: the outline of the
//! statements, entering the names, the evaluation nodes, and the loops
//! among them. [`super::Sheet::link`] runs them in order, with the
//! resolution of every formula's names between.

use super::*;

/// What entering the names gave: the name table, cells already broken
/// (duplicates), what each formula resolved early uses, and whether any
/// formula read so far queries a run.
pub(super) struct Entered {
    pub(super) names: NameTable,
    pub(super) broken: Vec<bool>,
    pub(super) uses: Vec<Vec<CellId>>,
    pub(super) resolved_early: Vec<bool>,
    pub(super) reads_runs: bool,
}

/// The second pass of linking: every cell's name entered (the first
/// definition wins; a second is `duplicate-name`), formulas resolved as soon
/// as every name they use is entered, and look-alike names reported.
pub(super) fn enter_names(
    statements: &mut [Statement],
    cells: &[CellOrigin],
    diagnostics: &mut Vec<Diagnostic>,
) -> Entered {
    let mut broken = vec![false; cells.len()];
    let mut names = NameTable::with_capacity(cells.len());
    // A formula is resolved as soon as its own name is entered if every
    // name it uses is entered already: most formulas use the cells just
    // above them, whose entries are then still in cache (resolving after
    // the whole table is built misses it on every name of a large sheet).
    // A formula that uses a later cell or an undefined name waits for the
    // whole table, below.
    let mut uses: Vec<Vec<CellId>> = vec![Vec::new(); cells.len()];
    let mut resolved_early = vec![false; cells.len()];
    let mut early_with_constants = Vec::new();
    let mut scratch = Vec::new();
    // Whether any statement reads a simulate run; the early resolution
    // sees its cells', the pass below every other statement's.
    let mut reads_runs = false;
    for (id, &origin) in cells.iter().enumerate() {
        if let Some(&ahead) = cells.get(id + PREFETCH_AHEAD) {
            names.prefetch(&decl(statements, ahead).name.text);
        }
        if let CellOrigin::Formula { statement } = origin
            && let Some(early) =
                resolve_early(&mut statements[statement].kind, &names, &mut scratch)
        {
            uses[id] = early.uses;
            resolved_early[id] = true;
            if early.reads_constant {
                early_with_constants.push(id);
            }
            reads_runs |= early.reads_run;
        }
        let name = decl(statements, origin).name;
        if name.text == crate::syntax::ast::UNNAMED_TIME {
            // A simulate head that did not parse: reported already.
            broken[id] = true;
            continue;
        }
        if let Err(first) = names.insert_first(&name.text, id) {
            let first_span = decl(statements, cells[first]).name.span;
            diagnostics.push(
                Diagnostic::error(
                    Code::DuplicateName,
                    name.span,
                    format!("`{}` is already defined", name.text),
                )
                .with_label(first_span, "first defined here")
                .with_help("rename one of the two cells; names are case-sensitive"),
            );
            broken[id] = true;
        }
    }

    lookalike_names(&names, statements, cells, diagnostics);

    // A cell named like a constant (`g0 = 9.81 m/s^2`) stands for it in
    // every formula, also those resolved before the cell was entered.
    if units::CONSTANTS
        .iter()
        .any(|constant| names.contains_key(constant.name))
    {
        for id in early_with_constants {
            resolved_early[id] = false;
            uses[id].clear();
        }
    }
    Entered {
        names,
        broken,
        uses,
        resolved_early,
        reads_runs,
    }
}

/// The statements as the sheet lists them: every cell (a formula's, a
/// block's unknowns, a run's time and states), check and load case, with
/// their place in the outline.
pub(super) struct Outline {
    pub(super) cells: Vec<CellOrigin>,
    pub(super) checks: Vec<usize>,
    pub(super) cases: Vec<usize>,
    pub(super) items: Vec<Item>,
}

/// The first pass of linking: which statements give cells, checks and
/// cases, in file order.
pub(super) fn outline(statements: &[Statement]) -> Outline {
    let mut cells = Vec::with_capacity(statements.len());
    let mut checks = Vec::new();
    let mut cases = Vec::new();
    let mut items = Vec::with_capacity(statements.len());
    for (index, statement) in statements.iter().enumerate() {
        let item = match &statement.kind {
            StatementKind::Heading { .. } => Item::Heading(index),
            StatementKind::Note { .. } => Item::Note(index),
            StatementKind::Cell(_) | StatementKind::Body(_) => {
                cells.push(CellOrigin::Formula { statement: index });
                Item::Cell(cells.len() - 1)
            }
            StatementKind::Solve(block) => {
                cells.extend(
                    (0..block.unknowns.len()).map(|unknown| CellOrigin::Unknown {
                        statement: index,
                        index: unknown,
                    }),
                );
                Item::Solve(index)
            }
            StatementKind::Check(_) => {
                checks.push(index);
                Item::Check(checks.len() - 1)
            }
            StatementKind::Case(_) => {
                cases.push(index);
                Item::Case(index)
            }
            StatementKind::Invalid => Item::Invalid(index),
            StatementKind::Simulate(block) => {
                cells.extend(
                    (0..=block.states.len()).map(|variable| CellOrigin::Simulated {
                        statement: index,
                        index: variable,
                    }),
                );
                Item::Simulate(index)
            }
            StatementKind::Parts(block) => {
                cells.extend((0..block.cells.len()).map(|member| CellOrigin::Member {
                    statement: index,
                    index: member,
                }));
                Item::Members(index)
            }
            StatementKind::Lift(block) => {
                cells.extend((0..block.cells.len()).map(|member| CellOrigin::Member {
                    statement: index,
                    index: member,
                }));
                Item::Members(index)
            }
            // Review marks and sign-offs are the checker's record, not
            // content to evaluate: the `review` module reads them.
            StatementKind::Review(_) | StatementKind::SignOff(_) => Item::Review(index),
            // Linking loads the used sheet before the outline is made.
            StatementKind::Use(_) => Item::Use(index),
            StatementKind::Sweep(_) => Item::Sweep(index),
            StatementKind::Table(_) => Item::Table(index),
        };
        items.push(item);
    }
    Outline {
        cells,
        checks,
        cases,
        items,
    }
}

/// The evaluation nodes: one per formula cell, one per solve block (all its
/// unknowns) and one per simulate block (its time and states); and the node
/// of each cell.
pub(super) fn evaluation_nodes(cells: &[CellOrigin]) -> (Vec<Node>, Vec<NodeId>) {
    let mut nodes = Vec::with_capacity(cells.len());
    let mut node_of_cell = vec![0; cells.len()];
    let mut id = 0;
    while id < cells.len() {
        match cells[id] {
            // A parts list's or a lift's cells are formulas, each its own node.
            CellOrigin::Formula { .. } | CellOrigin::Member { .. } => {
                node_of_cell[id] = nodes.len();
                nodes.push(Node::Cell(id));
                id += 1;
            }
            CellOrigin::Simulated { statement, .. } => {
                let members: Vec<CellId> = (id..cells.len())
                    .take_while(|&other| matches!(cells[other], CellOrigin::Simulated { statement: s, .. } if s == statement))
                    .collect();
                for &member in &members {
                    node_of_cell[member] = nodes.len();
                }
                id += members.len();
                nodes.push(Node::Simulate {
                    statement,
                    cells: members.into(),
                });
            }
            CellOrigin::Unknown { statement, .. } => {
                let unknowns: Vec<CellId> = (id..cells.len())
                    .take_while(|&other| matches!(cells[other], CellOrigin::Unknown { statement: s, .. } if s == statement))
                    .collect();
                for &unknown in &unknowns {
                    node_of_cell[unknown] = nodes.len();
                }
                id += unknowns.len();
                nodes.push(Node::Solve {
                    statement,
                    unknowns: unknowns.into(),
                });
            }
        }
    }
    (nodes, node_of_cell)
}

/// A `cycle` error for each loop among the nodes, its cells marked broken;
/// the loops as sorted cell lists.
pub(super) fn report_cycles(
    found: &[Vec<NodeId>],
    nodes: &[Node],
    statements: &[Statement],
    cells: &[CellOrigin],
    broken: &mut [bool],
    diagnostics: &mut Vec<Diagnostic>,
) -> Vec<Vec<CellId>> {
    let cycles: Vec<Vec<CellId>> = found
        .iter()
        .map(|cycle| {
            let mut members: Vec<CellId> = cycle
                .iter()
                .flat_map(|&node| nodes[node].cells().iter().copied())
                .collect();
            members.sort_unstable();
            members
        })
        .collect();
    for cycle in &cycles {
        let spans: Vec<Span> = cycle
            .iter()
            .map(|&id| decl(statements, cells[id]).name.span)
            .collect();
        let names_in_cycle: Vec<String> = cycle
            .iter()
            .map(|&id| format!("`{}`", decl(statements, cells[id]).name.text))
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
    cycles
}
