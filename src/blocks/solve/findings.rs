//! The diagnostics of a block that could not be solved: undefined at the
//! guess, not converged (with the closest point), singular (from the
//! singular vectors), each naming the unknowns.

use super::*;

impl<'a> Evaluator<'a> {
    /// The error for equations that cannot be evaluated at the guess.
    pub(super) fn undefined_at_guess(&self, block: &SolveBlock) -> Stop {
        Stop::Fail(Box::new(
            Diagnostic::error(
                Code::NoConvergence,
                block.head,
                "the equations cannot be evaluated at the starting guess",
            )
            .with_help(format!(
                "give each unknown a guess with `~` inside the range where its equations are defined ({})",
                self.unknown_names(block)
            )),
        ))
    }

    /// The error for a point that does not solve the equations, naming
    /// those furthest from holding and by how much.
    pub(super) fn not_converged(
        &mut self,
        block: &SolveBlock,
        system: &System<'_, '_>,
        at: &Root,
        residuals: &DVector<f64>,
    ) -> Stop {
        let mut worst: Vec<(f64, usize)> = scaled_residuals(residuals, &at.scales)
            .iter()
            .enumerate()
            .map(|(j, v)| (if v.is_nan() { f64::INFINITY } else { v.abs() }, j))
            .collect();
        worst.sort_by(|a, b| b.0.total_cmp(&a.0));
        let described: Vec<String> = worst
            .iter()
            .take(3)
            .map(|&(_, j)| {
                let equation = &system.equations[j];
                let off = self
                    .style
                    .show(Quantity::new(residuals[j], equation.dimension));
                format!("`{}` (off by {off})", equation_text(self.source, equation))
            })
            .collect();
        let mut diagnostic = Diagnostic::error(
            Code::NoConvergence,
            block.head,
            format!(
                "no solution found for {}: at the closest point reached ({}) the equations furthest from holding are {}",
                self.unknown_names(block),
                self.unknowns_at(block, system, &at.x),
                described.join(", ")
            ),
        )
        .with_help("give better guesses with `~`, check the equations' signs, or check that a solution exists");
        for &(_, j) in worst.iter().take(3) {
            diagnostic = diagnostic.with_label(system.equations[j].equation.span, "does not hold");
        }
        self.set_unknowns(system, &at.x);
        Stop::Fail(Box::new(diagnostic))
    }

    /// `T = 546 N, θ = 23.68 deg`: the unknowns at `x`, each in its own
    /// unit (a component at the rounding floor of its size reads as zero).
    pub(super) fn unknowns_at(
        &self,
        block: &SolveBlock,
        system: &System<'_, '_>,
        x: &DVector<f64>,
    ) -> String {
        let size = column_sizes(system, x);
        block
            .unknowns
            .iter()
            .enumerate()
            .map(|(i, u)| {
                let value = if x[i].abs() < 1e-9 * size[i] {
                    0.0
                } else {
                    x[i]
                };
                format!(
                    "{} = {}",
                    u.name.text,
                    self.style
                        .show_in(value, u.unit.span.text(self.source), system.units[i])
                )
            })
            .collect::<Vec<_>>()
            .join(", ")
    }

    pub(super) fn unknown_names(&self, block: &SolveBlock) -> String {
        block
            .unknowns
            .iter()
            .map(|u| format!("`{}`", u.name.text))
            .collect::<Vec<_>>()
            .join(", ")
    }

    /// The diagnostic for a singular Jacobian, naming the unknowns and
    /// equations involved (the largest entries of the singular vectors).
    pub(super) fn singular_diagnostic(
        &self,
        block: &SolveBlock,
        equations: &[ScalarEquation<'_>],
        svd: &nalgebra::SVD<f64, nalgebra::Dyn, nalgebra::Dyn>,
    ) -> Diagnostic {
        let smallest = (0..svd.singular_values.len())
            .min_by(|&a, &b| svd.singular_values[a].total_cmp(&svd.singular_values[b]))
            .unwrap_or(0);
        let involved = |vector: Option<DVector<f64>>, count: usize| -> Vec<usize> {
            let Some(vector) = vector else {
                return Vec::new();
            };
            let biggest = vector.amax();
            (0..count)
                .filter(|&k| vector[k].abs() >= 0.1 * biggest)
                .collect()
        };
        let unknown_vector = svd.v_t.as_ref().map(|v_t| v_t.row(smallest).transpose());
        let equation_vector = svd.u.as_ref().map(|u| u.column(smallest).into_owned());
        let unknowns: Vec<String> = involved(unknown_vector, block.unknowns.len())
            .into_iter()
            .map(|k| format!("`{}`", block.unknowns[k].name.text))
            .collect();
        let involved_equations = involved(equation_vector, equations.len());
        let equation_list: Vec<String> = involved_equations
            .iter()
            .map(|&j| format!("`{}`", equation_text(self.source, &equations[j])))
            .collect();
        let mut diagnostic = Diagnostic::error(
            Code::SingularSystem,
            block.head,
            format!(
                "the equations do not fix {}: the Jacobian is singular (equations {} depend on each other, or these unknowns hardly affect them)",
                unknowns.join(", "),
                equation_list.join(", ")
            ),
        )
        .with_help("replace one of the dependent equations by an independent one, or give one of these unknowns a value");
        for &j in &involved_equations {
            diagnostic = diagnostic.with_label(equations[j].equation.span, "involved");
        }
        diagnostic
    }
}
