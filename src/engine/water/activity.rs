//! Activity coefficients: extended (WATEQ) Debye–Hückel where the data give an ion size,
//! Davies otherwise, and log γ = b·I for uncharged species.
//!
//! Design: one function per equation, plus [`fill`] that evaluates every species of the table
//! at one ionic strength into a caller-owned buffer, so the solver allocates nothing per call.

use super::constants::{GammaModel, Table, Thermo};

/// log10 γ of a species of charge `z` at ionic strength `i`.
#[inline]
pub fn log_gamma(model: GammaModel, z: i32, i: f64, th: &Thermo, table: &Table) -> f64 {
    let i = i.max(0.0);
    let sqrt_i = i.sqrt();
    let z2 = (z * z) as f64;
    match model {
        GammaModel::Wateq { a, b } => -th.a_dh * z2 * sqrt_i / (1.0 + th.b_dh * a * sqrt_i) + b * i,
        GammaModel::Davies => -th.a_dh * z2 * (sqrt_i / (1.0 + sqrt_i) - table.davies_linear * i),
        GammaModel::Neutral => table.neutral_b * i,
    }
}

/// d(log10 γ)/dI of a species of charge `z` at ionic strength `i` (for Newton's Jacobian).
#[inline]
pub fn dlog_gamma_di(model: GammaModel, z: i32, i: f64, th: &Thermo, table: &Table) -> f64 {
    let i = i.max(1e-12);
    let sqrt_i = i.sqrt();
    let z2 = (z * z) as f64;
    match model {
        GammaModel::Wateq { a, b } => {
            let d = 1.0 + th.b_dh * a * sqrt_i;
            -th.a_dh * z2 / (2.0 * sqrt_i * d * d) + b
        }
        GammaModel::Davies => {
            let d = 1.0 + sqrt_i;
            -th.a_dh * z2 * (1.0 / (2.0 * sqrt_i * d * d) - table.davies_linear)
        }
        GammaModel::Neutral => table.neutral_b,
    }
}

/// Fills `out[s]` with γ of every species of the table and returns γ of H+.
pub fn fill(table: &Table, th: &Thermo, i: f64, out: &mut [f64]) -> f64 {
    for (g, s) in out.iter_mut().zip(&table.species) {
        *g = 10f64.powf(log_gamma(s.gamma, s.z, i, th, table));
    }
    10f64.powf(log_gamma(table.h_gamma, 1, i, th, table))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn check(model: GammaModel, z: i32, i: f64, expected: f64) {
        let table = Table::embedded();
        let th = table.at(25.0);
        let got = 10f64.powf(log_gamma(model, z, i, &th, table));
        assert!(
            (got - expected).abs() < 0.005,
            "{model:?} z={z} I={i}: gamma {got:.4}, expected {expected}"
        );
    }

    #[test]
    fn davies_and_debye_huckel_values() {
        // Davies with A = 0.509 (references.md §2): I = 0.01, z = 1:
        // log γ = -0.509 (0.1/1.1 - 0.003) = -0.04475 -> γ = 0.902 (hand calculation).
        check(GammaModel::Davies, 1, 0.01, 0.902);
        // z = 2 at the same I: log γ = -0.179 -> γ = 0.662.
        check(GammaModel::Davies, 2, 0.01, 0.662);
        // Ca2+ WATEQ (a = 5.0, b = 0.165; phreeqc.dat) at I = 0.01:
        // -0.509*4*0.1/(1+0.329*5*0.1) + 0.00165 = -0.1733 -> 0.671.
        check(GammaModel::Wateq { a: 5.0, b: 0.165 }, 2, 0.01, 0.671);
        // Dilute limit: γ -> 1; neutral species 10^(0.1 I).
        check(GammaModel::Davies, 2, 0.0, 1.0);
        check(GammaModel::Neutral, 0, 0.1, 1.0233);
    }

    #[test]
    fn derivative_matches_a_finite_difference() {
        let table = Table::embedded();
        let th = table.at(20.0);
        for model in [
            GammaModel::Davies,
            GammaModel::Wateq { a: 5.4, b: 0.02 },
            GammaModel::Neutral,
        ] {
            for i in [1e-4, 0.003, 0.05] {
                let analytic = dlog_gamma_di(model, 2, i, &th, table);
                let h = i * 1e-6;
                let numeric = (log_gamma(model, 2, i + h, &th, table)
                    - log_gamma(model, 2, i - h, &th, table))
                    / (2.0 * h);
                assert!(
                    (analytic - numeric).abs() <= 1e-5 * numeric.abs().max(1.0),
                    "{model:?} I={i}: {analytic} vs {numeric}"
                );
            }
        }
    }
}
