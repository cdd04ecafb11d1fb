//! Evaluated sheet + review state → [`Document`]. Reads the `Evaluated`
//! model (cell views, checks, outline, diagnostics), the formula terms that
//! `eval` lends, and the `review` state; never the syntax tree.

use std::collections::{BTreeSet, HashMap};

use super::math::{self, Names};
use super::model::{
    Block, Callout, CellBlock, CheckBlock, Document, Figure, MarkLine, Piece, Rich, Section, Table,
    TitleBlock, Tone,
};
use super::svg;
use super::units_used::collect_units;
use crate::base::Span;
use crate::eval::{
    CellResult, CellStatus, CheckResult, CheckStatus, Evaluated, OutlineItem, SolveStatus,
};
use crate::review::{Changes, Mark, MarkTarget, Review, SignOffState};
use crate::units::{catalog, format_significant};

/// Builds the report of an evaluated sheet.
pub fn document(evaluated: &Evaluated, review: &Review) -> Document {
    let builder = Builder::new(evaluated, review);
    let mut sections = vec![builder.summary()];
    sections.extend(super::used::used_sheets_section(evaluated));
    sections.extend(builder.cases_section());
    sections.extend(builder.tolerances_section());
    sections.extend(super::tables::readings_section(evaluated));
    sections.extend(builder.body());
    sections.push(builder.review_appendix());
    sections.push(builder.units_appendix());
    if !evaluated.diagnostics.is_empty() {
        sections.push(builder.findings_appendix());
    }
    Document {
        title_block: builder.title_block(),
        sections,
    }
}

struct Builder<'a> {
    evaluated: &'a Evaluated,
    review: &'a Review,
    marks: HashMap<MarkTarget, Vec<&'a Mark>>,
    sig_figs: u32,
}

impl<'a> Builder<'a> {
    fn new(evaluated: &'a Evaluated, review: &'a Review) -> Self {
        let mut marks: HashMap<MarkTarget, Vec<&Mark>> = HashMap::new();
        for mark in &review.marks {
            marks.entry(mark.target).or_default().push(mark);
        }
        Builder {
            evaluated,
            review,
            marks,
            sig_figs: evaluated.header().sig_figs,
        }
    }

    fn title_block(&self) -> TitleBlock {
        let header = self.evaluated.header();
        let mut fields = Vec::new();
        let mut field = |label: &str, value: &Option<String>| {
            if let Some(value) = value {
                fields.push((label.to_string(), value.clone()));
            }
        };
        field("Project", &header.project);
        field("Revision", &header.revision);
        field("Date", &header.date);
        field("Prepared by", &header.prepared_by);
        field("Checked by", &header.checked_by);
        let signoff = self.review.signoff().map(|signoff| {
            let (tone, state) = match &signoff.state {
                SignOffState::Current => (
                    Tone::Good,
                    "current: the sheet is the one that was signed".to_string(),
                ),
                SignOffState::Stale(changes) => {
                    (Tone::Warning, format!("STALE: {}", stale_summary(changes)))
                }
            };
            Callout {
                tone,
                text: Rich::text(format!(
                    "Signed off by {} on {} (line {}) — {state}",
                    signoff.by, signoff.on, signoff.line
                )),
            }
        });
        if signoff.is_none() {
            fields.push(("Sign-off".to_string(), "not signed off".to_string()));
        }
        let n_open = self.review.open_marks().count();
        if n_open > 0 || !self.review.marks.is_empty() {
            fields.push((
                "Review marks".to_string(),
                format!("{} open of {}", n_open, self.review.marks.len()),
            ));
        }
        TitleBlock {
            title: header
                .title
                .clone()
                .unwrap_or_else(|| "(untitled sheet)".to_string()),
            revision: header.revision.clone(),
            fields,
            fingerprint: self.review.fingerprint.clone(),
            summary: self.summary_line(),
            clean: self.evaluated.is_clean(),
            signoff,
            cautions: vec![crate::CAUTION.to_string()],
        }
    }

    fn summary_line(&self) -> String {
        crate::present::summary_line(&self.evaluated.summary())
    }

    /// Every check at a glance, before the calculation.
    fn summary(&self) -> Section {
        let mut blocks = Vec::new();
        if !self.evaluated.checks.is_empty() {
            let rows = self
                .evaluated
                .checks
                .iter()
                .enumerate()
                .map(|(index, check)| {
                    let block = self.check_block(index, check);
                    vec![
                        Rich::text(block.label.clone().unwrap_or_default()),
                        block.expression,
                        block.substituted.unwrap_or_default(),
                        Rich::text(block.utilization.unwrap_or_default()),
                        Rich(vec![Piece::Strong(block.verdict)]),
                    ]
                })
                .collect();
            blocks.push(Block::Table(Table {
                columns: ["Check", "Requirement", "Values", "Utilization", "Result"]
                    .map(String::from)
                    .to_vec(),
                rows,
            }));
        } else {
            blocks.push(Block::Paragraph(Rich::text("The sheet has no checks.")));
        }
        if let Some(marks) = self.marks.get(&MarkTarget::Sheet) {
            blocks.push(Block::Marks(marks.iter().map(|m| mark_line(m)).collect()));
        }
        Section {
            title: Some(Rich::text("Summary of checks")),
            level: 1,
            appendix: false,
            blocks,
        }
    }

    /// The sheet in file order, a section per heading.
    fn body(&self) -> Vec<Section> {
        let evaluated = self.evaluated;
        let mut sections = Vec::new();
        let mut current = Section {
            title: None,
            level: 1,
            appendix: false,
            blocks: Vec::new(),
        };
        for (position, item) in evaluated.outline.iter().enumerate() {
            match item {
                OutlineItem::Heading { level, text } => {
                    let finished = std::mem::replace(
                        &mut current,
                        Section {
                            title: Some(Rich::text(text.clone())),
                            level: (*level).clamp(1, 2),
                            appendix: false,
                            blocks: Vec::new(),
                        },
                    );
                    if finished.title.is_some() || !finished.blocks.is_empty() {
                        sections.push(finished);
                    }
                    if let Some(marks) = self.marks.get(&MarkTarget::Heading(position)) {
                        current
                            .blocks
                            .push(Block::Marks(marks.iter().map(|m| mark_line(m)).collect()));
                    }
                }
                OutlineItem::Note { text } => current.blocks.push(Block::Note(Rich::text(text))),
                OutlineItem::Cell(id) => {
                    current.blocks.push(Block::Cell(Box::new(
                        self.cell_block(evaluated.cell_at(*id)),
                    )));
                    if let Some(body) = evaluated
                        .free_bodies()
                        .into_iter()
                        .find(|body| body.cell == *id)
                    {
                        current
                            .blocks
                            .push(Block::Figure(svg::free_body(&self.free_body(&body))));
                    }
                }
                OutlineItem::Check(index) => current.blocks.push(Block::Check(Box::new(
                    self.check_block(*index, &evaluated.checks[*index]),
                ))),
                OutlineItem::Solve(index) => current.blocks.extend(self.solve_blocks(*index)),
                OutlineItem::Simulate(index) => current.blocks.extend(self.run_blocks(*index)),
                OutlineItem::Members(report) => current
                    .blocks
                    .extend(super::parts::members_blocks(evaluated, report)),
                OutlineItem::Sweep(index) => current
                    .blocks
                    .extend(super::sweep::sweep_blocks(evaluated, *index)),
                OutlineItem::Table(index) => current
                    .blocks
                    .extend(super::tables::table_blocks(evaluated, *index)),
                // The load cases are tabulated in their own section.
                OutlineItem::Case(_) => {}
                OutlineItem::Use(index) => {
                    current
                        .blocks
                        .extend(super::used::use_line(evaluated, *index));
                }
                OutlineItem::Invalid { span } => current.blocks.push(Block::Unparsed {
                    line: evaluated.lines.line_of(span.start()) + 1,
                    text: span.text(evaluated.source()).to_string(),
                }),
            }
        }
        if current.title.is_some() || !current.blocks.is_empty() {
            sections.push(current);
        }
        sections
    }

    /// The load cases: every chosen result and check per case, the
    /// governing case of each check marked.
    fn cases_section(&self) -> Option<Section> {
        let evaluated = self.evaluated;
        if evaluated.cases.is_empty() {
            return None;
        }
        let sig_figs = evaluated.header().sig_figs;
        let mut columns = vec!["".to_string(), "as written".to_string()];
        columns.extend(evaluated.cases.iter().map(|case| case.name.clone()));
        let mut rows = Vec::new();
        for (position, &id) in evaluated.case_results.iter().enumerate() {
            let cell = evaluated.cell_at(id);
            let shown = |value: Option<crate::units::Value>| {
                value.map_or("—".to_string(), |v| {
                    crate::eval::format_value(v, cell.display, sig_figs)
                })
            };
            let mut row = vec![math::name(cell.name), Rich::text(shown(cell.any_value()))];
            row.extend(
                evaluated.cases.iter().map(|case| {
                    Rich::text(shown(case.results.get(position).and_then(|r| r.value)))
                }),
            );
            rows.push(row);
        }
        for (index, check) in evaluated.checks.iter().enumerate() {
            let governing = evaluated.governing.get(index).copied().flatten();
            let entry = |status: CheckStatus, utilization: Option<f64>, governs: bool| {
                let number = utilization.map_or("—".to_string(), crate::units::percent);
                let verdict = match status {
                    CheckStatus::Passed => "pass",
                    CheckStatus::Failed => "FAIL",
                    CheckStatus::Unknown => "unknown",
                    _ => "not evaluated",
                };
                let text = format!(
                    "{number} {verdict}{}",
                    if governs { " (governs)" } else { "" }
                );
                if governs {
                    Rich(vec![Piece::Strong(text)])
                } else {
                    Rich::text(text)
                }
            };
            let label = check.label.clone().unwrap_or_else(|| {
                format!(
                    "{} {} {}",
                    check.lhs_text,
                    check.comparison.symbol(),
                    check.rhs_text
                )
            });
            let mut row = vec![
                Rich::text(label),
                entry(
                    check.as_written_status(),
                    check.governing_utilization(),
                    governing.is_none(),
                ),
            ];
            row.extend(
                evaluated
                    .cases
                    .iter()
                    .enumerate()
                    .map(|(case_index, case)| match case.checks.get(index) {
                        Some(c) => entry(
                            c.status,
                            c.governing_utilization(),
                            governing == Some(case_index),
                        ),
                        None => Rich::text("—"),
                    }),
            );
            rows.push(row);
        }
        let mut blocks: Vec<Block> = evaluated
            .cases
            .iter()
            .map(|case| {
                Block::Paragraph(Rich::text(format!(
                    "{}: {}",
                    case.name,
                    case.label.as_deref().unwrap_or("")
                )))
            })
            .collect();
        blocks.push(Block::Table(Table { columns, rows }));
        if !evaluated.ranges.is_empty() {
            blocks.push(Block::Paragraph(Rich::text(
                "Utilizations are at the worst case of the tolerances.",
            )));
        }
        Some(Section {
            title: Some(Rich::text("Load cases")),
            level: 1,
            appendix: false,
            blocks,
        })
    }

    /// Ranges of the chosen results over the tolerances, with the inputs
    /// that matter most.
    fn tolerances_section(&self) -> Option<Section> {
        let evaluated = self.evaluated;
        if evaluated.ranges.is_empty() {
            return None;
        }
        let sig_figs = evaluated.header().sig_figs;
        let mut rows = Vec::new();
        for &id in &evaluated.case_results {
            let Some(range) = evaluated.ranges.get(id).and_then(Option::as_ref) else {
                continue;
            };
            let cell = evaluated.cell_at(id);
            let shown = |si: f64| {
                format!(
                    "{} {}",
                    format_significant(cell.display.value_of(si), sig_figs),
                    cell.display.text
                )
            };
            let ranking = range
                .sensitivities
                .iter()
                .filter(|s| s.share > 0.0)
                .map(|s| {
                    format!(
                        "{} {} %",
                        evaluated.cell_at(s.input).name,
                        format_significant(s.share * 100.0, 3)
                    )
                })
                .collect::<Vec<_>>()
                .join(", ");
            let (low, high) = range.shown_bounds();
            rows.push(vec![
                math::name(cell.name),
                Rich::text(format!(
                    "{} to {} ({})",
                    shown(low),
                    shown(high),
                    range.method.describe()
                )),
                Rich::text(range.first_order.map_or_else(
                    || "—".to_string(),
                    |(low, high)| format!("{} to {}", shown(low), shown(high)),
                )),
                Rich::text(ranking),
            ]);
        }
        Some(Section {
            title: Some(Rich::text("Tolerances and sensitivity")),
            level: 1,
            appendix: false,
            blocks: vec![Block::Table(Table {
                columns: [
                    "Result",
                    "Range",
                    "First-order range",
                    "Share of the range by input",
                ]
                .map(String::from)
                .to_vec(),
                rows,
            })],
        })
    }

    /// A simulate block: what the run did, its table and its plot.
    fn run_blocks(&self, index: usize) -> Vec<Block> {
        let evaluated = self.evaluated;
        let Some(run) = evaluated.runs.get(index) else {
            return Vec::new();
        };
        let sig_figs = evaluated.header().sig_figs;
        let time = |t: f64| {
            crate::eval::format_value(
                crate::units::Value::Scalar(crate::units::Quantity::new(
                    t,
                    crate::units::Dimension::TIME,
                )),
                &run.time_display,
                sig_figs,
            )
        };
        let ended = match (run.status, run.final_time()) {
            (crate::eval::RunStatus::Stopped, Some(end)) => {
                let by = run
                    .stopped_by
                    .and_then(|event| run.events.get(event))
                    .map(|event| event.label().to_string())
                    .unwrap_or_default();
                format!("stopped at {} ({by})", time(end))
            }
            (crate::eval::RunStatus::Reached, Some(end)) => {
                format!("reached its end at {}", time(end))
            }
            (crate::eval::RunStatus::Failed, _) => "failed: see the finding".to_string(),
            _ => "not run: see the findings".to_string(),
        };
        let mut blocks = vec![Block::Paragraph(Rich::text(format!(
            "{}: integrated with Dormand–Prince 5(4), {} steps, relative tolerance {}; the run {ended}.",
            run.title,
            run.stats.accepted,
            format_significant(run.relative_tolerance, 2)
        )))];
        if !run.rows.is_empty() {
            let mut columns = vec![format!(
                "{} [{}]",
                evaluated.cell_at(run.time).name,
                run.time_display.text
            )];
            columns.extend(run.columns.iter().map(|column| {
                if column.display.text.is_empty() {
                    column.label.clone()
                } else {
                    format!("{} [{}]", column.label, column.display.text)
                }
            }));
            let rows = run
                .rows
                .iter()
                .map(|row| {
                    let mut cells = vec![Rich::text(format_significant(
                        run.time_display.value_of(row.time),
                        sig_figs,
                    ))];
                    cells.extend(run.columns.iter().zip(&row.values).map(|(column, value)| {
                        Rich::text(value.map_or("—".to_string(), |v| match v {
                            crate::units::Value::Scalar(q) => {
                                format_significant(column.display.value_of(q.si), sig_figs)
                            }
                            vector => crate::eval::format_value(vector, &column.display, sig_figs),
                        }))
                    }));
                    cells
                })
                .collect();
            blocks.push(Block::Table(Table { columns, rows }));
        }
        if let Some(svg) = crate::plot::run_svg(evaluated, index) {
            blocks.push(Block::Figure(Figure {
                svg,
                caption: format!("Run of {}", run.title),
            }));
        }
        blocks
    }

    /// A solve block: its equations with their residuals, then the cells it
    /// gives.
    fn solve_blocks(&self, index: usize) -> Vec<Block> {
        let evaluated = self.evaluated;
        let report = &evaluated.solves[index];
        let sig_figs = evaluated.header().sig_figs;
        let rows = report
            .equations
            .iter()
            .map(|equation| {
                let residual = equation.residual.map_or_else(
                    || "—".to_string(),
                    |r| {
                        crate::eval::format_value(
                            crate::units::Value::Scalar(r),
                            &equation.display,
                            sig_figs,
                        )
                    },
                );
                vec![Rich::text(equation.text.clone()), Rich::text(residual)]
            })
            .collect();
        let how = match report.status {
            SolveStatus::Solved => format!(
                "Solved by {} in {} iteration{}{}.",
                if report.linear {
                    "a linear solve"
                } else {
                    "Newton's method"
                },
                report.iterations,
                if report.iterations == 1 { "" } else { "s" },
                report
                    .condition
                    .map(|c| format!(
                        ", condition number {}",
                        crate::units::format_significant(c, 3)
                    ))
                    .unwrap_or_default()
            ),
            SolveStatus::Failed => "Not solved: see the finding.".to_string(),
            SolveStatus::NotRun => "Not run: see the findings.".to_string(),
        };
        let mut blocks = vec![
            Block::Paragraph(Rich::text(format!(
                "Solve for {}. {how}",
                report
                    .unknowns
                    .iter()
                    .map(|&id| evaluated.cell_at(id).name)
                    .collect::<Vec<_>>()
                    .join(", ")
            ))),
            Block::Table(Table {
                columns: vec!["Equation".to_string(), "Residual".to_string()],
                rows,
            }),
        ];
        blocks.extend(
            report
                .unknowns
                .iter()
                .map(|&id| Block::Cell(Box::new(self.cell_block(evaluated.cell_at(id))))),
        );
        blocks
    }

    /// A free body's forces as arrows in the x-y plane, in its display unit.
    fn free_body(&self, body: &crate::eval::FreeBody<'_>) -> svg::FreeBody {
        let evaluated = self.evaluated;
        let sig_figs = evaluated.header().sig_figs;
        // The body's unit; a body with no value (a force in error) has
        // none, so its forces are shown in the sheet's unit for a force.
        let mut display = evaluated.cell_at(body.cell).display.clone();
        if display.text.is_empty() {
            let largest = body
                .forces
                .iter()
                .filter_map(|(_, force)| force.map(|f| f.magnitude().si))
                .fold(0.0, f64::max);
            display = crate::units::pick_unit(
                crate::units::Dimension::FORCE,
                largest,
                evaluated.header().display,
            );
        }
        let arrow = |label: &str, vector: crate::units::VectorQuantity| svg::ForceArrow {
            label: label.to_string(),
            magnitude: crate::eval::format_value(
                crate::units::Value::Scalar(vector.magnitude()),
                &display,
                sig_figs,
            ),
            x: vector.si[0],
            y: vector.si[1],
        };
        svg::FreeBody {
            body: body.name.to_string(),
            forces: body
                .forces
                .iter()
                .filter_map(|(name, vector)| vector.map(|v| arrow(name, v)))
                .collect(),
            resultant: body.resultant.map(|v| arrow("ΣF", v)),
        }
    }

    fn cell_block(&self, cell: CellResult<'_>) -> CellBlock {
        let term = self.evaluated.formula_term(cell.id);
        let formula = math::formula(&term, Names::AsWritten);
        let substituted = (!cell.is_input && math::has_values(&term))
            .then(|| math::formula(&term, Names::Substituted));
        let (result, tone) = match cell.status {
            CellStatus::Ok => match self.evaluated.shown_value(cell.id) {
                Some(value) => {
                    let mut result = Rich(vec![Piece::Strong(math::shown(&value))]);
                    if let Some(range) = self
                        .evaluated
                        .ranges
                        .get(cell.id)
                        .and_then(Option::as_ref)
                        .filter(|r| r.high > r.low)
                    {
                        let sig_figs = self.evaluated.header().sig_figs;
                        let bound =
                            |si: f64| format_significant(cell.display.value_of(si), sig_figs);
                        result.push_text(&format!(
                            " (range {} to {})",
                            bound(range.low),
                            bound(range.high)
                        ));
                    }
                    (result, Tone::Good)
                }
                None => (Rich::text("no value"), Tone::Bad),
            },
            CellStatus::Error => (Rich::text("error: see the finding"), Tone::Bad),
            CellStatus::Blocked { by } => {
                let mut text = Rich::text("blocked by ");
                text.extend(math::name(self.evaluated.cell_at(by).name));
                (text, Tone::Warning)
            }
        };
        CellBlock {
            name: math::name(cell.name),
            line: cell.line,
            description: cell.description.map(str::to_string),
            is_input: cell.is_input,
            formula,
            substituted,
            result,
            tone,
            findings: self.findings_in(cell.span),
            marks: self.marks_on(MarkTarget::Cell(cell.id)),
        }
    }

    fn check_block(&self, index: usize, check: &CheckResult) -> CheckBlock {
        let (lhs, rhs) = self.evaluated.check_terms(index);
        let mut expression = math::formula(&lhs, Names::AsWritten);
        expression.push_text(&format!(" {} ", math::comparison(check.comparison)));
        expression.extend(math::formula(&rhs, Names::AsWritten));
        let substituted = match (check.lhs, check.rhs) {
            (Some(left), Some(right))
                if matches!(
                    check.status,
                    CheckStatus::Passed | CheckStatus::Failed | CheckStatus::Unknown
                ) =>
            {
                Some(Rich::text(format!(
                    "{} {} {}",
                    self.check_side(check, left.si),
                    math::comparison(check.comparison),
                    self.check_side(check, right.si)
                )))
            }
            _ => None,
        };
        let label = crate::present::verdict_label(check, &self.evaluated.cases);
        let (verdict, tone) = match check.status {
            CheckStatus::Passed => (label, Tone::Good),
            CheckStatus::Failed | CheckStatus::Unknown | CheckStatus::Error => (label, Tone::Bad),
            CheckStatus::Blocked { by } => (
                format!("BLOCKED by {}", self.evaluated.cell_at(by).name),
                Tone::Warning,
            ),
        };
        CheckBlock {
            label: check.label.clone(),
            line: self.evaluated.lines.line_of(check.span.start()) + 1,
            expression,
            substituted,
            utilization: match check.worst.as_ref().and_then(|w| w.worst_utilization) {
                Some(worst) => Some(format!(
                    "{} (worst case of the tolerances)",
                    crate::units::percent(worst)
                )),
                None => check.utilization.map(crate::units::percent),
            },
            verdict,
            tone,
            findings: self.findings_in(check.span),
            marks: self.marks_on(MarkTarget::Check(index)),
        }
    }

    fn check_side(&self, check: &CheckResult, si: f64) -> String {
        math::quantity(
            &format_significant(check.display.value_of(si), self.sig_figs),
            &check.display.text,
        )
    }

    /// Messages of the diagnostics that start inside `span` (diagnostics are
    /// sorted by position, so this is two binary searches).
    fn findings_in(&self, span: Span) -> Vec<String> {
        let diagnostics = &self.evaluated.diagnostics;
        let first = diagnostics.partition_point(|d| d.span.start() < span.start());
        let last =
            diagnostics.partition_point(|d| d.span.start() < span.end().max(span.start() + 1));
        diagnostics[first..last.max(first)]
            .iter()
            .map(crate::present::finding_line)
            .collect()
    }

    fn marks_on(&self, target: MarkTarget) -> Vec<MarkLine> {
        self.marks
            .get(&target)
            .map(|marks| marks.iter().map(|m| mark_line(m)).collect())
            .unwrap_or_default()
    }

    /// Every review mark with what it is about, and every sign-off with its state.
    fn review_appendix(&self) -> Section {
        let mut blocks = Vec::new();
        if self.review.signoffs.is_empty() {
            blocks.push(Block::Callout(Callout {
                tone: Tone::Warning,
                text: Rich::text("Not signed off: the sheet has no sign-off."),
            }));
        }
        for (index, signoff) in self.review.signoffs.iter().enumerate() {
            let superseded = index + 1 < self.review.signoffs.len();
            let (tone, state) = match (&signoff.state, superseded) {
                (_, true) => (Tone::Neutral, "superseded by a later sign-off".to_string()),
                (SignOffState::Current, false) => (
                    Tone::Good,
                    "current: the sheet's fingerprint is the one signed".to_string(),
                ),
                (SignOffState::Stale(changes), false) => (
                    Tone::Warning,
                    format!(
                        "STALE: the sheet changed after it was signed; {}",
                        stale_summary(changes)
                    ),
                ),
            };
            let mut text = Rich::text(format!(
                "Sign-off by {} on {} (line {}), fingerprint ",
                signoff.by, signoff.on, signoff.line
            ));
            text.push(Piece::Code(short_fingerprint(&signoff.signed_fingerprint)));
            text.push_text(&format!(": {state}"));
            blocks.push(Block::Callout(Callout { tone, text }));
        }
        if self.review.marks.is_empty() {
            blocks.push(Block::Paragraph(Rich::text("No review marks.")));
        } else {
            let rows = self
                .review
                .marks
                .iter()
                .map(|mark| {
                    vec![
                        Rich::text(mark.line.to_string()),
                        self.target_text(mark.target),
                        Rich(vec![Piece::Strong(mark_kind_text(
                            mark.kind.keyword(),
                            mark.open,
                        ))]),
                        Rich::text(mark.text.clone().unwrap_or_default()),
                        Rich::text(format!("{}, {}", mark.by, mark.on)),
                    ]
                })
                .collect();
            blocks.push(Block::Table(Table {
                columns: ["Line", "On", "Mark", "Remark", "By, on"]
                    .map(String::from)
                    .to_vec(),
                rows,
            }));
        }
        Section {
            title: Some(Rich::text("Appendix A. Review marks and sign-off")),
            level: 1,
            appendix: true,
            blocks,
        }
    }

    fn target_text(&self, target: MarkTarget) -> Rich {
        match target {
            MarkTarget::Sheet => Rich::text("the sheet"),
            MarkTarget::Cell(id) => math::name(self.evaluated.cell_at(id).name),
            MarkTarget::Check(index) => {
                let check = &self.evaluated.checks[index];
                Rich::text(format!(
                    "check {}",
                    check.label.clone().unwrap_or_else(|| format!(
                        "{} {} {}",
                        check.lhs_text,
                        check.comparison.symbol(),
                        check.rhs_text
                    ))
                ))
            }
            MarkTarget::Heading(position) => match self.evaluated.outline.get(position) {
                Some(OutlineItem::Heading { text, .. }) => Rich::text(format!("heading “{text}”")),
                _ => Rich::text("a heading"),
            },
        }
    }

    /// Every unit the sheet writes or shows, with its exact definition: the
    /// conversions a checker must trust.
    fn units_appendix(&self) -> Section {
        let evaluated = self.evaluated;
        let mut unit_texts: BTreeSet<String> = BTreeSet::new();
        for cell in evaluated.cells() {
            unit_texts.insert(cell.display.text.to_string());
            collect_units(&evaluated.formula_term(cell.id), &mut unit_texts);
        }
        for (index, check) in evaluated.checks.iter().enumerate() {
            unit_texts.insert(check.display.text.to_string());
            let (lhs, rhs) = evaluated.check_terms(index);
            collect_units(&lhs, &mut unit_texts);
            collect_units(&rhs, &mut unit_texts);
        }
        let symbols: BTreeSet<&str> = unit_texts
            .iter()
            .flat_map(|text| text.split(|c: char| !(c.is_alphabetic() || c == '°' || c == '%')))
            .filter(|symbol| !symbol.is_empty())
            .collect();
        let rows: Vec<Vec<Rich>> = symbols
            .iter()
            .filter_map(|symbol| catalog().get(symbol))
            .map(|unit| {
                vec![
                    Rich(vec![Piece::Code(unit.symbol.clone())]),
                    Rich::text(unit.name.clone()),
                    Rich::text(unit.definition.clone()),
                    Rich::text(math::quantity(
                        &unit.factor.approximate_text(12),
                        &unit.dimension.si_units().replace('1', ""),
                    )),
                    Rich::text(unit.source),
                ]
            })
            .collect();
        let mut blocks = vec![Block::Paragraph(Rich::text(
            "Every unit this sheet writes or shows, with its exact definition. Each value is converted \
             once from these factors (kept as exact rational numbers and rounded once to double precision).",
        ))];
        if rows.is_empty() {
            blocks.push(Block::Paragraph(Rich::text("The sheet uses no units.")));
        } else {
            blocks.push(Block::Table(Table {
                columns: ["Unit", "Name", "Definition", "SI value", "Source"]
                    .map(String::from)
                    .to_vec(),
                rows,
            }));
        }
        Section {
            title: Some(Rich::text("Appendix B. Units and conversions")),
            level: 1,
            appendix: true,
            blocks,
        }
    }

    fn findings_appendix(&self) -> Section {
        let evaluated = self.evaluated;
        let rows = evaluated
            .diagnostics
            .iter()
            .map(|diagnostic| {
                let place = evaluated
                    .lines
                    .line_column(evaluated.source(), diagnostic.span.start());
                vec![
                    Rich::text(format!("{}:{}", place.line, place.column)),
                    Rich::text(diagnostic.severity.as_str()),
                    Rich(vec![Piece::Code(diagnostic.code.as_str().to_string())]),
                    Rich::text(crate::present::finding_line(diagnostic)),
                ]
            })
            .collect();
        Section {
            title: Some(Rich::text("Appendix C. Findings")),
            level: 1,
            appendix: true,
            blocks: vec![Block::Table(Table {
                columns: ["Line:col", "Severity", "Code", "Finding"]
                    .map(String::from)
                    .to_vec(),
                rows,
            })],
        }
    }
}

fn mark_line(mark: &Mark) -> MarkLine {
    MarkLine {
        kind: mark.kind.keyword().to_string(),
        open: mark.open,
        text: mark.text.clone(),
        by: mark.by.clone(),
        on: mark.on.clone(),
        line: mark.line,
    }
}

fn mark_kind_text(keyword: &str, open: bool) -> String {
    if open {
        format!("{keyword} (open)")
    } else {
        keyword.to_string()
    }
}

/// The first 16 hex digits, enough to tell fingerprints apart by eye.
pub fn short_fingerprint(fingerprint: &str) -> String {
    fingerprint.chars().take(16).collect()
}

/// What a stale sign-off's digests say changed, in one sentence.
pub fn stale_summary(changes: &Changes) -> String {
    if !changes.digests_recorded {
        return "the sign-off records no cell digests, so the changed cells cannot be named; compare the signed revision with `heft diff`".to_string();
    }
    if changes.only_other_text() {
        return "no cell, load case or check changed; the header, a heading, a note or a comment did"
            .to_string();
    }
    let mut parts = Vec::new();
    let list = |names: &[String]| {
        names
            .iter()
            .map(|name| crate::review::digest_key_text(name))
            .collect::<Vec<_>>()
            .join(", ")
    };
    if !changes.changed.is_empty() {
        parts.push(format!("changed {}", list(&changes.changed)));
    }
    if !changes.added.is_empty() {
        parts.push(format!("added {}", list(&changes.added)));
    }
    if !changes.removed.is_empty() {
        parts.push(format!("removed {}", list(&changes.removed)));
    }
    if !changes.affected.is_empty() {
        parts.push(format!("results affected {}", list(&changes.affected)));
    }
    parts.join("; ")
}
