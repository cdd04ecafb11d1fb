//! Parsing parts lists and lifts line by line, and the aggregates over a
//! list (`sum(skid: m * r)`). A parts list's quantities become cells named
//! `list[item].quantity`; a lift's loads become cells whose formulas the
//! parser writes from statics (the lever rule along two points, area
//! coordinates over three), so linking and evaluation treat them as any
//! other formula and tolerances and load cases reach them.

use pest::iterators::Pair;

use super::ast::{
    AggregateOp, BinaryOp, CellDef, Description, Expr, ExprKind, Ident, LiftBlock, LiftPoint,
    NameRef, PartItem, PartsBlock, StatementKind, Target,
};
use super::build::{self, BuildError, Builder};
use super::lines::BlockLines;
use super::parser::Rule;
use super::split::{code_of, parse_block_line};
use crate::base::{Code, Diagnostic, Span};

/// The placeholder call an aggregate is built as (see [`AggregateOp`]):
/// the list's name, then the expression (none for `count`).
pub(super) fn aggregate(builder: &Builder, pair: Pair<'_, Rule>) -> Result<ExprKind, BuildError> {
    let mut inner = pair.into_inner();
    let op = inner
        .next()
        .unwrap_or_else(|| unreachable!("expected an aggregate's operator"));
    let aggregate = match op.as_str() {
        "sum" => AggregateOp::Sum,
        "min" => AggregateOp::Min,
        "max" => AggregateOp::Max,
        _ => AggregateOp::Count,
    };
    let list = builder.ident(
        inner
            .next()
            .unwrap_or_else(|| unreachable!("expected the list's name")),
    );
    let mut args = vec![Expr {
        kind: ExprKind::Name(NameRef {
            text: list.text,
            target: Target::Unresolved,
        }),
        span: list.span,
    }];
    if let Some(body) = inner.next() {
        args.push(builder.expr(body)?);
    }
    Ok(ExprKind::Call {
        function: Ident {
            text: aggregate.marker().into(),
            span: builder.span(&op),
        },
        args: args.into_boxed_slice(),
    })
}

/// Whether a block head opens a parts list or a lift.
pub(super) fn opens_parts_or_lift(head: &str) -> bool {
    let keyword = code_of(head).split_whitespace().next().unwrap_or("");
    keyword == "parts" || keyword == "lift"
}

/// Parses a parts list or a lift block.
pub(super) fn parse_parts_or_lift(
    source: &str,
    block: &BlockLines,
) -> (StatementKind, Vec<Diagnostic>) {
    let mut diagnostics = Vec::new();
    let mut complete = block.end.is_some();
    let is_lift = code_of(block.head.text(source)).starts_with("lift");
    let keyword = if is_lift { "lift" } else { "parts" };
    if !complete {
        diagnostics.push(super::lines::unclosed_block(block.head, keyword));
    }
    let kind = if is_lift {
        parse_lift(source, block, &mut complete, &mut diagnostics)
    } else {
        parse_parts(source, block, &mut complete, &mut diagnostics)
    };
    diagnostics.sort_by_key(|d| d.span.start());
    (kind, diagnostics)
}

/// One item line as parsed: its name, each quantity's cell, its description.
struct ParsedItem {
    name: Ident,
    cells: Vec<CellDef>,
    description: Option<Description>,
    span: Span,
}

fn part_item(
    mut pairs: pest::iterators::Pairs<'_, Rule>,
    offset: usize,
) -> build::Built<ParsedItem> {
    let builder = Builder { offset };
    let pair = pairs
        .next()
        .unwrap_or_else(|| unreachable!("expected a part item"));
    let span = builder.span(&pair);
    let mut name = None;
    let mut cells = Vec::new();
    let mut description = None;
    for part in pair.into_inner() {
        match part.as_rule() {
            Rule::name => name = Some(builder.ident(part)),
            Rule::description => description = Some(builder.description(part)),
            Rule::part_quantity => {
                let mut quantity = None;
                let mut expr = None;
                let mut tolerance = None;
                for piece in part.into_inner() {
                    match piece.as_rule() {
                        Rule::name => quantity = Some(builder.ident(piece)),
                        Rule::assign => {}
                        Rule::expr => expr = Some(builder.expr(piece)?),
                        Rule::plus_minus | Rule::range_to => {
                            tolerance = Some(Box::new(builder.tolerance(piece)?))
                        }
                        rule => unreachable!("expected a part of a quantity, found {rule:?}"),
                    }
                }
                let (Some(quantity), Some(expr)) = (quantity, expr) else {
                    unreachable!("expected a quantity's name and formula")
                };
                cells.push(CellDef {
                    name: quantity,
                    unit: None,
                    expr,
                    tolerance,
                    description: None,
                });
            }
            rule => unreachable!("expected a part of an item, found {rule:?}"),
        }
    }
    Ok(ParsedItem {
        name: name.unwrap_or_else(|| unreachable!("expected an item's name")),
        cells,
        description,
        span,
    })
}

fn parts_head(
    mut pairs: pest::iterators::Pairs<'_, Rule>,
    offset: usize,
) -> build::Built<(Ident, Option<Description>)> {
    let builder = Builder { offset };
    let head = pairs
        .next()
        .unwrap_or_else(|| unreachable!("expected a parts head"));
    let mut name = None;
    let mut label = None;
    for part in head.into_inner() {
        match part.as_rule() {
            Rule::keyword_parts => {}
            Rule::name => name = Some(builder.ident(part)),
            Rule::description => label = Some(builder.description(part)),
            rule => unreachable!("expected a part of a parts head, found {rule:?}"),
        }
    }
    Ok((
        name.unwrap_or_else(|| unreachable!("expected a list's name")),
        label,
    ))
}

fn parse_parts(
    source: &str,
    block: &BlockLines,
    complete: &mut bool,
    diagnostics: &mut Vec<Diagnostic>,
) -> StatementKind {
    let head = match parse_block_line(source, block.head, Rule::parts_line, parts_head) {
        Ok(head) => head,
        Err(diagnostic) => {
            diagnostics.push(diagnostic.with_help("write `parts name \"label\":`"));
            return StatementKind::Invalid;
        }
    };
    let (name, label) = head;
    let mut parsed = Vec::with_capacity(block.body.len());
    for &line in &block.body {
        match parse_block_line(source, line, Rule::part_line, part_item) {
            Ok(item) => parsed.push(item),
            Err(diagnostic) => {
                *complete = false;
                diagnostics.push(diagnostic.with_help(
                    "write each item as `item : m = 820 kg, r = vec(1.2 m, 0.4 m) \"description\"`",
                ));
            }
        }
    }
    quantities_agree(&parsed, diagnostics);
    let mut items = Vec::with_capacity(parsed.len());
    let mut cells = Vec::new();
    for item in parsed {
        let first_cell = cells.len();
        let quantities = item.cells.iter().map(|cell| cell.name.clone()).collect();
        for (k, mut cell) in item.cells.into_iter().enumerate() {
            cell.name.text = PartsBlock::cell_name(&name.text, &item.name.text, &cell.name.text);
            if k == 0 {
                cell.description.clone_from(&item.description);
            }
            cells.push(cell);
        }
        items.push(PartItem {
            name: item.name,
            quantities,
            first_cell,
            description: item.description,
            span: item.span,
        });
    }
    StatementKind::Parts(Box::new(PartsBlock {
        name,
        label,
        items,
        cells,
        complete: *complete,
        head: block.head,
    }))
}

/// Every item must give the quantities the others give: one missing (or
/// one only this item gives) is `part-quantity-missing`, naming the item.
fn quantities_agree(items: &[ParsedItem], diagnostics: &mut Vec<Diagnostic>) {
    let mut all: Vec<&str> = Vec::new();
    for item in items {
        for cell in &item.cells {
            if !all.contains(&cell.name.text.as_str()) {
                all.push(&cell.name.text);
            }
        }
    }
    for item in items {
        let missing: Vec<String> = all
            .iter()
            .filter(|quantity| !item.cells.iter().any(|cell| cell.name.text == **quantity))
            .map(|quantity| format!("`{quantity}`"))
            .collect();
        if !missing.is_empty() {
            diagnostics.push(
                Diagnostic::error(
                    Code::PartQuantityMissing,
                    item.name.span,
                    format!(
                        "item `{}` gives no {} (other items of the list do)",
                        item.name.text,
                        missing.join(", ")
                    ),
                )
                .with_help("give every item of a list the same quantities"),
            );
        }
        for (k, cell) in item.cells.iter().enumerate() {
            if item.cells[..k]
                .iter()
                .any(|other| other.name.text == cell.name.text)
            {
                diagnostics.push(
                    Diagnostic::error(
                        Code::DuplicateName,
                        cell.name.span,
                        format!("item `{}` gives `{}` twice", item.name.text, cell.name.text),
                    )
                    .with_help("give each quantity once per item"),
                );
            }
        }
    }
}

fn lift_head(
    mut pairs: pest::iterators::Pairs<'_, Rule>,
    offset: usize,
) -> build::Built<(Ident, Expr, Expr, Option<Description>)> {
    let builder = Builder { offset };
    let head = pairs
        .next()
        .unwrap_or_else(|| unreachable!("expected a lift head"));
    let mut name = None;
    let mut exprs = Vec::with_capacity(2);
    let mut label = None;
    for part in head.into_inner() {
        match part.as_rule() {
            Rule::keyword_lift | Rule::keyword_of | Rule::keyword_at => {}
            Rule::name => name = Some(builder.ident(part)),
            Rule::expr => exprs.push(builder.expr(part)?),
            Rule::description => label = Some(builder.description(part)),
            rule => unreachable!("expected a part of a lift head, found {rule:?}"),
        }
    }
    let centre = exprs.pop();
    let weight = exprs.pop();
    match (name, weight, centre) {
        (Some(name), Some(weight), Some(centre)) => Ok((name, weight, centre, label)),
        _ => unreachable!("expected a lift's name, weight and centre of gravity"),
    }
}

fn lift_point(
    mut pairs: pest::iterators::Pairs<'_, Rule>,
    offset: usize,
) -> build::Built<(Ident, Expr, Option<Description>, Span)> {
    let builder = Builder { offset };
    let pair = pairs
        .next()
        .unwrap_or_else(|| unreachable!("expected a lift point"));
    let span = builder.span(&pair);
    let mut name = None;
    let mut expr = None;
    let mut description = None;
    for part in pair.into_inner() {
        match part.as_rule() {
            Rule::name => name = Some(builder.ident(part)),
            Rule::assign => {}
            Rule::expr => expr = Some(builder.expr(part)?),
            Rule::description => description = Some(builder.description(part)),
            rule => unreachable!("expected a part of a lift point, found {rule:?}"),
        }
    }
    match (name, expr) {
        (Some(name), Some(expr)) => Ok((name, expr, description, span)),
        _ => unreachable!("expected a point's name and position"),
    }
}

/// The name of a lift's weight cell, centre-of-gravity cell, a point's
/// position cell and a point's load cell.
pub fn lift_cell_name(lift: &str, part: LiftCell<'_>) -> compact_str::CompactString {
    let mut name = compact_str::CompactString::from(lift);
    match part {
        LiftCell::Weight => name.push_str("(weight)"),
        LiftCell::Centre => name.push_str("(cg)"),
        LiftCell::Position(point) => {
            name.push('[');
            name.push_str(point);
            name.push(']');
        }
        LiftCell::Load(point) => {
            name.push('_');
            name.push_str(point);
        }
    }
    name
}

/// Which cell of a lift.
#[derive(Clone, Copy, Debug)]
pub enum LiftCell<'a> {
    /// The weight it carries.
    Weight,
    /// Where the weight acts.
    Centre,
    /// A point's position.
    Position(&'a str),
    /// A point's vertical load: an ordinary name, `pick_A`.
    Load(&'a str),
}

fn parse_lift(
    source: &str,
    block: &BlockLines,
    complete: &mut bool,
    diagnostics: &mut Vec<Diagnostic>,
) -> StatementKind {
    let (name, weight, centre, label) = match parse_block_line(
        source,
        block.head,
        Rule::lift_line,
        lift_head,
    ) {
        Ok(head) => head,
        Err(diagnostic) => {
            diagnostics.push(diagnostic.with_help(
                    "write `lift name of WEIGHT at CENTRE_OF_GRAVITY \"label\":`, then a line `A = position` per point",
                ));
            return StatementKind::Invalid;
        }
    };
    let mut points = Vec::new();
    let mut positions = Vec::new();
    for &line in &block.body {
        match parse_block_line(source, line, Rule::lift_point_line, lift_point) {
            Ok((point, position, description, span)) => {
                positions.push(CellDef {
                    name: Ident {
                        text: lift_cell_name(&name.text, LiftCell::Position(&point.text)),
                        span: point.span,
                    },
                    unit: None,
                    expr: position,
                    tolerance: None,
                    description,
                });
                points.push(LiftPoint { name: point, span });
            }
            Err(diagnostic) => {
                *complete = false;
                diagnostics.push(
                    diagnostic.with_help("write each lift point as `A = vec(0.25 m, 0.50 m)`"),
                );
            }
        }
    }
    let mut cells = vec![
        CellDef {
            name: Ident {
                text: lift_cell_name(&name.text, LiftCell::Weight),
                span: weight.span,
            },
            unit: None,
            expr: weight,
            tolerance: None,
            description: None,
        },
        CellDef {
            name: Ident {
                text: lift_cell_name(&name.text, LiftCell::Centre),
                span: centre.span,
            },
            unit: None,
            expr: centre,
            tolerance: None,
            description: None,
        },
    ];
    cells.extend(positions);
    match points.len() {
        2 | 3 => {
            let loads = load_formulas(&name.text, &points);
            cells.extend(points.iter().zip(loads).map(|(point, expr)| CellDef {
                name: Ident {
                    text: lift_cell_name(&name.text, LiftCell::Load(&point.name.text)),
                    span: point.name.span,
                },
                unit: None,
                expr,
                tolerance: None,
                // Written by heft, not in the sheet: its span is the point's name.
                description: Some(Description {
                    text: format!("vertical load at lift point {}", point.name.text),
                    span: point.name.span,
                }),
            }));
        }
        n if n >= 4 => diagnostics.push(
            Diagnostic::error(
                Code::IndeterminateLift,
                block.head,
                format!(
                    "a lift on {n} points is statically indeterminate: how the weight shares \
                     among them depends on the stiffness and length of each sling and on the \
                     rigging, so heft will not pick a share"
                ),
            )
            .with_help(
                "lift on two or three points, or through a spreader or equalising arrangement \
                 (write the lift on the points that arrangement makes determinate)",
            ),
        ),
        n if *complete => diagnostics.push(
            Diagnostic::error(
                Code::BadLift,
                block.head,
                format!("a lift needs two or three points; this one has {n}"),
            )
            .with_help("write each lift point as `A = vec(0.25 m, 0.50 m)`"),
        ),
        _ => {}
    }
    StatementKind::Lift(Box::new(LiftBlock {
        name,
        label,
        points,
        cells,
        complete: *complete,
        head: block.head,
    }))
}

/// The load formulas of a two- or three-point lift, point by point, over
/// the names of its weight `W`, centre `G` and positions `P` (plan x and y):
/// two points by the lever rule along AB, R_A = W·(B−G)·(B−A)/|B−A|²;
/// three by area coordinates, R_A = W·((B−G)×(C−G))/((B−A)×(C−A)).
fn load_formulas(lift: &str, points: &[LiftPoint]) -> Vec<Expr> {
    let at = |k: usize| points[k].name.span;
    let name = |text: compact_str::CompactString, span: Span| Expr {
        kind: ExprKind::Name(NameRef {
            text,
            target: Target::Unresolved,
        }),
        span,
    };
    let component = |vector: &Expr, axis: usize| Expr {
        span: vector.span,
        kind: ExprKind::Component {
            vector: Box::new(vector.clone()),
            axis,
        },
    };
    let binary = |op: BinaryOp, lhs: Expr, rhs: Expr| Expr {
        span: lhs.span,
        kind: ExprKind::Binary {
            op,
            lhs: Box::new(lhs),
            rhs: Box::new(rhs),
        },
    };
    // (u − v) along one axis.
    let difference = |u: &Expr, v: &Expr, axis: usize| {
        binary(BinaryOp::Subtract, component(u, axis), component(v, axis))
    };
    // The z of (a − o) × (b − o).
    let cross = |a: &Expr, b: &Expr, o: &Expr| {
        binary(
            BinaryOp::Subtract,
            binary(BinaryOp::Multiply, difference(a, o, 0), difference(b, o, 1)),
            binary(BinaryOp::Multiply, difference(a, o, 1), difference(b, o, 0)),
        )
    };
    // (a − o) · (b − p).
    let dot = |a: &Expr, o: &Expr, b: &Expr, p: &Expr| {
        binary(
            BinaryOp::Add,
            binary(BinaryOp::Multiply, difference(a, o, 0), difference(b, p, 0)),
            binary(BinaryOp::Multiply, difference(a, o, 1), difference(b, p, 1)),
        )
    };
    let position = |k: usize| {
        name(
            lift_cell_name(lift, LiftCell::Position(&points[k].name.text)),
            at(k),
        )
    };
    (0..points.len())
        .map(|k| {
            let weight = name(lift_cell_name(lift, LiftCell::Weight), at(k));
            let centre = name(lift_cell_name(lift, LiftCell::Centre), at(k));
            let (numerator, denominator) = if points.len() == 2 {
                let (a, b) = (position(0), position(1));
                let own = position(k);
                let other = position(1 - k);
                // R_k = W (other − G)·(other − own) / |other − own|².
                (dot(&other, &centre, &other, &own), dot(&b, &a, &b, &a))
            } else {
                let (a, b, c) = (position(0), position(1), position(2));
                let (next, after) = (position((k + 1) % 3), position((k + 2) % 3));
                (cross(&next, &after, &centre), cross(&b, &c, &a))
            };
            binary(
                BinaryOp::Divide,
                binary(BinaryOp::Multiply, weight, numerator),
                denominator,
            )
        })
        .collect()
}
