//! The one place diagnostics become text: source line, caret, code, help.
//!
//! Each diagnostic is drawn by codespan-reporting against an `Excerpt` of
//! the sheet: only the lines its labels touch, with hidden controls shown
//! as escapes (`super::visible`) and a line longer than
//! [`LONG_LINE_CHARS`] cut to the text around each label, so a finding on a
//! 70 KB line prints a few lines, not the whole line. The excerpt keeps the
//! real line and column numbers. Findings of one code on one line beyond
//! [`SHOWN_PER_LINE`] are counted in one closing note rather than drawn.

use std::collections::HashMap;
use std::fmt::Write as _;
use std::ops::Range;

use codespan_reporting::diagnostic::{
    Diagnostic as Report, Label as ReportLabel, LabelStyle, Severity as ReportSeverity,
};
use codespan_reporting::files::{self, Files};
use codespan_reporting::term::{self, Config, Styles, StylesWriter, termcolor};

use super::visible::{is_hidden_control, visible};
use super::{Code, Diagnostic, Severity};

/// A source line longer than this (in characters, escapes counted) is
/// shown as the text around each label.
pub const LONG_LINE_CHARS: usize = 160;
/// Characters of context kept on each side of a label's ends on a long line.
const CONTEXT_CHARS: usize = 40;
/// A label over more lines than this is drawn on its first line only.
const MAX_LABEL_LINES: usize = 8;
/// Findings of one code on one line drawn in full; the rest are counted.
pub const SHOWN_PER_LINE: usize = 3;

/// Renders diagnostics against their source, with or without ANSI colour.
pub fn render(diagnostics: &[Diagnostic], file_name: &str, source: &str, colour: bool) -> String {
    let line_starts: Vec<usize> = files::line_starts(source).collect();
    let line_of = |offset: usize| line_starts.partition_point(|&start| start <= offset) - 1;
    let group = |diagnostic: &Diagnostic| {
        (
            diagnostic.code,
            line_of(diagnostic.span.start().min(source.len())),
        )
    };
    let mut in_group: HashMap<(Code, usize), usize> = HashMap::new();
    for diagnostic in diagnostics {
        *in_group.entry(group(diagnostic)).or_default() += 1;
    }
    let config = Config::default();
    let styles = Styles::default();
    let mut buffer = if colour {
        termcolor::Buffer::ansi()
    } else {
        termcolor::Buffer::no_color()
    };
    let name = visible(file_name);
    let mut drawn: HashMap<(Code, usize), usize> = HashMap::new();
    for diagnostic in diagnostics {
        let key = group(diagnostic);
        let count = drawn.entry(key).or_default();
        *count += 1;
        if *count > SHOWN_PER_LINE {
            continue;
        }
        let excerpt = Excerpt::new(&name, source, &line_starts, diagnostic);
        let report = excerpt.report(diagnostic);
        let mut writer = StylesWriter::new(&mut buffer, &styles);
        if term::emit_to_write_style(&mut writer, &config, &excerpt, &report).is_err() {
            buffer_line(&mut buffer, diagnostic);
        }
        let total = in_group.get(&key).copied().unwrap_or(0);
        if *count == SHOWN_PER_LINE && total > SHOWN_PER_LINE {
            let more = total - SHOWN_PER_LINE;
            let plural = if more == 1 { "" } else { "s" };
            let _ = std::io::Write::write_all(
                &mut buffer,
                format!(
                    "note: {more} more `{}` finding{plural} on line {} not shown (`heft check --json` lists every one)\n\n",
                    key.0.as_str(),
                    key.1 + 1
                )
                .as_bytes(),
            );
        }
    }
    String::from_utf8_lossy(buffer.as_slice()).into_owned()
}

fn buffer_line(buffer: &mut termcolor::Buffer, diagnostic: &Diagnostic) {
    let mut line = String::new();
    let _ = writeln!(
        line,
        "{}[{}]: {}",
        diagnostic.severity.as_str(),
        diagnostic.code,
        visible(&diagnostic.message)
    );
    let _ = std::io::Write::write_all(buffer, line.as_bytes());
}

/// The lines one diagnostic shows, as codespan draws them: each line its
/// labels touch, escaped and cut to its labels when long, with the real
/// line numbers and columns.
struct Excerpt<'a> {
    name: &'a str,
    text: String,
    /// Per shown line: its range in `text` (line break included) and its
    /// real line index, which is the line index codespan works with.
    lines: Vec<(Range<usize>, usize)>,
    /// The real column of each label end, by its offset in `text`.
    columns: HashMap<usize, usize>,
    /// Each label's range in `text`: the primary label, then the others.
    spans: Vec<Range<usize>>,
}

impl<'a> Excerpt<'a> {
    fn new(name: &'a str, source: &str, line_starts: &[usize], diagnostic: &Diagnostic) -> Self {
        let line_of = |offset: usize| line_starts.partition_point(|&start| start <= offset) - 1;
        let line_end = |line: usize| {
            let next = line_starts.get(line + 1).copied().unwrap_or(source.len());
            let text = &source[line_starts[line]..next];
            line_starts[line] + text.trim_end_matches(['\n', '\r']).len()
        };
        // Every label, clamped to the source and to a few lines.
        let mut ranges = vec![clamp(
            diagnostic.span.start(),
            diagnostic.span.end(),
            source,
        )];
        ranges.extend(
            diagnostic
                .labels
                .iter()
                .map(|label| clamp(label.span.start(), label.span.end(), source)),
        );
        let ranges: Vec<(usize, usize)> = ranges
            .into_iter()
            .map(|(start, end)| {
                let first = line_of(start);
                let last = line_of(end.saturating_sub(1).max(start));
                let last = if last > first + MAX_LABEL_LINES {
                    first
                } else {
                    last
                };
                // Never into a line break, which the excerpt does not show.
                let start = start.min(line_end(first));
                (start, end.min(line_end(last)).max(start))
            })
            .collect();
        let mut shown_lines: Vec<usize> = ranges
            .iter()
            .flat_map(|&(start, end)| line_of(start)..=line_of(end.saturating_sub(1).max(start)))
            .collect();
        shown_lines.sort_unstable();
        shown_lines.dedup();
        // codespan draws a single line between two shown lines as context
        // (a longer gap as `·`), so that line is part of the excerpt.
        let gaps: Vec<usize> = shown_lines
            .windows(2)
            .filter(|pair| pair[1] == pair[0] + 2)
            .map(|pair| pair[0] + 1)
            .collect();
        shown_lines.extend(gaps);
        shown_lines.sort_unstable();

        let mut excerpt = Excerpt {
            name,
            text: String::new(),
            lines: Vec::with_capacity(shown_lines.len()),
            columns: HashMap::new(),
            spans: Vec::new(),
        };
        let mut mapped: HashMap<usize, usize> = HashMap::new();
        for line in shown_lines {
            let start = line_starts[line];
            let end = line_end(line);
            let ends: Vec<usize> = ranges
                .iter()
                .flat_map(|&(a, b)| [a, b])
                .filter(|&offset| (start..=end).contains(&offset))
                .collect();
            let begin = excerpt.text.len();
            excerpt.push_line(source, start..end, &ends, &mut mapped);
            excerpt.text.push('\n');
            excerpt.lines.push((begin..excerpt.text.len(), line));
        }
        excerpt.spans = ranges
            .into_iter()
            .map(|(start, end)| {
                let start = mapped.get(&start).copied().unwrap_or(0);
                start..mapped.get(&end).copied().unwrap_or(start).max(start)
            })
            .collect();
        excerpt
    }

    /// Appends the real line `line` (without its break), escaped, cut to
    /// the text around `ends` when long; records where each end lands and
    /// its real column.
    fn push_line(
        &mut self,
        source: &str,
        line: Range<usize>,
        ends: &[usize],
        mapped: &mut HashMap<usize, usize>,
    ) {
        let text = &source[line.clone()];
        let shown_width: usize = text.chars().map(escaped_width).sum();
        // Character windows to keep, by position in the line.
        let chars: Vec<(usize, char)> = text.char_indices().collect();
        let index_of = |offset: usize| chars.partition_point(|&(at, _)| at + line.start < offset);
        let windows: Vec<Range<usize>> = if shown_width <= LONG_LINE_CHARS {
            std::iter::once(0..chars.len()).collect()
        } else {
            let mut windows: Vec<Range<usize>> = Vec::new();
            let mut points: Vec<usize> = ends.iter().map(|&offset| index_of(offset)).collect();
            points.sort_unstable();
            for point in points {
                let window =
                    point.saturating_sub(CONTEXT_CHARS)..(point + CONTEXT_CHARS).min(chars.len());
                match windows.last_mut() {
                    Some(last) if window.start <= last.end => last.end = last.end.max(window.end),
                    _ => windows.push(window),
                }
            }
            if windows.is_empty() {
                // A context line between two shown ones: its beginning.
                windows.push(0..(2 * CONTEXT_CHARS).min(chars.len()));
            }
            windows
        };
        let mut record = |excerpt: &mut Self, index: usize| {
            let offset = chars
                .get(index)
                .map_or(line.end, |&(at, _)| line.start + at);
            if ends.contains(&offset) {
                mapped.insert(offset, excerpt.text.len());
                excerpt.columns.insert(excerpt.text.len(), index + 1);
            }
        };
        for (n, window) in windows.iter().enumerate() {
            if n == 0 && window.start > 0 || n > 0 {
                self.text.push_str(if n == 0 { "… " } else { " … " });
            }
            for index in window.clone() {
                record(self, index);
                let c = chars[index].1;
                if is_hidden_control(c) && c != '\t' {
                    self.text.push_str(&visible(c.encode_utf8(&mut [0; 4])));
                } else {
                    self.text.push(c);
                }
            }
            if window.end == chars.len() {
                record(self, chars.len());
            } else if n + 1 == windows.len() {
                record(self, window.end);
                self.text.push_str(" …");
            } else {
                record(self, window.end);
            }
        }
    }

    /// The codespan report of `diagnostic` over this excerpt, its messages
    /// shown with [`visible`].
    fn report(&self, diagnostic: &Diagnostic) -> Report<()> {
        let span = |index: usize| self.spans.get(index).cloned().unwrap_or(0..0);
        let severity = match diagnostic.severity {
            Severity::Error => ReportSeverity::Error,
            Severity::Warning => ReportSeverity::Warning,
            Severity::Info => ReportSeverity::Note,
        };
        let mut labels = vec![ReportLabel::new(LabelStyle::Primary, (), span(0))];
        labels.extend(diagnostic.labels.iter().enumerate().map(|(n, label)| {
            ReportLabel::new(LabelStyle::Secondary, (), span(n + 1))
                .with_message(visible(&label.message))
        }));
        Report::new(severity)
            .with_code(diagnostic.code.as_str())
            .with_message(visible(&diagnostic.message))
            .with_labels(labels)
            .with_notes(
                diagnostic
                    .help
                    .iter()
                    .map(|help| format!("help: {}", visible(help)))
                    .collect(),
            )
    }
}

fn clamp(start: usize, end: usize, source: &str) -> (usize, usize) {
    let floor = |offset: usize| {
        let mut offset = offset.min(source.len());
        while !source.is_char_boundary(offset) {
            offset -= 1;
        }
        offset
    };
    let start = floor(start);
    (start, floor(end).max(start))
}

/// How many characters `c` takes once shown (an escape is several).
fn escaped_width(c: char) -> usize {
    if is_hidden_control(c) && c != '\t' {
        visible(c.encode_utf8(&mut [0; 4])).chars().count()
    } else {
        1
    }
}

impl<'a> Files<'a> for Excerpt<'_> {
    type FileId = ();
    type Name = &'a str;
    type Source = &'a str;

    fn name(&'a self, (): ()) -> Result<&'a str, files::Error> {
        Ok(self.name)
    }

    fn source(&'a self, (): ()) -> Result<&'a str, files::Error> {
        Ok(&self.text)
    }

    fn line_index(&'a self, (): (), byte_index: usize) -> Result<usize, files::Error> {
        let shown = self
            .lines
            .partition_point(|(range, _)| range.end <= byte_index)
            .min(self.lines.len().saturating_sub(1));
        Ok(self.lines.get(shown).map_or(0, |&(_, line)| line))
    }

    fn column_number(
        &'a self,
        (): (),
        line_index: usize,
        byte_index: usize,
    ) -> Result<usize, files::Error> {
        if let Some(&column) = self.columns.get(&byte_index) {
            return Ok(column);
        }
        let range = self.line_range((), line_index)?;
        Ok(files::column_index(&self.text, range, byte_index) + 1)
    }

    fn line_range(&'a self, (): (), line_index: usize) -> Result<Range<usize>, files::Error> {
        let shown = self.lines.partition_point(|&(_, line)| line < line_index);
        match self.lines.get(shown) {
            Some((range, line)) if *line == line_index => Ok(range.clone()),
            // A line codespan asks for that the excerpt leaves out is drawn empty.
            _ => Ok(self.text.len()..self.text.len()),
        }
    }
}
