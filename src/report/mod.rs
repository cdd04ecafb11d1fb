//! The calc report: an evaluated sheet and its review state as a document a
//! checker can follow and sign, written as self-contained HTML or Markdown.
//!
//! [`document`] builds the format-free [`model::Document`]; [`html`] and
//! `markdown` write it, each with exactly one escaping function through
//! which every piece of sheet text passes; [`svg`] draws figures.

mod build;
pub mod html;
pub(crate) mod markdown;
pub mod math;
pub mod model;
mod parts;
pub mod svg;
mod sweep;
mod tables;
mod units_used;
mod used;

pub use build::{document, short_fingerprint, stale_summary};

use crate::eval::Evaluated;
use crate::review::Review;

/// The output formats.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Format {
    /// One self-contained HTML file (inline styles, no network), for print.
    Html,
    /// Markdown (GitHub-flavoured).
    Markdown,
}

/// The report of an evaluated sheet in `format`.
pub fn render(evaluated: &Evaluated, format: Format) -> String {
    let review = Review::of(evaluated);
    let document = document(evaluated, &review);
    match format {
        Format::Html => html::write(&document),
        Format::Markdown => markdown::write(&document),
    }
}
