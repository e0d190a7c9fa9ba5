//! Importing another device's log.
//!
//! Design choice: ids are globally unique (UUID v7), so a record is either new here, already
//! here (identical content), or a conflict (same id, different content). New records are
//! appended in one write and one sync; nothing already in this log is touched, so importing
//! the same file twice adds nothing the second time, and a conflict is reported, never
//! resolved by overwriting. The other file is opened read-only with a shared lock.

use super::{Error, ErrorKind, Log, Recovery, Result, record};
use serde::Serialize;
use std::collections::HashMap;
use std::path::Path;
use uuid::Uuid;

/// What an import did.
#[derive(Clone, Debug, Default, PartialEq, Serialize)]
pub struct MergeReport {
    pub added: usize,
    pub already_present: usize,
    /// Ids present in both logs with different content; this log's copy is kept.
    pub conflicting: Vec<Uuid>,
    /// Records of the other log that could not be read (damage, newer versions).
    pub unreadable: usize,
    /// What reading the other log found (it is never modified).
    pub source_recovery: Recovery,
}

impl Log {
    /// Imports every record of the log file at `other` that this log does not have.
    pub fn merge_from(&mut self, other: &Path) -> Result<MergeReport> {
        // Otherwise the shared lock below would fail with a misleading "open elsewhere".
        let same = |p: &Path| std::fs::canonicalize(p).ok();
        if same(other).is_some() && same(other) == same(&self.name) {
            return Err(Error::new(
                ErrorKind::SameLog,
                format!(
                    "{} is this log itself; choose another device's log",
                    other.display()
                ),
            ));
        }
        // Our own unsaved entries go first: an import must not overtake them.
        self.retry_pending()?;
        let source = Log::open_read_only(other)?;
        let mut report = MergeReport {
            source_recovery: source.recovery.clone(),
            unreadable: source.recovery.unreadable.len(),
            ..MergeReport::default()
        };
        let mut to_add: Vec<Vec<u8>> = Vec::new();
        let mut batch: HashMap<Uuid, usize> = HashMap::new();
        for slot in 0..source.index.len() as u32 {
            let payload = source.read_payload(slot)?;
            let Ok(theirs) = record::decode(&payload) else {
                report.unreadable += 1;
                continue;
            };
            let id = theirs.id();
            let ours = match self.index.slot_of(id.as_u128()) {
                Some(s) => Some(self.read_slot(s)?),
                None => match batch.get(&id) {
                    Some(&n) => record::decode(&to_add[n]).ok(),
                    None => None,
                },
            };
            match ours {
                Some(ours) if ours == theirs => report.already_present += 1,
                Some(_) => report.conflicting.push(id),
                None => {
                    if theirs.validate().is_err() {
                        report.unreadable += 1;
                        continue;
                    }
                    batch.insert(id, to_add.len());
                    to_add.push(payload);
                }
            }
        }
        drop(source);
        if !to_add.is_empty() {
            self.write_payloads(&to_add)?;
        }
        report.added = to_add.len();
        Ok(report)
    }
}
