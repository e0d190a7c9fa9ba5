//! What the reliability tests share: running the real binary with given stdin and stdout,
//! scratch directories, and waiting for a child with a deadline instead of hanging the suite.

use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Output, Stdio};
use std::time::{Duration, Instant};

pub const BIN: &str = env!("CARGO_BIN_EXE_molefeed");

/// A fresh directory for one test under Cargo's scratch space; removed by [`remove`] when
/// the test passed, kept for inspection when it failed.
pub fn scratch(name: &str) -> PathBuf {
    let dir =
        Path::new(env!("CARGO_TARGET_TMPDIR")).join(format!("cli-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

pub fn remove(dir: &Path) {
    std::fs::remove_dir_all(dir).unwrap();
}

/// Runs the binary with `stdin` as its input, collecting stdout and stderr, and fails the
/// test if it has not finished within `limit` (a hang is a failure, not a stuck suite).
pub fn run_with_input(args: &[&str], stdin: &[u8], limit: Duration) -> Output {
    run_fed(args, stdin, Stdio::piped(), limit)
}

/// Runs the binary with stdout going to `/dev/full`, where every write fails with ENOSPC.
pub fn run_into_full_device(args: &[&str], stdin: &[u8]) -> Output {
    let full = std::fs::OpenOptions::new()
        .write(true)
        .open("/dev/full")
        .expect("/dev/full exists on Linux");
    run_fed(args, stdin, Stdio::from(full), Duration::from_secs(60))
}

/// Runs the binary fed `stdin`, its stdout going to `stdout`, within `limit`.
fn run_fed(args: &[&str], stdin: &[u8], stdout: Stdio, limit: Duration) -> Output {
    let mut child = Command::new(BIN)
        .args(args)
        .stdin(Stdio::piped())
        .stdout(stdout)
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let mut input = child.stdin.take().unwrap();
    let stdin = stdin.to_vec();
    // Written from a thread so a child that answers before it has read everything cannot
    // deadlock against us; a child that exits early makes this a broken pipe, which is fine.
    let feeder = std::thread::spawn(move || {
        let _ = input.write_all(&stdin);
    });
    let output = wait_within(child, limit);
    feeder.join().unwrap();
    output
}

/// Waits for `child`, reading its output meanwhile (so a full pipe cannot stall it),
/// killing it and failing the test after `limit`.
pub fn wait_within(mut child: Child, limit: Duration) -> Output {
    let drain = |pipe: Option<Box<dyn std::io::Read + Send>>| {
        std::thread::spawn(move || {
            let mut bytes = Vec::new();
            if let Some(mut pipe) = pipe {
                pipe.read_to_end(&mut bytes).unwrap();
            }
            bytes
        })
    };
    let stdout = drain(child.stdout.take().map(|p| Box::new(p) as _));
    let stderr = drain(child.stderr.take().map(|p| Box::new(p) as _));
    let started = Instant::now();
    let status = loop {
        if let Some(status) = child.try_wait().unwrap() {
            break status;
        }
        if started.elapsed() > limit {
            child.kill().unwrap();
            child.wait().unwrap();
            panic!(
                "molefeed did not finish within {limit:?}; stderr: {}",
                text(&stderr.join().unwrap())
            );
        }
        std::thread::sleep(Duration::from_millis(20));
    };
    Output {
        status,
        stdout: stdout.join().unwrap(),
        stderr: stderr.join().unwrap(),
    }
}

pub fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

/// A log file of `entries` realistic entries, written frame by frame (no sync per entry).
pub fn sample_log(dir: &Path, entries: usize) -> PathBuf {
    let path = dir.join("sample.doselog");
    let file = std::fs::File::create(&path).unwrap();
    molefeed::log::sample::write_sample(&mut std::io::BufWriter::new(file), entries).unwrap();
    path
}

/// The peak resident memory of a running process in KiB (VmHWM, Linux).
pub fn peak_kib(pid: u32) -> u64 {
    let status = std::fs::read_to_string(format!("/proc/{pid}/status")).unwrap();
    let line = status.lines().find(|l| l.starts_with("VmHWM:")).unwrap();
    line.split_whitespace().nth(1).unwrap().parse().unwrap()
}
