//! heft: unit-checked calculation sheets for Newton's-second-law work.
//!
//! The modules, in pipeline order: [`base`] (spans, line numbers,
//! diagnostics as data, the one renderer, the one door to a terminal) and
//! [`numeric`] (number types and the integrator, plain `f64`s) import
//! nothing of the crate; [`units`] holds dimensions, quantities and the
//! exact catalog; [`syntax`] turns text into statements; [`sheet`] reads
//! the header, links names and orders the cells by their dependencies;
//! [`eval`] computes every cell and check with its dimension checked at
//! each operation, and holds the evaluated model's types; [`blocks`] holds
//! the block kinds (solve, simulate, and tolerances with load cases) and
//! the evaluation of a whole sheet, node by node; [`audit`] reads the
//! evaluated sheet for the mistakes dimensions miss; [`pipeline`] is the
//! one function every command runs; [`live`] is the notebook's sheet,
//! edited line by line and recomputed incrementally. [`review`] and
//! [`diff`] read the evaluated model; [`present`] words the facts every
//! output shows once; [`plot`], [`report`], [`cli`] and [`tui`] (the
//! terminal notebook that edits a sheet and recomputes it live) present it.
//!
//! A sheet's results as typed quantities, from a program:
//!
//! ```
//! use uom::si::f64::{Force, Mass};
//! use uom::si::force::kilonewton;
//!
//! let sheet = heftsheet::run("m_load = 1850 kg\nW = m_load * g0\n");
//! let weight: Force = sheet.quantity("W").expect("W is a computed force");
//! // W = m g0 = 1850 kg × 9.80665 m/s² (CGPM standard gravity) = 18.1423 kN.
//! assert!((weight.get::<kilonewton>() - 18.142_302_5).abs() < 1e-9);
//! // A force is not a mass: the dimension is checked.
//! assert!(sheet.quantity::<Mass>("W").is_none());
//! ```

// The entry points, for library users: the pipeline every command runs,
// evaluation alone, the evaluated model, and the notebook's live sheet.
pub use base::Diagnostic;
pub use blocks::{evaluate, evaluate_source};
pub use eval::Evaluated;
pub use live::LiveSheet;
pub use pipeline::{run, run_bytes, run_with_files};

pub mod allocator;
pub mod audit;
pub mod base;
pub mod blocks;
pub mod cli;
pub mod diff;
pub mod eval;
pub mod live;
pub mod numeric;
pub mod pipeline;
pub mod plot;
pub mod present;
pub mod report;
pub mod review;
pub mod sheet;
pub mod syntax;
pub mod tui;
pub mod units;

/// The caution every output for people carries: heft supports the
/// engineer's judgment and the independent check, never replaces them.
pub const CAUTION: &str = "Caution: lifting and fixture calculations can hurt people when they are wrong. \
These results support, and never replace, a competent engineer's judgment and an independent check. \
Follow the codes and standards that govern the equipment (for example the ASME B30 series, ASME BTH-1, \
or the local equivalent), the manufacturers' ratings, and licensed engineering practice.";

/// Reads a sheet file's bytes as text: invalid UTF-8 is replaced (so the
/// rest of the sheet is still checked) and reported at its first byte.
pub fn decode_source(bytes: &[u8]) -> (String, Option<base::Diagnostic>) {
    match std::str::from_utf8(bytes) {
        Ok(text) => (text.to_string(), None),
        Err(error) => {
            let at = error.valid_up_to();
            let text = String::from_utf8_lossy(bytes).into_owned();
            let diagnostic = base::Diagnostic::error(
                base::Code::EncodingError,
                base::Span::new(at, at + 1),
                format!(
                    "the file is not valid UTF-8 from byte {at} on; those bytes are shown as �"
                ),
            )
            .with_help("save the sheet as UTF-8 text");
            (text, Some(diagnostic))
        }
    }
}
