//! Export of current entries for the monthly operating report: CSV and JSON Lines.
//!
//! Design choice: the CSV writer is a few lines of our own rather than a dependency, because
//! its rules are fixed and small: one row per entry, a fixed column order, RFC 4180 quoting
//! (a field with a comma, quote, CR or LF, or edge spaces is quoted and its quotes doubled)
//! and numbers printed with Rust's locale-independent shortest round-trip form, so "5.04"
//! never becomes "5,04". The report's numbers are the well-known results of each entry
//! ([`result_id`]), converted to the site's unit system with the exact unit definitions, the
//! unit in every numeric header, and an empty cell where nothing was computed (a gas feed has
//! no product volume: its cell is empty, not 0). JSON Lines carries each whole record as the
//! log holds it. Both exports stream entry by entry; the CSV borrows each row's strings from
//! the JSON (a version-1 body is upgraded first), which measured a fifth less CPU than parsing
//! every dose into owned values.

use super::record::{Dose, DoseV1, result_id};
use super::{Error, ErrorKind, Log, Query, RawRow, Result};
use crate::engine::dosing::units::{FlowUnit, L_PER_GAL, MassRateUnit, UnitSystem, VolumeRateUnit};
use serde::Deserialize;
use std::borrow::Cow;
use std::fmt::Write as _;
use std::io::Write;

/// A report column holding a number: its header stem, and how a row's value is found.
#[derive(Clone, Copy)]
enum Number {
    Flow,
    Dose,
    FeedMass,
    ProductVolume,
    ProductMass,
    PumpSetting,
    FeederSetting,
    CrossCheckRate,
}

impl Number {
    const ALL: [Number; 8] = [
        Number::Flow,
        Number::Dose,
        Number::FeedMass,
        Number::ProductVolume,
        Number::ProductMass,
        Number::PumpSetting,
        Number::FeederSetting,
        Number::CrossCheckRate,
    ];

    /// The header: the quantity, then its unit in the site's system.
    fn header(self, units: UnitSystem) -> &'static str {
        use UnitSystem::{Si, Us};
        match (self, units) {
            (Number::Flow, Us) => "flow_MGD",
            (Number::Flow, Si) => "flow_m3_per_d",
            (Number::Dose, _) => "dose_mg_per_L",
            (Number::FeedMass, Us) => "feed_mass_rate_lb_per_d",
            (Number::FeedMass, Si) => "feed_mass_rate_kg_per_d",
            (Number::ProductVolume, Us) => "product_volume_rate_gal_per_h",
            (Number::ProductVolume, Si) => "product_volume_rate_L_per_h",
            (Number::ProductMass, Us) => "product_mass_rate_lb_per_d",
            (Number::ProductMass, Si) => "product_mass_rate_kg_per_d",
            (Number::PumpSetting, _) => "pump_setting_percent",
            (Number::FeederSetting, _) => "feeder_setting_percent",
            (Number::CrossCheckRate, Us) => "cross_check_feed_rate_gal_per_h",
            (Number::CrossCheckRate, Si) => "cross_check_feed_rate_L_per_h",
        }
    }

    /// The value in the header's unit, or `None` when the entry has none.
    fn value(self, dose: &DoseRef<'_>, units: UnitSystem) -> Option<f64> {
        let result = |id: &str| dose.result(id);
        match self {
            Number::Flow => result(result_id::FLOW).and_then(|r| flow(r, units)),
            Number::Dose => result(result_id::DOSE).map(|r| r.value),
            Number::FeedMass => result(result_id::FEED_MASS_RATE).and_then(|r| mass(r, units)),
            Number::ProductVolume => {
                result(result_id::PRODUCT_VOLUME_RATE).and_then(|r| volume(&r.unit, r.value, units))
            }
            Number::ProductMass => {
                result(result_id::PRODUCT_MASS_RATE).and_then(|r| mass(r, units))
            }
            Number::PumpSetting => result(result_id::PUMP_SETTING).map(|r| r.value),
            Number::FeederSetting => result(result_id::FEEDER_SETTING).map(|r| r.value),
            Number::CrossCheckRate => dose
                .cross_check
                .as_ref()
                .and_then(|c| volume("L/h", c.feed_rate_l_per_h, units)),
        }
    }
}

/// m³/d in one MGD: 10⁶ US gallons of 3.785411784 L, over 1000 L/m³ (exact definitions).
const M3_PER_DAY_PER_MGD: f64 = L_PER_GAL * 1000.0;

/// A flow in MGD (US) or m³/d (SI); `None` for a unit the log's validation would refuse.
fn flow(r: &ResultRef<'_>, units: UnitSystem) -> Option<f64> {
    let unit = FlowUnit::parse(&r.unit).ok()?;
    let target = match units {
        UnitSystem::Us => FlowUnit::Mgd,
        UnitSystem::Si => FlowUnit::M3d,
    };
    if unit == target {
        return Some(r.value);
    }
    let m3_per_day = r.value
        * match unit {
            FlowUnit::Mgd => M3_PER_DAY_PER_MGD,
            FlowUnit::Gpm => 1440.0 * L_PER_GAL / 1000.0,
            FlowUnit::M3h => 24.0,
            FlowUnit::M3d => 1.0,
            FlowUnit::Lps => 86.4,
        };
    Some(match units {
        UnitSystem::Us => m3_per_day / M3_PER_DAY_PER_MGD,
        UnitSystem::Si => m3_per_day,
    })
}

/// A mass rate in lb/d (US) or kg/d (SI).
fn mass(r: &ResultRef<'_>, units: UnitSystem) -> Option<f64> {
    let unit = MassRateUnit::parse(&r.unit).ok()?;
    let target = match units {
        UnitSystem::Us => MassRateUnit::LbPerDay,
        UnitSystem::Si => MassRateUnit::KgPerDay,
    };
    Some(if unit == target {
        r.value
    } else {
        r.value * unit.kg_per_day() / target.kg_per_day()
    })
}

/// A volume rate in gal/h (US) or L/h (SI).
fn volume(unit: &str, value: f64, units: UnitSystem) -> Option<f64> {
    let unit = VolumeRateUnit::parse(unit).ok()?;
    let target = match units {
        UnitSystem::Us => VolumeRateUnit::Gph,
        UnitSystem::Si => VolumeRateUnit::Lph,
    };
    Some(if unit == target {
        value
    } else {
        value * unit.l_per_day() / target.l_per_day()
    })
}

/// Text columns before the numbers, in order.
const LEADING: [&str; 11] = [
    "id",
    "logged_at",
    "device",
    "site",
    "status",
    "operator",
    "tap",
    "calculator",
    "mode",
    "chemical",
    "product",
];

/// Text columns after the numbers, in order.
const TRAILING: [&str; 12] = [
    "setting_device",
    "cross_check_method",
    "cross_check_agrees",
    "inputs",
    "results",
    "trace",
    "cautions",
    "note",
    "revisions",
    "correction_reason",
    "last_change_id",
    "last_change_reason",
];

/// The CSV header for a site reporting in `units`, in the fixed column order.
pub fn csv_columns(units: UnitSystem) -> Vec<&'static str> {
    LEADING
        .iter()
        .copied()
        .chain(Number::ALL.iter().map(|n| n.header(units)))
        .chain(TRAILING.iter().copied())
        .collect()
}

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

/// The identity of an entry (or a correction: it has the same fields) with its dose.
#[derive(Deserialize)]
struct EntryRef<'a, D> {
    #[serde(borrow)]
    id: Cow<'a, str>,
    /// RFC 3339 with offset, exactly as stored.
    #[serde(borrow)]
    at: Cow<'a, str>,
    #[serde(borrow)]
    device: Cow<'a, str>,
    #[serde(borrow)]
    site: Cow<'a, str>,
    dose: D,
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

/// A version-2 dose borrowed from the record's JSON: the export's hot path allocates only for
/// the lists and for strings with escapes. Field names and meanings are [`Dose`]'s.
#[derive(Deserialize)]
struct DoseRef<'a> {
    #[serde(borrow)]
    operator: Cow<'a, str>,
    #[serde(borrow)]
    tap: Cow<'a, str>,
    #[serde(borrow)]
    calculator: Cow<'a, str>,
    #[serde(default, borrow)]
    mode: Option<Cow<'a, str>>,
    #[serde(borrow)]
    chemical: Cow<'a, str>,
    #[serde(default, borrow)]
    product: Option<ProductNameRef<'a>>,
    #[serde(default, borrow)]
    inputs: Vec<InputRef<'a>>,
    #[serde(default, borrow)]
    results: Vec<ResultRef<'a>>,
    #[serde(default, borrow)]
    setting: Option<SettingRef<'a>>,
    #[serde(default, borrow)]
    trace: Vec<Text<'a>>,
    #[serde(default, borrow)]
    cautions: Vec<CautionRef<'a>>,
    #[serde(default, borrow)]
    cross_check: Option<CrossCheckRef<'a>>,
    #[serde(default, borrow)]
    note: Cow<'a, str>,
}

/// Text borrowed from JSON where it has no escapes (serde only borrows direct `Cow` fields).
#[derive(Deserialize)]
struct Text<'a>(#[serde(borrow)] Cow<'a, str>);

#[derive(Deserialize)]
struct ProductNameRef<'a> {
    #[serde(borrow)]
    name: Cow<'a, str>,
}

#[derive(Deserialize)]
struct InputRef<'a> {
    #[serde(borrow)]
    name: Cow<'a, str>,
    #[serde(borrow)]
    text: Cow<'a, str>,
    #[serde(borrow)]
    unit: Cow<'a, str>,
    #[serde(default, borrow)]
    basis: Option<Cow<'a, str>>,
}

#[derive(Deserialize)]
struct ResultRef<'a> {
    #[serde(borrow)]
    id: Cow<'a, str>,
    value: f64,
    #[serde(borrow)]
    unit: Cow<'a, str>,
    #[serde(default, borrow)]
    basis: Option<Cow<'a, str>>,
}

#[derive(Deserialize)]
struct SettingRef<'a> {
    #[serde(borrow)]
    device: Cow<'a, str>,
}

#[derive(Deserialize)]
struct CautionRef<'a> {
    #[serde(borrow)]
    severity: Cow<'a, str>,
    #[serde(borrow)]
    text: Cow<'a, str>,
}

#[derive(Deserialize)]
struct CrossCheckRef<'a> {
    #[serde(borrow)]
    method: Cow<'a, str>,
    feed_rate_l_per_h: f64,
    agrees: bool,
}

impl DoseRef<'_> {
    fn result(&self, id: &str) -> Option<&ResultRef<'_>> {
        self.results.iter().find(|r| r.id == id)
    }

    /// The same view of an owned dose (a version-1 body, upgraded).
    fn owned(d: Dose) -> DoseRef<'static> {
        let own = Cow::Owned;
        DoseRef {
            operator: own(d.operator),
            tap: own(d.tap),
            calculator: own(d.calculator),
            mode: d.mode.map(own),
            chemical: own(d.chemical),
            product: d.product.map(|p| ProductNameRef { name: own(p.name) }),
            inputs: d
                .inputs
                .into_iter()
                .map(|i| InputRef {
                    name: own(i.name),
                    text: own(i.text),
                    unit: own(i.unit),
                    basis: i.basis.map(own),
                })
                .collect(),
            results: d
                .results
                .into_iter()
                .map(|r| ResultRef {
                    id: own(r.id),
                    value: r.value,
                    unit: own(r.unit),
                    basis: r.basis.map(own),
                })
                .collect(),
            setting: d.setting.map(|s| SettingRef {
                device: own(s.device),
            }),
            trace: d.trace.into_iter().map(|t| Text(own(t))).collect(),
            cautions: d
                .cautions
                .into_iter()
                .map(|c| CautionRef {
                    severity: own(c.severity),
                    text: own(c.text),
                })
                .collect(),
            cross_check: d.cross_check.map(|c| CrossCheckRef {
                method: own(c.method),
                feed_rate_l_per_h: c.feed_rate_l_per_h,
                agrees: c.agrees,
            }),
            note: own(d.note),
        }
    }
}

/// An entry or correction body of either record version. The raw rows carry the JSON without
/// its version byte; a version-1 dose lacks the required `calculator`, so a body that does not
/// read as version 2 is read as version 1 and upgraded the same way
/// [`super::record::decode`] does.
fn parse_body(json: &[u8]) -> Result<EntryRef<'_, DoseRef<'_>>> {
    match parse::<EntryRef<'_, DoseRef<'_>>>(json) {
        Ok(body) => Ok(body),
        Err(e) => match parse::<EntryRef<'_, DoseV1>>(json) {
            Ok(old) => Ok(EntryRef {
                id: old.id,
                at: old.at,
                device: old.device,
                site: old.site,
                dose: DoseRef::owned(old.dose.upgrade()),
            }),
            Err(_) => Err(e),
        },
    }
}

/// Builds CSV rows into reused buffers.
struct CsvRow {
    units: UnitSystem,
    line: String,
    scratch: String,
    fields: usize,
}

impl CsvRow {
    fn new(units: UnitSystem) -> CsvRow {
        CsvRow {
            units,
            line: String::new(),
            scratch: String::new(),
            fields: 0,
        }
    }

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

    /// A number, or an empty cell when nothing was computed.
    fn number(&mut self, value: Option<f64>) {
        match value {
            Some(v) => self.plain(v),
            None => self.plain(""),
        }
    }

    /// The row (without the line end), in [`csv_columns`] order.
    fn format(&mut self, raw: &RawRow<'_>) -> Result<&str> {
        self.line.clear();
        self.fields = 0;
        let entry = parse_body(raw.root)?;
        let corrected = raw.content.map(parse_body).transpose()?;
        let correction: Option<ChangeRef<'_>> = raw.content.map(parse).transpose()?;
        let change: Option<ChangeRef<'_>> = raw.last_change.map(parse).transpose()?;
        let d = corrected.as_ref().map_or(&entry.dose, |c| &c.dose);
        self.text(&entry.id);
        self.text(&entry.at);
        self.text(&entry.device);
        self.text(&entry.site);
        self.plain(raw.status.word());
        self.text(&d.operator);
        self.text(&d.tap);
        self.text(&d.calculator);
        self.text(d.mode.as_deref().unwrap_or(""));
        self.text(&d.chemical);
        self.text(d.product.as_ref().map_or("", |p| &p.name));
        for n in Number::ALL {
            self.number(n.value(d, self.units));
        }
        self.text(d.setting.as_ref().map_or("", |s| &s.device));
        let check = d.cross_check.as_ref();
        self.text(check.map_or("", |c| &c.method));
        match check {
            Some(c) => self.plain(c.agrees),
            None => self.plain(""),
        }
        self.built(|out| inputs(d, out));
        self.built(|out| results(d, out));
        self.built(|out| join_lines(&d.trace, out));
        self.built(|out| cautions(d, out));
        self.text(&d.note);
        self.plain(raw.revisions);
        self.text(correction.as_ref().map_or("", |c| &c.reason));
        self.text(change.as_ref().map_or("", |c| &c.id));
        self.text(change.as_ref().map_or("", |c| &c.reason));
        Ok(&self.line)
    }
}

/// `name=text unit` per input, as typed.
fn inputs(d: &DoseRef<'_>, out: &mut String) {
    for (i, q) in d.inputs.iter().enumerate() {
        if i > 0 {
            out.push_str("; ");
        }
        let _ = write!(out, "{}={}", q.name, q.text);
        unit_and_basis(&q.unit, q.basis.as_deref(), out);
    }
}

/// `id=value unit` per result, at full precision in the unit it was logged in.
fn results(d: &DoseRef<'_>, out: &mut String) {
    for (i, r) in d.results.iter().enumerate() {
        if i > 0 {
            out.push_str("; ");
        }
        let _ = write!(out, "{}={}", r.id, r.value);
        unit_and_basis(&r.unit, r.basis.as_deref(), out);
    }
}

fn unit_and_basis(unit: &str, basis: Option<&str>, out: &mut String) {
    if !unit.is_empty() {
        let _ = write!(out, " {unit}");
    }
    if let Some(basis) = basis {
        let _ = write!(out, " as {basis}");
    }
}

/// `severity: text` per caution, one a line.
fn join_lines(lines: &[Text<'_>], out: &mut String) {
    for (i, line) in lines.iter().enumerate() {
        if i > 0 {
            out.push('\n');
        }
        out.push_str(&line.0);
    }
}

fn cautions(d: &DoseRef<'_>, out: &mut String) {
    for (i, c) in d.cautions.iter().enumerate() {
        if i > 0 {
            out.push('\n');
        }
        let _ = write!(out, "{}: {}", c.severity, c.text);
    }
}

/// Writes the matching entries as CSV with a header row in the site's `units`; returns the
/// number of rows.
pub fn csv(log: &Log, query: &Query, units: UnitSystem, out: &mut dyn Write) -> Result<usize> {
    csv_header(units, out)?;
    csv_rows(log, query, units, out)
}

/// The CSV header row alone: an export that gathers several logs (one per site) into one
/// file writes it once, then each log's rows.
pub fn csv_header(units: UnitSystem, out: &mut dyn Write) -> Result<()> {
    writeln!(out, "{}", csv_columns(units).join(",")).map_err(write_error)
}

/// Writes the matching entries as CSV rows in `units` without a header; returns the number
/// of rows.
pub fn csv_rows(log: &Log, query: &Query, units: UnitSystem, out: &mut dyn Write) -> Result<usize> {
    let mut out = std::io::BufWriter::new(out);
    let mut rows = 0;
    let mut row = CsvRow::new(units);
    log.for_each_raw(query, |raw| {
        rows += 1;
        out.write_all(row.format(raw)?.as_bytes())
            .and_then(|()| out.write_all(b"\n"))
            .map_err(write_error)
    })?;
    out.flush().map_err(write_error)?;
    Ok(rows)
}

/// Writes the matching entries as JSON Lines, one object per entry with its whole current
/// record (version 2 shape); returns the count.
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
    use crate::log::record;

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
        let mut dose = DoseRef::owned(record::example_dose());
        dose.results.truncate(2);
        dose.results[0].value = 1e5;
        let mut text = String::new();
        results(&dose, &mut text);
        assert_eq!(text, "flow=100000 m³/d; dose=1.8 mg/L as Cl2");
    }

    /// Hand-computed from the definitions: 1 MGD = 10⁶ gal/d × 3.785411784 L/gal = 3785.411784
    /// m³/d; 1 lb = 0.45359237 kg; 1 gal/h = 3.785411784 L/h.
    #[test]
    fn numbers_are_converted_to_the_sites_units() {
        let close = |a: Option<f64>, b: f64| {
            let a = a.unwrap();
            assert!((a - b).abs() <= 1e-12 * b.abs().max(1.0), "{a} vs {b}");
        };
        let mut dose = DoseRef::owned(record::example_dose());
        dose.results[0].unit = "MGD".into();
        dose.results[0].value = 1.0;
        dose.results[2].unit = "lb/d".into();
        dose.results[2].value = 100.0;
        dose.results[3].unit = "gal/h".into();
        dose.results[3].value = 2.0;
        close(Number::Flow.value(&dose, UnitSystem::Si), 3785.411784);
        close(Number::Flow.value(&dose, UnitSystem::Us), 1.0);
        close(Number::FeedMass.value(&dose, UnitSystem::Si), 45.359237);
        close(
            Number::ProductVolume.value(&dose, UnitSystem::Si),
            7.570823568,
        );
        dose.results[0].unit = "m³/h".into();
        dose.results[0].value = 157.725491;
        // 157.725491 m³/h × 24 h/d = 3785.411784 m³/d = 1 MGD.
        close(Number::Flow.value(&dose, UnitSystem::Us), 1.0);
        close(
            Number::CrossCheckRate.value(&dose, UnitSystem::Us),
            5.1 / 3.785411784,
        );
        dose.results.retain(|r| r.id != "product_volume_rate");
        assert_eq!(Number::ProductVolume.value(&dose, UnitSystem::Us), None);
    }

    #[test]
    fn every_number_header_names_its_unit_in_each_system() {
        let si = csv_columns(UnitSystem::Si);
        let us = csv_columns(UnitSystem::Us);
        for n in Number::ALL {
            let (s, u) = (n.header(UnitSystem::Si), n.header(UnitSystem::Us));
            assert!(si.contains(&s) && us.contains(&u));
            let unit_of = |h: &str| {
                [
                    "_MGD",
                    "_m3_per_d",
                    "_mg_per_L",
                    "_lb_per_d",
                    "_kg_per_d",
                    "_gal_per_h",
                    "_L_per_h",
                    "_percent",
                ]
                .into_iter()
                .find(|suffix| h.ends_with(suffix))
            };
            assert!(unit_of(s).is_some() && unit_of(u).is_some(), "{s} / {u}");
        }
        assert!(us.contains(&"flow_MGD") && si.contains(&"flow_m3_per_d"));
        assert_eq!(si.len(), us.len());
    }
}
