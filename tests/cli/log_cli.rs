//! The `molefeed log` commands' output: CSV cells a spreadsheet would run are defused and
//! read back exactly, human listings cannot be forged by the operator's text, `list --json`
//! streams in bounded memory, and paths the log must not use are refused.

use crate::support::{BIN, peak_kib, remove, run_with_input, sample_log, scratch, text};
use molefeed::log::{Draft, Log, export};
use std::io::Read;
use std::path::Path;
use std::process::{Command, Stdio};
use std::time::Duration;

const LIMIT: Duration = Duration::from_secs(60);

fn entry_with(tap: &str, note: &str, at: &str) -> Draft {
    let mut dose = molefeed::log::record::example_dose();
    dose.tap = tap.into();
    dose.note = note.into();
    Draft::Entry {
        at: Some(chrono::DateTime::parse_from_rfc3339(at).unwrap()),
        site: "Hillside works".into(),
        dose,
    }
}

/// Text cells that a spreadsheet would run, or that hide what follows them: each must come
/// out of the CSV with a leading mark and come back exactly through the export reader.
const HOSTILE: [&str; 13] = [
    "=1+1",
    "+1",
    "-1",
    "@SUM(A1)",
    "\t=1+1",
    "\r=1+1",
    "\n=1+1",
    "\0=1+1",
    "\u{ff1d}1+1",
    "\u{ff0b}1",
    "\u{ff0d}1",
    "\u{ff20}SUM(A1)",
    "'=1+1 already marked",
];

#[test]
fn csv_defuses_every_formula_start_and_reads_back_exactly() {
    let dir = scratch("csv-defuse");
    let path = dir.join("site.doselog");
    let mut log = Log::open(&path, "tab-1").unwrap();
    for (n, text) in HOSTILE.iter().enumerate() {
        let at = format!("2026-05-{:02}T08:00:00+00:00", n + 1);
        log.append(entry_with(&format!("tap {n}"), text, &at))
            .unwrap();
    }
    log.append(entry_with(
        HOSTILE[0],
        "tap too",
        "2026-05-30T08:00:00+00:00",
    ))
    .unwrap();
    drop(log);
    let out = run_with_input(
        &[
            "log",
            "export",
            "--file",
            path.to_str().unwrap(),
            "--format",
            "csv",
        ],
        b"",
        LIMIT,
    );
    assert!(out.status.success(), "{}", text(&out.stderr));
    let mut reader = csv::Reader::from_reader(out.stdout.as_slice());
    let columns = export::csv_columns(molefeed::engine::quantity::UnitSystem::Si);
    let note = columns.iter().position(|c| *c == "note").unwrap();
    let tap = columns.iter().position(|c| *c == "tap").unwrap();
    let rows: Vec<csv::StringRecord> = reader.records().map(Result::unwrap).collect();
    assert_eq!(rows.len(), HOSTILE.len() + 1);
    for (row, logged) in rows.iter().zip(HOSTILE) {
        let cell = &row[note];
        assert!(cell.starts_with('\''), "{logged:?} written as {cell:?}");
        assert_eq!(export::csv_cell_text(cell), logged);
    }
    let tap_cell = &rows[HOSTILE.len()][tap];
    assert_eq!(tap_cell, "'=1+1");
    assert_eq!(export::csv_cell_text(tap_cell), "=1+1");
    // Plain text is left alone and reads back as itself.
    assert_eq!(&rows[0][tap], "tap 0");
    assert_eq!(export::csv_cell_text(&rows[0][tap]), "tap 0");
    remove(&dir);
}

#[test]
fn human_listings_show_control_characters_instead_of_obeying_them() {
    let dir = scratch("escape");
    let path = dir.join("site.doselog");
    let mut log = Log::open(&path, "tab-1").unwrap();
    let forged = "T1\n2026-01-01 00:00 +00:00  XX  forged line";
    let first = log
        .append(entry_with(forged, "n", "2026-05-01T08:00:00+00:00"))
        .unwrap();
    log.append(entry_with(
        "\u{1b}[2J\u{1b}]0;owned\u{7}",
        "n",
        "2026-05-02T08:00:00+00:00",
    ))
    .unwrap();
    log.append(Draft::Void {
        at: None,
        operator: "JM".into(),
        voids: first,
        reason: "typed\r\nin error \u{9b}31m".into(),
    })
    .unwrap();
    drop(log);
    let file = path.to_str().unwrap();
    let list = run_with_input(
        &["log", "list", "--file", file, "--include-voided"],
        b"",
        LIMIT,
    );
    assert!(list.status.success(), "{}", text(&list.stderr));
    let history = run_with_input(
        &["log", "history", "--file", file, "--id", &first.to_string()],
        b"",
        LIMIT,
    );
    assert!(history.status.success(), "{}", text(&history.stderr));
    for (what, out, lines) in [("list", &list, 3), ("history", &history, 2)] {
        let shown = text(&out.stdout);
        assert_eq!(shown.lines().count(), lines, "{what}: {shown}");
        assert!(
            !shown.chars().any(|c| c.is_control() && c != '\n'),
            "{what}: {shown:?}"
        );
    }
    let shown = text(&list.stdout);
    // Each dose and setting as the operator saw them (the example's 1.80 mg/L as Cl2 at
    // 42.5 %), not at full precision.
    assert!(
        shown.contains("  1.80 mg/L as Cl2  metering-pump 42.5 %  "),
        "{shown}"
    );
    assert!(shown.contains("T1\\n2026-01-01"), "{shown}");
    assert!(shown.contains("\\u{1b}[2J"), "{shown}");
    assert!(text(&history.stdout).contains("typed\\r\\nin error \\u{9b}31m"));
    remove(&dir);
}

/// `log list --json` on 20 000 entries, paused after its first bytes: a listing that
/// streams has read a few entries and holds a few megabytes; one built whole before printing
/// holds every entry (the old code peaked at about 12 KB an entry).
#[test]
fn list_json_streams_in_memory_independent_of_the_log_size() {
    let dir = scratch("list-stream");
    let path = sample_log(&dir, 20_000);
    let mut child = Command::new(BIN)
        .args(["log", "list", "--json", "--file", path.to_str().unwrap()])
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let mut stdout = child.stdout.take().unwrap();
    let mut start = [0u8; 12];
    stdout.read_exact(&mut start).unwrap();
    assert_eq!(&start, b"{\"entries\":[");
    // With the pipe left unread the child blocks once it is full; give it time to get there.
    std::thread::sleep(Duration::from_millis(500));
    let paused_mib = peak_kib(child.id()) / 1024;
    let mut rest = Vec::new();
    stdout.read_to_end(&mut rest).unwrap();
    assert!(child.wait().unwrap().success());
    let mut whole = start.to_vec();
    whole.extend_from_slice(&rest);
    let listed: serde_json::Value = serde_json::from_slice(&whole).unwrap();
    assert_eq!(listed["entries"].as_array().unwrap().len(), 20_000);
    assert_eq!(listed["recovery"]["clean"], true);
    assert!(
        paused_mib < 40,
        "peak {paused_mib} MiB before the listing was read"
    );
    remove(&dir);
}

#[test]
fn append_does_not_create_missing_directories() {
    let dir = scratch("no-mkdir");
    let target = dir.join("a/b/c.doselog");
    let template = run_with_input(&["log", "template"], b"", LIMIT);
    let out = run_with_input(
        &[
            "log",
            "append",
            "--file",
            target.to_str().unwrap(),
            "--device",
            "t",
        ],
        &template.stdout,
        LIMIT,
    );
    assert_eq!(out.status.code(), Some(1), "{}", text(&out.stdout));
    assert!(
        text(&out.stderr).contains("no directory"),
        "{}",
        text(&out.stderr)
    );
    assert!(!dir.join("a").exists(), "a directory was created");
    remove(&dir);
}

fn fifo(dir: &Path) -> std::path::PathBuf {
    let path = dir.join("pipe");
    let made = Command::new("mkfifo").arg(&path).status().unwrap();
    assert!(made.success());
    path
}

#[test]
fn a_fifo_given_as_a_file_is_refused_without_blocking() {
    let dir = scratch("fifo");
    let pipe = fifo(&dir);
    let pipe = pipe.to_str().unwrap();
    let log = sample_log(&dir, 3);
    let limit = Duration::from_secs(20);
    let cases: [Vec<&str>; 4] = [
        vec![
            "feed",
            "--flow",
            "2",
            "--flow-unit",
            "mgd",
            "--dose",
            "2",
            "--product",
            "sodium-hypochlorite",
            "--site",
            pipe,
        ],
        vec!["log", "list", "--file", pipe],
        vec!["log", "append", "--file", pipe, "--device", "t"],
        vec![
            "log",
            "merge",
            "--file",
            log.to_str().unwrap(),
            "--from",
            pipe,
        ],
    ];
    for args in cases {
        let out = run_with_input(&args, b"", limit);
        let stderr = text(&out.stderr);
        assert_eq!(out.status.code(), Some(1), "{args:?}: {stderr}");
        assert!(stderr.contains("not a regular file"), "{args:?}: {stderr}");
    }
    remove(&dir);
}

#[test]
fn soak_refuses_a_note_size_no_record_can_hold() {
    let dir = scratch("soak-size");
    let log = dir.join("soak.doselog");
    for size in ["1e30", "2000000"] {
        let out = run_with_input(
            &[
                "log",
                "soak",
                "--file",
                log.to_str().unwrap(),
                "--count",
                "1",
                "--note-bytes",
                size,
            ],
            b"",
            LIMIT,
        );
        let stderr = text(&out.stderr);
        assert!(!stderr.contains("panicked"), "{size}: {stderr}");
        assert!(matches!(out.status.code(), Some(1 | 2)), "{size}: {stderr}");
        assert!(stderr.contains("--note-bytes"), "{size}: {stderr}");
    }
    remove(&dir);
}

/// An entry whose stored dose no plant can have is refused when appended; one already in a
/// file (crafted, or written before the log refused such numbers) stops the listing with an
/// error naming it; the part already streamed is cut off by a line end, so the error object
/// is a line of its own that a script can read.
#[test]
fn a_listing_stopped_by_an_impossible_number_ends_with_a_readable_error() {
    let dir = scratch("list-guard");
    let path = dir.join("site.doselog");
    let mut dose = molefeed::log::record::example_dose();
    dose.results
        .iter_mut()
        .find(|r| r.id == "dose")
        .expect("the example has a dose")
        .value = 1e300;
    let at = |t: &str| chrono::DateTime::parse_from_rfc3339(t).unwrap();
    let mut log = Log::open(&path, "tab-1").unwrap();
    let refused = log
        .append(Draft::Entry {
            at: Some(at("2026-05-02T08:00:00+00:00")),
            site: "Hillside works".into(),
            dose: dose.clone(),
        })
        .unwrap_err();
    assert_eq!(refused.kind(), molefeed::log::ErrorKind::InvalidEntry);
    drop(log);
    // The same record framed into a file as a device would have written it.
    let fine = molefeed::log::Record::Entry(molefeed::log::Entry {
        id: uuid::Uuid::now_v7(),
        device: "tab-1".into(),
        at: at("2026-05-01T08:00:00+00:00"),
        site: "Hillside works".into(),
        dose: molefeed::log::record::example_dose(),
    });
    let impossible = uuid::Uuid::now_v7();
    let crafted = molefeed::log::Record::Entry(molefeed::log::Entry {
        id: impossible,
        device: "tab-1".into(),
        at: at("2026-05-02T08:00:00+00:00"),
        site: "Hillside works".into(),
        dose,
    });
    let mut bytes = molefeed::log::frame::header().to_vec();
    for r in [&fine, &crafted] {
        molefeed::log::frame::encode(&molefeed::log::record::encode(r), &mut bytes).unwrap();
    }
    std::fs::write(&path, &bytes).unwrap();
    let out = run_with_input(
        &["log", "list", "--json", "--file", path.to_str().unwrap()],
        b"",
        LIMIT,
    );
    assert_eq!(out.status.code(), Some(1), "{}", text(&out.stderr));
    let stdout = text(&out.stdout);
    let last = stdout.lines().last().unwrap();
    let error: serde_json::Value =
        serde_json::from_str(last).unwrap_or_else(|e| panic!("{e}: {last}"));
    assert_eq!(error["error"]["kind"], "result-not-a-number", "{last}");
    let message = error["error"]["message"].as_str().unwrap();
    assert!(message.contains(&impossible.to_string()), "{message}");
    assert!(message.contains("1e300"), "{message}");
    // The entry itself never reached the listing; only the error names it.
    let listing = &stdout[..stdout.len() - last.len() - 1];
    assert!(!listing.contains(&impossible.to_string()), "{listing}");
    remove(&dir);
}
