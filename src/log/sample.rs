//! Synthetic logs for the benchmarks and the memory measurement.
//!
//! Design choice: samples are written frame by frame straight into a writer, without one
//! sync per entry, because building a 100 000-entry log through `Log::append` would measure
//! the disk's sync latency 100 000 times instead of what the benchmark is about. The frames
//! and payloads are the real ones, so opening a sample exercises the real recovery scan.

use super::frame;
use super::record::{self, Entry, Record};
use chrono::{DateTime, Duration, FixedOffset};
use std::io::{self, Write};
use uuid::Uuid;

const TAPS: [&str; 6] = [
    "raw water intake",
    "flash mixer",
    "filter inlet",
    "clearwell inlet",
    "clearwell outlet",
    "distribution",
];
const CHEMICALS: [&str; 4] = [
    "sodium hypochlorite",
    "aluminium sulfate",
    "lime",
    "sodium fluoride",
];

/// Entry number `n` of a sample: realistic size, spread over taps, chemicals and a year.
pub fn sample_entry(n: usize) -> Record {
    let start: DateTime<FixedOffset> =
        DateTime::parse_from_rfc3339("2025-01-01T06:00:00+02:00").unwrap_or_default();
    let mut dose = record::example_dose();
    dose.tap = TAPS[n % TAPS.len()].into();
    dose.chemical = CHEMICALS[(n / 7) % CHEMICALS.len()].into();
    let setting = (n % 1000) as f64 / 10.0;
    if let Some(pump) = dose.results.iter_mut().find(|r| r.id == "pump_setting") {
        pump.value = setting;
    }
    if let Some(s) = dose.setting.as_mut() {
        s.percent = setting;
    }
    dose.note = format!("routine change {n}, checked at the dosing skid");
    Record::Entry(Entry {
        id: Uuid::now_v7(),
        device: "sample-tablet".into(),
        at: start + Duration::minutes(5 * n as i64),
        site: "Sample works".into(),
        dose,
    })
}

/// Writes a complete log file of `entries` sample entries to `out`.
pub fn write_sample(out: &mut dyn Write, entries: usize) -> io::Result<()> {
    out.write_all(&frame::header())?;
    let mut buf = Vec::new();
    for n in 0..entries {
        buf.clear();
        frame::encode(&record::encode(&sample_entry(n)), &mut buf)
            .map_err(|len| io::Error::other(format!("sample record of {len} bytes")))?;
        out.write_all(&buf)?;
    }
    out.flush()
}
