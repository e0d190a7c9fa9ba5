//! Lime–soda ash softening doses.
//!
//! Method: the classic stoichiometric lime–soda ash method as taught in AWWA *Water Quality &
//! Treatment* (softening chapter) and Sacramento State, *Water Treatment Plant Operation*,
//! Vol. II [M: form recalled; the 56/44, 56/100, 56/24.3 and 106/100 factors and the excess of
//! about 35 mg/L as CaO are confirmed, C]:
//!   CaO = (CO2·56/44 + Alk·56/100 + Mg·56/24.3 + excess) ÷ purity; Na2CO3 = NCH·106/100.
//! Design: each of those factors is derived here from a balanced softening reaction and molar
//! masses (tests compare them with the published fractions), and each term has its own trace.
//! SEAM(water): the softened water's pH and LSI need calcite and Mg(OH)2 precipitation, which
//! the water engine does not model yet (it precipitates only Al and Fe hydroxides), so this
//! calculator gives doses only.

use super::NamedTrace;
use super::catalog::{Catalog, molar_mass};
use super::caution::{Caution, finish};
use crate::engine::sigfig::Measured;
use crate::engine::trace::{Origin, Quantity, Trace};
use crate::engine::{Result, check_positive, check_range};
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
        "softening-carbon-dioxide",
        "CO2",
        "CO2",
        "Ca(OH)2",
        "CaO",
    )?;
    let (f_alk, t_alk) = factor(
        catalog,
        "softening-calcium-carbonate-hardness",
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
        "softening-calcium-noncarbonate",
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
