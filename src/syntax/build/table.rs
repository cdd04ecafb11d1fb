//! Pairs → AST for tables: a table's head, its columns, and `lookup`.

use pest::iterators::{Pair, Pairs};

use super::{Builder, Built};
use crate::syntax::ast::{
    ColumnHead, Description, ExprKind, Ident, Lookup, TableBlock, TableSource,
};
use crate::syntax::parser::Rule;

/// A table's head: its name, its key columns and its description (and, for
/// a table read from a file, the file's path).
pub(crate) struct TableHead {
    pub name: Ident,
    pub keys: Vec<Ident>,
    pub description: Option<Description>,
}

/// Builds a table's name, keys and description from the pairs of
/// `Rule::table_line_head`.
pub(crate) fn table_head(mut pairs: Pairs<'_, Rule>, offset: usize) -> Built<TableHead> {
    let builder = Builder { offset };
    let head = pairs
        .next()
        .unwrap_or_else(|| unreachable!("expected a table head"));
    let (head, _) = builder.table_parts(head);
    Ok(head)
}

/// Builds the column heads from the pairs of `Rule::table_columns`.
pub(crate) fn column_heads(pairs: Pairs<'_, Rule>, offset: usize) -> Built<Vec<ColumnHead>> {
    let builder = Builder { offset };
    let mut columns = Vec::new();
    for pair in pairs.filter(|pair| pair.as_rule() == Rule::column_head) {
        let span = builder.span(&pair);
        let mut inner = pair.into_inner();
        let name = builder.ident(
            inner
                .next()
                .unwrap_or_else(|| unreachable!("expected a column name")),
        );
        let unit = match inner.next() {
            Some(unit) => Some(builder.unit_in_brackets(unit)?),
            None => None,
        };
        columns.push(ColumnHead { name, unit, span });
    }
    Ok(columns)
}

impl Builder {
    /// A table's head, and the file's path when it is read from one.
    fn table_parts(&self, pair: Pair<'_, Rule>) -> (TableHead, Option<Description>) {
        let mut name = None;
        let mut keys = Vec::new();
        let mut quoted = Vec::new();
        let mut from = false;
        for part in pair.into_inner() {
            match part.as_rule() {
                Rule::keyword_table | Rule::keyword_by => {}
                Rule::keyword_from => from = true,
                Rule::name => name = Some(self.ident(part)),
                Rule::table_keys => keys = part.into_inner().map(|key| self.ident(key)).collect(),
                Rule::description => quoted.push(self.description(part)),
                rule => unreachable!("expected a part of a table's head, found {rule:?}"),
            }
        }
        let mut quoted = quoted.into_iter();
        let path = if from { quoted.next() } else { None };
        let head = TableHead {
            name: name.unwrap_or_else(|| unreachable!("expected a table name")),
            keys,
            description: quoted.next(),
        };
        (head, path)
    }

    /// `table NAME by KEY from "file.csv" "description"`, on one line.
    pub(super) fn table_from(&self, pair: Pair<'_, Rule>) -> TableBlock {
        let head = self.span(&pair);
        let (parts, path) = self.table_parts(pair);
        TableBlock {
            name: parts.name,
            keys: parts.keys,
            description: parts.description,
            source: TableSource::File {
                path: path.unwrap_or_else(|| unreachable!("expected the table's file")),
            },
            complete: true,
            head,
        }
    }

    /// `lookup(table.column, key, …, reading)`: a last argument that is a
    /// bare word is kept apart as the reading (linking checks the word).
    pub(super) fn lookup(&self, pair: Pair<'_, Rule>) -> Built<Lookup> {
        let mut inner = pair
            .into_inner()
            .filter(|part| part.as_rule() != Rule::keyword_lookup);
        let mut name = || {
            inner
                .next()
                .unwrap_or_else(|| unreachable!("expected a table or column name"))
        };
        let table = self.ident(name());
        let column = self.ident(name());
        let mut keys = inner.map(|arg| self.expr(arg)).collect::<Built<Vec<_>>>()?;
        let reading_word = match keys.last() {
            Some(last) if keys.len() > 1 => match &last.kind {
                ExprKind::Name(word) => Some(Ident {
                    text: word.text.clone(),
                    span: last.span,
                }),
                _ => None,
            },
            _ => None,
        };
        if reading_word.is_some() {
            keys.pop();
        }
        Ok(Lookup {
            table,
            column,
            keys,
            reading_word,
            target: None,
        })
    }
}
