//! What a sweep block gives presentation: the swept input's values, the
//! shown results and every check's utilization and verdict at each, and
//! each check's margin. Plain data, like `model.rs`; the sweep block kind
//! (`blocks::sweep`) fills it in.

use crate::base::Span;
use crate::sheet::CellId;
use crate::units::{DisplayUnit, Value};

use super::model::CheckStatus;

/// A sweep block's study.
#[derive(Clone, Debug, PartialEq)]
pub struct SweepReport {
    /// The block's statement index.
    pub statement: usize,
    /// The `sweep …:` line.
    pub head: Span,
    /// The head as written, without the colon: `sweep x_cg from 0.2 m to 1.4 m count 13`.
    pub title: String,
    /// The label, if written.
    pub label: Option<String>,
    /// The swept input cell, if the head names one.
    pub variable: Option<CellId>,
    /// The swept input's name as written.
    pub variable_name: String,
    /// The unit the input's values are shown in (its own).
    pub display: DisplayUnit,
    /// The shown results, in written order.
    pub shown: Vec<SweepColumn>,
    /// The points, in sweep order; empty when the sweep could not run (a
    /// finding says why).
    pub points: Vec<SweepPoint>,
    /// Each check's margin over the range, in check order (empty when the
    /// sweep did not run).
    pub margins: Vec<Margin>,
    /// With `step`: the last interval is shorter than the step (the range
    /// is not a whole number of steps), this long in SI.
    pub short_last_step: Option<f64>,
}

/// A shown result's column.
#[derive(Clone, Debug, PartialEq)]
pub struct SweepColumn {
    /// The expression as written.
    pub label: String,
    /// The unit its values are shown in.
    pub display: DisplayUnit,
}

/// The sheet at one value of the swept input.
#[derive(Clone, Debug, PartialEq)]
pub struct SweepPoint {
    /// The input's value (SI).
    pub input: f64,
    /// Each shown result's value; `None` where it could not be computed.
    pub shown: Vec<Option<Value>>,
    /// Each check, in check order.
    pub checks: Vec<SweepCheck>,
}

/// A check at one point of a sweep.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SweepCheck {
    /// Passed, failed, unknown, error or blocked at this point (as written
    /// at this value, at the worst case of the tolerances).
    pub status: CheckStatus,
    /// The utilization that decides it (at the worst case where there are
    /// tolerances); `None` where it could not be established.
    pub utilization: Option<f64>,
}

impl SweepCheck {
    /// Whether it passed here: `Some(false)` failed, `None` not established.
    pub fn passed(&self) -> Option<bool> {
        match self.status {
            CheckStatus::Passed => Some(true),
            CheckStatus::Failed => Some(false),
            CheckStatus::Unknown | CheckStatus::Error | CheckStatus::Blocked { .. } => None,
        }
    }
}

/// A check's margin over the sweep's range.
#[derive(Clone, Debug, PartialEq)]
pub enum Margin {
    /// It passes at every point of the range.
    PassesThroughout,
    /// It fails at every point of the range.
    FailsThroughout,
    /// Its verdict changes between these neighbouring points (in sweep
    /// order), each with the value where its utilization reaches 100 %.
    Crossings(Vec<Crossing>),
    /// Not established at some points, so the range cannot be judged as a
    /// whole: the count of such points; crossings found between points
    /// that were established are still listed.
    NotEstablished {
        /// How many points of the sweep could not be established.
        unknown_points: usize,
        /// The crossings found where both neighbouring points are known.
        crossings: Vec<Crossing>,
    },
}

/// Where a check's utilization reaches 100 % between two points.
#[derive(Clone, Debug, PartialEq)]
pub struct Crossing {
    /// The two neighbouring points' input values (SI) that bracket it.
    pub between: (f64, f64),
    /// Whether the check passes on the side of smaller input values.
    pub passes_below: bool,
    /// The input value (SI) found and verified; `Err` with the reason when
    /// it could not be verified.
    pub at: Result<VerifiedMargin, String>,
}

/// A margin found by root finding and verified by evaluating the sheet.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct VerifiedMargin {
    /// The input value (SI).
    pub input: f64,
    /// The utilization the sheet gives there.
    pub utilization: f64,
}

/// How close to 100 % the sheet's utilization must be at a margin for it
/// to count as verified (relative).
pub const MARGIN_TOLERANCE: f64 = 1e-6;
