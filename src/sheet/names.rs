//! The sheet's cells by name.
//!
//! Written by hand rather than a `HashMap<String, CellId>`: in such a map
//! every slot holds the name itself (32 bytes a slot at best), so on a
//! million-cell sheet the table outgrows the cache and every lookup while
//! linking misses it. Here a slot holds a 4-byte index into the entries,
//! which stay in definition order; the table of a million names fits in
//! cache, and the entry a formula's name leads to is usually one defined a
//! few lines above, already in cache too.

use std::hash::BuildHasher;
use std::ops::Index;

use compact_str::CompactString;
use hashbrown::HashTable;
use rustc_hash::FxBuildHasher;

use super::CellId;

/// Cell by name: the first definition of each name.
#[derive(Clone, Debug, Default)]
pub struct NameTable {
    /// Index into `entries` for each name, hashed by the name.
    slots: HashTable<u32>,
    /// The names and their cells, in the order they were added.
    entries: Vec<(CompactString, CellId)>,
}

impl NameTable {
    /// An empty table with room for `capacity` names.
    pub fn with_capacity(capacity: usize) -> Self {
        NameTable {
            slots: HashTable::with_capacity(capacity),
            entries: Vec::with_capacity(capacity),
        }
    }

    /// The cell named `name`, if there is one.
    pub fn get(&self, name: &str) -> Option<&CellId> {
        self.entry_of(hash(name), name)
            .map(|entry| &self.entries[entry].1)
    }

    /// The index of `name`'s entry, given the name's hash.
    fn entry_of(&self, name_hash: u64, name: &str) -> Option<usize> {
        self.slots
            .find(name_hash, |&entry| self.entries[entry as usize].0 == name)
            .map(|&entry| entry as usize)
    }

    /// Whether a cell is named `name`.
    pub fn contains_key(&self, name: &str) -> bool {
        self.get(name).is_some()
    }

    /// Names `id` by `name`, unless the name is taken: then the cell that
    /// has it is returned and the table is unchanged.
    pub fn insert_first(&mut self, name: &str, id: CellId) -> Result<(), CellId> {
        let name_hash = hash(name);
        if let Some(first) = self.entry_of(name_hash, name) {
            return Err(self.entries[first].1);
        }
        // Sheets are far below 4 billion names: spans are u32 (a 4 GiB file
        // is refused before linking), and every name takes a byte or more.
        let entry = u32::try_from(self.entries.len()).unwrap_or(u32::MAX);
        let entries = &self.entries;
        self.slots
            .insert_unique(name_hash, entry, |&other| hash(&entries[other as usize].0));
        self.entries.push((name.into(), id));
        Ok(())
    }

    /// Every name, in the order added.
    pub fn keys(&self) -> impl Iterator<Item = &str> {
        self.entries.iter().map(|(name, _)| name.as_str())
    }
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

fn hash(name: &str) -> u64 {
    FxBuildHasher.hash_one(name)
}

#[cfg(test)]
mod tests {
    use super::*;

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
