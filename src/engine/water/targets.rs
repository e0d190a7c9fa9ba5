//! Two targets at once: the doses of two chemicals, fed at the same point, that bring the
//! water to a target pH and to a second target (alkalinity, DIC, calcium, Langelier index or
//! CCPP) together.
//!
//! Design: a damped Newton iteration on the two doses (finite-difference Jacobian from the
//! equilibrium model at the start, then Broyden updates from the steps taken, each step halved
//! until the scaled residual falls, doses kept ≥ 0), which settles in a handful of solves when
//! the pair can reach the targets. A Langelier index target costs a pHs search per solve, not
//! a full `stability` (no CCPP). Behind it, a
//! bracketed search that cannot fail to converge: along the doses that give the target pH
//! (the first chemical's dose found by the engine's bracketed [`dose_for_ph`] for each dose of
//! the second), the second target is bracketed and found by Brent's method. When no bracket
//! exists the answer is a typed `Unreachable` error naming the target out of reach and the
//! range the pair gives (`low`, `high`), or, for the pH, the chemical that would reach it.

use super::solve::brent;
use super::stability::langelier_index;
use super::{Chemical, Component, Precipitation, WaterState, dose_for_ph, masses, stability};
use crate::engine::{Error, ErrorKind, Result, check_range};

/// The second target, with its value.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum SecondTarget {
    /// mg/L as CaCO3.
    Alkalinity(f64),
    /// Dissolved inorganic carbon, mmol/L.
    Dic(f64),
    /// Calcium, mg/L as CaCO3.
    Calcium(f64),
    /// Langelier index.
    Lsi(f64),
    /// Calcium carbonate precipitation potential, mg/L as CaCO3.
    Ccpp(f64),
}

impl SecondTarget {
    /// Stable code (the calculator's `--target-<code>` input).
    pub fn code(self) -> &'static str {
        match self {
            SecondTarget::Alkalinity(_) => "alkalinity",
            SecondTarget::Dic(_) => "dic",
            SecondTarget::Calcium(_) => "calcium",
            SecondTarget::Lsi(_) => "lsi",
            SecondTarget::Ccpp(_) => "ccpp",
        }
    }

    pub fn value(self) -> f64 {
        match self {
            SecondTarget::Alkalinity(v)
            | SecondTarget::Dic(v)
            | SecondTarget::Calcium(v)
            | SecondTarget::Lsi(v)
            | SecondTarget::Ccpp(v) => v,
        }
    }

    /// How far off counts as much as one pH unit in the Newton iteration's merit, and the
    /// tolerance the answer meets (a thousandth of it).
    fn scale(self) -> f64 {
        match self {
            SecondTarget::Alkalinity(_) | SecondTarget::Calcium(_) => 10.0,
            SecondTarget::Dic(_) => 0.2,
            SecondTarget::Lsi(_) => 0.2,
            SecondTarget::Ccpp(_) => 5.0,
        }
    }

    /// The quantity in `state`.
    fn of(self, state: &WaterState) -> Result<f64> {
        let caco3 = masses()?.caco3;
        Ok(match self {
            SecondTarget::Alkalinity(_) => state.alkalinity_mg_l_as_caco3(),
            SecondTarget::Dic(_) => state.total_mmol_l(Component::CO3),
            SecondTarget::Calcium(_) => state.total_mmol_l(Component::Ca) * caco3,
            SecondTarget::Lsi(_) => langelier_index(state)?.ok_or_else(|| {
                Error::new(
                    ErrorKind::Unreachable,
                    "no pH saturates this water with calcium carbonate: it has no Langelier index",
                )
                .because("stability-needs-positive")
                .with("quantity", "alkalinity")
            })?,
            SecondTarget::Ccpp(_) => stability(state)?.ccpp_mg_l_as_caco3,
        })
    }
}

/// The two doses and the water they give.
#[derive(Clone, Debug, PartialEq)]
pub struct TwoDoses {
    /// mg/L of the first chemical's compound.
    pub first_mg_l: f64,
    /// mg/L of the second chemical's compound.
    pub second_mg_l: f64,
    pub ph: f64,
    pub alkalinity_mg_l_as_caco3: f64,
    /// The second target's quantity reached.
    pub second_value: f64,
    /// `None` without calcium (or when no pH saturates the water).
    pub langelier_index: Option<f64>,
    /// Equilibrium solves the answer took (what the speed figures count).
    pub evaluations: usize,
}

/// Largest dose of either chemical considered, mg/L.
const MAX_DOSE: f64 = 20_000.0;

fn precipitation(a: &Chemical, b: &Chemical) -> Precipitation {
    if a.is_coagulant() || b.is_coagulant() {
        Precipitation::Hydroxide
    } else {
        Precipitation::None
    }
}

/// The doses of `first` and `second` (mg/L of each compound, both fed at the same point) that
/// bring `state` to `target_ph` and `second_target` together.
pub fn two_targets(
    state: &WaterState,
    first: &Chemical,
    second: &Chemical,
    target_ph: f64,
    second_target: SecondTarget,
) -> Result<TwoDoses> {
    let x = check_range("target pH", target_ph, 0.0, 14.0, "")?;
    let y = second_target.value();
    if !y.is_finite() {
        return Err(Error::new(
            ErrorKind::InvalidInput,
            "the second target must be a number",
        )
        .because("not-a-number")
        .with("quantity", second_target.code()));
    }
    if first.id == second.id {
        return Err(Error::new(
            ErrorKind::InvalidInput,
            format!(
                "two targets need two different chemicals, not {} twice",
                first.id
            ),
        )
        .because("same-chemical-twice")
        .with("chemical", &first.id));
    }
    let prec = precipitation(first, second);
    let scale = second_target.scale();
    let count = std::cell::Cell::new(0usize);
    let eval = |d: [f64; 2]| -> Result<(WaterState, f64)> {
        count.set(count.get() + 1);
        let after = state.dosed_together(&[(first, d[0]), (second, d[1])], prec)?;
        let g = second_target.of(&after)?;
        Ok((after, g))
    };
    let answer =
        |after: &WaterState, d: [f64; 2], g: f64, evaluations: usize| -> Result<TwoDoses> {
            Ok(TwoDoses {
                first_mg_l: d[0],
                second_mg_l: d[1],
                ph: after.ph(),
                alkalinity_mg_l_as_caco3: after.alkalinity_mg_l_as_caco3(),
                second_value: g,
                langelier_index: langelier_index(after).ok().flatten(),
                evaluations,
            })
        };
    let done = |ph: f64, g: f64| (ph - x).abs() < 2e-4 && (g - y).abs() < 1e-4 * scale;

    // Damped Newton on the two doses. The Jacobian is taken by finite differences (two more
    // solves) at the start and whenever a step along the current one fails; between, each
    // accepted step updates it by Broyden's rank-one secant formula, so a step costs one
    // solve instead of three (with an index as the second target a solve is a pHs search).
    let mut d = [0.0, 0.0];
    let (mut at, mut g) = eval(d)?;
    let merit = |ph: f64, g: f64| (ph - x).powi(2) + ((g - y) / scale).powi(2);
    let jacobian = |d: [f64; 2], ph: f64, g: f64| -> Result<[[f64; 2]; 2]> {
        let mut jac = [[0.0; 2]; 2];
        for k in 0..2 {
            let h = (1e-3 * d[k]).max(1e-2);
            let mut dk = d;
            dk[k] += h;
            let (s, gk) = eval(dk)?;
            jac[0][k] = (s.ph() - ph) / h;
            jac[1][k] = ((gk - g) / scale) / h;
        }
        Ok(jac)
    };
    let mut jac = jacobian(d, at.ph(), g)?;
    let mut fresh = true;
    for _ in 0..40 {
        if done(at.ph(), g) {
            return answer(&at, d, g, count.get());
        }
        let r = [at.ph() - x, (g - y) / scale];
        let det = jac[0][0] * jac[1][1] - jac[0][1] * jac[1][0];
        let mut moved = false;
        if det.is_finite() && det.abs() >= 1e-14 {
            let step = [
                -(jac[1][1] * r[0] - jac[0][1] * r[1]) / det,
                -(-jac[1][0] * r[0] + jac[0][0] * r[1]) / det,
            ];
            let m0 = merit(at.ph(), g);
            let mut lambda = 1.0;
            for _ in 0..12 {
                let trial = [
                    (d[0] + lambda * step[0]).clamp(0.0, MAX_DOSE),
                    (d[1] + lambda * step[1]).clamp(0.0, MAX_DOSE),
                ];
                if let Ok((s, gt)) = eval(trial)
                    && merit(s.ph(), gt) < m0
                {
                    // Broyden: J += (Δf − J·Δd) Δdᵀ / |Δd|², with the step actually taken.
                    let dd = [trial[0] - d[0], trial[1] - d[1]];
                    let df = [s.ph() - at.ph(), (gt - g) / scale];
                    let norm = dd[0] * dd[0] + dd[1] * dd[1];
                    if norm > 0.0 {
                        for row in 0..2 {
                            let miss = df[row] - (jac[row][0] * dd[0] + jac[row][1] * dd[1]);
                            jac[row][0] += miss * dd[0] / norm;
                            jac[row][1] += miss * dd[1] / norm;
                        }
                    }
                    d = trial;
                    at = s;
                    g = gt;
                    moved = true;
                    break;
                }
                lambda *= 0.5;
            }
        }
        if moved {
            fresh = false;
        } else if fresh {
            break;
        } else {
            // The updated Jacobian led nowhere: take it afresh where we are.
            jac = jacobian(d, at.ph(), g)?;
            fresh = true;
        }
    }
    if done(at.ph(), g) {
        return answer(&at, d, g, count.get());
    }
    bracketed(
        state,
        first,
        second,
        x,
        second_target,
        prec,
        count.get(),
        &answer,
    )
}

/// Makes the answer from the water, the doses, the second quantity and the solves counted.
type Answer = dyn Fn(&WaterState, [f64; 2], f64, usize) -> Result<TwoDoses>;

/// The search behind Newton: along the doses that give pH `x` (the first chemical's dose for
/// each dose of the second), the second target by Brent's method.
#[allow(clippy::too_many_arguments)]
fn bracketed(
    state: &WaterState,
    first: &Chemical,
    second: &Chemical,
    x: f64,
    target: SecondTarget,
    prec: Precipitation,
    evaluations: usize,
    answer: &Answer,
) -> Result<TwoDoses> {
    let y = target.value();
    // The first chemical's dose for pH x after `d2` of the second; `None` when it cannot
    // bring that water to x.
    // A water the engine cannot take there (a brine at the largest doses, no Langelier index)
    // is off the curve too: the search never fails on it, it only looks elsewhere.
    let count = std::cell::Cell::new(evaluations);
    let on_curve = |d2: f64| -> Result<Option<([f64; 2], WaterState, f64)>> {
        count.set(count.get() + 1);
        let Ok(base) = state.dosed(second, d2, prec) else {
            return Ok(None);
        };
        let Ok(d1) = dose_for_ph(&base, first, x, prec).map(|r| r.dose_mg_l) else {
            return Ok(None);
        };
        let Ok(after) = state.dosed_together(&[(first, d1), (second, d2)], prec) else {
            return Ok(None);
        };
        let Ok(g) = target.of(&after) else {
            return Ok(None);
        };
        Ok(Some(([d1, d2], after, g)))
    };
    // Doses of the second chemical to try: 0, then doubling from 0.5 mg/L.
    let mut grid = vec![0.0];
    let mut v = 0.5;
    while v <= MAX_DOSE {
        grid.push(v);
        v *= 2.0;
    }
    let mut feasible: Vec<(f64, f64)> = Vec::new();
    let mut last: Option<(f64, f64)> = None;
    for &d2 in &grid {
        let Some((d, after, g)) = on_curve(d2)? else {
            if feasible.is_empty() {
                continue;
            }
            // The pH can no longer be held at x: the curve has ended.
            break;
        };
        if (g - y).abs() < 1e-4 * target.scale() {
            return answer(&after, d, g, count.get());
        }
        if let Some((d2a, ga)) = last
            && (ga - y) * (g - y) < 0.0
        {
            let mut failure = None;
            let root = brent(
                |s| match on_curve(s) {
                    Ok(Some((_, _, gs))) => gs - y,
                    Ok(None) => f64::NAN,
                    Err(e) => {
                        failure = Some(e);
                        f64::NAN
                    }
                },
                d2a,
                d2,
                ga - y,
                g - y,
                1e-9 * d2.max(1.0),
            );
            if let Some(e) = failure {
                return Err(e);
            }
            if let Some(root) = root
                && let Some((d, after, g)) = on_curve(root)?
            {
                return answer(&after, d, g, count.get());
            }
        }
        feasible.push((d2, g));
        last = Some((d2, g));
    }
    if feasible.is_empty() {
        // Neither chemical, in any share, brings the water to the target pH.
        let ph0 = state.ph();
        let suggestion = if x > ph0 { "caustic" } else { "sulfuric-acid" };
        return Err(Error::new(
            ErrorKind::Unreachable,
            format!(
                "pH {x:.2} is out of reach with {} and {} from pH {ph0:.2}; {suggestion} would reach it",
                first.id, second.id
            ),
        )
        .because("target-out-of-reach")
        .with("target", "ph")
        .with("value", format!("{x:.2}"))
        .with("suggestion", suggestion));
    }
    let low = feasible.iter().map(|p| p.1).fold(f64::INFINITY, f64::min);
    let high = feasible
        .iter()
        .map(|p| p.1)
        .fold(f64::NEG_INFINITY, f64::max);
    Err(Error::new(
        ErrorKind::Unreachable,
        format!(
            "{} {y} is out of reach at pH {x:.2} with {} and {}: they give {low:.3} to {high:.3} there; a target in that range, or another pair, would reach it",
            target.code(),
            first.id,
            second.id
        ),
    )
    .because("target-out-of-reach")
    .with("target", target.code())
    .with("value", format!("{y}"))
    .with("low", format!("{low:.3}"))
    .with("high", format!("{high:.3}")))
}
