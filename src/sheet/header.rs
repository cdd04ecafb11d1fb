//! The optional `+++` TOML header: title block and display settings.

use serde::Deserialize;
use toml::Spanned;

use crate::base::Span;
use crate::base::{Code, Diagnostic};
use crate::syntax::HeaderBlock;
use crate::units::DisplaySystem;

/// Default number of significant digits shown.
pub const DEFAULT_SIG_FIGS: u32 = 4;

/// The sheet's header, with defaults for keys that are absent.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct Header {
    /// What the calculation is.
    pub title: Option<String>,
    /// The job or project it belongs to.
    pub project: Option<String>,
    /// The revision mark.
    pub revision: Option<String>,
    /// The date, as written.
    pub date: Option<String>,
    /// Who prepared the sheet.
    pub prepared_by: Option<String>,
    /// Who checked it.
    pub checked_by: Option<String>,
    /// The unit system for cells that declare no unit.
    pub display: DisplaySystem,
    /// Significant digits for displayed values.
    pub sig_figs: u32,
    /// Cells to tabulate for every load case (default: the checks' cells).
    pub case_results: Vec<String>,
    /// Where `case_results` is written, for messages.
    pub case_results_span: Option<Span>,
}

/// The header as TOML; unknown keys are refused.
#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RawHeader {
    title: Option<String>,
    project: Option<String>,
    revision: Option<Spanned<toml::Value>>,
    date: Option<Spanned<toml::Value>>,
    prepared_by: Option<String>,
    checked_by: Option<String>,
    display: Option<DisplaySystem>,
    sig_figs: Option<Spanned<i64>>,
    case_results: Option<Spanned<Vec<String>>>,
}

/// Reads the header block of `source`, reporting problems at their place.
pub fn read_header(
    source: &str,
    block: Option<HeaderBlock>,
    diagnostics: &mut Vec<Diagnostic>,
) -> Header {
    let mut header = Header {
        sig_figs: DEFAULT_SIG_FIGS,
        ..Header::default()
    };
    let Some(block) = block else {
        return header;
    };
    let body = block.body.text(source);
    let raw: RawHeader = match toml::from_str(body) {
        Ok(raw) => raw,
        Err(error) => {
            let span = error.span().map_or(block.span, |range| {
                Span::new(range.start, range.end.max(range.start)).shifted(block.body.start())
            });
            diagnostics.push(
                Diagnostic::error(Code::HeaderError, span, header_message(error.message()))
                    .with_help("header keys: title, project, revision, date, prepared_by, checked_by, display, sig_figs, case_results"),
            );
            return header;
        }
    };
    header.title = raw.title;
    header.project = raw.project;
    header.revision = raw.revision.map(|value| scalar_text(value.into_inner()));
    header.date = raw.date.map(|value| scalar_text(value.into_inner()));
    header.prepared_by = raw.prepared_by;
    header.checked_by = raw.checked_by;
    header.display = raw.display.unwrap_or_default();
    if let Some(case_results) = raw.case_results {
        let span = case_results.span();
        header.case_results_span =
            Some(Span::new(span.start, span.end).shifted(block.body.start()));
        header.case_results = case_results.into_inner();
    }
    if let Some(sig_figs) = raw.sig_figs {
        let span =
            Span::new(sig_figs.span().start, sig_figs.span().end).shifted(block.body.start());
        match u32::try_from(*sig_figs.get_ref()) {
            Ok(value @ 1..=15) => header.sig_figs = value,
            _ => diagnostics.push(
                Diagnostic::error(
                    Code::HeaderError,
                    span,
                    format!("sig_figs must be from 1 to 15, not {}", sig_figs.get_ref()),
                )
                .with_help(format!("the default is {DEFAULT_SIG_FIGS}")),
            ),
        }
    }
    header
}

/// A TOML scalar as text: strings as they are, dates and numbers as written.
fn scalar_text(value: toml::Value) -> String {
    match value {
        toml::Value::String(text) => text,
        other => other.to_string(),
    }
}

/// serde's wording, made friendlier for the values users meet.
fn header_message(message: &str) -> String {
    let message = message.trim();
    if message.contains("unknown variant") {
        return format!("display must be \"SI\" or \"FPS\" ({message})");
    }
    format!("header: {message}")
}
