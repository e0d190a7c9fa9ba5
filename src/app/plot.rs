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
}
