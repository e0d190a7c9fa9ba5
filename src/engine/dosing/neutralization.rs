//! pH adjustment from dose to pump: the water engine finds the dose of an acid or a base that
//! brings the operator's water to a target pH, and the feed calculator turns it into product
//! feed and a pump setting, in one call.
//!
//! Design: the product is a delivered dosing product (strength, SG, pump) whose active compound
//! is found in the water-chemistry catalog by formula; the water engine works with the pure
//! compound and the feed calculator applies the strength, so purity is counted once. The
//! product's hazard and incompatibility cautions come with the feed result.

use super::NamedTrace;
use super::catalog::{Catalog, Strength};
use super::caution::{Caution, finish};
use super::feed::{self, FeedInput, FeedResult, PumpKind, UsableRange};
use super::units::Flow;
use super::waterside::{PhRange, water_chemical};
use crate::engine::formula::Formula;
use crate::engine::sigfig::Measured;
use crate::engine::water::{self, WaterState};
use crate::engine::{Error, ErrorKind, Result};
use serde::Serialize;

/// Inputs for [`neutralization`].
#[derive(Clone, Debug, PartialEq)]
pub struct NeutralizationInput {
    /// Dosing-catalog product id (hydrated-lime, quicklime, sodium-hydroxide, soda-ash,
    /// sulfuric-acid, hydrochloric-acid, ...).
    pub product: String,
    pub strength: Strength,
    pub target_ph: f64,
    pub flow: Flow,
    pub pump: Option<PumpKind>,
    pub usable_range: UsableRange,
    pub max_use_level_mg_l: Option<f64>,
    /// The range the adjusted pH is judged against.
    pub ph_range: PhRange,
    /// Significant figures the dose is known to: an equilibrium dose is as good as the
    /// readings behind it (alkalinity and the two pHs); `None` when they were exact.
    pub dose_sig_figs: Option<u8>,
    /// Whether to judge the treated water against calcium carbonate
    /// (`langelier_index_after`): a second solve and a saturation search, which a range's
    /// moved readings and a caller that judges the water itself leave out.
    pub langelier_index: bool,
}

/// Result of [`neutralization`].
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct NeutralizationResult {
    pub product: String,
    /// Water-engine chemical id of the product's active compound.
    pub chemical: String,
    /// mg/L of the pure compound (the product's `dose_as`).
    pub dose_mg_l: f64,
    pub ph_before: f64,
    pub ph_after: f64,
    pub alkalinity_before_mg_l_as_caco3: f64,
    pub alkalinity_after_mg_l_as_caco3: f64,
    /// Langelier index after the dose (`None` without calcium).
    pub langelier_index_after: Option<f64>,
    /// Product feed and pump setting for the dose.
    pub feed: FeedResult,
    pub traces: Vec<NamedTrace>,
    pub cautions: Vec<Caution>,
}

/// Dose of `input.product` for `input.target_ph` in `water`, and its feed and pump setting.
/// A target the product cannot reach (an acid asked to raise the pH, a base that levels off)
/// is an `Unreachable` error naming a chemical that would.
pub fn neutralization(
    catalog: &Catalog,
    water: &WaterState,
    input: &NeutralizationInput,
) -> Result<NeutralizationResult> {
    let p = catalog.product(&input.product)?;
    let compound = Formula::parse(&p.compound)?;
    if !Formula::parse(&p.dose_as)?.same_composition(&compound) {
        return Err(Error::new(
            ErrorKind::InvalidInput,
            format!(
                "{} is dosed as {}, not as its compound {}: not a pH-adjustment product",
                p.id, p.dose_as, p.compound
            ),
        )
        .because("product-not-for-calculator")
        .with("product", &p.id));
    }
    let chemical = water_chemical(&p.compound)?;
    // Purity 1: the engine doses the pure compound, the feed calculator applies the strength.
    let n = if input.langelier_index {
        water::neutralize(water, chemical, input.target_ph, 1.0)?
    } else {
        water::neutralizing_dose(water, chemical, input.target_ph, 1.0)?
    };
    let f = feed::feed(
        catalog,
        &FeedInput {
            flow: input.flow,
            dose: Measured {
                value: n.dose_mg_l,
                sig_figs: input.dose_sig_figs,
            },
            product: p.id.clone(),
            strength: input.strength,
            pump: input.pump,
            usable_range: input.usable_range,
            max_use_level_mg_l: input.max_use_level_mg_l,
        },
    )?;
    let mut cautions = f.cautions.clone();
    cautions.extend(input.ph_range.check(n.ph));
    if n.dose_mg_l <= 0.0 {
        cautions.push(Caution::warning("zero-dose"));
    }
    Ok(NeutralizationResult {
        product: p.id.clone(),
        chemical: chemical.id.clone(),
        dose_mg_l: n.dose_mg_l,
        ph_before: water.ph(),
        ph_after: n.ph,
        alkalinity_before_mg_l_as_caco3: water.alkalinity_mg_l_as_caco3(),
        alkalinity_after_mg_l_as_caco3: n.alkalinity_mg_l_as_caco3,
        langelier_index_after: n.langelier_index,
        traces: f.traces.clone(),
        feed: f,
        cautions: finish(cautions),
    })
}
