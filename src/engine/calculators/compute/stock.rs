//! Compute function of the `tank-volume` calculator: the product a tank holds at a level, how
//! full it is, and how many days it lasts at a use rate (and until the reorder level).
//!
//! Design choice: a child of [`super`] like the other calculator files; the geometry is the
//! engine's one tank geometry ([`crate::engine::dosing::tank`]), which the pump cross-check's
//! level drop and the log's stock reports use too. The tank is either a shape the request
//! gives by its mode and dimensions (in m), or the site's tank (`Request::tank`) with its own
//! shape, height, strapping table and reorder level; giving both is refused rather than one
//! silently winning. No date is computed here: the engine has no clock, so the days to the
//! reorder level are a result and the front end that knows today turns them into a date
//! through [`crate::engine::dosing::tank::date_after`].

use super::{Outcome, Request, headline, measured, outcome, result};
use crate::engine::dosing::NamedTrace;
use crate::engine::dosing::caution::Caution;
use crate::engine::dosing::tank::{Geometry, TankShape};
use crate::engine::quantity::Quantity as Q;
use crate::engine::sigfig::format_sig;
use crate::engine::trace::{Origin, Quantity, Trace};
use crate::engine::{Error, ErrorKind, Result, check_positive, check_range};

/// The dimension inputs of a shape given on the request.
const DIMENSIONS: [&str; 5] = ["diameter", "length", "width", "height", "cone-height"];

fn dimension(request: &Request, name: &'static str) -> Result<f64> {
    request.get(name).ok_or_else(|| {
        Error::new(ErrorKind::InvalidInput, format!("{name} is missing"))
            .because("missing-input")
            .with("input", name)
    })
}

/// The tank's geometry and reorder level (m): the site's tank, or the mode's shape.
fn geometry(request: &Request) -> Result<(Geometry, Option<f64>)> {
    let typed_reorder = request.get("reorder-level");
    if let Some(tank) = &request.tank {
        if let Some(name) = DIMENSIONS.iter().find(|n| request.get(n).is_some()) {
            return Err(Error::new(
                ErrorKind::InvalidInput,
                format!(
                    "the site's tank '{}' has its own dimensions; leave out --{name}",
                    tank.id
                ),
            )
            .because("tank-given-twice")
            .with("input", *name));
        }
        return Ok((tank.geometry.clone(), typed_reorder.or(tank.reorder_level)));
    }
    let d = |n| dimension(request, n);
    let shape = match request.mode.unwrap_or("vertical-cylinder") {
        "horizontal-cylinder" => TankShape::HorizontalCylinder {
            diameter: d("diameter")?,
            length: d("length")?,
        },
        "rectangular" => TankShape::Rectangular {
            length: d("length")?,
            width: d("width")?,
        },
        "cone-bottom" => TankShape::ConeBottom {
            diameter: d("diameter")?,
            cone_height: d("cone-height")?,
        },
        "strapping" => {
            return Err(Error::new(
                ErrorKind::InvalidInput,
                "a strapping table comes from the site profile: give the site and its tank",
            )
            .because("strapping-needs-site-tank"));
        }
        _ => TankShape::VerticalCylinder {
            diameter: d("diameter")?,
        },
    };
    let height = match shape {
        // A horizontal cylinder's full height is its diameter.
        TankShape::HorizontalCylinder { .. } => None,
        _ => Some(d("height")?),
    };
    Ok((Geometry::shape(shape, height)?, typed_reorder))
}

/// Volume at the level, fill, days of supply and days to the reorder level.
pub(crate) fn tank_volume(_: &super::super::Calculators, request: &Request) -> Result<Outcome> {
    let level = measured(request, "level")?;
    let (geometry, reorder) = geometry(request)?;
    let volume = geometry.volume_l(level.value)?;
    let capacity = geometry.capacity_l()?;
    check_positive("tank volume", capacity, "L")?;
    let mut out = outcome(String::new());
    out.results
        .push(headline("volume", volume, Q::Volume, Some("product")));
    out.results.push(headline(
        "fill_percent",
        volume / capacity * 100.0,
        Q::Percent,
        None,
    ));
    if let Some(r) = reorder {
        check_range("reorder level", r, 0.0, geometry.full_height(), "m")?;
    }
    let reorder_volume = reorder.map(|r| geometry.volume_l(r)).transpose()?;
    if let Some(rv) = reorder_volume
        && volume <= rv
    {
        out.cautions.push(
            Caution::warning("tank-at-reorder-level")
                .with("volume", format_sig(volume, 3))
                .with("reorder_volume", format_sig(rv, 3)),
        );
    }
    let Some(use_rate) = request.get("use-rate") else {
        return Ok(out);
    };
    check_positive("use rate", use_rate, "L/d")?;
    let mut t = Trace::new(
        Quantity::of(volume, "L", "product"),
        Origin::Measured,
        level.sig_figs,
    );
    t.then(
        Quantity::new(1.0, "d"),
        Quantity::of(use_rate, "L", "product"),
        Origin::Measured,
        request.figures("use-rate"),
    )?;
    out.results
        .push(headline("days_of_supply", t.value(), Q::Days, None));
    out.traces.push(NamedTrace::new("days-of-supply", t));
    if let Some(rv) = reorder_volume {
        out.results.push(result(
            "days_to_reorder",
            ((volume - rv) / use_rate).max(0.0),
            Q::Days,
            None,
        ));
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use crate::engine::calculators::{Calculators, Request, find};
    use crate::engine::dosing::catalog::Catalog;
    use crate::engine::dosing::site::SiteProfile;
    use std::f64::consts::PI;

    /// Runs `tank-volume` in `mode` with SI values (m, L/d), or on the demo site's `tank`.
    fn run(
        mode: &'static str,
        tank: Option<&str>,
        values: &[(&'static str, f64)],
    ) -> crate::engine::Result<crate::engine::calculators::Outcome> {
        let mut r = Request::new(find("tank-volume").unwrap());
        r.mode = Some(mode);
        r.values = values.iter().copied().collect();
        if let Some(id) = tank {
            let site = SiteProfile::demo(&Catalog::builtin().unwrap()).unwrap();
            r.tank = Some(site.tank(id).unwrap());
        }
        Calculators::new().unwrap().compute(&r)
    }

    /// One case: the result `id` must be `expected` (relative 1e-9), or absent for `None`.
    fn check(
        mode: &'static str,
        tank: Option<&str>,
        values: &[(&'static str, f64)],
        id: &str,
        expected: Option<f64>,
    ) {
        let out = run(mode, tank, values).unwrap_or_else(|e| panic!("{mode}: {e}"));
        let got = out.result(id).map(|r| r.value);
        match (got, expected) {
            (Some(g), Some(e)) => assert!(
                (g - e).abs() <= 1e-9 * e.abs().max(1.0),
                "{mode} {id}: {g} against {e}"
            ),
            (None, None) => {}
            _ => panic!("{mode} {id}: {got:?} against {expected:?}"),
        }
    }

    const FT: f64 = 0.3048;
    const GAL: f64 = 3.785411784;

    #[test]
    fn shapes_through_the_table() {
        // Vertical cylinder, by hand: π (1 m)² × 1.5 m = 1.5π m³ = 1500π L; of 3 m, 50 %.
        let vc = [("diameter", 2.0), ("height", 3.0), ("level", 1.5)];
        check("vertical-cylinder", None, &vc, "volume", Some(1500.0 * PI));
        check("vertical-cylinder", None, &vc, "fill_percent", Some(50.0));
        check("vertical-cylinder", None, &vc, "days_of_supply", None);
        // Rectangular 2 × 1.5 m at 0.8 m: 2.4 m³; of 2 m high, 40 %; 2400 L at 300 L/d: 8 d.
        let rect = [
            ("length", 2.0),
            ("width", 1.5),
            ("height", 2.0),
            ("level", 0.8),
            ("use-rate", 300.0),
        ];
        check("rectangular", None, &rect, "volume", Some(2400.0));
        check("rectangular", None, &rect, "fill_percent", Some(40.0));
        check("rectangular", None, &rect, "days_of_supply", Some(8.0));
        // Horizontal cylinder half full: half of π r² L = π × 1 × 4 / 2 m³ (no height needed).
        let hc = [("diameter", 2.0), ("length", 4.0), ("level", 1.0)];
        check(
            "horizontal-cylinder",
            None,
            &hc,
            "volume",
            Some(2000.0 * PI),
        );
        check("horizontal-cylinder", None, &hc, "fill_percent", Some(50.0));
        // Cone bottom, r = 1 m, cone 0.6 m, full 3 m, level 2 m (by hand: 0.2π + 1.4π m³).
        let cb = [
            ("diameter", 2.0),
            ("cone-height", 0.6),
            ("height", 3.0),
            ("level", 2.0),
        ];
        check("cone-bottom", None, &cb, "volume", Some(1600.0 * PI));
        check(
            "cone-bottom",
            None,
            &cb,
            "fill_percent",
            Some(1.6 / 2.6 * 100.0),
        );
    }

    #[test]
    fn the_demo_sites_tanks() {
        // Hypochlorite day tank: 4 ft diameter, 6 ft high, reorder at 1.5 ft (invented).
        // At 3 ft: π (2 ft)² × 3 ft = 12π ft³; 1 ft³ = 0.3048³ m³ (exact). At 10 gal/d of use
        // the reorder level (π 4 × 1.5 ft³) is (12π − 6π) ft³ / 10 gal/d away.
        let ft3 = FT * FT * FT * 1000.0;
        let v = 12.0 * PI * ft3;
        let day = [("level", 3.0 * FT), ("use-rate", 10.0 * GAL)];
        check(
            "vertical-cylinder",
            Some("hypo-day-tank"),
            &day,
            "volume",
            Some(v),
        );
        check(
            "vertical-cylinder",
            Some("hypo-day-tank"),
            &day,
            "days_to_reorder",
            Some(6.0 * PI * ft3 / (10.0 * GAL)),
        );
        // Bisulfite tote, chart in inches and gallons: 30 in is halfway 24 → 36 in,
        // (205 + 315)/2 = 260 gal; full at 42 in, 330 gal.
        let tote = [("level", 30.0 * 0.0254)];
        check(
            "strapping",
            Some("bisulfite-tote"),
            &tote,
            "volume",
            Some(260.0 * GAL),
        );
        check(
            "strapping",
            Some("bisulfite-tote"),
            &tote,
            "fill_percent",
            Some(260.0 / 330.0 * 100.0),
        );
    }

    #[test]
    fn refusals_name_their_reason() {
        let reason = |mode, tank, values: &[(&'static str, f64)]| {
            run(mode, tank, values).unwrap_err().reason()
        };
        assert_eq!(
            reason("strapping", Some("bisulfite-tote"), &[("level", 1.2)]),
            Some("level-outside-strapping-table")
        );
        assert_eq!(
            reason(
                "vertical-cylinder",
                None,
                &[("diameter", 1.0), ("height", 1.0), ("level", 1.5)]
            ),
            Some("level-above-tank-height")
        );
        assert_eq!(
            reason(
                "vertical-cylinder",
                Some("hypo-day-tank"),
                &[("diameter", 1.0), ("level", 0.5)]
            ),
            Some("tank-given-twice")
        );
        assert_eq!(
            reason("strapping", None, &[("level", 0.5)]),
            Some("strapping-needs-site-tank")
        );
        assert_eq!(
            reason(
                "vertical-cylinder",
                None,
                &[("diameter", 1.0), ("level", 0.5)]
            ),
            Some("missing-input")
        );
    }

    #[test]
    fn at_or_below_the_reorder_level_is_cautioned() {
        let out = run(
            "vertical-cylinder",
            Some("hypo-day-tank"),
            &[("level", 1.0 * FT), ("use-rate", 10.0 * GAL)],
        )
        .unwrap();
        assert!(
            out.cautions
                .iter()
                .any(|c| c.key == "tank-at-reorder-level")
        );
        assert_eq!(out.result("days_to_reorder").map(|r| r.value), Some(0.0));
    }
}
