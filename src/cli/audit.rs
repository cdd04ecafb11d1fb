//! `heft audit`: the conversion audit a checker reads and signs, as text or
//! as JSON (`heft-audit/1`).

use std::fmt::Write as _;
use std::io;
use std::path::Path;

use schemars::JsonSchema;
use serde::Serialize;

use super::check::{BOLD, DIM, FAIL, PASS, Painter, sheet_facts, wrap};
use super::json::{JsonDiagnostic, JsonSummary, diagnostic};
use super::{EXIT_CLEAN, EXIT_FINDINGS, json_words, load_sheet, print};
use crate::audit::{
    ConversionAudit, ConversionEntry, ConversionKind, Exactness, conversion_audit, format_relative,
};
use crate::base::visible::visible;
use crate::base::{Severity, render::render};
use crate::eval::{Evaluated, count};
use crate::units::format_significant;

/// The version of the audit's JSON schema; bumped only for incompatible changes.
pub const SCHEMA: &str = "heft-audit/1";

/// Runs `heft audit FILE`.
pub fn run(path: &Path, as_json: bool, colour: bool) -> io::Result<u8> {
    let evaluated = load_sheet(path)?;
    let audit = conversion_audit(&evaluated);
    let file_name = path.display().to_string();
    let text = if as_json {
        json_report(&file_name, &evaluated, &audit)
    } else {
        text_report(&file_name, &evaluated, &audit, colour)
    };
    print(&text, colour)?;
    Ok(if passes(&evaluated) {
        EXIT_CLEAN
    } else {
        EXIT_FINDINGS
    })
}

/// An audit passes with no error, no warning and every check passed.
fn passes(evaluated: &Evaluated) -> bool {
    evaluated.is_clean() && evaluated.count(Severity::Warning) == 0
}

/// The text of `heft audit`, without colour.
pub(super) fn audit_text(file_name: &str, evaluated: &Evaluated) -> String {
    text_report(file_name, evaluated, &conversion_audit(evaluated), false)
}

fn text_report(
    file_name: &str,
    evaluated: &Evaluated,
    audit: &ConversionAudit,
    colour: bool,
) -> String {
    let painter = Painter { colour };
    let header = evaluated.header();
    let lines = &evaluated.lines;
    let source = evaluated.source();
    let mut out = String::new();
    let title = header.title.as_deref().unwrap_or("(untitled sheet)");
    let _ = writeln!(
        out,
        "{}",
        painter.paint(BOLD, &format!("Conversion audit: {}", visible(title)))
    );
    let mut facts = sheet_facts(header, file_name);
    facts.extend(
        header
            .prepared_by
            .as_ref()
            .map(|p| format!("prepared by {}", visible(p))),
    );
    let _ = writeln!(out, "{}", painter.paint(DIM, &facts.join(" · ")));
    // A used sheet's conversions are audited with that sheet on its own.
    super::check::write_uses(&mut out, evaluated, &painter);

    let _ = writeln!(out, "\n{}", painter.paint(BOLD, "Unit systems written"));
    if audit.systems.is_empty() {
        let _ = writeln!(out, "  (no units)");
    }
    for system in &audit.systems {
        let _ = writeln!(
            out,
            "  {:<16} {}  ({} use{})",
            system.system.label(),
            system.symbols.join(", "),
            system.count,
            if system.count == 1 { "" } else { "s" }
        );
    }

    let _ = writeln!(out, "\n{}", painter.paint(BOLD, "Gravity values used"));
    if audit.gravity.is_empty() {
        let _ = writeln!(out, "  (none)");
    }
    for used in &audit.gravity {
        let at = lines.line_column(source, used.span.start());
        let standing = if used.is_standard() {
            "standard gravity, exact (3rd CGPM 1901)".to_string()
        } else {
            format!(
                "{} from standard gravity",
                format_relative(used.relative_to_g0())
            )
        };
        let _ = writeln!(
            out,
            "  {:<16} {:<26} {:<20} line {:<5} {standing}",
            format!("{} m/s²", format_significant(used.si, 8)),
            used.written,
            used.kind.as_str(),
            at.line,
        );
    }

    let _ = writeln!(out, "\n{}", painter.paint(BOLD, "Conversions"));
    let mut sources: Vec<&'static str> = Vec::new();
    if audit.conversions.is_empty() {
        let _ = writeln!(out, "  (every quantity is in coherent SI units)");
    } else {
        let _ = writeln!(
            out,
            "  {:<8} {:<8} {:<12} {:<18} {:<22} {:<40} status, source",
            "line:col", "kind", "where", "as written", "SI value", "1 unit in SI"
        );
    }
    for entry in &audit.conversions {
        let at = lines.line_column(source, entry.span.start());
        let refs: Vec<String> = entry
            .sources
            .iter()
            .map(|s| {
                let index = sources
                    .iter()
                    .position(|known| known == s)
                    .unwrap_or_else(|| {
                        sources.push(s);
                        sources.len() - 1
                    });
                format!("[{}]", index + 1)
            })
            .collect();
        let _ = writeln!(
            out,
            "  {:<8} {:<8} {:<12} {:<18} {:<22} {:<40} {} {}",
            format!("{}:{}", at.line, at.column),
            short_kind(entry),
            entry.location,
            as_written(entry),
            si_value(entry),
            factor_text(entry),
            exactness_text(entry),
            refs.join("")
        );
        if entry.exactness == Exactness::ExactFraction {
            let _ = writeln!(
                out,
                "  {:<70} exactly 1 {} = {} {}",
                "", entry.unit, entry.factor_exact, entry.si_unit
            );
        }
    }

    if !sources.is_empty() {
        let _ = writeln!(out, "\n{}", painter.paint(BOLD, "Sources"));
        for (index, source_text) in sources.iter().enumerate() {
            let _ = writeln!(out, "  [{}] {source_text}", index + 1);
        }
        let mut definitions: Vec<&str> = Vec::new();
        for entry in &audit.conversions {
            for definition in &entry.definitions {
                if !definitions.contains(&definition.as_str()) {
                    definitions.push(definition);
                }
            }
        }
        let _ = writeln!(out, "\n{}", painter.paint(BOLD, "Definitions"));
        for definition in definitions {
            let _ = writeln!(out, "  {definition}");
        }
    }

    let _ = writeln!(out, "\n{}", painter.paint(BOLD, "Findings"));
    if evaluated.diagnostics.is_empty() {
        let _ = writeln!(out, "  (none)");
    } else {
        out.push_str(&render(&evaluated.diagnostics, file_name, source, colour));
    }

    let summary = summary_line(evaluated, audit);
    let style = if passes(evaluated) { PASS } else { FAIL };
    let _ = writeln!(out, "\n{}", painter.paint(style, &summary));
    let checked_by = header.checked_by.as_deref().unwrap_or("");
    let _ = writeln!(
        out,
        "\nChecked by: {:_<28}   Signature: {:_<20}   Date: {:_<12}",
        checked_by, "", ""
    );
    let _ = writeln!(out, "\n{}", painter.paint(DIM, &wrap(crate::CAUTION, 78)));
    out
}

fn short_kind(entry: &ConversionEntry) -> &'static str {
    match entry.kind {
        ConversionKind::Written => "written",
        ConversionKind::Displayed => "shown",
        ConversionKind::HandTyped => "typed",
    }
}

fn as_written(entry: &ConversionEntry) -> String {
    match (entry.kind, entry.value) {
        (ConversionKind::Displayed, Some(value)) => {
            format!("{} {}", format_significant(value, 10), entry.unit)
        }
        _ => entry.written.clone(),
    }
}

fn si_value(entry: &ConversionEntry) -> String {
    match entry.si_value {
        Some(si) if entry.si_unit.is_empty() => format_significant(si, 10),
        Some(si) => format!("{} {}", format_significant(si, 10), entry.si_unit),
        None => "—".to_string(),
    }
}

fn factor_text(entry: &ConversionEntry) -> String {
    match entry.typed_factor {
        Some(typed) => format!(
            "{} for {} ({})",
            format_significant(typed, 10),
            entry.factor_decimal,
            entry.unit
        ),
        None => {
            let unit = if entry.si_unit.is_empty() {
                String::new()
            } else {
                format!(" {}", entry.si_unit)
            };
            format!("1 {} = {}{unit}", entry.unit, entry.factor_decimal)
        }
    }
}

fn exactness_text(entry: &ConversionEntry) -> String {
    match (entry.exactness, entry.relative_error) {
        (Exactness::Exact, _) => "exact".to_string(),
        (Exactness::ExactFraction, _) => "exact (fraction)".to_string(),
        (Exactness::Rounded, Some(error)) => format!("ROUNDED, {}", format_relative(error)),
        (Exactness::Rounded, None) => "ROUNDED".to_string(),
    }
}

fn summary_line(evaluated: &Evaluated, audit: &ConversionAudit) -> String {
    let summary = evaluated.summary();
    format!(
        "Summary: {} ({} exact by definition, {} rounded); {}; {}; {}",
        count(audit.conversions.len(), "conversion"),
        audit.n_exact(),
        audit.n_rounded(),
        count(audit.n_gravity_values(), "gravity value"),
        crate::present::summary_line(&summary),
        count(summary.infos, "note"),
    )
}

/// `heft audit --json`: the conversion audit a checker signs.
#[derive(Serialize, JsonSchema)]
#[schemars(title = "heft-audit/1")]
struct Report<'a> {
    /// The format's name.
    #[schemars(extend("const" = SCHEMA))]
    schema: &'static str,
    /// The sheet file as named on the command line.
    file: &'a str,
    /// The header's title.
    title: Option<&'a str>,
    /// The header's project.
    project: Option<&'a str>,
    /// The header's revision mark.
    revision: Option<&'a str>,
    /// The header's date, as written.
    date: Option<&'a str>,
    /// The header's preparer.
    prepared_by: Option<&'a str>,
    /// The header's checker.
    checked_by: Option<&'a str>,
    /// No error, no warning and every check passed (exit code 0).
    passed: bool,
    /// The unit systems the sheet writes.
    systems: Vec<JsonSystem<'a>>,
    /// Every value of gravitational acceleration the sheet uses.
    gravity: Vec<JsonGravity<'a>>,
    /// Every conversion a checker should see.
    conversions: Vec<JsonConversion<'a>>,
    /// Every finding, sorted by position.
    diagnostics: Vec<JsonDiagnostic<'a>>,
    /// The counts.
    summary: JsonAuditSummary,
}

/// The units of one system the sheet writes.
#[derive(Serialize, JsonSchema)]
struct JsonSystem<'a> {
    /// The system.
    system: json_words::UnitSystem,
    /// Its symbols in order of first use.
    symbols: &'a [String],
    /// How many times its units are written.
    count: usize,
}

/// A gravity value, at the first place it is used.
#[derive(Serialize, JsonSchema)]
struct JsonGravity<'a> {
    /// The line where it is first written.
    line: usize,
    /// The column (in characters).
    column: usize,
    /// How it enters the sheet.
    kind: json_words::GravityKind,
    /// As written: `g0`, `lbf`, `g = 9.81 m/s^2`, `32.2 ft/s^2`, `9.81`.
    written: &'a str,
    /// The value in m/s².
    si: f64,
    /// (value − g0) / g0, with g0 the standard gravity.
    relative_to_g0: f64,
    /// How many times it is used.
    count: usize,
}

/// A conversion a checker should see.
#[derive(Serialize, JsonSchema)]
struct JsonConversion<'a> {
    /// Its line.
    line: usize,
    /// Its column (in characters).
    column: usize,
    /// How it enters the sheet.
    kind: json_words::ConversionKind,
    /// The cell it belongs to, or `check` for a check.
    location: &'a str,
    /// As written: `1450 lbf`, `[kN]`, `/ 32.174`.
    written: &'a str,
    /// The unit converted from, in heft syntax; for a hand-typed factor,
    /// what it converts in words.
    unit: &'a str,
    /// The value in `unit` (as written, or as shown).
    value: Option<f64>,
    /// The value in coherent SI units (null for a hand-typed factor).
    si_value: Option<f64>,
    /// The coherent SI unit of `si_value`.
    si_unit: &'a str,
    /// The exact factor (the SI value of one `unit`), in full or as a fraction.
    factor_exact: &'a str,
    /// The factor to 20 significant digits.
    factor_decimal: &'a str,
    /// For a hand-typed factor: the number typed.
    typed_factor: Option<f64>,
    /// Whether the factor is the exact value of its definition.
    exactness: json_words::Exactness,
    /// For a rounded factor: (typed − exact) / exact.
    relative_error: Option<f64>,
    /// The definition of each unit involved.
    definitions: &'a [String],
    /// The documents those definitions come from (no repeats).
    sources: &'a [&'static str],
}

/// The audit's counts, then the counts every front end shows.
#[derive(Serialize, JsonSchema)]
struct JsonAuditSummary {
    /// Conversions listed.
    conversions: usize,
    /// Conversions exact by definition.
    exact: usize,
    /// Conversions by a rounded, hand-typed factor.
    rounded: usize,
    /// Distinct gravity values.
    gravity_values: usize,
    /// The counts every front end shows.
    #[serde(flatten)]
    counts: JsonSummary,
}

/// The JSON Schema of `heft-audit/1`.
pub(super) fn schema() -> String {
    super::json::schema_text::<Report<'static>>()
}

fn json_report(file_name: &str, evaluated: &Evaluated, audit: &ConversionAudit) -> String {
    let header = evaluated.header();
    let (lines, source) = (&evaluated.lines, evaluated.source());
    let at = |offset: usize| lines.line_column(source, offset);
    let report = Report {
        schema: SCHEMA,
        file: file_name,
        title: header.title.as_deref(),
        project: header.project.as_deref(),
        revision: header.revision.as_deref(),
        date: header.date.as_deref(),
        prepared_by: header.prepared_by.as_deref(),
        checked_by: header.checked_by.as_deref(),
        passed: passes(evaluated),
        systems: audit
            .systems
            .iter()
            .map(|s| JsonSystem {
                system: s.system.into(),
                symbols: &s.symbols,
                count: s.count,
            })
            .collect(),
        gravity: audit
            .gravity
            .iter()
            .map(|g| {
                let position = at(g.span.start());
                JsonGravity {
                    line: position.line,
                    column: position.column,
                    kind: g.kind.into(),
                    written: &g.written,
                    si: g.si,
                    relative_to_g0: g.relative_to_g0(),
                    count: g.count,
                }
            })
            .collect(),
        conversions: audit
            .conversions
            .iter()
            .map(|c| {
                let position = at(c.span.start());
                JsonConversion {
                    line: position.line,
                    column: position.column,
                    kind: c.kind.into(),
                    location: &c.location,
                    written: &c.written,
                    unit: &c.unit,
                    value: c.value,
                    si_value: c.si_value,
                    si_unit: &c.si_unit,
                    factor_exact: &c.factor_exact,
                    factor_decimal: &c.factor_decimal,
                    typed_factor: c.typed_factor,
                    exactness: c.exactness.into(),
                    relative_error: c.relative_error,
                    definitions: &c.definitions,
                    sources: &c.sources,
                }
            })
            .collect(),
        diagnostics: evaluated
            .diagnostics
            .iter()
            .map(|d| diagnostic(d, source, lines))
            .collect(),
        summary: JsonAuditSummary {
            conversions: audit.conversions.len(),
            exact: audit.n_exact(),
            rounded: audit.n_rounded(),
            gravity_values: audit.n_gravity_values(),
            counts: evaluated.summary().into(),
        },
    };
    super::json::text(&report)
}
