//! The sheet language through the library API: the unit catalog, mechanics,
//! linking, solve blocks, load cases and tolerances, simulate blocks, the
//! fixes heft offers, the data-driven corpora of `tests/sheets/`, and the
//! oracles over all of them. One test binary, one module per concern (every
//! integration-test binary links the whole crate, so there are few).

#[path = "../common/mod.rs"]
mod common;

mod cases;
mod conditional;
mod fixes;
mod linking;
mod mechanics;
mod oracles;
mod parts;
mod properties;
mod robustness;
mod shared_sheets;
mod sheets;
mod simulate;
mod solve;
mod sweep;
mod tables;
mod units_reference;
