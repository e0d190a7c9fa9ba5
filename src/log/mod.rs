//! The offline dose log: the only place in the app that writes user data.
//!
//! One append-only file per site. An entry is acknowledged (its id returned) only after its
//! frame was written with one write at the known end of the file and `sync_data` returned;
//! until then it stays in [`Log::pending`] so the UI can say "not saved" and retry. Nothing
//! is ever rewritten: corrections and voids are new records that reference the original.
//!
//! Design choices:
//! - Writes go to an explicit offset (the end of the last intact frame) rather than in append
//!   mode, so a failed or short write is simply overwritten by the retry and never leaves
//!   garbage between two acknowledged records.
//! - A writer opens under an exclusive lock (so it can repair an interrupted write while no
//!   one reads), then keeps a shared lock for the life of the [`Log`]: readers
//!   ([`Log::open_read_only`], shared lock, read-only file) work beside it, while a second
//!   writer, which needs the exclusive lock, gets [`ErrorKind::Locked`] instead of
//!   interleaving its writes.
//! - Before acknowledging, a writer checks that its path still names the file it has open;
//!   a log deleted or replaced under it gets [`ErrorKind::FileReplaced`], never an id.
//! - The log creates the file it is asked for, never a directory.
//! - Storage is a trait ([`Storage`]), so tests inject disks that fail or write short.
//! - Paths are always passed in: [`default_dir`] serves desktops, Android passes the app's
//!   internal data path.

mod error;
pub mod export;
pub mod frame;
mod index;
pub mod merge;
#[doc(hidden)]
pub mod november;
pub mod record;
pub mod report;
mod report_pdf;
mod salvage;
#[doc(hidden)]
pub mod sample;
pub mod shown;

pub use error::{Error, ErrorKind, Result};
pub use frame::Span;
pub use record::{
    Correction, CrossCheck, Dose, Draft, Entry, Kind, LoggedCaution, LoggedInput, LoggedResult,
    ProductRef, Reading, ReadingCorrection, ReadingEntry, Record, Setting, Void,
};
pub use salvage::{SalvageReport, salvage};

use chrono::{DateTime, FixedOffset, NaiveDate, SubsecRound};
use index::{Index, Inserted};
use serde::Serialize;
use std::fs::{File, OpenOptions};
use std::io::{self, Read, Seek, SeekFrom, Write};
use std::path::{Path, PathBuf};
use uuid::Uuid;

/// Byte storage under a log: a file in the app, a failing fake in tests.
/// `Send` so the app can keep the log on a worker thread, away from the UI thread.
pub trait Storage: frame::ReadAt + Send {
    /// Writes all of `bytes` at `offset`, or fails (possibly after writing part of them).
    fn write_all_at(&mut self, offset: u64, bytes: &[u8]) -> io::Result<()>;
    /// Makes everything written so far durable.
    fn sync(&mut self) -> io::Result<()>;
    fn set_len(&mut self, len: u64) -> io::Result<()>;
    /// Whether the storage is still what its name refers to: `false` once the file was
    /// deleted or another file put in its place, where new entries would be lost.
    fn still_named(&self) -> io::Result<bool> {
        Ok(true)
    }
}

/// A locked log file. Uses seek + read/write on `&File`, which works on every platform.
pub struct FileStorage {
    file: File,
    path: PathBuf,
    /// Device and inode of the open file, to notice when its path names another file.
    identity: Option<(u64, u64)>,
}

impl FileStorage {
    fn new(file: File, path: &Path) -> FileStorage {
        let identity = file.metadata().ok().as_ref().and_then(file_identity);
        FileStorage {
            file,
            path: path.to_path_buf(),
            identity,
        }
    }
}

#[cfg(unix)]
fn file_identity(meta: &std::fs::Metadata) -> Option<(u64, u64)> {
    use std::os::unix::fs::MetadataExt;
    Some((meta.dev(), meta.ino()))
}

#[cfg(not(unix))]
fn file_identity(_meta: &std::fs::Metadata) -> Option<(u64, u64)> {
    // No portable identity in std elsewhere; such platforms skip the check.
    None
}

impl frame::ReadAt for FileStorage {
    fn byte_len(&self) -> io::Result<u64> {
        Ok(self.file.metadata()?.len())
    }

    fn read_exact_at(&self, offset: u64, buf: &mut [u8]) -> io::Result<()> {
        let mut file = &self.file;
        file.seek(SeekFrom::Start(offset))?;
        file.read_exact(buf)
    }
}

impl Storage for FileStorage {
    fn write_all_at(&mut self, offset: u64, bytes: &[u8]) -> io::Result<()> {
        self.file.seek(SeekFrom::Start(offset))?;
        self.file.write_all(bytes)
    }

    fn sync(&mut self) -> io::Result<()> {
        self.file.sync_data()
    }

    fn set_len(&mut self, len: u64) -> io::Result<()> {
        self.file.set_len(len)
    }

    fn still_named(&self) -> io::Result<bool> {
        let Some(identity) = self.identity else {
            return Ok(true);
        };
        match std::fs::metadata(&self.path) {
            Ok(meta) => Ok(file_identity(&meta) == Some(identity)),
            Err(e) if e.kind() == io::ErrorKind::NotFound => Ok(false),
            Err(e) => Err(e),
        }
    }
}

/// The desktop data directory for logs; Android passes its own path instead.
pub fn default_dir() -> Option<PathBuf> {
    directories::ProjectDirs::from("", "", "Molefeed").map(|d| d.data_dir().join("logs"))
}

/// The log file for a site inside `dir`, with a file name safe on every platform.
pub fn site_file(dir: &Path, site: &str) -> PathBuf {
    let safe: String = site
        .chars()
        .map(|c| {
            if c.is_alphanumeric() || c == '-' {
                c
            } else {
                '_'
            }
        })
        .collect();
    dir.join(format!("{safe}.doselog"))
}

/// What opening found and did; empty when the file was clean.
#[derive(Clone, Debug, Default, PartialEq, Serialize)]
pub struct Recovery {
    /// The file was new or empty, or its header write had been interrupted: a header was written.
    pub header_written: bool,
    /// Bytes of an incomplete header (an interrupted creation) that were replaced.
    pub header_repaired: Option<u64>,
    /// An interrupted last write that was cut off (or, read-only, would be).
    pub torn_tail: Option<Span>,
    /// Whether the torn tail is actually cut from the file.
    pub tail_cut: bool,
    /// Damaged regions in the middle: kept on disk; every intact record around them loaded.
    pub damaged: Vec<Span>,
    /// Checksum-valid records this build cannot read (for example from a newer app).
    pub unreadable: Vec<Unreadable>,
    /// Records whose id was already loaded earlier in the file; the first one counts.
    pub duplicates: Vec<Uuid>,
}

#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Unreadable {
    pub offset: u64,
    pub reason: String,
}

impl Recovery {
    pub fn is_clean(&self) -> bool {
        self.header_repaired.is_none()
            && self.torn_tail.is_none()
            && self.damaged.is_empty()
            && self.unreadable.is_empty()
            && self.duplicates.is_empty()
    }

    /// One line per finding, in words support staff can act on.
    pub fn messages(&self) -> Vec<String> {
        let mut out = Vec::new();
        if let Some(len) = self.header_repaired {
            out.push(format!(
                "incomplete log header ({len} bytes, from an interrupted creation): a new header was written; no entry could have been saved before it"
            ));
        }
        if let Some(tail) = self.torn_tail {
            let action = if self.tail_cut {
                "cut off"
            } else {
                "left in place (only a writer cuts it)"
            };
            out.push(format!(
                "incomplete last record at byte {} ({} bytes, from an interrupted write): {action}",
                tail.offset, tail.len
            ));
        }
        for d in &self.damaged {
            out.push(format!(
                "damaged data at byte {} ({} bytes): kept in the file, every intact record around it loaded",
                d.offset, d.len
            ));
        }
        for u in &self.unreadable {
            out.push(format!(
                "record at byte {} not readable: {}",
                u.offset, u.reason
            ));
        }
        for id in &self.duplicates {
            out.push(format!(
                "record {id} appears more than once; the first copy is used"
            ));
        }
        out
    }
}

/// How an entry stands now.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Status {
    Original,
    Corrected,
    Voided,
}

impl Status {
    /// The lowercase word used in exports and JSON.
    pub fn word(self) -> &'static str {
        match self {
            Status::Original => "original",
            Status::Corrected => "corrected",
            Status::Voided => "voided",
        }
    }
}

/// The latest correction or void of an entry.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Change {
    pub id: Uuid,
    pub kind: Kind,
    pub at: DateTime<FixedOffset>,
    pub reason: String,
}

/// An entry as it stands now: the original's identity with the current content.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct View {
    pub id: Uuid,
    /// When the dose change was logged (corrections do not move it).
    pub at: DateTime<FixedOffset>,
    pub device: String,
    pub site: String,
    pub status: Status,
    pub dose: Dose,
    /// How many corrections and voids reference this entry.
    pub revisions: u32,
    pub last_change: Option<Change>,
}

/// A filter over current entries; dates are the device's local calendar days, inclusive.
#[derive(Clone, Debug, Default)]
pub struct Query {
    pub from: Option<NaiveDate>,
    pub to: Option<NaiveDate>,
    pub tap: Option<String>,
    pub chemical: Option<String>,
    pub include_voided: bool,
    /// Only these entries (ids of originals); `None` is every entry. The app passes the
    /// entries its list shows, so an export holds exactly what the operator saw filtered —
    /// the list counts UTC days and searches free text, which the fields above cannot say.
    pub only: Option<std::collections::HashSet<Uuid>>,
    /// Readings (tank levels, deliveries, totalisers, tap readings) instead of dose entries;
    /// `tap` then filters on the thing read and `chemical` on what was read.
    pub readings: bool,
}

impl Query {
    fn kind(&self) -> Kind {
        if self.readings {
            Kind::Reading
        } else {
            Kind::Entry
        }
    }
}

/// A reading as it stands now: its latest correction applied.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ReadingView {
    pub id: Uuid,
    /// When it was taken.
    pub at: DateTime<FixedOffset>,
    /// When it was entered, if later than taken.
    pub entered_at: Option<DateTime<FixedOffset>>,
    pub site: String,
    pub status: Status,
    pub reading: Reading,
    pub revisions: u32,
}

fn days_since_epoch(date: NaiveDate) -> i64 {
    (date - NaiveDate::from_ymd_opt(1970, 1, 1).unwrap_or_default()).num_days()
}

/// The JSON bodies behind one current entry (see [`Log::for_each_raw`]).
pub(crate) struct RawRow<'a> {
    /// The original entry.
    pub root: &'a [u8],
    /// The latest correction, whose dose is the current one.
    pub content: Option<&'a [u8]>,
    /// The latest correction or void.
    pub last_change: Option<&'a [u8]>,
    pub status: Status,
    pub revisions: u32,
}

/// An open, locked dose log.
pub struct Log {
    name: PathBuf,
    device: String,
    storage: Box<dyn Storage>,
    writable: bool,
    /// Where the next frame goes: the end of the last intact frame.
    end: u64,
    /// Bytes may exist after `end` (a cut that failed, a failed write): cut before writing.
    dirty_tail: bool,
    /// The file was deleted or replaced under this writer: nothing more is acknowledged.
    replaced: bool,
    index: Index,
    pending: Vec<Record>,
    recovery: Recovery,
}

impl Log {
    /// Opens (creating the file if needed, never its directory) the log at `path` for
    /// writing: the only kind of open that writes a header or cuts an interrupted write.
    /// Records written by this log carry `device_id`.
    pub fn open(path: &Path, device_id: &str) -> Result<Log> {
        if device_id.trim().is_empty() {
            return Err(
                Error::new(ErrorKind::InvalidEntry, "device id must not be empty")
                    .with("field", "device"),
            );
        }
        let file = OpenOptions::new()
            .read(true)
            .write(true)
            .create(true)
            .truncate(false)
            .open(path)
            .map_err(|e| Error::io("opening", path, &e))?;
        // The same open file description, so changing its lock later changes this one.
        let lock_handle = file
            .try_clone()
            .map_err(|e| Error::io("opening", path, &e))?;
        lock(&file, path, true)?;
        let log = Log::from_storage(
            Box::new(FileStorage::new(file, path)),
            path,
            device_id,
            true,
        )?;
        if log.recovery.header_written {
            // A new file's name is durable only once its directory is synced.
            let parent = path.parent().filter(|p| !p.as_os_str().is_empty());
            if let Some(dir) = parent {
                sync_dir(dir).map_err(|e| Error::io("syncing", dir, &e))?;
            }
        }
        share_lock(&lock_handle, path)?;
        Ok(log)
    }

    /// Opens a log only to read it (listing, exports, merging): the file is opened read-only
    /// under a shared lock, so this works on read-only media and beside a writer, and nothing
    /// is ever written — no header into an empty file, no cut of a torn tail.
    pub fn open_read_only(path: &Path) -> Result<Log> {
        let file = File::open(path).map_err(|e| Error::io("opening", path, &e))?;
        lock(&file, path, false)?;
        Log::from_storage(
            Box::new(FileStorage::new(file, path)),
            path,
            "read-only",
            false,
        )
    }

    /// Opens a log on any storage; `name` appears in messages. Public so tests and other
    /// platforms can supply their own storage.
    pub fn from_storage(
        mut storage: Box<dyn Storage>,
        name: &Path,
        device_id: &str,
        writable: bool,
    ) -> Result<Log> {
        let io_err = |doing: &str, e: io::Error| Error::io(doing, name, &e);
        let file_len = storage.byte_len().map_err(|e| io_err("reading", e))?;
        let mut head = vec![0u8; file_len.min(frame::HEADER_LEN) as usize];
        storage
            .read_exact_at(0, &mut head)
            .map_err(|e| io_err("reading", e))?;
        let mut recovery = Recovery::default();
        match frame::check_header(&head) {
            frame::HeaderCheck::Valid => {}
            frame::HeaderCheck::Empty | frame::HeaderCheck::Truncated if writable => {
                // No record can exist before a complete, synced header.
                storage.set_len(0).map_err(|e| io_err("preparing", e))?;
                storage
                    .write_all_at(0, &frame::header())
                    .map_err(|e| io_err("writing the header of", e))?;
                storage.sync().map_err(|e| io_err("syncing", e))?;
                recovery.header_written = true;
                recovery.header_repaired = (file_len > 0).then_some(file_len);
            }
            frame::HeaderCheck::Empty | frame::HeaderCheck::Truncated => {
                return Err(Error::new(
                    ErrorKind::NotALog,
                    format!("{} has no complete log header", name.display()),
                )
                .with("path", name.display()));
            }
            frame::HeaderCheck::Damaged => {
                return Err(Error::new(
                    ErrorKind::NotALog,
                    format!(
                        "the log header of {} is damaged (its checksum does not match); the file was left untouched — salvage copies its intact records into a new log",
                        name.display()
                    ),
                )
                .with("path", name.display())
                .with("reason", "damaged-header"));
            }
            frame::HeaderCheck::NotALog(why) => {
                return Err(Error::new(
                    ErrorKind::NotALog,
                    format!(
                        "{} is not a dose log: {why}; it was left untouched",
                        name.display()
                    ),
                )
                .with("path", name.display()));
            }
            frame::HeaderCheck::Future(version) => {
                return Err(Error::new(
                    ErrorKind::FutureVersion,
                    format!(
                        "{} was written by a newer app (log format {version}, this app reads up to {}); update the app — the file was left untouched",
                        name.display(),
                        frame::FORMAT_VERSION
                    ),
                )
                .with("path", name.display())
                .with("version", version)
                .with("supported", frame::FORMAT_VERSION));
            }
        }
        let mut index = Index::default();
        let outcome = frame::scan(storage.as_ref(), |offset, payload| {
            index_payload(&mut index, &mut recovery, offset, payload)
        })
        .map_err(|e| io_err("reading", e))?;
        recovery.damaged = outcome.damaged;
        recovery.torn_tail = outcome.torn_tail;
        let mut dirty_tail = false;
        if outcome.torn_tail.is_some() && writable {
            let cut = storage.set_len(outcome.end).and_then(|()| storage.sync());
            recovery.tail_cut = cut.is_ok();
            dirty_tail = cut.is_err();
        }
        Ok(Log {
            name: name.to_path_buf(),
            device: device_id.to_string(),
            storage,
            writable,
            end: outcome.end,
            dirty_tail,
            replaced: false,
            index,
            pending: Vec::new(),
            recovery,
        })
    }

    pub fn recovery(&self) -> &Recovery {
        &self.recovery
    }

    /// Number of records (entries, corrections, voids) on disk.
    pub fn record_count(&self) -> usize {
        self.index.len()
    }

    pub fn path(&self) -> &Path {
        &self.name
    }

    /// Records not yet on disk, oldest first: the UI shows them as "not saved".
    pub fn pending(&self) -> &[Record] {
        &self.pending
    }

    /// Validates a draft, gives it an id, and makes it durable. Returns the id only once the
    /// record is on disk; on a storage failure the record stays in [`Log::pending`] and the
    /// error (with the `id` parameter) says why.
    pub fn append(&mut self, draft: Draft) -> Result<Uuid> {
        self.append_at(draft, None)
    }

    /// [`Log::append`] with the time that stands for the device's clock: `None` is the clock
    /// itself. A generator or an importer that replays a past day passes that day's time, so a
    /// reading taken then is not "entered later".
    pub fn append_at(&mut self, draft: Draft, now: Option<DateTime<FixedOffset>>) -> Result<Uuid> {
        let record = self.complete(draft, now)?;
        let id = record.id();
        self.pending.push(record);
        self.retry_pending()
            .map(|_| id)
            .map_err(|e| e.with("id", id))
    }

    /// Tries again to write every pending record, in order, with one write and one sync.
    /// Returns how many were written.
    pub fn retry_pending(&mut self) -> Result<usize> {
        if self.pending.is_empty() {
            return Ok(0);
        }
        let payloads: Vec<Vec<u8>> = self.pending.iter().map(record::encode).collect();
        self.write_payloads(&payloads)?;
        Ok(std::mem::take(&mut self.pending).len())
    }

    /// Turns a draft into a record: new id, this device, the time now unless given.
    fn complete(&self, draft: Draft, clock: Option<DateTime<FixedOffset>>) -> Result<Record> {
        let id = Uuid::now_v7();
        let device = self.device.clone();
        // Milliseconds are what the index keeps and more than a dose log needs.
        let now = || clock.unwrap_or_else(|| chrono::Local::now().fixed_offset().trunc_subsecs(3));
        let record = match draft {
            Draft::Reading { at, site, reading } => {
                let entered = now();
                Record::Reading(ReadingEntry {
                    id,
                    device,
                    // A reading taken earlier is recorded at its own time and says when it
                    // was entered.
                    at: at.unwrap_or(entered),
                    entered_at: at.filter(|a| *a != entered).map(|_| entered),
                    site,
                    reading,
                })
            }
            Draft::ReadingCorrection {
                at,
                corrects,
                reason,
                reading,
            } => {
                let original = self.original_record(corrects)?;
                let Record::Reading(original) = original else {
                    return Err(Error::new(
                        ErrorKind::UnknownReference,
                        format!("{corrects} is a dose entry, not a reading: correct it as a dose"),
                    )
                    .with("id", corrects));
                };
                Record::ReadingCorrection(ReadingCorrection {
                    id,
                    device,
                    at: at.unwrap_or_else(now),
                    site: original.site,
                    corrects: original.id,
                    reason,
                    reading,
                })
            }
            Draft::Entry { at, site, dose } => Record::Entry(Entry {
                id,
                device,
                at: at.unwrap_or_else(now),
                site,
                dose,
            }),
            Draft::Correction {
                at,
                corrects,
                reason,
                dose,
            } => {
                let original = self.original(corrects)?;
                Record::Correction(Correction {
                    id,
                    device,
                    at: at.unwrap_or_else(now),
                    site: original.site,
                    corrects: original.id,
                    reason,
                    dose,
                })
            }
            Draft::Void {
                at,
                operator,
                voids,
                reason,
            } => {
                // A dose entry or a reading is voided the same way.
                let original = self.original_record(voids)?;
                Record::Void(Void {
                    id,
                    device,
                    at: at.unwrap_or_else(now),
                    site: original.site().to_string(),
                    operator,
                    voids: original.id(),
                    reason,
                })
            }
        };
        record.validate()?;
        // The latest correction or void wins by time: a record dated ahead of this device's
        // clock would outrank every later correction made here (one dated 9999 forever), so
        // a new one is held to what an import is held to.
        let latest_allowed = now() + merge::CLOCK_TOLERANCE;
        if record.at() > latest_allowed {
            return Err(Error::new(
                ErrorKind::InvalidEntry,
                format!(
                    "the entry is dated {}, after this device's clock (at most {} hour ahead)",
                    record
                        .at()
                        .to_rfc3339_opts(chrono::SecondsFormat::Secs, true),
                    merge::CLOCK_TOLERANCE.num_hours()
                ),
            )
            .with("field", "at"));
        }
        // A tap reading the report could not hold to its limit is refused when recorded, not
        // left out of the month's exceedances later.
        if let Some(Reading::AtTap {
            parameter,
            value,
            unit,
            ..
        }) = record.reading()
            && record::in_parameter_unit(parameter, *value, unit).is_none()
        {
            return Err(Error::new(
                ErrorKind::InvalidEntry,
                format!(
                    "{parameter} in '{unit}' cannot be held to its limit: record it in {}",
                    record::parameter_unit(parameter)
                ),
            )
            .with("field", "unit"));
        }
        if record::encode(&record).len() > frame::MAX_PAYLOAD as usize {
            return Err(Error::new(
                ErrorKind::TooLarge,
                format!("the entry is larger than {} bytes", frame::MAX_PAYLOAD),
            ));
        }
        Ok(record)
    }

    /// The original record (dose entry or reading) behind any id of it.
    fn original_record(&self, id: Uuid) -> Result<Record> {
        let slot = self.index.root_slot(id.as_u128()).ok_or_else(|| {
            Error::new(
                ErrorKind::UnknownReference,
                format!("no entry {id} in this log"),
            )
            .with("id", id)
        })?;
        self.read_slot(slot)
    }

    /// The original entry behind any id of it (entry or revision).
    fn original(&self, id: Uuid) -> Result<Entry> {
        let unknown = || {
            Error::new(
                ErrorKind::UnknownReference,
                format!("no entry {id} in this log"),
            )
            .with("id", id)
        };
        let slot = self.index.root_slot(id.as_u128()).ok_or_else(unknown)?;
        match self.read_slot(slot)? {
            Record::Entry(e) => Ok(e),
            _ => Err(unknown()),
        }
    }

    /// Frames, writes and syncs payloads as one batch, then indexes them.
    fn write_payloads(&mut self, payloads: &[Vec<u8>]) -> Result<()> {
        if !self.writable {
            return Err(Error::new(
                ErrorKind::ReadOnly,
                format!("{} is open read-only", self.name.display()),
            ));
        }
        let replaced = || {
            Error::new(
                ErrorKind::FileReplaced,
                format!(
                    "{} was deleted or replaced while this app had it open; the entry was not saved — open the log again",
                    self.name.display()
                ),
            )
            .with("path", self.name.display())
        };
        if self.replaced {
            return Err(replaced());
        }
        let mut bytes = Vec::new();
        let mut offsets = Vec::with_capacity(payloads.len());
        for payload in payloads {
            offsets.push(self.end + bytes.len() as u64 + frame::FRAME_OVERHEAD);
            frame::encode(payload, &mut bytes).map_err(|len| {
                Error::new(
                    ErrorKind::TooLarge,
                    format!("a record of {len} bytes is too large"),
                )
            })?;
        }
        let name = self.name.clone();
        let fail = |e: io::Error| Error::io("writing to", &name, &e);
        if self.dirty_tail {
            self.storage.set_len(self.end).map_err(fail)?;
            self.dirty_tail = false;
        }
        // Until sync returns, the bytes may or may not be on disk: either way the next write
        // goes to the same offset, and a reopen cuts any remains as a torn tail.
        self.dirty_tail = true;
        self.storage
            .write_all_at(self.end, &bytes)
            .and_then(|()| self.storage.sync())
            .map_err(fail)?;
        // Synced, but into the file the path still names? Otherwise the entries are gone
        // with a deleted file, or hidden from a writer that created a new one.
        if !self.storage.still_named().map_err(fail)? {
            self.replaced = true;
            return Err(replaced());
        }
        self.dirty_tail = false;
        self.end += bytes.len() as u64;
        for (payload, offset) in payloads.iter().zip(offsets) {
            if let Ok((key, _)) = record::decode_key(payload) {
                self.index.insert(&key, offset, payload.len() as u32);
            }
        }
        Ok(())
    }

    fn read_payload(&self, slot: u32) -> Result<Vec<u8>> {
        let s = &self.index.slots[slot as usize];
        let mut buf = vec![0u8; s.len as usize];
        self.storage
            .read_exact_at(s.offset, &mut buf)
            .map_err(|e| Error::io("reading", &self.name, &e))?;
        Ok(buf)
    }

    fn read_slot(&self, slot: u32) -> Result<Record> {
        let payload = self.read_payload(slot)?;
        self.decode_slot(&payload, slot)
    }

    /// Reads through a read-ahead window: for walking many records in file order.
    fn read_slot_in(
        &self,
        window: &mut frame::Window<'_, dyn Storage>,
        slot: u32,
    ) -> Result<Record> {
        let s = &self.index.slots[slot as usize];
        let payload = window
            .get(s.offset, s.len as usize)
            .map_err(|e| Error::io("reading", &self.name, &e))?;
        self.decode_slot(payload, slot)
    }

    fn decode_slot(&self, payload: &[u8], slot: u32) -> Result<Record> {
        record::decode(payload).map_err(|why| {
            Error::new(
                ErrorKind::InvalidEntry,
                format!(
                    "record at byte {} of {} cannot be read: {why}",
                    self.index.slots[slot as usize].offset,
                    self.name.display()
                ),
            )
        })
    }

    /// A stored record by id (entry, correction or void).
    pub fn get(&self, id: Uuid) -> Result<Option<Record>> {
        match self.index.slot_of(id.as_u128()) {
            Some(slot) => self.read_slot(slot).map(Some),
            None => Ok(None),
        }
    }

    /// Entry `id` as it stands now (latest correction applied, its status), as
    /// [`Log::for_each`] gives it; `None` for an id the log does not hold. `id` may be the
    /// original's or a revision's.
    pub fn entry(&self, id: Uuid) -> Result<Option<View>> {
        match self.index.root_slot(id.as_u128()) {
            Some(root) => self.view(root, &mut |slot| self.read_slot(slot)).map(Some),
            None => Ok(None),
        }
    }

    /// The original entry and every correction and void of it, oldest first.
    pub fn history(&self, id: Uuid) -> Result<Vec<Record>> {
        let Some(root) = self.index.root_slot(id.as_u128()) else {
            return Ok(Vec::new());
        };
        self.index
            .history_slots(root)
            .into_iter()
            .map(|s| self.read_slot(s))
            .collect()
    }

    fn matching_roots(&self, query: &Query) -> Vec<u32> {
        let from = query.from.map(days_since_epoch).unwrap_or(i64::MIN);
        let to = query.to.map(days_since_epoch).unwrap_or(i64::MAX);
        // A name the log has never seen matches nothing.
        let wanted = |name: &Option<String>| name.as_deref().map(|n| self.index.name_id(n));
        let (tap, chemical) = (wanted(&query.tap), wanted(&query.chemical));
        let mut roots: Vec<u32> = self
            .index
            .roots
            .iter()
            .copied()
            .filter(|&r| {
                let root = &self.index.slots[r as usize];
                // Dose queries see dose entries; readings have their own (`Log::readings`).
                if root.kind != query.kind() {
                    return false;
                }
                let day = root.local_day();
                if day < from || day > to {
                    return false;
                }
                if let Some(only) = &query.only
                    && !only.contains(&Uuid::from_u128(root.id))
                {
                    return false;
                }
                if !query.include_voided && self.index.is_voided(r) {
                    return false;
                }
                let content = &self.index.slots[self.index.content_slot(r) as usize];
                tap.is_none_or(|t| t == Some(content.tap))
                    && chemical.is_none_or(|c| c == Some(content.chemical))
            })
            .collect();
        self.index.sort_by_time(&mut roots);
        roots
    }

    fn view(&self, root: u32, read: &mut dyn FnMut(u32) -> Result<Record>) -> Result<View> {
        let Record::Entry(entry) = read(root)? else {
            return Err(Error::new(
                ErrorKind::InvalidEntry,
                "index points at a revision",
            ));
        };
        let revisions = self.index.revisions(root);
        let dose = match revisions.latest_correction {
            Some(s) => match read(s)? {
                Record::Correction(c) => c.dose,
                _ => entry.dose,
            },
            None => entry.dose,
        };
        let last_change = match revisions.latest {
            Some(s) => match read(s)? {
                Record::Correction(c) => Some(Change {
                    id: c.id,
                    kind: Kind::Correction,
                    at: c.at,
                    reason: c.reason,
                }),
                Record::Void(v) => Some(Change {
                    id: v.id,
                    kind: Kind::Void,
                    at: v.at,
                    reason: v.reason,
                }),
                _ => None,
            },
            None => None,
        };
        let status = match &last_change {
            None => Status::Original,
            Some(c) if c.kind == Kind::Void => Status::Voided,
            Some(_) => Status::Corrected,
        };
        Ok(View {
            id: entry.id,
            at: entry.at,
            device: entry.device,
            site: entry.site,
            status,
            dose,
            revisions: revisions.count,
            last_change,
        })
    }

    /// Calls `each` with every matching entry as it stands now, oldest first, reading one at a
    /// time so a month's export never holds the whole log in memory.
    pub fn for_each(&self, query: &Query, mut each: impl FnMut(View) -> Result<()>) -> Result<()> {
        let mut window = frame::Window::new(self.storage.as_ref())
            .map_err(|e| Error::io("reading", &self.name, &e))?;
        let mut read = |slot| self.read_slot_in(&mut window, slot);
        for root in self.matching_roots(query) {
            each(self.view(root, &mut read)?)?;
        }
        Ok(())
    }

    /// Like [`Log::for_each`], but hands over the JSON bodies instead of decoded records, for
    /// exports that parse them into borrowed rows without allocating per field.
    pub(crate) fn for_each_raw(
        &self,
        query: &Query,
        mut each: impl FnMut(&RawRow<'_>) -> Result<()>,
    ) -> Result<()> {
        let io_err = |e: io::Error| Error::io("reading", &self.name, &e);
        let mut window = frame::Window::new(self.storage.as_ref()).map_err(io_err)?;
        let (mut root_json, mut content_json, mut change_json) =
            (Vec::new(), Vec::new(), Vec::new());
        let mut copy_json = |slot: u32, into: &mut Vec<u8>| -> Result<()> {
            let s = &self.index.slots[slot as usize];
            let payload = window.get(s.offset, s.len as usize).map_err(io_err)?;
            let (_, json) = record::decode_key(payload).map_err(|why| {
                Error::new(
                    ErrorKind::InvalidEntry,
                    format!("record at byte {} cannot be read: {why}", s.offset),
                )
            })?;
            into.clear();
            into.extend_from_slice(json);
            Ok(())
        };
        for root in self.matching_roots(query) {
            let revisions = self.index.revisions(root);
            copy_json(root, &mut root_json)?;
            if let Some(correction) = revisions.latest_correction {
                copy_json(correction, &mut content_json)?;
            }
            let status = match revisions.latest {
                Some(latest) => {
                    copy_json(latest, &mut change_json)?;
                    match self.index.slots[latest as usize].kind {
                        Kind::Void => Status::Voided,
                        _ => Status::Corrected,
                    }
                }
                None => Status::Original,
            };
            each(&RawRow {
                root: &root_json,
                content: revisions.latest_correction.map(|_| content_json.as_slice()),
                last_change: revisions.latest.map(|_| change_json.as_slice()),
                status,
                revisions: revisions.count,
            })?;
        }
        Ok(())
    }

    /// Matching entries as they stand now, oldest first.
    pub fn query(&self, query: &Query) -> Result<Vec<View>> {
        let mut out = Vec::new();
        self.for_each(query, |v| {
            out.push(v);
            Ok(())
        })?;
        Ok(out)
    }

    /// Matching readings as they stand now (latest correction applied), oldest first; voided
    /// ones only with `include_voided`. The query's `readings` is implied.
    pub fn readings(&self, query: &Query) -> Result<Vec<ReadingView>> {
        let query = Query {
            readings: true,
            ..query.clone()
        };
        let mut window = frame::Window::new(self.storage.as_ref())
            .map_err(|e| Error::io("reading", &self.name, &e))?;
        let mut out = Vec::new();
        for root in self.matching_roots(&query) {
            let Record::Reading(original) = self.read_slot_in(&mut window, root)? else {
                return Err(Error::new(
                    ErrorKind::InvalidEntry,
                    "index points at a revision",
                ));
            };
            let revisions = self.index.revisions(root);
            let reading = match revisions.latest_correction {
                Some(s) => match self.read_slot_in(&mut window, s)? {
                    Record::ReadingCorrection(c) => c.reading,
                    _ => original.reading,
                },
                None => original.reading,
            };
            let status = match revisions.latest {
                None => Status::Original,
                Some(s) if self.index.slots[s as usize].kind == Kind::Void => Status::Voided,
                Some(_) => Status::Corrected,
            };
            out.push(ReadingView {
                id: original.id,
                at: original.at,
                entered_at: original.entered_at,
                site: original.site,
                status,
                reading,
                revisions: revisions.count,
            });
        }
        Ok(out)
    }

    /// Every entry that is not voided, corrections applied, oldest first.
    pub fn current(&self) -> Result<Vec<View>> {
        self.query(&Query::default())
    }

    /// For the home screen: the most recent non-voided entry for each (tap, chemical).
    pub fn latest_per_point(&self) -> Result<Vec<View>> {
        let mut latest: std::collections::HashMap<(u32, u32), u32> = Default::default();
        for root in self.matching_roots(&Query::default()) {
            let content = &self.index.slots[self.index.content_slot(root) as usize];
            // Roots come oldest first, so the last one seen per point is the latest.
            latest.insert((content.tap, content.chemical), root);
        }
        let mut roots: Vec<u32> = latest.into_values().collect();
        self.index.sort_by_time(&mut roots);
        roots
            .into_iter()
            .map(|r| self.view(r, &mut |s| self.read_slot(s)))
            .collect()
    }

    /// Revisions whose original entry is missing from this log (possible after a partial
    /// merge): (revision id, missing original id).
    pub fn orphans(&self) -> Vec<(Uuid, Uuid)> {
        self.index
            .orphans()
            .map(|(slot, root)| {
                (
                    Uuid::from_u128(self.index.slots[slot as usize].id),
                    Uuid::from_u128(root),
                )
            })
            .collect()
    }
}

fn index_payload(index: &mut Index, recovery: &mut Recovery, frame_offset: u64, payload: &[u8]) {
    match record::decode_key(payload) {
        Ok((key, _)) => {
            let offset = frame_offset + frame::FRAME_OVERHEAD;
            if let Inserted::Duplicate(_) = index.insert(&key, offset, payload.len() as u32) {
                recovery.duplicates.push(key.id);
            }
        }
        Err(why) => recovery.unreadable.push(Unreadable {
            offset: frame_offset,
            reason: why.to_string(),
        }),
    }
}

/// How long to keep trying a lock that is held. A lock is also held, for a moment, by a
/// process that another thread of ours is starting (a forked child keeps the parent's open
/// files until it execs), and by a copy of the app that is just closing; waiting briefly
/// tells those apart from a copy that really has the file open.
const LOCK_PATIENCE: std::time::Duration = std::time::Duration::from_millis(750);

/// Turns a writer's exclusive lock into a shared one once its repairs are done: readers may
/// then share the file, and a second writer still cannot take the exclusive lock it needs.
#[cfg(unix)]
fn share_lock(file: &File, path: &Path) -> Result<()> {
    // flock converts in place; should another process take the file in the instant the
    // conversion leaves it unlocked, this writer steps back with `Locked`.
    match file.try_lock_shared() {
        Ok(()) => Ok(()),
        Err(std::fs::TryLockError::WouldBlock) => Err(locked(path)),
        Err(std::fs::TryLockError::Error(e)) => Err(Error::io("locking", path, &e)),
    }
}

#[cfg(not(unix))]
fn share_lock(_file: &File, _path: &Path) -> Result<()> {
    // Elsewhere a second lock on the same handle would stack, not convert: keep the exclusive
    // lock, and readers get `Locked` while a writer is open.
    Ok(())
}

fn locked(path: &Path) -> Error {
    Error::new(
        ErrorKind::Locked,
        format!(
            "{} is open in another copy of the app; close it there first",
            path.display()
        ),
    )
    .with("path", path.display())
}

fn lock(file: &File, path: &Path, exclusive: bool) -> Result<()> {
    let try_once = || {
        if exclusive {
            file.try_lock()
        } else {
            file.try_lock_shared()
        }
    };
    let started = std::time::Instant::now();
    let mut result = try_once();
    while matches!(result, Err(std::fs::TryLockError::WouldBlock))
        && started.elapsed() < LOCK_PATIENCE
    {
        std::thread::sleep(std::time::Duration::from_millis(10));
        result = try_once();
    }
    match result {
        Ok(()) => Ok(()),
        Err(std::fs::TryLockError::WouldBlock) => Err(locked(path)),
        Err(std::fs::TryLockError::Error(e)) => Err(Error::io("locking", path, &e)),
    }
}

#[cfg(unix)]
fn sync_dir(dir: &Path) -> io::Result<()> {
    File::open(dir)?.sync_all()
}

#[cfg(not(unix))]
fn sync_dir(_dir: &Path) -> io::Result<()> {
    // Other platforms cannot open a directory as a file; their file creation is journaled.
    Ok(())
}

#[cfg(test)]
mod stock_tests;
#[cfg(test)]
mod tests;
