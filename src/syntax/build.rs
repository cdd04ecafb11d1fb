//! Pairs → AST. The grammar guarantees the shape of every pair handled here,
//! so a shape mismatch is a bug in heft, reported with `unreachable!`.

use std::sync::LazyLock;

use pest::iterators::{Pair, Pairs};
use pest::pratt_parser::{Assoc, Op, PrattParser};

use super::ast::{
    BinaryOp, BodyDef, CellDef, CheckDef, Comparison, Description, Equation, EventDef, Expr,
    ExprKind, Ident, InitialValue, NameRef, Override, PlotDef, ReviewKind, ReviewMark, RunPoint,
    RunQuery, SignOff, StateRate, StatementKind, TableDef, TableRows, Target, Tolerance,
    ToleranceDef, UnitExpr, UnitFactor, Unknown, UseSheet,
};
use super::parser::Rule;
use crate::base::Span;
use compact_str::CompactString;

mod conditional;

mod table;
pub(crate) use table::{column_heads, table_head};

/// Operator precedence, lowest first; `^` binds tightest and groups to the
/// right, so `-2^2` is `-(2^2)` and `2^3^2` is `2^(3^2)`.
static PRATT: LazyLock<PrattParser<Rule>> = LazyLock::new(|| {
    PrattParser::new()
        .op(Op::infix(Rule::add, Assoc::Left) | Op::infix(Rule::sub, Assoc::Left))
        .op(Op::infix(Rule::mul, Assoc::Left) | Op::infix(Rule::div, Assoc::Left))
        .op(Op::prefix(Rule::neg))
        .op(Op::infix(Rule::pow, Assoc::Right))
        .op(Op::postfix(Rule::component))
});

/// A problem found while building the tree (the grammar matched, but a
/// value cannot be represented).
pub(crate) struct BuildError {
    pub span: Span,
    pub message: String,
}

pub(super) type Built<T> = Result<T, BuildError>;

/// Builds the statement from the pairs of `Rule::line`; `offset` is where the
/// statement starts in the sheet.
pub(crate) fn statement(mut pairs: Pairs<'_, Rule>, offset: usize) -> Built<Option<StatementKind>> {
    let Some(pair) = pairs.next() else {
        return Ok(None);
    };
    let builder = Builder { offset };
    Ok(Some(match pair.as_rule() {
        Rule::heading => builder.heading(pair),
        Rule::note => StatementKind::Note {
            text: inner_text(pair).trim_end().to_string(),
        },
        Rule::cell => StatementKind::Cell(Box::new(builder.cell(pair)?)),
        Rule::check => StatementKind::Check(Box::new(builder.check(pair)?)),
        Rule::body => StatementKind::Body(Box::new(builder.body(pair)?)),
        Rule::review => StatementKind::Review(Box::new(builder.review(pair)?)),
        Rule::signoff => StatementKind::SignOff(Box::new(builder.signoff(pair)?)),
        Rule::use_sheet => StatementKind::Use(Box::new(builder.use_sheet(pair))),
        Rule::table_from => StatementKind::Table(Box::new(builder.table_from(pair))),
        Rule::EOI => return Ok(None),
        rule => unreachable!("expected a statement, found {rule:?}"),
    }))
}

/// The name and declared unit from the pairs of `Rule::cell_head` (a unit
/// that fails to build is dropped: the line's error is reported already).
/// Also returns where the text after `=` starts.
pub(crate) fn cell_head(
    pairs: Pairs<'_, Rule>,
    offset: usize,
) -> Option<(Ident, Option<UnitExpr>, usize)> {
    let builder = Builder { offset };
    let mut name = None;
    let mut unit = None;
    let mut formula_start = offset;
    for pair in pairs {
        match pair.as_rule() {
            Rule::name => name = Some(builder.ident(pair)),
            Rule::declared_unit => unit = builder.unit_in_brackets(pair).ok(),
            Rule::assign => formula_start = builder.span(&pair).end(),
            _ => {}
        }
    }
    Some((name?, unit, formula_start))
}

/// Builds the unknowns from the pairs of `Rule::solve_line`.
pub(crate) fn solve_head(mut pairs: Pairs<'_, Rule>, offset: usize) -> Built<Vec<Unknown>> {
    let builder = Builder { offset };
    let head = pairs
        .next()
        .unwrap_or_else(|| unreachable!("expected a solve head"));
    let mut unknowns = Vec::new();
    for part in head.into_inner() {
        match part.as_rule() {
            Rule::keyword_solve => {}
            Rule::unknown => {
                let mut inner = part.into_inner();
                let name = builder.ident(
                    inner
                        .next()
                        .unwrap_or_else(|| unreachable!("expected a name")),
                );
                let unit = builder.unit_in_brackets(
                    inner
                        .next()
                        .unwrap_or_else(|| unreachable!("expected a unit")),
                )?;
                let guess = match inner.next() {
                    Some(guess) => {
                        let expr = guess
                            .into_inner()
                            .next()
                            .unwrap_or_else(|| unreachable!("expected a guess"));
                        Some(builder.expr(expr)?)
                    }
                    None => None,
                };
                unknowns.push(Unknown { name, unit, guess });
            }
            rule => unreachable!("expected an unknown, found {rule:?}"),
        }
    }
    Ok(unknowns)
}

/// Builds an equation from the pairs of `Rule::equation_line`.
pub(crate) fn equation(mut pairs: Pairs<'_, Rule>, offset: usize) -> Built<Equation> {
    let builder = Builder { offset };
    let pair = pairs
        .next()
        .unwrap_or_else(|| unreachable!("expected an equation"));
    let span = builder.span(&pair);
    let mut sides = Vec::with_capacity(2);
    let mut label = None;
    for part in pair.into_inner() {
        match part.as_rule() {
            Rule::expr => sides.push(builder.expr(part)?),
            Rule::assign => {}
            Rule::description => label = Some(builder.description(part)),
            rule => unreachable!("expected a part of an equation, found {rule:?}"),
        }
    }
    let rhs = sides
        .pop()
        .unwrap_or_else(|| unreachable!("expected a right side"));
    let lhs = sides
        .pop()
        .unwrap_or_else(|| unreachable!("expected a left side"));
    Ok(Equation {
        lhs,
        rhs,
        label,
        span,
    })
}

/// Builds a case's name and label from the pairs of `Rule::case_line`.
pub(crate) fn case_head(mut pairs: Pairs<'_, Rule>, offset: usize) -> (Ident, Option<Description>) {
    let builder = Builder { offset };
    let head = pairs
        .next()
        .unwrap_or_else(|| unreachable!("expected a case head"));
    let mut name = None;
    let mut label = None;
    for part in head.into_inner() {
        match part.as_rule() {
            Rule::keyword_case => {}
            Rule::name => name = Some(builder.ident(part)),
            Rule::description => label = Some(builder.description(part)),
            rule => unreachable!("expected a part of a case head, found {rule:?}"),
        }
    }
    (
        name.unwrap_or_else(|| unreachable!("expected a case name")),
        label,
    )
}

/// Builds an override from the pairs of `Rule::override_line`.
pub(crate) fn override_of(mut pairs: Pairs<'_, Rule>, offset: usize) -> Built<Override> {
    let builder = Builder { offset };
    let pair = pairs
        .next()
        .unwrap_or_else(|| unreachable!("expected an override"));
    let span = builder.span(&pair);
    let mut cell = None;
    let mut expr = None;
    let mut tolerance = None;
    for part in pair.into_inner() {
        match part.as_rule() {
            Rule::name => cell = Some(builder.ident(part)),
            Rule::assign => {}
            Rule::expr => expr = Some(builder.expr(part)?),
            Rule::plus_minus | Rule::range_to => {
                tolerance = Some(Box::new(builder.tolerance(part)?))
            }
            rule => unreachable!("expected a part of an override, found {rule:?}"),
        }
    }
    let cell = cell.unwrap_or_else(|| unreachable!("expected the overridden cell"));
    Ok(Override {
        cell: NameRef {
            text: cell.text.as_str().into(),
            target: Target::Unresolved,
        },
        cell_span: cell.span,
        expr: expr.unwrap_or_else(|| unreachable!("expected the override's formula")),
        tolerance,
        span,
    })
}

/// The head of a simulate block: the time variable, start and end.
pub(crate) fn simulate_head(
    mut pairs: Pairs<'_, Rule>,
    offset: usize,
) -> Built<(Ident, Expr, Expr)> {
    let builder = Builder { offset };
    let head = pairs
        .next()
        .unwrap_or_else(|| unreachable!("expected a simulate head"));
    let mut time = None;
    let mut bounds = Vec::with_capacity(2);
    for part in head.into_inner() {
        match part.as_rule() {
            Rule::keyword_simulate | Rule::keyword_from | Rule::keyword_to => {}
            Rule::name => time = Some(builder.ident(part)),
            Rule::expr => bounds.push(builder.expr(part)?),
            rule => unreachable!("expected a part of a simulate head, found {rule:?}"),
        }
    }
    let end = bounds.pop();
    let start = bounds.pop();
    match (time, start, end) {
        (Some(time), Some(start), Some(end)) => Ok((time, start, end)),
        _ => unreachable!("expected a time variable, a start and an end"),
    }
}

/// One line inside a simulate block.
pub(crate) enum SimulateLine {
    Rate(StateRate),
    Initial(InitialValue),
    Event(EventDef),
    Tolerance(ToleranceDef),
    Table(TableDef),
    Plot(PlotDef),
}

/// Builds a line of a simulate block from the pairs of `Rule::simulate_body_line`.
pub(crate) fn simulate_line(mut pairs: Pairs<'_, Rule>, offset: usize) -> Built<SimulateLine> {
    let builder = Builder { offset };
    let pair = pairs
        .next()
        .unwrap_or_else(|| unreachable!("expected a simulate line"));
    let span = builder.span(&pair);
    let rule = pair.as_rule();
    let mut name = None;
    let mut exprs = Vec::new();
    let mut description = None;
    let mut condition = None;
    let mut rows = TableRows::Default;
    for part in pair.into_inner() {
        match part.as_rule() {
            Rule::name => name = Some(builder.ident(part)),
            Rule::expr => exprs.push(builder.expr(part)?),
            Rule::description => description = Some(builder.description(part)),
            Rule::condition => condition = Some(builder.condition(part)?),
            Rule::table_every => {
                let every = part
                    .into_inner()
                    .find(|p| p.as_rule() == Rule::expr)
                    .unwrap_or_else(|| unreachable!("expected an interval"));
                rows = TableRows::Every(builder.expr(every)?);
            }
            Rule::table_at => {
                let times = part
                    .into_inner()
                    .filter(|p| p.as_rule() == Rule::expr)
                    .map(|p| builder.expr(p))
                    .collect::<Built<Vec<_>>>()?;
                rows = TableRows::At(times);
            }
            _ => {} // keywords and `=`
        }
    }
    let name_or = |name: Option<Ident>| name.unwrap_or_else(|| unreachable!("expected a name"));
    Ok(match rule {
        Rule::rate => SimulateLine::Rate(StateRate {
            name: name_or(name),
            rate: exprs
                .pop()
                .unwrap_or_else(|| unreachable!("expected a rate")),
            description,
            span,
        }),
        Rule::initial_value => SimulateLine::Initial(InitialValue {
            name: name_or(name),
            value: exprs
                .pop()
                .unwrap_or_else(|| unreachable!("expected a value")),
            description,
            span,
        }),
        Rule::stop_line | Rule::event_line => {
            let (lhs, comparison, rhs) =
                condition.unwrap_or_else(|| unreachable!("expected a condition"));
            SimulateLine::Event(EventDef {
                name,
                stops: rule == Rule::stop_line,
                lhs,
                comparison,
                rhs,
                label: description,
                span,
            })
        }
        Rule::tolerance_line => SimulateLine::Tolerance(ToleranceDef {
            state: name,
            value: exprs
                .pop()
                .unwrap_or_else(|| unreachable!("expected a tolerance")),
            span,
        }),
        Rule::table_line => SimulateLine::Table(TableDef {
            rows,
            columns: exprs,
            span,
        }),
        Rule::plot_line => SimulateLine::Plot(PlotDef {
            series: exprs,
            span,
        }),
        rule => unreachable!("expected a simulate line, found {rule:?}"),
    })
}

/// Builds an expression pair of a line at byte `offset` (for the block
/// parsers outside this file).
pub(crate) fn expr_at(pair: Pair<'_, Rule>, offset: usize) -> Built<Expr> {
    Builder { offset }.expr(pair)
}

/// Builds a name pair of a line at byte `offset`.
pub(crate) fn ident_at(pair: Pair<'_, Rule>, offset: usize) -> Ident {
    Builder { offset }.ident(pair)
}

/// Builds a description pair of a line at byte `offset`.
pub(crate) fn description_at(pair: Pair<'_, Rule>, offset: usize) -> Description {
    Builder { offset }.description(pair)
}

/// Builds the expression from the pairs of `Rule::expression_only`.
pub(crate) fn expression(mut pairs: Pairs<'_, Rule>) -> Built<Option<Expr>> {
    match pairs.next() {
        Some(pair) if pair.as_rule() == Rule::expr => Builder { offset: 0 }.expr(pair).map(Some),
        _ => Ok(None),
    }
}

/// Builds the unit from the pairs of `Rule::unit_only`.
pub(crate) fn unit(mut pairs: Pairs<'_, Rule>) -> Built<Option<UnitExpr>> {
    match pairs.next() {
        Some(pair) if pair.as_rule() == Rule::unit_expr => {
            Builder { offset: 0 }.unit_expr(pair).map(Some)
        }
        _ => Ok(None),
    }
}

fn inner_text(pair: Pair<'_, Rule>) -> String {
    pair.into_inner()
        .last()
        .map_or_else(String::new, |text| text.as_str().to_string())
}

pub(super) struct Builder {
    pub(super) offset: usize,
}

impl Builder {
    pub(super) fn span(&self, pair: &Pair<'_, Rule>) -> Span {
        let span = pair.as_span();
        Span::new(span.start(), span.end()).shifted(self.offset)
    }

    fn heading(&self, pair: Pair<'_, Rule>) -> StatementKind {
        let mut inner = pair.into_inner();
        let level = inner.next().map_or(1, |marks| marks.as_str().len());
        let text = inner.next().map_or("", |text| text.as_str()).trim_end();
        StatementKind::Heading {
            level: u8::try_from(level).unwrap_or(u8::MAX),
            text: text.to_string(),
        }
    }

    fn cell(&self, pair: Pair<'_, Rule>) -> Built<CellDef> {
        let mut name = None;
        let mut unit = None;
        let mut expr = None;
        let mut tolerance = None;
        let mut description = None;
        for part in pair.into_inner() {
            match part.as_rule() {
                Rule::name => name = Some(self.ident(part)),
                Rule::assign => {}
                Rule::declared_unit => unit = Some(self.unit_in_brackets(part)?),
                Rule::expr => expr = Some(self.expr(part)?),
                Rule::plus_minus | Rule::range_to => {
                    tolerance = Some(Box::new(self.tolerance(part)?))
                }
                Rule::extremum_query => expr = Some(self.extremum_query(part)?),
                Rule::query_point => expr = Some(self.located(expr.take(), part)?),
                Rule::description => description = Some(self.description(part)),
                rule => unreachable!("expected a part of a cell, found {rule:?}"),
            }
        }
        match (name, expr) {
            (Some(name), Some(expr)) => Ok(CellDef {
                name,
                unit,
                expr,
                tolerance,
                description,
            }),
            _ => unreachable!("expected a cell with a name and an expression"),
        }
    }

    pub(super) fn tolerance(&self, pair: Pair<'_, Rule>) -> Built<Tolerance> {
        let span = self.span(&pair);
        let rule = pair.as_rule();
        let expr = pair
            .into_inner()
            .next()
            .unwrap_or_else(|| unreachable!("expected a tolerance"));
        let expr = self.expr(expr)?;
        Ok(match rule {
            Rule::plus_minus => Tolerance::PlusMinus { amount: expr, span },
            _ => Tolerance::Range { upper: expr, span },
        })
    }

    fn check(&self, pair: Pair<'_, Rule>) -> Built<CheckDef> {
        let mut sides = Vec::with_capacity(2);
        let mut comparison = None;
        let mut label = None;
        for part in pair.into_inner() {
            match part.as_rule() {
                Rule::keyword_check => {}
                Rule::expr => sides.push(self.expr(part)?),
                Rule::extremum_query => sides.push(self.extremum_query(part)?),
                Rule::query_point => {
                    let value = sides.pop();
                    sides.push(self.located(value, part)?);
                }
                Rule::at_most => comparison = Some(Comparison::AtMost),
                Rule::below => comparison = Some(Comparison::Below),
                Rule::at_least => comparison = Some(Comparison::AtLeast),
                Rule::above => comparison = Some(Comparison::Above),
                Rule::description => label = Some(self.description(part)),
                rule => unreachable!("expected a part of a check, found {rule:?}"),
            }
        }
        let rhs = sides.pop();
        let lhs = sides.pop();
        match (lhs, comparison, rhs) {
            (Some(lhs), Some(comparison), Some(rhs)) => Ok(CheckDef {
                lhs,
                comparison,
                rhs,
                label,
            }),
            _ => unreachable!("expected a check with two sides and a comparison"),
        }
    }

    fn body(&self, pair: Pair<'_, Rule>) -> Built<BodyDef> {
        let mut name = None;
        let mut forces = Vec::new();
        let mut description = None;
        for part in pair.into_inner() {
            match part.as_rule() {
                Rule::keyword_body => {}
                Rule::name => name = Some(self.ident(part)),
                Rule::expr => forces.push(self.expr(part)?),
                Rule::description => description = Some(self.description(part)),
                rule => unreachable!("expected a part of a body, found {rule:?}"),
            }
        }
        let name = name.unwrap_or_else(|| unreachable!("expected the body's name"));
        // The resultant is a sum, evaluated recursively: as many forces as a
        // formula may have operators.
        if forces.len() > super::MAX_OPERATORS {
            return Err(BuildError {
                span: forces[super::MAX_OPERATORS].span,
                message: format!(
                    "a body may list at most {} forces; this one lists {}",
                    super::MAX_OPERATORS,
                    forces.len()
                ),
            });
        }
        let spans: Vec<Span> = forces.iter().map(|force| force.span).collect();
        // The resultant is the sum of the listed forces, written as a formula.
        let mut forces = forces.into_iter();
        let mut sum = forces
            .next()
            .unwrap_or_else(|| unreachable!("expected a force"));
        for rhs in forces {
            sum = Expr {
                span: sum.span.to(rhs.span),
                kind: ExprKind::Binary {
                    op: BinaryOp::Add,
                    lhs: Box::new(sum),
                    rhs: Box::new(rhs),
                },
            };
        }
        Ok(BodyDef {
            resultant: CellDef {
                name: name.clone(),
                unit: None,
                expr: sum,
                tolerance: None,
                description: description.clone(),
            },
            name,
            forces: spans,
            description,
        })
    }

    fn review(&self, pair: Pair<'_, Rule>) -> Built<ReviewMark> {
        let mut kind = None;
        let mut quoted = Vec::with_capacity(2);
        let mut on = None;
        for part in pair.into_inner() {
            match part.as_rule() {
                Rule::keyword_review | Rule::keyword_by | Rule::keyword_on => {}
                Rule::mark_question => kind = Some(ReviewKind::Question),
                Rule::mark_change => kind = Some(ReviewKind::Change),
                Rule::mark_accepted => kind = Some(ReviewKind::Accepted),
                Rule::mark_resolved => kind = Some(ReviewKind::Resolved),
                Rule::description => quoted.push(self.description(part)),
                Rule::date => on = Some(self.date(part)?),
                rule => unreachable!("expected a part of a review mark, found {rule:?}"),
            }
        }
        // The reviewer is always the last quoted text; the remark, if any, comes before it.
        let by = quoted.pop();
        let text = quoted.pop();
        match (kind, by, on) {
            (Some(kind), Some(by), Some(on)) => Ok(ReviewMark { kind, text, by, on }),
            _ => unreachable!("expected a review mark with a kind, a reviewer and a date"),
        }
    }

    fn use_sheet(&self, pair: Pair<'_, Rule>) -> UseSheet {
        let mut quoted = Vec::with_capacity(2);
        let mut alias = None;
        for part in pair.into_inner() {
            match part.as_rule() {
                Rule::keyword_use | Rule::keyword_as => {}
                Rule::description => quoted.push(self.description(part)),
                Rule::name => alias = Some(self.ident(part)),
                rule => unreachable!("expected a part of a use line, found {rule:?}"),
            }
        }
        let mut quoted = quoted.into_iter();
        match (quoted.next(), alias) {
            (Some(path), Some(alias)) => UseSheet {
                path,
                alias,
                description: quoted.next(),
            },
            _ => unreachable!("expected a use line with a path and a name"),
        }
    }

    fn signoff(&self, pair: Pair<'_, Rule>) -> Built<SignOff> {
        let mut by = None;
        let mut on = None;
        let mut fingerprint = None;
        let mut cell_digests = Vec::new();
        for part in pair.into_inner() {
            match part.as_rule() {
                Rule::keyword_signoff
                | Rule::keyword_by
                | Rule::keyword_on
                | Rule::keyword_fingerprint => {}
                Rule::description => by = Some(self.description(part)),
                Rule::date => on = Some(self.date(part)?),
                Rule::fingerprint => fingerprint = Some(self.ident(part)),
                Rule::cell_digests => {
                    for digest in part.into_inner() {
                        if digest.as_rule() != Rule::cell_digest {
                            continue;
                        }
                        let mut inner = digest.into_inner();
                        match (inner.next(), inner.next()) {
                            (Some(name), Some(value)) => {
                                cell_digests.push((self.ident(name), self.ident(value)));
                            }
                            _ => unreachable!("expected `name:digest`"),
                        }
                    }
                }
                rule => unreachable!("expected a part of a sign-off, found {rule:?}"),
            }
        }
        match (by, on, fingerprint) {
            (Some(by), Some(on), Some(fingerprint)) => Ok(SignOff {
                by,
                on,
                fingerprint,
                cell_digests,
            }),
            _ => unreachable!("expected a sign-off with a checker, a date and a fingerprint"),
        }
    }

    /// A `YYYY-MM-DD` date; the grammar fixes the shape, the calendar is
    /// checked by the TOML crate's date reader (months 01–12, days per month).
    fn date(&self, pair: Pair<'_, Rule>) -> Built<Ident> {
        let is_calendar_date = pair
            .as_str()
            .parse::<toml::value::Datetime>()
            .is_ok_and(|value| value.date.is_some() && value.time.is_none());
        if is_calendar_date {
            Ok(self.ident(pair))
        } else {
            Err(BuildError {
                span: self.span(&pair),
                message: format!(
                    "{} is not a calendar date (write YYYY-MM-DD)",
                    pair.as_str()
                ),
            })
        }
    }

    /// `max of expr` / `min of expr`: the value at its own extremum.
    fn extremum_query(&self, pair: Pair<'_, Rule>) -> Built<Expr> {
        let span = self.span(&pair);
        let mut inner = pair.into_inner();
        let maximum = inner
            .next()
            .map(|word| word.as_rule() == Rule::maximum_of)
            .unwrap_or_else(|| unreachable!("expected `max of` or `min of`"));
        let of = self.expr(
            inner
                .next()
                .unwrap_or_else(|| unreachable!("expected an expression")),
        )?;
        Ok(Expr {
            span,
            kind: ExprKind::RunQuery(Box::new(RunQuery {
                value: of.clone(),
                point: RunPoint::Extremum { maximum, of },
                block: None,
            })),
        })
    }

    /// `value at point`, from the value built so far and the `at …` pair.
    fn located(&self, value: Option<Expr>, pair: Pair<'_, Rule>) -> Built<Expr> {
        let value = value.unwrap_or_else(|| unreachable!("expected a value before `at`"));
        let span = value.span.to(self.span(&pair));
        let mut inner = pair.into_inner().skip(1); // `at`
        let first = inner
            .next()
            .unwrap_or_else(|| unreachable!("expected a point of the run"));
        let point = match first.as_rule() {
            Rule::keyword_stop => RunPoint::Stop,
            Rule::keyword_end => RunPoint::End,
            Rule::keyword_start => RunPoint::Start,
            Rule::maximum_of | Rule::minimum_of => RunPoint::Extremum {
                maximum: first.as_rule() == Rule::maximum_of,
                of: self.expr(
                    inner
                        .next()
                        .unwrap_or_else(|| unreachable!("expected an expression")),
                )?,
            },
            Rule::expr => RunPoint::Time(self.expr(first)?),
            rule => unreachable!("expected a point of the run, found {rule:?}"),
        };
        Ok(Expr {
            span,
            kind: ExprKind::RunQuery(Box::new(RunQuery {
                value,
                point,
                block: None,
            })),
        })
    }

    fn condition(&self, pair: Pair<'_, Rule>) -> Built<(Expr, Comparison, Expr)> {
        let mut sides = Vec::with_capacity(2);
        let mut comparison = None;
        for part in pair.into_inner() {
            match part.as_rule() {
                Rule::expr => sides.push(self.expr(part)?),
                Rule::at_most => comparison = Some(Comparison::AtMost),
                Rule::below => comparison = Some(Comparison::Below),
                Rule::at_least => comparison = Some(Comparison::AtLeast),
                Rule::above => comparison = Some(Comparison::Above),
                rule => unreachable!("expected a part of a condition, found {rule:?}"),
            }
        }
        let rhs = sides.pop();
        let lhs = sides.pop();
        match (lhs, comparison, rhs) {
            (Some(lhs), Some(comparison), Some(rhs)) => Ok((lhs, comparison, rhs)),
            _ => unreachable!("expected a condition with two sides and a comparison"),
        }
    }

    pub(super) fn ident(&self, pair: Pair<'_, Rule>) -> Ident {
        Ident {
            text: pair.as_str().into(),
            span: self.span(&pair),
        }
    }

    pub(super) fn description(&self, pair: Pair<'_, Rule>) -> Description {
        let span = self.span(&pair);
        let raw = pair.into_inner().next().map_or("", |text| text.as_str());
        Description {
            text: unescape(raw),
            span,
        }
    }

    pub(super) fn expr(&self, pair: Pair<'_, Rule>) -> Built<Expr> {
        PRATT
            .map_primary(|primary| self.primary(primary))
            .map_prefix(|op, operand| {
                let operand = operand?;
                let span = self.span(&op).to(operand.span);
                match op.as_rule() {
                    Rule::neg => Ok(Expr {
                        kind: ExprKind::Negate(Box::new(operand)),
                        span,
                    }),
                    rule => unreachable!("expected a prefix operator, found {rule:?}"),
                }
            })
            .map_infix(|lhs, op, rhs| {
                let (lhs, rhs) = (lhs?, rhs?);
                let op = match op.as_rule() {
                    Rule::add => BinaryOp::Add,
                    Rule::sub => BinaryOp::Subtract,
                    Rule::mul => BinaryOp::Multiply,
                    Rule::div => BinaryOp::Divide,
                    Rule::pow => BinaryOp::Power,
                    rule => unreachable!("expected an infix operator, found {rule:?}"),
                };
                Ok(Expr {
                    span: lhs.span.to(rhs.span),
                    kind: ExprKind::Binary {
                        op,
                        lhs: Box::new(lhs),
                        rhs: Box::new(rhs),
                    },
                })
            })
            .map_postfix(|operand, op| {
                let operand = operand?;
                let span = operand.span.to(self.span(&op));
                let axis = match op.into_inner().next().map(|axis| axis.as_str()) {
                    Some("x") => 0,
                    Some("y") => 1,
                    Some("z") => 2,
                    other => unreachable!("expected an axis, found {other:?}"),
                };
                Ok(Expr {
                    kind: ExprKind::Component {
                        vector: Box::new(operand),
                        axis,
                    },
                    span,
                })
            })
            .parse(pair.into_inner())
    }

    fn primary(&self, pair: Pair<'_, Rule>) -> Built<Expr> {
        let span = self.span(&pair);
        let kind = match pair.as_rule() {
            Rule::group => {
                let mut expr = None;
                for inner in pair.into_inner() {
                    expr = Some(match inner.as_rule() {
                        Rule::expr => self.expr(inner)?,
                        Rule::extremum_query => self.extremum_query(inner)?,
                        Rule::query_point => self.located(expr.take(), inner)?,
                        rule => unreachable!("expected an expression in brackets, found {rule:?}"),
                    });
                }
                let mut expr =
                    expr.unwrap_or_else(|| unreachable!("expected an expression in brackets"));
                expr.span = span;
                return Ok(expr);
            }
            Rule::quantity => {
                let mut inner = pair.into_inner();
                let number = inner
                    .next()
                    .unwrap_or_else(|| unreachable!("expected a number"));
                let number_span = self.span(&number);
                let value = self.number(&number)?;
                match inner.next() {
                    None => ExprKind::Number(value),
                    Some(run) if run.as_rule() == Rule::slope_run => {
                        let run = run
                            .into_inner()
                            .next()
                            .unwrap_or_else(|| unreachable!("expected the run of a slope"));
                        ExprKind::Slope {
                            rise: value,
                            run: self.number(&run)?,
                        }
                    }
                    Some(unit) => ExprKind::Quantity {
                        value,
                        number_span,
                        unit: self.unit_expr(unit)?,
                    },
                }
            }
            Rule::unit_value => ExprKind::UnitValue(self.unit_in_brackets(pair)?),
            Rule::conditional => self.conditional(pair)?,
            Rule::aggregate => super::parts::aggregate(self, pair)?,
            Rule::lookup_call => ExprKind::Lookup(Box::new(self.lookup(pair)?)),
            Rule::reference => {
                let mut inner = pair.into_inner();
                let name = inner
                    .next()
                    .unwrap_or_else(|| unreachable!("expected a name"));
                let mut next = inner.next();
                // `gear.WLL`: a cell of a sheet this one uses, named in full.
                let (text, name_span) = match next.as_ref().filter(|p| p.as_rule() == Rule::member)
                {
                    Some(member) => {
                        let member_name = member
                            .clone()
                            .into_inner()
                            .next()
                            .map_or("", |n| n.as_str());
                        let text = CompactString::from(format!("{}.{member_name}", name.as_str()));
                        let span = self.span(&name).to(self.span(member));
                        next = inner.next();
                        (text, span)
                    }
                    None => (CompactString::from(name.as_str()), self.span(&name)),
                };
                match next {
                    // The pair also covers the blanks after the name; the span must not.
                    None => {
                        return Ok(Expr {
                            span: name_span,
                            kind: ExprKind::Name(NameRef {
                                text,
                                target: Target::Unresolved,
                            }),
                        });
                    }
                    Some(arguments) => ExprKind::Call {
                        function: Ident {
                            text,
                            span: name_span,
                        },
                        args: arguments
                            .into_inner()
                            .map(|arg| self.expr(arg))
                            .collect::<Built<Box<[_]>>>()?,
                    },
                }
            }
            rule => unreachable!("expected an operand, found {rule:?}"),
        };
        Ok(Expr { kind, span })
    }

    fn number(&self, pair: &Pair<'_, Rule>) -> Built<f64> {
        match pair.as_str().parse::<f64>() {
            Ok(value) if value.is_finite() => Ok(value),
            _ => Err(BuildError {
                span: self.span(pair),
                message: format!("the number {} is too large to represent", pair.as_str()),
            }),
        }
    }

    fn unit_in_brackets(&self, pair: Pair<'_, Rule>) -> Built<UnitExpr> {
        let unit = pair
            .into_inner()
            .next()
            .unwrap_or_else(|| unreachable!("expected a unit in brackets"));
        self.unit_expr(unit)
    }

    fn unit_expr(&self, pair: Pair<'_, Rule>) -> Built<UnitExpr> {
        let span = self.span(&pair);
        let mut factors = Vec::new();
        self.collect_unit_factors(pair, 1, &mut factors)?;
        Ok(UnitExpr {
            factors: factors.into_boxed_slice(),
            span,
        })
    }

    /// Flattens `unit_expr` into factors, multiplying exponents by `outer`
    /// (−1 after a `/`, n inside `(…)^n`).
    fn collect_unit_factors(
        &self,
        pair: Pair<'_, Rule>,
        outer: i32,
        factors: &mut Vec<UnitFactor>,
    ) -> Built<()> {
        let mut sign = 1;
        for part in pair.into_inner() {
            match part.as_rule() {
                Rule::unit_mul => sign = 1,
                Rule::unit_div => sign = -1,
                Rule::unit_factor => {
                    let part_span = self.span(&part);
                    let mut inner = part.into_inner();
                    let base = inner
                        .next()
                        .unwrap_or_else(|| unreachable!("expected a unit symbol"));
                    let exponent = match inner.next() {
                        Some(exponent) => {
                            exponent.as_str().parse::<i32>().map_err(|_| BuildError {
                                span: self.span(&exponent),
                                message: format!(
                                    "the unit exponent {} is too large",
                                    exponent.as_str()
                                ),
                            })?
                        }
                        None => 1,
                    };
                    let total = exponent
                        .checked_mul(sign)
                        .and_then(|e| e.checked_mul(outer))
                        .ok_or_else(|| BuildError {
                            span: part_span,
                            message: "the unit exponent is too large".to_string(),
                        })?;
                    match base.as_rule() {
                        Rule::unit_symbol => factors.push(UnitFactor {
                            symbol: base.as_str().into(),
                            exponent: total,
                            span: self.span(&base),
                        }),
                        Rule::unit_expr => self.collect_unit_factors(base, total, factors)?,
                        rule => unreachable!("expected a unit symbol or group, found {rule:?}"),
                    }
                }
                rule => unreachable!("expected a unit factor, found {rule:?}"),
            }
        }
        Ok(())
    }
}

/// Resolves `\"` and `\\` in a description; any other backslash is kept
/// as written (`C:\new`, `\n` stay as typed: nothing written is dropped).
fn unescape(raw: &str) -> String {
    let mut text = String::with_capacity(raw.len());
    let mut chars = raw.chars().peekable();
    while let Some(c) = chars.next() {
        match (c, chars.peek()) {
            ('\\', Some(&escaped @ ('"' | '\\'))) => {
                text.push(escaped);
                chars.next();
            }
            _ => text.push(c),
        }
    }
    text
}
