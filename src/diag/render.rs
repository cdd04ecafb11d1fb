//! The one place diagnostics become text: source line, caret, code, help.

use codespan_reporting::diagnostic::{
    Diagnostic as Report, Label as ReportLabel, LabelStyle, Severity as ReportSeverity,
};
use codespan_reporting::files::SimpleFile;
use codespan_reporting::term::{self, Config, Styles, StylesWriter, termcolor};

use super::{Diagnostic, Severity};

/// Renders diagnostics against their source, with or without ANSI colour.
pub fn render(diagnostics: &[Diagnostic], file_name: &str, source: &str, colour: bool) -> String {
    let file = SimpleFile::new(file_name, source);
    let config = Config::default();
    let styles = Styles::default();
    let mut buffer = if colour {
        termcolor::Buffer::ansi()
    } else {
        termcolor::Buffer::no_color()
    };
    for diagnostic in diagnostics {
        let report = to_report(diagnostic, source.len());
        let mut writer = StylesWriter::new(&mut buffer, &styles);
        if term::emit_to_write_style(&mut writer, &config, &file, &report).is_err() {
            // A span outside the file cannot be drawn; fall back to one line.
            buffer_line(&mut buffer, diagnostic);
        }
    }
    String::from_utf8_lossy(buffer.as_slice()).into_owned()
}

fn buffer_line(buffer: &mut termcolor::Buffer, diagnostic: &Diagnostic) {
    use std::io::Write;
    let _ = writeln!(
        buffer,
        "{}[{}]: {}",
        diagnostic.severity.as_str(),
        diagnostic.code,
        diagnostic.message
    );
}

fn to_report(diagnostic: &Diagnostic, source_len: usize) -> Report<()> {
    let clamp = |start: usize, end: usize| {
        start.min(source_len)..end.min(source_len).max(start.min(source_len))
    };
    let severity = match diagnostic.severity {
        Severity::Error => ReportSeverity::Error,
        Severity::Warning => ReportSeverity::Warning,
        Severity::Info => ReportSeverity::Note,
    };
    let mut labels = vec![ReportLabel::new(
        LabelStyle::Primary,
        (),
        clamp(diagnostic.span.start(), diagnostic.span.end()),
    )];
    labels.extend(diagnostic.labels.iter().map(|label| {
        ReportLabel::new(
            LabelStyle::Secondary,
            (),
            clamp(label.span.start(), label.span.end()),
        )
        .with_message(&label.message)
    }));
    Report::new(severity)
        .with_code(diagnostic.code.as_str())
        .with_message(&diagnostic.message)
        .with_labels(labels)
        .with_notes(
            diagnostic
                .help
                .iter()
                .map(|help| format!("help: {help}"))
                .collect(),
        )
}
