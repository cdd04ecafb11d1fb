//! The report as one self-contained HTML file: inline styles, no scripts, no
//! network, and print rules for A4 and Letter with a page header (title,
//! revision, fingerprint) and footer (page N of M) on every page.
//!
//! Sheet text reaches HTML in two contexts only, each with one function:
//! element text and attribute values go through [`escape`]; the page
//! header's CSS strings go through [`css_string`]. Nothing else writes sheet
//! text into the page.

use std::fmt::Write as _;

use super::model::{
    Block, Callout, CellBlock, CheckBlock, Document, Figure, MarkLine, Piece, Rich, Section, Table,
    Tone,
};

pub use crate::base::visible::escape_markup as escape;

/// Text as a quoted CSS string for the page header: every character but
/// letters, digits, spaces and `.,-` is written as a CSS hex escape, so
/// nothing in it can end the string or the style sheet.
pub fn css_string(text: &str) -> String {
    let mut out = String::with_capacity(text.len() + 2);
    out.push('"');
    for c in text.chars() {
        if c.is_ascii_alphanumeric() || matches!(c, ' ' | '.' | ',' | '-') {
            out.push(c);
        } else {
            // A space ends the escape (and is consumed with it).
            let _ = write!(out, "\\{:06x} ", u32::from(c));
        }
    }
    out.push('"');
    out
}

const STYLE: &str = r#"
:root { --ink: #16181d; --muted: #5b6170; --rule: #d5d9e0; --good: #17643a; --warn: #8a5a00; --bad: #a3161b; --tint: #f3f5f8; }
* { box-sizing: border-box; -webkit-print-color-adjust: exact; print-color-adjust: exact; }
html { font: 10pt/1.45 "DejaVu Sans", "Liberation Sans", Arial, sans-serif; color: var(--ink); }
body { margin: 0 auto; padding: 12mm 10mm; max-width: 200mm; }
h1 { font-size: 17pt; margin: 0 0 3mm; }
h2 { font-size: 13pt; margin: 7mm 0 2mm; padding-bottom: 1mm; border-bottom: 1.5pt solid var(--ink); break-after: avoid; }
h3 { font-size: 11pt; margin: 5mm 0 2mm; break-after: avoid; }
h2.appendix { break-before: page; }
table { border-collapse: collapse; width: 100%; margin: 2mm 0 4mm; font-size: 9pt; }
th, td { border: 0.5pt solid var(--rule); padding: 1.2mm 1.8mm; text-align: left; vertical-align: top; }
th { background: var(--tint); }
tr { break-inside: avoid; }
code, .fingerprint { font-family: "DejaVu Sans Mono", "Liberation Mono", monospace; font-size: 8.5pt; }
.fingerprint { word-break: break-all; }
.titleblock { border: 1.5pt solid var(--ink); padding: 3mm 4mm; margin-bottom: 4mm; break-inside: avoid; }
.titleblock table { margin: 2mm 0; }
.titleblock th { width: 30mm; }
.caution { border-left: 3pt solid var(--bad); background: #fbf0f0; padding: 2mm 3mm; margin: 2mm 0; font-size: 9pt; }
.callout { padding: 1.5mm 3mm; margin: 2mm 0; border-left: 3pt solid var(--muted); background: var(--tint); }
.callout.good { border-color: var(--good); } .callout.warning { border-color: var(--warn); background: #fdf6e7; } .callout.bad { border-color: var(--bad); background: #fbf0f0; }
.note { color: var(--muted); font-style: italic; margin: 1mm 0 2mm; }
.item { display: grid; grid-template-columns: 1fr 42mm; column-gap: 4mm; padding: 1.2mm 0; border-bottom: 0.5pt solid var(--rule); break-inside: avoid; }
.item .head { grid-column: 1 / 3; }
.name { font-weight: bold; font-size: 11pt; }
.desc { color: var(--muted); margin-left: 2mm; }
.line { color: var(--muted); font-size: 8pt; float: right; }
.math { font-family: "DejaVu Serif", "Liberation Serif", Georgia, serif; }
.subst { color: #2d3340; }
.result { text-align: right; align-self: end; font-size: 11pt; }
.result.bad, .verdict.bad { color: var(--bad); } .result.warning, .verdict.warning { color: var(--warn); }
.verdict { font-weight: bold; }
.badge { display: inline-block; padding: 0.3mm 2mm; border-radius: 1mm; color: #fff; font-weight: bold; }
.badge.good { background: var(--good); } .badge.bad { background: var(--bad); } .badge.warning { background: var(--warn); } .badge.neutral { background: var(--muted); }
.finding { grid-column: 1 / 3; color: var(--bad); font-size: 9pt; }
.mark { grid-column: 1 / 3; font-size: 9pt; border-left: 2pt solid var(--warn); padding-left: 2mm; margin-top: 1mm; }
.mark.closed { border-color: var(--good); color: var(--muted); }
figure { margin: 3mm 0; break-inside: avoid; } figcaption { font-size: 9pt; color: var(--muted); }
@media print { body { padding: 0; max-width: none; } }
"#;

/// Writes the document as one HTML page.
pub fn write(document: &Document) -> String {
    let title = &document.title_block;
    let mut out = String::with_capacity(64 * 1024);
    let revision = title
        .revision
        .as_deref()
        .map(|r| format!("Revision {r} · "))
        .unwrap_or_default();
    let _ = write!(
        out,
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<title>{}</title>\n<style>{STYLE}\
@page {{ margin: 18mm 14mm 16mm 14mm;\n  @top-left {{ content: {}; font: 8pt sans-serif; color: #5b6170; }}\n  \
@top-right {{ content: {}; font: 8pt sans-serif; color: #5b6170; }}\n  \
@bottom-left {{ content: \"heft calc report. Results support, and never replace, an independent check.\"; font: 7.5pt sans-serif; color: #5b6170; }}\n  \
@bottom-right {{ content: \"Page \" counter(page) \" of \" counter(pages); font: 8pt sans-serif; color: #5b6170; }} }}\n</style>\n</head>\n<body>\n",
        escape(&title.title),
        css_string(&title.title),
        css_string(&format!(
            "{revision}fingerprint {}",
            super::short_fingerprint(&title.fingerprint)
        )),
    );
    write_title_block(&mut out, document);
    for section in &document.sections {
        write_section(&mut out, section);
    }
    out.push_str("</body>\n</html>\n");
    out
}

fn write_title_block(out: &mut String, document: &Document) {
    let title = &document.title_block;
    let _ = write!(
        out,
        "<header class=\"titleblock\">\n<h1>{}</h1>\n<table>\n",
        escape(&title.title)
    );
    for (label, value) in &title.fields {
        let _ = writeln!(
            out,
            "<tr><th>{}</th><td>{}</td></tr>",
            escape(label),
            escape(value)
        );
    }
    let _ = writeln!(
        out,
        "<tr><th>Fingerprint</th><td class=\"fingerprint\">{}</td></tr>",
        escape(&title.fingerprint)
    );
    let tone = if title.clean { "good" } else { "bad" };
    let verdict = if title.clean { "CLEAN" } else { "FINDINGS" };
    let _ = writeln!(
        out,
        "<tr><th>Result</th><td><span class=\"badge {tone}\">{verdict}</span> {}</td></tr>\n</table>",
        escape(&title.summary)
    );
    if let Some(signoff) = &title.signoff {
        write_callout(out, signoff);
    }
    for caution in &title.cautions {
        let _ = writeln!(out, "<div class=\"caution\">{}</div>", escape(caution));
    }
    out.push_str("</header>\n");
}

fn write_section(out: &mut String, section: &Section) {
    out.push_str("<section>\n");
    if let Some(title) = &section.title {
        let level = if section.level <= 1 { 2 } else { 3 };
        let class = if section.appendix {
            " class=\"appendix\""
        } else {
            ""
        };
        let _ = writeln!(out, "<h{level}{class}>{}</h{level}>", rich(title));
    }
    for block in &section.blocks {
        match block {
            Block::Paragraph(text) => {
                let _ = writeln!(out, "<p>{}</p>", rich(text));
            }
            Block::Note(text) => {
                let _ = writeln!(out, "<p class=\"note\">{}</p>", rich(text));
            }
            Block::Cell(cell) => write_cell(out, cell),
            Block::Check(check) => write_check(out, check),
            Block::Marks(marks) => {
                out.push_str("<div class=\"item\">");
                write_marks(out, marks);
                out.push_str("</div>\n");
            }
            Block::Callout(callout) => write_callout(out, callout),
            Block::Table(table) => write_table(out, table),
            Block::Figure(figure) => write_figure(out, figure),
            Block::Unparsed { line, text } => {
                let _ = writeln!(
                    out,
                    "<div class=\"callout bad\">Line {line} did not parse: <code>{}</code></div>",
                    escape(text)
                );
            }
        }
    }
    out.push_str("</section>\n");
}

fn write_cell(out: &mut String, cell: &CellBlock) {
    let description = cell
        .description
        .as_deref()
        .map(|d| format!("<span class=\"desc\">{}</span>", escape(d)))
        .unwrap_or_default();
    let _ = write!(
        out,
        "<div class=\"item cell\"><div class=\"head\"><span class=\"name math\">{}</span>{description}<span class=\"line\">line {}</span></div>\n<div class=\"math\">",
        rich(&cell.name),
        cell.line
    );
    if cell.is_input {
        let _ = write!(
            out,
            "{} = {} <span class=\"desc\">input</span>",
            rich(&cell.name),
            rich(&cell.formula)
        );
    } else {
        let _ = write!(out, "{} = {}", rich(&cell.name), rich(&cell.formula));
        if let Some(substituted) = &cell.substituted {
            let _ = write!(
                out,
                "<br><span class=\"subst\">= {}</span>",
                rich(substituted)
            );
        }
    }
    let _ = writeln!(
        out,
        "</div><div class=\"result {}\">= {}</div>",
        tone_class(cell.tone),
        rich(&cell.result)
    );
    for finding in &cell.findings {
        let _ = writeln!(out, "<div class=\"finding\">{}</div>", escape(finding));
    }
    write_marks(out, &cell.marks);
    out.push_str("</div>\n");
}

fn write_check(out: &mut String, check: &CheckBlock) {
    let label = check
        .label
        .as_deref()
        .map(|l| format!("<span class=\"desc\">{}</span>", escape(l)))
        .unwrap_or_default();
    let _ = write!(
        out,
        "<div class=\"item check\"><div class=\"head\"><span class=\"name\">Check</span>{label}<span class=\"line\">line {}</span></div>\n<div class=\"math\">{}",
        check.line,
        rich(&check.expression)
    );
    if let Some(substituted) = &check.substituted {
        let _ = write!(
            out,
            "<br><span class=\"subst\">{}</span>",
            rich(substituted)
        );
    }
    if let Some(utilization) = &check.utilization {
        let _ = write!(out, "<br>utilization {}", escape(utilization));
    }
    let _ = writeln!(
        out,
        "</div><div class=\"result\"><span class=\"badge {}\">{}</span></div>",
        tone_class(check.tone),
        escape(&check.verdict)
    );
    for finding in &check.findings {
        let _ = writeln!(out, "<div class=\"finding\">{}</div>", escape(finding));
    }
    write_marks(out, &check.marks);
    out.push_str("</div>\n");
}

fn write_marks(out: &mut String, marks: &[MarkLine]) {
    for mark in marks {
        let class = if mark.open { "mark" } else { "mark closed" };
        let state = if mark.open { " (open)" } else { "" };
        let text = mark
            .text
            .as_deref()
            .map(|t| format!(": {}", escape(t)))
            .unwrap_or_default();
        let _ = writeln!(
            out,
            "<div class=\"{class}\"><strong>Review {}{state}</strong>{text} — {}, {} <span class=\"line\">line {}</span></div>",
            escape(&mark.kind),
            escape(&mark.by),
            escape(&mark.on),
            mark.line
        );
    }
}

fn write_callout(out: &mut String, callout: &Callout) {
    let _ = writeln!(
        out,
        "<div class=\"callout {}\">{}</div>",
        tone_class(callout.tone),
        rich(&callout.text)
    );
}

fn write_table(out: &mut String, table: &Table) {
    out.push_str("<table>\n<thead><tr>");
    for column in &table.columns {
        let _ = write!(out, "<th>{}</th>", escape(column));
    }
    out.push_str("</tr></thead>\n<tbody>\n");
    for row in &table.rows {
        out.push_str("<tr>");
        for cell in row {
            let _ = write!(out, "<td>{}</td>", rich(cell));
        }
        out.push_str("</tr>\n");
    }
    out.push_str("</tbody>\n</table>\n");
}

fn write_figure(out: &mut String, figure: &Figure) {
    // The SVG is built by `report::svg`, which escapes every text it holds.
    let _ = writeln!(
        out,
        "<figure>{}<figcaption>{}</figcaption></figure>",
        figure.svg,
        escape(&figure.caption)
    );
}

fn tone_class(tone: Tone) -> &'static str {
    match tone {
        Tone::Good => "good",
        Tone::Warning => "warning",
        Tone::Bad => "bad",
        Tone::Neutral => "neutral",
    }
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
                let _ = write!(out, "<strong>{}</strong>", escape(text));
            }
            Piece::Code(text) => {
                let _ = write!(out, "<code>{}</code>", escape(text));
            }
        }
    }
    out
}
