//! Bracketed root finding (Brent's method) that cannot fail to converge.
//!
//! Design: every solve in the water engine (pH from charge balance, DIC from alkalinity,
//! dose for a target pH, pHs, CCPP) is a monotone one-dimensional problem, so a bracket plus
//! Brent's method (inverse quadratic interpolation with a bisection fallback) is guaranteed
//! to converge; a Newton iteration that diverges in the field is not an option.

/// Finds x in [a, b] with f(x) = 0, given f(a) and f(b) of opposite sign (or zero).
/// Returns `None` when the bracket does not hold a sign change or f gives a non-finite value.
pub fn brent<F: FnMut(f64) -> f64>(
    mut f: F,
    a: f64,
    b: f64,
    fa: f64,
    fb: f64,
    xtol: f64,
) -> Option<f64> {
    let (mut a, mut b, mut fa, mut fb) = (a, b, fa, fb);
    if !(fa.is_finite() && fb.is_finite()) {
        return None;
    }
    if fa == 0.0 {
        return Some(a);
    }
    if fb == 0.0 {
        return Some(b);
    }
    if fa.signum() == fb.signum() {
        return None;
    }
    let (mut c, mut fc) = (a, fa);
    let mut d = b - a;
    let mut e = d;
    for _ in 0..200 {
        if fb.signum() == fc.signum() {
            c = a;
            fc = fa;
            d = b - a;
            e = d;
        }
        if fc.abs() < fb.abs() {
            a = b;
            b = c;
            c = a;
            fa = fb;
            fb = fc;
            fc = fa;
        }
        let tol = 2.0 * f64::EPSILON * b.abs() + 0.5 * xtol;
        let m = 0.5 * (c - b);
        if m.abs() <= tol || fb == 0.0 {
            return Some(b);
        }
        if e.abs() >= tol && fa.abs() > fb.abs() {
            let s = fb / fa;
            let (mut p, mut q);
            if a == c {
                p = 2.0 * m * s;
                q = 1.0 - s;
            } else {
                let qa = fa / fc;
                let r = fb / fc;
                p = s * (2.0 * m * qa * (qa - r) - (b - a) * (r - 1.0));
                q = (qa - 1.0) * (r - 1.0) * (s - 1.0);
            }
            if p > 0.0 {
                q = -q;
            } else {
                p = -p;
            }
            if 2.0 * p < (3.0 * m * q - (tol * q).abs()).min((e * q).abs()) {
                e = d;
                d = p / q;
            } else {
                d = m;
                e = m;
            }
        } else {
            d = m;
            e = m;
        }
        a = b;
        fa = fb;
        b += if d.abs() > tol { d } else { tol * m.signum() };
        fb = f(b);
        if !fb.is_finite() {
            return None;
        }
    }
    Some(b)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn check(f: fn(f64) -> f64, a: f64, b: f64, expected: Option<f64>) {
        let got = brent(f, a, b, f(a), f(b), 1e-12);
        match (got, expected) {
            (Some(x), Some(e)) => assert!((x - e).abs() < 1e-9, "root {x}, expected {e}"),
            (None, None) => {}
            other => panic!("{other:?}"),
        }
    }

    #[test]
    fn finds_roots_or_refuses() {
        check(|x| x * x - 2.0, 0.0, 2.0, Some(2f64.sqrt()));
        check(
            |x| x.powi(3) - x - 2.0,
            1.0,
            2.0,
            Some(1.521_379_706_804_567_5),
        );
        check(|x| (x - 1e-3).signum(), 0.0, 1.0, Some(1e-3)); // discontinuous: still bracketed
        check(|x| x * x + 1.0, -1.0, 1.0, None); // no sign change
        check(|x| x.ln(), -1.0, 2.0, None); // NaN at an end
    }
}
