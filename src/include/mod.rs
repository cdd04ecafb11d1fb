//! Reading the sheets a sheet uses from files: `use "gear_register.heft" as
//! gear` loads the sheet at that path (relative to the using sheet's
//! folder), evaluates it on its own, and gives its cells to the using sheet
//! as fixed inputs read `gear.NAME` (see [`crate::sheet::UsedSheet`]).
//!
//! A ring of sheets that use each other is named in full (`include-cycle`);
//! a sheet used twice on one chain of `use` lines is read once.

mod files;

pub use files::{MAX_TABLE_FILE_LEN, read_sheet_files};

use std::collections::HashMap;
use std::path::{Path, PathBuf};
use std::sync::{Arc, Mutex};

use crate::base::{Code, Severity};
use crate::eval::Evaluated;
use crate::sheet::{
    Export, LoadProblem, Loaded, Sheet, SheetFiles, SheetLoader, UsedError, UsedSheet,
};

/// How deep `use` lines may nest: a sheet that uses a sheet that uses …
pub const MAX_USE_DEPTH: usize = 16;

/// Loads used sheets from files, relative to the folder of the sheet being
/// linked, remembering what it loaded so each file is read once.
#[derive(Debug)]
pub struct FileLoader {
    /// The folder `use` paths are relative to.
    folder: PathBuf,
    /// The folder `use` paths are shown relative to: empty for the sheet
    /// the user named (paths show as written), the used sheet's own folder
    /// as shown for a sheet it uses in turn.
    shown_folder: PathBuf,
    /// The sheets being loaded, outermost first (canonical paths and how
    /// each is shown), to name a ring.
    chain: Vec<(PathBuf, String)>,
    /// What each file gave, by canonical path.
    loaded: Arc<Mutex<HashMap<PathBuf, Loaded>>>,
}

impl FileLoader {
    /// The loader for the sheet read from `path`.
    pub fn for_sheet(path: &Path) -> FileLoader {
        let canonical = std::fs::canonicalize(path).unwrap_or_else(|_| path.to_path_buf());
        FileLoader {
            folder: canonical.parent().map_or_else(
                || path.parent().map(Path::to_path_buf).unwrap_or_default(),
                Path::to_path_buf,
            ),
            shown_folder: PathBuf::new(),
            chain: vec![(canonical, path.display().to_string())],
            loaded: Arc::default(),
        }
    }

    fn load_file(&self, canonical: &Path, shown: String) -> Loaded {
        let bytes = std::fs::read(canonical).map_err(|error| LoadProblem {
            code: Code::IncludeMissing,
            message: format!("cannot read {shown}: {error}"),
        })?;
        if bytes.len() > crate::base::MAX_SOURCE_LEN {
            return Err(LoadProblem {
                code: Code::IncludeMissing,
                message: format!("{shown} is larger than 4 GiB"),
            });
        }
        let (text, encoding_problem) = crate::decode_source(&bytes);
        let shown_path = Path::new(&shown);
        let mut chain = self.chain.clone();
        chain.push((canonical.to_path_buf(), shown.clone()));
        let inner = FileLoader {
            folder: canonical
                .parent()
                .map(Path::to_path_buf)
                .unwrap_or_default(),
            shown_folder: shown_path
                .parent()
                .map(Path::to_path_buf)
                .unwrap_or_default(),
            chain,
            loaded: Arc::clone(&self.loaded),
        };
        let sheet = Sheet::parse_with(&text, &inner);
        let mut evaluated = crate::blocks::evaluate(Arc::new(sheet), Arc::from(text.as_str()));
        evaluated.diagnostics.extend(encoding_problem);
        Ok(Arc::new(used_sheet(shown, &evaluated)))
    }
}

impl SheetLoader for FileLoader {
    fn sheet_files(&self, source: &str) -> Arc<SheetFiles> {
        Arc::new(files::read_files_in(&self.folder, source))
    }

    fn load(&self, written: &str) -> Loaded {
        let path = self.folder.join(written);
        let shown = self.shown_folder.join(written).display().to_string();
        let canonical = std::fs::canonicalize(&path).map_err(|error| LoadProblem {
            code: Code::IncludeMissing,
            message: format!("cannot read {shown}: {error}"),
        })?;
        if let Some(at) = self.chain.iter().position(|(open, _)| *open == canonical) {
            let ring: Vec<&str> = self.chain[at..]
                .iter()
                .map(|(_, shown)| shown.as_str())
                .chain(std::iter::once(self.chain[at].1.as_str()))
                .collect();
            return Err(LoadProblem {
                code: Code::IncludeCycle,
                message: format!("sheets use each other in a ring: {}", ring.join(" uses ")),
            });
        }
        if self.chain.len() > MAX_USE_DEPTH {
            return Err(LoadProblem {
                code: Code::IncludeCycle,
                message: format!("`use` lines nest more than {MAX_USE_DEPTH} deep at {shown}"),
            });
        }
        let cached = self
            .loaded
            .lock()
            .ok()
            .and_then(|loaded| loaded.get(&canonical).cloned());
        if let Some(loaded) = cached {
            return loaded;
        }
        let loaded = self.load_file(&canonical, shown);
        if let Ok(mut cache) = self.loaded.lock() {
            cache.insert(canonical, loaded.clone());
        }
        loaded
    }
}

/// What a sheet that uses `evaluated` reads of it.
fn used_sheet(path: String, evaluated: &Evaluated) -> UsedSheet {
    let sheet = evaluated.sheet();
    let sig_figs = evaluated.header().sig_figs;
    let exports = evaluated
        .cells()
        .map(|cell| {
            let value = cell
                .any_value()
                .filter(|_| cell.status == crate::eval::CellStatus::Ok);
            let shown = value.map(|value| {
                let text = crate::eval::format_value(value, cell.display, sig_figs);
                let unit = cell.display.text.to_string();
                let number = text
                    .strip_suffix(unit.as_str())
                    .map_or(text.as_str(), str::trim_end)
                    .to_string();
                (number, unit)
            });
            Export {
                name: cell.name.into(),
                value,
                shown,
                description: cell.description.map(str::to_string),
                toleranced: cell.spread.is_some()
                    || evaluated.ranges.get(cell.id).is_some_and(Option::is_some),
                line: evaluated.lines.line_of(cell.span.start()) + 1,
            }
        })
        .collect();
    let errors = evaluated
        .diagnostics
        .iter()
        .filter(|diagnostic| diagnostic.severity == Severity::Error)
        .map(|diagnostic| UsedError {
            code: diagnostic.code,
            line: evaluated.lines.line_of(diagnostic.span.start()) + 1,
            message: diagnostic.message.clone(),
        })
        .collect();
    UsedSheet {
        path,
        fingerprint: crate::sheet::fingerprint::fingerprint(evaluated.source(), sheet),
        title: evaluated.header().title.clone(),
        revision: evaluated.header().revision.clone(),
        source: Arc::from(evaluated.source()),
        exports,
        errors,
    }
}
