//! Property tests of the water engine: monotone response, inverse of forward, no panic and no
//! NaN on any finite input, typed errors outside the valid ranges.

use molefeed::engine::ErrorKind;
use molefeed::engine::water::{
    Catalog, Chemical, Precipitation, WaterInput, WaterState, curve, dose_for_ph, ph_after,
    stability,
};
use proptest::prelude::*;

fn chem(id: &str) -> &'static Chemical {
    Catalog::embedded().unwrap().find(id).unwrap()
}

/// Field waters inside the model's range: pH 5.5–10, 0–35 °C, alkalinity 5–400, Ca ≤ 300.
fn field_water() -> impl Strategy<Value = WaterInput> {
    (
        5.5f64..10.0,
        0.0f64..35.0,
        5.0f64..400.0,
        0.0f64..300.0,
        0.0f64..100.0,
        0.0f64..200.0,
    )
        .prop_map(|(ph, t, alk, ca, mg, na)| WaterInput {
            calcium_mg_l_as_caco3: Some(ca),
            magnesium_mg_l_as_caco3: Some(mg),
            sodium_mg_l: Some(na),
            chloride_mg_l: Some(na * 1.2),
            sulfate_mg_l: Some(ca * 0.3),
            // Keep alkalinity above the hydroxide alkalinity at high pH.
            ..WaterInput::new(ph, t, alk.max(60.0 * 10f64.powf(ph - 10.0) + 5.0))
        })
}

// Strong bases only: NaOCl is a weak base (pKa 7.5), and at pH 10 its ionic-strength effect on
// the carbonate constants can outweigh it, so it may move the pH either way by ~1e-4.
const BASES: [&str; 3] = ["caustic", "lime", "soda-ash"];
const ACIDS: [&str; 5] = [
    "sulfuric-acid",
    "hydrochloric-acid",
    "carbon-dioxide",
    "ferric-chloride",
    "chlorine",
];

proptest! {
    #![proptest_config(ProptestConfig { cases: 128, ..ProptestConfig::default() })]

    #[test]
    fn ph_rises_with_base_and_falls_with_acid(w in field_water(), d1 in 0.0f64..80.0, extra in 0.5f64..80.0, k in 0usize..20) {
        let state = WaterState::new(&w).unwrap();
        let base = chem(BASES[k % BASES.len()]);
        let a = ph_after(&state, base, d1, Precipitation::None).unwrap().ph;
        let b = ph_after(&state, base, d1 + extra, Precipitation::None).unwrap().ph;
        prop_assert!(b > a, "{}: pH {a} at {d1}, {b} at {}", base.id, d1 + extra);
        let acid = chem(ACIDS[k % ACIDS.len()]);
        let a = ph_after(&state, acid, d1, Precipitation::None).unwrap().ph;
        let b = ph_after(&state, acid, d1 + extra, Precipitation::None).unwrap().ph;
        prop_assert!(b < a, "{}: pH {a} at {d1}, {b} at {}", acid.id, d1 + extra);
    }

    #[test]
    fn inverse_of_forward_is_the_dose(w in field_water(), d in 0.5f64..150.0, k in 0usize..20) {
        let state = WaterState::new(&w).unwrap();
        let ids = ["caustic", "lime", "soda-ash", "sulfuric-acid", "hydrochloric-acid", "carbon-dioxide", "alum"];
        let c = chem(ids[k % ids.len()]);
        let target = ph_after(&state, c, d, Precipitation::None).unwrap().ph;
        let r = dose_for_ph(&state, c, target, Precipitation::None).unwrap();
        prop_assert!((r.dose_mg_l - d).abs() <= 1e-5 * d, "{}: dose {d} -> pH {target} -> dose {}", c.id, r.dose_mg_l);
    }

    #[test]
    fn no_panic_and_no_nan_on_any_finite_input(
        ph in -5.0f64..20.0, t in -20.0f64..80.0, alk in -100.0f64..2.0e5,
        ca in -10.0f64..2.0e5, na in -10.0f64..2.0e5, tds in -10.0f64..2.0e5,
        dose in -10.0f64..5.0e4, target in -2.0f64..16.0, k in 0usize..20,
    ) {
        let input = WaterInput {
            calcium_mg_l_as_caco3: Some(ca),
            sodium_mg_l: Some(na),
            tds_mg_l: Some(tds),
            ..WaterInput::new(ph, t, alk)
        };
        let ids = ["caustic", "lime", "soda-ash", "bicarbonate", "sulfuric-acid", "hydrochloric-acid",
                   "carbon-dioxide", "alum", "ferric-chloride", "chlorine", "hypochlorite"];
        let c = chem(ids[k % ids.len()]);
        if let Ok(state) = WaterState::new(&input) {
            for mode in [Precipitation::None, Precipitation::Hydroxide, Precipitation::Complete] {
                if let Ok(r) = ph_after(&state, c, dose, mode) {
                    prop_assert!(r.ph.is_finite() && r.alkalinity_mg_l_as_caco3.is_finite() && r.ionic_strength.is_finite());
                }
            }
            if let Ok(r) = dose_for_ph(&state, c, target, Precipitation::None) {
                prop_assert!(r.dose_mg_l.is_finite() && r.dose_mg_l >= 0.0);
            }
            if let Ok(s) = stability(&state) {
                prop_assert!(s.si_calcite.is_finite() && s.ccpp_mg_l_as_caco3.is_finite());
            }
        }
    }

    #[test]
    fn out_of_range_input_is_a_typed_error(
        bad_ph in prop_oneof![-50.0f64..-0.001, 14.001f64..50.0],
        bad_t in prop_oneof![-50.0f64..-0.001, 50.001f64..200.0],
        negative in -1.0e4f64..-1e-9,
        which in 0usize..6,
    ) {
        let good = WaterInput::new(7.5, 20.0, 100.0);
        let input = match which {
            0 => WaterInput { ph: bad_ph, ..good },
            1 => WaterInput { temperature_c: bad_t, ..good },
            2 => WaterInput { alkalinity_mg_l_as_caco3: negative, ..good },
            3 => WaterInput { calcium_mg_l_as_caco3: Some(negative), ..good },
            4 => WaterInput { sulfate_mg_l: Some(negative), ..good },
            _ => WaterInput { tds_mg_l: Some(negative), ..good },
        };
        let e = WaterState::new(&input).unwrap_err();
        prop_assert_eq!(e.kind(), ErrorKind::OutOfRange, "{:?}", input);
        let state = WaterState::new(&good).unwrap();
        let e = ph_after(&state, chem("caustic"), negative, Precipitation::None).unwrap_err();
        prop_assert_eq!(e.kind(), ErrorKind::OutOfRange);
        prop_assert!(curve(&state, chem("caustic"), negative, 10, Precipitation::None).is_err());
    }
}
