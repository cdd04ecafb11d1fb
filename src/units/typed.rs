//! The typed bridge to uom: take a computed quantity out as
//! `uom::si::f64::Force`, `Mass`, … with its dimension checked.

use uom::si::f64 as si;

use super::{Dimension, Quantity};

/// A uom quantity type that a [`Quantity`] of the right dimension converts to.
pub trait TypedQuantity: Sized {
    /// The dimension this type holds.
    const DIMENSION: Dimension;
    /// Builds the value from its coherent SI value.
    fn from_si(si: f64) -> Self;
}

macro_rules! typed_quantity {
    ($($type:ident, $unit:path, $dimension:expr;)*) => {$(
        impl TypedQuantity for si::$type {
            const DIMENSION: Dimension = $dimension;
            fn from_si(value: f64) -> Self {
                si::$type::new::<$unit>(value)
            }
        }
    )*};
}

typed_quantity! {
    Mass, uom::si::mass::kilogram, Dimension::MASS;
    Force, uom::si::force::newton, Dimension::FORCE;
    Length, uom::si::length::meter, Dimension::LENGTH;
    Time, uom::si::time::second, Dimension::TIME;
    Velocity, uom::si::velocity::meter_per_second, Dimension::VELOCITY;
    Acceleration, uom::si::acceleration::meter_per_second_squared, Dimension::ACCELERATION;
    Pressure, uom::si::pressure::pascal, Dimension::PRESSURE;
    Energy, uom::si::energy::joule, Dimension::ENERGY;
    Torque, uom::si::torque::newton_meter, Dimension::ENERGY;
    Power, uom::si::power::watt, Dimension::POWER;
    Area, uom::si::area::square_meter, Dimension::AREA;
    Volume, uom::si::volume::cubic_meter, Dimension::VOLUME;
    MassDensity, uom::si::mass_density::kilogram_per_cubic_meter, Dimension::DENSITY;
    Frequency, uom::si::frequency::hertz, Dimension::FREQUENCY;
    Ratio, uom::si::ratio::ratio, Dimension::NONE;
}

impl Quantity {
    /// This quantity as a uom type, or `None` if the dimensions differ.
    pub fn to_typed<T: TypedQuantity>(self) -> Option<T> {
        (self.dimension == T::DIMENSION).then(|| T::from_si(self.si))
    }
}
