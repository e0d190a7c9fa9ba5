//! The log's own record types and their payload encoding.
//!
//! These types belong to the log, not the engine: the engine may change how it computes, but
//! a record written today must read the same in ten years, so the log copies what was shown
//! (inputs, results, trace summary, cautions) as plain values.
//!
//! Design choice: a payload is a small binary key followed by the record as JSON. The key
//! holds exactly what the in-memory index needs (kind, id, time, reference, tap, chemical), so
//! opening a log of 100 000 entries parses no JSON at all; the JSON stays the readable,
//! versioned source of the full record. The first byte is the record version: a reader
//! refuses versions it does not know instead of guessing.

use super::error::{Error, ErrorKind, Result};
use chrono::{DateTime, FixedOffset};
use serde::{Deserialize, Serialize};
use uuid::Uuid;

/// The payload layout this build writes and reads.
pub const RECORD_VERSION: u8 = 1;

/// A named value with its unit, as the calculation screen showed it.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Quantity {
    pub name: String,
    pub value: f64,
    pub unit: String,
}

/// An independent check of the pump, such as a calibration-column drawdown.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CrossCheck {
    pub method: String,
    pub feed_rate_l_per_h: f64,
    pub agrees: bool,
}

/// What an operator records about one dose change; a correction replaces all of it.
///
/// The four headline numbers have fixed units (in their names) because the monthly report
/// is built from them; everything else the calculation showed is kept in the lists.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Dose {
    /// Operator initials.
    pub operator: String,
    /// The tap or dosing point.
    pub tap: String,
    pub chemical: String,
    pub product: String,
    pub flow_m3_per_h: f64,
    pub dose_mg_per_l: f64,
    pub feed_rate_l_per_h: f64,
    pub pump_setting_percent: f64,
    #[serde(default)]
    pub inputs: Vec<Quantity>,
    #[serde(default)]
    pub results: Vec<Quantity>,
    /// The trace summary lines shown with the result.
    #[serde(default)]
    pub trace: Vec<String>,
    /// The cautions shown with the result.
    #[serde(default)]
    pub cautions: Vec<String>,
    #[serde(default)]
    pub cross_check: Option<CrossCheck>,
    #[serde(default)]
    pub note: String,
}

/// A dose change as first logged.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Entry {
    pub id: Uuid,
    pub device: String,
    pub at: DateTime<FixedOffset>,
    pub site: String,
    pub dose: Dose,
}

/// A later statement that an entry's content should read differently, and why.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Correction {
    pub id: Uuid,
    pub device: String,
    pub at: DateTime<FixedOffset>,
    pub site: String,
    /// The original entry (never another correction).
    pub corrects: Uuid,
    pub reason: String,
    pub dose: Dose,
}

/// A later statement that an entry should not count, and why.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Void {
    pub id: Uuid,
    pub device: String,
    pub at: DateTime<FixedOffset>,
    pub site: String,
    pub operator: String,
    /// The original entry (never a correction).
    pub voids: Uuid,
    pub reason: String,
}

/// Anything stored in the log.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(tag = "type", rename_all = "lowercase")]
pub enum Record {
    Entry(Entry),
    Correction(Correction),
    Void(Void),
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Kind {
    Entry = 1,
    Correction = 2,
    Void = 3,
}

impl Record {
    pub fn id(&self) -> Uuid {
        match self {
            Record::Entry(e) => e.id,
            Record::Correction(c) => c.id,
            Record::Void(v) => v.id,
        }
    }

    pub fn at(&self) -> DateTime<FixedOffset> {
        match self {
            Record::Entry(e) => e.at,
            Record::Correction(c) => c.at,
            Record::Void(v) => v.at,
        }
    }

    pub fn kind(&self) -> Kind {
        match self {
            Record::Entry(_) => Kind::Entry,
            Record::Correction(_) => Kind::Correction,
            Record::Void(_) => Kind::Void,
        }
    }

    /// The entry this record revises, for corrections and voids.
    pub fn refers_to(&self) -> Option<Uuid> {
        match self {
            Record::Entry(_) => None,
            Record::Correction(c) => Some(c.corrects),
            Record::Void(v) => Some(v.voids),
        }
    }

    fn dose(&self) -> Option<&Dose> {
        match self {
            Record::Entry(e) => Some(&e.dose),
            Record::Correction(c) => Some(&c.dose),
            Record::Void(_) => None,
        }
    }

    /// Rejects records that would make the monthly report wrong or unreadable.
    pub fn validate(&self) -> Result<()> {
        let (device, site) = match self {
            Record::Entry(e) => (&e.device, &e.site),
            Record::Correction(c) => (&c.device, &c.site),
            Record::Void(v) => (&v.device, &v.site),
        };
        required("device", device)?;
        required("site", site)?;
        match self {
            Record::Correction(c) => required("reason", &c.reason)?,
            Record::Void(v) => {
                required("reason", &v.reason)?;
                initials(&v.operator)?;
            }
            Record::Entry(_) => {}
        }
        if let Some(dose) = self.dose() {
            initials(&dose.operator)?;
            required("tap", &dose.tap)?;
            required("chemical", &dose.chemical)?;
            required("product", &dose.product)?;
            non_negative("flow_m3_per_h", dose.flow_m3_per_h)?;
            non_negative("dose_mg_per_l", dose.dose_mg_per_l)?;
            non_negative("feed_rate_l_per_h", dose.feed_rate_l_per_h)?;
            let pump = non_negative("pump_setting_percent", dose.pump_setting_percent)?;
            if pump > 100.0 {
                return Err(invalid(
                    "pump_setting_percent",
                    format!("pump_setting_percent {pump} is above 100"),
                ));
            }
            for q in dose.inputs.iter().chain(&dose.results) {
                if !q.value.is_finite() {
                    return Err(invalid(
                        "inputs",
                        format!("{} must be a finite number", q.name),
                    ));
                }
            }
            if let Some(check) = &dose.cross_check {
                non_negative("cross_check.feed_rate_l_per_h", check.feed_rate_l_per_h)?;
            }
        }
        Ok(())
    }
}

fn invalid(field: &'static str, message: String) -> Error {
    Error::new(ErrorKind::InvalidEntry, message).with("field", field)
}

/// Key strings carry a 16-bit length; longer names are a mistake, not a tap.
const MAX_NAME: usize = 200;

fn required(field: &'static str, value: &str) -> Result<()> {
    if value.trim().is_empty() {
        return Err(invalid(field, format!("{field} must not be empty")));
    }
    if value.len() > MAX_NAME && matches!(field, "tap" | "chemical" | "site" | "device") {
        return Err(invalid(
            field,
            format!("{field} is longer than {MAX_NAME} bytes"),
        ));
    }
    Ok(())
}

fn initials(value: &str) -> Result<()> {
    let count = value.chars().count();
    if count == 0 || count > 8 || !value.chars().all(char::is_alphanumeric) {
        return Err(invalid(
            "operator",
            format!("operator initials must be 1 to 8 letters or digits, got '{value}'"),
        ));
    }
    Ok(())
}

fn non_negative(field: &'static str, value: f64) -> Result<f64> {
    if !value.is_finite() || value < 0.0 {
        return Err(invalid(
            field,
            format!("{field} must be a number of zero or more, got {value}"),
        ));
    }
    Ok(value)
}

/// What the index needs from a payload, read without parsing its JSON.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Key<'a> {
    pub kind: Kind,
    pub id: Uuid,
    /// Milliseconds since 1970 UTC.
    pub at_ms: i64,
    /// The UTC offset of the device clock when recorded, in minutes.
    pub offset_min: i16,
    pub refers_to: Option<Uuid>,
    pub tap: &'a str,
    pub chemical: &'a str,
}

/// Why a checksum-valid payload could not be read.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum PayloadError {
    UnsupportedVersion(u8),
    Malformed(String),
}

impl std::fmt::Display for PayloadError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            PayloadError::UnsupportedVersion(v) => {
                write!(f, "record version {v} is newer than this app reads")
            }
            PayloadError::Malformed(why) => write!(f, "record is malformed: {why}"),
        }
    }
}

const FIXED_KEY: usize = 1 + 1 + 16 + 8 + 2 + 16;

/// The key a record's body implies: the only key it may be stored or imported with.
pub fn key_of(record: &Record) -> Key<'_> {
    let (tap, chemical) = match record.dose() {
        Some(d) => (d.tap.as_str(), d.chemical.as_str()),
        None => ("", ""),
    };
    let at = record.at();
    Key {
        kind: record.kind(),
        id: record.id(),
        at_ms: at.timestamp_millis(),
        offset_min: (at.offset().local_minus_utc() / 60) as i16,
        refers_to: record.refers_to(),
        tap,
        chemical,
    }
}

/// Encodes a validated record as a payload: binary key, then JSON.
pub fn encode(record: &Record) -> Vec<u8> {
    let key = key_of(record);
    let (tap, chemical) = (key.tap, key.chemical);
    let mut out = Vec::with_capacity(FIXED_KEY + 4 + tap.len() + chemical.len() + 768);
    out.push(RECORD_VERSION);
    out.push(key.kind as u8);
    out.extend_from_slice(key.id.as_bytes());
    out.extend_from_slice(&key.at_ms.to_le_bytes());
    out.extend_from_slice(&key.offset_min.to_le_bytes());
    out.extend_from_slice(key.refers_to.unwrap_or(Uuid::nil()).as_bytes());
    for name in [tap, chemical] {
        // Validation caps names far below u16::MAX; truncating would corrupt the key.
        let len = u16::try_from(name.len()).unwrap_or(u16::MAX);
        out.extend_from_slice(&len.to_le_bytes());
        out.extend_from_slice(&name.as_bytes()[..len as usize]);
    }
    let json = match record {
        Record::Entry(e) => serde_json::to_writer(&mut out, e),
        Record::Correction(c) => serde_json::to_writer(&mut out, c),
        Record::Void(v) => serde_json::to_writer(&mut out, v),
    };
    // Serialising plain structs of strings and finite numbers into a Vec cannot fail.
    debug_assert!(json.is_ok());
    out
}

/// Reads the key and returns it with the JSON that follows.
pub fn decode_key(payload: &[u8]) -> std::result::Result<(Key<'_>, &[u8]), PayloadError> {
    let malformed = |why: &str| PayloadError::Malformed(why.to_string());
    let version = *payload.first().ok_or_else(|| malformed("empty payload"))?;
    if version != RECORD_VERSION {
        return Err(PayloadError::UnsupportedVersion(version));
    }
    if payload.len() < FIXED_KEY {
        return Err(malformed("payload shorter than its key"));
    }
    let kind = match payload[1] {
        1 => Kind::Entry,
        2 => Kind::Correction,
        3 => Kind::Void,
        _ => return Err(malformed("unknown record kind")),
    };
    let uuid_at = |at: usize| {
        let mut bytes = [0u8; 16];
        bytes.copy_from_slice(&payload[at..at + 16]);
        Uuid::from_bytes(bytes)
    };
    let id = uuid_at(2);
    let at_ms = i64::from_le_bytes(payload[18..26].try_into().unwrap_or_default());
    let offset_min = i16::from_le_bytes([payload[26], payload[27]]);
    let refers = uuid_at(28);
    let mut rest = &payload[FIXED_KEY..];
    let mut names = ["", ""];
    for name in &mut names {
        if rest.len() < 2 {
            return Err(malformed("key name length missing"));
        }
        let len = u16::from_le_bytes([rest[0], rest[1]]) as usize;
        let bytes = rest
            .get(2..2 + len)
            .ok_or_else(|| malformed("key name runs past the payload"))?;
        *name = std::str::from_utf8(bytes).map_err(|_| malformed("key name is not UTF-8"))?;
        rest = &rest[2 + len..];
    }
    let refers_to = (kind != Kind::Entry).then_some(refers);
    let key = Key {
        kind,
        id,
        at_ms,
        offset_min,
        refers_to,
        tap: names[0],
        chemical: names[1],
    };
    Ok((key, rest))
}

/// Decodes a whole payload back into its record.
pub fn decode(payload: &[u8]) -> std::result::Result<Record, PayloadError> {
    let (key, json) = decode_key(payload)?;
    // One UTF-8 check of the whole body is cheaper than serde_json checking each string.
    let json = std::str::from_utf8(json)
        .map_err(|_| PayloadError::Malformed("record body is not UTF-8".into()))?;
    let bad = |e: serde_json::Error| PayloadError::Malformed(e.to_string());
    let record = match key.kind {
        Kind::Entry => Record::Entry(serde_json::from_str(json).map_err(bad)?),
        Kind::Correction => Record::Correction(serde_json::from_str(json).map_err(bad)?),
        Kind::Void => Record::Void(serde_json::from_str(json).map_err(bad)?),
    };
    // Queries filter on the key alone: a key naming another day, tap or chemical than the
    // body would list the record where date and tap queries cannot find it.
    if key_of(&record) != key {
        return Err(PayloadError::Malformed(
            "its key and body disagree (id, reference, time, tap or chemical)".into(),
        ));
    }
    Ok(record)
}

/// What a person or the UI submits: the log adds the id, the device and (unless given) the
/// time, so two devices can never pick the same id.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "type", rename_all = "lowercase", deny_unknown_fields)]
pub enum Draft {
    Entry {
        #[serde(default, skip_serializing_if = "Option::is_none")]
        at: Option<DateTime<FixedOffset>>,
        site: String,
        dose: Dose,
    },
    Correction {
        #[serde(default, skip_serializing_if = "Option::is_none")]
        at: Option<DateTime<FixedOffset>>,
        corrects: Uuid,
        reason: String,
        dose: Dose,
    },
    Void {
        #[serde(default, skip_serializing_if = "Option::is_none")]
        at: Option<DateTime<FixedOffset>>,
        operator: String,
        voids: Uuid,
        reason: String,
    },
}

/// A realistic example, for `molefeed log template`, tests and benches.
pub fn example_dose() -> Dose {
    Dose {
        operator: "JM".into(),
        tap: "Clearwell inlet".into(),
        chemical: "sodium hypochlorite".into(),
        product: "NaOCl 12.5 % (w/w)".into(),
        flow_m3_per_h: 420.0,
        dose_mg_per_l: 1.8,
        feed_rate_l_per_h: 5.04,
        pump_setting_percent: 42.5,
        inputs: vec![
            Quantity {
                name: "plant flow".into(),
                value: 420.0,
                unit: "m3/h".into(),
            },
            Quantity {
                name: "target dose".into(),
                value: 1.8,
                unit: "mg/L as Cl2".into(),
            },
            Quantity {
                name: "product strength".into(),
                value: 12.5,
                unit: "% w/w".into(),
            },
            Quantity {
                name: "product density".into(),
                value: 1.2,
                unit: "kg/L".into(),
            },
        ],
        results: vec![
            Quantity {
                name: "chlorine demand".into(),
                value: 0.756,
                unit: "kg/h".into(),
            },
            Quantity {
                name: "product feed".into(),
                value: 5.04,
                unit: "L/h".into(),
            },
        ],
        trace: vec![
            "0.756 kg/h Cl2 = 420 m3/h x 1.8 g/m3".into(),
            "product = 0.756 kg/h / 0.125 / 1.2 kg/L = 5.04 L/h".into(),
            "pump at 42.5 % of 11.86 L/h maximum".into(),
        ],
        cautions: vec!["Product strength falls with storage age; check monthly.".into()],
        cross_check: Some(CrossCheck {
            method: "calibration column drawdown".into(),
            feed_rate_l_per_h: 5.1,
            agrees: true,
        }),
        note: String::new(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn entry() -> Record {
        Record::Entry(Entry {
            id: Uuid::now_v7(),
            device: "tablet-2".into(),
            at: DateTime::parse_from_rfc3339("2026-03-04T07:15:00+02:00").unwrap(),
            site: "Riverside".into(),
            dose: example_dose(),
        })
    }

    #[test]
    fn payload_round_trips_and_key_matches() {
        let record = entry();
        let payload = encode(&record);
        let (key, _) = decode_key(&payload).unwrap();
        assert_eq!(key.kind, Kind::Entry);
        assert_eq!(key.id, record.id());
        assert_eq!(key.at_ms, record.at().timestamp_millis());
        assert_eq!(key.offset_min, 120);
        assert_eq!(key.tap, "Clearwell inlet");
        assert_eq!(key.chemical, "sodium hypochlorite");
        assert_eq!(key.refers_to, None);
        assert_eq!(decode(&payload).unwrap(), record);
    }

    #[test]
    fn void_key_carries_its_reference() {
        let target = Uuid::now_v7();
        let void = Record::Void(Void {
            id: Uuid::now_v7(),
            device: "d".into(),
            at: DateTime::parse_from_rfc3339("2026-03-04T07:15:00-05:30").unwrap(),
            site: "s".into(),
            operator: "AB".into(),
            voids: target,
            reason: "wrong tap".into(),
        });
        let payload = encode(&void);
        let (key, _) = decode_key(&payload).unwrap();
        assert_eq!(key.refers_to, Some(target));
        assert_eq!(key.offset_min, -330);
        assert_eq!(decode(&payload).unwrap(), void);
    }

    #[test]
    fn unknown_versions_and_short_payloads_are_refused() {
        let mut payload = encode(&entry());
        payload[0] = 9;
        assert_eq!(
            decode_key(&payload).unwrap_err(),
            PayloadError::UnsupportedVersion(9)
        );
        for cut in [0, 1, 10, FIXED_KEY, FIXED_KEY + 3] {
            let short = &encode(&entry())[..cut];
            assert!(decode(short).is_err(), "cut at {cut}");
        }
    }

    #[test]
    fn key_body_disagreement_is_malformed() {
        let record = entry();
        // The id, the time (1970 instead of the body's day), the UTC offset, and the tap.
        for at in [2, 18, 25, 26, FIXED_KEY + 2] {
            let mut payload = encode(&record);
            payload[at] ^= 0x41;
            assert!(
                matches!(decode(&payload), Err(PayloadError::Malformed(_))),
                "byte {at}"
            );
        }
    }

    #[test]
    fn validation_names_the_field() {
        type Spoil = fn(&mut Dose);
        let cases: [(&str, Spoil); 6] = [
            ("operator", |d| d.operator = "J M".into()),
            ("operator", |d| d.operator = String::new()),
            ("tap", |d| d.tap = "  ".into()),
            ("flow_m3_per_h", |d| d.flow_m3_per_h = f64::NAN),
            ("pump_setting_percent", |d| d.pump_setting_percent = 101.0),
            ("dose_mg_per_l", |d| d.dose_mg_per_l = -1.0),
        ];
        for (field, spoil) in cases {
            let Record::Entry(mut e) = entry() else {
                unreachable!()
            };
            spoil(&mut e.dose);
            let err = Record::Entry(e).validate().unwrap_err();
            assert_eq!(err.kind(), ErrorKind::InvalidEntry);
            assert_eq!(err.param("field"), Some(field), "{}", err.message());
        }
        assert!(entry().validate().is_ok());
    }

    #[test]
    fn drafts_reject_unknown_fields() {
        let text = r#"{"type":"void","operator":"AB","voids":"0190f0c2-0000-7000-8000-000000000000","reason":"x","colour":"red"}"#;
        assert!(serde_json::from_str::<Draft>(text).is_err());
    }
}
