//! The in-memory index of a log: where each record is, and which revision is current.
//!
//! Design choice: the index keeps only fixed-size slots (64 bytes: ids, time, file position,
//! interned tap and chemical numbers) and reads full records from the file on demand, so
//! 100 000 entries cost a few megabytes rather than a copy of the file. Which revision is
//! current is decided by (time, id) order, not file order, so two devices that merged each
//! other's logs in any order show the same current state.

use super::record::{Key, Kind};
use std::collections::HashMap;

/// One record's place in the file and the fields that queries filter on.
#[derive(Clone, Copy, Debug)]
pub struct Slot {
    pub id: u128,
    /// For revisions, the original entry's id (resolved through other revisions).
    pub root: u128,
    pub at_ms: i64,
    /// Offset of the payload in the file.
    pub offset: u64,
    pub len: u32,
    pub tap: u32,
    pub chemical: u32,
    pub offset_min: i16,
    pub kind: Kind,
}

impl Slot {
    /// The local calendar day at the device when recorded, as days since 1970-01-01.
    pub fn local_day(&self) -> i64 {
        // Saturating: a damaged or hostile file may hold any time at all.
        self.at_ms
            .saturating_add(self.offset_min as i64 * 60_000)
            .div_euclid(86_400_000)
    }

    fn order(&self) -> (i64, u128) {
        (self.at_ms, self.id)
    }
}

/// The latest revisions of one entry, as slot numbers.
#[derive(Clone, Copy, Debug, Default)]
pub struct Revisions {
    pub latest: Option<u32>,
    pub latest_correction: Option<u32>,
    pub count: u32,
}

/// Whether a record was new to the index.
#[derive(Debug, PartialEq, Eq)]
pub enum Inserted {
    New,
    /// The id is already indexed at this slot.
    Duplicate(u32),
}

#[derive(Default)]
pub struct Index {
    pub slots: Vec<Slot>,
    by_id: HashMap<u128, u32>,
    names: Vec<Box<str>>,
    name_ids: HashMap<Box<str>, u32>,
    /// Original entries, by slot, in file order.
    pub roots: Vec<u32>,
    revisions: HashMap<u32, Revisions>,
    /// Revisions whose original is not in this log (yet): applied when it arrives by merge.
    waiting: HashMap<u128, Vec<u32>>,
}

impl Index {
    fn intern(&mut self, name: &str) -> u32 {
        if let Some(&n) = self.name_ids.get(name) {
            return n;
        }
        let n = self.names.len() as u32;
        self.names.push(name.into());
        self.name_ids.insert(name.into(), n);
        n
    }

    #[cfg(test)]
    pub fn name(&self, n: u32) -> &str {
        &self.names[n as usize]
    }

    pub fn name_id(&self, name: &str) -> Option<u32> {
        self.name_ids.get(name).copied()
    }

    pub fn slot_of(&self, id: u128) -> Option<u32> {
        self.by_id.get(&id).copied()
    }

    pub fn len(&self) -> usize {
        self.slots.len()
    }

    pub fn revisions(&self, root_slot: u32) -> Revisions {
        self.revisions.get(&root_slot).copied().unwrap_or_default()
    }

    /// Resolves an id to the original entry it belongs to, if that entry is indexed.
    pub fn root_slot(&self, id: u128) -> Option<u32> {
        let slot = self.slot_of(id)?;
        let s = &self.slots[slot as usize];
        if s.kind.is_original() {
            Some(slot)
        } else {
            self.slot_of(s.root)
                .filter(|&r| self.slots[r as usize].kind.is_original())
        }
    }

    pub fn insert(&mut self, key: &Key<'_>, offset: u64, len: u32) -> Inserted {
        let id = key.id.as_u128();
        if let Some(&existing) = self.by_id.get(&id) {
            return Inserted::Duplicate(existing);
        }
        let refers = key.refers_to.map_or(0, |u| u.as_u128());
        // A revision of a revision counts against the original entry.
        let root = match self.slot_of(refers) {
            Some(s) if !self.slots[s as usize].kind.is_original() => self.slots[s as usize].root,
            _ => refers,
        };
        let slot = Slot {
            id,
            root: if key.kind.is_original() { id } else { root },
            at_ms: key.at_ms,
            offset,
            len,
            tap: self.intern(key.tap),
            chemical: self.intern(key.chemical),
            offset_min: key.offset_min,
            kind: key.kind,
        };
        let n = self.slots.len() as u32;
        self.slots.push(slot);
        self.by_id.insert(id, n);
        if key.kind.is_original() {
            self.roots.push(n);
            for revision in self.waiting.remove(&id).unwrap_or_default() {
                self.apply(n, revision);
            }
        } else {
            match self.slot_of(slot.root) {
                Some(r) if self.slots[r as usize].kind.is_original() => self.apply(r, n),
                _ => self.waiting.entry(slot.root).or_default().push(n),
            }
        }
        Inserted::New
    }

    fn apply(&mut self, root: u32, revision: u32) {
        let new = self.slots[revision as usize];
        let slots = &self.slots;
        let newer =
            |current: Option<u32>| current.is_none_or(|c| new.order() > slots[c as usize].order());
        let state = self.revisions.entry(root).or_default();
        state.count += 1;
        if newer(state.latest) {
            state.latest = Some(revision);
        }
        if new.kind.is_correction() && newer(state.latest_correction) {
            state.latest_correction = Some(revision);
        }
    }

    /// Revisions whose original entry is not in the log, as (slot, missing original id).
    pub fn orphans(&self) -> impl Iterator<Item = (u32, u128)> + '_ {
        self.waiting
            .iter()
            .flat_map(|(root, slots)| slots.iter().map(move |&s| (s, *root)))
    }

    /// All revisions of an original entry, in (time, id) order.
    pub fn history_slots(&self, root_slot: u32) -> Vec<u32> {
        let root_id = self.slots[root_slot as usize].id;
        let mut found: Vec<u32> = (0..self.slots.len() as u32)
            .filter(|&s| {
                let slot = &self.slots[s as usize];
                !slot.kind.is_original() && slot.root == root_id
            })
            .collect();
        found.sort_by_key(|&s| self.slots[s as usize].order());
        found.insert(0, root_slot);
        found
    }

    /// The slot whose tap and chemical are current for an original entry.
    pub fn content_slot(&self, root_slot: u32) -> u32 {
        self.revisions(root_slot)
            .latest_correction
            .unwrap_or(root_slot)
    }

    pub fn is_voided(&self, root_slot: u32) -> bool {
        self.revisions(root_slot)
            .latest
            .is_some_and(|s| self.slots[s as usize].kind == Kind::Void)
    }

    pub fn sort_by_time(&self, slots: &mut [u32]) {
        slots.sort_by_key(|&s| self.slots[s as usize].order());
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use uuid::Uuid;

    fn key(
        kind: Kind,
        id: u128,
        at_ms: i64,
        refers: Option<u128>,
        tap: &'static str,
    ) -> Key<'static> {
        Key {
            kind,
            id: Uuid::from_u128(id),
            at_ms,
            offset_min: 0,
            refers_to: refers.map(Uuid::from_u128),
            tap,
            chemical: "chlorine",
        }
    }

    #[test]
    fn latest_revision_wins_by_time_not_file_order() {
        let mut index = Index::default();
        index.insert(&key(Kind::Entry, 1, 100, None, "A"), 0, 1);
        index.insert(&key(Kind::Correction, 3, 300, Some(1), "C"), 0, 1);
        index.insert(&key(Kind::Correction, 2, 200, Some(1), "B"), 0, 1);
        let content = index.content_slot(0);
        assert_eq!(index.name(index.slots[content as usize].tap), "C");
        assert_eq!(index.revisions(0).count, 2);
        assert!(!index.is_voided(0));
        index.insert(&key(Kind::Void, 4, 400, Some(3), ""), 0, 1);
        assert!(index.is_voided(0), "a void of a correction voids the entry");
        assert_eq!(index.history_slots(0), vec![0, 2, 1, 3]);
    }

    #[test]
    fn revisions_arriving_before_their_entry_wait_for_it() {
        let mut index = Index::default();
        index.insert(&key(Kind::Correction, 2, 200, Some(1), "B"), 0, 1);
        assert_eq!(index.orphans().count(), 1);
        index.insert(&key(Kind::Entry, 1, 100, None, "A"), 0, 1);
        assert_eq!(index.orphans().count(), 0);
        let root = index.slot_of(1).unwrap();
        assert_eq!(
            index.name(index.slots[index.content_slot(root) as usize].tap),
            "B"
        );
    }

    #[test]
    fn duplicates_are_not_indexed_twice() {
        let mut index = Index::default();
        assert_eq!(
            index.insert(&key(Kind::Entry, 1, 100, None, "A"), 0, 1),
            Inserted::New
        );
        assert_eq!(
            index.insert(&key(Kind::Entry, 1, 100, None, "A"), 50, 1),
            Inserted::Duplicate(0)
        );
        assert_eq!(index.len(), 1);
    }
}
