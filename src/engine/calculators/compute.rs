//! The compute functions of the table: each maps a [`Request`]'s named SI values onto the
//! dosing and water engines' typed inputs, and their results onto one [`Outcome`].
//!
//! Design choice: no chemistry of its own. Values arrive in SI with the figures they were
//! given with and go to the engines as [`Measured`] values with their units named
//! (`FlowUnit::M3d`, `VolumeRateUnit::Lph`), so "show the work" follows what was measured.
//! How a product is fed follows its catalog form: a solution through a metering pump, a gas
//! through a gas feeder and a dry chemical through a dry feeder, never assumed.

use super::table::{LIMES, PH_PRODUCTS};
use super::{Calculators, Curve, Device, Outcome, Request, ResultValue, Setting};
use crate::engine::dosing::NamedTrace;
use crate::engine::dosing::catalog::{Form, Strength, StrengthBasis};
use crate::engine::dosing::caution::Caution;
use crate::engine::dosing::chlorine::{
    AmmoniaPoint, ChlorineInput, chloramination_with_natural_ammonia, chlorine_dose,
    chlorine_dose_in_water,
};
use crate::engine::dosing::coagulation::{
    Alkali, Coagulant, CoagulationInput, SludgeInput, coagulant_chemical, coagulation_in_water,
    sludge as sludge_of,
};
use crate::engine::dosing::feed::{FeedInput, FeedResult, PumpKind, UsableRange};
use crate::engine::dosing::neutralization::{NeutralizationInput, neutralization};
use crate::engine::dosing::pumpcheck::{Measurement, PumpCheckInput, Tolerance};
use crate::engine::dosing::softening::{HardnessAnalysis, removal_from_analysis};
use crate::engine::dosing::units::{Flow, FlowUnit, MassRateUnit, VolumeRateUnit};
use crate::engine::dosing::waterside::{PhRange, dose_effect, water_chemical};
use crate::engine::dosing::{chlorine, feed as feeding, pumpcheck, softening as soften};
use crate::engine::quantity::Quantity as Q;
use crate::engine::sigfig::{Measured, combine, sum_figures};
use crate::engine::trace::{Origin, Quantity, Trace};
use crate::engine::water::{self, Precipitation, WaterInput, WaterState};
use crate::engine::{Error, ErrorKind, Result};

// Wastewater, distribution and bench calculators, in a file of their own.
mod plant_feeds;
// Two chemicals for two targets at one point.
mod two_targets;
// The chemical on hand: a tank's volume at a level and its days of supply.
mod stock;
#[cfg(test)]
pub(super) use plant_feeds::alkalinity_per_mg_n;
pub(super) use plant_feeds::{
    ALKALIS, jar_test, main_disinfection, nitrification_alkalinity, phosphorus_removal, polymer,
};
pub(super) use stock::tank_volume;
pub(super) use two_targets::two_targets;

/// Points on a drawn titration curve.
pub(super) const CURVE_POINTS: usize = 60;

fn value(request: &Request, name: &str) -> Result<f64> {
    request.get(name).ok_or_else(|| {
        Error::new(ErrorKind::InvalidInput, format!("{name} is missing"))
            .because("missing-input")
            .with("input", name.to_string())
    })
}

/// A given input with the significant figures it was given with.
fn measured(request: &Request, name: &str) -> Result<Measured> {
    Ok(Measured {
        value: value(request, name)?,
        sig_figs: request.figures(name),
    })
}

fn flow(request: &Request) -> Result<Flow> {
    Ok(Flow::new(measured(request, "flow")?, FlowUnit::M3d))
}

fn chosen(request: &Request) -> Result<&str> {
    request.product.as_deref().ok_or_else(|| {
        Error::new(ErrorKind::UnknownChemical, "no product chosen").because("no-product-chosen")
    })
}

/// The water after a dose, as every calculator that models it names it: `ph_after` and
/// `alkalinity_after` (mg/L as CaCO3).
fn water_after(ph: f64, alkalinity_mg_l_as_caco3: f64) -> [ResultValue; 2] {
    [
        result("ph_after", ph, Q::Ph, None),
        result(
            "alkalinity_after",
            alkalinity_mg_l_as_caco3,
            Q::AsCaCO3,
            Some("CaCO3"),
        ),
    ]
}

fn result(id: &'static str, value: f64, quantity: Q, basis: Option<&str>) -> ResultValue {
    ResultValue {
        id,
        value,
        quantity,
        basis: basis.map(str::to_string),
        headline: false,
        range: None,
        same_as: None,
    }
}

fn headline(id: &'static str, value: f64, quantity: Q, basis: Option<&str>) -> ResultValue {
    ResultValue {
        headline: true,
        ..result(id, value, quantity, basis)
    }
}

/// The outcome's shape before the table fills in the calculator, product and inputs.
fn outcome(chemical: String) -> Outcome {
    Outcome {
        calculator: "",
        mode: None,
        product: None,
        chemical,
        results: Vec::new(),
        setting: None,
        figures: None,
        traces: Vec::new(),
        cautions: Vec::new(),
        inputs: Vec::new(),
        follow_ups: Vec::new(),
    }
}

impl Calculators {
    /// The chosen product's strength as given, on the product's usual basis: a liquid's
    /// strength with its SG, a gas's or dry chemical's purity without one.
    fn strength(&self, request: &Request) -> Result<(String, Strength)> {
        let id = chosen(request)?.to_string();
        let product = self.catalog.product(&id)?;
        let basis = product
            .strengths
            .first()
            .map_or(StrengthBasis::Weight, |s| s.basis);
        let strength = match product.form {
            Form::Solution => Strength::new(
                measured(request, "strength")?,
                basis,
                Some(measured(request, "specific-gravity")?),
            ),
            Form::Gas | Form::Dry => Strength::new(measured(request, "purity")?, basis, None),
        };
        Ok((id, strength))
    }

    /// The pump or feeder the chosen product's form calls for, at the full scale given; `None`
    /// without one (the table's `only_for`: the setting is then absent, the rest computed).
    fn pump(&self, request: &Request) -> Result<Option<PumpKind>> {
        let product = self.catalog.product(chosen(request)?)?;
        Ok(match product.form {
            Form::Solution => request
                .get("pump-capacity")
                .map(|capacity| PumpKind::Metering {
                    capacity,
                    unit: VolumeRateUnit::Lph,
                }),
            Form::Gas => request
                .get("gas-feeder-capacity")
                .map(|capacity| PumpKind::GasFeeder {
                    capacity,
                    unit: MassRateUnit::KgPerDay,
                }),
            Form::Dry => request
                .get("dry-feeder-capacity")
                .map(|capacity| PumpKind::DryFeeder {
                    capacity,
                    unit: MassRateUnit::KgPerDay,
                }),
        })
    }

    fn feed_for(&self, request: &Request, dose: Measured) -> Result<FeedResult> {
        let (product, strength) = self.strength(request)?;
        feeding::feed(
            &self.catalog,
            &FeedInput {
                flow: flow(request)?,
                dose,
                product,
                strength,
                pump: self.pump(request)?,
                usable_range: UsableRange::default(),
                max_use_level_mg_l: request.max_use_level_mg_l,
            },
        )
    }

    /// A feed result as the outcome's results, after the steps (if any) that led to its dose.
    fn feed_outcome(
        &self,
        r: &FeedResult,
        mut traces: Vec<NamedTrace>,
        mut cautions: Vec<Caution>,
    ) -> Result<Outcome> {
        let form = self.catalog.product(&r.product)?.form;
        traces.extend(r.traces.iter().cloned());
        cautions.extend(r.cautions.iter().cloned());
        let by_mass = form != Form::Solution;
        let mut out = outcome(r.dose_as.clone());
        out.results.push(headline(
            "dose",
            r.dose_mg_l,
            Q::Concentration,
            Some(&r.dose_as),
        ));
        out.results.push(headline(
            "feed_mass_rate",
            r.active_kg_per_day,
            Q::MassPerDay,
            Some(&r.dose_as),
        ));
        if let Some(lph) = r.product_l_per_h.filter(|_| !by_mass) {
            out.results.push(headline(
                "product_volume_rate",
                lph,
                Q::VolumePerHour,
                Some("product"),
            ));
        }
        // A gas or dry chemical is set by mass of product: its third big number.
        out.results.push(ResultValue {
            headline: by_mass,
            ..result(
                "product_mass_rate",
                r.product_kg_per_day,
                Q::MassPerDay,
                Some("product"),
            )
        });
        if let Some(pump) = &r.pump {
            let (id, device) = match form {
                Form::Solution => ("pump_setting", Device::MeteringPump),
                Form::Gas => ("feeder_setting", Device::GasFeeder),
                Form::Dry => ("feeder_setting", Device::DryFeeder),
            };
            out.results
                .push(headline(id, pump.percent, Q::Percent, None));
            out.setting = Some(Setting {
                device,
                percent: pump.percent,
            });
        }
        out.traces = traces;
        out.cautions = cautions;
        Ok(out)
    }
}

pub(super) fn feed(c: &Calculators, request: &Request) -> Result<Outcome> {
    let r = c.feed_for(request, measured(request, "dose")?)?;
    c.feed_outcome(&r, Vec::new(), Vec::new())
}

/// Free chlorine: the dose from demand + residual (and breakpoint), then the product's feed.
pub(super) fn free_chlorine(c: &Calculators, request: &Request) -> Result<Outcome> {
    let demand = measured(request, "chlorine-demand")?;
    let residual = measured(request, "target-residual")?;
    let ammonia_n = request.get("ammonia-n").map(|value| Measured {
        value,
        sig_figs: request.figures("ammonia-n"),
    });
    let input = ChlorineInput {
        demand,
        residual,
        ammonia_n,
        // The plant's limit is checked once, by the table, for every calculator alike.
        residual_limit_mg_l: None,
    };
    // The water, when all of it was given: the chlorine's effect on pH and alkalinity.
    let water = match (
        request.get("ph"),
        request.get("temperature"),
        request.get("alkalinity"),
    ) {
        (Some(ph), Some(t), Some(alk)) => Some(WaterState::new(&WaterInput::new(ph, t, alk))?),
        _ => None,
    };
    let dosed = match &water {
        Some(w) => chlorine_dose_in_water(
            &c.catalog,
            &input,
            chosen(request)?,
            w,
            PhRange::from_limits(&request.limits),
        )?,
        None => chlorine_dose(&c.catalog, &input)?,
    };
    // A sum is known to the coarsest decimal place of its terms; the breakpoint term is as good
    // as the ammonia reading it was scaled from.
    let mut terms = vec![demand, residual];
    if let (Some(n), Some(bp)) = (ammonia_n, dosed.breakpoint_mg_l) {
        terms.push(Measured {
            value: bp,
            sig_figs: n.sig_figs,
        });
    }
    let dose = Measured {
        value: dosed.dose_mg_l,
        sig_figs: sum_figures(&terms, dosed.dose_mg_l),
    };
    let r = c.feed_for(request, dose)?;
    let mut out = c.feed_outcome(&r, dosed.traces, dosed.cautions)?;
    if let Some(bp) = dosed.breakpoint_mg_l {
        out.results
            .push(result("breakpoint_dose", bp, Q::Concentration, Some("Cl2")));
    }
    // The end state after breakpoint: what the operator's water is left with.
    if let Some(effect) = &dosed.water {
        out.results.extend(water_after(
            effect.ph_after,
            effect.alkalinity_after_mg_l_as_caco3,
        ));
    }
    // Without the water, the stoichiometric alkalinity the breakpoint takes is still known
    // from the product chosen.
    let consumed = match (dosed.breakpoint_alkalinity_mg_l_as_caco3, ammonia_n) {
        (Some(consumed), _) => Some(consumed),
        (None, Some(n)) if n.value > 0.0 => {
            let (per_n, per_n_trace) =
                chlorine::breakpoint_alkalinity_per_n(&c.catalog, chosen(request)?)?;
            out.traces
                .push(NamedTrace::new("breakpoint-alkalinity-ratio", per_n_trace));
            Some(per_n * n.value)
        }
        _ => None,
    };
    if let Some(consumed) = consumed {
        out.results.push(result(
            "breakpoint_alkalinity_consumed",
            consumed,
            Q::AsCaCO3,
            Some("CaCO3"),
        ));
    }
    Ok(out)
}

/// Chloramination: the ammonia (as N) for the chlorine dose and ratio, crediting the ammonia
/// already in the water as the mode's ammonia point allows, then its feed. When the water
/// already holds what the ratio needs (or no free chlorine reaches a downstream ammonia point)
/// the dose is 0 and nothing is fed: no feed rate and no setting, a caution says why.
pub(super) fn chloramine(c: &Calculators, request: &Request) -> Result<Outcome> {
    let chlorine = measured(request, "chlorine-dose")?;
    let ratio = measured(request, "cl2-n-ratio")?;
    let natural = request.get("ammonia-n").map(|value| Measured {
        value,
        sig_figs: request.figures("ammonia-n"),
    });
    let point = match request.mode {
        Some("ammonia-after-chlorine") => AmmoniaPoint::AfterChlorine,
        _ => AmmoniaPoint::WithChlorine,
    };
    let a = chloramination_with_natural_ammonia(&c.catalog, chlorine, ratio, natural, point)?;
    let mut out = if a.ammonia_n_mg_l > 0.0 {
        let figures = combine(
            combine(chlorine.sig_figs, ratio.sig_figs),
            natural.and_then(|n| n.sig_figs),
        );
        let dose = Measured {
            value: a.ammonia_n_mg_l,
            sig_figs: figures,
        };
        let r = c.feed_for(request, dose)?;
        c.feed_outcome(&r, a.traces.clone(), a.cautions.clone())?
    } else {
        let dose_as = c.catalog.product(chosen(request)?)?.dose_as.clone();
        let mut out = outcome(dose_as.clone());
        out.results
            .push(headline("dose", 0.0, Q::Concentration, Some(&dose_as)));
        out.traces = a.traces.clone();
        out.cautions = a.cautions.clone();
        out
    };
    if let Some(free) = a.free_chlorine_at_ammonia_mg_l {
        out.results.push(result(
            "free_chlorine_at_ammonia_point",
            free,
            Q::Concentration,
            Some("Cl2"),
        ));
    }
    out.results.push(result(
        "free_ammonia_left",
        a.free_ammonia_n_mg_l,
        Q::Concentration,
        Some("N"),
    ));
    Ok(out)
}

/// Dechlorination: the stoichiometric agent dose for the residual, then its feed.
pub(super) fn dechlorination(c: &Calculators, request: &Request) -> Result<Outcome> {
    let residual = measured(request, "residual-in")?;
    let d = chlorine::dechlorination(&c.catalog, residual, chosen(request)?)?;
    let dose = Measured {
        value: d.agent_mg_l,
        sig_figs: d
            .traces
            .iter()
            .fold(None, |acc, t| combine(acc, t.trace.sig_figs())),
    };
    let r = c.feed_for(request, dose)?;
    c.feed_outcome(&r, d.traces, d.cautions)
}

/// The water as measured before a pH adjustment.
fn raw_water(request: &Request) -> Result<WaterState> {
    let mut input = WaterInput::new(
        value(request, "ph")?,
        value(request, "temperature")?,
        value(request, "alkalinity")?,
    );
    if let Some(calcium) = request.get("calcium-hardness") {
        input = input.with_calcium_as_caco3(calcium);
    }
    WaterState::new(&input)
}

/// pH adjustment: the dose that reaches the target pH (water engine) and its feed, in the one
/// call `molefeed neutralize-feed` makes too, with its pH-range and zero-dose cautions.
pub(super) fn ph_adjustment(c: &Calculators, request: &Request) -> Result<Outcome> {
    let state = raw_water(request)?;
    let (product, strength) = c.strength(request)?;
    // An equilibrium dose is as good as the alkalinity and the two pH readings behind it.
    let figures = ["alkalinity", "ph", "target-ph"]
        .iter()
        .fold(None, |acc, name| combine(acc, request.figures(name)));
    let n = neutralization(
        &c.catalog,
        &state,
        &NeutralizationInput {
            product,
            strength,
            target_ph: value(request, "target-ph")?,
            flow: flow(request)?,
            pump: c.pump(request)?,
            usable_range: UsableRange::default(),
            max_use_level_mg_l: request.max_use_level_mg_l,
            ph_range: PhRange::from_limits(&request.limits),
            dose_sig_figs: figures,
            // The card judges the treated water below, once, with the calcium typed; the
            // moved readings of a range never read it.
            langelier_index: false,
        },
    )?;
    let equilibrium = NamedTrace::new(
        "ph-adjustment",
        Trace::new(
            Quantity::of(
                n.dose_mg_l,
                "mg/L",
                format!(
                    "{} (pH {:.2} → {:.2})",
                    n.feed.dose_as, n.ph_before, n.ph_after
                ),
            ),
            Origin::Equilibrium,
            figures,
        ),
    );
    let mut out = c.feed_outcome(&n.feed, vec![equilibrium], n.cautions.clone())?;
    out.results
        .extend(water_after(n.ph_after, n.alkalinity_after_mg_l_as_caco3));
    // With calcium: how the treated water stands to calcium carbonate.
    if request.get("calcium-hardness").is_some() && !request.headlines_only {
        let chemical = water_chemical(&c.catalog.product(chosen(request)?)?.compound)?;
        let (after, _) = dose_effect(&state, chemical, n.dose_mg_l, Precipitation::None)?;
        let s = water::stability(&after)?;
        if let Some(lsi) = s.langelier_index {
            out.results.push(result("lsi_after", lsi, Q::Index, None));
        }
        out.results.push(result(
            "ccpp_after",
            s.ccpp_mg_l_as_caco3,
            Q::AsCaCO3,
            Some("CaCO3"),
        ));
    }
    Ok(out)
}

/// The pH against the chosen chemical's dose, to twice the dose that reaches the target.
pub(super) fn ph_adjustment_curve(c: &Calculators, request: &Request) -> Result<Curve> {
    let state = raw_water(request)?;
    let product = c.catalog.product(chosen(request)?)?;
    if !PH_PRODUCTS.contains(&product.id.as_str()) {
        return Err(Error::new(
            ErrorKind::UnknownChemical,
            format!("{} is not a pH chemical", product.id),
        )
        .because("product-not-for-calculator"));
    }
    let chemical = water_chemical(&product.compound)?;
    let target = value(request, "target-ph")?;
    let max = water::dose_for_ph(&state, chemical, target, Precipitation::None)
        .map_or(100.0, |d| (2.0 * d.dose_mg_l).max(1.0));
    let points = water::curve(&state, chemical, max, CURVE_POINTS, Precipitation::None)?;
    Ok(Curve {
        titrant: product.name_key.clone(),
        points: points.iter().map(|p| (p.dose_mg_l, p.ph)).collect(),
    })
}

/// The coagulant the chosen product is, from the dose basis the catalog gives it.
fn coagulant(c: &Calculators, request: &Request) -> Result<Coagulant> {
    let product = c.catalog.product(chosen(request)?)?;
    let basicity = product.strengths.iter().find_map(|s| s.basicity_percent);
    // Sodium aluminate's dose is as Al like PACl's: its compound tells the two apart.
    if product.compound == "NaAlO2" {
        return Coagulant::parse("sodium-aluminate", None);
    }
    Coagulant::parse(
        match product.dose_as.as_str() {
            "Al2(SO4)3·14H2O" => "alum",
            "FeCl3" => "ferric-chloride",
            "Fe2(SO4)3" => "ferric-sulfate",
            "Al" => "pacl",
            other => other,
        },
        basicity,
    )
}

/// The supplemental alkali a coagulation mode stands for.
fn alkali_of(mode: Option<&str>) -> Alkali {
    match mode {
        Some("alkali-lime") => Alkali::HydratedLime,
        Some("alkali-soda-ash") => Alkali::SodaAsh,
        _ => Alkali::Caustic,
    }
}

fn coagulation_water(request: &Request) -> Result<WaterState> {
    WaterState::new(&WaterInput::new(
        value(request, "ph")?,
        value(request, "temperature")?,
        value(request, "alkalinity")?,
    ))
}

/// Coagulation: the jar-test dose's feed and pump setting; the alkalinity it consumes, the
/// supplemental alkali for the residual alkalinity to keep, the pH it leaves (metal
/// precipitated as hydroxide) and the dry solids it makes.
pub(super) fn coagulation(c: &Calculators, request: &Request) -> Result<Outcome> {
    let coagulant = coagulant(c, request)?;
    let dose = measured(request, "jar-dose")?;
    let input = CoagulationInput {
        coagulant,
        dose,
        raw_alkalinity: measured(request, "alkalinity")?,
        residual_alkalinity_setpoint: value(request, "alkalinity-setpoint")?,
        alkali: alkali_of(request.mode),
        alkali_purity_percent: 100.0,
    };
    let water = coagulation_water(request)?;
    let mut co = coagulation_in_water(
        &c.catalog,
        &input,
        &water,
        PhRange::from_limits(&request.limits),
    )?;
    let solids = sludge_of(
        &c.catalog,
        &SludgeInput {
            flow: flow(request)?,
            coagulant,
            dose,
            suspended_solids_mg_l: 0.0,
            additives_mg_l: 0.0,
        },
    )?;
    let r = c.feed_for(request, dose)?;
    let mut traces = std::mem::take(&mut co.traces);
    // The sludge estimate derives the solids per mg/L of coagulant again: that section is
    // shown once, from the coagulation step.
    let fresh: Vec<NamedTrace> = solids
        .traces
        .iter()
        .filter(|t| !traces.iter().any(|u| u.label == t.label))
        .cloned()
        .collect();
    traces.extend(fresh);
    let mut out = c.feed_outcome(&r, traces, co.cautions.clone())?;
    let caco3 = Some("CaCO3");
    // An aluminate adds alkalinity: said as added, not as a negative consumption.
    out.results.push(if coagulant.adds_alkalinity() {
        result(
            "alkalinity_added",
            -co.alkalinity_consumed_mg_l,
            Q::AsCaCO3,
            caco3,
        )
    } else {
        result(
            "alkalinity_consumed",
            co.alkalinity_consumed_mg_l,
            Q::AsCaCO3,
            caco3,
        )
    });
    out.results.push(result(
        "alkalinity_remaining",
        co.alkalinity_remaining_mg_l.max(0.0),
        Q::AsCaCO3,
        caco3,
    ));
    if let Some(w) = &co.water {
        out.results
            .push(result("ph_after_coagulant", w.ph_after, Q::Ph, None));
    }
    if co.alkali_mg_l > 0.0 {
        out.results.push(result(
            "supplemental_alkali",
            co.alkali_mg_l,
            Q::Concentration,
            Some(alkali_of(request.mode).formula()),
        ));
        if let Some(w) = &co.water_with_alkali {
            out.results
                .push(result("ph_after_alkali", w.ph_after, Q::Ph, None));
        }
    }
    out.results.push(result(
        "coagulant_solids",
        solids.dry_solids_kg_per_day,
        Q::MassPerDay,
        Some("dry solids"),
    ));
    Ok(out)
}

/// The pH against the coagulant as dosed, to twice the jar dose (hydroxide precipitating).
pub(super) fn coagulation_curve(c: &Calculators, request: &Request) -> Result<Curve> {
    let coagulant = coagulant(c, request)?;
    let dose = value(request, "jar-dose")?;
    // mg/L of the engine's compound per mg/L dosed: a factor, so a zero dose cannot make 0/0.
    let (chemical, per_dose) = coagulant_chemical(coagulant, 1.0)?;
    let state = coagulation_water(request)?;
    let points = water::curve(
        &state,
        &chemical,
        2.0 * (dose * per_dose).max(1.0),
        CURVE_POINTS,
        Precipitation::Hydroxide,
    )?;
    Ok(Curve {
        titrant: c.catalog.product(chosen(request)?)?.name_key.clone(),
        // x stays in the coagulant as dosed: the engine's compound scaled back to it.
        points: points
            .iter()
            .map(|p| (p.dose_mg_l / per_dose, p.ph))
            .collect(),
    })
}

/// Lime–soda softening: lime and soda ash from the tap analysis (free CO2 from the water
/// engine), each with its daily feed as delivered, and the water the doses leave at
/// equilibrium.
pub(super) fn softening(c: &Calculators, request: &Request) -> Result<Outcome> {
    let lime_id = chosen(request)?.to_string();
    if !LIMES.contains(&lime_id.as_str()) {
        return Err(Error::new(
            ErrorKind::UnknownChemical,
            format!("{lime_id} is not a lime"),
        )
        .because("product-not-for-calculator"));
    }
    let water = coagulation_water(request)?;
    let co2 = water.result()?.co2_mg_l;
    let (removal, mut traces) = removal_from_analysis(&HardnessAnalysis {
        total_hardness: measured(request, "total-hardness")?,
        calcium_hardness: measured(request, "calcium-hardness")?,
        alkalinity: measured(request, "alkalinity")?,
        co2: Measured {
            value: co2,
            sig_figs: combine(request.figures("ph"), request.figures("alkalinity")),
        },
    })?;
    let lime_purity = measured(request, "lime-purity")?;
    let soda_purity = measured(request, "soda-ash-purity")?;
    let excess = measured(request, "excess-lime")?;
    let s = soften::softening(
        &c.catalog,
        &removal.input(excess.value, lime_purity.value, soda_purity.value),
    )?;
    traces.extend(s.traces.iter().cloned());
    let quick = lime_id == "quicklime";
    let lime_dose = if quick {
        s.lime_cao_mg_l
    } else {
        s.lime_caoh2_mg_l
    };
    // Lime is a sum of terms, each a removal times a derived factor.
    let mut terms: Vec<Measured> = [
        (removal.co2, s.cao_per_co2),
        (removal.carbonate_hardness, s.cao_per_alkalinity),
        (removal.magnesium, s.cao_per_mg),
    ]
    .map(|(m, f)| Measured {
        value: m.value * f,
        sig_figs: m.sig_figs,
    })
    .to_vec();
    terms.push(excess);
    let lime_figures = sum_figures(&terms, s.lime_cao_mg_l);
    // The lime feeder's setting when its full scale is given; soda ash has its own feeder,
    // not asked for here.
    let lime_feeder = request
        .get("lime-feeder-capacity")
        .map(|capacity| PumpKind::DryFeeder {
            capacity,
            unit: MassRateUnit::KgPerDay,
        });
    let dry_feed = |product: &str, dose: Measured, purity: Measured, pump: Option<PumpKind>| {
        feeding::feed(
            &c.catalog,
            &FeedInput {
                flow: flow(request)?,
                dose,
                product: product.to_string(),
                strength: Strength::new(purity, StrengthBasis::Purity, None),
                pump,
                usable_range: UsableRange::default(),
                // The site's level belongs to the lime chosen, not to the soda ash.
                max_use_level_mg_l: request
                    .max_use_level_mg_l
                    .filter(|_| request.product.as_deref() == Some(product)),
            },
        )
    };
    let lime = dry_feed(
        &lime_id,
        Measured {
            value: lime_dose,
            sig_figs: lime_figures,
        },
        lime_purity,
        lime_feeder,
    )?;
    // Quicklime is slaked before it is fed; hydrated lime is not (the engine's softening
    // cautions were written for quicklime).
    let mut cautions: Vec<Caution> = s
        .cautions
        .iter()
        .filter(|c| quick || !c.key.contains("quicklime"))
        .cloned()
        .collect();
    let mut soda_feed = None;
    if s.soda_ash_mg_l > 0.0 {
        let soda = dry_feed(
            "soda-ash",
            Measured {
                value: s.soda_ash_mg_l,
                sig_figs: removal.non_carbonate_hardness.sig_figs,
            },
            soda_purity,
            None,
        )?;
        traces.extend(soda.traces.iter().cloned());
        cautions.extend(soda.cautions.iter().cloned());
        soda_feed = Some(soda);
    }
    let mut out = c.feed_outcome(&lime, traces, cautions)?;
    out.results.push(result(
        "soda_ash_dose",
        s.soda_ash_mg_l,
        Q::Concentration,
        Some("Na2CO3"),
    ));
    if let Some(soda) = &soda_feed {
        out.results.push(result(
            "soda_ash_product_mass_rate",
            soda.product_kg_per_day,
            Q::MassPerDay,
            Some("product"),
        ));
    }
    out.results
        .push(result("free_co2", co2, Q::Concentration, Some("CO2")));
    out.results.push(result(
        "magnesium_removed",
        removal.magnesium.value,
        Q::Concentration,
        Some("Mg"),
    ));
    out.results.push(result(
        "non_carbonate_hardness",
        removal.non_carbonate_hardness.value,
        Q::AsCaCO3,
        Some("CaCO3"),
    ));
    if request.headlines_only {
        return Ok(out);
    }
    let softened = softened_water(request, s.lime_caoh2_mg_l, s.soda_ash_mg_l)?;
    out.results
        .push(result("ph_softened", softened.water.ph, Q::Ph, None));
    out.results.push(result(
        "hardness_softened",
        softened.calcium_hardness_mg_l_as_caco3 + softened.magnesium_hardness_mg_l_as_caco3,
        Q::AsCaCO3,
        Some("CaCO3"),
    ));
    Ok(out)
}

/// The water the doses would leave at equilibrium: the analysis as a water (calcium and
/// magnesium from the hardness readings), the soda ash dissolved, then the lime added with
/// calcite and brucite precipitating. Lime is counted as Ca(OH)2 whether fed hydrated or as
/// quicklime: slaking makes the one from the other, mole for mole.
fn softened_water(
    request: &Request,
    lime_caoh2_mg_l: f64,
    soda_ash_mg_l: f64,
) -> Result<water::Softened> {
    let total = value(request, "total-hardness")?;
    let calcium = value(request, "calcium-hardness")?;
    let water = WaterState::new(
        &WaterInput::new(
            value(request, "ph")?,
            value(request, "temperature")?,
            value(request, "alkalinity")?,
        )
        .with_calcium_as_caco3(calcium)
        .with_magnesium_as_caco3(total - calcium),
    )?;
    let chemicals = water::Catalog::embedded()?;
    let with_soda = water.dosed(
        chemicals.find("soda-ash")?,
        soda_ash_mg_l,
        Precipitation::None,
    )?;
    water::soften(&with_soda, chemicals.find("lime")?, lime_caoh2_mg_l)
}

/// Pump or feeder cross-check: the dose a drawdown (liquid) or a weighed catch (a chemical fed
/// by mass: a dry feeder's catch, a gas cylinder's scale loss) actually delivers and how far it
/// is from the target, then the setting that would reach the target.
pub(super) fn pump_check(c: &Calculators, request: &Request) -> Result<Outcome> {
    let (product, strength) = c.strength(request)?;
    let form = c.catalog.product(&product)?.form;
    let (measurement, setting, device) = match form {
        Form::Solution => (
            Measurement::Drawdown {
                ml: measured(request, "drawdown-volume")?,
                seconds: measured(request, "drawdown-time")?,
            },
            value(request, "pump-setting")?,
            Device::MeteringPump,
        ),
        Form::Gas | Form::Dry => (
            Measurement::Weighed {
                grams: measured(request, "catch-mass")?,
                seconds: measured(request, "catch-time")?,
            },
            value(request, "feeder-setting")?,
            if form == Form::Gas {
                Device::GasFeeder
            } else {
                Device::DryFeeder
            },
        ),
    };
    let r = pumpcheck::pump_check(
        &c.catalog,
        &PumpCheckInput {
            measurement,
            flow: flow(request)?,
            product: product.clone(),
            strength,
            target_dose: measured(request, "dose")?,
            current_setting_percent: Some(setting),
            tolerance: Tolerance::default(),
        },
    )?;
    let dose_as = c.catalog.product(&product)?.dose_as.clone();
    let mut out = outcome(dose_as.clone());
    out.results.push(headline(
        "actual_dose",
        r.actual_dose_mg_l,
        Q::Concentration,
        Some(&dose_as),
    ));
    out.results
        .push(headline("deviation", r.deviation_percent, Q::Percent, None));
    out.results.push(headline(
        "feed_mass_rate",
        r.active_kg_per_day,
        Q::MassPerDay,
        Some(&dose_as),
    ));
    match r.product_l_per_day {
        Some(l_per_day) => out.results.push(headline(
            "product_volume_rate",
            l_per_day / 24.0,
            Q::VolumePerHour,
            Some("product"),
        )),
        None => out.results.push(headline(
            "product_mass_rate",
            r.product_kg_per_day,
            Q::MassPerDay,
            Some("product"),
        )),
    }
    if let Some(percent) = r.suggested_setting_percent {
        let id = if device == Device::MeteringPump {
            "suggested_pump_setting"
        } else {
            "suggested_feeder_setting"
        };
        out.results.push(headline(id, percent, Q::Percent, None));
        out.setting = Some(Setting { device, percent });
    }
    out.traces = r.traces;
    out.cautions = r.cautions;
    Ok(out)
}

/// CT for free chlorine: T10 from a tracer study, or from the basin's volume, baffling factor
/// and the flow through it; the CT the regression requires for 1- and 3-log Giardia.
pub(super) fn ct(_c: &Calculators, request: &Request) -> Result<Outcome> {
    use crate::engine::dosing::chlorine::{ContactTime, CtInput, ct_free_chlorine};
    let contact = match request.get("t10") {
        Some(t10) => ContactTime::T10Minutes(t10),
        None => ContactTime::Basin {
            // m³/d → L/min; L stay L.
            flow_l_per_min: value(request, "flow")? * 1000.0 / 1440.0,
            volume_l: value(request, "basin-volume")?,
            baffling_factor: value(request, "baffling-factor")?,
        },
    };
    let r = ct_free_chlorine(&CtInput {
        residual: measured(request, "residual")?,
        ph: value(request, "ph")?,
        temperature_c: value(request, "temperature")?,
        contact,
    })?;
    let mut out = outcome("Cl2".into());
    let cl2 = Some("Cl2");
    out.results
        .push(headline("ct", r.ct_mg_min_l, Q::ConcentrationTime, cl2));
    out.results.push(headline(
        "ct_required_3log",
        r.ct_required_3log_mg_min_l,
        Q::ConcentrationTime,
        cl2,
    ));
    out.results.push(headline(
        "inactivation_ratio",
        r.inactivation_ratio,
        Q::Ratio,
        None,
    ));
    out.results.push(headline(
        "giardia_log_inactivation",
        r.giardia_log_inactivation,
        Q::Index,
        None,
    ));
    out.results
        .push(result("t10", r.t10_minutes, Q::Minutes, None));
    out.results.push(result(
        "ct_required_1log",
        r.ct_required_1log_mg_min_l,
        Q::ConcentrationTime,
        cl2,
    ));
    out.traces = r.traces;
    out.cautions = r.cautions;
    Ok(out)
}

/// Making a weaker batch from a concentrate: how much concentrate and how much water.
pub(super) fn dilution(c: &Calculators, request: &Request) -> Result<Outcome> {
    let (product, concentrate) = c.strength(request)?;
    let target = Strength::new(
        measured(request, "target-strength")?,
        concentrate.basis,
        Some(measured(request, "target-specific-gravity")?),
    );
    let r = feeding::dilution(
        &c.catalog,
        &feeding::DilutionInput {
            product: product.clone(),
            concentrate,
            target,
            final_volume_l: value(request, "final-volume")?,
        },
    )?;
    let mut out = outcome(c.catalog.product(&product)?.dose_as.clone());
    out.results.push(headline(
        "concentrate_volume",
        r.concentrate_l,
        Q::Volume,
        Some("product"),
    ));
    out.results.push(headline(
        "water_volume",
        r.water_l,
        Q::Volume,
        Some("water"),
    ));
    out.traces = r.traces;
    out.cautions = r.cautions;
    Ok(out)
}

/// Dry solids a coagulant dose makes, with the raw water's solids and other additives.
pub(super) fn sludge(c: &Calculators, request: &Request) -> Result<Outcome> {
    let r = sludge_of(
        &c.catalog,
        &SludgeInput {
            flow: flow(request)?,
            coagulant: coagulant(c, request)?,
            dose: measured(request, "dose")?,
            suspended_solids_mg_l: request.get("suspended-solids").unwrap_or(0.0),
            additives_mg_l: request.get("additives").unwrap_or(0.0),
        },
    )?;
    let mut out = outcome("dry solids".into());
    // Each number says what the solids are counted as (the floc formula).
    out.results.push(headline(
        "solids_concentration",
        r.solids_mg_l,
        Q::Concentration,
        Some(&r.floc),
    ));
    out.results.push(headline(
        "dry_solids_mass_rate",
        r.dry_solids_kg_per_day,
        Q::MassPerDay,
        Some(&r.floc),
    ));
    if let Some(alt) = &r.alternative {
        out.results.push(result(
            "alternative_solids_concentration",
            alt.solids_mg_l,
            Q::Concentration,
            Some(&alt.floc),
        ));
        out.results.push(result(
            "alternative_dry_solids_mass_rate",
            alt.dry_solids_kg_per_day,
            Q::MassPerDay,
            Some(&alt.floc),
        ));
    }
    out.traces = r.traces;
    out.cautions = r.cautions;
    Ok(out)
}

// ---- The plant's other feeds (part A): fluoridation, corrosion inhibitor, permanganate and
// chlorine dioxide. Each dose is built from the balanced reactions and formulas of `data/`,
// then fed through the same product path as every other calculator. None of these products'
// effect on pH is modelled by the water engine yet (fluoride and phosphate speciation are not
// in it), so none of them reports a pH after: a caution says so instead of a guess. ----

/// The feed's result `from` also given under the calculator's own id `to` (`fluoride_added`,
/// `dose_as_po4`, `chlorite_feed_rate`): the card's big places, the log's columns and the
/// monthly report read the feed's ids, scripts read the named one. `repeats`: the named one
/// says it is `from` again (`same_as`), so a card showing `from` shows it once; a liquid's
/// `chlorite_feed_rate` does not, because its `product_mass_rate` has no big place.
fn also_as(out: &mut Outcome, from: &'static str, to: &'static str, headline: bool, repeats: bool) {
    if let Some(r) = out.results.iter().find(|r| r.id == from) {
        let named = ResultValue {
            id: to,
            headline,
            same_as: repeats.then_some(from),
            ..r.clone()
        };
        out.results.push(named);
    }
}

/// A reading or target that cannot be below zero (a concentration), with its figures; a
/// negative one is refused: it would lower the dose silently.
fn not_negative(request: &Request, name: &str) -> Result<Measured> {
    let m = measured(request, name)?;
    if m.value < 0.0 {
        return Err(Error::new(
            ErrorKind::OutOfRange,
            format!("{name} cannot be negative ({})", m.value),
        )
        .because("negative-reading")
        .with("input", name.to_string())
        .with("value", m.value));
    }
    Ok(m)
}

/// An optional input, absent meaning none (an exact zero); a negative one is refused.
fn not_negative_or_zero(request: &Request, name: &str) -> Result<Measured> {
    match request.get(name) {
        Some(_) => not_negative(request, name),
        None => Ok(Measured::exact(0.0)),
    }
}

/// The outcome when the water already holds what the target asks for: nothing is fed, so no
/// feed rate and no setting; the caution says why.
fn nothing_to_feed(
    id: &'static str,
    basis: &str,
    present: f64,
    target: f64,
    cautions: Vec<Caution>,
) -> Outcome {
    let mut out = outcome(basis.to_string());
    out.results
        .push(headline("dose", 0.0, Q::Concentration, Some(basis)));
    out.results.push(ResultValue {
        same_as: Some("dose"),
        ..result(id, 0.0, Q::Concentration, Some(basis))
    });
    out.cautions = cautions;
    out.cautions.push(
        Caution::info("water-already-at-target")
            .with("present", crate::engine::sigfig::format_sig(present, 3))
            .with("target", crate::engine::sigfig::format_sig(target, 3)),
    );
    out
}

/// The info caution of a product whose effect on pH and alkalinity is not modelled.
fn ph_not_modelled(request: &Request) -> Caution {
    Caution::info("water-effect-not-available")
        .with("product", request.product.as_deref().unwrap_or(""))
}

/// Fluoridation: the fluoride to add (target less what the water carries, as F), fed as
/// fluorosilicic acid, sodium fluorosilicate or sodium fluoride. The available fluoride of each
/// compound comes from its formula (the catalog relates compound and dose through the element
/// F), never from a typed fraction. An overfeed guard compares the dose the pump or feeder
/// would give at full scale with the fluoride limit.
pub(super) fn fluoridation(c: &Calculators, request: &Request) -> Result<Outcome> {
    let target = not_negative(request, "target-fluoride")?;
    let natural = not_negative(request, "natural-fluoride")?;
    let added = target.value - natural.value;
    // Fluoride feed is interlocked with the water flow (common practice: a fluoride pump
    // that runs with no flow is the classic overfeed).
    let cautions = vec![
        Caution::warning("fluoride-feed-interlock"),
        ph_not_modelled(request),
    ];
    if added <= 0.0 {
        return Ok(nothing_to_feed(
            "fluoride_added",
            "F",
            natural.value,
            target.value,
            cautions,
        ));
    }
    let dose = Measured {
        value: added,
        sig_figs: sum_figures(&[target, natural], added),
    };
    let r = c.feed_for(request, dose)?;
    let mut out = c.feed_outcome(&r, Vec::new(), cautions)?;
    also_as(&mut out, "dose", "fluoride_added", false, true);
    // Overfeed guard: at full scale the pump or feeder adds added × 100 / setting.
    if let (Some(setting), Some(limit)) = (
        out.setting,
        crate::engine::dosing::site::effective_limit(&request.limits, "fluoride"),
    ) && let Some(max) = limit.max
        && setting.percent > 0.0
    {
        let at_full_scale = natural.value + added * 100.0 / setting.percent;
        if at_full_scale > max {
            out.cautions.push(
                Caution::warning("fluoride-full-scale-above-limit")
                    .with(
                        "full_scale",
                        crate::engine::sigfig::format_sig(at_full_scale, 3),
                    )
                    .with("limit", crate::engine::sigfig::format_sig(max, 3))
                    .with("source", &limit.source),
            );
        }
    }
    Ok(out)
}

/// The compound a phosphate residual is expressed as, by the calculator's mode.
fn residual_basis(mode: Option<&str>) -> &'static str {
    match mode {
        Some("residual-as-p") => "P",
        Some("residual-as-p2o5") => "P2O5",
        _ => "PO4",
    }
}

/// mg/L as PO4 per mg/L as `basis`, through the phosphorus both contain, as trace steps:
/// `mg/L basis` → `mmol/L P` → `mg/L PO4`.
fn phosphate_as_po4(trace: &mut Trace, basis: &str) -> Result<()> {
    use crate::engine::formula::Formula;
    if basis == "PO4" {
        return Ok(());
    }
    for (formula, from) in [(basis, true), ("PO4", false)] {
        let f = Formula::parse(formula)?;
        let p = f.count("P") as f64;
        let (mass, mol) = (
            Quantity::of(f.molar_mass(), "mg/L", formula),
            Quantity::of(p, "mmol/L", "P"),
        );
        let origin = Origin::MolarMass {
            formula: formula.to_string(),
        };
        if from {
            trace.then(mol, mass, origin, None)?;
        } else {
            trace.then(mass, mol, origin, None)?;
        }
    }
    Ok(())
}

/// Phosphate products whose orthophosphate share is the data sheet's, not the formula's.
const ORTHO_SHARE_STATED: [&str; 1] = ["blended-phosphate"];

/// Corrosion inhibitor: the phosphate to add (target less present, both on the mode's basis:
/// PO4, P or P2O5), converted to PO4 through the formulas, its orthophosphate part, and the
/// product's feed. An orthophosphate product is all orthophosphate by its formula unless the
/// data sheet's share is typed; a blended phosphate needs its data sheet's share.
pub(super) fn corrosion_inhibitor(c: &Calculators, request: &Request) -> Result<Outcome> {
    let basis = residual_basis(request.mode);
    let target = not_negative(request, "target-residual")?;
    let present = not_negative(request, "present-residual")?;
    let product = chosen(request)?;
    let share = match request.get("orthophosphate-share") {
        // From 1 %: a share typed as a fraction (0.7 for 70 %) is refused.
        Some(share) => crate::engine::check_range("orthophosphate share", share, 1.0, 100.0, "%")?,
        None if ORTHO_SHARE_STATED.contains(&product) => {
            return Err(Error::new(
                ErrorKind::InvalidInput,
                "orthophosphate-share is missing: a blend's share is on its data sheet",
            )
            .because("missing-input")
            .with("input", "orthophosphate-share"));
        }
        None => 100.0,
    };
    // With the water given, the pH and alkalinity the phosphate leaves.
    let modelled = plant_feeds::water_modelled(c, request)?.is_some();
    let cautions = if modelled {
        Vec::new()
    } else {
        vec![ph_not_modelled(request)]
    };
    let added = target.value - present.value;
    if added <= 0.0 {
        return Ok(nothing_to_feed(
            "dose_as_po4",
            "PO4",
            present.value,
            target.value,
            cautions,
        ));
    }
    let mut trace = Trace::new(
        Quantity::of(added, "mg/L", basis),
        Origin::Measured,
        sum_figures(&[target, present], added),
    );
    phosphate_as_po4(&mut trace, basis)?;
    let dose = Measured {
        value: trace.value(),
        sig_figs: trace.sig_figs(),
    };
    let r = c.feed_for(request, dose)?;
    let mut out = c.feed_outcome(
        &r,
        vec![NamedTrace::new("phosphate-as-po4", trace)],
        cautions,
    )?;
    also_as(&mut out, "dose", "dose_as_po4", false, true);
    out.results.push(result(
        "orthophosphate_as_po4",
        dose.value * share / 100.0,
        Q::Concentration,
        Some("PO4"),
    ));
    plant_feeds::push_water_after(c, request, dose.value, &mut out)?;
    Ok(out)
}

/// Potassium permanganate: the stoichiometric dose for the iron and manganese to oxidise
/// (mg KMnO4 per mg Fe and per mg Mn from the balanced reactions in `data/reactions.json`)
/// plus any other demand the operator knows (mg/L as KMnO4), then its feed.
pub(super) fn permanganate(c: &Calculators, request: &Request) -> Result<Outcome> {
    let other = not_negative_or_zero(request, "other-demand")?;
    let mut terms = vec![other];
    let mut traces = Vec::new();
    for (input, reaction, ion, label) in [
        ("iron", "permanganate-iron", "Fe+2", "permanganate-per-iron"),
        (
            "manganese",
            "permanganate-manganese",
            "Mn+2",
            "permanganate-per-manganese",
        ),
    ] {
        let m = not_negative(request, input)?;
        let element = ion.trim_end_matches("+2");
        let (per, origin) = c.catalog.mass_ratio(reaction, ion, "KMnO4")?;
        let mut t = Trace::new(
            Quantity::of(m.value, "mg/L", element),
            Origin::Measured,
            m.sig_figs,
        );
        t.then(
            Quantity::of(per, "mg/L", "KMnO4"),
            Quantity::of(1.0, "mg/L", element),
            origin,
            None,
        )?;
        terms.push(Measured {
            value: t.value(),
            sig_figs: m.sig_figs,
        });
        traces.push(NamedTrace::new(label, t));
    }
    let total: f64 = terms.iter().map(|m| m.value).sum();
    let mut cautions = vec![Caution::warning("permanganate-pink-water")];
    if total <= 0.0 {
        let mut out = outcome("KMnO4".into());
        out.results
            .push(headline("dose", 0.0, Q::Concentration, Some("KMnO4")));
        cautions.push(Caution::info("permanganate-no-demand"));
        out.cautions = cautions;
        out.traces = traces;
        return Ok(out);
    }
    let dose = Measured {
        value: total,
        sig_figs: sum_figures(&terms, total),
    };
    let r = c.feed_for(request, dose)?;
    c.feed_outcome(&r, traces, cautions)
}

/// Percent of a chlorine dioxide dose that typically leaves as chlorite, used when the plant
/// gives none: the upper end of the 50–70 % range (US EPA, Alternative Disinfectants and
/// Oxidants Guidance Manual, EPA 815-R-99-014, 1999, ch. 4; from memory), so the estimate does
/// not understate.
pub(super) const CHLORITE_FROM_CLO2_PERCENT: f64 = 70.0;

/// Chlorine dioxide: the sodium chlorite and the chlorine or acid a generator needs for a ClO2
/// dose, from the route's balanced reaction at 100 % yield (or the yield given), then the
/// chlorite product's feed; and the chlorite the water can expect (the part of the dose that
/// reduces to chlorite, plus chlorite fed beyond what a generator below 100 % yield converts),
/// checked against the chlorite limit.
pub(super) fn chlorine_dioxide(c: &Calculators, request: &Request) -> Result<Outcome> {
    let clo2 = not_negative(request, "clo2-dose")?;
    let (reaction, reactant) = match request.mode {
        Some("acid-chlorite") => ("chlorine-dioxide-acid-chlorite", "HCl"),
        _ => ("chlorite-chlorine-dioxide", "Cl2"),
    };
    let yield_percent = request.get("generator-yield").unwrap_or(100.0);
    crate::engine::check_range("generator yield", yield_percent, 1.0, 100.0, "%")?;
    let conversion = request
        .get("chlorite-conversion")
        .unwrap_or(CHLORITE_FROM_CLO2_PERCENT);
    // From 1 %: a share typed as a fraction (0.6 for 60 %) is refused, not taken as 0.6 %.
    crate::engine::check_range("chlorite conversion", conversion, 1.0, 100.0, "%")?;
    let balanced = c.catalog.reaction(reaction)?;
    let origin = || Origin::MoleRatio {
        reaction: balanced.to_string(),
    };
    // ClO2 → NaClO2 at the reaction's ratio, then ÷ yield.
    let mut chlorite = Trace::new(
        Quantity::of(clo2.value, "mg/L", "ClO2"),
        Origin::Measured,
        clo2.sig_figs,
    );
    let per_chlorite = balanced.mass_ratio("ClO2", "NaClO2")?;
    chlorite.then(
        Quantity::of(per_chlorite, "mg/L", "NaClO2"),
        Quantity::of(1.0, "mg/L", "ClO2"),
        origin(),
        None,
    )?;
    let at_full_yield = chlorite.value();
    if yield_percent < 100.0 {
        chlorite.then(
            Quantity::of(100.0, "mg/L", "NaClO2"),
            Quantity::of(yield_percent, "mg/L", "NaClO2"),
            Origin::Measured,
            request.figures("generator-yield"),
        )?;
    }
    let mut reactant_trace = Trace::new(
        Quantity::of(clo2.value, "mg/L", "ClO2"),
        Origin::Measured,
        clo2.sig_figs,
    );
    reactant_trace.then(
        Quantity::of(balanced.mass_ratio("ClO2", reactant)?, "mg/L", reactant),
        Quantity::of(1.0, "mg/L", "ClO2"),
        origin(),
        None,
    )?;
    let dose = Measured {
        value: chlorite.value(),
        sig_figs: chlorite.sig_figs(),
    };
    let mut cautions = vec![Caution::warning("clo2-generator-ratio")];
    if reactant == "HCl" {
        cautions.push(Caution::info("clo2-acid-as-pure-hcl"));
    }
    let r = c.feed_for(request, dose)?;
    let reactant_kg_per_day = reactant_trace.value() * value(request, "flow")? / 1000.0;
    let mut out = c.feed_outcome(
        &r,
        vec![
            NamedTrace::new("clo2-chlorite", chlorite),
            NamedTrace::new("clo2-reactant", reactant_trace),
        ],
        cautions,
    )?;
    // The chlorite product as delivered, by mass, under its own id too.
    also_as(
        &mut out,
        "product_mass_rate",
        "chlorite_feed_rate",
        true,
        false,
    );
    out.results.insert(
        0,
        headline("clo2_dose", clo2.value, Q::Concentration, Some("ClO2")),
    );
    out.results.push(headline(
        "chlorine_or_acid_feed_rate",
        reactant_kg_per_day,
        Q::MassPerDay,
        Some(reactant),
    ));
    // Chlorite (as ClO2-) expected: the reduced part of the dose, ClO2 → ClO2- mole for mole,
    // plus the chlorite fed beyond what the generator converts.
    let m = |f: &str| water::chemicals::molar_mass(f);
    let unconverted_naclo2 = dose.value - at_full_yield;
    let expected = clo2.value * conversion / 100.0 * m("ClO2-")? / m("ClO2")?
        + unconverted_naclo2 * m("ClO2-")? / m("NaClO2")?;
    out.results.push(headline(
        "expected_chlorite",
        expected,
        Q::Concentration,
        Some("ClO2-"),
    ));
    if let Some(limit) = crate::engine::dosing::site::effective_limit(&request.limits, "chlorite")
        && let Some(max) = limit.max
        && expected > max
    {
        out.cautions.push(
            Caution::warning("expected-chlorite-above-limit")
                .with("value", crate::engine::sigfig::format_sig(expected, 3))
                .with("limit", crate::engine::sigfig::format_sig(max, 3))
                .with("source", &limit.source),
        );
    }
    if request.get("chlorite-conversion").is_none() {
        out.cautions.push(
            Caution::info("chlorite-conversion-typical")
                .with("percent", crate::engine::sigfig::format_sig(conversion, 2)),
        );
    }
    Ok(out)
}
