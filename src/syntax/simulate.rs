//! Parsing a simulate block line by line: the head, then each line on its
//! own (a state's rate, a starting value, a stop condition or event, a
//! tolerance, the table, the plot), so every line's error is reported.

use pest::Parser;

use super::ast::{SimulateBlock, StatementKind};
use super::build::{self, SimulateLine};
use super::lines::{BlockLines, check_limits};
use super::parser::{HeftParser, Rule, describe_error};
use crate::base::{Code, Diagnostic};

/// What a line inside a simulate block may be.
const LINE_HELP: &str = "a simulate block's lines are `x' = rate`, `x(0) = value`, `stop when a >= b`, \
`event name when a >= b`, `tolerance 1e-8`, `tolerance x 1 mm`, `table every 1 s: x, v` and `plot x, v`, \
then `end`";

/// Parses a simulate block; the statement is kept (marked incomplete) even
/// when lines fail, so its names stay defined.
pub(super) fn parse_simulate_block(
    source: &str,
    block: &BlockLines,
) -> (StatementKind, Vec<Diagnostic>) {
    let mut diagnostics = Vec::new();
    let head_text = block.head.text(source);
    let head = match check_limits(head_text, block.head.start()) {
        Some(diagnostic) => Err(diagnostic),
        None => HeftParser::parse(Rule::simulate_line, head_text)
            .map_err(|error| {
                let (span, message) = describe_error(&error, head_text, block.head.start());
                Diagnostic::error(Code::ParseError, span, message)
            })
            .and_then(|pairs| {
                build::simulate_head(pairs, block.head.start())
                    .map_err(|error| Diagnostic::error(Code::ParseError, error.span, error.message))
            }),
    };
    let mut complete = true;
    let (time, start, end) = match head {
        Ok(head) => head,
        Err(diagnostic) => {
            diagnostics.push(diagnostic.with_help(
                "write `simulate t from 0 s to 10 s:` (a time name, a start and an end)",
            ));
            // Keep the block so its lines are still checked; it cannot run.
            let placeholder = |at: usize| crate::syntax::ast::Expr {
                kind: crate::syntax::ast::ExprKind::Invalid,
                span: crate::base::Span::new(at, at),
            };
            complete = false;
            (
                crate::syntax::ast::Ident {
                    text: crate::syntax::ast::UNNAMED_TIME.into(),
                    span: block.head,
                },
                placeholder(block.head.start()),
                placeholder(block.head.start()),
            )
        }
    };
    let mut simulate = SimulateBlock {
        time,
        start,
        end,
        states: Vec::new(),
        initial_values: Vec::new(),
        events: Vec::new(),
        tolerances: Vec::new(),
        tables: Vec::new(),
        plots: Vec::new(),
        complete,
        head: block.head,
    };
    for line in &block.body {
        let text = line.text(source);
        let parsed = match check_limits(text, line.start()) {
            Some(diagnostic) => Err(diagnostic),
            None => HeftParser::parse(Rule::simulate_body_line, text)
                .map_err(|error| {
                    let (span, message) = describe_error(&error, text, line.start());
                    Diagnostic::error(Code::ParseError, span, message).with_help(LINE_HELP)
                })
                .and_then(|pairs| {
                    build::simulate_line(pairs, line.start()).map_err(|error| {
                        Diagnostic::error(Code::ParseError, error.span, error.message)
                    })
                }),
        };
        match parsed {
            Ok(SimulateLine::Rate(rate)) => simulate.states.push(rate),
            Ok(SimulateLine::Initial(initial)) => simulate.initial_values.push(initial),
            Ok(SimulateLine::Event(event)) => simulate.events.push(event),
            Ok(SimulateLine::Tolerance(tolerance)) => simulate.tolerances.push(tolerance),
            Ok(SimulateLine::Table(table)) => simulate.tables.push(table),
            Ok(SimulateLine::Plot(plot)) => simulate.plots.push(plot),
            Err(diagnostic) => {
                simulate.complete = false;
                diagnostics.push(diagnostic);
            }
        }
    }
    if block.end.is_none() {
        simulate.complete = false;
        diagnostics.push(super::lines::unclosed_block(block.head, "simulate"));
    }
    (StatementKind::Simulate(Box::new(simulate)), diagnostics)
}
