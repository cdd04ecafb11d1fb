//! The conversion audit: every quantity written in a unit other than
//! coherent SI, every value shown in one, and every hand-typed factor, each
//! with its exact factor, whether that factor is exact or rounded, and the
//! document it comes from; the unit systems used; every gravity value.

use rustc_hash::FxHashMap;

use super::context::{Context, Owner};
use super::gravity::{self, GravityUse};
use super::hand_factors;
use crate::base::Span;
use crate::eval::{CellStatus, Evaluated};
use crate::syntax::ast::{ExprKind, UnitExpr};
use crate::units::{self, Dimension, ExactFactor, UnitSystem, catalog};

/// How a conversion enters the sheet.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ConversionKind {
    /// A quantity written with a unit: `1450 lbf`.
    Written,
    /// A value shown in a unit: a declared `[kN]` or the display system's choice.
    Displayed,
    /// A bare number typed as a conversion factor: `* 2.2`.
    HandTyped,
}

/// Whether a factor is the exact value of its definition.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Exactness {
    /// Exact by definition, with a terminating decimal (1 ft = 0.3048 m).
    Exact,
    /// Exact by definition, but its decimal does not end (1 psi =
    /// 8896443230521/1290320000 Pa; 1 deg = π/180): evaluated rounded once to
    /// 17 significant digits.
    ExactFraction,
    /// Typed by hand and rounded (2.2 for 2.2046226…).
    Rounded,
}

impl Exactness {
    /// Whether the factor is exact by definition.
    pub fn is_exact(self) -> bool {
        self != Exactness::Rounded
    }
}

/// One conversion a checker should see.
#[derive(Clone, Debug, PartialEq)]
pub struct ConversionEntry {
    /// Where it is.
    pub span: Span,
    /// How it enters the sheet.
    pub kind: ConversionKind,
    /// The cell it belongs to, or `check` for a check.
    pub location: String,
    /// As written: `1450 lbf`, `[kN]`, `/ 32.174`.
    pub written: String,
    /// The unit converted from (written or shown), in heft syntax; for a
    /// hand-typed factor, what it converts in words ("pounds-mass per kilogram").
    pub unit: String,
    /// The value in `unit` (as written, or as shown).
    pub value: Option<f64>,
    /// The value in coherent SI units.
    pub si_value: Option<f64>,
    /// The coherent SI unit of `si_value`: `N`, `kg`, `Pa`, `m/s^2`.
    pub si_unit: String,
    /// The exact factor (SI value of one `unit`), written out in full or as a fraction.
    pub factor_exact: String,
    /// The factor to 20 significant digits.
    pub factor_decimal: String,
    /// For a hand-typed factor: the number typed.
    pub typed_factor: Option<f64>,
    /// Exact, exact fraction, or rounded.
    pub exactness: Exactness,
    /// For a rounded factor: (typed − exact) / exact.
    pub relative_error: Option<f64>,
    /// The definition of each unit involved.
    pub definitions: Vec<String>,
    /// The documents those definitions come from (no repeats).
    pub sources: Vec<&'static str>,
}

/// The units of one system a sheet uses.
#[derive(Clone, Debug, PartialEq)]
pub struct SystemUse {
    /// The system.
    pub system: UnitSystem,
    /// Its symbols in order of first use.
    pub symbols: Vec<String>,
    /// How many times its units are written.
    pub count: usize,
}

/// Everything a checker needs to sign off the conversions of a sheet.
#[derive(Clone, Debug, PartialEq)]
pub struct ConversionAudit {
    /// Every conversion, in file order.
    pub conversions: Vec<ConversionEntry>,
    /// The unit systems written in the sheet.
    pub systems: Vec<SystemUse>,
    /// Every gravity value used.
    pub gravity: Vec<GravityUse>,
}

impl ConversionAudit {
    /// How many conversions use a factor exact by definition.
    pub fn n_exact(&self) -> usize {
        self.conversions
            .iter()
            .filter(|c| c.exactness.is_exact())
            .count()
    }

    /// How many conversions use a rounded, hand-typed factor.
    pub fn n_rounded(&self) -> usize {
        self.conversions.len() - self.n_exact()
    }

    /// How many different values of gravity the sheet uses.
    pub fn n_gravity_values(&self) -> usize {
        let mut values: Vec<f64> = Vec::new();
        for used in &self.gravity {
            if !values.iter().any(|&v| gravity::same_value(v, used.si)) {
                values.push(used.si);
            }
        }
        values.len()
    }
}

/// Builds the conversion audit of an evaluated sheet.
pub fn conversion_audit(evaluated: &Evaluated) -> ConversionAudit {
    let context = Context::new(evaluated);
    let mut builder = Builder {
        context: &context,
        factors: FxHashMap::default(),
        conversions: Vec::new(),
        systems: Vec::new(),
    };
    builder.written();
    builder.displayed();
    let hand_factors = hand_factors::find(&context);
    builder.hand_typed(&hand_factors);
    let mut conversions = builder.conversions;
    conversions.sort_by_key(|c| (c.span.start(), c.kind as u8));
    let mut systems = builder.systems;
    systems.sort_by_key(|s| s.system);
    ConversionAudit {
        conversions,
        systems,
        gravity: gravity::collect(&context, &hand_factors),
    }
}

/// A unit's exact factor and what the audit says about it.
#[derive(Clone)]
struct UnitFacts {
    factor: ExactFactor,
    dimension: Dimension,
    definitions: Vec<String>,
    sources: Vec<&'static str>,
}

struct Builder<'c, 'a> {
    context: &'c Context<'a>,
    /// Facts per unit text (a sheet repeats a few units many times).
    factors: FxHashMap<String, Option<UnitFacts>>,
    conversions: Vec<ConversionEntry>,
    systems: Vec<SystemUse>,
}

impl Builder<'_, '_> {
    fn facts(&mut self, text: &str, factors: &[(&str, i32)]) -> Option<UnitFacts> {
        if let Some(facts) = self.factors.get(text) {
            return facts.clone();
        }
        let facts = unit_facts(factors);
        self.factors.insert(text.to_string(), facts.clone());
        facts
    }

    fn note_system(&mut self, unit: &UnitExpr) {
        for factor in &unit.factors {
            let Some(def) = catalog().get(&factor.symbol) else {
                continue;
            };
            // Seconds and radians belong to every system.
            let system = if def.dimension == Dimension::TIME || def.dimension.is_dimensionless() {
                UnitSystem::Shared
            } else {
                def.system
            };
            let index = match self.systems.iter().position(|s| s.system == system) {
                Some(index) => index,
                None => {
                    self.systems.push(SystemUse {
                        system,
                        symbols: Vec::new(),
                        count: 0,
                    });
                    self.systems.len() - 1
                }
            };
            let system = &mut self.systems[index];
            system.count += 1;
            if !system.symbols.iter().any(|s| **s == *factor.symbol) {
                system.symbols.push(factor.symbol.to_string());
            }
        }
    }

    /// Quantities written with a unit, and declared units.
    fn written(&mut self) {
        let context = self.context;
        for id in 0..context.sheet.cells.len() {
            if let Some(unit) = context.sheet.cell(id).unit {
                self.note_system(unit);
            }
        }
        for (owner, root) in context.expressions() {
            let mut found = Vec::new();
            root.walk(&mut |node| match &node.kind {
                ExprKind::Quantity {
                    value,
                    number_span,
                    unit,
                } => found.push((node.span, *value, Some(*number_span), unit)),
                ExprKind::UnitValue(unit) => found.push((node.span, 1.0, None, unit)),
                _ => {}
            });
            for (span, value, number_span, unit) in found {
                self.note_system(unit);
                let text = context.text(unit.span);
                let symbols: Vec<(&str, i32)> = unit.symbols().collect();
                let Some(facts) = self.facts(text, &symbols) else {
                    continue;
                };
                if is_coherent(&facts.factor) {
                    continue;
                }
                let written = match number_span {
                    Some(number) => format!("{} {text}", context.text(number)),
                    None => format!("[{text}]"),
                };
                let entry = self.entry(
                    span,
                    owner,
                    ConversionKind::Written,
                    written,
                    text,
                    Some(value),
                    facts,
                );
                self.conversions.push(entry);
            }
        }
    }

    /// Values shown in a unit other than coherent SI: declared units, and
    /// the display system's choice for results.
    fn displayed(&mut self) {
        let context = self.context;
        for cell in context.evaluated.cells() {
            if cell.status != CellStatus::Ok || (cell.is_input && !cell.declared_unit) {
                continue;
            }
            let (Some(value), text) = (cell.value, &*cell.display.text) else {
                continue;
            };
            if text.is_empty() {
                continue;
            }
            let Ok(unit) = crate::syntax::parse_unit(text) else {
                continue;
            };
            let symbols: Vec<(&str, i32)> = unit.symbols().collect();
            let Some(facts) = self.facts(text, &symbols) else {
                continue;
            };
            if is_coherent(&facts.factor) {
                continue;
            }
            let span = context.sheet.cell(cell.id).name.span;
            let entry = self.entry(
                span,
                Owner::Cell(cell.id),
                ConversionKind::Displayed,
                format!("shown in {text}"),
                text,
                Some(cell.display.value_of(value.si)),
                facts,
            );
            self.conversions.push(entry);
        }
    }

    fn hand_typed(&mut self, found: &[hand_factors::HandFactorUse<'_>]) {
        let context = self.context;
        for used in found {
            let factor = &used.factor;
            let Some(facts) = unit_facts(&factor.exact_units()) else {
                continue;
            };
            let exact = facts.factor.to_f64();
            let op = if used.op == crate::syntax::ast::BinaryOp::Multiply {
                "*"
            } else {
                "/"
            };
            let mut entry = self.entry(
                used.number.span,
                used.owner,
                ConversionKind::HandTyped,
                format!("{op} {}", context.text(used.number.span)),
                &factor.converts(),
                None,
                facts,
            );
            entry.si_value = None;
            entry.si_unit = String::new();
            entry.typed_factor = Some(used.value);
            entry.exactness = Exactness::Rounded;
            entry.relative_error = Some((used.value - exact) / exact);
            self.conversions.push(entry);
        }
    }

    #[allow(clippy::too_many_arguments)]
    fn entry(
        &self,
        span: Span,
        owner: Owner,
        kind: ConversionKind,
        written: String,
        unit: &str,
        value: Option<f64>,
        facts: UnitFacts,
    ) -> ConversionEntry {
        let sheet = self.context.sheet;
        let factor_f64 = facts.factor.to_f64();
        ConversionEntry {
            span,
            kind,
            location: match owner {
                Owner::Cell(id) => sheet.cell(id).name.text.to_string(),
                Owner::Check(..) => "check".to_string(),
            },
            written,
            unit: unit.to_string(),
            value,
            si_value: value.map(|v| v * factor_f64),
            si_unit: si_unit_text(facts.dimension),
            factor_exact: facts.factor.exact_text(),
            factor_decimal: facts.factor.approximate_text(20),
            typed_factor: None,
            exactness: if facts.factor.terminates() {
                Exactness::Exact
            } else {
                Exactness::ExactFraction
            },
            relative_error: None,
            definitions: facts.definitions,
            sources: facts.sources,
        }
    }
}

/// The exact factor, dimension, definitions and sources of a product of
/// catalog units.
fn unit_facts(factors: &[(&str, i32)]) -> Option<UnitFacts> {
    let catalog = catalog();
    let factor = units::exact_factor(factors.iter().copied())?;
    let dimension = units::resolve(factors.iter().copied()).ok()?.dimension;
    let mut definitions = Vec::new();
    let mut sources = Vec::new();
    for (symbol, _) in factors {
        let def = catalog.get(symbol)?;
        let definition = format!("{} ({})", def.definition, def.name);
        if !definitions.contains(&definition) {
            definitions.push(definition);
        }
        if !sources.contains(&def.source) {
            sources.push(def.source);
        }
    }
    Some(UnitFacts {
        factor,
        dimension,
        definitions,
        sources,
    })
}

/// Whether one of the unit is one coherent SI unit (factor exactly 1).
fn is_coherent(factor: &ExactFactor) -> bool {
    factor.pi_power == 0 && factor.ratio == ExactFactor::one().ratio
}

/// The coherent SI unit of a dimension, by its special name where it has one.
pub(super) fn si_unit_text(dimension: Dimension) -> String {
    const NAMED: &[(Dimension, &str)] = &[
        (Dimension::FORCE, "N"),
        (Dimension::PRESSURE, "Pa"),
        (Dimension::ENERGY, "J"),
        (Dimension::POWER, "W"),
        (Dimension::FREQUENCY, "1/s"),
    ];
    NAMED.iter().find(|(d, _)| *d == dimension).map_or_else(
        || {
            if dimension.is_dimensionless() {
                String::new()
            } else {
                dimension.si_units()
            }
        },
        |(_, text)| (*text).to_string(),
    )
}
