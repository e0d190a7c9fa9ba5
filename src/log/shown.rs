//! The one conversion from a calculator's [`Outcome`] to the log's [`Dose`]: the app's "Log this
//! dose", its corrections and `molefeed calc ID ... --log FILE` all record through here, so an
//! entry is what the operator was shown and two front ends cannot record the same result two
//! ways.
//!
//! Design choice: numbers are kept in the unit system they were shown in, with the text that
//! was shown beside the full-precision value; a result the calculator did not compute is
//! absent, never zero. A front end supplies only its texts (how it printed each number, what
//! was typed, how it worded each caution).

use super::record::{
    Dose, LoggedCaution, LoggedInput, LoggedResult, ProductRef, Setting, result_id,
};
use crate::engine::calculators::{InputUsed, Outcome, ResultValue};
use crate::engine::dosing::Caution;
use crate::engine::quantity::{Unit, UnitSystem};

/// The result id of a setting computed above 100 % of the pump's or feeder's scale: no setting
/// anyone can make, logged as what it is.
pub const BEYOND_FULL_SCALE: &str = "setting_beyond_full_scale";

/// How a front end showed an outcome.
pub struct Shown<'a> {
    /// The unit system the numbers were shown in.
    pub system: UnitSystem,
    /// The text shown for a result, in `unit`.
    pub result: &'a dyn Fn(&ResultValue, Unit) -> String,
    /// The text typed for an input, where it was typed.
    pub input: &'a dyn Fn(&InputUsed) -> Option<String>,
    /// The words shown for a caution.
    pub caution: &'a dyn Fn(&Caution) -> String,
}

/// A unit as the log writes it (symbols the report's unit parser reads), with the basis the
/// unit implies.
pub fn log_unit(unit: Unit) -> (&'static str, Option<&'static str>) {
    match unit {
        Unit::MgPerLAsCaCO3 => ("mg/L", Some("CaCO3")),
        Unit::NoUnit | Unit::Ratio => ("", None),
        other => (other.symbol(), None),
    }
}

/// The record of `outcome` as `shown` showed it, by `operator` at `tap`.
pub fn dose_of_outcome(outcome: &Outcome, shown: &Shown<'_>, operator: &str, tap: &str) -> Dose {
    let mut results = Vec::new();
    let inputs: Vec<LoggedInput> = outcome
        .inputs
        .iter()
        .map(|i| {
            let unit = i.quantity.unit(shown.system);
            let (unit_text, implied) = log_unit(unit);
            let value = unit.from_si(i.value);
            LoggedInput {
                name: i.name.into(),
                text: (shown.input)(i).unwrap_or_else(|| value.to_string()),
                value,
                unit: unit_text.into(),
                basis: i.basis.or(implied).map(String::from),
            }
        })
        .collect();
    // The plant flow as the calculation used it, listed with the results because the monthly
    // report reads it there.
    if let Some(flow) = inputs.iter().find(|i| i.name == "flow") {
        results.push(LoggedResult {
            id: result_id::FLOW.into(),
            value: flow.value,
            shown: flow.text.clone(),
            unit: flow.unit.clone(),
            basis: None,
            headline: false,
            range: None,
        });
    }
    let settable = outcome
        .setting
        .filter(|s| (0.0..=100.0).contains(&s.percent));
    for r in &outcome.results {
        let unit = r.quantity.unit(shown.system);
        let (unit_text, implied) = log_unit(unit);
        let is_setting = outcome.setting.is_some_and(|s| s.percent == r.value)
            && r.quantity == crate::engine::quantity::Quantity::Percent
            && r.id.ends_with("setting");
        let id = if is_setting && settable.is_none() {
            BEYOND_FULL_SCALE
        } else {
            r.id
        };
        results.push(LoggedResult {
            id: id.into(),
            value: unit.from_si(r.value),
            shown: (shown.result)(r, unit),
            unit: unit_text.into(),
            basis: r.basis.clone().or(implied.map(String::from)),
            headline: r.headline,
            range: r
                .range
                .map(|range| [unit.from_si(range.low), unit.from_si(range.high)]),
        });
    }
    let setting = settable.map(|s| Setting {
        device: s.device.code().into(),
        percent: s.percent,
        shown: outcome
            .results
            .iter()
            .find(|r| r.value == s.percent && r.id.ends_with("setting"))
            .map_or_else(
                || s.percent.to_string(),
                |r| (shown.result)(r, r.quantity.unit(shown.system)),
            ),
    });
    Dose {
        operator: operator.into(),
        tap: tap.into(),
        calculator: outcome.calculator.into(),
        mode: outcome.mode.map(String::from),
        chemical: outcome.chemical.clone(),
        product: outcome.product.as_ref().map(|p| ProductRef {
            id: p.id.clone(),
            name: p.name.clone(),
        }),
        inputs,
        results,
        setting,
        trace: outcome.trace_lines().iter().map(|l| l.plain()).collect(),
        cautions: outcome
            .cautions
            .iter()
            .map(|c| LoggedCaution {
                severity: match c.severity {
                    crate::engine::dosing::Severity::Info => "info",
                    crate::engine::dosing::Severity::Warning => "warning",
                    crate::engine::dosing::Severity::Danger => "danger",
                }
                .into(),
                code: c.key.clone(),
                text: (shown.caution)(c),
            })
            .collect(),
        cross_check: None,
        note: String::new(),
    }
}
