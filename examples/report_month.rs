//! Time and peak memory to report a month of 10 000 log entries: writes the demo plant's
//! invented November padded with dose entries to about 10 000 records in a child process (so
//! writing does not count), then opens the log read-only, computes the month's report and
//! writes its JSON, CSV and PDF, and prints the wall time and the peak resident memory
//! (VmHWM from /proc/self/status; Linux and Android only).
//!
//! Run with `cargo run --release --no-default-features --example report_month`.

use molefeed::engine::dosing::catalog::Catalog;
use molefeed::engine::dosing::site::SiteProfile;
use molefeed::log::{Log, report};
use std::time::Instant;

/// Dose entries per day beyond the first: 30 days × 330 doses + the readings ≈ 10 000.
const EXTRA_DOSES_PER_DAY: u32 = 329;

fn peak_kib() -> u64 {
    std::fs::read_to_string("/proc/self/status")
        .unwrap_or_default()
        .lines()
        .find_map(|l| l.strip_prefix("VmHWM:"))
        .and_then(|v| v.trim().trim_end_matches("kB").trim().parse().ok())
        .unwrap_or(0)
}

fn main() {
    let catalog = Catalog::builtin().expect("catalog");
    let site = SiteProfile::demo(&catalog).expect("demo site");
    let args: Vec<String> = std::env::args().collect();
    if let [_, flag, path] = args.as_slice()
        && flag == "--write"
    {
        molefeed::log::november::write(std::path::Path::new(path), &site.name, EXTRA_DOSES_PER_DAY)
            .expect("write the month");
        return;
    }
    let dir = std::env::temp_dir().join(format!("molefeed-report-month-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("scratch directory");
    let path = dir.join("november.doselog");
    let status = std::process::Command::new(std::env::current_exe().expect("exe"))
        .arg("--write")
        .arg(&path)
        .status()
        .expect("child runs");
    assert!(status.success(), "writing the month failed");
    let started = Instant::now();
    let log = Log::open_read_only(&path).expect("open");
    let records = log.record_count();
    let from = chrono::NaiveDate::from_ymd_opt(2026, 11, 1).expect("date");
    let to = chrono::NaiveDate::from_ymd_opt(2026, 11, 30).expect("date");
    let r = report::report_from_log(&log, &site, &catalog, from, to).expect("report");
    let computed = started.elapsed();
    for (format, name) in [
        (report::Format::Json, "november.json"),
        (report::Format::Csv, "november.csv"),
        (report::Format::Pdf, "november.pdf"),
    ] {
        report::write_report(&r, format, &dir.join(name)).expect("write");
    }
    let total = started.elapsed();
    println!(
        "{records} records: report computed in {:.0} ms, with JSON, CSV and PDF written {:.0} ms; peak memory {:.1} MiB (VmHWM)",
        computed.as_secs_f64() * 1000.0,
        total.as_secs_f64() * 1000.0,
        peak_kib() as f64 / 1024.0
    );
    let _ = std::fs::remove_dir_all(&dir);
}
