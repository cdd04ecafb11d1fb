//! Pure numerical methods over plain `f64`s, knowing nothing of sheets,
//! units or spans: the number types compiled formulas run on (`f64`,
//! intervals for tolerance ranges, dual numbers for exact derivatives),
//! what a function's rule on them is (`UnaryRule`, `BinaryRule`), and
//! an adaptive Dormand–Prince 5(4) integrator with error control on scaled
//! states, dense output, events located by root-finding inside the step,
//! and stiffness detection. It imports nothing of the crate.
//!
//! The integrator is hand-written rather than taken from an ODE crate
//! because heft needs event location on the dense output, the stiffness
//! test and scaled error control together, with per-step costs small
//! enough for a million steps a second, and every number reproducible
//! across machines. States are in whatever coherent units the caller chose
//! (the sheet binding in `eval::simulate` uses SI); equations come in
//! through the [`System`] trait.

mod dual;
mod integrator;
mod interval;
mod number;
mod roots;
mod rule;
mod table;
mod trajectory;

pub use dual::{Dual, Primal};
pub use integrator::{
    Condition, ErrorControl, EventHit, EventKind, Failure, Outcome, Run, Settings, Stats, System,
    integrate,
};
pub use interval::Interval;
pub use number::Number;
pub use roots::{find_crossing, golden_section};
pub use rule::{BinaryDerivative, BinaryRule, Slope, UnaryRule};
pub use table::{Bracket, Grid, GridError, GridRead, GridReading, bracket};
pub use trajectory::{COEFFICIENTS, Objective, Trajectory};
