//! The audit: lints that catch the mistakes dimensional checking misses
//! (a weight named as a mass, a hand-typed 32.174 that converts twice, two
//! values of gravity in one sheet), and the conversion audit a checker signs:
//! every conversion with its exact factor and source.
//!
//! Everything here reads an [`Evaluated`] sheet (its linked syntax tree and
//! its values) and produces data: lint findings as [`Diagnostic`]s and the
//! [`ConversionAudit`]. Presentation lives in `cli`.
//!
//! The lints are kept out of [`crate::blocks::evaluate_source`] on purpose:
//! evaluation reports what is wrong for certain; lints report what is
//! probably wrong, from names, descriptions and familiar numbers.
//! [`crate::pipeline::run`] is the whole pipeline with the lints added and every
//! fix verified ([`verify_fixes`]), which every command uses.

mod angles;
mod context;
mod conversions;
mod fixes;
mod gravity;
mod hand_factors;
mod lints;
mod rewrite;
mod roles;

pub use conversions::{
    ConversionAudit, ConversionEntry, ConversionKind, Exactness, SystemUse, conversion_audit,
};
pub use fixes::{MAX_CHECKED_FIXES, MIN_CHECKED_FIXES, checked_fixes, verify_fixes};
pub use gravity::{GravityKind, GravityUse, Typed};
pub use hand_factors::{Family, HandFactor, hand_factors};

use crate::base::Diagnostic;
use crate::eval::Evaluated;

/// Every lint finding for an evaluated sheet, sorted by position.
pub fn lint(evaluated: &Evaluated) -> Vec<Diagnostic> {
    let context = context::Context::new(evaluated);
    let mut findings = lints::run(&context);
    findings.sort_by_key(|diagnostic| (diagnostic.span.start(), diagnostic.code));
    findings
}

/// Adds the lint findings to an evaluated sheet's diagnostics, keeping them
/// sorted by position.
pub fn add_lints(evaluated: &mut Evaluated) {
    let findings = lint(evaluated);
    if findings.is_empty() {
        return;
    }
    evaluated.diagnostics.extend(findings);
    evaluated
        .diagnostics
        .sort_by_key(|diagnostic| (diagnostic.span.start(), diagnostic.code));
}

/// A relative difference in percent with its sign: `+0.034 %`, `-0.00015 %`.
pub fn format_relative(relative: f64) -> String {
    let sign = if relative > 0.0 { "+" } else { "" };
    format!(
        "{sign}{} %",
        crate::units::format_significant(relative * 100.0, 2)
    )
}
