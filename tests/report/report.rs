//! The calc report: Markdown snapshots of the demo sheets, escaping of
//! hostile text, formulas with values put in, and the free-body drawing.

// Reference values here come from std's maths functions, independent of
// the libm that heft uses.
#![allow(clippy::disallowed_methods)]

use crate::common;

use std::path::Path;

use heftsheet::blocks::evaluate_source;
use heftsheet::report::model::{Block, Document};
use heftsheet::report::{self, Format, svg};
use heftsheet::review::Review;

fn read(relative: &str) -> String {
    std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join(relative))
        .unwrap_or_else(|error| panic!("{relative}: {error}"))
}

fn document_of(source: &str) -> Document {
    let evaluated = evaluate_source(source);
    report::document(&evaluated, &Review::of(&evaluated))
}

#[test]
fn markdown_reports_of_the_demo_sheets() {
    let paths = common::sheets_in("sheets");
    assert!(paths.len() >= 3, "expected the three demo sheets");
    for path in paths {
        let markdown = report::render(&common::evaluate_sheet(&path), Format::Markdown);
        let name = path
            .file_stem()
            .and_then(|stem| stem.to_str())
            .unwrap_or("sheet")
            .to_string();
        insta::assert_snapshot!(format!("markdown_report_{name}"), markdown);
    }
}

#[test]
fn every_report_carries_the_caution_title_block_and_fingerprint() {
    let source = read("sheets/skid_lift.heft");
    let evaluated = evaluate_source(&source);
    let fingerprint = Review::of(&evaluated).fingerprint;
    for format in [Format::Html, Format::Markdown] {
        let text = report::render(&evaluated, format);
        assert!(text.contains("ASME B30"), "{format:?}: caution missing");
        assert!(text.contains("Compressor skid lift, north bay gantry"));
        assert!(
            text.contains("R. Okafor"),
            "{format:?}: prepared by missing"
        );
        assert!(
            text.contains(&fingerprint),
            "{format:?}: fingerprint missing"
        );
    }
}

/// Markup that must never reach a report as markup.
const HOSTILE_TAGS: [&str; 8] = [
    "<script",
    "<img",
    "<iframe",
    "<svg onload",
    "<b>",
    "<i>",
    "<h1>fake",
    "</title><",
];

#[test]
fn hostile_sheet_text_is_shown_as_text_in_html() {
    let source = read("tests/data/hostile_text.heft");
    let evaluated = evaluate_source(&source);
    let html = report::render(&evaluated, Format::Html);
    for tag in HOSTILE_TAGS {
        assert!(!html.contains(tag), "raw `{tag}` in the HTML report");
    }
    // The texts are there, escaped.
    for escaped in [
        "desc &lt;script&gt;alert(&#39;d&#39;)&lt;/script&gt; &quot;quoted&quot; &amp; &lt;iframe src=x&gt;",
        "Note with &lt;script&gt;alert(&quot;n&quot;)&lt;/script&gt; &amp; ampersand",
        "Heading &lt;img src=x onerror=alert(1)&gt; &amp; more",
        "label &lt;svg onload=alert(1)&gt; &amp; &#39;single&#39;",
        "Mallory &amp; &lt;i&gt;co&lt;/i&gt;",
        "&lt;b&gt;bold&lt;/b&gt; &amp; co",
    ] {
        assert!(html.contains(escaped), "missing escaped text `{escaped}`");
    }
    // One style sheet, closed once: the revision in the page header cannot end it.
    assert_eq!(html.matches("<style>").count(), 1);
    assert_eq!(html.matches("</style>").count(), 1);
    let style = html
        .split("<style>")
        .nth(1)
        .and_then(|rest| rest.split("</style>").next())
        .unwrap_or_default();
    assert!(
        !style.contains("display: none"),
        "sheet text broke out of a CSS string"
    );
}

#[test]
fn hostile_sheet_text_is_shown_as_text_in_markdown() {
    let markdown = report::render(
        &evaluate_source(&read("tests/data/hostile_text.heft")),
        Format::Markdown,
    );
    for tag in HOSTILE_TAGS {
        assert!(
            !markdown.contains(tag),
            "raw `{tag}` in the Markdown report"
        );
    }
    assert!(markdown.contains("&lt;script&gt;alert('d')&lt;/script&gt;"));
    // Markdown's own markup characters are escaped, not interpreted.
    assert!(markdown.contains(r"pipe \`tick\` \*star\* \_under\_ \[link\](http\://x)"));
    assert!(markdown.contains(r"ampersand \| pipe"));
}

/// Renders the Markdown report as GitHub-flavoured Markdown does (comrak,
/// a CommonMark + GFM implementation, with its autolink, table and
/// strikethrough extensions): the sheet's text must come out as that text,
/// with no element it did not ask for: no link, no script, no image.
#[test]
fn a_markdown_viewer_shows_the_hostile_text_and_makes_no_link() {
    let markdown = report::render(
        &evaluate_source(&read("tests/data/hostile_text.heft")),
        Format::Markdown,
    );
    let mut options = comrak::Options::default();
    options.extension.autolink = true;
    options.extension.table = true;
    options.extension.strikethrough = true;
    let html = comrak::markdown_to_html(&markdown, &options);
    for element in ["<a ", "<a>", "<script", "<img", "<iframe", "<svg", "<del"] {
        assert!(
            !html.contains(element),
            "`{element}` in the rendered report"
        );
    }
    for text in [
        "drawing at https://plant.example/dwg/7 or www.plant.example, ask ops@plant.example",
        "*star* _under_ [link](http://x)",
    ] {
        assert!(html.contains(text), "`{text}` not shown as written");
    }
}

#[test]
fn the_html_escaper_and_css_string_cover_every_special_character() {
    assert_eq!(
        report::html::escape(r#"<a href="x">&'</a>"#),
        "&lt;a href=&quot;x&quot;&gt;&amp;&#39;&lt;/a&gt;"
    );
    // Only letters, digits, space and `.,-` stay as they are in a CSS string.
    let css = report::html::css_string("A\"}</style>");
    assert_eq!(
        css,
        "\"A\\000022 \\00007d \\00003c \\00002f style\\00003e \""
    );
}

#[test]
fn a_cell_shows_its_formula_the_values_put_in_and_its_result() {
    // T = m (g0 + a) = 1892 kg × (9.80665 + 0.35) m/s² = 19217.18 N:
    // Newton's second law for a load hoisted with upward acceleration a
    // (closed form, any mechanics text).
    let source = "+++\nsig_figs = 4\n+++\nm_tot = 1892 kg\na_up = 0.35 m/s^2\nT_up [kN] = m_tot * (g0 + a_up) \"rope tension\"\n";
    let document = document_of(source);
    let cell = document
        .sections
        .iter()
        .flat_map(|section| &section.blocks)
        .find_map(|block| match block {
            Block::Cell(cell) if cell.name.plain() == "T_up" => Some(cell.as_ref().clone()),
            _ => None,
        })
        .expect("the T_up cell is in the report");
    assert_eq!(cell.formula.plain(), "m_tot · (g0 + a_up)");
    assert_eq!(
        cell.substituted.as_ref().map(|s| s.plain()),
        Some("1892 kg · (9.80665 m/s² + 0.35 m/s²)".to_string())
    );
    let expected_kn = 1892.0 * (9.80665 + 0.35) / 1000.0;
    assert_eq!(cell.result.plain(), format!("{expected_kn:.2} kN"));
    assert_eq!(cell.description.as_deref(), Some("rope tension"));
}

#[test]
fn formulas_keep_the_grouping_heft_evaluated() {
    let cases = [
        ("x = (a + b) * c", "(a + b) · c"),
        ("x = a + b * c", "a + b · c"),
        ("x = a - (b - c)", "a − (b − c)"),
        ("x = (a - b) - c", "a − b − c"),
        ("x = a / (b * c)", "a / (b · c)"),
        ("x = -(a * b)", "−(a · b)"),
        ("x = (-a)^2", "(−a)^2"),
        ("x = -a^2", "−a^2"),
        ("x = (a^b)^c", "(a^b)^c"),
        ("x = a^b^c", "a^b^c"),
        ("x = sqrt(a + b)", "√(a + b)"),
        ("x = (2 m)^2", "(2 m)^2"),
    ];
    for (line, expected) in cases {
        let source = format!("a = 2\nb = 3\nc = 4\n{line}\n");
        let evaluated = evaluate_source(&source);
        let id = evaluated.cell("x").expect("x").id;
        let term = evaluated.formula_term(id);
        let shown = report::math::formula(&term, report::math::Names::AsWritten).plain();
        assert_eq!(shown, expected, "{line}");
    }
}

#[test]
fn substituted_values_are_bracketed_where_they_would_misread() {
    let source = "d = 3 m\nn = -2 kN\narea = d^2\ntotal = 5 kN - n\n";
    let evaluated = evaluate_source(source);
    let substituted = |name: &str| {
        let term = evaluated.formula_term(evaluated.cell(name).expect("cell").id);
        report::math::formula(&term, report::math::Names::Substituted).plain()
    };
    assert_eq!(substituted("area"), "(3 m)^2");
    assert_eq!(substituted("total"), "5 kN − (-2 kN)");
}

#[test]
fn names_get_subscripts_and_units_get_superscripts() {
    assert_eq!(report::math::name("T_up").plain(), "T_up");
    assert_eq!(report::math::name("F_pin_max").plain(), "F_pin,max");
    assert_eq!(report::math::name("WLL").plain(), "WLL");
    assert_eq!(report::math::unit("kg*m/s^2"), "kg·m/s²");
    assert_eq!(report::math::unit("s^-2"), "s⁻²");
    let html = report::render(&evaluate_source("F_pin = 3 kN\n"), Format::Html);
    assert!(html.contains("F<sub>pin</sub>"));
}

#[test]
fn checks_show_values_utilization_and_a_clear_verdict() {
    // Utilization A/B for `<=`: 19.22 kN / 25 kN = 0.7687 (the sheet's own definition).
    let document = document_of(&read("sheets/skid_lift.heft"));
    let checks: Vec<_> = document
        .sections
        .iter()
        .flat_map(|section| &section.blocks)
        .filter_map(|block| match block {
            Block::Check(check) => Some(check.as_ref().clone()),
            _ => None,
        })
        .collect();
    assert_eq!(checks.len(), 3);
    assert!(checks.iter().all(|check| check.verdict == "PASS"));
    let hoisting = &checks[0];
    assert_eq!(
        hoisting.substituted.as_ref().map(|s| s.plain()),
        Some("19.22 kN ≤ 25 kN".to_string())
    );
    let utilization = 1892.0 * (9.80665 + 0.35) / 25_000.0 * 100.0;
    assert_eq!(
        hoisting.utilization.as_deref(),
        Some(format!("{utilization:.1} %").as_str())
    );

    let failing = document_of("T = 30 kN\nWLL = 25 kN\ncheck T <= WLL \"over\"\n");
    let verdicts: Vec<String> = failing
        .sections
        .iter()
        .flat_map(|section| &section.blocks)
        .filter_map(|block| match block {
            Block::Check(check) => Some(check.verdict.clone()),
            _ => None,
        })
        .collect();
    assert_eq!(verdicts, ["FAIL (as written)"]);
}

#[test]
fn findings_appear_on_their_cell_and_in_the_appendix() {
    let markdown = report::render(&evaluate_source("m = 4 kg\nW [N] = m\n"), Format::Markdown);
    assert!(markdown.contains("mass-weight-mixup"));
    assert!(markdown.contains("Appendix C. Findings"));
    assert!(markdown.contains("error: see the finding"));
}

#[test]
fn the_units_appendix_lists_each_unit_with_its_exact_definition() {
    // 1 lbf = 4.4482216152605 N exactly: 1959 pound × standard gravity
    // (NIST SP 811, 2008, App. B; 3rd CGPM 1901).
    let markdown = report::render(
        &evaluate_source(&read("sheets/cart_train.heft")),
        Format::Markdown,
    );
    let appendix = markdown
        .split("Appendix B. Units and conversions")
        .nth(1)
        .expect("units appendix");
    assert!(appendix.contains("4.4482216152605"), "{appendix}");
    assert!(appendix.contains("pound-force"));
    assert!(appendix.contains("1959"));
}

#[test]
fn a_free_body_diagram_draws_arrows_to_scale_and_escapes_labels() {
    let diagram = svg::FreeBody {
        body: "skid <1>".to_string(),
        forces: vec![
            svg::ForceArrow {
                label: "T".to_string(),
                magnitude: "20 kN".to_string(),
                x: 0.0,
                y: 20.0,
            },
            svg::ForceArrow {
                label: "W".to_string(),
                magnitude: "10 kN".to_string(),
                x: 0.0,
                y: -10.0,
            },
        ],
        resultant: Some(svg::ForceArrow {
            label: "ΣF".to_string(),
            magnitude: "10 kN".to_string(),
            x: 0.0,
            y: 10.0,
        }),
    };
    let figure = svg::free_body(&diagram);
    assert!(figure.svg.starts_with("<svg"));
    assert!(figure.svg.contains("skid &lt;1&gt;"));
    assert!(!figure.svg.contains("skid <1>"));
    // Arrow lengths: the 20 kN arrow is drawn twice as long as the 10 kN one.
    let lengths: Vec<f64> = figure
        .svg
        .split("<line ")
        .skip(1)
        .map(|line| {
            let attribute = |name: &str| -> f64 {
                line.split(&format!("{name}=\""))
                    .nth(1)
                    .and_then(|rest| rest.split('"').next())
                    .and_then(|value| value.parse().ok())
                    .unwrap_or(f64::NAN)
            };
            (attribute("x2") - attribute("x1")).hypot(attribute("y2") - attribute("y1"))
        })
        .collect();
    assert_eq!(lengths.len(), 3);
    common::assert_close(lengths[0], 2.0 * lengths[1], 0.01);
    // T points up (y decreases in SVG), W down.
    assert!(figure.svg.contains("T = 20 kN"));
    assert!(figure.caption.contains("resultant"));
}

#[test]
fn a_free_body_with_a_force_in_error_still_draws_its_forces_with_units() {
    // The second body has no resultant (a scalar force is an error), so it
    // has no display unit of its own; its weight is still shown in kN.
    let source = "T_A = 12 kN\ne_A = vec(0.6, 0.8)\nW = vec(0 N, -9 kN)\n\
                  body hook: -T_A * e_A, W, vec(7.2 kN, 0 N)\nbody bad: 2 * T_A, W\n";
    let html = report::render(&evaluate_source(source), Format::Html);
    assert!(
        html.contains(">-T_A * e_A = 12 kN<"),
        "an expression force is labelled as written"
    );
    assert_eq!(
        html.matches(">W = 9 kN<").count(),
        2,
        "both bodies show W in kN"
    );
    assert!(!html.contains(">W = 9000<"));
}
