//! `feed`, `chlorine`, `dechlor`, `ct`, `soften`, `pump-check`, `dilute`: the dosing calculators
//! on the command line.
//!
//! Each subcommand maps flags onto an engine input, runs the calculator, and reports the
//! numbers, the "show the work" traces and the cautions. Measured numbers are parsed as
//! written so their significant figures reach the trace. `--site FILE` reads a site profile
//! (the only I/O here) so a delivered-product id supplies strength, SG, pump and limits.

use super::{Args, CliError, CliResult, Report};
use crate::engine::dosing::catalog::{Catalog, Strength, StrengthBasis};
use crate::engine::dosing::caution::render;
use crate::engine::dosing::chlorine::{self, ChlorineInput, ContactTime, CtInput};
use crate::engine::dosing::coagulation::{self, Alkali, Coagulant, CoagulationInput, SludgeInput};
use crate::engine::dosing::feed::{self, DilutionInput, FeedInput, PumpKind, UsableRange};
use crate::engine::dosing::neutralization::{self, NeutralizationInput};
use crate::engine::dosing::pumpcheck::{self, Measurement, PumpCheckInput, TankShape, Tolerance};
use crate::engine::dosing::site::SiteProfile;
use crate::engine::dosing::softening::{self, SofteningInput};
use crate::engine::dosing::units::{
    Flow, FlowUnit, LengthUnit, MassRateUnit, UnitSystem, VolumeRateUnit, VolumeUnit,
};
use crate::engine::dosing::waterside::{PhRange, WaterEffect};
use crate::engine::dosing::{NamedTrace, show_work};
use crate::engine::sigfig::Measured;
use serde::Serialize;
use serde_json::{Value, json};

/// The dosing subcommands `dispatch` routes here.
pub const COMMANDS: [&str; 10] = [
    "feed",
    "coagulation",
    "neutralize-feed",
    "chlorine",
    "dechlor",
    "ct",
    "soften",
    "pump-check",
    "dilute",
    "sludge",
];

/// Runs one dosing subcommand by name (registered in `dispatch`).
pub fn run(command: &str, args: &Args) -> CliResult {
    // `batch` adds --json to every request but only `main` reads it; mark it read here so a
    // batch line is not rejected as having an unused flag.
    let _ = args.switch("json");
    match command {
        "feed" => feed(args),
        "coagulation" => coagulation_cmd(args),
        "neutralize-feed" => neutralize_feed(args),
        "chlorine" => chlorine(args),
        "dechlor" => dechlor(args),
        "ct" => ct(args),
        "soften" => soften(args),
        "pump-check" => pump_check(args),
        "dilute" => dilute(args),
        "sludge" => sludge(args),
        other => Err(CliError::usage(format!("unknown dosing command '{other}'"))),
    }
}

fn catalog() -> Result<Catalog, CliError> {
    Ok(Catalog::builtin()?)
}

fn measured(args: &Args, name: &str) -> Result<Option<Measured>, CliError> {
    let Some(text) = args.text(name)? else {
        return Ok(None);
    };
    Measured::parse(text).map(Some).map_err(|_| CliError {
        kind: "invalid-input".into(),
        message: format!("--{name} must be a number, got '{text}'"),
        reason: None,
    })
}

fn required_measured(args: &Args, name: &str) -> Result<Measured, CliError> {
    measured(args, name)?.ok_or_else(|| CliError::usage(format!("missing --{name}")))
}

/// A test duration: whole seconds or minutes are counted on a stopwatch, not estimated, so
/// they do not limit significant figures ("60" s is not one significant figure here).
fn duration(args: &Args, name: &str) -> Result<Measured, CliError> {
    let d = required_measured(args, name)?;
    Ok(if d.value.fract() == 0.0 {
        Measured::exact(d.value)
    } else {
        d
    })
}

fn site(args: &Args, catalog: &Catalog) -> Result<Option<SiteProfile>, CliError> {
    let Some(path) = args.text("site")? else {
        return Ok(None);
    };
    let text = super::read_input_file(path, "site profile")?;
    Ok(Some(SiteProfile::from_json(&text, catalog)?))
}

fn flow(args: &Args) -> Result<Flow, CliError> {
    let value = required_measured(args, "flow")?;
    let unit = FlowUnit::parse(args.required_text("flow-unit")?)?;
    Ok(Flow::new(value, unit))
}

/// Product id and strength: from flags, or from a delivered product of the site profile.
fn product_and_strength(
    args: &Args,
    catalog: &Catalog,
    site: Option<&SiteProfile>,
) -> Result<(String, Strength, Option<String>), CliError> {
    let id = args.required_text("product")?;
    let delivered = site.and_then(|s| s.delivered(id).ok());
    let strength = measured(args, "strength")?;
    let basis = args.text("strength-basis")?;
    let sg = measured(args, "sg")?;
    match (delivered, strength) {
        (Some(d), None) => {
            if basis.is_some() || sg.is_some() {
                return Err(CliError::usage(
                    "--strength-basis/--sg need --strength; the site profile's certificate gives all three",
                ));
            }
            Ok((d.product.clone(), d.strength(), Some(d.id.clone())))
        }
        (d, Some(value)) => {
            let basis = StrengthBasis::parse(
                basis.ok_or_else(|| CliError::usage("missing --strength-basis"))?,
            )?;
            let product = d.map_or(id.to_string(), |d| d.product.clone());
            catalog.product(&product)?;
            Ok((
                product,
                Strength::new(value, basis, sg),
                d.map(|d| d.id.clone()),
            ))
        }
        (None, None) => Err(CliError::usage(
            "missing --strength (or give --site with a delivered product id)",
        )),
    }
}

fn pump_from_flags(args: &Args) -> Result<Option<PumpKind>, CliError> {
    if let Some(capacity) = args.number("pump-capacity")? {
        let unit = VolumeRateUnit::parse(args.required_text("pump-unit")?)?;
        return Ok(Some(PumpKind::Metering { capacity, unit }));
    }
    if let Some(ml_per_rev) = args.number("pump-ml-per-rev")? {
        let max_rpm = args.required_number("pump-max-rpm")?;
        return Ok(Some(PumpKind::Peristaltic {
            ml_per_rev,
            max_rpm,
        }));
    }
    if let Some(capacity) = args.number("feeder-capacity")? {
        let unit = MassRateUnit::parse(args.required_text("feeder-unit")?)?;
        return Ok(Some(if args.switch("gas") {
            PumpKind::GasFeeder { capacity, unit }
        } else {
            PumpKind::DryFeeder { capacity, unit }
        }));
    }
    Ok(None)
}

fn usable_range(args: &Args, site: Option<&SiteProfile>) -> Result<UsableRange, CliError> {
    let base = site.map_or_else(UsableRange::default, |s| s.pump_usable_range_percent);
    Ok(UsableRange {
        min: args.number("usable-min")?.unwrap_or(base.min),
        max: args.number("usable-max")?.unwrap_or(base.max),
    })
}

/// The JSON object of a result, with `traces` rendered as text too, for scripts and support.
fn to_json<T: Serialize>(value: &T) -> Result<Value, CliError> {
    serde_json::to_value(value).map_err(|e| CliError::io(format!("cannot encode result: {e}")))
}

fn human(
    lines: &[String],
    traces: &[NamedTrace],
    cautions: &[crate::engine::dosing::Caution],
) -> String {
    let mut out = lines.join("\n");
    out.push_str("\n\nshow the work:\n");
    out.push_str(&show_work(traces));
    out.push_str("\ncautions:\n");
    out.push_str(&render(cautions));
    out
}

fn fmt(v: f64) -> String {
    crate::engine::sigfig::format_sig(v, 4)
}

/// The feed input from flags (and the site profile): flow, product, strength, pump, limits.
fn feed_input(
    args: &Args,
    catalog: &Catalog,
    site: Option<&SiteProfile>,
    dose: Measured,
) -> Result<FeedInput, CliError> {
    let flow = flow(args)?;
    let (product, strength, delivered) = product_and_strength(args, catalog, site)?;
    let mut pump = pump_from_flags(args)?;
    if let Some(id) = args.text("pump")? {
        let s = site.ok_or_else(|| CliError::usage("--pump needs --site"))?;
        pump = Some(s.pump(id)?.kind);
    } else if pump.is_none()
        && let (Some(s), Some(d)) = (site, &delivered)
    {
        pump = s.pump_for(d).map(|p| p.kind);
    }
    let max_use_level = match args.number("max-use-level")? {
        Some(v) => Some(v),
        None => site
            .zip(delivered.as_ref())
            .and_then(|(s, d)| s.delivered(d).ok())
            .and_then(|d| d.max_use_level_mg_l),
    };
    Ok(FeedInput {
        flow,
        dose,
        product,
        strength,
        pump,
        usable_range: usable_range(args, site)?,
        max_use_level_mg_l: max_use_level,
    })
}

/// With `--flow`, the product feed for a dose another calculator produced (expressed as
/// `dose_as`); the product must be dosed as that substance.
fn follow_on_feed(
    args: &Args,
    catalog: &Catalog,
    site: Option<&SiteProfile>,
    dose_as: &str,
    dose: f64,
) -> Result<Option<feed::FeedResult>, CliError> {
    if args.text("flow")?.is_none() {
        return Ok(None);
    }
    let input = feed_input(args, catalog, site, Measured::exact(dose))?;
    let p = catalog.product(&input.product)?;
    let same = crate::engine::formula::Formula::parse(&p.dose_as)?
        .same_composition(&crate::engine::formula::Formula::parse(dose_as)?);
    if !same {
        return Err(CliError::usage(format!(
            "{} is dosed as {}, but this dose is {}",
            p.id, p.dose_as, dose_as
        )));
    }
    Ok(Some(feed::feed(catalog, &input)?))
}

/// The unit system to print first: `--units`, else the site's, else US.
fn unit_system(args: &Args, site: Option<&SiteProfile>) -> Result<UnitSystem, CliError> {
    Ok(match args.text("units")? {
        Some("us") => UnitSystem::Us,
        Some("si") => UnitSystem::Si,
        Some(other) => {
            return Err(CliError::usage(format!(
                "--units takes us or si, not '{other}'"
            )));
        }
        None => site.map_or_else(UnitSystem::default, |s| s.units),
    })
}

fn feed_lines(r: &feed::FeedResult, system: UnitSystem) -> Vec<String> {
    let (active, product) = match system {
        UnitSystem::Us => (
            format!(
                "active feed {} lb/d ({} kg/d, {} g/h)",
                fmt(r.active_lb_per_day),
                fmt(r.active_kg_per_day),
                fmt(r.active_g_per_hour)
            ),
            format!(
                "product {} lb/d ({} kg/d)",
                fmt(r.product_lb_per_day),
                fmt(r.product_kg_per_day)
            ),
        ),
        UnitSystem::Si => (
            format!(
                "active feed {} kg/d = {} g/h ({} lb/d)",
                fmt(r.active_kg_per_day),
                fmt(r.active_g_per_hour),
                fmt(r.active_lb_per_day)
            ),
            format!(
                "product {} kg/d ({} lb/d)",
                fmt(r.product_kg_per_day),
                fmt(r.product_lb_per_day)
            ),
        ),
    };
    let mut lines = vec![
        format!("dose {} mg/L as {}", fmt(r.dose_mg_l), r.dose_as),
        active,
        product,
    ];
    if let (Some(l), Some(g), Some(gph), Some(lh), Some(ml)) = (
        r.product_l_per_day,
        r.product_gal_per_day,
        r.product_gph,
        r.product_l_per_h,
        r.product_ml_per_min,
    ) {
        lines.push(match system {
            UnitSystem::Us => format!(
                "product volume {} gal/d = {} gph ({} L/d, {} mL/min)",
                fmt(g),
                fmt(gph),
                fmt(l),
                fmt(ml)
            ),
            UnitSystem::Si => format!(
                "product volume {} L/d = {} L/h = {} mL/min ({} gal/d)",
                fmt(l),
                fmt(lh),
                fmt(ml),
                fmt(g)
            ),
        });
    }
    if let Some(p) = &r.pump {
        let mut s = format!("pump setting {} % of full output", fmt(p.percent));
        if let (Some(st), Some(sp)) = (p.stroke_percent, p.speed_percent) {
            s.push_str(&format!(" (stroke {} % × speed {} %)", fmt(st), fmt(sp)));
        }
        if let Some(rpm) = p.rpm {
            s.push_str(&format!(" ({} rpm)", fmt(rpm)));
        }
        lines.push(s);
    }
    lines
}

/// `molefeed feed`: dose → active feed → product → pump setting.
pub fn feed(args: &Args) -> CliResult {
    let catalog = catalog()?;
    let site = site(args, &catalog)?;
    let dose = required_measured(args, "dose")?;
    let input = feed_input(args, &catalog, site.as_ref(), dose)?;
    let r = feed::feed(&catalog, &input)?;
    let mut j = to_json(&r)?;
    j["pump_percent"] = json!(r.pump.as_ref().map(|p| p.percent));
    let mut lines = feed_lines(&r, unit_system(args, site.as_ref())?);
    let mut traces = r.traces.clone();
    let mut cautions = r.cautions.clone();
    // With the water, the dose's effect on it: `water` in the JSON.
    if let Some(w) = super::water::optional_water_state(args, &["ph", "temperature", "alkalinity"])?
    {
        match crate::engine::dosing::waterside::product_effect(
            &catalog,
            &input.product,
            dose.value,
            &w,
            ph_range(site.as_ref()),
        ) {
            Ok((e, more, trace)) => {
                lines.push(effect_line(&e));
                j["water"] = to_json(&e)?;
                traces.extend(trace.map(|t| NamedTrace::new("chlorine-as-compound", t)));
                cautions = crate::engine::dosing::caution::finish([cautions, more].concat());
            }
            // A product the water engine cannot model still gets its feed; the note says why
            // the pH is missing.
            Err(e)
                if matches!(
                    e.kind(),
                    crate::engine::ErrorKind::UnknownChemical
                        | crate::engine::ErrorKind::InvalidInput
                ) =>
            {
                cautions.push(
                    crate::engine::dosing::Caution::info("water-effect-not-available")
                        .with("product", &input.product),
                );
                cautions = crate::engine::dosing::caution::finish(cautions);
            }
            Err(e) => return Err(e.into()),
        }
        j["cautions"] = to_json(&cautions)?;
    }
    Ok(Report {
        human: human(&lines, &traces, &cautions),
        json: j,
    })
}

/// `molefeed chlorine`: dose from demand + residual (+ breakpoint), optional chloramination.
pub fn chlorine(args: &Args) -> CliResult {
    let catalog = catalog()?;
    let site = site(args, &catalog)?;
    let demand = required_measured(args, "demand")?;
    let residual = required_measured(args, "residual")?;
    let ammonia_n = measured(args, "ammonia-n")?;
    let limit = match args.number("residual-limit")? {
        Some(v) => Some(v),
        None => site
            .as_ref()
            .and_then(|s| s.effective_limit("chlorine"))
            .or_else(|| {
                crate::engine::dosing::site::regulatory_defaults()
                    .into_iter()
                    .find(|l| l.parameter == "chlorine")
            })
            .and_then(|l| l.max),
    };
    let input = ChlorineInput {
        demand,
        residual,
        ammonia_n,
        residual_limit_mg_l: limit,
    };
    let r = match super::water::optional_water_state(args, &["ph", "temperature", "alkalinity"])? {
        None => chlorine::chlorine_dose(&catalog, &input)?,
        Some(w) => {
            let id = args.text("product")?.ok_or_else(|| {
                CliError::usage(
                    "the water's pH effect needs --product (chlorine-gas, sodium-hypochlorite or calcium-hypochlorite)",
                )
            })?;
            let product = catalog_product_id(id, site.as_ref());
            chlorine::chlorine_dose_in_water(
                &catalog,
                &input,
                &product,
                &w,
                ph_range(site.as_ref()),
            )?
        }
    };
    let mut j = to_json(&r)?;
    let terms: Vec<String> = r
        .dose_terms
        .iter()
        .map(|(name, v)| format!("{} {}", fmt(*v), name))
        .collect();
    let mut lines = vec![format!(
        "chlorine dose {} mg/L as Cl2 = {}",
        fmt(r.dose_mg_l),
        terms.join(" + ")
    )];
    if let Some(bp) = r.breakpoint_mg_l {
        lines.push(format!(
            "breakpoint {} mg/L (theoretical {}:1 Cl2:NH3-N from the balanced reaction)",
            fmt(bp),
            fmt(r.breakpoint_ratio)
        ));
        if let Some((lo, hi)) = r.dose_practice_mg_l {
            lines.push(format!(
                "dose at practice ratios 10–15:1: {}–{} mg/L",
                fmt(lo),
                fmt(hi)
            ));
        }
    }
    if let Some(e) = &r.water {
        lines.push(effect_line(e));
    }
    let mut traces = r.traces.clone();
    let mut cautions = r.cautions.clone();
    if let Some(ratio) = measured(args, "chloramine-ratio")? {
        let c = chlorine::chloramination(&catalog, Measured::exact(r.dose_mg_l), ratio)?;
        lines.push(format!(
            "ammonia for {}:1 — {} mg/L as N ({} mg/L NH3); monochloramine theory {}:1",
            ratio.value,
            fmt(c.ammonia_n_mg_l),
            fmt(c.ammonia_nh3_mg_l),
            fmt(c.theoretical_ratio)
        ));
        j["chloramination"] = to_json(&c)?;
        traces.extend(c.traces);
        cautions = crate::engine::dosing::caution::finish([cautions, c.cautions].concat());
    }
    if let Some(f) = follow_on_feed(args, &catalog, site.as_ref(), "Cl2", r.dose_mg_l)? {
        lines.push(String::new());
        lines.extend(feed_lines(&f, unit_system(args, site.as_ref())?));
        j["feed"] = to_json(&f)?;
        traces.extend(f.traces);
        cautions = crate::engine::dosing::caution::finish([cautions, f.cautions].concat());
    }
    j["cautions"] = to_json(&cautions)?;
    Ok(Report {
        human: human(&lines, &traces, &cautions),
        json: j,
    })
}

/// A delivered-product id of the site resolved to its catalog id; otherwise the id as given.
fn catalog_product_id(id: &str, site: Option<&SiteProfile>) -> String {
    site.and_then(|s| s.delivered(id).ok())
        .map_or(id.to_string(), |d| d.product.clone())
}

/// The pH range of the site, else the regulatory default.
fn ph_range(site: Option<&SiteProfile>) -> PhRange {
    site.map_or_else(PhRange::default, PhRange::from_site)
}

fn lsi_text(v: Option<f64>) -> String {
    v.map_or("n/a (needs --calcium and alkalinity left)".into(), |v| {
        format!("{v:+.2}")
    })
}

fn effect_line(e: &WaterEffect) -> String {
    format!(
        "water ({} {} mg/L): pH {:.2} -> {:.2}, alkalinity {:.1} -> {:.1} mg/L as CaCO3, LSI after {}",
        e.chemical,
        fmt(e.compound_mg_l),
        e.ph_before,
        e.ph_after,
        e.alkalinity_before_mg_l_as_caco3,
        e.alkalinity_after_mg_l_as_caco3,
        lsi_text(e.langelier_index_after)
    )
}

/// `molefeed neutralize-feed`: dose of an acid or base for a target pH in the given water,
/// then product feed and pump setting (same product/pump flags as `feed`).
pub fn neutralize_feed(args: &Args) -> CliResult {
    let catalog = catalog()?;
    let site = site(args, &catalog)?;
    let target_ph = args.required_number("target-ph")?;
    let water = super::water::water_state(args)?;
    // The dose is what is being solved for; the feed input's own dose is replaced below.
    let f = feed_input(args, &catalog, site.as_ref(), Measured::exact(0.0))?;
    let r = neutralization::neutralization(
        &catalog,
        &water,
        &NeutralizationInput {
            product: f.product,
            strength: f.strength,
            target_ph,
            flow: f.flow,
            pump: f.pump,
            usable_range: f.usable_range,
            max_use_level_mg_l: f.max_use_level_mg_l,
            ph_range: ph_range(site.as_ref()),
            dose_sig_figs: None,
        },
    )?;
    let mut lines = vec![format!(
        "{} {} mg/L ({}) brings pH {:.2} to {:.2}; alkalinity {:.1} -> {:.1} mg/L as CaCO3, LSI after {}",
        r.product,
        fmt(r.dose_mg_l),
        r.chemical,
        r.ph_before,
        r.ph_after,
        r.alkalinity_before_mg_l_as_caco3,
        r.alkalinity_after_mg_l_as_caco3,
        lsi_text(r.langelier_index_after)
    )];
    lines.push(String::new());
    lines.extend(feed_lines(&r.feed, unit_system(args, site.as_ref())?));
    let mut j = to_json(&r)?;
    j["pump_percent"] = json!(r.feed.pump.as_ref().map(|p| p.percent));
    Ok(Report {
        human: human(&lines, &r.traces, &r.cautions),
        json: j,
    })
}

/// `molefeed coagulation`: alkalinity consumed, supplemental alkali, and with the water
/// (`--ph --temperature`, the same `--alkalinity`) the pH, alkalinity and LSI after.
pub fn coagulation_cmd(args: &Args) -> CliResult {
    let catalog = catalog()?;
    let site = site(args, &catalog)?;
    let coagulant = Coagulant::parse(args.required_text("coagulant")?, args.number("basicity")?)?;
    let input = CoagulationInput {
        coagulant,
        dose: required_measured(args, "dose")?,
        raw_alkalinity: required_measured(args, "alkalinity")?,
        residual_alkalinity_setpoint: args.number("setpoint")?.unwrap_or(0.0),
        alkali: Alkali::parse(args.text("alkali")?.unwrap_or("lime"))?,
        alkali_purity_percent: args.number("alkali-purity")?.unwrap_or(100.0),
    };
    let r = match super::water::optional_water_state(args, &["ph", "temperature"])? {
        None => coagulation::coagulation(&catalog, &input)?,
        Some(w) => {
            coagulation::coagulation_in_water(&catalog, &input, &w, ph_range(site.as_ref()))?
        }
    };
    let mut lines = vec![format!(
        "{} mg/L as {} consumes {} mg/L alkalinity as CaCO3 ({} per mg/L); {} left",
        input.dose.value,
        coagulant.dose_as(),
        fmt(r.alkalinity_consumed_mg_l),
        fmt(r.alkalinity_per_mg),
        fmt(r.alkalinity_remaining_mg_l)
    )];
    if r.alkali_mg_l > 0.0 {
        lines.push(format!(
            "supplemental {} {} mg/L pure ({} mg/L as delivered)",
            input.alkali.formula(),
            fmt(r.alkali_mg_l),
            fmt(r.alkali_product_mg_l)
        ));
    }
    if let Some(e) = &r.water {
        lines.push(effect_line(e));
    }
    if let Some(e) = &r.water_with_alkali {
        lines.push(format!("with the alkali: {}", effect_line(e)));
    }
    Ok(Report {
        human: human(&lines, &r.traces, &r.cautions),
        json: to_json(&r)?,
    })
}

/// `molefeed dechlor`: reducing agent for a chlorine residual.
pub fn dechlor(args: &Args) -> CliResult {
    let catalog = catalog()?;
    let site = site(args, &catalog)?;
    let residual = required_measured(args, "residual")?;
    let agent = args.required_text("agent")?;
    let use_field = args.switch("field-dose");
    let r = chlorine::dechlorination(&catalog, residual, agent)?;
    let mut lines = vec![format!(
        "{} {} mg/L stoichiometric ({} mg per mg Cl2, balanced reaction)",
        r.agent,
        fmt(r.agent_mg_l),
        fmt(r.agent_mg_per_mg_cl2)
    )];
    if let (Some(f), Some(d)) = (r.field_mg_per_mg_cl2, r.field_agent_mg_l) {
        lines.push(format!(
            "field practice {} mg/L ({} mg per mg Cl2, AWWA field guide Table 7-2)",
            fmt(d),
            f
        ));
    }
    let dose = if use_field {
        r.field_agent_mg_l
            .ok_or_else(|| CliError::usage(format!("no published field dose for {}", r.agent)))?
    } else {
        r.agent_mg_l
    };
    let mut j = to_json(&r)?;
    let mut traces = r.traces.clone();
    let mut cautions = r.cautions.clone();
    if let Some(f) = follow_on_feed(args, &catalog, site.as_ref(), &r.agent, dose)? {
        lines.push(String::new());
        lines.extend(feed_lines(&f, unit_system(args, site.as_ref())?));
        j["feed"] = to_json(&f)?;
        traces.extend(f.traces);
        cautions = crate::engine::dosing::caution::finish([cautions, f.cautions].concat());
        j["cautions"] = to_json(&cautions)?;
    }
    Ok(Report {
        human: human(&lines, &traces, &cautions),
        json: j,
    })
}

/// `molefeed ct`: CT and Giardia log inactivation for free chlorine.
pub fn ct(args: &Args) -> CliResult {
    let catalog = catalog()?;
    let site = site(args, &catalog)?;
    let residual = required_measured(args, "residual")?;
    let ph = args.required_number("ph")?;
    let temperature_c = args.required_number("temperature")?;
    let contact = if let Some(m) = args.number("contact-minutes")? {
        ContactTime::T10Minutes(m)
    } else {
        let flow = flow(args)?;
        let l_per_min = flow.to_l_per_day()?.value() / 1440.0;
        let (volume_l, bf) = if let Some(id) = args.text("basin")? {
            let s = site
                .as_ref()
                .ok_or_else(|| CliError::usage("--basin needs --site"))?;
            let b = s
                .contact_basins
                .iter()
                .find(|b| b.id == id)
                .ok_or_else(|| CliError::usage(format!("no basin '{id}' in the site profile")))?;
            (b.volume * b.volume_unit.litres(), b.baffling_factor)
        } else {
            let v = args.required_number("volume")?;
            let unit = VolumeUnit::parse(args.required_text("volume-unit")?)?;
            (v * unit.litres(), args.required_number("baffling")?)
        };
        ContactTime::Basin {
            volume_l,
            baffling_factor: bf,
            flow_l_per_min: l_per_min,
        }
    };
    let r = chlorine::ct_free_chlorine(&CtInput {
        residual,
        ph,
        temperature_c,
        contact,
    })?;
    let lines = vec![
        format!(
            "T10 {} min, CT {} mg·min/L",
            fmt(r.t10_minutes),
            fmt(r.ct_mg_min_l)
        ),
        format!(
            "required for 3-log Giardia {} mg·min/L (Smith et al. 1995 regression of EPA SWTR tables)",
            fmt(r.ct_required_3log_mg_min_l)
        ),
        format!(
            "Giardia log inactivation {} (ratio to 3-log {})",
            fmt(r.giardia_log_inactivation),
            fmt(r.inactivation_ratio)
        ),
    ];
    Ok(Report {
        human: human(&lines, &r.traces, &r.cautions),
        json: to_json(&r)?,
    })
}

/// `molefeed soften`: lime and soda ash.
pub fn soften(args: &Args) -> CliResult {
    let catalog = catalog()?;
    // Accepted for uniform scripting; softening needs nothing from the profile yet.
    let _ = site(args, &catalog)?;
    let zero = Measured::exact(0.0);
    let input = SofteningInput {
        co2: measured(args, "co2")?.unwrap_or(zero),
        alkalinity: required_measured(args, "alkalinity")?,
        magnesium: measured(args, "magnesium")?.unwrap_or(zero),
        non_carbonate_hardness: measured(args, "nch")?.unwrap_or(zero),
        excess_lime_cao: args.required_number("excess-lime")?,
        lime_purity_percent: args.number("lime-purity")?.unwrap_or(100.0),
        soda_ash_purity_percent: args.number("soda-ash-purity")?.unwrap_or(100.0),
    };
    let r = softening::softening(&catalog, &input)?;
    let lines = vec![
        format!(
            "lime {} mg/L as CaO = {} mg/L as Ca(OH)2 (pure); quicklime product {} mg/L, hydrated lime product {} mg/L",
            fmt(r.lime_cao_mg_l),
            fmt(r.lime_caoh2_mg_l),
            fmt(r.quicklime_product_mg_l),
            fmt(r.hydrated_lime_product_mg_l)
        ),
        format!(
            "soda ash {} mg/L (product {} mg/L)",
            fmt(r.soda_ash_mg_l),
            fmt(r.soda_ash_product_mg_l)
        ),
    ];
    Ok(Report {
        human: human(&lines, &r.traces, &r.cautions),
        json: to_json(&r)?,
    })
}

/// `molefeed pump-check`: actual dose from a drawdown, catch or tank-drop test.
pub fn pump_check(args: &Args) -> CliResult {
    let catalog = catalog()?;
    let site = site(args, &catalog)?;
    let measurement = if let Some(ml) = measured(args, "drawdown-ml")? {
        Measurement::Drawdown {
            ml,
            seconds: duration(args, "seconds")?,
        }
    } else if let Some(grams) = measured(args, "catch-g")? {
        Measurement::Catch {
            grams,
            seconds: duration(args, "seconds")?,
        }
    } else if let Some(drop) = measured(args, "tank-drop")? {
        let unit = LengthUnit::parse(args.required_text("length-unit")?)?;
        let shape = if let Some(d) = args.number("tank-diameter")? {
            TankShape::VerticalCylinder { diameter: d }
        } else {
            TankShape::Rectangular {
                length: args.required_number("tank-length")?,
                width: args.required_number("tank-width")?,
            }
        };
        Measurement::TankDrop {
            shape,
            drop,
            unit,
            minutes: duration(args, "minutes")?,
        }
    } else {
        return Err(CliError::usage(
            "give --drawdown-ml, --catch-g or --tank-drop with the test time",
        ));
    };
    let flow = flow(args)?;
    let (product, strength, _) = product_and_strength(args, &catalog, site.as_ref())?;
    let d = Tolerance::default();
    let input = PumpCheckInput {
        measurement,
        flow,
        product,
        strength,
        target_dose: required_measured(args, "target-dose")?,
        current_setting_percent: args.number("current-setting")?,
        tolerance: Tolerance {
            within_percent: args.number("tolerance")?.unwrap_or(d.within_percent),
            check_pump_percent: args
                .number("check-pump-at")?
                .unwrap_or(d.check_pump_percent),
        },
    };
    let r = pumpcheck::pump_check(&catalog, &input)?;
    let mut lines = vec![
        format!(
            "measured {} L/d of product → {} kg/d active → actual dose {} mg/L",
            // The command's measurements are volumes, so a volume is always there.
            r.product_l_per_day.map_or_else(String::new, fmt),
            fmt(r.active_kg_per_day),
            fmt(r.actual_dose_mg_l)
        ),
        format!(
            "target {} mg/L, deviation {} %, verdict: {}",
            r.target_dose_mg_l,
            crate::engine::sigfig::format_sig(r.deviation_percent, 3),
            r.verdict.code()
        ),
    ];
    if let Some(s) = r.suggested_setting_percent {
        lines.push(format!("suggested setting {} %", fmt(s)));
    }
    let mut j = to_json(&r)?;
    j["verdict"] = json!(r.verdict.code());
    Ok(Report {
        human: human(&lines, &r.traces, &r.cautions),
        json: j,
    })
}

/// `molefeed dilute`: day-tank batching by C1·V1 = C2·V2 on a g/L basis.
pub fn dilute(args: &Args) -> CliResult {
    let catalog = catalog()?;
    let _ = site(args, &catalog)?;
    let product = args.required_text("product")?.to_string();
    let basis = StrengthBasis::parse(args.required_text("strength-basis")?)?;
    let concentrate = Strength::new(
        required_measured(args, "strength")?,
        basis,
        measured(args, "sg")?,
    );
    let target_basis = match args.text("target-basis")? {
        Some(b) => StrengthBasis::parse(b)?,
        None => basis,
    };
    let target = Strength::new(
        required_measured(args, "target-strength")?,
        target_basis,
        measured(args, "target-sg")?,
    );
    let volume = args.required_number("volume")?;
    let unit = VolumeUnit::parse(args.required_text("volume-unit")?)?;
    let r = feed::dilution(
        &catalog,
        &DilutionInput {
            product,
            concentrate,
            target,
            final_volume_l: volume * unit.litres(),
        },
    )?;
    let lines = vec![format!(
        "{} L concentrate ({} g/L) + {} L water → {} L at {} g/L",
        fmt(r.concentrate_l),
        fmt(r.concentrate_g_per_l),
        fmt(r.water_l),
        fmt(volume * unit.litres()),
        fmt(r.target_g_per_l)
    )];
    Ok(Report {
        human: human(&lines, &r.traces, &r.cautions),
        json: to_json(&r)?,
    })
}

/// `molefeed sludge`: dry solids from coagulation (published coagulant-sludge formula, with the
/// coagulant coefficient derived from its hydrolysis reaction).
pub fn sludge(args: &Args) -> CliResult {
    let catalog = catalog()?;
    let _ = site(args, &catalog)?;
    let flow = flow(args)?;
    let coagulant = Coagulant::parse(args.required_text("coagulant")?, args.number("basicity")?)?;
    let dose = required_measured(args, "dose")?;
    let ss = match (args.number("suspended-solids")?, args.number("turbidity")?) {
        (Some(ss), None) => ss,
        (None, Some(ntu)) => ntu * args.required_number("ss-per-ntu")?,
        _ => {
            return Err(CliError::usage(
                "give --suspended-solids MG_L, or --turbidity NTU with the plant's --ss-per-ntu",
            ));
        }
    };
    let r = coagulation::sludge(
        &catalog,
        &SludgeInput {
            flow,
            coagulant,
            dose,
            suspended_solids_mg_l: ss,
            additives_mg_l: args.number("additives")?.unwrap_or(0.0),
        },
    )?;
    let lines = vec![
        format!(
            "{} mg/L dry solids ({} mg per mg of coagulant as {})",
            fmt(r.solids_mg_l),
            fmt(r.solids_per_mg),
            coagulant.dose_as()
        ),
        format!(
            "dry solids {} kg/d = {} lb/d",
            fmt(r.dry_solids_kg_per_day),
            fmt(r.dry_solids_lb_per_day)
        ),
    ];
    Ok(Report {
        human: human(&lines, &r.traces, &r.cautions),
        json: to_json(&r)?,
    })
}
