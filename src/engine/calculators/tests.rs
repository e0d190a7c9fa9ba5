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
            ("residual-target", 1.0),
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
            ("residual-target", 5.0),
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
    assert_eq!(breach.param("field"), Some("field-residual-target"));
    // A plant's own, stricter entry wins over the default.
    let mut own = regulatory_defaults()
        .into_iter()
        .find(|l| l.parameter == "chlorine")
        .unwrap();
    own.max = Some(2.5);
    own.source = "plant permit".into();
    r.limits = vec![own];
    r.values.insert("residual-target", 3.0);
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
                ("ph-raw", 6.8),
                ("ph-target", 7.8),
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
/// 12.5 kg of it, so 10 L of the concentrate and 90 L of water (trade % is per volume).
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
                // About the SG of a 1.25 trade % solution (common practice; the volumes do not
                // depend on it for a strength per volume).
                ("target-specific-gravity", 1.02),
                ("final-volume", 100.0),
            ],
        ))
        .unwrap();
    check_listed(&out);
    assert!((out.result("concentrate_volume").unwrap().value - 10.0).abs() < 1e-9);
    assert!((out.result("water_volume").unwrap().value - 90.0).abs() < 1e-9);
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
