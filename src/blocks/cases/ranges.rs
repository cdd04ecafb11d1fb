//! Ranges from tolerances: every cell's formula compiled once, then run over
//! intervals (guaranteed bounds), dual numbers (exact derivatives at the
//! nominal point) and dual intervals (derivative bounds over the whole box).
//!
//! Bounds are the intersection of the natural interval extension and the
//! mean-value form, which keeps a value used twice from widening the result
//! to first order; where every derivative keeps its sign over the box the
//! bounds are the formula's values at the two worst corners (exact, up to
//! rounding), which is done for the results a checker looks at: the checks'
//! sides and the chosen case results.

use crate::base::Span;
use crate::eval::Evaluator;
use crate::eval::model::{CellRange, CheckRange, RangeMethod, Sensitivity};
use crate::eval::program::Program;
use crate::numeric::Number;
use crate::numeric::{Dual, Interval};
use crate::sheet::{CellId, Node};
use crate::syntax::ast::Comparison;
use crate::units::Value;

/// A cell with a tolerance: a source of variation.
#[derive(Clone, Copy, Debug)]
struct Source {
    cell: CellId,
    below: f64,
    above: f64,
    /// The nominal value minus the formula's value (the midpoint shift of a
    /// `lower .. upper` range).
    shift: f64,
}

/// A solve block's unknowns and their implicit derivatives (for each
/// unknown, ∂x/∂c for each cell c its equations name), if known.
type BlockSlopes<'u> = (&'u [CellId], Option<Vec<Vec<(CellId, f64)>>>);

/// What a run of the sheet gives each varying input.
#[derive(Clone, Copy)]
enum Setting {
    /// Every input at its nominal value.
    Nominal,
    /// Every input anywhere in its tolerance.
    Box,
    /// Each input at one end: true for above, false for below.
    Corner,
}

/// The sheet's formulas compiled, and the results of the standard runs.
pub(super) struct Ranges {
    /// Formula cells in evaluation order.
    order: Vec<CellId>,
    /// Each cell's place in `order`.
    position: Vec<usize>,
    programs: Vec<Option<Program>>,
    supported: Vec<bool>,
    sources: Vec<Source>,
    point: Vec<Interval>,
    boxed: Vec<Interval>,
    derivatives: Vec<Vec<Dual<f64>>>,
    enclosures: Vec<Vec<Dual<Interval>>>,
    /// Per cell, the test of a piecewise formula the box straddles, in its
    /// own formula or one it uses: the branches join there, so its range is
    /// their hull and no first-order estimate applies.
    pub(super) straddles: Vec<Option<Span>>,
}

impl Evaluator<'_> {
    /// Compiles the sheet and runs the standard passes; `None` when no cell
    /// has a tolerance.
    pub(super) fn ranges(&self) -> Option<Ranges> {
        let n_cells = self.sheet.cells.len();
        let sources: Vec<Source> = (0..n_cells)
            .filter_map(|cell| {
                let spread = self.spreads[cell]?;
                (self.statuses[cell] == super::CellStatus::Ok).then_some(Source {
                    cell,
                    below: spread.below,
                    above: spread.above,
                    shift: 0.0,
                })
            })
            .collect();
        if sources.is_empty() {
            return None;
        }
        let programs: Vec<Option<Program>> = (0..n_cells).map(|id| self.compile_cell(id)).collect();
        let mut supported = vec![false; n_cells];
        for &node in self.node_order() {
            if let Node::Cell(id) = &self.sheet.nodes[node] {
                let uses_supported = self.uses_of(*id).iter().all(|&used| supported[used]);
                supported[*id] = programs[*id].is_some() && uses_supported;
            }
        }
        // The shift of each source: nominal minus the formula's own value.
        let mut sources = sources;
        let formula_values = self.pass::<f64>(&programs, &supported, &[], &|_| 0.0);
        for source in &mut sources {
            let nominal = self.scalar_si(source.cell).unwrap_or(0.0);
            source.shift = nominal - formula_values[source.cell];
        }
        let order = self.formula_order();
        let mut position = vec![usize::MAX; n_cells];
        for (place, &id) in order.iter().enumerate() {
            position[id] = place;
        }
        let mut ranges = Ranges {
            order,
            position,
            point: Vec::new(),
            boxed: Vec::new(),
            derivatives: Vec::new(),
            enclosures: Vec::new(),
            programs,
            supported,
            sources,
            straddles: Vec::new(),
        };
        ranges.point = self.interval_pass(&ranges, &ranges.order, Setting::Nominal, &[]);
        ranges.boxed = self.interval_pass(&ranges, &ranges.order, Setting::Box, &[]);
        ranges.straddles = self.straddles(&ranges);
        for index in 0..ranges.sources.len() {
            let derivative = self.pass::<Dual<f64>>(
                &ranges.programs,
                &ranges.supported,
                &ranges.sources,
                &|k| {
                    let shift = ranges.sources[k].shift;
                    if k == index {
                        Dual::variable(shift)
                    } else {
                        Dual::fixed(shift)
                    }
                },
            );
            ranges.derivatives.push(derivative);
            let enclosure = self.enclosure_pass(&ranges, &ranges.order, index, None);
            ranges.enclosures.push(enclosure);
        }
        Some(ranges)
    }

    /// Each cell's straddled test (see [`Ranges::straddles`]), in
    /// evaluation order so a cell inherits what it uses.
    fn straddles(&self, ranges: &Ranges) -> Vec<Option<Span>> {
        let mut straddles: Vec<Option<Span>> = vec![None; ranges.programs.len()];
        for &id in &ranges.order {
            let Some(program) = ranges.programs[id]
                .as_ref()
                .filter(|_| ranges.supported[id])
            else {
                continue;
            };
            straddles[id] = program
                .straddled_test(&ranges.boxed)
                .or_else(|| self.uses_of(id).iter().find_map(|&used| straddles[used]));
        }
        straddles
    }

    /// Formula cells in evaluation order.
    fn formula_order(&self) -> Vec<CellId> {
        self.node_order()
            .iter()
            .filter_map(|&node| match &self.sheet.nodes[node] {
                Node::Cell(id) => Some(*id),
                Node::Solve { .. } | Node::Simulate { .. } => None,
            })
            .collect()
    }

    /// The cells a cell's formula (or its case's replacement) uses.
    pub(super) fn uses_of(&self, id: CellId) -> Vec<CellId> {
        match self.overrides.get(&id) {
            Some(replacement) => crate::sheet::override_uses(replacement),
            None => self.sheet.uses[id].clone(),
        }
    }

    /// A cell's formula compiled with every cell it names as an input.
    fn compile_cell(&self, id: CellId) -> Option<Program> {
        if self.statuses[id] != super::CellStatus::Ok
            || self.values[id].and_then(|v| v.scalar()).is_none()
        {
            return None;
        }
        let expr = match self.overrides.get(&id) {
            Some(replacement) => &replacement.expr,
            None => self.sheet.cell(id).expr?,
        };
        self.compile(expr, &|name| self.input_for(name)).ok()
    }

    /// Runs every supported cell's program in evaluation order; `tolerance`
    /// gives the term added to source `k`'s formula value (its shift plus its
    /// variation in this pass).
    fn pass<T: Number>(
        &self,
        programs: &[Option<Program>],
        supported: &[bool],
        sources: &[Source],
        tolerance: &dyn Fn(usize) -> T,
    ) -> Vec<T> {
        self.pass_over(
            &self.formula_order(),
            programs,
            supported,
            sources,
            tolerance,
        )
    }

    /// [`Evaluator::pass`] over the listed cells only (in evaluation order);
    /// the others stay undefined.
    fn pass_over<T: Number>(
        &self,
        cells: &[CellId],
        programs: &[Option<Program>],
        supported: &[bool],
        sources: &[Source],
        tolerance: &dyn Fn(usize) -> T,
    ) -> Vec<T> {
        let mut values = vec![T::constant(f64::NAN); programs.len()];
        let mut stack = Vec::with_capacity(16);
        let source_of: rustc_hash::FxHashMap<CellId, usize> = sources
            .iter()
            .enumerate()
            .map(|(k, source)| (source.cell, k))
            .collect();
        for &id in cells {
            let Some(program) = &programs[id] else {
                continue;
            };
            if !supported[id] {
                continue;
            }
            let mut value = program.run_with(&values, &mut stack);
            if let Some(&k) = source_of.get(&id) {
                value = value.add(tolerance(k));
            }
            values[id] = value;
        }
        values
    }

    /// Derivatives along source `index` enclosed over the box, or over the
    /// box with that source limited to `piece` (offsets from its nominal).
    fn enclosure_pass(
        &self,
        ranges: &Ranges,
        cells: &[CellId],
        index: usize,
        piece: Option<Interval>,
    ) -> Vec<Dual<Interval>> {
        self.pass_over::<Dual<Interval>>(
            cells,
            &ranges.programs,
            &ranges.supported,
            &ranges.sources,
            &|k| {
                let source = ranges.sources[k];
                let spread = match piece {
                    Some(piece) if k == index => {
                        Interval::new(source.shift + piece.lo, source.shift + piece.hi)
                    }
                    _ => Interval::new(source.shift - source.below, source.shift + source.above),
                };
                if k == index {
                    Dual::variable(spread)
                } else {
                    Dual::fixed(spread)
                }
            },
        )
    }

    /// The sign of a derivative whose enclosure over the whole box straddles
    /// zero, proven on 16 slices of that input's range (the slices shrink the
    /// dependency effects that widen the enclosure); `None` if it changes.
    fn sign_on_slices(
        &self,
        ranges: &Ranges,
        cone: &[CellId],
        target: RangeOf<'_>,
        index: usize,
    ) -> Option<bool> {
        const SLICES: usize = 16;
        let source = ranges.sources[index];
        let width = (source.below + source.above) / SLICES as f64;
        let mut sign = None;
        for slice in 0..SLICES {
            let low = -source.below + width * slice as f64;
            let piece = Interval::new(
                low,
                if slice + 1 == SLICES {
                    source.above
                } else {
                    low + width
                },
            );
            let enclosure = target
                .dual_interval(&self.enclosure_pass(ranges, cone, index, Some(piece)))
                .derivative;
            let here = if enclosure.lo >= 0.0 {
                true
            } else if enclosure.hi <= 0.0 {
                false
            } else {
                return None;
            };
            if sign.is_some_and(|s| s != here) {
                return None;
            }
            sign = Some(here);
        }
        sign
    }

    fn interval_pass(
        &self,
        ranges: &Ranges,
        cells: &[CellId],
        setting: Setting,
        corner: &[bool],
    ) -> Vec<Interval> {
        self.pass_over::<Interval>(
            cells,
            &ranges.programs,
            &ranges.supported,
            &ranges.sources,
            &|k| {
                let source = ranges.sources[k];
                match setting {
                    Setting::Nominal => Interval::point(source.shift),
                    Setting::Box => {
                        Interval::new(source.shift - source.below, source.shift + source.above)
                    }
                    Setting::Corner => Interval::point(if corner[k] {
                        source.shift + source.above
                    } else {
                        source.shift - source.below
                    }),
                }
            },
        )
    }

    /// The range of a cell (or, with `program`, of an expression over the
    /// cells), refined to its worst corners when `refine` and monotone.
    pub(super) fn range_of(
        &self,
        ranges: &Ranges,
        target: RangeOf<'_>,
        refine: bool,
    ) -> Option<CellRange> {
        let value_in = |pass: &[Interval]| target.value(pass);
        if let RangeOf::Cell(id) = target
            && !ranges.supported[id]
        {
            return None;
        }
        let point = value_in(&ranges.point);
        let boxed = value_in(&ranges.boxed);
        if point.is_nan() || boxed.is_nan() {
            return None;
        }
        let nominal = target.nominal(self, ranges)?;
        let mut mean_value = point;
        let mut monotone = true;
        let mut signs = Vec::with_capacity(ranges.sources.len());
        let derivatives: Vec<f64> = (0..ranges.sources.len())
            .map(|k| target.dual(&ranges.derivatives[k]).derivative)
            .collect();
        let (first_order, sensitivities) = self.linearised(ranges, &derivatives, nominal);
        // Across a straddled test the derivatives at the nominal point say
        // nothing of the other branch.
        let straddled = target.straddled(ranges);
        let (first_order, sensitivities) = match straddled {
            Some(_) => (None, Vec::new()),
            None => (Some(first_order), sensitivities),
        };
        // The cells the target depends on, found when first needed.
        let mut cone: Option<Vec<CellId>> = None;
        for (k, source) in ranges.sources.iter().enumerate() {
            let enclosure = target.dual_interval(&ranges.enclosures[k]).derivative;
            let spread = Interval::new(-source.below, source.above);
            mean_value = mean_value.add(enclosure.mul(spread));
            // An exact zero derivative comes out as the smallest subnormal
            // interval around zero after outward rounding: that is no sign change.
            let tiny = 1e-300;
            let straddles = enclosure.lo < -tiny && enclosure.hi > tiny;
            let sign = if enclosure.is_nan() {
                None
            } else if !straddles {
                Some(enclosure.lo >= -tiny)
            } else if refine {
                self.sign_on_slices(
                    ranges,
                    cone.get_or_insert_with(|| self.cone(ranges, target)),
                    target,
                    k,
                )
            } else {
                None
            };
            monotone &= sign.is_some();
            signs.push(sign.unwrap_or(true));
        }
        // Across a jump no derivative bounds the change: the natural
        // interval (the hull of the branches) is the bound.
        let mut bounds = match straddled {
            Some(_) => boxed,
            None => boxed.intersect(mean_value),
        };
        let mut method = RangeMethod::Guaranteed;
        if refine && monotone && straddled.is_none() {
            let high_corner: Vec<bool> = signs.clone();
            let low_corner: Vec<bool> = signs.iter().map(|s| !s).collect();
            let cone = cone.get_or_insert_with(|| self.cone(ranges, target));
            let high = value_in(&self.interval_pass(ranges, cone, Setting::Corner, &high_corner));
            let low = value_in(&self.interval_pass(ranges, cone, Setting::Corner, &low_corner));
            if !high.is_nan() && !low.is_nan() {
                bounds = Interval::new(low.lo, high.hi).intersect(bounds);
                method = RangeMethod::WorstCorners;
            }
        }
        Some(CellRange {
            low: bounds.lo,
            high: bounds.hi,
            first_order,
            method,
            sensitivities,
        })
    }

    /// The first-order bounds of a result of value `nominal` whose
    /// derivative along each source is `derivatives`, and the sources ranked
    /// by their share of that range.
    fn linearised(
        &self,
        ranges: &Ranges,
        derivatives: &[f64],
        nominal: f64,
    ) -> ((f64, f64), Vec<Sensitivity>) {
        let mut first_order = (nominal, nominal);
        let mut contributions = Vec::with_capacity(derivatives.len());
        let mut sensitivities = Vec::with_capacity(derivatives.len());
        for (source, &derivative) in ranges.sources.iter().zip(derivatives) {
            let (low, high) = if derivative >= 0.0 {
                (-derivative * source.below, derivative * source.above)
            } else {
                (derivative * source.above, -derivative * source.below)
            };
            first_order = (first_order.0 + low, first_order.1 + high);
            contributions.push(high - low);
            let input = self.scalar_si(source.cell).unwrap_or(0.0);
            sensitivities.push(Sensitivity {
                input: source.cell,
                derivative,
                normalized: (nominal != 0.0)
                    .then(|| derivative * input / nominal)
                    .filter(|v| v.is_finite()),
                share: 0.0,
            });
        }
        let total: f64 = contributions.iter().sum();
        for (sensitivity, contribution) in sensitivities.iter_mut().zip(&contributions) {
            sensitivity.share = if total > 0.0 {
                contribution / total
            } else {
                0.0
            };
        }
        sensitivities.sort_by(|a, b| b.share.total_cmp(&a.share));
        (first_order, sensitivities)
    }

    /// Gives each listed range found at the corners its first-order bounds
    /// and sensitivities, from exact derivatives that reach through solve
    /// blocks by their implicit derivatives (dx/dp = −J⁻¹ ∂F/∂p). A result
    /// the derivatives cannot reach (a vector, a simulate block, a block
    /// with vector equations) keeps none.
    pub(super) fn add_first_order(
        &self,
        ranges: &Ranges,
        cells: &[CellId],
        cell_ranges: &mut [Option<CellRange>],
    ) {
        let slopes: Vec<BlockSlopes<'_>> = self
            .node_order()
            .iter()
            .filter_map(|&node| match &self.sheet.nodes[node] {
                Node::Solve {
                    statement,
                    unknowns,
                } => Some((&unknowns[..], self.solve_slopes(*statement, unknowns))),
                _ => None,
            })
            .collect();
        let passes: Vec<Vec<f64>> = (0..ranges.sources.len())
            .map(|index| self.implicit_pass(ranges, &slopes, index))
            .collect();
        for &id in cells {
            let Some(range) = cell_ranges[id].as_mut() else {
                continue;
            };
            let Some(nominal) = self.scalar_si(id) else {
                continue;
            };
            let derivatives: Vec<f64> = passes.iter().map(|pass| pass[id]).collect();
            if derivatives.iter().all(|d| d.is_finite()) {
                let (first_order, sensitivities) = self.linearised(ranges, &derivatives, nominal);
                range.first_order = Some(first_order);
                range.sensitivities = sensitivities;
            }
        }
    }

    /// Every cell's exact derivative along source `index` at the nominal
    /// point, in node order: a cell the interval engine follows as the
    /// standard derivative pass gave it, any other formula cell by its
    /// program on dual numbers, a solve block's unknowns by its implicit
    /// derivatives; NaN where no derivative is known.
    fn implicit_pass(&self, ranges: &Ranges, slopes: &[BlockSlopes<'_>], index: usize) -> Vec<f64> {
        let followed = &ranges.derivatives[index];
        let mut values: Vec<Dual<f64>> = (0..ranges.programs.len())
            .map(|id| Dual {
                value: self.scalar_si(id).unwrap_or(f64::NAN),
                derivative: f64::NAN,
            })
            .collect();
        let mut blocks = slopes.iter();
        let mut stack = Vec::with_capacity(16);
        for &node in self.node_order() {
            match &self.sheet.nodes[node] {
                Node::Cell(id) if ranges.supported[*id] => {
                    values[*id].derivative = followed[*id].derivative;
                }
                Node::Cell(id) => {
                    // A program folds a name it cannot take as an input
                    // (a vector) to a constant: no derivative reaches through it.
                    let unreached = self
                        .uses_of(*id)
                        .iter()
                        .any(|&used| values[used].derivative.is_nan());
                    let derivative = match &ranges.programs[*id] {
                        Some(program) if !unreached => {
                            program.run_with(&values, &mut stack).derivative
                        }
                        _ => f64::NAN,
                    };
                    let own = if *id == ranges.sources[index].cell {
                        1.0
                    } else {
                        0.0
                    };
                    values[*id].derivative = derivative + own;
                }
                Node::Solve { .. } => {
                    let Some((unknowns, Some(slopes))) = blocks.next() else {
                        continue;
                    };
                    for (&unknown, slopes) in unknowns.iter().zip(slopes) {
                        values[unknown].derivative = slopes
                            .iter()
                            .map(|&(cell, slope)| slope * values[cell].derivative)
                            .sum();
                    }
                }
                Node::Simulate { .. } => {}
            }
        }
        values.into_iter().map(|v| v.derivative).collect()
    }

    /// The cells `target` depends on (itself included), in evaluation order.
    fn cone(&self, ranges: &Ranges, target: RangeOf<'_>) -> Vec<CellId> {
        let mut seen = vec![false; ranges.programs.len()];
        let mut stack: Vec<CellId> = match target {
            RangeOf::Cell(id) => vec![id],
            RangeOf::Program(program, _) => program.inputs().map(|id| id as usize).collect(),
        };
        let mut cone = Vec::new();
        while let Some(id) = stack.pop() {
            if id >= seen.len() || seen[id] {
                continue;
            }
            seen[id] = true;
            cone.push(id);
            stack.extend(self.uses_of(id));
        }
        cone.retain(|&id| ranges.position[id] != usize::MAX);
        cone.sort_unstable_by_key(|&id| ranges.position[id]);
        cone
    }

    /// The worst case of a check whose sides have ranges.
    pub(super) fn worst_case(
        &self,
        comparison: Comparison,
        lhs: CellRange,
        rhs: CellRange,
    ) -> CheckRange {
        let (a, b, passes) = match comparison {
            Comparison::AtMost => (lhs.high, rhs.low, lhs.high <= rhs.low),
            Comparison::Below => (lhs.high, rhs.low, lhs.high < rhs.low),
            Comparison::AtLeast => (rhs.high, lhs.low, lhs.low >= rhs.high),
            Comparison::Above => (rhs.high, lhs.low, lhs.low > rhs.high),
        };
        let method =
            if lhs.method == RangeMethod::WorstCorners && rhs.method == RangeMethod::WorstCorners {
                RangeMethod::WorstCorners
            } else {
                RangeMethod::Guaranteed
            };
        CheckRange {
            method,
            worst_utilization: (b != 0.0 && a != 0.0)
                .then(|| a / b)
                .filter(|u| u.is_finite()),
            passes,
            lhs,
            rhs,
        }
    }
}

/// What a range is asked for: a cell, or an expression compiled over cells.
#[derive(Clone, Copy)]
pub(super) enum RangeOf<'p> {
    /// A cell.
    Cell(CellId),
    /// An expression (a check's side) and its nominal value.
    Program(&'p Program, f64),
}

impl RangeOf<'_> {
    fn value(self, pass: &[Interval]) -> Interval {
        match self {
            RangeOf::Cell(id) => pass[id],
            RangeOf::Program(program, _) => program.run(pass),
        }
    }

    fn dual(self, pass: &[Dual<f64>]) -> Dual<f64> {
        match self {
            RangeOf::Cell(id) => pass[id],
            RangeOf::Program(program, _) => program.run(pass),
        }
    }

    fn dual_interval(self, pass: &[Dual<Interval>]) -> Dual<Interval> {
        match self {
            RangeOf::Cell(id) => pass[id],
            RangeOf::Program(program, _) => program.run(pass),
        }
    }

    /// The test of a piecewise formula the box straddles on the way to it.
    pub(super) fn straddled(self, ranges: &Ranges) -> Option<Span> {
        match self {
            RangeOf::Cell(id) => ranges.straddles.get(id).copied().flatten(),
            RangeOf::Program(program, _) => program.straddled_test(&ranges.boxed).or_else(|| {
                program
                    .inputs()
                    .find_map(|id| ranges.straddles.get(id as usize).copied().flatten())
            }),
        }
    }

    fn nominal(self, evaluator: &Evaluator<'_>, _ranges: &Ranges) -> Option<f64> {
        match self {
            RangeOf::Cell(id) => evaluator.values[id]
                .and_then(|v: Value| v.scalar())
                .map(|q| q.si),
            RangeOf::Program(_, nominal) => Some(nominal),
        }
    }
}

impl Ranges {
    /// Whether the program of an expression over cells can be ranged: every
    /// cell it reads is supported.
    pub(super) fn supports(&self, program: &Program) -> bool {
        program
            .inputs()
            .all(|id| self.supported.get(id as usize).copied().unwrap_or(false))
    }
}
