//! The unit catalog: every unit heft knows, its exact definition in SI, and
//! where that definition comes from.
//!
//! The factors are written here by hand rather than taken from uom: uom 0.38
//! stores its US customary mass and force factors rounded to 7 significant
//! digits (its pound is 0.4535924 kg, its slug 32.17404 lbm), so
//! `100 lbm * g0` would come out as 99.999998 lbf. Here every factor is the
//! exact value its definition gives.

use rustc_hash::FxHashMap as HashMap;
use std::sync::LazyLock;

use super::{Dimension, ExactFactor};

/// Where a unit comes from, for the audit's "unit systems used".
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum UnitSystem {
    /// SI units and their decimal multiples.
    Si,
    /// Non-SI units accepted for use with the SI (tonne, bar, litre) and the
    /// metric gravitational kilogram-force.
    Metric,
    /// US customary (foot-pound-second) units.
    UsCustomary,
    /// Units every system shares: s, min, h, deg, rev, rpm, %.
    Shared,
}

impl UnitSystem {
    /// A short name for reports.
    pub fn label(self) -> &'static str {
        match self {
            UnitSystem::Si => "SI",
            UnitSystem::Metric => "metric (non-SI)",
            UnitSystem::UsCustomary => "US customary",
            UnitSystem::Shared => "shared",
        }
    }
}

/// One unit of the catalog.
#[derive(Clone, Debug)]
pub struct UnitDef {
    /// The symbol written in sheets: `lbf`, `kN`.
    pub symbol: String,
    /// The unit's name: `pound-force`, `kilonewton`.
    pub name: String,
    /// Its dimension.
    pub dimension: Dimension,
    /// The value of one of this unit in coherent SI units, exactly.
    pub factor: ExactFactor,
    /// The same factor rounded once to `f64`, for evaluation.
    pub si_factor: f64,
    /// Which family the unit belongs to.
    pub system: UnitSystem,
    /// The definition in words: `1 lbf = 1 lbm × g0`.
    pub definition: String,
    /// The document the definition comes from.
    pub source: &'static str,
}

/// Sources cited by the catalog.
pub mod sources {
    /// The SI itself.
    pub const SI_BROCHURE: &str = "SI Brochure, 9th edition (BIPM, 2019)";
    /// Units accepted for use with the SI.
    pub const SI_ACCEPTED: &str =
        "SI Brochure, 9th edition (BIPM, 2019), Table 8: non-SI units accepted for use with the SI";
    /// The yard and the pound.
    pub const AGREEMENT_1959: &str =
        "exact: International Yard and Pound Agreement, 1959 (NIST SP 811, 2008, Appendix B)";
    /// Standard gravity and the gravitational force units.
    pub const CGPM_1901: &str =
        "exact: standard acceleration of gravity 9.80665 m/s², 3rd CGPM, 1901";
    /// Units derived from the 1959 definitions and standard gravity.
    pub const DERIVED_US: &str = "exact by derivation: 1959 yard and pound with standard gravity (3rd CGPM 1901); NIST SP 811, 2008, Appendix B";
    /// The mechanical horsepower.
    pub const HORSEPOWER: &str =
        "exact by definition: 1 hp = 550 ft·lbf/s (NIST SP 811, 2008, Appendix B)";
}

/// A symbol that could mean several units and is refused.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Ambiguity {
    /// The refused symbol.
    pub symbol: &'static str,
    /// What to write instead.
    pub choices: &'static str,
}

/// Symbols heft refuses to guess.
pub const AMBIGUOUS: &[Ambiguity] = &[
    Ambiguity {
        symbol: "lb",
        choices: "`lbm` (pound-mass) or `lbf` (pound-force)",
    },
    Ambiguity {
        symbol: "lbs",
        choices: "`lbm` (pound-mass) or `lbf` (pound-force)",
    },
    Ambiguity {
        symbol: "pound",
        choices: "`lbm` (pound-mass) or `lbf` (pound-force)",
    },
    Ambiguity {
        symbol: "pounds",
        choices: "`lbm` (pound-mass) or `lbf` (pound-force)",
    },
    Ambiguity {
        symbol: "ton",
        choices: "`t` (metric tonne, 1000 kg), `2000 lbm` (US short ton) or `2240 lbm` (long ton); as a force, `2000 lbf` or `1000 kgf`",
    },
    Ambiguity {
        symbol: "tons",
        choices: "`t` (metric tonne, 1000 kg), `2000 lbm` (US short ton) or `2240 lbm` (long ton); as a force, `2000 lbf` or `1000 kgf`",
    },
    Ambiguity {
        symbol: "oz",
        choices: "a mass (1 oz = lbm/16: write the value in `lbm`) or a force (write it in `lbf`)",
    },
    Ambiguity {
        symbol: "kp",
        choices: "`kgf` (kilogram-force) for a force or `kg` for a mass",
    },
    Ambiguity {
        symbol: "tonne_f",
        choices: "`1000 kgf`",
    },
];

/// Everyday spellings that are not symbols, and the symbol meant.
const SPELLINGS: &[(&str, &str)] = &[
    ("sec", "s"),
    ("secs", "s"),
    ("hr", "h"),
    ("hrs", "h"),
    ("mins", "min"),
    ("kilo", "kg"),
    ("kilos", "kg"),
    ("meter", "m"),
    ("meters", "m"),
    ("metre", "m"),
    ("metres", "m"),
    ("foot", "ft"),
    ("feet", "ft"),
    ("inch", "in"),
    ("inches", "in"),
    ("kips", "kip"),
    ("tonne", "t"),
    ("tonnes", "t"),
    ("degree", "deg"),
    ("degrees", "deg"),
];

/// The catalog: all units, looked up by symbol.
pub struct Catalog {
    units: Vec<UnitDef>,
    by_symbol: HashMap<String, usize>,
}

impl Catalog {
    /// The unit with this symbol.
    pub fn get(&self, symbol: &str) -> Option<&UnitDef> {
        self.by_symbol.get(symbol).map(|&index| &self.units[index])
    }

    /// Every unit, in catalog order.
    pub fn units(&self) -> &[UnitDef] {
        &self.units
    }

    /// The refusal for an ambiguous symbol, if it is one.
    pub fn ambiguity(&self, symbol: &str) -> Option<&'static Ambiguity> {
        AMBIGUOUS
            .iter()
            .find(|ambiguity| ambiguity.symbol == symbol)
    }

    /// What the user probably meant by an unknown `symbol`, written as heft
    /// unit syntax: a common spelling (`sec` → `s`), two symbols run
    /// together (`kNm` → `kN*m`), another case (`KN` → `kN`), a plural
    /// (`kgs` → `kg`) or a near miss.
    pub fn closest(&self, symbol: &str) -> Option<String> {
        if let Some((_, meant)) = SPELLINGS.iter().find(|(spelling, _)| *spelling == symbol) {
            return Some((*meant).to_string());
        }
        if let Some(product) = self.split_product(symbol) {
            return Some(product);
        }
        if let Some(unit) = self
            .units
            .iter()
            .find(|unit| unit.symbol.eq_ignore_ascii_case(symbol))
        {
            return Some(unit.symbol.clone());
        }
        let singular = symbol.strip_suffix('s').unwrap_or(symbol);
        if let Some(unit) = self.get(singular) {
            return Some(unit.symbol.clone());
        }
        self.units
            .iter()
            .map(|unit| (strsim::damerau_levenshtein(&unit.symbol, symbol), unit))
            .filter(|(distance, unit)| *distance <= 1 && unit.symbol.len() > 1)
            .min_by_key(|(distance, _)| *distance)
            .map(|(_, unit)| unit.symbol.clone())
    }

    /// `kNm` → `kN*m`: two catalog symbols whose product has an everyday
    /// name (torque, stiffness, …).
    fn split_product(&self, symbol: &str) -> Option<String> {
        symbol.char_indices().skip(1).find_map(|(at, _)| {
            let (first, second) = (self.get(&symbol[..at])?, self.get(&symbol[at..])?);
            let product = first.dimension.checked_mul(second.dimension)?;
            let named = product.name().is_some()
                && !first.dimension.is_dimensionless()
                && !second.dimension.is_dimensionless();
            named.then(|| format!("{}*{}", first.symbol, second.symbol))
        })
    }
}

/// The one catalog, built on first use.
pub fn catalog() -> &'static Catalog {
    static CATALOG: LazyLock<Catalog> = LazyLock::new(build);
    &CATALOG
}

/// An SI prefix.
struct Prefix {
    symbol: &'static str,
    name: &'static str,
    power_of_ten: i32,
}

const PREFIXES: &[Prefix] = &[
    Prefix {
        symbol: "G",
        name: "giga",
        power_of_ten: 9,
    },
    Prefix {
        symbol: "M",
        name: "mega",
        power_of_ten: 6,
    },
    Prefix {
        symbol: "k",
        name: "kilo",
        power_of_ten: 3,
    },
    Prefix {
        symbol: "h",
        name: "hecto",
        power_of_ten: 2,
    },
    Prefix {
        symbol: "da",
        name: "deca",
        power_of_ten: 1,
    },
    Prefix {
        symbol: "c",
        name: "centi",
        power_of_ten: -2,
    },
    Prefix {
        symbol: "m",
        name: "milli",
        power_of_ten: -3,
    },
    Prefix {
        symbol: "µ",
        name: "micro",
        power_of_ten: -6,
    },
    Prefix {
        symbol: "u",
        name: "micro",
        power_of_ten: -6,
    },
    Prefix {
        symbol: "n",
        name: "nano",
        power_of_ten: -9,
    },
];

struct Builder {
    units: Vec<UnitDef>,
}

impl Builder {
    #[allow(clippy::too_many_arguments)]
    fn add(
        &mut self,
        symbol: &str,
        name: &str,
        dimension: Dimension,
        factor: ExactFactor,
        system: UnitSystem,
        definition: &str,
        source: &'static str,
    ) -> ExactFactor {
        self.units.push(UnitDef {
            symbol: symbol.to_string(),
            name: name.to_string(),
            dimension,
            si_factor: factor.to_f64(),
            factor: factor.clone(),
            system,
            definition: definition.to_string(),
            source,
        });
        factor
    }

    /// Adds an SI unit and its prefixed forms with the listed prefixes.
    fn add_si(
        &mut self,
        symbol: &str,
        name: &str,
        dimension: Dimension,
        factor: ExactFactor,
        definition: &str,
        prefixes: &str,
    ) {
        self.add(
            symbol,
            name,
            dimension,
            factor.clone(),
            UnitSystem::Si,
            definition,
            sources::SI_BROCHURE,
        );
        for prefix in PREFIXES
            .iter()
            .filter(|prefix| prefixes.split(' ').any(|p| p == prefix.symbol))
        {
            let scale = ExactFactor::decimal(&format!("1e{}", prefix.power_of_ten));
            self.add(
                &format!("{}{symbol}", prefix.symbol),
                &format!("{}{name}", prefix.name),
                dimension,
                factor.times(&scale),
                UnitSystem::Si,
                &format!(
                    "1 {}{symbol} = 1e{} {symbol}",
                    prefix.symbol, prefix.power_of_ten
                ),
                sources::SI_BROCHURE,
            );
        }
    }
}

fn build() -> Catalog {
    use UnitSystem::{Metric, Shared, UsCustomary};
    let mut b = Builder { units: Vec::new() };
    let one = ExactFactor::one;
    let dec = ExactFactor::decimal;

    // SI base and derived units.
    b.add_si(
        "m",
        "metre",
        Dimension::LENGTH,
        one(),
        "SI base unit of length",
        "k c m µ u n",
    );
    b.add(
        "kg",
        "kilogram",
        Dimension::MASS,
        one(),
        UnitSystem::Si,
        "SI base unit of mass",
        sources::SI_BROCHURE,
    );
    b.add_si(
        "g",
        "gram",
        Dimension::MASS,
        dec("1e-3"),
        "1 g = 1e-3 kg",
        "M m µ u",
    );
    b.add_si(
        "s",
        "second",
        Dimension::TIME,
        one(),
        "SI base unit of time",
        "m µ u n",
    );
    b.add_si(
        "A",
        "ampere",
        Dimension {
            exponents: [0, 0, 0, 1, 0, 0, 0],
        },
        one(),
        "SI base unit of electric current",
        "k m",
    );
    b.add_si(
        "K",
        "kelvin",
        Dimension {
            exponents: [0, 0, 0, 0, 1, 0, 0],
        },
        one(),
        "SI base unit of temperature",
        "m",
    );
    b.add_si(
        "mol",
        "mole",
        Dimension {
            exponents: [0, 0, 0, 0, 0, 1, 0],
        },
        one(),
        "SI base unit of amount of substance",
        "k m",
    );
    b.add_si(
        "cd",
        "candela",
        Dimension {
            exponents: [0, 0, 0, 0, 0, 0, 1],
        },
        one(),
        "SI base unit of luminous intensity",
        "",
    );
    b.add_si(
        "N",
        "newton",
        Dimension::FORCE,
        one(),
        "1 N = 1 kg·m/s²",
        "G M k da m",
    );
    b.add_si(
        "Pa",
        "pascal",
        Dimension::PRESSURE,
        one(),
        "1 Pa = 1 N/m²",
        "G M k h",
    );
    b.add_si(
        "J",
        "joule",
        Dimension::ENERGY,
        one(),
        "1 J = 1 N·m",
        "G M k",
    );
    b.add_si(
        "W",
        "watt",
        Dimension::POWER,
        one(),
        "1 W = 1 J/s",
        "G M k m",
    );
    b.add_si(
        "Hz",
        "hertz",
        Dimension::FREQUENCY,
        one(),
        "1 Hz = 1/s",
        "M k",
    );
    b.add_si(
        "rad",
        "radian",
        Dimension::NONE,
        one(),
        "1 rad = 1 m/m (angles are plain numbers)",
        "m",
    );

    // Non-SI units accepted for use with the SI, and shared units.
    let tonne = b.add(
        "t",
        "tonne",
        Dimension::MASS,
        dec("1000"),
        Metric,
        "1 t = 1000 kg",
        sources::SI_ACCEPTED,
    );
    let minute = b.add(
        "min",
        "minute",
        Dimension::TIME,
        dec("60"),
        Shared,
        "1 min = 60 s",
        sources::SI_ACCEPTED,
    );
    let hour = b.add(
        "h",
        "hour",
        Dimension::TIME,
        dec("3600"),
        Shared,
        "1 h = 3600 s",
        sources::SI_ACCEPTED,
    );
    b.add(
        "L",
        "litre",
        Dimension::VOLUME,
        dec("1e-3"),
        Metric,
        "1 L = 1e-3 m³",
        sources::SI_ACCEPTED,
    );
    b.add(
        "mL",
        "millilitre",
        Dimension::VOLUME,
        dec("1e-6"),
        Metric,
        "1 mL = 1e-6 m³",
        sources::SI_ACCEPTED,
    );
    b.add(
        "bar",
        "bar",
        Dimension::PRESSURE,
        dec("1e5"),
        Metric,
        "1 bar = 100 000 Pa",
        sources::SI_ACCEPTED,
    );
    b.add(
        "mbar",
        "millibar",
        Dimension::PRESSURE,
        dec("100"),
        Metric,
        "1 mbar = 100 Pa",
        sources::SI_ACCEPTED,
    );
    let pi = ExactFactor::pi();
    b.add(
        "deg",
        "degree",
        Dimension::NONE,
        pi.over(&ExactFactor::integer(180)),
        Shared,
        "1 deg = π/180 rad",
        sources::SI_ACCEPTED,
    );
    b.add(
        "°",
        "degree",
        Dimension::NONE,
        pi.over(&ExactFactor::integer(180)),
        Shared,
        "1° = π/180 rad",
        sources::SI_ACCEPTED,
    );
    let revolution = b.add(
        "rev",
        "revolution",
        Dimension::NONE,
        pi.times(&ExactFactor::integer(2)),
        Shared,
        "1 rev = 2π rad",
        sources::SI_BROCHURE,
    );
    b.add(
        "rpm",
        "revolution per minute",
        Dimension::FREQUENCY,
        revolution.over(&minute),
        Shared,
        "1 rpm = 1 rev/min = π/30 rad/s (an angular speed: 1 rpm is 1/60 rev/s, not 1/60 Hz of rad)",
        sources::SI_BROCHURE,
    );
    b.add(
        "%",
        "percent",
        Dimension::NONE,
        dec("0.01"),
        Shared,
        "1 % = 0.01",
        sources::SI_BROCHURE,
    );

    // Standard gravity and the metric gravitational force units.
    let g0 = dec("9.80665");
    let kgf = b.add(
        "kgf",
        "kilogram-force",
        Dimension::FORCE,
        g0.clone(),
        Metric,
        "1 kgf = 1 kg × g0 = 9.80665 N",
        sources::CGPM_1901,
    );
    b.add(
        "tf",
        "tonne-force",
        Dimension::FORCE,
        kgf.times(&tonne),
        Metric,
        "1 tf = 1000 kgf",
        sources::CGPM_1901,
    );

    // US customary (foot-pound-second) units.
    let inch = b.add(
        "in",
        "inch",
        Dimension::LENGTH,
        dec("0.0254"),
        UsCustomary,
        "1 in = 0.0254 m (yd/36)",
        sources::AGREEMENT_1959,
    );
    let foot = b.add(
        "ft",
        "foot",
        Dimension::LENGTH,
        dec("0.3048"),
        UsCustomary,
        "1 ft = 12 in = 0.3048 m",
        sources::AGREEMENT_1959,
    );
    b.add(
        "yd",
        "yard",
        Dimension::LENGTH,
        dec("0.9144"),
        UsCustomary,
        "1 yd = 3 ft = 0.9144 m",
        sources::AGREEMENT_1959,
    );
    let mile = b.add(
        "mi",
        "mile",
        Dimension::LENGTH,
        dec("1609.344"),
        UsCustomary,
        "1 mi = 5280 ft = 1609.344 m",
        sources::AGREEMENT_1959,
    );
    let pound = b.add(
        "lbm",
        "pound-mass",
        Dimension::MASS,
        dec("0.45359237"),
        UsCustomary,
        "1 lbm = 0.45359237 kg",
        sources::AGREEMENT_1959,
    );
    let lbf = b.add(
        "lbf",
        "pound-force",
        Dimension::FORCE,
        pound.times(&g0),
        UsCustomary,
        "1 lbf = 1 lbm × g0 = 4.4482216152605 N",
        sources::DERIVED_US,
    );
    b.add(
        "slug",
        "slug",
        Dimension::MASS,
        lbf.over(&foot),
        UsCustomary,
        "1 slug = 1 lbf·s²/ft = 32.174048556… lbm",
        sources::DERIVED_US,
    );
    let kip = b.add(
        "kip",
        "kip (kilopound-force)",
        Dimension::FORCE,
        lbf.times(&ExactFactor::integer(1000)),
        UsCustomary,
        "1 kip = 1000 lbf",
        sources::DERIVED_US,
    );
    b.add(
        "psi",
        "pound-force per square inch",
        Dimension::PRESSURE,
        lbf.over(&inch.powi(2)),
        UsCustomary,
        "1 psi = 1 lbf/in²",
        sources::DERIVED_US,
    );
    b.add(
        "ksi",
        "kip per square inch",
        Dimension::PRESSURE,
        kip.over(&inch.powi(2)),
        UsCustomary,
        "1 ksi = 1 kip/in² = 1000 psi",
        sources::DERIVED_US,
    );
    b.add(
        "psf",
        "pound-force per square foot",
        Dimension::PRESSURE,
        lbf.over(&foot.powi(2)),
        UsCustomary,
        "1 psf = 1 lbf/ft²",
        sources::DERIVED_US,
    );
    b.add(
        "pdl",
        "poundal",
        Dimension::FORCE,
        pound.times(&foot),
        UsCustomary,
        "1 pdl = 1 lbm·ft/s²",
        sources::DERIVED_US,
    );
    let second = one();
    b.add(
        "hp",
        "horsepower (mechanical)",
        Dimension::POWER,
        foot.times(&lbf)
            .times(&ExactFactor::integer(550))
            .over(&second),
        UsCustomary,
        "1 hp = 550 ft·lbf/s = 745.69987158227022 W",
        sources::HORSEPOWER,
    );
    b.add(
        "mph",
        "mile per hour",
        Dimension::VELOCITY,
        mile.over(&hour),
        UsCustomary,
        "1 mph = 1 mi/h = 0.44704 m/s",
        sources::AGREEMENT_1959,
    );
    b.add(
        "fpm",
        "foot per minute",
        Dimension::VELOCITY,
        foot.over(&minute),
        UsCustomary,
        "1 fpm = 1 ft/min = 0.00508 m/s",
        sources::AGREEMENT_1959,
    );

    let by_symbol = b
        .units
        .iter()
        .enumerate()
        .map(|(index, unit)| (unit.symbol.clone(), index))
        .collect();
    Catalog {
        units: b.units,
        by_symbol,
    }
}
