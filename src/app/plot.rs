//! Plot geometry: data points to the SVG-style command string a Slint `Path` draws.
//!
//! Design choice: the app draws its own plots (no plotting crate, no bitmap): Rust maps data
//! to a fixed 1000 × 600 view box and writes `M x y L x y …`; the `.slint` side scales the view
//! box to whatever size the screen gives it. Pure geometry, tested here without the UI.

/// Width and height of the view box the commands are written in.
pub const VIEW_W: f64 = 1000.0;
pub const VIEW_H: f64 = 600.0;

/// An axis range; `lo < hi` is guaranteed by [`Range::around`].
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Range {
    pub lo: f64,
    pub hi: f64,
}

impl Range {
    /// The smallest range holding every value, widened to a non-zero span.
    pub fn around(values: impl IntoIterator<Item = f64>) -> Option<Range> {
        let mut lo = f64::INFINITY;
        let mut hi = f64::NEG_INFINITY;
        for v in values.into_iter().filter(|v| v.is_finite()) {
            lo = lo.min(v);
            hi = hi.max(v);
        }
        if lo > hi {
            return None;
        }
        if hi - lo < 1e-12 {
            let pad = if lo.abs() > 1e-12 {
                lo.abs() * 0.1
            } else {
                1.0
            };
            lo -= pad;
            hi += pad;
        }
        Some(Range { lo, hi })
    }
}

/// The polyline through `points` (x, y) in the view box, y growing upwards.
/// Returns an empty string for fewer than two finite points: nothing is drawn.
pub fn polyline(points: &[(f64, f64)], x: Range, y: Range) -> String {
    let finite: Vec<_> = points
        .iter()
        .filter(|(a, b)| a.is_finite() && b.is_finite())
        .collect();
    if finite.len() < 2 {
        return String::new();
    }
    let mut out = String::new();
    for (i, (px, py)) in finite.iter().enumerate() {
        let sx = (px - x.lo) / (x.hi - x.lo) * VIEW_W;
        let sy = VIEW_H - (py - y.lo) / (y.hi - y.lo) * VIEW_H;
        if i > 0 {
            out.push(' ');
        }
        out.push_str(&format!(
            "{} {:.1} {:.1}",
            if i == 0 { 'M' } else { 'L' },
            sx,
            sy
        ));
    }
    out
}

/// Horizontal grid lines at each of `ticks` y values.
pub fn grid(ticks: &[f64], y: Range) -> String {
    ticks
        .iter()
        .map(|t| {
            let sy = VIEW_H - (t - y.lo) / (y.hi - y.lo) * VIEW_H;
            format!("M 0 {sy:.1} L {VIEW_W} {sy:.1}")
        })
        .collect::<Vec<_>>()
        .join(" ")
}

/// A vertical line at `x` and a horizontal one at `y` across the view box: the marker of a
/// chosen point on a curve. Either is left out when it falls outside its range.
pub fn crosshair(x: Option<f64>, y: Option<f64>, xr: Range, yr: Range) -> String {
    let mut parts = Vec::new();
    if let Some(x) = x.filter(|v| v.is_finite() && (xr.lo..=xr.hi).contains(v)) {
        let sx = (x - xr.lo) / (xr.hi - xr.lo) * VIEW_W;
        parts.push(format!("M {sx:.1} 0 L {sx:.1} {VIEW_H}"));
    }
    if let Some(y) = y.filter(|v| v.is_finite() && (yr.lo..=yr.hi).contains(v)) {
        parts.push(grid(&[y], yr));
    }
    parts.join(" ")
}

/// Round-number ticks inside `r`, about `count` of them: steps of 1, 2 or 5 × 10ⁿ (a pH axis
/// from 6.2 to 10.9 gets 7, 8, 9, 10). Empty for a count of zero.
pub fn ticks(r: Range, count: usize) -> Vec<f64> {
    let span = r.hi - r.lo;
    if count == 0 || !span.is_finite() || span <= 0.0 {
        return Vec::new();
    }
    let rough = span / count as f64;
    let power = 10f64.powf(rough.log10().floor());
    let m = [1.0, 2.0, 5.0, 10.0]
        .into_iter()
        .find(|m| m * power >= rough)
        .unwrap_or(10.0);
    // A step below one as a whole multiplier over a power of ten, so each tick is one exact
    // division (7.1, never 7.1000000000000005).
    let (mult, div) = if power < 1.0 {
        (m, (1.0 / power).round())
    } else {
        (m * power, 1.0)
    };
    let step = mult / div;
    let first = (r.lo / step - 1e-9).ceil() as i64;
    let last = (r.hi / step + 1e-9).floor() as i64;
    (first..=last).map(|i| i as f64 * mult / div).collect()
}

/// Where `v` sits across `r`: 0 at its low end, 1 at its high end.
pub fn fraction(v: f64, r: Range) -> f64 {
    (v - r.lo) / (r.hi - r.lo)
}

/// Short marks up from the x axis at each of `ticks` x values, 3 % of the view box high.
pub fn x_marks(ticks: &[f64], x: Range) -> String {
    ticks
        .iter()
        .map(|t| {
            let sx = fraction(*t, x) * VIEW_W;
            format!("M {sx:.1} {VIEW_H} L {sx:.1} {:.1}", VIEW_H * 0.97)
        })
        .collect::<Vec<_>>()
        .join(" ")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn corners_map_to_the_view_box() {
        let x = Range { lo: 0.0, hi: 10.0 };
        let y = Range { lo: 4.0, hi: 10.0 };
        let p = polyline(&[(0.0, 4.0), (10.0, 10.0), (5.0, 7.0)], x, y);
        assert_eq!(p, "M 0.0 600.0 L 1000.0 0.0 L 500.0 300.0");
    }

    #[test]
    fn too_few_or_non_finite_points_draw_nothing() {
        let r = Range { lo: 0.0, hi: 1.0 };
        assert_eq!(polyline(&[(0.0, 0.0)], r, r), "");
        assert_eq!(polyline(&[(0.0, f64::NAN), (1.0, 1.0)], r, r), "");
    }

    #[test]
    fn crosshair_marks_a_point_inside_the_ranges() {
        let x = Range { lo: 0.0, hi: 20.0 };
        let y = Range { lo: 6.0, hi: 9.0 };
        assert_eq!(
            crosshair(Some(5.0), Some(7.5), x, y),
            "M 250.0 0 L 250.0 600 M 0 300.0 L 1000 300.0"
        );
        assert_eq!(
            crosshair(Some(25.0), Some(7.5), x, y),
            "M 0 300.0 L 1000 300.0"
        );
        assert_eq!(crosshair(None, Some(f64::NAN), x, y), "");
    }

    #[test]
    fn ranges_are_never_empty() {
        assert_eq!(Range::around([]), None);
        let r = Range::around([2.0, 2.0]).unwrap();
        assert!(r.lo < 2.0 && r.hi > 2.0);
        assert_eq!(
            Range::around([3.0, 1.0, 2.0]),
            Some(Range { lo: 1.0, hi: 3.0 })
        );
        assert_eq!(
            grid(&[5.0], Range { lo: 0.0, hi: 10.0 }),
            "M 0 300.0 L 1000 300.0"
        );
    }

    /// Ticks by hand: the round numbers of each range, 1–2–5 steps.
    #[test]
    fn ticks_are_round_numbers_inside_the_range() {
        let check = |lo: f64, hi: f64, count: usize, want: &[f64]| {
            assert_eq!(ticks(Range { lo, hi }, count), want, "{lo}–{hi}");
        };
        check(6.2, 10.9, 6, &[7.0, 8.0, 9.0, 10.0]);
        check(4.0, 11.0, 6, &[4.0, 6.0, 8.0, 10.0]);
        check(0.0, 24.0, 5, &[0.0, 5.0, 10.0, 15.0, 20.0]);
        check(7.05, 7.35, 4, &[7.1, 7.2, 7.3]);
        check(0.0, 0.3, 3, &[0.0, 0.1, 0.2, 0.3]);
        check(1.0, 1.0, 4, &[]);
        check(0.0, 1.0, 0, &[]);
        assert_eq!(fraction(7.5, Range { lo: 6.0, hi: 9.0 }), 0.5);
        assert_eq!(
            x_marks(&[5.0], Range { lo: 0.0, hi: 10.0 }),
            "M 500.0 600 L 500.0 582.0"
        );
    }
}
