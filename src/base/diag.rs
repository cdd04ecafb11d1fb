//! Diagnostics as data: every problem heft finds, with its stable code, its
//! place in the source and the fix it suggests. Rendering for people lives in
//! [`super::render`], the one place that turns a [`Diagnostic`] into text.

use super::span::Span;

/// How serious a finding is.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Severity {
    /// Something a checker should know; never fails a run.
    Info,
    /// Probably a mistake; fails only with `--deny-warnings`.
    Warning,
    /// The sheet is wrong or incomplete; `heft check` exits 1.
    Error,
}

impl Severity {
    /// The lower-case word used in JSON and text output.
    pub fn as_str(self) -> &'static str {
        match self {
            Severity::Info => "info",
            Severity::Warning => "warning",
            Severity::Error => "error",
        }
    }
}

/// A stable, kebab-case identifier for each kind of finding.
///
/// Codes are part of heft's interface: scripts and test corpora match on them,
/// so a code is never renamed once released.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Code {
    /// A statement does not follow the grammar.
    ParseError,
    /// The file is not valid UTF-8.
    EncodingError,
    /// The `+++` header is malformed, has an unknown key or a bad value.
    HeaderError,
    /// A unit symbol is not in the catalog.
    UnknownUnit,
    /// A unit symbol that could mean several units (`lb`, `ton`, `oz`).
    AmbiguousUnit,
    /// A name that no cell defines.
    UndefinedName,
    /// A function that heft does not have, or called with the wrong arguments.
    BadCall,
    /// Two cells with the same name.
    DuplicateName,
    /// Two names a reader could take for one another (Unicode TR 39).
    ConfusableNames,
    /// A name that mixes scripts (other than Latin with Greek).
    MixedScriptName,
    /// Cells that depend on each other in a loop.
    Cycle,
    /// Quantities of different dimensions combined where they must agree.
    DimensionMismatch,
    /// A cell's formula does not have the dimension of its declared `[unit]`.
    DeclaredUnitMismatch,
    /// A mass where a force belongs, or the other way round.
    MassWeightMixup,
    /// Division by a quantity that is exactly zero.
    DivisionByZero,
    /// A result that is infinite or not a number.
    NotFinite,
    /// A function argument outside the function's domain (`sqrt(-1)`).
    OutOfDomain,
    /// A `check` whose comparison does not hold.
    CheckFailed,
    /// A `check` heft could not establish somewhere it must hold (the worst
    /// case of the tolerances, a load case): not passed, with the reason.
    CheckUnknown,
    /// A force on a `body` that is not a force vector.
    BadForce,
    /// A solve block with fewer equations than unknowns.
    Underdetermined,
    /// A solve block with more equations than unknowns.
    Overdetermined,
    /// A solve block whose equations do not fix every unknown (a singular
    /// Jacobian: dependent equations, or an unknown that hardly matters).
    SingularSystem,
    /// A solve block that Newton's method could not solve.
    NoConvergence,
    /// A solve block with more than one solution near the guess.
    SeveralRoots,
    /// A solve block with more unknowns than heft solves at once
    /// ([`crate::blocks::MAX_SOLVE_UNKNOWNS`]): refused rather than
    /// exhausting the machine's memory.
    SolveTooLarge,
    /// A solve block whose solution is ill-conditioned: nearly dependent
    /// equations or a double root, so small changes move it far.
    IllConditioned,
    /// A tolerance that does not fit its value (wrong dimension, bounds
    /// the wrong way round, on a vector).
    BadTolerance,
    /// A bare number that looks like a hand-typed unit conversion or gravity
    /// value (`/ 32.174`, `* 2.2`, `* 9.81`), which heft's units make wrong.
    HandConversionFactor,
    /// More than one value of gravitational acceleration in one sheet.
    GravityInconsistent,
    /// A gravity written as a rounded standard gravity (`9.81 m/s^2`).
    RoundedGravity,
    /// Inputs written in both SI and US customary units.
    MixedSystems,
    /// An input that no formula or check uses.
    UnusedInput,
    /// A cell named like a built-in constant (`g0`, `pi`).
    ShadowedConstant,
    /// A plain number in degrees given to `sin`, `cos` or `tan`, which take
    /// radians.
    DegreesAsRadians,
    /// A plain 1/s shown as an angular speed (`[rpm]`, `[rad/s]`): it could
    /// be revolutions or radians per second.
    AmbiguousAngularSpeed,
    /// A state's rate of change that is not the state's dimension per time.
    RateMismatch,
    /// A simulate block that cannot run as written: a state without a rate
    /// or a starting value, an empty time range, a bad tolerance or table.
    BadSimulation,
    /// A simulate block whose equations are stiff: explicit integration
    /// would crawl, so heft stops and says so.
    StiffSystem,
    /// A run that could not be integrated to its end: a rate that is not
    /// finite, a step size that vanished, or too many steps.
    IntegrationFailed,
    /// A value asked of a run at a point the run does not have: a stop
    /// that never happened, an event that did not occur, a time outside it.
    NotInRun,
    /// A run query that names no state of a simulate block (or states of
    /// two), or a state used outside a run query.
    BadRunQuery,
    /// A sheet named on a `use` line that cannot be read.
    IncludeMissing,
    /// Sheets that use each other in a ring.
    IncludeCycle,
    /// A used sheet with errors, or a cell of it that cannot be read here
    /// (no value, or a tolerance that does not cross sheets).
    IncludeError,
    /// The branches of a piecewise formula (`if … then … else …`) with
    /// different dimensions, whichever is taken.
    BranchDimensions,
    /// A test of a piecewise formula comparing quantities of different
    /// dimensions (or a vector).
    ConditionDimensions,
    /// A range over the tolerances that straddles the test of a piecewise
    /// formula: both branches are taken into account, and no first-order
    /// estimate is given.
    RangeStraddlesCondition,
    /// An item of a parts list that lacks a quantity another item gives.
    PartQuantityMissing,
    /// A quantity of a parts list whose items give it in different dimensions.
    PartDimensionMismatch,
    /// An aggregate (`sum(list: …)`) that names no parts list, or sits
    /// inside another aggregate.
    BadAggregate,
    /// A lift on four or more points: the shares depend on the rigging's
    /// stiffness, so statics cannot give them.
    IndeterminateLift,
    /// A lift heft cannot compute: fewer than two points, a weight that is
    /// not a force, a position that is not a plan vector of lengths.
    BadLift,
    /// Three lift points on one line: they cannot hold a moment about it.
    CollinearLiftPoints,
    /// A two-point lift whose centre of gravity is off the line between
    /// the points: the load would roll about that line.
    LiftOffLine,
    /// A lift whose centre of gravity is outside its points (a load would
    /// have to push down): the load tips.
    LiftTips,
    /// A sweep whose name is not an input cell: a computed cell, a block's
    /// cell, a constant or a vector.
    SweepNotInput,
    /// A sweep's bounds that are not of the input's dimension, not finite,
    /// equal, or that depend on the swept input.
    BadSweepRange,
    /// A sweep's count that is not a whole number of at least 2, or a step
    /// that is not positive or not of the input's dimension.
    BadSweepSpacing,
    /// A sweep with more points than heft evaluates.
    SweepTooLarge,
    /// A key outside a table's rows: heft never extrapolates a table.
    TableKeyOutside,
    /// A table whose keys are not in increasing order, or repeat.
    TableKeysUnsorted,
    /// A table row that cannot be read: a cell that is not a number, or a
    /// row with more or fewer cells than the table has columns.
    TableRowError,
    /// A table by two keys that lacks a pair of them: every (key 1, key 2)
    /// pair must be a row.
    TableGridIncomplete,
    /// A table's CSV file that cannot be read, or a `from` table in a sheet
    /// that has no folder (read from standard input or from text).
    TableFileMissing,
    /// A column a table does not have (in `lookup` or among its keys), or a
    /// table the sheet does not define.
    TableColumnUnknown,
    /// A reading word `lookup` does not know.
    TableReadingUnknown,
    /// A `lookup` that does not say how the table is read.
    TableReadingMissing,
}

impl Code {
    /// The kebab-case code as printed and as matched by tests.
    pub fn as_str(self) -> &'static str {
        match self {
            Code::ParseError => "parse-error",
            Code::EncodingError => "encoding-error",
            Code::HeaderError => "header-error",
            Code::UnknownUnit => "unknown-unit",
            Code::AmbiguousUnit => "ambiguous-unit",
            Code::UndefinedName => "undefined-name",
            Code::BadCall => "bad-call",
            Code::DuplicateName => "duplicate-name",
            Code::ConfusableNames => "confusable-names",
            Code::MixedScriptName => "mixed-script-name",
            Code::Cycle => "cycle",
            Code::DimensionMismatch => "dimension-mismatch",
            Code::DeclaredUnitMismatch => "declared-unit-mismatch",
            Code::MassWeightMixup => "mass-weight-mixup",
            Code::DivisionByZero => "division-by-zero",
            Code::NotFinite => "not-finite",
            Code::OutOfDomain => "out-of-domain",
            Code::CheckFailed => "check-failed",
            Code::CheckUnknown => "check-unknown",
            Code::BadForce => "bad-force",
            Code::Underdetermined => "underdetermined",
            Code::Overdetermined => "overdetermined",
            Code::SingularSystem => "singular-system",
            Code::NoConvergence => "no-convergence",
            Code::SeveralRoots => "several-roots",
            Code::SolveTooLarge => "solve-too-large",
            Code::IllConditioned => "ill-conditioned",
            Code::BadTolerance => "bad-tolerance",
            Code::HandConversionFactor => "hand-conversion-factor",
            Code::GravityInconsistent => "gravity-inconsistent",
            Code::RoundedGravity => "rounded-gravity",
            Code::MixedSystems => "mixed-systems",
            Code::UnusedInput => "unused-input",
            Code::ShadowedConstant => "shadowed-constant",
            Code::DegreesAsRadians => "degrees-as-radians",
            Code::AmbiguousAngularSpeed => "ambiguous-angular-speed",
            Code::RateMismatch => "rate-mismatch",
            Code::BadSimulation => "bad-simulation",
            Code::StiffSystem => "stiff-system",
            Code::IntegrationFailed => "integration-failed",
            Code::NotInRun => "not-in-run",
            Code::BadRunQuery => "bad-run-query",
            Code::IncludeMissing => "include-missing",
            Code::IncludeCycle => "include-cycle",
            Code::IncludeError => "include-error",
            Code::BranchDimensions => "branch-dimensions",
            Code::ConditionDimensions => "condition-dimensions",
            Code::RangeStraddlesCondition => "range-straddles-condition",
            Code::PartQuantityMissing => "part-quantity-missing",
            Code::PartDimensionMismatch => "part-dimension-mismatch",
            Code::BadAggregate => "bad-aggregate",
            Code::IndeterminateLift => "indeterminate-lift",
            Code::BadLift => "bad-lift",
            Code::CollinearLiftPoints => "collinear-lift-points",
            Code::LiftOffLine => "lift-off-line",
            Code::LiftTips => "lift-tips",
            Code::SweepNotInput => "sweep-not-input",
            Code::BadSweepRange => "bad-sweep-range",
            Code::BadSweepSpacing => "bad-sweep-spacing",
            Code::SweepTooLarge => "sweep-too-large",
            Code::TableKeyOutside => "table-key-outside",
            Code::TableKeysUnsorted => "table-keys-unsorted",
            Code::TableRowError => "table-row-error",
            Code::TableGridIncomplete => "table-grid-incomplete",
            Code::TableFileMissing => "table-file-missing",
            Code::TableColumnUnknown => "table-column-unknown",
            Code::TableReadingUnknown => "table-reading-unknown",
            Code::TableReadingMissing => "table-reading-missing",
        }
    }

    /// Every code, for documentation and tests.
    pub const ALL: [Code; 68] = [
        Code::ParseError,
        Code::EncodingError,
        Code::HeaderError,
        Code::UnknownUnit,
        Code::AmbiguousUnit,
        Code::UndefinedName,
        Code::BadCall,
        Code::DuplicateName,
        Code::ConfusableNames,
        Code::MixedScriptName,
        Code::Cycle,
        Code::DimensionMismatch,
        Code::DeclaredUnitMismatch,
        Code::MassWeightMixup,
        Code::DivisionByZero,
        Code::NotFinite,
        Code::OutOfDomain,
        Code::CheckFailed,
        Code::CheckUnknown,
        Code::BadForce,
        Code::Underdetermined,
        Code::Overdetermined,
        Code::SingularSystem,
        Code::NoConvergence,
        Code::SeveralRoots,
        Code::SolveTooLarge,
        Code::IllConditioned,
        Code::BadTolerance,
        Code::HandConversionFactor,
        Code::GravityInconsistent,
        Code::RoundedGravity,
        Code::MixedSystems,
        Code::UnusedInput,
        Code::ShadowedConstant,
        Code::DegreesAsRadians,
        Code::AmbiguousAngularSpeed,
        Code::RateMismatch,
        Code::BadSimulation,
        Code::StiffSystem,
        Code::IntegrationFailed,
        Code::NotInRun,
        Code::BadRunQuery,
        Code::IncludeMissing,
        Code::IncludeCycle,
        Code::IncludeError,
        Code::BranchDimensions,
        Code::ConditionDimensions,
        Code::RangeStraddlesCondition,
        Code::PartQuantityMissing,
        Code::PartDimensionMismatch,
        Code::BadAggregate,
        Code::IndeterminateLift,
        Code::BadLift,
        Code::CollinearLiftPoints,
        Code::LiftOffLine,
        Code::LiftTips,
        Code::SweepNotInput,
        Code::BadSweepRange,
        Code::BadSweepSpacing,
        Code::SweepTooLarge,
        Code::TableKeyOutside,
        Code::TableKeysUnsorted,
        Code::TableRowError,
        Code::TableGridIncomplete,
        Code::TableFileMissing,
        Code::TableColumnUnknown,
        Code::TableReadingUnknown,
        Code::TableReadingMissing,
    ];
}

impl std::fmt::Display for Code {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.as_str())
    }
}

/// A secondary place in the source with a short remark, such as the other
/// operand of a mismatched `+`.
#[derive(Clone, Debug, PartialEq)]
pub struct Label {
    /// Where the remark points.
    pub span: Span,
    /// What to say there.
    pub message: String,
}

/// A rewrite of the sheet a finding suggests.
///
/// A fix is shown only once [`crate::pipeline::run`] has evaluated the sheet
/// with it applied ([`crate::audit::verify_fixes`]): the number its help
/// gives is the fixed sheet's own value, and until then its words stay here,
/// out of [`Diagnostic::help`], so nothing prints them.
#[derive(Clone, Debug, PartialEq)]
pub struct Fix {
    /// The text the fix replaces (within one line).
    pub span: Span,
    /// What it writes there.
    pub replacement: String,
    /// Words before `write …`: `if it is a mass, `.
    pub lead: String,
    /// What to write, as the help shows it (`m_part = 120 lbm`); `None` for
    /// the fixed line's formula (or check) as the fixed sheet reads it.
    pub shows: Option<String>,
    /// Words after the number: `; otherwise rename it (`W_part`)`.
    pub tail: String,
    /// Where the fixed sheet holds the number the help gives, if any.
    pub value_of: Option<FixValue>,
}

/// Where the fixed sheet holds the number a fix's help gives.
#[derive(Clone, Debug, PartialEq)]
pub enum FixValue {
    /// The cell or the side of a check the fix writes into.
    Here,
    /// The cell of this name (a fix to an input gives its number further on).
    Cell(String),
}

impl Fix {
    /// A fix that replaces `span` with `replacement` and shows the value of
    /// what it writes into: `write `{replacement}` (= …)`.
    pub fn replace(span: Span, replacement: impl Into<String>) -> Fix {
        let replacement = replacement.into();
        Fix {
            span,
            shows: Some(replacement.clone()),
            replacement,
            lead: String::new(),
            tail: String::new(),
            value_of: Some(FixValue::Here),
        }
    }

    /// The same fix with words before `write`.
    pub fn with_lead(mut self, lead: impl Into<String>) -> Fix {
        self.lead = lead.into();
        self
    }

    /// The same fix with more words after its number.
    pub fn with_tail(mut self, tail: impl AsRef<str>) -> Fix {
        self.tail.push_str(tail.as_ref());
        self
    }

    /// The same fix, showing `shows` as what to write.
    pub fn showing(mut self, shows: Option<String>) -> Fix {
        self.shows = shows;
        self
    }

    /// The same fix, giving the number of `value_of`.
    pub fn giving(mut self, value_of: Option<FixValue>) -> Fix {
        self.value_of = value_of;
        self
    }
}

/// One finding: what, where, and what to do about it.
#[derive(Clone, Debug, PartialEq)]
pub struct Diagnostic {
    /// Error, warning or info.
    pub severity: Severity,
    /// The stable code.
    pub code: Code,
    /// The primary place in the source (byte offsets).
    pub span: Span,
    /// One sentence saying what is wrong.
    pub message: String,
    /// Further places with remarks.
    pub labels: Vec<Label>,
    /// A concrete suggestion, ideally with the number it would give.
    pub help: Option<String>,
    /// Before [`crate::audit::verify_fixes`]: rewrites that would cure it,
    /// best first, none shown. After: the one fix its help shows, if any.
    pub fixes: Vec<Fix>,
}

impl Diagnostic {
    /// A warning at `span`.
    pub fn warning(code: Code, span: Span, message: impl Into<String>) -> Self {
        Self::new(Severity::Warning, code, span, message)
    }

    /// An info at `span`.
    pub fn info(code: Code, span: Span, message: impl Into<String>) -> Self {
        Self::new(Severity::Info, code, span, message)
    }

    /// An error at `span`.
    pub fn error(code: Code, span: Span, message: impl Into<String>) -> Self {
        Self::new(Severity::Error, code, span, message)
    }

    /// A diagnostic of any severity at `span`.
    pub fn new(severity: Severity, code: Code, span: Span, message: impl Into<String>) -> Self {
        Diagnostic {
            severity,
            code,
            span,
            message: message.into(),
            labels: Vec::new(),
            help: None,
            fixes: Vec::new(),
        }
    }

    /// Adds a remark at another place.
    pub fn with_label(mut self, span: Span, message: impl Into<String>) -> Self {
        self.labels.push(Label {
            span,
            message: message.into(),
        });
        self
    }

    /// Adds the suggested fix.
    pub fn with_help(mut self, help: impl Into<String>) -> Self {
        self.help = Some(help.into());
        self
    }

    /// Adds a fix to be verified; [`Diagnostic::help`] stays the advice
    /// shown if no fix verifies.
    pub fn with_fix(mut self, fix: Fix) -> Self {
        self.fixes.push(fix);
        self
    }
}
