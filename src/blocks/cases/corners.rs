//! Worst cases the interval engine cannot reach: results of solve and
//! simulate blocks, vectors, and whatever uses them. The sheet is evaluated
//! again at every corner of the toleranced inputs that reach them (each
//! input at its lower or its upper end), with the ordinary evaluator, so a
//! solve block is solved and a run integrated at each corner. The extremes
//! found there are what heft reports, labelled as found at the corners: a
//! result that is not monotone in its inputs may go further between them,
//! which is said wherever such a range is shown.

use crate::base::Severity;
use crate::eval::model::{CellRange, CheckRange, CheckResult, RangeMethod};
use crate::eval::{CellStatus, Evaluator};
use crate::sheet::{CellId, Node};
use crate::units::Value;

/// The most toleranced inputs whose corners are enumerated: 2¹⁰ = 1024
/// evaluations of the part of the sheet they reach.
pub(super) const MAX_CORNER_INPUTS: usize = 10;

/// A toleranced input as the corners see it: its nominal value and how far
/// below and above it may lie (SI).
#[derive(Clone, Copy, Debug)]
pub(super) struct CornerInput {
    pub cell: CellId,
    pub nominal: f64,
    pub below: f64,
    pub above: f64,
}

/// What the corners gave.
pub(super) struct CornerRanges {
    /// Per requested cell: its range (scalars), or per component (vectors).
    pub cells: Vec<(CellId, CornerRange)>,
    /// Per requested check: its worst case, or why there is none.
    pub checks: Vec<(usize, Result<CornerCheck, String>)>,
}

/// The extremes of one cell over the corners.
pub(super) enum CornerRange {
    /// A scalar's lowest and highest value.
    Scalar(CellRange),
    /// Each component's lowest and highest value.
    Vector(Vec<(f64, f64)>),
    /// It could not be evaluated at some corner.
    Unknown,
}

/// A check over the corners.
pub(super) struct CornerCheck {
    /// The check's worst case.
    pub worst: CheckRange,
    /// The corner where the utilization is highest (input cell, SI value).
    pub worst_corner: Vec<(CellId, f64)>,
}

/// The lowest and highest value seen.
#[derive(Clone, Copy)]
struct Extremes {
    low: f64,
    high: f64,
}

impl Extremes {
    const EMPTY: Extremes = Extremes {
        low: f64::INFINITY,
        high: f64::NEG_INFINITY,
    };

    fn add(&mut self, value: f64) {
        self.low = self.low.min(value);
        self.high = self.high.max(value);
    }

    fn range(self, method: RangeMethod) -> CellRange {
        CellRange {
            low: self.low,
            high: self.high,
            first_order: None,
            method,
            sensitivities: Vec::new(),
        }
    }
}

/// A cell's extremes by component over the corners so far, or the first
/// corner where it had no value.
#[derive(Clone, Default)]
struct CellSoFar {
    extremes: Vec<Extremes>,
    problem: Option<String>,
}

impl CellSoFar {
    /// Adds the cell's value at this corner, or notes (once) why it has none.
    fn record(&mut self, evaluator: &Evaluator<'_>, id: CellId, problem: impl FnOnce() -> String) {
        if self.problem.is_some() {
            return;
        }
        match (evaluator.statuses[id], evaluator.values[id]) {
            (CellStatus::Ok, Some(value)) => {
                let components = match value {
                    Value::Scalar(q) => vec![q.si],
                    Value::Vector(v) => v.components().to_vec(),
                };
                self.extremes.resize(components.len(), Extremes::EMPTY);
                for (extreme, component) in self.extremes.iter_mut().zip(components) {
                    extreme.add(component);
                }
            }
            _ => self.problem = Some(problem()),
        }
    }

    /// The cell's range over every corner (`nominal` tells a vector cell).
    fn range(self, nominal: Option<Value>, method: RangeMethod) -> CornerRange {
        match (self.problem, nominal) {
            (Some(_), _) => CornerRange::Unknown,
            (None, Some(Value::Vector(_))) => {
                CornerRange::Vector(self.extremes.iter().map(|e| (e.low, e.high)).collect())
            }
            (None, _) => match self.extremes.first() {
                Some(extremes) => CornerRange::Scalar(extremes.range(method)),
                None => CornerRange::Unknown,
            },
        }
    }
}

/// A check's sides and verdict over the corners so far.
struct CheckSoFar {
    lhs: Extremes,
    rhs: Extremes,
    /// Highest utilization seen, and at which corner.
    worst: Option<(f64, u64)>,
    /// Whether it held at every corner so far.
    holds: bool,
    /// The first corner where it failed.
    failed_at: Option<u64>,
    problem: Option<String>,
}

impl Default for CheckSoFar {
    fn default() -> Self {
        CheckSoFar {
            lhs: Extremes::EMPTY,
            rhs: Extremes::EMPTY,
            worst: None,
            holds: true,
            failed_at: None,
            problem: None,
        }
    }
}

impl CheckSoFar {
    /// Judges the check at this corner, or notes (once) why it could not be.
    fn record(
        &mut self,
        evaluator: &mut Evaluator<'_>,
        index: usize,
        corner: u64,
        problem: impl FnOnce() -> String,
    ) {
        if self.problem.is_some() {
            return;
        }
        evaluator.diagnostics.clear();
        let result = evaluator.evaluate_check(index);
        match (result.holds, result.lhs, result.rhs) {
            (Some(holds), Some(lhs), Some(rhs)) => {
                self.lhs.add(lhs.si);
                self.rhs.add(rhs.si);
                if !holds {
                    self.holds = false;
                    self.failed_at.get_or_insert(corner);
                }
                if let Some(u) = result.utilization
                    && self.worst.is_none_or(|(worst, _)| u > worst)
                {
                    self.worst = Some((u, corner));
                }
            }
            _ => self.problem = Some(problem()),
        }
    }
}

impl Evaluator<'_> {
    /// The toleranced inputs that reach `cells` or the checks `checks`,
    /// through any node (solve and simulate blocks included).
    pub(super) fn inputs_reaching(
        &self,
        inputs: &[CornerInput],
        cells: &[CellId],
        checks: &[usize],
    ) -> Vec<CornerInput> {
        let n_cells = self.sheet.cells.len();
        let mut seen = vec![false; n_cells];
        let mut stack: Vec<CellId> = cells.to_vec();
        for &check in checks {
            stack.extend_from_slice(&self.sheet.check_uses[check]);
        }
        while let Some(id) = stack.pop() {
            if seen[id] {
                continue;
            }
            seen[id] = true;
            stack.extend(self.uses_of(id));
        }
        inputs
            .iter()
            .filter(|input| seen[input.cell])
            .copied()
            .collect()
    }

    /// Evaluates the part of the sheet `inputs` reach at each of their
    /// corners and gathers the extremes of `cells` and the worst case of
    /// `checks`. At most [`MAX_CORNER_INPUTS`] inputs.
    pub(super) fn corner_ranges(
        &self,
        inputs: &[CornerInput],
        cells: &[CellId],
        checks: &[usize],
        base: &[CheckResult],
    ) -> CornerRanges {
        let n_corners = 1u64 << inputs.len();
        let method = RangeMethod::Corners(n_corners as usize);
        let nodes = self.nodes_downstream_of(inputs);
        let mut cells_so_far: Vec<CellSoFar> = vec![CellSoFar::default(); cells.len()];
        let mut checks_so_far: Vec<CheckSoFar> =
            checks.iter().map(|_| CheckSoFar::default()).collect();
        let mut tests_seen: rustc_hash::FxHashMap<crate::base::Span, u8> = Default::default();
        for corner in 0..n_corners {
            let mut evaluator = self.evaluated_at_corner(inputs, corner, &nodes);
            for (test, seen) in evaluator.tests_seen.take().unwrap_or_default() {
                *tests_seen.entry(test).or_default() |= seen;
            }
            let failure = evaluator
                .diagnostics
                .iter()
                .find(|d| d.severity == Severity::Error)
                .map(|d| d.message.clone());
            let at_corner = |fallback: &str| {
                format!(
                    "at the corner where {}: {}",
                    self.describe_corner(inputs, corner),
                    failure.as_deref().unwrap_or(fallback)
                )
            };
            for (state, &id) in cells_so_far.iter_mut().zip(cells) {
                state.record(&evaluator, id, || at_corner("it could not be evaluated"));
            }
            for (state, &index) in checks_so_far.iter_mut().zip(checks) {
                state.record(&mut evaluator, index, corner, || {
                    at_corner("the check could not be evaluated")
                });
            }
        }
        // A test that went both ways between the corners: what depends on
        // it is not followed by the corners alone.
        let mut straddled: Vec<crate::base::Span> = tests_seen
            .into_iter()
            .filter(|&(_, seen)| seen == 3)
            .map(|(test, _)| test)
            .collect();
        straddled.sort_unstable();
        let cells = cells
            .iter()
            .zip(cells_so_far)
            .map(
                |(&id, state)| match self.straddled_for_cell(id, &straddled) {
                    Some(_) => (id, CornerRange::Unknown),
                    None => (id, state.range(self.values[id], method)),
                },
            )
            .collect();
        let checks = checks
            .iter()
            .zip(checks_so_far)
            .map(
                |(&index, state)| match self.straddled_for_check(index, &straddled) {
                    Some(test) => (index, Err(self.straddle_reason(test))),
                    None => (index, self.corner_check(inputs, index, state, base, method)),
                },
            )
            .collect();
        CornerRanges { cells, checks }
    }

    /// An evaluator over the nodes `nodes` with every one of `inputs` pinned
    /// at its value in `corner`.
    fn evaluated_at_corner(
        &self,
        inputs: &[CornerInput],
        corner: u64,
        nodes: &[crate::sheet::NodeId],
    ) -> Evaluator<'_> {
        let mut evaluator = crate::blocks::with_blocks(Evaluator::resume(
            self.sheet,
            self.source,
            self.values.clone(),
            self.statuses.clone(),
            self.spreads.clone(),
        ));
        evaluator.overrides = self.overrides.clone();
        evaluator.case_order = self.case_order.clone();
        evaluator.pins = inputs
            .iter()
            .enumerate()
            .map(|(bit, input)| (input.cell, corner_value(input, corner, bit)))
            .collect();
        evaluator.tests_seen = std::cell::RefCell::new(Some(Default::default()));
        for &node in nodes {
            for &id in self.sheet.nodes[node].cells() {
                evaluator.values[id] = None;
            }
            evaluator.run_node(node);
        }
        evaluator
    }

    /// A check's verdict over every corner, with the corner that governs it
    /// named by the inputs that reach it, or why there is none.
    fn corner_check(
        &self,
        inputs: &[CornerInput],
        index: usize,
        state: CheckSoFar,
        base: &[CheckResult],
        method: RangeMethod,
    ) -> Result<CornerCheck, String> {
        if let Some(problem) = state.problem {
            return Err(problem);
        }
        // The inputs that reach this check, to name its corner.
        let own = self.inputs_reaching(inputs, &[], &[index]);
        let corner = state
            .failed_at
            .or(state.worst.map(|(_, corner)| corner))
            .unwrap_or(0);
        let worst_utilization = state
            .worst
            .map(|(u, _)| u)
            .or_else(|| base.get(index).and_then(|check| check.utilization));
        Ok(CornerCheck {
            worst: CheckRange {
                method,
                lhs: state.lhs.range(method),
                rhs: state.rhs.range(method),
                worst_utilization,
                passes: state.holds,
            },
            worst_corner: inputs
                .iter()
                .enumerate()
                .filter(|(_, input)| own.iter().any(|o| o.cell == input.cell))
                .map(|(bit, input)| (input.cell, corner_value(input, corner, bit)))
                .collect(),
        })
    }

    /// The nodes, in evaluation order, that use one of `inputs` (directly or
    /// through other nodes), the inputs' own nodes included.
    fn nodes_downstream_of(&self, inputs: &[CornerInput]) -> Vec<crate::sheet::NodeId> {
        let mut reached = vec![false; self.sheet.cells.len()];
        for input in inputs {
            reached[input.cell] = true;
        }
        let mut nodes = Vec::new();
        for &node in self.node_order() {
            let cells = self.sheet.nodes[node].cells();
            let hit = cells.iter().any(|&id| {
                reached[id]
                    || match &self.sheet.nodes[node] {
                        Node::Cell(_) => self.uses_of(id).iter().any(|&used| reached[used]),
                        Node::Solve { .. } | Node::Simulate { .. } => {
                            self.sheet.uses[id].iter().any(|&used| reached[used])
                        }
                    }
            });
            if hit {
                for &id in cells {
                    reached[id] = true;
                }
                nodes.push(node);
            }
        }
        nodes
    }

    /// `m = 110 kg, a = 0.3 m/s²`: each input's value at a corner.
    pub(super) fn describe_corner(&self, inputs: &[CornerInput], corner: u64) -> String {
        self.describe_values(
            &inputs
                .iter()
                .enumerate()
                .map(|(bit, input)| (input.cell, corner_value(input, corner, bit)))
                .collect::<Vec<_>>(),
        )
    }

    /// `m = 110 kg, a = 0.3 m/s²`: cells at given SI values, each shown in
    /// its own display unit.
    pub(super) fn describe_values(&self, values: &[(CellId, f64)]) -> String {
        values
            .iter()
            .map(|&(id, si)| {
                let (display, _) = self.display_unit(id, self.values[id]);
                format!(
                    "{} = {}",
                    self.sheet.cell(id).name.text,
                    self.style.show_in(si, &display.text, display.si_factor)
                )
            })
            .collect::<Vec<_>>()
            .join(", ")
    }
}

/// An input's value at a corner: bit `bit` of `corner` set is the upper end.
fn corner_value(input: &CornerInput, corner: u64, bit: usize) -> f64 {
    if corner >> bit & 1 == 1 {
        input.nominal + input.above
    } else {
        input.nominal - input.below
    }
}
