//! The syntax tree of a sheet: what the user wrote, with spans, before any
//! unit is looked up or any value computed.

use compact_str::CompactString;

pub use super::conditional::{Conditional, Relation, Test, TestKind};
use crate::base::Span;

pub use super::sweep::{SweepBlock, SweepSpacing};
mod table;
pub use table::{ColumnHead, Lookup, LookupTarget, Reading, TableBlock, TableRow, TableSource};

/// One statement of a sheet, with the span of its line.
#[derive(Clone, Debug, PartialEq)]
pub struct Statement {
    /// The whole statement (its line, without the line break).
    pub span: Span,
    /// What kind of statement it is.
    pub kind: StatementKind,
}

/// The kinds of statement.
#[derive(Clone, Debug, PartialEq)]
pub enum StatementKind {
    /// A heading: `# Rope tension` (level 1) or `## Braking` (level 2).
    Heading {
        /// Number of `#` marks.
        level: u8,
        /// The heading text.
        text: String,
    },
    /// A note the report keeps: `> Skid mass from the weigh ticket.`
    Note {
        /// The note text.
        text: String,
    },
    /// A named cell: `T_up [kN] = m_tot * (g0 + a_up) "rope tension"`.
    Cell(Box<CellDef>),
    /// A check: `check T_up <= WLL "rope within its rated load"`.
    Check(Box<CheckDef>),
    /// A free body and the forces on it: `body crate: F_pull, W, N, F_f`.
    Body(Box<BodyDef>),
    /// A block of equations solved for its unknowns: `solve a [m/s^2]: … end`.
    Solve(Box<SolveBlock>),
    /// A load case: `case proof "proof test at 125 %": … end`.
    Case(Box<CaseBlock>),
    /// A line that did not parse; its diagnostic says why.
    Invalid,
    /// A checker's review mark on the cell, check or heading above it:
    /// `review question "Where is 0.35 m/s^2 from?" by "K. Brandt" on 2026-12-02`.
    Review(Box<ReviewMark>),
    /// Another sheet whose cells this one reads:
    /// `use "gear_register.heft" as gear`.
    Use(Box<UseSheet>),
    /// A checker's sign-off of the sheet as it stands:
    /// `signoff by "K. Brandt" on 2026-12-03 fingerprint 5e0c… cells m_skid:1a2b3c4d …`.
    SignOff(Box<SignOff>),
    /// Equations of motion integrated over time: `simulate t from 0 s to 5 s: … end`.
    Simulate(Box<SimulateBlock>),
    /// A list of parts with named quantities: `parts skid "as built": … end`.
    Parts(Box<PartsBlock>),
    /// The loads on the points of a lift: `lift pick of W at r_cg: … end`.
    Lift(Box<LiftBlock>),
    /// A study of the sheet over one input: `sweep x from 0 m to 2 m count 9: … end`.
    Sweep(Box<SweepBlock>),
    /// A table of numbers with units: `table chart by radius "load chart": … end`.
    Table(Box<TableBlock>),
}

/// A list of parts: each item gives the same named quantities. Every
/// quantity of every item is a cell of its own, named `list[item].quantity`
/// (not a name a formula can write: aggregates reach them).
#[derive(Clone, Debug, PartialEq)]
pub struct PartsBlock {
    /// The list's name, which aggregates name: `sum(skid: m)`.
    pub name: Ident,
    /// Its optional label.
    pub label: Option<Description>,
    /// The items that parsed, in written order.
    pub items: Vec<PartItem>,
    /// The cells, item by item and in each item its quantities as written.
    pub cells: Vec<CellDef>,
    /// Whether every line parsed and the block is closed by `end`.
    pub complete: bool,
    /// The `parts …:` line.
    pub head: Span,
}

/// One item of a parts list: `pump : m = 820 kg, r = vec(1.2 m, 0.4 m) "pump"`.
#[derive(Clone, Debug, PartialEq)]
pub struct PartItem {
    /// The item's name.
    pub name: Ident,
    /// The names of its quantities, as written; the `k`-th is the cell
    /// `first_cell + k` of the block.
    pub quantities: Vec<Ident>,
    /// Index of its first cell in [`PartsBlock::cells`].
    pub first_cell: usize,
    /// The optional description.
    pub description: Option<Description>,
    /// The whole line.
    pub span: Span,
}

impl PartsBlock {
    /// The name of the cell holding `quantity` of `item` in list `list`.
    pub fn cell_name(list: &str, item: &str, quantity: &str) -> CompactString {
        let mut name = CompactString::from(list);
        name.push('[');
        name.push_str(item);
        name.push_str("].");
        name.push_str(quantity);
        name
    }
}

/// A lift: a weight acting at a point, carried by two or three lift points.
/// Its cells, built by the parser: `pick(weight)`, `pick(cg)`, each point's
/// position `pick[A]`, then each point's vertical load `pick_A`, a formula
/// of the others (statics), so tolerances and load cases reach it.
#[derive(Clone, Debug, PartialEq)]
pub struct LiftBlock {
    /// The lift's name.
    pub name: Ident,
    /// Its optional label.
    pub label: Option<Description>,
    /// The points that parsed, in written order.
    pub points: Vec<LiftPoint>,
    /// The cells: weight, centre of gravity, each point's position, then
    /// each point's load (empty loads when the lift is not determinate).
    pub cells: Vec<CellDef>,
    /// Whether every line parsed and the block is closed by `end`.
    pub complete: bool,
    /// The `lift …:` line.
    pub head: Span,
}

/// A lift point: `A = vec(0.25 m, 0.50 m) "spreader end"`.
#[derive(Clone, Debug, PartialEq)]
pub struct LiftPoint {
    /// The point's name.
    pub name: Ident,
    /// The whole line.
    pub span: Span,
}

impl LiftBlock {
    /// Index in [`LiftBlock::cells`] of the weight's cell.
    pub const WEIGHT: usize = 0;
    /// Index in [`LiftBlock::cells`] of the centre of gravity's cell.
    pub const CENTRE: usize = 1;

    /// Index in [`LiftBlock::cells`] of point `k`'s position.
    pub fn position_cell(k: usize) -> usize {
        2 + k
    }

    /// Index in [`LiftBlock::cells`] of point `k`'s load, if the lift has loads.
    pub fn load_cell(&self, k: usize) -> Option<usize> {
        let index = 2 + self.points.len() + k;
        (index < self.cells.len()).then_some(index)
    }
}

/// How an aggregate over a parts list combines its items' values; the
/// parser writes it as a call whose function is [`AggregateOp::marker`],
/// which linking replaces with the expanded sum, `max(…)` or count.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum AggregateOp {
    /// `sum(list: expr)`
    Sum,
    /// `min(list: expr)`
    Min,
    /// `max(list: expr)`
    Max,
    /// `count(list)`
    Count,
}

impl AggregateOp {
    /// The function name of the placeholder call: not an identifier, so no
    /// function or cell has it.
    pub fn marker(self) -> &'static str {
        match self {
            AggregateOp::Sum => "sum:",
            AggregateOp::Min => "min:",
            AggregateOp::Max => "max:",
            AggregateOp::Count => "count:",
        }
    }

    /// The aggregate a placeholder call's function name stands for.
    pub fn of_marker(function: &str) -> Option<AggregateOp> {
        [
            AggregateOp::Sum,
            AggregateOp::Min,
            AggregateOp::Max,
            AggregateOp::Count,
        ]
        .into_iter()
        .find(|op| op.marker() == function)
    }
}

/// What a review mark says about the item it is attached to.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum ReviewKind {
    /// `question`: an open question the preparer must answer.
    Question,
    /// `change`: a change the checker requires.
    Change,
    /// `accepted`: the checker accepts the item.
    Accepted,
    /// `resolved`: an earlier question or change has been dealt with.
    Resolved,
}

impl ReviewKind {
    /// The keyword as written in a sheet.
    pub fn keyword(self) -> &'static str {
        match self {
            ReviewKind::Question => "question",
            ReviewKind::Change => "change",
            ReviewKind::Accepted => "accepted",
            ReviewKind::Resolved => "resolved",
        }
    }

    /// Whether the mark still needs the preparer's attention.
    pub fn is_open(self) -> bool {
        matches!(self, ReviewKind::Question | ReviewKind::Change)
    }
}

/// A review mark: `review change "Use the rating plate" by "K. Brandt" on 2026-12-02`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ReviewMark {
    /// Question, change, accepted or resolved.
    pub kind: ReviewKind,
    /// What the checker says, if anything.
    pub text: Option<Description>,
    /// Who wrote the mark.
    pub by: Description,
    /// When, as `YYYY-MM-DD`.
    pub on: Ident,
}

/// A sign-off: who checked the sheet, when, and the fingerprint of what they
/// checked, with a short digest of each cell so a later change can be named.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SignOff {
    /// The checker.
    pub by: Description,
    /// When, as `YYYY-MM-DD`.
    pub on: Ident,
    /// The sheet's fingerprint when it was signed (64 hex digits).
    pub fingerprint: Ident,
    /// `name:digest` for each cell when it was signed (8 hex digits each).
    pub cell_digests: Vec<(Ident, Ident)>,
}

/// `use "PATH" as ALIAS "description"`: the cells of the sheet at PATH
/// (relative to this sheet's folder) are read here as `ALIAS.NAME`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct UseSheet {
    /// The path as written, quotes included in its span.
    pub path: Description,
    /// The name its cells are read under.
    pub alias: Ident,
    /// What the other sheet is, if said.
    pub description: Option<Description>,
}

/// A name as written, with its place.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Ident {
    /// The name.
    pub text: CompactString,
    /// Where it is written.
    pub span: Span,
}

/// A quoted description or label, unescaped.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Description {
    /// The text between the quotes, with `\"` and `\\` resolved.
    pub text: String,
    /// Where it is written, quotes included.
    pub span: Span,
}

/// A cell definition: `name [unit] = expression "description"`.
#[derive(Clone, Debug, PartialEq)]
pub struct CellDef {
    /// The cell's name.
    pub name: Ident,
    /// The declared display unit, which also fixes the dimension.
    pub unit: Option<UnitExpr>,
    /// The formula.
    pub expr: Expr,
    /// The tolerance, if any: `± 3 %`, `± 0.05 m`, `.. 1900 kg`.
    pub tolerance: Option<Box<Tolerance>>,
    /// The optional description.
    pub description: Option<Description>,
}

/// How far a cell's value may stray from its formula.
#[derive(Clone, Debug, PartialEq)]
pub enum Tolerance {
    /// `± amount`: a quantity of the cell's dimension, or a percentage.
    PlusMinus {
        /// The amount as written.
        amount: Expr,
        /// The whole `± amount`.
        span: Span,
    },
    /// `lower .. upper`: the formula is the lower bound; the nominal value
    /// is the midpoint.
    Range {
        /// The upper bound.
        upper: Expr,
        /// The whole `.. upper`.
        span: Span,
    },
}

impl Tolerance {
    /// The expression it holds.
    pub fn expr(&self) -> &Expr {
        match self {
            Tolerance::PlusMinus { amount, .. } => amount,
            Tolerance::Range { upper, .. } => upper,
        }
    }

    /// The expression it holds, for linking.
    pub fn expr_mut(&mut self) -> &mut Expr {
        match self {
            Tolerance::PlusMinus { amount, .. } => amount,
            Tolerance::Range { upper, .. } => upper,
        }
    }
}

/// A load case: the cells it overrides, by name.
#[derive(Clone, Debug, PartialEq)]
pub struct CaseBlock {
    /// The case's name.
    pub name: Ident,
    /// Its optional label.
    pub label: Option<Description>,
    /// The overrides that parsed, in written order.
    pub overrides: Vec<Override>,
    /// Whether every line parsed and the block is closed by `end`.
    pub complete: bool,
    /// The `case …:` line.
    pub head: Span,
}

/// One override of a case: `m_load = 2500 kg`.
#[derive(Clone, Debug, PartialEq)]
pub struct Override {
    /// The cell it replaces (linking fills the target).
    pub cell: NameRef,
    /// Where the cell's name is written.
    pub cell_span: Span,
    /// The formula used in this case.
    pub expr: Expr,
    /// The tolerance used in this case, if any.
    pub tolerance: Option<Box<Tolerance>>,
    /// The whole line.
    pub span: Span,
}

/// A check: `check A op B "label"`.
#[derive(Clone, Debug, PartialEq)]
pub struct CheckDef {
    /// Left side.
    pub lhs: Expr,
    /// The comparison.
    pub comparison: Comparison,
    /// Right side.
    pub rhs: Expr,
    /// The optional label.
    pub label: Option<Description>,
}

/// A free body: `body crate: F_pull, W_crate, N_floor "crate on the floor"`.
#[derive(Clone, Debug, PartialEq)]
pub struct BodyDef {
    /// The body's name, also the name of its resultant.
    pub name: Ident,
    /// Where each force acting on it is written, as listed: a cell's name
    /// or an expression. The forces themselves are the terms of the
    /// resultant's sum ([`BodyDef::force_exprs`]), so they are linked and
    /// evaluated once, as part of it.
    pub forces: Vec<Span>,
    /// The optional description.
    pub description: Option<Description>,
    /// The resultant as a cell: `name = force + force + …`, built by the
    /// parser from the list so that linking and evaluation treat it as any
    /// other cell.
    pub resultant: CellDef,
}

impl BodyDef {
    /// The forces as expressions, in the order listed: the terms of the
    /// resultant `f₁ + f₂ + … + fₙ`, a left-leaning sum of exactly as many
    /// terms as forces (so a force that is itself a sum stays one force).
    pub fn force_exprs(&self) -> Vec<&Expr> {
        let mut terms = Vec::with_capacity(self.forces.len());
        let mut sum = &self.resultant.expr;
        for _ in 1..self.forces.len() {
            match &sum.kind {
                ExprKind::Binary {
                    op: BinaryOp::Add,
                    lhs,
                    rhs,
                } => {
                    terms.push(&**rhs);
                    sum = lhs;
                }
                _ => break,
            }
        }
        terms.push(sum);
        terms.reverse();
        terms
    }
}

/// A solve block: unknowns with units (and guesses), then equations.
#[derive(Clone, Debug, PartialEq)]
pub struct SolveBlock {
    /// The unknowns, in written order.
    pub unknowns: Vec<Unknown>,
    /// The equations that parsed, in written order.
    pub equations: Vec<Equation>,
    /// Whether every line parsed and the block is closed by `end`; when not,
    /// the errors are reported and the unknowns cannot be solved.
    pub complete: bool,
    /// The `solve …:` line.
    pub head: Span,
}

/// An unknown of a solve block: `T [N] ~ 500`.
#[derive(Clone, Debug, PartialEq)]
pub struct Unknown {
    /// Its name, a cell after the block.
    pub name: Ident,
    /// Its unit, which fixes its dimension.
    pub unit: UnitExpr,
    /// The starting guess (a plain number is taken in `unit`).
    pub guess: Option<Expr>,
}

/// An equation of a solve block: `lhs = rhs "label"`.
#[derive(Clone, Debug, PartialEq)]
pub struct Equation {
    /// Left side.
    pub lhs: Expr,
    /// Right side.
    pub rhs: Expr,
    /// The optional label.
    pub label: Option<Description>,
    /// The whole line.
    pub span: Span,
}

/// The comparison of a check.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Comparison {
    /// `<=`
    AtMost,
    /// `<`
    Below,
    /// `>=`
    AtLeast,
    /// `>`
    Above,
}

impl Comparison {
    /// The operator as written.
    pub fn symbol(self) -> &'static str {
        match self {
            Comparison::AtMost => "<=",
            Comparison::Below => "<",
            Comparison::AtLeast => ">=",
            Comparison::Above => ">",
        }
    }

    /// Whether equality fails it: `<` and `>` are strict, `<=` and `>=` are not.
    pub fn is_strict(self) -> bool {
        matches!(self, Comparison::Below | Comparison::Above)
    }
}

/// An expression with its span.
#[derive(Clone, Debug, PartialEq)]
pub struct Expr {
    /// What the expression is.
    pub kind: ExprKind,
    /// Where it is written.
    pub span: Span,
}

/// The kinds of expression.
#[derive(Clone, Debug, PartialEq)]
pub enum ExprKind {
    /// A plain number: `12`, `0.35`, `2.5e3`.
    Number(f64),
    /// A number with a unit: `1850 kg`, `0.35 m/s^2`.
    Quantity {
        /// The number as written.
        value: f64,
        /// Where the number is written.
        number_span: Span,
        /// The unit written after it.
        unit: UnitExpr,
    },
    /// One of a unit: `[kN]`, so `T / [kN]` is a plain number.
    UnitValue(UnitExpr),
    /// A reference to a cell or a built-in constant: `m_tot`, `g0`.
    Name(NameRef),
    /// Unary minus: `-x`.
    Negate(Box<Expr>),
    /// A binary operation: `a + b`, `m * g0`, `x ^ 2`.
    Binary {
        /// The operator.
        op: BinaryOp,
        /// Left operand.
        lhs: Box<Expr>,
        /// Right operand.
        rhs: Box<Expr>,
    },
    /// A formula that did not parse (its error is already reported); the
    /// cell keeps its name so that what uses it is blocked, not undefined.
    Invalid,
    /// A slope as rise:run, worth the angle atan2(rise, run): `3:4`.
    Slope {
        /// The rise.
        rise: f64,
        /// The run.
        run: f64,
    },
    /// One component of a vector: `F.x`, `v.y`, `r.z`.
    Component {
        /// The vector.
        vector: Box<Expr>,
        /// 0 for x, 1 for y, 2 for z.
        axis: usize,
    },
    /// A function call: `sqrt(x)`, `atan2(y, x)`.
    Call {
        /// The function's name.
        function: Ident,
        /// The arguments.
        args: Box<[Expr]>,
    },
    /// A value read from a simulate run: `v at stop`, `max of k * x`.
    RunQuery(Box<RunQuery>),
    /// A piecewise formula: `if v <= 1 m/s then 1.25 else 1.40`.
    Conditional(Box<Conditional>),
    /// A reading of a table: `lookup(chart.capacity, R_pick, L_boom, least)`.
    Lookup(Box<Lookup>),
}

/// A value read from a simulate run: `value at point`, or `max of value`
/// (the value at its own maximum).
#[derive(Clone, Debug, PartialEq)]
pub struct RunQuery {
    /// What is read: an expression of the run's states and time (and cells).
    pub value: Expr,
    /// Where in the run.
    pub point: RunPoint,
    /// The statement index of the simulate block whose states `value`
    /// names; filled in by linking, like [`NameRef::target`].
    pub block: Option<usize>,
}

/// A point of a simulate run.
#[derive(Clone, Debug, PartialEq)]
pub enum RunPoint {
    /// `at start`
    Start,
    /// `at end`: where the run ended (the stop, or the end time).
    End,
    /// `at stop`: where a stop condition ended the run.
    Stop,
    /// `at max of expr`, `at min of expr`; also `max of expr` on its own.
    Extremum {
        /// Largest (true) or smallest.
        maximum: bool,
        /// The expression whose extremum is sought.
        of: Expr,
    },
    /// `at 2 s`, `at t_check`: a time.
    Time(Expr),
    /// `at slow`: the first time a named event happened (linking turns a
    /// bare name that is one of the block's events into this).
    Event(Ident),
}

/// The time's name of a simulate block whose head did not parse: not an
/// identifier, so it never clashes with or resolves to a cell.
pub const UNNAMED_TIME: &str = "(time)";

/// A simulate block: states with their rates and starting values, stop
/// conditions, events and output choices, integrated from `start` to `end`.
#[derive(Clone, Debug, PartialEq)]
pub struct SimulateBlock {
    /// The time variable's name (`t`), a cell after the block.
    pub time: Ident,
    /// When the run starts.
    pub start: Expr,
    /// When it ends unless a stop condition ends it first.
    pub end: Expr,
    /// The states, in written order: `x' = v`.
    pub states: Vec<StateRate>,
    /// Starting values: `x(0) = 0 m`.
    pub initial_values: Vec<InitialValue>,
    /// Stop conditions and named events, in written order.
    pub events: Vec<EventDef>,
    /// Tolerances: `tolerance 1e-8`, `tolerance x 1 mm`.
    pub tolerances: Vec<ToleranceDef>,
    /// The table of the run: `table every 0.5 s: x, v`.
    pub tables: Vec<TableDef>,
    /// The plotted series: `plot x, v`.
    pub plots: Vec<PlotDef>,
    /// Whether every line parsed and the block is closed by `end`.
    pub complete: bool,
    /// The `simulate …:` line.
    pub head: Span,
}

/// A state and its rate of change: `v' = g0 - c / m * v * abs(v) "speed"`.
#[derive(Clone, Debug, PartialEq)]
pub struct StateRate {
    /// The state's name, a cell after the block (its final value).
    pub name: Ident,
    /// The rate of change, per unit time.
    pub rate: Expr,
    /// The optional description.
    pub description: Option<Description>,
    /// The whole line.
    pub span: Span,
}

/// A state's value at the start: `x(0) = 0 m "on the deck"`.
#[derive(Clone, Debug, PartialEq)]
pub struct InitialValue {
    /// The state's name.
    pub name: Ident,
    /// The value.
    pub value: Expr,
    /// The optional description.
    pub description: Option<Description>,
    /// The whole line.
    pub span: Span,
}

/// A condition watched over the run: `stop when x >= h` or
/// `event slow when v <= 1 m/s`.
#[derive(Clone, Debug, PartialEq)]
pub struct EventDef {
    /// The event's name (optional for a stop).
    pub name: Option<Ident>,
    /// Whether it ends the run.
    pub stops: bool,
    /// Left side of the condition.
    pub lhs: Expr,
    /// The comparison.
    pub comparison: Comparison,
    /// Right side.
    pub rhs: Expr,
    /// The optional label.
    pub label: Option<Description>,
    /// The whole line.
    pub span: Span,
}

/// An error tolerance: `tolerance 1e-8` (relative, every state) or
/// `tolerance x 1 mm` (absolute, one state).
#[derive(Clone, Debug, PartialEq)]
pub struct ToleranceDef {
    /// The state, for an absolute tolerance.
    pub state: Option<Ident>,
    /// The tolerance.
    pub value: Expr,
    /// The whole line.
    pub span: Span,
}

/// The run's table: `table every 0.5 s: x, v` or `table at 1 s, 2 s`.
#[derive(Clone, Debug, PartialEq)]
pub struct TableDef {
    /// Which rows.
    pub rows: TableRows,
    /// The columns after the time (every state when empty).
    pub columns: Vec<Expr>,
    /// The whole line.
    pub span: Span,
}

/// The rows of a run's table.
#[derive(Clone, Debug, PartialEq)]
pub enum TableRows {
    /// Ten equal intervals of the run.
    Default,
    /// `every 0.5 s` from the start.
    Every(Expr),
    /// `at 1 s, 2 s`.
    At(Vec<Expr>),
}

/// The plotted series: `plot x, v, k * x`.
#[derive(Clone, Debug, PartialEq)]
pub struct PlotDef {
    /// The series, each an expression of the states and time.
    pub series: Vec<Expr>,
    /// The whole line.
    pub span: Span,
}

/// A name used in a formula, with the slot that linking fills in.
#[derive(Clone, Debug, PartialEq)]
pub struct NameRef {
    /// The name as written.
    pub text: CompactString,
    /// What the name refers to; [`Target::Unresolved`] until the sheet is
    /// linked (`sheet::Sheet::link`), so evaluation indexes instead of hashing.
    pub target: Target,
}

/// What a name refers to, once linked.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Target {
    /// Not linked, or not defined.
    Unresolved,
    /// The cell with this id.
    Cell(usize),
    /// The built-in constant with this index.
    Constant(usize),
    /// A cell of a sheet this one uses: `gear.WLL` (see `sheet::Import`).
    Imported {
        /// Which `use` of the sheet, in file order.
        sheet: u32,
        /// Which cell of that sheet's exports.
        cell: u32,
    },
}

/// Binary operators.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum BinaryOp {
    /// `+`
    Add,
    /// `-`
    Subtract,
    /// `*`
    Multiply,
    /// `/`
    Divide,
    /// `^`
    Power,
}

impl BinaryOp {
    /// The operator as written.
    pub fn symbol(self) -> &'static str {
        match self {
            BinaryOp::Add => "+",
            BinaryOp::Subtract => "-",
            BinaryOp::Multiply => "*",
            BinaryOp::Divide => "/",
            BinaryOp::Power => "^",
        }
    }
}

/// A unit expression, flattened to a product of symbols with integer
/// exponents: `lbm*ft/(lbf*s^2)` is lbm¹·ft¹·lbf⁻¹·s⁻².
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct UnitExpr {
    /// The factors in written order.
    pub factors: Box<[UnitFactor]>,
    /// Where the whole unit expression is written.
    pub span: Span,
}

impl UnitExpr {
    /// Each factor as (symbol, exponent), the form the unit catalog reads.
    pub fn symbols(&self) -> impl Iterator<Item = (&str, i32)> {
        self.factors
            .iter()
            .map(|factor| (&*factor.symbol, factor.exponent))
    }
}

/// One unit symbol raised to an integer power.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct UnitFactor {
    /// The symbol as written: `kN`, `lbf`, `s`.
    pub symbol: Box<str>,
    /// The net exponent after division and grouping.
    pub exponent: i32,
    /// Where the symbol is written.
    pub span: Span,
}

impl Expr {
    /// The operands of this expression's outermost sums and differences
    /// (`F - m * a + N` → `F`, `m * a`, `N`; a negation is looked through).
    pub fn terms(&self) -> Vec<&Expr> {
        let mut terms = Vec::new();
        let mut stack = vec![self];
        while let Some(expr) = stack.pop() {
            match &expr.kind {
                ExprKind::Binary {
                    op: BinaryOp::Add | BinaryOp::Subtract,
                    lhs,
                    rhs,
                } => {
                    stack.push(rhs);
                    stack.push(lhs);
                }
                ExprKind::Negate(inner) => stack.push(inner),
                _ => terms.push(expr),
            }
        }
        terms
    }

    /// Calls `visit` on every name in this expression, in written order.
    pub fn walk_names_mut(&mut self, visit: &mut impl FnMut(&mut NameRef, Span)) {
        self.walk_mut(&mut |node| {
            let span = node.span;
            if let ExprKind::Name(name) = &mut node.kind {
                visit(name, span);
            }
        });
    }

    /// Calls `visit` on this expression and every sub-expression, parents
    /// first (what a visit changes is then walked as changed), mutably.
    pub fn walk_mut(&mut self, visit: &mut impl FnMut(&mut Expr)) {
        visit(self);
        match &mut self.kind {
            ExprKind::Negate(inner) | ExprKind::Component { vector: inner, .. } => {
                inner.walk_mut(visit)
            }
            ExprKind::Binary { lhs, rhs, .. } => {
                lhs.walk_mut(visit);
                rhs.walk_mut(visit);
            }
            ExprKind::Call { args, .. } => args.iter_mut().for_each(|arg| arg.walk_mut(visit)),
            ExprKind::Lookup(lookup) => lookup.keys.iter_mut().for_each(|key| key.walk_mut(visit)),
            ExprKind::RunQuery(query) => {
                query.value.walk_mut(visit);
                match &mut query.point {
                    RunPoint::Extremum { of: expr, .. } | RunPoint::Time(expr) => {
                        expr.walk_mut(visit)
                    }
                    RunPoint::Start | RunPoint::End | RunPoint::Stop | RunPoint::Event(_) => {}
                }
            }
            ExprKind::Conditional(conditional) => {
                conditional
                    .test
                    .for_each_side_mut(&mut |side| side.walk_mut(visit));
                conditional.then.walk_mut(visit);
                conditional.otherwise.walk_mut(visit);
            }
            ExprKind::Number(_)
            | ExprKind::Quantity { .. }
            | ExprKind::Slope { .. }
            | ExprKind::UnitValue(_)
            | ExprKind::Invalid
            | ExprKind::Name(_) => {}
        }
    }

    /// Calls `visit` on this expression and every sub-expression, parents first.
    pub fn walk<'a>(&'a self, visit: &mut impl FnMut(&'a Expr)) {
        visit(self);
        match &self.kind {
            ExprKind::Negate(inner) | ExprKind::Component { vector: inner, .. } => {
                inner.walk(visit)
            }
            ExprKind::Binary { lhs, rhs, .. } => {
                lhs.walk(visit);
                rhs.walk(visit);
            }
            ExprKind::Call { args, .. } => args.iter().for_each(|arg| arg.walk(visit)),
            ExprKind::Lookup(lookup) => lookup.keys.iter().for_each(|key| key.walk(visit)),
            ExprKind::RunQuery(query) => {
                query.value.walk(visit);
                match &query.point {
                    RunPoint::Extremum { of: expr, .. } | RunPoint::Time(expr) => expr.walk(visit),
                    RunPoint::Start | RunPoint::End | RunPoint::Stop | RunPoint::Event(_) => {}
                }
            }
            ExprKind::Conditional(conditional) => {
                conditional.test.for_each_side(&mut |side| side.walk(visit));
                conditional.then.walk(visit);
                conditional.otherwise.walk(visit);
            }
            ExprKind::Number(_)
            | ExprKind::Quantity { .. }
            | ExprKind::Slope { .. }
            | ExprKind::UnitValue(_)
            | ExprKind::Invalid
            | ExprKind::Name(_) => {}
        }
    }

    /// Calls `visit` on every run query in this expression (outer queries
    /// first), so linking can settle what their points name.
    pub fn walk_run_queries_mut(&mut self, visit: &mut impl FnMut(&mut RunQuery)) {
        self.walk_mut(&mut |node| {
            if let ExprKind::RunQuery(query) = &mut node.kind {
                visit(query);
            }
        });
    }
}

impl SimulateBlock {
    /// Every expression of the block, mutably (for linking).
    pub fn exprs_mut(&mut self) -> impl Iterator<Item = &mut Expr> {
        let SimulateBlock {
            start,
            end,
            states,
            initial_values,
            events,
            tolerances,
            tables,
            plots,
            ..
        } = self;
        [start, end]
            .into_iter()
            .chain(states.iter_mut().map(|state| &mut state.rate))
            .chain(initial_values.iter_mut().map(|initial| &mut initial.value))
            .chain(
                events
                    .iter_mut()
                    .flat_map(|event| [&mut event.lhs, &mut event.rhs]),
            )
            .chain(tolerances.iter_mut().map(|tolerance| &mut tolerance.value))
            .chain(tables.iter_mut().flat_map(|table| {
                let rows: Vec<&mut Expr> = match &mut table.rows {
                    TableRows::Default => Vec::new(),
                    TableRows::Every(every) => vec![every],
                    TableRows::At(times) => times.iter_mut().collect(),
                };
                rows.into_iter().chain(table.columns.iter_mut())
            }))
            .chain(plots.iter_mut().flat_map(|plot| plot.series.iter_mut()))
    }
}
