//! Choosing a readable unit for a result, and rounding it for display.

use std::sync::{Arc, LazyLock};

use super::{Dimension, catalog, format_unit_product};

/// The unit system a sheet displays results in when a cell declares none.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default, serde::Deserialize, serde::Serialize)]
pub enum DisplaySystem {
    /// SI: N/kN/MN, kg/t, Pa/kPa/MPa, m, …
    #[default]
    #[serde(rename = "SI")]
    Si,
    /// Foot-pound-second: lbf/kip, lbm, psi/ksi, ft/in, …
    #[serde(rename = "FPS")]
    Fps,
}

impl DisplaySystem {
    /// The name as written in the header.
    pub fn label(self) -> &'static str {
        match self {
            DisplaySystem::Si => "SI",
            DisplaySystem::Fps => "FPS",
        }
    }

    /// The other system.
    pub fn toggled(self) -> Self {
        match self {
            DisplaySystem::Si => DisplaySystem::Fps,
            DisplaySystem::Fps => DisplaySystem::Si,
        }
    }
}

/// A unit to show a value in: its text in heft unit syntax and the SI value
/// of one of it.
#[derive(Clone, Debug, PartialEq)]
pub struct DisplayUnit {
    /// The unit as heft would parse it: `kN`, `lbf*s/ft`; empty for a number.
    /// Shared, since a sheet shows thousands of values in a handful of units.
    pub text: Arc<str>,
    /// The SI value of one of this unit.
    pub si_factor: f64,
}

impl DisplayUnit {
    /// No unit: a plain number.
    pub fn none() -> Self {
        // One empty text for every plain number, not an allocation each.
        static NO_UNIT: LazyLock<Arc<str>> = LazyLock::new(|| Arc::from(""));
        DisplayUnit {
            text: Arc::clone(&NO_UNIT),
            si_factor: 1.0,
        }
    }

    /// `si` expressed in this unit.
    pub fn value_of(&self, si: f64) -> f64 {
        si / self.si_factor
    }

    /// `si` in this unit, [`correctly_rounded`]: what JSON prints.
    pub fn rounded_value_of(&self, si: f64) -> f64 {
        correctly_rounded(self.value_of(si))
    }
}

/// Units for a dimension, smallest first, each with the magnitude (in that
/// unit) from which it takes over from the one before.
type Ladder = &'static [(&'static str, f64)];

const SI_LADDERS: &[(Dimension, Ladder)] = &[
    (Dimension::MASS, &[("kg", 0.0), ("t", 10.0)]),
    (Dimension::FORCE, &[("N", 0.0), ("kN", 1.0), ("MN", 1.0)]),
    (Dimension::LENGTH, &[("mm", 0.0), ("m", 0.1), ("km", 10.0)]),
    (Dimension::TIME, &[("s", 0.0)]),
    (Dimension::VELOCITY, &[("m/s", 0.0)]),
    (Dimension::ACCELERATION, &[("m/s^2", 0.0)]),
    (
        Dimension::PRESSURE,
        &[("Pa", 0.0), ("kPa", 1.0), ("MPa", 1.0), ("GPa", 1.0)],
    ),
    (
        Dimension::ENERGY,
        &[("N*m", 0.0), ("kN*m", 1.0), ("MN*m", 1.0)],
    ),
    (Dimension::POWER, &[("W", 0.0), ("kW", 1.0), ("MW", 1.0)]),
    (Dimension::FREQUENCY, &[("Hz", 0.0)]),
    (Dimension::AREA, &[("mm^2", 0.0), ("m^2", 0.01)]),
    (Dimension::VOLUME, &[("m^3", 0.0)]),
    (Dimension::DENSITY, &[("kg/m^3", 0.0)]),
    (Dimension::STIFFNESS, &[("N/m", 0.0), ("kN/m", 1.0)]),
    (Dimension::MASS_PER_LENGTH, &[("kg/m", 0.0)]),
    (Dimension::MASS_PER_TIME, &[("kg/s", 0.0)]),
    (Dimension::MOMENTUM, &[("N*s", 0.0)]),
];

const FPS_LADDERS: &[(Dimension, Ladder)] = &[
    (Dimension::MASS, &[("lbm", 0.0)]),
    (Dimension::FORCE, &[("lbf", 0.0), ("kip", 10.0)]),
    (Dimension::LENGTH, &[("in", 0.0), ("ft", 1.0), ("mi", 1.0)]),
    (Dimension::TIME, &[("s", 0.0)]),
    (Dimension::VELOCITY, &[("ft/s", 0.0)]),
    (Dimension::ACCELERATION, &[("ft/s^2", 0.0)]),
    (Dimension::PRESSURE, &[("psi", 0.0), ("ksi", 1.0)]),
    (Dimension::ENERGY, &[("ft*lbf", 0.0)]),
    (Dimension::POWER, &[("hp", 0.0)]),
    (Dimension::FREQUENCY, &[("Hz", 0.0)]),
    (Dimension::AREA, &[("in^2", 0.0), ("ft^2", 1.0)]),
    (Dimension::VOLUME, &[("ft^3", 0.0)]),
    (Dimension::DENSITY, &[("lbm/ft^3", 0.0)]),
    (Dimension::STIFFNESS, &[("lbf/in", 0.0)]),
    (Dimension::MASS_PER_LENGTH, &[("lbm/ft", 0.0)]),
    (Dimension::MASS_PER_TIME, &[("lbm/s", 0.0)]),
    (Dimension::MOMENTUM, &[("lbf*s", 0.0)]),
];

/// Picks the unit to show `si` (of `dimension`) in, for `system`.
///
/// Known dimensions climb a ladder of units (N → kN → MN) by magnitude;
/// others are written in base units: kg, m, s for SI and lbf, ft, s for FPS
/// (mass through lbf·s²/ft, so a damping coefficient reads lbf*s/ft).
pub fn pick_unit(dimension: Dimension, si: f64, system: DisplaySystem) -> DisplayUnit {
    if dimension.is_dimensionless() {
        return DisplayUnit::none();
    }
    static RESOLVED: LazyLock<[Vec<ResolvedLadder>; 2]> =
        LazyLock::new(|| [resolve_ladders(SI_LADDERS), resolve_ladders(FPS_LADDERS)]);
    let ladders = &RESOLVED[match system {
        DisplaySystem::Si => 0,
        DisplaySystem::Fps => 1,
    }];
    if let Some((_, ladder)) = ladders.iter().find(|(d, _)| *d == dimension) {
        return climb(ladder, si.abs());
    }
    match system {
        DisplaySystem::Si => DisplayUnit {
            text: Arc::from(dimension.si_units()),
            si_factor: 1.0,
        },
        DisplaySystem::Fps => fps_base_units(dimension),
    }
}

/// A ladder with its units looked up once.
type ResolvedLadder = (Dimension, Vec<(DisplayUnit, f64)>);

fn resolve_ladders(ladders: &[(Dimension, Ladder)]) -> Vec<ResolvedLadder> {
    ladders
        .iter()
        .map(|(dimension, ladder)| {
            (
                *dimension,
                ladder
                    .iter()
                    .map(|&(text, threshold)| (unit_of(text), threshold))
                    .collect(),
            )
        })
        .collect()
}

fn climb(ladder: &[(DisplayUnit, f64)], magnitude: f64) -> DisplayUnit {
    let mut chosen = &ladder[0].0;
    for (candidate, threshold) in &ladder[1..] {
        if magnitude / candidate.si_factor >= *threshold {
            chosen = candidate;
        } else {
            break;
        }
    }
    chosen.clone()
}

/// The display unit for catalog text such as `m/s^2` (internal, trusted).
fn unit_of(text: &str) -> DisplayUnit {
    let mut si_factor = 1.0;
    let mut sign = 1;
    for part in text.split_inclusive(['*', '/']) {
        let (body, next_sign) = match part.strip_suffix('/') {
            Some(body) => (body, -1),
            None => (part.strip_suffix('*').unwrap_or(part), 1),
        };
        let (symbol, exponent) = body
            .split_once('^')
            .map_or((body, 1), |(s, e)| (s, e.parse().unwrap_or(1)));
        let factor = catalog().get(symbol).map_or(1.0, |unit| unit.si_factor);
        si_factor *= factor.powi(exponent * sign);
        sign = next_sign;
    }
    DisplayUnit {
        text: Arc::from(text),
        si_factor,
    }
}

/// Writes M^a·L^b·T^c as lbf^a · ft^(b−a) · s^(c+2a), keeping any other base
/// dimension in SI.
fn fps_base_units(dimension: Dimension) -> DisplayUnit {
    let [length, mass, time, rest @ ..] = dimension.exponents.map(i32::from);
    let mut factors = vec![("lbf", mass), ("ft", length - mass), ("s", time + 2 * mass)];
    let others = ["A", "K", "mol", "cd"];
    factors.extend(
        others
            .iter()
            .zip(rest)
            .map(|(symbol, exponent)| (*symbol, exponent)),
    );
    let factors: Vec<(&str, i32)> = factors
        .into_iter()
        .filter(|(_, exponent)| *exponent != 0)
        .collect();
    let si_factor = factors
        .iter()
        .map(|(symbol, exponent)| {
            catalog()
                .get(symbol)
                .map_or(1.0, |unit| unit.si_factor)
                .powi(*exponent)
        })
        .product();
    DisplayUnit {
        text: Arc::from(format_unit_product(&factors)),
        si_factor,
    }
}

/// A fraction as a percentage to three significant figures, the one way
/// every output shows a utilization or a share: `0.769` → `76.9 %`.
pub fn percent(fraction: f64) -> String {
    format!("{} %", format_significant(fraction * 100.0, 3))
}

/// `value` rounded to `sig_figs` significant digits, without trailing zeros
/// after the decimal point (a value as the user wrote it, or in a message);
/// scientific notation outside 1e-4 ≤ |v| < 1e9.
pub fn format_significant(value: f64, sig_figs: u32) -> String {
    let figures = format_figures(value, sig_figs);
    let (number, exponent) = match figures.split_once('e') {
        Some((mantissa, exponent)) => (mantissa, Some(exponent)),
        None => (figures.as_str(), None),
    };
    let trimmed = if number.contains('.') {
        number.trim_end_matches('0').trim_end_matches('.')
    } else {
        number
    };
    match exponent {
        Some(exponent) => format!("{trimmed}e{exponent}"),
        None => trimmed.to_string(),
    }
}

/// `value` rounded to `sig_figs` significant digits, every one of them
/// shown (`1.600` at 4: a trailing zero is a figure the result has): how a
/// computed result is shown. Scientific notation outside 1e-4 ≤ |v| < 1e9;
/// zero is `0`.
pub fn format_figures(value: f64, sig_figs: u32) -> String {
    if !value.is_finite() {
        return value.to_string();
    }
    if value == 0.0 {
        return "0".to_string();
    }
    let digits = sig_figs.clamp(1, 17) as usize;
    let scientific = format!("{:.*e}", digits - 1, value);
    let (mantissa, exponent) = scientific.split_once('e').unwrap_or((&scientific, "0"));
    let exponent: i32 = exponent.parse().unwrap_or(0);
    if !(-4..9).contains(&exponent) {
        return format!("{mantissa}e{exponent}");
    }
    let rounded: f64 = scientific.parse().unwrap_or(value);
    let n_decimals = (digits as i32 - 1 - exponent).max(0) as usize;
    let fixed = format!("{rounded:.n_decimals$}");
    if fixed
        .trim_start_matches('-')
        .chars()
        .all(|c| c == '0' || c == '.')
    {
        "0".to_string()
    } else {
        fixed
    }
}

/// A value in a unit rounded to the 15 significant digits an `f64` always
/// carries, so a quantity written as `24 in` reads back as 24, not as the
/// 23.999999999999996 that dividing its SI value by the factor gives.
pub fn correctly_rounded(value: f64) -> f64 {
    if !value.is_finite() || value == 0.0 {
        return value;
    }
    format!("{value:.14e}").parse().unwrap_or(value)
}
