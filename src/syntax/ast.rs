//! The syntax tree of a sheet: what the user wrote, with spans, before any
//! unit is looked up or any value computed.

use super::Span;

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
    /// A line that did not parse; its diagnostic says why.
    Invalid,
    /// A checker's review mark on the cell, check or heading above it:
    /// `review question "Where is 0.35 m/s^2 from?" by "K. Brandt" on 2026-12-02`.
    Review(Box<ReviewMark>),
    /// A checker's sign-off of the sheet as it stands:
    /// `signoff by "K. Brandt" on 2026-12-03 fingerprint 5e0c… cells m_skid:1a2b3c4d …`.
    SignOff(Box<SignOff>),
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

/// A name as written, with its place.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Ident {
    /// The name.
    pub text: String,
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
    /// The optional description.
    pub description: Option<Description>,
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
    /// A function call: `sqrt(x)`, `atan2(y, x)`.
    Call {
        /// The function's name.
        function: Ident,
        /// The arguments.
        args: Vec<Expr>,
    },
}

/// A name used in a formula, with the slot that linking fills in.
#[derive(Clone, Debug, PartialEq)]
pub struct NameRef {
    /// The name as written.
    pub text: Box<str>,
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
    pub factors: Vec<UnitFactor>,
    /// Where the whole unit expression is written.
    pub span: Span,
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
    /// Calls `visit` on every name in this expression, in written order.
    pub fn walk_names_mut(&mut self, visit: &mut impl FnMut(&mut NameRef, Span)) {
        match &mut self.kind {
            ExprKind::Name(name) => visit(name, self.span),
            ExprKind::Negate(inner) => inner.walk_names_mut(visit),
            ExprKind::Binary { lhs, rhs, .. } => {
                lhs.walk_names_mut(visit);
                rhs.walk_names_mut(visit);
            }
            ExprKind::Call { args, .. } => {
                args.iter_mut().for_each(|arg| arg.walk_names_mut(visit))
            }
            ExprKind::Number(_)
            | ExprKind::Quantity { .. }
            | ExprKind::UnitValue(_)
            | ExprKind::Invalid => {}
        }
    }

    /// Calls `visit` on this expression and every sub-expression, parents first.
    pub fn walk<'a>(&'a self, visit: &mut impl FnMut(&'a Expr)) {
        visit(self);
        match &self.kind {
            ExprKind::Negate(inner) => inner.walk(visit),
            ExprKind::Binary { lhs, rhs, .. } => {
                lhs.walk(visit);
                rhs.walk(visit);
            }
            ExprKind::Call { args, .. } => args.iter().for_each(|arg| arg.walk(visit)),
            ExprKind::Number(_)
            | ExprKind::Quantity { .. }
            | ExprKind::UnitValue(_)
            | ExprKind::Invalid
            | ExprKind::Name(_) => {}
        }
    }
}
