//! The engine behind the calculator seam: maps the UI's named SI inputs onto the dosing
//! engine's typed inputs, and its results, traces and cautions back onto [`CalcOutcome`].
//!
//! Design choice: a thin translation layer, no arithmetic of its own. Values arrive already in
//! SI (flow m³/d, concentrations mg/L, pump capacity L/h) and go to the engine with those units
//! named explicitly (`FlowUnit::M3d`, `VolumeRateUnit::Lph`); what the engine cannot do yet
//! stays "not connected" rather than approximated here. The advisory caution is dropped
//! because the results card shows the advisory note permanently.

use super::seams::{
    CalcEngine, CalcKind, CalcOutcome, CalcRequest, Caution, CautionLevel, ProductChoice, SeamError,
};
use crate::engine::dosing::catalog::{Catalog, Form, Strength, StrengthBasis};
use crate::engine::dosing::feed::{FeedInput, PumpKind, UsableRange, feed};
use crate::engine::dosing::units::{Flow, FlowUnit, VolumeRateUnit};
use crate::engine::dosing::{self, Severity};
use crate::engine::sigfig::Measured;
use crate::engine::{Error, ErrorKind};

/// The dosing engine with its built-in product catalog.
pub struct DosingEngine {
    catalog: Catalog,
}

impl DosingEngine {
    pub fn new() -> Result<DosingEngine, Error> {
        Ok(DosingEngine {
            catalog: Catalog::builtin()?,
        })
    }

    /// Liquid products with a typical strength: what a metering pump feeds.
    fn solution_products(&self) -> Vec<ProductChoice> {
        self.catalog
            .products
            .iter()
            .filter(|p| p.form == Form::Solution && !p.strengths.is_empty())
            .map(|p| ProductChoice {
                id: p.id.clone(),
                name_key: p.name_key.clone(),
            })
            .collect()
    }

    fn feed_setting(&self, request: &CalcRequest) -> Result<CalcOutcome, SeamError> {
        let value = |name: &str| {
            request.get(name).ok_or_else(|| {
                Error::new(ErrorKind::InvalidInput, format!("{name} is missing"))
                    .with("quantity", name.to_string())
            })
        };
        let product_id = request
            .product
            .clone()
            .ok_or_else(|| Error::new(ErrorKind::UnknownChemical, "no product chosen"))?;
        let product = self.catalog.product(&product_id)?;
        let basis = product
            .strengths
            .first()
            .map_or(StrengthBasis::Weight, |s| s.basis);
        let input = FeedInput {
            flow: Flow::new(Measured::exact(value("flow")?), FlowUnit::M3d),
            dose: Measured::exact(value("dose")?),
            product: product_id.clone(),
            strength: Strength::new(
                Measured::exact(value("strength")?),
                basis,
                Some(Measured::exact(value("specific-gravity")?)),
            ),
            pump: Some(PumpKind::Metering {
                capacity: value("pump-capacity")?,
                unit: VolumeRateUnit::Lph,
            }),
            usable_range: UsableRange::default(),
            max_use_level_mg_l: None,
        };
        let r = feed(&self.catalog, &input)?;
        Ok(CalcOutcome {
            chemical: product.name_key.clone(),
            dose_mg_per_l: Some(r.dose_mg_l),
            feed_kg_per_day: Some(r.active_kg_per_day),
            product_l_per_hour: r.product_l_per_h,
            pump_setting_percent: r.pump.as_ref().map(|p| p.percent),
            trace: dosing::show_work(&r.traces)
                .lines()
                .map(str::to_string)
                .collect(),
            cautions: cautions(&r.cautions),
        })
    }
}

/// Engine cautions as the UI carries them; the advisory one is shown by the card itself.
fn cautions(list: &[dosing::Caution]) -> Vec<Caution> {
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
    fn products(&self, kind: CalcKind) -> Vec<ProductChoice> {
        match kind {
            CalcKind::FeedSetting => self.solution_products(),
            _ => Vec::new(),
        }
    }

    fn compute(&self, request: &CalcRequest) -> Result<CalcOutcome, SeamError> {
        match request.kind {
            CalcKind::FeedSetting => self.feed_setting(request),
            _ => Err(SeamError::NotConnected),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::app::seams::CalcMode;
    use std::collections::BTreeMap;

    fn feed_request(product: &str, dose: f64) -> CalcRequest {
        CalcRequest {
            kind: CalcKind::FeedSetting,
            mode: CalcMode::Standard,
            product: Some(product.into()),
            values: BTreeMap::from([
                ("flow", 9084.99),
                ("dose", dose),
                ("strength", 12.5),
                ("specific-gravity", 1.2),
                ("pump-capacity", 15.0),
            ]),
        }
    }

    #[test]
    fn feed_setting_is_the_engines_feed_result() {
        let engine = DosingEngine::new().expect("built-in catalog");
        let products = engine.products(CalcKind::FeedSetting);
        assert!(products.iter().any(|p| p.id == "sodium-hypochlorite"));
        assert!(engine.products(CalcKind::Softening).is_empty());

        let out = engine
            .compute(&feed_request("sodium-hypochlorite", 2.5))
            .expect("a result");
        // The adapter must hand over the engine's own numbers, unchanged.
        let direct = feed(
            &engine.catalog,
            &FeedInput {
                flow: Flow::new(Measured::exact(9084.99), FlowUnit::M3d),
                dose: Measured::exact(2.5),
                product: "sodium-hypochlorite".into(),
                strength: Strength::new(
                    Measured::exact(12.5),
                    engine
                        .catalog
                        .product("sodium-hypochlorite")
                        .unwrap()
                        .strengths[0]
                        .basis,
                    Some(Measured::exact(1.2)),
                ),
                pump: Some(PumpKind::Metering {
                    capacity: 15.0,
                    unit: VolumeRateUnit::Lph,
                }),
                usable_range: UsableRange::default(),
                max_use_level_mg_l: None,
            },
        )
        .unwrap();
        assert_eq!(out.dose_mg_per_l, Some(direct.dose_mg_l));
        assert_eq!(out.feed_kg_per_day, Some(direct.active_kg_per_day));
        assert_eq!(out.product_l_per_hour, direct.product_l_per_h);
        assert_eq!(out.pump_setting_percent, direct.pump.map(|p| p.percent));
        assert_eq!(out.chemical, "product-sodium-hypochlorite");
        assert!(!out.trace.is_empty());
        assert!(
            !out.cautions
                .iter()
                .any(|c| c.code == "advisory-operator-decides")
        );
        assert!(out.cautions.iter().any(|c| c.level == CautionLevel::Danger));
    }

    #[test]
    fn engine_refusals_and_gaps_pass_through() {
        let engine = DosingEngine::new().unwrap();
        let err = engine.compute(&feed_request("sodium-hypochlorite", -1.0));
        assert!(matches!(err, Err(SeamError::Engine(_))), "{err:?}");
        let err = engine.compute(&feed_request("no-such-product", 1.0));
        assert!(
            matches!(&err, Err(SeamError::Engine(e)) if e.kind() == ErrorKind::UnknownChemical),
            "{err:?}"
        );
        let mut other = feed_request("sodium-hypochlorite", 1.0);
        other.kind = CalcKind::Softening;
        assert_eq!(engine.compute(&other), Err(SeamError::NotConnected));
    }
}
