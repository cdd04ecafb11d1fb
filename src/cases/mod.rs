//! Load cases, tolerances and sensitivity: the number types that carry
//! ranges and derivatives through a sheet's compiled formulas, and the
//! plain result model for cases and ranges.

pub mod dual;
pub mod interval;

pub use dual::Dual;
pub use interval::Interval;
