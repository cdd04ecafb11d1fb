//! Every value of gravitational acceleration a sheet uses: the built-in
//! `g0`, the units defined with it (lbf, kgf, psi, …), cells that hold a
//! gravity (`g = 9.81 m/s^2`), inline literals (`32.2 ft/s^2`), and bare
//! hand-typed numbers (`* 9.81`).

use super::context::{Context, Owner};
use super::hand_factors::HandFactorUse;
use crate::base::Span;
use crate::sheet::CellId;
use crate::syntax::ast::{Expr, ExprKind, Target, UnitExpr};
use crate::units::{self, Dimension, STANDARD_GRAVITY};

/// How a gravity value enters the sheet.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum GravityKind {
    /// The built-in `g0`.
    BuiltIn,
    /// A unit defined with standard gravity (lbf, kgf, psi, …).
    GravitationalUnit,
    /// A cell that holds a gravity (`g = 9.81 m/s^2`).
    Cell,
    /// An acceleration literal near g in a formula (`32.2 ft/s^2`).
    Literal,
    /// A bare number used as gravity (`m * 9.81`).
    BareNumber,
}

impl GravityKind {
    /// Lower-case words for reports and JSON.
    pub fn as_str(self) -> &'static str {
        match self {
            GravityKind::BuiltIn => "built-in g0",
            GravityKind::GravitationalUnit => "unit defined with g0",
            GravityKind::Cell => "cell",
            GravityKind::Literal => "literal",
            GravityKind::BareNumber => "bare number",
        }
    }
}

/// One gravity value as the sheet uses it (the first place of each).
#[derive(Clone, Debug, PartialEq)]
pub struct GravityUse {
    /// Where it is first written.
    pub span: Span,
    /// How it enters the sheet.
    pub kind: GravityKind,
    /// As written: `g0`, `lbf`, `g = 9.81 m/s^2`, `32.2 ft/s^2`, `9.81`.
    pub written: String,
    /// The value in m/s².
    pub si: f64,
    /// When it was typed (cells, literals, bare numbers): the number, the
    /// unit it is in, and that unit's SI factor.
    pub typed: Option<Typed>,
    /// How many times it is used.
    pub count: usize,
}

impl GravityUse {
    /// (value − g0) / g0.
    pub fn relative_to_g0(&self) -> f64 {
        (self.si - STANDARD_GRAVITY) / STANDARD_GRAVITY
    }

    /// Whether the value is standard gravity (to rounding of the last bit).
    pub fn is_standard(&self) -> bool {
        same_value(self.si, STANDARD_GRAVITY)
    }
}

/// A gravity as typed: `9.81` in `m/s^2`.
#[derive(Clone, Debug, PartialEq)]
pub struct Typed {
    /// The number.
    pub value: f64,
    /// The unit, in heft syntax.
    pub unit: String,
    /// The SI value of one of that unit.
    pub unit_si_factor: f64,
}

/// Whether two gravity values are the same to within floating-point noise.
pub(super) fn same_value(a: f64, b: f64) -> bool {
    ((a - b) / b).abs() < 1e-12
}

/// Units whose definition contains standard gravity.
const GRAVITATIONAL_UNITS: &[&str] = &["lbf", "kgf", "tf", "kip", "psi", "ksi", "psf", "hp"];

/// A literal acceleration counts as a gravity between these (m/s²): the
/// rounded values people type (9.8, 32 ft/s² = 9.75) and local gravity
/// (9.78 to 9.83), not a 10 m/s² rough estimate or a drop test's 2 g.
const NEAR_G: std::ops::RangeInclusive<f64> = 9.7..=9.9;

/// Every gravity value the sheet uses, one entry per distinct way of
/// writing it, in order of first appearance.
pub(super) fn collect(
    context: &Context<'_>,
    hand_factors: &[HandFactorUse<'_>],
) -> Vec<GravityUse> {
    let mut collector = Collector::new();
    for id in 0..context.sheet.cells.len() {
        collector.visit_cell(context, id);
    }
    for (owner, root) in context.expressions() {
        let whole_input = is_whole_input(owner, root);
        root.walk(&mut |node| collector.visit_node(context, whole_input, node));
    }
    collector.finish(context, hand_factors)
}

/// Whether `root` is the whole formula of an input cell (`g = 9.81 m/s^2`):
/// such a literal is the cell's value, judged with the cell.
pub(super) fn is_whole_input(owner: Owner, root: &Expr) -> bool {
    matches!(owner, Owner::Cell(_)) && matches!(root.kind, ExprKind::Quantity { .. })
}

/// Gathers gravity values from cells and expression nodes, so the lints can
/// do it in the same walk as everything else.
pub(super) struct Collector {
    uses: Vec<GravityUse>,
    /// Where `g0` is among the built-in constants.
    g0: Option<usize>,
}

impl Collector {
    /// An empty collector.
    pub fn new() -> Self {
        Collector {
            uses: Vec::new(),
            g0: units::CONSTANTS.iter().position(|c| c.name == "g0"),
        }
    }

    fn add(&mut self, span: Span, kind: GravityKind, written: &str, si: f64, typed: Option<Typed>) {
        match self
            .uses
            .iter_mut()
            .find(|known| known.kind == kind && known.written == written)
        {
            Some(known) => {
                known.count += 1;
                if span.start() < known.span.start() {
                    known.span = span;
                }
            }
            None => self.uses.push(GravityUse {
                span,
                kind,
                written: written.to_string(),
                si,
                typed,
                count: 1,
            }),
        }
    }

    /// A cell that holds a gravity, and a declared unit defined with g0.
    pub fn visit_cell(&mut self, context: &Context<'_>, id: CellId) {
        let Some(cell) = context.sheet.formula_cell(id) else {
            return;
        };
        if let Some(unit) = &cell.unit {
            self.add_unit(context, unit);
        }
        let description = cell.description.as_ref().map(|d| d.text.as_str());
        if !is_gravity_name(&cell.name.text, description) {
            return;
        }
        let Some(value) = context.value(id) else {
            return;
        };
        // Gravity is often written downward-negative (`g = -9.81 m/s^2`):
        // its size is what is compared.
        if value.dimension != Dimension::ACCELERATION || value.si == 0.0 {
            return;
        }
        let typed = match &cell.expr.kind {
            ExprKind::Quantity { value, unit, .. } => context.resolve(unit).map(|resolved| Typed {
                value: value.abs(),
                unit: context.text(unit.span).to_string(),
                unit_si_factor: resolved.si_factor,
            }),
            _ => None,
        };
        let written = format!("{} = {}", cell.name.text, context.text(cell.expr.span));
        self.add(
            cell.name.span.to(cell.expr.span),
            GravityKind::Cell,
            &written,
            value.si.abs(),
            typed,
        );
    }

    /// `g0`, a unit defined with g0, or an acceleration literal near g.
    pub fn visit_node(&mut self, context: &Context<'_>, whole_input: bool, node: &Expr) {
        match &node.kind {
            ExprKind::Name(name) if self.g0.map(Target::Constant) == Some(name.target) => {
                self.add(
                    node.span,
                    GravityKind::BuiltIn,
                    "g0",
                    STANDARD_GRAVITY,
                    None,
                );
            }
            ExprKind::Quantity {
                value,
                number_span,
                unit,
            } => {
                self.add_unit(context, unit);
                if whole_input {
                    return;
                }
                if let Some(resolved) = context.resolve(unit)
                    && resolved.dimension == Dimension::ACCELERATION
                    && NEAR_G.contains(&(value * resolved.si_factor))
                {
                    // Not the node's span: a bracketed literal's span includes the brackets.
                    let span = number_span.to(unit.span);
                    self.add(
                        span,
                        GravityKind::Literal,
                        context.text(span),
                        value * resolved.si_factor,
                        Some(Typed {
                            value: *value,
                            unit: context.text(unit.span).to_string(),
                            unit_si_factor: resolved.si_factor,
                        }),
                    );
                }
            }
            ExprKind::UnitValue(unit) => self.add_unit(context, unit),
            _ => {}
        }
    }

    /// The uses, with the bare numbers the hand-factor lint found, in order
    /// of first appearance.
    pub fn finish(
        mut self,
        context: &Context<'_>,
        hand_factors: &[HandFactorUse<'_>],
    ) -> Vec<GravityUse> {
        for used in hand_factors.iter().filter(|used| used.factor.is_gravity()) {
            // The factor is g0 in the unit the number stands for.
            let unit_si_factor = STANDARD_GRAVITY / used.factor.exact().to_f64();
            let unit = if unit_si_factor == 1.0 {
                "m/s^2"
            } else {
                "ft/s^2"
            };
            self.add(
                used.number.span,
                GravityKind::BareNumber,
                context.text(used.number.span),
                used.value * unit_si_factor,
                Some(Typed {
                    value: used.value,
                    unit: unit.to_string(),
                    unit_si_factor,
                }),
            );
        }
        self.uses.sort_by_key(|used| used.span.start());
        self.uses
    }

    /// Adds each symbol of `unit` that is defined with standard gravity.
    fn add_unit(&mut self, context: &Context<'_>, unit: &UnitExpr) {
        for factor in &unit.factors {
            if GRAVITATIONAL_UNITS.contains(&&*factor.symbol) {
                self.add(
                    factor.span,
                    GravityKind::GravitationalUnit,
                    context.text(factor.span),
                    STANDARD_GRAVITY,
                    None,
                );
            }
        }
    }
}

/// `g`, `g_site`, `gravity`, a cell named like `g0`, or a description
/// that speaks of gravity.
pub(super) fn is_gravity_name(name: &str, description: Option<&str>) -> bool {
    matches!(name, "g" | "g0" | "G0" | "gn")
        || name.starts_with("g_")
        || contains_ignoring_case(name, "grav")
        || description.is_some_and(|d| contains_ignoring_case(d, "gravit"))
}

/// ASCII case-insensitive substring test, without allocating (it runs on
/// every cell name).
fn contains_ignoring_case(haystack: &str, needle: &str) -> bool {
    haystack
        .as_bytes()
        .windows(needle.len())
        .any(|window| window.eq_ignore_ascii_case(needle.as_bytes()))
}
