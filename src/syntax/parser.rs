//! The pest parser generated from `grammar/heft.pest`, and the translation of
//! pest's errors into words a user understands. pest types stay in `syntax`.

use pest::error::{ErrorVariant, InputLocation};

use crate::base::Span;

/// The parser generated from the grammar.
#[derive(pest_derive::Parser)]
#[grammar = "../grammar/heft.pest"]
pub(crate) struct HeftParser;

/// Turns a pest error on a statement starting at `offset` into a span and a
/// message that names what was expected in plain words.
pub(crate) fn describe_error(
    error: &pest::error::Error<Rule>,
    statement: &str,
    offset: usize,
) -> (Span, String) {
    let position = match error.location {
        InputLocation::Pos(position) => position,
        InputLocation::Span((start, _)) => start,
    };
    let found = describe_found(statement, position);
    let message = match &error.variant {
        ErrorVariant::ParsingError { positives, .. } => {
            let mut wanted: Vec<&str> = positives
                .iter()
                .filter_map(|&rule| describe_rule(rule))
                .collect();
            wanted.sort_unstable();
            wanted.dedup();
            if wanted.contains(&"an expression") {
                wanted.retain(|word| *word != "a name");
            }
            if wanted.is_empty() {
                format!("unexpected {found}")
            } else {
                format!("expected {}, found {found}", join_alternatives(&wanted))
            }
        }
        ErrorVariant::CustomError { message } => message.clone(),
    };
    let width = statement[position..]
        .chars()
        .next()
        .map_or(0, char::len_utf8);
    (
        Span::new(offset + position, offset + position + width),
        message,
    )
}

fn describe_found(statement: &str, position: usize) -> String {
    let rest = &statement[position..];
    match rest.chars().next() {
        None => "the end of the line".to_string(),
        Some(first) => {
            let token: String = if first.is_alphanumeric() || first == '_' {
                rest.chars()
                    .take_while(|c| c.is_alphanumeric() || *c == '_')
                    .take(24)
                    .collect()
            } else {
                first.to_string()
            };
            format!("`{token}`")
        }
    }
}

fn join_alternatives(words: &[&str]) -> String {
    match words {
        [] => String::new(),
        [one] => (*one).to_string(),
        [init @ .., last] => format!("{} or {last}", init.join(", ")),
    }
}

/// A grammar rule in the words a user would use, or `None` for rules that
/// never make a useful suggestion on their own.
fn describe_rule(rule: Rule) -> Option<&'static str> {
    Some(match rule {
        Rule::EOI => "the end of the line",
        Rule::heading | Rule::heading_level => "a heading (`# …`)",
        Rule::note => "a note (`> …`)",
        Rule::check | Rule::keyword_check => "`check`",
        Rule::cell => "a cell (`name = expression`)",
        Rule::declared_unit => "a unit in brackets (`[kN]`)",
        Rule::description | Rule::description_text => "a description in quotes",
        Rule::at_most | Rule::at_least | Rule::below | Rule::above => {
            "a comparison (`<=`, `<`, `>=`, `>`)"
        }
        Rule::expr
        | Rule::group
        | Rule::quantity
        | Rule::number
        | Rule::reference
        | Rule::unit_value => "an expression",
        Rule::name => "a name",
        Rule::conditional | Rule::keyword_if => "an expression",
        Rule::keyword_then => "`then`",
        Rule::keyword_else => "`else` and the value otherwise (a piecewise formula needs one)",
        Rule::keyword_and | Rule::keyword_or => "`and` or `or`",
        Rule::equal_to | Rule::not_equal_to => "a comparison (`<=`, `<`, `>=`, `>`, `==`, `!=`)",
        Rule::assign => "`=`",
        Rule::add | Rule::sub | Rule::mul | Rule::div | Rule::pow => "an operator",
        Rule::neg => "an expression",
        Rule::arguments => "`(`",
        Rule::unit_expr | Rule::unit_factor | Rule::unit_symbol => "a unit",
        Rule::unit_exponent => "an integer exponent",
        Rule::unit_mul | Rule::unit_div => "`*` or `/`",
        Rule::review | Rule::keyword_review => "`review`",
        Rule::mark_question | Rule::mark_change | Rule::mark_accepted | Rule::mark_resolved => {
            "a review kind (`question`, `change`, `accepted` or `resolved`)"
        }
        Rule::keyword_by => "`by` and the reviewer in quotes",
        Rule::keyword_on => "`on` and a date",
        Rule::date => "a date (YYYY-MM-DD)",
        Rule::signoff | Rule::keyword_signoff => "`signoff`",
        Rule::keyword_fingerprint => "`fingerprint` and its 64 hex digits",
        Rule::fingerprint => "a fingerprint of 64 hex digits (from `heft signoff`)",
        Rule::cell_digests | Rule::keyword_cells => "`cells`",
        Rule::cell_digest => "`name:digest`",
        Rule::digest => "a cell digest of 8 hex digits",
        Rule::keyword_count | Rule::keyword_step | Rule::sweep_count | Rule::sweep_step => {
            "`count N` or `step S`"
        }
        Rule::keyword_show | Rule::show_of => "`show`",
        Rule::lookup_call | Rule::keyword_lookup => "an expression",
        Rule::table_from | Rule::table_head | Rule::keyword_table => "`table`",
        Rule::table_keys => "the key columns' names",
        Rule::column_head => "a column (`name [unit]`)",
        _ => return None,
    })
}
