//! The app's link to the engine's calculator table: maps a screen's request onto the table's
//! [`Request`] and the one [`Outcome`] back onto what the results card shows.
//!
//! Design choice: no chemistry, no units and nothing per calculator here. A screen variant is a
//! calculator of the table (and its mode); results are placed on the card by their stable ids
//! alone, so a calculator added to the table needs nothing in this file.

use super::seams::{
    CalcEngine, CalcKind, CalcMode, CalcOutcome, CalcRequest, Caution, CautionLevel, Curve, Extra,
    ProductChoice, SeamError,
};
use crate::engine::Error;
use crate::engine::calculators::{Calculators, Outcome, Request};
use crate::engine::dosing::{self, Severity};

/// The calculators with the built-in catalog.
pub struct DosingEngine {
    calculators: Calculators,
}

impl DosingEngine {
    pub fn new() -> Result<DosingEngine, Error> {
        Ok(DosingEngine {
            calculators: Calculators::new()?,
        })
    }
}

/// The table request for a screen's request.
fn table_request(request: &CalcRequest) -> Request {
    let mut r = Request::new(request.mode.calculator());
    r.mode = request.mode.mode;
    r.product = request.product.clone();
    r.values = request.values.clone();
    r.figures = request.figures.clone();
    r.max_use_level_mg_l = request.max_use_level_mg_l;
    r.limits = request.limits.clone();
    r.tolerances = request.tolerances.clone();
    r.precisions = request.precisions.clone();
    r.site = request.site.clone();
    r.texts = request.texts.clone();
    r
}

/// Results the card shows as its big numbers, by id, in the order of its four places: the
/// dose, the active chemical per day, the product (volume for a liquid, mass for a gas or dry
/// chemical) and the pump or feeder setting.
pub const DOSE: [&str; 2] = ["dose", "actual_dose"];
pub const SETTING: [&str; 4] = crate::engine::calculators::SETTING_RESULTS;
pub const FEED: &str = "feed_mass_rate";
pub const PRODUCT: [&str; 2] = ["product_volume_rate", "product_mass_rate"];

/// Every result id with a big place on the card.
pub const BIG_RESULTS: [&str; 9] = [
    DOSE[0], DOSE[1], SETTING[0], SETTING[1], SETTING[2], SETTING[3], FEED, PRODUCT[0], PRODUCT[1],
];

/// The outcome as the card carries it; every result not in a big place is listed under them.
fn card_of(o: Outcome) -> CalcOutcome {
    let find = |ids: &[&str]| o.results.iter().find(|r| ids.contains(&r.id));
    let get = |ids: &[&str]| find(ids).map(|r| r.value);
    CalcOutcome {
        chemical: o
            .product
            .as_ref()
            .map_or_else(String::new, |p| p.name_key.clone()),
        dose_mg_per_l: get(&DOSE),
        feed_kg_per_day: get(&[FEED]),
        product_l_per_hour: get(&PRODUCT[..1]),
        product_kg_per_day: get(&PRODUCT[1..]),
        pump_setting_percent: get(&SETTING),
        dose_id: find(&DOSE).map(|r| r.id),
        setting_id: find(&SETTING).map(|r| r.id),
        ranges: o
            .results
            .iter()
            .filter_map(|r| Some((r.id, r.range?)))
            .collect(),
        extras: o
            .results
            .iter()
            // A result that repeats one in a big place (`fluoride_added` is the `dose`) is
            // shown there only, once.
            .filter(|r| {
                !BIG_RESULTS.contains(&r.id) && !r.same_as.is_some_and(|s| BIG_RESULTS.contains(&s))
            })
            .map(|r| Extra {
                key: r.id.replace('_', "-"),
                value: r.value,
                quantity: r.quantity,
                range: r.range,
                headline: r.headline,
            })
            .collect(),
        figures: o.figures,
        trace: o.trace_lines(),
        cautions: cautions(&o.cautions),
        table: Some(Box::new(o)),
    }
}

/// Engine cautions as the card carries them; the advisory one is shown by the card itself.
pub fn cautions(list: &[dosing::Caution]) -> Vec<Caution> {
    list.iter()
        .filter(|c| c.key != "advisory-operator-decides")
        .map(|c| Caution {
            level: match c.severity {
                Severity::Info => CautionLevel::Info,
                Severity::Warning => CautionLevel::Warning,
                Severity::Danger => CautionLevel::Danger,
            },
            code: c.key.clone(),
            message: if c.params.is_empty() {
                c.key.clone()
            } else {
                let params: Vec<String> =
                    c.params.iter().map(|(k, v)| format!("{k} = {v}")).collect();
                format!("{} ({})", c.key, params.join(", "))
            },
            params: c.params.clone(),
        })
        .collect()
}

impl CalcEngine for DosingEngine {
    fn products(&self, _kind: CalcKind, mode: CalcMode) -> Vec<ProductChoice> {
        self.calculators.products(mode.calculator())
    }

    fn compute(&self, request: &CalcRequest) -> Result<CalcOutcome, SeamError> {
        let outcome = self.calculators.compute(&table_request(request))?;
        Ok(card_of(outcome))
    }

    fn titration_curve(&self, request: &CalcRequest) -> Result<Curve, SeamError> {
        let r = table_request(request);
        if !request.mode.calculator().has_curve() {
            return Err(SeamError::NotConnected);
        }
        Ok(self.calculators.curve(&r)?)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::calculators;

    #[test]
    fn every_calculator_of_the_table_the_app_shows_is_a_screen_variant() {
        let shown: Vec<&str> = CalcMode::all().iter().map(|m| m.calculator).collect();
        for c in calculators::all().iter().filter(|c| c.in_app) {
            assert!(shown.contains(&c.id), "{}", c.id);
        }
    }
}
