//! Simulate blocks on a sheet: checks a block's states, rates, starting
//! values, conditions and options with their units, compiles the rates to
//! stack programs over SI numbers, runs the integrator of
//! [`crate::numeric`], and answers the run queries of other cells
//! (`v at stop`, `max of k * x`, `t at slow`).
//!
//! Vector states: the compiled programs are scalar, so a block with a
//! vector state (or a rate that needs vector functions of the states) is
//! interpreted instead: the tree-walking evaluator runs with the states
//! probed at each point. That is slower (microseconds per rate instead of
//! tens of nanoseconds) but takes every function heft has.

mod checks;
mod outputs;
mod queries;

pub(crate) use queries::run_query;

use std::sync::Arc;

use crate::base::Span;
use crate::base::{Code, Diagnostic};
use crate::eval::explain::{Operand, mismatch};
use crate::eval::program::{CompileError, Input, Op, Program};
use crate::eval::run_model::{
    PlotSeries, RunColumn, RunEvent, RunReport, RunRow, RunStatus, StateSlots,
};
use crate::eval::{CellStatus, Evaluation, Evaluator};
use crate::numeric::Dual;
use crate::numeric::{
    self, Condition, ErrorControl, EventKind, Failure, Objective, Outcome, Settings, Stats, System,
    Trajectory,
};
use crate::sheet::CellId;
use crate::syntax::ast::{
    BinaryOp, Comparison, Expr, ExprKind, NameRef, RunPoint, RunQuery, SimulateBlock, TableRows,
    Target,
};
use crate::units::{Dimension, DisplayUnit, Quantity, Value, VectorQuantity, pick_unit};

/// Relative tolerance when the block sets none.
pub const DEFAULT_RELATIVE_TOLERANCE: f64 = 1e-6;
/// Tightest and loosest relative tolerance accepted.
const RELATIVE_TOLERANCE_RANGE: (f64, f64) = (1e-13, 1e-2);
/// Most accepted steps of one run.
pub const MAX_STEPS: usize = 2_000_000;
/// Most dense-output coefficients one run keeps
/// ([`numeric::COEFFICIENTS`] per state component per step, 8 bytes each:
/// 256 MB). A run of many components gets fewer
/// steps than [`MAX_STEPS`], so memory stays bounded: 40 components over
/// 2,000,000 steps aborted on allocation before (measured 2026-12-03).
pub const MAX_KEPT_COEFFICIENTS: usize = 32_000_000;

/// The most steps a run of `n_components` state components may take.
pub fn step_limit(n_components: usize) -> usize {
    MAX_STEPS.min(MAX_KEPT_COEFFICIENTS / (numeric::COEFFICIENTS * n_components.max(1)))
}
/// Most rows of a run's table.
const MAX_TABLE_ROWS: usize = 1000;
/// Intervals of a table without `every` or `at`.
const DEFAULT_TABLE_INTERVALS: u32 = 10;
/// Most event rows in a table.
const MAX_EVENT_ROWS: usize = 100;
/// Time buckets of a plotted series: one dense-output sample per bucket,
/// plus the lowest and highest step value in it when steps are finer.
const PLOT_BUCKETS: usize = 600;

/// Where a run's time and states live: cells (time first, then the states)
/// and, for each state, its slots in the integrator's state vector.
#[derive(Clone, Debug)]
struct Layout {
    first_cell: CellId,
    /// Per state: dimension, first slot, number of components (1 = scalar).
    states: Vec<(Dimension, usize, usize)>,
    n_slots: usize,
}

impl Layout {
    fn n_cells(&self) -> usize {
        self.states.len() + 1
    }

    fn contains(&self, id: CellId) -> bool {
        id >= self.first_cell && id < self.first_cell + self.n_cells()
    }

    fn all_scalar(&self) -> bool {
        self.states.iter().all(|&(_, _, n)| n == 1)
    }

    /// A state's value from the slots of `y`.
    fn state_value(&self, index: usize, y: &[f64]) -> Value {
        let (dimension, first, n) = self.states[index];
        if n == 1 {
            Value::Scalar(Quantity::new(y[first], dimension))
        } else {
            Value::Vector(VectorQuantity::new(&y[first..first + n], dimension))
        }
    }

    /// The time and every state at (t, y), in cell order.
    fn values(&self, t: f64, y: &[f64]) -> Vec<Value> {
        std::iter::once(Value::Scalar(Quantity::new(t, Dimension::TIME)))
            .chain((0..self.states.len()).map(|index| self.state_value(index, y)))
            .collect()
    }
}

/// A formula over the run's time and states: compiled when it can be.
enum Formula<'e> {
    /// The formula is one input: `x' = v` copies v (the commonest rate).
    Input(usize),
    Compiled(Program),
    Interpreted(&'e Expr),
}

/// An event function, `lhs - rhs` (or `rhs - lhs` for `<=` and `<`).
enum EventFormula<'e> {
    Compiled(Program),
    Interpreted {
        lhs: &'e Expr,
        rhs: &'e Expr,
        sign: f64,
    },
}

/// The block's equations as the integrator sees them.
struct SheetSystem<'s, 'a> {
    evaluator: &'s Evaluator<'a>,
    layout: &'s Layout,
    rates: Vec<Formula<'s>>,
    events: Vec<EventFormula<'s>>,
    /// `[t, y…]` for the compiled programs.
    inputs: Vec<f64>,
    stack: Vec<f64>,
    /// The first error of an interpreted formula, and when it happened.
    error: Option<(f64, Box<Diagnostic>)>,
}

impl SheetSystem<'_, '_> {
    fn record(&mut self, t: f64, diagnostic: Box<Diagnostic>) {
        if self.error.is_none() {
            self.error = Some((t, diagnostic));
        }
    }
}

impl System for SheetSystem<'_, '_> {
    fn rates(&mut self, t: f64, y: &[f64], rates: &mut [f64]) {
        self.inputs[0] = t;
        self.inputs[1..].copy_from_slice(y);
        for index in 0..self.rates.len() {
            let (_, first, n) = self.layout.states[index];
            match &self.rates[index] {
                Formula::Input(input) => rates[first] = self.inputs[*input],
                Formula::Compiled(program) => {
                    rates[first] = program.run_with(&self.inputs, &mut self.stack);
                }
                Formula::Interpreted(expr) => {
                    let expr: &Expr = expr;
                    let value = self
                        .evaluator
                        .at_point(self.layout, t, y, |evaluator| evaluator.eval(expr));
                    match value {
                        Ok(value) => write_components(value, &mut rates[first..first + n]),
                        Err(diagnostic) => {
                            self.record(t, diagnostic);
                            rates[first..first + n].fill(f64::NAN);
                        }
                    }
                }
            }
        }
    }

    fn event(&mut self, index: usize, t: f64, y: &[f64]) -> f64 {
        match &self.events[index] {
            EventFormula::Compiled(program) => {
                self.inputs[0] = t;
                self.inputs[1..].copy_from_slice(y);
                program.run_with(&self.inputs, &mut self.stack)
            }
            EventFormula::Interpreted { lhs, rhs, sign } => {
                let (lhs, rhs, sign): (&Expr, &Expr, f64) = (lhs, rhs, *sign);
                let sides = self.evaluator.at_point(self.layout, t, y, |evaluator| {
                    Ok::<_, Box<Diagnostic>>((evaluator.eval(lhs)?, evaluator.eval(rhs)?))
                });
                match sides {
                    Ok((Value::Scalar(a), Value::Scalar(b))) => sign * (a.si - b.si),
                    Ok(_) => f64::NAN,
                    Err(diagnostic) => {
                        self.record(t, diagnostic);
                        f64::NAN
                    }
                }
            }
        }
    }
}

/// Writes a value's SI components into `slots`.
fn write_components(value: Value, slots: &mut [f64]) {
    match value {
        Value::Scalar(q) => slots.fill(q.si),
        Value::Vector(v) => {
            for (slot, component) in slots.iter_mut().zip(v.components()) {
                *slot = *component;
            }
        }
    }
}

/// A column or series source: a state, or an expression of the run.
enum Source<'e> {
    State(usize),
    Expression(&'e Expr, Option<Program>),
}

impl<'a> Evaluator<'a> {
    /// Runs `f` with the run's time and states reading (t, y).
    fn at_point<R>(&self, layout: &Layout, t: f64, y: &[f64], f: impl FnOnce(&Self) -> R) -> R {
        let saved_range = self
            .probe_range
            .replace(Some((layout.first_cell, layout.n_cells())));
        let saved_values =
            std::mem::replace(&mut *self.probe_values.borrow_mut(), layout.values(t, y));
        let result = f(self);
        *self.probe_values.borrow_mut() = saved_values;
        self.probe_range.set(saved_range);
        result
    }

    /// Runs the simulate block at `statement` and records its time and
    /// states (their values at the end of the run).
    pub(super) fn evaluate_simulate(&mut self, statement: usize, cells: &[CellId]) {
        let sheet = self.sheet;
        let Some(block) = sheet.simulate_block(statement) else {
            return;
        };
        let mut report = RunReport {
            statement,
            span: sheet.statements[statement].span,
            title: {
                let line = block.head.text(self.source);
                line.split("//")
                    .next()
                    .unwrap_or(line)
                    .trim()
                    .trim_end_matches(':')
                    .trim_end()
                    .to_string()
            },
            time: cells.first().copied().unwrap_or_default(),
            states: Vec::new(),
            status: RunStatus::NotRun,
            range: None,
            time_display: pick_unit(Dimension::TIME, 1.0, self.style.system),
            events: block
                .events
                .iter()
                .map(|event| RunEvent {
                    name: event.name.as_ref().map(|name| name.text.to_string()),
                    condition: format!(
                        "{} {} {}",
                        event.lhs.span.text(self.source),
                        event.comparison.symbol(),
                        event.rhs.span.text(self.source)
                    ),
                    stops: event.stops,
                    span: event.span,
                    description: event.label.as_ref().map(|label| label.text.clone()),
                    times: Vec::new(),
                })
                .collect(),
            stopped_by: None,
            stats: Stats::default(),
            relative_tolerance: DEFAULT_RELATIVE_TOLERANCE,
            compiled: false,
            columns: Vec::new(),
            rows: Vec::new(),
            plot: Vec::new(),
            trajectory: None,
        };
        let status = if cells.iter().any(|&id| sheet.broken[id]) {
            CellStatus::Error
        } else if let Some(blocker) = cells.first().and_then(|&id| self.blocker(&sheet.uses[id])) {
            CellStatus::Blocked { by: blocker }
        } else {
            match self.simulate(block, cells, &mut report) {
                Ok(()) => CellStatus::Ok,
                Err(diagnostic) => {
                    self.diagnostics.push(*diagnostic);
                    CellStatus::Error
                }
            }
        };
        self.settle_block_cells(cells, status);
        self.runs.push(report);
    }

    fn simulate(
        &mut self,
        block: &'a SimulateBlock,
        cells: &[CellId],
        report: &mut RunReport,
    ) -> Result<(), Box<Diagnostic>> {
        let first_cell = cells.first().copied().unwrap_or_default();
        self.refuse_run_names(block, first_cell, cells.len())?;

        let (start, end) = self.time_range(block)?;
        report.range = Some((start, end));
        report.time_display = self
            .written_unit(&block.end)
            .or_else(|| self.written_unit(&block.start))
            .unwrap_or_else(|| pick_unit(Dimension::TIME, end, self.style.system));

        // States and their starting values.
        let initial = self.initial_values(block)?;
        let mut layout = Layout {
            first_cell,
            states: Vec::with_capacity(initial.len()),
            n_slots: 0,
        };
        for value in &initial {
            let n = match value {
                Value::Scalar(_) => 1,
                Value::Vector(v) => usize::from(v.n_components),
            };
            layout.states.push((value.dimension(), layout.n_slots, n));
            layout.n_slots += n;
        }
        let mut y0 = vec![0.0; layout.n_slots];
        for (index, value) in initial.iter().enumerate() {
            let (_, first, n) = layout.states[index];
            write_components(*value, &mut y0[first..first + n]);
        }
        self.values[first_cell] = Some(Value::Scalar(Quantity::new(start, Dimension::TIME)));
        for (index, value) in initial.iter().enumerate() {
            self.values[first_cell + 1 + index] = Some(*value);
        }
        report.states = self.state_slots(block, &layout, &initial);

        // Rates: each one the state's dimension per time, checked at the start.
        for (index, state) in block.states.iter().enumerate() {
            let rate = self.eval(&state.rate)?;
            self.check_rate(block, index, initial[index], rate)?;
        }

        self.check_conditions(block)?;

        // Tolerances and output choices.
        let (relative, absolute) = self.tolerances(block, &initial)?;
        report.relative_tolerance = relative;
        let table_times = self.table_rows(block, start, end)?;
        let columns = self.output_sources(block, true)?;
        let series = self.output_sources(block, false)?;

        let (rates, events) = self.compile_run(block, &layout)?;
        report.compiled = rates
            .iter()
            .all(|rate| !matches!(rate, Formula::Interpreted(_)));

        let settings = run_settings(block, &layout, relative, &absolute);

        let (run, system_error) = {
            let mut system = SheetSystem {
                evaluator: self,
                layout: &layout,
                rates,
                events,
                inputs: vec![0.0; layout.n_slots + 1],
                stack: Vec::with_capacity(16),
                error: None,
            };
            let run = numeric::integrate(&mut system, start, end, &y0, &settings);
            (run, system.error)
        };
        report.stats = run.stats;
        for hit in &run.hits {
            report.events[hit.event].times.push(hit.t);
        }
        let trajectory = Arc::new(run.trajectory);
        report.trajectory = Some(Arc::clone(&trajectory));

        match run.outcome {
            Outcome::Reached => report.status = RunStatus::Reached,
            Outcome::Stopped { event } => {
                if trajectory.n_steps() == 0 {
                    report.status = RunStatus::NotRun;
                    return Err(Box::new(self.stop_at_start(block, event)));
                }
                report.status = RunStatus::Stopped;
                report.stopped_by = Some(event);
            }
            Outcome::Failed(failure) => {
                report.status = RunStatus::Failed;
                return Err(Box::new(self.failure_diagnostic(
                    block,
                    failure,
                    system_error,
                    end,
                    &report.time_display,
                )));
            }
        }

        // The run's end values become the cells' values.
        let final_time = trajectory.end();
        let final_values = layout.values(final_time, trajectory.last());
        for (offset, value) in final_values.into_iter().enumerate() {
            self.values[first_cell + offset] = Some(value);
        }

        self.fill_table(
            report,
            &layout,
            &trajectory,
            &run.hits,
            &table_times,
            columns,
        );
        report.plot = self.plot_series(report, &layout, &trajectory, series);
        Ok(())
    }

    /// The run's start and end, in seconds: the end after the start, the
    /// length finite.
    fn time_range(&self, block: &SimulateBlock) -> Result<(f64, f64), Box<Diagnostic>> {
        let start = self.time_value(&block.start, "start")?;
        let end = self.time_value(&block.end, "end")?;
        if end <= start {
            return Err(Box::new(
                Diagnostic::error(
                    Code::BadSimulation,
                    block.end.span,
                    format!(
                        "the run must end after it starts: `{}` is not later than `{}`",
                        block.end.span.text(self.source),
                        block.start.span.text(self.source)
                    ),
                )
                .with_help("write `simulate t from 0 s to 10 s:` with the end after the start"),
            ));
        }
        if !(end - start).is_finite() {
            return Err(Box::new(
                Diagnostic::error(
                    Code::BadSimulation,
                    block.end.span,
                    "the run is too long to represent: its length overflows",
                )
                .with_help("give a run length a calculation needs: seconds to hours"),
            ));
        }
        Ok((start, end))
    }

    /// Each state's slots in the run's numbers, its column, and its starting
    /// value as written.
    fn state_slots(
        &self,
        block: &SimulateBlock,
        layout: &Layout,
        initial: &[Value],
    ) -> Vec<StateSlots> {
        let first_cell = layout.first_cell;
        block
            .states
            .iter()
            .enumerate()
            .map(|(index, state)| {
                let (dimension, first, n) = layout.states[index];
                let display = self
                    .initial_expr(block, index)
                    .and_then(|expr| self.written_unit(expr))
                    .unwrap_or_else(|| {
                        pick_unit(dimension, initial[index].magnitude_si(), self.style.system)
                    });
                StateSlots {
                    cell: first_cell + 1 + index,
                    column: RunColumn {
                        label: state.name.text.to_string(),
                        display,
                        dimension,
                    },
                    first,
                    n_components: n,
                    start: self
                        .initial_expr(block, index)
                        .map(|expr| expr.span.text(self.source).to_string())
                        .unwrap_or_default(),
                    start_description: block
                        .initial_values
                        .iter()
                        .find(|initial| initial.name.text == state.name.text)
                        .and_then(|initial| initial.description.as_ref())
                        .map(|description| description.text.clone()),
                }
            })
            .collect()
    }

    /// Each condition compares two scalars of one dimension.
    fn check_conditions(&self, block: &SimulateBlock) -> Result<(), Box<Diagnostic>> {
        for event in &block.events {
            let lhs = self.eval(&event.lhs)?;
            let rhs = self.eval(&event.rhs)?;
            if lhs.vector().is_some() || rhs.vector().is_some() {
                return Err(Box::new(
                    Diagnostic::error(
                        Code::DimensionMismatch,
                        event.span,
                        "a condition compares scalars, not vectors",
                    )
                    .with_help("compare a magnitude or a component: mag(r) >= 2 m, r.y <= 0 m"),
                ));
            }
            if lhs.dimension() != rhs.dimension() {
                return Err(Box::new(mismatch(
                    "compare",
                    &Operand {
                        span: event.lhs.span,
                        text: event.lhs.span.text(self.source),
                        value: lhs,
                    },
                    &Operand {
                        span: event.rhs.span,
                        text: event.rhs.span.text(self.source),
                        value: rhs,
                    },
                    self.style,
                )));
            }
        }
        Ok(())
    }

    /// The rates and conditions compiled over the run's numbers where they
    /// can be (once, dimensions checked), interpreted where they cannot.
    fn compile_run<'b>(
        &self,
        block: &'b SimulateBlock,
        layout: &Layout,
    ) -> Result<(Vec<Formula<'b>>, Vec<EventFormula<'b>>), Box<Diagnostic>> {
        let mut rates = Vec::with_capacity(block.states.len());
        for state in &block.states {
            rates.push(match self.compile_over_run(&state.rate, layout)? {
                Some(program) => match program.ops() {
                    [Op::Input(input)] => Formula::Input(*input as usize),
                    _ => Formula::Compiled(program),
                },
                None => Formula::Interpreted(&state.rate),
            });
        }
        let mut events = Vec::with_capacity(block.events.len());
        for event in &block.events {
            let (lhs, rhs, sign) = match event.comparison {
                Comparison::AtLeast | Comparison::Above => (&event.lhs, &event.rhs, 1.0),
                Comparison::AtMost | Comparison::Below => (&event.lhs, &event.rhs, -1.0),
            };
            let (first, second) = if sign > 0.0 { (lhs, rhs) } else { (rhs, lhs) };
            let difference = Expr {
                span: event.span,
                kind: ExprKind::Binary {
                    op: BinaryOp::Subtract,
                    lhs: Box::new(first.clone()),
                    rhs: Box::new(second.clone()),
                },
            };
            events.push(match self.compile_over_run(&difference, layout)? {
                Some(program) => EventFormula::Compiled(program),
                None => EventFormula::Interpreted { lhs, rhs, sign },
            });
        }
        Ok((rates, events))
    }
}

/// The integrator's settings for a block: its tolerances per state slot,
/// the step limit for its size, and its conditions.
fn run_settings(
    block: &SimulateBlock,
    layout: &Layout,
    relative: f64,
    absolute: &[f64],
) -> Settings {
    let mut absolute_tolerance = vec![0.0; layout.n_slots];
    for (index, &(_, first, n)) in layout.states.iter().enumerate() {
        absolute_tolerance[first..first + n].fill(absolute[index]);
    }
    Settings {
        relative_tolerance: relative,
        absolute_tolerance,
        max_steps: step_limit(layout.n_slots),
        error_control: ErrorControl::PerUnitTime,
        events: block
            .events
            .iter()
            .map(|event| Condition {
                kind: if event.stops {
                    EventKind::Stop
                } else {
                    EventKind::Record
                },
                strict: event.comparison.is_strict(),
            })
            .collect(),
    }
}

/// `a scalar` or `a 2D vector`.
fn kind_of(value: Value) -> String {
    match value {
        Value::Scalar(_) => "a scalar".to_string(),
        Value::Vector(v) => format!("a {}D vector", v.n_components),
    }
}

/// The first component of a value (a scalar's value).
fn first_component(value: Value) -> f64 {
    match value {
        Value::Scalar(q) => q.si,
        Value::Vector(v) => v.si[0],
    }
}

/// "`x`, `v`".
fn quoted_list(names: &[&str]) -> String {
    names
        .iter()
        .map(|name| format!("`{name}`"))
        .collect::<Vec<_>>()
        .join(", ")
}
