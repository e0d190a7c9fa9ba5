//! Where the dosing calculators meet the water-chemistry engine: the pH, alkalinity and
//! Langelier index a dose leaves behind, and the pH range they are judged against.
//!
//! Design: a dosing product is tied to a water-engine chemical by its active compound's
//! formula (same composition), never by a hand-kept table, so a product added to
//! `data/products.json` whose compound is in `data/chemicals.json` is connected without code.
//! A dose "as Cl2" is turned into mg/L of the compound through the hypochlorite the compound's
//! balanced dissolution releases (one OCl per available Cl2), and the conversion is kept as a
//! trace so the operator can follow it.

use super::caution::Caution;
use super::site::{SiteProfile, regulatory_defaults};
use crate::engine::sigfig::Measured;
use crate::engine::trace::{Origin, Quantity, Trace};
use crate::engine::water::{self, Chemical, Component, WaterState};
use crate::engine::{Error, ErrorKind, Result};
use serde::Serialize;

/// The pH range a treated water is judged against (site limit, else the SMCL 6.5–8.5).
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct PhRange {
    pub min: f64,
    pub max: f64,
}

impl Default for PhRange {
    /// The regulatory default for `ph` (US EPA SMCL, 40 CFR 143.3).
    fn default() -> PhRange {
        PhRange::from_limit(
            regulatory_defaults()
                .into_iter()
                .find(|l| l.parameter == "ph"),
        )
    }
}

impl PhRange {
    /// The pH range a plant's own limits give (else the regulatory default).
    pub fn from_limits(plant: &[super::site::Limit]) -> PhRange {
        PhRange::from_limit(super::site::effective_limit(plant, "ph"))
    }

    fn from_limit(limit: Option<super::site::Limit>) -> PhRange {
        // A missing side means "no bound on that side", not the default: a site that sets only
        // a minimum has chosen not to cap the pH.
        let (min, max) = limit.map_or((None, None), |l| (l.min, l.max));
        PhRange {
            min: min.unwrap_or(0.0),
            max: max.unwrap_or(14.0),
        }
    }

    /// The site's `ph` limit (or the regulatory default when the site sets none).
    pub fn from_site(site: &SiteProfile) -> PhRange {
        PhRange::from_limit(site.effective_limit("ph"))
    }

    /// A `ph-outside-range` warning when `ph` leaves the range.
    pub fn check(&self, ph: f64) -> Option<Caution> {
        (ph < self.min || ph > self.max).then(|| {
            Caution::warning("ph-outside-range")
                .with("ph", format!("{ph:.2}"))
                .with("min", self.min)
                .with("max", self.max)
        })
    }
}

/// The water-engine chemical whose formula has the same composition as `compound`.
pub fn water_chemical(compound: &str) -> Result<&'static Chemical> {
    water::Catalog::embedded()?.find(compound).map_err(|_| {
        Error::new(
            ErrorKind::UnknownChemical,
            format!(
                "the water-chemistry catalog has no chemical {compound}: its effect on pH cannot be calculated"
            ),
        )
        .with("chemical", compound)
    })
}

/// mg/L of `chemical` that delivers `dose` mg/L as Cl2, with the trace. One mole of free
/// chlorine (HOCl + OCl⁻) released counts as one mole of available Cl2.
pub fn compound_for_chlorine(chemical: &Chemical, dose: Measured) -> Result<(f64, Trace)> {
    let per = chemical.adds[Component::OCl.index()];
    if per <= 0.0 {
        return Err(Error::new(
            ErrorKind::InvalidInput,
            format!("{} releases no free chlorine", chemical.id),
        )
        .because("product-not-for-calculator")
        .with("chemical", &chemical.id));
    }
    let m_cl2 = water::chemicals::molar_mass("Cl2")?;
    let formula = chemical.formula.to_string();
    let mut t = Trace::new(
        Quantity::of(dose.value, "mg/L", "Cl2"),
        Origin::Measured,
        dose.sig_figs,
    );
    t.then(
        Quantity::of(1.0, "mmol/L", "Cl2"),
        Quantity::of(m_cl2, "mg/L", "Cl2"),
        Origin::MolarMass {
            formula: "Cl2".into(),
        },
        None,
    )?;
    t.then(
        Quantity::of(1.0, "mmol/L", &formula),
        Quantity::of(per, "mmol/L", "Cl2"),
        Origin::MoleRatio {
            reaction: chemical.dissolution.clone(),
        },
        None,
    )?;
    t.then(
        Quantity::of(chemical.molar_mass, "mg/L", &formula),
        Quantity::of(1.0, "mmol/L", &formula),
        Origin::MolarMass { formula },
        None,
    )?;
    Ok((t.value(), t))
}

/// The water before and after a dose, from the water-chemistry engine.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct WaterEffect {
    /// Water-engine chemical id.
    pub chemical: String,
    /// mg/L of the pure compound added.
    pub compound_mg_l: f64,
    pub ph_before: f64,
    pub ph_after: f64,
    pub alkalinity_before_mg_l_as_caco3: f64,
    pub alkalinity_after_mg_l_as_caco3: f64,
    /// After − before (negative when the dose consumes alkalinity).
    pub alkalinity_change_mg_l_as_caco3: f64,
    /// Langelier index after the dose (`None` without calcium).
    pub langelier_index_after: Option<f64>,
}

/// The water after `compound_mg_l` of `chemical`, as a new state, and what changed.
pub fn dose_effect(
    state: &WaterState,
    chemical: &Chemical,
    compound_mg_l: f64,
    precipitation: water::Precipitation,
) -> Result<(WaterState, WaterEffect)> {
    let after = state.dosed(chemical, compound_mg_l, precipitation)?;
    let before_alk = state.alkalinity_mg_l_as_caco3();
    let after_alk = after.alkalinity_mg_l_as_caco3();
    // Stability needs calcium; without it (or when no pH saturates the water) there is no LSI.
    let lsi = water::stability(&after)
        .ok()
        .and_then(|s| s.langelier_index);
    let effect = WaterEffect {
        chemical: chemical.id.clone(),
        compound_mg_l,
        ph_before: state.ph(),
        ph_after: after.ph(),
        alkalinity_before_mg_l_as_caco3: before_alk,
        alkalinity_after_mg_l_as_caco3: after_alk,
        alkalinity_change_mg_l_as_caco3: after_alk - before_alk,
        langelier_index_after: lsi,
    };
    Ok((after, effect))
}

/// What a coagulant's metal does by default in the water: amorphous hydroxide precipitates at
/// equilibrium; any other chemical stays dissolved.
pub fn precipitation_of(chemical: &Chemical) -> water::Precipitation {
    if chemical.is_coagulant() {
        water::Precipitation::Hydroxide
    } else {
        water::Precipitation::None
    }
}

/// The water-engine chemical of a dosing-catalog product and the mg/L of it that `dose_mg_l`
/// (expressed as the product's `dose_as`) adds: a chlorine product dosed as Cl2 through
/// [`compound_for_chlorine`] (with its trace), a product dosed as its own compound as is.
/// Anything else (ammonia as N, a compound the water catalog lacks) is a typed error.
pub fn product_compound(
    catalog: &super::catalog::Catalog,
    product: &str,
    dose_mg_l: f64,
) -> Result<(&'static Chemical, f64, Option<Trace>)> {
    use crate::engine::formula::Formula;
    let p = catalog.product(product)?;
    let chemical = water_chemical(&p.compound)?;
    let dose_as = Formula::parse(&p.dose_as)?;
    if dose_as.same_composition(&Formula::parse("Cl2")?) {
        let (mg, t) = compound_for_chlorine(chemical, Measured::exact(dose_mg_l))?;
        Ok((chemical, mg, Some(t)))
    } else if dose_as.same_composition(&chemical.formula) {
        Ok((chemical, dose_mg_l, None))
    } else {
        Err(Error::new(
            ErrorKind::InvalidInput,
            format!(
                "{} is dosed as {}: its effect on the water is not calculated from that basis",
                p.id, p.dose_as
            ),
        )
        .because("product-not-for-calculator")
        .with("product", &p.id))
    }
}

/// The effect of `dose_mg_l` (expressed as the product's `dose_as`) of a dosing-catalog
/// product on the water, with a `ph-outside-range` warning. Chlorine products dosed as Cl2 go
/// through [`compound_for_chlorine`]; products dosed as their own compound are added as is;
/// coagulant metal precipitates as amorphous hydroxide at equilibrium. Anything else (ammonia
/// as N, a compound the water catalog lacks) is a typed error.
pub fn product_effect(
    catalog: &super::catalog::Catalog,
    product: &str,
    dose_mg_l: f64,
    state: &WaterState,
    ph_range: PhRange,
) -> Result<(WaterEffect, Vec<Caution>, Option<Trace>)> {
    let (chemical, compound, trace) = product_compound(catalog, product, dose_mg_l)?;
    let precipitation = precipitation_of(chemical);
    let (_, effect) = dose_effect(state, chemical, compound, precipitation)?;
    let cautions = ph_range.check(effect.ph_after).into_iter().collect();
    Ok((effect, cautions, trace))
}
