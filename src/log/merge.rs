//! Importing another device's log.
//!
//! Design choice: ids are globally unique (UUID v7), so a record is either new here, already
//! here (identical content), or a conflict (same id, different content). New records are
//! appended in one write and one sync; nothing already in this log is touched, so importing
//! the same file twice adds nothing the second time, and a conflict is reported, never
//! resolved by overwriting. The other file is opened read-only with a shared lock.
//!
//! An imported record is checked as a whole before it may enter this log, because another
//! file can hold anything its checksums cover:
//! - its index key must be the one its body implies (see `record::key_of`), so it is listed
//!   exactly where date, tap and chemical queries look for it;
//! - it must be valid as an entry typed here would be;
//! - its time must not be more than [`CLOCK_TOLERANCE`] after this device's clock at the
//!   import: the latest correction or void wins by time, so a record dated in the future would
//!   otherwise outrank every later correction made here (one dated 9999 forever);
//! - a correction or void must refer to an entry (not another revision) that is in this log
//!   or in the same import, of the same site.
//!
//! Every record left out is reported with the reason, so the operator sees what was refused.

use super::{Error, ErrorKind, Log, Recovery, Result, record};
use chrono::{DateTime, FixedOffset};
use serde::Serialize;
use std::collections::HashMap;
use std::path::Path;
use uuid::Uuid;

/// How far past this device's clock an imported record may be dated. Clocks of offline
/// tablets drift by minutes; an hour also absorbs a clock set by hand. A record refused for
/// its time can be imported again once this device's clock has reached it.
pub const CLOCK_TOLERANCE: chrono::TimeDelta = chrono::TimeDelta::hours(1);

/// What an import did.
#[derive(Clone, Debug, Default, PartialEq, Serialize)]
pub struct MergeReport {
    pub added: usize,
    pub already_present: usize,
    /// Ids present in both logs with different content; this log's copy is kept.
    pub conflicting: Vec<Uuid>,
    /// Records of the other log left out because they could not be read (damage, newer
    /// versions) or were refused (each listed in `refused`).
    pub unreadable: usize,
    /// Records of the other log that failed a check, with the reason; none was imported.
    pub refused: Vec<Refused>,
    /// Ids that appear more than once in the other log: only their first copy was
    /// considered, later copies were dropped.
    pub dropped_duplicates: Vec<Uuid>,
    /// What reading the other log found (it is never modified).
    pub source_recovery: Recovery,
}

/// One record of the other log that was not imported, and why.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Refused {
    /// Byte offset of its frame in the other file.
    pub offset: u64,
    pub id: Option<Uuid>,
    pub reason: String,
}

impl Log {
    /// Imports every record of the log file at `other` that this log does not have.
    pub fn merge_from(&mut self, other: &Path) -> Result<MergeReport> {
        self.merge_at(other, chrono::Utc::now().fixed_offset())
    }

    /// [`Log::merge_from`] with this device's clock reading given, so tests can fix it.
    pub fn merge_at(&mut self, other: &Path, now: DateTime<FixedOffset>) -> Result<MergeReport> {
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
            dropped_duplicates: source.recovery.duplicates.clone(),
            ..MergeReport::default()
        };
        let latest_allowed = now + CLOCK_TOLERANCE;
        let mut to_add: Vec<(u64, record::Record, Vec<u8>)> = Vec::new();
        let mut batch: HashMap<Uuid, usize> = HashMap::new();
        for slot in 0..source.index.len() as u32 {
            let offset = source.index.slots[slot as usize].offset - super::frame::FRAME_OVERHEAD;
            let payload = source.read_payload(slot)?;
            let refuse = |report: &mut MergeReport, id: Option<Uuid>, reason: String| {
                report.refused.push(Refused { offset, id, reason })
            };
            let theirs = match record::decode(&payload) {
                Ok(r) => r,
                Err(why) => {
                    let id = record::decode_key(&payload).ok().map(|(k, _)| k.id);
                    refuse(&mut report, id, format!("cannot be read: {why}"));
                    continue;
                }
            };
            let id = theirs.id();
            let ours = match self.index.slot_of(id.as_u128()) {
                Some(s) => Some(self.read_slot(s)?),
                None => batch.get(&id).map(|&n| to_add[n].1.clone()),
            };
            match ours {
                Some(ours) if ours == theirs => report.already_present += 1,
                Some(_) => report.conflicting.push(id),
                None => {
                    if let Err(e) = theirs.validate() {
                        refuse(&mut report, Some(id), format!("not a valid record: {e}"));
                    } else if theirs.at() > latest_allowed {
                        refuse(
                            &mut report,
                            Some(id),
                            format!(
                                "dated {}, more than {} h after this device's clock ({}); import again once that time has passed",
                                theirs.at().to_rfc3339(),
                                CLOCK_TOLERANCE.num_hours(),
                                now.to_rfc3339_opts(chrono::SecondsFormat::Secs, true)
                            ),
                        );
                    } else {
                        batch.insert(id, to_add.len());
                        to_add.push((offset, theirs, payload));
                    }
                }
            }
        }
        drop(source);
        // Revisions last: their entry may come later in the same file.
        let mut accepted: Vec<Vec<u8>> = Vec::with_capacity(to_add.len());
        for (offset, theirs, _) in &to_add {
            if let Some(reason) = self.reference_problem(theirs, &to_add, &batch)? {
                report.refused.push(Refused {
                    offset: *offset,
                    id: Some(theirs.id()),
                    reason,
                });
            }
        }
        let refused: std::collections::HashSet<Uuid> =
            report.refused.iter().filter_map(|r| r.id).collect();
        for (_, theirs, payload) in to_add {
            if !refused.contains(&theirs.id()) {
                accepted.push(payload);
            }
        }
        if !accepted.is_empty() {
            self.write_payloads(&accepted)?;
        }
        report.added = accepted.len();
        report.unreadable = report.source_recovery.unreadable.len() + report.refused.len();
        Ok(report)
    }

    /// Why an imported correction or void may not enter this log, if it may not: it must
    /// revise an entry that is here or in the same import, of the same site.
    fn reference_problem(
        &self,
        revision: &record::Record,
        batch: &[(u64, record::Record, Vec<u8>)],
        by_id: &HashMap<Uuid, usize>,
    ) -> Result<Option<String>> {
        let Some(target) = revision.refers_to() else {
            return Ok(None);
        };
        // Only an original (dose entry or reading) may be revised; a reading's correction
        // must revise a reading and a dose's correction a dose entry.
        let wanted = match revision {
            record::Record::Correction(_) => Some(record::Kind::Entry),
            record::Record::ReadingCorrection(_) => Some(record::Kind::Reading),
            _ => None,
        };
        let site = |r: &record::Record| {
            (r.kind().is_original() && wanted.is_none_or(|k| k == r.kind()))
                .then(|| r.site().to_string())
        };
        let target_site = match self.index.slot_of(target.as_u128()) {
            Some(slot) => site(&self.read_slot(slot)?),
            None => match by_id.get(&target) {
                Some(&n) => site(&batch[n].1),
                None => {
                    return Ok(Some(format!(
                        "refers to entry {target}, which is neither in this log nor in the imported file"
                    )));
                }
            },
        };
        if revision.kind().is_original() {
            return Ok(None);
        }
        let own_site = revision.site();
        Ok(match target_site {
            None => Some(format!(
                "refers to {target}, which is a correction or void, or an original of the other kind (dose or reading)"
            )),
            Some(s) if s != *own_site => Some(format!(
                "is for site '{own_site}' but refers to an entry of site '{s}'"
            )),
            Some(_) => None,
        })
    }
}
