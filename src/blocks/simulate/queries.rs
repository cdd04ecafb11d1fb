//! Run queries of other cells (`v at stop`, `max of k * x`, `t at slow`):
//! the value of a formula at a point of a finished run, or its extremum.

use super::*;

/// Answers a run query from the sheet's finished runs; the core evaluator's
/// [`crate::eval::RunQueryAnswer`] once `blocks::evaluator` attaches it.
pub(crate) fn run_query(evaluator: &Evaluator<'_>, query: &RunQuery, span: Span) -> Evaluation {
    evaluator.answer_run_query(query, span)
}

impl<'a> Evaluator<'a> {
    /// Answers a run query: `v at stop`, `x at 2 s`, `t at slow`, `max of x`.
    fn answer_run_query(&self, query: &RunQuery, span: Span) -> Evaluation {
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
    pub(super) fn extremum_time(
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
