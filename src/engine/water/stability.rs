//! Calcium carbonate stability: Langelier index, pHs, Ryznar index and CCPP.
//!
//! Design: pHs is computed by its definition in Standard Methods 2330 — the pH at which the
//! water, with its calcium and alkalinity unchanged, would be saturated with calcite — by a
//! Brent solve over the full speciation (ion pairs and activities included), rather than by
//! the shortcut formula with pK2 − pKs, which ignores pairs. CCPP (closed system) is the
//! CaCO3 that must precipitate (+) or dissolve (−) to reach SI = 0, removing equal moles of Ca
//! and carbonate with the charge excess unchanged, again by a bracketed solve.

use super::constants::Component;
use super::solve::brent;
use super::speciation::{Problem, Solver, Speciation};
use super::{WaterState, masses};
use crate::engine::{Error, ErrorKind, Result};

/// CaCO3 stability indices of a water.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Stability {
    pub ph: f64,
    /// pH of saturation at the same calcium and alkalinity (`None` when no pH ≤ 14 saturates).
    pub phs: Option<f64>,
    /// LSI = pH − pHs (Standard Methods 2330 B).
    pub langelier_index: Option<f64>,
    /// RSI = 2 pHs − pH (Ryznar 1944).
    pub ryznar_index: Option<f64>,
    /// Closed-system calcium carbonate precipitation potential, mg/L as CaCO3 (+ precipitates).
    pub ccpp_mg_l_as_caco3: f64,
    pub si_calcite: f64,
}

/// The index of mineral `name` in the constants; its absence is a data error, typed.
pub(super) fn phase(state: &WaterState, name: &str) -> Result<usize> {
    state.solver.table.phase_index(name).ok_or_else(|| {
        Error::new(
            ErrorKind::InvalidInput,
            format!("no {name} in the water constants"),
        )
    })
}

fn needs(what: &str) -> Error {
    Error::new(
        ErrorKind::InvalidInput,
        format!("CaCO3 stability needs {what} greater than zero"),
    )
    .because("stability-needs-positive")
    .with("quantity", what)
}

/// What every index needs: calcium, carbonate and alkalinity above zero. Returns the
/// calcite phase, the alkalinity (eq/L) and the calcite saturation index.
fn indices_inputs(state: &WaterState) -> Result<(usize, f64, f64)> {
    let ca = state.problem.totals[Component::Ca.index()];
    let dic = state.problem.totals[Component::CO3.index()];
    if ca <= 0.0 {
        return Err(needs("calcium"));
    }
    let alk = state.alkalinity_eq();
    if dic <= 0.0 || alk <= 0.0 {
        return Err(needs("alkalinity"));
    }
    let calcite = phase(state, "Calcite")?;
    Ok((
        calcite,
        alk,
        state.solver.saturation_index(&state.sp, calcite),
    ))
}

/// The Langelier index alone, the same number [`stability`] gives (`None` when no pH up to 14
/// saturates the water): without CCPP, which costs as much again and which a target on the
/// index does not need.
pub fn langelier_index(state: &WaterState) -> Result<Option<f64>> {
    let (calcite, alk, si) = indices_inputs(state)?;
    let ph = state.ph();
    Ok(phs(state, calcite, alk, ph - si).map(|p| ph - p))
}

/// Langelier, Ryznar, CCPP and the calcite saturation index of `state`.
pub fn stability(state: &WaterState) -> Result<Stability> {
    let (calcite, alk, si) = indices_inputs(state)?;
    let ph = state.ph();
    let phs = phs(state, calcite, alk, ph - si);
    let ccpp = ccpp(state, calcite)?;
    Ok(Stability {
        ph,
        phs,
        langelier_index: phs.map(|p| ph - p),
        ryznar_index: phs.map(|p| 2.0 * p - ph),
        ccpp_mg_l_as_caco3: ccpp * 1000.0 * masses()?.caco3,
        si_calcite: si,
    })
}

/// pHs: the pH at which SI(pH), at fixed Ca and alkalinity, is zero (SI rises with pH).
/// `None` when no pH up to 14 saturates the water: in very soft, low-alkalinity water the
/// hydroxide alone would exceed the alkalinity before calcite saturates.
fn phs(state: &WaterState, calcite: usize, alk: f64, guess: f64) -> Option<f64> {
    let s = &state.solver;
    let mut p = state.problem.clone();
    p.totals[Component::CO3.index()] = 0.0;
    // Each pH is solved from the last one's speciation (the water's own to begin with):
    // the search moves by small steps, and a near start saves Newton most of its steps.
    let mut near = state.sp.clone();
    let mut si_at = |ph: f64| -> Option<f64> {
        let sp = s.at_ph_and_alkalinity_near(ph, alk, &p, Some(&near)).ok()?;
        let si = s.saturation_index(&sp, calcite);
        near = sp;
        Some(si)
    };
    // Start from pH − SI (exact when the carbonate is all HCO3-).
    let guess = guess.clamp(2.0, 13.9);
    let (mut lo, mut hi) = (guess - 0.1, guess + 0.1);
    let mut flo = si_at(lo)?;
    while flo > 0.0 {
        if lo <= 1.0 {
            return None;
        }
        lo -= 1.0;
        flo = si_at(lo)?;
    }
    let mut step = 0.5;
    let mut fhi = loop {
        match si_at(hi) {
            Some(v) => break v,
            None if hi - step > lo => hi = (hi - step).max(lo + 1e-6),
            None => return None,
        }
        step *= 0.5;
    };
    while fhi < 0.0 {
        if step < 1e-4 || hi >= 14.0 {
            return None;
        }
        let next = (hi + step).min(14.0);
        match si_at(next) {
            Some(v) => {
                lo = hi;
                flo = fhi;
                hi = next;
                fhi = v;
            }
            None => step *= 0.5,
        }
    }
    brent(|x| si_at(x).unwrap_or(f64::NAN), lo, hi, flo, fhi, 1e-9)
}

/// mol/L of CaCO3 to precipitate (+) or dissolve (−) for SI = 0 in a closed system.
fn ccpp(state: &WaterState, calcite: usize) -> Result<f64> {
    let si0 = state.solver.saturation_index(&state.sp, calcite);
    calcite_to_saturation(&state.solver, &state.problem, &state.sp, si0, calcite).map(|(x, _)| x)
}

/// The CaCO3 (mol/L) that leaves (+) or joins (−) the water of problem `base`, whose
/// speciation `sp0` has calcite saturation index `si0`, for SI = 0, and the speciation then.
/// Caps in `base` (hydroxide phases) stay in force at every step, so a phase that
/// precipitates alongside calcite is kept at its own equilibrium.
pub(super) fn calcite_to_saturation(
    s: &Solver,
    base: &Problem,
    sp0: &Speciation,
    si0: f64,
    calcite: usize,
) -> Result<(f64, Speciation)> {
    if si0 == 0.0 {
        return Ok((0.0, sp0.clone()));
    }
    let ca = base.totals[Component::Ca.index()];
    let dic = base.totals[Component::CO3.index()];
    let mut failure = None;
    let mut warm = sp0.clone();
    let mut si_after = |x: f64| {
        let mut p = base.clone();
        p.totals[Component::Ca.index()] = ca - x;
        p.totals[Component::CO3.index()] = dic - x;
        match s.solve(&p, Some(&warm)) {
            Ok(sp) => {
                let v = s.saturation_index(&sp, calcite);
                warm = sp;
                v
            }
            Err(e) => {
                failure = Some(e);
                f64::NAN
            }
        }
    };
    let root = if si0 > 0.0 {
        let hi = ca.min(dic) * (1.0 - 1e-9);
        let fhi = si_after(hi);
        brent(&mut si_after, 0.0, hi, si0, fhi, 1e-15)
    } else {
        // Dissolution: add CaCO3 until saturated (at most 1 mol/L).
        let mut lo = -1e-4;
        let mut flo = si_after(lo);
        while flo < 0.0 && lo > -1.0 {
            lo *= 4.0;
            flo = si_after(lo);
        }
        brent(&mut si_after, lo, 0.0, flo, si0, 1e-15)
    };
    if let Some(e) = failure {
        return Err(e);
    }
    let x = root.ok_or_else(|| {
        Error::new(
            ErrorKind::OutOfRange,
            "no amount of CaCO3 brings this water to saturation",
        )
    })?;
    let mut p = base.clone();
    p.totals[Component::Ca.index()] = ca - x;
    p.totals[Component::CO3.index()] = dic - x;
    Ok((x, s.solve(&p, Some(sp0))?))
}
