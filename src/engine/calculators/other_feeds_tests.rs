//! Tests of the plant's other feeds (part A): fluoridation, corrosion inhibitor, permanganate
//! and chlorine dioxide, through the table's real path (`Calculators::compute`).
//!
//! Design choice: every expected number is worked by hand beside its case from IUPAC standard
//! atomic weights (H 1.008, C 12.011, O 15.999, F 18.998403, Na 22.989770, Si 28.085,
//! P 30.973762, Cl 35.45, K 39.0983, Mn 54.938043, Fe 55.845) and the balanced reaction, and
//! the published ratios (references.md section 9) are compared separately, with a looser
//! tolerance, so a wrong formula and a rounded handbook figure cannot hide each other. One
//! case per calculator also compares with a direct call of the dosing engine's feed.

use super::*;
use crate::engine::dosing::catalog::{Strength, StrengthBasis};
use crate::engine::dosing::feed::{FeedInput, PumpKind, UsableRange, feed};
use crate::engine::dosing::site::Limit;
use crate::engine::dosing::units::{Flow, FlowUnit, VolumeRateUnit};
use crate::engine::sigfig::Measured;

/// 10 000 m³/d: an invented plant's flow.
const FLOW: f64 = 10_000.0;

fn calculators() -> Calculators {
    Calculators::new().expect("built-in catalog")
}

fn request(
    id: &str,
    mode: Option<&'static str>,
    product: &str,
    values: &[(&'static str, f64)],
) -> Request {
    let mut r = Request::new(find(id).expect("calculator in the table"));
    r.mode = mode;
    r.product = Some(product.into());
    r.values = values.iter().copied().collect();
    r.values.insert("flow", FLOW);
    r
}

fn got(out: &Outcome, id: &str) -> f64 {
    out.result(id)
        .unwrap_or_else(|| panic!("{}: no {id}", out.calculator))
        .value
}

fn has(out: &Outcome, key: &str) -> bool {
    out.cautions.iter().any(|c| c.key == key)
}

/// One case: a result id and its value worked by hand, within a relative tolerance.
struct Case {
    label: &'static str,
    id: &'static str,
    value: f64,
    within: f64,
}

fn check(out: &Outcome, cases: &[Case]) {
    for c in cases {
        let v = got(out, c.id);
        assert!(
            ((v - c.value) / c.value).abs() <= c.within,
            "{}: {} = {v}, expected {} (±{} relative)",
            c.label,
            c.id,
            c.value,
            c.within
        );
    }
    // The table tells the truth about what a calculator returns.
    let calc = find(out.calculator).unwrap();
    for r in &out.results {
        let spec = calc.results.iter().find(|s| s.id == r.id);
        assert!(spec.is_some(), "{}: {} not in the table", calc.id, r.id);
        assert_eq!(spec.unwrap().quantity, r.quantity, "{}", r.id);
        assert!(
            r.basis.is_some() || r.quantity == Quantity::Percent,
            "{}",
            r.id
        );
    }
}

const HAND: f64 = 2e-4;

// ---- Fluoridation ----

/// Available fluoride fractions by hand: H2SiF6 = 6 × 18.998403 / 144.0914 = 0.79110,
/// Na2SiF6 = 113.9904 / 188.0550 = 0.60616, NaF = 18.998403 / 41.98817 = 0.45247. The trade's
/// tables quote 0.792, 0.607 and 0.452 (references.md section 9, from memory): compared within
/// 0.002. At 100 % purity the fraction is the F fed per product fed.
#[test]
fn available_fluoride_comes_from_the_formula() {
    let c = calculators();
    for (product, hand, published) in [
        ("sodium-fluorosilicate", 0.60616, 0.607),
        ("sodium-fluoride", 0.45247, 0.452),
    ] {
        let out = c
            .compute(&request(
                "fluoridation",
                None,
                product,
                &[
                    ("target-fluoride", 0.7),
                    ("natural-fluoride", 0.2),
                    ("purity", 100.0),
                    ("dry-feeder-capacity", 100.0),
                ],
            ))
            .unwrap();
        let fraction = got(&out, "feed_mass_rate") / got(&out, "product_mass_rate");
        assert!(
            (fraction / hand - 1.0).abs() < HAND,
            "{product}: {fraction}"
        );
        assert!(
            (fraction - published).abs() < 0.002,
            "{product}: {fraction}"
        );
    }
}

/// 0.7 mg/L target, 0.2 natural: 0.5 mg/L as F × 10 000 m³/d = 5.00 kg/d F; as 23 % H2SiF6 at
/// SG 1.19: 5.00 / 0.79110 / 0.23 = 27.48 kg/d, / 1.19 / 24 = 0.9621 L/h, on a 5 L/h pump
/// 19.24 %.
#[test]
fn fluorosilicic_acid_feed_by_hand() {
    let out = calculators()
        .compute(&request(
            "fluoridation",
            None,
            "fluorosilicic-acid",
            &[
                ("target-fluoride", 0.7),
                ("natural-fluoride", 0.2),
                ("strength", 23.0),
                ("specific-gravity", 1.19),
                ("pump-capacity", 5.0),
            ],
        ))
        .unwrap();
    let v = |label, id, value| Case {
        label,
        id,
        value,
        within: HAND,
    };
    check(
        &out,
        &[
            v("target less natural", "fluoride_added", 0.5),
            v("0.5 mg/L × 10 000 m³/d", "feed_mass_rate", 5.0),
            v("5.00 / 0.79110 / 0.23", "product_mass_rate", 27.480),
            v("27.480 / 1.19 / 24", "product_volume_rate", 0.96218),
            v("0.96218 / 5 L/h", "pump_setting", 19.244),
        ],
    );
    assert_eq!(
        out.result("fluoride_added").unwrap().basis.as_deref(),
        Some("F")
    );
    // The feed's dose (card, log, monthly report) and the named id are the same number.
    assert_eq!(got(&out, "dose"), got(&out, "fluoride_added"));
    assert_eq!(out.result("dose").unwrap().basis.as_deref(), Some("F"));
    assert!(has(&out, "fluoride-feed-interlock"));
    assert!(has(&out, "hazard-fluoride-acid"), "acid handling");
    assert!(
        has(&out, "water-effect-not-available"),
        "no pH after is faked"
    );
    assert!(out.result("ph_after").is_none());
    assert!(
        !has(&out, "site-limit-above"),
        "0.7 is at the recommendation"
    );
}

/// The same dose through the dosing engine's feed directly: the table adds nothing.
#[test]
fn fluoridation_is_the_engines_feed_of_the_fluoride_added() {
    let c = calculators();
    let out = c
        .compute(&request(
            "fluoridation",
            None,
            "fluorosilicic-acid",
            &[
                ("target-fluoride", 1.0),
                ("natural-fluoride", 0.3),
                ("strength", 25.0),
                ("specific-gravity", 1.21),
                ("pump-capacity", 10.0),
            ],
        ))
        .unwrap();
    let direct = feed(
        c.catalog(),
        &FeedInput {
            flow: Flow::new(Measured::exact(FLOW), FlowUnit::M3d),
            dose: Measured::exact(1.0 - 0.3),
            product: "fluorosilicic-acid".into(),
            strength: Strength::new(
                Measured::exact(25.0),
                StrengthBasis::Weight,
                Some(Measured::exact(1.21)),
            ),
            pump: Some(PumpKind::Metering {
                capacity: 10.0,
                unit: VolumeRateUnit::Lph,
            }),
            usable_range: UsableRange::default(),
            max_use_level_mg_l: None,
        },
    )
    .unwrap();
    assert!((got(&out, "product_mass_rate") - direct.product_kg_per_day).abs() < 1e-9);
    assert!((got(&out, "pump_setting") - direct.pump.unwrap().percent).abs() < 1e-9);
}

/// Each target is held to the first fluoride limit it passes, with that limit's source: the
/// EPA MCL 4.0, the SMCL 2.0, the US PHS (2015) recommendation 0.7; a plant's own entry wins.
#[test]
fn fluoride_targets_meet_the_mcl_the_smcl_and_the_recommendation() {
    let c = calculators();
    let run = |target: f64, limits: Vec<Limit>| {
        let mut r = request(
            "fluoridation",
            None,
            "sodium-fluoride",
            &[
                ("target-fluoride", target),
                ("natural-fluoride", 0.1),
                ("purity", 98.0),
                ("dry-feeder-capacity", 200.0),
            ],
        );
        r.limits = limits;
        c.compute(&r).unwrap()
    };
    // Beyond the MCL a danger; beyond the secondary standard or the recommendation, which no
    // rule enforces, a warning.
    for (target, limit, source, severity) in [
        (
            0.9,
            Some("0.700"),
            "Public Health Service",
            Severity::Warning,
        ),
        (2.5, Some("2.00"), "143.3", Severity::Warning),
        (4.5, Some("4.00"), "141.62", Severity::Danger),
        (0.7, None, "", Severity::Info),
    ] {
        let out = run(target, Vec::new());
        let caution = out.cautions.iter().find(|c| c.key == "site-limit-above");
        match limit {
            None => assert!(caution.is_none(), "{target}"),
            Some(limit) => {
                let caution = caution.unwrap_or_else(|| panic!("{target}: no caution"));
                let param = |name: &str| {
                    caution
                        .params
                        .iter()
                        .find(|(k, _)| k == name)
                        .map(|(_, v)| v.to_string())
                        .unwrap_or_default()
                };
                assert!(param("limit").contains(limit), "{target}: {caution:?}");
                assert!(param("source").contains(source), "{target}: {caution:?}");
                assert_eq!(caution.severity, severity, "{target}");
            }
        }
    }
    // A plant that sets its own recommended level above 0.9.
    let own = Limit {
        parameter: "fluoride-recommended".into(),
        min: None,
        max: Some(1.0),
        unit: "mg/L as F".into(),
        source: "plant procedure".into(),
        enforceable: false,
    };
    assert!(!has(&run(0.9, vec![own]), "site-limit-above"));
}

/// Overfeed guard: 0.5 mg/L added on a pump run at 5 % would give 0.2 + 0.5 × 100 / 5 = 10.2
/// mg/L at full scale, above the MCL 4.0.
#[test]
fn a_pump_that_can_overfeed_at_full_scale_is_named() {
    let c = calculators();
    let run = |capacity: f64| {
        c.compute(&request(
            "fluoridation",
            None,
            "fluorosilicic-acid",
            &[
                ("target-fluoride", 0.7),
                ("natural-fluoride", 0.2),
                ("strength", 23.0),
                ("specific-gravity", 1.19),
                ("pump-capacity", capacity),
            ],
        ))
        .unwrap()
    };
    // 0.96218 L/h is 5 % of 19.24 L/h.
    let big = run(0.96218 / 0.05);
    assert!(
        has(&big, "fluoride-full-scale-above-limit"),
        "{:?}",
        big.cautions
    );
    // At 19.24 % of 5 L/h the full scale gives 0.2 + 2.6 = 2.8 mg/L: below 4.0.
    assert!(!has(&run(5.0), "fluoride-full-scale-above-limit"));
}

#[test]
fn water_already_at_the_fluoride_target_feeds_nothing() {
    let out = calculators()
        .compute(&request(
            "fluoridation",
            None,
            "sodium-fluoride",
            &[
                ("target-fluoride", 0.7),
                ("natural-fluoride", 0.9),
                ("purity", 98.0),
                ("dry-feeder-capacity", 200.0),
            ],
        ))
        .unwrap();
    assert_eq!(got(&out, "fluoride_added"), 0.0);
    assert_eq!(got(&out, "dose"), 0.0);
    assert!(out.result("feeder_setting").is_none() && out.setting.is_none());
    assert!(has(&out, "water-already-at-target"));
}

// ---- Corrosion inhibitor ----

/// mg/L as PO4 per mg/L as P = 94.96976 / 30.97376 = 3.06613 and per mg/L as P2O5 = 2 ×
/// 94.96976 / 141.94252 = 1.33814 by hand; references.md section 9 quotes 3.066 and 1.338.
/// 1.0 target, 0.2 present on each basis: 0.8 × the factor as PO4.
#[test]
fn phosphate_residual_bases_convert_through_the_formulas() {
    let c = calculators();
    for (mode, hand, published) in [
        ("residual-as-po4", 1.0, 1.0),
        ("residual-as-p", 3.06613, 3.066),
        ("residual-as-p2o5", 1.33814, 1.338),
    ] {
        let out = c
            .compute(&request(
                "corrosion-inhibitor",
                Some(mode),
                "phosphoric-acid",
                &[
                    ("target-residual", 1.0),
                    ("present-residual", 0.2),
                    ("strength", 75.0),
                    ("specific-gravity", 1.58),
                    ("pump-capacity", 5.0),
                ],
            ))
            .unwrap();
        let factor = got(&out, "dose_as_po4") / 0.8;
        assert!((factor / hand - 1.0).abs() < HAND, "{mode}: {factor}");
        assert!((factor - published).abs() < 0.001, "{mode}: {factor}");
        // Phosphoric acid is all orthophosphate by its formula.
        assert_eq!(got(&out, "orthophosphate_as_po4"), got(&out, "dose_as_po4"));
        assert!(has(&out, "water-effect-not-available") && out.result("ph_after").is_none());
    }
}

/// 2.0 mg/L as PO4 from 75 % H3PO4 at SG 1.58: 20.0 kg/d PO4 × 97.9952 / 94.96976 =
/// 20.637 kg/d H3PO4, / 0.75 = 27.516 kg/d, / 1.58 / 24 = 0.72563 L/h.
#[test]
fn phosphoric_acid_feed_by_hand() {
    let out = calculators()
        .compute(&request(
            "corrosion-inhibitor",
            Some("residual-as-po4"),
            "phosphoric-acid",
            &[
                ("target-residual", 2.0),
                ("present-residual", 0.0),
                ("strength", 75.0),
                ("specific-gravity", 1.58),
                ("pump-capacity", 5.0),
            ],
        ))
        .unwrap();
    let v = |label, id, value| Case {
        label,
        id,
        value,
        within: HAND,
    };
    check(
        &out,
        &[
            v("2.0 mg/L × 10 000 m³/d", "feed_mass_rate", 20.0),
            v("20.637 / 0.75", "product_mass_rate", 27.516),
            v("27.516 / 1.58 / 24", "product_volume_rate", 0.72563),
        ],
    );
}

/// A blend's orthophosphate share is its data sheet's: refused without it, applied with it
/// (60 % of 1.5 mg/L as PO4 = 0.9).
#[test]
fn a_blended_phosphate_needs_its_orthophosphate_share() {
    let c = calculators();
    let values = [
        ("target-residual", 1.5),
        ("present-residual", 0.0),
        ("strength", 30.0),
        ("specific-gravity", 1.35),
        ("pump-capacity", 5.0),
    ];
    let r = request("corrosion-inhibitor", None, "blended-phosphate", &values);
    let e = c.compute(&r).unwrap_err();
    assert_eq!(e.reason(), Some("missing-input"));
    let mut r = r;
    r.values.insert("orthophosphate-share", 60.0);
    let out = c.compute(&r).unwrap();
    assert!((got(&out, "orthophosphate_as_po4") - 0.9).abs() < 1e-9);
    // 0.6 is a fraction typed for 60 %: refused, not read as 0.6 %.
    r.values.insert("orthophosphate-share", 0.6);
    assert!(c.compute(&r).is_err());
    assert!((got(&out, "dose_as_po4") - 1.5).abs() < 1e-9);
}

// ---- Permanganate ----

/// From the balanced reactions (KMnO4 + 3 Fe+2 + 7 H2O -> MnO2 + 3 Fe(OH)3 + K+ + 5 H+ and
/// 2 KMnO4 + 3 Mn+2 + 2 H2O -> 5 MnO2 + 2 K+ + 4 H+): 158.03234 / (3 × 55.845) = 0.94327 per mg
/// Fe and 2 × 158.03234 / (3 × 54.938043) = 1.91775 per mg Mn, by hand; the published
/// figures are about 0.94 and 1.92 (references.md section 9). Fe 1.0, Mn 0.5, other 0.3:
/// 0.94327 + 0.95888 + 0.3 = 2.20215 mg/L.
#[test]
fn permanganate_ratios_come_from_the_balanced_reactions() {
    let c = calculators();
    let run = |fe: f64, mn: f64, other: Option<f64>| {
        let mut values = vec![
            ("iron", fe),
            ("manganese", mn),
            ("purity", 100.0),
            ("dry-feeder-capacity", 100.0),
        ];
        values.extend(other.map(|o| ("other-demand", o)));
        c.compute(&request(
            "permanganate",
            None,
            "potassium-permanganate",
            &values,
        ))
        .unwrap()
    };
    let per_fe = got(&run(1.0, 0.0, None), "dose");
    let per_mn = got(&run(0.0, 1.0, None), "dose");
    assert!((per_fe / 0.94327 - 1.0).abs() < HAND, "{per_fe}");
    assert!((per_mn / 1.91775 - 1.0).abs() < HAND, "{per_mn}");
    assert!((per_fe - 0.94).abs() < 0.01 && (per_mn - 1.92).abs() < 0.01);
    let out = run(1.0, 0.5, Some(0.3));
    check(
        &out,
        &[
            Case {
                label: "0.94327 + 0.5 × 1.91775 + 0.3",
                id: "dose",
                value: 2.20215,
                within: HAND,
            },
            Case {
                label: "2.20215 mg/L × 10 000 m³/d",
                id: "feed_mass_rate",
                value: 22.0215,
                within: HAND,
            },
        ],
    );
    assert!(has(&out, "permanganate-pink-water"));
    assert!(has(&out, "hazard-oxidizer") && has(&out, "incompatible-oxidizer-solid-acid"));
    let none = run(0.0, 0.0, None);
    assert_eq!(got(&none, "dose"), 0.0);
    assert!(has(&none, "permanganate-no-demand") && none.setting.is_none());
}

/// A solution made down on site: 2.0 mg/L as KMnO4 at 3 %, SG 1.02 → 20.0 / 0.03 = 666.7
/// kg/d, / 1.02 / 24 = 27.233 L/h.
#[test]
fn permanganate_solution_feed_by_hand() {
    let out = calculators()
        .compute(&request(
            "permanganate",
            None,
            "potassium-permanganate-solution",
            &[
                ("iron", 0.0),
                ("manganese", 0.0),
                ("other-demand", 2.0),
                ("strength", 3.0),
                ("specific-gravity", 1.02),
                ("pump-capacity", 50.0),
            ],
        ))
        .unwrap();
    check(
        &out,
        &[Case {
            label: "20.0 / 0.03 / 1.02 / 24",
            id: "product_volume_rate",
            value: 27.233,
            within: HAND,
        }],
    );
}

// ---- Chlorine dioxide ----

/// By hand, NaClO2 90.43777, ClO2 67.448, Cl2 70.90, HCl 36.458 g/mol. Chlorine–chlorite
/// (2 NaClO2 + Cl2 -> 2 ClO2 + 2 NaCl): 1.34085 mg NaClO2 and 0.52559 mg Cl2 per mg ClO2;
/// acid–chlorite (5 NaClO2 + 4 HCl -> 4 ClO2 + 5 NaCl + 2 H2O): 1.67609 mg NaClO2 and
/// 0.54054 mg HCl per mg ClO2. Published: 1.34, 0.53 and 1.68 (references.md section 9).
/// At 1.0 mg/L and 10 000 m³/d: kg/d = 10 × the ratio.
#[test]
fn chlorine_dioxide_generators_follow_their_balanced_reactions() {
    let c = calculators();
    for (mode, naclo2, reactant, published) in [
        ("chlorine-chlorite", 1.34085, 0.52559, (1.34, Some(0.53))),
        ("acid-chlorite", 1.67609, 0.54054, (1.68, None)),
    ] {
        let out = c
            .compute(&request(
                "chlorine-dioxide",
                Some(mode),
                "sodium-chlorite",
                &[
                    ("clo2-dose", 1.0),
                    ("strength", 25.0),
                    ("specific-gravity", 1.22),
                    ("pump-capacity", 10.0),
                ],
            ))
            .unwrap();
        let v = |label, id, value| Case {
            label,
            id,
            value,
            within: HAND,
        };
        check(
            &out,
            &[
                v("dose as typed", "clo2_dose", 1.0),
                v("NaClO2 per ClO2", "dose", naclo2),
                v(
                    "10 × NaClO2 ratio / 0.25",
                    "chlorite_feed_rate",
                    10.0 * naclo2 / 0.25,
                ),
                v(
                    "10 × reactant ratio",
                    "chlorine_or_acid_feed_rate",
                    10.0 * reactant,
                ),
                // 70 % of the dose as chlorite (upper end of EPA's 50–70 %), ClO2- and ClO2
                // weigh the same.
                v("0.70 × 1.0", "expected_chlorite", 0.70),
            ],
        );
        assert!((got(&out, "dose") - published.0).abs() < 0.01, "{mode}");
        if let Some(cl2) = published.1 {
            assert!((got(&out, "chlorine_or_acid_feed_rate") / 10.0 - cl2).abs() < 0.01);
        }
        assert!(has(&out, "chlorite-conversion-typical"));
    }
}

/// At 95 % yield the chlorite fed is 1.34085 × 1.2 / 0.95 = 1.69370 mg/L; the 0.08469 mg/L
/// NaClO2 not converted leaves as 0.08469 × 67.448 / 90.43777 = 0.06316 mg/L ClO2-, beside
/// 0.70 × 1.2 = 0.84: 0.90316. A 1.6 mg/L dose expects 1.12 mg/L, above the chlorite MCL 1.0
/// (40 CFR 141.64), and is above the ClO2 MRDL 0.8 (40 CFR 141.65).
#[test]
fn expected_chlorite_counts_the_yield_and_meets_the_mcl() {
    let c = calculators();
    let run = |dose: f64, generator_yield: Option<f64>| {
        let mut r = request(
            "chlorine-dioxide",
            Some("chlorine-chlorite"),
            "sodium-chlorite-dry",
            &[
                ("clo2-dose", dose),
                ("purity", 80.0),
                ("dry-feeder-capacity", 100.0),
            ],
        );
        if let Some(y) = generator_yield {
            r.values.insert("generator-yield", y);
        }
        c.compute(&r).unwrap()
    };
    let out = run(1.2, Some(95.0));
    check(
        &out,
        &[
            Case {
                label: "1.34085 × 1.2 / 0.95",
                id: "dose",
                value: 1.69370,
                within: HAND,
            },
            Case {
                label: "0.84 + 0.06316",
                id: "expected_chlorite",
                value: 0.90316,
                within: HAND,
            },
        ],
    );
    assert!(!has(&out, "expected-chlorite-above-limit"));
    let high = run(1.6, None);
    assert!(
        has(&high, "expected-chlorite-above-limit"),
        "{:?}",
        high.cautions
    );
    assert!(has(&high, "site-limit-above"), "MRDL 0.8 on the dose");
    // A yield above 100 % is no yield.
    let mut r = request(
        "chlorine-dioxide",
        None,
        "sodium-chlorite-dry",
        &[
            ("clo2-dose", 1.0),
            ("purity", 80.0),
            ("dry-feeder-capacity", 100.0),
            ("generator-yield", 120.0),
        ],
    );
    assert!(c.compute(&r).is_err());
    r.values.insert("generator-yield", 100.0);
    assert!(c.compute(&r).is_ok());
    // Shares typed as fractions are refused, not read as 0.95 % or 0.6 %.
    r.values.insert("generator-yield", 0.95);
    assert!(c.compute(&r).is_err());
    r.values.insert("generator-yield", 95.0);
    r.values.insert("chlorite-conversion", 0.6);
    assert!(c.compute(&r).is_err());
    r.values.insert("chlorite-conversion", 60.0);
    assert!(c.compute(&r).is_ok());
}

/// A saturator's solution, 3.8 % NaF by weight at SG 1.04, carries 1040 g/L × 0.038 × 0.45247
/// = 17.88 g/L as F, the "about 18,000 mg/L" the trade quotes (from memory; within 1 %). 0.5
/// mg/L added at 10 000 m³/d: 5.00 kg/d F / 17.88 g/L = 279.6 L/d = 11.65 L/h.
#[test]
fn a_sodium_fluoride_saturator_feeds_its_fixed_strength() {
    let out = calculators()
        .compute(&request(
            "fluoridation",
            None,
            "sodium-fluoride-saturator",
            &[
                ("target-fluoride", 0.7),
                ("natural-fluoride", 0.2),
                ("strength", 3.8),
                ("specific-gravity", 1.04),
                ("pump-capacity", 20.0),
            ],
        ))
        .unwrap();
    check(
        &out,
        &[Case {
            label: "5.00 kg/d / 17.882 g/L / 24",
            id: "product_volume_rate",
            value: 5000.0 / (1040.0 * 0.038 * 0.45247) / 24.0,
            within: HAND,
        }],
    );
    let f_per_litre_mg =
        got(&out, "feed_mass_rate") * 1e6 / (got(&out, "product_volume_rate") * 24.0);
    assert!(
        (f_per_litre_mg / 18_000.0 - 1.0).abs() < 0.01,
        "{f_per_litre_mg}"
    );
}

/// A negative reading or target would lower the dose without a word: each is refused.
#[test]
fn negative_readings_are_refused() {
    let c = calculators();
    for (id, mode, product, values, negative) in [
        (
            "fluoridation",
            None,
            "sodium-fluoride",
            vec![("target-fluoride", 0.7), ("natural-fluoride", 0.2)],
            "natural-fluoride",
        ),
        (
            "corrosion-inhibitor",
            Some("residual-as-p"),
            "sodium-orthophosphate",
            vec![("target-residual", 1.0), ("present-residual", 0.2)],
            "present-residual",
        ),
        (
            "permanganate",
            None,
            "potassium-permanganate",
            vec![("iron", 1.0), ("manganese", 0.2), ("other-demand", 0.1)],
            "iron",
        ),
        (
            "permanganate",
            None,
            "potassium-permanganate",
            vec![("iron", 1.0), ("manganese", 0.2), ("other-demand", 0.1)],
            "other-demand",
        ),
        (
            "chlorine-dioxide",
            None,
            "sodium-chlorite-dry",
            vec![("clo2-dose", 0.5)],
            "clo2-dose",
        ),
    ] {
        let mut values = values;
        values.extend([("purity", 90.0), ("dry-feeder-capacity", 100.0)]);
        let mut r = request(id, mode, product, &values);
        assert!(c.compute(&r).is_ok(), "{id}");
        r.values.insert(negative, -0.5);
        let e = c.compute(&r).unwrap_err();
        assert_eq!(e.reason(), Some("negative-reading"), "{id} {negative}: {e}");
    }
}

/// The named dose (`fluoride_added`, `dose_as_po4`) is the feed's `dose` under the name scripts
/// read, and says so (`same_as`), so that a card showing the dose shows it once; the JSON keeps
/// both ids.
#[test]
fn the_named_dose_repeats_the_dose_and_says_so() {
    let c = calculators();
    for (id, product, named, values) in [
        (
            "fluoridation",
            "fluorosilicic-acid",
            "fluoride_added",
            vec![("target-fluoride", 0.7), ("natural-fluoride", 0.2)],
        ),
        (
            "corrosion-inhibitor",
            "phosphoric-acid",
            "dose_as_po4",
            vec![("target-residual", 1.0), ("present-residual", 0.3)],
        ),
    ] {
        let values: Vec<_> = values
            .into_iter()
            .chain([
                ("strength", 75.0),
                ("specific-gravity", 1.58),
                ("pump-capacity", 5.0),
            ])
            .collect();
        let mut r = request(id, None, product, &values);
        if id == "fluoridation" {
            r.values.insert("strength", 23.0);
            r.values.insert("specific-gravity", 1.19);
        }
        let out = c.compute(&r).unwrap();
        let n = out.result(named).unwrap();
        assert_eq!(n.same_as, Some("dose"), "{id}");
        assert_eq!(n.value, got(&out, "dose"), "{id}");
        assert!(!n.headline, "{id}");
        assert_eq!(out.result("dose").unwrap().same_as, None);
    }
}
