//! A sweep block: its syntax tree and its parsing, line by line (the head,
//! then each `show` line on its own, so every line's error is reported).
//!
//! ```text
//! sweep x_cg from 0.2 m to 1.4 m count 13 "CoG offset along the skid":
//!   show R_A, R_B
//! end
//! ```

use pest::iterators::Pairs;

use super::ast::{Description, Expr, ExprKind, Ident, NameRef, StatementKind, Target};
use super::build::{self, BuildError};
use super::lines::BlockLines;
use super::parser::Rule;
use crate::base::{Diagnostic, Span};

/// A study of the sheet over one input: `sweep x from a to b count n:` with
/// its `show` lines, to `end`.
#[derive(Clone, Debug, PartialEq)]
pub struct SweepBlock {
    /// The swept input, as a name expression (linking fills its target).
    pub variable: Expr,
    /// The first value.
    pub from: Expr,
    /// The last value.
    pub to: Expr,
    /// How many values, or how far apart.
    pub spacing: SweepSpacing,
    /// The optional label: `"CoG offset along the skid"`.
    pub label: Option<Description>,
    /// The results tabulated at every value, from the `show` lines in
    /// written order.
    pub shown: Vec<Expr>,
    /// Whether every line parsed and the block is closed by `end`.
    pub complete: bool,
    /// The `sweep …:` line.
    pub head: Span,
}

/// How the values of a sweep are spaced.
#[derive(Clone, Debug, PartialEq)]
pub enum SweepSpacing {
    /// `count 13`: this many values, evenly spaced, both bounds included.
    Count(Expr),
    /// `step 0.5 m`: values this far apart from the first; the last bound
    /// is always included.
    Step(Expr),
}

impl SweepSpacing {
    /// The expression it holds.
    pub fn expr(&self) -> &Expr {
        match self {
            SweepSpacing::Count(expr) | SweepSpacing::Step(expr) => expr,
        }
    }
}

impl SweepBlock {
    /// The swept name as written, if the head named one.
    pub fn variable_name(&self) -> Option<&NameRef> {
        match &self.variable.kind {
            ExprKind::Name(name) => Some(name),
            _ => None,
        }
    }

    /// The swept cell, once linked.
    pub fn variable_cell(&self) -> Option<usize> {
        match self.variable_name()?.target {
            Target::Cell(id) => Some(id),
            _ => None,
        }
    }

    /// Every expression of the block, mutably (for linking): the swept
    /// name, the bounds, the spacing and the shown results.
    pub fn exprs_mut(&mut self) -> impl Iterator<Item = &mut Expr> {
        let SweepBlock {
            variable,
            from,
            to,
            spacing,
            shown,
            ..
        } = self;
        let spacing = match spacing {
            SweepSpacing::Count(expr) | SweepSpacing::Step(expr) => expr,
        };
        [variable, from, to, spacing]
            .into_iter()
            .chain(shown.iter_mut())
    }
}

/// A value built from pairs, or why it cannot be.
type Built<T> = Result<T, BuildError>;

/// What the head of a sweep gives.
struct SweepHead {
    variable: Ident,
    from: Expr,
    to: Expr,
    spacing: SweepSpacing,
    label: Option<Description>,
}

/// The head of a sweep: the swept name, the bounds, the spacing and the
/// optional label, from the pairs of `Rule::sweep_line`.
fn sweep_head(mut pairs: Pairs<'_, Rule>, offset: usize) -> Built<SweepHead> {
    let head = pairs
        .next()
        .unwrap_or_else(|| unreachable!("expected a sweep head"));
    let mut variable = None;
    let mut bounds = Vec::with_capacity(2);
    let mut spacing = None;
    let mut label = None;
    for part in head.into_inner() {
        match part.as_rule() {
            Rule::keyword_sweep | Rule::keyword_from | Rule::keyword_to => {}
            Rule::name => variable = Some(build::ident_at(part, offset)),
            Rule::expr => bounds.push(build::expr_at(part, offset)?),
            Rule::sweep_count | Rule::sweep_step => {
                let count = part.as_rule() == Rule::sweep_count;
                let value = part
                    .into_inner()
                    .find(|p| p.as_rule() == Rule::expr)
                    .unwrap_or_else(|| unreachable!("expected a count or a step"));
                let value = build::expr_at(value, offset)?;
                spacing = Some(if count {
                    SweepSpacing::Count(value)
                } else {
                    SweepSpacing::Step(value)
                });
            }
            Rule::description => label = Some(build::description_at(part, offset)),
            rule => unreachable!("expected a part of a sweep head, found {rule:?}"),
        }
    }
    let to = bounds.pop();
    let from = bounds.pop();
    match (variable, from, to, spacing) {
        (Some(variable), Some(from), Some(to), Some(spacing)) => Ok(SweepHead {
            variable,
            from,
            to,
            spacing,
            label,
        }),
        _ => unreachable!("expected a name, two bounds and a spacing"),
    }
}

/// The results a `show` line of a sweep names, from the pairs of
/// `Rule::show_line`.
fn show_line(mut pairs: Pairs<'_, Rule>, offset: usize) -> Built<Vec<Expr>> {
    let line = pairs
        .next()
        .unwrap_or_else(|| unreachable!("expected a show line"));
    line.into_inner()
        .filter(|part| part.as_rule() == Rule::expr)
        .map(|part| build::expr_at(part, offset))
        .collect()
}

/// What a line inside a sweep block may be.
const LINE_HELP: &str = "a sweep block's lines are `show result, result`, then `end`";

/// Parses a sweep block. A head that does not parse makes the statement
/// invalid (a sweep defines no cell, so nothing else needs it kept).
pub(super) fn parse_sweep_block(
    source: &str,
    block: &BlockLines,
) -> (StatementKind, Vec<Diagnostic>) {
    let mut diagnostics = Vec::new();
    let mut shown = Vec::new();
    let mut complete = block.end.is_some();
    for &line in &block.body {
        match super::split::parse_block_line(source, line, Rule::show_line, show_line) {
            Ok(exprs) => shown.extend(exprs),
            Err(diagnostic) => {
                complete = false;
                diagnostics.push(diagnostic.with_help(LINE_HELP));
            }
        }
    }
    if block.end.is_none() {
        diagnostics.push(super::lines::unclosed_block(block.head, "sweep"));
    }
    let kind =
        match super::split::parse_block_line(source, block.head, Rule::sweep_line, sweep_head) {
            Ok(head) => StatementKind::Sweep(Box::new(SweepBlock {
                variable: Expr {
                    kind: ExprKind::Name(NameRef {
                        text: head.variable.text.clone(),
                        target: Target::Unresolved,
                    }),
                    span: head.variable.span,
                },
                from: head.from,
                to: head.to,
                spacing: head.spacing,
                label: head.label,
                shown,
                complete,
                head: block.head,
            })),
            Err(diagnostic) => {
                diagnostics.push(diagnostic.with_help(
                    "write `sweep name from 0.2 m to 1.4 m count 13:` or `… step 0.1 m:`",
                ));
                StatementKind::Invalid
            }
        };
    diagnostics.sort_by_key(|d| d.span.start());
    (kind, diagnostics)
}
