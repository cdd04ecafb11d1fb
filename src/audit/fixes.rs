//! Fixes, checked before they are shown. A finding carries the rewrites
//! that would cure it ([`Fix`]); here each is applied to the sheet's text
//! and the whole sheet is evaluated and linted again. A fix is offered only
//! if, in the fixed sheet (verdicts aside: a fix that lets a check be
//! judged, and it fails, is still right), its line and the finding's line
//! have no error,
//! no finding of any code more than before, the finding itself is gone, no
//! hand-typed factor is left converting a second time, no other line gains
//! an error, and the number to show has a value. The number the help gives
//! is the fixed sheet's own value.
//!
//! Then one fix per line: of the fixes that verified for the findings of a
//! line, the one that leaves the fewest findings there is shown on every
//! finding of the line that offers a fix, so no two contradict each other.

use rayon::prelude::*;
use rustc_hash::FxHashMap;

use crate::base::LineIndex;
use crate::base::{Code, Diagnostic, Fix, FixValue, Severity};
use crate::blocks::evaluate_source_with;
use crate::eval::{CellStatus, Evaluated, format_value};
use crate::units::{DisplayUnit, Quantity, Value, pick_unit};

/// At most this many fixes are checked for one sheet: each costs an
/// evaluation of the whole sheet. Findings past it offer no fix and say so.
pub const MAX_CHECKED_FIXES: usize = 64;

/// Fewer for a long sheet: the fixes checked re-evaluate at most this many
/// bytes of sheet in all (64 fixes of a 64 KiB sheet), but never fewer
/// than [`MIN_CHECKED_FIXES`].
const CHECKED_BYTES: usize = 64 * 64 * 1024;

/// The fixes checked for a sheet of any length.
pub const MIN_CHECKED_FIXES: usize = 4;

/// How many fixes are checked for a sheet of `source_len` bytes.
pub fn checked_fixes(source_len: usize) -> usize {
    (CHECKED_BYTES / source_len.max(1)).clamp(MIN_CHECKED_FIXES, MAX_CHECKED_FIXES)
}

/// Checks every fix the findings of `evaluated` offer against the sheet with
/// the fix applied, and turns the one fix kept for each line into the help
/// of its findings; afterwards a finding's `fixes` holds exactly the fix its
/// help shows, if any. A finding whose fixes all fail keeps its plain advice.
pub fn verify_fixes(evaluated: &mut Evaluated) {
    let candidates: Vec<(usize, usize)> = evaluated
        .diagnostics
        .iter()
        .enumerate()
        .flat_map(|(index, diagnostic)| (0..diagnostic.fixes.len()).map(move |fix| (index, fix)))
        .collect();
    if candidates.is_empty() {
        return;
    }
    let before = LineFindings::of(&evaluated.diagnostics, &evaluated.lines);
    let n_checked = checked_fixes(evaluated.source().len());
    let shared: &Evaluated = evaluated;
    let checked: Vec<Option<Checked>> = candidates
        .par_iter()
        .enumerate()
        .map(|(n, &(index, fix))| {
            let diagnostic = &shared.diagnostics[index];
            (n < n_checked)
                .then(|| check(shared, &before, diagnostic, &diagnostic.fixes[fix]))
                .flatten()
        })
        .collect();

    let finding_lines: Vec<usize> = evaluated
        .diagnostics
        .iter()
        .map(|diagnostic| evaluated.lines.line_of(diagnostic.span.start()))
        .collect();
    let kept = kept_per_line(
        &evaluated.diagnostics,
        &finding_lines,
        &candidates,
        &checked,
    );

    // Candidates are in diagnostic order, so each finding's are one run.
    let mut first = 0;
    let mut decisions: Vec<Option<(Option<String>, Option<Fix>)>> = Vec::new();
    for (diagnostic, &line) in evaluated.diagnostics.iter().zip(&finding_lines) {
        let n_fixes = diagnostic.fixes.len();
        if n_fixes == 0 {
            decisions.push(None);
            continue;
        }
        let own_run = first..first + n_fixes;
        first += n_fixes;
        let own = own_run
            .clone()
            .find_map(|n| checked[n].as_ref().map(|outcome| (n, outcome)));
        let kept = kept
            .get(&line)
            .and_then(|&n| checked[n].as_ref().map(|outcome| (n, outcome)));
        let (help, shown) = match (own, kept) {
            (Some((n, own)), Some((_, kept))) if own.fixed_source == kept.fixed_source => {
                (Some(own.help()), Some(n))
            }
            (_, Some((n, kept))) if kept.fix_line != line => {
                (Some(kept.help_for_another_line()), Some(n))
            }
            (_, Some((n, kept))) => (Some(kept.summary()), Some(n)),
            (_, None) if own_run.start >= n_checked => (
                Some(format!(
                    "heft checks at most {n_checked} fixes of a sheet this long before it offers them; clear the findings above and check again"
                )),
                None,
            ),
            (_, None) => (diagnostic.help.clone(), None),
        };
        let shown = shown.map(|n| {
            let (of, fix) = candidates[n];
            evaluated.diagnostics[of].fixes[fix].clone()
        });
        decisions.push(Some((help, shown)));
    }
    for (diagnostic, decision) in evaluated.diagnostics.iter_mut().zip(decisions) {
        if let Some((help, shown)) = decision {
            diagnostic.help = help;
            diagnostic.fixes = shown.into_iter().collect();
        }
    }
}

/// The one fix of each line (by candidate number). Of the fixes verified
/// for a line's findings, the one that leaves the fewest findings there,
/// then the first; but a line whose finding is cleared by the fix kept for
/// another line (a mass written in lbf, and the formula that uses it) takes
/// that fix instead, so the two lines do not offer two cures of one mistake.
fn kept_per_line(
    diagnostics: &[Diagnostic],
    finding_lines: &[usize],
    candidates: &[(usize, usize)],
    checked: &[Option<Checked>],
) -> FxHashMap<usize, usize> {
    let mut own: FxHashMap<usize, usize> = FxHashMap::default();
    for (n, outcome) in checked.iter().enumerate() {
        let Some(outcome) = outcome else {
            continue;
        };
        let line = finding_lines[candidates[n].0];
        let better = own
            .get(&line)
            .and_then(|&kept| checked[kept].as_ref())
            .is_none_or(|kept| outcome.left < kept.left);
        if better {
            own.insert(line, n);
        }
    }
    let mut kept = own.clone();
    // The codes of the findings that offer a fix, by line.
    let mut offering: FxHashMap<usize, Vec<Code>> = FxHashMap::default();
    for (diagnostic, &line) in diagnostics.iter().zip(finding_lines) {
        if !diagnostic.fixes.is_empty() {
            offering.entry(line).or_default().push(diagnostic.code);
        }
    }
    let mut lines: Vec<usize> = offering.keys().copied().collect();
    lines.sort_unstable();
    let mut sources: Vec<(usize, usize)> = own.iter().map(|(&line, &n)| (line, n)).collect();
    sources.sort_unstable();
    for &line in &lines {
        let codes = &offering[&line];
        let clears_here = |n: usize| {
            checked[n].as_ref().is_some_and(|outcome| {
                codes
                    .iter()
                    .any(|&code| outcome.clears.contains(&(line, code)))
            })
        };
        if let Some(&(_, n)) = sources
            .iter()
            .find(|&&(source_line, n)| source_line != line && clears_here(n))
        {
            kept.insert(line, n);
        }
    }
    // A line that takes another line's fix is no source for a third: its
    // own fix is not shown.
    let overridden: Vec<usize> = kept
        .iter()
        .filter(|(line, n)| own.get(line) != Some(n))
        .map(|(&line, _)| line)
        .collect();
    for line in &lines {
        if let Some(&n) = kept.get(line)
            && let Some(source_line) = checked[n].as_ref().map(|outcome| outcome.fix_line)
            && source_line != *line
            && overridden.contains(&source_line)
        {
            match own.get(line) {
                Some(&mine) => kept.insert(*line, mine),
                None => kept.remove(line),
            };
        }
    }
    kept
}

/// A fix that verified.
struct Checked {
    /// The sheet's text with it applied (two fixes are the same fix if they
    /// give the same text).
    fixed_source: String,
    /// The line it writes on (0-based).
    fix_line: usize,
    /// How many findings (warnings and errors) the finding's line keeps.
    left: usize,
    /// The findings of other lines it clears: (line, code).
    clears: Vec<(usize, Code)>,
    /// Its words before `write`.
    lead: String,
    /// What to write.
    shows: String,
    /// ` (= 3084 kg)`, ` (`T` = 5.774 kN)` for another cell, or nothing.
    number: String,
    /// Its words after the number.
    tail: String,
}

impl Checked {
    /// The finding's own help: `if it is a mass, write … (= …); otherwise …`.
    fn help(&self) -> String {
        format!("{}{}{}", self.lead, self.summary(), self.tail)
    }

    /// The fix alone: `write … (= …)`.
    fn summary(&self) -> String {
        format!("write `{}`{}", self.shows, self.number)
    }

    /// For a finding of another line that the fix clears.
    fn help_for_another_line(&self) -> String {
        format!(
            "{}write `{}` on line {}{}: that clears this finding too",
            self.lead,
            self.shows,
            self.fix_line + 1,
            self.number
        )
    }
}

/// The findings of a sheet by line, verdicts left out: every code with its
/// count, and the errors.
struct LineFindings {
    /// (line, code) → how many findings of that code the line has.
    counts: FxHashMap<(usize, Code), usize>,
    /// (line, code) → how many errors of that code the line has.
    errors: FxHashMap<(usize, Code), usize>,
    /// Line → how many warnings and errors it has.
    serious: FxHashMap<usize, usize>,
}

impl LineFindings {
    fn of(diagnostics: &[Diagnostic], lines: &LineIndex) -> LineFindings {
        let mut findings = LineFindings {
            counts: FxHashMap::default(),
            errors: FxHashMap::default(),
            serious: FxHashMap::default(),
        };
        // A verdict is what the sheet gives, not a defect of the fix: a fix
        // that lets a blocked check be judged, and it fails, is still right.
        let verdicts = [Code::CheckFailed, Code::CheckUnknown];
        for diagnostic in diagnostics
            .iter()
            .filter(|diagnostic| !verdicts.contains(&diagnostic.code))
        {
            let line = lines.line_of(diagnostic.span.start());
            *findings.counts.entry((line, diagnostic.code)).or_default() += 1;
            if diagnostic.severity == Severity::Error {
                *findings.errors.entry((line, diagnostic.code)).or_default() += 1;
            }
            if diagnostic.severity >= Severity::Warning {
                *findings.serious.entry(line).or_default() += 1;
            }
        }
        findings
    }

    fn count(&self, line: usize, code: Code) -> usize {
        self.counts.get(&(line, code)).copied().unwrap_or(0)
    }

    fn has_error_on(&self, line: usize) -> bool {
        self.errors.keys().any(|&(at, _)| at == line)
    }
}

/// Applies `fix` and judges the fixed sheet; `None` if the fix does not
/// verify.
fn check(
    evaluated: &Evaluated,
    before: &LineFindings,
    diagnostic: &Diagnostic,
    fix: &Fix,
) -> Option<Checked> {
    let source = evaluated.source();
    let lines = &evaluated.lines;
    let (start, end) = (fix.span.start(), fix.span.end());
    let replaced = source.get(start..end)?;
    if replaced.contains('\n') || fix.replacement.contains('\n') {
        return None;
    }
    let fixed_source = format!("{}{}{}", &source[..start], fix.replacement, &source[end..]);
    // The fixed sheet reads the very sheets the sheet read.
    let used = crate::sheet::Reloaded {
        imports: &evaluated.sheet().imports,
        files: std::sync::Arc::clone(&evaluated.sheet().files),
    };
    let mut fixed = evaluate_source_with(&fixed_source, &used);
    super::add_lints(&mut fixed);
    let after = LineFindings::of(&fixed.diagnostics, &fixed.lines);

    let fix_line = lines.line_of(start);
    let finding_line = lines.line_of(diagnostic.span.start());
    for line in [fix_line, finding_line] {
        if after.has_error_on(line) {
            return None;
        }
        let more = after
            .counts
            .iter()
            .any(|(&(at, code), &n)| at == line && n > before.count(line, code));
        if more {
            return None;
        }
        // Not a second conversion: a hand-typed factor left on the line
        // still converts what the fix converts.
        let factors_before = before.count(line, Code::HandConversionFactor);
        let factors_after = after.count(line, Code::HandConversionFactor);
        if factors_after > 0 && factors_after >= factors_before {
            return None;
        }
    }
    if after.count(finding_line, diagnostic.code) >= before.count(finding_line, diagnostic.code) {
        return None;
    }
    let new_error = after.errors.iter().any(|(&(line, code), &n)| {
        line != fix_line
            && line != finding_line
            && n > before.errors.get(&(line, code)).copied().unwrap_or(0)
    });
    if new_error {
        return None;
    }

    let place = Place::at(&fixed, start);
    let shows = match (&fix.shows, place) {
        (Some(shows), _) => shows.clone(),
        (None, Some(place)) => place.written(&fixed),
        // An equation of a block: its line, without a comment.
        (None, None) => {
            let line = fixed_source.lines().nth(fix_line).unwrap_or_default();
            line.split_once("//")
                .map_or(line, |(code, _)| code)
                .trim()
                .to_string()
        }
    };
    let number = match &fix.value_of {
        None => None,
        Some(FixValue::Here) => place
            .and_then(|place| place.value(&fixed))
            .map(|value| format!(" (= {value})")),
        Some(FixValue::Cell(name)) => {
            let id = fixed.sheet().names.get(name.as_str()).copied()?;
            Some(format!(" (`{name}` = {})", Place::Cell(id).value(&fixed)?))
        }
    };
    let clears = before
        .counts
        .iter()
        .filter(|&(&(line, code), &n)| {
            line != fix_line && line != finding_line && after.count(line, code) < n
        })
        .map(|(&key, _)| key)
        .collect();
    Some(Checked {
        fix_line,
        left: after.serious.get(&finding_line).copied().unwrap_or(0),
        clears,
        lead: fix.lead.clone(),
        shows,
        number: number.unwrap_or_default(),
        tail: fix.tail.clone(),
        fixed_source,
    })
}

/// What a fix writes into, in the fixed sheet.
#[derive(Clone, Copy)]
enum Place {
    /// A cell.
    Cell(usize),
    /// A side (0 left, 1 right) of a check.
    CheckSide(usize, usize),
}

impl Place {
    /// The formula cell or check side whose statement holds byte `at` (none
    /// inside a solve or simulate block).
    fn at(fixed: &Evaluated, at: usize) -> Option<Place> {
        let within = |span: crate::base::Span| span.start() <= at && at <= span.end();
        let sheet = fixed.sheet();
        if let Some(cell) = fixed
            .cells()
            .find(|cell| within(cell.span) && sheet.formula_cell(cell.id).is_some())
        {
            return Some(Place::Cell(cell.id));
        }
        (0..sheet.checks.len()).find_map(|index| {
            let check = sheet.check(index);
            if within(check.lhs.span) {
                Some(Place::CheckSide(index, 0))
            } else if within(check.rhs.span) {
                Some(Place::CheckSide(index, 1))
            } else {
                None
            }
        })
    }

    /// The formula (or check) as the fixed sheet reads it.
    fn written(self, fixed: &Evaluated) -> String {
        match self {
            Place::Cell(id) => fixed.cell_at(id).formula.to_string(),
            Place::CheckSide(index, _) => fixed.checks[index].statement(),
        }
    }

    /// The value there, as the sheet shows values: in a cell's declared
    /// unit, else in a readable unit of the display system.
    fn value(self, fixed: &Evaluated) -> Option<String> {
        let header = fixed.header();
        let (value, declared): (Quantity, Option<&DisplayUnit>) = match self {
            Place::Cell(id) => {
                let cell = fixed.cell_at(id);
                if cell.status != CellStatus::Ok {
                    return None;
                }
                (cell.value?, cell.declared_unit.then_some(cell.display))
            }
            Place::CheckSide(index, side) => {
                let check = &fixed.checks[index];
                (if side == 0 { check.lhs } else { check.rhs }?, None)
            }
        };
        let picked;
        let unit = match declared {
            Some(unit) => unit,
            None => {
                picked = pick_unit(value.dimension, value.si, header.display);
                &picked
            }
        };
        Some(format_value(Value::Scalar(value), unit, header.sig_figs))
    }
}
