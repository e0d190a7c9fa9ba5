//! The engine behind the calculator seam: maps the UI's named SI inputs onto the dosing
//! engine's typed inputs, and its results, traces and cautions back onto [`CalcOutcome`].
//!
//! Design choice: a thin translation layer, no arithmetic of its own. Values arrive already in
//! SI (flow m³/d, concentrations mg/L, pump capacity L/h) and go to the engine with those units
//! named explicitly (`FlowUnit::M3d`, `VolumeRateUnit::Lph`); what the engine cannot do yet
//! stays "not connected" rather than approximated here. The advisory caution is dropped
//! because the results card shows the advisory note permanently.

use super::seams::{
    CalcEngine, CalcKind, CalcMode, CalcOutcome, CalcRequest, Caution, CautionLevel, Curve,
    ProductChoice, SeamError,
};

/// pH-adjustment chemicals: the water-chemistry engine's id and the dosing catalog's liquid
/// product of the same compound (a test checks the pairing against both catalogs).
const PH_CHEMICALS: [(&str, &str); 3] = [
    ("caustic", "sodium-hydroxide"),
    ("sulfuric-acid", "sulfuric-acid"),
    ("hydrochloric-acid", "hydrochloric-acid"),
];

/// Points on a drawn titration curve.
const CURVE_POINTS: usize = 60;
use crate::engine::dosing::catalog::{Catalog, Form, Strength, StrengthBasis};
use crate::engine::dosing::chlorine::{
    ChlorineInput, chloramination, chlorine_dose, dechlorination,
};
use crate::engine::dosing::feed::{FeedInput, FeedResult, PumpKind, UsableRange, feed};
use crate::engine::dosing::pumpcheck::{Measurement, PumpCheckInput, Tolerance, pump_check};
use crate::engine::dosing::units::{Flow, FlowUnit, VolumeRateUnit};
use crate::engine::dosing::{self, Severity};
use crate::engine::sigfig::Measured;
use crate::engine::water::{self, Precipitation, WaterInput, WaterState};
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

    /// Liquid products with a typical strength (what a metering pump feeds), optionally only
    /// those whose dose is expressed as `dose_as`.
    fn solution_products(&self, dose_as: Option<&[&str]>) -> Vec<ProductChoice> {
        self.catalog
            .products
            .iter()
            .filter(|p| p.form == Form::Solution && !p.strengths.is_empty())
            .filter(|p| dose_as.is_none_or(|d| d.contains(&p.dose_as.as_str())))
            .map(|p| ProductChoice {
                id: p.id.clone(),
                name_key: p.name_key.clone(),
            })
            .collect()
    }

    /// The chosen product's id and its strength as typed, on the product's usual basis.
    fn product_strength(&self, request: &CalcRequest) -> Result<(String, Strength), Error> {
        let product_id = request
            .product
            .clone()
            .ok_or_else(|| Error::new(ErrorKind::UnknownChemical, "no product chosen"))?;
        let product = self.catalog.product(&product_id)?;
        let basis = product
            .strengths
            .first()
            .map_or(StrengthBasis::Weight, |s| s.basis);
        let strength = Strength::new(
            Measured::exact(value(request, "strength")?),
            basis,
            Some(Measured::exact(value(request, "specific-gravity")?)),
        );
        Ok((product_id, strength))
    }

    fn feed_for(&self, request: &CalcRequest, dose: f64) -> Result<FeedResult, Error> {
        let (product, strength) = self.product_strength(request)?;
        let input = FeedInput {
            flow: Flow::new(Measured::exact(value(request, "flow")?), FlowUnit::M3d),
            dose: Measured::exact(dose),
            product,
            strength,
            pump: Some(PumpKind::Metering {
                capacity: value(request, "pump-capacity")?,
                unit: VolumeRateUnit::Lph,
            }),
            usable_range: UsableRange::default(),
            max_use_level_mg_l: None,
        };
        feed(&self.catalog, &input)
    }

    fn name_key(&self, request: &CalcRequest) -> String {
        request
            .product
            .as_deref()
            .and_then(|id| self.catalog.product(id).ok())
            .map_or_else(String::new, |p| p.name_key.clone())
    }

    fn feed_setting(&self, request: &CalcRequest) -> Result<CalcOutcome, SeamError> {
        let r = self.feed_for(request, value(request, "dose")?)?;
        Ok(outcome_of_feed(
            self.name_key(request),
            &r,
            Vec::new(),
            Vec::new(),
        ))
    }

    /// Free chlorine: the dose from demand + residual (engine), then the product feed for it.
    fn free_chlorine(&self, request: &CalcRequest) -> Result<CalcOutcome, SeamError> {
        let c = chlorine_dose(
            &self.catalog,
            &ChlorineInput {
                demand: Measured::exact(value(request, "chlorine-demand")?),
                residual: Measured::exact(value(request, "residual-target")?),
                ammonia_n: None,
                residual_limit_mg_l: None,
            },
        )?;
        let r = self.feed_for(request, c.dose_mg_l)?;
        Ok(outcome_of_feed(
            self.name_key(request),
            &r,
            c.traces,
            c.cautions,
        ))
    }

    /// Chloramination: the ammonia (as N) for the chlorine dose and ratio (engine), then the
    /// ammonia product's feed for it.
    fn chloramine(&self, request: &CalcRequest) -> Result<CalcOutcome, SeamError> {
        let c = chloramination(
            &self.catalog,
            Measured::exact(value(request, "chlorine-dose")?),
            Measured::exact(value(request, "cl2-n-ratio")?),
        )?;
        let r = self.feed_for(request, c.ammonia_n_mg_l)?;
        Ok(outcome_of_feed(
            self.name_key(request),
            &r,
            c.traces,
            c.cautions,
        ))
    }

    /// Dechlorination: the stoichiometric agent dose for the residual (engine), then the
    /// agent product's feed for it.
    fn dechlorination(&self, request: &CalcRequest) -> Result<CalcOutcome, SeamError> {
        let agent = request
            .product
            .clone()
            .ok_or_else(|| Error::new(ErrorKind::UnknownChemical, "no agent chosen"))?;
        let d = dechlorination(
            &self.catalog,
            Measured::exact(value(request, "residual-in")?),
            &agent,
        )?;
        let r = self.feed_for(request, d.agent_mg_l)?;
        Ok(outcome_of_feed(
            self.name_key(request),
            &r,
            d.traces,
            d.cautions,
        ))
    }

    /// The water as measured and the chosen pH chemical (water-engine side).
    fn water_and_chemical(
        &self,
        request: &CalcRequest,
    ) -> Result<(WaterState, &'static water::Chemical), Error> {
        let product = request
            .product
            .as_deref()
            .ok_or_else(|| Error::new(ErrorKind::UnknownChemical, "no chemical chosen"))?;
        let water_id = PH_CHEMICALS
            .iter()
            .find(|(_, p)| *p == product)
            .map(|(w, _)| *w)
            .ok_or_else(|| {
                Error::new(
                    ErrorKind::UnknownChemical,
                    format!("{product} is not a pH chemical"),
                )
            })?;
        let state = WaterState::new(&WaterInput::new(
            value(request, "ph-raw")?,
            value(request, "temperature")?,
            value(request, "alkalinity")?,
        ))?;
        let chemical = water::Catalog::embedded()?.find(water_id)?;
        Ok((state, chemical))
    }

    /// pH adjustment: the dose that reaches the target pH (water-chemistry engine), then the
    /// liquid product's feed for it (dosing engine).
    fn ph_control(&self, request: &CalcRequest) -> Result<CalcOutcome, SeamError> {
        let (state, chemical) = self.water_and_chemical(request)?;
        let target = value(request, "ph-target")?;
        let d = water::dose_for_ph(&state, chemical, target, Precipitation::None)?;
        let r = self.feed_for(request, d.dose_mg_l)?;
        let mut out = outcome_of_feed(self.name_key(request), &r, Vec::new(), Vec::new());
        out.trace.insert(0, "[ph-adjustment]".into());
        out.trace.insert(
            1,
            format!(
                "  pH {:.2} → {:.2}: {:.4} mg/L {} (water-chemistry engine, no precipitation)",
                state.ph(),
                d.water.ph,
                d.dose_mg_l,
                chemical.id
            ),
        );
        Ok(out)
    }

    /// Pump cross-check: the dose a drawdown actually delivers, and the setting to reach the
    /// target. "Dose" shows the measured (actual) dose; "pump setting" the suggested one.
    fn pump_check(&self, request: &CalcRequest) -> Result<CalcOutcome, SeamError> {
        let (product, strength) = self.product_strength(request)?;
        let r = pump_check(
            &self.catalog,
            &PumpCheckInput {
                measurement: Measurement::Drawdown {
                    ml: Measured::exact(value(request, "drawdown-volume")?),
                    seconds: Measured::exact(value(request, "drawdown-time")?),
                },
                flow: Flow::new(Measured::exact(value(request, "flow")?), FlowUnit::M3d),
                product,
                strength,
                target_dose: Measured::exact(value(request, "dose")?),
                current_setting_percent: Some(value(request, "pump-setting")?),
                tolerance: Tolerance::default(),
            },
        )?;
        Ok(CalcOutcome {
            chemical: self.name_key(request),
            dose_mg_per_l: Some(r.actual_dose_mg_l),
            feed_kg_per_day: Some(r.active_kg_per_day),
            product_l_per_hour: Some(r.product_l_per_day / 24.0),
            pump_setting_percent: r.suggested_setting_percent,
            trace: dosing::show_work(&r.traces)
                .lines()
                .map(str::to_string)
                .collect(),
            cautions: cautions(&r.cautions),
        })
    }
}

fn value(request: &CalcRequest, name: &str) -> Result<f64, Error> {
    request.get(name).ok_or_else(|| {
        Error::new(ErrorKind::InvalidInput, format!("{name} is missing"))
            .with("quantity", name.to_string())
    })
}

/// A feed result as the card shows it, after the steps (if any) that led to its dose.
fn outcome_of_feed(
    chemical: String,
    r: &FeedResult,
    mut traces: Vec<dosing::NamedTrace>,
    mut before: Vec<dosing::Caution>,
) -> CalcOutcome {
    traces.extend(r.traces.iter().cloned());
    before.extend(r.cautions.iter().cloned());
    CalcOutcome {
        chemical,
        dose_mg_per_l: Some(r.dose_mg_l),
        feed_kg_per_day: Some(r.active_kg_per_day),
        product_l_per_hour: r.product_l_per_h,
        pump_setting_percent: r.pump.as_ref().map(|p| p.percent),
        trace: dosing::show_work(&traces)
            .lines()
            .map(str::to_string)
            .collect(),
        cautions: cautions(&dosing::caution::finish(before)),
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
    fn titration_curve(&self, request: &CalcRequest) -> Result<Curve, SeamError> {
        if request.kind != CalcKind::PhControl {
            return Err(SeamError::NotConnected);
        }
        let (state, chemical) = self.water_and_chemical(request)?;
        let target = value(request, "ph-target")?;
        // Draw to twice the dose that reaches the target, so the target sits mid-curve.
        let max = water::dose_for_ph(&state, chemical, target, Precipitation::None)
            .map_or(100.0, |d| (2.0 * d.dose_mg_l).max(1.0));
        let points = water::curve(&state, chemical, max, CURVE_POINTS, Precipitation::None)?;
        Ok(Curve {
            titrant: self.name_key(request),
            points: points.iter().map(|p| (p.dose_mg_l, p.ph)).collect(),
        })
    }

    fn products(&self, kind: CalcKind, mode: CalcMode) -> Vec<ProductChoice> {
        match (kind, mode) {
            (CalcKind::PhControl, _) => PH_CHEMICALS
                .iter()
                .filter_map(|(_, id)| self.catalog.product(id).ok())
                .map(|p| ProductChoice {
                    id: p.id.clone(),
                    name_key: p.name_key.clone(),
                })
                .collect(),
            (CalcKind::FeedSetting | CalcKind::PumpCheck, _) => self.solution_products(None),
            (CalcKind::Chlorination, CalcMode::FreeChlorine) => {
                self.solution_products(Some(&["Cl2"]))
            }
            (CalcKind::Chlorination, CalcMode::Chloramine) => self.solution_products(Some(&["N"])),
            (CalcKind::Chlorination, CalcMode::Dechlorination) => self.solution_products(Some(&[
                "SO2", "NaHSO3", "Na2S2O5", "Na2SO3", "Na2S2O3", "C6H8O6",
            ])),
            _ => Vec::new(),
        }
    }

    fn compute(&self, request: &CalcRequest) -> Result<CalcOutcome, SeamError> {
        match (request.kind, request.mode) {
            (CalcKind::FeedSetting, _) => self.feed_setting(request),
            (CalcKind::PhControl, _) => self.ph_control(request),
            (CalcKind::Chlorination, CalcMode::FreeChlorine) => self.free_chlorine(request),
            (CalcKind::Chlorination, CalcMode::Chloramine) => self.chloramine(request),
            (CalcKind::Chlorination, CalcMode::Dechlorination) => self.dechlorination(request),
            (CalcKind::PumpCheck, _) => self.pump_check(request),
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
        let products = engine.products(CalcKind::FeedSetting, CalcMode::Standard);
        assert!(products.iter().any(|p| p.id == "sodium-hypochlorite"));
        assert!(
            engine
                .products(CalcKind::Softening, CalcMode::Standard)
                .is_empty()
        );

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
    fn free_chlorine_dose_comes_from_the_chlorine_engine() {
        let engine = DosingEngine::new().unwrap();
        let mut request = feed_request("sodium-hypochlorite", 0.0);
        request.kind = CalcKind::Chlorination;
        request.mode = CalcMode::FreeChlorine;
        request.values.remove("dose");
        request.values.insert("chlorine-demand", 1.4);
        request.values.insert("residual-target", 1.0);
        assert!(
            engine
                .products(CalcKind::Chlorination, CalcMode::FreeChlorine)
                .iter()
                .all(|p| engine.catalog.product(&p.id).unwrap().dose_as == "Cl2")
        );
        let out = engine.compute(&request).expect("a result");
        let direct = chlorine_dose(
            &engine.catalog,
            &ChlorineInput {
                demand: Measured::exact(1.4),
                residual: Measured::exact(1.0),
                ammonia_n: None,
                residual_limit_mg_l: None,
            },
        )
        .unwrap();
        assert_eq!(out.dose_mg_per_l, Some(direct.dose_mg_l));
        let fed = engine.feed_for(&request, direct.dose_mg_l).unwrap();
        assert_eq!(out.feed_kg_per_day, Some(fed.active_kg_per_day));
        request.kind = CalcKind::Softening;
        request.mode = CalcMode::Standard;
        assert_eq!(engine.compute(&request), Err(SeamError::NotConnected));
        assert_eq!(
            engine.titration_curve(&request),
            Err(SeamError::NotConnected)
        );
    }

    #[test]
    fn chloramine_and_dechlorination_doses_come_from_the_engine() {
        let engine = DosingEngine::new().unwrap();
        let ammonia = engine.products(CalcKind::Chlorination, CalcMode::Chloramine);
        assert!(
            ammonia.iter().any(|p| p.id == "aqua-ammonia"),
            "{ammonia:?}"
        );
        let mut request = feed_request("aqua-ammonia", 0.0);
        request.kind = CalcKind::Chlorination;
        request.mode = CalcMode::Chloramine;
        request.values.remove("dose");
        request.values.insert("chlorine-dose", 4.0);
        request.values.insert("cl2-n-ratio", 4.5);
        request.values.insert("strength", 19.0);
        request.values.insert("specific-gravity", 0.93);
        let out = engine.compute(&request).expect("chloramine result");
        let direct =
            chloramination(&engine.catalog, Measured::exact(4.0), Measured::exact(4.5)).unwrap();
        assert_eq!(out.dose_mg_per_l, Some(direct.ammonia_n_mg_l));

        let agents = engine.products(CalcKind::Chlorination, CalcMode::Dechlorination);
        assert!(
            agents.iter().any(|p| p.id == "sodium-bisulfite"),
            "{agents:?}"
        );
        let mut request = feed_request("sodium-bisulfite", 0.0);
        request.kind = CalcKind::Chlorination;
        request.mode = CalcMode::Dechlorination;
        request.values.remove("dose");
        request.values.insert("residual-in", 2.0);
        request.values.insert("strength", 38.0);
        request.values.insert("specific-gravity", 1.36);
        let out = engine.compute(&request).expect("dechlorination result");
        let direct =
            dechlorination(&engine.catalog, Measured::exact(2.0), "sodium-bisulfite").unwrap();
        assert_eq!(out.dose_mg_per_l, Some(direct.agent_mg_l));
    }

    #[test]
    fn ph_chemicals_pair_the_same_compound_in_both_catalogs() {
        let engine = DosingEngine::new().unwrap();
        for (water_id, product_id) in PH_CHEMICALS {
            let chemical = water::Catalog::embedded().unwrap().find(water_id).unwrap();
            let product = engine.catalog.product(product_id).unwrap();
            let formula = crate::engine::formula::Formula::parse(&product.dose_as).unwrap();
            assert_eq!(chemical.formula, formula, "{water_id} vs {product_id}");
        }
    }

    #[test]
    fn ph_adjustment_dose_and_curve_come_from_the_water_engine() {
        let engine = DosingEngine::new().unwrap();
        let mut request = feed_request("sodium-hydroxide", 0.0);
        request.kind = CalcKind::PhControl;
        request.values.remove("dose");
        for (k, v) in [
            ("ph-raw", 6.7),
            ("ph-target", 7.3),
            ("alkalinity", 38.0),
            ("temperature", 15.0),
            ("strength", 25.0),
            ("specific-gravity", 1.27),
        ] {
            request.values.insert(k, v);
        }
        let out = engine.compute(&request).expect("a pH result");
        let state = WaterState::new(&WaterInput::new(6.7, 15.0, 38.0)).unwrap();
        let caustic = water::Catalog::embedded().unwrap().find("caustic").unwrap();
        let direct = water::dose_for_ph(&state, caustic, 7.3, Precipitation::None).unwrap();
        assert_eq!(out.dose_mg_per_l, Some(direct.dose_mg_l));
        assert!(out.feed_kg_per_day.is_some());
        let curve = engine.titration_curve(&request).expect("a curve");
        assert_eq!(curve.points.len(), CURVE_POINTS);
        assert_eq!(curve.points[0].0, 0.0);
        assert!(
            (curve.points[0].1 - state.ph()).abs() < 1e-9,
            "{:?}",
            curve.points[0]
        );
        assert!(
            curve.points.windows(2).all(|w| w[1].1 >= w[0].1),
            "caustic raises pH"
        );
        // Acid the other way: an unreachable target is the engine's refusal, not a number.
        request.product = Some("sulfuric-acid".into());
        let err = engine.compute(&request);
        assert!(
            matches!(&err, Err(SeamError::Engine(e)) if e.kind() == ErrorKind::Unreachable),
            "{err:?}"
        );
    }

    #[test]
    fn pump_check_reports_the_measured_dose() {
        let engine = DosingEngine::new().unwrap();
        let mut request = feed_request("sodium-hypochlorite", 2.5);
        request.kind = CalcKind::PumpCheck;
        request.values.remove("pump-capacity");
        request.values.insert("drawdown-volume", 250.0);
        request.values.insert("drawdown-time", 60.0);
        request.values.insert("pump-setting", 40.0);
        let out = engine.compute(&request).expect("a result");
        let (product, strength) = engine.product_strength(&request).unwrap();
        let direct = pump_check(
            &engine.catalog,
            &PumpCheckInput {
                measurement: Measurement::Drawdown {
                    ml: Measured::exact(250.0),
                    seconds: Measured::exact(60.0),
                },
                flow: Flow::new(Measured::exact(9084.99), FlowUnit::M3d),
                product,
                strength,
                target_dose: Measured::exact(2.5),
                current_setting_percent: Some(40.0),
                tolerance: Tolerance::default(),
            },
        )
        .unwrap();
        assert_eq!(out.dose_mg_per_l, Some(direct.actual_dose_mg_l));
        assert_eq!(out.pump_setting_percent, direct.suggested_setting_percent);
        assert!(
            out.cautions
                .iter()
                .any(|c| c.code.starts_with("pump-check-"))
        );
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
