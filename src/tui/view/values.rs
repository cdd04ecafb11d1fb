//! How a value, a check and a row's state mark read, the same in the
//! table, the detail pane and the overlays.

use ratatui::style::Style;

use super::super::app::UnitsView;
use super::super::strings as text;
use super::super::theme::Theme;
use crate::base::Severity;
use crate::eval::{CellResult, CellStatus, CheckResult, CheckStatus, format_result, format_value};
use crate::live::{LiveSheet, Row};
use crate::units::format_significant;

/// A value in a display unit: `19.22 kN`.
pub(super) fn shown(si: f64, unit: &crate::units::DisplayUnit, sig_figs: u32) -> String {
    let number = format_significant(unit.value_of(si), sig_figs);
    if unit.text.is_empty() {
        number
    } else {
        format!("{number} {}", unit.text)
    }
}

/// A cell's value as the table and detail show it.
pub(super) fn cell_value(
    live: &LiveSheet,
    cell: &CellResult<'_>,
    units: UnitsView,
    sig_figs: u32,
) -> String {
    match (cell.any_value(), cell.status) {
        (Some(value), _) if cell.is_input => {
            format_value(value, &live.display_unit(cell.id, units.system()), sig_figs)
        }
        (Some(value), _) => {
            format_result(value, &live.display_unit(cell.id, units.system()), sig_figs)
        }
        (None, CellStatus::Blocked { by }) => {
            format!("{} ({})", text::NO_VALUE, live.cell(by).name)
        }
        (None, _) => text::NO_VALUE.to_string(),
    }
}

pub(super) fn mark_style(theme: Theme, mark: &str) -> Style {
    match mark {
        text::MARK_OK | text::MARK_PASS => theme.good(),
        text::MARK_WARNING => theme.warning(),
        text::MARK_ERROR | text::MARK_FAIL | text::MARK_UNKNOWN => theme.bad(),
        text::MARK_BLOCKED => theme.blocked(),
        _ => Style::default(),
    }
}

/// The state mark of statement `index`.
pub(super) fn mark_of(live: &LiveSheet, index: usize, row: &Row<'_>) -> &'static str {
    let severity = live.statement_severity(index);
    let own = match row {
        Row::Cell(cell) => match cell.status {
            CellStatus::Ok => text::MARK_OK,
            CellStatus::Error => text::MARK_ERROR,
            CellStatus::Blocked { .. } => text::MARK_BLOCKED,
        },
        Row::Check(_, check) => match check.status {
            CheckStatus::Passed => text::MARK_PASS,
            CheckStatus::Failed => text::MARK_FAIL,
            CheckStatus::Unknown => text::MARK_UNKNOWN,
            CheckStatus::Error => text::MARK_ERROR,
            CheckStatus::Blocked { .. } => text::MARK_BLOCKED,
        },
        Row::Invalid { .. } => text::MARK_ERROR,
        Row::Block { .. } => text::MARK_OK,
        Row::Review { .. } => text::MARK_NOTE,
        Row::Note { .. } => text::MARK_NOTE,
        Row::Heading { .. } => "",
    };
    match (own, severity) {
        (text::MARK_OK | text::MARK_PASS | "" | text::MARK_NOTE, Some(Severity::Error)) => {
            text::MARK_ERROR
        }
        (text::MARK_OK | text::MARK_PASS | "" | text::MARK_NOTE, Some(Severity::Warning)) => {
            text::MARK_WARNING
        }
        _ => own,
    }
}

/// `T_up <= WLL`.
pub(super) fn check_text(check: &CheckResult) -> String {
    format!(
        "{} {} {}",
        check.lhs_text,
        check.comparison.symbol(),
        check.rhs_text
    )
}

/// `76.9 %` of the allowed, or nothing.
pub(super) fn utilization_text(check: &CheckResult) -> String {
    crate::present::utilization(check).unwrap_or_else(|| text::NO_VALUE.to_string())
}
