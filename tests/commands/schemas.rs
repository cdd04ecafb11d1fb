//! The JSON Schemas of `heft-check/1`, `heft-audit/1` and `heft-diff/1`:
//! the files committed in `docs/schemas/` are the ones generated from the
//! output types (`heftsheet::cli::json_schemas`), and what the binary
//! prints for every sheet the repository keeps validates against them.
//!
//! After changing an output type, regenerate the files with
//! `HEFT_BLESS_SCHEMAS=1 cargo test --test commands schemas::`.

use crate::common;

use std::path::{Path, PathBuf};

use serde_json::Value;

/// Set (to anything but empty) to write the generated schemas to
/// `docs/schemas/` instead of comparing them.
const BLESS: &str = "HEFT_BLESS_SCHEMAS";

/// `docs/schemas/` in the project.
fn schema_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("docs/schemas")
}

/// The file a format's schema is kept in: `heft-check/1` in
/// `heft-check-1.schema.json`.
fn schema_file(format: &str) -> PathBuf {
    schema_dir().join(format!("{}.schema.json", format.replace('/', "-")))
}

/// The committed schema of a format, as a validator that resolves nothing
/// outside the document (the crate is built without its HTTP and file
/// resolvers).
fn validator(format: &str) -> jsonschema::Validator {
    let path = schema_file(format);
    let schema: Value = serde_json::from_str(&common::read_file(&path))
        .unwrap_or_else(|error| panic!("{}: {error}", path.display()));
    jsonschema::validator_for(&schema)
        .unwrap_or_else(|error| panic!("{} is not a valid schema: {error}", path.display()))
}

/// Asserts `json` (the output of `what`) validates, naming every error.
#[track_caller]
fn assert_valid(validator: &jsonschema::Validator, json: &str, what: &str) {
    let instance: Value =
        serde_json::from_str(json).unwrap_or_else(|error| panic!("{what}: not JSON: {error}"));
    let errors: Vec<String> = validator
        .iter_errors(&instance)
        .map(|error| format!("  at {}: {error}", error.instance_path()))
        .collect();
    assert!(
        errors.is_empty(),
        "{what} does not follow its schema:\n{}",
        errors.join("\n")
    );
}

/// Every `$ref` in a schema, to check that none leaves the document.
fn refs(value: &Value, found: &mut Vec<String>) {
    match value {
        Value::Object(map) => {
            for (key, inner) in map {
                match (key.as_str(), inner) {
                    ("$ref", Value::String(target)) => found.push(target.clone()),
                    _ => refs(inner, found),
                }
            }
        }
        Value::Array(items) => items.iter().for_each(|item| refs(item, found)),
        _ => {}
    }
}

#[test]
fn the_committed_schemas_are_the_ones_the_output_types_give() {
    let bless = std::env::var_os(BLESS).is_some_and(|v| !v.is_empty());
    let schemas = heftsheet::cli::json_schemas();
    for (format, generated) in &schemas {
        let path = schema_file(format);
        if bless {
            std::fs::write(&path, generated)
                .unwrap_or_else(|error| panic!("cannot write {}: {error}", path.display()));
            continue;
        }
        let committed = std::fs::read_to_string(&path).unwrap_or_default();
        assert!(
            committed == *generated,
            "{} is not the schema the output types give; regenerate it with \
             `{BLESS}=1 cargo test --test commands schemas::` and commit it",
            path.display()
        );
        let schema: Value = serde_json::from_str(generated).expect("a schema is JSON");
        assert_eq!(schema["title"], *format, "{}", path.display());
        assert_eq!(
            schema["properties"]["schema"]["const"],
            *format,
            "{}: `schema` names the format",
            path.display()
        );
        let mut targets = Vec::new();
        refs(&schema, &mut targets);
        assert!(
            targets.iter().all(|target| target.starts_with("#/")),
            "{}: a `$ref` outside the document: {targets:?}",
            path.display()
        );
    }
    // No schema of a format heft no longer prints.
    let expected: Vec<PathBuf> = schemas
        .iter()
        .map(|(format, _)| schema_file(format))
        .collect();
    for entry in std::fs::read_dir(schema_dir()).expect("docs/schemas/") {
        let path = entry.expect("an entry").path();
        assert!(
            expected.contains(&path),
            "{} is not the schema of a JSON output",
            path.display()
        );
    }
}

#[test]
fn every_json_output_of_every_kept_sheet_follows_its_schema() {
    let check = validator("heft-check/1");
    let audit = validator("heft-audit/1");
    let mut sheets = common::sheets_in("sheets");
    sheets.extend(common::sheets_below(&[
        "tests/sheets",
        "tests/revisions",
        "tests/data",
    ]));
    assert!(sheets.len() > 50, "the corpora are there: {}", sheets.len());
    for sheet in &sheets {
        let file = sheet.to_string_lossy();
        let (code, out, err) = common::heft(&["check", "--json", &file]);
        assert!(code == 0 || code == 1, "check --json {file}: {code} {err}");
        assert_valid(&check, &out, &format!("check --json {file}"));
        let (code, out, err) = common::heft(&["audit", "--json", &file]);
        assert!(code == 0 || code == 1, "audit --json {file}: {code} {err}");
        assert_valid(&audit, &out, &format!("audit --json {file}"));
    }
}

#[test]
fn the_diffs_between_revisions_follow_their_schema() {
    let diff = validator("heft-diff/1");
    let revision_a = "sheets/skid_lift.heft";
    let revision_b = "tests/revisions/skid_lift_rev_b.heft";
    let demo: Vec<String> = common::sheets_in("sheets")
        .iter()
        .map(|path| path.to_string_lossy().into_owned())
        .collect();
    // The two revisions both ways, each demo sheet against itself (the
    // same content) and against the next (cells added and removed).
    let mut pairs = vec![(revision_a, revision_b), (revision_b, revision_a)];
    pairs.extend(demo.iter().map(|sheet| (sheet.as_str(), sheet.as_str())));
    pairs.extend(
        demo.windows(2)
            .map(|two| (two[0].as_str(), two[1].as_str())),
    );
    for (old, new) in pairs {
        let (code, out, err) = common::heft(&["diff", "--json", old, new]);
        assert_eq!(code, i32::from(old != new), "diff {old} {new}: {err}");
        assert_valid(&diff, &out, &format!("diff --json {old} {new}"));
    }
}

/// The schemas are not vacuous: output a little wrong is refused.
#[test]
fn output_that_breaks_the_format_is_refused() {
    let check = validator("heft-check/1");
    let (_, out, _) = common::heft(&["check", "--json", "sheets/skid_lift.heft"]);
    let good: Value = serde_json::from_str(&out).expect("JSON");
    let refused = |change: &dyn Fn(&mut Value), what: &str| {
        let mut bad = good.clone();
        change(&mut bad);
        assert!(!check.is_valid(&bad), "the schema allows {what}");
    };
    refused(
        &|v| v["schema"] = "heft-check/2".into(),
        "another format's name",
    );
    refused(
        &|v| v["cells"][0]["status"] = "fine".into(),
        "a status heft never prints",
    );
    refused(
        &|v| v["checks"][0]["status"] = "pass".into(),
        "the diff's word for a pass",
    );
    refused(
        &|v| v["cells"][0]["dimension"]["mass"] = 0.5.into(),
        "a fractional exponent",
    );
    refused(
        &|v| v["cells"][0]["dimension"]["weight"] = 1.into(),
        "a base quantity SI has not",
    );
    refused(
        &|v| {
            if let Some(report) = v.as_object_mut() {
                report.remove("summary");
            }
        },
        "a report without its summary",
    );
    refused(
        &|v| {
            v["diagnostics"] = serde_json::json!([{"severity": "warning", "code": "no-such-code",
                "line": 1, "column": 1, "message": "", "help": null}]);
        },
        "a code heft does not have",
    );
}
