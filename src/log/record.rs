//! The log's own record types and their payload encoding.
//!
//! These types belong to the log, not the engine: the engine may change how it computes, but
//! a record written today must read the same in ten years, so the log copies what was shown
//! (inputs as typed, results with their units, the setting, trace, cautions) as plain values.
//!
//! Design choice: a payload is a small binary key followed by the record as JSON. The key
//! holds exactly what the in-memory index needs (kind, id, time, reference, tap, chemical), so
//! opening a log of 100 000 entries parses no JSON at all; the JSON stays the readable,
//! versioned source of the full record. The first byte is the record version: a reader
//! refuses versions it does not know instead of guessing. Version 2 ([`Dose`]) keeps every
//! result as a named value with its unit, so a value that was not computed is absent rather
//! than 0; version 1 payloads (four fixed numbers) still read, converted in memory by
//! [`DoseV1::upgrade`], and are never written again.

use super::error::{Error, ErrorKind, Result};
use chrono::{DateTime, FixedOffset};
use serde::{Deserialize, Serialize};
use uuid::Uuid;

/// The payload layout this build writes for dose entries, their corrections and voids.
pub const RECORD_VERSION: u8 = 2;
/// The layout of the stock and plant readings (kinds 4 and 5): the same key, a reading body.
/// A build that knows only version 2 reports such a record as newer than it reads, rather
/// than as damage, and keeps reading the doses around it.
pub const RECORD_VERSION_3: u8 = 3;
/// The first layout: read and converted, never written.
pub const RECORD_VERSION_1: u8 = 1;

/// The stable ids of the results the monthly report reads; a calculator may log others.
pub mod result_id {
    /// Plant flow as the calculation used it.
    pub const FLOW: &str = "flow";
    pub const DOSE: &str = "dose";
    /// Active chemical mass per time.
    pub const FEED_MASS_RATE: &str = "feed_mass_rate";
    /// Product volume per time (a liquid through a metering pump).
    pub const PRODUCT_VOLUME_RATE: &str = "product_volume_rate";
    /// Product mass per time (a gas or dry product through a feeder).
    pub const PRODUCT_MASS_RATE: &str = "product_mass_rate";
    /// A metering pump's setting, percent of full stroke or speed (also in
    /// [`super::Dose::setting`]).
    pub const PUMP_SETTING: &str = "pump_setting";
    /// A gas or dry feeder's setting, percent of full scale (also in [`super::Dose::setting`]).
    pub const FEEDER_SETTING: &str = "feeder_setting";
}

/// What sets the feed: the three kinds of device a [`Setting`] can be for.
pub const DEVICES: [&str; 3] = ["metering-pump", "gas-feeder", "dry-feeder"];

/// The calculator id of an entry converted from version 1, which did not record it.
pub const CALCULATOR_UNRECORDED: &str = "unrecorded-v1";

/// The product as the catalog names it: its id and a readable English name.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ProductRef {
    pub id: String,
    /// Readable English, such as "Sodium hypochlorite" (never a translation key).
    pub name: String,
}

/// One input as the operator typed it.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct LoggedInput {
    /// The calculator's input name, such as `flow` or `chlorine-demand`.
    pub name: String,
    /// Exactly as typed (decimal comma and all), so the record shows what was entered.
    pub text: String,
    /// `text` read as a number, in `unit`.
    pub value: f64,
    pub unit: String,
    /// What the value is expressed as, where the quantity has one (CaCO3, Cl2, trade %).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub basis: Option<String>,
}

/// One result as the card showed it.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct LoggedResult {
    /// Stable snake_case id ([`result_id`] lists those the report reads).
    pub id: String,
    /// Full precision, in `unit`.
    pub value: f64,
    /// The text the operator saw, rounded to the figures the inputs support.
    pub shown: String,
    pub unit: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub basis: Option<String>,
    /// One of the big numbers of the card (the others were listed under them).
    #[serde(default)]
    pub headline: bool,
    /// The range the precision of the readings allowed, low and high, in `unit` (absent when
    /// every input was exact, and in entries written before ranges were shown).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub range: Option<[f64; 2]>,
}

/// The setting the operator was told to make, on which device.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Setting {
    /// One of [`DEVICES`].
    pub device: String,
    /// Percent of full stroke, speed or scale, 0–100.
    pub percent: f64,
    pub shown: String,
}

/// A caution as shown with the result.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct LoggedCaution {
    /// `info`, `warning` or `danger`.
    pub severity: String,
    /// Stable caution code.
    pub code: String,
    /// The words shown, in English.
    pub text: String,
}

/// An independent check of the pump, such as a calibration-column drawdown.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CrossCheck {
    pub method: String,
    pub feed_rate_l_per_h: f64,
    pub agrees: bool,
}

/// What an operator records about one dose change: what the calculation showed. A correction
/// carries a whole new one, recomputed.
///
/// Only what was computed is here: a result the calculator did not produce (the product volume
/// of a gas feed, the setting of a feeder nobody named) is absent, never 0.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Dose {
    /// Operator initials.
    pub operator: String,
    /// The tap or dosing point.
    pub tap: String,
    /// The stable id of the calculator that computed it (`free-chlorine`, `feed`, ...).
    pub calculator: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub mode: Option<String>,
    /// The compound the dose is expressed as (`Cl2`, `N`, `NaOH`); with `tap`, the index key.
    pub chemical: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub product: Option<ProductRef>,
    #[serde(default)]
    pub inputs: Vec<LoggedInput>,
    #[serde(default)]
    pub results: Vec<LoggedResult>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub setting: Option<Setting>,
    /// The trace summary lines shown with the result.
    #[serde(default)]
    pub trace: Vec<String>,
    #[serde(default)]
    pub cautions: Vec<LoggedCaution>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cross_check: Option<CrossCheck>,
    #[serde(default)]
    pub note: String,
}

impl Dose {
    /// The result with this id, if it was computed.
    pub fn result(&self, id: &str) -> Option<&LoggedResult> {
        self.results.iter().find(|r| r.id == id)
    }

    /// The dose in mg/L, if one was computed.
    pub fn dose_mg_per_l(&self) -> Option<f64> {
        self.result(result_id::DOSE).map(|r| r.value)
    }

    fn validate(&self) -> Result<()> {
        initials(&self.operator)?;
        required("tap", &self.tap)?;
        required("calculator", &self.calculator)?;
        required("chemical", &self.chemical)?;
        if let Some(mode) = &self.mode {
            required("mode", mode)?;
        }
        if let Some(product) = &self.product {
            required("product.id", &product.id)?;
            required("product.name", &product.name)?;
        }
        for input in &self.inputs {
            required("inputs.name", &input.name)?;
            finite("inputs.value", &input.name, input.value)?;
        }
        for (i, r) in self.results.iter().enumerate() {
            required("results.id", &r.id)?;
            finite("results.value", &r.id, r.value)?;
            if self.results[..i].iter().any(|earlier| earlier.id == r.id) {
                return Err(invalid(
                    "results.id",
                    format!("result {} is logged twice", r.id),
                ));
            }
            check_well_known(r)?;
        }
        if let Some(setting) = &self.setting {
            if !DEVICES.contains(&setting.device.as_str()) {
                return Err(invalid(
                    "setting.device",
                    format!(
                        "setting device '{}' is not one of {}",
                        setting.device,
                        DEVICES.join(", ")
                    ),
                ));
            }
            percent("setting.percent", setting.percent)?;
        }
        for caution in &self.cautions {
            required("cautions.severity", &caution.severity)?;
            required("cautions.code", &caution.code)?;
        }
        if let Some(check) = &self.cross_check {
            required("cross_check.method", &check.method)?;
            non_negative("cross_check.feed_rate_l_per_h", check.feed_rate_l_per_h)?;
        }
        Ok(())
    }
}

/// The report converts the well-known results to the site's units, so each must carry a unit
/// it can read, and a rate or dose below zero is a mistake, not a dose.
fn check_well_known(r: &LoggedResult) -> Result<()> {
    use result_id::*;
    let field = "results.unit";
    let readable = match r.id.as_str() {
        FLOW => crate::engine::dosing::units::FlowUnit::parse(&r.unit).is_ok(),
        DOSE => r.unit == "mg/L",
        FEED_MASS_RATE | PRODUCT_MASS_RATE => {
            crate::engine::dosing::units::MassRateUnit::parse(&r.unit).is_ok()
        }
        PRODUCT_VOLUME_RATE => crate::engine::dosing::units::VolumeRateUnit::parse(&r.unit).is_ok(),
        PUMP_SETTING | FEEDER_SETTING => {
            percent("results.value", r.value)?;
            r.unit == "%"
        }
        _ => return Ok(()),
    };
    if !readable {
        return Err(invalid(
            field,
            format!(
                "result {} has a unit the report cannot read: '{}'",
                r.id, r.unit
            ),
        ));
    }
    non_negative("results.value", r.value).map(|_| ())
}

/// Version 1's entry body: four headline numbers in fixed units, plain caution texts. Kept
/// only to read old files; see [`DoseV1::upgrade`].
#[derive(Clone, Debug, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct DoseV1 {
    operator: String,
    tap: String,
    chemical: String,
    product: String,
    flow_m3_per_h: f64,
    dose_mg_per_l: f64,
    feed_rate_l_per_h: f64,
    pump_setting_percent: f64,
    #[serde(default)]
    inputs: Vec<QuantityV1>,
    #[serde(default)]
    results: Vec<QuantityV1>,
    #[serde(default)]
    trace: Vec<String>,
    #[serde(default)]
    cautions: Vec<String>,
    #[serde(default)]
    cross_check: Option<CrossCheck>,
    #[serde(default)]
    note: String,
}

/// Version 1's named value.
#[derive(Clone, Debug, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
struct QuantityV1 {
    name: String,
    value: f64,
    unit: String,
}

impl DoseV1 {
    /// The version-2 shape of a version-1 body. Version 1 wrote 0.0 where nothing was
    /// computed, and a stored 0.0 cannot be told from a real zero, so the four numbers are all
    /// carried as they were (a v1 gas feed keeps its 0 L/h); the calculator was not recorded
    /// ([`CALCULATOR_UNRECORDED`]), the product text becomes both id and name, and caution
    /// texts keep their words with an `unrecorded` code and severity.
    pub(crate) fn upgrade(self) -> Dose {
        let number = |id: &str, value: f64, unit: &str| LoggedResult {
            id: id.into(),
            value,
            shown: value.to_string(),
            unit: unit.into(),
            basis: None,
            headline: id != result_id::FLOW,
            range: None,
        };
        let mut results = vec![
            number(result_id::FLOW, self.flow_m3_per_h, "m³/h"),
            number(result_id::DOSE, self.dose_mg_per_l, "mg/L"),
            number(
                result_id::PRODUCT_VOLUME_RATE,
                self.feed_rate_l_per_h,
                "L/h",
            ),
            number(result_id::PUMP_SETTING, self.pump_setting_percent, "%"),
        ];
        // Version 1's free list, named in words: kept under ids made from those words.
        results.extend(self.results.into_iter().map(|q| LoggedResult {
            id: format!("v1_{}", snake_case(&q.name)),
            shown: q.value.to_string(),
            value: q.value,
            unit: q.unit,
            basis: None,
            headline: false,
            range: None,
        }));
        Dose {
            operator: self.operator,
            tap: self.tap,
            calculator: CALCULATOR_UNRECORDED.into(),
            mode: None,
            chemical: self.chemical,
            product: (!self.product.trim().is_empty()).then(|| ProductRef {
                id: self.product.clone(),
                name: self.product,
            }),
            inputs: self
                .inputs
                .into_iter()
                .map(|q| LoggedInput {
                    name: q.name,
                    text: q.value.to_string(),
                    value: q.value,
                    unit: q.unit,
                    basis: None,
                })
                .collect(),
            results,
            setting: None,
            trace: self.trace,
            cautions: self
                .cautions
                .into_iter()
                .map(|text| LoggedCaution {
                    severity: "unrecorded".into(),
                    code: "unrecorded".into(),
                    text,
                })
                .collect(),
            cross_check: self.cross_check,
            note: self.note,
        }
    }
}

/// `product feed` → `product_feed`: a stable id from version 1's free-text names.
pub(crate) fn snake_case(words: &str) -> String {
    let mut out = String::with_capacity(words.len());
    for c in words.trim().chars() {
        if c.is_alphanumeric() {
            out.extend(c.to_lowercase());
        } else if !out.ends_with('_') {
            out.push('_');
        }
    }
    out.trim_matches('_').to_string()
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
    /// A tank level, a delivery, a totaliser or a tap reading (record version 3).
    Reading(ReadingEntry),
    /// A reading as it should read, replacing an earlier one (record version 3).
    #[serde(rename = "reading-correction")]
    ReadingCorrection(ReadingCorrection),
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Kind {
    Entry = 1,
    Correction = 2,
    Void = 3,
    Reading = 4,
    ReadingCorrection = 5,
}

impl Kind {
    /// An original record (a dose entry or a reading), which revisions refer to.
    pub fn is_original(self) -> bool {
        matches!(self, Kind::Entry | Kind::Reading)
    }

    /// A revision that replaces the content (a dose's or a reading's correction).
    pub fn is_correction(self) -> bool {
        matches!(self, Kind::Correction | Kind::ReadingCorrection)
    }
}

/// What an operator read or received, besides doses: the stock and the plant's own numbers.
/// Ids are the site profile's (tank, meter, tap, delivered product); units are as read.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "what", rename_all = "kebab-case", deny_unknown_fields)]
pub enum Reading {
    /// A tank's level from its lowest point, in the tank's length unit (`ft`, `in`, `m`).
    TankLevel {
        operator: String,
        tank: String,
        level: f64,
        unit: String,
    },
    /// Product received into the plant's stock (`gal`, `l`, `lb`, `kg`), with the number of
    /// the delivery note.
    Delivery {
        operator: String,
        product: String,
        amount: f64,
        unit: String,
        #[serde(default)]
        note_number: String,
    },
    /// A flow meter's totaliser, in the meter's totaliser unit (`gal`, `l`, `m3`).
    Totalizer {
        operator: String,
        meter: String,
        value: f64,
        unit: String,
    },
    /// A parameter read at a sampling tap (pH, chlorine, fluoride, turbidity …).
    AtTap {
        operator: String,
        tap: String,
        parameter: String,
        value: f64,
        unit: String,
    },
}

/// The unit a parameter read at a tap is recorded in, and a reading's value in it: the
/// engine's one table, which the plant's limits are held in too.
pub use crate::engine::dosing::site::{in_parameter_unit, parameter_unit};

/// The units each reading may be recorded in.
pub const LEVEL_UNITS: [&str; 3] = ["ft", "in", "m"];
pub const DELIVERY_UNITS: [&str; 4] = ["gal", "l", "lb", "kg"];
pub const TOTALIZER_UNITS: [&str; 3] = ["gal", "l", "m3"];

impl Reading {
    pub fn operator(&self) -> &str {
        match self {
            Reading::TankLevel { operator, .. }
            | Reading::Delivery { operator, .. }
            | Reading::Totalizer { operator, .. }
            | Reading::AtTap { operator, .. } => operator,
        }
    }

    /// The index key's two names: the thing read (tank, product, meter, tap) and what was read
    /// (`level`, `delivery`, `totalizer`, or the tap's parameter).
    pub fn key_names(&self) -> (&str, &str) {
        match self {
            Reading::TankLevel { tank, .. } => (tank, "level"),
            Reading::Delivery { product, .. } => (product, "delivery"),
            Reading::Totalizer { meter, .. } => (meter, "totalizer"),
            Reading::AtTap { tap, parameter, .. } => (tap, parameter),
        }
    }

    /// Refuses what would make a stock or operating report wrong: empty ids, bad initials,
    /// non-finite or negative amounts, units the report cannot convert.
    pub fn validate(&self) -> Result<()> {
        initials(self.operator())?;
        let (thing, what) = self.key_names();
        required("tap", thing)?;
        required("chemical", what)?;
        let unit_in = |unit: &str, allowed: &[&str]| {
            if allowed.contains(&unit) {
                Ok(())
            } else {
                Err(invalid(
                    "unit",
                    format!("unit '{unit}' must be one of {}", allowed.join(", ")),
                ))
            }
        };
        match self {
            Reading::TankLevel { level, unit, .. } => {
                non_negative("level", *level)?;
                unit_in(unit, &LEVEL_UNITS)?;
            }
            Reading::Delivery {
                amount,
                unit,
                note_number,
                ..
            } => {
                non_negative("amount", *amount)?;
                if *amount == 0.0 {
                    return Err(invalid(
                        "amount",
                        "a delivery of nothing is no delivery".into(),
                    ));
                }
                unit_in(unit, &DELIVERY_UNITS)?;
                if note_number.len() > MAX_NAME {
                    return Err(invalid(
                        "note_number",
                        "the delivery note number is too long".into(),
                    ));
                }
            }
            Reading::Totalizer { value, unit, .. } => {
                non_negative("value", *value)?;
                unit_in(unit, &TOTALIZER_UNITS)?;
            }
            Reading::AtTap { value, unit, .. } => {
                finite("value", "value", *value)?;
                if unit.len() > MAX_NAME {
                    return Err(invalid("unit", "the unit is too long".into()));
                }
            }
        }
        Ok(())
    }
}

/// A reading as first logged. `at` is when it was taken; `entered_at`, when the operator
/// recorded it later than that (the same or the previous day), so the record says so.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ReadingEntry {
    pub id: Uuid,
    pub device: String,
    pub at: DateTime<FixedOffset>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub entered_at: Option<DateTime<FixedOffset>>,
    pub site: String,
    pub reading: Reading,
}

/// A later statement that a reading should read differently, and why.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ReadingCorrection {
    pub id: Uuid,
    pub device: String,
    pub at: DateTime<FixedOffset>,
    pub site: String,
    /// The original reading (never another correction).
    pub corrects: Uuid,
    pub reason: String,
    pub reading: Reading,
}

/// How far back a reading may be recorded: the same or the previous local day of the time it
/// is entered, and not after it (one minute of clock difference allowed).
pub fn check_backdated(at: DateTime<FixedOffset>, entered_at: DateTime<FixedOffset>) -> Result<()> {
    let days = entered_at
        .date_naive()
        .signed_duration_since(at.with_timezone(entered_at.offset()).date_naive())
        .num_days();
    if at > entered_at + chrono::Duration::minutes(1) || !(0..=1).contains(&days) {
        return Err(invalid(
            "at",
            format!(
                "a reading may be recorded for an earlier time of the same or the previous day, not {at} (entered {entered_at})"
            ),
        ));
    }
    Ok(())
}

impl Record {
    pub fn id(&self) -> Uuid {
        match self {
            Record::Entry(e) => e.id,
            Record::Correction(c) => c.id,
            Record::Void(v) => v.id,
            Record::Reading(r) => r.id,
            Record::ReadingCorrection(c) => c.id,
        }
    }

    pub fn at(&self) -> DateTime<FixedOffset> {
        match self {
            Record::Entry(e) => e.at,
            Record::Correction(c) => c.at,
            Record::Void(v) => v.at,
            Record::Reading(r) => r.at,
            Record::ReadingCorrection(c) => c.at,
        }
    }

    pub fn site(&self) -> &str {
        match self {
            Record::Entry(e) => &e.site,
            Record::Correction(c) => &c.site,
            Record::Void(v) => &v.site,
            Record::Reading(r) => &r.site,
            Record::ReadingCorrection(c) => &c.site,
        }
    }

    pub fn kind(&self) -> Kind {
        match self {
            Record::Entry(_) => Kind::Entry,
            Record::Correction(_) => Kind::Correction,
            Record::Void(_) => Kind::Void,
            Record::Reading(_) => Kind::Reading,
            Record::ReadingCorrection(_) => Kind::ReadingCorrection,
        }
    }

    /// The entry this record revises, for corrections and voids.
    pub fn refers_to(&self) -> Option<Uuid> {
        match self {
            Record::Entry(_) | Record::Reading(_) => None,
            Record::Correction(c) => Some(c.corrects),
            Record::Void(v) => Some(v.voids),
            Record::ReadingCorrection(c) => Some(c.corrects),
        }
    }

    fn dose(&self) -> Option<&Dose> {
        match self {
            Record::Entry(e) => Some(&e.dose),
            Record::Correction(c) => Some(&c.dose),
            _ => None,
        }
    }

    /// The reading of a reading or its correction.
    pub fn reading(&self) -> Option<&Reading> {
        match self {
            Record::Reading(r) => Some(&r.reading),
            Record::ReadingCorrection(c) => Some(&c.reading),
            _ => None,
        }
    }

    /// Rejects records that would make the monthly report wrong or unreadable.
    pub fn validate(&self) -> Result<()> {
        let (device, site) = match self {
            Record::Entry(e) => (&e.device, &e.site),
            Record::Correction(c) => (&c.device, &c.site),
            Record::Void(v) => (&v.device, &v.site),
            Record::Reading(r) => (&r.device, &r.site),
            Record::ReadingCorrection(c) => (&c.device, &c.site),
        };
        required("device", device)?;
        required("site", site)?;
        match self {
            Record::Correction(c) => required("reason", &c.reason)?,
            Record::Void(v) => {
                required("reason", &v.reason)?;
                initials(&v.operator)?;
            }
            Record::ReadingCorrection(c) => required("reason", &c.reason)?,
            Record::Reading(r) => {
                if let Some(entered) = r.entered_at {
                    check_backdated(r.at, entered)?;
                }
            }
            Record::Entry(_) => {}
        }
        if let Some(dose) = self.dose() {
            dose.validate()?;
        }
        if let Some(reading) = self.reading() {
            reading.validate()?;
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

/// The largest magnitude a logged number may have: no flow, dose, mass, volume or time a
/// calculator gives comes near it in any unit (the largest plants treat about 1e10 L a day).
/// Beyond it is an overflow or a slip, refused when logged rather than found by every reader
/// later (the CLI prints none beyond it either: its `LARGEST_OUTPUT` is this).
pub const LARGEST_NUMBER: f64 = 1e15;

fn finite(field: &'static str, name: &str, value: f64) -> Result<()> {
    if !value.is_finite() {
        return Err(invalid(field, format!("{name} must be a finite number")));
    }
    if value.abs() > LARGEST_NUMBER {
        return Err(invalid(
            field,
            format!("{name} is {value:e}, which no measurement or calculation gives"),
        ));
    }
    Ok(())
}

/// A setting is a share of full scale: above 100 % it is not a setting.
fn percent(field: &'static str, value: f64) -> Result<f64> {
    let value = non_negative(field, value)?;
    if value > 100.0 {
        return Err(invalid(field, format!("{field} {value} is above 100")));
    }
    Ok(value)
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
    let (tap, chemical) = match (record.dose(), record.reading()) {
        (Some(d), _) => (d.tap.as_str(), d.chemical.as_str()),
        (None, Some(r)) => r.key_names(),
        (None, None) => ("", ""),
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
    out.push(match key.kind {
        Kind::Reading | Kind::ReadingCorrection => RECORD_VERSION_3,
        _ => RECORD_VERSION,
    });
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
        Record::Reading(r) => serde_json::to_writer(&mut out, r),
        Record::ReadingCorrection(c) => serde_json::to_writer(&mut out, c),
    };
    // Serialising plain structs of strings and finite numbers into a Vec cannot fail.
    debug_assert!(json.is_ok());
    out
}

/// Reads the key and returns it with the JSON that follows.
pub fn decode_key(payload: &[u8]) -> std::result::Result<(Key<'_>, &[u8]), PayloadError> {
    let malformed = |why: &str| PayloadError::Malformed(why.to_string());
    let version = *payload.first().ok_or_else(|| malformed("empty payload"))?;
    if version != RECORD_VERSION && version != RECORD_VERSION_1 && version != RECORD_VERSION_3 {
        return Err(PayloadError::UnsupportedVersion(version));
    }
    if payload.len() < FIXED_KEY {
        return Err(malformed("payload shorter than its key"));
    }
    let kind = match payload[1] {
        1 => Kind::Entry,
        2 => Kind::Correction,
        3 => Kind::Void,
        4 => Kind::Reading,
        5 => Kind::ReadingCorrection,
        _ => return Err(malformed("unknown record kind")),
    };
    // Readings exist from version 3 on, and version 3 holds nothing else.
    if kind_version_mismatch(kind, version) {
        return Err(malformed(
            "record kind does not belong to its record version",
        ));
    }
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
    let refers_to = (!kind.is_original()).then_some(refers);
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

fn kind_version_mismatch(kind: Kind, version: u8) -> bool {
    match kind {
        Kind::Reading | Kind::ReadingCorrection => version != RECORD_VERSION_3,
        Kind::Entry | Kind::Correction => version == RECORD_VERSION_3,
        Kind::Void => false,
    }
}

/// Decodes a whole payload back into its record.
pub fn decode(payload: &[u8]) -> std::result::Result<Record, PayloadError> {
    let (key, json) = decode_key(payload)?;
    // One UTF-8 check of the whole body is cheaper than serde_json checking each string.
    let json = std::str::from_utf8(json)
        .map_err(|_| PayloadError::Malformed("record body is not UTF-8".into()))?;
    let bad = |e: serde_json::Error| PayloadError::Malformed(e.to_string());
    let record = match (key.kind, payload[0]) {
        (Kind::Entry, RECORD_VERSION_1) => Record::Entry(
            serde_json::from_str::<EntryV1>(json)
                .map_err(bad)?
                .upgrade(),
        ),
        (Kind::Correction, RECORD_VERSION_1) => Record::Correction(
            serde_json::from_str::<CorrectionV1>(json)
                .map_err(bad)?
                .upgrade(),
        ),
        (Kind::Entry, _) => Record::Entry(serde_json::from_str(json).map_err(bad)?),
        (Kind::Correction, _) => Record::Correction(serde_json::from_str(json).map_err(bad)?),
        // A void has the same body in every version.
        (Kind::Void, _) => Record::Void(serde_json::from_str(json).map_err(bad)?),
        (Kind::Reading, _) => Record::Reading(serde_json::from_str(json).map_err(bad)?),
        (Kind::ReadingCorrection, _) => {
            Record::ReadingCorrection(serde_json::from_str(json).map_err(bad)?)
        }
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

/// Version 1's entry: the same envelope around a [`DoseV1`].
#[derive(Deserialize)]
struct EntryV1 {
    id: Uuid,
    device: String,
    at: DateTime<FixedOffset>,
    site: String,
    dose: DoseV1,
}

impl EntryV1 {
    fn upgrade(self) -> Entry {
        Entry {
            id: self.id,
            device: self.device,
            at: self.at,
            site: self.site,
            dose: self.dose.upgrade(),
        }
    }
}

/// Version 1's correction: the same envelope around a [`DoseV1`].
#[derive(Deserialize)]
struct CorrectionV1 {
    id: Uuid,
    device: String,
    at: DateTime<FixedOffset>,
    site: String,
    corrects: Uuid,
    reason: String,
    dose: DoseV1,
}

impl CorrectionV1 {
    fn upgrade(self) -> Correction {
        Correction {
            id: self.id,
            device: self.device,
            at: self.at,
            site: self.site,
            corrects: self.corrects,
            reason: self.reason,
            dose: self.dose.upgrade(),
        }
    }
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
    /// A reading; `at` earlier than now (the same or the previous day) is recorded as such.
    Reading {
        #[serde(default, skip_serializing_if = "Option::is_none")]
        at: Option<DateTime<FixedOffset>>,
        site: String,
        reading: Reading,
    },
    #[serde(rename = "reading-correction")]
    ReadingCorrection {
        #[serde(default, skip_serializing_if = "Option::is_none")]
        at: Option<DateTime<FixedOffset>>,
        corrects: Uuid,
        reason: String,
        reading: Reading,
    },
}

/// A realistic example, for `molefeed log template`, tests and benches: a hypochlorite feed
/// through a metering pump, as the card showed it.
pub fn example_dose() -> Dose {
    let input = |name: &str, text: &str, value: f64, unit: &str, basis: Option<&str>| LoggedInput {
        name: name.into(),
        text: text.into(),
        value,
        unit: unit.into(),
        basis: basis.map(String::from),
    };
    let result = |id: &str, value: f64, shown: &str, unit: &str, headline: bool| LoggedResult {
        id: id.into(),
        value,
        shown: shown.into(),
        unit: unit.into(),
        basis: (id == result_id::DOSE || id == result_id::FEED_MASS_RATE).then(|| "Cl2".into()),
        headline,
        range: None,
    };
    Dose {
        operator: "JM".into(),
        tap: "Clearwell inlet".into(),
        calculator: "feed".into(),
        mode: None,
        chemical: "Cl2".into(),
        product: Some(ProductRef {
            id: "sodium-hypochlorite".into(),
            name: "Sodium hypochlorite".into(),
        }),
        inputs: vec![
            input("flow", "10080", 10080.0, "m³/d", None),
            input("dose", "1.8", 1.8, "mg/L", Some("Cl2")),
            input("strength", "12.5", 12.5, "%", Some("weight")),
            input("specific-gravity", "1.2", 1.2, "", None),
            input("pump-capacity", "11.86", 11.86, "L/h", None),
        ],
        results: vec![
            result(result_id::FLOW, 10080.0, "10080", "m³/d", false),
            result(result_id::DOSE, 1.8, "1.80", "mg/L", true),
            result(result_id::FEED_MASS_RATE, 18.144, "18.1", "kg/d", true),
            result(result_id::PRODUCT_VOLUME_RATE, 5.04, "5.04", "L/h", true),
            result(result_id::PUMP_SETTING, 42.5, "42.5", "%", true),
        ],
        setting: Some(Setting {
            device: "metering-pump".into(),
            percent: 42.5,
            shown: "42.5".into(),
        }),
        trace: vec![
            "18.144 kg/d Cl2 = 10080 m³/d x 1.8 g/m³".into(),
            "product = 18.144 kg/d / 0.125 / 1.2 kg/L = 120.96 L/d = 5.04 L/h".into(),
            "pump at 42.5 % of 11.86 L/h maximum".into(),
        ],
        cautions: vec![LoggedCaution {
            severity: "info".into(),
            code: "strength-decays".into(),
            text: "Product strength falls with storage age; check monthly.".into(),
        }],
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
        assert_eq!(key.chemical, "Cl2");
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
        let cases: [(&str, Spoil); 15] = [
            ("operator", |d| d.operator = "J M".into()),
            ("operator", |d| d.operator = String::new()),
            ("tap", |d| d.tap = "  ".into()),
            ("calculator", |d| d.calculator = String::new()),
            ("chemical", |d| d.chemical = " ".into()),
            ("product.name", |d| {
                d.product.as_mut().unwrap().name = String::new()
            }),
            ("results.value", |d| d.results[0].value = f64::NAN),
            ("results.value", |d| d.results[1].value = -1.0),
            ("results.unit", |d| d.results[3].unit = "buckets".into()),
            ("results.id", |d| d.results[2].id = "dose".into()),
            ("setting.percent", |d| {
                d.setting.as_mut().unwrap().percent = 101.0
            }),
            ("setting.device", |d| {
                d.setting.as_mut().unwrap().device = "pump".into()
            }),
            ("inputs.value", |d| d.inputs[0].value = f64::INFINITY),
            // Beyond anything a calculator gives: an overflow or a slip, which every listing
            // would otherwise stop at.
            ("results.value", |d| d.results[2].value = 1e200),
            ("inputs.value", |d| d.inputs[0].value = -2e15),
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

    /// A pump setting above 100 % in the results list is refused like one in `setting`.
    #[test]
    fn a_setting_above_full_scale_is_refused_wherever_it_is() {
        let Record::Entry(mut e) = entry() else {
            unreachable!()
        };
        e.dose.results[4].value = 100.5;
        let err = Record::Entry(e).validate().unwrap_err();
        assert_eq!(
            err.param("field"),
            Some("results.value"),
            "{}",
            err.message()
        );
    }

    /// Nothing computed, nothing stored: a gas feed has no product volume and no pump, and the
    /// JSON says so by leaving them out rather than writing 0.
    #[test]
    fn absent_results_stay_absent_in_the_payload() {
        let Record::Entry(mut e) = entry() else {
            unreachable!()
        };
        e.dose
            .results
            .retain(|r| r.id != "product_volume_rate" && r.id != "pump_setting");
        e.dose.setting = None;
        let record = Record::Entry(e);
        record.validate().unwrap();
        let payload = encode(&record);
        assert_eq!(payload[0], 2, "written as version 2");
        let (_, json) = decode_key(&payload).unwrap();
        let text = std::str::from_utf8(json).unwrap();
        assert!(!text.contains("product_volume_rate"), "{text}");
        assert!(!text.contains("\"setting\""), "{text}");
        let Record::Entry(back) = decode(&payload).unwrap() else {
            unreachable!()
        };
        assert_eq!(back.dose.result("product_volume_rate"), None);
        assert_eq!(back.dose.setting, None);
        assert_eq!(back.dose.result("dose").map(|r| r.value), Some(1.8));
    }

    /// A version-1 payload (the layout before named results) decodes into the version-2 shape
    /// with its four numbers as results in their version-1 units, zeros included.
    #[test]
    fn version_1_payload_reads_as_version_2() {
        let body = r#"{"id":"0190f0c2-0000-7000-8000-000000000001","device":"t","at":"2026-03-04T07:15:00+02:00","site":"Riverside","dose":{"operator":"JM","tap":"Inlet","chemical":"product-chlorine-gas","product":"product-chlorine-gas","flow_m3_per_h":375.0,"dose_mg_per_l":2.0,"feed_rate_l_per_h":0.0,"pump_setting_percent":0.0,"inputs":[],"results":[{"name":"chlorine demand","value":0.75,"unit":"kg/h"}],"trace":[],"cautions":["Toxic gas"],"cross_check":null,"note":"n"}}"#;
        let id: Uuid = "0190f0c2-0000-7000-8000-000000000001".parse().unwrap();
        let mut payload = vec![1u8, 1];
        payload.extend_from_slice(id.as_bytes());
        // The key's time is the body's (a key that disagrees with its body is refused).
        let at = DateTime::parse_from_rfc3339("2026-03-04T07:15:00+02:00").unwrap();
        payload.extend_from_slice(&at.timestamp_millis().to_le_bytes());
        payload.extend_from_slice(&120i16.to_le_bytes());
        payload.extend_from_slice(Uuid::nil().as_bytes());
        for name in ["Inlet", "product-chlorine-gas"] {
            payload.extend_from_slice(&(name.len() as u16).to_le_bytes());
            payload.extend_from_slice(name.as_bytes());
        }
        payload.extend_from_slice(body.as_bytes());
        let Record::Entry(e) = decode(&payload).unwrap() else {
            panic!("not an entry")
        };
        let d = &e.dose;
        assert_eq!(d.calculator, CALCULATOR_UNRECORDED);
        let got = |id: &str| d.result(id).map(|r| (r.value, r.unit.as_str()));
        assert_eq!(got("flow"), Some((375.0, "m³/h")));
        assert_eq!(got("dose"), Some((2.0, "mg/L")));
        assert_eq!(
            got("product_volume_rate"),
            Some((0.0, "L/h")),
            "carried, not dropped"
        );
        assert_eq!(got("pump_setting"), Some((0.0, "%")));
        assert_eq!(got("v1_chlorine_demand"), Some((0.75, "kg/h")));
        assert_eq!(d.cautions[0].text, "Toxic gas");
        assert_eq!(d.note, "n");
        assert!(Record::Entry(e.clone()).validate().is_ok());
    }

    #[test]
    fn drafts_reject_unknown_fields() {
        let text = r#"{"type":"void","operator":"AB","voids":"0190f0c2-0000-7000-8000-000000000000","reason":"x","colour":"red"}"#;
        assert!(serde_json::from_str::<Draft>(text).is_err());
    }
}
