//! Drawings for the report, as SVG built by hand: a free-body diagram is a
//! box and a few arrows, which a plotting crate would not make simpler, and
//! the text has to go through the report's HTML escaping anyway.
//!
//! Hook for vector quantities: once a sheet can declare the forces on a body
//! (issue 5), the report builder turns each body into a [`FreeBody`] and adds
//! the [`free_body`] figure to the body's section. Until then the drawing is
//! exercised by its tests only.

use std::fmt::Write as _;

use super::html::escape;
use super::model::Figure;

/// One force on a body: its label, its magnitude as shown, and its
/// components (any one unit for all arrows of a diagram; x right, y up).
#[derive(Clone, Debug, PartialEq)]
pub struct ForceArrow {
    /// The force's name: `T_up`, `W`.
    pub label: String,
    /// Its magnitude with unit, as shown: `19.22 kN`.
    pub magnitude: String,
    /// Horizontal component (right positive).
    pub x: f64,
    /// Vertical component (up positive).
    pub y: f64,
}

/// A body with the forces acting on it and, if known, the resultant (ΣF = m·a).
#[derive(Clone, Debug, PartialEq)]
pub struct FreeBody {
    /// The body's name.
    pub body: String,
    /// The forces, drawn to scale in direction and length.
    pub forces: Vec<ForceArrow>,
    /// The resultant force, drawn dashed.
    pub resultant: Option<ForceArrow>,
}

const SIZE: f64 = 360.0;
const CENTRE: f64 = SIZE / 2.0;
const BODY_HALF: f64 = 34.0;
const LONGEST: f64 = 120.0;
const SHORTEST: f64 = 18.0;

/// Draws a free-body diagram: the body as a box in the middle, each force as
/// an arrow pointing along its direction from the box, its length
/// proportional to its magnitude (the longest is 120 px), labelled with name
/// and magnitude; the resultant dashed.
pub fn free_body(diagram: &FreeBody) -> Figure {
    let largest = diagram
        .forces
        .iter()
        .chain(diagram.resultant.as_ref())
        .map(|force| libm::hypot(force.x, force.y))
        .filter(|magnitude| magnitude.is_finite())
        .fold(0.0_f64, f64::max);
    let mut svg = String::new();
    let _ = write!(
        svg,
        "<svg xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 {SIZE} {SIZE}\" width=\"{SIZE}\" height=\"{SIZE}\" role=\"img\" aria-label=\"free-body diagram of {}\">\
<defs><marker id=\"head\" viewBox=\"0 0 10 10\" refX=\"9\" refY=\"5\" markerWidth=\"7\" markerHeight=\"7\" orient=\"auto-start-reverse\"><path d=\"M0,0 L10,5 L0,10 z\" fill=\"context-stroke\"/></marker></defs>\
<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" rx=\"4\" fill=\"#eef1f5\" stroke=\"#16181d\" stroke-width=\"1.5\"/>\
<text x=\"{CENTRE}\" y=\"{}\" text-anchor=\"middle\" font-size=\"12\" font-family=\"sans-serif\">{}</text>",
        escape(&diagram.body),
        CENTRE - BODY_HALF,
        CENTRE - BODY_HALF,
        2.0 * BODY_HALF,
        2.0 * BODY_HALF,
        CENTRE + 4.0,
        escape(&diagram.body)
    );
    for force in &diagram.forces {
        arrow(&mut svg, force, largest, "#16181d", false);
    }
    if let Some(resultant) = &diagram.resultant {
        arrow(&mut svg, resultant, largest, "#a3161b", true);
    }
    svg.push_str("</svg>");
    Figure {
        svg,
        caption: format!(
            "Free-body diagram of {}: arrows to scale in direction and length{}",
            diagram.body,
            if diagram.resultant.is_some() {
                "; dashed: the resultant ΣF = m·a"
            } else {
                ""
            }
        ),
    }
}

/// An arrow starting at the edge of the body along the force's direction.
fn arrow(svg: &mut String, force: &ForceArrow, largest: f64, colour: &str, dashed: bool) {
    let magnitude = libm::hypot(force.x, force.y);
    if !magnitude.is_finite() || magnitude == 0.0 || largest == 0.0 {
        return;
    }
    let (dx, dy) = (force.x / magnitude, -force.y / magnitude);
    let length = (magnitude / largest * LONGEST).max(SHORTEST);
    // Leave the box where the direction crosses its edge.
    let to_edge = BODY_HALF / dx.abs().max(dy.abs());
    let (x0, y0) = (CENTRE + dx * to_edge, CENTRE + dy * to_edge);
    let (x1, y1) = (x0 + dx * length, y0 + dy * length);
    let dash = if dashed {
        " stroke-dasharray=\"5 3\""
    } else {
        ""
    };
    let anchor = if dx > 0.3 {
        "start"
    } else if dx < -0.3 {
        "end"
    } else {
        "middle"
    };
    let (tx, ty) = (
        x1 + dx * 8.0,
        y1 + dy * 8.0 + if dy > 0.3 { 10.0 } else { 0.0 },
    );
    let _ = write!(
        svg,
        "<line x1=\"{x0:.1}\" y1=\"{y0:.1}\" x2=\"{x1:.1}\" y2=\"{y1:.1}\" stroke=\"{colour}\" stroke-width=\"2\"{dash} marker-end=\"url(#head)\"/>\
<text x=\"{tx:.1}\" y=\"{ty:.1}\" text-anchor=\"{anchor}\" font-size=\"11\" font-family=\"sans-serif\" fill=\"{colour}\">{} = {}</text>",
        escape(&force.label),
        escape(&force.magnitude)
    );
}
