//! What a simulate block is checked for before it runs: names, times,
//! starting values, rates and tolerances with their units, and the
//! diagnostics of a run that stops at its start or fails.

use super::*;

impl<'a> Evaluator<'a> {
    /// The run's own time and states may appear in its rates, conditions,
    /// table columns and plot, but not in what is fixed before it runs.
    pub(super) fn refuse_run_names(
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
    pub(super) fn time_value(&self, expr: &Expr, what: &str) -> Result<f64, Box<Diagnostic>> {
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
    pub(super) fn written_unit(&self, expr: &Expr) -> Option<DisplayUnit> {
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
    pub(super) fn initial_expr<'b>(
        &self,
        block: &'b SimulateBlock,
        index: usize,
    ) -> Option<&'b Expr> {
        let name = &block.states.get(index)?.name.text;
        block
            .initial_values
            .iter()
            .find(|initial| initial.name.text == name)
            .map(|initial| &initial.value)
    }

    /// Every state's starting value, checking there is exactly one per
    /// state and none for a name that is not a state.
    pub(super) fn initial_values(
        &self,
        block: &SimulateBlock,
    ) -> Result<Vec<Value>, Box<Diagnostic>> {
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
    pub(super) fn check_rate(
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
    pub(super) fn tolerances(
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

    /// The error for a stop that ends the run at its start: its condition
    /// holds there, or (strict and equal there) becomes true at once.
    pub(super) fn stop_at_start(&self, block: &SimulateBlock, event: usize) -> Diagnostic {
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
                crate::eval::comparison_holds(condition.comparison, a.si, b.si)
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

    pub(super) fn failure_diagnostic(
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
            Failure::StepTooSmall { t, step } => {
                let diagnostic = Diagnostic::error(
                    Code::IntegrationFailed,
                    block.head,
                    format!(
                        "the step size fell to {} s at t = {}: the solution changes faster there than time can be resolved",
                        crate::units::format_significant(step, 3),
                        at(t)
                    ),
                );
                match piecewise_test_in_rates(block) {
                    // A rate that switches branch jumps: no step size resolves it.
                    Some(test) => diagnostic
                        .with_label(test, "a piecewise rate: where this test changes, the rate jumps")
                        .with_help("a rate that switches branch during the run jumps, and the error control cannot step over a jump: stop the run where the test changes (`stop when …`) and start a second run from there, or keep the test on one side for the whole run"),
                    None => diagnostic.with_help("a state may be growing without bound, or a rate may jump; check the rates near that time, or stop the run before it with `stop when …`"),
                }
            }
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
}

/// The test of the first piecewise formula in the block's rates, if any.
fn piecewise_test_in_rates(block: &SimulateBlock) -> Option<crate::base::Span> {
    let mut found = None;
    for state in &block.states {
        state.rate.walk(&mut |node| {
            if let crate::syntax::ast::ExprKind::Conditional(conditional) = &node.kind {
                found.get_or_insert(conditional.test.span);
            }
        });
    }
    found
}
