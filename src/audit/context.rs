//! What every lint needs: the evaluated sheet, its syntax tree, cached unit
//! look-ups, and the way values are written in findings.

use std::cell::RefCell;

use rustc_hash::FxHashMap;

use crate::base::Span;
use crate::eval::{CellStatus, Evaluated};
use crate::sheet::{CellId, Sheet};
use crate::syntax::ast::{Expr, ExprKind, NameRef, Target, UnitExpr};
use crate::units::{
    self, Dimension, DisplaySystem, Quantity, ResolvedUnit, format_significant, pick_unit,
};

/// Where an expression lives: a cell's formula or a side of a check.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(super) enum Owner {
    /// The formula of this cell.
    Cell(CellId),
    /// This side (0 left, 1 right) of the check with this index.
    Check(usize, usize),
}

/// The evaluated sheet as the lints read it.
pub(super) struct Context<'a> {
    /// The evaluated sheet.
    pub evaluated: &'a Evaluated,
    /// Its linked syntax tree.
    pub sheet: &'a Sheet,
    /// Its source text.
    pub source: &'a str,
    /// The display system for values in messages.
    pub system: DisplaySystem,
    /// Significant digits for values in messages.
    pub sig_figs: u32,
    /// Unit look-ups by their text.
    units: RefCell<FxHashMap<&'a str, Option<ResolvedUnit>>>,
}

impl<'a> Context<'a> {
    /// The context of an evaluated sheet.
    pub fn new(evaluated: &'a Evaluated) -> Self {
        let sheet = evaluated.sheet();
        Context {
            evaluated,
            sheet,
            source: evaluated.source(),
            system: sheet.header.display,
            sig_figs: sheet.header.sig_figs,
            units: RefCell::default(),
        }
    }

    /// The text a span covers.
    pub fn text(&self, span: Span) -> &'a str {
        span.text(self.source)
    }

    /// A unit expression looked up (once per distinct text).
    pub fn resolve(&self, unit: &UnitExpr) -> Option<ResolvedUnit> {
        let text = unit.span.text(self.source);
        if let Some(resolved) = self.units.borrow().get(text) {
            return *resolved;
        }
        let resolved = units::resolve(unit.symbols()).ok();
        self.units.borrow_mut().insert(text, resolved);
        resolved
    }

    /// Every expression of the sheet with its owner, in file order of owners.
    pub fn expressions(&self) -> impl Iterator<Item = (Owner, &'a Expr)> + 'a {
        let sheet = self.sheet;
        let cells = (0..sheet.cells.len()).filter_map(move |id| {
            sheet
                .formula_cell(id)
                .map(|cell| (Owner::Cell(id), &cell.expr))
        });
        let checks = (0..sheet.checks.len()).flat_map(move |index| {
            let check = sheet.check(index);
            [
                (Owner::Check(index, 0), &check.lhs),
                (Owner::Check(index, 1), &check.rhs),
            ]
        });
        cells.chain(checks)
    }

    /// The value of a cell, if it evaluated.
    pub fn value(&self, id: CellId) -> Option<Quantity> {
        let cell = self.evaluated.cell_at(id);
        (cell.status == CellStatus::Ok)
            .then_some(cell.value)
            .flatten()
    }

    /// The dimension a cell's declared unit fixes.
    pub fn declared_dimension(&self, id: CellId) -> Option<Dimension> {
        let unit = self.sheet.cell(id).unit?;
        self.resolve(unit).map(|resolved| resolved.dimension)
    }

    /// The unit a cell is declared in, or (for an input) written in.
    pub fn cell_unit(&self, id: CellId) -> Option<(&'a str, ResolvedUnit)> {
        let cell = self.sheet.cell(id);
        let unit = cell.unit.or(match cell.expr.map(|expr| &expr.kind) {
            Some(ExprKind::Quantity { unit, .. }) => Some(unit),
            _ => None,
        })?;
        Some((self.text(unit.span), self.resolve(unit)?))
    }

    /// The unit an operand's value was written in: a quantity's own unit, or
    /// the declared or written unit of the cell a name refers to.
    pub fn written_unit(&self, expr: &Expr) -> Option<(&'a str, ResolvedUnit)> {
        match &expr.kind {
            ExprKind::Quantity { unit, .. } | ExprKind::UnitValue(unit) => {
                Some((self.text(unit.span), self.resolve(unit)?))
            }
            ExprKind::Name(NameRef {
                target: Target::Cell(id),
                ..
            }) => self.cell_unit(*id),
            ExprKind::Negate(inner) => self.written_unit(inner),
            _ => None,
        }
    }

    /// A unit named by a cell's last `_` segment (`L_in`, `F_kN`) with the
    /// given dimension. Single letters other than `N` and `m` are too often
    /// plain labels (`W_A`, `m_t`) to count.
    pub fn suffix_unit(&self, name: &'a str, dimension: Dimension) -> Option<(&'a str, f64)> {
        let (_, suffix) = name.rsplit_once('_')?;
        if suffix.chars().count() < 2 && suffix != "N" && suffix != "m" {
            return None;
        }
        let unit = units::catalog().get(suffix)?;
        (unit.dimension == dimension).then_some((suffix, unit.si_factor))
    }

    /// `4079 lbf`: a value in a readable unit of the sheet's display system.
    pub fn show(&self, quantity: Quantity) -> String {
        let unit = pick_unit(quantity.dimension, quantity.si, self.system);
        self.show_in(quantity.si, &unit.text, unit.si_factor)
    }

    /// A value in a given unit.
    pub fn show_in(&self, si: f64, unit_text: &str, si_factor: f64) -> String {
        let number = format_significant(si / si_factor, self.sig_figs);
        if unit_text.is_empty() {
            number
        } else {
            format!("{number} {unit_text}")
        }
    }

    /// A value as the owner shows it: in a cell's declared unit when the
    /// dimension fits, else readable.
    pub fn show_for(&self, owner: Owner, quantity: Quantity) -> String {
        if let Owner::Cell(id) = owner
            && let Some(unit) = self.sheet.cell(id).unit
            && let Some(resolved) = self.resolve(unit)
            && resolved.dimension == quantity.dimension
        {
            return self.show_in(quantity.si, self.text(unit.span), resolved.si_factor);
        }
        self.show(quantity)
    }

    /// The cells an owner's expression uses.
    pub fn uses(&self, owner: Owner) -> &'a [CellId] {
        match owner {
            Owner::Cell(id) => &self.sheet.uses[id],
            Owner::Check(index, _) => &self.sheet.check_uses[index],
        }
    }
}
