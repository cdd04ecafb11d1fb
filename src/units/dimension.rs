//! Dimensions: integer exponents of the seven SI base dimensions.

use std::fmt;

/// Names of the base dimensions, in exponent order (also the JSON keys).
pub const BASE_NAMES: [&str; 7] = [
    "length",
    "mass",
    "time",
    "current",
    "temperature",
    "amount",
    "luminosity",
];

/// Coherent SI symbol of each base dimension, in exponent order.
pub const SI_BASE_SYMBOLS: [&str; 7] = ["m", "kg", "s", "A", "K", "mol", "cd"];

/// A physical dimension as exponents of length, mass, time, current,
/// temperature, amount of substance and luminous intensity.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default, PartialOrd, Ord)]
pub struct Dimension {
    /// Exponents in the order of [`BASE_NAMES`].
    pub exponents: [i8; 7],
}

impl Dimension {
    /// A pure number (angles included).
    pub const NONE: Dimension = Dimension::mlt(0, 0, 0);
    /// Length, L.
    pub const LENGTH: Dimension = Dimension::mlt(0, 1, 0);
    /// Mass, M.
    pub const MASS: Dimension = Dimension::mlt(1, 0, 0);
    /// Time, T.
    pub const TIME: Dimension = Dimension::mlt(0, 0, 1);
    /// Velocity, L/T.
    pub const VELOCITY: Dimension = Dimension::mlt(0, 1, -1);
    /// Acceleration, L/T².
    pub const ACCELERATION: Dimension = Dimension::mlt(0, 1, -2);
    /// Force, M·L/T².
    pub const FORCE: Dimension = Dimension::mlt(1, 1, -2);
    /// Pressure or stress, M/(L·T²).
    pub const PRESSURE: Dimension = Dimension::mlt(1, -1, -2);
    /// Energy, work or torque, M·L²/T².
    pub const ENERGY: Dimension = Dimension::mlt(1, 2, -2);
    /// Power, M·L²/T³.
    pub const POWER: Dimension = Dimension::mlt(1, 2, -3);
    /// Frequency or angular speed, 1/T.
    pub const FREQUENCY: Dimension = Dimension::mlt(0, 0, -1);
    /// Area, L².
    pub const AREA: Dimension = Dimension::mlt(0, 2, 0);
    /// Volume, L³.
    pub const VOLUME: Dimension = Dimension::mlt(0, 3, 0);
    /// Density, M/L³.
    pub const DENSITY: Dimension = Dimension::mlt(1, -3, 0);
    /// Force per length (spring stiffness), M/T².
    pub const STIFFNESS: Dimension = Dimension::mlt(1, 0, -2);
    /// Mass per length (a quadratic drag coefficient), M/L.
    pub const MASS_PER_LENGTH: Dimension = Dimension::mlt(1, -1, 0);
    /// Mass per time (a linear damping coefficient), M/T.
    pub const MASS_PER_TIME: Dimension = Dimension::mlt(1, 0, -1);
    /// Momentum or impulse, M·L/T.
    pub const MOMENTUM: Dimension = Dimension::mlt(1, 1, -1);

    /// A mechanical dimension M^mass · L^length · T^time.
    pub const fn mlt(mass: i8, length: i8, time: i8) -> Dimension {
        Dimension {
            exponents: [length, mass, time, 0, 0, 0, 0],
        }
    }

    /// Whether this is a pure number.
    pub fn is_dimensionless(self) -> bool {
        self.exponents == [0; 7]
    }

    /// The dimension of a product, or `None` if an exponent overflows.
    pub fn checked_mul(self, other: Dimension) -> Option<Dimension> {
        self.combine(other, i8::checked_add)
    }

    /// The dimension of a quotient, or `None` if an exponent overflows.
    pub fn checked_div(self, other: Dimension) -> Option<Dimension> {
        self.combine(other, i8::checked_sub)
    }

    fn combine(self, other: Dimension, op: fn(i8, i8) -> Option<i8>) -> Option<Dimension> {
        let mut exponents = [0i8; 7];
        for (i, exponent) in exponents.iter_mut().enumerate() {
            *exponent = op(self.exponents[i], other.exponents[i])?;
        }
        Some(Dimension { exponents })
    }

    /// The dimension raised to an integer power, or `None` on overflow.
    pub fn checked_powi(self, power: i32) -> Option<Dimension> {
        let mut exponents = [0i8; 7];
        for (i, exponent) in exponents.iter_mut().enumerate() {
            let raised = i32::from(self.exponents[i]).checked_mul(power)?;
            *exponent = i8::try_from(raised).ok()?;
        }
        Some(Dimension { exponents })
    }

    /// The n-th root, or `None` if some exponent is not a multiple of n.
    pub fn root(self, n: i8) -> Option<Dimension> {
        if n == 0 || self.exponents.iter().any(|e| e % n != 0) {
            return None;
        }
        let mut exponents = self.exponents;
        exponents.iter_mut().for_each(|e| *e /= n);
        Some(Dimension { exponents })
    }

    /// The everyday name of this dimension with its article ("a force"),
    /// if it has one.
    pub fn name(self) -> Option<&'static str> {
        NAMED
            .iter()
            .find(|(dimension, _)| *dimension == self)
            .map(|(_, name)| *name)
    }

    /// The name if known, otherwise "a quantity in `<SI units>`".
    pub fn describe(self) -> String {
        match self.name() {
            Some(name) => name.to_string(),
            None => format!("a quantity in {}", self.si_units()),
        }
    }

    /// The dimension written in coherent SI base units, in heft's unit
    /// syntax (`kg*m/s^2`); "1" for a pure number.
    pub fn si_units(self) -> String {
        // Mass first, as in kg*m/s^2.
        let factors: Vec<(&str, i32)> = [1, 0, 2, 3, 4, 5, 6]
            .into_iter()
            .map(|index| (SI_BASE_SYMBOLS[index], i32::from(self.exponents[index])))
            .filter(|(_, exponent)| *exponent != 0)
            .collect();
        super::format_unit_product(&factors)
    }

    /// Non-zero exponents keyed by base-dimension name, in exponent order.
    pub fn nonzero_exponents(self) -> impl Iterator<Item = (&'static str, i8)> {
        BASE_NAMES
            .into_iter()
            .zip(self.exponents)
            .filter(|(_, exponent)| *exponent != 0)
    }
}

impl fmt::Display for Dimension {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.describe())
    }
}

/// Dimensions with an everyday name, with article.
const NAMED: &[(Dimension, &str)] = &[
    (Dimension::NONE, "a plain number"),
    (Dimension::LENGTH, "a length"),
    (Dimension::MASS, "a mass"),
    (Dimension::TIME, "a time"),
    (Dimension::VELOCITY, "a velocity"),
    (Dimension::ACCELERATION, "an acceleration"),
    (Dimension::FORCE, "a force"),
    (Dimension::PRESSURE, "a pressure or stress"),
    (Dimension::ENERGY, "an energy or torque"),
    (Dimension::POWER, "a power"),
    (Dimension::FREQUENCY, "a frequency or angular speed"),
    (Dimension::AREA, "an area"),
    (Dimension::VOLUME, "a volume"),
    (Dimension::DENSITY, "a density"),
    (Dimension::STIFFNESS, "a force per length"),
    (Dimension::MASS_PER_LENGTH, "a mass per length"),
    (Dimension::MASS_PER_TIME, "a mass per time"),
    (Dimension::MOMENTUM, "a momentum or impulse"),
];
