//! The lints: each reads the [`Context`] and adds findings with a stable
//! code, the place, and a fix with the number it would give.

use super::context::{Context, Owner};
use super::format_relative as percent;
use super::gravity::{self, GravityKind, GravityUse, same_value};
use super::hand_factors::{self, Family, HandFactorUse};
use super::rewrite::evaluate_rewritten;
use super::roles::{Evidence, Role, role_of};
use crate::diag::{Code, Diagnostic};
use crate::syntax::Span;
use crate::syntax::ast::{BinaryOp, Expr, ExprKind};
use crate::units::{self, Dimension, Quantity, STANDARD_GRAVITY, UnitSystem, format_significant};

/// Runs every lint.
pub(super) fn run(context: &Context<'_>) -> Vec<Diagnostic> {
    let hand_factors = hand_factors::find(context);
    let mut findings = Vec::new();
    for used in &hand_factors {
        findings.push(hand_conversion_factor(context, used));
    }
    mass_weight_mixups(context, &hand_factors, &mut findings);
    let gravity = gravity::collect(context, &hand_factors);
    findings.extend(gravity_inconsistent(context, &gravity));
    rounded_gravity(&gravity, &mut findings);
    findings.extend(mixed_systems(context));
    unused_inputs(context, &mut findings);
    shadowed_constants(context, &mut findings);
    findings
}

// ---------------------------------------------------------------------------
// mass-weight-mixup

/// Cells named or described as a mass that hold a force, and the reverse.
/// A cell whose formula has a hand-typed factor is left to that lint, whose
/// fix already aims at the right dimension.
fn mass_weight_mixups(
    context: &Context<'_>,
    hand_factors: &[HandFactorUse<'_>],
    findings: &mut Vec<Diagnostic>,
) {
    let sheet = context.sheet;
    for id in 0..sheet.cells.len() {
        let cell = sheet.cell(id);
        let description = cell.description.as_ref().map(|d| d.text.as_str());
        let Some((role, evidence)) = role_of(&cell.name.text, description) else {
            continue;
        };
        let Some(value) = context.value(id) else {
            continue;
        };
        let wrong = match role {
            Role::Mass => value.dimension == Dimension::FORCE,
            Role::Force => value.dimension == Dimension::MASS,
        };
        if !wrong
            || hand_factors
                .iter()
                .any(|used| used.owner == Owner::Cell(id))
        {
            continue;
        }
        findings.push(mass_weight_mixup(context, id, role, evidence, value));
    }
}

/// Gravitational counterparts: a mass unit and the force unit that is its weight.
const COUNTERPARTS: &[(&str, &str)] = &[("lbm", "lbf"), ("kg", "kgf"), ("t", "tf")];

fn mass_weight_mixup(
    context: &Context<'_>,
    id: usize,
    role: Role,
    evidence: Evidence,
    value: Quantity,
) -> Diagnostic {
    let cell = context.sheet.cell(id);
    let name = &cell.name.text;
    let formula = context.text(cell.expr.span);
    let (held, converted, operation) = match role {
        Role::Mass => (
            "a force",
            Quantity::new(value.si / STANDARD_GRAVITY, Dimension::MASS),
            "/ g0",
        ),
        Role::Force => (
            "a mass",
            Quantity::new(value.si * STANDARD_GRAVITY, Dimension::FORCE),
            "* g0",
        ),
    };
    let written = match &cell.expr.kind {
        ExprKind::Quantity {
            number_span, unit, ..
        } => Some((context.text(*number_span), context.text(unit.span))),
        _ => None,
    };
    // An input written in the gravitational counterpart of the right unit
    // (`120 lbf` for a mass) is fixed by swapping the unit: 120 lbf is the
    // weight of 120 lbm exactly, since lbf is defined with g0.
    let swapped = written.and_then(|(number, unit)| {
        COUNTERPARTS.iter().find_map(|&(mass, force)| match role {
            Role::Mass if unit == force => Some((number, unit, mass)),
            Role::Force if unit == mass => Some((number, unit, force)),
            _ => None,
        })
    });
    let what = match written {
        Some((_, unit)) => format!("is written in {unit}, a unit of {held}"),
        None => format!("holds {held} ({})", context.show(value)),
    };
    let message = format!(
        "`{name}` is {} as {} but {what}: {}",
        evidence.verb(),
        role.describe(),
        match role {
            Role::Mass => "a weight where a mass belongs",
            Role::Force => "a mass where a weight belongs",
        }
    );
    let rename = match (role, evidence) {
        (_, Evidence::Description) => "change its description".to_string(),
        (Role::Mass, _) => format!("rename it (`{}`)", renamed(name, "W")),
        (Role::Force, _) => format!("rename it (`{}`)", renamed(name, "m")),
    };
    let intended = match role {
        Role::Mass => "a mass",
        Role::Force => "a weight",
    };
    // The other system's unit, so the number is not just the one typed.
    let other_system = match context.system {
        crate::units::DisplaySystem::Si => crate::units::DisplaySystem::Fps,
        crate::units::DisplaySystem::Fps => crate::units::DisplaySystem::Si,
    };
    let in_other = |q: Quantity| {
        let unit = crate::units::pick_unit(q.dimension, q.si, other_system);
        context.show_in(q.si, &unit.text, unit.si_factor)
    };
    let help = match swapped {
        Some((number, unit, counterpart)) => format!(
            "if it is {intended}, write `{name} = {number} {counterpart}` ({} = {}; {number} {unit} is its {}); otherwise {rename}",
            context.show(converted),
            in_other(converted),
            match role {
                Role::Mass => "weight",
                Role::Force => "mass",
            }
        ),
        None => {
            let fix = if matches!(
                cell.expr.kind,
                ExprKind::Name(_) | ExprKind::Quantity { .. }
            ) {
                format!("{formula} {operation}")
            } else {
                format!("({formula}) {operation}")
            };
            format!(
                "if it is {intended}, write `{name} = {fix}` (= {}); otherwise {rename}",
                context.show(converted)
            )
        }
    };
    let mut diagnostic =
        Diagnostic::warning(Code::MassWeightMixup, cell.expr.span, message).with_help(help);
    diagnostic = match (evidence, &cell.description) {
        (Evidence::Description, Some(description)) => diagnostic.with_label(
            description.span,
            format!("described as {}", role.describe()),
        ),
        _ => diagnostic.with_label(cell.name.span, format!("named as {}", role.describe())),
    };
    diagnostic
}

/// `m_part` → `W_part`, `W_casting` → `m_casting`, `T` → `m`.
fn renamed(name: &str, prefix: &str) -> String {
    match name.split_once('_') {
        Some((_, rest)) => format!("{prefix}_{rest}"),
        None => prefix.to_string(),
    }
}

// ---------------------------------------------------------------------------
// hand-conversion-factor

/// The ways a hand-typed factor can be fixed.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Repair {
    /// Delete it: heft's units already convert.
    Remove,
    /// Write `g0` in its place.
    UseG0,
    /// Divide by g0 where it multiplies (or the reverse): mass ↔ weight.
    InverseG0,
}

fn hand_conversion_factor(context: &Context<'_>, used: &HandFactorUse<'_>) -> Diagnostic {
    let factor = used.factor;
    let number = context.text(used.number.span);
    let other = context.text(used.other.span);
    let operation = context.text(used.operation.span);
    let rewritten = |repair: Repair| match repair {
        Repair::Remove => splice(context, used.root, used.operation.span, other),
        Repair::UseG0 => splice(context, used.root, used.number.span, "g0"),
        Repair::InverseG0 => {
            let inverse = if used.op == BinaryOp::Multiply {
                "/"
            } else {
                "*"
            };
            splice(
                context,
                used.root,
                used.operation.span,
                &format!("{other} {inverse} g0"),
            )
        }
    };
    let order: &[Repair] = if factor.is_gravity() {
        &[Repair::UseG0, Repair::Remove, Repair::InverseG0]
    } else {
        &[Repair::Remove, Repair::UseG0, Repair::InverseG0]
    };
    let target = target_dimension(context, used.owner);
    let candidates: Vec<(Repair, String, Option<Quantity>)> = order
        .iter()
        .map(|&repair| {
            let text = rewritten(repair);
            let value = evaluate_rewritten(context, used.owner, &text);
            (repair, text, value)
        })
        .collect();
    // The first repair that gives the dimension the place needs; with no
    // known need, the first that gives a dimension with an everyday name.
    let chosen = candidates
        .iter()
        .find(|(_, _, value)| {
            value.is_some_and(|v| match target {
                Some(target) => v.dimension == target,
                None => v.dimension.name().is_some(),
            })
        })
        .unwrap_or(&candidates[0]);
    let (repair, fix, fixed_value) = chosen;

    let other_value = evaluate_rewritten(context, used.owner, other);
    let root_text = context.text(used.root.span);
    let current = evaluate_rewritten(context, used.owner, root_text);
    let exact = factor.exact().to_f64();
    let error = (used.value - exact) / exact;
    let accuracy = if error.abs() < 1e-12 {
        String::new()
    } else {
        format!("; {number} is {} off", percent(error))
    };
    let looks_like = format!(
        "`{number}` looks like {} typed by hand ({}{accuracy})",
        factor.converts, factor.exact_words
    );
    let scale = if used.op == BinaryOp::Multiply {
        used.value
    } else {
        1.0 / used.value
    };
    let off_by = if scale >= 1.0 {
        format!("{}× too large", format_significant(scale, 6))
    } else {
        format!("{}× too small", format_significant(1.0 / scale, 6))
    };
    let wanted = |value: Option<Quantity>| {
        value.map_or_else(
            || "what the formula needs".to_string(),
            |v| v.dimension.describe(),
        )
    };
    let explanation = match repair {
        Repair::Remove => {
            let double = match factor.family {
                Family::Conversion(dimension) => {
                    other_value.is_some_and(|v| v.dimension == dimension)
                }
                Family::Gravity | Family::Prefix => other_value.is_some_and(|v| {
                    !v.dimension.is_dimensionless()
                        && Some(v.dimension) == fixed_value.map(|f| f.dimension)
                }),
            };
            let units = used
                .units_present
                .map(|(from, to)| format!(" (written in {from}, shown in {to})"))
                .unwrap_or_default();
            match other_value {
                Some(value) if double => format!(
                    "`{other}` is already {}{units} and heft converts units exactly, so `{operation}` converts it a second time: the result is {off_by}",
                    value.dimension.describe()
                ),
                _ => format!(
                    "a bare number carries no unit, so heft cannot check this conversion; write the quantity with its unit and heft converts it exactly (as it stands the result is {off_by} if the units already convert)"
                ),
            }
        }
        Repair::UseG0 => match current {
            Some(value) => format!(
                "a bare number has no unit, so `{root_text}` is {} ({}) where {} is wanted",
                value.dimension.describe(),
                context.show_for(used.owner, value),
                wanted(*fixed_value),
            ),
            None => format!(
                "a bare number has no unit, so `{root_text}` cannot give {}",
                wanted(*fixed_value)
            ),
        },
        Repair::InverseG0 => format!(
            "a mass is weight / g0 and a weight is mass × g0; `{operation}` does neither, it gives {}",
            current.map_or_else(|| "no value".to_string(), |v| v.dimension.describe())
        ),
    };
    let help = match fixed_value {
        Some(value) => format!("write `{fix}` (= {})", context.show_for(used.owner, *value)),
        None => format!("write `{fix}`"),
    };
    let verb = if used.op == BinaryOp::Multiply {
        "multiplication"
    } else {
        "division"
    };
    Diagnostic::warning(
        Code::HandConversionFactor,
        used.number.span,
        format!("{looks_like}; {explanation}"),
    )
    .with_label(used.operation.span, format!("in this {verb}"))
    .with_help(help)
}

/// The dimension an expression should have: its cell's declared unit, else
/// what its name or description says (mass or force); for a check, the
/// other side's.
fn target_dimension(context: &Context<'_>, owner: Owner) -> Option<Dimension> {
    match owner {
        Owner::Cell(id) => context.declared_dimension(id).or_else(|| {
            let cell = context.sheet.cell(id);
            let description = cell.description.as_ref().map(|d| d.text.as_str());
            role_of(&cell.name.text, description).map(|(role, _)| match role {
                Role::Mass => Dimension::MASS,
                Role::Force => Dimension::FORCE,
            })
        }),
        Owner::Check(index, side) => {
            let check = context.sheet.check(index);
            let other = if side == 0 { &check.rhs } else { &check.lhs };
            evaluate_rewritten(context, owner, context.text(other.span)).map(|v| v.dimension)
        }
    }
}

/// `root`'s text with `part` replaced by `replacement`.
fn splice(context: &Context<'_>, root: &Expr, part: Span, replacement: &str) -> String {
    let source = context.source;
    let before = source.get(root.span.start()..part.start()).unwrap_or("");
    let after = source.get(part.end()..root.span.end()).unwrap_or("");
    format!("{before}{replacement}{after}")
}

// ---------------------------------------------------------------------------
// gravity-inconsistent, rounded-gravity

/// Bare numbers are left out: `hand-conversion-factor` reports each, with
/// `g0` as its fix.
fn gravity_inconsistent(context: &Context<'_>, all_uses: &[GravityUse]) -> Option<Diagnostic> {
    let uses: Vec<&GravityUse> = all_uses
        .iter()
        .filter(|used| used.kind != GravityKind::BareNumber)
        .collect();
    let mut distinct: Vec<&GravityUse> = Vec::new();
    for &used in &uses {
        if !distinct.iter().any(|known| same_value(known.si, used.si)) {
            distinct.push(used);
        }
    }
    if distinct.len() < 2 {
        return None;
    }
    let reference = distinct
        .iter()
        .position(|used| used.is_standard())
        .unwrap_or(0);
    let flagged = *uses
        .iter()
        .find(|used| !same_value(used.si, distinct[reference].si))?;
    let (min, max) = distinct
        .iter()
        .fold((f64::MAX, f64::MIN), |(lo, hi), used| {
            (lo.min(used.si), hi.max(used.si))
        });
    let spread = (max - min) / min;
    let list: Vec<String> = distinct
        .iter()
        .map(|used| {
            let all_ways: Vec<String> = uses
                .iter()
                .filter(|other| same_value(other.si, used.si))
                .map(|other| describe_use(context, other))
                .collect();
            format!(
                "{} m/s² ({})",
                format_significant(used.si, 6),
                all_ways.join(", ")
            )
        })
        .collect();
    let mut diagnostic = Diagnostic::warning(
        Code::GravityInconsistent,
        flagged.span,
        format!(
            "this sheet uses {} values of gravity: {}; they differ by {} %",
            distinct.len(),
            list.join(" and "),
            format_significant(spread * 100.0, 2)
        ),
    )
    .with_help(format!(
        "use one gravity: `g0` everywhere (9.80665 m/s² = 32.174 ft/s² exactly; lbf and kgf are defined with it), or one cell such as `g = g0` that every formula uses; `{}` would then be 9.80665 m/s²",
        flagged.written
    ));
    for used in distinct.iter().filter(|used| used.span != flagged.span) {
        diagnostic = diagnostic.with_label(
            used.span,
            format!("{} m/s² here", format_significant(used.si, 6)),
        );
    }
    Some(diagnostic)
}

/// `g0`, `lbf (defined with g0)`, `g = 9.81 m/s^2 on line 4`.
fn describe_use(context: &Context<'_>, used: &GravityUse) -> String {
    let line = context.evaluated.lines.line_of(used.span.start()) + 1;
    match used.kind {
        GravityKind::BuiltIn => "g0".to_string(),
        GravityKind::GravitationalUnit => format!("{}, defined with g0", used.written),
        GravityKind::Cell | GravityKind::Literal | GravityKind::BareNumber => {
            format!("`{}` on line {line}", used.written)
        }
    }
}

/// The number of decimals to which `typed` is `exact` rounded, if it is a
/// rounding of it (and not the exact value).
pub(super) fn rounded_decimals(typed: f64, exact: f64) -> Option<u32> {
    if same_value(typed, exact) {
        return None;
    }
    (0..=6)
        .find(|&decimals| {
            let scale = 10f64.powi(decimals);
            same_value((exact * scale).round() / scale, typed)
        })
        .map(|decimals| decimals as u32)
}

fn rounded_gravity(uses: &[GravityUse], findings: &mut Vec<Diagnostic>) {
    for used in uses {
        if !matches!(used.kind, GravityKind::Cell | GravityKind::Literal) {
            continue;
        }
        let Some(typed) = &used.typed else {
            continue;
        };
        let exact_in_unit = STANDARD_GRAVITY / typed.unit_si_factor;
        let Some(decimals) = rounded_decimals(typed.value, exact_in_unit) else {
            continue;
        };
        let places = match decimals {
            0 => "a whole number".to_string(),
            1 => "1 decimal".to_string(),
            n => format!("{n} decimals"),
        };
        let g0_here = if typed.unit_si_factor == 1.0 {
            "9.80665 m/s²".to_string()
        } else {
            format!("{} {}", format_significant(exact_in_unit, 10), typed.unit)
        };
        findings.push(
            Diagnostic::info(
                Code::RoundedGravity,
                used.span,
                format!(
                    "`{}` is standard gravity rounded to {places}: {} from g0 = {g0_here} (9.80665 m/s² exactly, 3rd CGPM 1901)",
                    used.written,
                    percent(used.relative_to_g0()),
                ),
            )
            .with_help(format!(
                "write `g0` (= {g0_here}) unless a local gravity is meant; then give its source in the description"
            )),
        );
    }
}

// ---------------------------------------------------------------------------
// mixed-systems

fn mixed_systems(context: &Context<'_>) -> Option<Diagnostic> {
    // (first span, symbols in order) for SI (with accepted metric units) and US customary.
    let mut si: Option<(Span, Vec<&str>)> = None;
    let mut us: Option<(Span, Vec<&str>)> = None;
    let mut n_quantities = 0usize;
    let catalog = units::catalog();
    for (_, root) in context.expressions() {
        root.walk(&mut |node| {
            let (ExprKind::Quantity { unit, .. } | ExprKind::UnitValue(unit)) = &node.kind else {
                return;
            };
            n_quantities += 1;
            for factor in &unit.factors {
                let Some(def) = catalog.get(&factor.symbol) else {
                    continue;
                };
                // Seconds and radians belong to both systems.
                if def.dimension == Dimension::TIME || def.dimension.is_dimensionless() {
                    continue;
                }
                let group = match def.system {
                    UnitSystem::Si | UnitSystem::Metric => &mut si,
                    UnitSystem::UsCustomary => &mut us,
                    UnitSystem::Shared => continue,
                };
                let (_, symbols) = group.get_or_insert_with(|| (unit.span, Vec::new()));
                if !symbols.contains(&&*factor.symbol) {
                    symbols.push(&factor.symbol);
                }
            }
        });
    }
    let ((si_span, si_symbols), (us_span, us_symbols)) = (si?, us?);
    let (span, other) = if si_span.start() > us_span.start() {
        (si_span, us_span)
    } else {
        (us_span, si_span)
    };
    Some(
        Diagnostic::info(
            Code::MixedSystems,
            span,
            format!(
                "inputs are written in both SI units ({}) and US customary units ({}); heft converts them exactly",
                si_symbols.join(", "),
                us_symbols.join(", ")
            ),
        )
        .with_label(other, "first unit of the other system")
        .with_help(format!(
            "nothing to change if intended: `heft audit` lists each of the {n_quantities} quantities written in the sheet with its exact factor and source for the checker"
        )),
    )
}

// ---------------------------------------------------------------------------
// unused-input, shadowed-constant

fn unused_inputs(context: &Context<'_>, findings: &mut Vec<Diagnostic>) {
    let sheet = context.sheet;
    let mut used = vec![false; sheet.cells.len()];
    for &id in sheet.uses.iter().chain(&sheet.check_uses).flatten() {
        used[id] = true;
    }
    for (id, cell) in context.evaluated.cells().enumerate() {
        if used[id] || !cell.is_input {
            continue;
        }
        let Some(value) = context.value(id) else {
            continue;
        };
        let name = &sheet.cell(id).name;
        findings.push(
            Diagnostic::info(
                Code::UnusedInput,
                name.span,
                format!(
                    "`{}` = {} is an input that no formula or check uses",
                    name.text,
                    context.show_for(Owner::Cell(id), value)
                ),
            )
            .with_help(format!(
                "use it where it belongs, or delete line {} if it is left over; a value kept only for the record reads better as a note (`> …`)",
                cell.line
            )),
        );
    }
}

/// Names a user might give a built-in constant: (alias, constant).
const ALIASES: &[(&str, &str)] = &[
    ("π", "pi"),
    ("PI", "pi"),
    ("Pi", "pi"),
    ("G0", "g0"),
    ("g_0", "g0"),
    ("g_n", "g0"),
    ("gn", "g0"),
];

fn shadowed_constants(context: &Context<'_>, findings: &mut Vec<Diagnostic>) {
    let sheet = context.sheet;
    for id in 0..sheet.cells.len() {
        let name = &sheet.cell(id).name;
        let (constant, exact_name) = match units::constant(&name.text) {
            Some(constant) => (constant, true),
            None => match ALIASES.iter().find(|(alias, _)| *alias == name.text) {
                Some((_, meant)) => match units::constant(meant) {
                    Some(constant) => (constant, false),
                    None => continue,
                },
                None => continue,
            },
        };
        let value = context.value(id);
        let builtin = constant.value;
        // An input shows as typed: 3.1416 must not read as 3.142.
        let shown = |v: Quantity| {
            let cell = sheet.cell(id);
            match cell.expr.kind {
                ExprKind::Number(_) | ExprKind::Quantity { .. } => {
                    context.text(cell.expr.span).to_string()
                }
                _ => context.show(v),
            }
        };
        let differs = value.map(|v| {
            if v.dimension != builtin.dimension {
                format!("holds {} ({})", v.dimension.describe(), shown(v))
            } else {
                format!(
                    "holds {}, {} from it",
                    shown(v),
                    percent((v.si - builtin.si) / builtin.si)
                )
            }
        });
        let same =
            value.is_some_and(|v| v.dimension == builtin.dimension && same_value(v.si, builtin.si));
        let builtin_text = if builtin.dimension.is_dimensionless() {
            format_significant(builtin.si, 10)
        } else {
            format!("{} m/s²", format_significant(builtin.si, 10))
        };
        let message = if exact_name {
            format!(
                "`{}` is a built-in constant ({}); this cell replaces it in every formula of the sheet{}",
                name.text,
                constant.description,
                differs
                    .filter(|_| !same)
                    .map(|d| format!(", and it {d}"))
                    .unwrap_or_default()
            )
        } else if same {
            continue;
        } else {
            format!(
                "`{}` is named like the built-in `{}` ({}) but {}",
                name.text,
                constant.name,
                constant.description,
                differs.unwrap_or_else(|| "does not evaluate".to_string())
            )
        };
        findings.push(
            Diagnostic::warning(Code::ShadowedConstant, name.span, message).with_help(format!(
                "use the built-in `{}` (= {builtin_text}), or rename the cell (for example `{}_site`) so the two cannot be confused",
                constant.name, constant.name
            )),
        );
    }
}
