//! Parts lists and lifts. Their cells are ordinary formulas (an item's
//! quantity, a lift point's load written from statics by the parser), so
//! the core evaluates them and tolerances and load cases reach them like
//! any other cell. What is left here is judging them once evaluated: every
//! quantity of a list one dimension across its items, a lift's weight a
//! force and its positions lengths, its centre of gravity on the line of two
//! points or inside the triangle of three (else it tips), also at the ends
//! of the loads' tolerance ranges; and the table the outputs show.

use crate::base::{Code, Diagnostic, Span};
use crate::eval::{CellRange, Evaluator, MemberRow, MembersReport};
use crate::sheet::{CellId, CellOrigin, Sheet};
use crate::syntax::ast::{LiftBlock, PartsBlock, StatementKind};
use crate::units::{Dimension, Value};

/// How far off the line between two lift points the centre of gravity may
/// sit, as a share of the points' distance, before the load would roll.
pub const LIFT_LINE_TOLERANCE: f64 = 1e-6;

/// Three points nearer to one line than this (twice the triangle's area
/// over the square of its longest side) are taken as collinear.
pub const COLLINEAR_TOLERANCE: f64 = 1e-9;

/// The table of a parts list or lift at `statement`, for the outputs.
pub(super) fn members_report(sheet: &Sheet, statement: usize) -> Option<MembersReport> {
    let cells: Box<[CellId]> = (0..sheet.cells.len())
        .filter(|&id| {
            matches!(sheet.cells[id], CellOrigin::Member { statement: s, .. } if s == statement)
        })
        .collect();
    let first = *cells.first()?;
    let users = (0..sheet.cells.len())
        .filter(|id| !cells.contains(id) && sheet.uses[*id].iter().any(|used| cells.contains(used)))
        .collect();
    match &sheet.statements[statement].kind {
        StatementKind::Parts(block) => Some(parts_report(block, statement, cells, first, users)),
        StatementKind::Lift(block) => Some(lift_report(block, statement, cells, first, users)),
        _ => None,
    }
}

fn parts_report(
    block: &PartsBlock,
    statement: usize,
    cells: Box<[CellId]>,
    first: CellId,
    users: Vec<CellId>,
) -> MembersReport {
    let mut columns: Vec<String> = Vec::new();
    for item in &block.items {
        for quantity in &item.quantities {
            if !columns.iter().any(|column| *column == quantity.text) {
                columns.push(quantity.text.to_string());
            }
        }
    }
    let rows = block
        .items
        .iter()
        .map(|item| MemberRow {
            name: item.name.text.to_string(),
            description: item.description.as_ref().map(|d| d.text.clone()),
            cells: columns
                .iter()
                .map(|column| {
                    item.quantities
                        .iter()
                        .position(|quantity| quantity.text == column.as_str())
                        .map(|k| first + item.first_cell + k)
                })
                .collect(),
        })
        .collect();
    MembersReport {
        statement,
        span: block.head,
        is_lift: false,
        name: block.name.text.to_string(),
        label: block.label.as_ref().map(|l| l.text.clone()),
        columns,
        rows,
        carried: None,
        cells,
        users,
    }
}

fn lift_report(
    block: &LiftBlock,
    statement: usize,
    cells: Box<[CellId]>,
    first: CellId,
    users: Vec<CellId>,
) -> MembersReport {
    let rows = block
        .points
        .iter()
        .enumerate()
        .map(|(k, point)| MemberRow {
            name: point.name.text.to_string(),
            description: block.cells[LiftBlock::position_cell(k)]
                .description
                .as_ref()
                .map(|d| d.text.clone()),
            cells: vec![
                Some(first + LiftBlock::position_cell(k)),
                block.load_cell(k).map(|index| first + index),
            ],
        })
        .collect();
    MembersReport {
        statement,
        span: block.head,
        is_lift: true,
        name: block.name.text.to_string(),
        label: block.label.as_ref().map(|l| l.text.clone()),
        columns: vec!["position".to_string(), "load".to_string()],
        rows,
        carried: Some((first + LiftBlock::WEIGHT, first + LiftBlock::CENTRE)),
        cells,
        users,
    }
}

impl Evaluator<'_> {
    /// Judges every parts list and lift of the sheet once its cells are
    /// evaluated; `ranges` are the cells' ranges over the tolerances.
    /// Gives the names' spans of the points whose loads were withdrawn
    /// (see [`is_withdrawn`]).
    pub(super) fn judge_members(&mut self, ranges: &[Option<CellRange>]) -> Vec<Span> {
        let mut withdrawn = Vec::new();
        let sheet = self.sheet;
        for statement in 0..sheet.statements.len() {
            let Some(report) = (match &sheet.statements[statement].kind {
                StatementKind::Parts(_) | StatementKind::Lift(_) => {
                    members_report(sheet, statement)
                }
                _ => None,
            }) else {
                continue;
            };
            if report.is_lift {
                withdrawn.extend(self.judge_lift(&report, report.span, ranges));
            } else {
                self.judge_parts(&report);
            }
        }
        withdrawn
    }

    /// Every quantity one dimension across the list's items.
    fn judge_parts(&mut self, report: &MembersReport) {
        for (column, quantity) in report.columns.iter().enumerate() {
            let mut first: Option<(Dimension, &str)> = None;
            for row in &report.rows {
                let Some(id) = row.cells[column] else {
                    continue;
                };
                let Some(value) = self.values[id] else {
                    continue;
                };
                match first {
                    None => first = Some((value.dimension(), &row.name)),
                    Some((dimension, first_item)) if dimension != value.dimension() => {
                        let span = self.sheet.cell(id).name.span;
                        self.diagnostics.push(
                            Diagnostic::error(
                                Code::PartDimensionMismatch,
                                span,
                                format!(
                                    "item `{}` gives `{quantity}` as {}, but item `{first_item}` gives it as {}",
                                    row.name,
                                    value.dimension().describe(),
                                    dimension.describe()
                                ),
                            )
                            .with_help("every item of a list gives each quantity in one dimension"),
                        );
                    }
                    Some(_) => {}
                }
            }
        }
    }

    /// A lift's inputs of the right kinds, its points not on one line (three)
    /// and its centre of gravity where the points can hold it.
    fn judge_lift(
        &mut self,
        report: &MembersReport,
        span: Span,
        ranges: &[Option<CellRange>],
    ) -> Vec<Span> {
        let Some((weight, centre)) = report.carried else {
            return Vec::new();
        };
        let head = self.sheet.cell(weight).name.span;
        let mut kinds_ok = true;
        if let Some(value) = self.values[weight]
            && !matches!(value, Value::Scalar(q) if q.dimension == Dimension::FORCE)
        {
            kinds_ok = false;
            self.diagnostics.push(
                Diagnostic::error(
                    Code::BadLift,
                    head,
                    format!(
                        "the weight a lift carries must be a force; this is {}",
                        describe(value)
                    ),
                )
                .with_help("for a mass m write `m * g0` (or the local gravity)"),
            );
        }
        let plan = |value: Option<Value>| match value {
            Some(Value::Vector(v)) if v.dimension == Dimension::LENGTH => Some([v.si[0], v.si[1]]),
            _ => None,
        };
        let mut places = vec![(centre, "centre of gravity".to_string())];
        places.extend(
            report
                .rows
                .iter()
                .filter_map(|row| row.cells[0].map(|id| (id, format!("point `{}`", row.name)))),
        );
        for (id, what) in &places {
            if let Some(value) = self.values[*id]
                && plan(Some(value)).is_none()
            {
                kinds_ok = false;
                let at = self.sheet.cell(*id).name.span;
                self.diagnostics.push(
                    Diagnostic::error(
                        Code::BadLift,
                        at,
                        format!(
                            "the {what} must be a position in plan, a vector of lengths; this is {}",
                            describe(value)
                        ),
                    )
                    .with_help("write it as `vec(x, y)` with lengths"),
                );
            }
        }
        if !kinds_ok {
            return self.withdraw_loads(report);
        }
        let Some(g) = plan(self.values[centre]) else {
            return Vec::new();
        };
        let points: Option<Vec<[f64; 2]>> = report
            .rows
            .iter()
            .map(|row| row.cells[0].and_then(|id| plan(self.values[id])))
            .collect();
        let Some(points) = points else {
            return Vec::new();
        };
        match points.as_slice() {
            [a, b] => self.judge_two_points(report, span, ranges, [g, *a, *b]),
            [a, b, c] => {
                let (ab, ac, bc) = (sub(*b, *a), sub(*c, *a), sub(*c, *b));
                let longest = [ab, ac, bc]
                    .iter()
                    .map(|d| d[0] * d[0] + d[1] * d[1])
                    .fold(0.0, f64::max);
                if cross(ab, ac).abs() <= COLLINEAR_TOLERANCE * longest {
                    self.diagnostics.push(
                        Diagnostic::error(
                            Code::CollinearLiftPoints,
                            span,
                            format!(
                                "the three points of lift `{}` lie on one line: they cannot hold the load against tipping about it",
                                report.name
                            ),
                        )
                        .with_help("move one point off the line of the other two"),
                    );
                    return self.withdraw_loads(report);
                }
                self.judge_signs(
                    report,
                    span,
                    ranges,
                    "outside the triangle of its three points",
                );
                Vec::new()
            }
            _ => Vec::new(),
        }
    }

    fn judge_two_points(
        &mut self,
        report: &MembersReport,
        span: Span,
        ranges: &[Option<CellRange>],
        [g, a, b]: [[f64; 2]; 3],
    ) -> Vec<Span> {
        let ab = sub(b, a);
        let length = libm::hypot(ab[0], ab[1]);
        if length == 0.0 {
            self.diagnostics.push(
                Diagnostic::error(
                    Code::BadLift,
                    span,
                    format!("the two points of lift `{}` are at one place", report.name),
                )
                .with_help("give the two points different positions"),
            );
            return self.withdraw_loads(report);
        }
        let offset = cross(ab, sub(g, a)) / length;
        if offset.abs() > LIFT_LINE_TOLERANCE * length {
            self.diagnostics.push(
                Diagnostic::error(
                    Code::LiftOffLine,
                    span,
                    format!(
                        "the centre of gravity of lift `{}` is {} m off the line through its two points: the load would roll about that line until the centre hangs below it",
                        report.name,
                        crate::units::format_significant(offset.abs(), 4)
                    ),
                )
                .with_help("place the lift points on a line through the centre of gravity, or lift on three points"),
            );
            return Vec::new();
        }
        self.judge_signs(
            report,
            span,
            ranges,
            "beyond the segment between its two points",
        );
        Vec::new()
    }

    /// A lift whose inputs are of the wrong kind or whose points cannot
    /// carry it has no loads: each load cell becomes an error (the lift's
    /// own finding says why), and what its statics formula reported in
    /// the attempt (a component of a scalar, a division by zero: findings
    /// at a point's name, where only those formulas put theirs) is
    /// withdrawn.
    fn withdraw_loads(&mut self, report: &MembersReport) -> Vec<Span> {
        let mut point_names = Vec::new();
        for row in &report.rows {
            if let Some(position) = row.cells[0] {
                point_names.push(self.sheet.cell(position).name.span);
            }
            if let Some(load) = row.cells[1] {
                self.values[load] = None;
                self.statuses[load] = crate::eval::CellStatus::Error;
            }
        }
        self.diagnostics
            .retain(|diagnostic| !is_withdrawn(&point_names, diagnostic));
        point_names
    }

    /// A negative load means the point would have to push down: the load
    /// tips. Judged at the nominal values, and at the low end of each
    /// load's range over the tolerances.
    fn judge_signs(
        &mut self,
        report: &MembersReport,
        span: Span,
        ranges: &[Option<CellRange>],
        beyond: &str,
    ) {
        for row in &report.rows {
            let Some(load) = row.cells[1] else {
                continue;
            };
            let nominal = match self.values[load] {
                Some(Value::Scalar(q)) => q.si,
                _ => continue,
            };
            let low = ranges
                .get(load)
                .and_then(Option::as_ref)
                .map(|range| range.low);
            let (negative, place) = if nominal < 0.0 {
                (nominal, "")
            } else if let Some(low) = low.filter(|low| *low < 0.0) {
                (low, " at the low end of its tolerances")
            } else {
                continue;
            };
            self.diagnostics.push(
                Diagnostic::error(
                    Code::LiftTips,
                    span,
                    format!(
                        "the centre of gravity of lift `{}` is {beyond}: point `{}` would have to push down with {} N{place}, so the load tips",
                        report.name,
                        row.name,
                        crate::units::format_significant(-negative, 4)
                    ),
                )
                .with_help("move the lift points so that the centre of gravity lies between them"),
            );
        }
    }
}

/// Whether `diagnostic` is one a withdrawn lift's statics formulas gave:
/// a dimension or arithmetic finding at one of its points' names
/// (`withdrawn`), where no finding but theirs is put.
pub(crate) fn is_withdrawn(withdrawn: &[Span], diagnostic: &Diagnostic) -> bool {
    withdrawn.contains(&diagnostic.span)
        && matches!(
            diagnostic.code,
            Code::DimensionMismatch | Code::DivisionByZero | Code::NotFinite | Code::OutOfDomain
        )
}

fn describe(value: Value) -> String {
    match value {
        Value::Scalar(q) => format!("a scalar of {}", q.dimension.describe()),
        Value::Vector(v) => format!("a vector of {}", v.dimension.describe()),
    }
}

fn sub(a: [f64; 2], b: [f64; 2]) -> [f64; 2] {
    [a[0] - b[0], a[1] - b[1]]
}

fn cross(a: [f64; 2], b: [f64; 2]) -> f64 {
    a[0] * b[1] - a[1] * b[0]
}
