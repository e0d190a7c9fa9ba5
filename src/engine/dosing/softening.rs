//! Lime–soda ash softening doses.
//!
//! Method: the classic stoichiometric lime–soda ash method as taught in AWWA *Water Quality &
//! Treatment* (softening chapter) and Sacramento State, *Water Treatment Plant Operation*,
//! Vol. II [M: form recalled; the 56/44, 56/100, 56/24.3 and 106/100 factors and the excess of
//! about 35 mg/L as CaO are confirmed, C]:
//!   CaO = (CO2·56/44 + Alk·56/100 + Mg·56/24.3 + excess) ÷ purity; Na2CO3 = NCH·106/100.
//! Design: each of those factors is derived here from a balanced softening reaction and molar
//! masses (tests compare them with the published fractions), and each term has its own trace.
//! The softened water itself (its pH and hardness after calcite and brucite precipitate) is
//! the water engine's (`engine::water::softening`), which the table's softening calculator
//! calls beside these doses.

use super::NamedTrace;
use super::catalog::{Catalog, molar_mass};
use super::caution::{Caution, finish};
use crate::engine::sigfig::{Measured, combine, sum_figures};
use crate::engine::trace::{Origin, Quantity, Trace};
use crate::engine::{Error, ErrorKind, Result, check_positive, check_range};
use serde::Serialize;

/// Inputs for [`softening`], all in mg/L.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SofteningInput {
    /// Free carbon dioxide, as CO2.
    pub co2: Measured,
    /// Carbonate hardness to remove (the alkalinity, when alkalinity < total hardness), as CaCO3.
    pub alkalinity: Measured,
    /// Magnesium to remove, as Mg.
    pub magnesium: Measured,
    /// Non-carbonate hardness to remove, as CaCO3.
    pub non_carbonate_hardness: Measured,
    /// Excess lime, as CaO.
    pub excess_lime_cao: f64,
    /// Lime purity as delivered, % (as CaO for quicklime, as Ca(OH)2 for hydrated lime).
    pub lime_purity_percent: f64,
    pub soda_ash_purity_percent: f64,
}

/// Result of [`softening`].
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SofteningResult {
    /// Factors derived from the reactions (published: 56/44, 56/100, 56/24.3, 106/100).
    pub cao_per_co2: f64,
    pub cao_per_alkalinity: f64,
    pub cao_per_mg: f64,
    pub soda_ash_per_nch: f64,
    /// Pure lime, mg/L as CaO.
    pub lime_cao_mg_l: f64,
    /// Pure lime, mg/L as Ca(OH)2.
    pub lime_caoh2_mg_l: f64,
    /// Quicklime product, mg/L (÷ purity).
    pub quicklime_product_mg_l: f64,
    /// Hydrated lime product, mg/L (÷ purity).
    pub hydrated_lime_product_mg_l: f64,
    pub soda_ash_mg_l: f64,
    pub soda_ash_product_mg_l: f64,
    pub traces: Vec<NamedTrace>,
    pub cautions: Vec<Caution>,
}

/// mg/L of `to` per mg/L of `from` (expressed as `from_as`) through `reaction`.
fn factor(
    catalog: &Catalog,
    reaction: &str,
    from_as: &str,
    from: &str,
    to: &str,
    to_as: &str,
) -> Result<(f64, Trace)> {
    let r = catalog.reaction(reaction)?;
    let mut t = Trace::new(Quantity::of(1.0, "mg/L", from_as), Origin::Measured, None);
    let (m_from, s_from) = molar_mass(from_as)?;
    // "as CaCO3" counts hardness and alkalinity in mmol of a divalent unit, so one mmol of
    // CaCO3-equivalent is one mmol of Ca(HCO3)2 or CaSO4; "as Mg" and "as CO2" are direct.
    t.then(
        Quantity::of(1.0, "mmol/L", from),
        Quantity::of(m_from, "mg/L", from_as),
        Origin::MolarMass {
            formula: from_as.into(),
        },
        s_from,
    )?;
    t.then_mole_ratio(&r, from, to, "mmol/L")?;
    if to != to_as {
        // Ca(OH)2 ↔ CaO through slaking, so lime can be stated as CaO like the published method.
        let slaking = catalog.reaction("quicklime-slaking")?;
        t.then_mole_ratio(&slaking, to, to_as, "mmol/L")?;
    }
    let (m_to, s_to) = molar_mass(to_as)?;
    t.then(
        Quantity::of(m_to, "mg/L", to_as),
        Quantity::of(1.0, "mmol/L", to_as),
        Origin::MolarMass {
            formula: to_as.into(),
        },
        s_to,
    )?;
    Ok((t.value(), t))
}

/// Lime and soda ash for carbonate and non-carbonate hardness removal with excess lime.
pub fn softening(catalog: &Catalog, input: &SofteningInput) -> Result<SofteningResult> {
    for (name, v) in [
        ("carbon dioxide", input.co2.value),
        ("alkalinity", input.alkalinity.value),
        ("magnesium", input.magnesium.value),
        ("non-carbonate hardness", input.non_carbonate_hardness.value),
        ("excess lime", input.excess_lime_cao),
    ] {
        check_range(name, v, 0.0, 5000.0, "mg/L")?;
    }
    check_positive("lime purity", input.lime_purity_percent, "%")?;
    check_range("lime purity", input.lime_purity_percent, 0.0, 100.0, "%")?;
    check_positive("soda ash purity", input.soda_ash_purity_percent, "%")?;
    check_range(
        "soda ash purity",
        input.soda_ash_purity_percent,
        0.0,
        100.0,
        "%",
    )?;
    let (f_co2, t_co2) = factor(
        catalog,
        "lime-carbon-dioxide",
        "CO2",
        "CO2",
        "Ca(OH)2",
        "CaO",
    )?;
    let (f_alk, t_alk) = factor(
        catalog,
        "lime-calcium-bicarbonate",
        "CaCO3",
        "Ca(HCO3)2",
        "Ca(OH)2",
        "CaO",
    )?;
    let (f_mg, t_mg) = factor(
        catalog,
        "softening-magnesium-noncarbonate",
        "Mg",
        "MgSO4",
        "Ca(OH)2",
        "CaO",
    )?;
    let (f_nch, t_nch) = factor(
        catalog,
        "soda-ash-noncarbonate-hardness",
        "CaCO3",
        "CaSO4",
        "Na2CO3",
        "Na2CO3",
    )?;
    let cao = input.co2.value * f_co2
        + input.alkalinity.value * f_alk
        + input.magnesium.value * f_mg
        + input.excess_lime_cao;
    let slake = catalog
        .reaction("quicklime-slaking")?
        .mass_ratio("CaO", "Ca(OH)2")?;
    let caoh2 = cao * slake;
    let soda = input.non_carbonate_hardness.value * f_nch;
    let mut cautions = vec![
        Caution::info("ph-alkalinity-effect-from-water-engine"),
        Caution::danger("incompatible-water-quicklime-heat"),
        Caution::warning("hazard-corrosive-caustic").with("product", "lime"),
    ];
    if input.excess_lime_cao == 0.0 && input.magnesium.value > 0.0 {
        cautions.push(Caution::warning("softening-no-excess-lime"));
    }
    Ok(SofteningResult {
        cao_per_co2: f_co2,
        cao_per_alkalinity: f_alk,
        cao_per_mg: f_mg,
        soda_ash_per_nch: f_nch,
        lime_cao_mg_l: cao,
        lime_caoh2_mg_l: caoh2,
        quicklime_product_mg_l: cao * 100.0 / input.lime_purity_percent,
        hydrated_lime_product_mg_l: caoh2 * 100.0 / input.lime_purity_percent,
        soda_ash_mg_l: soda,
        soda_ash_product_mg_l: soda * 100.0 / input.soda_ash_purity_percent,
        traces: vec![
            NamedTrace::new("lime-per-co2", t_co2),
            NamedTrace::new("lime-per-alkalinity", t_alk),
            NamedTrace::new("lime-per-magnesium", t_mg),
            NamedTrace::new("soda-ash-per-nch", t_nch),
        ],
        cautions: finish(cautions),
    })
}

/// A tap analysis as an operator reads it, in mg/L (hardness and alkalinity as CaCO3, carbon
/// dioxide as CO2 — from the water-chemistry engine when it was not titrated).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct HardnessAnalysis {
    pub total_hardness: Measured,
    pub calcium_hardness: Measured,
    pub alkalinity: Measured,
    pub co2: Measured,
}

/// What the lime–soda method removes, read from an analysis: carbonate hardness is the
/// alkalinity up to the total hardness, the rest is non-carbonate hardness, and magnesium is
/// the hardness that is not calcium, carried from "as CaCO3" to "as Mg" through molar masses
/// (one Mg²⁺ per CaCO3 equivalent). Differences keep the decimal place of their least precise
/// term. The trace shows the magnesium conversion.
pub fn removal_from_analysis(a: &HardnessAnalysis) -> Result<(SofteningRemoval, Vec<NamedTrace>)> {
    for (name, m) in [
        ("total hardness", a.total_hardness),
        ("calcium hardness", a.calcium_hardness),
        ("alkalinity", a.alkalinity),
        ("carbon dioxide", a.co2),
    ] {
        check_range(name, m.value, 0.0, 5000.0, "mg/L")?;
    }
    if a.calcium_hardness.value > a.total_hardness.value {
        return Err(Error::new(
            ErrorKind::InvalidInput,
            format!(
                "calcium hardness ({} mg/L) is more than the total hardness ({} mg/L)",
                a.calcium_hardness.value, a.total_hardness.value
            ),
        )
        .because("calcium-above-total-hardness")
        .with("quantity", "calcium-hardness")
        .with("calcium", a.calcium_hardness.value)
        .with("total", a.total_hardness.value));
    }
    let difference = |big: Measured, small: Measured| {
        let v = (big.value - small.value).max(0.0);
        Measured {
            value: v,
            sig_figs: sum_figures(&[big, small], v),
        }
    };
    let mg_hardness = difference(a.total_hardness, a.calcium_hardness);
    let carbonate = if a.alkalinity.value < a.total_hardness.value {
        a.alkalinity
    } else {
        a.total_hardness
    };
    let non_carbonate = difference(a.total_hardness, carbonate);
    let mut t = Trace::new(
        Quantity::of(mg_hardness.value, "mg/L", "CaCO3"),
        Origin::Measured,
        mg_hardness.sig_figs,
    );
    let (m_caco3, s_caco3) = molar_mass("CaCO3")?;
    let (m_mg, s_mg) = molar_mass("Mg")?;
    t.then(
        Quantity::of(1.0, "mmol/L", "Mg"),
        Quantity::of(m_caco3, "mg/L", "CaCO3"),
        Origin::MolarMass {
            formula: "CaCO3".into(),
        },
        s_caco3,
    )?;
    t.then(
        Quantity::of(m_mg, "mg/L", "Mg"),
        Quantity::of(1.0, "mmol/L", "Mg"),
        Origin::MolarMass {
            formula: "Mg".into(),
        },
        s_mg,
    )?;
    let magnesium = Measured {
        value: t.value(),
        sig_figs: combine(mg_hardness.sig_figs, t.sig_figs()),
    };
    Ok((
        SofteningRemoval {
            co2: a.co2,
            carbonate_hardness: carbonate,
            magnesium,
            non_carbonate_hardness: non_carbonate,
        },
        vec![NamedTrace::new("magnesium-from-hardness", t)],
    ))
}

/// The removals [`softening`] takes, from [`removal_from_analysis`].
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SofteningRemoval {
    pub co2: Measured,
    pub carbonate_hardness: Measured,
    /// As Mg.
    pub magnesium: Measured,
    pub non_carbonate_hardness: Measured,
}

impl SofteningRemoval {
    /// The [`softening`] input for these removals.
    pub fn input(
        &self,
        excess_lime_cao: f64,
        lime_purity_percent: f64,
        soda_ash_purity_percent: f64,
    ) -> SofteningInput {
        SofteningInput {
            co2: self.co2,
            alkalinity: self.carbonate_hardness,
            magnesium: self.magnesium,
            non_carbonate_hardness: self.non_carbonate_hardness,
            excess_lime_cao,
            lime_purity_percent,
            soda_ash_purity_percent,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn m(value: f64, sig: u8) -> Measured {
        Measured::new(value, sig)
    }

    /// (total, calcium, alkalinity) → (carbonate, non-carbonate, Mg as Mg).
    fn check(total: f64, calcium: f64, alkalinity: f64, expected: (f64, f64, f64)) {
        let (r, traces) = removal_from_analysis(&HardnessAnalysis {
            total_hardness: m(total, 3),
            calcium_hardness: m(calcium, 3),
            alkalinity: m(alkalinity, 3),
            co2: m(5.0, 2),
        })
        .unwrap();
        assert_eq!(r.carbonate_hardness.value, expected.0, "carbonate");
        assert_eq!(r.non_carbonate_hardness.value, expected.1, "non-carbonate");
        // Expected Mg from IUPAC weights as printed in the 2021 table (Mg 24.305, CaCO3
        // 100.086), not from the code's own molar-mass function.
        assert!(
            (r.magnesium.value - expected.2).abs() < 1e-3,
            "{:?}",
            r.magnesium
        );
        assert_eq!(traces.len(), 1);
    }

    #[test]
    fn analysis_splits_hardness_the_usual_way() {
        check(250.0, 180.0, 200.0, (200.0, 50.0, 70.0 * 24.305 / 100.086));
        check(150.0, 150.0, 220.0, (150.0, 0.0, 0.0));
        check(300.0, 100.0, 300.0, (300.0, 0.0, 200.0 * 24.305 / 100.086));
    }

    #[test]
    fn magnesium_keeps_the_precision_of_the_difference() {
        let (r, _) = removal_from_analysis(&HardnessAnalysis {
            total_hardness: m(250.0, 2),
            calcium_hardness: m(180.0, 2),
            alkalinity: m(200.0, 3),
            co2: m(5.0, 2),
        })
        .unwrap();
        assert_eq!(
            r.magnesium.sig_figs,
            Some(1),
            "250 − 180 known to the tens: 70"
        );
    }

    #[test]
    fn calcium_above_total_is_refused() {
        let err = removal_from_analysis(&HardnessAnalysis {
            total_hardness: m(120.0, 3),
            calcium_hardness: m(150.0, 3),
            alkalinity: m(100.0, 3),
            co2: m(5.0, 2),
        })
        .unwrap_err();
        assert_eq!(err.kind(), ErrorKind::InvalidInput);
    }
}
