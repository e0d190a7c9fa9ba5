//! `ph-after`, `dose-for-ph`, `stability`, `curve`, `coagulant`, `neutralize`: the water
//! chemistry engine on the command line.
//!
//! All share the water flags (`--ph`, `--temperature`, `--alkalinity`, optional ions, `--tds`,
//! `--conductivity`), read by one function so every subcommand accepts exactly the same water.

use super::{Args, CliError, CliResult, Report};
use crate::engine::water::{
    self, Catalog, Chemical, Precipitation, WaterInput, WaterResult, WaterState,
};
use serde_json::{Value, json};

/// `--calcium` and `--magnesium` once meant mg/L as CaCO3 here and, in the older softening
/// command, mg/L as the ion: a number typed for one read as the other is 2.5 to 4 times off.
/// Each is refused with a sentence naming the flags that state their basis.
pub(super) const CALCIUM_REFUSED: &str = "--calcium is ambiguous: give --calcium-as-caco3 (mg/L as CaCO3) or --calcium-as-ca (mg/L of the ion)";
pub(super) const MAGNESIUM_REFUSED: &str = "--magnesium is ambiguous: give --magnesium-as-caco3 (mg/L as CaCO3) or --magnesium-as-mg (mg/L of the ion)";

pub(super) fn water_state(args: &Args) -> Result<WaterState, CliError> {
    Ok(WaterState::new(&water_input(args)?)?)
}

/// The water flags as the engine's readings, before they are speciated.
pub(super) fn water_input(args: &Args) -> Result<WaterInput, CliError> {
    // Read here so `molefeed batch` (which always sets it) accepts every water command.
    args.switch("json");
    for (old, why) in [
        ("calcium", CALCIUM_REFUSED),
        ("magnesium", MAGNESIUM_REFUSED),
    ] {
        if args.text(old).is_err() || args.text(old)?.is_some() {
            return Err(CliError::usage(why));
        }
    }
    let mut input = WaterInput {
        calcium_mg_l_as_caco3: args.number("calcium-as-caco3")?,
        magnesium_mg_l_as_caco3: args.number("magnesium-as-caco3")?,
        sodium_mg_l: args.number("sodium")?,
        potassium_mg_l: args.number("potassium")?,
        chloride_mg_l: args.number("chloride")?,
        sulfate_mg_l: args.number("sulfate")?,
        tds_mg_l: args.number("tds")?,
        conductivity_us_cm: args.number("conductivity")?,
        ..WaterInput::new(
            args.required_number("ph")?,
            args.required_number("temperature")?,
            args.required_number("alkalinity")?,
        )
    };
    // The same ions as mg/L of the ion itself; the engine converts with its molar masses.
    if let Some(ca) = args.number("calcium-as-ca")? {
        if input.calcium_mg_l_as_caco3.is_some() {
            return Err(CliError::usage(
                "give calcium once: --calcium-as-caco3 or --calcium-as-ca",
            ));
        }
        input = input.with_calcium_as_ion(ca)?;
    }
    if let Some(mg) = args.number("magnesium-as-mg")? {
        if input.magnesium_mg_l_as_caco3.is_some() {
            return Err(CliError::usage(
                "give magnesium once: --magnesium-as-caco3 or --magnesium-as-mg",
            ));
        }
        input = input.with_magnesium_as_ion(mg)?;
    }
    Ok(input)
}

fn chemical(args: &Args) -> Result<&'static Chemical, CliError> {
    let text = args.required_text("chemical")?;
    Ok(Catalog::embedded()?.find(text)?)
}

fn precipitation(args: &Args, default: Precipitation) -> Result<Precipitation, CliError> {
    match args.text("precipitate")? {
        None => Ok(default),
        Some(text) => Ok(Precipitation::parse(text)?),
    }
}

fn mode_name(p: Precipitation) -> &'static str {
    match p {
        Precipitation::None => "none",
        Precipitation::Hydroxide => "hydroxide",
        Precipitation::Complete => "complete",
    }
}

/// The water's numbers as JSON. Each is checked first: `json!` writes a number that is not
/// one as `null`, which a script cannot tell from "not computed", and with `--json` (every
/// batch line) no human text is made for [`super::check_text`] to catch it in.
fn water_json(w: &WaterResult) -> Result<Value, CliError> {
    let numbers = [
        w.ph,
        w.temperature_c,
        w.alkalinity_mg_l_as_caco3,
        w.dic_mmol_l,
        w.co2_mg_l,
        w.ionic_strength,
        w.si_calcite.unwrap_or(0.0),
        w.charge_imbalance_meq_l,
        w.charge_imbalance_percent,
        w.hocl_fraction.unwrap_or(0.0),
        w.precipitated_metal_mmol_l,
    ];
    if let Some(bad) = numbers
        .into_iter()
        .chain(w.species.iter().map(|(_, mmol)| *mmol))
        .find(|v| !v.is_finite())
    {
        return Err(CliError {
            kind: "result-not-a-number".into(),
            message: format!(
                "a result came out as '{bad}', which no measurement can produce; check the inputs"
            ),
            reason: None,
        });
    }
    let species: serde_json::Map<String, Value> = w
        .species
        .iter()
        .map(|(name, mmol)| (name.to_string(), json!(mmol)))
        .collect();
    Ok(json!({
        "ph": w.ph,
        "temperature_c": w.temperature_c,
        "alkalinity_mg_l_as_caco3": w.alkalinity_mg_l_as_caco3,
        "dic_mmol_l": w.dic_mmol_l,
        "co2_mg_l": w.co2_mg_l,
        "ionic_strength": w.ionic_strength,
        "si_calcite": w.si_calcite,
        "charge_imbalance_meq_l": w.charge_imbalance_meq_l,
        "charge_imbalance_percent": w.charge_imbalance_percent,
        "hocl_fraction": w.hocl_fraction,
        "precipitated_metal_mmol_l": w.precipitated_metal_mmol_l,
        "species_mmol_l": species,
    }))
}

/// The human text, made only when it is printed: with `--json` (and on every `batch` line)
/// only the JSON is, and the text would be built for nothing.
fn human_text(args: &Args, text: impl FnOnce() -> String) -> String {
    if args.switch("json") {
        String::new()
    } else {
        text()
    }
}

fn water_human(w: &WaterResult) -> String {
    let si = w
        .si_calcite
        .map_or("n/a (no calcium)".to_string(), |s| format!("{s:+.2}"));
    format!(
        "pH {:.2} at {:.1} °C\nalkalinity {:.1} mg/L as CaCO3, DIC {:.3} mmol/L, CO2 {:.2} mg/L\nionic strength {:.4}, calcite SI {si}\ncharge imbalance of the inputs {:+.3} meq/L ({:+.1} %)\n",
        w.ph,
        w.temperature_c,
        w.alkalinity_mg_l_as_caco3,
        w.dic_mmol_l,
        w.co2_mg_l,
        w.ionic_strength,
        w.charge_imbalance_meq_l,
        w.charge_imbalance_percent
    )
}

/// `molefeed ph-after --chemical X --dose D [--precipitate none|hydroxide|complete] WATER`
pub fn ph_after(args: &Args) -> CliResult {
    let chem = chemical(args)?;
    let dose = args.required_number("dose")?;
    let mode = precipitation(args, Precipitation::None)?;
    let state = water_state(args)?;
    let w = water::ph_after(&state, chem, dose, mode)?;
    let mut j = water_json(&w)?;
    j["chemical"] = json!(chem.id);
    j["dose_mg_l"] = json!(dose);
    j["precipitate"] = json!(mode_name(mode));
    Ok(Report {
        human: human_text(args, || {
            format!(
                "after {dose} mg/L {} ({}):\n{}",
                chem.id,
                chem.formula,
                water_human(&w)
            )
        }),
        json: j,
    })
}

/// `molefeed dose-for-ph --chemical X --target-ph P WATER`
pub fn dose_for_ph(args: &Args) -> CliResult {
    let chem = chemical(args)?;
    let target = args.required_number("target-ph")?;
    let mode = precipitation(args, Precipitation::None)?;
    let state = water_state(args)?;
    let r = water::dose_for_ph(&state, chem, target, mode)?;
    if !r.dose_mg_l.is_finite() {
        return Err(CliError {
            kind: "result-not-a-number".into(),
            message: "the dose came out as a number that is not one; check the inputs".into(),
            reason: None,
        });
    }
    let mut j = water_json(&r.water)?;
    j["dose_mg_l"] = json!(r.dose_mg_l);
    j["chemical"] = json!(chem.id);
    j["target_ph"] = json!(target);
    Ok(Report {
        human: human_text(args, || {
            format!(
                "{:.2} mg/L of {} ({}) brings pH {:.2} to {:.2}\n{}",
                r.dose_mg_l,
                chem.id,
                chem.formula,
                state.ph(),
                r.water.ph,
                water_human(&r.water)
            )
        }),
        json: j,
    })
}

/// `molefeed stability WATER`
pub fn stability(args: &Args) -> CliResult {
    let state = water_state(args)?;
    let s = water::stability(&state)?;
    let fmt = |v: Option<f64>| v.map_or("n/a".to_string(), |v| format!("{v:+.2}"));
    Ok(Report {
        human: format!(
            "pH {:.2}, pHs {}\nLangelier index {} (Standard Methods 2330)\nRyznar index {}\nCCPP {:+.1} mg/L as CaCO3 (+ precipitates, closed system)\ncalcite SI {:+.2}\n",
            s.ph,
            s.phs.map_or(
                "n/a (no pH up to 14 saturates this water)".into(),
                |p| format!("{p:.2}")
            ),
            fmt(s.langelier_index),
            s.ryznar_index.map_or("n/a".into(), |v| format!("{v:.2}")),
            s.ccpp_mg_l_as_caco3,
            s.si_calcite
        ),
        json: json!({
            "ph": s.ph,
            "phs": s.phs,
            "langelier_index": s.langelier_index,
            "ryznar_index": s.ryznar_index,
            "ccpp_mg_l_as_caco3": s.ccpp_mg_l_as_caco3,
            "si_calcite": s.si_calcite,
        }),
    })
}

/// `molefeed curve --chemical X --max-dose D [--points N] WATER`
pub fn curve(args: &Args) -> CliResult {
    let chem = chemical(args)?;
    let max = args.required_number("max-dose")?;
    let points = args.number("points")?.unwrap_or(50.0);
    if !(points.fract() == 0.0 && (2.0..=10_000.0).contains(&points)) {
        return Err(CliError::usage(
            "--points must be a whole number from 2 to 10000",
        ));
    }
    let mode = precipitation(args, Precipitation::None)?;
    let state = water_state(args)?;
    let c = water::curve(&state, chem, max, points as usize, mode)?;
    let mut human = format!("dose mg/L {}   pH\n", chem.id);
    for p in &c {
        human.push_str(&format!("{:>10.2}   {:.2}\n", p.dose_mg_l, p.ph));
    }
    Ok(Report {
        human,
        json: json!({
            "chemical": chem.id,
            "points": c.iter().map(|p| json!({"dose_mg_l": p.dose_mg_l, "ph": p.ph})).collect::<Vec<_>>(),
        }),
    })
}

/// `molefeed coagulant --chemical X --dose D [--precipitate ...] WATER`
pub fn coagulant(args: &Args) -> CliResult {
    let chem = chemical(args)?;
    let dose = args.required_number("dose")?;
    let mode = precipitation(args, Precipitation::Hydroxide)?;
    let state = water_state(args)?;
    let c = water::coagulate(&state, chem, dose, mode)?;
    Ok(Report {
        human: format!(
            "{dose} mg/L {} ({}) consumes {:.1} mg/L alkalinity as CaCO3\npH {:.2} -> {:.2}, alkalinity {:.1} -> {:.1} mg/L as CaCO3\n",
            chem.id,
            mode_name(mode),
            c.alkalinity_consumed_mg_l_as_caco3,
            state.ph(),
            c.ph,
            state.alkalinity_mg_l_as_caco3(),
            c.alkalinity_mg_l_as_caco3
        ),
        json: json!({
            "chemical": chem.id,
            "dose_mg_l": dose,
            "precipitate": mode_name(mode),
            "ph": c.ph,
            "alkalinity_mg_l_as_caco3": c.alkalinity_mg_l_as_caco3,
            "alkalinity_consumed_mg_l_as_caco3": c.alkalinity_consumed_mg_l_as_caco3,
            "precipitated_metal_mmol_l": c.precipitated_metal_mmol_l,
        }),
    })
}

/// `molefeed neutralize --chemical X --target-ph P [--purity PERCENT] WATER`
///
/// The purity is in percent, as everywhere else; a value that looks like a fraction (1 or
/// less, the older meaning of this flag) is refused, because read as percent it would be a
/// dose a hundred times too large.
pub fn neutralize(args: &Args) -> CliResult {
    let chem = chemical(args)?;
    let target = args.required_number("target-ph")?;
    let percent = args.number("purity")?.unwrap_or(100.0);
    if percent <= 1.0 {
        return Err(CliError {
            kind: "invalid-input".into(),
            message: format!(
                "--purity {percent} looks like a fraction: the purity is in percent (90 for 90 %)"
            ),
            reason: None,
        });
    }
    // `water::neutralize` takes the purity as a fraction of one.
    let purity = percent / 100.0;
    let state = water_state(args)?;
    let n = water::neutralize(&state, chem, target, purity)?;
    Ok(Report {
        human: format!(
            "{:.2} mg/L {} ({:.2} mg/L of product at purity {percent} %) -> pH {:.2}, alkalinity {:.1} mg/L as CaCO3, LSI {}\n",
            n.dose_mg_l,
            chem.id,
            n.product_mg_l,
            n.ph,
            n.alkalinity_mg_l_as_caco3,
            n.langelier_index
                .map_or("n/a".into(), |v| format!("{v:+.2}"))
        ),
        json: json!({
            "chemical": chem.id,
            "dose_mg_l": n.dose_mg_l,
            "product_mg_l": n.product_mg_l,
            "ph": n.ph,
            "alkalinity_mg_l_as_caco3": n.alkalinity_mg_l_as_caco3,
            "langelier_index": n.langelier_index,
        }),
    })
}
