//! How well each reading is known: the instruments a plant reads its water with and their
//! precision.
//!
//! Design choice: a measured input names the instrument it is read with ([`Instrument`]); each
//! instrument has a default precision (typical field figures, each with its source or marked
//! common practice) that a site may override, and the operator may type a "± x" of their own
//! for one reading. How a result's range follows from these is the calculators' business
//! (`calculators::ranges`); this module only knows readings.

use super::quantity::{Quantity, Unit};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

/// What a reading is taken with. Targets, choices and product data (a dose to reach, a pump
/// setting read off its dial, a label strength) have none: they are exact unless the operator
/// types a "± x".
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Instrument {
    /// The plant's flow meter.
    FlowMeter,
    /// A field or bench pH meter.
    PhMeter,
    /// A thermometer or a meter's temperature probe.
    Thermometer,
    /// A titration (alkalinity, hardness).
    Titration,
    /// A colorimetric kit or photometer (chlorine residual, ammonia).
    Colorimeter,
    /// A stopwatch started and stopped by hand (drawdown or catch test).
    Stopwatch,
    /// A graduated calibration column read by eye.
    GraduatedColumn,
    /// A scale weighing a dry feeder's catch.
    Scale,
}

impl Instrument {
    pub const ALL: [Instrument; 8] = [
        Instrument::FlowMeter,
        Instrument::PhMeter,
        Instrument::Thermometer,
        Instrument::Titration,
        Instrument::Colorimeter,
        Instrument::Stopwatch,
        Instrument::GraduatedColumn,
        Instrument::Scale,
    ];

    /// Stable code: the site file's key, the translation stem `instrument-<code>`.
    pub fn code(self) -> &'static str {
        match self {
            Instrument::FlowMeter => "flow-meter",
            Instrument::PhMeter => "ph-meter",
            Instrument::Thermometer => "thermometer",
            Instrument::Titration => "titration",
            Instrument::Colorimeter => "colorimeter",
            Instrument::Stopwatch => "stopwatch",
            Instrument::GraduatedColumn => "graduated-column",
            Instrument::Scale => "scale",
        }
    }

    pub fn from_code(code: &str) -> Option<Instrument> {
        Instrument::ALL.into_iter().find(|i| i.code() == code)
    }

    /// The precision assumed when the site states none. Absolute parts are in the SI unit of
    /// the quantity the instrument reads (mg/L, °C, s, mL, g); each line says where the figure
    /// comes from.
    pub fn default_precision(self) -> Precision {
        match self {
            // Plant flow meters: magnetic meters are rated about ±0.5 % of reading, venturi and
            // flumes ±2–5 %; ±2 % allows for installation and calibration drift (common
            // practice, from memory).
            Instrument::FlowMeter => Precision::relative(2.0),
            // A calibrated field pH meter: ±0.05 pH (Standard Methods 4500-H+ gives an accuracy
            // of about ±0.1 and a precision of ±0.02 pH units for careful work; from memory).
            Instrument::PhMeter => Precision::absolute(0.05),
            // Field thermometers and probes: ±0.5 °C (common practice).
            Instrument::Thermometer => Precision::absolute(0.5),
            // Titration to an end point: about ±1 mL of a typical 0.02 N titrant on a 100 mL
            // sample, which is ±1 mg/L as CaCO3, or ±3 % near larger end points, whichever is
            // more (common practice, from memory).
            Instrument::Titration => Precision {
                absolute: 1.0,
                relative_percent: 3.0,
            },
            // DPD and salicylate kits and pocket photometers: ±0.05 mg/L at low readings,
            // ±5 % of reading above (common practice, from memory).
            Instrument::Colorimeter => Precision {
                absolute: 0.05,
                relative_percent: 5.0,
            },
            // A hand-timed interval: about ±0.5 s for starting and stopping by hand (common
            // practice).
            Instrument::Stopwatch => Precision::absolute(0.5),
            // A calibration column read by eye: half of a typical 2 mL division at each of the
            // two readings, ±2 mL in all (common practice).
            Instrument::GraduatedColumn => Precision::absolute(2.0),
            // A platform scale used for catch tests: ±1 g (common practice).
            Instrument::Scale => Precision::absolute(1.0),
        }
    }

    /// The quantity the instrument reads (its precision's absolute part is in this
    /// quantity's SI unit).
    pub fn quantity(self) -> Quantity {
        match self {
            Instrument::FlowMeter => Quantity::Flow,
            Instrument::PhMeter => Quantity::Ph,
            Instrument::Thermometer => Quantity::Temperature,
            Instrument::Titration => Quantity::AsCaCO3,
            Instrument::Colorimeter => Quantity::Concentration,
            Instrument::Stopwatch => Quantity::Seconds,
            Instrument::GraduatedColumn => Quantity::Millilitres,
            Instrument::Scale => Quantity::Grams,
        }
    }

    /// The instrument a reading of `quantity` taken in the water is usually read with.
    pub const fn for_water(quantity: Quantity) -> Option<Instrument> {
        match quantity {
            Quantity::Flow => Some(Instrument::FlowMeter),
            Quantity::Ph => Some(Instrument::PhMeter),
            Quantity::Temperature => Some(Instrument::Thermometer),
            Quantity::AsCaCO3 => Some(Instrument::Titration),
            Quantity::Concentration => Some(Instrument::Colorimeter),
            _ => None,
        }
    }
}

/// How well a reading is known: the larger of an absolute part (SI unit of its quantity) and a
/// part relative to the reading.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct Precision {
    #[serde(default)]
    pub absolute: f64,
    #[serde(default)]
    pub relative_percent: f64,
}

impl Precision {
    pub const fn absolute(absolute: f64) -> Precision {
        Precision {
            absolute,
            relative_percent: 0.0,
        }
    }

    pub const fn relative(percent: f64) -> Precision {
        Precision {
            absolute: 0.0,
            relative_percent: percent,
        }
    }

    /// The ± of a reading `value`.
    pub fn of(self, value: f64) -> f64 {
        self.absolute
            .abs()
            .max(self.relative_percent.abs() / 100.0 * value.abs())
    }

    /// A usable precision: finite and not negative in both parts.
    pub fn is_valid(self) -> bool {
        self.absolute.is_finite()
            && self.relative_percent.is_finite()
            && self.absolute >= 0.0
            && self.relative_percent >= 0.0
    }
}

/// The range a result may lie in given the precision of the readings.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Range {
    pub low: f64,
    pub high: f64,
}

/// Overrides by instrument code, as a site file states them: `{"flow-meter": {"relative_percent": 1}}`.
pub fn precisions_from_codes(
    codes: &BTreeMap<String, Precision>,
) -> BTreeMap<Instrument, Precision> {
    codes
        .iter()
        .filter_map(|(k, p)| Some((Instrument::from_code(k)?, *p)))
        .filter(|(_, p)| p.is_valid())
        .collect()
}

/// A reading as typed with a precision of its own: `140 ± 2`, `140±2`, `140 +- 2` or
/// `140 +/- 2` give the reading and the typed ±; anything else is the reading alone.
pub fn split_tolerance(text: &str) -> (&str, Option<&str>) {
    for mark in ["±", "+/-", "+-"] {
        if let Some((value, tolerance)) = text.split_once(mark) {
            return (value.trim(), Some(tolerance.trim()));
        }
    }
    (text.trim(), None)
}

/// An SI difference `si` shown as a difference in `unit` (1 °C apart is 1.8 °F apart).
pub fn tolerance_from_si(unit: super::quantity::Unit, si: f64) -> f64 {
    (unit.from_si(si) - unit.from_si(0.0)).abs()
}

/// A typed ± of `tolerance` on a reading `value`, both in `unit`, as an SI difference. A
/// difference converts by the unit's factor alone (2 °F apart is 1.11 °C apart, not −16.7 °C).
pub fn tolerance_to_si(unit: super::quantity::Unit, value: f64, tolerance: f64) -> f64 {
    (unit.to_si(value + tolerance) - unit.to_si(value)).abs()
}

/// The range beside a value, from texts formatted alike (same decimals, same decimal mark):
/// `None` when it says nothing the value does not (an exact result). Negative bounds are spaced
/// around the dash, which would otherwise read as a minus sign.
pub fn range_text(value: &str, low: &str, high: &str) -> Option<String> {
    if low == value && high == value {
        None
    } else if low.starts_with('-') || high.starts_with('-') {
        Some(format!("{low} – {high}"))
    } else {
        Some(format!("{low}–{high}"))
    }
}

/// The range beside a value shown as `value` in `unit`: its bounds converted from SI and
/// formatted by the front end's `fixed(number, decimals)` (its decimal mark) to the decimals
/// `value` shows, so the CLI and the app cannot word a range differently.
pub fn range_beside(
    value: &str,
    range: Range,
    unit: Unit,
    fixed: impl Fn(f64, usize) -> String,
) -> Option<String> {
    let decimals = crate::engine::sigfig::shown_decimals(value);
    let at = |v: f64| fixed(unit.from_si(v), decimals);
    range_text(value, &at(range.low), &at(range.high))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::quantity::Unit;

    fn check(text: &str, value: &str, tolerance: Option<&str>) {
        assert_eq!(split_tolerance(text), (value, tolerance), "{text:?}");
    }

    #[test]
    fn a_typed_tolerance_is_split_from_its_reading() {
        check("140", "140", None);
        check(" 140 ± 2 ", "140", Some("2"));
        check("140±2", "140", Some("2"));
        check("7.2 +- 0.1", "7.2", Some("0.1"));
        check("7.2 +/- 0.1", "7.2", Some("0.1"));
        check("1,5 ± 0,1", "1,5", Some("0,1"));
        check("-3", "-3", None);
    }

    #[test]
    fn a_range_is_shown_only_where_it_says_something() {
        assert_eq!(range_text("3.00", "3.00", "3.00"), None);
        assert_eq!(
            range_text("26.3", "25.0", "27.7").as_deref(),
            Some("25.0–27.7")
        );
        assert_eq!(
            range_text("-7.69", "-11.6", "-3.72").as_deref(),
            Some("-11.6 – -3.72")
        );
    }

    #[test]
    fn a_range_beside_a_value_takes_its_decimals_and_unit() {
        // 1 MGD = 3785.411784 m³/d exactly, so these SI bounds are 1.95 and 2.05 MGD.
        let range = Range {
            low: 1.95 * 3785.411784,
            high: 2.05 * 3785.411784,
        };
        let fixed = |v: f64, d: usize| format!("{v:.d$}");
        let comma = |v: f64, d: usize| format!("{v:.d$}").replace('.', ",");
        let beside = |value: &str, f: &dyn Fn(f64, usize) -> String| {
            range_beside(value, range, Unit::Mgd, f)
        };
        assert_eq!(beside("2.00", &fixed).as_deref(), Some("1.95–2.05"));
        assert_eq!(beside("2,00", &comma).as_deref(), Some("1,95–2,05"));
        // Shown to whole MGD both bounds read "2": the range says nothing more.
        assert_eq!(beside("2", &fixed), None);
    }

    #[test]
    fn a_tolerance_converts_as_a_difference() {
        // 1.8 °F is 1 °C apart by the definition of the Fahrenheit degree.
        assert!((tolerance_to_si(Unit::Fahrenheit, 50.0, 1.8) - 1.0).abs() < 1e-12);
        // 1 MGD is 3785.411784 m³/d (1 US gal = 3.785411784 L, exact).
        assert!((tolerance_to_si(Unit::Mgd, 2.0, 0.1) - 378.541_178_4).abs() < 1e-6);
    }

    #[test]
    fn a_precision_is_the_larger_of_its_parts() {
        let p = Precision {
            absolute: 1.0,
            relative_percent: 3.0,
        };
        assert_eq!(p.of(10.0), 1.0);
        assert!((p.of(200.0) - 6.0).abs() < 1e-12);
        assert!(!Precision::absolute(-1.0).is_valid());
        assert!(!Precision::relative(f64::NAN).is_valid());
    }
}
