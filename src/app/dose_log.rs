//! The seam between the UI and the dose log: a trait the screens use, the crash-safe
//! [`PersistentLog`] behind it, and an in-memory [`MemoryLog`] for tests and previews.
//!
//! Design choice: the UI only ever talks to [`DoseLog`]. An [`Entry`] is what the list shows:
//! the entry as it stands now (the latest correction applied) with its status in words;
//! the full history (original, corrections, voids with time, initials and reason) is read
//! only for the one entry the operator opens, so a 10 000-entry log still opens fast.
//! Corrections and voids are new records that reference the original — nothing is edited or
//! dropped. The in-memory [`MemoryLog`] reports `persistent() == false`, which is what makes
//! the Start screen show its "not saved" banner.

use serde::{Deserialize, Serialize};
use std::path::Path;
use std::rc::Rc;

/// A dose the operator decided to record.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct NewEntry {
    /// UTC time, ISO 8601 (`2026-12-02T01:15:00Z`).
    pub when: String,
    pub site: String,
    pub point: String,
    pub chemical: String,
    pub dose_mg_per_l: f64,
    pub feed_kg_per_day: Option<f64>,
    pub pump_setting_percent: Option<f64>,
    /// Plant flow when the dose was computed, m³/d (the persistent log wants m³/h).
    #[serde(default)]
    pub flow_m3_per_day: Option<f64>,
    /// Product volume rate, L/h.
    #[serde(default)]
    pub product_l_per_hour: Option<f64>,
    /// "Show the work" and the cautions as they were shown, so the record keeps them.
    #[serde(default)]
    pub trace: Vec<String>,
    #[serde(default)]
    pub cautions: Vec<String>,
    pub note: String,
    /// Operator initials (remembered in Settings). After a correction: who corrected it.
    #[serde(default)]
    pub operator: String,
}

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

/// A stored entry as it stands now: its screen number, the current content (latest
/// correction applied) and its status.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Entry {
    pub id: u64,
    #[serde(flatten)]
    pub data: NewEntry,
    #[serde(default)]
    pub status: EntryStatus,
    /// How many corrections and voids reference this entry.
    #[serde(default)]
    pub revisions: u32,
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

/// A correction: the new dose and note, who made it and why.
#[derive(Clone, Debug, PartialEq)]
pub struct Amendment {
    pub operator: String,
    pub reason: String,
    pub dose_mg_per_l: f64,
    pub note: String,
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
    fn append(&mut self, entry: NewEntry) -> Result<u64, LogError>;
    /// All entries as they stand now (voided ones included, marked), oldest first.
    /// Shared rather than copied: the screens read the list several times a refresh, and a
    /// copy of a 10 000-entry log each time was most of the start-up.
    fn entries(&self) -> Rc<Vec<Entry>>;
    /// The original entry and every correction and void of it, oldest first.
    fn history(&self, id: u64) -> Result<Vec<Revision>, LogError>;
    /// Records a correction of entry `id` (a new record; the original stays).
    fn correct(&mut self, id: u64, fix: Amendment) -> Result<(), LogError>;
    /// Records that entry `id` should not count (a new record; the original stays).
    fn void(&mut self, id: u64, operator: &str, reason: &str) -> Result<(), LogError>;
    /// Writes the entries numbered in `only` — the ones the operator's filtered list shows,
    /// voided ones with their status — to a new file at `path`, each site's entries together
    /// and oldest first; returns the count. A file already at `path` is never replaced (`exists`).
    fn export(&self, path: &Path, format: ExportFormat, only: &[u64]) -> Result<usize, LogError>;
    /// Merges another device's file: new records added, known ones skipped, conflicts kept out.
    fn import(&mut self, path: &Path) -> Result<ImportReport, LogError>;
}

/// A required reason or initials, checked the same way the persistent log does.
fn require(field: &str, value: &str) -> Result<(), LogError> {
    if value.trim().is_empty() {
        return Err(LogError::rejected(
            "invalid-entry",
            format!("{field} must not be empty"),
        ));
    }
    Ok(())
}

fn check_dose(dose: f64) -> Result<(), LogError> {
    if !dose.is_finite() || dose < 0.0 {
        return Err(LogError::rejected(
            "bad-dose",
            format!("dose {dose} is not a loggable value"),
        ));
    }
    Ok(())
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

/// Entries kept in memory only (tests, previews, no data directory).
#[derive(Default)]
pub struct MemoryLog {
    entries: Vec<(Entry, Vec<Revision>)>,
}

impl MemoryLog {
    fn slot(&mut self, id: u64) -> Result<&mut (Entry, Vec<Revision>), LogError> {
        self.entries
            .iter_mut()
            .find(|(e, _)| e.id == id)
            .ok_or_else(|| LogError::rejected("unknown-entry", format!("no entry {id}")))
    }
}

impl DoseLog for MemoryLog {
    fn persistent(&self) -> bool {
        false
    }

    fn append(&mut self, entry: NewEntry) -> Result<u64, LogError> {
        check_dose(entry.dose_mg_per_l)?;
        let id = self.entries.last().map_or(1, |(e, _)| e.id + 1);
        let logged = Revision {
            kind: RevisionKind::Logged,
            when: entry.when.clone(),
            operator: entry.operator.clone(),
            reason: String::new(),
            dose_mg_per_l: Some(entry.dose_mg_per_l),
            note: Some(entry.note.clone()),
        };
        self.entries.push((
            Entry {
                id,
                data: entry,
                status: EntryStatus::Original,
                revisions: 0,
            },
            vec![logged],
        ));
        Ok(id)
    }

    fn entries(&self) -> Rc<Vec<Entry>> {
        Rc::new(self.entries.iter().map(|(e, _)| e.clone()).collect())
    }

    fn history(&self, id: u64) -> Result<Vec<Revision>, LogError> {
        Ok(self
            .entries
            .iter()
            .find(|(e, _)| e.id == id)
            .map(|(_, h)| h.clone())
            .unwrap_or_default())
    }

    fn correct(&mut self, id: u64, fix: Amendment) -> Result<(), LogError> {
        require("reason", &fix.reason)?;
        require("operator", &fix.operator)?;
        check_dose(fix.dose_mg_per_l)?;
        let (entry, history) = self.slot(id)?;
        entry.data.dose_mg_per_l = fix.dose_mg_per_l;
        entry.data.note = fix.note.clone();
        entry.data.operator = fix.operator.clone();
        entry.status = EntryStatus::Corrected;
        entry.revisions += 1;
        history.push(Revision {
            kind: RevisionKind::Corrected,
            when: now_utc_iso(),
            operator: fix.operator,
            reason: fix.reason,
            dose_mg_per_l: Some(fix.dose_mg_per_l),
            note: Some(fix.note),
        });
        Ok(())
    }

    fn void(&mut self, id: u64, operator: &str, reason: &str) -> Result<(), LogError> {
        require("reason", reason)?;
        require("operator", operator)?;
        let (entry, history) = self.slot(id)?;
        entry.status = EntryStatus::Voided;
        entry.revisions += 1;
        history.push(Revision {
            kind: RevisionKind::Voided,
            when: now_utc_iso(),
            operator: operator.into(),
            reason: reason.into(),
            dose_mg_per_l: None,
            note: None,
        });
        Ok(())
    }

    fn export(&self, path: &Path, format: ExportFormat, only: &[u64]) -> Result<usize, LogError> {
        let mut text = String::new();
        if format == ExportFormat::Csv {
            text.push_str("id,logged_at,site,status,operator,tap,chemical,dose_mg_per_L,note\n");
        }
        let chosen: Vec<&Entry> = self
            .entries
            .iter()
            .map(|(e, _)| e)
            .filter(|e| only.contains(&e.id))
            .collect();
        for e in &chosen {
            match format {
                ExportFormat::JsonLines => text
                    .push_str(&serde_json::to_string(e).map_err(|e| LogError::Io(e.to_string()))?),
                ExportFormat::Csv => {
                    let d = &e.data;
                    let cells = [
                        e.id.to_string(),
                        d.when.clone(),
                        d.site.clone(),
                        e.status.code().to_string(),
                        d.operator.clone(),
                        d.point.clone(),
                        d.chemical.clone(),
                        d.dose_mg_per_l.to_string(),
                        d.note.clone(),
                    ];
                    // The log's own CSV rule: RFC 4180 quoting, formulas defused.
                    let quoted: Vec<String> = cells
                        .iter()
                        .map(|c| crate::log::export::csv_text(c))
                        .collect();
                    text.push_str(&quoted.join(","));
                }
            }
            text.push('\n');
        }
        write_new_file(path, |file| {
            use std::io::Write;
            file.write_all(text.as_bytes())
                .map_err(|e| io_error("writing", path, &e))?;
            Ok(chosen.len())
        })
    }

    /// Reads this stand-in's own JSON Lines export. Ids are local numbers here, so an entry
    /// counts as already present when its content (time, site, point, chemical, dose,
    /// initials) matches one this log has.
    fn import(&mut self, path: &Path) -> Result<ImportReport, LogError> {
        let text = std::fs::read_to_string(path).map_err(|e| io_error("reading", path, &e))?;
        let mut report = ImportReport::default();
        for line in text.lines().filter(|l| !l.trim().is_empty()) {
            let Ok(entry) = serde_json::from_str::<Entry>(line) else {
                report.unreadable += 1;
                continue;
            };
            let same = |e: &Entry| {
                let (a, b) = (&e.data, &entry.data);
                a.when == b.when
                    && a.site == b.site
                    && a.point == b.point
                    && a.chemical == b.chemical
                    && a.operator == b.operator
            };
            match self.entries.iter().find(|(e, _)| same(e)) {
                Some((e, _)) if e.data == entry.data && e.status == entry.status => {
                    report.already_present += 1
                }
                Some(_) => report.conflicting += 1,
                None => {
                    let status = entry.status;
                    let id = self.append(entry.data)?;
                    if let Ok((e, _)) = self.slot(id) {
                        e.status = status;
                    }
                    report.added += 1;
                }
            }
        }
        if report == ImportReport::default() {
            return Err(LogError::rejected(
                "not-a-log",
                format!("{} holds no dose log entries", path.display()),
            ));
        }
        Ok(report)
    }
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
        }
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

fn dose_of(entry: &NewEntry) -> crate::log::record::Dose {
    crate::log::record::Dose {
        operator: entry.operator.clone(),
        tap: if entry.point.trim().is_empty() {
            "—".into()
        } else {
            entry.point.clone()
        },
        chemical: entry.chemical.clone(),
        product: entry.chemical.clone(),
        flow_m3_per_h: entry.flow_m3_per_day.map_or(0.0, |q| q / 24.0),
        dose_mg_per_l: entry.dose_mg_per_l,
        feed_rate_l_per_h: entry.product_l_per_hour.unwrap_or(0.0),
        pump_setting_percent: entry.pump_setting_percent.unwrap_or(0.0),
        inputs: Vec::new(),
        results: Vec::new(),
        trace: entry.trace.clone(),
        cautions: entry.cautions.clone(),
        cross_check: None,
        note: entry.note.clone(),
    }
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
            operator: e.dose.operator,
            reason: String::new(),
            dose_mg_per_l: Some(e.dose.dose_mg_per_l),
            note: Some(e.dose.note),
        },
        R::Correction(c) => Revision {
            kind: RevisionKind::Corrected,
            when: utc_iso(&c.at),
            operator: c.dose.operator,
            reason: c.reason,
            dose_mg_per_l: Some(c.dose.dose_mg_per_l),
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
        self.logs.iter().all(|(_, log)| log.pending().is_empty())
    }

    fn append(&mut self, entry: NewEntry) -> Result<u64, LogError> {
        let site = entry.site.clone();
        let draft = crate::log::record::Draft::Entry {
            at: None,
            site: site.clone(),
            dose: dose_of(&entry),
        };
        self.cache.replace(None);
        let log = self.log_for(&site)?;
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
            // Built from the views (one read per entry); the full history is read only for
            // the entry the operator opens.
            let Ok(views) = log.query(&all) else { continue };
            for view in views {
                let dose = &view.dose;
                out.push(Entry {
                    id: self.number(view.id),
                    data: NewEntry {
                        when: utc_iso(&view.at),
                        site: view.site.clone(),
                        point: dose.tap.clone(),
                        chemical: dose.chemical.clone(),
                        dose_mg_per_l: dose.dose_mg_per_l,
                        feed_kg_per_day: None,
                        pump_setting_percent: Some(dose.pump_setting_percent),
                        flow_m3_per_day: Some(dose.flow_m3_per_h * 24.0),
                        product_l_per_hour: Some(dose.feed_rate_l_per_h),
                        trace: dose.trace.clone(),
                        cautions: dose.cautions.clone(),
                        note: dose.note.clone(),
                        operator: dose.operator.clone(),
                    },
                    status: match view.status {
                        crate::log::Status::Original => EntryStatus::Original,
                        crate::log::Status::Corrected => EntryStatus::Corrected,
                        crate::log::Status::Voided => EntryStatus::Voided,
                    },
                    revisions: view.revisions,
                });
            }
        }
        out.sort_by(|a, b| a.data.when.cmp(&b.data.when));
        let out = Rc::new(out);
        self.cache.replace(Some(Rc::clone(&out)));
        out
    }

    fn history(&self, number: u64) -> Result<Vec<Revision>, LogError> {
        let (id, at) = self.find(number)?;
        Ok(ordered_history(&self.logs[at].1, id)?
            .into_iter()
            .map(revision_of)
            .collect())
    }

    /// The correction carries the whole current content with the new dose and note; its
    /// `operator` is whoever made the correction (the original's initials stay in history).
    fn correct(&mut self, number: u64, fix: Amendment) -> Result<(), LogError> {
        check_dose(fix.dose_mg_per_l)?;
        let (id, at) = self.find(number)?;
        let records = ordered_history(&self.logs[at].1, id)?;
        let mut dose = records
            .iter()
            .rev()
            .find_map(|r| match r {
                crate::log::Record::Correction(c) => Some(c.dose.clone()),
                _ => None,
            })
            .or_else(|| {
                records.iter().find_map(|r| match r {
                    crate::log::Record::Entry(e) => Some(e.dose.clone()),
                    _ => None,
                })
            })
            .ok_or_else(|| LogError::rejected("unknown-entry", format!("no entry {number}")))?;
        dose.dose_mg_per_l = fix.dose_mg_per_l;
        dose.note = fix.note;
        dose.operator = fix.operator;
        self.revise(
            at,
            crate::log::Draft::Correction {
                at: None,
                corrects: id,
                reason: fix.reason,
                dose,
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

    /// CSV (fixed columns, units in the headers, one header row for all sites) or JSON Lines
    /// of the chosen entries of the open sites, voided ones included with their status, for
    /// the monthly report. The log selects by id, so the file holds exactly the list's rows.
    fn export(&self, path: &Path, format: ExportFormat, only: &[u64]) -> Result<usize, LogError> {
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
                crate::log::export::csv_header(file).map_err(from_log_error)?;
            }
            let mut count = 0;
            for (_, log) in &self.logs {
                count += match format {
                    ExportFormat::JsonLines => crate::log::export::jsonl(log, &query, file),
                    ExportFormat::Csv => crate::log::export::csv_rows(log, &query, file),
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
/// (files in `<data dir>/logs/`); without one (tests, previews) nothing is written and the
/// Start screen says entries are not saved.
pub fn connected_log(data_dir: Option<&Path>) -> Box<dyn DoseLog> {
    match data_dir {
        Some(dir) => Box::new(PersistentLog::new(&dir.join("logs"), &device_id())),
        None => Box::new(MemoryLog::default()),
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

#[cfg(test)]
mod tests {
    use super::*;

    fn entry(dose: f64) -> NewEntry {
        NewEntry {
            when: "2026-12-01T08:00:00Z".into(),
            site: "North plant".into(),
            point: "Clearwell".into(),
            chemical: "NaOCl".into(),
            dose_mg_per_l: dose,
            feed_kg_per_day: None,
            pump_setting_percent: Some(40.0),
            flow_m3_per_day: Some(9000.0),
            product_l_per_hour: Some(7.5),
            trace: vec!["step".into()],
            cautions: vec!["hazard-corrosive".into()],
            note: String::new(),
            operator: "JM".into(),
        }
    }

    #[test]
    fn memory_log_appends_and_is_not_persistent() {
        let mut log = MemoryLog::default();
        assert!(!log.persistent());
        assert_eq!(log.append(entry(1.5)), Ok(1));
        assert_eq!(log.append(entry(2.0)), Ok(2));
        assert_eq!(log.entries().len(), 2);
        assert_eq!(log.entries()[1].data.dose_mg_per_l, 2.0);
        assert!(matches!(
            log.append(entry(f64::NAN)),
            Err(LogError::Rejected { .. })
        ));
    }

    #[test]
    fn persistent_log_keeps_entries_on_disk_across_reopen() {
        let dir = std::env::temp_dir().join(format!("molefeed-plog-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        let mut log = PersistentLog::new(&dir, "test-device");
        assert_eq!(log.append(entry(1.5)), Ok(1));
        assert_eq!(log.append(entry(2.0)), Ok(2));
        assert!(log.persistent());
        drop(log);
        let reopened =
            crate::log::Log::open(&crate::log::site_file(&dir, "North plant"), "other").unwrap();
        let views = reopened.current().unwrap();
        assert_eq!(views.len(), 2);
        assert_eq!(views[1].dose.dose_mg_per_l, 2.0);
        assert_eq!(views[0].dose.operator, "JM");
        assert_eq!(views[0].dose.tap, "Clearwell");
        assert!((views[0].dose.flow_m3_per_h - 9000.0 / 24.0).abs() < 1e-9);
        drop(reopened);
        let mut again = PersistentLog::new(&dir, "test-device");
        assert_eq!(
            again.entries().len(),
            2,
            "earlier entries show before anything is logged"
        );
        again.append(entry(3.0)).unwrap();
        let doses: Vec<f64> = again
            .entries()
            .iter()
            .map(|e| e.data.dose_mg_per_l)
            .collect();
        assert_eq!(doses, [1.5, 2.0, 3.0]);
        let mut bad = entry(1.0);
        bad.operator = String::new();
        assert!(
            matches!(again.append(bad), Err(LogError::Rejected { ref code, .. }) if code == "invalid-entry")
        );
        let _ = std::fs::remove_dir_all(&dir);
    }

    #[test]
    fn memory_export_then_import_round_trips_and_skips_duplicates() {
        let dir = std::env::temp_dir().join(format!("molefeed-log-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let path = dir.join("export.jsonl");
        let mut log = MemoryLog::default();
        log.append(entry(1.25)).unwrap();
        let mut later = entry(3.5);
        later.when = "2026-12-01T09:00:00Z".into();
        log.append(later).unwrap();
        assert_eq!(log.export(&path, ExportFormat::JsonLines, &[1, 2]), Ok(2));
        let mut other = MemoryLog::default();
        let report = other.import(&path).unwrap();
        assert_eq!((report.added, report.already_present), (2, 0));
        let doses: Vec<f64> = other
            .entries()
            .iter()
            .map(|e| e.data.dose_mg_per_l)
            .collect();
        assert_eq!(doses, vec![1.25, 3.5]);
        let again = other.import(&path).unwrap();
        assert_eq!((again.added, again.already_present), (0, 2));
        std::fs::remove_dir_all(&dir).unwrap();
    }

    /// One log implementation through correct → void, checked the same way for both.
    fn corrections_and_voids_keep_the_original(log: &mut dyn DoseLog) {
        let id = log.append(entry(1.5)).unwrap();
        let other = log.append(entry(2.0)).unwrap();
        let fix = |reason: &str, dose: f64| Amendment {
            operator: "KT".into(),
            reason: reason.into(),
            dose_mg_per_l: dose,
            note: "flow meter read wrong".into(),
        };
        assert!(
            matches!(log.correct(id, fix("  ", 1.8)), Err(LogError::Rejected { ref code, .. }) if code == "invalid-entry"),
            "a correction without a reason is refused"
        );
        assert_eq!(log.history(id).unwrap().len(), 1, "nothing recorded");
        log.correct(id, fix("wrong flow reading", 1.8)).unwrap();
        let now = log.entries();
        let e = now.iter().find(|e| e.id == id).unwrap();
        assert_eq!(e.data.dose_mg_per_l, 1.8);
        assert_eq!(e.status, EntryStatus::Corrected);
        assert_eq!(e.data.operator, "KT");
        let history = log.history(id).unwrap();
        let kinds: Vec<RevisionKind> = history.iter().map(|r| r.kind).collect();
        assert_eq!(kinds, [RevisionKind::Logged, RevisionKind::Corrected]);
        assert_eq!(history[0].dose_mg_per_l, Some(1.5), "original kept");
        assert_eq!(history[0].operator, "JM");
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
        assert_eq!(voided.data.dose_mg_per_l, 2.0, "the entry stays, marked");
        let h = log.history(other).unwrap();
        assert_eq!(h.len(), 2);
        assert_eq!(
            (h[1].kind, h[1].operator.as_str()),
            (RevisionKind::Voided, "KT")
        );
        assert!(log.void(99, "KT", "no such").is_err());
    }

    #[test]
    fn memory_log_corrects_and_voids_with_history() {
        corrections_and_voids_keep_the_original(&mut MemoryLog::default());
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
        assert_eq!(entries[0].data.dose_mg_per_l, 1.8);
        assert_eq!(entries[0].status, EntryStatus::Corrected);
        assert_eq!(reopened.history(1).unwrap().len(), 2);
        let _ = std::fs::remove_dir_all(&dir);
    }

    #[test]
    fn persistent_export_in_both_formats_and_merge_reports_duplicates() {
        let base = std::env::temp_dir().join(format!("molefeed-plog-x-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&base);
        let mut ours = PersistentLog::new(&base.join("ours"), "tablet-a");
        ours.append(entry(1.5)).unwrap();
        ours.void(1, "JM", "test entry").unwrap();
        let csv = base.join("out.csv");
        assert_eq!(ours.export(&csv, ExportFormat::Csv, &[1]), Ok(1));
        let text = std::fs::read_to_string(&csv).unwrap();
        assert!(text.starts_with("id,logged_at"), "{text}");
        assert!(text.contains("voided"), "{text}");
        let jsonl = base.join("out.jsonl");
        assert_eq!(ours.export(&jsonl, ExportFormat::JsonLines, &[1]), Ok(1));
        let line = std::fs::read_to_string(&jsonl).unwrap();
        assert!(serde_json::from_str::<serde_json::Value>(line.trim()).is_ok());
        // A folder that does not exist is named in words, and no file is left behind.
        let missing = base.join("no-such-folder/out.csv");
        assert!(
            matches!(ours.export(&missing, ExportFormat::Csv, &[1]), Err(LogError::Rejected { ref code, .. }) if code == "not-found")
        );
        // An earlier export at the same path is refused in words and left as it was.
        assert!(
            matches!(ours.export(&csv, ExportFormat::Csv, &[1]), Err(LogError::Rejected { ref code, .. }) if code == "exists")
        );
        assert_eq!(std::fs::read_to_string(&csv).unwrap(), text);
        // Another device's log of the same site: its entries are added once.
        let theirs_dir = base.join("theirs");
        let mut theirs = PersistentLog::new(&theirs_dir, "tablet-b");
        theirs.append(entry(2.5)).unwrap();
        theirs.append(entry(2.6)).unwrap();
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

    /// Both logs export only the chosen entries; the persistent one gathers two sites into
    /// one CSV with a single header row.
    #[test]
    fn export_writes_only_the_chosen_entries() {
        let base = std::env::temp_dir().join(format!("molefeed-plog-only-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&base);
        std::fs::create_dir_all(&base).unwrap();
        let mut persistent = PersistentLog::new(&base.join("logs"), "tablet-a");
        let mut memory = MemoryLog::default();
        for log in [&mut persistent as &mut dyn DoseLog, &mut memory] {
            for (site, dose) in [
                ("North plant", 1.1),
                ("South plant", 2.2),
                ("North plant", 3.3),
            ] {
                let mut e = entry(dose);
                e.site = site.into();
                log.append(e).unwrap();
            }
            log.void(3, "JM", "entered twice").unwrap();
        }
        for (name, log) in [
            ("persistent", &persistent as &dyn DoseLog),
            ("memory", &memory),
        ] {
            let path = base.join(format!("{name}.csv"));
            assert_eq!(
                log.export(&path, ExportFormat::Csv, &[2, 3]),
                Ok(2),
                "{name}"
            );
            let text = std::fs::read_to_string(&path).unwrap();
            let lines: Vec<Vec<&str>> = text.lines().map(|l| l.split(',').collect()).collect();
            assert!(
                lines[0][0] == "id" && lines[0][1] == "logged_at",
                "{name}: {text}"
            );
            let column = |title: &str| lines[0].iter().position(|c| *c == title).unwrap();
            let (dose, status) = (column("dose_mg_per_L"), column("status"));
            let mut rows: Vec<(&str, &str)> = lines[1..]
                .iter()
                .map(|cells| (cells[dose], cells[status]))
                .collect();
            // Grouped by site in the persistent log: compare as a set.
            rows.sort();
            assert_eq!(
                rows,
                [("2.2", "original"), ("3.3", "voided")],
                "{name}: one header, the chosen rows, the void marked: {text}"
            );
        }
        let _ = std::fs::remove_dir_all(&base);
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
