//! Input validation, site profiles, catalog integrity and cautions.
//!
//! Every calculator must turn bad input (zero or negative flow, 0 % strength, impossible SG,
//! NaN) into a typed error that names the quantity, never a panic or a silent number.

use crate::support::{catalog, m};
use molefeed::engine::ErrorKind;
use molefeed::engine::dosing::catalog::{Strength, StrengthBasis};
use molefeed::engine::dosing::chlorine::{self, ChlorineInput, ContactTime, CtInput};
use molefeed::engine::dosing::feed::{self, DilutionInput, FeedInput, PumpKind, UsableRange};
use molefeed::engine::dosing::pumpcheck::{
    self, Measurement, PumpCheckInput, TankShape, Tolerance, Verdict,
};
use molefeed::engine::dosing::site::{SiteProfile, regulatory_defaults};
use molefeed::engine::dosing::units::{Flow, FlowUnit, LengthUnit, VolumeRateUnit};
use molefeed::engine::dosing::{Caution, Severity};
use molefeed::engine::precision::{Instrument, Precision};
use serde_json::json;

fn hypo(strength: f64, basis: StrengthBasis, sg: Option<f64>) -> Strength {
    Strength::new(m(strength), basis, sg.map(m))
}

fn feed_input(flow: f64, dose: f64, strength: Strength) -> FeedInput {
    FeedInput {
        flow: Flow::new(m(flow), FlowUnit::Mgd),
        dose: m(dose),
        product: "sodium-hypochlorite".into(),
        strength,
        pump: None,
        usable_range: UsableRange::default(),
        max_use_level_mg_l: None,
    }
}

fn pump_input(flow: f64, strength: Strength, ml: f64) -> PumpCheckInput {
    PumpCheckInput {
        measurement: Measurement::Drawdown {
            ml: m(ml),
            seconds: m(60.0),
        },
        flow: Flow::new(m(flow), FlowUnit::Mgd),
        product: "sodium-hypochlorite".into(),
        strength,
        target_dose: m(3.0),
        current_setting_percent: None,
        tolerance: Tolerance::default(),
    }
}

/// The one helper: a result must be an error of `kind` whose message mentions `words`.
fn check<T: std::fmt::Debug>(
    what: &str,
    r: molefeed::engine::Result<T>,
    kind: ErrorKind,
    words: &str,
) {
    let e = r.expect_err(what);
    assert_eq!(e.kind(), kind, "{what}: {e}");
    assert!(
        e.message().contains(words),
        "{what}: message '{}' lacks '{words}'",
        e.message()
    );
}

#[test]
fn bad_flows_are_rejected_by_every_calculator() {
    let c = catalog();
    let good = hypo(12.5, StrengthBasis::Trade, Some(1.16));
    for flow in [0.0, -2.5] {
        check(
            "feed",
            feed::feed(&c, &feed_input(flow, 3.0, good)),
            ErrorKind::OutOfRange,
            "flow",
        );
        check(
            "pump-check",
            pumpcheck::pump_check(&c, &pump_input(flow, good, 250.0)),
            ErrorKind::OutOfRange,
            "flow",
        );
        check(
            "ct basin",
            chlorine::ct_free_chlorine(&CtInput {
                residual: m(1.0),
                ph: 7.0,
                temperature_c: 10.0,
                contact: ContactTime::Basin {
                    volume_l: 1000.0,
                    baffling_factor: 0.5,
                    flow_l_per_min: flow,
                },
            }),
            ErrorKind::OutOfRange,
            "flow",
        );
    }
    check(
        "absurd flow",
        feed::feed(&c, &feed_input(1e9, 3.0, good)),
        ErrorKind::OutOfRange,
        "flow",
    );
    check(
        "NaN flow",
        feed::feed(&c, &feed_input(f64::NAN, 3.0, good)),
        ErrorKind::InvalidInput,
        "flow",
    );
}

#[test]
fn bad_strengths_and_specific_gravities_are_rejected() {
    let c = catalog();
    let cases: [(&str, Strength, ErrorKind, &str); 7] = [
        (
            "0 %",
            hypo(0.0, StrengthBasis::Trade, Some(1.16)),
            ErrorKind::OutOfRange,
            "strength",
        ),
        (
            "negative",
            hypo(-5.0, StrengthBasis::AvailableChlorine, Some(1.16)),
            ErrorKind::OutOfRange,
            "strength",
        ),
        (
            "over 100 %",
            hypo(120.0, StrengthBasis::AvailableChlorine, Some(1.16)),
            ErrorKind::OutOfRange,
            "strength",
        ),
        (
            "SG 0.3",
            hypo(12.5, StrengthBasis::Trade, Some(0.3)),
            ErrorKind::OutOfRange,
            "specific gravity",
        ),
        (
            "SG 2.6",
            hypo(12.5, StrengthBasis::Trade, Some(2.6)),
            ErrorKind::OutOfRange,
            "specific gravity",
        ),
        (
            // On a basis its density table does not cover (the table gives trade %), so no SG
            // can be taken from it.
            "no SG for a solution",
            hypo(10.7, StrengthBasis::AvailableChlorine, None),
            ErrorKind::InvalidInput,
            "specific gravity",
        ),
        // More available chlorine than pure NaOCl carries (95.2 %) is impossible.
        (
            "above pure NaOCl",
            hypo(97.0, StrengthBasis::AvailableChlorine, Some(1.3)),
            ErrorKind::OutOfRange,
            "available chlorine",
        ),
    ];
    for (what, s, kind, words) in cases {
        check(what, feed::feed(&c, &feed_input(2.5, 3.0, s)), kind, words);
        check(
            what,
            pumpcheck::pump_check(&c, &pump_input(2.5, s, 250.0)),
            kind,
            words,
        );
    }
    // A basis that does not fit the product.
    let alum = FeedInput {
        product: "alum-liquid".into(),
        strength: hypo(12.5, StrengthBasis::Trade, Some(1.33)),
        ..feed_input(2.5, 30.0, hypo(1.0, StrengthBasis::Weight, Some(1.0)))
    };
    check(
        "trade % on alum",
        feed::feed(&c, &alum),
        ErrorKind::InvalidInput,
        "trade",
    );
    let caustic_al = FeedInput {
        product: "sodium-hydroxide".into(),
        strength: hypo(8.0, StrengthBasis::AsAl2o3, Some(1.3)),
        ..feed_input(2.5, 10.0, hypo(1.0, StrengthBasis::Weight, Some(1.0)))
    };
    check(
        "as Al2O3 on caustic",
        feed::feed(&c, &caustic_al),
        ErrorKind::InvalidInput,
        "aluminium",
    );
    // More Al2O3 than pure alum carries. By hand: Al2(SO4)3·14H2O is 594.4 g/mol and holds one
    // Al2O3 (101.96 g/mol): 17.15 %. 48.5 % (a certificate's "% as dry alum") typed as Al2O3
    // is refused; 17.1 % is accepted (and cautioned as unusual, being far from 8.3 %).
    let alum_at = |percent: f64| FeedInput {
        product: "alum-liquid".into(),
        strength: hypo(percent, StrengthBasis::AsAl2o3, Some(1.33)),
        ..feed_input(2.5, 30.0, hypo(1.0, StrengthBasis::Weight, Some(1.0)))
    };
    check(
        "48.5 % as Al2O3 on alum",
        feed::feed(&c, &alum_at(48.5)),
        ErrorKind::OutOfRange,
        "more than pure Al2(SO4)3·14H2O carries (17.2 %)",
    );
    check(
        "17.2 % as Al2O3 on alum",
        feed::feed(&c, &alum_at(17.2)),
        ErrorKind::OutOfRange,
        "as Al2O3",
    );
    assert!(feed::feed(&c, &alum_at(17.1)).is_ok());
    assert!(feed::feed(&c, &alum_at(8.3)).is_ok());
}

#[test]
fn bad_doses_residuals_and_agents_are_rejected() {
    let c = catalog();
    let good = hypo(12.5, StrengthBasis::Trade, Some(1.16));
    check(
        "zero dose",
        feed::feed(&c, &feed_input(2.5, 0.0, good)),
        ErrorKind::OutOfRange,
        "dose",
    );
    check(
        "huge dose",
        feed::feed(&c, &feed_input(2.5, 1e7, good)),
        ErrorKind::OutOfRange,
        "dose",
    );
    check(
        "unknown product",
        feed::feed(
            &c,
            &FeedInput {
                product: "unobtainium".into(),
                ..feed_input(2.5, 3.0, good)
            },
        ),
        ErrorKind::UnknownChemical,
        "unobtainium",
    );
    check(
        "negative residual",
        chlorine::dechlorination(&c, m(-1.0), "NaHSO3"),
        ErrorKind::OutOfRange,
        "residual",
    );
    check(
        "unknown agent",
        chlorine::dechlorination(&c, m(1.0), "NaCl"),
        ErrorKind::UnknownChemical,
        "NaCl",
    );
    check(
        "negative demand",
        chlorine::chlorine_dose(
            &c,
            &ChlorineInput {
                demand: m(-1.0),
                residual: m(1.0),
                ammonia_n: None,
                residual_limit_mg_l: None,
            },
        ),
        ErrorKind::OutOfRange,
        "demand",
    );
    check(
        "pH 15",
        chlorine::ct_free_chlorine(&CtInput {
            residual: m(1.0),
            ph: 15.0,
            temperature_c: 10.0,
            contact: ContactTime::T10Minutes(30.0),
        }),
        ErrorKind::OutOfRange,
        "pH",
    );
    check(
        "baffling 1.5",
        chlorine::ct_free_chlorine(&CtInput {
            residual: m(1.0),
            ph: 7.0,
            temperature_c: 10.0,
            contact: ContactTime::Basin {
                volume_l: 1000.0,
                baffling_factor: 1.5,
                flow_l_per_min: 10.0,
            },
        }),
        ErrorKind::OutOfRange,
        "baffling",
    );
    check(
        "ratio 0",
        chlorine::chloramination(&c, m(4.0), m(0.0)),
        ErrorKind::OutOfRange,
        "ratio",
    );
}

#[test]
fn pump_settings_and_turndown_cautions() {
    let c = catalog();
    let good = hypo(12.5, StrengthBasis::Trade, Some(1.16));
    let with_pump = |flow: f64, capacity: f64| {
        feed::feed(
            &c,
            &FeedInput {
                pump: Some(PumpKind::Metering {
                    capacity,
                    unit: VolumeRateUnit::Gph,
                }),
                ..feed_input(flow, 3.0, good)
            },
        )
        .unwrap()
    };
    let has = |r: &feed::FeedResult, key: &str| r.cautions.iter().any(|c| c.key == key);
    // 2.5 gph needed: 25 % of 10 gph is inside the band; 5 % of 50 gph below; 250 % of 1 gph over.
    let mid = with_pump(2.5, 10.0);
    assert!(mid.pump.as_ref().unwrap().within_usable_range);
    assert!(!has(&mid, "pump-below-usable-range"));
    let low = with_pump(2.5, 50.0);
    assert!(has(&low, "pump-below-usable-range"));
    let low_pump = low.pump.unwrap();
    // Below the band, stroke and speed share the turndown: their product is the setting.
    let (st, sp) = (
        low_pump.stroke_percent.unwrap(),
        low_pump.speed_percent.unwrap(),
    );
    assert!((st * sp / 100.0 - low_pump.percent).abs() < 1e-9);
    let over = with_pump(2.5, 1.0);
    assert!(has(&over, "pump-over-capacity"));
    assert!(
        over.cautions
            .iter()
            .any(|c| c.severity == Severity::Danger && c.key == "pump-over-capacity")
    );
    let tiny = with_pump(0.05, 50.0);
    assert!(has(&tiny, "setting-fraction-of-percent"));
    // A dry feeder cannot feed a solution.
    let wrong = feed::feed(
        &c,
        &FeedInput {
            pump: Some(PumpKind::DryFeeder {
                capacity: 100.0,
                unit: molefeed::engine::dosing::units::MassRateUnit::LbPerDay,
            }),
            ..feed_input(2.5, 3.0, good)
        },
    );
    check(
        "dry feeder on hypochlorite",
        wrong,
        ErrorKind::InvalidInput,
        "feeder",
    );
}

#[test]
fn every_result_carries_the_advisory_note_last() {
    let c = catalog();
    let good = hypo(12.5, StrengthBasis::Trade, Some(1.16));
    let lists: Vec<Vec<Caution>> = vec![
        feed::feed(&c, &feed_input(2.5, 3.0, good))
            .unwrap()
            .cautions,
        pumpcheck::pump_check(&c, &pump_input(2.5, good, 150.0))
            .unwrap()
            .cautions,
        chlorine::dechlorination(&c, m(1.0), "SO2")
            .unwrap()
            .cautions,
        chlorine::chloramination(&c, m(4.0), m(4.0))
            .unwrap()
            .cautions,
    ];
    for list in lists {
        assert_eq!(list.last().unwrap().key, "advisory-operator-decides");
        assert_eq!(
            list.iter()
                .filter(|c| c.key == "advisory-operator-decides")
                .count(),
            1
        );
        // What must be acted on first (limits, cross-check, process, handling), the most
        // severe first within each.
        assert!(list.windows(2).all(|w| {
            let order =
                |c: &molefeed::engine::dosing::Caution| (c.topic(), std::cmp::Reverse(c.severity));
            order(&w[0]) <= order(&w[1]) || w[1].key == "advisory-operator-decides"
        }));
    }
}

#[test]
fn hypochlorite_carries_the_acid_incompatibility() {
    let c = catalog();
    let r = feed::feed(
        &c,
        &feed_input(2.5, 3.0, hypo(12.5, StrengthBasis::Trade, Some(1.16))),
    )
    .unwrap();
    let acid = r
        .cautions
        .iter()
        .find(|c| c.key == "incompatible-acid-hypochlorite-chlorine-gas")
        .unwrap();
    assert_eq!(acid.severity, Severity::Danger);
    assert_eq!(acid.param("product"), Some("sodium-hypochlorite"));
}

#[test]
fn max_use_level_and_unusual_strength_are_flagged() {
    let c = catalog();
    let mut input = feed_input(2.5, 3.0, hypo(12.5, StrengthBasis::Trade, Some(1.16)));
    input.max_use_level_mg_l = Some(10.0);
    let r = feed::feed(&c, &input).unwrap();
    // 3 mg/L Cl2 of 12.5 trade % at SG 1.16 is about 27.8 mg/L of product (> 10).
    assert!(
        (r.product_mg_l - 3.0 / 125.0 * 1160.0).abs() < 0.01,
        "{}",
        r.product_mg_l
    );
    assert!(
        r.cautions
            .iter()
            .any(|c| c.key == "dose-above-max-use-level")
    );
    let odd = feed::feed(
        &c,
        &feed_input(2.5, 3.0, hypo(1.25, StrengthBasis::Trade, Some(1.02))),
    )
    .unwrap();
    assert!(odd.cautions.iter().any(|c| c.key == "strength-unusual"));
    let normal = feed::feed(
        &c,
        &feed_input(2.5, 3.0, hypo(12.5, StrengthBasis::Trade, Some(1.16))),
    )
    .unwrap();
    assert!(!normal.cautions.iter().any(|c| c.key == "strength-unusual"));
}

#[test]
fn pump_check_verdicts() {
    let c = catalog();
    let good = hypo(12.5, StrengthBasis::Trade, Some(1.16));
    // Target 3.0 mg/L at 2.5 MGD needs 227.1 L/d = 157.7 mL/min (see dosing_reference).
    let need_ml_per_min = 2.5 * 3.0 * 3.785411784e6 / (125.0 * 1440.0);
    for (factor, verdict) in [
        (1.0, Verdict::WithinTolerance),
        (1.04, Verdict::WithinTolerance),
        (0.9, Verdict::Adjust),
        (1.2, Verdict::Adjust),
        (1.5, Verdict::CheckPump),
        (0.5, Verdict::CheckPump),
    ] {
        let r =
            pumpcheck::pump_check(&c, &pump_input(2.5, good, need_ml_per_min * factor)).unwrap();
        assert_eq!(r.verdict, verdict, "factor {factor}");
        assert!(
            (r.deviation_percent - (factor - 1.0) * 100.0).abs() < 1e-6,
            "factor {factor}"
        );
        assert!((r.actual_dose_mg_l - 3.0 * factor).abs() < 1e-9);
    }
    // The setting suggested from the one during the test, by proportion: none where the pump
    // must be checked first; held to the 10–90 % band a metering pump is accurate in.
    let at = |factor: f64, setting: f64| {
        let input = PumpCheckInput {
            current_setting_percent: Some(setting),
            ..pump_input(2.5, good, need_ml_per_min * factor)
        };
        pumpcheck::pump_check(&c, &input).unwrap()
    };
    let keys = |r: &pumpcheck::PumpCheckResult| -> Vec<String> {
        r.cautions.iter().map(|c| c.key.clone()).collect()
    };
    let r = at(0.5, 40.0);
    assert_eq!(r.suggested_setting_percent, None, "check the pump first");
    assert!(keys(&r).contains(&"pump-check-inspect".to_string()));
    // 85 % delivering 90 %: 85 / 0.9 = 94.4 %, above the 90 % band.
    let r = at(0.9, 85.0);
    assert!((r.suggested_setting_percent.unwrap() - 85.0 / 0.9).abs() < 1e-9);
    assert!(
        keys(&r).contains(&"pump-above-usable-range".to_string()),
        "{:?}",
        keys(&r)
    );
    // 12 % delivering 90 %: 13.3 %, inside it.
    let r = at(0.9, 12.0);
    assert!(
        !keys(&r).iter().any(|k| k.contains("usable-range")),
        "{:?}",
        keys(&r)
    );
    // Tank drop: a 4 ft vertical cylinder dropping 1 in over 60 min.
    let tank = PumpCheckInput {
        measurement: Measurement::TankDrop {
            shape: TankShape::VerticalCylinder { diameter: 4.0 },
            drop: m(1.0 / 12.0),
            unit: LengthUnit::Ft,
            minutes: m(60.0),
        },
        ..pump_input(2.5, good, 1.0)
    };
    let r = pumpcheck::pump_check(&c, &tank).unwrap();
    // π/4 × 4² ft² × 1/12 ft = 1.0472 ft³ = 7.834 gal/h (1 ft³ = 7.48052 gal, exact by definition).
    let gal_per_h = std::f64::consts::PI / 4.0 * 16.0 / 12.0 * 7.480519;
    assert!(
        (r.product_l_per_day.unwrap() - gal_per_h * 24.0 * 3.785411784).abs() < 0.01,
        "{:?}",
        r.product_l_per_day
    );
    // Catch test: grams ÷ SG = mL.
    let catch = PumpCheckInput {
        measurement: Measurement::Catch {
            grams: m(116.0),
            seconds: m(60.0),
        },
        ..pump_input(2.5, good, 1.0)
    };
    let r = pumpcheck::pump_check(&c, &catch).unwrap();
    assert!((r.product_l_per_day.unwrap() - 100.0 / 60.0 * 86.4).abs() < 1e-9);
}

#[test]
fn day_tank_dilution() {
    let c = catalog();
    // 12.5 trade % (125 g/L) down to 1.0 trade % (10 g/L) in 100 L: 8 L concentrate. Water by
    // mass (hand balance): 100 L × 1.01 − 8 L × 1.16 = 101 − 9.28 = 91.72 kg, so 91.72 L.
    let r = feed::dilution(
        &c,
        &DilutionInput {
            product: "sodium-hypochlorite".into(),
            concentrate: hypo(12.5, StrengthBasis::Trade, Some(1.16)),
            target: hypo(1.0, StrengthBasis::Trade, Some(1.01)),
            final_volume_l: 100.0,
        },
    )
    .unwrap();
    assert!((r.concentrate_l - 8.0).abs() < 1e-9, "{}", r.concentrate_l);
    assert!((r.water_l - 91.72).abs() < 1e-9, "{}", r.water_l);
    assert!(r.cautions.iter().any(|c| c.key == "add-chemical-to-water"));
    // Mixed bases are put on one g/L basis first: 50 % NaOH SG 1.52 = 760 g/L; 25 % SG 1.27 = 317.5 g/L.
    let naoh = feed::dilution(
        &c,
        &DilutionInput {
            product: "sodium-hydroxide".into(),
            concentrate: Strength::new(m(50.0), StrengthBasis::Weight, Some(m(1.52))),
            target: Strength::new(m(25.0), StrengthBasis::Weight, Some(m(1.27))),
            final_volume_l: 1000.0,
        },
    )
    .unwrap();
    assert!((naoh.concentrate_g_per_l - 760.0).abs() < 1e-9);
    assert!((naoh.concentrate_l - 1000.0 * 317.5 / 760.0).abs() < 1e-9);
    // Volumes are not additive: by mass, 1000 L × 1.27 = 1270 kg of batch holds 317.5 kg NaOH,
    // so 635 kg of 50 % concentrate, and 1270 − 635 = 635 kg (L) of water, not 1000 − 417.8.
    assert!((naoh.water_l - 635.0).abs() < 1e-9, "{}", naoh.water_l);
    let up = feed::dilution(
        &c,
        &DilutionInput {
            product: "sodium-hypochlorite".into(),
            concentrate: hypo(5.0, StrengthBasis::Trade, Some(1.07)),
            target: hypo(12.5, StrengthBasis::Trade, Some(1.16)),
            final_volume_l: 100.0,
        },
    );
    check(
        "cannot concentrate by dilution",
        up,
        ErrorKind::Unreachable,
        "not weaker",
    );
}

#[test]
fn a_reaction_is_written_once_across_the_data_files() {
    let shipped = catalog();
    // The three the dosing calculators share with the chemistry core come from its file.
    for id in [
        "monochloramine-formation",
        "ferric-chloride-bicarbonate",
        "quicklime-slaking",
    ] {
        shipped.reaction(id).unwrap();
    }
    // The same equation under a second id, or a second entry under an id, is refused.
    let mut repeated = shipped.clone();
    let mut copy = repeated.reaction_entry("breakpoint").unwrap().clone();
    copy.id = "breakpoint-again".into();
    copy.equation = "HOCl + NH3 -> N2 + HCl + H2O".into();
    repeated.reactions.push(copy);
    let err = repeated.validate().unwrap_err();
    assert_eq!(err.param("reaction"), Some("breakpoint-again"), "{err}");
    let mut same_id = shipped.clone();
    let mut other = same_id.reaction_entry("quicklime-slaking").unwrap().clone();
    other.equation = "CaO + CO2 -> CaCO3".into();
    same_id.reactions.push(other);
    assert!(same_id.validate().is_err());
}

#[test]
fn a_reaction_asked_for_again_is_the_one_its_equation_balances_to_now() {
    use molefeed::engine::reaction::Reaction;
    let mut c = catalog();
    let ids: Vec<String> = c.reactions.iter().map(|r| r.id.clone()).collect();
    for id in &ids {
        let equation = c.reaction_entry(id).unwrap().equation.clone();
        let fresh = Reaction::balance(&equation).unwrap().to_string();
        // The first ask balances and keeps it; the second reads what was kept.
        assert_eq!(c.reaction(id).unwrap().to_string(), fresh, "{id}");
        assert_eq!(c.reaction(id).unwrap().to_string(), fresh, "{id} again");
    }
    let rewrite = |c: &mut molefeed::engine::dosing::catalog::Catalog, id: &str, equation: &str| {
        let entry = c.reactions.iter_mut().find(|r| r.id == id).unwrap();
        entry.equation = equation.into();
    };
    // An equation changed after its reaction was kept is balanced afresh, never the old one.
    rewrite(&mut c, "quicklime-slaking", "CaO + CO2 -> CaCO3");
    assert_eq!(
        c.reaction("quicklime-slaking").unwrap().to_string(),
        Reaction::balance("CaO + CO2 -> CaCO3").unwrap().to_string()
    );
    // An entry that does not balance says so every time it is asked for.
    rewrite(&mut c, "breakpoint", "HOCl -> NH3");
    assert!(c.reaction("breakpoint").is_err());
    assert!(c.reaction("breakpoint").is_err());
    assert!(c.reaction("no-such-reaction").is_err());
}

#[test]
fn catalog_and_demo_site_are_valid() {
    let c = catalog();
    c.validate().unwrap();
    assert!(c.products.len() >= 20);
    for p in &c.products {
        assert!(!p.strengths.is_empty(), "{}", p.id);
        for s in &p.strengths {
            assert!(
                !s.source.trim().is_empty(),
                "{} strength needs a source",
                p.id
            );
        }
    }
    for r in &c.reactions {
        assert!(!r.source.trim().is_empty(), "{} needs a source", r.id);
    }
    let site = SiteProfile::demo(&c).unwrap();
    assert!(site.name.contains("demo"));
    assert_eq!(site.effective_limit("chlorine").unwrap().max, Some(4.0));
    // The plant's aluminium permit (0.1) overrides the SMCL default (0.2).
    assert_eq!(site.effective_limit("aluminium").unwrap().max, Some(0.1));
    // Defaults apply where the plant entered nothing; each names its source.
    assert_eq!(
        site.effective_limit("chlorine-dioxide").unwrap().max,
        Some(0.8)
    );
    assert!(
        regulatory_defaults()
            .iter()
            .all(|l| l.source.contains("CFR") || l.source.contains("Public Health Service"))
    );
    // The typical flow converts through exact definitions: 2.4 MGD = 2.4e6 gal/d × 3.785411784 L/gal.
    let typical = site.typical_flow.expect("demo has a typical flow");
    assert!((typical.m3_per_day().unwrap() - 2.4e6 * 3.785411784 / 1000.0).abs() < 1e-6);
    // The demo plant's bench photometer is better than a pocket kit; its other instruments
    // keep the defaults.
    let precisions = site.precisions();
    assert_eq!(
        precisions.get(&Instrument::Colorimeter),
        Some(&Precision {
            absolute: 0.02,
            relative_percent: 3.0
        })
    );
    assert_eq!(precisions.len(), 1);
    // Round trip through JSON.
    let again = SiteProfile::from_json(&site.to_json().unwrap(), &c).unwrap();
    assert_eq!(again, site);
}

#[test]
fn broken_site_profiles_are_typed_errors() {
    let c = catalog();
    let demo = serde_json::to_value(SiteProfile::demo(&c).unwrap()).unwrap();
    let edit = |f: &dyn Fn(&mut serde_json::Value)| {
        let mut v = demo.clone();
        f(&mut v);
        SiteProfile::from_json(&v.to_string(), &c)
    };
    check(
        "not JSON",
        SiteProfile::from_json("{", &c),
        ErrorKind::Syntax,
        "site profile",
    );
    check(
        "SG 3",
        edit(&|v| v["products"][0]["sg"] = 3.0.into()),
        ErrorKind::OutOfRange,
        "specific gravity",
    );
    // The demo's 25 % caustic with the SG of water: 1.274 expected (CRC Handbook, in the
    // catalog's density table), 21 % off.
    check(
        "caustic 25 % at SG 1.0",
        edit(&|v| v["products"][2]["sg"] = 1.0.into()),
        ErrorKind::OutOfRange,
        "does not belong",
    );
    check(
        "0 % strength",
        edit(&|v| v["products"][0]["strength"] = 0.0.into()),
        ErrorKind::OutOfRange,
        "strength",
    );
    check(
        "unknown product",
        edit(&|v| v["products"][0]["product"] = "mystery".into()),
        ErrorKind::UnknownChemical,
        "mystery",
    );
    check(
        "pump without product",
        edit(&|v| v["pumps"][0]["product"] = "nothing".into()),
        ErrorKind::UnknownChemical,
        "nothing",
    );
    check(
        "duplicate id",
        edit(&|v| v["pumps"][1]["id"] = v["pumps"][0]["id"].clone()),
        ErrorKind::InvalidInput,
        "twice",
    );
    check(
        "baffling 2",
        edit(&|v| v["contact_basins"][0]["baffling_factor"] = 2.0.into()),
        ErrorKind::OutOfRange,
        "baffling",
    );
    check(
        "unknown instrument",
        edit(&|v| v["instrument_precision"]["sundial"] = json!({"absolute": 1.0})),
        ErrorKind::InvalidInput,
        "sundial",
    );
    check(
        "negative precision",
        edit(&|v| v["instrument_precision"]["ph-meter"] = json!({"absolute": -0.1})),
        ErrorKind::InvalidInput,
        "ph-meter",
    );
    check(
        "limit min > max",
        edit(&|v| {
            v["limits"][0]["min"] = 5.0.into();
            v["limits"][0]["max"] = 1.0.into();
        }),
        ErrorKind::InvalidInput,
        "minimum above maximum",
    );
    check(
        "dry feeder on liquid",
        edit(&|v| v["pumps"][3]["product"] = "hypo-bulk".into()),
        ErrorKind::InvalidInput,
        "cannot feed",
    );
    check(
        "duplicate tap id",
        edit(&|v| v["sampling_taps"][1]["id"] = v["sampling_taps"][0]["id"].clone()),
        ErrorKind::InvalidInput,
        "tap id",
    );
    check(
        "zero typical flow",
        edit(&|v| v["typical_flow"]["value"] = 0.0.into()),
        ErrorKind::OutOfRange,
        "flow",
    );
}

#[test]
fn every_caution_key_is_documented() {
    let notes = include_str!("../../docs/dosing-notes.md");
    let c = catalog();
    let mut keys: Vec<String> = c
        .products
        .iter()
        .flat_map(|p| p.hazards.iter().chain(&p.incompatibilities).cloned())
        .collect();
    keys.extend(c.products.iter().map(|p| p.name_key.clone()));
    // Keys emitted from code: found by scanning the engine sources for Caution constructors.
    for src in [
        include_str!("../../src/engine/dosing/feed.rs"),
        include_str!("../../src/engine/dosing/chlorine.rs"),
        include_str!("../../src/engine/dosing/coagulation.rs"),
        include_str!("../../src/engine/dosing/softening.rs"),
        include_str!("../../src/engine/dosing/pumpcheck.rs"),
        include_str!("../../src/engine/dosing/caution.rs"),
        include_str!("../../src/engine/dosing/catalog.rs"),
        include_str!("../../src/engine/dosing/site.rs"),
        include_str!("../../src/engine/dosing/waterside.rs"),
        include_str!("../../src/engine/dosing/neutralization.rs"),
    ] {
        for part in src.split("Caution::").skip(1) {
            if let Some(rest) = part.split_once("(\"") {
                let key = rest.1.split('"').next().unwrap();
                if rest.0.len() <= 8 {
                    keys.push(key.to_string());
                }
            }
        }
    }
    keys.sort();
    keys.dedup();
    assert!(keys.len() > 40, "scanned only {} keys", keys.len());
    for k in keys {
        assert!(
            notes.contains(&format!("`{k}`")),
            "caution key {k} is not in docs/dosing-notes.md"
        );
    }
}
