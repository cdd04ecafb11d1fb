//! The report as a small document model, independent of the output format.
//!
//! A [`Document`] is a title block and a list of [`Section`]s; a section holds
//! [`Block`]s. The body follows the sheet in file order (one section per
//! heading); appendices come after it. Capabilities that produce more output
//! (solve blocks, simulations, cases, the conversion audit) add sections made
//! of the generic blocks — [`Table`], [`Figure`], [`Block::Paragraph`] — so the
//! HTML and Markdown writers never need to know about them.

/// Inline text with the little markup a calc sheet needs. Writers escape
/// every piece; nothing in a document is trusted markup.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct Rich(pub Vec<Piece>);

/// One run of inline text.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Piece {
    /// Plain text.
    Text(String),
    /// A subscript: the `up` of `T_up`.
    Sub(String),
    /// A superscript: an exponent.
    Sup(String),
    /// Bold text: a result.
    Strong(String),
    /// Text as written in the sheet, in a fixed-width face.
    Code(String),
}

impl Rich {
    /// Plain text.
    pub fn text(text: impl Into<String>) -> Rich {
        Rich(vec![Piece::Text(text.into())])
    }

    /// Appends plain text.
    pub fn push_text(&mut self, text: &str) {
        if let Some(Piece::Text(last)) = self.0.last_mut() {
            last.push_str(text);
        } else {
            self.0.push(Piece::Text(text.to_string()));
        }
    }

    /// Appends a piece.
    pub fn push(&mut self, piece: Piece) {
        self.0.push(piece);
    }

    /// Appends all pieces of another run.
    pub fn extend(&mut self, other: Rich) {
        for piece in other.0 {
            match piece {
                Piece::Text(text) => self.push_text(&text),
                other => self.0.push(other),
            }
        }
    }

    /// The text without markup (subscripts joined with `_`, exponents with `^`).
    pub fn plain(&self) -> String {
        let mut out = String::new();
        for piece in &self.0 {
            match piece {
                Piece::Text(text) | Piece::Strong(text) | Piece::Code(text) => out.push_str(text),
                Piece::Sub(text) => {
                    out.push('_');
                    out.push_str(text);
                }
                Piece::Sup(text) => {
                    out.push('^');
                    out.push_str(text);
                }
            }
        }
        out
    }
}

/// The whole report.
#[derive(Clone, Debug, PartialEq)]
pub struct Document {
    /// Title, revision, people, fingerprint, cautions.
    pub title_block: TitleBlock,
    /// Body sections, then appendices.
    pub sections: Vec<Section>,
}

/// The block at the top of the first page.
#[derive(Clone, Debug, PartialEq)]
pub struct TitleBlock {
    /// The sheet's title.
    pub title: String,
    /// The revision mark, if any (also in every page header).
    pub revision: Option<String>,
    /// Labelled facts: project, revision, date, prepared by, checked by, …
    pub fields: Vec<(String, String)>,
    /// The sheet's content fingerprint (64 hex digits).
    pub fingerprint: String,
    /// One-line overall state: cells, errors, checks passed.
    pub summary: String,
    /// Whether the sheet evaluated clean with every check passed.
    pub clean: bool,
    /// The sign-off state in one line, if the sheet has a sign-off.
    pub signoff: Option<Callout>,
    /// The cautions every report carries.
    pub cautions: Vec<String>,
}

/// A sentence that must stand out, with its tone.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Callout {
    /// Good news, a warning, or bad news.
    pub tone: Tone,
    /// The text.
    pub text: Rich,
}

/// How a callout or a status reads.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Tone {
    /// Passed, current, accepted.
    Good,
    /// Open, stale, needs attention.
    Warning,
    /// Failed, error.
    Bad,
    /// Neither.
    Neutral,
}

/// A section: a heading of the sheet, or a part the report adds.
#[derive(Clone, Debug, PartialEq)]
pub struct Section {
    /// The heading (none for what comes before the sheet's first heading).
    pub title: Option<Rich>,
    /// 1 for a top-level section, 2 for a sub-section.
    pub level: u8,
    /// Whether the section is an appendix (after the body).
    pub appendix: bool,
    /// Its content.
    pub blocks: Vec<Block>,
}

/// A piece of a section.
#[derive(Clone, Debug, PartialEq)]
pub enum Block {
    /// A paragraph.
    Paragraph(Rich),
    /// A note of the sheet (`> …`).
    Note(Rich),
    /// A cell with its calculation.
    Cell(Box<CellBlock>),
    /// A check with its outcome.
    Check(Box<CheckBlock>),
    /// Review marks on the section's heading or the sheet.
    Marks(Vec<MarkLine>),
    /// A sentence that must stand out.
    Callout(Callout),
    /// A table.
    Table(Table),
    /// A drawing (SVG) with its caption.
    Figure(Figure),
    /// A line of the sheet that did not parse, as written.
    Unparsed {
        /// 1-based line.
        line: usize,
        /// The text as written.
        text: String,
    },
}

/// One cell as the report shows it.
#[derive(Clone, Debug, PartialEq)]
pub struct CellBlock {
    /// The name, subscripts rendered.
    pub name: Rich,
    /// 1-based line in the sheet.
    pub line: usize,
    /// The description.
    pub description: Option<String>,
    /// Whether it is an input (its formula is its value).
    pub is_input: bool,
    /// The formula in readable math.
    pub formula: Rich,
    /// The formula with values and units put in (not for inputs).
    pub substituted: Option<Rich>,
    /// The result with its unit, or why there is none.
    pub result: Rich,
    /// Ok, or what went wrong.
    pub tone: Tone,
    /// The findings on this cell.
    pub findings: Vec<String>,
    /// Review marks on this cell.
    pub marks: Vec<MarkLine>,
}

/// One check as the report shows it.
#[derive(Clone, Debug, PartialEq)]
pub struct CheckBlock {
    /// The label.
    pub label: Option<String>,
    /// 1-based line in the sheet.
    pub line: usize,
    /// The comparison in readable math.
    pub expression: Rich,
    /// Both sides' values compared, in one unit.
    pub substituted: Option<Rich>,
    /// Utilization as text (`76.9 %`).
    pub utilization: Option<String>,
    /// `PASS`, `FAIL`, `ERROR` or `BLOCKED`.
    pub verdict: String,
    /// Tone of the verdict.
    pub tone: Tone,
    /// The findings on this check.
    pub findings: Vec<String>,
    /// Review marks on this check.
    pub marks: Vec<MarkLine>,
}

/// A review mark as the report shows it.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct MarkLine {
    /// `question`, `change`, `accepted`, `resolved`.
    pub kind: String,
    /// Whether it is still open.
    pub open: bool,
    /// What the checker says.
    pub text: Option<String>,
    /// Who.
    pub by: String,
    /// When.
    pub on: String,
    /// 1-based line in the sheet.
    pub line: usize,
}

/// A table: a header row and rows of cells.
#[derive(Clone, Debug, PartialEq)]
pub struct Table {
    /// Column headings.
    pub columns: Vec<String>,
    /// Rows; each as long as `columns`.
    pub rows: Vec<Vec<Rich>>,
}

/// A drawing and its caption.
#[derive(Clone, Debug, PartialEq)]
pub struct Figure {
    /// The drawing as a complete SVG element; built by [`super::svg`], which
    /// escapes every text it puts in.
    pub svg: String,
    /// What it shows.
    pub caption: String,
}
