//! Pump cross-check: from a drawdown, a catch test or a day-tank level drop to the dose the
//! plant is actually getting, its deviation from target, and a verdict; and the same for a
//! feeder set by mass: a dry chemical's catch (what the feeder delivers in a timed interval,
//! weighed) or a gas cylinder's scale loss over a timed interval, rate = mass ÷ time, active
//! = product × purity (through the strength conversion the feed calculator uses).
//!
//! Design: the measured product rate is pushed back through the same strength conversion the
//! feed calculator uses (the `product-strength` trace is the forward conversion of 1 kg/d), so
//! feed → pump → drawdown → dose is an exact round trip (a property test checks it). The
//! tolerance bands are plant choices; the defaults (±5 % within tolerance, beyond ±25 % check
//! the pump) are common practice with no published source.

use super::NamedTrace;
use super::catalog::{Catalog, Strength, active_to_product, resolve_sg};
use super::caution::{Caution, finish};
use super::feed::{UsableRange, product_cautions};
use super::units::{Flow, LengthUnit};
use crate::engine::sigfig::{Measured, combine};
use crate::engine::trace::{Origin, Quantity, Trace};
use crate::engine::{Error, ErrorKind, Result, check_positive, check_range};
use serde::Serialize;

/// Day-tank shape for a level-drop test: the one tank geometry of [`super::tank`].
pub use super::tank::TankShape;

/// What was measured.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Measurement {
    /// Volume drawn from a calibration column, mL, over `seconds`.
    Drawdown { ml: Measured, seconds: Measured },
    /// Product mass caught, g, over `seconds` (converted to volume with the SG).
    Catch { grams: Measured, seconds: Measured },
    /// Product mass delivered by a feeder set by mass, g, over `seconds`: a dry feeder's catch
    /// weighed, or the weight a gas cylinder lost on its scale. No volume is involved.
    Weighed { grams: Measured, seconds: Measured },
    /// Level drop in a day tank over `minutes`.
    TankDrop {
        shape: TankShape,
        drop: Measured,
        unit: LengthUnit,
        minutes: Measured,
    },
}

/// Verdict bands, in % deviation from target.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Tolerance {
    pub within_percent: f64,
    pub check_pump_percent: f64,
}

impl Default for Tolerance {
    /// ±5 % is within tolerance; beyond ±25 % check the pump (common practice, no source).
    fn default() -> Tolerance {
        Tolerance {
            within_percent: 5.0,
            check_pump_percent: 25.0,
        }
    }
}

/// The verdict on a cross-check.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Verdict {
    WithinTolerance,
    Adjust,
    CheckPump,
}

impl Verdict {
    pub fn code(self) -> &'static str {
        match self {
            Verdict::WithinTolerance => "within-tolerance",
            Verdict::Adjust => "adjust",
            Verdict::CheckPump => "check-pump",
        }
    }
}

/// Inputs for [`pump_check`].
#[derive(Clone, Debug, PartialEq)]
pub struct PumpCheckInput {
    pub measurement: Measurement,
    pub flow: Flow,
    pub product: String,
    pub strength: Strength,
    /// Target dose, mg/L as the product's `dose_as`.
    pub target_dose: Measured,
    /// The pump setting during the test (% of full output), to suggest the new one.
    pub current_setting_percent: Option<f64>,
    pub tolerance: Tolerance,
}

/// Result of [`pump_check`].
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct PumpCheckResult {
    /// Litres of product per day measured (`None` for a product weighed, fed by mass).
    pub product_l_per_day: Option<f64>,
    /// Kilograms of product per day, as delivered.
    pub product_kg_per_day: f64,
    pub active_kg_per_day: f64,
    pub actual_dose_mg_l: f64,
    pub target_dose_mg_l: f64,
    pub deviation_percent: f64,
    pub verdict: Verdict,
    /// Multiply the pump setting by this to reach the target (target ÷ actual).
    pub adjust_factor: f64,
    pub suggested_setting_percent: Option<f64>,
    pub traces: Vec<NamedTrace>,
    pub cautions: Vec<Caution>,
}

/// The measured product rate in L/d, as a trace.
pub fn measured_rate(m: &Measurement, sg: Option<Measured>) -> Result<Trace> {
    let mut t;
    match *m {
        Measurement::Drawdown { ml, seconds } => {
            check_positive("drawdown volume", ml.value, "mL")?;
            check_positive("test time", seconds.value, "s")?;
            t = Trace::new(
                Quantity::new(ml.value / seconds.value, "mL/s"),
                Origin::Measured,
                combine(ml.sig_figs, seconds.sig_figs),
            );
            t.then(
                Quantity::new(86_400.0 / 1000.0, "L/d"),
                Quantity::new(1.0, "mL/s"),
                Origin::UnitDefinition,
                None,
            )?;
        }
        Measurement::Catch { grams, seconds } => {
            check_positive("caught mass", grams.value, "g")?;
            check_positive("test time", seconds.value, "s")?;
            let sg = sg.ok_or_else(|| {
                Error::new(
                    ErrorKind::InvalidInput,
                    "a catch test needs the product's specific gravity",
                )
                .because("needs-specific-gravity")
                .with("quantity", "specific gravity")
            })?;
            t = Trace::new(
                Quantity::new(grams.value / seconds.value, "g/s"),
                Origin::Measured,
                combine(grams.sig_figs, seconds.sig_figs),
            );
            t.then(
                Quantity::new(1.0, "mL/s"),
                Quantity::new(sg.value, "g/s"),
                Origin::Product {
                    name: "specific gravity (× 1 g/mL)".into(),
                },
                sg.sig_figs,
            )?;
            t.then(
                Quantity::new(86_400.0 / 1000.0, "L/d"),
                Quantity::new(1.0, "mL/s"),
                Origin::UnitDefinition,
                None,
            )?;
        }
        Measurement::Weighed { .. } => {
            return Err(Error::new(
                ErrorKind::InvalidInput,
                "a weighed catch is a mass of product, not a volume",
            )
            .because("needs-liquid-product"));
        }
        Measurement::TankDrop {
            shape,
            drop,
            unit,
            minutes,
        } => {
            check_positive("level drop", drop.value, "")?;
            check_positive("test time", minutes.value, "min")?;
            let dm = unit.decimetres();
            shape.check()?;
            // A drop's volume is the plan area times the drop only where the section is the
            // same at every level; elsewhere it depends on where the level stood.
            let area = shape.plan_area().ok_or_else(|| {
                Error::new(
                    ErrorKind::InvalidInput,
                    format!(
                        "a level drop in a {} tank needs its start level; use the tank's volume at both levels",
                        shape.code()
                    ),
                )
                .because("tank-drop-needs-straight-sides")
            })?;
            let area_dm2 = area * dm * dm;
            t = Trace::new(
                Quantity::new(drop.value * dm / minutes.value, "dm/min"),
                Origin::Measured,
                combine(drop.sig_figs, minutes.sig_figs),
            );
            // 1 dm³ = 1 L exactly, so the tank's plan area in dm² turns a level rate into L/min.
            t.then(
                Quantity::new(area_dm2, "L/min"),
                Quantity::new(1.0, "dm/min"),
                Origin::Product {
                    name: "tank plan area, dm²".into(),
                },
                None,
            )?;
            t.then(
                Quantity::new(1440.0, "L/d"),
                Quantity::new(1.0, "L/min"),
                Origin::UnitDefinition,
                None,
            )?;
        }
    }
    Ok(t)
}

/// Actual feed and dose from a field test, with the verdict.
pub fn pump_check(catalog: &Catalog, input: &PumpCheckInput) -> Result<PumpCheckResult> {
    let p = catalog.product(&input.product)?;
    check_positive("target dose", input.target_dose.value, "mg/L")?;
    input.flow.validate()?;
    let tol = input.tolerance;
    check_positive("tolerance", tol.within_percent, "%")?;
    check_range(
        "check-pump threshold",
        tol.check_pump_percent,
        tol.within_percent,
        1000.0,
        "%",
    )?;
    if let Some(s) = input.current_setting_percent {
        check_positive("current setting", s, "%")?;
        check_range("current setting", s, 0.0, 100.0, "%")?;
    }
    // The forward conversion of 1 kg/d of active to product, inverted below.
    let one = Trace::new(
        Quantity::of(1.0, "kg/d", &p.dose_as),
        Origin::Measured,
        None,
    );
    let (strength, sg_note) = resolve_sg(p, &input.strength);
    let forward = active_to_product(catalog, p, &strength, one)?;
    let (mut t, product_l) = match input.measurement {
        // A feeder set by mass: the product weighed per time, back through the product's
        // strength (purity) to the active chemical.
        Measurement::Weighed { grams, seconds } => {
            check_positive("caught mass", grams.value, "g")?;
            check_positive("test time", seconds.value, "s")?;
            let mut t = Trace::new(
                Quantity::new(grams.value / seconds.value, "g/s"),
                Origin::Measured,
                combine(grams.sig_figs, seconds.sig_figs),
            );
            t.then(
                Quantity::new(86_400.0 / 1000.0, "kg/d"),
                Quantity::new(1.0, "g/s"),
                Origin::UnitDefinition,
                None,
            )?;
            t.then(
                Quantity::of(1.0, "kg/d", &p.dose_as),
                Quantity::new(forward.product_kg_per_day, "kg/d"),
                Origin::Product {
                    name: "strength as delivered (trace product-strength)".into(),
                },
                forward.trace.sig_figs(),
            )?;
            (t, None)
        }
        _ => {
            let l_per_kg = forward.product_l_per_day.ok_or_else(|| {
                Error::new(
                    ErrorKind::InvalidInput,
                    format!(
                        "{} is not a liquid; weigh what its feeder delivers instead",
                        p.id
                    ),
                )
                .because("needs-liquid-product")
            })?;
            let mut t = measured_rate(&input.measurement, strength.sg)?;
            let product_l = t.value();
            t.then(
                Quantity::of(1.0, "kg/d", &p.dose_as),
                Quantity::new(l_per_kg, "L/d"),
                Origin::Product {
                    name: "strength as delivered (trace product-strength)".into(),
                },
                forward.trace.sig_figs(),
            )?;
            (t, Some(product_l))
        }
    };
    let kg = t.value();
    let product_kg = kg * forward.product_kg_per_day;
    let flow = input.flow.to_l_per_day()?;
    t.then(
        Quantity::of(1_000_000.0, "mg/d", &p.dose_as),
        Quantity::of(1.0, "kg/d", &p.dose_as),
        Origin::UnitDefinition,
        None,
    )?;
    t.then(
        Quantity::of(1.0, "mg/L", &p.dose_as),
        Quantity::new(flow.value(), "mg/d"),
        Origin::Measured,
        flow.sig_figs(),
    )?;
    let actual = t.value();
    let target = input.target_dose.value;
    let deviation = (actual - target) / target * 100.0;
    let verdict = if deviation.abs() <= tol.within_percent {
        Verdict::WithinTolerance
    } else if deviation.abs() <= tol.check_pump_percent {
        Verdict::Adjust
    } else {
        Verdict::CheckPump
    };
    let factor = target / actual;
    // A deviation this large is a fault to find (air lock, valves, tubing, strength) before
    // any adjustment: no new setting is suggested beside "check the pump".
    let suggested = input
        .current_setting_percent
        .filter(|_| verdict != Verdict::CheckPump)
        .map(|s| s * factor);
    let mut cautions = product_cautions(p);
    cautions.extend(sg_note);
    match verdict {
        Verdict::WithinTolerance => cautions.push(Caution::info("pump-check-within-tolerance")),
        Verdict::Adjust => cautions.push(
            Caution::warning("pump-check-adjust")
                .with("deviation_percent", format!("{deviation:.1}"))
                .with("factor", format!("{factor:.3}")),
        ),
        Verdict::CheckPump => cautions.push(
            Caution::danger("pump-check-inspect")
                .with("deviation_percent", format!("{deviation:.1}")),
        ),
    }
    // The suggested setting is held to the band a metering pump is accurate in, as a feed's
    // setting is.
    cautions.extend(suggested.and_then(|s| UsableRange::default().caution(s)));
    Ok(PumpCheckResult {
        product_l_per_day: product_l,
        product_kg_per_day: product_kg,
        active_kg_per_day: kg,
        actual_dose_mg_l: actual,
        target_dose_mg_l: target,
        deviation_percent: deviation,
        verdict,
        adjust_factor: factor,
        suggested_setting_percent: suggested,
        traces: vec![
            NamedTrace::new("product-strength", forward.trace),
            NamedTrace::new("actual-dose", t),
            NamedTrace::new("flow", flow),
        ],
        cautions: finish(cautions),
    })
}
