//! What a simulate block's run gives presentation: how it ended, its events,
//! its table and plot series (values in SI, with the units to show them
//! in), and the whole trajectory for export. Plain data, like `model.rs`.

use std::sync::Arc;

use crate::base::Span;
use crate::numeric::{Stats, Trajectory};
use crate::sheet::CellId;
use crate::units::{Dimension, DisplayUnit, Value};

/// How a run ended.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum RunStatus {
    /// It reached its end time.
    Reached,
    /// A stop condition ended it.
    Stopped,
    /// The integration failed part way; a diagnostic says why.
    Failed,
    /// Not attempted: a line did not parse, an input failed, or the block
    /// is wrong as written.
    NotRun,
}

/// A stop condition or named event and when it happened.
#[derive(Clone, Debug, PartialEq)]
pub struct RunEvent {
    /// Its name, if it has one.
    pub name: Option<String>,
    /// The condition as written: `x >= h_drop`.
    pub condition: String,
    /// Whether it ends the run.
    pub stops: bool,
    /// Its line.
    pub span: Span,
    /// Its description, if written.
    pub description: Option<String>,
    /// Every time it happened, in SI (seconds).
    pub times: Vec<f64>,
}

impl RunEvent {
    /// `stop: x >= h_drop` or `slow: v <= 1 m/s`.
    pub fn label(&self) -> String {
        match (&self.name, self.stops) {
            (Some(name), _) => format!("{name}: {}", self.condition),
            (None, true) => format!("stop: {}", self.condition),
            (None, false) => self.condition.clone(),
        }
    }
}

/// A column of the run's table or a plotted series.
#[derive(Clone, Debug, PartialEq)]
pub struct RunColumn {
    /// What it shows, as written: `x`, `k * x`.
    pub label: String,
    /// The unit it is shown in.
    pub display: DisplayUnit,
    /// Its dimension.
    pub dimension: Dimension,
}

/// One row of the run's table.
#[derive(Clone, Debug, PartialEq)]
pub struct RunRow {
    /// The time, in SI (seconds).
    pub time: f64,
    /// One value per column (in SI); `None` where it could not be computed.
    pub values: Vec<Option<Value>>,
    /// The events that happened at this time, if it is an event's row.
    pub events: Vec<usize>,
}

/// A plotted series: points (time, value), both in SI.
#[derive(Clone, Debug, PartialEq)]
pub struct PlotSeries {
    /// Label and unit.
    pub column: RunColumn,
    /// The points in time order.
    pub points: Vec<(f64, f64)>,
}

/// Which slots of the trajectory's state hold a state.
#[derive(Clone, Debug, PartialEq)]
pub struct StateSlots {
    /// The state's cell.
    pub cell: CellId,
    /// Its name and display unit.
    pub column: RunColumn,
    /// The first slot.
    pub first: usize,
    /// 1 for a scalar, 2 or 3 for a vector.
    pub n_components: usize,
    /// Its starting value as written: `0 m`.
    pub start: String,
    /// The starting value's description, if written.
    pub start_description: Option<String>,
}

/// What a simulate block did.
#[derive(Clone, Debug)]
pub struct RunReport {
    /// The block's statement index.
    pub statement: usize,
    /// The whole block.
    pub span: Span,
    /// Its head as written, without the colon or a comment:
    /// `simulate t from 0 s to 20 s`.
    pub title: String,
    /// The time variable's cell.
    pub time: CellId,
    /// The states, with their slots in the trajectory.
    pub states: Vec<StateSlots>,
    /// How it ended.
    pub status: RunStatus,
    /// The start and requested end, in seconds.
    pub range: Option<(f64, f64)>,
    /// The unit times are shown in.
    pub time_display: DisplayUnit,
    /// The stop conditions and named events.
    pub events: Vec<RunEvent>,
    /// The event that stopped the run.
    pub stopped_by: Option<usize>,
    /// Steps and evaluations.
    pub stats: Stats,
    /// The relative tolerance used.
    pub relative_tolerance: f64,
    /// Whether the rates ran as compiled programs (else interpreted).
    pub compiled: bool,
    /// The table's columns (after the time).
    pub columns: Vec<RunColumn>,
    /// The table's rows.
    pub rows: Vec<RunRow>,
    /// The plotted series.
    pub plot: Vec<PlotSeries>,
    /// The states over time (absent if the run never started).
    pub trajectory: Option<Arc<Trajectory>>,
}

impl RunReport {
    /// The time the run ended, in seconds.
    pub fn final_time(&self) -> Option<f64> {
        self.trajectory.as_ref().map(|trajectory| trajectory.end())
    }
}
