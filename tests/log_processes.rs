//! The dose log across real processes: SIGKILL at random moments, a second process against
//! the lock, and the `molefeed log` commands end to end (template, append, list, export,
//! merge), with the CSV export read back by an independent CSV parser.

use molefeed::engine::dosing::units::UnitSystem;
use molefeed::log::{self, Draft, Log, Query, Status, export};
use std::collections::HashSet;
use std::io::{BufRead, BufReader, Write};
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::time::{Duration, Instant};

const BIN: &str = env!("CARGO_BIN_EXE_molefeed");

/// A directory for one test; removed by [`remove`] when the test passed, kept for
/// inspection when it failed.
fn fresh_dir(name: &str) -> PathBuf {
    let dir =
        Path::new(env!("CARGO_TARGET_TMPDIR")).join(format!("log-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

fn remove(dir: &Path) {
    let _ = std::fs::remove_dir_all(dir);
}

fn molefeed(args: &[&str], stdin: &str) -> Output {
    let mut child = Command::new(BIN)
        .args(args)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    // A command that fails early (a lock error) exits without reading its input: the broken
    // pipe is expected then, and the exit status and output below still decide the test.
    let written = child.stdin.take().unwrap().write_all(stdin.as_bytes());
    if let Err(e) = written {
        assert_eq!(e.kind(), std::io::ErrorKind::BrokenPipe, "{e}");
    }
    child.wait_with_output().unwrap()
}

fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

/// xorshift64*: enough randomness for kill timing, reproducible from the printed seed.
struct Timing(u64);

impl Timing {
    fn next_ms(&mut self, below: u64) -> u64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        self.0.wrapping_mul(0x2545_F491_4F6C_DD1D) % below
    }
}

#[test]
fn sigkill_at_random_moments_never_loses_an_acknowledged_entry() {
    let dir = fresh_dir("crash");
    let path = dir.join("site.doselog");
    let seed = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .unwrap()
        .as_nanos() as u64
        | 1;
    println!("kill timing seed {seed}");
    let mut timing = Timing(seed);
    let mut acknowledged: Vec<uuid::Uuid> = Vec::new();
    let started = Instant::now();
    let rounds = 200;
    let mut torn_tails = 0;
    for round in 0..rounds {
        // Every fourth child writes ~300 KB records, so some kills land inside a write.
        let note_bytes = if round % 4 == 3 { "300000" } else { "0" };
        let mut child = Command::new(BIN)
            .args([
                "log",
                "soak",
                "--file",
                path.to_str().unwrap(),
                "--device",
                "crash",
                "--note-bytes",
                note_bytes,
            ])
            .stdout(Stdio::piped())
            .stderr(Stdio::null())
            .spawn()
            .unwrap();
        let stdout = child.stdout.take().unwrap();
        let reader = std::thread::spawn(move || {
            BufReader::new(stdout)
                .lines()
                .map_while(Result::ok)
                .collect::<Vec<String>>()
        });
        std::thread::sleep(Duration::from_millis(1 + timing.next_ms(50)));
        child.kill().unwrap(); // SIGKILL on Unix
        child.wait().unwrap();
        let printed = reader.join().unwrap();
        let new_ids: Vec<uuid::Uuid> = printed
            .iter()
            .filter(|l| !l.is_empty())
            .map(|l| {
                l.parse()
                    .unwrap_or_else(|_| panic!("round {round}: bad id line {l:?}"))
            })
            .collect();

        let log = Log::open(&path, "checker")
            .unwrap_or_else(|e| panic!("round {round} (seed {seed}): reopen failed: {e}"));
        let recovery = log.recovery();
        assert!(
            recovery.damaged.is_empty() && recovery.unreadable.is_empty(),
            "round {round} (seed {seed}): {:?}",
            recovery.messages()
        );
        torn_tails += recovery.torn_tail.is_some() as usize;
        for id in &new_ids {
            match log.get(*id) {
                Ok(Some(log::Record::Entry(e))) => {
                    assert_eq!(e.site, "soak");
                    assert!(e.dose.note.starts_with("soak "), "{}", e.dose.note);
                }
                other => panic!("round {round} (seed {seed}): acknowledged {id} is {other:?}"),
            }
        }
        acknowledged.extend(new_ids);
        assert!(log.record_count() >= acknowledged.len());
    }
    let log = Log::open(&path, "checker").unwrap();
    assert!(log.recovery().is_clean(), "{:?}", log.recovery().messages());
    let present: HashSet<uuid::Uuid> = log.current().unwrap().iter().map(|v| v.id).collect();
    let missing: Vec<_> = acknowledged
        .iter()
        .filter(|id| !present.contains(id))
        .collect();
    assert!(missing.is_empty(), "seed {seed}: lost {missing:?}");
    assert!(
        acknowledged.len() > rounds,
        "the children acknowledged too few entries ({}) for the test to mean anything",
        acknowledged.len()
    );
    println!(
        "{rounds} kills, {} acknowledged entries, {} records, {torn_tails} torn tails cut, {:?}",
        acknowledged.len(),
        log.record_count(),
        started.elapsed()
    );
    remove(&dir);
}

#[test]
fn a_second_process_gets_the_lock_error() {
    let dir = fresh_dir("lock");
    let path = dir.join("site.doselog");
    let file = path.to_str().unwrap();
    let mut holder = Command::new(BIN)
        .args(["log", "soak", "--file", file, "--device", "first"])
        .stdout(Stdio::piped())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    let mut first_line = String::new();
    BufReader::new(holder.stdout.as_mut().unwrap())
        .read_line(&mut first_line)
        .unwrap();
    assert!(!first_line.trim().is_empty(), "the first process appended");

    let template = molefeed(&["log", "template"], "");
    let second = molefeed(
        &[
            "log", "append", "--file", file, "--device", "second", "--json",
        ],
        &text(&template.stdout),
    );
    holder.kill().unwrap();
    holder.wait().unwrap();
    assert_eq!(second.status.code(), Some(1));
    assert!(
        text(&second.stderr).contains("open in another copy of the app"),
        "{}",
        text(&second.stderr)
    );
    let reply: serde_json::Value = serde_json::from_slice(&second.stdout).unwrap();
    assert_eq!(reply["error"]["kind"], "locked");
    remove(&dir);
}

#[test]
fn template_append_list_round_trip() {
    let dir = fresh_dir("append");
    let path = dir.join("site.doselog");
    let file = path.to_str().unwrap();
    let template = molefeed(&["log", "template"], "");
    assert!(template.status.success());
    let appended = molefeed(&["log", "append", "--file", file], &text(&template.stdout));
    assert!(appended.status.success(), "{}", text(&appended.stderr));
    let id = text(&appended.stdout).trim().to_string();
    let id: uuid::Uuid = id.parse().unwrap();
    assert_eq!(id.get_version_num(), 7);

    let bad = molefeed(&["log", "append", "--file", file], "{\"type\":\"entry\"}");
    assert_eq!(bad.status.code(), Some(1));
    assert!(
        text(&bad.stderr).contains("not valid"),
        "{}",
        text(&bad.stderr)
    );

    let listed = molefeed(&["log", "list", "--file", file, "--json"], "");
    assert!(listed.status.success(), "{}", text(&listed.stderr));
    let reply: serde_json::Value = serde_json::from_slice(&listed.stdout).unwrap();
    let entries = reply["entries"].as_array().unwrap();
    assert_eq!(entries.len(), 1);
    assert_eq!(entries[0]["id"], id.to_string());
    assert_eq!(entries[0]["dose"]["setting"]["percent"], 42.5);
    assert_eq!(reply["recovery"]["clean"], true);

    // Writers write version 2 only: a correction in the old four-number shape is refused.
    let old_shape = serde_json::json!({
        "type": "correction",
        "corrects": id,
        "reason": "pump was set to 40 %",
        "dose": {
            "operator": "AB", "tap": "Clearwell inlet", "chemical": "sodium hypochlorite",
            "product": "NaOCl 12.5 % (w/w)", "flow_m3_per_h": 420.0, "dose_mg_per_l": 1.8,
            "feed_rate_l_per_h": 5.04, "pump_setting_percent": 40.0
        }
    });
    let refused = molefeed(&["log", "append", "--file", file], &old_shape.to_string());
    assert_eq!(refused.status.code(), Some(1), "{}", text(&refused.stdout));
    // A correction is a whole recomputed result: every number of the new setting together.
    let mut fixed = log::record::example_dose();
    fixed.operator = "AB".into();
    for r in &mut fixed.results {
        if r.id == "pump_setting" {
            (r.value, r.shown) = (40.0, "40.0".into());
        }
    }
    fixed.setting.as_mut().unwrap().percent = 40.0;
    let correction = serde_json::json!({
        "type": "correction",
        "corrects": id,
        "reason": "pump was set to 40 %",
        "dose": fixed,
    });
    let corrected = molefeed(&["log", "append", "--file", file], &correction.to_string());
    assert!(corrected.status.success(), "{}", text(&corrected.stderr));
    let listed = molefeed(&["log", "list", "--file", file, "--json"], "");
    let reply: serde_json::Value = serde_json::from_slice(&listed.stdout).unwrap();
    assert_eq!(reply["entries"][0]["status"], "corrected");
    assert_eq!(reply["entries"][0]["dose"]["setting"]["percent"], 40.0);
    assert_eq!(
        reply["entries"][0]["dose"],
        serde_json::to_value(&fixed).unwrap(),
        "the whole corrected result is current"
    );
    let history = molefeed(
        &[
            "log",
            "history",
            "--file",
            file,
            "--id",
            &id.to_string(),
            "--json",
        ],
        "",
    );
    let reply: serde_json::Value = serde_json::from_slice(&history.stdout).unwrap();
    let records = reply["history"].as_array().unwrap();
    assert_eq!(records.len(), 2);
    assert_eq!(records[0]["type"], "entry");
    assert_eq!(
        records[0]["dose"]["setting"]["percent"], 42.5,
        "the original is unchanged"
    );
    assert_eq!(records[1]["type"], "correction");
    assert_eq!(records[1]["reason"], "pump was set to 40 %");

    let missing = dir.join("missing.doselog");
    let absent = molefeed(&["log", "list", "--file", missing.to_str().unwrap()], "");
    assert_eq!(absent.status.code(), Some(1));
    assert!(text(&absent.stderr).contains("no log file at"));
    assert!(!missing.exists(), "listing must not create a log");

    let typo = molefeed(&["log", "list", "--file", file, "--form", "2026-01-01"], "");
    assert_eq!(typo.status.code(), Some(2), "a mistyped flag must fail");
    remove(&dir);
}

/// Sets result `id` of `dose` to `value` in `unit`.
fn set(dose: &mut log::record::Dose, id: &str, value: f64, unit: &str) {
    let r = dose.results.iter_mut().find(|r| r.id == id).unwrap();
    (r.value, r.unit) = (value, unit.into());
}

fn draft(note: &str, at: &str, tap: &str) -> Draft {
    let mut dose = log::record::example_dose();
    dose.note = note.into();
    dose.tap = tap.into();
    set(&mut dose, "flow", 1234.5, "m³/h");
    set(&mut dose, "dose", 0.1 + 0.2, "mg/L");
    Draft::Entry {
        at: Some(chrono::DateTime::parse_from_rfc3339(at).unwrap()),
        site: "Riverside, \"north\" works".into(),
        dose,
    }
}

#[test]
fn csv_export_round_trips_through_a_csv_parser() {
    let dir = fresh_dir("csv");
    let path = dir.join("site.doselog");
    let notes = [
        "plain",
        "comma, inside",
        "quote \" inside and \"\" doubled",
        "two\nlines\r\nand CRLF",
        " leading and trailing spaces ",
        "",
    ];
    let mut log = Log::open(&path, "tab-1").unwrap();
    let mut ids = Vec::new();
    for (n, note) in notes.iter().enumerate() {
        let at = format!("2026-03-{:02}T09:00:00+02:00", n + 1);
        ids.push(log.append(draft(note, &at, "tap, \"A\"")).unwrap());
    }
    log.append(draft("april", "2026-04-01T09:00:00+02:00", "B"))
        .unwrap();
    log.append(Draft::Void {
        at: None,
        operator: "JM".into(),
        voids: ids[5],
        reason: "test void".into(),
    })
    .unwrap();
    let mut corrected = log::record::example_dose();
    corrected.note = "plain, corrected".into();
    corrected.tap = "tap, \"A\"".into();
    set(&mut corrected, "flow", 1234.5, "m³/h");
    set(&mut corrected, "dose", 0.1 + 0.2, "mg/L");
    let correction = log
        .append(Draft::Correction {
            at: None,
            corrects: ids[0],
            reason: "typo, \"fixed\"".into(),
            dose: corrected,
        })
        .unwrap();
    drop(log);
    let mut notes = notes.map(String::from);
    notes[0] = "plain, corrected".into();

    let out = molefeed(
        &[
            "log",
            "export",
            "--file",
            path.to_str().unwrap(),
            "--format",
            "csv",
            "--from",
            "2026-03-01",
            "--to",
            "2026-03-31",
        ],
        "",
    );
    assert!(out.status.success(), "{}", text(&out.stderr));
    let mut reader = csv::Reader::from_reader(out.stdout.as_slice());
    let header: Vec<String> = reader.headers().unwrap().iter().map(String::from).collect();
    let columns = export::csv_columns(UnitSystem::Si);
    assert_eq!(header, columns);
    let rows: Vec<csv::StringRecord> = reader.records().map(Result::unwrap).collect();
    assert_eq!(rows.len(), 5, "March only, voided entry left out");
    let column = |name: &str| columns.iter().position(|c| *c == name).unwrap();
    for (row, (note, id)) in rows.iter().zip(notes.iter().zip(&ids)) {
        assert_eq!(row.len(), columns.len());
        assert_eq!(&row[column("id")], id.to_string());
        assert_eq!(&row[column("note")], note.as_str());
        assert_eq!(&row[column("site")], "Riverside, \"north\" works");
        assert_eq!(&row[column("tap")], "tap, \"A\"");
        // 1234.5 m³/h × 24 h/d, in the SI report's m³/d.
        assert_eq!(&row[column("flow_m3_per_d")], "29628");
        assert_eq!(
            row[column("dose_mg_per_L")].parse::<f64>().unwrap(),
            0.1 + 0.2
        );
        assert!(row[column("trace")].contains('\n'));
        let logged = chrono::DateTime::parse_from_rfc3339(&row[column("logged_at")]).unwrap();
        assert_eq!(logged.offset().local_minus_utc(), 2 * 3600);
        assert_eq!(logged.format("%H:%M").to_string(), "09:00");
    }
    assert_eq!(&rows[0][column("status")], "corrected");
    assert_eq!(&rows[0][column("revisions")], "1");
    assert_eq!(&rows[0][column("last_change_id")], correction.to_string());
    assert_eq!(&rows[0][column("last_change_reason")], "typo, \"fixed\"");
    assert_eq!(&rows[0][column("correction_reason")], "typo, \"fixed\"");
    assert_eq!(&rows[1][column("status")], "original");
    assert_eq!(&rows[1][column("last_change_reason")], "");

    let jsonl = molefeed(
        &[
            "log",
            "export",
            "--file",
            path.to_str().unwrap(),
            "--format",
            "jsonl",
        ],
        "",
    );
    let lines: Vec<serde_json::Value> = text(&jsonl.stdout)
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    assert_eq!(lines.len(), 6);
    assert_eq!(lines[5]["dose"]["note"], "april");

    // The library export with voided entries included marks the void.
    let log = Log::open(&path, "tab-1").unwrap();
    let views = log
        .query(&Query {
            include_voided: true,
            ..Query::default()
        })
        .unwrap();
    assert_eq!(views[5].status, Status::Voided);
    remove(&dir);
}

#[test]
fn merge_through_the_cli_is_idempotent() {
    let dir = fresh_dir("merge");
    let (a, b) = (dir.join("a.doselog"), dir.join("b.doselog"));
    let mut log_b = Log::open(&b, "tab-b").unwrap();
    for n in 0..3 {
        log_b
            .append(draft(&format!("b{n}"), "2026-03-02T10:00:00+00:00", "T"))
            .unwrap();
    }
    drop(log_b);
    Log::open(&a, "tab-a")
        .unwrap()
        .append(draft("a0", "2026-03-01T10:00:00+00:00", "T"))
        .unwrap();
    let merge = |json: bool| {
        let mut args = vec![
            "log",
            "merge",
            "--file",
            a.to_str().unwrap(),
            "--from",
            b.to_str().unwrap(),
        ];
        if json {
            args.push("--json");
        }
        molefeed(&args, "")
    };
    let first = merge(false);
    assert!(first.status.success(), "{}", text(&first.stderr));
    assert!(text(&first.stdout).starts_with("added 3, already present 0, conflicting 0"));
    let second = merge(true);
    let reply: serde_json::Value = serde_json::from_slice(&second.stdout).unwrap();
    assert_eq!(reply["added"], 0);
    assert_eq!(reply["already_present"], 3);
    assert_eq!(reply["conflicting"].as_array().unwrap().len(), 0);
    let log = Log::open(&a, "tab-a").unwrap();
    assert_eq!(log.record_count(), 4);
    remove(&dir);
}

#[test]
fn csv_defuses_text_a_spreadsheet_would_run_and_json_lines_keeps_it() {
    let dir = fresh_dir("csv-formula");
    let path = dir.join("site.doselog");
    let mut log = Log::open(&path, "tab-1").unwrap();
    for (n, note) in [
        "=HYPERLINK(\"http://x\",\"y\")",
        "-0.2 after the fix",
        "fine",
    ]
    .iter()
    .enumerate()
    {
        let at = format!("2026-05-{:02}T09:00:00+00:00", n + 1);
        log.append(draft(note, &at, "=tap")).unwrap();
    }
    drop(log);
    let export = |format: &str| {
        let out = molefeed(
            &[
                "log",
                "export",
                "--file",
                path.to_str().unwrap(),
                "--format",
                format,
            ],
            "",
        );
        assert!(out.status.success(), "{}", text(&out.stderr));
        out.stdout
    };
    let csv = export("csv");
    let mut reader = csv::Reader::from_reader(csv.as_slice());
    let columns = export::csv_columns(UnitSystem::Si);
    let column = |name: &str| columns.iter().position(|c| *c == name).unwrap();
    let notes: Vec<(String, String)> = reader
        .records()
        .map(|r| {
            let r = r.unwrap();
            (r[column("note")].to_string(), r[column("tap")].to_string())
        })
        .collect();
    assert_eq!(
        notes,
        [
            (
                "'=HYPERLINK(\"http://x\",\"y\")".to_string(),
                "'=tap".to_string()
            ),
            ("'-0.2 after the fix".to_string(), "'=tap".to_string()),
            ("fine".to_string(), "'=tap".to_string()),
        ]
    );
    let jsonl = export("jsonl");
    let first: serde_json::Value =
        serde_json::from_str(text(&jsonl).lines().next().unwrap()).unwrap();
    assert_eq!(first["dose"]["note"], "=HYPERLINK(\"http://x\",\"y\")");
    let _ = std::fs::remove_dir_all(&dir);
}

/// The site's units in the report: the same entries in US and SI, each number checked against
/// a hand conversion (1 MGD = 3785.411784 m³/d exactly; 1 lb = 0.45359237 kg; 1 gal =
/// 3.785411784 L), every number header naming its unit, and an empty cell for a gas feed's
/// product volume and pump setting, which were never computed.
#[test]
fn csv_writes_the_sites_units_and_leaves_what_was_not_computed_empty() {
    let dir = fresh_dir("csv-units");
    let path = dir.join("site.doselog");
    let mut log = Log::open(&path, "tab-1").unwrap();
    let mut liquid = log::record::example_dose();
    set(&mut liquid, "flow", 1.0, "MGD");
    set(&mut liquid, "feed_mass_rate", 100.0, "lb/d");
    set(&mut liquid, "product_volume_rate", 2.0, "gal/h");
    let mut gas = log::record::example_dose();
    gas.calculator = "free-chlorine".into();
    gas.product = Some(log::record::ProductRef {
        id: "chlorine-gas".into(),
        name: "Chlorine gas".into(),
    });
    gas.results
        .retain(|r| r.id != "product_volume_rate" && r.id != "pump_setting");
    gas.setting = None;
    gas.cross_check = None;
    set(&mut gas, "flow", 3785.411784, "m³/d");
    for (n, dose) in [liquid, gas].into_iter().enumerate() {
        log.append(Draft::Entry {
            at: Some(
                chrono::DateTime::parse_from_rfc3339(&format!("2026-06-0{}T08:00:00Z", n + 1))
                    .unwrap(),
            ),
            site: "Riverside".into(),
            dose,
        })
        .unwrap();
    }
    drop(log);
    let export = |units: &str| {
        let out = molefeed(
            &[
                "log",
                "export",
                "--file",
                path.to_str().unwrap(),
                "--format",
                "csv",
                "--units",
                units,
            ],
            "",
        );
        assert!(out.status.success(), "{}", text(&out.stderr));
        let mut reader = csv::Reader::from_reader(out.stdout.as_slice());
        let header: Vec<String> = reader.headers().unwrap().iter().map(String::from).collect();
        let rows: Vec<Vec<String>> = reader
            .records()
            .map(|r| r.unwrap().iter().map(String::from).collect())
            .collect();
        (header, rows)
    };
    let close = |cell: &str, want: f64| {
        let got: f64 = cell
            .parse()
            .unwrap_or_else(|_| panic!("'{cell}' is not a number"));
        assert!(
            (got - want).abs() <= 1e-9 * want.abs().max(1.0),
            "{got} vs {want}"
        );
    };
    let (us, us_rows) = export("us");
    let (si, si_rows) = export("si");
    let number_headers = |h: &[String]| -> Vec<String> {
        h.iter()
            .filter(|c| {
                c.starts_with("flow")
                    || c.contains("rate")
                    || c.starts_with("dose")
                    || c.contains("setting_percent")
            })
            .cloned()
            .collect()
    };
    assert_eq!(
        number_headers(&us),
        [
            "flow_MGD",
            "dose_mg_per_L",
            "feed_mass_rate_lb_per_d",
            "product_volume_rate_gal_per_h",
            "product_mass_rate_lb_per_d",
            "pump_setting_percent",
            "feeder_setting_percent",
            "cross_check_feed_rate_gal_per_h"
        ]
    );
    assert_eq!(
        number_headers(&si),
        [
            "flow_m3_per_d",
            "dose_mg_per_L",
            "feed_mass_rate_kg_per_d",
            "product_volume_rate_L_per_h",
            "product_mass_rate_kg_per_d",
            "pump_setting_percent",
            "feeder_setting_percent",
            "cross_check_feed_rate_L_per_h"
        ]
    );
    let cell = |header: &[String], row: &[String], name: &str| {
        row[header.iter().position(|c| c == name).unwrap()].clone()
    };
    // The liquid feed, logged in US units.
    close(&cell(&us, &us_rows[0], "flow_MGD"), 1.0);
    close(&cell(&si, &si_rows[0], "flow_m3_per_d"), 3785.411784);
    close(
        &cell(&si, &si_rows[0], "feed_mass_rate_kg_per_d"),
        45.359237,
    );
    close(
        &cell(&si, &si_rows[0], "product_volume_rate_L_per_h"),
        7.570823568,
    );
    close(
        &cell(&us, &us_rows[0], "product_volume_rate_gal_per_h"),
        2.0,
    );
    close(
        &cell(&us, &us_rows[0], "cross_check_feed_rate_gal_per_h"),
        5.1 / 3.785411784,
    );
    close(&cell(&us, &us_rows[0], "pump_setting_percent"), 42.5);
    assert_eq!(cell(&us, &us_rows[0], "product_mass_rate_lb_per_d"), "");
    // The gas feed, logged in SI: nothing invented.
    close(&cell(&us, &us_rows[1], "flow_MGD"), 1.0);
    close(
        &cell(&us, &us_rows[1], "feed_mass_rate_lb_per_d"),
        18.144 / 0.45359237,
    );
    for (header, rows, volume) in [
        (&us, &us_rows, "product_volume_rate_gal_per_h"),
        (&si, &si_rows, "product_volume_rate_L_per_h"),
    ] {
        assert_eq!(cell(header, &rows[1], volume), "");
        assert_eq!(cell(header, &rows[1], "pump_setting_percent"), "");
        assert_eq!(cell(header, &rows[1], "setting_device"), "");
        assert_eq!(cell(header, &rows[1], "product"), "Chlorine gas");
        assert_eq!(cell(header, &rows[1], "calculator"), "free-chlorine");
    }
    let jsonl = molefeed(
        &[
            "log",
            "export",
            "--file",
            path.to_str().unwrap(),
            "--format",
            "jsonl",
        ],
        "",
    );
    let gas: serde_json::Value =
        serde_json::from_str(text(&jsonl.stdout).lines().nth(1).unwrap()).unwrap();
    let ids: Vec<&str> = gas["dose"]["results"]
        .as_array()
        .unwrap()
        .iter()
        .map(|r| r["id"].as_str().unwrap())
        .collect();
    assert_eq!(ids, ["flow", "dose", "feed_mass_rate"]);
    assert!(gas["dose"].get("setting").is_none(), "{gas}");
    let bad = molefeed(
        &[
            "log",
            "export",
            "--file",
            path.to_str().unwrap(),
            "--format",
            "csv",
            "--units",
            "imperial",
        ],
        "",
    );
    assert_eq!(bad.status.code(), Some(2));
    remove(&dir);
}

/// `tests/fixtures/log-v1.doselog` was written once by the version-1 code (two entries, a
/// correction and a void; see its README). It must keep reading: every record in the
/// version-2 shape, its four numbers carried as they were, zeros included.
#[test]
fn a_version_1_log_file_still_reads_and_exports() {
    let dir = fresh_dir("v1");
    let path = dir.join("old.doselog");
    std::fs::copy(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/log-v1.doselog"),
        &path,
    )
    .unwrap();
    let log = Log::open_read_only(&path).unwrap();
    assert!(log.recovery().is_clean(), "{:?}", log.recovery().messages());
    let views = log
        .query(&Query {
            include_voided: true,
            ..Query::default()
        })
        .unwrap();
    assert_eq!(views.len(), 2);
    let first = &views[0].dose;
    assert_eq!(views[0].status, Status::Corrected);
    assert_eq!(first.calculator, log::record::CALCULATOR_UNRECORDED);
    assert_eq!(first.operator, "KT", "the correction is current");
    assert_eq!(first.dose_mg_per_l(), Some(1.6));
    let result = |d: &log::record::Dose, id: &str| d.result(id).map(|r| (r.value, r.unit.clone()));
    assert_eq!(result(first, "flow"), Some((420.0, "m³/h".to_string())));
    assert_eq!(result(first, "pump_setting"), Some((42.5, "%".to_string())));
    assert_eq!(first.note, "meter read again");
    let gas = &views[1].dose;
    assert_eq!(views[1].status, Status::Voided);
    assert_eq!(
        result(gas, "product_volume_rate"),
        Some((0.0, "L/h".to_string())),
        "a version-1 zero cannot be told from a real one: carried as written"
    );
    assert_eq!(gas.cautions[0].text, "hazard-toxic-gas");
    let history = log.history(views[0].id).unwrap();
    assert_eq!(history.len(), 2);
    drop(log);
    let out = molefeed(
        &[
            "log",
            "export",
            "--file",
            path.to_str().unwrap(),
            "--format",
            "csv",
            "--include-voided",
        ],
        "",
    );
    assert!(out.status.success(), "{}", text(&out.stderr));
    let mut reader = csv::Reader::from_reader(out.stdout.as_slice());
    let header: Vec<String> = reader.headers().unwrap().iter().map(String::from).collect();
    let rows: Vec<csv::StringRecord> = reader.records().map(Result::unwrap).collect();
    assert_eq!(rows.len(), 2);
    let column = |name: &str| header.iter().position(|c| c == name).unwrap();
    // 420 m³/h × 24 h/d.
    assert_eq!(&rows[0][column("flow_m3_per_d")], "10080");
    assert_eq!(&rows[0][column("dose_mg_per_L")], "1.6");
    assert_eq!(&rows[1][column("status")], "voided");
    remove(&dir);
}

/// The bytes and modification time of a file, to show that a command left it alone.
fn snapshot(path: &Path) -> (Vec<u8>, std::time::SystemTime) {
    (
        std::fs::read(path).unwrap(),
        std::fs::metadata(path).unwrap().modified().unwrap(),
    )
}

/// Whether this process runs as root, for whom permission bits do not stop writes.
fn running_as_root() -> bool {
    use std::os::unix::fs::MetadataExt;
    std::fs::metadata("/proc/self").unwrap().uid() == 0
}

/// Makes `path` unwritable for this process: read-only permissions, and for root (whom
/// permissions do not stop) the immutable attribute. Returns an undo.
fn make_unwritable(path: &Path) -> impl FnOnce() {
    use std::os::unix::fs::PermissionsExt;
    std::fs::set_permissions(path, std::fs::Permissions::from_mode(0o444)).unwrap();
    let root = running_as_root();
    if root {
        let status = Command::new("chattr").arg("+i").arg(path).status().unwrap();
        assert!(
            status.success(),
            "chattr +i failed: the test needs it as root"
        );
    }
    let writable = std::fs::OpenOptions::new().write(true).open(path);
    assert!(
        writable.is_err(),
        "the file is still writable: the test would prove nothing"
    );
    let path = path.to_path_buf();
    move || {
        if root {
            Command::new("chattr")
                .arg("-i")
                .arg(&path)
                .status()
                .unwrap();
        }
        std::fs::set_permissions(&path, std::fs::Permissions::from_mode(0o644)).unwrap();
    }
}

#[test]
fn reading_commands_work_on_an_unwritable_file_and_never_change_it() {
    let dir = fresh_dir("readonly");
    let path = dir.join("site.doselog");
    let file = path.to_str().unwrap();
    let mut log = Log::open(&path, "tab-1").unwrap();
    let id = log
        .append(draft("kept", "2026-03-02T10:00:00+00:00", "T"))
        .unwrap();
    drop(log);
    // An interrupted write at the end: a reader reports it and leaves it in place.
    let mut torn = Vec::new();
    log::frame::encode(b"an interrupted write", &mut torn).unwrap();
    torn.truncate(15);
    std::fs::OpenOptions::new()
        .append(true)
        .open(&path)
        .unwrap()
        .write_all(&torn)
        .unwrap();
    let undo = make_unwritable(&path);
    let before = snapshot(&path);
    std::thread::sleep(Duration::from_millis(20));
    let outputs = [
        molefeed(&["log", "list", "--file", file], ""),
        molefeed(&["log", "export", "--file", file, "--format", "csv"], ""),
        molefeed(
            &["log", "history", "--file", file, "--id", &id.to_string()],
            "",
        ),
    ];
    let after = snapshot(&path);
    undo();
    for out in &outputs {
        assert!(out.status.success(), "{}", text(&out.stderr));
    }
    assert!(
        text(&outputs[0].stdout).ends_with("1 entries\n"),
        "{}",
        text(&outputs[0].stdout)
    );
    assert!(
        text(&outputs[1].stdout).contains("kept"),
        "the export holds the note"
    );
    assert!(
        text(&outputs[0].stdout).contains("left in place"),
        "{}",
        text(&outputs[0].stdout)
    );
    assert_eq!(after, before, "a read changed the file");

    // An empty file reached through a symlink: a reader refuses it and writes nothing.
    let empty = dir.join("empty.doselog");
    std::fs::write(&empty, b"").unwrap();
    let link = dir.join("link.doselog");
    std::os::unix::fs::symlink(&empty, &link).unwrap();
    let listed = molefeed(&["log", "list", "--file", link.to_str().unwrap()], "");
    assert_eq!(listed.status.code(), Some(1));
    assert_eq!(std::fs::read(&empty).unwrap(), b"", "a header was written");
    remove(&dir);
}

#[test]
fn reading_commands_work_beside_a_running_writer() {
    let dir = fresh_dir("beside");
    let path = dir.join("site.doselog");
    let file = path.to_str().unwrap();
    let mut writer = Command::new(BIN)
        .args(["log", "soak", "--file", file, "--device", "writer"])
        .stdout(Stdio::piped())
        .stderr(Stdio::null())
        .spawn()
        .unwrap();
    let mut first = String::new();
    BufReader::new(writer.stdout.as_mut().unwrap())
        .read_line(&mut first)
        .unwrap();
    let listed = molefeed(&["log", "list", "--file", file, "--json"], "");
    let exported = molefeed(&["log", "export", "--file", file, "--format", "jsonl"], "");
    let second_writer = molefeed(
        &["log", "append", "--file", file, "--device", "second"],
        &text(&molefeed(&["log", "template"], "").stdout),
    );
    writer.kill().unwrap();
    writer.wait().unwrap();
    assert!(listed.status.success(), "{}", text(&listed.stderr));
    let reply: serde_json::Value = serde_json::from_slice(&listed.stdout).unwrap();
    let ids: Vec<&str> = reply["entries"]
        .as_array()
        .unwrap()
        .iter()
        .map(|e| e["id"].as_str().unwrap())
        .collect();
    assert!(ids.contains(&first.trim()), "{first} not listed");
    assert!(exported.status.success(), "{}", text(&exported.stderr));
    assert_eq!(second_writer.status.code(), Some(1), "two writers at once");
    assert!(text(&second_writer.stderr).contains("another copy of the app"));
    remove(&dir);
}

#[test]
fn a_writer_whose_file_is_deleted_stops_acknowledging() {
    let dir = fresh_dir("deleted");
    let path = dir.join("site.doselog");
    let file = path.to_str().unwrap();
    let mut writer = Command::new(BIN)
        .args(["log", "soak", "--file", file, "--device", "first"])
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let stdout = writer.stdout.take().unwrap();
    let (lines_tx, lines) = std::sync::mpsc::channel::<String>();
    std::thread::spawn(move || {
        for line in BufReader::new(stdout).lines().map_while(Result::ok) {
            if lines_tx.send(line).is_err() {
                break;
            }
        }
    });
    lines.recv_timeout(Duration::from_secs(10)).unwrap();
    // Stopped, the writer cannot print: every id it printed before is drained, so ids that
    // arrive later were acknowledged after the deletion (at most one append can have passed
    // its check before the file went and print after).
    let signal = |name: &str| {
        let sent = Command::new("kill")
            .args([name, &writer.id().to_string()])
            .status()
            .unwrap();
        assert!(sent.success());
    };
    signal("-STOP");
    while lines.recv_timeout(Duration::from_millis(200)).is_ok() {}
    std::fs::remove_file(&path).unwrap();
    signal("-CONT");
    let deleted_at = Instant::now();
    let mut after = 0;
    let exit = loop {
        while lines.try_recv().is_ok() {
            after += 1;
        }
        if let Some(status) = writer.try_wait().unwrap() {
            break Some(status);
        }
        if deleted_at.elapsed() > Duration::from_secs(10) {
            writer.kill().unwrap();
            writer.wait().unwrap();
            break None;
        }
        std::thread::sleep(Duration::from_millis(20));
    };
    std::thread::sleep(Duration::from_millis(100));
    while lines.try_recv().is_ok() {
        after += 1;
    }
    let stderr = {
        let mut s = String::new();
        std::io::Read::read_to_string(writer.stderr.as_mut().unwrap(), &mut s).unwrap();
        s
    };
    let status = exit.expect("the writer kept acknowledging into a deleted file");
    assert!(!status.success());
    assert!(stderr.contains("deleted or replaced"), "{stderr}");
    assert!(
        after <= 1,
        "{after} ids acknowledged after the file was deleted"
    );
    // A new writer starts a new file at the same path.
    let appended = molefeed(
        &["log", "append", "--file", file, "--device", "second"],
        &text(&molefeed(&["log", "template"], "").stdout),
    );
    assert!(appended.status.success(), "{}", text(&appended.stderr));
    assert_eq!(Log::open_read_only(&path).unwrap().record_count(), 1);
    remove(&dir);
}

/// A log file holding exactly these payloads, framed as a device would write them.
fn crafted_log(path: &Path, payloads: &[Vec<u8>]) -> Vec<u8> {
    let mut bytes = log::frame::header().to_vec();
    for p in payloads {
        log::frame::encode(p, &mut bytes).unwrap();
    }
    std::fs::write(path, &bytes).unwrap();
    bytes
}

fn foreign(note: &str, at: &str) -> log::Record {
    let mut dose = log::record::example_dose();
    dose.note = note.into();
    log::Record::Entry(log::Entry {
        id: uuid::Uuid::now_v7(),
        device: "tab-b".into(),
        at: chrono::DateTime::parse_from_rfc3339(at).unwrap(),
        site: "Riverside".into(),
        dose,
    })
}

#[test]
fn the_human_merge_summary_names_everything_left_out() {
    let dir = fresh_dir("merge-summary");
    let (a, b) = (dir.join("a.doselog"), dir.join("b.doselog"));
    Log::open(&a, "tab-a")
        .unwrap()
        .append(draft("a0", "2026-03-01T10:00:00+00:00", "T"))
        .unwrap();
    let good = foreign("good", "2025-11-05T09:00:00+00:00");
    let lying = foreign("lying", "2025-11-05T10:00:00+00:00");
    let mut lying_payload = log::record::encode(&lying);
    lying_payload[18..26].copy_from_slice(&0i64.to_le_bytes());
    // The key's tap starts after the fixed key (44 bytes) and its length: "clearwell inlet".
    lying_payload[46] ^= 0x20;
    let future_void = log::Record::Void(log::Void {
        id: uuid::Uuid::now_v7(),
        device: "tab-b".into(),
        at: chrono::DateTime::parse_from_rfc3339("9999-12-31T00:00:00+00:00").unwrap(),
        site: "Riverside".into(),
        operator: "CD".into(),
        voids: good.id(),
        reason: "hide".into(),
    });
    let mut second = good.clone();
    if let log::Record::Entry(e) = &mut second {
        e.dose.note = "second version".into();
    }
    let mut bytes = crafted_log(
        &b,
        &[
            log::record::encode(&good),
            lying_payload,
            log::record::encode(&future_void),
            log::record::encode(&second),
        ],
    );
    // Damage between two intact records.
    bytes.extend_from_slice(b"not a record");
    let mut tail_record = Vec::new();
    log::frame::encode(
        &log::record::encode(&foreign("after", "2025-11-07T09:00:00+00:00")),
        &mut tail_record,
    )
    .unwrap();
    bytes.extend_from_slice(&tail_record);
    std::fs::write(&b, &bytes).unwrap();

    let out = molefeed(
        &[
            "log",
            "merge",
            "--file",
            a.to_str().unwrap(),
            "--from",
            b.to_str().unwrap(),
        ],
        "",
    );
    assert!(out.status.success(), "{}", text(&out.stderr));
    let human = text(&out.stdout);
    println!("{human}");
    let first_line = human.lines().next().unwrap();
    assert!(
        first_line.starts_with("added 2, already present 0, conflicting 0, refused 2"),
        "{human}"
    );
    let line_about = |id: uuid::Uuid, word: &str| {
        human
            .lines()
            .any(|l| l.starts_with(word) && l.contains(&id.to_string()))
    };
    assert!(line_about(lying.id(), "refused:"), "{human}");
    assert!(line_about(future_void.id(), "refused:"), "{human}");
    assert!(human.contains("after this device's clock"), "{human}");
    assert!(human.contains("key and body disagree"), "{human}");
    assert!(line_about(good.id(), "dropped:"), "{human}");
    assert!(
        human.lines().any(|l| l.contains("damaged data at byte")),
        "{human}"
    );
    remove(&dir);
}

#[test]
fn a_crafted_six_mebibyte_file_imports_in_linear_time() {
    let dir = fresh_dir("crafted");
    let (a, b) = (dir.join("a.doselog"), dir.join("b.doselog"));
    drop(Log::open(&a, "tab-a").unwrap());
    let first = log::record::encode(&foreign("first", "2025-11-05T09:00:00+00:00"));
    let last = log::record::encode(&foreign("last", "2025-11-06T09:00:00+00:00"));
    let mut bytes = crafted_log(&b, std::slice::from_ref(&first));
    // Every 12 bytes a record mark claiming almost a megabyte, with a wrong checksum.
    let mut n = 0u32;
    while bytes.len() < 6 << 20 {
        bytes.extend_from_slice(&log::frame::RECORD_MARK);
        bytes.extend_from_slice(&(log::frame::MAX_PAYLOAD - n % 4096).to_le_bytes());
        bytes.extend_from_slice(&n.to_le_bytes());
        n += 1;
    }
    log::frame::encode(&last, &mut bytes).unwrap();
    std::fs::write(&b, &bytes).unwrap();
    let started = Instant::now();
    let mut child = Command::new(BIN)
        .args(["log", "merge", "--file", a.to_str().unwrap(), "--from"])
        .arg(&b)
        .arg("--json")
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    // Quadratic scanning took about 24 s for this file in a release build; linear scanning
    // takes well under a second there and a few seconds in a test build.
    let limit = Duration::from_secs(20);
    while child.try_wait().unwrap().is_none() {
        if started.elapsed() > limit {
            child.kill().unwrap();
            child.wait().unwrap();
            panic!("importing a crafted 6 MiB file took more than {limit:?}");
        }
        std::thread::sleep(Duration::from_millis(20));
    }
    let out = child.wait_with_output().unwrap();
    println!("crafted 6 MiB import: {:?}", started.elapsed());
    assert!(out.status.success(), "{}", text(&out.stderr));
    let reply: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(reply["added"], 2, "{reply}");
    remove(&dir);
}

#[test]
fn salvage_copies_the_records_behind_a_damaged_header() {
    let dir = fresh_dir("salvage");
    let (damaged, saved) = (dir.join("damaged.doselog"), dir.join("saved.doselog"));
    let mut log = Log::open(&damaged, "tab-1").unwrap();
    for n in 0..3 {
        log.append(draft(&format!("n{n}"), "2026-03-02T10:00:00+00:00", "T"))
            .unwrap();
    }
    drop(log);
    let mut bytes = std::fs::read(&damaged).unwrap();
    bytes[9] ^= 0x40;
    std::fs::write(&damaged, &bytes).unwrap();
    let before = snapshot(&damaged);

    let listed = molefeed(&["log", "list", "--file", damaged.to_str().unwrap()], "");
    assert_eq!(listed.status.code(), Some(1));
    let said = text(&listed.stderr);
    assert!(
        said.contains("damaged") && !said.contains("newer"),
        "{said}"
    );
    assert!(said.contains("molefeed log salvage --file"), "{said}");
    let listed = molefeed(
        &["log", "list", "--file", damaged.to_str().unwrap(), "--json"],
        "",
    );
    let reply: serde_json::Value = serde_json::from_slice(&listed.stdout).unwrap();
    assert_eq!(reply["error"]["kind"], "not-a-log");
    assert_eq!(reply["error"]["reason"], "damaged-header");

    let out = molefeed(
        &[
            "log",
            "salvage",
            "--file",
            damaged.to_str().unwrap(),
            "--to",
            saved.to_str().unwrap(),
        ],
        "",
    );
    assert!(out.status.success(), "{}", text(&out.stderr));
    assert!(
        text(&out.stdout).starts_with("salvaged 3 records"),
        "{}",
        text(&out.stdout)
    );
    assert!(text(&out.stdout).contains("damaged: the log header"));
    assert_eq!(
        snapshot(&damaged),
        before,
        "salvage changed the damaged file"
    );
    let notes: Vec<String> = Log::open_read_only(&saved)
        .unwrap()
        .current()
        .unwrap()
        .into_iter()
        .map(|v| v.dose.note)
        .collect();
    assert_eq!(notes, ["n0", "n1", "n2"]);
    remove(&dir);
}
