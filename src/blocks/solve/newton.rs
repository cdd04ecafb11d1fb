//! Newton's method with line search and a Levenberg–Marquardt fallback,
//! the Jacobian it steps with, the derivatives of the solution that
//! tolerances follow, and the search for other roots near the guess.

use super::*;

impl<'a> Evaluator<'a> {
    /// The exact Jacobian of the residuals (SI) at `x`, the unknowns already
    /// set there: each compiled equation run on dual numbers, a vector
    /// equation's component by central differences of the interpreter.
    pub(super) fn jacobian(
        &mut self,
        system: &System<'_, '_>,
        x: &DVector<f64>,
    ) -> Option<DMatrix<f64>> {
        let n = x.len();
        let mut jacobian = DMatrix::zeros(system.equations.len(), n);
        let mut duals: Vec<Dual<f64>> = x.iter().map(|&v| Dual::fixed(v)).collect();
        for (j, equation) in system.equations.iter().enumerate() {
            for i in (0..n).filter(|&i| equation.mentions[i]) {
                let slope = match &equation.program {
                    Some(program) => {
                        duals[i] = Dual::variable(x[i]);
                        let slope = program.run(&duals).derivative;
                        duals[i] = Dual::fixed(x[i]);
                        slope
                    }
                    None => self.central_difference(system, equation, x, i)?,
                };
                if !slope.is_finite() {
                    return None;
                }
                jacobian[(j, i)] = slope;
            }
        }
        Some(jacobian)
    }

    /// d(residual)/d(unknown `i`) of an interpreted equation, by a central
    /// difference of relative step 10⁻⁶ (truncation and rounding both near
    /// 10⁻¹⁰ of the slope).
    pub(super) fn central_difference(
        &mut self,
        system: &System<'_, '_>,
        equation: &ScalarEquation<'_>,
        x: &DVector<f64>,
        i: usize,
    ) -> Option<f64> {
        let h = 1e-6 * x[i].abs().max(system.units[i]);
        let mut at = |offset: f64| {
            let mut shifted = x.clone();
            shifted[i] += offset;
            self.set_unknowns(system, &shifted);
            self.side_difference(equation).ok().map(|q| q.si)
        };
        let (forward, backward) = (at(h), at(-h));
        self.set_unknowns(system, x);
        Some((forward? - backward?) / (2.0 * h))
    }

    /// The point `x` measured: Jacobian, scales and residuals.
    pub(super) fn measure(
        &mut self,
        system: &System<'_, '_>,
        x: &DVector<f64>,
        iterations: usize,
    ) -> Option<(Root, DVector<f64>)> {
        let residuals = self.residuals(system, x)?;
        let jacobian = self.jacobian(system, x)?;
        let scales = self.scales(system, x, &jacobian)?;
        Some((
            Root {
                x: x.clone(),
                iterations,
                jacobian,
                scales,
            },
            residuals,
        ))
    }

    /// Newton's method from `start` with a backtracking line search, falling
    /// back to Levenberg–Marquardt steps when the Newton step is unusable.
    /// The equations are scaled afresh at every point it reaches. Gives the
    /// root reached and the Jacobian at the start (which tells a linear
    /// system: the same at both).
    pub(super) fn newton(
        &mut self,
        system: &System<'_, '_>,
        start: DVector<f64>,
    ) -> Result<(Root, DMatrix<f64>), Miss> {
        let mut x = start;
        let mut damping = 1e-3;
        let mut reached: Option<(Root, DVector<f64>)> = None;
        let mut start_jacobian: Option<DMatrix<f64>> = None;
        let solved = |root: Root, start_jacobian: Option<DMatrix<f64>>| {
            let start_jacobian = start_jacobian.unwrap_or_else(|| root.jacobian.clone());
            (root, start_jacobian)
        };
        for iteration in 0..=MAX_ITERATIONS {
            let Some((root, residuals)) = self.measure(system, &x, iteration) else {
                return Err(
                    reached.map_or(Miss::Undefined, |missed| Miss::NotSolved(Box::new(missed)))
                );
            };
            let r = scaled_residuals(&residuals, &root.scales);
            if r.amax() <= TOLERANCE {
                return Ok(solved(root, start_jacobian));
            }
            if iteration == MAX_ITERATIONS {
                return Err(Miss::NotSolved(Box::new((root, residuals))));
            }
            if iteration == 0 {
                start_jacobian = Some(root.jacobian.clone());
            }
            let columns = column_sizes(system, &root.x);
            let jacobian = scaled_jacobian(system, &root);
            let merit = r.norm_squared();
            let scaled_at = |this: &mut Self, step: &DVector<f64>| {
                let candidate = &x + step.component_mul(&columns);
                let next = this.residuals(system, &candidate)?;
                Some((
                    candidate,
                    scaled_residuals(&next, &root.scales).norm_squared(),
                ))
            };
            let mut accepted = None;
            if let Some(step) = jacobian
                .clone()
                .lu()
                .solve(&(-&r))
                .filter(|s| s.iter().all(|v| v.is_finite()))
            {
                let mut t = 1.0;
                while t > 1e-10 {
                    if let Some((candidate, next)) = scaled_at(self, &(&step * t))
                        && next <= (1.0 - 1e-4 * t) * merit
                    {
                        accepted = Some(candidate);
                        break;
                    }
                    t *= 0.5;
                }
            }
            if accepted.is_none() {
                // Levenberg–Marquardt: (JᵀJ + λ·diag(JᵀJ)) d = −Jᵀr, λ raised until the merit falls.
                let normal = jacobian.transpose() * &jacobian;
                let gradient = jacobian.transpose() * &r;
                while damping < 1e12 && accepted.is_none() {
                    let mut damped = normal.clone();
                    for k in 0..damped.nrows() {
                        damped[(k, k)] += damping * normal[(k, k)].max(1e-12);
                    }
                    if let Some(step) = damped.lu().solve(&(-&gradient))
                        && let Some((candidate, next)) = scaled_at(self, &step)
                        && next < merit
                    {
                        accepted = Some(candidate);
                        damping = (damping / 10.0).max(1e-12);
                        break;
                    }
                    damping *= 10.0;
                }
            }
            match accepted {
                Some(next) => x = next,
                None if r.amax() <= VERIFIED => return Ok(solved(root, start_jacobian)),
                None => return Err(Miss::NotSolved(Box::new((root, residuals)))),
            }
            reached = Some((root, residuals));
        }
        Err(reached.map_or(Miss::Undefined, |missed| Miss::NotSolved(Box::new(missed))))
    }

    /// The implicit derivatives of a solved block's unknowns: for each
    /// unknown, ∂x/∂c for every other cell c its equations name, from
    /// dx/dc = −J⁻¹ ∂F/∂c with both Jacobians exact (the equations compiled
    /// over every cell they name and run on dual numbers) at the solution.
    /// `None` for a block with vector equations, or one whose Jacobian
    /// cannot be inverted there.
    pub(crate) fn solve_slopes(
        &self,
        statement: usize,
        unknowns: &[CellId],
    ) -> Option<Vec<Vec<(CellId, f64)>>> {
        let block = self.sheet.solve_block(statement)?;
        if block.equations.len() != unknowns.len() {
            return None;
        }
        let mut programs = Vec::with_capacity(block.equations.len());
        for equation in &block.equations {
            let difference = difference_of(equation);
            programs.push(
                self.compile(&difference, &|name| self.input_for(name))
                    .ok()?,
            );
        }
        let mut outside: Vec<CellId> = programs
            .iter()
            .flat_map(|program| program.inputs().map(|id| id as usize))
            .filter(|id| !unknowns.contains(id))
            .collect();
        outside.sort_unstable();
        outside.dedup();
        let values: Vec<f64> = (0..self.sheet.cells.len())
            .map(|id| self.scalar_si(id).unwrap_or(f64::NAN))
            .collect();
        let mut duals: Vec<Dual<f64>> = values.iter().map(|&v| Dual::fixed(v)).collect();
        let mut slope = |program: &Program, cell: CellId| {
            duals[cell] = Dual::variable(values[cell]);
            let derivative = program.run(&duals).derivative;
            duals[cell] = Dual::fixed(values[cell]);
            derivative
        };
        let n = unknowns.len();
        let mut jacobian = DMatrix::zeros(n, n);
        let mut forcing = DMatrix::zeros(n, outside.len());
        for (j, program) in programs.iter().enumerate() {
            for (i, &unknown) in unknowns.iter().enumerate() {
                jacobian[(j, i)] = slope(program, unknown);
            }
            for (k, &cell) in outside.iter().enumerate() {
                forcing[(j, k)] = -slope(program, cell);
            }
        }
        let solved = jacobian.lu().solve(&forcing)?;
        if solved.iter().any(|v| !v.is_finite()) {
            return None;
        }
        Some(
            (0..n)
                .map(|i| {
                    outside
                        .iter()
                        .enumerate()
                        .map(|(k, &cell)| (cell, solved[(i, k)]))
                        .collect()
                })
                .collect(),
        )
    }

    /// Starts Newton again from the guess scaled by 0.1, 0.5, 2 and 10 (same
    /// signs): a different point found there that is verified to solve the
    /// equations is reported as a warning.
    pub(super) fn look_for_other_roots(
        &mut self,
        system: &System<'_, '_>,
        x0: &DVector<f64>,
        root: &Root,
        condition: f64,
        block: &SolveBlock,
    ) {
        let size = column_sizes(system, &root.x);
        for factor in [0.1, 0.5, 2.0, 10.0] {
            let Ok((other, _)) = self.newton(system, x0 * factor) else {
                continue;
            };
            if !distinct(system, &root.x, &other.x, &size, condition)
                || !self.solves(system, &other.x)
            {
                continue;
            }
            self.diagnostics.push(
                Diagnostic::new(
                    Severity::Warning,
                    Code::SeveralRoots,
                    block.head,
                    format!(
                        "these equations have more than one solution near the guess: heft took {} (reached from the guess), but {} also solves them",
                        self.unknowns_at(block, system, &root.x),
                        self.unknowns_at(block, system, &other.x)
                    ),
                )
                .with_help("move the guesses (`~`) closer to the solution you mean, so that no other lies within a factor of 10 of them"),
            );
            return;
        }
    }
}
