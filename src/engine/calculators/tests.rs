//! The calculator table's own cases, each built with one small `request` helper: every
//! calculator through `Calculators::compute`, its expected values worked beside it.

use super::*;
use crate::engine::dosing::site::regulatory_defaults;

/// A request for `id` with `product` and the given SI values (all exact).
fn request(id: &str, product: Option<&str>, values: &[(&'static str, f64)]) -> Request {
    let mut r = Request::new(find(id).expect("calculator in the table"));
    r.product = product.map(str::to_string);
    r.values = values.iter().copied().collect();
    r
}

fn calculators() -> Calculators {
    Calculators::new().expect("built-in catalog")
}

const LIQUID: [(&str, f64); 3] = [
    ("strength", 12.5),
    ("specific-gravity", 1.16),
    ("pump-capacity", 15.0),
];

fn with(base: &[(&'static str, f64)], more: &[(&'static str, f64)]) -> Vec<(&'static str, f64)> {
    base.iter().chain(more).copied().collect()
}

#[test]
fn ids_are_unique_and_every_result_id_is_snake_case() {
    let mut ids: Vec<&str> = all().iter().map(|c| c.id).collect();
    ids.sort();
    ids.dedup();
    assert_eq!(ids.len(), all().len());
    for c in all() {
        for r in c.results {
            assert!(
                // Digits belong to formulas in an id (`free_co2`); the first is a letter.
                r.id.starts_with(|ch: char| ch.is_ascii_lowercase())
                    && r.id
                        .chars()
                        .all(|ch| ch.is_ascii_lowercase() || ch.is_ascii_digit() || ch == '_'),
                "{}: {}",
                c.id,
                r.id
            );
        }
        for i in c.inputs {
            assert!(
                i.name
                    .chars()
                    .all(|ch| ch.is_ascii_lowercase() || ch.is_ascii_digit() || ch == '-'),
                "{}: {}",
                c.id,
                i.name
            );
        }
    }
}

#[test]
fn every_calculator_offers_products_it_can_compute_for() {
    let c = calculators();
    for calc in all() {
        let products = c.products(calc);
        assert_eq!(
            products.is_empty(),
            calc.offer == Offer::None,
            "{}",
            calc.id
        );
    }
}

/// Every result an outcome gives is listed in its calculator's table entry, with the same
/// quantity: the table tells the truth about what a calculator returns.
fn check_listed(outcome: &Outcome) {
    let calc = find(outcome.calculator).unwrap();
    for r in &outcome.results {
        let spec = calc.results.iter().find(|s| s.id == r.id);
        assert!(spec.is_some(), "{}: {} not in the table", calc.id, r.id);
        assert_eq!(spec.unwrap().quantity, r.quantity, "{}", r.id);
    }
}

#[test]
fn a_gas_feed_has_no_product_volume_and_a_feeder_setting() {
    let out = calculators()
        .compute(&request(
            "feed",
            Some("chlorine-gas"),
            &[
                ("flow", 9000.0),
                ("dose", 2.0),
                ("purity", 100.0),
                ("gas-feeder-capacity", 100.0),
            ],
        ))
        .unwrap();
    check_listed(&out);
    assert!(out.result("product_volume_rate").is_none());
    assert!(out.result("pump_setting").is_none());
    // 9000 m³/d × 2 mg/L = 18 kg/d of Cl2 on a 100 kg/d rotameter: 18 %.
    let setting = out.result("feeder_setting").unwrap().value;
    assert!((setting - 18.0).abs() < 1e-9, "{setting}");
    assert_eq!(out.setting.unwrap().device, Device::GasFeeder);
    assert!((out.result("feed_mass_rate").unwrap().value - 18.0).abs() < 1e-9);
    assert_eq!(out.result("dose").unwrap().basis.as_deref(), Some("Cl2"));
    assert_eq!(out.product.as_ref().unwrap().name, "Chlorine gas");
    assert_eq!(
        out.cautions.last().unwrap().key,
        "advisory-operator-decides"
    );
}

#[test]
fn a_liquid_feed_gives_volume_and_pump_setting_by_hand() {
    let out = calculators()
        .compute(&request(
            "feed",
            Some("sodium-hypochlorite"),
            &with(&[("flow", 10_000.0), ("dose", 2.0)], &LIQUID),
        ))
        .unwrap();
    check_listed(&out);
    // 20 kg/d Cl2 at 12.5 trade % (125 g/L available Cl2) = 160 L/d = 6.667 L/h of 15 L/h.
    let lph = out.result("product_volume_rate").unwrap().value;
    assert!((lph - 160.0 / 24.0).abs() < 1e-6, "{lph}");
    let pump = out.result("pump_setting").unwrap().value;
    assert!((pump - 100.0 * 160.0 / 24.0 / 15.0).abs() < 1e-4, "{pump}");
    assert_eq!(out.setting.unwrap().device, Device::MeteringPump);
}

/// A pump's full scale is needed by the pump setting alone (the table's `only_for`): without
/// it the dose, the feed mass and the product rate are computed and the setting is absent.
/// By hand as above: 20 kg/d Cl2, 6.667 L/h of 12.5 trade % hypochlorite.
#[test]
fn without_a_pump_capacity_everything_but_the_setting_is_computed() {
    let c = calculators();
    let check = |id: &str, product: &str, values: &[(&'static str, f64)], absent: &str| {
        let out = c
            .compute(&request(id, Some(product), values))
            .unwrap_or_else(|e| panic!("{id}: {e}"));
        check_listed(&out);
        assert!(out.result("dose").is_some(), "{id}");
        assert!(out.result("feed_mass_rate").is_some(), "{id}");
        assert_eq!(
            out.result(absent),
            None,
            "{id}: {absent} without a capacity"
        );
        assert_eq!(out.setting, None, "{id}");
        out
    };
    let liquid = [("strength", 12.5), ("specific-gravity", 1.16)];
    let out = check(
        "feed",
        "sodium-hypochlorite",
        &with(&[("flow", 10_000.0), ("dose", 2.0)], &liquid),
        "pump_setting",
    );
    let lph = out.result("product_volume_rate").unwrap().value;
    assert!((lph - 160.0 / 24.0).abs() < 1e-6, "{lph}");
    assert!((out.result("feed_mass_rate").unwrap().value - 20.0).abs() < 1e-9);
    check(
        "feed",
        "chlorine-gas",
        &[("flow", 10_000.0), ("dose", 2.0), ("purity", 99.5)],
        "feeder_setting",
    );
    // Ferric chloride at the catalog's typical strength and SG (data/products.json).
    let typical = &c.catalog().product("ferric-chloride").unwrap().strengths[0];
    check(
        "coagulation",
        "ferric-chloride",
        &[
            ("flow", 10_000.0),
            ("jar-dose", 30.0),
            ("alkalinity", 100.0),
            ("alkalinity-setpoint", 30.0),
            ("ph", 7.5),
            ("temperature", 15.0),
            ("strength", typical.value),
            ("specific-gravity", typical.sg.unwrap()),
        ],
        "pump_setting",
    );
}

/// A compute function's refusal names the input whose value it reports, so the app can mark
/// that field: a negative residual target is refused at "target-residual".
#[test]
fn a_refusal_names_the_input_it_is_about() {
    let e = calculators()
        .compute(&request(
            "free-chlorine",
            Some("sodium-hypochlorite"),
            &with(
                &[
                    ("flow", 10_000.0),
                    ("chlorine-demand", 1.0),
                    ("target-residual", -1.0),
                ],
                &LIQUID,
            ),
        ))
        .unwrap_err();
    let input = e
        .params()
        .iter()
        .find(|(k, _)| *k == "input")
        .map(|(_, v)| v.as_str());
    assert_eq!(input, Some("target-residual"), "{e}");
}

#[test]
fn a_missing_input_names_itself_and_an_optional_one_may_be_left_out() {
    let c = calculators();
    let e = c
        .compute(&request("feed", Some("sodium-hypochlorite"), &LIQUID))
        .unwrap_err();
    assert_eq!(e.reason(), Some("missing-input"));
    assert!(e.to_string().contains("flow"), "{e}");
    let base = with(
        &[
            ("flow", 10_000.0),
            ("chlorine-demand", 1.0),
            ("target-residual", 1.0),
        ],
        &LIQUID,
    );
    let out = c
        .compute(&request(
            "free-chlorine",
            Some("sodium-hypochlorite"),
            &base,
        ))
        .unwrap();
    assert!(out.result("ph_after").is_none());
    assert!((out.result("dose").unwrap().value - 2.0).abs() < 1e-9);
}

#[test]
fn a_product_the_calculator_does_not_offer_is_refused() {
    let e = calculators()
        .compute(&request(
            "dechlorination",
            Some("sodium-hypochlorite"),
            &with(&[("flow", 100.0), ("residual-in", 1.0)], &LIQUID),
        ))
        .unwrap_err();
    assert_eq!(e.reason(), Some("product-not-for-calculator"));
}

#[test]
fn a_target_above_the_plants_limit_is_a_caution_naming_the_limit() {
    let c = calculators();
    let base = with(
        &[
            ("flow", 10_000.0),
            ("chlorine-demand", 1.0),
            ("target-residual", 5.0),
        ],
        &LIQUID,
    );
    let mut r = request("free-chlorine", Some("sodium-hypochlorite"), &base);
    // No plant entry: the regulatory default (MRDL 4.0 mg/L) applies.
    let out = c.compute(&r).unwrap();
    let breach = out
        .cautions
        .iter()
        .find(|c| c.key == "site-limit-above")
        .expect("limit caution");
    assert_eq!(breach.param("limit"), Some("4.00"));
    assert_eq!(breach.param("field"), Some("field-target-residual"));
    // A plant's own, stricter entry wins over the default.
    let mut own = regulatory_defaults()
        .into_iter()
        .find(|l| l.parameter == "chlorine")
        .unwrap();
    own.max = Some(2.5);
    own.source = "plant permit".into();
    r.limits = vec![own];
    r.values.insert("target-residual", 3.0);
    let out = c.compute(&r).unwrap();
    let breach = out
        .cautions
        .iter()
        .find(|c| c.key == "site-limit-above")
        .unwrap();
    assert_eq!(breach.param("source"), Some("plant permit"));
    // Exactly one limit caution: the chlorine engine no longer checks the limit a second time.
    assert_eq!(
        out.cautions
            .iter()
            .filter(|c| c.key.contains("limit"))
            .count(),
        1
    );
}

#[test]
fn a_non_finite_input_is_refused_not_computed() {
    let e = calculators()
        .compute(&request(
            "feed",
            Some("sodium-hypochlorite"),
            &with(&[("flow", f64::NAN), ("dose", 2.0)], &LIQUID),
        ))
        .unwrap_err();
    assert_eq!(e.reason(), Some("not-finite"));
}

#[test]
fn ph_adjustment_is_the_one_call_neutralize_feed_makes() {
    use crate::engine::dosing::catalog::{Strength, StrengthBasis};
    use crate::engine::dosing::feed::{PumpKind, UsableRange};
    use crate::engine::dosing::neutralization::{NeutralizationInput, neutralization};
    use crate::engine::dosing::units::{Flow, FlowUnit, VolumeRateUnit};
    use crate::engine::dosing::waterside::PhRange;
    use crate::engine::sigfig::Measured;
    use crate::engine::water::{WaterInput, WaterState};
    let c = calculators();
    let out = c
        .compute(&request(
            "ph-adjustment",
            Some("sodium-hydroxide"),
            &[
                ("flow", 5000.0),
                ("ph", 6.8),
                ("target-ph", 7.8),
                ("alkalinity", 40.0),
                ("temperature", 15.0),
                ("strength", 25.0),
                ("specific-gravity", 1.27),
                ("pump-capacity", 10.0),
            ],
        ))
        .unwrap();
    check_listed(&out);
    let water = WaterState::new(&WaterInput::new(6.8, 15.0, 40.0)).unwrap();
    let direct = neutralization(
        c.catalog(),
        &water,
        &NeutralizationInput {
            product: "sodium-hydroxide".into(),
            strength: Strength::new(
                Measured::exact(25.0),
                StrengthBasis::Weight,
                Some(Measured::exact(1.27)),
            ),
            target_ph: 7.8,
            flow: Flow::new(Measured::exact(5000.0), FlowUnit::M3d),
            pump: Some(PumpKind::Metering {
                capacity: 10.0,
                unit: VolumeRateUnit::Lph,
            }),
            usable_range: UsableRange::default(),
            max_use_level_mg_l: None,
            ph_range: PhRange::default(),
            dose_sig_figs: None,
            langelier_index: false,
        },
    )
    .unwrap();
    assert_eq!(out.result("dose").unwrap().value, direct.dose_mg_l);
    assert_eq!(
        out.result("pump_setting").unwrap().value,
        direct.feed.pump.as_ref().unwrap().percent
    );
    assert_eq!(out.result("ph_after").unwrap().value, direct.ph_after);
}

#[test]
fn hydrated_lime_softening_carries_no_quicklime_caution() {
    let c = calculators();
    let values = [
        ("flow", 4000.0),
        ("total-hardness", 250.0),
        ("calcium-hardness", 180.0),
        ("alkalinity", 200.0),
        ("ph", 7.4),
        ("temperature", 12.0),
        ("excess-lime", 35.0),
        ("lime-purity", 93.0),
        ("soda-ash-purity", 98.0),
    ];
    let hydrated = c
        .compute(&request("softening", Some("hydrated-lime"), &values))
        .unwrap();
    check_listed(&hydrated);
    assert!(
        hydrated
            .cautions
            .iter()
            .all(|c| !c.key.contains("quicklime"))
    );
    assert!(
        hydrated.result("feeder_setting").is_none(),
        "no feeder scale given"
    );
    let quick = c
        .compute(&request("softening", Some("quicklime"), &values))
        .unwrap();
    assert!(quick.cautions.iter().any(|c| c.key.contains("quicklime")));
}

#[test]
fn the_app_menu_groups_the_chlorination_calculators() {
    let groups = groups();
    let chlorination = groups.iter().find(|(g, _)| *g == "chlorination").unwrap();
    let ids: Vec<&str> = chlorination.1.iter().map(|c| c.id).collect();
    assert_eq!(ids, ["free-chlorine", "chloramine", "dechlorination"]);
}

#[test]
fn product_inputs_follow_the_form_and_name_the_strength_basis() {
    let c = calculators();
    let feed = find("feed").unwrap();
    let names = |p: &str| -> Vec<(&'static str, Option<&'static str>)> {
        c.inputs(feed, Some(p))
            .iter()
            .map(|i| (i.name, i.basis))
            .collect()
    };
    assert_eq!(
        names("sodium-hypochlorite")[2..],
        [
            ("strength", Some("trade")),
            ("specific-gravity", None),
            ("pump-capacity", None)
        ]
    );
    assert_eq!(
        names("chlorine-gas")[2..],
        [("purity", Some("purity")), ("gas-feeder-capacity", None)]
    );
}

/// CT by hand: 1.0 mg/L for a T10 of 30 min is 30 mg·min/L; a 1 000 000 L basin with baffling
/// 0.3 at 14 400 m³/d (10 000 L/min) has T = 100 min and T10 = 30 min, the same credit.
#[test]
fn ct_from_a_tracer_t10_and_from_a_basin_agree_by_hand() {
    let c = calculators();
    let water = [("residual", 1.0), ("ph", 7.5), ("temperature", 10.0)];
    let tracer = c
        .compute(&request("ct", None, &with(&water, &[("t10", 30.0)])))
        .unwrap();
    check_listed(&tracer);
    assert!((tracer.result("ct").unwrap().value - 30.0).abs() < 1e-9);
    let basin = c
        .compute(&request(
            "ct",
            None,
            &with(
                &water,
                &[
                    ("flow", 14_400.0),
                    ("basin-volume", 1_000_000.0),
                    ("baffling-factor", 0.3),
                ],
            ),
        ))
        .unwrap();
    assert!((basin.result("t10").unwrap().value - 30.0).abs() < 1e-9);
    assert!((basin.result("ct").unwrap().value - 30.0).abs() < 1e-9);
    // Neither a T10 nor a basin: refused, naming what is missing.
    let e = c.compute(&request("ct", None, &water)).unwrap_err();
    assert_eq!(e.reason(), Some("missing-input"));
}

/// 12.5 trade % hypochlorite is 125 g/L of available chlorine; 100 L at 1.25 trade % needs
/// 12.5 kg of it, so 10 L of the concentrate (trade % is per volume). The water by mass (hand
/// balance): 100 L × 1.02 − 10 L × 1.16 = 102 − 11.6 = 90.4 kg, so 90.4 L, not 90.
#[test]
fn dilution_of_a_trade_strength_by_hand() {
    let out = calculators()
        .compute(&request(
            "dilution",
            Some("sodium-hypochlorite"),
            &[
                ("strength", 12.5),
                ("specific-gravity", 1.16),
                ("target-strength", 1.25),
                // About the SG of a 1.25 trade % solution (common practice).
                ("target-specific-gravity", 1.02),
                ("final-volume", 100.0),
            ],
        ))
        .unwrap();
    check_listed(&out);
    assert!((out.result("concentrate_volume").unwrap().value - 10.0).abs() < 1e-9);
    assert!((out.result("water_volume").unwrap().value - 90.4).abs() < 1e-9);
}

/// The case, a hand mass balance: 50 % caustic (SG 1.52, references.md §6 [C]) to 25 %
/// (SG 1.27, references.md §6 [M], used here only as the typed target), 100 L. The batch weighs
/// 100 × 1.27 = 127 kg and holds 31.75 kg NaOH, i.e. 63.5 kg of 50 % concentrate (41.78 L);
/// the water is 127 − 63.5 = 63.5 kg, 63.5 L — adding volumes would say 58.2 L.
#[test]
fn dilution_of_caustic_balances_masses_not_volumes() {
    let out = calculators()
        .compute(&request(
            "dilution",
            Some("sodium-hydroxide"),
            &[
                ("strength", 50.0),
                ("specific-gravity", 1.52),
                ("target-strength", 25.0),
                ("target-specific-gravity", 1.27),
                ("final-volume", 100.0),
            ],
        ))
        .unwrap();
    check_listed(&out);
    let conc = out.result("concentrate_volume").unwrap().value;
    assert!((conc - 63.5 / 1.52).abs() < 1e-9, "{conc}");
    let water = out.result("water_volume").unwrap().value;
    assert!((water - 63.5).abs() < 1e-9, "{water}");
    // The heat of dilution: water first, chemical into it, slowly.
    assert!(
        out.cautions
            .iter()
            .any(|c| c.key == "add-chemical-to-water")
    );
    // A target SG that makes the batch lighter than its concentrate (possible only on a
    // per-volume basis: 10 trade % at SG 0.9 from 12.5 trade % at 1.16) is refused, never
    // printed as a negative volume.
    let e = calculators()
        .compute(&request(
            "dilution",
            Some("sodium-hypochlorite"),
            &[
                ("strength", 12.5),
                ("specific-gravity", 1.16),
                ("target-strength", 10.0),
                ("target-specific-gravity", 0.9),
                ("final-volume", 100.0),
            ],
        ))
        .unwrap_err();
    // (A plausibility check of SG against strength may refuse it first, with its own reason.)
    assert!(e.reason().is_some(), "{e}");
}

/// The dry solids per day are the solids concentration carried by the day's flow:
/// mg/L × m³/d ÷ 1000 = kg/d.
#[test]
fn sludge_mass_is_its_concentration_times_the_flow() {
    let out = calculators()
        .compute(&request(
            "sludge",
            Some("ferric-chloride"),
            &[("flow", 8000.0), ("dose", 40.0), ("suspended-solids", 10.0)],
        ))
        .unwrap();
    check_listed(&out);
    let mg_l = out.result("solids_concentration").unwrap().value;
    let kg_d = out.result("dry_solids_mass_rate").unwrap().value;
    assert!(mg_l > 10.0, "the raw solids are part of it: {mg_l}");
    assert!((kg_d - mg_l * 8000.0 / 1000.0).abs() < 1e-9 * kg_d);
}

// ---- Chloramination with ammonia already in the water ----
//
// Hand figures: monochloramine 1:1 molar is 70.906/14.007 = 5.06 Cl2:N; breakpoint
// 2 NH3 : 3 Cl2 is 3 × 70.906 / (2 × 14.007) = 7.593 (IUPAC atomic weights, typed by hand).

const AQUA_AMMONIA: [(&str, f64); 3] = [
    ("strength", 19.0),
    ("specific-gravity", 0.93),
    ("pump-capacity", 10.0),
];

fn chloramine(mode: &'static str, values: &[(&'static str, f64)]) -> Result<Outcome> {
    let mut r = request(
        "chloramine",
        Some("aqua-ammonia"),
        &with(&with(&[("flow", 5000.0)], values), &AQUA_AMMONIA),
    );
    r.mode = Some(mode);
    calculators().compute(&r)
}

fn value_of(out: &Outcome, id: &str) -> f64 {
    out.result(id)
        .unwrap_or_else(|| panic!("{id} absent"))
        .value
}

fn has(out: &Outcome, key: &str) -> bool {
    out.cautions.iter().any(|c| c.key == key)
}

/// The plant: 3.3 mg/L Cl2 at 4.5:1 with 0.2 mg/L NH3-N in the water, ammonia fed with
/// the chlorine: 3.3/4.5 − 0.2 = 0.533 mg/L N (not 1.07).
#[test]
fn chloramine_with_chlorine_credits_the_natural_ammonia() {
    let out = chloramine(
        "ammonia-with-chlorine",
        &[
            ("chlorine-dose", 3.3),
            ("cl2-n-ratio", 4.5),
            ("ammonia-n", 0.2),
        ],
    )
    .unwrap();
    check_listed(&out);
    assert!((value_of(&out, "dose") - (3.3 / 4.5 - 0.2)).abs() < 1e-9);
    assert!(has(&out, "natural-ammonia-credited"));
    // 0.733 N in all, 3.3/5.06 = 0.652 of it combined: 0.081 free, below the caution's 0.1.
    assert!(
        (value_of(&out, "free_ammonia_left") - (3.3 / 4.5 - 3.3 * 14.007 / 70.906)).abs() < 1e-3
    );
    assert!(!has(&out, "free-ammonia-nitrification"));
    // Without natural ammonia the mode changes nothing: C / R.
    let plain = chloramine(
        "ammonia-with-chlorine",
        &[("chlorine-dose", 3.3), ("cl2-n-ratio", 4.5)],
    )
    .unwrap();
    assert!((value_of(&plain, "dose") - 3.3 / 4.5).abs() < 1e-9);
}

/// Chlorine first, ammonia downstream: the natural 0.2 mg/L N takes 0.2 × 7.593 = 1.519 mg/L
/// of the chlorine through breakpoint; feeding 3.0 + 1.519 leaves 3.0 free at the ammonia
/// point, which is fed 3.0/4.5 = 0.667 mg/L N (the downstream figure).
#[test]
fn chloramine_downstream_feeds_on_the_free_chlorine_left_after_breakpoint() {
    let bp = 3.0 * 70.906 / (2.0 * 14.007);
    let out = chloramine(
        "ammonia-after-chlorine",
        &[
            ("chlorine-dose", 3.0 + 0.2 * bp),
            ("cl2-n-ratio", 4.5),
            ("ammonia-n", 0.2),
        ],
    )
    .unwrap();
    check_listed(&out);
    assert!((value_of(&out, "free_chlorine_at_ammonia_point") - 3.0).abs() < 1e-3);
    assert!((value_of(&out, "dose") - 3.0 / 4.5).abs() < 1e-3);
    assert!(has(&out, "natural-ammonia-broken-first"));
    assert!(out.setting.is_some());
}

/// When the water already holds what the ratio needs, or the chlorine cannot pass breakpoint
/// on it before a downstream ammonia point, nothing is fed: dose 0, no feed rate, no setting,
/// and a caution says why; the free ammonia left is named (nitrification).
#[test]
fn chloramine_feeds_nothing_when_the_natural_ammonia_suffices() {
    let out = chloramine(
        "ammonia-with-chlorine",
        &[
            ("chlorine-dose", 1.0),
            ("cl2-n-ratio", 4.5),
            ("ammonia-n", 0.5),
        ],
    )
    .unwrap();
    check_listed(&out);
    assert_eq!(value_of(&out, "dose"), 0.0);
    assert!(out.result("feed_mass_rate").is_none() && out.setting.is_none());
    assert!(has(&out, "natural-ammonia-covers-ratio"));
    // 0.5 − 1.0 × 14.007/70.906 = 0.30 mg/L N left free.
    assert!((value_of(&out, "free_ammonia_left") - (0.5 - 14.007 / 70.906)).abs() < 1e-3);
    assert!(has(&out, "free-ammonia-nitrification"));
    let short = chloramine(
        "ammonia-after-chlorine",
        &[
            ("chlorine-dose", 1.0),
            ("cl2-n-ratio", 4.5),
            ("ammonia-n", 0.5),
        ],
    )
    .unwrap();
    assert_eq!(value_of(&short, "dose"), 0.0);
    assert_eq!(value_of(&short, "free_chlorine_at_ammonia_point"), 0.0);
    assert!(has(&short, "chlorine-short-of-natural-breakpoint"));
}

// ---- Breakpoint end state through the table ----

/// Free chlorine with ammonia and the water: pH and alkalinity are the end state after
/// breakpoint, and the stoichiometric alkalinity the breakpoint takes is listed: 4 eq per N
/// for chlorine gas, 1 for hypochlorite (hand derivation, see tests/engine/dosing_water.rs),
/// 1 mg/L N × 4 × 50.0435/14.007 = 14.29 and 3.57 mg/L as CaCO3.
#[test]
fn free_chlorine_reports_the_breakpoint_end_state() {
    let water = [
        ("flow", 5000.0),
        ("chlorine-demand", 0.0),
        ("target-residual", 1.0),
        ("ammonia-n", 1.0),
        ("ph", 7.6),
        ("alkalinity", 80.0),
        ("temperature", 15.0),
    ];
    for (product, form, eq) in [
        (
            "chlorine-gas",
            vec![("purity", 100.0), ("gas-feeder-capacity", 100.0)],
            4.0,
        ),
        ("sodium-hypochlorite", LIQUID.to_vec(), 1.0),
    ] {
        let out = calculators()
            .compute(&request(
                "free-chlorine",
                Some(product),
                &with(&water, &form),
            ))
            .unwrap();
        check_listed(&out);
        let consumed = value_of(&out, "breakpoint_alkalinity_consumed");
        assert!(
            (consumed - eq * 100.087 / 2.0 / 14.007).abs() < 0.01,
            "{product}: {consumed}"
        );
        // The end state: raw − breakpoint − (±) the residual still free (1 mg/L Cl2: ∓0.706).
        let residual = if eq > 1.0 { -1.0 } else { 1.0 } * 100.087 / 2.0 / 70.906;
        let after = value_of(&out, "alkalinity_after");
        assert!(
            (after - (80.0 - consumed + residual)).abs() < 0.02,
            "{product}: {after}"
        );
        assert!(has(&out, "ph-effect-end-state"));
        assert!(value_of(&out, "ph_after") < 7.6, "{product}");
        // Without the water no pH, but the stoichiometric alkalinity is still the product's.
        let no_water: Vec<(&'static str, f64)> = with(&water, &form)
            .into_iter()
            .filter(|(n, _)| *n != "ph")
            .collect();
        let out = calculators()
            .compute(&request("free-chlorine", Some(product), &no_water))
            .unwrap();
        assert!(out.result("ph_after").is_none());
        assert!((value_of(&out, "breakpoint_alkalinity_consumed") - consumed).abs() < 1e-9);
    }
}

// ---- Dry and gas feeders in the cross-check ----

/// Every setting result of the table is one the full-scale guard reads: a list that left one
/// out let a feeder's suggested setting above 100 % through without its danger caution.
#[test]
fn every_setting_result_is_guarded_at_full_scale() {
    for calc in all() {
        for r in calc.results {
            if r.id.ends_with("_setting") {
                assert!(SETTING_RESULTS.contains(&r.id), "{}: {}", calc.id, r.id);
            }
        }
    }
}

/// A dry feeder at 95 % catching 131.6 g a minute of 95 % lime over 5000 m³/d feeds
/// 131.6 / 60 × 86.4 × 0.95 × 1000 / 5000 = 36.01 mg/L (by hand), 10 % under the 40 asked:
/// within the check's band, the feeder would go to 95 × 40 / 36.01 = 105.5 %, beyond its
/// scale. No such setting is shown; a danger caution says so.
#[test]
fn a_suggested_feeder_setting_beyond_full_scale_is_a_danger() {
    let out = calculators()
        .compute(&request(
            "pump-check",
            Some("hydrated-lime"),
            &[
                ("flow", 5000.0),
                ("dose", 40.0),
                ("catch-mass", 131.6),
                ("catch-time", 60.0),
                ("feeder-setting", 95.0),
                ("purity", 95.0),
            ],
        ))
        .unwrap();
    let actual = 131.6 / 60.0 * 86.4 * 0.95 * 1000.0 / 5000.0;
    assert!((value_of(&out, "actual_dose") - actual).abs() < 1e-9);
    assert!(95.0 * 40.0 / actual > 100.0);
    assert!(
        out.result("suggested_feeder_setting").is_none(),
        "{:?}",
        out.results
    );
    assert!(
        out.cautions
            .iter()
            .any(|c| c.key == "setting-beyond-full-scale" && c.severity == Severity::Danger),
        "{:?}",
        out.cautions
    );
}

/// A hydrated-lime feeder's catch, by hand: 150 g in 60 s is 2.5 g/s = 216 kg/d of product;
/// at 95 % purity 205.2 kg/d Ca(OH)2; over 5000 m³/d that is 41.04 mg/L. Target 40: +2.6 %,
/// and the feeder at 40 % should go to 40 × 40/41.04 = 38.99 %.
#[test]
fn dry_feeder_catch_test_by_hand() {
    let out = calculators()
        .compute(&request(
            "pump-check",
            Some("hydrated-lime"),
            &[
                ("flow", 5000.0),
                ("dose", 40.0),
                ("catch-mass", 150.0),
                ("catch-time", 60.0),
                ("feeder-setting", 40.0),
                ("purity", 95.0),
            ],
        ))
        .unwrap();
    check_listed(&out);
    let actual = 150.0 / 60.0 * 86.4 * 0.95 * 1000.0 / 5000.0;
    assert!((value_of(&out, "actual_dose") - actual).abs() < 1e-9);
    assert!((value_of(&out, "deviation") - (actual - 40.0) / 40.0 * 100.0).abs() < 1e-9);
    assert!((value_of(&out, "product_mass_rate") - 216.0).abs() < 1e-9);
    assert!((value_of(&out, "feed_mass_rate") - 205.2).abs() < 1e-9);
    assert!((value_of(&out, "suggested_feeder_setting") - 40.0 * 40.0 / actual).abs() < 1e-9);
    assert!(out.result("product_volume_rate").is_none());
    assert_eq!(out.setting.unwrap().device, Device::DryFeeder);
    // The inputs a dry product asks for: the catch, not a drawdown.
    let names: Vec<&str> = calculators()
        .inputs(find("pump-check").unwrap(), Some("hydrated-lime"))
        .iter()
        .map(|i| i.name)
        .collect();
    assert!(
        names.contains(&"catch-mass") && !names.contains(&"drawdown-volume"),
        "{names:?}"
    );
}

/// A gas feeder checked by the cylinder's scale loss: 1.2 kg lost in 2 h is 14.4 kg/d of
/// chlorine (100 % purity); over 5000 m³/d that is 2.88 mg/L.
#[test]
fn gas_feeder_scale_loss_by_hand() {
    let out = calculators()
        .compute(&request(
            "pump-check",
            Some("chlorine-gas"),
            &[
                ("flow", 5000.0),
                ("dose", 3.0),
                ("catch-mass", 1200.0),
                ("catch-time", 7200.0),
                ("feeder-setting", 50.0),
                ("purity", 100.0),
            ],
        ))
        .unwrap();
    check_listed(&out);
    assert!((value_of(&out, "actual_dose") - 2.88).abs() < 1e-9);
    assert_eq!(out.setting.unwrap().device, Device::GasFeeder);
}

// ---- Sludge: the basis of each coefficient, and the alternative ----

/// Ferric chloride, 40 mg/L as FeCl3, 8000 m³/d. Published basis bare Fe(OH)3 (1.9 × Fe):
/// 40 × 106.867/162.20 = 26.35 mg/L. Alternative, hydrated floc Fe(OH)3·3H2O (2.9 × Fe):
/// 40 × 160.91/162.20 = 39.68 mg/L (molar masses by hand from IUPAC atomic weights).
#[test]
fn ferric_sludge_names_its_basis_and_shows_the_alternative() {
    let out = calculators()
        .compute(&request(
            "sludge",
            Some("ferric-chloride"),
            &[("flow", 8000.0), ("dose", 40.0)],
        ))
        .unwrap();
    check_listed(&out);
    let primary = out.result("solids_concentration").unwrap();
    assert!(
        (primary.value - 40.0 * 106.867 / 162.204).abs() < 0.02,
        "{primary:?}"
    );
    assert_eq!(primary.basis.as_deref(), Some("Fe(OH)3"));
    let alt = out.result("alternative_solids_concentration").unwrap();
    assert!(
        (alt.value - 40.0 * 160.913 / 162.204).abs() < 0.02,
        "{alt:?}"
    );
    assert_eq!(alt.basis.as_deref(), Some("Fe(OH)3·3H2O"));
    assert!(
        (value_of(&out, "alternative_dry_solids_mass_rate") - alt.value * 8000.0 / 1000.0).abs()
            < 1e-9
    );
    assert!(has(&out, "sludge-basis") && has(&out, "sludge-basis-alternative"));
}

/// Alum: the published 0.44 × alum dose is the hydrated floc, 2 Al(OH)3·3H2O per
/// Al2(SO4)3·14H2O: 2 × 132.05 / 594.4 = 0.444 (hand). No alternative is printed for alum.
#[test]
fn alum_sludge_is_the_hydrated_floc_without_an_alternative() {
    let out = calculators()
        .compute(&request(
            "sludge",
            Some("alum-liquid"),
            &[("flow", 8000.0), ("dose", 30.0)],
        ))
        .unwrap();
    let primary = out.result("solids_concentration").unwrap();
    assert!(
        (primary.value / 30.0 - 2.0 * 132.049 / 594.4).abs() < 0.001,
        "{primary:?}"
    );
    assert_eq!(primary.basis.as_deref(), Some("Al(OH)3·3H2O"));
    assert!(out.result("alternative_solids_concentration").is_none());
}

/// The per-metal factors from molar masses against the published coefficients (references.md
/// §5, Cornwell / AWWA 1987 [M]: 1.9 × Fe, some editions 2.9 × Fe): Fe(OH)3/Fe = 1.914,
/// Fe(OH)3·3H2O/Fe = 2.881.
#[test]
fn sludge_factors_per_iron_match_the_published_pair() {
    use crate::engine::dosing::coagulation::{Coagulant, Floc, floc_per_metal};
    let c = calculators();
    let bare = floc_per_metal(c.catalog(), Coagulant::FerricChloride, Floc::Bare).unwrap();
    let hydrated = floc_per_metal(c.catalog(), Coagulant::FerricChloride, Floc::Hydrated).unwrap();
    assert!(
        (bare - 106.867 / 55.845).abs() < 1e-3 && (bare - 1.9).abs() < 0.05,
        "{bare}"
    );
    assert!(
        (hydrated - 160.913 / 55.845).abs() < 1e-3 && (hydrated - 2.9).abs() < 0.05,
        "{hydrated}"
    );
}

/// One range case: the result `id` of `r` lies in `low..=high` (each to 0.1 %), derived by hand
/// beside the case.
fn check_range(r: &Request, id: &str, value: f64, low: f64, high: f64) {
    let o = calculators().compute(r).expect("computes");
    let res = o.result(id).unwrap_or_else(|| panic!("{id} computed"));
    let close = |a: f64, b: f64| (a - b).abs() <= 1e-3 * b.abs().max(1e-9);
    assert!(
        close(res.value, value),
        "{id} = {} (want {value})",
        res.value
    );
    let range = res.range.unwrap_or_else(|| panic!("{id} has a range"));
    assert!(
        close(range.low, low) && close(range.high, high),
        "{id} range {range:?} (want {low}..{high})"
    );
}

/// The pump cross-check: 12.5 % trade hypochlorite is 125 mg/mL of available chlorine by the
/// definition of trade percent (White, Handbook of Chlorination); 140 mL in 60 s is 201,600 mL/d,
/// 25.2 kg/d, which in 9,100 m³/d is 2.7692 mg/L. Worst-case range with the default precisions
/// (flow ±2 %, column ±2 mL, stopwatch ±0.5 s): the dose goes as volume / (time × flow), so
/// the low side is 1 − (1 − 1/1.02) − 2/140 − (1 − 60/60.5) and the high side
/// 1 + (1/0.98 − 1) + 2/140 + (60/59.5 − 1).
#[test]
fn a_cross_checks_dose_carries_the_range_of_its_readings() {
    let r = request(
        "pump-check",
        Some("sodium-hypochlorite"),
        &[
            ("flow", 9100.0),
            ("dose", 3.0),
            ("drawdown-volume", 140.0),
            ("drawdown-time", 60.0),
            ("pump-setting", 24.3),
            ("strength", 12.5),
            ("specific-gravity", 1.16),
        ],
    );
    let dose = 140.0 / 60.0 * 86_400.0 * 125.0 / 9.1e6;
    let low = 1.0 - (1.0 - 1.0 / 1.02) - 2.0 / 140.0 - (1.0 - 60.0 / 60.5);
    let high = 1.0 + (1.0 / 0.98 - 1.0) + 2.0 / 140.0 + (60.0 / 59.5 - 1.0);
    check_range(&r, "actual_dose", dose, dose * low, dose * high);
    // The setting to reach 3.0 mg/L goes as 1 / dose: its range is the dose's, inverted.
    let setting = 24.3 * 3.0 / dose;
    let o = calculators().compute(&r).unwrap();
    let s = o.result("suggested_pump_setting").unwrap();
    let range = s.range.unwrap();
    assert!((s.value - setting).abs() < 1e-6 * setting);
    assert!(range.low < setting && setting < range.high);
    // The deviation is the first thing a cross-check is for: −7.69 %, printed beside its range.
    let deviation = (dose - 3.0) / 3.0 * 100.0;
    assert!((o.result("deviation").unwrap().value - deviation).abs() < 1e-6);
}

/// A site's own precision replaces the default, and a typed "± x" replaces both; a reading
/// typed as exact (± 0) gives no range. The feed rate goes as the flow, so its range is the
/// flow's relative precision.
#[test]
fn a_sites_precision_and_a_typed_tolerance_set_the_range() {
    let base = with(&LIQUID, &[("flow", 10_000.0), ("dose", 2.0)]);
    let mut r = request("feed", Some("sodium-hypochlorite"), &base);
    // 10,000 m³/d × 2 mg/L = 20 kg/d.
    check_range(&r, "feed_mass_rate", 20.0, 19.6, 20.4);
    r.precisions
        .insert(Instrument::FlowMeter, Precision::relative(1.0));
    check_range(&r, "feed_mass_rate", 20.0, 19.8, 20.2);
    r.tolerances.insert("flow", 500.0);
    check_range(&r, "feed_mass_rate", 20.0, 19.0, 21.0);
    // The dose is a target, exact: its range is itself.
    check_range(&r, "dose", 2.0, 2.0, 2.0);
    r.tolerances.insert("flow", 0.0);
    let o = calculators().compute(&r).unwrap();
    assert!(o.results.iter().all(|x| x.range.is_none()), "{o:?}");
}

/// A reading whose precision reaches an impossible value (a flow of zero) leaves the results
/// without a range and says which reading, rather than a range narrower than the truth.
#[test]
fn a_range_that_cannot_be_computed_is_said_not_narrowed() {
    let mut r = request(
        "feed",
        Some("sodium-hypochlorite"),
        &with(&LIQUID, &[("flow", 100.0), ("dose", 2.0)]),
    );
    r.tolerances.insert("flow", 150.0);
    let o = calculators()
        .compute(&r)
        .expect("the central value still computes");
    assert!(o.results.iter().all(|x| x.range.is_none()));
    let c = o
        .cautions
        .iter()
        .find(|c| c.key == "range-unavailable")
        .expect("a caution names the reading");
    assert!(
        c.params.contains(&("field".into(), "field-flow".into())),
        "{c:?}"
    );
}

/// The parameters a calculation checks, by hand from the table (pH adjustment's target pH,
/// chlorination's residual and chloramine dose, fluoridation's target and its related limits,
/// chlorine dioxide's dose), the chlorite compute checks itself and the plant path's finished
/// water.
#[test]
fn the_checked_limit_parameters_are_the_tables_and_computes() {
    let mut got = checked_limit_parameters();
    got.sort();
    let mut want = vec![
        "ph",
        "chlorine",
        "chloramines",
        "fluoride",
        "fluoride-secondary",
        "fluoride-recommended",
        "chlorine-dioxide",
        "chlorite",
        // The plant path's finished water, by hand from its check: aluminium and iron left,
        // the corrosion-control targets and the orthophosphate residual.
        "aluminium",
        "iron",
        "alkalinity",
        "calcium-hardness",
        "dic",
        "langelier-index",
        "ccpp",
        "orthophosphate",
    ];
    want.sort();
    assert_eq!(got, want);
    // Every parameter the engine's sources look a limit up by is in the list: a compute
    // function that checks a new one cannot leave it off.
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("src/engine");
    let mut stack = vec![dir];
    let mut looked_up = std::collections::BTreeSet::new();
    while let Some(dir) = stack.pop() {
        for entry in std::fs::read_dir(dir).unwrap() {
            let path = entry.unwrap().path();
            if path.is_dir() {
                stack.push(path);
                continue;
            }
            let text = std::fs::read_to_string(&path).unwrap();
            for rest in text.split("effective_limit(").skip(1) {
                let call = &rest[..rest.find(')').unwrap_or(0)];
                if let Some(lit) = call.split('"').nth(1).filter(|l| !l.is_empty()) {
                    looked_up.insert(lit.to_string());
                }
            }
        }
    }
    assert!(
        looked_up.contains("chlorite"),
        "the scan sees {looked_up:?}"
    );
    for p in &looked_up {
        assert!(got.contains(&p.as_str()), "{p} is checked but not listed");
    }
}
