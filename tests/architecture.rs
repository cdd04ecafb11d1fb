//! The layout's rules, read from the source: each top-level module of
//! `src/` uses only the modules below it in the pipeline, so there are no
//! cycles, and `base` and `numeric` use nothing of the crate. A `crate::…`
//! path in code (not in a comment, not in a test module) counts as a use.

use std::collections::BTreeMap;
use std::fs;
use std::path::{Path, PathBuf};

/// The top-level modules from the bottom of the pipeline up: a module may
/// use only the modules before it. Items of the crate root (`CAUTION`,
/// `decode_source`, `allocator`) may be used by any module but `base`
/// and `numeric`.
const LAYERS: [&str; 18] = [
    "base", "numeric", "units", "syntax", "sheet", "eval", "blocks", "include", "audit",
    "pipeline", "live", "review", "diff", "present", "plot", "report", "tui", "cli",
];

/// Modules that use nothing of the crate at all.
const SELF_CONTAINED: [&str; 2] = ["base", "numeric"];

/// Presentation: it reads the evaluated model (`eval`, `review`, `diff`,
/// `audit`), never the syntax tree.
const PRESENTATION: [&str; 5] = ["present", "plot", "report", "tui", "cli"];

/// The longest a source file may be.
const MAX_FILE_LINES: usize = 1000;

/// The crate's `src/` folder.
fn src_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("src")
}

fn rust_files(dir: &Path, found: &mut Vec<PathBuf>) {
    let entries = fs::read_dir(dir).unwrap_or_else(|error| panic!("{}: {error}", dir.display()));
    for entry in entries {
        let path = entry.expect("a directory entry").path();
        if path.is_dir() {
            rust_files(&path, found);
        } else if path.extension().is_some_and(|e| e == "rs") {
            found.push(path);
        }
    }
}

/// For each top-level module, the crate paths its code uses, with one
/// place each is used.
fn uses() -> BTreeMap<String, BTreeMap<String, String>> {
    let src = src_dir();
    let mut files = Vec::new();
    rust_files(&src, &mut files);
    let mut uses: BTreeMap<String, BTreeMap<String, String>> = BTreeMap::new();
    for file in files {
        let relative = file
            .strip_prefix(&src)
            .expect("below src")
            .to_string_lossy()
            .into_owned();
        let module = relative
            .split(['/', '.'])
            .next()
            .unwrap_or_default()
            .to_string();
        if module == "lib" || module == "main" {
            continue;
        }
        let text = fs::read_to_string(&file).unwrap_or_else(|error| panic!("{relative}: {error}"));
        let code = text.split("#[cfg(test)]").next().unwrap_or_default();
        for (number, line) in code.lines().enumerate() {
            let line = line.trim_start();
            if line.starts_with("//") {
                continue;
            }
            let mut named: Vec<String> = Vec::new();
            for (at, _) in line.match_indices("crate::") {
                let rest = &line[at + "crate::".len()..];
                if let Some(group) = rest.strip_prefix('{') {
                    let group = group.split('}').next().unwrap_or_default();
                    named.extend(group.split(',').filter_map(|part| {
                        let head = part.trim().split("::").next()?.trim();
                        (!head.is_empty()).then(|| head.to_string())
                    }));
                } else {
                    let head: String = rest
                        .chars()
                        .take_while(|c| c.is_alphanumeric() || *c == '_')
                        .collect();
                    named.push(head);
                }
            }
            for target in named {
                if target != module && target != "self" {
                    uses.entry(module.clone())
                        .or_default()
                        .entry(target)
                        .or_insert_with(|| format!("src/{relative}:{}", number + 1));
                }
            }
        }
    }
    uses
}

#[test]
fn every_top_level_module_is_in_the_layer_list() {
    let src = src_dir();
    for entry in fs::read_dir(&src).expect("src") {
        let path = entry.expect("an entry").path();
        let name = path
            .file_stem()
            .expect("a name")
            .to_string_lossy()
            .into_owned();
        if ["lib", "main", "allocator"].contains(&name.as_str()) {
            continue;
        }
        assert!(
            LAYERS.contains(&name.as_str()),
            "src/{name} is not in LAYERS: place it in the pipeline"
        );
    }
}

#[test]
fn modules_use_only_the_layers_below_them() {
    let rank = |name: &str| LAYERS.iter().position(|layer| *layer == name);
    let mut wrong = Vec::new();
    for (module, targets) in uses() {
        let Some(own) = rank(&module) else { continue };
        for (target, place) in targets {
            let allowed = match rank(&target) {
                Some(other) => other < own && !(SELF_CONTAINED.contains(&module.as_str())),
                // A root item (CAUTION, decode_source, allocator).
                None => !SELF_CONTAINED.contains(&module.as_str()),
            };
            if !allowed {
                wrong.push(format!("{module} uses {target} ({place})"));
            }
        }
    }
    assert!(
        wrong.is_empty(),
        "uses against the layering:\n{}",
        wrong.join("\n")
    );
}

#[test]
fn presentation_never_reads_the_syntax_tree() {
    let uses = uses();
    let wrong: Vec<String> = PRESENTATION
        .iter()
        .filter_map(|module| {
            let place = uses.get(*module)?.get("syntax")?;
            Some(format!("{module} uses syntax ({place})"))
        })
        .collect();
    assert!(wrong.is_empty(), "{}", wrong.join("\n"));
}

#[test]
fn no_source_file_is_over_a_thousand_lines() {
    let src = src_dir();
    let mut files = Vec::new();
    rust_files(&src, &mut files);
    let long: Vec<String> = files
        .iter()
        .filter_map(|file| {
            let text = fs::read_to_string(file)
                .unwrap_or_else(|error| panic!("{}: {error}", file.display()));
            let n = text.lines().count();
            (n > MAX_FILE_LINES).then(|| format!("{} has {n} lines", file.display()))
        })
        .collect();
    assert!(
        long.is_empty(),
        "split these into modules of named parts:\n{}",
        long.join("\n")
    );
}

#[test]
fn the_reader_sees_the_uses_it_must_judge() {
    // The rule above is only as good as its reader: it must find the uses
    // every layer is known to make.
    let uses = uses();
    for (module, target) in [
        ("eval", "units"),
        ("cli", "pipeline"),
        ("tui", "eval"),
        ("sheet", "syntax"),
        ("report", "plot"),
    ] {
        assert!(
            uses.get(module)
                .is_some_and(|targets| targets.contains_key(target)),
            "{module} → {target} not seen"
        );
    }
}

/// The ways code names a block kind: its statement, its linked item, its
/// node in the dependency order.
const BLOCK_KIND_NAMES: [&str; 8] = [
    "StatementKind::Solve",
    "StatementKind::Simulate",
    "StatementKind::Case",
    "Item::Solve",
    "Item::Simulate",
    "Item::Case",
    "Node::Solve",
    "Node::Simulate",
];

/// The core evaluator computes cells and checks and runs no block: the
/// blocks (`src/blocks/`) are handed their nodes. Only the model's data
/// types (`model.rs`, `run_model.rs`) hold a block's report.
#[test]
fn the_core_evaluator_names_no_block_kind() {
    let mut files = Vec::new();
    rust_files(&src_dir().join("eval"), &mut files);
    assert!(!files.is_empty());
    let mut named = Vec::new();
    for file in files {
        let text =
            fs::read_to_string(&file).unwrap_or_else(|error| panic!("{}: {error}", file.display()));
        for (number, line) in text.lines().enumerate() {
            for kind in BLOCK_KIND_NAMES.iter().filter(|kind| line.contains(*kind)) {
                named.push(format!("{}:{}: {kind}", file.display(), number + 1));
            }
        }
    }
    assert!(
        named.is_empty(),
        "the core evaluator names a block kind:\n{}",
        named.join("\n")
    );
}
