//! Linking what parts lists add to a sheet: each aggregate over a list
//! (`sum(skid: m * r)`, parsed as a placeholder call) is replaced by the
//! expression it stands for — a sum of the expression once per item, a
//! `min(…)`/`max(…)` of them, or the item count — with the list's quantity
//! names in each copy naming that item's cells (`skid[pump].m`) and every
//! other name left to the sheet. The result is an ordinary formula, so
//! evaluation, compiled programs, tolerance ranges, derivatives and load
//! cases follow it with no code of their own.

use compact_str::CompactString;

use crate::base::{Code, Diagnostic, Span};
use crate::syntax::ast::{
    AggregateOp, BinaryOp, Expr, ExprKind, Ident, NameRef, PartsBlock, Statement, StatementKind,
    Target,
};

/// The name an aggregate that could not be expanded is left as: not an
/// identifier, so it resolves to nothing, and linking marks what uses it
/// broken without a second diagnostic (the aggregate's is given).
pub(crate) const FAILED_AGGREGATE: &str = "(aggregate)";

/// The parts lists of a sheet: each list's name, items and quantities.
#[derive(Clone, Debug, Default)]
struct Lists {
    lists: Vec<ListShape>,
}

#[derive(Clone, Debug)]
struct ListShape {
    name: CompactString,
    items: Vec<CompactString>,
    /// Every quantity any item gives, in first-written order.
    quantities: Vec<CompactString>,
}

impl Lists {
    /// The parts lists among `statements` (the first of a name wins).
    fn of(statements: &[Statement]) -> Lists {
        let mut lists: Vec<ListShape> = Vec::new();
        for statement in statements {
            let StatementKind::Parts(block) = &statement.kind else {
                continue;
            };
            if lists.iter().any(|list| list.name == block.name.text) {
                continue;
            }
            let mut quantities: Vec<CompactString> = Vec::new();
            for item in &block.items {
                for quantity in &item.quantities {
                    if !quantities.contains(&quantity.text) {
                        quantities.push(quantity.text.clone());
                    }
                }
            }
            lists.push(ListShape {
                name: block.name.text.clone(),
                items: block
                    .items
                    .iter()
                    .map(|item| item.name.text.clone())
                    .collect(),
                quantities,
            });
        }
        Lists { lists }
    }

    fn get(&self, name: &str) -> Option<&ListShape> {
        self.lists.iter().find(|list| list.name == name)
    }
}

/// Expands every aggregate of every statement (see the module's doc).
pub(super) fn expand_aggregates(statements: &mut [Statement], diagnostics: &mut Vec<Diagnostic>) {
    let lists = Lists::of(statements);
    for statement in statements.iter_mut() {
        expand_in_statement(&mut statement.kind, &lists, diagnostics);
    }
}

/// Whether a statement holds an aggregate not yet expanded (the notebook
/// relinks for such a line).
pub(crate) fn has_aggregate(kind: &mut StatementKind) -> bool {
    let mut found = false;
    for expr in super::runs::statement_exprs_mut(kind) {
        expr.walk(&mut |node| {
            found |= matches!(&node.kind, ExprKind::Call { function, .. }
                if AggregateOp::of_marker(&function.text).is_some());
        });
    }
    found
}

/// Expands the aggregates of one statement against `lists`.
fn expand_in_statement(kind: &mut StatementKind, lists: &Lists, diagnostics: &mut Vec<Diagnostic>) {
    // Most statements are cells: walk their formula without gathering a list.
    match kind {
        StatementKind::Cell(cell) => expand_in(&mut cell.expr, lists, diagnostics),
        other => {
            for expr in super::runs::statement_exprs_mut(other) {
                expand_in(expr, lists, diagnostics);
            }
        }
    }
}

/// Replaces every aggregate in `expr` by its expansion.
fn expand_in(expr: &mut Expr, lists: &Lists, diagnostics: &mut Vec<Diagnostic>) {
    expr.walk_mut(&mut |node| {
        if let ExprKind::Call { function, args } = &node.kind
            && let Some(op) = AggregateOp::of_marker(&function.text)
        {
            let expanded = expand(op, args, node.span, lists).unwrap_or_else(|diagnostic| {
                diagnostics.push(*diagnostic);
                failed(node.span)
            });
            *node = expanded;
        }
    });
}

fn failed(span: Span) -> Expr {
    Expr {
        kind: ExprKind::Name(NameRef {
            text: FAILED_AGGREGATE.into(),
            target: Target::Unresolved,
        }),
        span,
    }
}

fn expand(
    op: AggregateOp,
    args: &[Expr],
    span: Span,
    lists: &Lists,
) -> Result<Expr, Box<Diagnostic>> {
    let Some((list_name, list_span)) = args.first().and_then(|list| match &list.kind {
        ExprKind::Name(name) => Some((name.text.clone(), list.span)),
        _ => None,
    }) else {
        return Err(Box::new(Diagnostic::error(
            Code::BadAggregate,
            span,
            "this aggregate names no parts list",
        )));
    };
    let Some(list) = lists.get(&list_name) else {
        return Err(Box::new(
            Diagnostic::error(
                Code::BadAggregate,
                list_span,
                format!("`{list_name}` is not a parts list of this sheet"),
            )
            .with_help(
                "an aggregate runs over a list written as `parts NAME: … end`; for the largest of \
                 several values write `max(a, b)`",
            ),
        ));
    };
    if op == AggregateOp::Count {
        return Ok(Expr {
            kind: ExprKind::Number(list.items.len() as f64),
            span,
        });
    }
    let Some(body) = args.get(1) else {
        return Err(Box::new(Diagnostic::error(
            Code::BadAggregate,
            span,
            "this aggregate has no expression to combine",
        )));
    };
    let mut nested = None;
    body.walk(&mut |inner| {
        if let ExprKind::Call { function, .. } = &inner.kind
            && AggregateOp::of_marker(&function.text).is_some()
        {
            nested.get_or_insert(inner.span);
        }
    });
    if let Some(nested) = nested {
        return Err(Box::new(
            Diagnostic::error(
                Code::BadAggregate,
                nested,
                "an aggregate cannot sit inside another aggregate's expression",
            )
            .with_help("compute the inner aggregate in a cell of its own and use that cell"),
        ));
    }
    if list.items.is_empty() {
        return Err(Box::new(Diagnostic::error(
            Code::BadAggregate,
            list_span,
            format!("the parts list `{list_name}` has no items to combine"),
        )));
    }
    let copies: Vec<Expr> = list
        .items
        .iter()
        .map(|item| {
            let mut copy = body.clone();
            copy.walk_names_mut(&mut |name, _| {
                if list.quantities.contains(&name.text) {
                    name.text = PartsBlock::cell_name(&list.name, item, &name.text);
                }
            });
            copy
        })
        .collect();
    Ok(match op {
        AggregateOp::Sum => {
            let mut terms = copies.into_iter();
            let first = terms
                .next()
                .ok_or_else(|| Box::new(Diagnostic::error(Code::BadAggregate, span, "no items")))?;
            let mut sum = terms.fold(first, |lhs, rhs| Expr {
                span,
                kind: ExprKind::Binary {
                    op: BinaryOp::Add,
                    lhs: Box::new(lhs),
                    rhs: Box::new(rhs),
                },
            });
            sum.span = span;
            sum
        }
        AggregateOp::Min | AggregateOp::Max => Expr {
            kind: ExprKind::Call {
                function: Ident {
                    text: if op == AggregateOp::Min { "min" } else { "max" }.into(),
                    span,
                },
                args: copies.into_boxed_slice(),
            },
            span,
        },
        AggregateOp::Count => Expr {
            kind: ExprKind::Number(list.items.len() as f64),
            span,
        },
    })
}
