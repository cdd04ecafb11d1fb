//! Pairs → AST for piecewise formulas (`Rule::conditional`) and their tests.

use pest::iterators::Pair;

use super::{Builder, Built};
use crate::syntax::ast::{Conditional, ExprKind, Relation, Test, TestKind};
use crate::syntax::parser::Rule;

impl Builder {
    /// `if TEST then VALUE else OTHERWISE`.
    pub(super) fn conditional(&self, pair: Pair<'_, Rule>) -> Built<ExprKind> {
        let mut test = None;
        let mut branches = Vec::with_capacity(2);
        for part in pair.into_inner() {
            match part.as_rule() {
                Rule::keyword_if | Rule::keyword_then | Rule::keyword_else => {}
                Rule::test_any => test = Some(self.test(part)?),
                Rule::expr => branches.push(self.expr(part)?),
                rule => unreachable!("expected a part of a conditional, found {rule:?}"),
            }
        }
        let otherwise = branches.pop();
        let then = branches.pop();
        match (test, then, otherwise) {
            (Some(test), Some(then), Some(otherwise)) => {
                Ok(ExprKind::Conditional(Box::new(Conditional {
                    test,
                    then,
                    otherwise,
                })))
            }
            _ => unreachable!("expected a test and two branches"),
        }
    }

    /// A test: `test_any`, `test_all`, `test_negated` or `test_compare`; a
    /// list of one part is that part.
    fn test(&self, pair: Pair<'_, Rule>) -> Built<Test> {
        let span = self.span(&pair);
        let rule = pair.as_rule();
        let kind = match rule {
            Rule::test_any | Rule::test_all => {
                let mut parts = pair
                    .into_inner()
                    .filter(|part| !matches!(part.as_rule(), Rule::keyword_and | Rule::keyword_or))
                    .map(|part| self.test(part))
                    .collect::<Built<Vec<_>>>()?;
                if parts.len() == 1 {
                    return Ok(parts.remove(0));
                }
                if rule == Rule::test_any {
                    TestKind::Any(parts.into_boxed_slice())
                } else {
                    TestKind::All(parts.into_boxed_slice())
                }
            }
            Rule::test_negated => {
                let inner = pair
                    .into_inner()
                    .find(|part| part.as_rule() != Rule::keyword_not)
                    .unwrap_or_else(|| unreachable!("expected a test after `not`"));
                TestKind::Not(Box::new(self.test(inner)?))
            }
            Rule::test_compare => {
                let mut sides = Vec::with_capacity(2);
                let mut relation = None;
                for part in pair.into_inner() {
                    match part.as_rule() {
                        Rule::expr => sides.push(self.expr(part)?),
                        Rule::at_most => relation = Some(Relation::AtMost),
                        Rule::below => relation = Some(Relation::Below),
                        Rule::at_least => relation = Some(Relation::AtLeast),
                        Rule::above => relation = Some(Relation::Above),
                        Rule::equal_to => relation = Some(Relation::Equal),
                        Rule::not_equal_to => relation = Some(Relation::NotEqual),
                        rule => unreachable!("expected a part of a comparison, found {rule:?}"),
                    }
                }
                let rhs = sides.pop();
                let lhs = sides.pop();
                match (lhs, relation, rhs) {
                    (Some(lhs), Some(relation), Some(rhs)) => {
                        TestKind::Compare { relation, lhs, rhs }
                    }
                    _ => unreachable!("expected a comparison with two sides"),
                }
            }
            rule => unreachable!("expected a test, found {rule:?}"),
        };
        Ok(Test { kind, span })
    }
}
