//! The units a formula is written with, for the report's appendix of units
//! and conversions: every unit of its quantities and of the values put in.

use std::collections::BTreeSet;

pub(super) fn collect_units(term: &crate::eval::formula::Term, out: &mut BTreeSet<String>) {
    use crate::eval::formula::Term;
    match term {
        Term::Quantity { unit, .. } | Term::UnitValue(unit) => {
            out.insert(unit.clone());
        }
        Term::Name {
            value: Some(value), ..
        } => {
            out.insert(value.unit.clone());
        }
        Term::Negate(inner) | Term::Group(inner) => collect_units(inner, out),
        Term::Binary { lhs, rhs, .. } => {
            collect_units(lhs, out);
            collect_units(rhs, out);
        }
        Term::Call { args, .. } => args.iter().for_each(|arg| collect_units(arg, out)),
        Term::Conditional {
            test,
            then,
            otherwise,
            ..
        } => {
            test_units(test, out);
            collect_units(then, out);
            collect_units(otherwise, out);
        }
        Term::Number(_) | Term::Name { value: None, .. } | Term::Invalid(_) => {}
    }
}

fn test_units(test: &crate::eval::formula::TestTerm, out: &mut BTreeSet<String>) {
    use crate::eval::formula::TestTerm;
    match test {
        TestTerm::Compare { lhs, rhs, .. } => {
            collect_units(lhs, out);
            collect_units(rhs, out);
        }
        TestTerm::All(parts) | TestTerm::Any(parts) => {
            parts.iter().for_each(|part| test_units(part, out))
        }
        TestTerm::Not(inner) => test_units(inner, out),
    }
}
