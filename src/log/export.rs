//! Export of current entries for the monthly operating report: CSV and JSON Lines.
//!
//! Design choice: the CSV writer is a few lines of our own rather than a dependency, because
//! its rules are fixed and small: one row per entry, a fixed column order, units in the
//! header names, RFC 4180 quoting (a field with a comma, quote, CR or LF, or edge spaces is
//! quoted and its quotes doubled) and numbers printed with Rust's locale-independent shortest
//! round-trip form, so "5.04" never becomes "5,04". Both exports stream entry by entry.

use super::record::Quantity;
use super::{Error, Log, Query, Result, View};
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

fn quantities(list: &[Quantity]) -> String {
    list.iter()
        .map(|q| format!("{}={} {}", q.name, q.value, q.unit))
        .collect::<Vec<_>>()
        .join("; ")
}

/// One CSV row (without the line end) for a view, in [`CSV_COLUMNS`] order.
pub fn csv_row(view: &View) -> String {
    let d = &view.dose;
    let check = d.cross_check.as_ref();
    let fields: [String; 24] = [
        view.id.to_string(),
        view.at.to_rfc3339(),
        view.device.clone(),
        view.site.clone(),
        serde_json::to_value(view.status)
            .ok()
            .and_then(|v| v.as_str().map(String::from))
            .unwrap_or_default(),
        d.operator.clone(),
        d.tap.clone(),
        d.chemical.clone(),
        d.product.clone(),
        d.flow_m3_per_h.to_string(),
        d.dose_mg_per_l.to_string(),
        d.feed_rate_l_per_h.to_string(),
        d.pump_setting_percent.to_string(),
        check.map(|c| c.method.clone()).unwrap_or_default(),
        check
            .map(|c| c.feed_rate_l_per_h.to_string())
            .unwrap_or_default(),
        check.map(|c| c.agrees.to_string()).unwrap_or_default(),
        quantities(&d.inputs),
        quantities(&d.results),
        d.trace.join("\n"),
        d.cautions.join("\n"),
        d.note.clone(),
        view.revisions.to_string(),
        view.last_change
            .as_ref()
            .map(|c| c.id.to_string())
            .unwrap_or_default(),
        view.last_change
            .as_ref()
            .map(|c| c.reason.clone())
            .unwrap_or_default(),
    ];
    let mut line = String::with_capacity(1024);
    for (i, field) in fields.iter().enumerate() {
        if i > 0 {
            line.push(',');
        }
        push_field(&mut line, field);
    }
    line
}

/// Writes the matching entries as CSV with a header row; returns the number of rows.
pub fn csv(log: &Log, query: &Query, out: &mut dyn Write) -> Result<usize> {
    let mut out = std::io::BufWriter::new(out);
    writeln!(out, "{}", CSV_COLUMNS.join(",")).map_err(write_error)?;
    let mut rows = 0;
    log.for_each(query, |view| {
        rows += 1;
        writeln!(out, "{}", csv_row(&view)).map_err(write_error)
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
    fn decimals_use_a_point_in_any_locale() {
        let text = quantities(&[Quantity {
            name: "dose".into(),
            value: 1.25,
            unit: "mg/L".into(),
        }]);
        assert_eq!(text, "dose=1.25 mg/L");
    }
}
