//! `molefeed log ...`: the dose log for scripts, support staff and tests.
//!
//! Design choice: `append` reads exactly one JSON draft (on stdin, or from `--entry`, which a
//! batch line must use because stdin carries the batch) and reports the id only when
//! `Log::append` returned, that is after the record was synced to disk, so a script that saw
//! an id may rely on it. `list` and `export` write entry by entry through [`stream`], so their
//! memory does not grow with the log; the same functions serve `molefeed batch`. The reading
//! commands (list, history, export) open the log read-only, so they work beside a writer and on
//! read-only media and never change the file. Human output shows the operator's text through
//! [`one_line`], so a newline in a tap name cannot forge a line and a terminal escape is shown,
//! not run.

use super::{Args, CliError, CliResult, Report, check_numbers, one_line};
use crate::engine::dosing::units::UnitSystem;
use crate::log::{self, Draft, Log, Query, export};
use chrono::NaiveDate;
use serde_json::json;
use std::io::{Read, Write};
use std::path::Path;

/// `log list` and `log export`, written to `out` as the log is read; `None` for the other
/// log commands, which answer with a [`Report`]. Every flag is checked before the first byte
/// is written, so a typo fails cleanly instead of after half a listing.
pub fn stream(args: &Args, json: bool, out: &mut dyn Write) -> Option<Result<(), CliError>> {
    match args.positional(0)? {
        "list" => Some(list_to(args, json, out)),
        "export" => Some(export_to(args, json, out)),
        _ => None,
    }
}

/// Dispatches `molefeed log SUBCOMMAND`.
pub fn run(args: &Args) -> CliResult {
    match args.required_positional(
        0,
        "log command: append, list, history, export, merge, salvage, template, reading, delivery, readings or report",
    )? {
        "template" => template(),
        "append" => append(args),
        "list" => list(args),
        "export" => export_cmd(args),
        "merge" => merge(args),
        "salvage" => salvage(args),
        "history" => history(args),
        "reading" => super::stock_cmd::reading(args),
        "readings" => readings(args),
        "delivery" => super::stock_cmd::delivery(args),
        "report" => super::stock_cmd::report(args),
        // Not in the help: drives the crash test by appending until killed.
        "soak" => soak(args),
        other => Err(CliError::usage(format!(
            "unknown log command '{other}'; try append, list, history, export, merge, salvage, template, reading, delivery, readings or report"
        ))),
    }
}

pub(super) fn log_error(e: log::Error) -> CliError {
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
pub(super) fn device(args: &Args) -> Result<String, CliError> {
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
    let path = Path::new(file);
    usable_log_path(path)?;
    Log::open(path, &device).map_err(log_error)
}

/// A log path the command line may open: a regular file (a FIFO or a device would block or
/// never end), or a new file in a directory that exists. A mistyped `a/b/c.doselog` must not
/// leave a trail of new directories behind.
pub(super) fn usable_log_path(path: &Path) -> Result<(), CliError> {
    match std::fs::metadata(path) {
        Ok(meta) if meta.is_file() => Ok(()),
        Ok(_) => Err(CliError::io(format!(
            "{} is not a regular file; a dose log is one",
            path.display()
        ))),
        Err(_) => {
            let parent = path.parent().filter(|p| !p.as_os_str().is_empty());
            match parent {
                Some(dir) if !dir.is_dir() => Err(CliError::io(format!(
                    "no directory {}; create it first (the log does not create directories)",
                    dir.display()
                ))),
                _ => Ok(()),
            }
        }
    }
}

/// For reading commands: read-only, so a mistyped path creates nothing and a read changes
/// nothing.
fn open_existing(args: &Args) -> Result<Log, CliError> {
    let file = args.required_text("file")?;
    if !Path::new(file).exists() {
        return Err(CliError::io(format!("no log file at {file}")));
    }
    usable_log_path(Path::new(file))?;
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
        readings: false,
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
    let given = args.text("entry")?;
    if given.is_none() && args.in_batch() {
        return Err(CliError::usage(
            "inside batch, stdin carries the batch: give the entry as \"entry\" in the line's args",
        ));
    }
    let mut log = open(args)?;
    let mut text = String::new();
    match given {
        Some(entry) => text.push_str(entry),
        None => {
            // Twice the largest record is room for any entry; more is not one entry.
            let limit = 2 * u64::from(log::frame::MAX_PAYLOAD);
            std::io::stdin()
                .take(limit + 1)
                .read_to_string(&mut text)
                .map_err(|e| CliError::io(format!("reading the entry from stdin: {e}")))?;
            if text.len() as u64 > limit {
                return Err(CliError::usage(format!(
                    "the entry on stdin is longer than {limit} bytes"
                )));
            }
        }
    }
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

/// `log readings --file F [--from D --to D] [--tap THING] [--chemical WHAT]
/// [--include-voided]`: the tank levels, deliveries, totaliser and tap readings as recorded
/// (their current values; corrections applied, voids left out unless asked for), oldest
/// first, one line each with its unit; `--tap` filters on the thing read (tank, product,
/// meter, tap) and `--chemical` on what was read (`level`, `delivery`, `totalizer`, or the
/// tap's parameter). Every number passes [`check_numbers`].
fn readings(args: &Args) -> CliResult {
    let log = open_existing(args)?;
    let query = query(args)?;
    args.switch("json");
    args.reject_unused()?;
    let views = log.readings(&query).map_err(log_error)?;
    let mut human = String::new();
    for m in log.recovery().messages() {
        human.push_str(&format!("recovery: {}\n", one_line(&m)));
    }
    let mut list = Vec::new();
    for v in &views {
        let value = serde_json::to_value(v).map_err(|e| CliError::io(e.to_string()))?;
        check_numbers(&value).map_err(|e| CliError {
            message: format!("reading {}: {}", v.id, e.message),
            ..e
        })?;
        list.push(value);
        let (thing, what) = v.reading.key_names();
        let amount = match &v.reading {
            log::Reading::TankLevel { level, unit, .. } => format!("{level} {unit}"),
            log::Reading::Delivery {
                amount,
                unit,
                note_number,
                ..
            } => format!("{amount} {unit} (note {note_number})"),
            log::Reading::Totalizer { value, unit, .. } => format!("{value} {unit}"),
            log::Reading::AtTap { value, unit, .. } => format!("{value} {unit}"),
        };
        let entered = v
            .entered_at
            .map(|e| format!(" (entered {})", e.format("%Y-%m-%d %H:%M %:z")))
            .unwrap_or_default();
        human.push_str(&format!(
            "{}{entered}  {}  {} / {}  {}  [{}] {}\n",
            v.at.format("%Y-%m-%d %H:%M %:z"),
            one_line(v.reading.operator()),
            one_line(thing),
            one_line(what),
            one_line(&amount),
            v.status.word(),
            v.id,
        ));
    }
    human.push_str(&format!("{} readings", views.len()));
    Ok(Report {
        human,
        json: json!({"readings": list, "recovery": recovery_json(&log)}),
    })
}

fn recovery_json(log: &Log) -> serde_json::Value {
    json!({
        "clean": log.recovery().is_clean(),
        "messages": log.recovery().messages(),
        "details": log.recovery(),
    })
}

/// `log list` as a [`Report`], for callers of [`super::dispatch`]; the command line and
/// `batch` stream it through [`list_to`] instead, without holding the list.
fn list(args: &Args) -> CliResult {
    let mut out = Vec::new();
    list_to(args, true, &mut out)?;
    let json = serde_json::from_slice(&out).map_err(|e| CliError::io(e.to_string()))?;
    let mut human = Vec::new();
    list_to(args, false, &mut human)?;
    Ok(Report {
        human: String::from_utf8_lossy(&human).into_owned(),
        json,
    })
}

/// Writes the matching entries one at a time: `{"entries":[…],"recovery":{…}}` with `json`,
/// else one line each and the count. Each entry passes [`check_numbers`] on its way out.
fn list_to(args: &Args, json: bool, out: &mut dyn Write) -> Result<(), CliError> {
    let log = open_existing(args)?;
    let query = query(args)?;
    args.switch("json");
    args.reject_unused()?;
    let written = |r: std::io::Result<()>| r.map_err(CliError::output);
    if json {
        written(out.write_all(b"{\"entries\":["))?;
    } else {
        for m in log.recovery().messages() {
            written(writeln!(out, "recovery: {}", one_line(&m)))?;
        }
    }
    let mut count = 0usize;
    each_view(&log, &query, |v| {
        let value = serde_json::to_value(&v).map_err(|e| CliError::io(e.to_string()))?;
        check_numbers(&value).map_err(|e| CliError {
            message: format!("entry {}: {}", v.id, e.message),
            ..e
        })?;
        count += 1;
        written(if json {
            let comma = if count > 1 { "," } else { "" };
            write!(out, "{comma}{value}")
        } else {
            // What was not computed is said as a dash, never as 0; what was is said as the
            // operator saw it (the figures shown, its basis), not at full precision.
            let shown = |shown: &str, value: f64| {
                if shown.trim().is_empty() {
                    value.to_string()
                } else {
                    shown.trim().to_string()
                }
            };
            let dose = v
                .dose
                .result(crate::log::record::result_id::DOSE)
                .map_or_else(
                    || "— mg/L".to_string(),
                    |r| {
                        let basis = r.basis.as_deref().map(|b| format!(" as {b}"));
                        format!(
                            "{} {}{}",
                            shown(&r.shown, r.value),
                            r.unit,
                            basis.unwrap_or_default()
                        )
                    },
                );
            let setting = v.dose.setting.as_ref().map_or_else(
                || "no setting".to_string(),
                |s| format!("{} {} %", s.device, shown(&s.shown, s.percent)),
            );
            writeln!(
                out,
                "{}  {}  {} / {}  {}  {}  [{}] {}",
                v.at.format("%Y-%m-%d %H:%M %:z"),
                one_line(&v.dose.operator),
                one_line(&v.dose.tap),
                one_line(&v.dose.chemical),
                dose,
                one_line(&setting),
                v.status.word(),
                v.id,
            )
        })
    })?;
    written(if json {
        writeln!(out, "],\"recovery\":{}}}", recovery_json(&log))
    } else {
        writeln!(out, "{count} entries")
    })
}

/// [`Log::for_each`] with a step that fails as the command line does: the step's own
/// error (a write that failed, a number refused) ends the walk and is the one reported.
fn each_view(
    log: &Log,
    query: &Query,
    mut step: impl FnMut(log::View) -> Result<(), CliError>,
) -> Result<(), CliError> {
    let mut failure = None;
    let walked = log.for_each(query, |view| {
        step(view).map_err(|e| {
            failure = Some(e);
            log::Error::new(log::ErrorKind::Io, "stopped by the command line")
        })
    });
    match failure {
        Some(e) => Err(e),
        None => walked.map_err(log_error),
    }
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
                format!(
                    "{}  entry       {} by {}\n",
                    e.at,
                    e.id,
                    one_line(&e.dose.operator)
                )
            }
            log::Record::Correction(c) => {
                format!(
                    "{}  correction  {} by {}: {}\n",
                    c.at,
                    c.id,
                    one_line(&c.dose.operator),
                    one_line(&c.reason)
                )
            }
            log::Record::Void(v) => format!(
                "{}  void        {} by {}: {}\n",
                v.at,
                v.id,
                one_line(&v.operator),
                one_line(&v.reason)
            ),
            log::Record::Reading(r) => format!(
                "{}  reading     {} by {}{}\n",
                r.at,
                r.id,
                one_line(r.reading.operator()),
                r.entered_at
                    .map(|e| format!(" (entered {e})"))
                    .unwrap_or_default()
            ),
            log::Record::ReadingCorrection(c) => format!(
                "{}  correction  {} by {}: {}\n",
                c.at,
                c.id,
                one_line(c.reading.operator()),
                one_line(&c.reason)
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

/// `log export` as a [`Report`], for callers of [`super::dispatch`]; the command line and
/// `batch` stream it through [`export_to`] instead.
fn export_cmd(args: &Args) -> CliResult {
    let mut text = Vec::new();
    let json = export_to(args, false, &mut text).and_then(|()| {
        let mut summary = Vec::new();
        export_to(args, true, &mut summary)?;
        serde_json::from_slice(&summary).map_err(|e| CliError::io(e.to_string()))
    })?;
    Ok(Report {
        human: String::from_utf8(text).map_err(|e| CliError::io(e.to_string()))?,
        json,
    })
}

/// Writes the export to `out` as it is read (with `json`, only the row count and the
/// recovery report: the export itself is the text). A failed write is the command's error.
fn export_to(args: &Args, json: bool, out: &mut dyn Write) -> Result<(), CliError> {
    let log = open_existing(args)?;
    let format = args.required_text("format")?;
    let query = query(args)?;
    // Read even for JSON Lines, whose numbers keep their logged units: a flag is never ignored.
    let units = units(args)?;
    let write = |log: &Log, query: &Query, out: &mut dyn Write| -> log::Result<usize> {
        match format {
            "csv" => export::csv(log, query, units, out),
            _ => export::jsonl(log, query, out),
        }
    };
    match format {
        "csv" | "jsonl" => {}
        other => {
            return Err(CliError::usage(format!(
                "--format must be csv or jsonl, got '{other}'"
            )));
        }
    };
    args.switch("json");
    args.reject_unused()?;
    let mut sink = std::io::sink();
    let mut target = Watched {
        inner: if json { &mut sink } else { out },
        failed: None,
    };
    let rows = write(&log, &query, &mut target);
    if let Some(e) = target.failed {
        return Err(CliError::output(e));
    }
    let rows = rows.map_err(log_error)?;
    for m in log.recovery().messages() {
        // A note beside the export; a failing stderr leaves the export itself intact.
        let _note_lost = writeln!(std::io::stderr(), "molefeed: recovery: {}", one_line(&m));
    }
    if json {
        writeln!(
            out,
            "{}",
            json!({"rows": rows, "recovery": recovery_json(&log)})
        )
        .map_err(CliError::output)?;
    }
    Ok(())
}

/// A writer that remembers its first failure, so a failed write of the export is reported
/// as the output failing rather than as whatever the exporter made of it.
struct Watched<'a> {
    inner: &'a mut dyn Write,
    failed: Option<std::io::Error>,
}

impl Write for Watched<'_> {
    fn write(&mut self, bytes: &[u8]) -> std::io::Result<usize> {
        self.inner.write(bytes).inspect_err(|e| self.remember(e))
    }

    fn flush(&mut self) -> std::io::Result<()> {
        self.inner.flush().inspect_err(|e| self.remember(e))
    }
}

impl Watched<'_> {
    fn remember(&mut self, e: &std::io::Error) {
        if self.failed.is_none() {
            self.failed = Some(std::io::Error::new(e.kind(), e.to_string()));
        }
    }
}

fn merge(args: &Args) -> CliResult {
    let mut log = open(args)?;
    let other = args.required_text("from")?;
    if std::fs::metadata(other).is_ok_and(|m| !m.is_file()) {
        return Err(CliError::io(format!(
            "{other} is not a regular file; merge reads another device's log file"
        )));
    }
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
/// `--note-bytes` pads each note so that a kill is likely to land inside a write. Refused
/// inside a batch: its ids would break the batch's one-JSON-answer-per-line stream.
fn soak(args: &Args) -> CliResult {
    if args.in_batch() {
        return Err(CliError::usage("log soak cannot run inside batch"));
    }
    let count = args
        .number("count")?
        .map_or(u64::MAX, |n| n.max(0.0) as u64);
    let largest_note = log::frame::MAX_PAYLOAD as usize;
    let padding = match args.number("note-bytes")? {
        None => 0,
        Some(n) if (0.0..=largest_note as f64).contains(&n) => n as usize,
        Some(n) => {
            return Err(CliError::usage(format!(
                "--note-bytes must be from 0 to {largest_note}, got {n}"
            )));
        }
    };
    let mut log = open(args)?;
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
            .map_err(CliError::output)?;
    }
    Ok(Report {
        human: String::new(),
        json: json!({"appended": count}),
    })
}
