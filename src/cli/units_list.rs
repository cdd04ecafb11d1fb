//! `heft units`: the catalog, one unit per line.

use std::fmt::Write as _;
use std::io;

use super::{EXIT_CLEAN, print};
use crate::units::{AMBIGUOUS, catalog};

/// Runs `heft units`.
pub fn run() -> io::Result<u8> {
    let mut text = String::new();
    let _ = writeln!(
        text,
        "{:<6} {:<28} {:<26} {:<24} definition",
        "symbol", "name", "dimension", "SI value"
    );
    for unit in catalog().units() {
        let _ = writeln!(
            text,
            "{:<6} {:<28} {:<26} {:<24} {}",
            unit.symbol,
            unit.name,
            unit.dimension.describe(),
            unit.factor.approximate_text(12),
            unit.definition
        );
    }
    let _ = writeln!(text, "\nrefused as ambiguous:");
    for ambiguity in AMBIGUOUS {
        let _ = writeln!(
            text,
            "  {:<8} write {}",
            ambiguity.symbol, ambiguity.choices
        );
    }
    print(&text, false)?;
    Ok(EXIT_CLEAN)
}
