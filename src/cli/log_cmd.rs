//! `molefeed log ...`: the dose log for scripts, support staff and tests.
//!
//! Design choice: `append` reads exactly one JSON draft on stdin and reports the id only when
//! `Log::append` returned, that is after the record was synced to disk, so a script that saw
//! an id may rely on it. Export text goes to stdout through the ordinary report, so the same
//! functions serve `molefeed batch`. The reading commands (list, history, export) open the log
//! read-only, so they work beside a writer and on read-only media and never change the file.

use super::{Args, CliError, CliResult, Report};
use crate::log::{self, Draft, Log, Query, export};
use chrono::NaiveDate;
use serde_json::json;
use std::io::{Read, Write};
use std::path::Path;

/// Dispatches `molefeed log SUBCOMMAND`.
pub fn run(args: &Args) -> CliResult {
    match args.required_positional(
        0,
        "log command: append, list, history, export, merge, salvage or template",
    )? {
        "template" => template(),
        "append" => append(args),
        "list" => list(args),
        "export" => export_cmd(args),
        "merge" => merge(args),
        "salvage" => salvage(args),
        "history" => history(args),
        // Not in the help: drives the crash test by appending until killed.
        "soak" => soak(args),
        other => Err(CliError::usage(format!(
            "unknown log command '{other}'; try append, list, history, export, merge, salvage or template"
        ))),
    }
}

fn log_error(e: log::Error) -> CliError {
    // A damaged header is the one refusal the command line can do something about.
    if e.param("reason") == Some("damaged-header") {
        let file = e.param("path").unwrap_or("FILE");
        return CliError {
            kind: e.kind().code().into(),
            message: format!("{e} (molefeed log salvage --file {file} --to NEW-FILE)"),
            reason: Some("damaged-header"),
        };
    }
    CliError {
        kind: e.kind().code().into(),
        message: e.to_string(),
        reason: None,
    }
}

/// The device id for records written from the command line: `--device`, else the host name.
fn device(args: &Args) -> Result<String, CliError> {
    if let Some(d) = args.text("device")? {
        return Ok(d.to_string());
    }
    let host = std::fs::read_to_string("/proc/sys/kernel/hostname").unwrap_or_default();
    let host = host.trim();
    Ok(if host.is_empty() {
        "cli".to_string()
    } else {
        format!("cli@{host}")
    })
}

fn open(args: &Args) -> Result<Log, CliError> {
    let file = args.required_text("file")?;
    let device = device(args)?;
    Log::open(Path::new(file), &device).map_err(log_error)
}

/// For reading commands: read-only, so a mistyped path creates nothing and a read changes
/// nothing.
fn open_existing(args: &Args) -> Result<Log, CliError> {
    let file = args.required_text("file")?;
    if !Path::new(file).exists() {
        return Err(CliError::io(format!("no log file at {file}")));
    }
    Log::open_read_only(Path::new(file)).map_err(log_error)
}

fn date(args: &Args, name: &str) -> Result<Option<NaiveDate>, CliError> {
    match args.text(name)? {
        None => Ok(None),
        Some(text) => NaiveDate::parse_from_str(text, "%Y-%m-%d")
            .map(Some)
            .map_err(|_| CliError::usage(format!("--{name} must be a date like 2026-03-31"))),
    }
}

fn query(args: &Args) -> Result<Query, CliError> {
    Ok(Query {
        from: date(args, "from")?,
        to: date(args, "to")?,
        tap: args.text("tap")?.map(String::from),
        chemical: args.text("chemical")?.map(String::from),
        include_voided: args.switch("include-voided"),
        only: None,
    })
}

fn template() -> CliResult {
    let draft = Draft::Entry {
        at: None,
        site: "Riverside WTP".into(),
        dose: log::record::example_dose(),
    };
    let json = serde_json::to_value(&draft).map_err(|e| CliError::io(e.to_string()))?;
    Ok(Report {
        human: serde_json::to_string_pretty(&json).unwrap_or_default(),
        json,
    })
}

fn append(args: &Args) -> CliResult {
    let mut log = open(args)?;
    let mut text = String::new();
    std::io::stdin()
        .read_to_string(&mut text)
        .map_err(|e| CliError::io(format!("reading the entry from stdin: {e}")))?;
    let draft: Draft = serde_json::from_str(&text).map_err(|e| CliError {
        kind: "invalid-entry".into(),
        message: format!("the entry on stdin is not valid: {e}"),
        reason: None,
    })?;
    let id = log.append(draft).map_err(log_error)?;
    Ok(Report {
        human: id.to_string(),
        json: json!({"id": id}),
    })
}

fn recovery_json(log: &Log) -> serde_json::Value {
    json!({
        "clean": log.recovery().is_clean(),
        "messages": log.recovery().messages(),
        "details": log.recovery(),
    })
}

fn list(args: &Args) -> CliResult {
    let log = open_existing(args)?;
    let query = query(args)?;
    let views = log.query(&query).map_err(log_error)?;
    let mut human = String::new();
    for m in log.recovery().messages() {
        human.push_str(&format!("recovery: {m}\n"));
    }
    for v in &views {
        human.push_str(&format!(
            "{}  {}  {} / {}  {} mg/L  pump {} %  [{}] {}\n",
            v.at.format("%Y-%m-%d %H:%M %:z"),
            v.dose.operator,
            v.dose.tap,
            v.dose.chemical,
            v.dose.dose_mg_per_l,
            v.dose.pump_setting_percent,
            v.status.word(),
            v.id,
        ));
    }
    human.push_str(&format!("{} entries\n", views.len()));
    Ok(Report {
        human,
        json: json!({"entries": views, "recovery": recovery_json(&log)}),
    })
}

/// `log history --file F --id ID`: the original entry and every correction and void of it.
fn history(args: &Args) -> CliResult {
    let log = open_existing(args)?;
    let text = args.required_text("id")?;
    let id: uuid::Uuid = text
        .parse()
        .map_err(|_| CliError::usage(format!("--id must be an entry id, got '{text}'")))?;
    let records = log.history(id).map_err(log_error)?;
    if records.is_empty() {
        return Err(CliError {
            kind: log::ErrorKind::UnknownReference.code().into(),
            message: format!("no entry {id} in this log"),
            reason: None,
        });
    }
    let human = records
        .iter()
        .map(|r| match r {
            log::Record::Entry(e) => {
                format!("{}  entry       {} by {}\n", e.at, e.id, e.dose.operator)
            }
            log::Record::Correction(c) => {
                format!(
                    "{}  correction  {} by {}: {}\n",
                    c.at, c.id, c.dose.operator, c.reason
                )
            }
            log::Record::Void(v) => format!(
                "{}  void        {} by {}: {}\n",
                v.at, v.id, v.operator, v.reason
            ),
        })
        .collect();
    Ok(Report {
        human,
        json: json!({ "history": records }),
    })
}

fn export_cmd(args: &Args) -> CliResult {
    let log = open_existing(args)?;
    let format = args.required_text("format")?;
    let query = query(args)?;
    let mut out = Vec::new();
    let rows = match format {
        "csv" => export::csv(&log, &query, &mut out),
        "jsonl" => export::jsonl(&log, &query, &mut out),
        other => {
            return Err(CliError::usage(format!(
                "--format must be csv or jsonl, got '{other}'"
            )));
        }
    }
    .map_err(log_error)?;
    for m in log.recovery().messages() {
        eprintln!("molefeed: recovery: {m}");
    }
    Ok(Report {
        human: String::from_utf8(out).map_err(|e| CliError::io(e.to_string()))?,
        json: json!({"rows": rows, "recovery": recovery_json(&log)}),
    })
}

fn merge(args: &Args) -> CliResult {
    let mut log = open(args)?;
    let other = args.required_text("from")?;
    let report = log.merge_from(Path::new(other)).map_err(log_error)?;
    let source = &report.source_recovery;
    let mut human = format!(
        "added {}, already present {}, conflicting {}, refused {}, dropped {}, unreadable {}, damaged regions {}\n",
        report.added,
        report.already_present,
        report.conflicting.len(),
        report.refused.len(),
        report.dropped_duplicates.len(),
        source.unreadable.len(),
        source.damaged.len() + usize::from(source.torn_tail.is_some()),
    );
    for id in &report.conflicting {
        human.push_str(&format!(
            "conflict: {id} differs between the logs; this log's copy is kept\n"
        ));
    }
    for r in &report.refused {
        let id =
            r.id.map_or_else(|| "record".to_string(), |id| id.to_string());
        human.push_str(&format!(
            "refused: {id} at byte {} of {other}: {}\n",
            r.offset, r.reason
        ));
    }
    for id in &report.dropped_duplicates {
        human.push_str(&format!(
            "dropped: a second copy of {id} in {other}; only the first was considered\n"
        ));
    }
    for m in source.messages() {
        // Duplicates are listed above as dropped.
        if !m.contains("appears more than once") {
            human.push_str(&format!("in {other}: {m}\n"));
        }
    }
    Ok(Report {
        human,
        json: json!({
            "added": report.added,
            "already_present": report.already_present,
            "conflicting": report.conflicting,
            "refused": report.refused,
            "dropped_duplicates": report.dropped_duplicates,
            "unreadable": report.unreadable,
            "source_recovery": source.messages(),
        }),
    })
}

/// `log salvage --file F --to G`: copies the intact records of a log whose header is damaged
/// into a new log G; F is only read.
fn salvage(args: &Args) -> CliResult {
    let from = args.required_text("file")?;
    let to = args.required_text("to")?;
    let report = log::salvage(Path::new(from), Path::new(to)).map_err(log_error)?;
    let mut human = format!(
        "salvaged {} records from {from} into {to}; {from} was not changed\n",
        report.records
    );
    if !report.header_intact {
        human.push_str(&format!("damaged: the log header of {from}\n"));
    }
    for d in &report.damaged {
        human.push_str(&format!(
            "damaged: {} bytes at byte {} of {from} held no intact record\n",
            d.len, d.offset
        ));
    }
    if let Some(t) = report.torn_tail {
        human.push_str(&format!(
            "incomplete last record: {} bytes at byte {} of {from}, not copied\n",
            t.len, t.offset
        ));
    }
    Ok(Report {
        human,
        json: serde_json::to_value(&report).map_err(|e| CliError::io(e.to_string()))?,
    })
}

/// Appends `--count` entries (default: until killed), printing each id once it is on disk.
/// `--note-bytes` pads each note so that a kill is likely to land inside a write.
fn soak(args: &Args) -> CliResult {
    let mut log = open(args)?;
    let count = args
        .number("count")?
        .map_or(u64::MAX, |n| n.max(0.0) as u64);
    let padding = args
        .number("note-bytes")?
        .map_or(0, |n| n.max(0.0) as usize);
    let mut out = std::io::stdout().lock();
    for n in 0..count {
        let mut dose = log::record::example_dose();
        dose.note = format!("soak {n} {}", "x".repeat(padding));
        let id = log
            .append(Draft::Entry {
                at: None,
                site: "soak".into(),
                dose,
            })
            .map_err(log_error)?;
        writeln!(out, "{id}")
            .and_then(|()| out.flush())
            .map_err(|e| CliError::io(e.to_string()))?;
    }
    Ok(Report {
        human: String::new(),
        json: json!({"appended": count}),
    })
}
