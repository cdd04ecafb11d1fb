//! Motion over time, as plain numbers: an adaptive Dormand–Prince 5(4)
//! integrator with error control on scaled states, dense output, events
//! located by root-finding inside the step, and stiffness detection.
//!
//! This folder knows nothing of sheets, units or spans: states are `f64`s in
//! whatever coherent units the caller chose (the sheet binding in
//! `eval::simulate` uses SI), and the equations come in through the
//! [`System`] trait. Hand-written rather than taken from an ODE crate because
//! heft needs event location on the dense output, the stiffness test and
//! scaled error control together, with per-step costs small enough for a
//! million steps a second, and every number reproducible across machines.

mod integrator;
mod roots;
mod trajectory;

pub use integrator::{
    Condition, ErrorControl, EventHit, EventKind, Failure, Outcome, Run, Settings, Stats, System,
    integrate,
};
pub use roots::{find_crossing, golden_section};
pub use trajectory::{Objective, Trajectory};
