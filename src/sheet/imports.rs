//! The sheets a sheet uses: `use "gear_register.heft" as gear` makes the
//! cells of another sheet readable as `gear.NAME`.
//!
//! Linking asks a [`SheetLoader`] for each `use` line; what it gives is the
//! used sheet already evaluated ([`UsedSheet`]): its cells' values, its
//! fingerprint and title block, its problems. The values enter this sheet as
//! fixed inputs ([`crate::syntax::ast::Target::Imported`]): a used sheet is
//! evaluated on its own, and only its results cross over. Reading files is
//! the loader's business (`crate::include`), so this layer touches no file.

use std::sync::Arc;

use compact_str::CompactString;

use crate::base::{Code, Diagnostic};
use crate::syntax::ast::{Expr, ExprKind, Ident, Statement, StatementKind, Target};
use crate::units::Value;

use super::SheetFiles;

/// A cell of a used sheet, as a sheet that uses it reads it.
#[derive(Clone, Debug, PartialEq)]
pub struct Export {
    /// Its name in its own sheet (read here as `ALIAS.name`).
    pub name: CompactString,
    /// Its value, if its sheet could establish one.
    pub value: Option<Value>,
    /// Its value as its own sheet shows it: number and unit.
    pub shown: Option<(String, String)>,
    /// Its description, if any.
    pub description: Option<String>,
    /// Whether its own sheet gives it a tolerance or range, which does not
    /// cross over: reading it is an error rather than a silent nominal.
    pub toleranced: bool,
    /// Its line in its own file (1-based).
    pub line: usize,
}

/// Another sheet, loaded and evaluated for a `use` line.
#[derive(Clone, Debug, PartialEq)]
pub struct UsedSheet {
    /// Its path relative to the folder of the sheet the user named.
    pub path: String,
    /// Its fingerprint (which covers the sheets it uses in turn).
    pub fingerprint: String,
    /// Its title, from its header.
    pub title: Option<String>,
    /// Its revision, from its header.
    pub revision: Option<String>,
    /// Its text, for the diff and the report.
    pub source: Arc<str>,
    /// Its cells, by name.
    pub exports: Vec<Export>,
    /// Its errors, in file order; a sheet with any is not one to read
    /// from without saying so.
    pub errors: Vec<UsedError>,
}

/// An error of a used sheet, as the sheet over it reports it.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct UsedError {
    /// Its code.
    pub code: Code,
    /// Its line in the used sheet's file (1-based).
    pub line: usize,
    /// Its message.
    pub message: String,
}

impl UsedSheet {
    /// The export named `name`, with its index.
    pub fn export(&self, name: &str) -> Option<(usize, &Export)> {
        self.exports
            .iter()
            .enumerate()
            .find(|(_, export)| export.name == name)
    }
}

/// Why a `use` line gives no sheet.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct LoadProblem {
    /// The diagnostic code (`include-missing`, `include-cycle`, …).
    pub code: Code,
    /// What went wrong, in full.
    pub message: String,
}

/// What a loader gives for a `use` line's path.
pub type Loaded = Result<Arc<UsedSheet>, LoadProblem>;

/// Loads the sheet a `use` line names, relative to the using sheet.
pub trait SheetLoader: std::fmt::Debug {
    /// The sheet at `path` as written on the `use` line.
    fn load(&self, path: &str) -> Loaded;

    /// The files the tables of `source` read beside it (none where the
    /// sheet has no folder: each such table says so).
    fn sheet_files(&self, _source: &str) -> Arc<SheetFiles> {
        Arc::default()
    }
}

/// A sheet's table files given directly (tests, and text with its files in
/// memory): a `use` line is an error, as for [`NoFiles`].
impl SheetLoader for SheetFiles {
    fn load(&self, path: &str) -> Loaded {
        NoFiles.load(path)
    }

    fn sheet_files(&self, _source: &str) -> Arc<SheetFiles> {
        Arc::new(self.clone())
    }
}

/// The loader of a sheet that has no file (text given directly): a `use`
/// line has no folder to be relative to.
#[derive(Debug)]
pub struct NoFiles;

impl SheetLoader for NoFiles {
    fn load(&self, path: &str) -> Loaded {
        Err(LoadProblem {
            code: Code::IncludeMissing,
            message: format!(
                "cannot use \"{path}\": this sheet was not read from a file, so there is no folder to find it in"
            ),
        })
    }
}

/// A loader that gives again what an earlier linking read (the sheets its
/// `use` lines named and its tables' files), so that a sheet with a fix
/// applied reads exactly what the sheet did.
#[derive(Debug)]
pub struct Reloaded<'a> {
    /// The sheets the `use` lines found.
    pub imports: &'a [Import],
    /// The files the tables read.
    pub files: Arc<SheetFiles>,
}

impl SheetLoader for Reloaded<'_> {
    fn load(&self, path: &str) -> Loaded {
        self.imports
            .iter()
            .find(|import| import.path == path)
            .map_or_else(|| NoFiles.load(path), |import| import.loaded.clone())
    }

    fn sheet_files(&self, _source: &str) -> Arc<SheetFiles> {
        Arc::clone(&self.files)
    }
}

/// One `use` line of a sheet and what it found.
#[derive(Clone, Debug, PartialEq)]
pub struct Import {
    /// The `use` statement's index.
    pub statement: usize,
    /// The path as written.
    pub path: String,
    /// The name its cells are read under.
    pub alias: Ident,
    /// The sheet, or why there is none.
    pub loaded: Loaded,
}

impl Import {
    /// The used sheet, if it loaded.
    pub fn sheet(&self) -> Option<&UsedSheet> {
        self.loaded.as_deref().ok()
    }
}

/// Loads the sheet of every `use` line, in file order; a line that names
/// no readable sheet, or an alias used twice, gets its diagnostic here.
pub(super) fn load_uses(
    statements: &[Statement],
    loader: &dyn SheetLoader,
    diagnostics: &mut Vec<Diagnostic>,
) -> Vec<Import> {
    let mut imports: Vec<Import> = Vec::new();
    for (index, statement) in statements.iter().enumerate() {
        let StatementKind::Use(used) = &statement.kind else {
            continue;
        };
        if let Some(first) = imports
            .iter()
            .find(|import| import.alias.text == used.alias.text)
        {
            diagnostics.push(
                Diagnostic::error(
                    Code::DuplicateName,
                    used.alias.span,
                    format!("`{}` already names a used sheet", used.alias.text),
                )
                .with_label(first.alias.span, "first used here"),
            );
            continue;
        }
        let loaded = loader.load(&used.path.text);
        match &loaded {
            Err(problem) => diagnostics.push(Diagnostic::error(
                problem.code,
                used.path.span,
                problem.message.clone(),
            )),
            Ok(sheet) if !sheet.errors.is_empty() => {
                let count = sheet.errors.len();
                // A ring closed further down is still a ring through this line.
                let ring = sheet.errors.iter().find(|e| e.code == Code::IncludeCycle);
                let first = ring.or(sheet.errors.first());
                let (code, first) = first.map_or((Code::IncludeError, String::new()), |error| {
                    let code = if error.code == Code::IncludeCycle {
                        Code::IncludeCycle
                    } else {
                        Code::IncludeError
                    };
                    (code, format!("line {}: {}", error.line, error.message))
                });
                diagnostics.push(
                    Diagnostic::error(
                        code,
                        used.path.span,
                        format!(
                            "{} has {count} error{}; {}: {first}",
                            sheet.path,
                            if count == 1 { "" } else { "s" },
                            if ring.is_some() { "the ring" } else { "the first" }
                        ),
                    )
                    .with_help(format!(
                        "run `heft check {}` and correct it: its results are not to be relied on here until then",
                        sheet.path
                    )),
                )
            }
            Ok(_) => {}
        }
        imports.push(Import {
            statement: index,
            path: used.path.text.clone(),
            alias: used.alias.clone(),
            loaded,
        });
    }
    imports
}

/// Every cell of the used sheets by its qualified name (`gear.WLL`): which
/// `use` and which export.
pub(super) fn qualified_names(imports: &[Import]) -> Vec<(CompactString, (u32, u32))> {
    let mut names = Vec::new();
    for (sheet_index, import) in imports.iter().enumerate() {
        let Some(sheet) = import.sheet() else {
            continue;
        };
        for (cell_index, export) in sheet.exports.iter().enumerate() {
            if let (Ok(sheet_at), Ok(cell_at)) =
                (u32::try_from(sheet_index), u32::try_from(cell_index))
            {
                let name = format!("{}.{}", import.alias.text, export.name);
                names.push((CompactString::from(name), (sheet_at, cell_at)));
            }
        }
    }
    names
}

impl super::Sheet {
    /// The used sheets' cells this sheet reads, each once, in the order
    /// first read in the file: which `use` and which export.
    pub fn imported_reads(&self) -> Vec<(u32, u32)> {
        let mut reads = Vec::new();
        let mut note = |expr: &Expr| {
            expr.walk(&mut |node| {
                if let ExprKind::Name(name) = &node.kind
                    && let Target::Imported { sheet, cell } = name.target
                    && !reads.contains(&(sheet, cell))
                {
                    reads.push((sheet, cell));
                }
            });
        };
        for statement in &self.statements {
            match &statement.kind {
                StatementKind::Cell(cell) => {
                    note(&cell.expr);
                    if let Some(tolerance) = &cell.tolerance {
                        note(tolerance.expr());
                    }
                }
                StatementKind::Check(check) => {
                    note(&check.lhs);
                    note(&check.rhs);
                }
                StatementKind::Body(body) => note(&body.resultant.expr),
                StatementKind::Solve(block) => {
                    for equation in &block.equations {
                        note(&equation.lhs);
                        note(&equation.rhs);
                    }
                }
                StatementKind::Case(case) => {
                    for replacement in &case.overrides {
                        note(&replacement.expr);
                    }
                }
                StatementKind::Simulate(block) => {
                    let mut block = block.clone();
                    for expr in block.exprs_mut() {
                        note(expr);
                    }
                }
                _ => {}
            }
        }
        reads
    }
}
