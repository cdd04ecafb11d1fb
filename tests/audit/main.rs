//! The audit through the library API: its corpus of mistaken and clean
//! sheets, its numbers against their outside sources, its robustness, and
//! the traps it warns about. `heft audit` as a user runs it is tested with
//! the other commands (`tests/commands/`).

#[path = "../common/mod.rs"]
mod common;

mod audit_corpus;
mod audit_reference;
mod audit_robustness;
mod audit_traps;
