//! Helpers the engine's test modules share: the shipped catalog, exact inputs, and the one
//! tolerance comparison.

use molefeed::engine::dosing::catalog::Catalog;
use molefeed::engine::sigfig::Measured;

pub fn catalog() -> Catalog {
    Catalog::builtin().expect("embedded catalog parses")
}

/// A value typed as exact (no significant-figure limit), for checks of the arithmetic itself.
pub fn m(v: f64) -> Measured {
    Measured::exact(v)
}

/// The one comparison helper: `actual` within `tol` (absolute) of `expected`.
pub fn check(what: &str, actual: f64, expected: f64, tol: f64) {
    assert!(
        (actual - expected).abs() <= tol,
        "{what}: got {actual}, expected {expected} ± {tol}"
    );
}
