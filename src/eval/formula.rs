//! Formulas as a checker reads them: the expression tree of a cell or check
//! with every name paired with the value it had, so a presentation can show
//! the formula (`m_tot * (g0 + a_up)`) and the same formula with the numbers
//! put in (`1892 kg * (9.80665 m/s^2 + 0.35 m/s^2)`). Parentheses are placed
//! from operator precedence, so the text reads the way heft evaluated it.

use super::{CellStatus, Evaluated};
use crate::sheet::CellId;
use crate::syntax::ast::{BinaryOp, Expr, ExprKind, Relation, Target, Test, TestKind};
use crate::units::{self, format_significant};

/// Fewest significant digits a built-in constant is shown with
/// (so `g0` shows all of 9.80665).
const CONSTANT_SIG_FIGS: u32 = 6;

/// One node of a formula, ready to show.
#[derive(Clone, Debug, PartialEq)]
pub enum Term {
    /// A plain number as written: `12`, `2.5e3`.
    Number(String),
    /// A number with a unit, as written: `1850 kg`, `0.35 m/s^2`.
    Quantity {
        /// The number as written.
        number: String,
        /// The unit in heft syntax, as written.
        unit: String,
    },
    /// One of a unit: `[kN]`.
    UnitValue(String),
    /// A cell or a built-in constant, with the value it had (if it had one).
    Name {
        /// The name as written.
        name: String,
        /// Its value as shown in its display unit.
        value: Option<ShownValue>,
    },
    /// Unary minus: `-x`.
    Negate(Box<Term>),
    /// A binary operation.
    Binary {
        /// The operator.
        op: BinaryOp,
        /// Left operand.
        lhs: Box<Term>,
        /// Right operand.
        rhs: Box<Term>,
    },
    /// Parentheses the precedence of the operators requires: `(a + b)`.
    Group(Box<Term>),
    /// A function call: `sqrt(x)`.
    Call {
        /// The function's name.
        function: String,
        /// The arguments.
        args: Vec<Term>,
    },
    /// A formula that did not parse, as written.
    Invalid(String),
    /// A piecewise formula, with whether its test held (`None` if that
    /// could not be told: a value it compares failed).
    Conditional {
        /// The test.
        test: Box<TestTerm>,
        /// The value where it holds.
        then: Box<Term>,
        /// The value where it does not.
        otherwise: Box<Term>,
        /// Whether the test held at the sheet's values.
        holds: Option<bool>,
    },
}

/// The test of a piecewise formula, ready to show.
#[derive(Clone, Debug, PartialEq)]
pub enum TestTerm {
    /// Two quantities compared.
    Compare {
        /// The comparison.
        relation: Relation,
        /// Left side.
        lhs: Term,
        /// Right side.
        rhs: Term,
    },
    /// Every part holds.
    All(Vec<TestTerm>),
    /// Some part holds.
    Any(Vec<TestTerm>),
    /// The part does not hold.
    Not(Box<TestTerm>),
}

/// A value as a sheet shows it: rounded number and display unit.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct ShownValue {
    /// The number, rounded to the sheet's significant figures.
    pub number: String,
    /// The unit in heft syntax (`kN`, `m/s^2`), empty for a plain number.
    pub unit: String,
}

impl Evaluated {
    /// The formula of cell `id`, with the value of every name it uses.
    pub fn formula_term(&self, id: CellId) -> Term {
        match self.sheet.cell(id).expr {
            Some(expr) => self.term(expr),
            None => Term::Invalid("(solved)".to_string()),
        }
    }

    /// Both sides of check `index`, with the value of every name they use.
    pub fn check_terms(&self, index: usize) -> (Term, Term) {
        let check = self.sheet.check(index);
        (self.term(&check.lhs), self.term(&check.rhs))
    }

    /// The value of cell `id` as shown, if it evaluated.
    pub fn shown_value(&self, id: CellId) -> Option<ShownValue> {
        let value = self.values[id].filter(|_| self.statuses[id] == CellStatus::Ok)?;
        let display = &self.displays[id];
        // An input reads as written; a computed result with all its figures.
        let sig_figs = self.sheet.header.sig_figs;
        let is_input = self.inputs[id];
        let number = |si: f64| {
            if is_input {
                format_significant(display.value_of(si), sig_figs)
            } else {
                crate::units::format_figures(display.value_of(si), sig_figs)
            }
        };
        Some(ShownValue {
            number: match value {
                crate::units::Value::Scalar(q) => number(q.si),
                crate::units::Value::Vector(v) => {
                    format!(
                        "({})",
                        v.components()
                            .iter()
                            .map(|&c| number(c))
                            .collect::<Vec<_>>()
                            .join(", ")
                    )
                }
            },
            unit: display.text.to_string(),
        })
    }

    fn term(&self, expr: &Expr) -> Term {
        let text = |span: crate::base::Span| span.text(&self.source).to_string();
        match &expr.kind {
            // Slopes and vector components read best as written.
            ExprKind::Number(_) | ExprKind::Slope { .. } | ExprKind::Component { .. } => {
                Term::Number(text(expr.span))
            }
            ExprKind::Quantity {
                number_span, unit, ..
            } => Term::Quantity {
                number: text(*number_span),
                unit: text(unit.span),
            },
            ExprKind::UnitValue(unit) => Term::UnitValue(text(unit.span)),
            ExprKind::Name(name) => Term::Name {
                name: name.text.to_string(),
                value: match name.target {
                    Target::Cell(id) => self.shown_value(id),
                    Target::Constant(index) => units::CONSTANTS.get(index).map(|constant| {
                        let display = units::pick_unit(
                            constant.value.dimension,
                            constant.value.si,
                            crate::units::DisplaySystem::Si,
                        );
                        ShownValue {
                            number: format_significant(
                                display.value_of(constant.value.si),
                                self.sheet.header.sig_figs.max(CONSTANT_SIG_FIGS),
                            ),
                            unit: display.text.to_string(),
                        }
                    }),
                    Target::Imported { sheet, cell } => self
                        .sheet
                        .imports
                        .get(sheet as usize)
                        .and_then(|import| import.sheet())
                        .and_then(|used| used.exports.get(cell as usize))
                        .and_then(|export| export.shown.clone())
                        .map(|(number, unit)| ShownValue { number, unit }),
                    Target::Unresolved => None,
                },
            },
            ExprKind::Negate(inner) => {
                let operand = self.term(inner);
                Term::Negate(Box::new(parenthesized_if(
                    operand,
                    precedence(&inner.kind) < NEGATE,
                )))
            }
            ExprKind::Binary { op, lhs, rhs } => {
                let own = binary_precedence(*op);
                let (left, right) = (precedence(&lhs.kind), precedence(&rhs.kind));
                // `^` groups to the right, the others to the left.
                let left_needs = left < own || (*op == BinaryOp::Power && left == own);
                let right_needs = right < own || (*op != BinaryOp::Power && right == own);
                Term::Binary {
                    op: *op,
                    lhs: Box::new(parenthesized_if(self.term(lhs), left_needs)),
                    rhs: Box::new(parenthesized_if(self.term(rhs), right_needs)),
                }
            }
            ExprKind::Call { function, args } => Term::Call {
                function: function.text.to_string(),
                args: args.iter().map(|arg| self.term(arg)).collect(),
            },
            ExprKind::Invalid => Term::Invalid(text(expr.span)),
            // A value read from a run reads best as written (`v at stop`).
            ExprKind::RunQuery(_) => Term::Number(text(expr.span)),
            ExprKind::Conditional(conditional) => Term::Conditional {
                test: Box::new(self.test_term(&conditional.test)),
                then: Box::new(self.term(&conditional.then)),
                otherwise: Box::new(self.term(&conditional.otherwise)),
                holds: self.test_held(&conditional.test),
            },
            // `lookup(chart.capacity, 13.5 m, 30 m, least)`: the keys take
            // their values, the column and the reading read as written.
            ExprKind::Lookup(lookup) => Term::Call {
                function: "lookup".to_string(),
                args: std::iter::once(Term::Number(format!(
                    "{}.{}",
                    lookup.table.text, lookup.column.text
                )))
                .chain(lookup.keys.iter().map(|key| self.term(key)))
                .chain(
                    lookup
                        .target
                        .map(|target| Term::Number(target.reading.word().to_string())),
                )
                .collect(),
            },
        }
    }

    fn test_term(&self, test: &Test) -> TestTerm {
        match &test.kind {
            TestKind::Compare { relation, lhs, rhs } => TestTerm::Compare {
                relation: *relation,
                lhs: self.term(lhs),
                rhs: self.term(rhs),
            },
            TestKind::All(parts) => {
                TestTerm::All(parts.iter().map(|p| self.test_term(p)).collect())
            }
            TestKind::Any(parts) => {
                TestTerm::Any(parts.iter().map(|p| self.test_term(p)).collect())
            }
            TestKind::Not(inner) => TestTerm::Not(Box::new(self.test_term(inner))),
        }
    }

    /// Whether a test held at the sheet's values, asked of an evaluator
    /// that carries them (a copy of the values: a test is rare, and this
    /// runs only for the formulas that have one).
    fn test_held(&self, test: &Test) -> Option<bool> {
        let evaluator = super::Evaluator::resume(
            &self.sheet,
            &self.source,
            self.values.clone(),
            self.statuses.clone(),
            self.spreads.clone(),
        );
        evaluator.test_holds(test).ok()
    }
}

const NEGATE: u8 = 3;
const ATOM: u8 = 5;

/// How tightly an expression binds, as the Pratt parser in `syntax` reads it.
fn precedence(kind: &ExprKind) -> u8 {
    match kind {
        ExprKind::Binary { op, .. } => binary_precedence(*op),
        ExprKind::Negate(_) => NEGATE,
        // `else` reaches as far right as the formula goes: always bracketed
        // as an operand.
        ExprKind::Conditional(_) => 0,
        _ => ATOM,
    }
}

fn binary_precedence(op: BinaryOp) -> u8 {
    match op {
        BinaryOp::Add | BinaryOp::Subtract => 1,
        BinaryOp::Multiply | BinaryOp::Divide => 2,
        BinaryOp::Power => 4,
    }
}

fn parenthesized_if(term: Term, needed: bool) -> Term {
    if needed {
        Term::Group(Box::new(term))
    } else {
        term
    }
}
