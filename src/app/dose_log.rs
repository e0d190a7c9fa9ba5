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

/// SEAM FOR THE LOG: the store the app uses. Until the persistent log from the `log` branch is
/// connected here, entries live in memory and the Start screen says they are not saved.
pub fn connected_log(_data_dir: Option<&Path>) -> Box<dyn DoseLog> {
    Box::new(MemoryLog::default())
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
