//! The lints: each reads the [`Context`] and adds findings with a stable
//! code, the place, and a fix with the number it would give.

use super::angles;
use super::context::{Context, Owner};
use super::format_relative as percent;
use super::gravity::{self, GravityKind, GravityUse, same_value};
use super::hand_factors::{self, Family, HandFactorUse};
use super::rewrite::evaluate_rewritten;
use super::roles::{Evidence, Role, role_of};
use crate::base::Span;
use crate::base::{Code, Diagnostic, Fix};
use crate::syntax::ast::{BinaryOp, Expr, ExprKind};
use crate::units::{self, Dimension, Quantity, STANDARD_GRAVITY, UnitSystem, format_significant};

/// Runs every lint: one walk over every formula and check, then one pass
/// over the cells (a 100,000-cell sheet is read twice, not once per lint).
pub(super) fn run(context: &Context<'_>) -> Vec<Diagnostic> {
    let mut hand_factors = Vec::new();
    let mut gravity = gravity::Collector::new();
    let mut systems = SystemsSeen::default();
    let radians = angles::AngleWords::new(context, true);
    let mut trig_findings = Vec::new();
    for (owner, root) in context.expressions() {
        let whole_input = gravity::is_whole_input(owner, root);
        root.walk(&mut |node| {
            hand_factors::visit(context, owner, root, node, &mut hand_factors);
            gravity.visit_node(context, whole_input, node);
            systems.visit(context, node);
            trig_findings.extend(angles::degrees_as_radians(context, &radians, owner, node));
        });
    }
    let mut findings: Vec<Diagnostic> = hand_factors
        .iter()
        .map(|used| hand_conversion_factor(context, used))
        .collect();
    findings.extend(trig_findings);
    // In `v / (pi * D)` the π is a circumference's, not an angle.
    let angles_written = angles::AngleWords::new(context, false);
    let mut used = vec![false; context.sheet.cells.len()];
    for &id in context
        .sheet
        .uses
        .iter()
        .chain(&context.sheet.check_uses)
        .flatten()
    {
        used[id] = true;
    }
    // A cell used only by a load case's replacement formula is used.
    for &statement in &context.sheet.cases {
        let Some(case) = context.sheet.case_block(statement) else {
            continue;
        };
        for replacement in &case.overrides {
            for id in crate::sheet::override_uses(replacement) {
                used[id] = true;
            }
        }
    }
    // A sheet of values alone (no check, no formula reading a cell) is a
    // register for other sheets to `use`: its inputs are there to be read.
    let is_register = context.sheet.checks.is_empty() && !used.iter().any(|&u| u);
    for (id, is_used) in used.into_iter().enumerate() {
        gravity.visit_cell(context, id);
        findings.extend(mass_weight_mixup_of(context, id, &hand_factors));
        if !is_used && !is_register {
            findings.extend(unused_input(context, id));
        }
        findings.extend(shadowed_constant(context, id));
        findings.extend(angles::ambiguous_angular_speed(
            context,
            &angles_written,
            id,
        ));
    }
    for index in 0..context.sheet.checks.len() {
        findings.extend(angles::ambiguous_angular_speed_in_check(
            context,
            &angles_written,
            index,
        ));
    }
    let gravity = gravity.finish(context, &hand_factors);
    findings.extend(gravity_inconsistent(context, &gravity));
    rounded_gravity(context, &gravity, &mut findings);
    findings.extend(systems.finish());
    findings
}

// ---------------------------------------------------------------------------
// mass-weight-mixup

/// A cell named or described as a mass that holds a force, or the reverse.
/// A cell whose formula has a hand-typed factor is left to that lint, whose
/// fix already aims at the right dimension.
fn mass_weight_mixup_of(
    context: &Context<'_>,
    id: usize,
    hand_factors: &[HandFactorUse<'_>],
) -> Option<Diagnostic> {
    let cell = context.sheet.formula_cell(id)?;
    let description = cell.description.as_ref().map(|d| d.text.as_str());
    let (role, evidence) = role_of(&cell.name.text, description)?;
    let value = context.value(id)?;
    let wrong = match role {
        Role::Mass => value.dimension == Dimension::FORCE,
        Role::Force => value.dimension == Dimension::MASS,
    };
    let left_to_hand_factor = hand_factors
        .iter()
        .any(|used| used.owner == Owner::Cell(id));
    (wrong && !left_to_hand_factor)
        .then(|| mass_weight_mixup(context, id, role, evidence, value))
        .flatten()
}

/// Gravitational counterparts: a mass unit and the force unit that is its weight.
const COUNTERPARTS: &[(&str, &str)] = &[("lbm", "lbf"), ("kg", "kgf"), ("t", "tf")];

fn mass_weight_mixup(
    context: &Context<'_>,
    id: usize,
    role: Role,
    evidence: Evidence,
    value: Quantity,
) -> Option<Diagnostic> {
    let cell = context.sheet.formula_cell(id)?;
    let name = &cell.name.text;
    let formula = context.text(cell.expr.span);
    let (held, operation) = match role {
        Role::Mass => ("a force", "/ g0"),
        Role::Force => ("a mass", "* g0"),
    };
    let written = match &cell.expr.kind {
        ExprKind::Quantity {
            number_span, unit, ..
        } => Some((
            context.text(*number_span),
            context.text(unit.span),
            unit.span,
        )),
        _ => None,
    };
    // An input written in the gravitational counterpart of the right unit
    // (`120 lbf` for a mass) is fixed by swapping the unit: 120 lbf is the
    // weight of 120 lbm exactly, since lbf is defined with g0.
    let swapped = written.and_then(|(number, unit, unit_span)| {
        COUNTERPARTS.iter().find_map(|&(mass, force)| match role {
            Role::Mass if unit == force => Some((number, unit, unit_span, mass)),
            Role::Force if unit == mass => Some((number, unit, unit_span, force)),
            _ => None,
        })
    });
    let what = match written {
        Some((_, unit, _)) => format!("is written in {unit}, a unit of {held}"),
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
    let fix = match swapped {
        Some((number, unit, unit_span, counterpart)) => Fix::replace(unit_span, counterpart)
            .showing(Some(format!("{name} = {number} {counterpart}")))
            .with_tail(format!(
                "; {number} {unit} is its {}",
                match role {
                    Role::Mass => "weight",
                    Role::Force => "mass",
                }
            )),
        None => {
            let fixed = if matches!(
                cell.expr.kind,
                ExprKind::Name(_) | ExprKind::Quantity { .. }
            ) {
                format!("{formula} {operation}")
            } else {
                format!("({formula}) {operation}")
            };
            Fix::replace(cell.expr.span, fixed.clone()).showing(Some(format!("{name} = {fixed}")))
        }
    };
    let fix = fix
        .with_lead(format!("if it is {intended}, "))
        .with_tail(format!("; otherwise {rename}"));
    let help = format!("if it is not {}, {rename}", role.describe());
    let mut diagnostic = Diagnostic::warning(Code::MassWeightMixup, cell.expr.span, message)
        .with_help(help)
        .with_fix(fix);
    diagnostic = match (evidence, &cell.description) {
        (Evidence::Description, Some(description)) => diagnostic.with_label(
            description.span,
            format!("described as {}", role.describe()),
        ),
        _ => diagnostic.with_label(cell.name.span, format!("named as {}", role.describe())),
    };
    Some(diagnostic)
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
    let factor = &used.factor;
    let number = context.text(used.number.span);
    let other = context.text(used.other.span);
    let operation = context.text(used.operation.span);
    let (repair, fix, fixed_value) = &chosen_repair(context, used);

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
        factor.converts(),
        factor.exact_words()
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
    // Whether the factor converts a bare number: then dropping the factor
    // alone would change the result, so the fix is to give the number its unit.
    let (explanation, converts_bare_number) = match repair {
        Repair::Remove => removal_explanation(context, used, *fixed_value, &off_by),
        Repair::UseG0 => (
            match current {
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
            false,
        ),
        Repair::InverseG0 => (
            format!(
                "a mass is weight / g0 and a weight is mass × g0; `{operation}` does neither, it gives {}",
                current.map_or_else(|| "no value".to_string(), |v| v.dimension.describe())
            ),
            false,
        ),
    };
    let verb = if used.op == BinaryOp::Multiply {
        "multiplication"
    } else {
        "division"
    };
    let diagnostic = Diagnostic::warning(
        Code::HandConversionFactor,
        used.number.span,
        format!("{looks_like}; {explanation}"),
    )
    .with_label(used.operation.span, format!("in this {verb}"));
    if converts_bare_number {
        diagnostic.with_help(format!(
            "give `{other}` its unit in place of the factor `{number}` (heft then converts it exactly); removing the factor alone would give `{fix}`, a different value"
        ))
    } else {
        diagnostic.with_fix(Fix::replace(used.root.span, fix.as_str()))
    }
}

/// The repair to offer: of the rewrites in the usual order for this
/// factor, the first that gives the dimension the place needs (with no
/// known need, the first with an everyday name), with its text and value.
fn chosen_repair(
    context: &Context<'_>,
    used: &HandFactorUse<'_>,
) -> (Repair, String, Option<Quantity>) {
    let factor = &used.factor;
    let other = context.text(used.other.span);
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
    candidates
        .iter()
        .find(|(_, _, value)| {
            value.is_some_and(|v| match target {
                Some(target) => v.dimension == target,
                None => v.dimension.name().is_some(),
            })
        })
        .unwrap_or(&candidates[0])
        .clone()
}

/// Why removing the factor is the repair: the quantity it converts is
/// already converted — or, where it converts a bare number, that heft
/// cannot check it (then `true`: the fix is to give the number its unit).
fn removal_explanation(
    context: &Context<'_>,
    used: &HandFactorUse<'_>,
    fixed_value: Option<Quantity>,
    off_by: &str,
) -> (String, bool) {
    let factor = &used.factor;
    let operation = context.text(used.operation.span);
    let other_value = evaluate_rewritten(context, used.owner, context.text(used.other.span));
    // What is already a quantity the factor converts: the operand,
    // or one factor of it.
    let converted = match factor.family {
        Family::Conversion(dimension) => {
            hand_factors::already_converted(context, used.owner, used.other, dimension)
        }
        Family::Gravity | Family::Prefix => other_value
            .filter(|v| {
                !v.dimension.is_dimensionless()
                    && Some(v.dimension) == fixed_value.map(|f| f.dimension)
            })
            .map(|_| used.other),
    };
    let units = used
        .units_present
        .map(|(from, to)| format!(" (written in {from}, shown in {to})"))
        .unwrap_or_default();
    let described = converted.and_then(|part| {
        evaluate_rewritten(context, used.owner, context.text(part.span))
            .map(|value| (context.text(part.span), value.dimension.describe()))
    });
    match described {
        Some((part, dimension)) => (
            format!(
                "`{part}` is already {dimension}{units} and heft converts units exactly, so `{operation}` converts it a second time: the result is {off_by}"
            ),
            false,
        ),
        None => (
            format!(
                "a bare number carries no unit, so heft cannot check this conversion; write the quantity with its unit and heft converts it exactly (as it stands the result is {off_by} if the units already convert)"
            ),
            true,
        ),
    }
}

/// The dimension an expression should have: its cell's declared unit, else
/// what its name or description says (mass or force); for a check, the
/// other side's.
fn target_dimension(context: &Context<'_>, owner: Owner) -> Option<Dimension> {
    match owner {
        Owner::Cell(id) => context.declared_dimension(id).or_else(|| {
            let cell = context.sheet.cell(id);
            let description = cell.description.map(|d| d.text.as_str());
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

fn rounded_gravity(context: &Context<'_>, uses: &[GravityUse], findings: &mut Vec<Diagnostic>) {
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
            .with_help("if a local gravity is meant, give its source in the description")
            .with_fix(
                Fix::replace(gravity_value_span(context, used), "g0")
                    .giving(None)
                    .with_tail(format!(
                        " (g0 = {g0_here}) unless a local gravity is meant; then give its source in the description"
                    )),
            ),
        );
    }
}

/// The text a gravity value is written as: a literal's own span, a gravity
/// cell's formula.
fn gravity_value_span(context: &Context<'_>, used: &GravityUse) -> Span {
    if used.kind != GravityKind::Cell {
        return used.span;
    }
    (0..context.sheet.cells.len())
        .filter_map(|id| context.sheet.formula_cell(id))
        .find(|cell| cell.name.span.start() == used.span.start())
        .map_or(used.span, |cell| cell.expr.span)
}

// ---------------------------------------------------------------------------
// mixed-systems

/// The units written in the sheet's quantities, by system.
#[derive(Default)]
struct SystemsSeen<'a> {
    /// SI and the metric units accepted with it: the first place, and the symbols.
    si: Option<(Span, Vec<&'a str>)>,
    /// US customary.
    us: Option<(Span, Vec<&'a str>)>,
    n_quantities: usize,
}

impl<'a> SystemsSeen<'a> {
    fn visit(&mut self, context: &Context<'a>, node: &'a Expr) {
        let (ExprKind::Quantity { unit, .. } | ExprKind::UnitValue(unit)) = &node.kind else {
            return;
        };
        self.n_quantities += 1;
        let catalog = units::catalog();
        for factor in &unit.factors {
            let Some(def) = catalog.get(&factor.symbol) else {
                continue;
            };
            // Seconds and radians belong to both systems.
            if def.dimension == Dimension::TIME || def.dimension.is_dimensionless() {
                continue;
            }
            let group = match def.system {
                UnitSystem::Si | UnitSystem::Metric => &mut self.si,
                UnitSystem::UsCustomary => &mut self.us,
                UnitSystem::Shared => continue,
            };
            let (first, symbols) = group.get_or_insert_with(|| (unit.span, Vec::new()));
            if unit.span.start() < first.start() {
                *first = unit.span;
            }
            if !symbols.contains(&&*factor.symbol) {
                symbols.push(context.text(factor.span));
            }
        }
    }

    /// The `mixed-systems` finding, if both systems are written.
    fn finish(self) -> Option<Diagnostic> {
        let ((si_span, si_symbols), (us_span, us_symbols)) = (self.si?, self.us?);
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
                "nothing to change if intended: `heft audit` lists each of the {} quantities written in the sheet with its exact factor and source for the checker",
                self.n_quantities
            )),
        )
    }
}

// ---------------------------------------------------------------------------
// unused-input, shadowed-constant

/// An input (a number or quantity as written) that nothing uses.
fn unused_input(context: &Context<'_>, id: usize) -> Option<Diagnostic> {
    let name = context.sheet.cell(id).name;
    let expr = context.sheet.cell(id).expr?;
    let literal = match &expr.kind {
        ExprKind::Negate(inner) => &inner.kind,
        kind => kind,
    };
    if !matches!(literal, ExprKind::Number(_) | ExprKind::Quantity { .. }) {
        return None;
    }
    let value = context.value(id)?;
    let line = context.evaluated.lines.line_of(name.span.start()) + 1;
    Some(
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
            "use it where it belongs, or delete line {line} if it is left over; a value kept only for the record reads better as a note (`> …`)"
        )),
    )
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

/// A cell named like a built-in constant.
fn shadowed_constant(context: &Context<'_>, id: usize) -> Option<Diagnostic> {
    let sheet = context.sheet;
    let name = &sheet.cell(id).name;
    let (constant, exact_name) = match units::constant(&name.text) {
        Some(constant) => (constant, true),
        None => {
            let (_, meant) = ALIASES.iter().find(|(alias, _)| *alias == name.text)?;
            (units::constant(meant)?, false)
        }
    };
    let value = context.value(id);
    let builtin = constant.value;
    // An input shows as typed: 3.1416 must not read as 3.142.
    let shown = |v: Quantity| match sheet.cell(id).expr {
        Some(expr) if matches!(expr.kind, ExprKind::Number(_) | ExprKind::Quantity { .. }) => {
            context.text(expr.span).to_string()
        }
        _ => context.show(v),
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
        return None;
    } else {
        format!(
            "`{}` is named like the built-in `{}` ({}) but {}",
            name.text,
            constant.name,
            constant.description,
            differs.unwrap_or_else(|| "does not evaluate".to_string())
        )
    };
    Some(
        Diagnostic::warning(Code::ShadowedConstant, name.span, message).with_help(format!(
            "use the built-in `{}` (= {builtin_text}), or rename the cell (for example `{}_site`) so the two cannot be confused",
            constant.name, constant.name
        )),
    )
}
