//! The report as Markdown (GitHub-flavoured: tables, and `<sub>`/`<sup>` for
//! subscripts and exponents). Every text from the sheet goes through
//! [`escape`], the one escaping function of this format.

use std::fmt::Write as _;

use super::model::{
    Block, CellBlock, CheckBlock, Document, MarkLine, Piece, Rich, Section, Table, Tone,
};

/// Escapes text for Markdown: characters that start markup are
/// backslash-escaped, `<`, `>`, `&` become entities so no HTML gets through,
/// line breaks become spaces,
/// the `:` of `://`, every `@` and the `.` of `www.` are escaped so no address in the
/// sheet's text is turned into a link (GitHub-flavoured autolinks), and
/// hidden controls are shown as escapes ([`crate::base::visible`]).
pub fn escape(text: &str) -> String {
    let text = text.replace(['\n', '\r'], " ");
    let text = crate::base::visible::visible(&text);
    let mut out = String::with_capacity(text.len() + 8);
    for (at, c) in text.char_indices() {
        match c {
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '&' => out.push_str("&amp;"),
            '\\' | '`' | '*' | '_' | '[' | ']' | '|' | '~' | '#' | '!' | '{' | '}' | '@' => {
                out.push('\\');
                out.push(c);
            }
            ':' if text[at..].starts_with("://") => out.push_str("\\:"),
            '.' if at >= 3 && text.as_bytes()[at - 3..at].eq_ignore_ascii_case(b"www") => {
                out.push_str("\\.");
            }
            _ => out.push(c),
        }
    }
    out
}

/// Writes the document as Markdown.
pub fn write(document: &Document) -> String {
    let mut out = String::new();
    let title = &document.title_block;
    let _ = writeln!(out, "# {}\n", escape(&title.title));
    let _ = writeln!(out, "| | |\n|---|---|");
    for (label, value) in &title.fields {
        let _ = writeln!(out, "| {} | {} |", escape(label), escape(value));
    }
    let _ = writeln!(
        out,
        "| Fingerprint | <code>{}</code> |",
        escape(&title.fingerprint)
    );
    let _ = writeln!(out, "| Result | {} |", escape(&title.summary));
    out.push('\n');
    if let Some(signoff) = &title.signoff {
        let _ = writeln!(out, "{}\n", callout(signoff.tone, &signoff.text));
    }
    for caution in &title.cautions {
        let _ = writeln!(out, "> **{}**\n", escape(caution));
    }
    for section in &document.sections {
        write_section(&mut out, section);
    }
    out
}

fn write_section(out: &mut String, section: &Section) {
    if let Some(title) = &section.title {
        let marks = "#".repeat(usize::from(section.level) + 1);
        let _ = writeln!(out, "{marks} {}\n", rich(title));
    }
    for block in &section.blocks {
        match block {
            Block::Paragraph(text) => {
                let _ = writeln!(out, "{}\n", rich(text));
            }
            Block::Note(text) => {
                let _ = writeln!(out, "> {}\n", rich(text));
            }
            Block::Cell(cell) => write_cell(out, cell),
            Block::Check(check) => write_check(out, check),
            Block::Marks(marks) => write_marks(out, marks),
            Block::Callout(callout_block) => {
                let _ = writeln!(
                    out,
                    "{}\n",
                    callout(callout_block.tone, &callout_block.text)
                );
            }
            Block::Table(table) => write_table(out, table),
            Block::Figure(figure) => {
                let _ = writeln!(
                    out,
                    "*Figure: {} (drawn in the HTML report).*\n",
                    escape(&figure.caption)
                );
            }
            Block::Unparsed { line, text } => {
                let _ = writeln!(
                    out,
                    "**Line {line} did not parse:** <code>{}</code>\n",
                    escape(text)
                );
            }
        }
    }
}

fn write_cell(out: &mut String, cell: &CellBlock) {
    let description = cell
        .description
        .as_deref()
        .map(|d| format!(" — {}", escape(d)))
        .unwrap_or_default();
    let _ = writeln!(
        out,
        "**{}**{description} <sub>(line {})</sub>  ",
        rich(&cell.name),
        cell.line
    );
    if cell.is_input {
        let _ = writeln!(out, "{} = {} (input)", rich(&cell.name), rich(&cell.result));
    } else {
        let _ = writeln!(out, "{} = {}  ", rich(&cell.name), rich(&cell.formula));
        if let Some(substituted) = &cell.substituted {
            let _ = writeln!(out, "= {}  ", rich(substituted));
        }
        let _ = writeln!(out, "= {}", rich(&cell.result));
    }
    out.push('\n');
    for finding in &cell.findings {
        let _ = writeln!(out, "> ⚠ {}\n", escape(finding));
    }
    write_marks(out, &cell.marks);
}

fn write_check(out: &mut String, check: &CheckBlock) {
    let label = check
        .label
        .as_deref()
        .map(|l| format!(" — {}", escape(l)))
        .unwrap_or_default();
    let _ = writeln!(
        out,
        "**Check: {}**{label} <sub>(line {})</sub>  ",
        escape(&check.verdict),
        check.line
    );
    let _ = write!(out, "{}", rich(&check.expression));
    if let Some(substituted) = &check.substituted {
        let _ = write!(out, ": {}", rich(substituted));
    }
    if let Some(utilization) = &check.utilization {
        let _ = write!(out, ", utilization {}", escape(utilization));
    }
    out.push_str("\n\n");
    for finding in &check.findings {
        let _ = writeln!(out, "> ⚠ {}\n", escape(finding));
    }
    write_marks(out, &check.marks);
}

fn write_marks(out: &mut String, marks: &[MarkLine]) {
    for mark in marks {
        let state = if mark.open { " (open)" } else { "" };
        let text = mark
            .text
            .as_deref()
            .map(|t| format!(": {}", escape(t)))
            .unwrap_or_default();
        let _ = writeln!(
            out,
            "> Review {}{state}{text} — {}, {} (line {})\n",
            escape(&mark.kind),
            escape(&mark.by),
            escape(&mark.on),
            mark.line
        );
    }
}

fn write_table(out: &mut String, table: &Table) {
    let _ = writeln!(
        out,
        "| {} |",
        table
            .columns
            .iter()
            .map(|c| escape(c))
            .collect::<Vec<_>>()
            .join(" | ")
    );
    let _ = writeln!(out, "|{}", "---|".repeat(table.columns.len()));
    for row in &table.rows {
        let _ = writeln!(
            out,
            "| {} |",
            row.iter().map(rich).collect::<Vec<_>>().join(" | ")
        );
    }
    out.push('\n');
}

fn callout(tone: Tone, text: &Rich) -> String {
    let sign = match tone {
        Tone::Good => "✔",
        Tone::Warning => "⚠",
        Tone::Bad => "✘",
        Tone::Neutral => "•",
    };
    format!("> {sign} {}", rich(text))
}

fn rich(text: &Rich) -> String {
    let mut out = String::new();
    for piece in &text.0 {
        match piece {
            Piece::Text(text) => out.push_str(&escape(text)),
            Piece::Sub(text) => {
                let _ = write!(out, "<sub>{}</sub>", escape(text));
            }
            Piece::Sup(text) => {
                let _ = write!(out, "<sup>{}</sup>", escape(text));
            }
            Piece::Strong(text) => {
                let _ = write!(out, "**{}**", escape(text));
            }
            Piece::Code(text) => {
                // A code span cannot hold escapes; the HTML tag can.
                let _ = write!(out, "<code>{}</code>", escape(text));
            }
        }
    }
    out
}
