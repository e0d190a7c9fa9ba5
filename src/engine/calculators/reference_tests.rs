//! Reference tests of the calculator table: each calculator's outcome against a direct call
//! of the dosing and water engines with the same inputs, so the table hands over the engines'
//! own numbers, unchanged.
//!
//! The expected values are built here, from the engines' public functions and from inputs
//! written out in each test, never from the table's own compute helpers: a helper that went
//! wrong would otherwise agree with itself.

use super::*;
use crate::engine::ErrorKind;
use crate::engine::dosing::catalog::{Form, Strength, StrengthBasis};
use crate::engine::dosing::chlorine::{
    ChlorineInput, chloramination, chlorine_dose, chlorine_dose_in_water, dechlorination,
};
use crate::engine::dosing::coagulation::{
    Alkali, Coagulant, CoagulationInput, alkalinity_per_dose, coagulation_in_water,
};
use crate::engine::dosing::feed::{FeedInput, FeedResult, PumpKind, UsableRange, feed};
use crate::engine::dosing::pumpcheck::{Measurement, PumpCheckInput, Tolerance, pump_check};
use crate::engine::dosing::softening::{HardnessAnalysis, removal_from_analysis, softening};
use crate::engine::dosing::units::{Flow, FlowUnit, MassRateUnit, VolumeRateUnit};
use crate::engine::dosing::waterside::{PhRange, dose_effect, water_chemical};
use crate::engine::formula::Formula;
use crate::engine::sigfig::Measured;
use crate::engine::water::{self, Precipitation, WaterInput, WaterState};

/// The flow most cases run at, m³/d (2.4 MGD).
const FLOW: f64 = 9084.99;

fn calculators() -> Calculators {
    Calculators::new().expect("built-in catalog")
}

/// A request for calculator `id` (its first mode) with `product` and the given exact SI values.
fn request(id: &str, product: &str, values: &[(&'static str, f64)]) -> Request {
    let mut r = Request::new(find(id).expect("calculator in the table"));
    r.product = Some(product.into());
    r.values = values.iter().copied().collect();
    r
}

/// A result's value by its stable id; `None` when the outcome does not give it.
fn got(out: &Outcome, id: &str) -> Option<f64> {
    out.result(id).map(|r| r.value)
}

fn keys(out: &Outcome) -> Vec<&str> {
    out.cautions.iter().map(|c| c.key.as_str()).collect()
}

fn feed_request(product: &str, dose: f64) -> Request {
    request(
        "feed",
        product,
        &[
            ("flow", FLOW),
            ("dose", dose),
            ("strength", 12.5),
            ("specific-gravity", 1.2),
            ("pump-capacity", 15.0),
        ],
    )
}

/// Free chlorination with hypochlorite on the feed request's flow and product numbers.
fn free_chlorine_request(demand: f64, residual: f64) -> Request {
    let mut req = feed_request("sodium-hypochlorite", 0.0);
    req.calculator = "free-chlorine";
    req.values.remove("dose");
    req.values.insert("chlorine-demand", demand);
    req.values.insert("target-residual", residual);
    req
}

/// The engine's own feed of `dose` mg/L of a liquid product at `flow` on a metering pump of
/// `pump_lph`, its strength typed on the product's first (usual) basis.
fn liquid_feed(
    c: &Calculators,
    product: &str,
    flow: f64,
    dose: f64,
    strength: f64,
    sg: f64,
    pump_lph: f64,
) -> FeedResult {
    let basis = c.catalog.product(product).unwrap().strengths[0].basis;
    feed(
        &c.catalog,
        &FeedInput {
            flow: Flow::new(Measured::exact(flow), FlowUnit::M3d),
            dose: Measured::exact(dose),
            product: product.into(),
            strength: Strength::new(Measured::exact(strength), basis, Some(Measured::exact(sg))),
            pump: Some(PumpKind::Metering {
                capacity: pump_lph,
                unit: VolumeRateUnit::Lph,
            }),
            usable_range: UsableRange::default(),
            max_use_level_mg_l: None,
        },
    )
    .unwrap()
}

#[test]
fn feed_setting_is_the_engines_feed_result() {
    let engine = calculators();
    let products = engine.products(find("feed").unwrap());
    assert!(products.iter().any(|p| p.id == "sodium-hypochlorite"));

    let out = engine
        .compute(&feed_request("sodium-hypochlorite", 2.5))
        .expect("a result");
    // The table must hand over the engine's own numbers, unchanged.
    let direct = liquid_feed(&engine, "sodium-hypochlorite", FLOW, 2.5, 12.5, 1.2, 15.0);
    assert_eq!(got(&out, "dose"), Some(direct.dose_mg_l));
    assert_eq!(got(&out, "feed_mass_rate"), Some(direct.active_kg_per_day));
    assert_eq!(got(&out, "product_volume_rate"), direct.product_l_per_h);
    assert_eq!(
        got(&out, "product_mass_rate"),
        Some(direct.product_kg_per_day)
    );
    assert_eq!(
        got(&out, "pump_setting"),
        direct.pump.as_ref().map(|p| p.percent)
    );
    assert_eq!(got(&out, "feeder_setting"), None, "a liquid has no feeder");
    assert_eq!(
        out.setting,
        Some(Setting {
            device: Device::MeteringPump,
            percent: direct.pump.as_ref().unwrap().percent
        })
    );
    assert_eq!(
        out.product.as_ref().unwrap().name_key,
        "product-sodium-hypochlorite"
    );
    assert!(!out.traces.is_empty());
    assert!(!out.trace_lines().is_empty());
    // The app once dropped the advisory note (its card showed it permanently); the table's
    // outcome carries it for every front end, exactly once and last.
    assert_eq!(
        out.cautions
            .iter()
            .filter(|c| c.key == "advisory-operator-decides")
            .count(),
        1
    );
    assert_eq!(
        out.cautions.last().unwrap().key,
        "advisory-operator-decides"
    );
    assert!(out.cautions.iter().any(|c| c.severity == Severity::Danger));
}

#[test]
fn free_chlorine_dose_comes_from_the_chlorine_engine() {
    let engine = calculators();
    let mut request = free_chlorine_request(1.4, 1.0);
    let offered = engine.products(find("free-chlorine").unwrap());
    assert!(!offered.is_empty());
    assert!(
        offered
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
    assert_eq!(got(&out, "dose"), Some(direct.dose_mg_l));
    let fed = liquid_feed(
        &engine,
        "sodium-hypochlorite",
        FLOW,
        direct.dose_mg_l,
        12.5,
        1.2,
        15.0,
    );
    assert_eq!(got(&out, "feed_mass_rate"), Some(fed.active_kg_per_day));
    request.calculator = "feed";
    request.mode = None;
    let e = engine
        .curve(&request)
        .expect_err("no curve for a feed setting");
    assert_eq!(e.reason(), Some("no-curve"));
}

#[test]
fn chloramine_and_dechlorination_doses_come_from_the_engine() {
    let engine = calculators();
    let ammonia = engine.products(find("chloramine").unwrap());
    assert!(
        ammonia.iter().any(|p| p.id == "aqua-ammonia"),
        "{ammonia:?}"
    );
    let mut request = feed_request("aqua-ammonia", 0.0);
    request.calculator = "chloramine";
    request.values.remove("dose");
    request.values.insert("chlorine-dose", 4.0);
    request.values.insert("cl2-n-ratio", 4.5);
    request.values.insert("strength", 19.0);
    request.values.insert("specific-gravity", 0.93);
    let out = engine.compute(&request).expect("chloramine result");
    let direct =
        chloramination(&engine.catalog, Measured::exact(4.0), Measured::exact(4.5)).unwrap();
    assert_eq!(got(&out, "dose"), Some(direct.ammonia_n_mg_l));

    let agents = engine.products(find("dechlorination").unwrap());
    assert!(
        agents.iter().any(|p| p.id == "sodium-bisulfite"),
        "{agents:?}"
    );
    let mut request = feed_request("sodium-bisulfite", 0.0);
    request.calculator = "dechlorination";
    request.values.remove("dose");
    request.values.insert("residual-in", 2.0);
    request.values.insert("strength", 38.0);
    request.values.insert("specific-gravity", 1.36);
    let out = engine.compute(&request).expect("dechlorination result");
    let direct = dechlorination(&engine.catalog, Measured::exact(2.0), "sodium-bisulfite").unwrap();
    assert_eq!(got(&out, "dose"), Some(direct.agent_mg_l));
}

#[test]
fn every_ph_product_has_a_water_chemical_of_the_same_compound() {
    let engine = calculators();
    // The water-chemistry chemical each pH product must meet, written out here: the table
    // finds it by formula, so a product whose compound matched another chemical (or none)
    // would dose the water engine with the wrong substance.
    let expected = [
        ("sodium-hydroxide", "caustic"),
        ("sulfuric-acid", "sulfuric-acid"),
        ("hydrochloric-acid", "hydrochloric-acid"),
        ("carbon-dioxide", "carbon-dioxide"),
        ("hydrated-lime", "lime"),
        ("soda-ash", "soda-ash"),
        ("magnesium-hydroxide", "magnesium-hydroxide"),
    ];
    let offered = engine.products(find("ph-adjustment").unwrap());
    let mut ids: Vec<&str> = offered.iter().map(|p| p.id.as_str()).collect();
    let mut want: Vec<&str> = expected.iter().map(|(p, _)| *p).collect();
    ids.sort_unstable();
    want.sort_unstable();
    assert_eq!(ids, want, "the pH products offered");
    let chemicals = water::Catalog::embedded().unwrap();
    for p in &offered {
        let product = engine.catalog.product(&p.id).unwrap();
        let chemical = water_chemical(&product.compound)
            .unwrap_or_else(|e| panic!("{}: no water chemical: {e:?}", p.id));
        let water_id = expected.iter().find(|(id, _)| *id == p.id).unwrap().1;
        assert_eq!(chemical.id, water_id, "{}", p.id);
        assert_eq!(chemical.formula, chemicals.find(water_id).unwrap().formula);
        // The dose is expressed as the same compound the water engine doses: mg/L of the one
        // are mg/L of the other.
        let dose_as = Formula::parse(&product.dose_as).unwrap();
        assert_eq!(chemical.formula, dose_as, "{} dose_as vs {water_id}", p.id);
    }
}

#[test]
fn ph_adjustment_dose_and_curve_come_from_the_water_engine() {
    let engine = calculators();
    let mut request = feed_request("sodium-hydroxide", 0.0);
    request.calculator = "ph-adjustment";
    request.values.remove("dose");
    for (k, v) in [
        ("ph", 6.7),
        ("target-ph", 7.3),
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
    assert_eq!(got(&out, "dose"), Some(direct.dose_mg_l));
    assert!(got(&out, "feed_mass_rate").is_some());
    let curve = engine.curve(&request).expect("a curve");
    assert_eq!(curve.points.len(), super::compute::CURVE_POINTS);
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
        matches!(&err, Err(e) if e.kind() == ErrorKind::Unreachable),
        "{err:?}"
    );
}

#[test]
fn pump_check_reports_the_measured_dose() {
    let engine = calculators();
    let mut request = feed_request("sodium-hypochlorite", 2.5);
    request.calculator = "pump-check";
    request.values.remove("pump-capacity");
    request.values.insert("drawdown-volume", 250.0);
    request.values.insert("drawdown-time", 60.0);
    request.values.insert("pump-setting", 40.0);
    let out = engine.compute(&request).expect("a result");
    let basis = engine
        .catalog
        .product("sodium-hypochlorite")
        .unwrap()
        .strengths[0]
        .basis;
    let direct = pump_check(
        &engine.catalog,
        &PumpCheckInput {
            measurement: Measurement::Drawdown {
                ml: Measured::exact(250.0),
                seconds: Measured::exact(60.0),
            },
            flow: Flow::new(Measured::exact(FLOW), FlowUnit::M3d),
            product: "sodium-hypochlorite".into(),
            strength: Strength::new(Measured::exact(12.5), basis, Some(Measured::exact(1.2))),
            target_dose: Measured::exact(2.5),
            current_setting_percent: Some(40.0),
            tolerance: Tolerance::default(),
        },
    )
    .unwrap();
    assert_eq!(got(&out, "actual_dose"), Some(direct.actual_dose_mg_l));
    assert_eq!(got(&out, "deviation"), Some(direct.deviation_percent));
    assert_eq!(
        got(&out, "suggested_pump_setting"),
        direct.suggested_setting_percent
    );
    assert!(keys(&out).iter().any(|k| k.starts_with("pump-check-")));
}

#[test]
fn engine_refusals_and_gaps_pass_through() {
    let engine = calculators();
    let err = engine.compute(&feed_request("sodium-hypochlorite", -1.0));
    assert!(err.is_err(), "{err:?}");
    let err = engine.compute(&feed_request("no-such-product", 1.0));
    assert!(
        matches!(&err, Err(e) if e.kind() == ErrorKind::UnknownChemical),
        "{err:?}"
    );
    // The table checks the product before the inputs (the product decides which inputs are
    // asked for), so a liquid offered to softening is refused as a product...
    let mut other = feed_request("sodium-hypochlorite", 1.0);
    other.calculator = "softening";
    let err = engine.compute(&other);
    assert!(
        matches!(&err, Err(e) if e.kind() == ErrorKind::UnknownChemical),
        "hypochlorite for softening: {err:?}"
    );
    // ...and softening's own lime without the analysis is the missing input it names.
    other.product = Some("hydrated-lime".into());
    let err = engine.compute(&other);
    assert!(
        matches!(&err, Err(e) if e.kind() == ErrorKind::InvalidInput
            && e.reason() == Some("missing-input")),
        "softening without its inputs: {err:?}"
    );
}

fn coagulation_request(product: &str, mode: &'static str, setpoint: f64) -> Request {
    let mut r = request(
        "coagulation",
        product,
        &[
            ("flow", FLOW),
            ("jar-dose", 30.0),
            ("alkalinity", 40.0),
            ("alkalinity-setpoint", setpoint),
            ("ph", 7.2),
            ("temperature", 12.0),
            ("strength", 8.3),
            ("specific-gravity", 1.335),
            ("pump-capacity", 60.0),
        ],
    );
    r.mode = Some(mode);
    r
}

#[test]
fn coagulation_comes_from_the_hydrolysis_and_the_water_engine() {
    let engine = calculators();
    let offered = engine.products(find("coagulation").unwrap());
    assert_eq!(
        offered.iter().map(|p| p.id.as_str()).collect::<Vec<_>>(),
        [
            "alum-liquid",
            "ferric-chloride",
            "ferric-sulfate",
            "pacl",
            "sodium-aluminate"
        ]
    );
    let req = coagulation_request("alum-liquid", "alkali-caustic", 30.0);
    let out = engine.compute(&req).expect("a coagulation result");
    let input = CoagulationInput {
        coagulant: Coagulant::Alum14,
        dose: Measured::exact(30.0),
        raw_alkalinity: Measured::exact(40.0),
        residual_alkalinity_setpoint: 30.0,
        alkali: Alkali::Caustic,
        alkali_purity_percent: 100.0,
    };
    let water = WaterState::new(&WaterInput::new(7.2, 12.0, 40.0)).unwrap();
    let direct = coagulation_in_water(&engine.catalog, &input, &water, PhRange::default()).unwrap();
    assert_eq!(got(&out, "dose"), Some(30.0));
    assert_eq!(
        got(&out, "alkalinity_consumed"),
        Some(direct.alkalinity_consumed_mg_l)
    );
    assert_eq!(got(&out, "supplemental_alkali"), Some(direct.alkali_mg_l));
    let after = got(&out, "ph_after_coagulant").expect("alum is modelled");
    let with_alkali = got(&out, "ph_after_alkali").expect("alkali needed for 30 mg/L");
    assert!(after < 7.2 && with_alkali > after, "{after} {with_alkali}");
    let fed = liquid_feed(&engine, "alum-liquid", FLOW, 30.0, 8.3, 1.335, 60.0);
    assert_eq!(got(&out, "feed_mass_rate"), Some(fed.active_kg_per_day));
    assert_eq!(got(&out, "pump_setting"), fed.pump.map(|p| p.percent));
    assert!(got(&out, "coagulant_solids").unwrap() > 0.0);
    assert!(
        out.trace_lines()
            .contains(&TraceLine::Heading("alkalinity-per-dose".into()))
    );

    // Lime as the alkali: a different alkali dose for the same deficit.
    let lime = engine
        .compute(&coagulation_request("alum-liquid", "alkali-lime", 30.0))
        .unwrap();
    assert_ne!(
        got(&lime, "supplemental_alkali"),
        got(&out, "supplemental_alkali")
    );
    // Enough alkalinity: no alkali and no pH after it.
    let enough = engine
        .compute(&coagulation_request("alum-liquid", "alkali-caustic", 10.0))
        .unwrap();
    assert_eq!(got(&enough, "supplemental_alkali"), None);
    assert_eq!(got(&enough, "ph_after_alkali"), None);
}

#[test]
fn pacl_lowers_the_ph_less_than_alum_for_the_same_aluminium() {
    let engine = calculators();
    let mut pacl = coagulation_request("pacl", "alkali-caustic", 10.0);
    pacl.values.insert("jar-dose", 3.0);
    pacl.values.insert("strength", 10.5);
    pacl.values.insert("specific-gravity", 1.2);
    let pacl = engine.compute(&pacl).expect("PACl result");
    // The same 3 mg/L of aluminium as alum·14H2O, from molar masses.
    let alum_mg_l = 3.0 / Formula::parse("Al").unwrap().molar_mass() / 2.0
        * Formula::parse("Al2(SO4)3·14H2O").unwrap().molar_mass();
    let mut alum = coagulation_request("alum-liquid", "alkali-caustic", 10.0);
    alum.values.insert("jar-dose", alum_mg_l);
    let alum = engine.compute(&alum).expect("alum result");
    let ph = |o: &Outcome| got(o, "ph_after_coagulant").expect("modelled");
    assert!(
        7.2 > ph(&pacl) && ph(&pacl) > ph(&alum),
        "PACl {} alum {}",
        ph(&pacl),
        ph(&alum)
    );
    assert!(
        got(&pacl, "alkalinity_consumed").unwrap() < got(&alum, "alkalinity_consumed").unwrap()
    );
    assert!(
        !keys(&pacl)
            .iter()
            .any(|k| *k == "give-water-for-ph-effect" || *k == "coagulant-ph-not-modelled")
    );
}

#[test]
fn coagulation_curve_falls_from_the_raw_ph() {
    let engine = calculators();
    let req = coagulation_request("ferric-chloride", "alkali-caustic", 10.0);
    let curve = engine.curve(&req).expect("a coagulation curve");
    assert_eq!(curve.points.len(), super::compute::CURVE_POINTS);
    assert!(
        (curve.points[0].1 - 7.2).abs() < 1e-6,
        "{:?}",
        curve.points[0]
    );
    assert!((curve.points.last().unwrap().0 - 60.0).abs() < 1e-6);
    assert!(curve.points.windows(2).all(|w| w[1].1 <= w[0].1 + 1e-9));
}

#[test]
fn softening_comes_from_the_analysis_and_the_lime_soda_method() {
    let engine = calculators();
    let values = [
        ("flow", 4000.0),
        ("total-hardness", 260.0),
        ("calcium-hardness", 190.0),
        ("alkalinity", 180.0),
        ("ph", 7.6),
        ("temperature", 14.0),
        ("excess-lime", 35.0),
        ("lime-purity", 93.0),
        ("soda-ash-purity", 98.0),
    ];
    let req = request("softening", "hydrated-lime", &values);
    let out = engine.compute(&req).expect("a softening result");
    let co2 = WaterState::new(&WaterInput::new(7.6, 14.0, 180.0))
        .unwrap()
        .result()
        .unwrap()
        .co2_mg_l;
    let (removal, _) = removal_from_analysis(&HardnessAnalysis {
        total_hardness: Measured::exact(260.0),
        calcium_hardness: Measured::exact(190.0),
        alkalinity: Measured::exact(180.0),
        co2: Measured::exact(co2),
    })
    .unwrap();
    let direct = softening(&engine.catalog, &removal.input(35.0, 93.0, 98.0)).unwrap();
    assert_eq!(got(&out, "dose"), Some(direct.lime_caoh2_mg_l));
    assert_eq!(got(&out, "soda_ash_dose"), Some(direct.soda_ash_mg_l));
    assert_eq!(got(&out, "free_co2"), Some(co2));
    // Each chemical's mass as delivered is the engine's dry feed of its dose at its purity.
    let delivered = |product: &str, dose: f64, purity: f64| {
        feed(
            &engine.catalog,
            &FeedInput {
                flow: Flow::new(Measured::exact(4000.0), FlowUnit::M3d),
                dose: Measured::exact(dose),
                product: product.into(),
                strength: Strength::new(Measured::exact(purity), StrengthBasis::Purity, None),
                pump: None,
                usable_range: UsableRange::default(),
                max_use_level_mg_l: None,
            },
        )
        .unwrap()
        .product_kg_per_day
    };
    assert_eq!(
        got(&out, "product_mass_rate"),
        Some(delivered("hydrated-lime", direct.lime_caoh2_mg_l, 93.0))
    );
    assert_eq!(
        got(&out, "soda_ash_product_mass_rate"),
        Some(delivered("soda-ash", direct.soda_ash_mg_l, 98.0))
    );
    assert_eq!(removal.non_carbonate_hardness.value, 80.0);
    assert_eq!(
        got(&out, "product_volume_rate"),
        None,
        "dry feed: no volume"
    );
    // No lime feeder scale given: no setting of any kind.
    assert_eq!(got(&out, "pump_setting"), None);
    assert_eq!(got(&out, "feeder_setting"), None);
    assert_eq!(out.setting, None);
    let quick = engine
        .compute(&request("softening", "quicklime", &values))
        .unwrap();
    assert_eq!(got(&quick, "dose"), Some(direct.lime_cao_mg_l));
    // The equilibrium end point: the same water through the water engine directly.
    let chemicals = water::Catalog::embedded().unwrap();
    let raw = WaterState::new(
        &WaterInput::new(7.6, 14.0, 180.0)
            .with_calcium_as_caco3(190.0)
            .with_magnesium_as_caco3(70.0),
    )
    .unwrap();
    let soda = raw
        .dosed(
            chemicals.find("Na2CO3").unwrap(),
            direct.soda_ash_mg_l,
            Precipitation::None,
        )
        .unwrap();
    let end = water::soften(
        &soda,
        chemicals.find("Ca(OH)2").unwrap(),
        direct.lime_caoh2_mg_l,
    )
    .unwrap();
    assert_eq!(got(&out, "ph_softened"), Some(end.water.ph));
    assert_eq!(
        got(&out, "hardness_softened"),
        Some(end.calcium_hardness_mg_l_as_caco3 + end.magnesium_hardness_mg_l_as_caco3)
    );
    // Excess lime takes the water past pH 10 and most of the hardness out.
    assert!(end.water.ph > 10.0, "{}", end.water.ph);
    assert!(got(&out, "hardness_softened").unwrap() < 100.0);
    // Quicklime is the same moles of lime: the same end point.
    assert_eq!(got(&quick, "ph_softened"), Some(end.water.ph));
}

#[test]
fn typed_figures_limit_the_result() {
    let engine = calculators();
    let mut req = free_chlorine_request(1.4, 1.05);
    for (name, n) in [
        ("flow", 4),
        ("chlorine-demand", 2),
        ("target-residual", 3),
        ("strength", 3),
        ("specific-gravity", 4),
        ("pump-capacity", 3),
    ] {
        req.figures.insert(name, n);
    }
    // 1.4 + 1.05 is known to the tenths: 2.5, two figures.
    assert_eq!(engine.compute(&req).unwrap().figures, Some(2));
    req.values.insert("chlorine-demand", 1.40);
    req.figures.insert("chlorine-demand", 3);
    assert_eq!(engine.compute(&req).unwrap().figures, Some(3));
    req.figures.clear();
    assert_eq!(
        engine.compute(&req).unwrap().figures.filter(|&f| f < 4),
        None,
        "exact inputs leave only the molar masses' figures"
    );
}

#[test]
fn ammonia_in_the_water_adds_the_breakpoint_dose() {
    let engine = calculators();
    let mut req = free_chlorine_request(1.2, 1.0);
    let without = engine.compute(&req).unwrap();
    assert_eq!(got(&without, "breakpoint_dose"), None);
    req.values.insert("ammonia-n", 0.4);
    let with = engine.compute(&req).unwrap();
    let ratio =
        crate::engine::dosing::chlorine::chlorine_per_ammonia_n(&engine.catalog, "breakpoint")
            .unwrap()
            .0;
    let bp = got(&with, "breakpoint_dose").expect("breakpoint shown");
    assert!((bp - 0.4 * ratio).abs() < 1e-12);
    assert!((got(&with, "dose").unwrap() - (2.2 + 0.4 * ratio)).abs() < 1e-9);
    assert!(
        with.trace_lines()
            .contains(&TraceLine::Heading("breakpoint-dose".into()))
    );
    assert!(keys(&with).contains(&"breakpoint-practice-range"));
}

#[test]
fn calcium_adds_the_langelier_index_and_ccpp_after_the_dose() {
    let engine = calculators();
    let mut req = request(
        "ph-adjustment",
        "sodium-hydroxide",
        &[
            ("flow", 4000.0),
            ("ph", 7.0),
            ("target-ph", 8.2),
            ("alkalinity", 90.0),
            ("temperature", 18.0),
            ("strength", 25.0),
            ("specific-gravity", 1.27),
            ("pump-capacity", 20.0),
        ],
    );
    let without = engine.compute(&req).unwrap();
    assert_eq!(got(&without, "lsi_after"), None);
    assert_eq!(got(&without, "ccpp_after"), None);
    req.values.insert("calcium-hardness", 120.0);
    let with = engine.compute(&req).unwrap();
    let state =
        WaterState::new(&WaterInput::new(7.0, 18.0, 90.0).with_calcium_as_caco3(120.0)).unwrap();
    let caustic = water::Catalog::embedded().unwrap().find("caustic").unwrap();
    let d = water::dose_for_ph(&state, caustic, 8.2, Precipitation::None).unwrap();
    let (after, _) = dose_effect(&state, caustic, d.dose_mg_l, Precipitation::None).unwrap();
    let direct = water::stability(&after).unwrap();
    assert_eq!(got(&with, "lsi_after"), direct.langelier_index);
    assert_eq!(got(&with, "ccpp_after"), Some(direct.ccpp_mg_l_as_caco3));
    assert_eq!(got(&with, "dose"), Some(d.dose_mg_l));
}

/// A gas or dry product's case: the calculator's request, the dose its own engine
/// calculator gives, and the feeder the card must be set for.
struct ByMass {
    request: Request,
    dose: f64,
    feeder: PumpKind,
}

/// The outcome's numbers are the engine's `feed()` for that dose with that feeder: feed mass,
/// product mass to set, the feeder's % of full scale; no product volume and no pump setting;
/// the product's hazard cautions are on the outcome.
fn check(engine: &Calculators, case: ByMass) {
    let product = case.request.product.clone().unwrap();
    let out = engine
        .compute(&case.request)
        .unwrap_or_else(|e| panic!("{product}: {e:?}"));
    let purity = case
        .request
        .get("purity")
        .or(case.request.get("lime-purity"));
    let direct = feed(
        &engine.catalog,
        &FeedInput {
            flow: Flow::new(
                Measured::exact(case.request.get("flow").unwrap()),
                FlowUnit::M3d,
            ),
            dose: Measured::exact(case.dose),
            product: product.clone(),
            strength: Strength::new(
                Measured::exact(purity.unwrap()),
                StrengthBasis::Purity,
                None,
            ),
            pump: Some(case.feeder),
            usable_range: UsableRange::default(),
            max_use_level_mg_l: None,
        },
    )
    .unwrap_or_else(|e| panic!("{product} direct: {e:?}"));
    let close = |a: Option<f64>, b: f64| a.is_some_and(|a| (a - b).abs() <= 1e-9 * b.abs());
    assert!(
        close(got(&out, "dose"), case.dose),
        "{product} dose {out:?}"
    );
    assert!(
        close(got(&out, "feed_mass_rate"), direct.active_kg_per_day),
        "{product} feed"
    );
    assert!(
        close(got(&out, "product_mass_rate"), direct.product_kg_per_day),
        "{product} rate to set"
    );
    let setting = direct.pump.as_ref().expect("a feeder setting").percent;
    // Beyond full scale the engine presents no setting, only the caution that says so.
    if setting > 100.0 {
        assert_eq!(got(&out, "feeder_setting"), None, "{product} setting");
        assert_eq!(out.setting, None, "{product} setting");
        assert!(
            out.cautions.iter().any(|c| c.key == "pump-too-small"),
            "{product}: {:?}",
            out.cautions
        );
        return;
    }
    assert!(
        close(got(&out, "feeder_setting"), setting),
        "{product} setting"
    );
    let device = match case.feeder {
        PumpKind::GasFeeder { .. } => Device::GasFeeder,
        PumpKind::DryFeeder { .. } => Device::DryFeeder,
        _ => panic!("{product}: the case's feeder is not a gas or dry feeder"),
    };
    assert_eq!(out.setting.map(|s| s.device), Some(device), "{product}");
    assert!(
        close(out.setting.map(|s| s.percent), setting),
        "{product} setting"
    );
    assert_eq!(
        got(&out, "product_volume_rate"),
        None,
        "{product}: a volume for a gas/dry feed"
    );
    assert_eq!(
        got(&out, "pump_setting"),
        None,
        "{product}: a pump setting for a gas/dry feed"
    );
    for hazard in &engine.catalog.product(&product).unwrap().hazards {
        assert!(
            out.cautions.iter().any(|c| &c.key == hazard),
            "{product}: {hazard} not on the card"
        );
    }
    // Headed as the feeder's setting: a dry or gas feeder is no pump.
    let lines = out.trace_lines();
    assert!(
        lines.contains(&TraceLine::Heading("feeder-setting".into())),
        "{product}: the feeder setting's work is shown"
    );
    assert!(
        !lines.contains(&TraceLine::Heading("pump-setting".into())),
        "{product}: a feeder's work headed as a pump's"
    );
}

fn gas(kg_per_day: f64) -> PumpKind {
    PumpKind::GasFeeder {
        capacity: kg_per_day,
        unit: MassRateUnit::KgPerDay,
    }
}

fn dry(kg_per_day: f64) -> PumpKind {
    PumpKind::DryFeeder {
        capacity: kg_per_day,
        unit: MassRateUnit::KgPerDay,
    }
}

fn ph_dose(water_id: &str, raw: f64, target: f64, alkalinity: f64) -> f64 {
    let state = WaterState::new(&WaterInput::new(raw, 15.0, alkalinity)).unwrap();
    let chemical = water::Catalog::embedded().unwrap().find(water_id).unwrap();
    water::dose_for_ph(&state, chemical, target, Precipitation::None)
        .unwrap()
        .dose_mg_l
}

#[test]
fn gas_and_dry_feeds_are_the_engines_feeder_settings() {
    let engine = calculators();
    let ph = |product, capacity: (&'static str, f64), raw, target| {
        request(
            "ph-adjustment",
            product,
            &[
                ("flow", FLOW),
                ("ph", raw),
                ("target-ph", target),
                ("alkalinity", 60.0),
                ("temperature", 15.0),
                ("purity", 98.0),
                capacity,
            ],
        )
    };
    let so2_ratio = dechlorination(&engine.catalog, Measured::exact(1.0), "sulfur-dioxide")
        .unwrap()
        .agent_mg_l;
    let meta_ratio = dechlorination(
        &engine.catalog,
        Measured::exact(1.0),
        "sodium-metabisulfite",
    )
    .unwrap()
    .agent_mg_l;
    let ammonia_n = chloramination(&engine.catalog, Measured::exact(4.0), Measured::exact(4.5))
        .unwrap()
        .ammonia_n_mg_l;
    let cases = [
        // Chlorine gas through a rotameter: dose = demand + residual.
        ByMass {
            request: request(
                "free-chlorine",
                "chlorine-gas",
                &[
                    ("flow", FLOW),
                    ("chlorine-demand", 1.5),
                    ("target-residual", 1.0),
                    ("purity", 100.0),
                    ("gas-feeder-capacity", 45.359237),
                ],
            ),
            dose: 2.5,
            feeder: gas(45.359237),
        },
        // A liquid's SG and pump volume left over in the request change nothing.
        ByMass {
            request: request(
                "free-chlorine",
                "chlorine-gas",
                &[
                    ("flow", FLOW),
                    ("chlorine-demand", 0.8),
                    ("target-residual", 0.6),
                    ("purity", 99.5),
                    ("gas-feeder-capacity", 90.7),
                    ("specific-gravity", 1.2),
                    ("pump-capacity", 15.0),
                    ("strength", 12.5),
                ],
            ),
            dose: 1.4,
            feeder: gas(90.7),
        },
        ByMass {
            request: request(
                "dechlorination",
                "sulfur-dioxide",
                &[
                    ("flow", FLOW),
                    ("residual-in", 2.0),
                    ("purity", 100.0),
                    ("gas-feeder-capacity", 40.0),
                ],
            ),
            dose: 2.0 * so2_ratio,
            feeder: gas(40.0),
        },
        ByMass {
            request: request(
                "dechlorination",
                "sodium-metabisulfite",
                &[
                    ("flow", FLOW),
                    ("residual-in", 2.0),
                    ("purity", 97.0),
                    ("dry-feeder-capacity", 60.0),
                ],
            ),
            dose: 2.0 * meta_ratio,
            feeder: dry(60.0),
        },
        ByMass {
            request: request(
                "chloramine",
                "ammonium-sulfate",
                &[
                    ("flow", FLOW),
                    ("chlorine-dose", 4.0),
                    ("cl2-n-ratio", 4.5),
                    ("purity", 99.0),
                    ("dry-feeder-capacity", 50.0),
                ],
            ),
            dose: ammonia_n,
            feeder: dry(50.0),
        },
        ByMass {
            request: ph("carbon-dioxide", ("gas-feeder-capacity", 200.0), 8.8, 7.8),
            dose: ph_dose("carbon-dioxide", 8.8, 7.8, 60.0),
            feeder: gas(200.0),
        },
        ByMass {
            request: ph("hydrated-lime", ("dry-feeder-capacity", 181.4), 6.6, 7.6),
            dose: ph_dose("lime", 6.6, 7.6, 60.0),
            feeder: dry(181.4),
        },
        ByMass {
            request: ph("soda-ash", ("dry-feeder-capacity", 300.0), 6.6, 7.6),
            dose: ph_dose("soda-ash", 6.6, 7.6, 60.0),
            feeder: dry(300.0),
        },
    ];
    for case in cases {
        check(&engine, case);
    }
}

#[test]
fn with_the_water_given_chlorine_shows_the_ph_and_alkalinity_it_leaves() {
    let engine = calculators();
    let water = [("ph", 7.2), ("alkalinity", 60.0), ("temperature", 12.0)];
    let effect = |product: &str, form: &[(&'static str, f64)]| {
        let mut values = vec![
            ("flow", FLOW),
            ("chlorine-demand", 1.5),
            ("target-residual", 1.0),
        ];
        values.extend_from_slice(form);
        values.extend_from_slice(&water);
        let out = engine
            .compute(&request("free-chlorine", product, &values))
            .unwrap();
        let direct = chlorine_dose_in_water(
            &engine.catalog,
            &ChlorineInput {
                demand: Measured::exact(1.5),
                residual: Measured::exact(1.0),
                ammonia_n: None,
                residual_limit_mg_l: None,
            },
            product,
            &WaterState::new(&WaterInput::new(7.2, 12.0, 60.0)).unwrap(),
            PhRange::default(),
        )
        .unwrap()
        .water
        .unwrap();
        assert_eq!(got(&out, "ph_after"), Some(direct.ph_after), "{product}");
        assert_eq!(
            got(&out, "alkalinity_after"),
            Some(direct.alkalinity_after_mg_l_as_caco3),
            "{product}"
        );
        let codes = keys(&out);
        assert!(codes.contains(&"ph-effect-end-state"), "{codes:?}");
        assert!(!codes.contains(&"give-water-for-ph-effect"), "{codes:?}");
        direct
    };
    let gas = effect(
        "chlorine-gas",
        &[("purity", 100.0), ("gas-feeder-capacity", 45.359237)],
    );
    let hypo = effect(
        "sodium-hypochlorite",
        &[
            ("strength", 12.5),
            ("specific-gravity", 1.2),
            ("pump-capacity", 15.0),
        ],
    );
    // Chlorine gas hydrolyses to an acid; hypochlorite brings its base with it.
    assert!(
        gas.ph_after < 7.2 && gas.alkalinity_after_mg_l_as_caco3 < 60.0,
        "{gas:?}"
    );
    assert!(hypo.ph_after > 7.2, "{hypo:?}");
    // Without the whole water, no pH numbers: the outcome says what to give instead.
    let partial = engine
        .compute(&request(
            "free-chlorine",
            "chlorine-gas",
            &[
                ("flow", FLOW),
                ("chlorine-demand", 1.5),
                ("target-residual", 1.0),
                ("purity", 100.0),
                ("gas-feeder-capacity", 45.359237),
                ("ph", 7.2),
            ],
        ))
        .unwrap();
    assert_eq!(got(&partial, "ph_after"), None);
    assert_eq!(got(&partial, "alkalinity_after"), None);
}

#[test]
fn chlorine_gas_is_offered_beside_hypochlorite_with_its_cautions() {
    let engine = calculators();
    let offered = engine.products(find("free-chlorine").unwrap());
    let ids: Vec<_> = offered.iter().map(|p| (p.id.as_str(), p.form)).collect();
    assert_eq!(
        ids,
        [
            ("sodium-hypochlorite", FeedForm::Liquid),
            ("chlorine-gas", FeedForm::Gas)
        ],
        "the liquid stays first, the gas beside it"
    );
    let req = request(
        "free-chlorine",
        "chlorine-gas",
        &[
            ("flow", FLOW),
            ("chlorine-demand", 1.5),
            ("target-residual", 1.0),
            ("purity", 100.0),
            ("gas-feeder-capacity", 45.359237),
        ],
    );
    let out = engine.compute(&req).unwrap();
    let codes = keys(&out);
    // The gas's handling cautions, and — as for hypochlorite — the pointer to the pH and
    // alkalinity effect, which the engine models for the gas as well.
    for code in [
        "hazard-toxic-gas",
        "ppe-scba-gas",
        "give-water-for-ph-effect",
    ] {
        assert!(codes.contains(&code), "{code} missing from {codes:?}");
    }
    // A feeder over its scale is the engine's danger, on the outcome.
    let mut small = req.clone();
    small.values.insert("gas-feeder-capacity", 5.0);
    let out = engine.compute(&small).unwrap();
    // No setting is presented: the caution names the scale that would put the feed at 90 %
    // of it (the rate to set ÷ 0.9, by hand from the usable band's top).
    assert_eq!(got(&out, "feeder_setting"), None);
    assert_eq!(out.setting, None);
    let rate = got(&out, "product_mass_rate").unwrap();
    let too_small = out
        .cautions
        .iter()
        .find(|c| c.key == "pump-too-small" && c.severity == Severity::Danger)
        .expect("the feeder is too small");
    let needed: f64 = too_small.param("capacity_needed").unwrap().parse().unwrap();
    assert!(
        (needed / (rate / 0.9) - 1.0).abs() < 1e-2,
        "{needed} vs {rate}"
    );
    assert_eq!(too_small.param("unit"), Some("kg/d"));
    // No feeder scale given: the engine is not asked with a made-up one; the rate to set is
    // computed and the setting, which alone needs the scale (`only_for`), is absent.
    let mut none = req.clone();
    none.values.remove("gas-feeder-capacity");
    let without = engine
        .compute(&none)
        .expect("computed without a feeder scale");
    assert_eq!(got(&without, "feeder_setting"), None);
    assert_eq!(without.setting, None);
    assert_eq!(got(&without, "product_mass_rate"), Some(rate));
    // Every product a calculator offers carries the form its catalog entry has, so it is fed
    // with that form's pump or feeder.
    for calculator in all() {
        for p in engine.products(calculator) {
            let product = engine.catalog.product(&p.id).unwrap();
            let expected = match product.form {
                Form::Solution => FeedForm::Liquid,
                Form::Gas => FeedForm::Gas,
                Form::Dry => FeedForm::Dry,
            };
            assert_eq!(p.form, expected, "{}: {}", calculator.id, p.id);
        }
    }
}

#[test]
fn softening_gives_the_lime_feeders_setting_when_its_scale_is_given() {
    let engine = calculators();
    let mut values = vec![
        ("flow", 4000.0),
        ("total-hardness", 260.0),
        ("calcium-hardness", 190.0),
        ("alkalinity", 180.0),
        ("ph", 7.6),
        ("temperature", 14.0),
        ("excess-lime", 35.0),
        ("lime-purity", 94.0),
        ("soda-ash-purity", 98.0),
    ];
    let without = engine
        .compute(&request("softening", "hydrated-lime", &values))
        .unwrap();
    // The lime dose the engines give for this analysis at 94 % purity.
    let co2 = WaterState::new(&WaterInput::new(7.6, 14.0, 180.0))
        .unwrap()
        .result()
        .unwrap()
        .co2_mg_l;
    let (removal, _) = removal_from_analysis(&HardnessAnalysis {
        total_hardness: Measured::exact(260.0),
        calcium_hardness: Measured::exact(190.0),
        alkalinity: Measured::exact(180.0),
        co2: Measured::exact(co2),
    })
    .unwrap();
    let lime = softening(&engine.catalog, &removal.input(35.0, 94.0, 98.0))
        .unwrap()
        .lime_caoh2_mg_l;
    assert_eq!(got(&without, "dose"), Some(lime));
    assert_eq!(got(&without, "feeder_setting"), None);
    assert_eq!(got(&without, "pump_setting"), None);
    assert_eq!(without.setting, None);
    // 400 lb/d, the demo plant's lime feeder, in kg/d.
    let scale = crate::engine::quantity::Unit::LbPerDay.to_si(400.0);
    values.push(("lime-feeder-capacity", scale));
    let req = request("softening", "hydrated-lime", &values);
    check(
        &engine,
        ByMass {
            dose: lime,
            request: req,
            feeder: dry(scale),
        },
    );
}

/// Corrosion inhibitor with the water given: `ph_after` and `alkalinity_after` are the water
/// engine's for the compound that carries the dose (2.0 mg/L as PO4 of phosphoric acid is
/// 2.0 × 97.99376 / 94.96976 mg/L H3PO4, IUPAC weights H 1.008, O 15.999, P 30.973762), and
/// the alkalinity falls by one equivalent per mole of phosphate (H3PO4 → H2PO4- + H+, H2PO4- the
/// zero level): 2.0 / 94.96976 × 50.0435 = 1.0539 mg/L as CaCO3 by hand. Without a fixed formula (zinc
/// orthophosphate) the effect stays not modelled.
#[test]
fn corrosion_inhibitor_water_after_is_the_water_engines() {
    let engine = calculators();
    let values = [
        ("flow", FLOW),
        ("target-residual", 2.0),
        ("present-residual", 0.0),
        ("strength", 75.0),
        ("specific-gravity", 1.58),
        ("pump-capacity", 5.0),
        ("ph", 7.4),
        ("alkalinity", 60.0),
        ("temperature", 12.0),
    ];
    let out = engine
        .compute(&request("corrosion-inhibitor", "phosphoric-acid", &values))
        .unwrap();
    let water = WaterState::new(&WaterInput::new(7.4, 12.0, 60.0)).unwrap();
    let h3po4 = water::Catalog::embedded().unwrap().find("H3PO4").unwrap();
    let direct = water::ph_after(
        &water,
        h3po4,
        2.0 * 97.99376 / 94.96976,
        Precipitation::None,
    )
    .unwrap();
    let ph = got(&out, "ph_after").expect("phosphoric acid is modelled");
    assert!((ph - direct.ph).abs() < 1e-7, "{ph} vs {}", direct.ph);
    let alk = got(&out, "alkalinity_after").unwrap();
    assert!((alk - direct.alkalinity_mg_l_as_caco3).abs() < 1e-4);
    assert!((60.0 - alk - 1.0539).abs() < 1e-3, "alkalinity after {alk}");
    assert!(!keys(&out).contains(&"water-effect-not-available"));

    let mut zinc = request("corrosion-inhibitor", "zinc-orthophosphate", &values);
    zinc.values.insert("strength", 30.0);
    let out = engine.compute(&zinc).unwrap();
    assert!(got(&out, "ph_after").is_none());
    assert!(keys(&out).contains(&"water-effect-not-available"));
}

/// Magnesium hydroxide is a pH-adjustment chemical: its dose for the target pH is the water
/// engine's (`water::neutralize`) and raising pH 6.8 to 7.5 takes some, not none.
#[test]
fn magnesium_hydroxide_adjusts_ph_like_the_water_engine() {
    let engine = calculators();
    let out = engine
        .compute(&request(
            "ph-adjustment",
            "magnesium-hydroxide",
            &[
                ("flow", FLOW),
                ("ph", 6.8),
                ("target-ph", 7.5),
                ("alkalinity", 40.0),
                ("temperature", 15.0),
                ("strength", 60.0),
                ("specific-gravity", 1.51),
                ("pump-capacity", 15.0),
            ],
        ))
        .unwrap();
    let water = WaterState::new(&WaterInput::new(6.8, 15.0, 40.0)).unwrap();
    let direct = water::neutralize(&water, water_chemical("Mg(OH)2").unwrap(), 7.5, 1.0).unwrap();
    let dose = got(&out, "dose").unwrap();
    assert!(dose > 0.0 && (dose - direct.dose_mg_l).abs() < 1e-9 * dose.max(1.0));
    assert!((got(&out, "ph_after").unwrap() - 7.5).abs() < 1e-6);
}

/// Atomic weights typed from the IUPAC 2021 table for the hand checks below (Mg, Al, Na, C,
/// O, H), so the expected factors do not come from the engine's own molar masses.
const MG: f64 = 24.305;
const AL: f64 = 26.981_538;
const NA: f64 = 22.989_769;
const CA: f64 = 40.078;
const C: f64 = 12.011;
const O: f64 = 15.999;
const H: f64 = 1.008;

/// mg/L as CaCO3 per meq/L: CaCO3 / 2 (hand, from the atomic weights above).
fn caco3_per_meq() -> f64 {
    (CA + C + 3.0 * O) / 2.0
}

/// Magnesium hydroxide in the pH calculator: the alkalinity it adds is 2 eq per mole of
/// Mg(OH)2 (Mg(OH)2 → Mg+2 + 2 OH-), i.e. 100.09 mg/L as CaCO3 per 58.32 mg/L, by hand from
/// the atomic weights; and its dose for PHREEQC's pH after 10 mg/L in the softest fixture
/// water is PHREEQC's 10 mg/L (tests/fixtures/water_phreeqc.json, w01-cold-soft: pH 6.8,
/// 0.5 °C, 12 mg/L as CaCO3, PHREEQC pH 10.4159 and 29.16 mg/L as CaCO3 after 10 mg/L).
/// The calculator takes no major ions (the fixture water has a little Ca, Mg, Na), so the
/// dose is held to 3 % and the alkalinity to the 1 mg/L as CaCO3.
#[test]
fn magnesium_hydroxide_adds_two_equivalents_and_meets_phreeqc() {
    let engine = calculators();
    let mgoh2 = MG + 2.0 * (O + H);
    let per_mg = 2.0 * caco3_per_meq() / mgoh2;
    // 100.086 / 58.319 (hand).
    assert!((per_mg - 1.7162).abs() < 1e-4, "{per_mg}");
    let run = |raw: f64, temp: f64, alk: f64, target: f64| {
        engine
            .compute(&request(
                "ph-adjustment",
                "magnesium-hydroxide",
                &[
                    ("flow", FLOW),
                    ("ph", raw),
                    ("target-ph", target),
                    ("alkalinity", alk),
                    ("temperature", temp),
                    ("strength", 60.0),
                    ("specific-gravity", 1.51),
                    ("pump-capacity", 15.0),
                ],
            ))
            .unwrap()
    };
    // Stoichiometry (hand): alkalinity after = before + dose × 2 eq per mole.
    for (raw, temp, alk, target) in [(6.8, 15.0, 40.0, 7.5), (6.5, 20.0, 80.0, 7.8)] {
        let out = run(raw, temp, alk, target);
        let dose = got(&out, "dose").unwrap();
        let after = got(&out, "alkalinity_after").unwrap();
        let want = alk + dose * per_mg;
        assert!(
            (after - want).abs() < 1e-3 * want,
            "{raw}->{target}: {after} vs hand {want}"
        );
    }
    // PHREEQC (committed fixture, w01-cold-soft, 10 mg/L Mg(OH)2).
    let out = run(6.8, 0.5, 12.0, 10.415_882_886_671_866);
    let dose = got(&out, "dose").unwrap();
    let after = got(&out, "alkalinity_after").unwrap();
    eprintln!("Mg(OH)2 vs PHREEQC: dose {dose} (10), alkalinity {after} (29.1617)");
    assert!((dose - 10.0).abs() < 0.3, "dose {dose} vs PHREEQC 10 mg/L");
    assert!(
        (after - 29.161_657_896_101_18).abs() < 1.0,
        "alkalinity {after} vs PHREEQC 29.16"
    );
}

/// A coagulation request with liquid sodium aluminate (23 % as Al2O3, SG 1.5) dosed as Al.
fn aluminate_request(dose_al: f64, alkalinity: f64, setpoint: f64) -> Request {
    let mut r = request(
        "coagulation",
        "sodium-aluminate",
        &[
            ("flow", FLOW),
            ("jar-dose", dose_al),
            ("alkalinity", alkalinity),
            ("alkalinity-setpoint", setpoint),
            ("ph", 7.0),
            ("temperature", 12.0),
            ("strength", 23.0),
            ("specific-gravity", 1.5),
            ("pump-capacity", 15.0),
        ],
    );
    r.mode = Some("alkali-caustic");
    r
}

/// Sodium aluminate adds alkalinity: NaAlO2 + 2 H2O → Al(OH)3 + NaOH, one OH- (one eq) per
/// Al precipitated, so 50.04 mg/L as CaCO3 per 26.98 mg/L of Al = 1.8547 (by hand from the
/// atomic weights). The alkalinity result is `alkalinity_added`, the remaining alkalinity the
/// raw plus it, and no caustic is needed while it keeps the setpoint; when it does not, the
/// caustic makes up the rest at 50.04 / 40.00 mg/L as CaCO3 per mg/L NaOH (hand).
#[test]
fn sodium_aluminate_adds_alkalinity_in_coagulation() {
    let engine = calculators();
    let per_al = caco3_per_meq() / AL;
    assert!((per_al - 1.8547).abs() < 1e-4, "{per_al}");
    let (per, _) = alkalinity_per_dose(&engine.catalog, Coagulant::SodiumAluminate).unwrap();
    assert!(
        (per - per_al).abs() < 1e-4 * per_al,
        "{per} vs hand {per_al}"
    );

    let out = engine.compute(&aluminate_request(5.0, 40.0, 30.0)).unwrap();
    let added = got(&out, "alkalinity_added").expect("aluminate adds alkalinity");
    assert!((added - 5.0 * per_al).abs() < 1e-3, "{added}");
    assert_eq!(got(&out, "alkalinity_consumed"), None);
    let remaining = got(&out, "alkalinity_remaining").unwrap();
    assert!(
        (remaining - (40.0 + 5.0 * per_al)).abs() < 1e-3,
        "{remaining}"
    );
    assert_eq!(got(&out, "supplemental_alkali"), None);
    assert_eq!(got(&out, "ph_after_alkali"), None);
    assert!(!keys(&out).contains(&"supplemental-alkali-needed"));
    // The hydroxide freed raises the pH, unlike a metal salt's.
    let ph = got(&out, "ph_after_coagulant").expect("aluminate is modelled");
    assert!(ph > 7.0, "{ph}");
    assert!(
        out.trace_lines()
            .contains(&TraceLine::Heading("alkalinity-added".into()))
    );

    // Not enough: raw 20 + 9.27 against a setpoint of 40 leaves 10.73 for caustic.
    let short = engine.compute(&aluminate_request(5.0, 20.0, 40.0)).unwrap();
    let naoh = NA + O + H;
    let want = (40.0 - 20.0 - 5.0 * per_al) / (caco3_per_meq() / naoh);
    let alkali = got(&short, "supplemental_alkali").expect("caustic to make up");
    assert!(
        (alkali - want).abs() < 1e-3 * want,
        "{alkali} vs hand {want}"
    );
}
