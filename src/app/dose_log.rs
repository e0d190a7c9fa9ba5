//! The seam between the UI and the dose log: a trait the screens use, the crash-safe
//! [`PersistentLog`] behind it, and [`dose_of`], the one place a calculator result becomes the
//! log's own record.
//!
//! Design choice: the UI only ever talks to [`DoseLog`], and what it stores is the log's own
//! [`Dose`] — there is no second entry type to drift from it. An [`Entry`] is what the list
//! shows: the entry as it stands now (the latest correction applied) with its status; the full
//! history (original, corrections, voids with time, initials and reason) is read only for the
//! one entry the operator opens, so a 10 000-entry log still opens fast. Corrections and voids
//! are new records that reference the original — nothing is edited or dropped. Without a data
//! directory (tests, previews) the same log writes to a scratch directory removed on drop
//! ([`PersistentLog::scratch`]), so every test goes through the real encoding; it reports
//! `persistent() == false`, which is what makes the Start screen show its "not saved" banner.

use super::calc::{CalcView, Status};
use super::numbers::{self, Lang};
use crate::engine::calculators::{InputUsed, ResultValue};
use crate::engine::dosing::units::UnitSystem;
use crate::engine::quantity::Unit;
use crate::log::record::Dose;
use chrono::{DateTime, FixedOffset};
use serde::{Deserialize, Serialize};
use std::path::Path;
use std::rc::Rc;

/// How an entry stands now.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum EntryStatus {
    #[default]
    Original,
    Corrected,
    Voided,
}

impl EntryStatus {
    pub fn code(self) -> &'static str {
        match self {
            EntryStatus::Original => "original",
            EntryStatus::Corrected => "corrected",
            EntryStatus::Voided => "voided",
        }
    }
}

/// A stored entry as it stands now, as the screens list it: its screen number, when and
/// where it was logged, what the list, the filters and the trends read of its dose (latest
/// correction applied) and its status. The whole record — every reading, result, the trace
/// and the cautions the operator was shown — is read from the log for the one entry opened
/// ([`DoseLog::dose`]).
#[derive(Clone, Debug, PartialEq)]
pub struct Entry {
    pub id: u64,
    /// UTC time, ISO 8601 (`2026-12-02T01:15:00Z`).
    pub when: String,
    pub site: String,
    pub dose: ListedDose,
    pub status: EntryStatus,
    /// How many corrections and voids reference this entry.
    pub revisions: u32,
}

/// What the screens list of a logged [`Dose`]: who logged it, the tap, the calculator, the
/// chemical and product, the dose in mg/L and the note. A separate type, not a [`Dose`] with
/// parts left empty, so that no screen can read a trace or a caution list that was never
/// loaded: those are read whole from the log ([`DoseLog::dose`]). Held for every entry, a
/// whole [`Dose`] took about 4.6 kB of memory (some fifty strings); a 10 000-entry log
/// then took 46 MB of the app's memory for a list that shows a few fields.
#[derive(Clone, Debug, PartialEq)]
pub struct ListedDose {
    pub operator: String,
    pub tap: String,
    pub calculator: String,
    pub chemical: String,
    pub product: Option<crate::log::ProductRef>,
    /// The dose result's value in mg/L, if the calculator computed one.
    pub dose_mg_l: Option<f64>,
    pub note: String,
}

impl ListedDose {
    pub fn of(dose: Dose) -> ListedDose {
        let dose_mg_l = dose.dose_mg_per_l();
        ListedDose {
            operator: dose.operator,
            tap: dose.tap,
            calculator: dose.calculator,
            chemical: dose.chemical,
            product: dose.product,
            dose_mg_l,
            note: dose.note,
        }
    }

    /// The dose in mg/L, if one was computed (as [`Dose::dose_mg_per_l`]).
    pub fn dose_mg_per_l(&self) -> Option<f64> {
        self.dose_mg_l
    }
}

impl Entry {
    pub fn voided(&self) -> bool {
        self.status == EntryStatus::Voided
    }
}

/// What one record in an entry's history did.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum RevisionKind {
    Logged,
    Corrected,
    Voided,
}

impl RevisionKind {
    pub fn code(self) -> &'static str {
        match self {
            RevisionKind::Logged => "logged",
            RevisionKind::Corrected => "corrected",
            RevisionKind::Voided => "voided",
        }
    }
}

/// One record of an entry's history, oldest first: the original, then each correction/void.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Revision {
    pub kind: RevisionKind,
    /// UTC time, ISO 8601.
    pub when: String,
    pub operator: String,
    /// Empty for the original entry; required for corrections and voids.
    pub reason: String,
    /// The dose and note this record states (none for a void).
    pub dose_mg_per_l: Option<f64>,
    pub note: Option<String>,
}

/// A correction: the whole recomputed result (its `operator` is who corrected it) and why.
#[derive(Clone, Debug, PartialEq)]
pub struct Amendment {
    pub reason: String,
    pub dose: Dose,
}

/// The two export formats the operator can choose.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum ExportFormat {
    #[default]
    Csv,
    JsonLines,
}

impl ExportFormat {
    pub const ALL: [ExportFormat; 2] = [ExportFormat::Csv, ExportFormat::JsonLines];

    pub fn extension(self) -> &'static str {
        match self {
            ExportFormat::Csv => "csv",
            ExportFormat::JsonLines => "jsonl",
        }
    }
}

/// What an import did, counted in records (entries, corrections, voids).
#[derive(Clone, Debug, Default, PartialEq)]
pub struct ImportReport {
    pub added: usize,
    /// Records this log already had, identical: skipped.
    pub already_present: usize,
    /// Same id with different content: this log's copy was kept, theirs not imported.
    pub conflicting: usize,
    /// Records of the other file that could not be read (damage, newer format).
    pub unreadable: usize,
}

#[derive(Clone, Debug, PartialEq)]
pub enum LogError {
    /// The store refused the entry or the file (full disk, read-only, not a log, ...);
    /// `code` keys a translation (`log-error-<code>`).
    Rejected {
        code: String,
        message: String,
    },
    Io(String),
}

impl LogError {
    fn rejected(code: &str, message: impl Into<String>) -> LogError {
        LogError::Rejected {
            code: code.into(),
            message: message.into(),
        }
    }
}

impl std::fmt::Display for LogError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            LogError::Rejected { message, .. } => f.write_str(message),
            LogError::Io(m) => f.write_str(m),
        }
    }
}

/// The codes [`LogError::Rejected`] can carry (each has a `log-error-<code>` message).
pub const ERROR_CODES: [&str; 14] = [
    "bad-dose",
    "not-saved",
    "storage-full",
    "read-only",
    "locked",
    "invalid-entry",
    "not-a-log",
    "future-version",
    "same-log",
    "unknown-entry",
    "too-large",
    "not-found",
    "exists",
    "io",
];

/// SEAM FOR THE LOG: what the screens need from the dose log.
pub trait DoseLog {
    /// Whether entries survive a restart. `false` shows the "not saved" banner.
    fn persistent(&self) -> bool;
    /// Logs `dose` for `site`, at `at` (the log's clock when `None`).
    fn append(
        &mut self,
        site: &str,
        at: Option<DateTime<FixedOffset>>,
        dose: Dose,
    ) -> Result<u64, LogError>;
    /// All entries as they stand now (voided ones included, marked), oldest first.
    /// Shared rather than copied: the screens read the list several times a refresh, and a
    /// copy of a 10 000-entry log each time was most of the start-up.
    fn entries(&self) -> Rc<Vec<Entry>>;
    /// Entry `id`'s whole record as it stands now (latest correction applied): every reading,
    /// result, the trace and the cautions the operator was shown.
    fn dose(&self, id: u64) -> Result<Dose, LogError>;
    /// The original entry and every correction and void of it, oldest first.
    fn history(&self, id: u64) -> Result<Vec<Revision>, LogError>;
    /// Records a correction of entry `id` (a new record; the original stays).
    fn correct(&mut self, id: u64, fix: Amendment) -> Result<(), LogError>;
    /// Records that entry `id` should not count (a new record; the original stays).
    fn void(&mut self, id: u64, operator: &str, reason: &str) -> Result<(), LogError>;
    /// Writes the entries numbered in `only` — the ones the operator's filtered list shows,
    /// voided ones with their status — to a new file at `path`, each site's entries together
    /// and oldest first; returns the count. A file already at `path` is never replaced (`exists`).
    /// CSV numbers are written in `units` (the site's), each header naming its unit.
    fn export(
        &self,
        path: &Path,
        format: ExportFormat,
        only: &[u64],
        units: UnitSystem,
    ) -> Result<usize, LogError>;
    /// Merges another device's file: new records added, known ones skipped, conflicts kept out.
    fn import(&mut self, path: &Path) -> Result<ImportReport, LogError>;
    /// Records a stock reading (tank level, delivery, totaliser, tap) for `site`, taken at
    /// `at` (the log's clock when `None`; an earlier time is recorded as such by the log).
    fn record_reading(
        &mut self,
        site: &str,
        at: Option<DateTime<FixedOffset>>,
        reading: crate::log::record::Reading,
    ) -> Result<uuid::Uuid, LogError>;
    /// The readings of `site` as they stand now (latest correction applied), voided ones
    /// included and marked, oldest first.
    fn readings(&self, site: &str) -> Result<Vec<crate::log::ReadingView>, LogError>;
    /// Records a correction of reading `id`: the whole corrected reading and a reason.
    fn correct_reading(
        &mut self,
        id: uuid::Uuid,
        reason: &str,
        reading: crate::log::record::Reading,
    ) -> Result<(), LogError>;
    /// Records that reading `id` should not count (the log's void record, as for a dose).
    fn void_reading(
        &mut self,
        id: uuid::Uuid,
        operator: &str,
        reason: &str,
    ) -> Result<(), LogError>;
    /// The operating report of `site` for the days `from..=to`, from this log (the same
    /// function the CLI's `log report` calls: [`crate::log::report::report_from_log`]).
    fn operating_report(
        &self,
        site: &crate::engine::dosing::site::SiteProfile,
        catalog: &crate::engine::dosing::catalog::Catalog,
        from: chrono::NaiveDate,
        to: chrono::NaiveDate,
    ) -> Result<crate::log::report::Report, LogError>;
}

/// Writes `text` to a new file at `path`; a partly written file is removed again.
fn write_new_file(
    path: &Path,
    write: impl FnOnce(&mut std::fs::File) -> Result<usize, LogError>,
) -> Result<usize, LogError> {
    // `create_new`: an earlier report at the same path is never truncated, and the clean-up
    // below can only ever remove the file this call made.
    let mut file = std::fs::File::create_new(path).map_err(|e| io_error("creating", path, &e))?;
    let result = write(&mut file).and_then(|n| {
        file.sync_all()
            .map(|()| n)
            .map_err(|e| io_error("writing", path, &e))
    });
    if result.is_err() {
        drop(file);
        let _ = std::fs::remove_file(path);
    }
    result
}

/// An I/O failure in words: full, read-only, missing folder, or the OS message.
fn io_error(doing: &str, path: &Path, e: &std::io::Error) -> LogError {
    if e.kind() == std::io::ErrorKind::NotFound {
        return LogError::rejected(
            "not-found",
            format!("{doing} {}: no such file or folder", path.display()),
        );
    }
    if e.kind() == std::io::ErrorKind::AlreadyExists {
        return LogError::rejected("exists", path.display().to_string());
    }
    from_log_error(crate::log::Error::io(doing, path, e))
}

/// The crash-safe dose log ([`crate::log`]) behind the screens' [`DoseLog`] seam.
///
/// One log file per site, opened when the site is first used and kept open (and locked) for
/// the life of the app. The screens number entries 1, 2, 3 … in the order the log keeps
/// them; those numbers map to the log's own ids here, so the UI never sees a UUID.
pub struct PersistentLog {
    dir: std::path::PathBuf,
    device: String,
    /// One open log per site file, keyed by the file's path.
    logs: Vec<(std::path::PathBuf, crate::log::Log)>,
    /// Log ids in the order the screens number them (index + 1).
    ids: std::cell::RefCell<Vec<uuid::Uuid>>,
    /// The screens ask for the entries several times per refresh; reading 10 000 records
    /// each time would stall the UI, so they are read once and again only after a change.
    cache: std::cell::RefCell<Option<Rc<Vec<Entry>>>>,
    /// A scratch log ([`PersistentLog::scratch`]): its directory goes when it is dropped.
    scratch: bool,
}

impl Drop for PersistentLog {
    fn drop(&mut self) {
        if self.scratch {
            // Close (and unlock) the files first, then remove what only this log wrote.
            self.logs.clear();
            let _ = std::fs::remove_dir_all(&self.dir);
        }
    }
}

impl PersistentLog {
    /// Opens every site log already in `dir`, so earlier entries show from the first screen.
    /// A file that cannot be opened (another copy of the app has it) is skipped here and
    /// reported when the operator tries to log to that site.
    pub fn new(dir: &Path, device: &str) -> PersistentLog {
        let mut paths: Vec<std::path::PathBuf> = std::fs::read_dir(dir)
            .into_iter()
            .flatten()
            .flatten()
            .map(|e| e.path())
            .filter(|p| p.extension().is_some_and(|x| x == "doselog"))
            .collect();
        paths.sort();
        let logs = paths
            .into_iter()
            .filter_map(|path| {
                crate::log::Log::open(&path, device)
                    .ok()
                    .map(|log| (path, log))
            })
            .collect();
        PersistentLog {
            dir: dir.to_path_buf(),
            device: device.to_string(),
            logs,
            ids: Default::default(),
            cache: Default::default(),
            scratch: false,
        }
    }

    /// The same log in a fresh directory under the system's temporary folder, removed when the
    /// log is dropped: for tests and previews, and for an app started without a data directory.
    /// Entries go through the real encoding and files, yet do not survive the app, so
    /// [`DoseLog::persistent`] says `false` and the screens say "not saved".
    pub fn scratch() -> PersistentLog {
        use std::sync::atomic::{AtomicU32, Ordering};
        static COUNTER: AtomicU32 = AtomicU32::new(0);
        let nanos = std::time::SystemTime::now()
            .duration_since(std::time::UNIX_EPOCH)
            .map_or(0, |d| d.subsec_nanos());
        let dir = std::env::temp_dir().join(format!(
            "molefeed-scratch-log-{}-{}-{nanos}",
            std::process::id(),
            COUNTER.fetch_add(1, Ordering::Relaxed)
        ));
        let _ = std::fs::remove_dir_all(&dir);
        let mut log = PersistentLog::new(&dir, "scratch");
        log.scratch = true;
        log
    }

    fn log_for(&mut self, site: &str) -> Result<&mut crate::log::Log, LogError> {
        let path = crate::log::site_file(&self.dir, site);
        if let Some(i) = self.logs.iter().position(|(p, _)| *p == path) {
            return Ok(&mut self.logs[i].1);
        }
        std::fs::create_dir_all(&self.dir).map_err(|e| io_error("creating", &self.dir, &e))?;
        let log = crate::log::Log::open(&path, &self.device).map_err(from_log_error)?;
        self.logs.push((path, log));
        Ok(&mut self.logs.last_mut().expect("just pushed").1)
    }

    /// The screen number of a log id (ids are unique across sites and devices).
    fn number(&self, id: uuid::Uuid) -> u64 {
        let mut ids = self.ids.borrow_mut();
        if let Some(i) = ids.iter().position(|x| *x == id) {
            return i as u64 + 1;
        }
        ids.push(id);
        ids.len() as u64
    }

    /// The open log of `site`, if any (reading never creates a file).
    fn open_log(&self, site: &str) -> Option<&crate::log::Log> {
        let path = crate::log::site_file(&self.dir, site);
        self.logs.iter().find(|(p, _)| *p == path).map(|(_, l)| l)
    }

    /// The open log holding record `id`.
    fn holding(&self, id: uuid::Uuid) -> Result<usize, LogError> {
        self.logs
            .iter()
            .position(|(_, log)| matches!(log.get(id), Ok(Some(_))))
            .ok_or_else(|| LogError::rejected("unknown-entry", format!("no reading {id}")))
    }

    /// The log id behind a screen number, and the open log that holds it.
    fn find(&self, number: u64) -> Result<(uuid::Uuid, usize), LogError> {
        let unknown = || LogError::rejected("unknown-entry", format!("no entry {number}"));
        let id = *self
            .ids
            .borrow()
            .get((number as usize).wrapping_sub(1))
            .ok_or_else(unknown)?;
        let at = self
            .logs
            .iter()
            .position(|(_, log)| matches!(log.get(id), Ok(Some(_))))
            .ok_or_else(unknown)?;
        Ok((id, at))
    }

    /// Appends a correction or void to the log holding it; a storage failure keeps the
    /// record pending and says "not saved", as for a new entry.
    fn revise(&mut self, at: usize, draft: crate::log::Draft) -> Result<(), LogError> {
        self.cache.replace(None);
        let log = &mut self.logs[at].1;
        let _ = log.retry_pending();
        log.append(draft)
            .map(|_| ())
            .map_err(|e| not_saved(from_log_error(e)))
    }
}

/// Storage failures while appending mean the record is kept pending: say "not saved".
fn not_saved(e: LogError) -> LogError {
    match e {
        LogError::Rejected { code, message }
            if matches!(code.as_str(), "storage-full" | "read-only" | "io") =>
        {
            LogError::rejected("not-saved", message)
        }
        other => other,
    }
}

fn from_log_error(e: crate::log::Error) -> LogError {
    use crate::log::ErrorKind as K;
    let code = match e.kind() {
        K::StorageFull => "storage-full",
        K::ReadOnly => "read-only",
        K::Io => "io",
        K::Locked => "locked",
        K::InvalidEntry => "invalid-entry",
        K::NotALog => "not-a-log",
        K::FutureVersion => "future-version",
        K::SameLog => "same-log",
        K::UnknownReference => "unknown-entry",
        K::TooLarge => "too-large",
        // The file is gone under the writer: as for any failed write, the entry was not saved.
        K::FileReplaced => "io",
    };
    LogError::rejected(code, e.to_string())
}

fn utc_iso(at: &chrono::DateTime<chrono::FixedOffset>) -> String {
    at.with_timezone(&chrono::Utc)
        .format("%Y-%m-%dT%H:%M:%SZ")
        .to_string()
}

fn revision_of(record: crate::log::Record) -> Revision {
    use crate::log::Record as R;
    match record {
        R::Entry(e) => Revision {
            kind: RevisionKind::Logged,
            when: utc_iso(&e.at),
            dose_mg_per_l: e.dose.dose_mg_per_l(),
            operator: e.dose.operator,
            reason: String::new(),
            note: Some(e.dose.note),
        },
        R::Correction(c) => Revision {
            kind: RevisionKind::Corrected,
            when: utc_iso(&c.at),
            dose_mg_per_l: c.dose.dose_mg_per_l(),
            operator: c.dose.operator,
            reason: c.reason,
            note: Some(c.dose.note),
        },
        R::Void(v) => Revision {
            kind: RevisionKind::Voided,
            when: utc_iso(&v.at),
            operator: v.operator,
            reason: v.reason,
            dose_mg_per_l: None,
            note: None,
        },
        // A dose's history holds no readings; shown plainly should one ever be asked for.
        R::Reading(r) => Revision {
            kind: RevisionKind::Logged,
            when: utc_iso(&r.at),
            operator: r.reading.operator().to_string(),
            reason: String::new(),
            dose_mg_per_l: None,
            note: None,
        },
        R::ReadingCorrection(c) => Revision {
            kind: RevisionKind::Corrected,
            when: utc_iso(&c.at),
            operator: c.reading.operator().to_string(),
            reason: c.reason,
            dose_mg_per_l: None,
            note: None,
        },
    }
}

/// An entry's records in the order the log decides its current state: (time, id).
fn ordered_history(
    log: &crate::log::Log,
    id: uuid::Uuid,
) -> Result<Vec<crate::log::Record>, LogError> {
    let mut records = log.history(id).map_err(from_log_error)?;
    // The original first, then revisions as the log orders them.
    records.sort_by_key(|r| (r.refers_to().is_some(), r.at(), r.id()));
    Ok(records)
}

impl DoseLog for PersistentLog {
    /// True while every entry is on disk; a pending (unsynced) entry shows "not saved".
    fn persistent(&self) -> bool {
        !self.scratch && self.logs.iter().all(|(_, log)| log.pending().is_empty())
    }

    fn append(
        &mut self,
        site: &str,
        at: Option<DateTime<FixedOffset>>,
        dose: Dose,
    ) -> Result<u64, LogError> {
        let draft = crate::log::record::Draft::Entry {
            at,
            site: site.to_string(),
            dose,
        };
        self.cache.replace(None);
        let log = self.log_for(site)?;
        let _ = log.retry_pending();
        let id = log
            .append(draft)
            .map_err(|e| not_saved(from_log_error(e)))?;
        Ok(self.number(id))
    }

    fn entries(&self) -> Rc<Vec<Entry>> {
        if let Some(cached) = self.cache.borrow().as_ref() {
            return Rc::clone(cached);
        }
        let mut out = Vec::new();
        let all = crate::log::Query {
            include_voided: true,
            ..Default::default()
        };
        for (_, log) in &self.logs {
            // Built from the views one at a time (one read per entry), each kept as the list
            // reads it; the whole record and its history are read only for the entry the
            // operator opens.
            // A log that cannot be read to its end lists nothing, as before: never a part
            // of it that looks whole.
            let mut listed = Vec::new();
            let read = log.for_each(&all, |view| {
                listed.push(Entry {
                    id: self.number(view.id),
                    when: utc_iso(&view.at),
                    site: view.site,
                    dose: ListedDose::of(view.dose),
                    status: match view.status {
                        crate::log::Status::Original => EntryStatus::Original,
                        crate::log::Status::Corrected => EntryStatus::Corrected,
                        crate::log::Status::Voided => EntryStatus::Voided,
                    },
                    revisions: view.revisions,
                });
                Ok(())
            });
            if read.is_ok() {
                out.append(&mut listed);
            }
        }
        out.sort_by(|a, b| a.when.cmp(&b.when));
        let out = Rc::new(out);
        self.cache.replace(Some(Rc::clone(&out)));
        out
    }

    fn dose(&self, number: u64) -> Result<Dose, LogError> {
        let (id, at) = self.find(number)?;
        match self.logs[at].1.entry(id).map_err(from_log_error)? {
            Some(view) => Ok(view.dose),
            None => Err(LogError::rejected(
                "unknown-entry",
                format!("no entry {number}"),
            )),
        }
    }

    fn history(&self, number: u64) -> Result<Vec<Revision>, LogError> {
        let (id, at) = self.find(number)?;
        Ok(ordered_history(&self.logs[at].1, id)?
            .into_iter()
            .map(revision_of)
            .collect())
    }

    /// The correction is the whole recomputed result; its `operator` is whoever made the
    /// correction (the original's initials stay in history).
    fn correct(&mut self, number: u64, fix: Amendment) -> Result<(), LogError> {
        let (id, at) = self.find(number)?;
        self.revise(
            at,
            crate::log::Draft::Correction {
                at: None,
                corrects: id,
                reason: fix.reason,
                dose: fix.dose,
            },
        )
    }

    fn void(&mut self, number: u64, operator: &str, reason: &str) -> Result<(), LogError> {
        let (id, at) = self.find(number)?;
        self.revise(
            at,
            crate::log::Draft::Void {
                at: None,
                operator: operator.into(),
                voids: id,
                reason: reason.into(),
            },
        )
    }

    fn record_reading(
        &mut self,
        site: &str,
        at: Option<DateTime<FixedOffset>>,
        reading: crate::log::record::Reading,
    ) -> Result<uuid::Uuid, LogError> {
        let draft = crate::log::Draft::Reading {
            at,
            site: site.to_string(),
            reading,
        };
        let log = self.log_for(site)?;
        let _ = log.retry_pending();
        log.append(draft).map_err(|e| not_saved(from_log_error(e)))
    }

    fn readings(&self, site: &str) -> Result<Vec<crate::log::ReadingView>, LogError> {
        let Some(log) = self.open_log(site) else {
            return Ok(Vec::new());
        };
        let all = crate::log::Query {
            include_voided: true,
            ..Default::default()
        };
        let mut out = log.readings(&all).map_err(from_log_error)?;
        out.retain(|r| r.site == site);
        out.sort_by_key(|r| r.at);
        Ok(out)
    }

    fn correct_reading(
        &mut self,
        id: uuid::Uuid,
        reason: &str,
        reading: crate::log::record::Reading,
    ) -> Result<(), LogError> {
        let at = self.holding(id)?;
        self.revise(
            at,
            crate::log::Draft::ReadingCorrection {
                at: None,
                corrects: id,
                reason: reason.into(),
                reading,
            },
        )
    }

    fn void_reading(
        &mut self,
        id: uuid::Uuid,
        operator: &str,
        reason: &str,
    ) -> Result<(), LogError> {
        let at = self.holding(id)?;
        self.revise(
            at,
            crate::log::Draft::Void {
                at: None,
                operator: operator.into(),
                voids: id,
                reason: reason.into(),
            },
        )
    }

    fn operating_report(
        &self,
        site: &crate::engine::dosing::site::SiteProfile,
        catalog: &crate::engine::dosing::catalog::Catalog,
        from: chrono::NaiveDate,
        to: chrono::NaiveDate,
    ) -> Result<crate::log::report::Report, LogError> {
        match self.open_log(&site.name) {
            Some(log) => crate::log::report::report_from_log(log, site, catalog, from, to)
                .map_err(from_log_error),
            // No log yet for the site: the report of an empty period, from the same function.
            None => Ok(crate::log::report::report(&crate::log::report::Sources {
                site,
                catalog,
                readings: &[],
                doses: &[],
                from,
                to,
                tolerance: Default::default(),
            })),
        }
    }

    /// CSV (fixed columns, units in the headers, one header row for all sites) or JSON Lines
    /// of the chosen entries of the open sites, voided ones included with their status, for
    /// the monthly report. The log selects by id, so the file holds exactly the list's rows.
    fn export(
        &self,
        path: &Path,
        format: ExportFormat,
        only: &[u64],
        units: UnitSystem,
    ) -> Result<usize, LogError> {
        let chosen: std::collections::HashSet<uuid::Uuid> = {
            let ids = self.ids.borrow();
            only.iter()
                .filter_map(|n| ids.get((*n as usize).wrapping_sub(1)).copied())
                .collect()
        };
        write_new_file(path, |file| {
            let query = crate::log::Query {
                include_voided: true,
                only: Some(chosen),
                ..Default::default()
            };
            if format == ExportFormat::Csv {
                crate::log::export::csv_header(units, file).map_err(from_log_error)?;
            }
            let mut count = 0;
            for (_, log) in &self.logs {
                count += match format {
                    ExportFormat::JsonLines => crate::log::export::jsonl(log, &query, file),
                    ExportFormat::Csv => crate::log::export::csv_rows(log, &query, units, file),
                }
                .map_err(from_log_error)?;
            }
            Ok(count)
        })
    }

    /// Merges another device's log file into this device's log of the same site (the site
    /// of the file's first entry): new records are appended, identical ones skipped,
    /// conflicting ones (same id, other content) counted and left out.
    fn import(&mut self, path: &Path) -> Result<ImportReport, LogError> {
        if !path.is_file() {
            return Err(LogError::rejected(
                "not-found",
                format!("{}: no such file", path.display()),
            ));
        }
        let site = {
            let source = crate::log::Log::open_read_only(path).map_err(from_log_error)?;
            let all = crate::log::Query {
                include_voided: true,
                ..Default::default()
            };
            let first = source
                .query(&all)
                .map_err(from_log_error)?
                .into_iter()
                .next();
            match first {
                Some(view) => view.site,
                None => {
                    return Err(LogError::rejected(
                        "not-a-log",
                        format!("{} holds no dose log entries", path.display()),
                    ));
                }
            }
        };
        self.cache.replace(None);
        let log = self.log_for(&site)?;
        let report = log.merge_from(path).map_err(from_log_error)?;
        Ok(ImportReport {
            added: report.added,
            already_present: report.already_present,
            conflicting: report.conflicting.len(),
            unreadable: report.unreadable,
        })
    }
}

/// SEAM FOR THE LOG: the store the app uses. With a data directory it is the crash-safe log
/// (files in `<data dir>/logs/`); without one (tests, previews) a scratch log that is gone
/// when the app closes, and the Start screen says entries are not saved.
pub fn connected_log(data_dir: Option<&Path>) -> Box<dyn DoseLog> {
    match data_dir {
        Some(dir) => Box::new(PersistentLog::new(&dir.join("logs"), &device_id())),
        None => Box::new(PersistentLog::scratch()),
    }
}

/// A device id for log entries: the machine's host name when it has one.
fn device_id() -> String {
    let host = std::fs::read_to_string("/etc/hostname")
        .ok()
        .map(|h| h.trim().to_string())
        .filter(|h| !h.is_empty());
    format!("app@{}", host.unwrap_or_else(|| "device".into()))
}

/// Current UTC time as ISO 8601, from the system clock (civil-from-days, no time crate).
pub fn now_utc_iso() -> String {
    let secs = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map_or(0, |d| d.as_secs() as i64);
    iso_from_unix(secs)
}

/// Formats seconds since 1970-01-01T00:00:00Z as `YYYY-MM-DDTHH:MM:SSZ`.
pub fn iso_from_unix(secs: i64) -> String {
    let days = secs.div_euclid(86_400);
    let rem = secs.rem_euclid(86_400);
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = doy - (153 * mp + 2) / 5 + 1;
    let m = if mp < 10 { mp + 3 } else { mp - 9 };
    let y = yoe + era * 400 + i64::from(m <= 2);
    format!(
        "{y:04}-{m:02}-{d:02}T{:02}:{:02}:{:02}Z",
        rem / 3600,
        rem % 3600 / 60,
        rem % 60
    )
}

/// Who logs a result and where, besides the card itself.
#[derive(Clone, Copy, Debug)]
pub struct Logging<'a> {
    /// Operator initials (after a correction: who corrected it).
    pub operator: &'a str,
    /// The tap or dosing point.
    pub tap: &'a str,
    /// The language the numbers were shown and typed in (a decimal comma in Spanish).
    pub lang: Lang,
    /// The unit system the card showed its numbers in.
    pub units: UnitSystem,
}

/// What the result card shows, as the log's record: "Log this dose" and a correction both go
/// through here, and through the log's one conversion of an outcome
/// ([`crate::log::shown::dose_of_outcome`]), which `molefeed calc --log` uses too. This
/// function adds only the card's texts: each number as the card showed it, each input as typed,
/// each caution as worded. `None` when the card shows no result with a dose.
pub fn dose_of(card: &CalcView, by: Logging<'_>) -> Option<Dose> {
    let Status::Ready(shown) = &card.status else {
        return None;
    };
    shown.outcome.dose_mg_per_l?;
    let outcome = shown.outcome.table.as_deref()?;
    let result_text = |r: &ResultValue, unit: Unit| -> String {
        // The card's big places, by the same result ids the adapter placed them by.
        use super::engine_adapter::{DOSE, FEED, PRODUCT, SETTING};
        // A number with the range shown beside it, as the card showed both.
        let with = |value: &String, range: &Option<String>| match range {
            Some(range) => format!("{value} ({range})"),
            None => value.clone(),
        };
        let card_text = match r.id {
            id if DOSE.contains(&id) => Some(with(&shown.dose, &shown.ranges[0])),
            id if id == FEED => Some(with(&shown.feed, &shown.ranges[1])),
            id if PRODUCT.contains(&id) && unit == shown.product_unit => {
                Some(with(&shown.product, &shown.ranges[2]))
            }
            id if SETTING.contains(&id) => Some(with(&shown.pump, &shown.ranges[3])),
            id => shown
                .extras
                .iter()
                .find(|e| e.key == id.replace('_', "-"))
                .map(|e| with(&e.value, &e.range)),
        };
        card_text
            .unwrap_or_else(|| numbers::format_sig(unit.from_si(r.value), shown.figures, by.lang))
    };
    let input_text = |i: &InputUsed| -> Option<String> {
        card.fields
            .iter()
            .find(|f| f.name == i.name)
            .map(|f| f.text.trim().to_string())
            .filter(|t| !t.is_empty())
    };
    let caution_text = |c: &crate::engine::dosing::Caution| -> String {
        shown
            .cautions
            .iter()
            .find(|x| x.code == c.key)
            .map_or_else(|| c.key.clone(), |x| x.message.clone())
    };
    let tap = if by.tap.trim().is_empty() {
        "—"
    } else {
        by.tap
    };
    Some(crate::log::shown::dose_of_outcome(
        outcome,
        &crate::log::shown::Shown {
            system: by.units,
            result: &result_text,
            input: &input_text,
            caution: &caution_text,
        },
        by.operator,
        tap,
    ))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::app::calc::CalcController;
    use crate::app::numbers::Lang;
    use crate::app::seams::CalcKind;
    use crate::engine::dosing::catalog::Catalog;
    use crate::engine::quantity::UnitSystem as Shown;
    use crate::log::ProductRef;
    use crate::log::record::example_dose;
    use crate::log::shown::BEYOND_FULL_SCALE;

    /// The example hypochlorite feed with its dose result set to `mg_l`.
    fn dose(mg_l: f64) -> Dose {
        let mut d = example_dose();
        let r = d.results.iter_mut().find(|r| r.id == "dose").unwrap();
        r.value = mg_l;
        r.shown = mg_l.to_string();
        d
    }

    fn doses(log: &dyn DoseLog) -> Vec<Option<f64>> {
        log.entries()
            .iter()
            .map(|e| e.dose.dose_mg_per_l())
            .collect()
    }

    #[test]
    fn scratch_log_writes_real_records_and_is_not_persistent() {
        let mut log = PersistentLog::scratch();
        let dir = log.dir.clone();
        assert!(!log.persistent());
        assert_eq!(log.append("North plant", None, dose(1.5)), Ok(1));
        assert_eq!(log.append("North plant", None, dose(2.0)), Ok(2));
        assert_eq!(doses(&log), [Some(1.5), Some(2.0)]);
        assert_eq!(log.dose(2), Ok(dose(2.0)), "read back whole");
        assert_eq!(log.entries()[1].dose, ListedDose::of(dose(2.0)), "listed");
        assert!(log.dose(3).is_err(), "no entry 3");
        let mut bad = dose(1.0);
        bad.results[1].value = f64::NAN;
        assert!(
            matches!(log.append("North plant", None, bad), Err(LogError::Rejected { ref code, .. }) if code == "invalid-entry")
        );
        assert!(crate::log::site_file(&dir, "North plant").is_file());
        drop(log);
        assert!(!dir.exists(), "a scratch log leaves nothing behind");
    }

    #[test]
    fn persistent_log_keeps_entries_on_disk_across_reopen() {
        let dir = std::env::temp_dir().join(format!("molefeed-plog-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        let mut log = PersistentLog::new(&dir, "test-device");
        assert_eq!(log.append("North plant", None, dose(1.5)), Ok(1));
        assert_eq!(log.append("North plant", None, dose(2.0)), Ok(2));
        assert!(log.persistent());
        drop(log);
        let reopened =
            crate::log::Log::open(&crate::log::site_file(&dir, "North plant"), "other").unwrap();
        let views = reopened.current().unwrap();
        assert_eq!(views.len(), 2);
        assert_eq!(views[1].dose.dose_mg_per_l(), Some(2.0));
        assert_eq!(views[0].dose.operator, "JM");
        assert_eq!(views[0].dose.tap, "Clearwell inlet");
        drop(reopened);
        let mut again = PersistentLog::new(&dir, "test-device");
        assert_eq!(
            again.entries().len(),
            2,
            "earlier entries show before anything is logged"
        );
        again.append("North plant", None, dose(3.0)).unwrap();
        assert_eq!(doses(&again), [Some(1.5), Some(2.0), Some(3.0)]);
        let mut bad = dose(1.0);
        bad.operator = String::new();
        assert!(
            matches!(again.append("North plant", None, bad), Err(LogError::Rejected { ref code, .. }) if code == "invalid-entry")
        );
        let _ = std::fs::remove_dir_all(&dir);
    }

    /// A correction is a whole recomputed result: the new flow, feed and setting replace the
    /// old ones together, so a corrected dose never sits beside the old pump setting.
    fn corrections_and_voids_keep_the_original(log: &mut dyn DoseLog) {
        let id = log.append("North plant", None, dose(1.5)).unwrap();
        let other = log.append("North plant", None, dose(2.0)).unwrap();
        let mut recomputed = dose(1.8);
        recomputed.operator = "KT".into();
        recomputed.note = "flow meter read wrong".into();
        for r in &mut recomputed.results {
            match r.id.as_str() {
                "flow" => r.value = 12000.0,
                "feed_mass_rate" => r.value = 21.6,
                "product_volume_rate" => r.value = 6.0,
                "pump_setting" => r.value = 50.6,
                _ => {}
            }
        }
        recomputed.setting.as_mut().unwrap().percent = 50.6;
        let fix = |reason: &str| Amendment {
            reason: reason.into(),
            dose: recomputed.clone(),
        };
        assert!(
            matches!(log.correct(id, fix("  ")), Err(LogError::Rejected { ref code, .. }) if code == "invalid-entry"),
            "a correction without a reason is refused"
        );
        assert_eq!(log.history(id).unwrap().len(), 1, "nothing recorded");
        log.correct(id, fix("wrong flow reading")).unwrap();
        let now = log.entries();
        let e = now.iter().find(|e| e.id == id).unwrap();
        assert_eq!(e.dose, ListedDose::of(recomputed.clone()));
        let whole = log.dose(id).unwrap();
        assert_eq!(whole, recomputed, "the whole recomputed result is current");
        assert_eq!(whole.result("pump_setting").unwrap().value, 50.6);
        assert_eq!(e.status, EntryStatus::Corrected);
        let history = log.history(id).unwrap();
        let kinds: Vec<RevisionKind> = history.iter().map(|r| r.kind).collect();
        assert_eq!(kinds, [RevisionKind::Logged, RevisionKind::Corrected]);
        assert_eq!(history[0].dose_mg_per_l, Some(1.5), "original kept");
        assert_eq!(history[0].operator, "JM");
        assert_eq!(history[1].operator, "KT");
        assert_eq!(history[1].reason, "wrong flow reading");
        assert!(log.void(other, "KT", "").is_err(), "void needs a reason");
        assert_eq!(log.entries()[1].status, EntryStatus::Original);
        log.void(other, "KT", "logged twice").unwrap();
        let voided = log
            .entries()
            .iter()
            .find(|e| e.id == other)
            .cloned()
            .unwrap();
        assert!(voided.voided());
        assert_eq!(
            voided.dose.dose_mg_per_l(),
            Some(2.0),
            "the entry stays, marked"
        );
        let h = log.history(other).unwrap();
        assert_eq!(h.len(), 2);
        assert_eq!(
            (h[1].kind, h[1].operator.as_str()),
            (RevisionKind::Voided, "KT")
        );
        assert!(log.void(99, "KT", "no such").is_err());
    }

    #[test]
    fn scratch_log_corrects_and_voids_with_history() {
        corrections_and_voids_keep_the_original(&mut PersistentLog::scratch());
    }

    #[test]
    fn persistent_log_corrects_and_voids_with_history_on_disk() {
        let dir = std::env::temp_dir().join(format!("molefeed-plog-fix-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        let mut log = PersistentLog::new(&dir, "test-device");
        corrections_and_voids_keep_the_original(&mut log);
        drop(log);
        let reopened = PersistentLog::new(&dir, "test-device");
        let entries = reopened.entries();
        assert_eq!(entries.len(), 2, "voided entries stay listed");
        assert_eq!(entries[0].dose.dose_mg_per_l(), Some(1.8));
        let whole = reopened.dose(entries[0].id).unwrap();
        assert_eq!(whole.result("flow").unwrap().value, 12000.0);
        assert_eq!(entries[0].status, EntryStatus::Corrected);
        assert_eq!(reopened.history(1).unwrap().len(), 2);
        // Each listed entry is its whole record as listed: the latest correction's fields.
        for e in entries.iter() {
            let whole = reopened.dose(e.id).unwrap();
            assert_eq!(e.dose, ListedDose::of(whole), "entry {}", e.id);
        }
        let _ = std::fs::remove_dir_all(&dir);
    }

    #[test]
    fn persistent_export_in_both_formats_and_merge_reports_duplicates() {
        let base = std::env::temp_dir().join(format!("molefeed-plog-x-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&base);
        let mut ours = PersistentLog::new(&base.join("ours"), "tablet-a");
        ours.append("North plant", None, dose(1.5)).unwrap();
        ours.void(1, "JM", "test entry").unwrap();
        let csv = base.join("out.csv");
        assert_eq!(
            ours.export(&csv, ExportFormat::Csv, &[1], UnitSystem::Si),
            Ok(1)
        );
        let text = std::fs::read_to_string(&csv).unwrap();
        assert!(text.starts_with("id,logged_at"), "{text}");
        assert!(text.contains("voided"), "{text}");
        let jsonl = base.join("out.jsonl");
        assert_eq!(
            ours.export(&jsonl, ExportFormat::JsonLines, &[1], UnitSystem::Si),
            Ok(1)
        );
        let line = std::fs::read_to_string(&jsonl).unwrap();
        assert!(serde_json::from_str::<serde_json::Value>(line.trim()).is_ok());
        // A folder that does not exist is named in words, and no file is left behind.
        let missing = base.join("no-such-folder/out.csv");
        assert!(
            matches!(ours.export(&missing, ExportFormat::Csv, &[1], UnitSystem::Si), Err(LogError::Rejected { ref code, .. }) if code == "not-found")
        );
        // An earlier export at the same path is refused in words and left as it was.
        assert!(
            matches!(ours.export(&csv, ExportFormat::Csv, &[1], UnitSystem::Si), Err(LogError::Rejected { ref code, .. }) if code == "exists")
        );
        assert_eq!(std::fs::read_to_string(&csv).unwrap(), text);
        // Another device's log of the same site: its entries are added once.
        let theirs_dir = base.join("theirs");
        let mut theirs = PersistentLog::new(&theirs_dir, "tablet-b");
        theirs.append("North plant", None, dose(2.5)).unwrap();
        theirs.append("North plant", None, dose(2.6)).unwrap();
        drop(theirs);
        let file = crate::log::site_file(&theirs_dir, "North plant");
        let first = ours.import(&file).unwrap();
        assert_eq!(
            (first.added, first.already_present, first.conflicting),
            (2, 0, 0)
        );
        assert_eq!(ours.entries().len(), 3);
        let second = ours.import(&file).unwrap();
        assert_eq!((second.added, second.already_present), (0, 2));
        // Not a log: refused in words, file untouched.
        assert!(
            matches!(ours.import(&csv), Err(LogError::Rejected { ref code, .. }) if code == "not-a-log")
        );
        assert!(
            matches!(ours.import(&base.join("nothing.doselog")), Err(LogError::Rejected { ref code, .. }) if code == "not-found")
        );
        let _ = std::fs::remove_dir_all(&base);
    }

    /// The export holds only the chosen entries, two sites' logs in one CSV with a single
    /// header row.
    #[test]
    fn export_writes_only_the_chosen_entries() {
        let mut log = PersistentLog::scratch();
        for (site, mg_l) in [
            ("North plant", 1.1),
            ("South plant", 2.2),
            ("North plant", 3.3),
        ] {
            log.append(site, None, dose(mg_l)).unwrap();
        }
        log.void(3, "JM", "entered twice").unwrap();
        let path = log.dir.join("chosen.csv");
        assert_eq!(
            log.export(&path, ExportFormat::Csv, &[2, 3], UnitSystem::Si),
            Ok(2)
        );
        let mut reader = csv::Reader::from_path(&path).unwrap();
        let header = reader.headers().unwrap().clone();
        let column = |title: &str| header.iter().position(|c| c == title).unwrap();
        let (dose_at, status) = (column("dose_mg_per_L"), column("status"));
        let mut rows: Vec<(String, String)> = reader
            .records()
            .map(|r| {
                let r = r.unwrap();
                (r[dose_at].to_string(), r[status].to_string())
            })
            .collect();
        // Grouped by site in the file: compare as a set.
        rows.sort();
        assert_eq!(
            rows,
            [
                ("2.2".to_string(), "original".to_string()),
                ("3.3".to_string(), "voided".to_string())
            ]
        );
    }

    /// The feed calculator's card for `product` with `fields` typed, through the real engine
    /// and controller.
    fn feed_card(product: &str, fields: &[(&str, &str)]) -> CalcView {
        let mut calc =
            CalcController::new(crate::app::seams::connected_engine(), Lang::En, Shown::Si);
        calc.set_kind(CalcKind::of("feed"));
        let index = calc
            .view()
            .products
            .iter()
            .position(|p| p.id == product)
            .unwrap_or_else(|| panic!("{product} is offered"));
        calc.set_product(index);
        for (name, text) in fields {
            calc.edit(name, text);
        }
        assert!(calc.current_request().is_some(), "complete inputs");
        calc.view()
    }

    /// The card for a chlorine-gas feed on a gas feeder of `capacity` kg/d.
    fn gas_feed_card(capacity: &str) -> CalcView {
        feed_card(
            "chlorine-gas",
            &[
                ("flow", "9000"),
                ("dose", "2.0"),
                ("purity", "100"),
                ("gas-feeder-capacity", capacity),
            ],
        )
    }

    fn by() -> Logging<'static> {
        Logging {
            operator: "JM",
            tap: "Clearwell",
            lang: Lang::En,
            units: Shown::Si,
        }
    }

    /// 9000 m³/d × 2.0 g/m³ = 18 kg/d of Cl2, fed as gas: no volume, so no
    /// product_volume_rate; the feeder is set by mass.
    #[test]
    fn a_gas_feed_logs_what_the_card_showed_and_nothing_it_did_not() {
        let card = gas_feed_card("100");
        let d = dose_of(&card, by()).expect("a dose to log");
        assert_eq!(d.calculator, "feed");
        assert_eq!(d.chemical, "Cl2");
        assert_eq!(
            d.product,
            Some(ProductRef {
                id: "chlorine-gas".into(),
                name: "Chlorine gas".into()
            })
        );
        assert_eq!(d.result("product_volume_rate"), None, "no volume for a gas");
        let value = |id: &str| d.result(id).map(|r| (r.value, r.unit.as_str()));
        assert_eq!(value("flow"), Some((9000.0, "m³/d")));
        assert_eq!(value("dose"), Some((2.0, "mg/L")));
        let (feed, unit) = value("feed_mass_rate").unwrap();
        assert!(
            (feed - 18.0).abs() < 1e-9 && unit == "kg/d",
            "{feed} {unit}"
        );
        let (product, unit) = value("product_mass_rate").unwrap();
        assert!(
            (product - 18.0).abs() < 1e-9 && unit == "kg/d",
            "{product} {unit}"
        );
        let setting = d.setting.as_ref().expect("a feeder scale was typed");
        assert_eq!(setting.device, "gas-feeder");
        assert!((setting.percent - 18.0).abs() < 1e-9, "{}", setting.percent);
        assert_eq!(d.result("pump_setting"), None, "a gas feeder is not a pump");
        let (feeder, unit) = value("feeder_setting").unwrap();
        assert!(
            (feeder - 18.0).abs() < 1e-9 && unit == "%",
            "{feeder} {unit}"
        );
        let flow = d.inputs.iter().find(|i| i.name == "flow").unwrap();
        assert_eq!((flow.text.as_str(), flow.value), ("9000", 9000.0));
        assert!(!d.cautions.is_empty(), "chlorine gas carries its hazards");
        assert!(d.cautions.iter().all(|c| !c.text.is_empty()));
    }

    /// The whole path: card → record → real file → CSV (empty cells, not 0) and JSON Lines.
    #[test]
    fn a_gas_feed_round_trips_through_the_file_and_both_exports() {
        let card = gas_feed_card("100");
        let d = dose_of(&card, by()).unwrap();
        assert_eq!(d.result("pump_setting"), None);
        assert_eq!(d.result("product_volume_rate"), None);
        let mut log = PersistentLog::scratch();
        let id = log.append("North plant", None, d.clone()).unwrap();
        assert_eq!(
            log.dose(id),
            Ok(d.clone()),
            "read back from the file as logged"
        );
        assert_eq!(log.entries()[0].dose, ListedDose::of(d.clone()));
        let csv_path = log.dir.join("gas.csv");
        log.export(&csv_path, ExportFormat::Csv, &[id], UnitSystem::Us)
            .unwrap();
        let mut reader = csv::Reader::from_path(&csv_path).unwrap();
        let header = reader.headers().unwrap().clone();
        let row = reader.records().next().unwrap().unwrap();
        let cell = |title: &str| {
            let at = header.iter().position(|c| c == title);
            row[at.unwrap_or_else(|| panic!("no column {title}: {header:?}"))].to_string()
        };
        assert_eq!(cell("product_volume_rate_gal_per_h"), "");
        assert_eq!(cell("pump_setting_percent"), "");
        assert_eq!(cell("feeder_setting_percent"), "18");
        assert_eq!(cell("setting_device"), "gas-feeder");
        assert_eq!(cell("product"), "Chlorine gas");
        assert_eq!(cell("calculator"), "feed");
        // 9000 m³/d ÷ 3785.411784 m³/d per MGD; 18 kg/d ÷ 0.45359237 kg/lb.
        let number = |title: &str| cell(title).parse::<f64>().unwrap();
        assert!((number("flow_MGD") - 9000.0 / 3785.411784).abs() < 1e-9);
        assert!((number("feed_mass_rate_lb_per_d") - 18.0 / 0.45359237).abs() < 1e-9);
        assert!((number("product_mass_rate_lb_per_d") - 18.0 / 0.45359237).abs() < 1e-9);
        let jsonl_path = log.dir.join("gas.jsonl");
        log.export(&jsonl_path, ExportFormat::JsonLines, &[id], UnitSystem::Us)
            .unwrap();
        let text = std::fs::read_to_string(&jsonl_path).unwrap();
        let json: serde_json::Value = serde_json::from_str(text.trim()).unwrap();
        let results = json["dose"]["results"].as_array().unwrap();
        let ids: Vec<&str> = results.iter().map(|r| r["id"].as_str().unwrap()).collect();
        assert_eq!(
            ids,
            [
                "flow",
                "dose",
                "feed_mass_rate",
                "product_mass_rate",
                "feeder_setting"
            ],
            "only what was computed"
        );
        assert_eq!(json["dose"]["setting"]["device"], "gas-feeder");
        assert_eq!(json["dose"]["product"]["name"], "Chlorine gas");
        assert_eq!(json["dose"]["inputs"][0]["text"], "9000");
    }

    /// 9000 m³/d × 2 g/m³ = 18 kg/d of Cl2; hypochlorite at 12.5 trade % holds 125 g/L of
    /// available chlorine, so 144 L/d = 6 L/h; a 1 L/h pump would have to run at 600 %: no
    /// setting is shown or logged, the volume to feed is, and the entry is kept.
    #[test]
    fn a_setting_beyond_full_scale_is_logged_as_what_it_is() {
        let card = feed_card(
            "sodium-hypochlorite",
            &[
                ("flow", "9000"),
                ("dose", "2"),
                ("strength", "12.5"),
                ("specific-gravity", "1.2"),
                ("pump-capacity", "1"),
            ],
        );
        let d = dose_of(&card, by()).unwrap();
        assert_eq!(d.setting, None);
        assert_eq!(d.result("pump_setting"), None);
        // The engine presents no setting beyond full scale (a caution says the pump is too
        // small), so the card shows none and the log records none.
        assert_eq!(d.result(BEYOND_FULL_SCALE), None);
        let volume = d.result("product_volume_rate").unwrap();
        assert!((volume.value - 6.0).abs() < 1e-9, "{}", volume.value);
        assert_eq!(volume.unit, "L/h");
        let mut log = PersistentLog::scratch();
        assert_eq!(log.append("North plant", None, d), Ok(1));
    }

    #[test]
    fn product_names_are_english_words_not_keys() {
        // The log records the catalog's English name; every product has one, in words.
        let catalog = Catalog::builtin().unwrap();
        for p in &catalog.products {
            assert!(!p.name.trim().is_empty(), "{}", p.id);
            assert!(!p.name.starts_with("product-"), "{}: {}", p.id, p.name);
            assert!(p.name.chars().next().unwrap().is_uppercase(), "{}", p.name);
        }
        let names: Vec<&str> = catalog.products.iter().map(|p| p.name.as_str()).collect();
        assert!(names.contains(&"Sodium hypochlorite") && names.contains(&"Carbon dioxide"));
    }

    #[test]
    fn every_error_code_has_a_message_key() {
        let keys = crate::app::keys::dynamic_keys();
        for code in ERROR_CODES {
            assert!(keys.contains(&format!("log-error-{code}")), "{code}");
        }
    }

    #[test]
    fn iso_dates() {
        assert_eq!(iso_from_unix(0), "1970-01-01T00:00:00Z");
        assert_eq!(iso_from_unix(951_782_400), "2000-02-29T00:00:00Z");
        assert_eq!(iso_from_unix(1_798_765_323), "2027-01-01T01:02:03Z");
        assert!(now_utc_iso().ends_with('Z'));
    }
}
