//! What a run gives the sheet and the report: its table rows, the values
//! its outputs are computed from, and the plot's series.

use super::*;

impl<'a> Evaluator<'a> {
    /// The table's row times (SI), checked before the run. `None` stands for
    /// the default rows, which depend on where the run ends; the flag says
    /// whether the times were asked for one by one (and are kept, marked,
    /// when the run ends before them) or are a grid (cut at the run's end).
    pub(super) fn table_rows(
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
    pub(super) fn output_sources(
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
    pub(super) fn compile_over_run(
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

    /// The value of a source at (t, y): a state, or an expression probed.
    pub(super) fn source_value(
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
    pub(super) fn compile_sources<'s>(
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
    pub(super) fn fill_table(
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
    pub(super) fn plot_series(
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
}
