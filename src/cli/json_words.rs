//! The fixed words of the JSON outputs (`heft-check/1`, `heft-audit/1`,
//! `heft-diff/1`) as enums, so each schema lists the values a field can
//! take. Each is made from the evaluated model's own type by an exhaustive
//! match: a new variant there does not compile until it has its word here.

use std::borrow::Cow;

use schemars::{JsonSchema, Schema, SchemaGenerator, json_schema};
use serde::{Serialize, Serializer};

/// How serious a finding is.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, JsonSchema)]
#[serde(rename_all = "lowercase")]
pub(super) enum Severity {
    /// Something a checker should know; never fails a run.
    Info,
    /// Probably a mistake; fails `heft check` only with `--deny-warnings`.
    Warning,
    /// The sheet is wrong or incomplete.
    Error,
}

impl From<crate::base::Severity> for Severity {
    fn from(severity: crate::base::Severity) -> Self {
        match severity {
            crate::base::Severity::Info => Severity::Info,
            crate::base::Severity::Warning => Severity::Warning,
            crate::base::Severity::Error => Severity::Error,
        }
    }
}

/// A finding's stable kebab-case code. Written by hand rather than derived:
/// the 42 words already live in [`crate::base::Code::as_str`] and every code
/// in [`crate::base::Code::ALL`], and a second list here could drift.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) struct Code(pub crate::base::Code);

impl Serialize for Code {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        serializer.serialize_str(self.0.as_str())
    }
}

impl JsonSchema for Code {
    fn schema_name() -> Cow<'static, str> {
        "Code".into()
    }

    fn json_schema(_: &mut SchemaGenerator) -> Schema {
        let codes: Vec<&str> = crate::base::Code::ALL.iter().map(|c| c.as_str()).collect();
        json_schema!({
            "description": "A finding's stable code; never renamed once released.",
            "type": "string",
            "enum": codes,
        })
    }
}

/// How a table is read (`lookup(…, least)`).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, JsonSchema)]
#[serde(rename_all = "lowercase")]
pub(super) enum Reading {
    /// Only at a row's key.
    Exact,
    /// Interpolated linearly between the bracketing rows (bilinear for two keys).
    Linear,
    /// The least value of the bracketing rows: conservative for a rating.
    Least,
    /// The greatest value of the bracketing rows: conservative for a demand.
    Greatest,
}

impl From<crate::eval::Reading> for Reading {
    fn from(reading: crate::eval::Reading) -> Self {
        match reading {
            crate::eval::Reading::Exact => Reading::Exact,
            crate::eval::Reading::Linear => Reading::Linear,
            crate::eval::Reading::Least => Reading::Least,
            crate::eval::Reading::Greatest => Reading::Greatest,
        }
    }
}

/// The unit system results are displayed in.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, JsonSchema)]
pub(super) enum Display {
    /// SI.
    #[serde(rename = "SI")]
    Si,
    /// Foot-pound-second.
    #[serde(rename = "FPS")]
    Fps,
}

impl From<crate::units::DisplaySystem> for Display {
    fn from(system: crate::units::DisplaySystem) -> Self {
        match system {
            crate::units::DisplaySystem::Si => Display::Si,
            crate::units::DisplaySystem::Fps => Display::Fps,
        }
    }
}

/// The state of a cell after evaluation.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, JsonSchema)]
#[serde(rename_all = "kebab-case")]
pub(super) enum CellStatus {
    /// Evaluated.
    Ok,
    /// Its own formula or definition is wrong; a diagnostic says why.
    Error,
    /// It uses a cell that failed (named in `blocked_by`).
    Blocked,
}

impl From<crate::eval::CellStatus> for CellStatus {
    fn from(status: crate::eval::CellStatus) -> Self {
        match status {
            crate::eval::CellStatus::Ok => CellStatus::Ok,
            crate::eval::CellStatus::Error => CellStatus::Error,
            crate::eval::CellStatus::Blocked { .. } => CellStatus::Blocked,
        }
    }
}

/// How a range over the tolerances was found, which says what it promises.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, JsonSchema)]
#[serde(rename_all = "kebab-case")]
pub(super) enum RangeMethod {
    /// Interval arithmetic with outward rounding: the true range lies inside.
    Guaranteed,
    /// Monotone in every input: the values at the two worst corners, exact
    /// up to rounding.
    WorstCorners,
    /// The extremes found at the corners of the toleranced inputs, not
    /// guaranteed between them.
    Corners,
}

impl From<crate::eval::RangeMethod> for RangeMethod {
    fn from(method: crate::eval::RangeMethod) -> Self {
        match method {
            crate::eval::RangeMethod::Guaranteed => RangeMethod::Guaranteed,
            crate::eval::RangeMethod::WorstCorners => RangeMethod::WorstCorners,
            crate::eval::RangeMethod::Corners(_) => RangeMethod::Corners,
        }
    }
}

/// A check's verdict.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, JsonSchema)]
#[serde(rename_all = "kebab-case")]
pub(super) enum CheckStatus {
    /// The comparison holds everywhere it was judged.
    Passed,
    /// The comparison does not hold somewhere it was judged.
    Failed,
    /// It holds wherever it could be judged, but somewhere it could not be
    /// established: never a pass.
    Unknown,
    /// A side could not be evaluated.
    Error,
    /// A side uses a failed cell.
    Blocked,
}

impl From<crate::eval::CheckStatus> for CheckStatus {
    fn from(status: crate::eval::CheckStatus) -> Self {
        match status {
            crate::eval::CheckStatus::Passed => CheckStatus::Passed,
            crate::eval::CheckStatus::Failed => CheckStatus::Failed,
            crate::eval::CheckStatus::Unknown => CheckStatus::Unknown,
            crate::eval::CheckStatus::Error => CheckStatus::Error,
            crate::eval::CheckStatus::Blocked { .. } => CheckStatus::Blocked,
        }
    }
}

/// What a sweep shows of a check over its whole range.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, JsonSchema)]
#[serde(rename_all = "kebab-case")]
pub(super) enum MarginKind {
    /// It passes at every point of the range.
    PassesThroughout,
    /// It fails at every point of the range.
    FailsThroughout,
    /// Its verdict changes between neighbouring points: see `crossings`.
    Crossings,
    /// Not established at some points: see `unknown_points`.
    NotEstablished,
}

impl From<&crate::eval::Margin> for MarginKind {
    fn from(margin: &crate::eval::Margin) -> Self {
        match margin {
            crate::eval::Margin::PassesThroughout => MarginKind::PassesThroughout,
            crate::eval::Margin::FailsThroughout => MarginKind::FailsThroughout,
            crate::eval::Margin::Crossings(_) => MarginKind::Crossings,
            crate::eval::Margin::NotEstablished { .. } => MarginKind::NotEstablished,
        }
    }
}

/// Where a check was judged.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, JsonSchema)]
#[serde(rename_all = "kebab-case")]
pub(super) enum Place {
    /// The sheet as written, at the nominal values.
    AsWritten,
    /// The sheet as written, at the worst case of the tolerances.
    WorstCase,
    /// A load case (named in `case`), at its nominal values.
    Case,
    /// A load case (named in `case`) at the worst case of its tolerances.
    CaseWorstCase,
}

impl Place {
    /// The word for a place, with the index of its load case where it has one.
    pub(super) fn of(place: crate::eval::Place) -> (Place, Option<usize>) {
        match place {
            crate::eval::Place::AsWritten => (Place::AsWritten, None),
            crate::eval::Place::WorstCase => (Place::WorstCase, None),
            crate::eval::Place::Case(index) => (Place::Case, Some(index)),
            crate::eval::Place::CaseWorstCase(index) => (Place::CaseWorstCase, Some(index)),
        }
    }
}

/// How a solve block ended.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, JsonSchema)]
#[serde(rename_all = "kebab-case")]
pub(super) enum SolveStatus {
    /// Converged; the unknowns have values.
    Solved,
    /// Could not be solved; a diagnostic says why.
    Failed,
    /// Not attempted: a line did not parse or an input failed.
    NotRun,
}

impl From<crate::eval::SolveStatus> for SolveStatus {
    fn from(status: crate::eval::SolveStatus) -> Self {
        match status {
            crate::eval::SolveStatus::Solved => SolveStatus::Solved,
            crate::eval::SolveStatus::Failed => SolveStatus::Failed,
            crate::eval::SolveStatus::NotRun => SolveStatus::NotRun,
        }
    }
}

/// How a simulate run ended.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, JsonSchema)]
#[serde(rename_all = "kebab-case")]
pub(super) enum RunStatus {
    /// It reached its end time.
    Reached,
    /// A stop condition ended it.
    Stopped,
    /// The integration failed part way; a diagnostic says why.
    Failed,
    /// Not attempted.
    NotRun,
}

impl From<crate::eval::RunStatus> for RunStatus {
    fn from(status: crate::eval::RunStatus) -> Self {
        match status {
            crate::eval::RunStatus::Reached => RunStatus::Reached,
            crate::eval::RunStatus::Stopped => RunStatus::Stopped,
            crate::eval::RunStatus::Failed => RunStatus::Failed,
            crate::eval::RunStatus::NotRun => RunStatus::NotRun,
        }
    }
}

/// What a review mark says, as its keyword in the sheet.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, JsonSchema)]
#[serde(rename_all = "kebab-case")]
pub(super) enum MarkKind {
    /// An open question the preparer must answer.
    Question,
    /// A change the checker requires.
    Change,
    /// The checker accepts the item.
    Accepted,
    /// An earlier question or change has been dealt with.
    Resolved,
}

impl From<crate::review::ReviewKind> for MarkKind {
    fn from(kind: crate::review::ReviewKind) -> Self {
        match kind {
            crate::review::ReviewKind::Question => MarkKind::Question,
            crate::review::ReviewKind::Change => MarkKind::Change,
            crate::review::ReviewKind::Accepted => MarkKind::Accepted,
            crate::review::ReviewKind::Resolved => MarkKind::Resolved,
        }
    }
}

/// A family of units, in the conversion audit.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, JsonSchema)]
pub(super) enum UnitSystem {
    /// SI units and their decimal multiples.
    #[serde(rename = "SI")]
    Si,
    /// Non-SI units accepted for use with the SI, and the kilogram-force.
    #[serde(rename = "metric (non-SI)")]
    Metric,
    /// US customary (foot-pound-second) units.
    #[serde(rename = "US customary")]
    UsCustomary,
    /// Units every system shares: s, min, h, deg, rev, rpm, %.
    #[serde(rename = "shared")]
    Shared,
}

impl From<crate::units::UnitSystem> for UnitSystem {
    fn from(system: crate::units::UnitSystem) -> Self {
        match system {
            crate::units::UnitSystem::Si => UnitSystem::Si,
            crate::units::UnitSystem::Metric => UnitSystem::Metric,
            crate::units::UnitSystem::UsCustomary => UnitSystem::UsCustomary,
            crate::units::UnitSystem::Shared => UnitSystem::Shared,
        }
    }
}

/// How a gravity value enters the sheet.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, JsonSchema)]
pub(super) enum GravityKind {
    /// The built-in `g0`.
    #[serde(rename = "built-in g0")]
    BuiltIn,
    /// A unit defined with standard gravity (lbf, kgf, psi, …).
    #[serde(rename = "unit defined with g0")]
    GravitationalUnit,
    /// A cell that holds a gravity.
    #[serde(rename = "cell")]
    Cell,
    /// An acceleration literal near g in a formula.
    #[serde(rename = "literal")]
    Literal,
    /// A bare number used as gravity.
    #[serde(rename = "bare number")]
    BareNumber,
}

impl From<crate::audit::GravityKind> for GravityKind {
    fn from(kind: crate::audit::GravityKind) -> Self {
        match kind {
            crate::audit::GravityKind::BuiltIn => GravityKind::BuiltIn,
            crate::audit::GravityKind::GravitationalUnit => GravityKind::GravitationalUnit,
            crate::audit::GravityKind::Cell => GravityKind::Cell,
            crate::audit::GravityKind::Literal => GravityKind::Literal,
            crate::audit::GravityKind::BareNumber => GravityKind::BareNumber,
        }
    }
}

/// How a conversion enters the sheet.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, JsonSchema)]
#[serde(rename_all = "kebab-case")]
pub(super) enum ConversionKind {
    /// A quantity written with a unit.
    Written,
    /// A value shown in a unit: a declared one or the display system's choice.
    Displayed,
    /// A bare number typed as a conversion factor.
    HandTyped,
}

impl From<crate::audit::ConversionKind> for ConversionKind {
    fn from(kind: crate::audit::ConversionKind) -> Self {
        match kind {
            crate::audit::ConversionKind::Written => ConversionKind::Written,
            crate::audit::ConversionKind::Displayed => ConversionKind::Displayed,
            crate::audit::ConversionKind::HandTyped => ConversionKind::HandTyped,
        }
    }
}

/// Whether a factor is the exact value of its definition.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, JsonSchema)]
#[serde(rename_all = "kebab-case")]
pub(super) enum Exactness {
    /// Exact by definition, with a terminating decimal.
    Exact,
    /// Exact by definition, but its decimal does not end (a repeating
    /// decimal or π): evaluated rounded once to a double.
    ExactFraction,
    /// Typed by hand and rounded.
    Rounded,
}

impl From<crate::audit::Exactness> for Exactness {
    fn from(exactness: crate::audit::Exactness) -> Self {
        match exactness {
            crate::audit::Exactness::Exact => Exactness::Exact,
            crate::audit::Exactness::ExactFraction => Exactness::ExactFraction,
            crate::audit::Exactness::Rounded => Exactness::Rounded,
        }
    }
}

/// How a cell changed between two revisions.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, JsonSchema)]
#[serde(rename_all = "kebab-case")]
pub(super) enum CellChange {
    /// Only in the new revision.
    Added,
    /// Only in the old revision.
    Removed,
    /// In both, with a different formula, unit or description.
    Edited,
    /// In both with the same definition, but its result moved.
    Result,
}

impl From<crate::diff::CellChangeKind> for CellChange {
    fn from(kind: crate::diff::CellChangeKind) -> Self {
        match kind {
            crate::diff::CellChangeKind::Added => CellChange::Added,
            crate::diff::CellChangeKind::Removed => CellChange::Removed,
            crate::diff::CellChangeKind::Edited => CellChange::Edited,
            crate::diff::CellChangeKind::ResultOnly => CellChange::Result,
        }
    }
}

/// A check's outcome in one revision, as the diff shows it.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, JsonSchema)]
pub(super) enum Outcome {
    /// It passed.
    #[serde(rename = "pass")]
    Pass,
    /// It failed.
    #[serde(rename = "FAIL")]
    Fail,
    /// It could not be established somewhere: never a pass.
    #[serde(rename = "UNKNOWN")]
    Unknown,
    /// A side could not be evaluated.
    #[serde(rename = "error")]
    Error,
    /// A side uses a failed cell.
    #[serde(rename = "blocked")]
    Blocked,
}

impl From<crate::diff::CheckOutcome> for Outcome {
    fn from(outcome: crate::diff::CheckOutcome) -> Self {
        match outcome {
            crate::diff::CheckOutcome::Pass => Outcome::Pass,
            crate::diff::CheckOutcome::Fail => Outcome::Fail,
            crate::diff::CheckOutcome::Unknown => Outcome::Unknown,
            crate::diff::CheckOutcome::Error => Outcome::Error,
            crate::diff::CheckOutcome::Blocked => Outcome::Blocked,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The word an enum writes in JSON.
    fn word(value: impl Serialize) -> String {
        match serde_json::to_value(value) {
            Ok(serde_json::Value::String(word)) => word,
            other => panic!("not a word: {other:?}"),
        }
    }

    /// Where the model has words of its own for text output, JSON writes
    /// the same ones.
    #[test]
    fn json_words_agree_with_the_models_own_words() {
        use crate::base::Severity as S;
        for severity in [S::Info, S::Warning, S::Error] {
            assert_eq!(word(Severity::from(severity)), severity.as_str());
        }
        for code in crate::base::Code::ALL {
            assert_eq!(word(Code(code)), code.as_str());
        }
        use crate::eval::CheckStatus as C;
        let blocked = C::Blocked { by: 0 };
        for status in [C::Passed, C::Failed, C::Unknown, C::Error, blocked] {
            assert_eq!(word(CheckStatus::from(status)), status.as_str());
        }
        use crate::units::DisplaySystem as D;
        for system in [D::Si, D::Fps] {
            assert_eq!(word(Display::from(system)), system.label());
        }
        use crate::units::UnitSystem as U;
        for system in [U::Si, U::Metric, U::UsCustomary, U::Shared] {
            assert_eq!(word(UnitSystem::from(system)), system.label());
        }
        use crate::audit::GravityKind as G;
        for kind in [
            G::BuiltIn,
            G::GravitationalUnit,
            G::Cell,
            G::Literal,
            G::BareNumber,
        ] {
            assert_eq!(word(GravityKind::from(kind)), kind.as_str());
        }
        use crate::review::ReviewKind as R;
        for kind in [R::Question, R::Change, R::Accepted, R::Resolved] {
            assert_eq!(word(MarkKind::from(kind)), kind.keyword());
        }
        use crate::diff::CellChangeKind as K;
        for kind in [K::Added, K::Removed, K::Edited, K::ResultOnly] {
            assert_eq!(word(CellChange::from(kind)), kind.as_str());
        }
        for reading in crate::eval::Reading::ALL {
            assert_eq!(word(Reading::from(reading)), reading.word());
        }
        use crate::diff::CheckOutcome as O;
        for outcome in [O::Pass, O::Fail, O::Unknown, O::Error, O::Blocked] {
            assert_eq!(word(Outcome::from(outcome)), outcome.as_str());
        }
    }
}
