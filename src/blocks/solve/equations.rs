//! A solve block's equations as scalar equations over its unknowns: built
//! and checked for dimensions, compiled, and evaluated at a point (sides,
//! residuals, the size of their terms).

use super::*;

impl<'a> Evaluator<'a> {
    /// Splits the block's equations into scalar ones, checking that both
    /// sides of each agree in dimension and kind at the guess.
    pub(super) fn scalar_equations<'e>(
        &self,
        block: &'e SolveBlock,
        unknowns: &[CellId],
    ) -> Result<Vec<ScalarEquation<'e>>, Stop> {
        let mut scalars = Vec::new();
        for equation in &block.equations {
            let lhs = self.eval(&equation.lhs).map_err(Stop::Fail)?;
            let rhs = self.eval(&equation.rhs).map_err(Stop::Fail)?;
            if lhs.dimension() != rhs.dimension()
                || lhs.vector().is_some() != rhs.vector().is_some()
            {
                return Err(Stop::Fail(Box::new(self.unequal_sides(equation, lhs, rhs))));
            }
            let mut mentions = vec![false; unknowns.len()];
            for side in [&equation.lhs, &equation.rhs] {
                side.walk(&mut |node| {
                    if let ExprKind::Name(NameRef {
                        target: Target::Cell(id),
                        ..
                    }) = &node.kind
                        && let Some(index) = unknowns.iter().position(|u| u == id)
                    {
                        mentions[index] = true;
                    }
                });
            }
            let mut terms = equation.lhs.terms();
            terms.extend(equation.rhs.terms());
            match (lhs, rhs) {
                (Value::Vector(l), Value::Vector(r)) => {
                    for component in 0..usize::from(l.n_components.max(r.n_components)) {
                        scalars.push(ScalarEquation {
                            equation,
                            component: Some(component),
                            dimension: l.dimension,
                            terms: terms.clone(),
                            mentions: mentions.clone(),
                            program: None,
                        });
                    }
                }
                _ => scalars.push(ScalarEquation {
                    equation,
                    component: None,
                    dimension: lhs.dimension(),
                    terms,
                    mentions,
                    program: self.compile_difference(equation, unknowns)?,
                }),
            }
        }
        Ok(scalars)
    }

    /// The error for an equation whose sides differ in dimension or kind.
    pub(super) fn unequal_sides(&self, equation: &Equation, lhs: Value, rhs: Value) -> Diagnostic {
        let text = |expr: &Expr| expr.span.text(self.source);
        let mut diagnostic = mismatch(
            "equate",
            &Operand {
                span: equation.lhs.span,
                text: text(&equation.lhs),
                value: lhs,
            },
            &Operand {
                span: equation.rhs.span,
                text: text(&equation.rhs),
                value: rhs,
            },
            self.style,
        );
        if lhs.vector().is_some() != rhs.vector().is_some() {
            diagnostic.message =
                "one side of this equation is a vector and the other a scalar".to_string();
            diagnostic.code = Code::DimensionMismatch;
            diagnostic.help = Some(
                "write both sides as vectors, or equate one component (F.x = m * a)".to_string(),
            );
        }
        diagnostic
    }

    /// `lhs - rhs` of a scalar equation as one program over the unknowns.
    pub(super) fn compile_difference(
        &self,
        equation: &Equation,
        unknowns: &[CellId],
    ) -> Result<Option<Program>, Stop> {
        let input_of = |name: &NameRef| match name.target {
            Target::Cell(id) => unknowns.iter().position(|&u| u == id).and_then(|index| {
                let sample = self.values[id].and_then(|v| v.scalar())?;
                Some(Input {
                    index: u32::try_from(index).ok()?,
                    sample,
                })
            }),
            _ => None,
        };
        let difference = difference_of(equation);
        match self.compile(&difference, &input_of) {
            Ok(program) => Ok(Some(program)),
            Err(CompileError::NeedsVectors(_)) => Ok(None),
            Err(CompileError::Diagnostic(diagnostic)) => Err(Stop::Fail(diagnostic)),
        }
    }

    /// Left minus right of one scalar equation, in SI units, by the
    /// interpreter at the unknowns' current values.
    pub(super) fn side_difference(
        &self,
        equation: &ScalarEquation<'_>,
    ) -> Result<Quantity, Box<Diagnostic>> {
        let lhs = self.eval(&equation.equation.lhs)?;
        let rhs = self.eval(&equation.equation.rhs)?;
        Ok(Quantity::new(
            pick(lhs, equation.component) - pick(rhs, equation.component),
            equation.dimension,
        ))
    }

    /// Gives the unknowns the SI values `x`.
    pub(super) fn set_unknowns(&mut self, system: &System<'_, '_>, x: &DVector<f64>) {
        for (i, &id) in system.unknowns.iter().enumerate() {
            self.values[id] = Some(Value::Scalar(Quantity::new(x[i], system.dimensions[i])));
        }
    }

    /// Left minus right of every equation at `x` (SI); `None` if one
    /// cannot be evaluated there or is not finite.
    pub(super) fn residuals(
        &mut self,
        system: &System<'_, '_>,
        x: &DVector<f64>,
    ) -> Option<DVector<f64>> {
        self.set_unknowns(system, x);
        let mut residuals = DVector::zeros(system.equations.len());
        for (j, equation) in system.equations.iter().enumerate() {
            let value = match &equation.program {
                Some(program) => program.run(x.as_slice()),
                None => self.side_difference(equation).ok()?.si,
            };
            if !value.is_finite() {
                return None;
            }
            residuals[j] = value;
        }
        Some(residuals)
    }

    /// Each equation's scale at `x` (the unknowns already set there): the
    /// largest of its terms, or of the change its unknowns would make if
    /// each changed by its own size, whichever is more.
    pub(super) fn scales(
        &self,
        system: &System<'_, '_>,
        x: &DVector<f64>,
        jacobian: &DMatrix<f64>,
    ) -> Option<DVector<f64>> {
        let mut scales = DVector::zeros(system.equations.len());
        for (j, equation) in system.equations.iter().enumerate() {
            let mut largest: f64 = 0.0;
            for term in &equation.terms {
                let value = pick(self.eval(term).ok()?, equation.component);
                largest = largest.max(value.abs());
            }
            let moved: f64 = (0..x.len()).map(|i| (jacobian[(j, i)] * x[i]).abs()).sum();
            scales[j] = largest.max(moved);
            if !scales[j].is_finite() {
                return None;
            }
        }
        Some(scales)
    }
}
