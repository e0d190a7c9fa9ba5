//! `molefeed path`: every dose in order, from the raw water to the finished water.
//!
//! Design choice: this file reads flags and prints; the path is the engine's
//! [`crate::engine::path`]. Steps are `--step CHEMICAL=DOSE` (the chemical as `ph-after
//! --chemical` names it, the dose in mg/L of that chemical), one point each, in the order
//! given; with `--site FILE` and no `--step`, the site's own path with the doses it records.
//! The site also gives the limits the finished water is checked against, the precision of its
//! instruments for the ranges, and its typical flow for CT through its basins.

use super::{Args, CliError, CliResult, Report};
use crate::engine::dosing::catalog::Catalog as Products;
use crate::engine::dosing::site::SiteProfile;
use crate::engine::path::{self, Path, PathResult, Settings, WaterAt};
use crate::engine::precision::Range;
use crate::engine::quantity::Quantity;
use crate::engine::water::Catalog;
use serde_json::{Value, json};

fn steps(args: &Args) -> Result<Path, CliError> {
    let catalog = Catalog::embedded()?;
    let mut steps = Vec::new();
    for text in args.texts("step")? {
        let (name, dose) = text.split_once('=').ok_or_else(|| {
            CliError::usage(format!(
                "--step takes CHEMICAL=DOSE (mg/L of that chemical), got '{text}'"
            ))
        })?;
        let chemical = catalog.find(name.trim())?;
        let dose = super::args::parse_number(dose.trim())
            .filter(|d| *d >= 0.0)
            .ok_or_else(|| CliError {
                kind: "invalid-input".into(),
                message: format!("--step {text}: the dose must be a number of mg/L, 0 or more"),
                reason: Some("not-a-number"),
            })?;
        steps.push((chemical, dose));
    }
    Ok(Path::of_steps(&steps))
}

fn flow(args: &Args, site: Option<&SiteProfile>) -> Result<Option<f64>, CliError> {
    let Some(value) = args.number("flow")? else {
        return Ok(match site.and_then(|s| s.typical_flow) {
            Some(f) => Some(f.m3_per_day()?),
            None => None,
        });
    };
    let units = Quantity::Flow.units();
    let code = args.required_text("flow-unit")?;
    let unit = units.iter().find(|u| u.code() == code).ok_or_else(|| {
        CliError::usage(format!(
            "--flow-unit must be one of {}, got '{code}'",
            units
                .iter()
                .map(|u| u.code())
                .collect::<Vec<_>>()
                .join(", ")
        ))
    })?;
    Ok(Some(unit.to_si(value)))
}

fn range_json(r: Option<Range>) -> Value {
    r.map_or(Value::Null, |r| json!([r.low, r.high]))
}

fn water_json(w: &WaterAt) -> Value {
    json!({
        "ph": w.ph,
        "ph_range": range_json(w.ph_range),
        "temperature_c": w.temperature_c,
        "alkalinity_mg_l_as_caco3": w.alkalinity_mg_l_as_caco3,
        "alkalinity_range": range_json(w.alkalinity_range),
        "dic_mmol_l": w.dic_mmol_l,
        "calcium_mg_l_as_caco3": w.calcium_mg_l_as_caco3,
        "langelier_index": w.langelier_index,
        "ccpp_mg_l_as_caco3": w.ccpp_mg_l_as_caco3,
        "free_chlorine_mg_l_as_cl2": w.free_chlorine_mg_l_as_cl2,
        "hocl_fraction": w.hocl_fraction,
        "aluminium_mg_l": w.aluminium_mg_l,
        "iron_mg_l": w.iron_mg_l,
        "fluoride_mg_l": w.fluoride_mg_l,
        "orthophosphate_mg_l_as_po4": w.orthophosphate_mg_l_as_po4,
    })
}

fn water_line(w: &WaterAt) -> String {
    let opt = |v: Option<f64>, d: usize| v.map_or("n/a".to_string(), |v| format!("{v:.d$}"));
    format!(
        "pH {:.2}, alkalinity {:.1} mg/L as CaCO3, DIC {:.3} mmol/L, Ca {:.1} mg/L as CaCO3, LSI {}, CCPP {} mg/L as CaCO3, free Cl2 {:.2} mg/L",
        w.ph,
        w.alkalinity_mg_l_as_caco3,
        w.dic_mmol_l,
        w.calcium_mg_l_as_caco3,
        opt(w.langelier_index, 2),
        opt(w.ccpp_mg_l_as_caco3, 1),
        w.free_chlorine_mg_l_as_cl2
    )
}

fn report(r: &PathResult, site: Option<&str>) -> Report {
    let mut human = String::new();
    if let Some(name) = site {
        human.push_str(&format!("{name}\n"));
    }
    human.push_str(&format!("raw water: {}\n", water_line(&r.raw)));
    let steps: Vec<Value> = r
        .steps
        .iter()
        .map(|s| {
            human.push_str(&format!(
                "{} {} mg/L as {} ({}) at {}: {}\n",
                s.label,
                crate::engine::sigfig::format_sig(s.dose_mg_l, 3),
                s.dose_as,
                s.chemical,
                s.point,
                water_line(&s.water)
            ));
            let mut v = json!({
                "point": s.point,
                "label": s.label,
                "chemical": s.chemical,
                "dose_mg_l": s.dose_mg_l,
                "dose_as": s.dose_as,
            });
            if let (Some(obj), Value::Object(w)) = (v.as_object_mut(), water_json(&s.water)) {
                obj.extend(w);
            }
            v
        })
        .collect();
    let basins: Vec<Value> = r
        .basins
        .iter()
        .map(|b| {
            human.push_str(&format!(
                "basin {} after {}: T10 {:.0} min, free Cl2 {:.2} mg/L ({}), pH {:.2}, {:.1} °C: CT {:.0} of {:.0} mg·min/L for 3-log Giardia, {:.2} log {}\n",
                b.basin,
                b.point,
                b.t10_minutes,
                b.residual_mg_l,
                if b.residual_measured { "measured" } else { "as fed, no demand" },
                b.ph,
                b.temperature_c,
                b.ct_mg_min_l,
                b.ct_required_3log_mg_min_l,
                b.log_inactivation,
                // Credit is earned with the residual measured leaving the basin; with the
                // chlorine fed it is an upper estimate (chlorine demand only lowers it).
                if b.residual_measured {
                    "credited"
                } else {
                    "at most (the chlorine fed, not a measured residual)"
                }
            ));
            json!({
                "basin": b.basin,
                "point": b.point,
                "t10_minutes": b.t10_minutes,
                "residual_mg_l_as_cl2": b.residual_mg_l,
                "residual_measured": b.residual_measured,
                "ph": b.ph,
                "temperature_c": b.temperature_c,
                "ct_mg_min_l": b.ct_mg_min_l,
                "ct_required_3log_mg_min_l": b.ct_required_3log_mg_min_l,
                "log_inactivation": b.log_inactivation,
            })
        })
        .collect();
    human.push_str(&format!("finished water: {}\n\n", water_line(&r.finished)));
    human.push_str(&super::words::cautions(&r.cautions));
    let points: Vec<Value> = r
        .points
        .iter()
        .map(|(id, w)| json!({"point": id, "water": water_json(w)}))
        .collect();
    Report {
        human,
        json: json!({
            "site": site,
            "raw": water_json(&r.raw),
            "steps": steps,
            "points": points,
            "basins": basins,
            "finished": water_json(&r.finished),
            "cautions": super::calc::cautions_json(&r.cautions),
        }),
    }
}

/// `molefeed path [--site FILE] [--flow Q --flow-unit U] WATER --step CHEMICAL=DOSE ...`
pub fn run(args: &Args) -> CliResult {
    args.switch("json");
    let site = match args.text("site")? {
        None => None,
        Some(file) => {
            let text = super::read_input_file(file, "site profile")?;
            Some(SiteProfile::from_json(&text, &Products::builtin()?)?)
        }
    };
    let mut path = steps(args)?;
    if path.points.is_empty() {
        let Some(site) = &site else {
            return Err(CliError::usage(
                "give the doses in order (--step CHEMICAL=DOSE ...) or a site with a path (--site FILE)",
            ));
        };
        if site.path.is_empty() {
            return Err(CliError::usage(format!(
                "the site '{}' has no path: give --step CHEMICAL=DOSE ...",
                site.name
            )));
        }
        path = Path::of_site(site, &Products::builtin()?, &|_, _| None)?;
    }
    let input = super::water::water_input(args)?;
    let settings = Settings {
        flow_m3_d: flow(args, site.as_ref())?,
        limits: site.as_ref().map(|s| s.limits.clone()).unwrap_or_default(),
        headlines_only: false,
    };
    let precisions = site.as_ref().map(|s| s.precisions()).unwrap_or_default();
    let r = path::run_with_ranges(&input, &path, &settings, &precisions)?;
    Ok(report(&r, site.as_ref().map(|s| s.name.as_str())))
}
