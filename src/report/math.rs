//! Formulas, names and units as readable math: `T_up` → T with subscript
//! "up", `m/s^2` → m/s², `*` → ·, `<=` → ≤, `sqrt(x)` → √(x).

use super::model::{Piece, Rich};
use crate::eval::Relation;
use crate::eval::formula::{ShownValue, Term, TestTerm};
use crate::eval::{BinaryOp, Comparison};

/// A name with the part after its first `_` as a subscript; further `_`
/// separate subscripts with commas (`F_pin_max` → F with "pin,max").
pub fn name(text: &str) -> Rich {
    match text.split_once('_') {
        Some((base, subscript)) if !base.is_empty() && !subscript.is_empty() => Rich(vec![
            Piece::Text(base.to_string()),
            Piece::Sub(subscript.replace('_', ",")),
        ]),
        _ => Rich::text(text),
    }
}

/// A unit in heft syntax as people write it: `kg*m/s^2` → kg·m/s².
pub fn unit(text: &str) -> String {
    let mut out = String::with_capacity(text.len() + 4);
    let mut in_exponent = false;
    for c in text.chars() {
        if c == '^' {
            in_exponent = true;
            continue;
        }
        if in_exponent {
            if let Some(superscript) = superscript(c) {
                out.push(superscript);
                continue;
            }
            in_exponent = false;
        }
        out.push(if c == '*' { '·' } else { c });
    }
    out
}

fn superscript(c: char) -> Option<char> {
    Some(match c {
        '0' => '⁰',
        '1' => '¹',
        '2' => '²',
        '3' => '³',
        '4' => '⁴',
        '5' => '⁵',
        '6' => '⁶',
        '7' => '⁷',
        '8' => '⁸',
        '9' => '⁹',
        '-' => '⁻',
        _ => return None,
    })
}

/// A number with its unit: `19.22 kN`, or just the number.
pub fn quantity(number: &str, unit_text: &str) -> String {
    if unit_text.is_empty() {
        number.to_string()
    } else {
        format!("{number} {}", unit(unit_text))
    }
}

/// A shown value as text.
pub fn shown(value: &ShownValue) -> String {
    quantity(&value.number, &value.unit)
}

/// The comparison sign as people write it.
pub fn comparison(comparison: Comparison) -> &'static str {
    match comparison {
        Comparison::AtMost => "≤",
        Comparison::Below => "<",
        Comparison::AtLeast => "≥",
        Comparison::Above => ">",
    }
}

/// How names appear in a formula.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Names {
    /// By name: `m_tot * (g0 + a_up)`.
    AsWritten,
    /// By value: `1892 kg * (9.80665 m/s^2 + 0.35 m/s^2)`.
    Substituted,
}

/// A formula as readable math, names or values.
pub fn formula(term: &Term, names: Names) -> Rich {
    let mut out = Rich::default();
    write_term(term, names, &mut out);
    out
}

/// Writes `term`; a value put in for a name gets brackets where it would
/// otherwise misread: a negative value, or a value with a unit under `^`.
fn write_term(term: &Term, names: Names, out: &mut Rich) {
    write_operand(term, names, false, out);
}

fn write_operand(term: &Term, names: Names, base_of_power: bool, out: &mut Rich) {
    match term {
        Term::Number(number) => out.push_text(number),
        Term::Quantity { number, unit } if base_of_power => {
            out.push_text(&format!("({})", quantity(number, unit)));
        }
        Term::Quantity { number, unit } => out.push_text(&quantity(number, unit)),
        Term::UnitValue(unit_text) => out.push_text(&format!("[{}]", unit(unit_text))),
        Term::Name { name: text, value } => match (names, value) {
            (Names::Substituted, Some(value)) => {
                let text = shown(value);
                let bracketed =
                    value.number.starts_with('-') || (base_of_power && !value.unit.is_empty());
                if bracketed {
                    out.push_text(&format!("({text})"));
                } else {
                    out.push_text(&text);
                }
            }
            _ => out.extend(name(text)),
        },
        Term::Negate(inner) => {
            out.push_text("−");
            write_term(inner, names, out);
        }
        Term::Binary {
            op: BinaryOp::Power,
            lhs,
            rhs,
        } => {
            write_operand(lhs, names, true, out);
            out.push(Piece::Sup(formula(rhs, names).plain()));
        }
        Term::Binary { op, lhs, rhs } => {
            write_term(lhs, names, out);
            out.push_text(match op {
                BinaryOp::Add => " + ",
                BinaryOp::Subtract => " − ",
                BinaryOp::Multiply => " · ",
                BinaryOp::Divide => " / ",
                BinaryOp::Power => "^",
            });
            write_term(rhs, names, out);
        }
        Term::Group(inner) => {
            out.push_text("(");
            write_term(inner, names, out);
            out.push_text(")");
        }
        Term::Call { function, args } => {
            out.push_text(if function == "sqrt" { "√" } else { function });
            out.push_text("(");
            for (index, arg) in args.iter().enumerate() {
                if index > 0 {
                    out.push_text(", ");
                }
                write_term(arg, names, out);
            }
            out.push_text(")");
        }
        Term::Invalid(text) => out.push(Piece::Code(text.clone())),
        Term::Conditional {
            test,
            then,
            otherwise,
            holds,
        } => write_conditional((test, then, otherwise, *holds), names, out),
    }
}

/// `if v ≤ 0.25 m/s then 1.10 else 1.40` as written; with values put in,
/// the test's values and the branch taken: `0.5 m/s ≤ 0.25 m/s does not
/// hold, so 1.40` (a chain reads on: `…; 0.5 m/s ≤ 1 m/s holds, so 1.25`).
fn write_conditional(
    (test, then, otherwise, holds): (&TestTerm, &Term, &Term, Option<bool>),
    names: Names,
    out: &mut Rich,
) {
    match (names, holds) {
        (Names::Substituted, Some(holds)) => {
            write_test(test, names, out);
            if holds {
                out.push_text(" holds, so ");
                write_term(then, names, out);
            } else {
                out.push_text(" does not hold");
                out.push_text(if matches!(otherwise, Term::Conditional { .. }) {
                    "; "
                } else {
                    ", so "
                });
                write_term(otherwise, names, out);
            }
        }
        _ => {
            out.push_text("if ");
            write_test(test, names, out);
            out.push_text(" then ");
            write_term(then, names, out);
            out.push_text(" else ");
            write_term(otherwise, names, out);
        }
    }
}

fn write_test(test: &TestTerm, names: Names, out: &mut Rich) {
    let bracketed = |part: &TestTerm, needed: bool, out: &mut Rich| {
        if needed {
            out.push_text("(");
        }
        write_test(part, names, out);
        if needed {
            out.push_text(")");
        }
    };
    match test {
        TestTerm::Compare { relation, lhs, rhs } => {
            write_term(lhs, names, out);
            out.push_text(&format!(" {} ", relation_sign(*relation)));
            write_term(rhs, names, out);
        }
        TestTerm::All(parts) | TestTerm::Any(parts) => {
            let all = matches!(test, TestTerm::All(_));
            for (index, part) in parts.iter().enumerate() {
                if index > 0 {
                    out.push_text(if all { " and " } else { " or " });
                }
                // `and` binds tighter than `or`.
                bracketed(part, all && matches!(part, TestTerm::Any(_)), out);
            }
        }
        TestTerm::Not(inner) => {
            out.push_text("not ");
            bracketed(inner, !matches!(**inner, TestTerm::Compare { .. }), out);
        }
    }
}

/// A test's comparison sign as people write it.
pub fn relation_sign(relation: Relation) -> &'static str {
    match relation {
        Relation::AtMost => "≤",
        Relation::Below => "<",
        Relation::AtLeast => "≥",
        Relation::Above => ">",
        Relation::Equal => "=",
        Relation::NotEqual => "≠",
    }
}

/// Whether a formula uses any name with a value (so substituting shows more
/// than the formula itself).
pub fn has_values(term: &Term) -> bool {
    match term {
        Term::Name { value, .. } => value.is_some(),
        Term::Negate(inner) | Term::Group(inner) => has_values(inner),
        Term::Binary { lhs, rhs, .. } => has_values(lhs) || has_values(rhs),
        Term::Call { args, .. } => args.iter().any(has_values),
        Term::Conditional { .. } => true,
        Term::Number(_) | Term::Quantity { .. } | Term::UnitValue(_) | Term::Invalid(_) => false,
    }
}
