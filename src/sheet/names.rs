//! The sheet's cells by name.
//!
//! Written by hand rather than a `HashMap<String, CellId>` or hashbrown's
//! `HashTable`: on a million-cell sheet the table outgrows the caches, and
//! entering each name then waits for memory. Here a slot is 8 bytes (part
//! of the name's hash and an index into the entries, which stay in
//! definition order), found by the hash's high bits with linear probing, and
//! [`NameTable::prefetch`] lets linking load a name's slot a few cells before
//! it enters the name: hashbrown offers no way to reach a slot ahead of
//! time. The entry a formula's name leads to is usually one defined a few
//! lines above, already in cache.

use std::borrow::Cow;
use std::collections::HashMap;
use std::collections::hash_map::Entry;
use std::hash::BuildHasher;
use std::ops::Index;

use compact_str::CompactString;
use rustc_hash::FxBuildHasher;

use super::CellId;

/// Cell by name: the first definition of each name.
#[derive(Clone, Debug)]
pub struct NameTable {
    /// Open addressing with linear probing, a power of two long and at most
    /// half full: each slot is empty (0) or holds the low 32 bits of the
    /// name's hash above the name's entry index + 1. The high bits of the
    /// hash pick the first slot.
    slots: Box<[u64]>,
    /// `64 - log2(slots.len())`: shifting a hash by it gives the first slot.
    shift: u32,
    /// The names and their cells, in the order they were added.
    entries: Vec<(CompactString, CellId)>,
    /// The cells of used sheets, by qualified name (`gear.WLL`), sorted:
    /// which `use` and which of its exports.
    imported: Vec<(CompactString, (u32, u32))>,
}

/// The fewest slots a table has.
const MIN_SLOTS: usize = 16;

impl Default for NameTable {
    fn default() -> Self {
        NameTable::with_capacity(0)
    }
}

impl NameTable {
    /// An empty table with room for `capacity` names.
    pub fn with_capacity(capacity: usize) -> Self {
        let n_slots = (capacity * 2).next_power_of_two().max(MIN_SLOTS);
        NameTable {
            slots: vec![0; n_slots].into_boxed_slice(),
            shift: 64 - n_slots.trailing_zeros(),
            entries: Vec::with_capacity(capacity),
            imported: Vec::new(),
        }
    }

    /// Makes the cells of used sheets readable by their qualified names
    /// (`gear.WLL`): for each, which `use` and which of its exports.
    pub fn set_imported(&mut self, mut imported: Vec<(CompactString, (u32, u32))>) {
        imported.sort_unstable_by(|a, b| a.0.cmp(&b.0));
        self.imported = imported;
    }

    /// The used sheet's cell a qualified name (`gear.WLL`) reads.
    pub fn imported(&self, name: &str) -> Option<(u32, u32)> {
        self.imported
            .binary_search_by(|(entry, _)| entry.as_str().cmp(name))
            .ok()
            .map(|at| self.imported[at].1)
    }

    /// Whether `name` is the alias of a used sheet (`gear` of `gear.WLL`).
    pub fn is_alias(&self, name: &str) -> bool {
        let prefix_of = |entry: &str| {
            entry
                .strip_prefix(name)
                .is_some_and(|rest| rest.starts_with('.'))
        };
        let at = self
            .imported
            .partition_point(|(entry, _)| entry.as_str() < name);
        self.imported[at..]
            .iter()
            .take_while(|(entry, _)| entry.starts_with(name))
            .any(|(entry, _)| prefix_of(entry))
    }

    /// Every qualified name of a used sheet's cell, sorted.
    pub fn imported_names(&self) -> impl Iterator<Item = &str> {
        self.imported.iter().map(|(name, _)| name.as_str())
    }

    /// The cell named `name`, if there is one.
    pub fn get(&self, name: &str) -> Option<&CellId> {
        let name = canonical(name);
        self.find(hash(&name), &name)
            .ok()
            .map(|entry| &self.entries[entry].1)
    }

    /// The index of `name`'s entry, or the empty slot where it would go.
    fn find(&self, name_hash: u64, name: &str) -> Result<usize, usize> {
        let mask = self.slots.len() - 1;
        let tag = name_hash & u64::from(u32::MAX);
        let mut slot = (name_hash >> self.shift) as usize;
        loop {
            let held = self.slots[slot];
            if held == 0 {
                return Err(slot);
            }
            if held >> 32 == tag {
                let entry = (held & u64::from(u32::MAX)) as usize - 1;
                if self.entries[entry].0 == name {
                    return Ok(entry);
                }
            }
            slot = (slot + 1) & mask;
        }
    }

    /// Starts loading the slot `name` would be found in, so that entering
    /// or looking up the name a little later does not wait for memory.
    pub fn prefetch(&self, name: &str) {
        let slot = (hash(&canonical(name)) >> self.shift) as usize;
        #[cfg(target_arch = "x86_64")]
        // SAFETY: a prefetch is only a hint: it never faults, whatever the
        // address, and SSE (which provides it) is part of every x86-64.
        unsafe {
            use std::arch::x86_64::{_MM_HINT_T0, _mm_prefetch};
            _mm_prefetch::<_MM_HINT_T0>(self.slots.as_ptr().wrapping_add(slot).cast());
        }
        #[cfg(not(target_arch = "x86_64"))]
        let _ = slot;
    }

    /// Whether a cell is named `name`.
    pub fn contains_key(&self, name: &str) -> bool {
        self.get(name).is_some()
    }

    /// Names `id` by `name`, unless the name is taken: then the cell that
    /// has it is returned and the table is unchanged.
    pub fn insert_first(&mut self, name: &str, id: CellId) -> Result<(), CellId> {
        if (self.entries.len() + 1) * 2 > self.slots.len() {
            self.grow();
        }
        let name = canonical(name);
        let name_hash = hash(&name);
        match self.find(name_hash, &name) {
            Ok(first) => Err(self.entries[first].1),
            Err(slot) => {
                self.slots[slot] = packed(name_hash, self.entries.len());
                self.entries.push((name.as_ref().into(), id));
                Ok(())
            }
        }
    }

    /// Doubles the slots and enters every name again.
    fn grow(&mut self) {
        let n_slots = self.slots.len() * 2;
        let mut slots = vec![0; n_slots].into_boxed_slice();
        let shift = 64 - n_slots.trailing_zeros();
        for (entry, (name, _)) in self.entries.iter().enumerate() {
            let name_hash = hash(name);
            let mut slot = (name_hash >> shift) as usize;
            while slots[slot] != 0 {
                slot = (slot + 1) & (n_slots - 1);
            }
            slots[slot] = packed(name_hash, entry);
        }
        self.slots = slots;
        self.shift = shift;
    }

    /// Every name, in the order added (in Unicode normalization form C).
    pub fn keys(&self) -> impl Iterator<Item = &str> {
        self.entries.iter().map(|(name, _)| name.as_str())
    }

    /// Names a reader could take for one another, when any name is not
    /// plain ASCII: pairs of distinct names with one reading (`reading`:
    /// the Unicode TR 39 skeleton, Greek symbols aside), at least one of
    /// them not ASCII (`Fо` with a Cyrillic `о`
    /// and `Fo`; ASCII pairs such as `m1` and `ml` are left alone), and
    /// names that mix scripts (`mixes_scripts`). Empty for an ASCII sheet.
    pub fn lookalikes(&self) -> Lookalikes {
        let mut found = Lookalikes::default();
        if self.entries.iter().all(|(name, _)| name.is_ascii()) {
            return found;
        }
        // The first cell of each skeleton, and whether its name is ASCII.
        let mut by_skeleton: HashMap<String, (CellId, bool)> = HashMap::new();
        for (name, id) in &self.entries {
            found
                .mixed_scripts
                .extend(mixes_scripts(name).then_some(*id));
            let skeleton = reading(name);
            match by_skeleton.entry(skeleton) {
                Entry::Occupied(first) => {
                    let (first, first_is_ascii) = *first.get();
                    if !(name.is_ascii() && first_is_ascii) {
                        found.confusable.push((first, *id));
                    }
                }
                Entry::Vacant(slot) => {
                    slot.insert((*id, name.is_ascii()));
                }
            }
        }
        found
    }
}

/// How a name reads: its Unicode TR 39 skeleton, except that the small
/// Greek letters engineers write as symbols (`α` for an angle beside `a`
/// for an acceleration, `ν` beside `v`, `ρ` beside `p`) stand for
/// themselves. The Greek capitals drawn like Latin ones (`Α`, `Β`, `Ε`, …),
/// omicron and the micro sign are read as their skeletons, so they still
/// count as look-alikes.
fn reading(name: &str) -> String {
    let mut text = String::with_capacity(name.len());
    for c in name.chars() {
        if ('α'..='ω').contains(&c) && c != 'ο' || matches!(c, 'ϑ' | 'ϕ' | 'ϵ') {
            text.push(c);
        } else {
            let mut buffer = [0; 4];
            text.extend(unicode_security::skeleton(c.encode_utf8(&mut buffer)));
        }
    }
    text
}

/// What [`NameTable::lookalikes`] found.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct Lookalikes {
    /// Pairs of cells whose names read alike: the one defined first, then
    /// the other.
    pub confusable: Vec<(CellId, CellId)>,
    /// Cells whose names mix scripts.
    pub mixed_scripts: Vec<CellId>,
}

/// `name` in Unicode normalization form C (UAX #15), so a name typed with a
/// decomposed `é` is the cell written with the precomposed one; borrowed
/// when it is already (every ASCII name is).
pub fn canonical(name: &str) -> Cow<'_, str> {
    use unicode_normalization::{IsNormalized, UnicodeNormalization, is_nfc_quick};
    if name.is_ascii() || is_nfc_quick(name.chars()) == IsNormalized::Yes {
        Cow::Borrowed(name)
    } else {
        Cow::Owned(name.nfc().collect())
    }
}

/// Whether `name` mixes writing systems (its letters come from more than
/// one script, digits and `_` aside), other than Latin with Greek, which
/// engineering names mix as a rule (`μ_s`, `σ_max`, `Δx`).
pub fn mixes_scripts(name: &str) -> bool {
    use unicode_script::{Script, UnicodeScript};
    let mut scripts: Vec<Script> = name
        .chars()
        .map(|c| c.script())
        .filter(|script| !matches!(script, Script::Common | Script::Inherited | Script::Unknown))
        .collect();
    scripts.sort_unstable_by_key(|script| script.full_name());
    scripts.dedup();
    scripts.len() > 1
        && !scripts
            .iter()
            .all(|s| matches!(s, Script::Latin | Script::Greek))
}

impl Index<&str> for NameTable {
    type Output = CellId;

    /// The cell named `name`; panics if there is none (tests only: code
    /// reading a user's names uses [`NameTable::get`]).
    fn index(&self, name: &str) -> &CellId {
        self.get(name)
            .unwrap_or_else(|| panic!("no cell is named `{name}`"))
    }
}

/// A slot's content: the hash's low 32 bits above the entry index + 1.
/// Sheets are far below 4 billion names (spans are u32, so a 4 GiB file is
/// refused before linking, and every name takes a byte or more).
fn packed(name_hash: u64, entry: usize) -> u64 {
    (name_hash & u64::from(u32::MAX)) << 32 | (entry as u64 + 1)
}

fn hash(name: &str) -> u64 {
    FxBuildHasher.hash_one(name)
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;
    use std::collections::HashMap;

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(64))]

        /// The table answers as a `HashMap` keeping each name's first cell
        /// does, through growth and many near-identical names.
        #[test]
        fn it_agrees_with_a_map_of_first_definitions(
            names in proptest::collection::vec("[a-c_θ]{1,3}[0-9]{0,2}", 0..600),
            capacity in 0usize..64,
        ) {
            let mut table = NameTable::with_capacity(capacity);
            let mut reference: HashMap<&str, CellId> = HashMap::new();
            for (id, name) in names.iter().enumerate() {
                let expected = match reference.get(name.as_str()) {
                    Some(&first) => Err(first),
                    None => {
                        reference.insert(name, id);
                        Ok(())
                    }
                };
                prop_assert_eq!(table.insert_first(name, id), expected);
            }
            for name in &names {
                prop_assert_eq!(table.get(name), reference.get(name.as_str()));
                table.prefetch(name);
            }
            prop_assert_eq!(table.get("not-a-name"), None);
            prop_assert_eq!(table.keys().count(), reference.len());
        }
    }

    #[test]
    fn the_first_definition_keeps_the_name() {
        let mut names = NameTable::with_capacity(2);
        assert_eq!(names.insert_first("m_skid", 0), Ok(()));
        assert_eq!(names.insert_first("W", 1), Ok(()));
        assert_eq!(names.insert_first("m_skid", 2), Err(0));
        assert_eq!(names.get("m_skid"), Some(&0));
        assert_eq!(names.get("W"), Some(&1));
        assert_eq!(names.get("w"), None, "names are case-sensitive");
        assert_eq!(names.keys().collect::<Vec<_>>(), ["m_skid", "W"]);
    }

    #[test]
    fn many_names_stay_found_as_the_table_grows() {
        let mut names = NameTable::with_capacity(0);
        for id in 0..10_000 {
            assert_eq!(names.insert_first(&format!("θ_{id}"), id), Ok(()));
        }
        for id in (0..10_000).rev() {
            assert_eq!(names.get(&format!("θ_{id}")), Some(&id));
        }
        assert!(!names.contains_key("θ_10000"));
    }
}
