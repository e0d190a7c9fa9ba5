//! Export of current entries for the monthly operating report: CSV and JSON Lines.
//!
//! Design choice: the CSV writer is a few lines of our own rather than a dependency, because
//! its rules are fixed and small: one row per entry, a fixed column order, units in the
//! header names, RFC 4180 quoting (a field with a comma, quote, CR or LF, or edge spaces is
//! quoted and its quotes doubled) and numbers printed with Rust's locale-independent shortest
//! round-trip form, so "5.04" never becomes "5,04". Both exports stream entry by entry.

use super::{Error, ErrorKind, Log, Query, RawRow, Result};
use serde::Deserialize;
use std::borrow::Cow;
use std::fmt::Write as _;
use std::io::Write;

/// The CSV header, in the fixed column order.
pub const CSV_COLUMNS: [&str; 24] = [
    "id",
    "logged_at",
    "device",
    "site",
    "status",
    "operator",
    "tap",
    "chemical",
    "product",
    "flow_m3_per_h",
    "dose_mg_per_L",
    "feed_rate_L_per_h",
    "pump_setting_percent",
    "cross_check_method",
    "cross_check_feed_rate_L_per_h",
    "cross_check_agrees",
    "inputs",
    "results",
    "trace",
    "cautions",
    "note",
    "revisions",
    "last_change_id",
    "last_change_reason",
];

fn write_error(e: std::io::Error) -> Error {
    Error::io("writing the export to", std::path::Path::new("output"), &e)
}

/// Characters a spreadsheet takes as the start of a formula when a cell begins with them: the
/// OWASP list (with NUL and LF, which some readers drop to expose what follows) and the
/// full-width forms some spreadsheets fold into the ASCII ones.
const FORMULA_STARTS: [char; 12] = [
    '=', '+', '-', '@', '\t', '\r', '\n', '\0', '\u{ff1d}', '\u{ff0b}', '\u{ff0d}', '\u{ff20}',
];

/// The mark put before a cell a spreadsheet would run. A cell that already begins with it
/// gets one more, so taking one mark off any marked cell ([`csv_cell_text`]) gives back
/// exactly the text that was logged.
const DEFUSE_MARK: char = '\'';

fn needs_mark(field: &str) -> bool {
    field.starts_with(FORMULA_STARTS) || field.starts_with(DEFUSE_MARK)
}

/// A text cell as written to CSV: one a spreadsheet would run as a formula (a note such as
/// `=HYPERLINK(…)` typed on a shared tablet) gets a leading apostrophe, the usual defence
/// (OWASP, "CSV Injection"), so the monthly report opens as text; then quoted if a CSV reader
/// would otherwise misread it. Numbers are written by `plain` and never changed. The JSON Lines
/// export keeps every text exactly.
pub fn csv_text(field: &str) -> String {
    let mut out = String::with_capacity(field.len() + 3);
    if needs_mark(field) {
        push_field(&mut out, &format!("{DEFUSE_MARK}{field}"));
    } else {
        push_field(&mut out, field);
    }
    out
}

/// The logged text of a text cell as a CSV reader returns it (quoting already undone): the
/// inverse of [`csv_text`], for reading an export back.
pub fn csv_cell_text(cell: &str) -> &str {
    cell.strip_prefix(DEFUSE_MARK).unwrap_or(cell)
}

/// Appends `field` to `line`, quoted if a CSV reader would otherwise misread it.
fn push_field(line: &mut String, field: &str) {
    let needs_quotes =
        field.contains([',', '"', '\r', '\n']) || field.starts_with(' ') || field.ends_with(' ');
    if needs_quotes {
        line.push('"');
        line.push_str(&field.replace('"', "\"\""));
        line.push('"');
    } else {
        line.push_str(field);
    }
}

/// A quantity borrowed from a record's JSON.
#[derive(Deserialize)]
struct QuantityRef<'a> {
    #[serde(borrow)]
    name: Cow<'a, str>,
    value: f64,
    #[serde(borrow)]
    unit: Cow<'a, str>,
}

/// Text borrowed from JSON where it has no escapes (serde only borrows direct `Cow` fields).
#[derive(Deserialize)]
struct Text<'a>(#[serde(borrow)] Cow<'a, str>);

#[derive(Deserialize)]
struct CrossCheckRef<'a> {
    #[serde(borrow)]
    method: Cow<'a, str>,
    feed_rate_l_per_h: f64,
    agrees: bool,
}

/// The dose of an entry or correction, borrowed: the export's hot path allocates only for
/// the lists and for strings with escapes.
#[derive(Deserialize)]
struct DoseRef<'a> {
    #[serde(borrow)]
    operator: Cow<'a, str>,
    #[serde(borrow)]
    tap: Cow<'a, str>,
    #[serde(borrow)]
    chemical: Cow<'a, str>,
    #[serde(borrow)]
    product: Cow<'a, str>,
    flow_m3_per_h: f64,
    dose_mg_per_l: f64,
    feed_rate_l_per_h: f64,
    pump_setting_percent: f64,
    #[serde(default, borrow)]
    inputs: Vec<QuantityRef<'a>>,
    #[serde(default, borrow)]
    results: Vec<QuantityRef<'a>>,
    #[serde(default, borrow)]
    trace: Vec<Text<'a>>,
    #[serde(default, borrow)]
    cautions: Vec<Text<'a>>,
    #[serde(default, borrow)]
    cross_check: Option<CrossCheckRef<'a>>,
    #[serde(default, borrow)]
    note: Cow<'a, str>,
}

/// The fields of an entry (or a correction: it has the same ones) that a row needs.
#[derive(Deserialize)]
struct EntryRef<'a> {
    #[serde(borrow)]
    id: Cow<'a, str>,
    /// RFC 3339 with offset, exactly as stored.
    #[serde(borrow)]
    at: Cow<'a, str>,
    #[serde(borrow)]
    device: Cow<'a, str>,
    #[serde(borrow)]
    site: Cow<'a, str>,
    #[serde(borrow)]
    dose: DoseRef<'a>,
}

#[derive(Deserialize)]
struct ChangeRef<'a> {
    #[serde(borrow)]
    id: Cow<'a, str>,
    #[serde(borrow)]
    reason: Cow<'a, str>,
}

fn parse<'a, T: Deserialize<'a>>(json: &'a [u8]) -> Result<T> {
    let unreadable = |why: String| {
        Error::new(
            ErrorKind::InvalidEntry,
            format!("a record could not be read for export: {why}"),
        )
    };
    // One UTF-8 check of the whole body is cheaper than serde_json checking each string.
    let text = std::str::from_utf8(json).map_err(|e| unreadable(e.to_string()))?;
    serde_json::from_str(text).map_err(|e| unreadable(e.to_string()))
}

/// Builds CSV rows into reused buffers.
#[derive(Default)]
struct CsvRow {
    line: String,
    scratch: String,
    fields: usize,
}

impl CsvRow {
    fn separate(&mut self) {
        if self.fields > 0 {
            self.line.push(',');
        }
        self.fields += 1;
    }

    fn text(&mut self, field: &str) {
        self.separate();
        if needs_mark(field) {
            self.line.push_str(&csv_text(field));
        } else {
            push_field(&mut self.line, field);
        }
    }

    /// A field assembled by `fill` in the scratch buffer, then quoted as needed.
    fn built(&mut self, fill: impl FnOnce(&mut String)) {
        let mut scratch = std::mem::take(&mut self.scratch);
        scratch.clear();
        fill(&mut scratch);
        self.text(&scratch);
        self.scratch = scratch;
    }

    /// Numbers and other values whose text never needs quoting.
    fn plain(&mut self, value: impl std::fmt::Display) {
        self.separate();
        let _ = write!(self.line, "{value}");
    }

    /// The row (without the line end), in [`CSV_COLUMNS`] order.
    fn format(&mut self, raw: &RawRow<'_>) -> Result<&str> {
        self.line.clear();
        self.fields = 0;
        let entry: EntryRef<'_> = parse(raw.root)?;
        let corrected: Option<EntryRef<'_>> = raw.content.map(parse).transpose()?;
        let change: Option<ChangeRef<'_>> = raw.last_change.map(parse).transpose()?;
        let d = corrected.as_ref().map_or(&entry.dose, |c| &c.dose);
        self.text(&entry.id);
        self.text(&entry.at);
        self.text(&entry.device);
        self.text(&entry.site);
        self.plain(raw.status.word());
        self.text(&d.operator);
        self.text(&d.tap);
        self.text(&d.chemical);
        self.text(&d.product);
        self.plain(d.flow_m3_per_h);
        self.plain(d.dose_mg_per_l);
        self.plain(d.feed_rate_l_per_h);
        self.plain(d.pump_setting_percent);
        let check = d.cross_check.as_ref();
        self.text(check.map_or("", |c| &c.method));
        match check {
            Some(c) => {
                self.plain(c.feed_rate_l_per_h);
                self.plain(c.agrees);
            }
            None => {
                self.plain("");
                self.plain("");
            }
        }
        self.built(|out| quantities(&d.inputs, out));
        self.built(|out| quantities(&d.results, out));
        self.built(|out| join_lines(&d.trace, out));
        self.built(|out| join_lines(&d.cautions, out));
        self.text(&d.note);
        self.plain(raw.revisions);
        self.text(change.as_ref().map_or("", |c| &c.id));
        self.text(change.as_ref().map_or("", |c| &c.reason));
        Ok(&self.line)
    }
}

fn quantities(list: &[QuantityRef<'_>], out: &mut String) {
    for (i, q) in list.iter().enumerate() {
        if i > 0 {
            out.push_str("; ");
        }
        let _ = write!(out, "{}={} {}", q.name, q.value, q.unit);
    }
}

fn join_lines(lines: &[Text<'_>], out: &mut String) {
    for (i, line) in lines.iter().enumerate() {
        if i > 0 {
            out.push('\n');
        }
        out.push_str(&line.0);
    }
}

/// Writes the matching entries as CSV with a header row; returns the number of rows.
pub fn csv(log: &Log, query: &Query, out: &mut dyn Write) -> Result<usize> {
    csv_header(out)?;
    csv_rows(log, query, out)
}

/// The CSV header row alone: an export that gathers several logs (one per site) into one
/// file writes it once, then each log's rows.
pub fn csv_header(out: &mut dyn Write) -> Result<()> {
    writeln!(out, "{}", CSV_COLUMNS.join(",")).map_err(write_error)
}

/// Writes the matching entries as CSV rows without a header; returns the number of rows.
pub fn csv_rows(log: &Log, query: &Query, out: &mut dyn Write) -> Result<usize> {
    let mut out = std::io::BufWriter::new(out);
    let mut rows = 0;
    let mut row = CsvRow::default();
    log.for_each_raw(query, |raw| {
        rows += 1;
        out.write_all(row.format(raw)?.as_bytes())
            .and_then(|()| out.write_all(b"\n"))
            .map_err(write_error)
    })?;
    out.flush().map_err(write_error)?;
    Ok(rows)
}

/// Writes the matching entries as JSON Lines, one object per entry; returns the count.
pub fn jsonl(log: &Log, query: &Query, out: &mut dyn Write) -> Result<usize> {
    let mut out = std::io::BufWriter::new(out);
    let mut rows = 0;
    log.for_each(query, |view| {
        rows += 1;
        serde_json::to_writer(&mut out, &view)
            .map_err(|e| write_error(std::io::Error::other(e)))?;
        out.write_all(b"\n").map_err(write_error)
    })?;
    out.flush().map_err(write_error)?;
    Ok(rows)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn quoted(field: &str) -> String {
        let mut line = String::new();
        push_field(&mut line, field);
        line
    }

    #[test]
    fn quoting_cases() {
        let cases = [
            ("plain", "plain"),
            ("a,b", "\"a,b\""),
            ("say \"hi\"", "\"say \"\"hi\"\"\""),
            ("two\nlines", "\"two\nlines\""),
            ("cr\rhere", "\"cr\rhere\""),
            (" padded", "\" padded\""),
            ("", ""),
            ("5.04", "5.04"),
        ];
        for (input, expected) in cases {
            assert_eq!(quoted(input), expected, "{input:?}");
        }
    }

    #[test]
    fn text_a_spreadsheet_would_run_is_defused() {
        let cases = [
            ("=SUM(A1:A9)", "'=SUM(A1:A9)"),
            ("+1 mg/L", "'+1 mg/L"),
            ("-0.2 after the fix", "'-0.2 after the fix"),
            ("@user", "'@user"),
            ("=1,2", "\"'=1,2\""),
            ("a = b", "a = b"),
            ("plain", "plain"),
            ("\0=1+1", "'\0=1+1"),
            ("\n=1+1", "\"'\n=1+1\""),
            ("\t=1", "'\t=1"),
            ("\r=1", "\"'\r=1\""),
            ("\u{ff1d}1+1", "'\u{ff1d}1+1"),
            ("\u{ff0b}1", "'\u{ff0b}1"),
            ("\u{ff0d}1", "'\u{ff0d}1"),
            ("\u{ff20}user", "'\u{ff20}user"),
            ("'quoted", "''quoted"),
        ];
        for (input, expected) in cases {
            assert_eq!(csv_text(input), expected, "{input:?}");
        }
    }

    #[test]
    fn decimals_use_a_point_in_any_locale() {
        let mut text = String::new();
        let list: Vec<QuantityRef<'_>> =
            serde_json::from_str(r#"[{"name":"dose","value":1.25,"unit":"mg/L"},{"name":"flow","value":1e5,"unit":"m3/h"}]"#)
                .unwrap();
        quantities(&list, &mut text);
        assert_eq!(text, "dose=1.25 mg/L; flow=100000 m3/h");
    }
}
