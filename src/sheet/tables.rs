//! The sheet's tables, read before anything is linked: a written table's
//! rows, or a CSV file's (from [`SheetFiles`]), checked for sorted keys
//! and complete grids; then every `lookup` linked to its table, column and
//! reading. Units are the evaluator's: here a column's unit is only kept.

use compact_str::CompactString;

use super::files::SheetFiles;
use crate::base::{Code, Diagnostic, Fix, Span};
use crate::syntax::ast::{
    ColumnHead, Expr, ExprKind, Lookup, LookupTarget, NameRef, Reading, Statement, StatementKind,
    TableBlock, TableSource, Target, UnitExpr,
};

/// A table of the sheet, its numbers as written.
#[derive(Clone, Debug, PartialEq)]
pub struct Table {
    /// The table statement's index.
    pub statement: usize,
    /// The table's name.
    pub name: CompactString,
    /// Its description, if written.
    pub description: Option<String>,
    /// The columns, in written order.
    pub columns: Vec<Column>,
    /// The key columns (one or two), as indices into `columns`.
    pub keys: Vec<usize>,
    /// How many keys its head names (its lookups give as many).
    pub n_keys: usize,
    /// The rows, each a number per column, as written (in the column's unit).
    pub rows: Vec<Vec<f64>>,
    /// The rows' numbers as written (`12.0`), for the outputs.
    pub texts: Vec<Vec<String>>,
    /// Where each row is written: its line, or the table's line for a file.
    pub row_spans: Vec<Span>,
    /// For two keys, the row at each point of the grid (first key slowest);
    /// for one key, the rows in order.
    pub grid_rows: Vec<usize>,
    /// Each key's distinct values, increasing.
    pub axes: Vec<Vec<f64>>,
    /// The file it is read from, as written.
    pub file: Option<String>,
    /// For a file, the line of the file each row is on (its header is line 1).
    pub file_lines: Vec<u64>,
    /// Whether it can be read: every row read, keys sorted, grid complete.
    pub usable: bool,
}

/// A column of a table.
#[derive(Clone, Debug, PartialEq)]
pub struct Column {
    /// Its name.
    pub name: CompactString,
    /// Its unit as written (`None`: plain numbers). For a file's column the
    /// spans are the table line's.
    pub unit: Option<UnitExpr>,
    /// The unit's text (empty for plain numbers).
    pub unit_text: String,
}

impl Column {
    /// Its heading as a table's head writes it: `radius [m]`, or the name
    /// alone for plain numbers.
    pub fn heading(&self) -> String {
        match self.unit_text.as_str() {
            "" => self.name.to_string(),
            unit => format!("{} [{unit}]", self.name),
        }
    }
}

impl Table {
    /// A cell's number as written.
    pub fn text(&self, row: usize, column: usize) -> &str {
        self.texts
            .get(row)
            .and_then(|cells| cells.get(column))
            .map_or("—", String::as_str)
    }

    /// A row by its place: `row 4` of a written table (its rows counted
    /// from 1), `line 5 of sling_chart.csv` for a file's row.
    pub fn row_name(&self, row: usize) -> String {
        match (&self.file, self.file_lines.get(row)) {
            (Some(file), Some(line)) => format!("line {line} of {file}"),
            _ => format!("row {}", row + 1),
        }
    }

    /// The key columns' names, joined: `radius, boom`.
    pub fn key_names(&self) -> String {
        self.keys
            .iter()
            .map(|&key| self.columns[key].name.as_str())
            .collect::<Vec<_>>()
            .join(", ")
    }
}

/// Reads every table statement into a [`Table`], reporting what is wrong.
pub(super) fn read_tables(
    statements: &[Statement],
    files: &SheetFiles,
    diagnostics: &mut Vec<Diagnostic>,
) -> Vec<Table> {
    statements
        .iter()
        .enumerate()
        .filter_map(|(index, statement)| match &statement.kind {
            StatementKind::Table(block) => Some(read_table(index, block, files, diagnostics)),
            _ => None,
        })
        .collect()
}

fn read_table(
    statement: usize,
    block: &TableBlock,
    files: &SheetFiles,
    diagnostics: &mut Vec<Diagnostic>,
) -> Table {
    let mut table = Table {
        statement,
        name: block.name.text.clone(),
        description: block.description.as_ref().map(|d| d.text.clone()),
        columns: Vec::new(),
        keys: Vec::new(),
        n_keys: block.keys.len(),
        rows: Vec::new(),
        texts: Vec::new(),
        row_spans: Vec::new(),
        grid_rows: Vec::new(),
        axes: Vec::new(),
        file: None,
        file_lines: Vec::new(),
        usable: block.complete,
    };
    let heads = match &block.source {
        TableSource::Written { columns, rows } => {
            table.rows = rows
                .iter()
                .map(|row| row.cells.iter().map(|&(value, _)| value).collect())
                .collect();
            table.row_spans = rows.iter().map(|row| row.span).collect();
            table.texts = rows.iter().map(|row| row.texts.clone()).collect();
            columns.clone()
        }
        TableSource::File { path } => {
            table.file = Some(path.text.clone());
            match read_csv(block, &path.text, files) {
                Ok((heads, rows, lines, texts)) => {
                    table.texts = texts;
                    table.row_spans = vec![block.head; rows.len()];
                    table.file_lines = lines;
                    table.rows = rows;
                    heads
                }
                Err(diagnostic) => {
                    diagnostics.push(*diagnostic);
                    table.usable = false;
                    Vec::new()
                }
            }
        }
    };
    table.columns = heads
        .iter()
        .map(|head| Column {
            name: head.name.text.clone(),
            unit_text: head.unit.as_ref().map_or(String::new(), written_unit),
            unit: head.unit.clone(),
        })
        .collect();
    if heads.is_empty() {
        table.usable = false;
        return table;
    }
    for key in &block.keys {
        match table
            .columns
            .iter()
            .position(|column| column.name == key.text)
        {
            Some(index) => table.keys.push(index),
            None => {
                diagnostics.push(
                    Diagnostic::error(
                        Code::TableColumnUnknown,
                        key.span,
                        format!("table `{}` has no column `{}`", table.name, key.text),
                    )
                    .with_help(format!("its columns are {}", column_list(&table))),
                );
                table.usable = false;
            }
        }
    }
    if table.rows.is_empty() {
        diagnostics.push(
            Diagnostic::error(
                Code::TableRowError,
                block.head,
                format!("table `{}` has no rows", table.name),
            )
            .with_help("give at least one row of numbers, one per column"),
        );
        table.usable = false;
    }
    if table.usable {
        table.usable = order_rows(&mut table, block, diagnostics);
    }
    table
}

/// The unit as written, for messages and reports (`t`, `kN/m`).
fn written_unit(unit: &UnitExpr) -> String {
    unit.symbols()
        .enumerate()
        .map(|(index, (symbol, exponent))| {
            let sign = if index == 0 {
                if exponent < 0 { "1/" } else { "" }
            } else if exponent < 0 {
                "/"
            } else {
                "*"
            };
            match exponent.abs() {
                1 => format!("{sign}{symbol}"),
                power => format!("{sign}{symbol}^{power}"),
            }
        })
        .collect()
}

/// `radius [m], boom [m], capacity [t]`.
fn column_list(table: &Table) -> String {
    table
        .columns
        .iter()
        .map(|column| format!("`{}`", column.heading()))
        .collect::<Vec<_>>()
        .join(", ")
}

/// Checks the keys are increasing and, for two keys, that the rows form a
/// complete grid; fills `axes` and `grid_rows`.
fn order_rows(table: &mut Table, block: &TableBlock, diagnostics: &mut Vec<Diagnostic>) -> bool {
    let key_of = |row: &Vec<f64>| -> Vec<f64> { table.keys.iter().map(|&key| row[key]).collect() };
    let place = |table: &Table, row: usize| table.row_name(row);
    for row in 1..table.rows.len() {
        let (before, here) = (key_of(&table.rows[row - 1]), key_of(&table.rows[row]));
        if before.partial_cmp(&here) != Some(std::cmp::Ordering::Less) {
            let repeated = before == here;
            let keys = table.key_names();
            let message = if repeated {
                format!(
                    "{} repeats the key ({keys}) of the row before it",
                    place(table, row)
                )
            } else {
                format!(
                    "the keys ({keys}) are not increasing at {}",
                    place(table, row)
                )
            };
            diagnostics.push(
                Diagnostic::error(Code::TableKeysUnsorted, table.row_spans[row], message)
                    .with_label(table.row_spans[row - 1], "the row before")
                    .with_help(if table.keys.len() == 2 {
                        "order the rows by the first key, then by the second, each pair once"
                    } else {
                        "order the rows by increasing key, each key once"
                    }),
            );
            return false;
        }
    }
    let mut axes: Vec<Vec<f64>> = vec![Vec::new(); table.keys.len()];
    for row in &table.rows {
        for (axis, &key) in table.keys.iter().enumerate() {
            if !axes[axis].contains(&row[key]) {
                axes[axis].push(row[key]);
            }
        }
    }
    for axis in &mut axes {
        axis.sort_by(f64::total_cmp);
    }
    if let [first, second] = axes.as_slice() {
        // Sorted, distinct pairs: a complete grid has exactly one row per
        // pair, in order, so row i·n₂ + j is (first[i], second[j]).
        for (i, a) in first.iter().enumerate() {
            for (j, b) in second.iter().enumerate() {
                let at = i * second.len() + j;
                let present = table
                    .rows
                    .get(at)
                    .is_some_and(|row| row[table.keys[0]] == *a && row[table.keys[1]] == *b);
                if !present {
                    let (k1, k2) = (
                        &table.columns[table.keys[0]].name,
                        &table.columns[table.keys[1]].name,
                    );
                    diagnostics.push(
                        Diagnostic::error(
                            Code::TableGridIncomplete,
                            block.head,
                            format!(
                                "table `{}` has no row for {k1} = {a}, {k2} = {b}: a table by two keys needs every pair",
                                table.name
                            ),
                        )
                        .with_help(format!(
                            "give a row for each of the {} × {} pairs of {k1} and {k2}",
                            first.len(),
                            second.len()
                        )),
                    );
                    return false;
                }
            }
        }
    }
    table.grid_rows = (0..table.rows.len()).collect();
    table.axes = axes;
    true
}

/// A CSV file's column heads, its rows' numbers, each row's line in the
/// file and its numbers as written.
type CsvRows = (Vec<ColumnHead>, Vec<Vec<f64>>, Vec<u64>, Vec<Vec<String>>);

/// A table's CSV file: its header row names the columns (`radius [m]`),
/// every other row holds one number per column. Errors are at the table's
/// line and name the file's row and column.
fn read_csv(
    block: &TableBlock,
    path: &str,
    files: &SheetFiles,
) -> Result<CsvRows, Box<Diagnostic>> {
    let at = block.head;
    let error = |code, message: String, help: &str| {
        Box::new(Diagnostic::error(code, at, message).with_help(help.to_string()))
    };
    let bytes = files.bytes(path).map_err(|reason| {
        error(
            Code::TableFileMissing,
            format!("table `{}` cannot read its file: {reason}", block.name.text),
            "put the CSV file beside the sheet (the path is relative to the sheet's folder), or write the table's rows in the sheet",
        )
    })?;
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .trim(csv::Trim::All)
        .from_reader(bytes);
    let mut records = reader.records();
    let header = match records.next() {
        Some(Ok(record)) => record,
        Some(Err(problem)) => {
            return Err(error(
                Code::TableRowError,
                format!("{path} cannot be read as CSV: {problem}"),
                "save the file as UTF-8 CSV",
            ));
        }
        None => {
            return Err(error(
                Code::TableRowError,
                format!("{path} is empty"),
                "its first row names the columns: `radius [m],capacity [t]`",
            ));
        }
    };
    let mut heads = Vec::with_capacity(header.len());
    for (index, text) in header.iter().enumerate() {
        let head = crate::syntax::parse_column_head(text).map_err(|problem| {
            error(
                Code::TableRowError,
                format!(
                    "in {path}, the head of column {} (`{text}`) is not `name [unit]`: {}",
                    index + 1,
                    problem.message
                ),
                "the first row names the columns: `radius [m],capacity [t]`",
            )
        })?;
        heads.push(at_line(head, at));
    }
    let mut rows = Vec::new();
    let mut lines = Vec::new();
    let mut texts = Vec::new();
    for (index, record) in records.enumerate() {
        let record = record.map_err(|problem| {
            error(
                Code::TableRowError,
                format!(
                    "{path} cannot be read as CSV after line {}: {problem}",
                    index + 1
                ),
                "save the file as UTF-8 CSV",
            )
        })?;
        if record.iter().all(str::is_empty) {
            continue;
        }
        let line = record
            .position()
            .map_or(index as u64 + 2, csv::Position::line);
        if record.len() != heads.len() {
            return Err(error(
                Code::TableRowError,
                format!(
                    "line {line} of {path} has {} cells, and the table has {} columns",
                    record.len(),
                    heads.len()
                ),
                "give one number per column",
            ));
        }
        let mut row = Vec::with_capacity(heads.len());
        for (column, text) in record.iter().enumerate() {
            match text.parse::<f64>() {
                Ok(value) if value.is_finite() => row.push(value),
                _ => {
                    return Err(error(
                        Code::TableRowError,
                        format!(
                            "line {line} of {path}, column {} (`{}`): `{text}` is not a number",
                            column + 1,
                            heads[column].name.text
                        ),
                        "a table's cells are plain numbers (the unit is the column's)",
                    ));
                }
            }
        }
        rows.push(row);
        lines.push(line);
        texts.push(record.iter().map(str::to_string).collect());
    }
    Ok((heads, rows, lines, texts))
}

/// A column head read from a file, its spans moved to the table's line.
fn at_line(mut head: ColumnHead, line: Span) -> ColumnHead {
    head.name.span = line;
    head.span = line;
    if let Some(unit) = &mut head.unit {
        unit.span = line;
        for factor in unit.factors.iter_mut() {
            factor.span = line;
        }
    }
    head
}

/// Links every `lookup` to its table, column and reading. Returns the
/// statements whose lookups cannot be read (their errors reported, or the
/// table's own), so linking marks what they define broken.
pub(super) fn link_lookups(
    statements: &mut [Statement],
    tables: &[Table],
    diagnostics: &mut Vec<Diagnostic>,
) -> Vec<usize> {
    let mut broken = Vec::new();
    for (index, statement) in statements.iter_mut().enumerate() {
        let mut ok = true;
        for_each_expr(&mut statement.kind, &mut |expr| {
            expr.walk_mut(&mut |node| {
                if let ExprKind::Lookup(lookup) = &mut node.kind {
                    ok &= link_lookup(lookup, node.span, tables, diagnostics);
                }
            })
        });
        if !ok {
            broken.push(index);
        }
    }
    broken
}

/// Calls `visit` on every expression a statement holds.
fn for_each_expr(kind: &mut StatementKind, visit: &mut impl FnMut(&mut Expr)) {
    match kind {
        StatementKind::Parts(block) => block
            .cells
            .iter_mut()
            .for_each(|cell| visit(&mut cell.expr)),
        StatementKind::Lift(block) => block
            .cells
            .iter_mut()
            .for_each(|cell| visit(&mut cell.expr)),
        // A sweep's bounds and shown results are not read from a table here.
        StatementKind::Use(_) | StatementKind::Sweep(_) => {}
        StatementKind::Cell(cell) => {
            visit(&mut cell.expr);
            if let Some(tolerance) = cell.tolerance.as_deref_mut() {
                visit(tolerance.expr_mut());
            }
        }
        StatementKind::Body(body) => visit(&mut body.resultant.expr),
        StatementKind::Check(check) => {
            visit(&mut check.lhs);
            visit(&mut check.rhs);
        }
        StatementKind::Solve(block) => {
            for equation in &mut block.equations {
                visit(&mut equation.lhs);
                visit(&mut equation.rhs);
            }
            for unknown in &mut block.unknowns {
                if let Some(guess) = &mut unknown.guess {
                    visit(guess);
                }
            }
        }
        StatementKind::Case(case) => {
            for replacement in &mut case.overrides {
                visit(&mut replacement.expr);
                if let Some(tolerance) = replacement.tolerance.as_deref_mut() {
                    visit(tolerance.expr_mut());
                }
            }
        }
        StatementKind::Simulate(block) => block.exprs_mut().for_each(visit),
        StatementKind::Heading { .. }
        | StatementKind::Note { .. }
        | StatementKind::Invalid
        | StatementKind::Review(_)
        | StatementKind::SignOff(_)
        | StatementKind::Table(_) => {}
    }
}

/// Links one lookup; false when it cannot be read.
fn link_lookup(
    lookup: &mut Lookup,
    span: Span,
    tables: &[Table],
    diagnostics: &mut Vec<Diagnostic>,
) -> bool {
    let Some(table_index) = tables
        .iter()
        .position(|table| table.name == lookup.table.text)
    else {
        let names: Vec<&str> = tables.iter().map(|table| table.name.as_str()).collect();
        let help = if names.is_empty() {
            "define it with `table NAME by KEY: … end` or `table NAME by KEY from \"file.csv\"`"
                .to_string()
        } else {
            format!("the sheet's tables are {}", quoted(&names))
        };
        diagnostics.push(
            Diagnostic::error(
                Code::TableColumnUnknown,
                lookup.table.span,
                format!("there is no table `{}`", lookup.table.text),
            )
            .with_help(help),
        );
        return false;
    };
    let table = &tables[table_index];
    // The last word is the reading, or a key after all.
    let reading = match lookup.reading_word.take() {
        Some(word) => match Reading::from_word(&word.text) {
            Some(reading) => Some(reading),
            None if lookup.keys.len() < table.n_keys => {
                lookup.keys.push(Expr {
                    kind: ExprKind::Name(NameRef {
                        text: word.text.clone(),
                        target: Target::Unresolved,
                    }),
                    span: word.span,
                });
                None
            }
            None => {
                diagnostics.push(
                    Diagnostic::error(
                        Code::TableReadingUnknown,
                        word.span,
                        format!("`{}` is not a way to read a table", word.text),
                    )
                    .with_help(reading_help()),
                );
                return false;
            }
        },
        None => None,
    };
    let Some(reading) = reading else {
        let mut diagnostic = Diagnostic::error(
            Code::TableReadingMissing,
            span,
            "this lookup does not say how the table is read: heft never chooses a reading",
        )
        .with_help(reading_help());
        if let Some(last) = lookup.keys.last() {
            // `least` is the reading of a rating table (a load chart): the
            // fix is checked like every other before it is shown.
            let end = last.span.end();
            diagnostic = diagnostic.with_fix(
                Fix::replace(Span::new(end, end), ", least")
                    .with_lead("for a rating table read conservatively, ")
                    .showing(None),
            );
        }
        diagnostics.push(diagnostic);
        return false;
    };
    let Some(column) = table
        .columns
        .iter()
        .position(|column| column.name == lookup.column.text)
    else {
        if !table.columns.is_empty() {
            diagnostics.push(
                Diagnostic::error(
                    Code::TableColumnUnknown,
                    lookup.column.span,
                    format!(
                        "table `{}` has no column `{}`",
                        table.name, lookup.column.text
                    ),
                )
                .with_help(format!("its columns are {}", column_list(table))),
            );
        }
        return false;
    };
    let wanted = table.n_keys;
    if lookup.keys.len() != wanted {
        diagnostics.push(
            Diagnostic::error(
                Code::BadCall,
                span,
                format!(
                    "table `{}` is read by {wanted} key{} ({}); this lookup gives {}",
                    table.name,
                    if wanted == 1 { "" } else { "s" },
                    table.key_names(),
                    lookup.keys.len()
                ),
            )
            .with_help("give one value per key, in the table's order, then the reading"),
        );
        return false;
    }
    lookup.target = Some(LookupTarget {
        table: table_index,
        column,
        reading,
    });
    table.usable
}

fn reading_help() -> String {
    "end the lookup with a reading: `exact` (a row's key only), `linear` (interpolated), \
`least` (the smallest of the bracketing rows: the conservative reading of a rating table) \
or `greatest` (the largest: for a demand table)"
        .to_string()
}

fn quoted(names: &[&str]) -> String {
    names
        .iter()
        .map(|name| format!("`{name}`"))
        .collect::<Vec<_>>()
        .join(", ")
}

/// Marks broken what the statements with unreadable lookups define: their
/// cells, checks and load cases (the error is already reported).
pub(super) fn mark_unreadable(
    statements: &[usize],
    cells: &[super::CellOrigin],
    checks: &[usize],
    cases: &[usize],
    broken: (&mut [bool], &mut [bool], &mut [bool]),
) {
    if statements.is_empty() {
        return;
    }
    let (broken_cells, broken_checks, broken_cases) = broken;
    for (id, origin) in cells.iter().enumerate() {
        let statement = match *origin {
            super::CellOrigin::Formula { statement }
            | super::CellOrigin::Unknown { statement, .. }
            | super::CellOrigin::Simulated { statement, .. }
            | super::CellOrigin::Member { statement, .. } => statement,
        };
        if statements.binary_search(&statement).is_ok() {
            broken_cells[id] = true;
        }
    }
    for (index, statement) in checks.iter().enumerate() {
        if statements.binary_search(statement).is_ok() {
            broken_checks[index] = true;
        }
    }
    for (index, statement) in cases.iter().enumerate() {
        if statements.binary_search(statement).is_ok() {
            broken_cases[index] = true;
        }
    }
}
