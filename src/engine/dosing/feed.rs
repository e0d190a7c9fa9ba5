//! Feed: dose → active mass per day → product mass and volume per day → pump setting, and
//! day-tank batching.
//!
//! Design: one traced chain per conversion family. The active feed is computed twice, in SI
//! (flow → L/d × mg/L → kg/d) and with the US pounds formula (mg/L × MGD × a derived
//! 8.345 lb/d per mg/L·MGD), so the operator sees the chain they were trained on and the app
//! checks one against the other. Pump settings are plain proportions of the pump's rated
//! output; the usable band (10–90 % by default, common practice) only produces cautions.

use super::NamedTrace;
use super::catalog::{Catalog, Form, Product, Strength, active_to_product, resolve_sg};
use super::caution::{Caution, finish};
use super::units::{Flow, G_PER_LB, L_PER_GAL, MassRateUnit, VolumeRateUnit, pounds_factor};
use crate::engine::sigfig::Measured;
use crate::engine::trace::{Origin, Quantity, Trace};
use crate::engine::{Error, ErrorKind, Result, check_positive, check_range};
use serde::{Deserialize, Serialize};

/// A feeder as described in the site profile.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
#[serde(tag = "type", rename_all = "kebab-case")]
pub enum PumpKind {
    /// Diaphragm or piston metering pump: output at 100 % stroke and 100 % speed.
    Metering { capacity: f64, unit: VolumeRateUnit },
    /// Peristaltic (hose) pump: volume per revolution and top speed.
    Peristaltic { ml_per_rev: f64, max_rpm: f64 },
    /// Volumetric or gravimetric dry feeder: product mass at full dial.
    DryFeeder { capacity: f64, unit: MassRateUnit },
    /// Gas feeder (rotameter): gas mass at full scale.
    GasFeeder { capacity: f64, unit: MassRateUnit },
}

impl PumpKind {
    /// Its full scale in the SI unit the calculator table reads it in: L/h for a metering
    /// pump (`pump-capacity`), kg/d of product for a gas or dry feeder; `None` for a
    /// peristaltic pump, which is set by its volume per revolution and speed.
    pub fn full_scale_si(&self) -> Option<f64> {
        match *self {
            PumpKind::Metering { capacity, unit } => Some(capacity * unit.l_per_day() / 24.0),
            PumpKind::DryFeeder { capacity, unit } | PumpKind::GasFeeder { capacity, unit } => {
                Some(capacity * unit.kg_per_day())
            }
            PumpKind::Peristaltic { .. } => None,
        }
    }

    pub fn validate(&self) -> Result<()> {
        match *self {
            PumpKind::Metering { capacity, .. }
            | PumpKind::DryFeeder { capacity, .. }
            | PumpKind::GasFeeder { capacity, .. } => {
                check_positive("pump capacity", capacity, "")?;
            }
            PumpKind::Peristaltic {
                ml_per_rev,
                max_rpm,
            } => {
                check_positive("volume per revolution", ml_per_rev, "mL")?;
                check_positive("maximum speed", max_rpm, "rpm")?;
            }
        }
        Ok(())
    }
}

/// The usable part of a pump's range, in % of full output.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct UsableRange {
    pub min: f64,
    pub max: f64,
}

impl Default for UsableRange {
    /// 10–90 %: common practice for metering-pump accuracy (no published source).
    fn default() -> UsableRange {
        UsableRange {
            min: 10.0,
            max: 90.0,
        }
    }
}

impl UsableRange {
    /// A setting of `percent` % against the pump's full scale and this band: over 100 % no
    /// setting delivers it (danger); outside the band the pump is less accurate (warning).
    pub fn caution(&self, percent: f64) -> Option<Caution> {
        if percent > 100.0 {
            Some(Caution::danger("pump-over-capacity").with("percent", format!("{percent:.0}")))
        } else if percent > self.max {
            Some(
                Caution::warning("pump-above-usable-range")
                    .with("percent", format!("{percent:.1}"))
                    .with("max", self.max),
            )
        } else if percent < self.min {
            Some(
                Caution::warning("pump-below-usable-range")
                    .with("percent", format!("{percent:.2}"))
                    .with("min", self.min),
            )
        } else {
            None
        }
    }

    pub fn validate(&self) -> Result<()> {
        check_range("usable range minimum", self.min, 0.0, 100.0, "%")?;
        check_range("usable range maximum", self.max, self.min, 100.0, "%")?;
        Ok(())
    }
}

/// Where to set the feeder.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct PumpSetting {
    /// Output as a % of the feeder's full output.
    pub percent: f64,
    /// Metering pumps: stroke length % and speed % whose product gives `percent`.
    pub stroke_percent: Option<f64>,
    pub speed_percent: Option<f64>,
    /// Peristaltic pumps: revolutions per minute.
    pub rpm: Option<f64>,
    pub within_usable_range: bool,
    pub trace: Trace,
}

/// Inputs for [`feed`].
#[derive(Clone, Debug, PartialEq)]
pub struct FeedInput {
    pub flow: Flow,
    /// Dose in mg/L, expressed as the product's `dose_as` (Cl2 for chlorine products).
    pub dose: Measured,
    pub product: String,
    pub strength: Strength,
    pub pump: Option<PumpKind>,
    pub usable_range: UsableRange,
    /// NSF/ANSI/CAN 60 maximum use level of the product, if the plant entered one (mg/L of product).
    pub max_use_level_mg_l: Option<f64>,
}

/// Result of [`feed`].
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct FeedResult {
    pub product: String,
    pub dose_as: String,
    pub dose_mg_l: f64,
    pub active_kg_per_day: f64,
    pub active_lb_per_day: f64,
    pub active_g_per_hour: f64,
    pub product_kg_per_day: f64,
    pub product_lb_per_day: f64,
    /// Product dose in mg/L of product as delivered (for the maximum use level).
    pub product_mg_l: f64,
    pub product_l_per_day: Option<f64>,
    pub product_gal_per_day: Option<f64>,
    pub product_gph: Option<f64>,
    pub product_l_per_h: Option<f64>,
    pub product_ml_per_min: Option<f64>,
    /// lb/d per (mg/L × MGD), derived from unit definitions: the "8.34".
    pub pounds_factor: f64,
    pub pump: Option<PumpSetting>,
    pub traces: Vec<NamedTrace>,
    pub cautions: Vec<Caution>,
}

/// Upper bound for any dose the app accepts, mg/L: far above any water-treatment dose, low
/// enough that a slipped decimal is caught (common practice, no source).
pub const MAX_DOSE_MG_L: f64 = 10_000.0;

/// The product cautions every result for that product carries: hazards, PPE, incompatibilities.
pub fn product_cautions(p: &Product) -> Vec<Caution> {
    let mut out = Vec::new();
    for h in &p.hazards {
        let c = if h.starts_with("ppe-") {
            Caution::info(h.clone())
        } else {
            Caution::warning(h.clone())
        };
        out.push(c.with("product", &p.id));
    }
    for i in &p.incompatibilities {
        out.push(Caution::danger(i.clone()).with("product", &p.id));
    }
    out
}

/// Active feed in kg/d by the SI chain: flow → L/d, × dose → mg/d → kg/d.
pub fn active_feed_si(flow: &Flow, dose: Measured, dose_as: &str) -> Result<Trace> {
    let mut t = flow.to_l_per_day()?;
    t.times(
        Quantity::of(dose.value, "mg/L", dose_as),
        "mg/d",
        Origin::Measured,
        dose.sig_figs,
    )?;
    t.then(
        Quantity::of(1.0, "kg/d", dose_as),
        Quantity::of(1_000_000.0, "mg/d", dose_as),
        Origin::UnitDefinition,
        None,
    )?;
    Ok(t)
}

/// Active feed in lb/d by the pounds formula: dose × MGD × (derived lb/d per mg/L·MGD).
pub fn active_feed_us(flow: &Flow, dose: Measured, dose_as: &str) -> Result<Trace> {
    let mgd = flow.to_mgd()?;
    let mut t = Trace::new(
        Quantity::of(dose.value, "mg/L", dose_as),
        Origin::Measured,
        dose.sig_figs,
    );
    t.times(
        Quantity::new(mgd.value(), "MGD"),
        "mg/L·MGD",
        Origin::Measured,
        mgd.sig_figs(),
    )?;
    t.then(
        Quantity::of(pounds_factor().value(), "lb/d", dose_as),
        Quantity::new(1.0, "mg/L·MGD"),
        Origin::Constant {
            source: "pounds-formula factor, derived from 10⁶ gal/MG × 3.785411784 L/gal × 1 g/1000 mg ÷ 453.59237 g/lb (trace pounds-factor)".into(),
        },
        None,
    )?;
    Ok(t)
}

/// A feed rate as a percentage of a pump's or feeder's full-scale output: the rate in the
/// device's own unit (one of them is `per_base` base units, an exact definition), then over
/// its capacity.
fn percent_of_capacity(
    rate: Quantity,
    unit: &str,
    per_base: f64,
    capacity: f64,
    name: &str,
) -> Result<Trace> {
    let base = rate.unit.clone();
    let mut t = Trace::new(rate, Origin::Measured, None);
    t.then(
        Quantity::new(1.0, unit),
        Quantity::new(per_base, base),
        Origin::UnitDefinition,
        None,
    )?;
    t.then(
        Quantity::new(100.0, "%"),
        Quantity::new(capacity, unit),
        Origin::Product { name: name.into() },
        None,
    )?;
    Ok(t)
}

/// The pump setting for a product volume (L/d) or mass (kg/d) rate.
pub fn pump_setting(
    kind: &PumpKind,
    product_l_per_day: Option<f64>,
    product_kg_per_day: f64,
    range: UsableRange,
    cautions: &mut Vec<Caution>,
) -> Result<PumpSetting> {
    kind.validate()?;
    range.validate()?;
    let needs_volume = || {
        product_l_per_day.ok_or_else(|| {
            Error::new(
                ErrorKind::InvalidInput,
                "a liquid pump needs a liquid product (give its specific gravity)",
            )
            .because("pump-needs-liquid")
        })
    };
    let (trace, rpm) = match *kind {
        PumpKind::Metering { capacity, unit } => {
            let rate = Quantity::new(needs_volume()?, "L/d");
            let name = "pump capacity at 100 % stroke and speed";
            let t = percent_of_capacity(rate, unit.symbol(), unit.l_per_day(), capacity, name)?;
            (t, None)
        }
        PumpKind::Peristaltic {
            ml_per_rev,
            max_rpm,
        } => {
            let l = needs_volume()?;
            let mut t = Trace::new(Quantity::new(l, "L/d"), Origin::Measured, None);
            t.then(
                Quantity::new(1000.0 / 1440.0, "mL/min"),
                Quantity::new(1.0, "L/d"),
                Origin::UnitDefinition,
                None,
            )?;
            t.then(
                Quantity::new(1.0, "rpm"),
                Quantity::new(ml_per_rev, "mL/min"),
                Origin::Product {
                    name: "pump volume per revolution".into(),
                },
                None,
            )?;
            let rpm = t.value();
            t.then(
                Quantity::new(100.0, "%"),
                Quantity::new(max_rpm, "rpm"),
                Origin::Product {
                    name: "pump maximum speed".into(),
                },
                None,
            )?;
            (t, Some(rpm))
        }
        PumpKind::DryFeeder { capacity, unit } | PumpKind::GasFeeder { capacity, unit } => {
            let rate = Quantity::new(product_kg_per_day, "kg/d");
            let name = "feeder capacity at full scale";
            let t = percent_of_capacity(rate, unit.symbol(), unit.kg_per_day(), capacity, name)?;
            (t, None)
        }
    };
    let percent = trace.value();
    let (stroke, speed) = match kind {
        // Stroke first at full speed (finest resolution); when that is below the usable band,
        // split evenly so that neither dial sits lower than it must.
        // Over capacity there is no setting to give; the danger caution says so.
        PumpKind::Metering { .. } if percent > 100.0 => (None, None),
        PumpKind::Metering { .. } if percent >= range.min => (Some(percent), Some(100.0)),
        PumpKind::Metering { .. } => {
            let each = (percent * 100.0).sqrt();
            (Some(each), Some(each))
        }
        _ => (None, None),
    };
    cautions.extend(range.caution(percent));
    if percent < 1.0 {
        cautions.push(
            Caution::warning("setting-fraction-of-percent")
                .with("percent", format!("{percent:.2}")),
        );
    }
    Ok(PumpSetting {
        percent,
        stroke_percent: stroke,
        speed_percent: speed,
        rpm,
        within_usable_range: percent >= range.min && percent <= range.max,
        trace,
    })
}

/// Dose → feed → pump, with traces and cautions.
pub fn feed(catalog: &Catalog, input: &FeedInput) -> Result<FeedResult> {
    let p = catalog.product(&input.product)?;
    check_positive("dose", input.dose.value, "mg/L")?;
    check_range("dose", input.dose.value, 0.0, MAX_DOSE_MG_L, "mg/L")?;
    input.flow.validate()?;
    let si = active_feed_si(&input.flow, input.dose, &p.dose_as)?;
    let us = active_feed_us(&input.flow, input.dose, &p.dose_as)?;
    let kg = si.value();
    let start = Trace::new(
        Quantity::of(kg, "kg/d", &p.dose_as),
        Origin::Constant {
            source: "trace active-feed-si".into(),
        },
        si.sig_figs(),
    );
    let (strength, sg_note) = resolve_sg(p, &input.strength);
    let product = active_to_product(catalog, p, &strength, start)?;
    let mut cautions = product_cautions(p);
    cautions.extend(sg_note);
    // A strength far from anything the trade delivers is more often a typo or a wrong basis
    // than a real product (threshold ±30 % of the nearest catalog strength: common practice).
    let s = input.strength.value.value;
    let nearest = p
        .strengths
        .iter()
        .filter(|t| t.basis == input.strength.basis)
        .map(|t| t.value)
        .min_by(|a, b| (a - s).abs().total_cmp(&(b - s).abs()));
    if let Some(typical) = nearest
        && (s - typical).abs() > 0.3 * typical
    {
        cautions.push(
            Caution::warning("strength-unusual")
                .with("strength", s)
                .with("typical", typical)
                .with("basis", input.strength.basis.code()),
        );
    }
    let flow_l_per_day = input.flow.to_l_per_day()?.value();
    let product_mg_l = product.product_kg_per_day * 1e6 / flow_l_per_day;
    if let Some(mul) = input.max_use_level_mg_l {
        check_positive("maximum use level", mul, "mg/L")?;
        if product_mg_l > mul {
            cautions.push(
                Caution::danger("dose-above-max-use-level")
                    .with(
                        "product_mg_l",
                        crate::engine::sigfig::format_sig(product_mg_l, 3),
                    )
                    .with("max_use_level_mg_l", mul),
            );
        }
    }
    let pump = match &input.pump {
        Some(kind) => {
            if matches!(kind, PumpKind::GasFeeder { .. }) && p.form != Form::Gas
                || matches!(kind, PumpKind::DryFeeder { .. }) && p.form != Form::Dry
                || matches!(
                    kind,
                    PumpKind::Metering { .. } | PumpKind::Peristaltic { .. }
                ) && p.form != Form::Solution
            {
                return Err(Error::new(
                    ErrorKind::InvalidInput,
                    format!(
                        "this feeder type cannot feed {} (a {:?} product)",
                        p.id, p.form
                    ),
                )
                .because("feeder-cannot-feed-product")
                .with("product", &p.id));
            }
            Some(pump_setting(
                kind,
                product.product_l_per_day,
                product.product_kg_per_day,
                input.usable_range,
                &mut cautions,
            )?)
        }
        None => None,
    };
    let l = product.product_l_per_day;
    let mut traces = vec![
        NamedTrace::new("pounds-factor", pounds_factor()),
        NamedTrace::new("active-feed-us", us.clone()),
        NamedTrace::new("active-feed-si", si),
        NamedTrace::new("product-feed", product.trace.clone()),
    ];
    if let Some(setting) = &pump {
        // A gas or dry feeder is set by mass on its own scale: its work is headed as a
        // feeder's setting, never as a pump's.
        let label = match input.pump {
            Some(PumpKind::DryFeeder { .. } | PumpKind::GasFeeder { .. }) => "feeder-setting",
            _ => "pump-setting",
        };
        traces.push(NamedTrace::new(label, setting.trace.clone()));
    }
    Ok(FeedResult {
        product: p.id.clone(),
        dose_as: p.dose_as.clone(),
        dose_mg_l: input.dose.value,
        active_kg_per_day: kg,
        active_lb_per_day: us.value(),
        active_g_per_hour: kg * 1000.0 / 24.0,
        product_kg_per_day: product.product_kg_per_day,
        product_lb_per_day: product.product_kg_per_day * 1000.0 / G_PER_LB,
        product_mg_l,
        product_l_per_day: l,
        product_gal_per_day: l.map(|l| l / L_PER_GAL),
        product_gph: l.map(|l| l / L_PER_GAL / 24.0),
        product_l_per_h: l.map(|l| l / 24.0),
        product_ml_per_min: l.map(|l| l * 1000.0 / 1440.0),
        pounds_factor: pounds_factor().value(),
        pump,
        traces,
        cautions: finish(cautions),
    })
}

/// Inputs for [`dilution`]: C1·V1 = C2·V2 with both strengths as g/L of the dose-as substance.
#[derive(Clone, Debug, PartialEq)]
pub struct DilutionInput {
    pub product: String,
    pub concentrate: Strength,
    pub target: Strength,
    /// Final batch volume in litres.
    pub final_volume_l: f64,
}

/// Result of [`dilution`].
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct DilutionResult {
    pub concentrate_g_per_l: f64,
    pub target_g_per_l: f64,
    pub concentrate_l: f64,
    pub water_l: f64,
    pub traces: Vec<NamedTrace>,
    pub cautions: Vec<Caution>,
}

/// g/L of `dose_as` in a solution of the given strength, with its trace.
pub fn grams_per_litre(catalog: &Catalog, p: &Product, s: &Strength) -> Result<Trace> {
    if p.form != Form::Solution {
        return Err(Error::new(
            ErrorKind::InvalidInput,
            format!(
                "{} is not a solution; batching needs a liquid product",
                p.id
            ),
        )
        .because("needs-liquid-product")
        .with("product", &p.id));
    }
    let one = Trace::new(
        Quantity::of(1.0, "kg/d", &p.dose_as),
        Origin::Measured,
        None,
    );
    let feed = active_to_product(catalog, p, s, one)?;
    let litres = feed.product_l_per_day.ok_or_else(|| {
        Error::new(ErrorKind::InvalidInput, "specific gravity missing")
            .because("needs-specific-gravity")
    })?;
    let mut t = Trace::new(
        Quantity::of(1000.0, "g", &p.dose_as),
        Origin::UnitDefinition,
        None,
    );
    t.then(
        Quantity::of(1.0, "g/L", &p.dose_as),
        Quantity::of(litres, "g", &p.dose_as),
        Origin::Product {
            name: format!(
                "{} L of product carry 1 kg of {} (trace product-feed)",
                litres, p.dose_as
            ),
        },
        feed.trace.sig_figs(),
    )?;
    Ok(t)
}

/// Day-tank batching: how much concentrate and water make `final_volume_l` at the target strength.
///
/// Volumes of solutions are not additive (50 % caustic and water shrink on mixing), so only
/// masses are balanced: the active chemical gives the concentrate volume (C1·V1 = C2·V2 on a
/// g/L basis), and the water is the batch's mass less the concentrate's, each from its SG:
/// water = V_final·SG_target − V_concentrate·SG_concentrate, in kg of water and so in litres
/// (the SGs are relative to water, whose density cancels). Both SGs are therefore required.
pub fn dilution(catalog: &Catalog, input: &DilutionInput) -> Result<DilutionResult> {
    let p = catalog.product(&input.product)?;
    check_positive("final volume", input.final_volume_l, "L")?;
    let c1 = grams_per_litre(catalog, p, &input.concentrate)?;
    let c2 = grams_per_litre(catalog, p, &input.target)?;
    if c2.value() >= c1.value() {
        return Err(Error::new(
            ErrorKind::Unreachable,
            "the target strength is not weaker than the concentrate",
        )
        .because("dilution-not-weaker")
        .with("target_g_per_l", c2.value())
        .with("concentrate_g_per_l", c1.value()));
    }
    let sg_of = |s: &Strength| {
        s.sg.ok_or_else(|| {
            Error::new(ErrorKind::InvalidInput, "specific gravity missing")
                .because("needs-specific-gravity")
        })
    };
    let (sg1, sg2) = (sg_of(&input.concentrate)?, sg_of(&input.target)?);
    let mut v = Trace::new(
        Quantity::of(input.final_volume_l, "L", "batch"),
        Origin::Measured,
        None,
    );
    v.times(
        Quantity::new(c2.value(), "g/L"),
        "g",
        Origin::Product {
            name: "target strength".into(),
        },
        c2.sig_figs(),
    )?;
    v.then(
        Quantity::of(1.0, "L", "concentrate"),
        Quantity::new(c1.value(), "g"),
        Origin::Product {
            name: "concentrate strength (g/L)".into(),
        },
        c1.sig_figs(),
    )?;
    let conc = v.value();
    // Each mass as volume × SG × 1 kg/L of water; the water's own density cancels when its
    // mass is turned back into litres.
    let mass = |litres: f64, what: &str, sg: Measured| -> Result<Trace> {
        let mut t = Trace::new(Quantity::of(litres, "L", what), Origin::Measured, None);
        t.then(
            Quantity::of(sg.value, "kg", what),
            Quantity::of(1.0, "L", what),
            Origin::Product {
                name: format!("specific gravity of the {what} (× 1 kg/L of water)"),
            },
            sg.sig_figs,
        )?;
        Ok(t)
    };
    let batch = mass(input.final_volume_l, "batch", sg2)?;
    let concentrate = mass(conc, "concentrate", sg1)?;
    let water = batch.value() - concentrate.value();
    if water <= 0.0 {
        return Err(Error::new(
            ErrorKind::InvalidInput,
            "the batch would weigh no more than the concentrate in it: check both specific gravities",
        )
        .because("dilution-masses-inconsistent")
        .with("batch_kg", batch.value())
        .with("concentrate_kg", concentrate.value()));
    }
    let mut cautions = product_cautions(p);
    cautions.push(Caution::danger("add-chemical-to-water"));
    Ok(DilutionResult {
        concentrate_g_per_l: c1.value(),
        target_g_per_l: c2.value(),
        concentrate_l: conc,
        water_l: water,
        traces: vec![
            NamedTrace::new("concentrate-strength", c1),
            NamedTrace::new("target-strength", c2),
            NamedTrace::new("dilution", v),
            NamedTrace::new("batch-mass", batch),
            NamedTrace::new("concentrate-mass", concentrate),
        ],
        cautions: finish(cautions),
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A pump's full scale as the table reads it, by hand from the exact definitions: 10 gal/h
    /// is 37.854 117 84 L/h (3.785 411 784 L a gallon); 100 lb/d is 45.359 237 kg/d; 2 kg/d is
    /// 2 kg/d; a hose pump has none.
    #[test]
    fn a_pumps_full_scale_in_the_tables_units() {
        let check = |kind: PumpKind, expected: Option<f64>| match (kind.full_scale_si(), expected) {
            (Some(got), Some(e)) => assert!((got - e).abs() < 1e-9, "{kind:?}: {got}"),
            (got, e) => assert_eq!(got, e, "{kind:?}"),
        };
        let metering = |capacity, unit| PumpKind::Metering { capacity, unit };
        check(metering(10.0, VolumeRateUnit::Gph), Some(37.854_117_84));
        check(metering(30.0, VolumeRateUnit::Lph), Some(30.0));
        check(metering(500.0, VolumeRateUnit::MlPerMin), Some(30.0));
        check(
            PumpKind::DryFeeder {
                capacity: 100.0,
                unit: MassRateUnit::LbPerDay,
            },
            Some(45.359_237),
        );
        check(
            PumpKind::GasFeeder {
                capacity: 2.0,
                unit: MassRateUnit::KgPerDay,
            },
            Some(2.0),
        );
        check(
            PumpKind::Peristaltic {
                ml_per_rev: 2.0,
                max_rpm: 100.0,
            },
            None,
        );
    }
}
