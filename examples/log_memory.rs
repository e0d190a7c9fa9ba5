//! Peak memory of the dose log with 100 000 entries: builds a sample log in a child process
//! (so building does not count), then opens and indexes it, exports it as CSV, and prints the
//! process's peak resident memory (VmHWM from /proc/self/status; Linux and Android only).
//!
//! Run with `cargo run --release --no-default-features --example log_memory`.

use molefeed::log::{Log, Query, export, sample};
use std::path::Path;

const ENTRIES: usize = 100_000;

fn status_kib(field: &str) -> Option<u64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = status.lines().find(|l| l.starts_with(field))?;
    line.split_whitespace().nth(1)?.parse().ok()
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
    let log = Log::open(Path::new(&path), "memory")?;
    let after_open = status_kib("VmHWM:").unwrap_or(0);
    let rows = export::csv(&log, &Query::default(), &mut std::io::sink())?;
    let after_export = status_kib("VmHWM:").unwrap_or(0);
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
