//! A small SVG writer for stacked line plots. Hand-written: the plot is a
//! handful of polylines, axes, ticks and labels, which a plotting crate
//! would serve with font handling and more dependencies than it needs; here
//! the output is plain, byte-identical across machines, and easy to embed.

use crate::base::visible::escape_markup as escape;
use std::fmt::Write as _;

/// Width of the drawing, in SVG user units (pixels).
const WIDTH: f64 = 720.0;
/// Height of each panel's plotting area.
const PANEL_HEIGHT: f64 = 150.0;
/// Space between panels (for the next panel's label).
const PANEL_GAP: f64 = 34.0;
const MARGIN_LEFT: f64 = 78.0;
const MARGIN_RIGHT: f64 = 24.0;
const MARGIN_TOP: f64 = 56.0;
const MARGIN_BOTTOM: f64 = 48.0;
/// Line colours, one per panel in turn (distinguishable in greyscale too).
const COLOURS: [&str; 6] = [
    "#1f4e9c", "#b3401b", "#2e7d32", "#6a3d9a", "#8c6d1f", "#00838f",
];

/// One panel: a label (with its unit) and its points (time, value), both
/// already in the units to show.
#[derive(Clone, Debug, PartialEq)]
pub struct Panel {
    /// `x [m]`.
    pub label: String,
    /// Points in time order; a value that is not finite (unknown there)
    /// breaks the line.
    pub points: Vec<(f64, f64)>,
    /// Horizontal guide lines (value, label): a sweep's 100 % utilization.
    pub guides: Vec<(f64, String)>,
}

/// Everything a plot shows.
#[derive(Clone, Debug, PartialEq)]
pub struct PlotSpec {
    /// The title line.
    pub title: String,
    /// The time axis label: `t [s]`.
    pub time_label: String,
    /// The time axis range.
    pub time_range: (f64, f64),
    /// The panels, top to bottom.
    pub panels: Vec<Panel>,
    /// Vertical markers (time, label): events.
    pub markers: Vec<(f64, String)>,
}

/// Round tick values covering `[low, high]`, about `target` of them: steps
/// of 1, 2 or 5 times a power of ten. The first and last ticks enclose the
/// range.
pub fn nice_ticks(low: f64, high: f64, target: usize) -> Vec<f64> {
    let (mut low, mut high) = (low.min(high), low.max(high));
    if !low.is_finite() || !high.is_finite() {
        return vec![0.0, 1.0];
    }
    if high - low <= f64::EPSILON * low.abs().max(high.abs()) {
        let pad = if low == 0.0 { 1.0 } else { 0.1 * low.abs() };
        low -= pad;
        high += pad;
    }
    let raw = (high - low) / target.max(1) as f64;
    let magnitude = libm::pow(10.0, libm::log10(raw).floor());
    let step = [1.0, 2.0, 5.0, 10.0]
        .into_iter()
        .map(|factor| factor * magnitude)
        .find(|step| *step >= raw)
        .unwrap_or(10.0 * magnitude);
    // A value a hair over a tick (100.0001 within the run's tolerance) does not
    // earn another tick: a thousandth of a step is invisible on the plot.
    let first = (low / step + 1e-3).floor();
    let last = (high / step - 1e-3).ceil();
    // first..=last is a short range of whole numbers (about `target` of them).
    let n = ((last - first) as usize).min(100);
    (0..=n)
        .map(|k| {
            let tick = (first + k as f64) * step;
            if tick.abs() < step * 1e-9 { 0.0 } else { tick }
        })
        .collect()
}

/// A tick label: short, without float noise.
fn tick_label(value: f64) -> String {
    crate::units::format_significant(value, 6)
}

/// Renders the plot as a complete SVG document.
pub fn render(spec: &PlotSpec) -> String {
    let n_panels = spec.panels.len().max(1);
    let height = MARGIN_TOP
        + n_panels as f64 * PANEL_HEIGHT
        + (n_panels - 1) as f64 * PANEL_GAP
        + MARGIN_BOTTOM;
    let plot_width = WIDTH - MARGIN_LEFT - MARGIN_RIGHT;
    let (t0, t1) = spec.time_range;
    let time_ticks = nice_ticks(t0, t1, 8);
    let (t_low, t_high) = if t1 > t0 {
        (t0, t1)
    } else {
        (t0 - 1.0, t0 + 1.0)
    };
    let x_of = |t: f64| MARGIN_LEFT + (t - t_low) / (t_high - t_low) * plot_width;

    let mut out = String::new();
    let _ = writeln!(
        out,
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{WIDTH:.0}" height="{height:.0}" viewBox="0 0 {WIDTH:.0} {height:.0}" font-family="sans-serif" font-size="12">"#
    );
    let _ = writeln!(out, r#"<rect width="100%" height="100%" fill="white"/>"#);
    let _ = writeln!(
        out,
        r#"<text x="{MARGIN_LEFT:.1}" y="22" font-size="14" font-weight="bold">{}</text>"#,
        escape(&spec.title)
    );
    for (index, panel) in spec.panels.iter().enumerate() {
        let top = MARGIN_TOP + index as f64 * (PANEL_HEIGHT + PANEL_GAP);
        let bottom = top + PANEL_HEIGHT;
        let (low, high) = panel
            .points
            .iter()
            .map(|p| p.1)
            .chain(panel.guides.iter().map(|guide| guide.0))
            .filter(|v| v.is_finite())
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), v| {
                (lo.min(v), hi.max(v))
            });
        let ticks = if low.is_finite() {
            nice_ticks(low, high, 4)
        } else {
            vec![0.0, 1.0]
        };
        let (v_low, v_high) = (ticks[0], ticks[ticks.len() - 1]);
        let y_of = |v: f64| bottom - (v - v_low) / (v_high - v_low) * PANEL_HEIGHT;
        let _ = writeln!(
            out,
            r#"<text x="{MARGIN_LEFT:.1}" y="{:.1}" font-weight="bold">{}</text>"#,
            top - 8.0,
            escape(&panel.label)
        );
        for &tick in &ticks {
            let y = y_of(tick);
            let _ = writeln!(
                out,
                r##"<line x1="{MARGIN_LEFT:.1}" y1="{y:.1}" x2="{:.1}" y2="{y:.1}" stroke="#e0e0e0"/>"##,
                MARGIN_LEFT + plot_width
            );
            let _ = writeln!(
                out,
                r#"<text x="{:.1}" y="{:.1}" text-anchor="end">{}</text>"#,
                MARGIN_LEFT - 6.0,
                y + 4.0,
                escape(&tick_label(tick))
            );
        }
        for &tick in &time_ticks {
            if tick < t_low || tick > t_high {
                continue;
            }
            let x = x_of(tick);
            let _ = writeln!(
                out,
                r##"<line x1="{x:.1}" y1="{top:.1}" x2="{x:.1}" y2="{bottom:.1}" stroke="#e0e0e0"/>"##
            );
            if index + 1 == spec.panels.len() {
                let _ = writeln!(
                    out,
                    r#"<text x="{x:.1}" y="{:.1}" text-anchor="middle">{}</text>"#,
                    bottom + 16.0,
                    escape(&tick_label(tick))
                );
            }
        }
        for (t, label) in &spec.markers {
            let x = x_of(*t);
            let _ = writeln!(
                out,
                r##"<line x1="{x:.1}" y1="{top:.1}" x2="{x:.1}" y2="{bottom:.1}" stroke="#888888" stroke-dasharray="4 3"/>"##
            );
            if index == 0 {
                // Labels near the right edge go on the line's left.
                let (x_text, anchor) = if x > MARGIN_LEFT + 0.8 * plot_width {
                    (x - 3.0, "end")
                } else {
                    (x + 3.0, "start")
                };
                let _ = writeln!(
                    out,
                    r##"<text x="{x_text:.1}" y="{:.1}" font-size="10" fill="#555555" text-anchor="{anchor}">{}</text>"##,
                    top + 11.0,
                    escape(label)
                );
            }
        }
        let _ = writeln!(
            out,
            r##"<rect x="{MARGIN_LEFT:.1}" y="{top:.1}" width="{plot_width:.1}" height="{PANEL_HEIGHT:.1}" fill="none" stroke="#333333"/>"##
        );
        for (value, label) in panel.guides.iter().filter(|guide| guide.0.is_finite()) {
            let y = y_of(*value);
            let _ = writeln!(
                out,
                r##"<line x1="{MARGIN_LEFT:.1}" y1="{y:.1}" x2="{:.1}" y2="{y:.1}" stroke="#c62828" stroke-dasharray="6 3"/>"##,
                MARGIN_LEFT + plot_width
            );
            let _ = writeln!(
                out,
                r##"<text x="{:.1}" y="{:.1}" font-size="10" fill="#c62828" text-anchor="end">{}</text>"##,
                MARGIN_LEFT + plot_width - 3.0,
                y - 3.0,
                escape(label)
            );
        }
        // One line per run of finite values: an unknown value breaks it.
        for run in panel
            .points
            .split(|p| !p.1.is_finite())
            .filter(|run| !run.is_empty())
        {
            let mut path = String::with_capacity(run.len() * 14);
            for &(t, value) in run {
                let _ = write!(path, "{:.2},{:.2} ", x_of(t), y_of(value));
            }
            let _ = writeln!(
                out,
                r#"<polyline fill="none" stroke="{}" stroke-width="1.5" points="{}"/>"#,
                COLOURS[index % COLOURS.len()],
                path.trim_end()
            );
        }
    }
    let _ = writeln!(
        out,
        r#"<text x="{:.1}" y="{:.1}" text-anchor="middle">{}</text>"#,
        MARGIN_LEFT + plot_width / 2.0,
        height - 10.0,
        escape(&spec.time_label)
    );
    out.push_str("</svg>\n");
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ticks_are_round_and_enclose_the_range() {
        assert_eq!(
            nice_ticks(0.0, 4.822, 5),
            vec![0.0, 1.0, 2.0, 3.0, 4.0, 5.0]
        );
        assert_eq!(
            nice_ticks(-0.031, 0.032, 4),
            vec![-0.04, -0.02, 0.0, 0.02, 0.04]
        );
        let flat = nice_ticks(2.0, 2.0, 4);
        assert!(flat[0] < 2.0 && *flat.last().unwrap_or(&0.0) > 2.0);
    }

    #[test]
    fn text_is_escaped_and_the_document_is_closed() {
        let svg = render(&PlotSpec {
            title: "a < b & \"c\"".to_string(),
            time_label: "t [s]".to_string(),
            time_range: (0.0, 1.0),
            panels: vec![Panel {
                label: "x [m]".to_string(),
                points: vec![(0.0, 0.0), (0.5, 1.0), (1.0, 0.0)],
                guides: Vec::new(),
            }],
            markers: vec![(0.5, "peak".to_string())],
        });
        assert!(svg.contains("a &lt; b &amp; &quot;c&quot;"));
        assert!(svg.starts_with("<svg") && svg.ends_with("</svg>\n"));
        assert_eq!(svg.matches("<polyline").count(), 1);
        assert!(svg.contains(">peak</text>"));
    }
}
