//! The seam between the UI and the dose log (built separately): a trait the screens use, and
//! an in-memory stand-in so the app works before the persistent log is connected.
//!
//! Design choice: the UI only ever talks to [`DoseLog`]. The in-memory [`MemoryLog`] reports
//! `persistent() == false`, which is what makes the Start screen show its "not saved" banner;
//! the real log store will report `true`. Export/import use JSON lines so the stand-in can
//! round-trip a file even before the real format lands.

use serde::{Deserialize, Serialize};
use std::path::Path;

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
    /// Operator initials (remembered in Settings).
    #[serde(default)]
    pub operator: String,
}

/// A stored entry: what was recorded plus its id and its change history.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Entry {
    pub id: u64,
    #[serde(flatten)]
    pub data: NewEntry,
    /// One line per change, oldest first (`created`, `edited note`, ...).
    pub history: Vec<String>,
}

#[derive(Clone, Debug, PartialEq)]
pub enum LogError {
    /// The store refused the entry (bad value, full disk, ...); `code` keys a translation.
    Rejected {
        code: String,
        message: String,
    },
    Io(String),
}

impl std::fmt::Display for LogError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            LogError::Rejected { message, .. } => f.write_str(message),
            LogError::Io(m) => f.write_str(m),
        }
    }
}

/// SEAM FOR THE LOG: what the screens need from the dose log.
pub trait DoseLog {
    /// Whether entries survive a restart. `false` shows the "not saved" banner.
    fn persistent(&self) -> bool;
    fn append(&mut self, entry: NewEntry) -> Result<u64, LogError>;
    /// All entries, oldest first.
    fn entries(&self) -> Vec<Entry>;
    fn export(&self, path: &Path) -> Result<usize, LogError>;
    fn import(&mut self, path: &Path) -> Result<usize, LogError>;
}

/// Entries kept in memory only, until the persistent log is connected.
#[derive(Default)]
pub struct MemoryLog {
    entries: Vec<Entry>,
}

impl DoseLog for MemoryLog {
    fn persistent(&self) -> bool {
        false
    }

    fn append(&mut self, entry: NewEntry) -> Result<u64, LogError> {
        if !entry.dose_mg_per_l.is_finite() || entry.dose_mg_per_l < 0.0 {
            return Err(LogError::Rejected {
                code: "bad-dose".into(),
                message: format!("dose {} is not a loggable value", entry.dose_mg_per_l),
            });
        }
        let id = self.entries.last().map_or(1, |e| e.id + 1);
        self.entries.push(Entry {
            id,
            data: entry,
            history: vec!["created".into()],
        });
        Ok(id)
    }

    fn entries(&self) -> Vec<Entry> {
        self.entries.clone()
    }

    fn export(&self, path: &Path) -> Result<usize, LogError> {
        let mut text = String::new();
        for e in &self.entries {
            text.push_str(&serde_json::to_string(e).map_err(|e| LogError::Io(e.to_string()))?);
            text.push('\n');
        }
        std::fs::write(path, text).map_err(|e| LogError::Io(e.to_string()))?;
        Ok(self.entries.len())
    }

    fn import(&mut self, path: &Path) -> Result<usize, LogError> {
        let text = std::fs::read_to_string(path).map_err(|e| LogError::Io(e.to_string()))?;
        let mut added = 0;
        for (n, line) in text
            .lines()
            .enumerate()
            .filter(|(_, l)| !l.trim().is_empty())
        {
            let entry: Entry = serde_json::from_str(line)
                .map_err(|e| LogError::Io(format!("line {}: {e}", n + 1)))?;
            let mut data = entry.data;
            data.note = if data.note.is_empty() {
                format!("imported #{}", entry.id)
            } else {
                data.note
            };
            self.append(data)?;
            added += 1;
        }
        Ok(added)
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
    cache: std::cell::RefCell<Option<Vec<Entry>>>,
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
        std::fs::create_dir_all(&self.dir).map_err(|e| LogError::Io(e.to_string()))?;
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
}

fn from_log_error(e: crate::log::Error) -> LogError {
    use crate::log::ErrorKind as K;
    let code = match e.kind() {
        K::StorageFull | K::ReadOnly | K::Io => "not-saved",
        K::Locked => "locked",
        K::InvalidEntry => "invalid-entry",
        _ => return LogError::Io(e.to_string()),
    };
    LogError::Rejected {
        code: code.into(),
        message: e.to_string(),
    }
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
        let id = log.append(draft).map_err(from_log_error)?;
        Ok(self.number(id))
    }

    fn entries(&self) -> Vec<Entry> {
        if let Some(cached) = self.cache.borrow().as_ref() {
            return cached.clone();
        }
        let mut out = Vec::new();
        for (_, log) in &self.logs {
            let Ok(views) = log.current() else { continue };
            for view in views {
                // Built from the view (one read per entry), not from a history lookup per
                // entry, which made opening a 10 000-entry log take most of a second.
                let mut history = vec![format!("{} logged", view.at.to_rfc3339())];
                if let Some(change) = &view.last_change {
                    history.push(
                        format!(
                            "{} {:?} ({} revision(s)): {}",
                            change.at.to_rfc3339(),
                            change.kind,
                            view.revisions,
                            change.reason
                        )
                        .to_lowercase(),
                    );
                }
                let dose = &view.dose;
                out.push(Entry {
                    id: self.number(view.id),
                    data: NewEntry {
                        when: view
                            .at
                            .with_timezone(&chrono::Utc)
                            .format("%Y-%m-%dT%H:%M:%SZ")
                            .to_string(),
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
                    history,
                });
            }
        }
        out.sort_by(|a, b| a.data.when.cmp(&b.data.when));
        self.cache.replace(Some(out.clone()));
        out
    }

    /// CSV (or JSON Lines for a `.jsonl` path) of every current entry of the open sites.
    fn export(&self, path: &Path) -> Result<usize, LogError> {
        let mut file = std::fs::File::create(path).map_err(|e| LogError::Io(e.to_string()))?;
        let jsonl = path.extension().is_some_and(|x| x == "jsonl");
        let mut count = 0;
        for (_, log) in &self.logs {
            let query = crate::log::Query::default();
            count += if jsonl {
                crate::log::export::jsonl(log, &query, &mut file)
            } else {
                crate::log::export::csv(log, &query, &mut file)
            }
            .map_err(from_log_error)?;
        }
        Ok(count)
    }

    /// Merges another device's log file into the first open site log.
    fn import(&mut self, path: &Path) -> Result<usize, LogError> {
        let log = self
            .logs
            .first_mut()
            .map(|(_, log)| log)
            .ok_or_else(|| LogError::Io("no site log is open yet".into()))?;
        let report = log.merge_from(path).map_err(from_log_error)?;
        self.cache.replace(None);
        Ok(report.added)
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
    fn export_then_import_round_trips() {
        let dir = std::env::temp_dir().join(format!("molefeed-log-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let path = dir.join("export.jsonl");
        let mut log = MemoryLog::default();
        log.append(entry(1.25)).unwrap();
        log.append(entry(3.5)).unwrap();
        assert_eq!(log.export(&path), Ok(2));
        let mut other = MemoryLog::default();
        assert_eq!(other.import(&path), Ok(2));
        let doses: Vec<f64> = other
            .entries()
            .iter()
            .map(|e| e.data.dose_mg_per_l)
            .collect();
        assert_eq!(doses, vec![1.25, 3.5]);
        assert_eq!(other.entries()[0].data.note, "imported #1");
        std::fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn iso_dates() {
        assert_eq!(iso_from_unix(0), "1970-01-01T00:00:00Z");
        assert_eq!(iso_from_unix(951_782_400), "2000-02-29T00:00:00Z");
        assert_eq!(iso_from_unix(1_798_765_323), "2027-01-01T01:02:03Z");
        assert!(now_utc_iso().ends_with('Z'));
    }
}
