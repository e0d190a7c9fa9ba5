//! Where the dosing calculators meet the water-chemistry engine: the pH, alkalinity and
//! Langelier index a dose leaves behind, and the pH range they are judged against.
//!
//! Design: a dosing product is tied to a water-engine chemical by its active compound's
//! formula (same composition), never by a hand-kept table, so a product added to
//! `data/products.json` whose compound is in `data/chemicals.json` is connected without code.
//! A dose "as Cl2" is turned into mg/L of the compound through the hypochlorite the compound's
//! balanced dissolution releases (one OCl per available Cl2), and the conversion is kept as a
//! trace so the operator can follow it.

use super::caution::{Caution, Severity};
use super::site::{SiteProfile, regulatory_defaults};
use crate::engine::sigfig::{Measured, format_sig};
use crate::engine::trace::{Origin, Quantity, Trace};
use crate::engine::water::{self, Chemical, Component, WaterState};
use crate::engine::{Error, ErrorKind, Result};
use serde::Serialize;

/// The pH range a treated water is judged against (site limit, else the SMCL 6.5–8.5).
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct PhRange {
    pub min: f64,
    pub max: f64,
    /// A danger beyond a permit's range, a warning beyond the secondary standard's.
    pub severity: Severity,
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
        let severity = limit.as_ref().map_or(Severity::Warning, |l| l.severity());
        let (min, max) = limit.map_or((None, None), |l| (l.min, l.max));
        PhRange {
            min: min.unwrap_or(0.0),
            max: max.unwrap_or(14.0),
            severity,
        }
    }

    /// The site's `ph` limit (or the regulatory default when the site sets none).
    pub fn from_site(site: &SiteProfile) -> PhRange {
        PhRange::from_limit(site.effective_limit("ph"))
    }

    /// A `ph-outside-range` caution when `ph` leaves the range, as strong as the limit.
    pub fn check(&self, ph: f64) -> Option<Caution> {
        (ph < self.min || ph > self.max).then(|| {
            Caution::new(self.severity, "ph-outside-range")
                .with("ph", format!("{ph:.2}"))
                .with("min", self.min)
                .with("max", self.max)
        })
    }
}

/// The dose of `chemical` at `purity_percent` that brings `state` to `target_ph`
/// ([`water::neutralize`], which takes the purity as a fraction of one). The purity is in
/// percent, as everywhere else: a value of 1 or less is a fraction typed for a percent (the
/// older meaning of the command line's flag), which read as percent would be a dose a hundred
/// times too large, and is refused (`percent-looks-like-fraction`); above 100 is no purity.
pub fn neutralize_at_purity(
    state: &WaterState,
    chemical: &Chemical,
    target_ph: f64,
    purity_percent: f64,
) -> Result<water::Neutralization> {
    if purity_percent <= 1.0 {
        return Err(Error::new(
            ErrorKind::InvalidInput,
            format!(
                "purity {purity_percent} looks like a fraction: the purity is in percent (90 for 90 %)"
            ),
        )
        .because("percent-looks-like-fraction")
        .with("field", "field-purity"));
    }
    crate::engine::check_range("purity", purity_percent, 0.0, 100.0, "%")?;
    water::neutralize(state, chemical, target_ph, purity_percent / 100.0)
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

/// The lowest total-alkalinity titration end point: Standard Methods 2320 B lists pH 4.3-4.9
/// by alkalinity (4.3 at the highest, from memory). A water already below it has nothing left
/// to titrate, so a positive alkalinity with such a pH is a misreading of one or the other.
const LOWEST_ALKALINITY_END_POINT: f64 = 4.3;

/// Free CO2 above this fraction of its solubility under one atmosphere of CO2 (a partial
/// pressure of 0.1 atm, several hundred times air's) is more than most waters carry
/// (groundwaters rarely exceed about 0.1 atm, from memory): cautioned, the pH meter and the
/// alkalinity are worth a second look.
const HIGH_CO2_FRACTION_OF_SOLUBILITY: f64 = 0.1;

/// mg/L of `compound` that dissolves at `temperature_c` under one atmosphere of it, from the
/// catalog gas's Henry's law constant; `None` for a product without one.
pub fn solubility_mg_l(p: &super::catalog::Product, temperature_c: f64) -> Option<f64> {
    let henry = p.henry.as_ref()?;
    let m = match henry.molar_mass {
        Some(m) => m,
        None => super::catalog::molar_mass(&p.compound).ok()?.0,
    };
    Some(henry.solubility_mg_l_at_1_atm(m, temperature_c))
}

/// The water's pH and alkalinity against each other, the one check the calculator table's
/// guards and the water commands share: a positive alkalinity below the lowest titration end
/// point is refused, and so is free CO2 (`co2_at`, from carbonate equilibrium at the water's
/// temperature) beyond what dissolves under one atmosphere of CO2 at that temperature — such a
/// water would effervesce at the tap, so one of the two readings is wrong, and every result
/// built on it (a CCPP of thousands of mg/L, a DIC of mol/L) would be too. A high but
/// possible CO2 is cautioned (`water-co2-high`). Without a temperature only the end point is
/// checked.
pub fn readings_check(
    catalog: &super::catalog::Catalog,
    ph: f64,
    alkalinity: f64,
    temperature: Option<f64>,
    co2_at: impl FnOnce(f64) -> Option<f64>,
) -> Result<Option<Caution>> {
    if alkalinity > 0.0 && ph < LOWEST_ALKALINITY_END_POINT {
        return Err(Error::new(
            ErrorKind::OutOfRange,
            format!(
                "pH {ph} is below the alkalinity titration's end point ({LOWEST_ALKALINITY_END_POINT}): such a water has no alkalinity left, not {alkalinity} mg/L as CaCO3"
            ),
        )
        .because("alkalinity-below-end-point")
        .with("ph", ph)
        .with("alkalinity", alkalinity)
        .with("end_point", LOWEST_ALKALINITY_END_POINT));
    }
    let Some(temperature) = temperature else {
        return Ok(None);
    };
    let Some(co2) = co2_at(temperature) else {
        return Ok(None);
    };
    let Some(soluble) = catalog
        .product("carbon-dioxide")
        .ok()
        .and_then(|p| solubility_mg_l(p, temperature))
    else {
        return Ok(None);
    };
    if co2 > soluble {
        return Err(Error::new(
            ErrorKind::OutOfRange,
            format!(
                "pH {ph} with alkalinity {alkalinity} mg/L as CaCO3 means {} mg/L of free CO2, more than water holds at {temperature} °C under one atmosphere of CO2 ({} mg/L): check the pH meter and the alkalinity",
                format_sig(co2, 3),
                format_sig(soluble, 3)
            ),
        )
        .because("water-co2-beyond-solubility")
        .with("ph", ph)
        .with("alkalinity", alkalinity)
        .with("co2", format_sig(co2, 3))
        .with("solubility", format_sig(soluble, 3))
        .with("temperature", temperature));
    }
    Ok((co2 > HIGH_CO2_FRACTION_OF_SOLUBILITY * soluble).then(|| {
        Caution::warning("water-co2-high")
            .with("co2", format_sig(co2, 3))
            .with("ph", ph)
            .with("alkalinity", alkalinity)
    }))
}

/// Standard Methods 1030 E's acceptance of an analysis by its anion–cation balance, by the
/// anion sum in meq/L (from memory): up to 3.0, a difference of 0.2 meq/L; above 3.0 up to
/// 10.0, 2 %; above 10.0, 5 % (the percent as [`water::IonBalance::difference_percent`]).
const ION_BALANCE_LOW_SUM_MEQ_L: f64 = 3.0;
const ION_BALANCE_LOW_SUM_ALLOWED_MEQ_L: f64 = 0.2;
const ION_BALANCE_MID_SUM_MEQ_L: f64 = 10.0;
const ION_BALANCE_MID_SUM_ALLOWED_PERCENT: f64 = 2.0;
const ION_BALANCE_HIGH_SUM_ALLOWED_PERCENT: f64 = 5.0;

/// Checks and cautions on the readings a water was read from: its pH against its alkalinity
/// ([`readings_check`], a refusal or `water-co2-high`, as the calculator table's guards
/// make), and a complete major-ion analysis whose cations and anions do not balance
/// (`water-ion-balance`). A mistyped ion, one written in
/// another basis (calcium as Ca in a field that means as CaCO3 is 2.5 times off) or a major
/// ion left out moves the ionic strength, and with it every pH, index and dose computed from
/// the water; the numbers are still shown, with the caution beside them.
pub fn water_cautions(state: &WaterState) -> Result<Vec<Caution>> {
    let (ph, alkalinity) = state.readings();
    let mut out: Vec<Caution> = readings_check(
        super::catalog::Catalog::embedded()?,
        ph,
        alkalinity,
        Some(state.temperature_c()),
        |_| Some(state.co2_mg_l()),
    )?
    .into_iter()
    .collect();
    out.extend(ion_balance_caution(state));
    Ok(out)
}

/// `water-ion-balance` (see [`water_cautions`]).
fn ion_balance_caution(state: &WaterState) -> Option<Caution> {
    let balance = state.ion_balance()?;
    let difference = balance.cations_meq_l - balance.anions_meq_l;
    let percent = balance.difference_percent();
    let (beyond, allowed) = if balance.anions_meq_l <= ION_BALANCE_LOW_SUM_MEQ_L {
        (
            difference.abs() > ION_BALANCE_LOW_SUM_ALLOWED_MEQ_L,
            format!("{ION_BALANCE_LOW_SUM_ALLOWED_MEQ_L} meq/L"),
        )
    } else if balance.anions_meq_l <= ION_BALANCE_MID_SUM_MEQ_L {
        (
            percent.abs() > ION_BALANCE_MID_SUM_ALLOWED_PERCENT,
            format!("{ION_BALANCE_MID_SUM_ALLOWED_PERCENT} %"),
        )
    } else {
        (
            percent.abs() > ION_BALANCE_HIGH_SUM_ALLOWED_PERCENT,
            format!("{ION_BALANCE_HIGH_SUM_ALLOWED_PERCENT} %"),
        )
    };
    beyond.then(|| {
        Caution::warning("water-ion-balance")
            .with("cations", format_sig(balance.cations_meq_l, 3))
            .with("anions", format_sig(balance.anions_meq_l, 3))
            .with("difference", format!("{percent:+.1}"))
            .with("allowed", allowed)
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::water::WaterInput;

    /// A complete analysis: pH 7.5 at 15 °C, the alkalinity, calcium and magnesium in mg/L as
    /// CaCO3 (50.04 mg a meq), sodium, chloride and sulfate in mg/L of the ion (22.99, 35.45
    /// and 48.03 mg a meq), and potassium 3.91 mg/L (0.100 meq/L), which the sums below count
    /// with sodium.
    fn analysis(alk: f64, ca: f64, mg: f64, na: f64, cl: f64, so4: f64) -> WaterInput {
        WaterInput {
            calcium_mg_l_as_caco3: Some(ca),
            magnesium_mg_l_as_caco3: Some(mg),
            sodium_mg_l: Some(na - 2.30),
            potassium_mg_l: Some(3.91),
            chloride_mg_l: Some(cl),
            sulfate_mg_l: Some(so4),
            ..WaterInput::new(7.5, 15.0, alk)
        }
    }

    /// The one helper: the water's cautions, and the `allowed` of its ion-balance caution
    /// (`None`: no caution).
    fn check(input: WaterInput, allowed: Option<&str>) {
        let state = WaterState::new(&input).expect("a valid water");
        let cautions = water_cautions(&state).expect("a water whose readings agree");
        let got = cautions
            .iter()
            .find(|c| c.key == "water-ion-balance")
            .and_then(|c| c.param("allowed"));
        assert_eq!(got, allowed, "{input:?}: {cautions:?}");
        assert!(cautions.iter().all(|c| c.key == "water-ion-balance"));
    }

    /// The readings' own check, the calculator table's (`readings_check`): a water whose pH
    /// and alkalinity mean more free CO2 than dissolves under one atmosphere is refused; a
    /// high but possible CO2 is cautioned. By hand (25 °C, K1 = 10^-6.35, about 1 450 mg/L
    /// of CO2 under one atmosphere, from memory): alkalinity 100 mg/L as CaCO3 is 2.0 mmol/L
    /// of HCO3-; at pH 6.0 that carries 2.0 × 10^0.35 = 4.5 mmol/L of CO2, 197 mg/L (above a
    /// tenth of the solubility); at pH 5.0, 45 mmol/L, 1 970 mg/L (above all of it); at pH 7.5,
    /// 6 mg/L.
    #[test]
    fn readings_that_mean_more_co2_than_water_holds_are_refused() {
        let at =
            |ph: f64| water_cautions(&WaterState::new(&WaterInput::new(ph, 25.0, 100.0)).unwrap());
        let e = at(5.0).unwrap_err();
        assert_eq!(e.reason(), Some("water-co2-beyond-solubility"), "{e}");
        let keys: Vec<String> = at(6.0).unwrap().into_iter().map(|c| c.key).collect();
        assert_eq!(keys, ["water-co2-high"]);
        assert!(at(7.5).unwrap().is_empty());
    }

    #[test]
    fn a_balanced_analysis_carries_no_caution() {
        // Cations 2.00 + 1.00 + 1.00 = 4.00 meq/L; anions 2.00 + 1.00 + 1.00 = 4.00.
        check(analysis(100.1, 100.1, 50.04, 22.99, 35.45, 48.03), None);
    }

    #[test]
    fn calcium_written_as_the_ion_in_the_as_caco3_field_is_caught() {
        // 40 mg/L of Ca is 100 mg/L as CaCO3; typed as 40 the cations are short by 1.2 of
        // 4.0 meq/L: -17 %, beyond 2 %.
        check(
            analysis(100.1, 40.0, 50.04, 22.99, 35.45, 48.03),
            Some("2 %"),
        );
    }

    #[test]
    fn a_low_sum_is_judged_by_its_difference_in_meq() {
        // Anions 1.00 + 0.50 + 0.50 = 2.00 meq/L. Sodium 0.35 meq/L (8.05 mg/L) short of it by
        // 0.15 (7.8 %, which 2 % would refuse): within 0.2 meq/L.
        check(analysis(50.04, 50.04, 25.02, 8.05, 17.73, 24.02), None);
        // Short by 0.25 meq/L (sodium 5.75 mg/L): beyond it.
        check(
            analysis(50.04, 50.04, 25.02, 5.75, 17.73, 24.02),
            Some("0.2 meq/L"),
        );
    }

    #[test]
    fn a_high_sum_is_allowed_five_percent() {
        // Anions 4 + 4 + 4 = 12 meq/L; cations 4 + 4 + 3.2 (73.57 mg/L Na) = 11.2: -3.4 %.
        check(analysis(200.2, 200.2, 200.2, 73.57, 141.8, 192.1), None);
        // Cations 4 + 4 + 2.4 (55.18 mg/L) = 10.4: -7.1 %.
        check(
            analysis(200.2, 200.2, 200.2, 55.18, 141.8, 192.1),
            Some("5 %"),
        );
    }

    #[test]
    fn an_analysis_without_every_major_ion_is_not_judged() {
        // The same water as the caught one above, without its sulfate or its potassium: the
        // sums would differ by the ion left out, not by an error.
        let mut input = analysis(100.1, 40.0, 50.04, 22.99, 35.45, 48.03);
        input.sulfate_mg_l = None;
        check(input, None);
        let mut input = analysis(100.1, 40.0, 50.04, 22.99, 35.45, 48.03);
        input.potassium_mg_l = None;
        check(input, None);
        // The three readings every operator has.
        check(WaterInput::new(7.5, 15.0, 100.0), None);
    }

    #[test]
    fn a_dosed_water_keeps_the_caution_of_its_analysis() {
        let input = analysis(100.1, 40.0, 50.04, 22.99, 35.45, 48.03);
        let state = WaterState::new(&input).unwrap();
        let caustic = water::Catalog::embedded().unwrap().find("caustic").unwrap();
        let dosed = state
            .dosed(caustic, 10.0, water::Precipitation::None)
            .unwrap();
        assert_eq!(
            water_cautions(&dosed).unwrap(),
            water_cautions(&state).unwrap()
        );
        assert_eq!(water_cautions(&dosed).unwrap().len(), 1);
    }
}
