//! heft: unit-checked calculation sheets for Newton's-second-law work.
//!
//! The pipeline is parse → AST → dependency graph → evaluate → present:
//! [`syntax`] turns text into statements, [`sheet`] reads the header and
//! orders the cells by their dependencies, [`eval`] computes every cell with
//! its dimension checked at each operation (values in [`units`]), and
//! [`cli`] presents the result. [`diag`] carries every finding as data.
//! [`audit`] reads the evaluated sheet for the mistakes dimensions miss
//! (lints) and lists every conversion for the checker.
//! [`pipeline`] is the one function every command runs; [`cli`] presents
//! the result; [`tui`] is the terminal notebook that edits a sheet and
//! recomputes it live. [`diag`] carries every finding as data.

pub mod allocator;
pub mod audit;
pub mod cases;
pub mod cli;
pub mod diag;
pub mod diff;
pub mod eval;
pub mod pipeline;
pub mod plot;
pub mod report;
pub mod review;
pub mod sheet;
pub mod simulate;
pub mod syntax;
pub mod tui;
pub mod units;
pub mod visible;

/// The caution every output for people carries: heft supports the
/// engineer's judgment and the independent check, never replaces them.
pub const CAUTION: &str = "Caution: lifting and fixture calculations can hurt people when they are wrong. \
These results support, and never replace, a competent engineer's judgment and an independent check. \
Follow the codes and standards that govern the equipment (for example the ASME B30 series, ASME BTH-1, \
or the local equivalent), the manufacturers' ratings, and licensed engineering practice.";

/// Reads a sheet file's bytes as text: invalid UTF-8 is replaced (so the
/// rest of the sheet is still checked) and reported at its first byte.
pub fn decode_source(bytes: &[u8]) -> (String, Option<diag::Diagnostic>) {
    match std::str::from_utf8(bytes) {
        Ok(text) => (text.to_string(), None),
        Err(error) => {
            let at = error.valid_up_to();
            let text = String::from_utf8_lossy(bytes).into_owned();
            let diagnostic = diag::Diagnostic::error(
                diag::Code::EncodingError,
                syntax::Span::new(at, at + 1),
                format!(
                    "the file is not valid UTF-8 from byte {at} on; those bytes are shown as �"
                ),
            )
            .with_help("save the sheet as UTF-8 text");
            (text, Some(diagnostic))
        }
    }
}
