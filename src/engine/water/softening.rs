//! Lime softening at equilibrium: the water after a dose when calcite and brucite precipitate.
//!
//! Design: the dose is added as for any chemical; brucite (Mg(OH)2) then caps dissolved
//! magnesium the way the coagulants' hydroxides cap aluminium and iron, and calcite leaves by
//! the same closed-system solve as CCPP (equal moles of calcium and carbonate) until its
//! saturation index is zero, with the brucite cap in force at every step, so both phases end at
//! their own saturation together. This is the equilibrium end point of the basin: real basins
//! stop short of it (their practical hardness floor is higher), so the result says what the
//! chemistry allows and where the pH goes, not what a basin will deliver. Checked against
//! PHREEQC with both phases at equilibrium (`tests/engine/water_reference.rs`).

use super::chemicals::{Chemical, molar_mass};
use super::constants::Component;
use super::speciation::Speciation;
use super::stability::{calcite_to_saturation, phase};
use super::{MAX_MG_L, Precipitation, WaterResult, WaterState, masses};
use crate::engine::{Result, check_range};

/// The water after a softening dose, with what precipitated.
#[derive(Clone, Debug, PartialEq)]
pub struct Softened {
    /// The softened water (its pH, alkalinity and calcite saturation).
    pub water: WaterResult,
    /// CaCO3 precipitated, mg/L.
    pub calcite_mg_l: f64,
    /// Mg(OH)2 precipitated, mg/L.
    pub brucite_mg_l: f64,
    /// Calcium left in solution, mg/L as CaCO3.
    pub calcium_hardness_mg_l_as_caco3: f64,
    /// Magnesium left in solution, mg/L as CaCO3.
    pub magnesium_hardness_mg_l_as_caco3: f64,
}

/// `dose_mg_l` of `chemical` (usually lime) added to `state`, then calcite and brucite
/// precipitated to equilibrium. A water that stays undersaturated keeps its calcium and
/// magnesium (nothing precipitates).
pub fn soften(state: &WaterState, chemical: &Chemical, dose_mg_l: f64) -> Result<Softened> {
    softened(state, chemical, dose_mg_l).map(|(_, s)| s)
}

/// [`soften`] with the softened water as a state of its own, so a plant's path goes on from it.
pub fn softened(
    state: &WaterState,
    chemical: &Chemical,
    dose_mg_l: f64,
) -> Result<(WaterState, Softened)> {
    let dose = check_range("dose", dose_mg_l, 0.0, MAX_MG_L, "mg/L")?;
    let (calcite, brucite) = (phase(state, "Calcite")?, phase(state, "Brucite")?);
    let (ca, co3, mg) = (
        Component::Ca.index(),
        Component::CO3.index(),
        Component::Mg.index(),
    );
    let mut problem = state.dosed_problem(chemical, dose, Precipitation::None);
    problem.caps[mg] = Some(brucite);
    let s = &state.solver;
    let dosed = s.solve(&problem, Some(&state.sp))?;
    let (calcite_mol, sp) = if problem.totals[ca] > 0.0 && problem.totals[co3] > 0.0 {
        let si = s.saturation_index(&dosed, calcite);
        if si > 0.0 {
            calcite_to_saturation(s, &problem, &dosed, si, calcite)?
        } else {
            (0.0, dosed)
        }
    } else {
        (0.0, dosed)
    };
    let mg_left = s.dissolved(&sp, Component::Mg);
    let brucite_mol = (problem.totals[mg] - mg_left).max(0.0);
    // What is left is a water of its own: precipitates removed, no cap any more.
    problem.totals[ca] -= calcite_mol;
    problem.totals[co3] -= calcite_mol;
    problem.totals[mg] = mg_left;
    problem.caps[mg] = None;
    let sp = Speciation {
        totals: problem.totals,
        ..sp
    };
    let softened = WaterState {
        solver: s.clone(),
        problem,
        sp,
        basis: state.basis,
        readings: state.readings,
        masses: state.masses,
    };
    let caco3 = masses()?.caco3;
    let result = Softened {
        water: softened.describe(&softened.sp)?,
        calcite_mg_l: calcite_mol * caco3 * 1000.0,
        brucite_mg_l: brucite_mol * molar_mass("Mg(OH)2")? * 1000.0,
        calcium_hardness_mg_l_as_caco3: softened.problem.totals[ca] * caco3 * 1000.0,
        magnesium_hardness_mg_l_as_caco3: mg_left * caco3 * 1000.0,
    };
    Ok((softened, result))
}
