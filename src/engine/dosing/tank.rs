//! Tank geometry: the volume a tank holds at a level, its capacity, and the days of supply
//! that volume gives at a use rate.
//!
//! Design choice: one geometry for every user of a tank — the `tank-volume` calculator, the
//! day-tank drop of the pump cross-check (`pumpcheck`), and what the log's stock and "really
//! fed" reports read from tank levels. A shape is a handful of dimensions in one length unit
//! and [`TankShape::volume`] gives the volume in that unit cubed; a tank of the site profile
//! (shape and full height, or its own strapping table) is converted to SI once
//! ([`Tank`]: metres and litres). Levels are measured from the tank's lowest point (a cone
//! bottom's tip, a horizontal cylinder's bottom line). The formulas are textbook solid
//! geometry: a cylinder π r² h; a horizontal cylinder with flat ends is its length times the
//! circular segment's area r² acos((r − h)/r) − (r − h) √(2 r h − h²); a cone filled from the
//! tip to h holds (h/H)³ of the cone's π r² H / 3. A strapping table (the tank maker's level →
//! volume chart) is interpolated linearly between its points and refuses a level outside it.

use crate::engine::{Error, ErrorKind, Result, check_positive, check_range};
use std::f64::consts::PI;

/// A tank's shape by its dimensions, all in one length unit.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum TankShape {
    /// Upright cylinder, flat bottom.
    VerticalCylinder { diameter: f64 },
    /// Cylinder lying on its side, flat ends; its full height is its diameter.
    HorizontalCylinder { diameter: f64, length: f64 },
    /// Upright box.
    Rectangular { length: f64, width: f64 },
    /// Upright cylinder standing on a cone whose tip is the lowest point; `cone_height` is
    /// the cone's part of the height.
    ConeBottom { diameter: f64, cone_height: f64 },
}

impl TankShape {
    /// Stable code (the calculator's mode, the site profile's `shape`).
    pub fn code(self) -> &'static str {
        match self {
            TankShape::VerticalCylinder { .. } => "vertical-cylinder",
            TankShape::HorizontalCylinder { .. } => "horizontal-cylinder",
            TankShape::Rectangular { .. } => "rectangular",
            TankShape::ConeBottom { .. } => "cone-bottom",
        }
    }

    /// Refuses a dimension that is not a positive number.
    pub fn check(self) -> Result<()> {
        match self {
            TankShape::VerticalCylinder { diameter } => {
                check_positive("tank diameter", diameter, "")?;
            }
            TankShape::HorizontalCylinder { diameter, length } => {
                check_positive("tank diameter", diameter, "")?;
                check_positive("tank length", length, "")?;
            }
            TankShape::Rectangular { length, width } => {
                check_positive("tank length", length, "")?;
                check_positive("tank width", width, "")?;
            }
            TankShape::ConeBottom {
                diameter,
                cone_height,
            } => {
                check_positive("tank diameter", diameter, "")?;
                check_positive("cone height", cone_height, "")?;
            }
        }
        Ok(())
    }

    /// The plan area where it is the same at every level (unit²): a level drop times it is the
    /// volume drawn, whatever the level. `None` for a horizontal cylinder or a cone bottom,
    /// whose section changes with the level.
    pub fn plan_area(self) -> Option<f64> {
        match self {
            TankShape::VerticalCylinder { diameter } => Some(PI / 4.0 * diameter * diameter),
            TankShape::Rectangular { length, width } => Some(length * width),
            TankShape::HorizontalCylinder { .. } | TankShape::ConeBottom { .. } => None,
        }
    }

    /// The height the shape itself fixes (a horizontal cylinder's diameter); `None` when the
    /// tank's height is a dimension of its own.
    pub fn own_height(self) -> Option<f64> {
        match self {
            TankShape::HorizontalCylinder { diameter, .. } => Some(diameter),
            _ => None,
        }
    }

    /// The volume held at `level` (unit³), the level from the lowest point, 0 ≤ level and, for
    /// a horizontal cylinder, level ≤ diameter (the caller checks the tank's full height).
    /// The one geometry function every user of a tank goes through.
    pub fn volume(self, level: f64) -> f64 {
        if let Some(area) = self.plan_area() {
            return area * level;
        }
        match self {
            TankShape::HorizontalCylinder { diameter, length } => {
                let r = diameter / 2.0;
                let h = level.clamp(0.0, diameter);
                // Circular segment of height h: r² acos((r − h)/r) − (r − h) √(2rh − h²).
                let cos = ((r - h) / r).clamp(-1.0, 1.0);
                let chord_half = (2.0 * r * h - h * h).max(0.0).sqrt();
                (r * r * cos.acos() - (r - h) * chord_half) * length
            }
            TankShape::ConeBottom {
                diameter,
                cone_height,
            } => {
                let r = diameter / 2.0;
                let cone = PI * r * r * cone_height / 3.0;
                if level <= cone_height {
                    // Similar cones: the filled tip is (h/H)³ of the whole cone.
                    cone * (level / cone_height).powi(3)
                } else {
                    cone + PI * r * r * (level - cone_height)
                }
            }
            _ => 0.0,
        }
    }
}

/// A tank maker's chart: levels (m) and the volumes (L) they hold, levels strictly rising.
#[derive(Clone, Debug, PartialEq)]
pub struct Strapping {
    points: Vec<(f64, f64)>,
}

impl Strapping {
    /// A chart from (level m, volume L) pairs: at least two, finite, levels from 0 up strictly
    /// rising, volumes not negative and never falling (a tank does not hold less when fuller).
    pub fn new(points: Vec<(f64, f64)>) -> Result<Strapping> {
        if points.len() < 2 {
            return Err(Error::new(
                ErrorKind::InvalidInput,
                "a strapping table needs at least two level → volume points",
            )
            .because("strapping-table-invalid"));
        }
        for (i, (level, volume)) in points.iter().enumerate() {
            check_range("tank level", *level, 0.0, f64::MAX, "m")?;
            check_range("tank volume", *volume, 0.0, f64::MAX, "L")?;
            if i > 0 && (*level <= points[i - 1].0 || *volume < points[i - 1].1) {
                return Err(Error::new(
                    ErrorKind::InvalidInput,
                    "a strapping table's levels must rise and its volumes never fall",
                )
                .because("strapping-table-invalid"));
            }
        }
        Ok(Strapping { points })
    }

    pub fn points(&self) -> &[(f64, f64)] {
        &self.points
    }

    /// The volume at `level` (m), linear between the chart's two nearest points; a level
    /// outside the chart is refused rather than extrapolated.
    pub fn volume_l(&self, level: f64) -> Result<f64> {
        let (first, last) = (self.points[0], self.points[self.points.len() - 1]);
        if !level.is_finite() || level < first.0 || level > last.0 {
            return Err(Error::new(
                ErrorKind::OutOfRange,
                format!(
                    "level {level} m is outside the strapping table ({} to {} m)",
                    first.0, last.0
                ),
            )
            .because("level-outside-strapping-table")
            .with("quantity", "tank level"));
        }
        let i = self.points.partition_point(|p| p.0 < level).max(1);
        let (a, b) = (self.points[i - 1], self.points[i]);
        Ok(a.1 + (b.1 - a.1) * (level - a.0) / (b.0 - a.0))
    }
}

/// How a tank's volume follows its level.
#[derive(Clone, Debug, PartialEq)]
pub enum Geometry {
    /// A shape in metres, with its full height in metres.
    Shape { shape: TankShape, height: f64 },
    /// The tank's own chart.
    Strapping(Strapping),
}

impl Geometry {
    /// A shape (dimensions in m) with its full height (m): a horizontal cylinder's height is
    /// its diameter whatever is given; a cone bottom's height must exceed its cone.
    pub fn shape(shape: TankShape, height: Option<f64>) -> Result<Geometry> {
        shape.check()?;
        let height = match (shape.own_height(), height) {
            (Some(h), _) => h,
            (None, Some(h)) => check_positive("tank height", h, "m")?,
            (None, None) => {
                return Err(
                    Error::new(ErrorKind::InvalidInput, "tank height is missing")
                        .because("tank-dimension-missing")
                        .with("quantity", "tank height"),
                );
            }
        };
        if let TankShape::ConeBottom { cone_height, .. } = shape
            && cone_height >= height
        {
            return Err(Error::new(
                ErrorKind::InvalidInput,
                "the cone's height must be less than the tank's full height",
            )
            .because("cone-taller-than-tank"));
        }
        Ok(Geometry::Shape { shape, height })
    }

    /// The full height, m.
    pub fn full_height(&self) -> f64 {
        match self {
            Geometry::Shape { height, .. } => *height,
            Geometry::Strapping(s) => s.points[s.points.len() - 1].0,
        }
    }

    /// The volume at `level` (m from the lowest point), L; a level below 0 or above the full
    /// height is refused.
    pub fn volume_l(&self, level: f64) -> Result<f64> {
        match self {
            Geometry::Strapping(s) => s.volume_l(level),
            Geometry::Shape { shape, height } => {
                check_range("tank level", level, 0.0, f64::MAX, "m")?;
                if level > *height * (1.0 + 1e-12) {
                    return Err(Error::new(
                        ErrorKind::OutOfRange,
                        format!("level {level} m is above the tank's full height {height} m"),
                    )
                    .because("level-above-tank-height")
                    .with("quantity", "tank level"));
                }
                // m³ → L: 1 m³ = 1000 L by definition.
                Ok(shape.volume(level.min(*height)) * 1000.0)
            }
        }
    }

    /// The volume when full, L.
    pub fn capacity_l(&self) -> Result<f64> {
        self.volume_l(self.full_height())
    }
}

/// A tank as the stock reports use it: its geometry in SI, the site product it holds and the
/// level at which the plant reorders.
#[derive(Clone, Debug, PartialEq)]
pub struct Tank {
    pub id: String,
    pub name: String,
    /// Id of the site's delivered product it holds, if named.
    pub product: Option<String>,
    pub geometry: Geometry,
    /// Level (m) at which the plant reorders, if it sets one.
    pub reorder_level: Option<f64>,
}

/// The day a supply that lasts `days` from `today` reaches its end (or the reorder level):
/// whole days are counted, a part day ends the supply that day (the earlier date, so an
/// order is never late). `None` for a negative or non-finite count or a date past the
/// calendar.
pub fn date_after(today: chrono::NaiveDate, days: f64) -> Option<chrono::NaiveDate> {
    if !(0.0..=1e6).contains(&days) {
        return None;
    }
    today.checked_add_days(chrono::Days::new(days.floor() as u64))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: f64, b: f64, what: &str) {
        assert!(
            (a - b).abs() <= 1e-9 * b.abs().max(1.0),
            "{what}: {a} against {b}"
        );
    }

    /// One horizontal-cylinder case: diameter, length, level, the expected volume.
    fn horizontal(d: f64, l: f64, h: f64, expected: f64) {
        let s = TankShape::HorizontalCylinder {
            diameter: d,
            length: l,
        };
        close(s.volume(h), expected, &format!("horizontal d={d} h={h}"));
    }

    #[test]
    fn horizontal_cylinder_follows_the_circular_segment() {
        // Expected values by hand from the segment formula with the central angle θ:
        // A = r²(θ − sin θ)/2, θ = 2 acos((r − h)/r) (standard geometry; a different
        // expression of the same area than the code's).
        let seg = |r: f64, h: f64| {
            let theta = 2.0 * ((r - h) / r).acos();
            r * r * (theta - theta.sin()) / 2.0
        };
        // Empty and full: 0 and π r² L.
        horizontal(2.0, 5.0, 0.0, 0.0);
        horizontal(2.0, 5.0, 2.0, PI * 5.0);
        // Half full: half the cylinder, π r² L / 2.
        horizontal(2.0, 5.0, 1.0, PI * 5.0 / 2.0);
        // Quarter and three-quarter diameter: together they fill the whole cylinder.
        horizontal(2.0, 5.0, 0.5, seg(1.0, 0.5) * 5.0);
        horizontal(2.0, 5.0, 1.5, PI * 5.0 - seg(1.0, 0.5) * 5.0);
        horizontal(6.0, 12.0, 0.9, seg(3.0, 0.9) * 12.0);
        // h = r(1 − cos 60°) = 0.5 r: θ = 120°, A = r²(2π/3 − √3/2)/2.
        horizontal(
            4.0,
            1.0,
            1.0,
            4.0 * (2.0 * PI / 3.0 - 3f64.sqrt() / 2.0) / 2.0,
        );
    }

    #[test]
    fn cone_bottom_is_cone_plus_cylinder() {
        // Diameter 2 m (r = 1), cone 0.6 m, full height 3 m, by hand:
        // cone = π·1²·0.6/3 = 0.2π m³; the cylinder above holds π m³ per m.
        let g = Geometry::shape(
            TankShape::ConeBottom {
                diameter: 2.0,
                cone_height: 0.6,
            },
            Some(3.0),
        )
        .unwrap();
        close(g.volume_l(0.0).unwrap(), 0.0, "empty");
        close(g.volume_l(0.6).unwrap(), 0.2 * PI * 1000.0, "cone full");
        // Half the cone's height: radius 0.5 m, π·0.25·0.3/3 = 0.025π m³.
        close(g.volume_l(0.3).unwrap(), 0.025 * PI * 1000.0, "half cone");
        close(
            g.volume_l(2.0).unwrap(),
            (0.2 + 1.4) * PI * 1000.0,
            "into the cylinder",
        );
        close(g.capacity_l().unwrap(), (0.2 + 2.4) * PI * 1000.0, "full");
    }

    #[test]
    fn strapping_table_interpolates_and_refuses_outside() {
        let s =
            Strapping::new(vec![(0.0, 0.0), (0.5, 400.0), (1.0, 1000.0), (2.0, 2600.0)]).unwrap();
        // By hand: between (0.5, 400) and (1.0, 1000), 0.75 is halfway: 700 L.
        close(s.volume_l(0.75).unwrap(), 700.0, "between points");
        close(s.volume_l(1.0).unwrap(), 1000.0, "on a point");
        close(s.volume_l(1.25).unwrap(), 1400.0, "quarter way 1→2");
        close(s.volume_l(2.0).unwrap(), 2600.0, "top");
        let e = s.volume_l(2.01).unwrap_err();
        assert_eq!(e.reason(), Some("level-outside-strapping-table"));
        assert!(Strapping::new(vec![(0.0, 0.0), (0.0, 1.0)]).is_err());
        assert!(Strapping::new(vec![(0.0, 5.0), (1.0, 4.0)]).is_err());
    }

    #[test]
    fn levels_beyond_the_tank_are_refused() {
        let g = Geometry::shape(TankShape::VerticalCylinder { diameter: 1.0 }, Some(2.0)).unwrap();
        assert_eq!(
            g.volume_l(2.5).unwrap_err().reason(),
            Some("level-above-tank-height")
        );
        assert!(g.volume_l(-0.1).is_err());
        let cone = TankShape::ConeBottom {
            diameter: 1.0,
            cone_height: 2.0,
        };
        assert_eq!(
            Geometry::shape(cone, Some(2.0)).unwrap_err().reason(),
            Some("cone-taller-than-tank")
        );
    }

    #[test]
    fn supply_dates_count_whole_days() {
        let d = chrono::NaiveDate::from_ymd_opt(2026, 11, 28).unwrap();
        assert_eq!(
            date_after(d, 3.9),
            chrono::NaiveDate::from_ymd_opt(2026, 12, 1)
        );
        assert_eq!(date_after(d, -1.0), None);
    }
}
