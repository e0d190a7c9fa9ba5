//! Units of flow, feed and product volume, US and SI, as traced unit-definition steps.
//!
//! Design: every conversion goes through a [`Trace`] of exact unit definitions (1 gal =
//! 3.785411784 L, 1 lb = 453.59237 g, by the 1959 international yard and pound agreement and
//! US customary gallon = 231 in³), so the operator's "8.34" is derived by [`pounds_factor`]
//! and shown as one labelled step, never typed. Units are enums parsed from short codes the
//! CLI and the site profile share.

use crate::engine::sigfig::Measured;
use crate::engine::trace::{Origin, Quantity, Trace};
use crate::engine::{Error, ErrorKind, Result, check_positive, check_range};
use serde::{Deserialize, Serialize};

/// Litres per US gallon and grams per pound: the exact definitions in [`crate::engine::quantity`].
pub use crate::engine::quantity::{G_PER_LB, L_PER_GAL};

/// The largest flow accepted, L/d.
pub const MAX_L_PER_DAY: f64 = 1e12;

/// Plant flow units.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum FlowUnit {
    Mgd,
    Gpm,
    M3h,
    M3d,
    Lps,
}

impl FlowUnit {
    pub fn parse(text: &str) -> Result<FlowUnit> {
        Ok(match text.trim().to_ascii_lowercase().as_str() {
            "mgd" => FlowUnit::Mgd,
            "gpm" => FlowUnit::Gpm,
            "m3h" | "m3/h" | "m³/h" => FlowUnit::M3h,
            "m3d" | "m3/d" | "m³/d" => FlowUnit::M3d,
            "lps" | "l/s" => FlowUnit::Lps,
            other => {
                return Err(Error::new(
                    ErrorKind::InvalidInput,
                    format!("unknown flow unit '{other}': use mgd, gpm, m3h, m3d or lps"),
                )
                .with("unit", other));
            }
        })
    }

    pub fn symbol(self) -> &'static str {
        match self {
            FlowUnit::Mgd => "MGD",
            FlowUnit::Gpm => "gpm",
            FlowUnit::M3h => "m³/h",
            FlowUnit::M3d => "m³/d",
            FlowUnit::Lps => "L/s",
        }
    }

    /// The exact unit-definition steps from this unit to L/d: (numerator, unit, denominator, unit).
    fn steps_to_l_per_day(self) -> Vec<(f64, &'static str, f64, &'static str)> {
        match self {
            FlowUnit::Mgd => vec![
                (1_000_000.0, "gal/d", 1.0, "MGD"),
                (L_PER_GAL, "L/d", 1.0, "gal/d"),
            ],
            FlowUnit::Gpm => vec![
                (1440.0, "gal/d", 1.0, "gpm"),
                (L_PER_GAL, "L/d", 1.0, "gal/d"),
            ],
            FlowUnit::M3h => vec![(24.0, "m³/d", 1.0, "m³/h"), (1000.0, "L/d", 1.0, "m³/d")],
            FlowUnit::M3d => vec![(1000.0, "L/d", 1.0, "m³/d")],
            FlowUnit::Lps => vec![(86_400.0, "L/d", 1.0, "L/s")],
        }
    }
}

/// A plant flow as measured.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Flow {
    pub value: Measured,
    pub unit: FlowUnit,
}

impl Flow {
    pub fn new(value: Measured, unit: FlowUnit) -> Flow {
        Flow { value, unit }
    }

    /// Rejects zero, negative and non-numeric flows, and flows above 10¹² L/d (about
    /// 264 000 MGD, a hundred times the largest plants: a slipped unit, not a plant).
    pub fn validate(&self) -> Result<()> {
        check_positive("flow", self.value.value, self.unit.symbol())?;
        let l_per_unit: f64 = self
            .unit
            .steps_to_l_per_day()
            .iter()
            .map(|(n, _, d, _)| n / d)
            .product();
        check_range(
            "flow",
            self.value.value,
            0.0,
            MAX_L_PER_DAY / l_per_unit,
            self.unit.symbol(),
        )?;
        Ok(())
    }

    /// The flow converted to L/d, as a trace of exact unit definitions.
    pub fn to_l_per_day(&self) -> Result<Trace> {
        self.validate()?;
        let mut t = Trace::new(
            Quantity::new(self.value.value, self.unit.symbol()),
            Origin::Measured,
            self.value.sig_figs,
        );
        for (n, nu, d, du) in self.unit.steps_to_l_per_day() {
            t.then(
                Quantity::new(n, nu),
                Quantity::new(d, du),
                Origin::UnitDefinition,
                None,
            )?;
        }
        Ok(t)
    }

    /// The flow in MGD (for the pounds formula), as a trace through L/d when needed.
    pub fn to_mgd(&self) -> Result<Trace> {
        if self.unit == FlowUnit::Mgd {
            self.validate()?;
            return Ok(Trace::new(
                Quantity::new(self.value.value, "MGD"),
                Origin::Measured,
                self.value.sig_figs,
            ));
        }
        let mut t = self.to_l_per_day()?;
        t.then(
            Quantity::new(1.0, "gal/d"),
            Quantity::new(L_PER_GAL, "L/d"),
            Origin::UnitDefinition,
            None,
        )?;
        t.then(
            Quantity::new(1.0, "MGD"),
            Quantity::new(1_000_000.0, "gal/d"),
            Origin::UnitDefinition,
            None,
        )?;
        Ok(t)
    }
}

/// The pounds-formula factor, derived: lb/d fed per (mg/L × MGD), from exact unit definitions.
/// Its value is 8.3454…; the trade rounds it to 8.34.
pub fn pounds_factor() -> Trace {
    let mut t = Trace::new(Quantity::new(1.0, "MGD"), Origin::UnitDefinition, None);
    // Every factor is a definition, so these steps cannot fail; a failure would be a bug in
    // the unit strings, which the unit tests catch.
    let steps: [(f64, &str, f64, &str); 2] = [
        (1_000_000.0, "gal/d", 1.0, "MGD"),
        (L_PER_GAL, "L/d", 1.0, "gal/d"),
    ];
    for (n, nu, d, du) in steps {
        let _ = t.then(
            Quantity::new(n, nu),
            Quantity::new(d, du),
            Origin::UnitDefinition,
            None,
        );
    }
    let _ = t.times(
        Quantity::new(1.0, "mg/L"),
        "mg/d",
        Origin::UnitDefinition,
        None,
    );
    let _ = t.then(
        Quantity::new(1.0, "g/d"),
        Quantity::new(1000.0, "mg/d"),
        Origin::UnitDefinition,
        None,
    );
    let _ = t.then(
        Quantity::new(1.0, "lb/d"),
        Quantity::new(G_PER_LB, "g/d"),
        Origin::UnitDefinition,
        None,
    );
    t
}

/// Product volume-rate units.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum VolumeRateUnit {
    #[serde(rename = "gal/d")]
    GalPerDay,
    #[serde(rename = "gph")]
    Gph,
    #[serde(rename = "lph")]
    Lph,
    #[serde(rename = "ml/min")]
    MlPerMin,
    #[serde(rename = "l/d")]
    LPerDay,
}

impl VolumeRateUnit {
    pub fn parse(text: &str) -> Result<VolumeRateUnit> {
        Ok(match text.trim().to_ascii_lowercase().as_str() {
            "gal/d" | "gpd" => VolumeRateUnit::GalPerDay,
            "gph" | "gal/h" => VolumeRateUnit::Gph,
            "lph" | "l/h" => VolumeRateUnit::Lph,
            "ml/min" | "mlpm" => VolumeRateUnit::MlPerMin,
            "l/d" | "lpd" => VolumeRateUnit::LPerDay,
            other => {
                return Err(Error::new(
                    ErrorKind::InvalidInput,
                    format!(
                        "unknown volume rate unit '{other}': use gal/d, gph, lph, ml/min or l/d"
                    ),
                )
                .with("unit", other));
            }
        })
    }

    pub fn symbol(self) -> &'static str {
        match self {
            VolumeRateUnit::GalPerDay => "gal/d",
            VolumeRateUnit::Gph => "gph",
            VolumeRateUnit::Lph => "L/h",
            VolumeRateUnit::MlPerMin => "mL/min",
            VolumeRateUnit::LPerDay => "L/d",
        }
    }

    /// How many L/d one of this unit is (exact definitions).
    pub fn l_per_day(self) -> f64 {
        match self {
            VolumeRateUnit::GalPerDay => L_PER_GAL,
            VolumeRateUnit::Gph => L_PER_GAL * 24.0,
            VolumeRateUnit::Lph => 24.0,
            VolumeRateUnit::MlPerMin => 1440.0 / 1000.0,
            VolumeRateUnit::LPerDay => 1.0,
        }
    }
}

/// Mass-rate units for dry feeders and gas feeders.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
pub enum MassRateUnit {
    #[serde(rename = "lb/d")]
    LbPerDay,
    #[serde(rename = "kg/d")]
    KgPerDay,
    #[serde(rename = "g/h")]
    GPerHour,
}

impl MassRateUnit {
    pub fn parse(text: &str) -> Result<MassRateUnit> {
        Ok(match text.trim().to_ascii_lowercase().as_str() {
            "lb/d" | "ppd" => MassRateUnit::LbPerDay,
            "kg/d" => MassRateUnit::KgPerDay,
            "g/h" => MassRateUnit::GPerHour,
            other => {
                return Err(Error::new(
                    ErrorKind::InvalidInput,
                    format!("unknown mass rate unit '{other}': use lb/d, kg/d or g/h"),
                )
                .with("unit", other));
            }
        })
    }

    pub fn symbol(self) -> &'static str {
        match self {
            MassRateUnit::LbPerDay => "lb/d",
            MassRateUnit::KgPerDay => "kg/d",
            MassRateUnit::GPerHour => "g/h",
        }
    }

    /// How many kg/d one of this unit is (exact definitions).
    pub fn kg_per_day(self) -> f64 {
        match self {
            MassRateUnit::LbPerDay => G_PER_LB / 1000.0,
            MassRateUnit::KgPerDay => 1.0,
            MassRateUnit::GPerHour => 24.0 / 1000.0,
        }
    }
}

/// Volume units for tanks, basins and calibration columns.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum VolumeUnit {
    Gal,
    L,
    M3,
    Ml,
}

impl VolumeUnit {
    pub fn parse(text: &str) -> Result<VolumeUnit> {
        Ok(match text.trim().to_ascii_lowercase().as_str() {
            "gal" => VolumeUnit::Gal,
            "l" => VolumeUnit::L,
            "m3" | "m³" => VolumeUnit::M3,
            "ml" => VolumeUnit::Ml,
            other => {
                return Err(Error::new(
                    ErrorKind::InvalidInput,
                    format!("unknown volume unit '{other}': use gal, l, m3 or ml"),
                )
                .with("unit", other));
            }
        })
    }

    pub fn litres(self) -> f64 {
        match self {
            VolumeUnit::Gal => L_PER_GAL,
            VolumeUnit::L => 1.0,
            VolumeUnit::M3 => 1000.0,
            VolumeUnit::Ml => 0.001,
        }
    }

    pub fn symbol(self) -> &'static str {
        match self {
            VolumeUnit::Gal => "gal",
            VolumeUnit::L => "L",
            VolumeUnit::M3 => "m³",
            VolumeUnit::Ml => "mL",
        }
    }
}

/// Length units for tank geometry.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum LengthUnit {
    Ft,
    In,
    M,
    Cm,
}

impl LengthUnit {
    pub fn parse(text: &str) -> Result<LengthUnit> {
        Ok(match text.trim().to_ascii_lowercase().as_str() {
            "ft" => LengthUnit::Ft,
            "in" => LengthUnit::In,
            "m" => LengthUnit::M,
            "cm" => LengthUnit::Cm,
            other => {
                return Err(Error::new(
                    ErrorKind::InvalidInput,
                    format!("unknown length unit '{other}': use ft, in, m or cm"),
                )
                .with("unit", other));
            }
        })
    }

    pub fn symbol(self) -> &'static str {
        match self {
            LengthUnit::Ft => "ft",
            LengthUnit::In => "in",
            LengthUnit::M => "m",
            LengthUnit::Cm => "cm",
        }
    }

    /// Decimetres per unit, because 1 dm³ = 1 L (exact: 1 in = 2.54 cm).
    pub fn decimetres(self) -> f64 {
        match self {
            LengthUnit::Ft => 3.048,
            LengthUnit::In => 0.254,
            LengthUnit::M => 10.0,
            LengthUnit::Cm => 0.1,
        }
    }
}

/// Which system a site reports in, and the operator reads and types in.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize, Deserialize, Default)]
#[serde(rename_all = "kebab-case")]
pub enum UnitSystem {
    #[default]
    Us,
    Si,
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pounds_factor_is_derived_and_rounds_to_the_trade_value() {
        let t = pounds_factor();
        assert_eq!(t.result().unit, "lb/d");
        assert_eq!(t.steps.len(), 5);
        // Trade value 8.34 (pounds formula, e.g. Sacramento State operator manuals).
        assert!((t.value() - 8.34).abs() < 0.01, "{}", t.value());
    }

    #[test]
    fn every_flow_unit_reaches_l_per_day() {
        for (u, one_in_l_per_day) in [
            (FlowUnit::Mgd, 1e6 * L_PER_GAL),
            (FlowUnit::Gpm, 1440.0 * L_PER_GAL),
            (FlowUnit::M3h, 24_000.0),
            (FlowUnit::M3d, 1000.0),
            (FlowUnit::Lps, 86_400.0),
        ] {
            let t = Flow::new(Measured::exact(1.0), u).to_l_per_day().unwrap();
            assert_eq!(t.result().unit, "L/d");
            assert!((t.value() - one_in_l_per_day).abs() < 1e-6 * one_in_l_per_day);
        }
    }
}
