//! Where each part of the screen goes, for a terminal of a given size.
//! Both drawing and mouse handling read it, so a click lands on what was
//! drawn there.
//!
//! Narrow terminals (80 columns) stack the sheet over the detail pane;
//! from [`SIDE_BY_SIDE_WIDTH`] columns on, the detail pane sits to the right
//! and both get the full height.

use ratatui::layout::{Position, Rect};

/// From this width on, the sheet and the detail pane stand side by side.
pub const SIDE_BY_SIDE_WIDTH: u16 = 120;

/// The screen's parts.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Areas {
    /// The title bar: sheet title, revision, file and its state.
    pub title: Rect,
    /// The sheet table, its column headings on the first row.
    pub sheet: Rect,
    /// The detail pane for the selected row.
    pub detail: Rect,
    /// The status line: counts, unit view, significant figures.
    pub status: Rect,
    /// The bottom line: the editor, a question, a message or key hints.
    pub bottom: Rect,
    /// Where overlays (help, findings, find) are drawn.
    pub overlay: Rect,
}

/// The parts of a screen of size `viewport`.
pub fn areas(viewport: Rect) -> Areas {
    let Rect {
        x,
        y,
        width,
        height,
    } = viewport;
    let row = |offset: u16| {
        Rect::new(
            x,
            y + offset.min(height.saturating_sub(1)),
            width,
            1.min(height),
        )
    };
    let title = row(0);
    let bottom = row(height.saturating_sub(1));
    let status = row(height.saturating_sub(2));
    let middle_height = height.saturating_sub(3);
    let middle = Rect::new(x, y + 1.min(height), width, middle_height);
    let (sheet, detail) = if width >= SIDE_BY_SIDE_WIDTH {
        let sheet_width = width * 3 / 5;
        (
            Rect::new(middle.x, middle.y, sheet_width, middle.height),
            Rect::new(
                middle.x + sheet_width,
                middle.y,
                width - sheet_width,
                middle.height,
            ),
        )
    } else {
        let half = middle.height / 2;
        let detail_height = if middle.height >= 16 {
            half.clamp(8, 14)
        } else {
            half
        };
        let sheet_height = middle.height - detail_height;
        (
            Rect::new(middle.x, middle.y, width, sheet_height),
            Rect::new(middle.x, middle.y + sheet_height, width, detail_height),
        )
    };
    let overlay = Rect::new(
        x + width / 20,
        y + 1.min(height),
        width - width / 10,
        middle_height + 1.min(height.saturating_sub(2)),
    );
    Areas {
        title,
        sheet,
        detail,
        status,
        bottom,
        overlay,
    }
}

impl Areas {
    /// How many sheet rows fit (below the column headings).
    pub fn sheet_rows(&self) -> usize {
        usize::from(self.sheet.height.saturating_sub(1))
    }

    /// The sheet row (counted from the first shown) at `position`, if any.
    pub fn sheet_row_at(&self, position: Position) -> Option<usize> {
        let rows = Rect::new(
            self.sheet.x,
            self.sheet.y + 1,
            self.sheet.width,
            self.sheet.height.saturating_sub(1),
        );
        rows.contains(position)
            .then(|| usize::from(position.y - rows.y))
    }

    /// How many list rows fit in an overlay (inside its border).
    pub fn overlay_rows(&self) -> usize {
        usize::from(self.overlay.height.saturating_sub(3))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn an_80_by_24_terminal_stacks_the_panes() {
        let areas = areas(Rect::new(0, 0, 80, 24));
        assert_eq!(areas.sheet, Rect::new(0, 1, 80, 11));
        assert_eq!(areas.detail, Rect::new(0, 12, 80, 10));
        assert_eq!(areas.status.y, 22);
        assert_eq!(areas.bottom.y, 23);
        assert_eq!(areas.sheet_rows(), 10);
    }

    #[test]
    fn a_wide_terminal_puts_them_side_by_side() {
        let areas = areas(Rect::new(0, 0, 160, 48));
        assert_eq!(areas.sheet, Rect::new(0, 1, 96, 45));
        assert_eq!(areas.detail, Rect::new(96, 1, 64, 45));
    }

    #[test]
    fn a_tiny_terminal_does_not_underflow() {
        for (width, height) in [(0, 0), (1, 1), (10, 3), (20, 5)] {
            let areas = areas(Rect::new(0, 0, width, height));
            assert!(areas.sheet.height + areas.detail.height <= height);
        }
    }
}
