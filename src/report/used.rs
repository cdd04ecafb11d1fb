//! What the report shows of the sheets a sheet uses: each `use` line where
//! it stands, and a section listing every used sheet with its title block
//! and fingerprint, and every cell of theirs the sheet reads, so a checker
//! can tell exactly which revision of a gear register a calculation rests on.

use super::model::{Block, Piece, Rich, Section, Table};
use crate::eval::Evaluated;
use crate::sheet::{Import, UsedSheet};

/// How many hex digits of a used sheet's fingerprint the body shows.
const SHORT_FINGERPRINT: usize = 8;

/// The `use` line at `index` of the sheet's imports, as a sentence.
pub(super) fn use_line(evaluated: &Evaluated, index: usize) -> Option<Block> {
    let import = evaluated.sheet().imports.get(index)?;
    let mut line = Rich::text("Uses ");
    line.push(Piece::Code(import.path.clone()));
    line.push_text(" as ");
    line.push(Piece::Code(import.alias.text.to_string()));
    match &import.loaded {
        Ok(used) => {
            line.push_text(&format!(": {}", title_facts(used)));
            line.push_text(&format!(
                ", fingerprint {}…",
                used.fingerprint
                    .get(..SHORT_FINGERPRINT)
                    .unwrap_or(&used.fingerprint)
            ));
        }
        Err(problem) => line.push_text(&format!(": not read ({})", problem.message)),
    }
    Some(Block::Paragraph(line))
}

/// The section of used sheets, when the sheet has a `use` line.
pub(super) fn used_sheets_section(evaluated: &Evaluated) -> Option<Section> {
    let imports = &evaluated.sheet().imports;
    if imports.is_empty() {
        return None;
    }
    let sheets = Table {
        columns: [
            "Name",
            "Sheet",
            "Title",
            "Revision",
            "Fingerprint (SHA-256)",
        ]
        .map(String::from)
        .to_vec(),
        rows: imports.iter().map(sheet_row).collect(),
    };
    let reads: Vec<Vec<Rich>> = evaluated
        .sheet()
        .imported_reads()
        .into_iter()
        .filter_map(|(sheet, cell)| {
            let import = imports.get(sheet as usize)?;
            let used = import.sheet()?;
            let export = used.exports.get(cell as usize)?;
            let value = export
                .shown
                .as_ref()
                .map_or_else(|| "no value".to_string(), |(n, u)| format!("{n} {u}"));
            Some(vec![
                Rich(vec![Piece::Code(format!(
                    "{}.{}",
                    import.alias.text, export.name
                ))]),
                Rich(vec![Piece::Strong(value)]),
                Rich::text(export.description.clone().unwrap_or_default()),
                Rich::text(format!("{} line {}", used.path, export.line)),
            ])
        })
        .collect();
    let mut blocks = vec![
        Block::Paragraph(Rich::text(
            "Each used sheet is evaluated on its own; its values enter this sheet as fixed inputs. \
             The fingerprint of this sheet covers theirs, so an edit to a used sheet makes a sign-off of this one stale.",
        )),
        Block::Table(sheets),
    ];
    if !reads.is_empty() {
        blocks.push(Block::Table(Table {
            columns: ["Cell read", "Value", "Description", "Defined at"]
                .map(String::from)
                .to_vec(),
            rows: reads,
        }));
    }
    Some(Section {
        title: Some(Rich::text("Sheets used")),
        level: 1,
        appendix: false,
        blocks,
    })
}

fn sheet_row(import: &Import) -> Vec<Rich> {
    let code = |text: &str| Rich(vec![Piece::Code(text.to_string())]);
    match &import.loaded {
        Ok(used) => vec![
            code(&import.alias.text),
            code(&used.path),
            Rich::text(used.title.clone().unwrap_or_default()),
            Rich::text(used.revision.clone().unwrap_or_default()),
            code(&used.fingerprint),
        ],
        Err(problem) => vec![
            code(&import.alias.text),
            code(&import.path),
            Rich::text(format!("not read: {}", problem.message)),
            Rich::text(String::new()),
            Rich::text(String::new()),
        ],
    }
}

fn title_facts(used: &UsedSheet) -> String {
    let title = used.title.as_deref().unwrap_or("untitled");
    match &used.revision {
        Some(revision) => format!("“{title}”, revision {revision}"),
        None => format!("“{title}”"),
    }
}
