//! Peak memory of the dose log with 100 000 entries: builds a sample log in a child process
//! (so building does not count), then opens and indexes it, exports it as CSV, and prints the
//! process's peak resident memory (VmHWM from /proc/self/status; Linux and Android only).
//!
//! Run with `cargo run --release --no-default-features --example log_memory`.

use molefeed::engine::dosing::units::UnitSystem;
use molefeed::log::{Log, Query, export, sample};
use std::path::Path;

const ENTRIES: usize = 100_000;

fn status_kib(field: &str) -> Option<u64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = status.lines().find(|l| l.starts_with(field))?;
    line.split_whitespace().nth(1)?.parse().ok()
}

/// CPU time used by this process so far (user + system), from /proc/self/stat: on a shared
/// machine wall-clock time includes waiting for a core, CPU time does not.
fn cpu_time() -> std::time::Duration {
    let stat = std::fs::read_to_string("/proc/self/stat").unwrap_or_default();
    // Fields after the parenthesised command name; utime and stime are the 12th and 13th.
    let after = stat.rsplit(')').next().unwrap_or("");
    let fields: Vec<u64> = after
        .split_whitespace()
        .map(|f| f.parse().unwrap_or(0))
        .collect();
    let ticks = fields.get(11).unwrap_or(&0) + fields.get(12).unwrap_or(&0);
    std::time::Duration::from_millis(ticks * 10)
}

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let args: Vec<String> = std::env::args().collect();
    if let [_, command, path] = args.as_slice()
        && command == "build"
    {
        let file = std::fs::File::create(path)?;
        sample::write_sample(&mut std::io::BufWriter::new(file), ENTRIES)?;
        return Ok(());
    }
    let dir = std::env::temp_dir().join(format!("molefeed-log-memory-{}", std::process::id()));
    std::fs::create_dir_all(&dir)?;
    let path = dir.join("memory.doselog");
    let built = std::process::Command::new(std::env::current_exe()?)
        .args(["build", path.to_str().ok_or("path is not UTF-8")?])
        .status()?;
    if !built.success() {
        return Err("building the sample log failed".into());
    }
    let file_mib = std::fs::metadata(&path)?.len() as f64 / (1 << 20) as f64;
    let before = status_kib("VmHWM:").unwrap_or(0);
    let (started, cpu) = (std::time::Instant::now(), cpu_time());
    let log = Log::open(Path::new(&path), "memory")?;
    let (opened_in, open_cpu) = (started.elapsed(), cpu_time() - cpu);
    let after_open = status_kib("VmHWM:").unwrap_or(0);
    let (started, cpu) = (std::time::Instant::now(), cpu_time());
    let rows = export::csv(
        &log,
        &Query::default(),
        UnitSystem::Si,
        &mut std::io::sink(),
    )?;
    let (exported_in, export_cpu) = (started.elapsed(), cpu_time() - cpu);
    let after_export = status_kib("VmHWM:").unwrap_or(0);
    println!(
        "open + index: {opened_in:.2?} wall, {open_cpu:.2?} CPU; CSV export: {exported_in:.2?} wall, {export_cpu:.2?} CPU (one run; 10 ms CPU resolution)"
    );
    println!(
        "entries: {} (file {file_mib:.1} MiB, {rows} rows exported)",
        log.record_count()
    );
    println!(
        "peak RSS before opening:        {:.1} MiB",
        before as f64 / 1024.0
    );
    println!(
        "peak RSS after open + index:    {:.1} MiB",
        after_open as f64 / 1024.0
    );
    println!(
        "peak RSS after CSV export:      {:.1} MiB",
        after_export as f64 / 1024.0
    );
    drop(log);
    std::fs::remove_dir_all(&dir)?;
    if after_export > 100 * 1024 {
        return Err("peak memory above 100 MiB".into());
    }
    Ok(())
}
