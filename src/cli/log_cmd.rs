//! `molefeed log ...`: the dose log for scripts, support staff and tests.
//!
//! Design choice: `append` reads exactly one JSON draft on stdin and reports the id only when
//! `Log::append` returned, that is after the record was synced to disk, so a script that saw
//! an id may rely on it. Export text goes to stdout through the ordinary report, so the same
//! functions serve `molefeed batch`.

use super::{Args, CliError, CliResult, Report};
use crate::engine::dosing::units::UnitSystem;
use crate::log::{self, Draft, Log, Query, export};
use chrono::NaiveDate;
use serde_json::json;
use std::io::{Read, Write};
use std::path::Path;

/// Dispatches `molefeed log SUBCOMMAND`.
pub fn run(args: &Args) -> CliResult {
    match args.required_positional(
        0,
        "log command: append, list, history, export, merge or template",
    )? {
        "template" => template(),
        "append" => append(args),
        "list" => list(args),
        "export" => export_cmd(args),
        "merge" => merge(args),
        "history" => history(args),
        // Not in the help: drives the crash test by appending until killed.
        "soak" => soak(args),
        other => Err(CliError::usage(format!(
            "unknown log command '{other}'; try append, list, history, export, merge or template"
        ))),
    }
}

fn log_error(e: log::Error) -> CliError {
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

/// For reading commands: a mistyped path must not create an empty log and list nothing.
fn open_existing(args: &Args) -> Result<Log, CliError> {
    let file = args.required_text("file")?;
    if !Path::new(file).exists() {
        return Err(CliError::io(format!("no log file at {file}")));
    }
    open(args)
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
        // What was not computed is said as a dash, never as 0.
        let dose = v
            .dose
            .dose_mg_per_l()
            .map_or_else(|| "—".to_string(), |d| d.to_string());
        let setting = v.dose.setting.as_ref().map_or_else(
            || "no setting".to_string(),
            |s| format!("{} {} %", s.device, s.percent),
        );
        human.push_str(&format!(
            "{}  {}  {} / {}  {} mg/L  {}  [{}] {}\n",
            v.at.format("%Y-%m-%d %H:%M %:z"),
            v.dose.operator,
            v.dose.tap,
            v.dose.chemical,
            dose,
            setting,
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

/// `--units us|si`: the unit system of the CSV's numbers (the site's); SI when not given.
fn units(args: &Args) -> Result<UnitSystem, CliError> {
    match args.text("units")? {
        None | Some("si") => Ok(UnitSystem::Si),
        Some("us") => Ok(UnitSystem::Us),
        Some(other) => Err(CliError::usage(format!(
            "--units must be us or si, got '{other}'"
        ))),
    }
}

fn export_cmd(args: &Args) -> CliResult {
    let log = open_existing(args)?;
    let format = args.required_text("format")?;
    let query = query(args)?;
    let mut out = Vec::new();
    // Read even for JSON Lines, whose numbers keep their logged units: a flag is never ignored.
    let units = units(args)?;
    let rows = match format {
        "csv" => export::csv(&log, &query, units, &mut out),
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
    let human = format!(
        "added {}, already present {}, conflicting {}{}\n",
        report.added,
        report.already_present,
        report.conflicting.len(),
        if report.unreadable > 0 {
            format!(", unreadable {}", report.unreadable)
        } else {
            String::new()
        }
    ) + &report
        .conflicting
        .iter()
        .map(|id| format!("conflict: {id} differs between the logs; this log's copy is kept\n"))
        .collect::<String>();
    Ok(Report {
        human,
        json: json!({
            "added": report.added,
            "already_present": report.already_present,
            "conflicting": report.conflicting,
            "unreadable": report.unreadable,
            "source_recovery": report.source_recovery.messages(),
        }),
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
