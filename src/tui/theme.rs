//! Colours and emphasis. Only the terminal's own eight base colours are
//! used, never a background colour except through reversal, so the
//! palette follows the user's light or dark scheme; every state is also
//! spelled out in words, so nothing depends on colour. With colour off
//! (`NO_COLOR`, `--color never`) only bold, italic, underline and reversal
//! remain.

use ratatui::style::{Color, Modifier, Style};

use crate::base::Severity;

/// The styles the notebook draws with.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Theme {
    /// Whether colours are used at all.
    pub colour: bool,
}

impl Theme {
    /// A theme with or without colour.
    pub fn new(colour: bool) -> Theme {
        Theme { colour }
    }

    fn paint(self, colour: Color, modifier: Modifier) -> Style {
        let style = Style::default().add_modifier(modifier);
        if self.colour { style.fg(colour) } else { style }
    }

    /// The title bar.
    pub fn title_bar(self) -> Style {
        Style::default().add_modifier(Modifier::REVERSED | Modifier::BOLD)
    }

    /// The selected row.
    pub fn selected(self) -> Style {
        Style::default().add_modifier(Modifier::REVERSED)
    }

    /// A heading row.
    pub fn heading(self) -> Style {
        Style::default().add_modifier(Modifier::BOLD | Modifier::UNDERLINED)
    }

    /// A note row.
    pub fn note(self) -> Style {
        Style::default().add_modifier(Modifier::ITALIC)
    }

    /// A label in the detail pane or a column heading.
    pub fn label(self) -> Style {
        Style::default().add_modifier(Modifier::BOLD)
    }

    /// Text of less weight (hints, column rules): plain, since a dimmed or
    /// pale colour fades out on one scheme or the other.
    pub fn quiet(self) -> Style {
        Style::default()
    }

    /// Ok and pass marks.
    pub fn good(self) -> Style {
        self.paint(Color::Green, Modifier::empty())
    }

    /// Warning marks.
    pub fn warning(self) -> Style {
        self.paint(Color::Magenta, Modifier::BOLD)
    }

    /// Error and failure marks.
    pub fn bad(self) -> Style {
        self.paint(Color::Red, Modifier::BOLD)
    }

    /// A finding of this severity: errors as failures, warnings as
    /// warnings, information plain.
    pub fn severity(self, severity: Severity) -> Style {
        match severity {
            Severity::Error => self.bad(),
            Severity::Warning => self.warning(),
            Severity::Info => Style::default(),
        }
    }

    /// Blocked marks.
    pub fn blocked(self) -> Style {
        self.paint(Color::Magenta, Modifier::empty())
    }

    /// A key name in help and hints.
    pub fn key(self) -> Style {
        Style::default().add_modifier(Modifier::BOLD)
    }

    /// A link the detail pane can jump to.
    pub fn link(self) -> Style {
        Style::default().add_modifier(Modifier::UNDERLINED)
    }

    /// The line being edited.
    pub fn input(self) -> Style {
        Style::default().add_modifier(Modifier::BOLD)
    }

    /// A question that needs an answer.
    pub fn question(self) -> Style {
        self.paint(Color::Red, Modifier::BOLD | Modifier::REVERSED)
    }

    /// The caution.
    pub fn caution(self) -> Style {
        self.paint(Color::Red, Modifier::empty())
    }
}
