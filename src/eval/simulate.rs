//! Simulate blocks on a sheet: checks a block's states, rates, starting
//! values, conditions and options with their units, compiles the rates to
//! stack programs over SI numbers, runs the integrator of
//! [`crate::simulate`], and answers the run queries of other cells
//! (`v at stop`, `max of k * x`, `t at slow`).
//!
//! Vector states: the compiled programs are scalar, so a block with a
//! vector state (or a rate that needs vector functions of the states) is
//! interpreted instead: the tree-walking evaluator runs with the states
//! probed at each point. That is slower (microseconds per rate instead of
//! tens of nanoseconds) but takes every function heft has.

use std::sync::Arc;

use super::explain::{Operand, mismatch};
use super::program::{CompileError, Input, Op, Program};
use super::run_model::{PlotSeries, RunColumn, RunEvent, RunReport, RunRow, RunStatus, StateSlots};
use super::{CellStatus, Evaluation, Evaluator};
use crate::base::Span;
use crate::base::{Code, Diagnostic};
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
/// Most dense-output coefficients one run keeps (five per state component
/// per step, 8 bytes each: 256 MB). A run of many components gets fewer
/// steps than [`MAX_STEPS`], so memory stays bounded: 40 components over
/// 2,000,000 steps aborted on allocation before (measured 2026-12-03).
pub const MAX_KEPT_COEFFICIENTS: usize = 32_000_000;

/// The most steps a run of `n_components` state components may take.
pub fn step_limit(n_components: usize) -> usize {
    MAX_STEPS.min(MAX_KEPT_COEFFICIENTS / (5 * n_components.max(1)))
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
    /// The value of a run's time or state while a point of its run is probed.
    pub(super) fn probed(&self, id: CellId) -> Option<Value> {
        let (first, len) = self.probe_range.get()?;
        if id < first || id >= first + len {
            return None;
        }
        self.probe_values.borrow().get(id - first).copied()
    }

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
        for &id in cells {
            self.statuses[id] = status;
            if status != CellStatus::Ok {
                self.values[id] = None;
            }
        }
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

        // The time range.
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
        report.states = block
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
            .collect();

        // Rates: each one the state's dimension per time, checked at the start.
        for (index, state) in block.states.iter().enumerate() {
            let rate = self.eval(&state.rate)?;
            self.check_rate(block, index, initial[index], rate)?;
        }

        // Conditions: two scalars of one dimension.
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

        // Tolerances and output choices.
        let (relative, absolute) = self.tolerances(block, &initial)?;
        report.relative_tolerance = relative;
        let table_times = self.table_rows(block, start, end)?;
        let columns = self.output_sources(block, true)?;
        let series = self.output_sources(block, false)?;

        // Compile what can be compiled, once, with dimensions checked.
        let mut rates = Vec::with_capacity(block.states.len());
        for state in &block.states {
            rates.push(match self.compile_over_run(&state.rate, &layout)? {
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
            events.push(match self.compile_over_run(&difference, &layout)? {
                Some(program) => EventFormula::Compiled(program),
                None => EventFormula::Interpreted { lhs, rhs, sign },
            });
        }
        report.compiled = rates
            .iter()
            .all(|rate| !matches!(rate, Formula::Interpreted(_)));

        let mut absolute_tolerance = vec![0.0; layout.n_slots];
        for (index, &(_, first, n)) in layout.states.iter().enumerate() {
            absolute_tolerance[first..first + n].fill(absolute[index]);
        }
        let settings = Settings {
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
        };

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

    /// The run's own time and states may appear in its rates, conditions,
    /// table columns and plot, but not in what is fixed before it runs.
    fn refuse_run_names(
        &self,
        block: &SimulateBlock,
        first_cell: CellId,
        n_cells: usize,
    ) -> Result<(), Box<Diagnostic>> {
        let fixed = [&block.start, &block.end]
            .into_iter()
            .chain(block.initial_values.iter().map(|initial| &initial.value))
            .chain(block.tolerances.iter().map(|tolerance| &tolerance.value))
            .chain(block.tables.iter().flat_map(|table| match &table.rows {
                TableRows::Default => Vec::new(),
                TableRows::Every(every) => vec![every],
                TableRows::At(times) => times.iter().collect(),
            }));
        for expr in fixed {
            let mut found = None;
            expr.walk(&mut |node| {
                if let ExprKind::Name(NameRef {
                    target: Target::Cell(id),
                    text,
                }) = &node.kind
                    && *id >= first_cell
                    && *id < first_cell + n_cells
                    && found.is_none()
                {
                    found = Some((node.span, text.to_string()));
                }
            });
            if let Some((span, name)) = found {
                return Err(Box::new(
                    Diagnostic::error(
                        Code::BadSimulation,
                        span,
                        format!(
                            "`{name}` changes during the run, so it cannot fix the run's range, a starting value, a tolerance or the table's times"
                        ),
                    )
                    .with_help("use values fixed before the run: other cells, or quantities"),
                ));
            }
        }
        Ok(())
    }

    /// A time in SI from an expression that must be one.
    fn time_value(&self, expr: &Expr, what: &str) -> Result<f64, Box<Diagnostic>> {
        match self.eval(expr)? {
            Value::Scalar(q) if q.dimension == Dimension::TIME => Ok(q.si),
            other => Err(Box::new(
                Diagnostic::error(
                    Code::DimensionMismatch,
                    expr.span,
                    format!(
                        "the run's {what} must be a time, but `{}` is {} ({})",
                        expr.span.text(self.source),
                        other.dimension().describe(),
                        self.style.show_value(other)
                    ),
                )
                .with_help("give it a unit of time: `0 s`, `2 min`"),
            )),
        }
    }

    /// The unit written with a quantity literal (`0 mm`, `-2 m/s`).
    fn written_unit(&self, expr: &Expr) -> Option<DisplayUnit> {
        match &expr.kind {
            ExprKind::Quantity { unit, .. } => {
                let resolved = self.resolve_unit(unit).ok()?;
                Some(DisplayUnit {
                    text: self.shared_text(unit.span.text(self.source)),
                    si_factor: resolved.si_factor,
                })
            }
            ExprKind::Negate(inner) => self.written_unit(inner),
            _ => None,
        }
    }

    /// The starting-value expression of state `index`, if written.
    fn initial_expr<'b>(&self, block: &'b SimulateBlock, index: usize) -> Option<&'b Expr> {
        let name = &block.states.get(index)?.name.text;
        block
            .initial_values
            .iter()
            .find(|initial| initial.name.text == name)
            .map(|initial| &initial.value)
    }

    /// Every state's starting value, checking there is exactly one per
    /// state and none for a name that is not a state.
    fn initial_values(&self, block: &SimulateBlock) -> Result<Vec<Value>, Box<Diagnostic>> {
        if block.states.is_empty() {
            return Err(Box::new(
                Diagnostic::error(
                    Code::BadSimulation,
                    block.head,
                    "this simulate block has no states, so there is nothing to integrate",
                )
                .with_help(
                    "add a state and its rate (`x' = v`) with its starting value (`x(0) = 0 m`)",
                ),
            ));
        }
        let state_names: Vec<&str> = block.states.iter().map(|s| s.name.text.as_str()).collect();
        for initial in &block.initial_values {
            if !state_names.contains(&initial.name.text.as_str()) {
                return Err(Box::new(
                    Diagnostic::error(
                        Code::BadSimulation,
                        initial.name.span,
                        format!(
                            "`{}(0)` gives a starting value, but `{}` has no rate in this block",
                            initial.name.text, initial.name.text
                        ),
                    )
                    .with_help(format!(
                        "add `{}' = …` to make it a state, or remove the line; the states here are {}",
                        initial.name.text,
                        quoted_list(&state_names)
                    )),
                ));
            }
        }
        let mut values = Vec::with_capacity(block.states.len());
        for state in &block.states {
            let mut given = block
                .initial_values
                .iter()
                .filter(|initial| initial.name.text == state.name.text);
            let Some(first) = given.next() else {
                return Err(Box::new(
                    Diagnostic::error(
                        Code::BadSimulation,
                        state.name.span,
                        format!("the state `{}` has no starting value", state.name.text),
                    )
                    .with_help(format!(
                        "add a line `{}(0) = …` to the block",
                        state.name.text
                    )),
                ));
            };
            if let Some(second) = given.next() {
                return Err(Box::new(
                    Diagnostic::error(
                        Code::BadSimulation,
                        second.span,
                        format!("a second starting value for `{}`", state.name.text),
                    )
                    .with_label(first.span, "first given here")
                    .with_help("keep one starting value per state"),
                ));
            }
            values.push(self.eval(&first.value)?);
        }
        Ok(values)
    }

    /// Fails unless `rate` is `initial`'s dimension per time, of the same
    /// kind (scalar, or a vector with as many components).
    fn check_rate(
        &self,
        block: &SimulateBlock,
        index: usize,
        initial: Value,
        rate: Value,
    ) -> Result<(), Box<Diagnostic>> {
        let state = &block.states[index];
        let expected = initial.dimension().checked_div(Dimension::TIME);
        let same_kind = match (initial, rate) {
            (Value::Scalar(_), Value::Scalar(_)) => true,
            (Value::Vector(a), Value::Vector(b)) => a.n_components == b.n_components,
            _ => false,
        };
        if same_kind && expected == Some(rate.dimension()) {
            return Ok(());
        }
        let name = &state.name.text;
        let rate_text = state.rate.span.text(self.source);
        let expected_text = expected.map_or_else(
            || "its dimension per time".to_string(),
            |dimension| format!("{} (in {})", dimension.describe(), dimension.si_units()),
        );
        let message = if same_kind {
            format!(
                "`{name}'` is the rate of change of `{name}` ({}), so it must be {expected_text}, but `{rate_text}` is {} ({})",
                initial.dimension().describe(),
                rate.dimension().describe(),
                self.style.show_value(rate)
            )
        } else {
            format!(
                "`{name}` is {} but its rate `{rate_text}` is {}: a state and its rate must both be scalars, or vectors with as many components",
                kind_of(initial),
                kind_of(rate)
            )
        };
        Err(Box::new(
            Diagnostic::error(Code::RateMismatch, state.rate.span, message)
                .with_label(
                    state.name.span,
                    format!("`{name}` starts as {}", self.style.show_value(initial)),
                )
                .with_help(format!(
                    "a rate is its state's unit per second: for `{name}` in {} write a rate in {}",
                    initial.dimension().si_units(),
                    expected.map_or_else(|| "its unit per second".to_string(), |d| d.si_units())
                )),
        ))
    }

    /// The relative tolerance and each state's absolute tolerance (SI).
    fn tolerances(
        &self,
        block: &SimulateBlock,
        initial: &[Value],
    ) -> Result<(f64, Vec<f64>), Box<Diagnostic>> {
        let mut relative = None;
        let mut absolute: Vec<Option<f64>> = vec![None; block.states.len()];
        for tolerance in &block.tolerances {
            let value = self.eval(&tolerance.value)?;
            match &tolerance.state {
                None => {
                    let (low, high) = RELATIVE_TOLERANCE_RANGE;
                    let number = match value {
                        Value::Scalar(q) if q.dimension.is_dimensionless() => q.si,
                        _ => {
                            return Err(Box::new(
                                Diagnostic::error(
                                    Code::BadSimulation,
                                    tolerance.value.span,
                                    format!(
                                        "a relative tolerance is a plain number, but `{}` is {}",
                                        tolerance.value.span.text(self.source),
                                        value.dimension().describe()
                                    ),
                                )
                                .with_help("write `tolerance 1e-8`; for an absolute tolerance name the state: `tolerance x 1 mm`"),
                            ));
                        }
                    };
                    if !(low..=high).contains(&number) {
                        return Err(Box::new(
                            Diagnostic::error(
                                Code::BadSimulation,
                                tolerance.value.span,
                                format!(
                                    "a relative tolerance of {number:e} is outside {low:e} to {high:e}"
                                ),
                            )
                            .with_help(
                                "1e-6 suits most calculations; 1e-10 for long or sensitive runs",
                            ),
                        ));
                    }
                    if relative.replace(number).is_some() {
                        return Err(Box::new(
                            Diagnostic::error(
                                Code::BadSimulation,
                                tolerance.span,
                                "a second relative tolerance",
                            )
                            .with_help("keep one `tolerance` line without a state name"),
                        ));
                    }
                }
                Some(name) => {
                    let Some(index) = block.states.iter().position(|s| s.name.text == name.text)
                    else {
                        return Err(Box::new(
                            Diagnostic::error(
                                Code::BadSimulation,
                                name.span,
                                format!("`{}` is not a state of this block", name.text),
                            )
                            .with_help("name a state that has a rate (`x' = …`) in this block"),
                        ));
                    };
                    let dimension = initial[index].dimension();
                    match value {
                        Value::Scalar(q) if q.dimension == dimension && q.si > 0.0 => {
                            absolute[index] = Some(q.si);
                        }
                        _ => {
                            return Err(Box::new(
                                Diagnostic::error(
                                    Code::BadSimulation,
                                    tolerance.value.span,
                                    format!(
                                        "the absolute tolerance of `{}` must be a positive {} like the state, but `{}` is {}",
                                        name.text,
                                        dimension.describe().trim_start_matches("a ").trim_start_matches("an "),
                                        tolerance.value.span.text(self.source),
                                        self.style.show_value(value)
                                    ),
                                )
                                .with_help(format!(
                                    "write it in a unit of {}: `tolerance {} …`",
                                    dimension.si_units(),
                                    name.text
                                )),
                            ));
                        }
                    }
                }
            }
        }
        let relative = relative.unwrap_or(DEFAULT_RELATIVE_TOLERANCE);
        // Default absolute tolerances: the relative one times the state's
        // scale, which is the unit its starting value is written in (so
        // `x(0) = 0 mm` asks for finer absolute accuracy than `0 m`), else
        // its starting size, else one SI unit.
        let absolute = absolute
            .into_iter()
            .enumerate()
            .map(|(index, given)| {
                given.unwrap_or_else(|| {
                    let written = self
                        .initial_expr(block, index)
                        .and_then(|expr| self.written_unit(expr))
                        .map(|unit| unit.si_factor.abs());
                    let size = initial[index].magnitude_si();
                    let scale = written
                        .filter(|factor| *factor > 0.0)
                        .unwrap_or(if size > 0.0 { size } else { 1.0 });
                    relative * scale
                })
            })
            .collect();
        Ok((relative, absolute))
    }

    /// The table's row times (SI), checked before the run. `None` stands for
    /// the default rows, which depend on where the run ends; the flag says
    /// whether the times were asked for one by one (and are kept, marked,
    /// when the run ends before them) or are a grid (cut at the run's end).
    fn table_rows(
        &self,
        block: &SimulateBlock,
        start: f64,
        end: f64,
    ) -> Result<Option<(Vec<f64>, bool)>, Box<Diagnostic>> {
        if let Some(extra) = block.tables.get(1) {
            return Err(Box::new(
                Diagnostic::error(Code::BadSimulation, extra.span, "a second `table` line")
                    .with_help("keep one `table` line per block"),
            ));
        }
        if let Some(extra) = block.plots.get(1) {
            return Err(Box::new(
                Diagnostic::error(Code::BadSimulation, extra.span, "a second `plot` line")
                    .with_help("list every series on one line: `plot x, v, k * x`"),
            ));
        }
        let Some(table) = block.tables.first() else {
            return Ok(None);
        };
        match &table.rows {
            TableRows::Default => Ok(None),
            TableRows::Every(every) => {
                let step = self.time_value(every, "table interval")?;
                let n_rows = if step > 0.0 {
                    ((end - start) / step).floor() + 1.0
                } else {
                    f64::INFINITY
                };
                if n_rows.is_nan() || n_rows > MAX_TABLE_ROWS as f64 {
                    return Err(Box::new(
                        Diagnostic::error(
                            Code::BadSimulation,
                            every.span,
                            format!(
                                "a row every `{}` gives more than {MAX_TABLE_ROWS} rows (or none)",
                                every.span.text(self.source)
                            ),
                        )
                        .with_help("choose a longer positive interval; export every step with `heft check --csv`"),
                    ));
                }
                // n_rows is a small whole number here.
                Ok(Some((
                    (0..n_rows as usize)
                        .map(|row| start + row as f64 * step)
                        .collect(),
                    false,
                )))
            }
            TableRows::At(times) => {
                if times.len() > MAX_TABLE_ROWS {
                    return Err(Box::new(
                        Diagnostic::error(
                            Code::BadSimulation,
                            table.span,
                            format!("more than {MAX_TABLE_ROWS} table times"),
                        )
                        .with_help("export every step with `heft check --csv` instead"),
                    ));
                }
                times
                    .iter()
                    .map(|time| self.time_value(time, "table time"))
                    .collect::<Result<Vec<_>, _>>()
                    .map(|times| Some((times, true)))
            }
        }
    }

    /// The table's columns (`table` true) or the plot's series: the
    /// expressions listed, else every state. Each is checked at the start.
    fn output_sources(
        &self,
        block: &'a SimulateBlock,
        table: bool,
    ) -> Result<Vec<(String, Source<'a>)>, Box<Diagnostic>> {
        let listed: Vec<&Expr> = if table {
            block
                .tables
                .first()
                .map(|t| t.columns.iter().collect())
                .unwrap_or_default()
        } else {
            block
                .plots
                .first()
                .map(|p| p.series.iter().collect())
                .unwrap_or_default()
        };
        if listed.is_empty() {
            return Ok(block
                .states
                .iter()
                .enumerate()
                .map(|(index, state)| (state.name.text.to_string(), Source::State(index)))
                .collect());
        }
        let mut sources = Vec::with_capacity(listed.len());
        for expr in listed {
            self.eval(expr)?;
            let label = expr.span.text(self.source).to_string();
            let state = block
                .states
                .iter()
                .position(|state| state.name.text == label);
            sources.push((
                label,
                match state {
                    Some(index) => Source::State(index),
                    None => Source::Expression(expr, None),
                },
            ));
        }
        Ok(sources)
    }

    /// Compiles `expr` with the run's time and states as inputs; `None` if
    /// it needs vectors (or the run has vector states).
    fn compile_over_run(
        &self,
        expr: &Expr,
        layout: &Layout,
    ) -> Result<Option<Program>, Box<Diagnostic>> {
        if !layout.all_scalar() {
            return Ok(None);
        }
        let input_of = |name: &NameRef| match name.target {
            Target::Cell(id) if layout.contains(id) => {
                let sample = self.values[id].and_then(|v| v.scalar())?;
                Some(Input {
                    index: u32::try_from(id - layout.first_cell).ok()?,
                    sample,
                })
            }
            _ => None,
        };
        match self.compile(expr, &input_of) {
            Ok(program) => Ok(Some(program)),
            Err(CompileError::NeedsVectors(_)) => Ok(None),
            Err(CompileError::Diagnostic(diagnostic)) => Err(diagnostic),
        }
    }

    /// The error for a stop that ends the run at its start: its condition
    /// holds there, or (strict and equal there) becomes true at once.
    fn stop_at_start(&self, block: &SimulateBlock, event: usize) -> Diagnostic {
        let condition = &block.events[event];
        let sides = (self.eval(&condition.lhs), self.eval(&condition.rhs));
        let show = |side: &Evaluation| {
            side.as_ref()
                .map(|value| self.style.show_value(*value))
                .unwrap_or_default()
        };
        let values = format!(
            "`{}` = {}, `{}` = {}",
            condition.lhs.span.text(self.source),
            show(&sides.0),
            condition.rhs.span.text(self.source),
            show(&sides.1)
        );
        let holds_at_start = match &sides {
            (Ok(Value::Scalar(a)), Ok(Value::Scalar(b))) => {
                super::comparison_holds(condition.comparison, a.si, b.si)
            }
            _ => true,
        };
        if holds_at_start {
            return Diagnostic::error(
                Code::BadSimulation,
                condition.span,
                format!(
                    "this stop condition already holds at the start ({values}), so the run would be empty"
                ),
            )
            .with_help("a stop happens when its condition becomes true; check the comparison's direction and the starting values");
        }
        let symbol = condition.comparison.symbol();
        Diagnostic::error(
            Code::BadSimulation,
            condition.span,
            format!(
                "the two sides are equal at the start ({values}); `{symbol}` does not hold at equality, but it holds as soon as the run starts, so the run would be empty"
            ),
        )
        .with_help("the motion starts on the side where the condition is true: check the comparison's direction, or start the run away from the threshold")
    }

    fn failure_diagnostic(
        &self,
        block: &SimulateBlock,
        failure: Failure,
        system_error: Option<(f64, Box<Diagnostic>)>,
        end: f64,
        time_display: &DisplayUnit,
    ) -> Diagnostic {
        let at = |t: f64| {
            self.style
                .show_in(t, &time_display.text, time_display.si_factor)
        };
        match failure {
            Failure::Stiff { t, step } => Diagnostic::error(
                Code::StiffSystem,
                block.head,
                format!(
                    "the equations are stiff near t = {}: stability, not accuracy, holds the step near {} s, so the run would need about {:.0e} more steps",
                    at(t),
                    crate::units::format_significant(step, 3),
                    ((end - t) / step).max(1.0)
                ),
            )
            .with_help("a very stiff spring or strong damping beside slow motion: model the stiff part as a rigid link or by its quasi-static force, or shorten the run; heft integrates explicitly and does not switch to an implicit method"),
            Failure::StepTooSmall { t, step } => Diagnostic::error(
                Code::IntegrationFailed,
                block.head,
                format!(
                    "the step size fell to {} s at t = {}: the solution changes faster there than time can be resolved",
                    crate::units::format_significant(step, 3),
                    at(t)
                ),
            )
            .with_help("a state may be growing without bound, or a rate may jump; check the rates near that time, or stop the run before it with `stop when …`"),
            Failure::TooManySteps { t, limit } => Diagnostic::error(
                Code::IntegrationFailed,
                block.head,
                format!(
                    "the run took more than {limit} steps (the most heft keeps for a run of this size) and reached only t = {}",
                    at(t)
                ),
            )
            .with_help("shorten the run or loosen the tolerance (`tolerance 1e-6`)"),
            Failure::NotFinite { t } => match system_error {
                Some((when, mut diagnostic)) => {
                    diagnostic.message = format!("{} (at t = {} in the run)", diagnostic.message, at(when));
                    *diagnostic
                }
                None => Diagnostic::error(
                    Code::IntegrationFailed,
                    block.head,
                    format!("a rate became infinite or not a number at t = {}", at(t)),
                )
                .with_help("a rate may divide by a state that reaches zero, or overflow; check the rates near that time"),
            },
        }
    }

    /// The value of a source at (t, y): a state, or an expression probed.
    fn source_value(
        &self,
        source: &Source<'_>,
        layout: &Layout,
        t: f64,
        y: &[f64],
        inputs: &mut Vec<f64>,
        stack: &mut Vec<f64>,
    ) -> Option<Value> {
        match source {
            Source::State(index) => Some(layout.state_value(*index, y)),
            Source::Expression(_, Some(program)) => {
                inputs.clear();
                inputs.push(t);
                inputs.extend_from_slice(y);
                let value = program.run_with(inputs, stack);
                value
                    .is_finite()
                    .then(|| Value::Scalar(Quantity::new(value, program.dimension)))
            }
            Source::Expression(expr, None) => self
                .at_point(layout, t, y, |evaluator| evaluator.eval(expr))
                .ok(),
        }
    }

    /// Compiles expression sources where possible.
    fn compile_sources<'s>(
        &self,
        sources: Vec<(String, Source<'s>)>,
        layout: &Layout,
    ) -> Vec<(String, Source<'s>)> {
        sources
            .into_iter()
            .map(|(label, source)| match source {
                Source::Expression(expr, None) => {
                    let program = self.compile_over_run(expr, layout).ok().flatten();
                    (label, Source::Expression(expr, program))
                }
                other => (label, other),
            })
            .collect()
    }

    /// The table: rows at the chosen times, the run's end, and each event.
    fn fill_table(
        &self,
        report: &mut RunReport,
        layout: &Layout,
        trajectory: &Trajectory,
        hits: &[numeric::EventHit],
        table_times: &Option<(Vec<f64>, bool)>,
        columns: Vec<(String, Source<'_>)>,
    ) {
        let (start, final_time) = (trajectory.start(), trajectory.end());
        let mut times: Vec<(f64, Option<usize>)> = match table_times {
            Some((times, one_by_one)) => times
                .iter()
                .filter(|&&t| *one_by_one || t <= final_time)
                .map(|&t| (t, None))
                .collect(),
            None => (0..=DEFAULT_TABLE_INTERVALS)
                .map(|k| {
                    let fraction = f64::from(k) / f64::from(DEFAULT_TABLE_INTERVALS);
                    (start + fraction * (final_time - start), None)
                })
                .collect(),
        };
        if !times.iter().any(|&(t, _)| t == final_time) {
            times.push((final_time, None));
        }
        times.extend(
            hits.iter()
                .enumerate()
                .take(MAX_EVENT_ROWS)
                .map(|(index, hit)| (hit.t, Some(index))),
        );
        times.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));

        let columns = self.compile_sources(columns, layout);
        let mut state = vec![0.0; layout.n_slots];
        let (mut inputs, mut stack) = (Vec::new(), Vec::new());
        let mut rows: Vec<RunRow> = Vec::with_capacity(times.len());
        for (t, hit) in times {
            let event = hit.map(|index| hits[index].event);
            if let Some(last) = rows.last_mut()
                && last.time == t
            {
                last.events.extend(event);
                continue;
            }
            let inside = t >= start && t <= final_time;
            let values = if inside {
                trajectory.state_at(t, &mut state);
                columns
                    .iter()
                    .map(|(_, source)| {
                        self.source_value(source, layout, t, &state, &mut inputs, &mut stack)
                    })
                    .collect()
            } else {
                vec![None; columns.len()]
            };
            rows.push(RunRow {
                time: t,
                values,
                events: event.into_iter().collect(),
            });
        }
        report.columns = columns
            .iter()
            .enumerate()
            .map(|(index, (label, source))| {
                let dimension = match source {
                    Source::State(state) => layout.states[*state].0,
                    _ => rows
                        .iter()
                        .find_map(|row| row.values[index].map(|v| v.dimension()))
                        .unwrap_or(Dimension::NONE),
                };
                let display = match source {
                    Source::State(state) => report.states[*state].column.display.clone(),
                    _ => {
                        let largest = rows
                            .iter()
                            .filter_map(|row| row.values[index].map(|v| v.magnitude_si()))
                            .fold(0.0, f64::max);
                        pick_unit(dimension, largest, self.style.system)
                    }
                };
                RunColumn {
                    label: label.clone(),
                    display,
                    dimension,
                }
            })
            .collect();
        report.rows = rows;
    }

    /// The plotted series, sampled from the dense output: one point per
    /// bucket, plus the lowest and highest step values in buckets that hold
    /// several steps (so a long oscillation draws its envelope).
    fn plot_series(
        &self,
        report: &RunReport,
        layout: &Layout,
        trajectory: &Trajectory,
        series: Vec<(String, Source<'_>)>,
    ) -> Vec<PlotSeries> {
        let series = self.compile_sources(series, layout);
        let (start, end) = (trajectory.start(), trajectory.end());
        let times = trajectory.times();
        let mut state = vec![0.0; layout.n_slots];
        let (mut inputs, mut stack) = (Vec::new(), Vec::new());
        let mut out = Vec::new();
        for (label, source) in &series {
            // Points per component: (t, value).
            let mut points: Vec<Vec<(f64, f64)>> = Vec::new();
            let mut dimension = Dimension::NONE;
            let mut push = |t: f64, value: Option<Value>, points: &mut Vec<Vec<(f64, f64)>>| {
                let Some(value) = value else {
                    return;
                };
                dimension = value.dimension();
                let components: Vec<f64> = match value {
                    Value::Scalar(q) => vec![q.si],
                    Value::Vector(v) => v.components().to_vec(),
                };
                if points.len() < components.len() {
                    points.resize(components.len(), Vec::new());
                }
                for (line, component) in points.iter_mut().zip(components) {
                    line.push((t, component));
                }
            };
            let mut boundary = 0;
            for bucket in 0..=PLOT_BUCKETS {
                let t = start + (end - start) * bucket as f64 / PLOT_BUCKETS as f64;
                trajectory.state_at(t, &mut state);
                let value = self.source_value(source, layout, t, &state, &mut inputs, &mut stack);
                push(t, value, &mut points);
                if bucket == PLOT_BUCKETS {
                    break;
                }
                let bucket_end = start + (end - start) * (bucket + 1) as f64 / PLOT_BUCKETS as f64;
                // Step boundaries inside this bucket: keep the extremes.
                let mut low: Option<(f64, Value)> = None;
                let mut high: Option<(f64, Value)> = None;
                let mut n_inside = 0;
                while boundary < times.len() && times[boundary] < bucket_end {
                    let tb = times[boundary];
                    if tb > t {
                        n_inside += 1;
                        let y = trajectory.state_at_boundary(boundary);
                        if let Some(value) =
                            self.source_value(source, layout, tb, y, &mut inputs, &mut stack)
                        {
                            let size = first_component(value);
                            if low.is_none_or(|(_, v)| size < first_component(v)) {
                                low = Some((tb, value));
                            }
                            if high.is_none_or(|(_, v)| size > first_component(v)) {
                                high = Some((tb, value));
                            }
                        }
                    }
                    boundary += 1;
                }
                if n_inside > 2
                    && let (Some(low), Some(high)) = (low, high)
                {
                    let (first, second) = if low.0 <= high.0 {
                        (low, high)
                    } else {
                        (high, low)
                    };
                    push(first.0, Some(first.1), &mut points);
                    push(second.0, Some(second.1), &mut points);
                }
            }
            let n_lines = points.len();
            for (axis, line) in points.into_iter().enumerate() {
                let label = if n_lines > 1 {
                    format!("{label}.{}", ["x", "y", "z"][axis.min(2)])
                } else {
                    label.clone()
                };
                let display = match source {
                    Source::State(index) => report.states[*index].column.display.clone(),
                    _ => {
                        let largest = line.iter().map(|p| p.1.abs()).fold(0.0, f64::max);
                        pick_unit(dimension, largest, self.style.system)
                    }
                };
                out.push(PlotSeries {
                    column: RunColumn {
                        label,
                        display,
                        dimension,
                    },
                    points: line,
                });
            }
        }
        out
    }

    /// Answers a run query: `v at stop`, `x at 2 s`, `t at slow`, `max of x`.
    pub(super) fn run_query(&self, query: &RunQuery, span: Span) -> Evaluation {
        let not_in_run = |message: String, help: &str| {
            Box::new(Diagnostic::error(Code::NotInRun, span, message).with_help(help))
        };
        let Some(statement) = query.block else {
            return Err(Box::new(Diagnostic::error(
                Code::BadRunQuery,
                span,
                "this value names no state of a simulate block",
            )));
        };
        let Some(report) = self.runs.iter().find(|run| run.statement == statement) else {
            return Err(not_in_run(
                "the simulate block has not run".to_string(),
                "check the block's own findings",
            ));
        };
        let (Some(trajectory), RunStatus::Reached | RunStatus::Stopped) =
            (&report.trajectory, report.status)
        else {
            return Err(not_in_run(
                "the simulate block did not finish its run".to_string(),
                "fix the block's own findings first",
            ));
        };
        let layout = Layout {
            first_cell: report.time,
            states: report
                .states
                .iter()
                .map(|s| (s.column.dimension, s.first, s.n_components))
                .collect(),
            n_slots: trajectory.n_components(),
        };
        let show_time = |t: f64| {
            self.style
                .show_in(t, &report.time_display.text, report.time_display.si_factor)
        };
        let t = match &query.point {
            RunPoint::Start => trajectory.start(),
            RunPoint::End => trajectory.end(),
            RunPoint::Stop => {
                if report.status != RunStatus::Stopped {
                    return Err(not_in_run(
                        format!(
                            "the run reached its end, t = {}, without stopping",
                            show_time(trajectory.end())
                        ),
                        "lengthen the run, check the stop condition, or ask for the value `at end`",
                    ));
                }
                trajectory.end()
            }
            RunPoint::Event(name) => {
                let event = report
                    .events
                    .iter()
                    .find(|event| event.name.as_deref() == Some(name.text.as_str()));
                match event {
                    None => {
                        return Err(Box::new(
                            Diagnostic::error(
                                Code::BadRunQuery,
                                name.span,
                                format!("`{}` is not an event of this value's run", name.text),
                            )
                            .with_label(report.span, "the run")
                            .with_help("name an event of the same simulate block"),
                        ));
                    }
                    Some(event) => match event.times.first() {
                        Some(&t) => t,
                        None => {
                            return Err(not_in_run(
                                format!(
                                    "the event `{}` ({}) did not happen in the run, which ended at t = {}",
                                    name.text,
                                    event.condition,
                                    show_time(trajectory.end())
                                ),
                                "check the condition, or lengthen the run",
                            ));
                        }
                    },
                }
            }
            RunPoint::Time(expr) => {
                let t = match self.eval(expr)? {
                    Value::Scalar(q) if q.dimension == Dimension::TIME => q.si,
                    other => {
                        return Err(Box::new(
                            Diagnostic::error(
                                Code::DimensionMismatch,
                                expr.span,
                                format!(
                                    "a point of a run is a time, `stop`, `end`, `start`, an event or `max of …`, but `{}` is {}",
                                    expr.span.text(self.source),
                                    other.dimension().describe()
                                ),
                            )
                            .with_help("give a time with its unit: `x at 2 s`"),
                        ));
                    }
                };
                let (first, last) = (trajectory.start(), trajectory.end());
                let slack = 1e-12 * (last - first).abs();
                if t < first - slack || t > last + slack {
                    return Err(not_in_run(
                        format!(
                            "t = {} is outside the run, which went from {} to {}",
                            show_time(t),
                            show_time(first),
                            show_time(last)
                        ),
                        "ask for a time inside the run, or lengthen it",
                    ));
                }
                t.clamp(first, last)
            }
            RunPoint::Extremum { maximum, of } => self.extremum_time(
                of,
                *maximum,
                &layout,
                (trajectory, report.relative_tolerance),
            )?,
        };
        let mut state = vec![0.0; layout.n_slots];
        trajectory.state_at(t, &mut state);
        self.at_point(&layout, t, &state, |evaluator| evaluator.eval(&query.value))
    }

    /// When `of` is largest (or smallest) over the run.
    fn extremum_time(
        &self,
        of: &Expr,
        maximum: bool,
        layout: &Layout,
        (trajectory, relative_tolerance): (&Trajectory, f64),
    ) -> Result<f64, Box<Diagnostic>> {
        // Check the expression once at the start, with the usual messages.
        let first = self.at_point(
            layout,
            trajectory.start(),
            trajectory.state_at_boundary(0),
            |evaluator| evaluator.eval(of),
        )?;
        if first.vector().is_some() {
            return Err(Box::new(
                Diagnostic::error(
                    Code::DimensionMismatch,
                    of.span,
                    "the largest or smallest of a vector is not defined",
                )
                .with_help("take a magnitude or a component: `max of mag(v)`, `min of r.y`"),
            ));
        }
        let program = self.compile_over_run(of, layout)?;
        let mut objective = QueryObjective {
            evaluator: self,
            layout,
            of,
            program,
            inputs: Vec::new(),
            stack: Vec::new(),
            dual_inputs: Vec::new(),
            dual_stack: Vec::new(),
        };
        let time_tolerance = relative_tolerance * (trajectory.end() - trajectory.start());
        let (t, _) = trajectory.extremum(&mut objective, maximum, time_tolerance);
        Ok(t)
    }
}

/// The expression of `max of …` as the trajectory's search sees it: its
/// value at a point of the run, and, when it compiles, its exact rate of
/// change along the run (the program run on dual numbers, with the time
/// changing at one and each state at its rate).
struct QueryObjective<'s, 'a> {
    evaluator: &'s Evaluator<'a>,
    layout: &'s Layout,
    of: &'s Expr,
    program: Option<Program>,
    inputs: Vec<f64>,
    stack: Vec<f64>,
    dual_inputs: Vec<Dual<f64>>,
    dual_stack: Vec<Dual<f64>>,
}

impl Objective for QueryObjective<'_, '_> {
    fn value(&mut self, t: f64, y: &[f64]) -> f64 {
        match &self.program {
            Some(program) => {
                self.inputs.clear();
                self.inputs.push(t);
                self.inputs.extend_from_slice(y);
                program.run_with(&self.inputs, &mut self.stack)
            }
            None => self
                .evaluator
                .at_point(self.layout, t, y, |evaluator| evaluator.eval(self.of))
                .ok()
                .and_then(|value| value.scalar())
                .map_or(f64::NAN, |q| q.si),
        }
    }

    fn slope(&mut self, t: f64, y: &[f64], rates: &[f64]) -> Option<f64> {
        let program = self.program.as_ref()?;
        self.dual_inputs.clear();
        self.dual_inputs.push(Dual::variable(t));
        self.dual_inputs
            .extend(y.iter().zip(rates).map(|(&value, &rate)| Dual {
                value,
                derivative: rate,
            }));
        Some(
            program
                .run_with(&self.dual_inputs, &mut self.dual_stack)
                .derivative,
        )
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
