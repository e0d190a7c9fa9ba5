//! `ph-after`, `dose-for-ph`, `stability`, `curve`, `coagulant`, `neutralize`: the water
//! chemistry engine on the command line.
//!
//! All share the water flags (`--ph`, `--temperature`, `--alkalinity`, optional ions, `--tds`,
//! `--conductivity`), read by one function so every subcommand accepts exactly the same water.

use super::{Args, CliError, CliResult, Report};
use crate::engine::dosing::Caution;
use crate::engine::dosing::waterside::{self, water_cautions};
use crate::engine::water::{
    self, Catalog, Chemical, Precipitation, WaterInput, WaterResult, WaterState,
};
use serde_json::{Value, json};

/// `--calcium` and `--magnesium` once meant mg/L as CaCO3 here and, in the older softening
/// command, mg/L as the ion: a number typed for one read as the other is 2.5 to 4 times off.
/// Each is refused with a sentence naming the flags that state their basis.
pub(super) const CALCIUM_REFUSED: &str = "--calcium is ambiguous: give --calcium-as-caco3 (mg/L as CaCO3) or --calcium-as-ca (mg/L of the ion)";
pub(super) const MAGNESIUM_REFUSED: &str = "--magnesium is ambiguous: give --magnesium-as-caco3 (mg/L as CaCO3) or --magnesium-as-mg (mg/L of the ion)";

/// The water the flags describe, checked ([`water_cautions`]: a refusal before anything is
/// computed from it), and the cautions on its readings.
pub(super) fn water_state(args: &Args) -> Result<(WaterState, Vec<Caution>), CliError> {
    let state = WaterState::new(&water_input(args)?)?;
    let cautions = water_cautions(&state)?;
    Ok((state, cautions))
}

/// `report` with the cautions on the water's readings ([`water_cautions`]) in its JSON
/// `cautions` and its text, ahead of the advisory that [`super::dispatch`] adds to every
/// water command's answer.
fn cautioned(mut report: Report, cautions: &[Caution]) -> Report {
    if cautions.is_empty() {
        return report;
    }
    report.human.push_str(&super::words::cautions(cautions));
    if let Some(object) = report.json.as_object_mut() {
        object.insert("cautions".into(), super::calc::cautions_json(cautions));
    }
    report
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

/// One field of a water command's JSON answer.
enum Field<'a> {
    Number(f64),
    /// `null` when not computed (`json!` of an `Option`).
    Optional(Option<f64>),
    Text(&'a str),
    /// Species and their mmol/L, written as an object keyed by name.
    Species(&'a [(&'static str, f64)]),
    /// JSON already rendered: the advisory caution list, the same on every answer.
    Rendered(&'a str),
}

/// A water command's JSON answer as a list of fields: one list, two renderings. As a
/// [`Value`] for [`super::dispatch`] (tests, the app), and written straight to the output by
/// [`stream`] (every `batch` line), which skips building a map of a few dozen keys and
/// strings and the walk of [`super::check_numbers`] over it. Both give the same bytes:
/// the fields are written in the order of serde_json's map (keys sorted) and every number
/// through serde_json's own formatter.
struct Answer<'a> {
    fields: Vec<(&'static str, Field<'a>)>,
}

impl<'a> Answer<'a> {
    /// The water's numbers. Each is checked first: `json!` writes a number that is not one
    /// as `null`, which a script cannot tell from "not computed", and with `--json` (every
    /// batch line) no human text is made for [`super::check_text`] to catch it in.
    fn of_water(w: &'a WaterResult) -> Result<Answer<'a>, CliError> {
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
        let mut fields = Vec::with_capacity(20);
        fields.extend([
            ("ph", Field::Number(w.ph)),
            ("temperature_c", Field::Number(w.temperature_c)),
            (
                "alkalinity_mg_l_as_caco3",
                Field::Number(w.alkalinity_mg_l_as_caco3),
            ),
            ("dic_mmol_l", Field::Number(w.dic_mmol_l)),
            ("co2_mg_l", Field::Number(w.co2_mg_l)),
            ("ionic_strength", Field::Number(w.ionic_strength)),
            ("si_calcite", Field::Optional(w.si_calcite)),
            (
                "charge_imbalance_meq_l",
                Field::Number(w.charge_imbalance_meq_l),
            ),
            (
                "charge_imbalance_percent",
                Field::Number(w.charge_imbalance_percent),
            ),
            ("hocl_fraction", Field::Optional(w.hocl_fraction)),
            (
                "precipitated_metal_mmol_l",
                Field::Number(w.precipitated_metal_mmol_l),
            ),
            ("species_mmol_l", Field::Species(&w.species)),
        ]);
        Ok(Answer { fields })
    }

    fn with(mut self, key: &'static str, field: Field<'a>) -> Self {
        self.fields.push((key, field));
        self
    }

    /// `--fields a,b` (with `--json`): only these keys of the answer, and `cautions`, which
    /// every answer carries (the advisory is never left off). A script that reads one number
    /// then pays neither for formatting the whole speciation nor for reading it back. A key
    /// the answer does not have is refused with the list of those it has. Every number was
    /// checked by [`Answer::of_water`] before any is left off.
    fn selected(mut self, args: &Args) -> Result<Self, CliError> {
        let Some(list) = args.text("fields")? else {
            return Ok(self);
        };
        if !args.switch("json") {
            return Err(CliError::usage(
                "--fields chooses keys of the JSON answer: give --json with it",
            ));
        }
        let wanted: Vec<&str> = list.split(',').map(str::trim).collect();
        if let Some(unknown) = wanted
            .iter()
            .find(|w| **w != "cautions" && !self.fields.iter().any(|(key, _)| key == *w))
        {
            let mut keys: Vec<&str> = self.fields.iter().map(|(key, _)| *key).collect();
            keys.push("cautions");
            keys.sort_unstable();
            return Err(CliError::usage(format!(
                "--fields: this answer has no key '{unknown}'; its keys are {}",
                keys.join(", ")
            )));
        }
        self.fields.retain(|(key, _)| wanted.contains(key));
        Ok(self)
    }

    /// The answer as a JSON value (a rendered field is parsed back).
    fn to_value(&self) -> Value {
        let mut object = serde_json::Map::new();
        for (key, field) in &self.fields {
            let value = match field {
                Field::Number(v) => json!(v),
                Field::Optional(v) => json!(v),
                Field::Text(t) => json!(t),
                Field::Species(species) => Value::Object(
                    species
                        .iter()
                        .map(|(name, mmol)| (name.to_string(), json!(mmol)))
                        .collect(),
                ),
                Field::Rendered(text) => serde_json::from_str(text).unwrap_or(Value::Null),
            };
            object.insert(key.to_string(), value);
        }
        Value::Object(object)
    }

    /// Writes the answer as one line of JSON, the bytes `to_value()` would print, after the
    /// guard [`super::check_numbers`] applies to every printed number has passed each one.
    fn write(mut self, out: &mut Vec<u8>) -> Result<(), CliError> {
        use serde_json::ser::{CompactFormatter, Formatter};
        self.fields.sort_unstable_by_key(|(key, _)| *key);
        let start = out.len();
        let written = (|| -> Result<(), CliError> {
            let number = |out: &mut Vec<u8>, path: &[&str], v: f64| -> Result<(), CliError> {
                super::check_number(path, v)?;
                CompactFormatter.write_f64(out, v).map_err(CliError::output)
            };
            let text = |out: &mut Vec<u8>, t: &str| {
                serde_json::to_writer(out, t).map_err(|e| CliError::output(e.into()))
            };
            out.push(b'{');
            for (n, (key, field)) in self.fields.iter().enumerate() {
                if n > 0 {
                    out.push(b',');
                }
                text(out, key)?;
                out.push(b':');
                match field {
                    Field::Number(v) | Field::Optional(Some(v)) => number(out, &[key], *v)?,
                    Field::Optional(None) => out.extend_from_slice(b"null"),
                    Field::Text(t) => text(out, t)?,
                    Field::Rendered(r) => out.extend_from_slice(r.as_bytes()),
                    Field::Species(species) => {
                        // serde_json's map keeps its keys sorted; the species come in the
                        // table's order.
                        let mut sorted: Vec<(&str, f64)> = species.to_vec();
                        sorted.sort_unstable_by_key(|(name, _)| *name);
                        out.push(b'{');
                        for (m, (name, mmol)) in sorted.iter().enumerate() {
                            if m > 0 {
                                out.push(b',');
                            }
                            text(out, name)?;
                            out.push(b':');
                            number(out, &[key, name], *mmol)?;
                        }
                        out.push(b'}');
                    }
                }
            }
            out.extend_from_slice(b"}\n");
            Ok(())
        })();
        if written.is_err() {
            out.truncate(start);
        }
        written
    }
}

/// `ph-after` and `dose-for-ph` with `--json` (every `batch` line), written straight to
/// `out` (see [`Answer`]); `None` for the other commands and for `--help`, which answer
/// with a [`super::Report`]. Nothing is written unless every check has passed.
pub(super) fn stream(
    command: &str,
    args: &Args,
    out: &mut dyn std::io::Write,
) -> Option<Result<(), CliError>> {
    if args.switch("help") {
        return None;
    }
    let mut text = Vec::with_capacity(2048);
    let written = match command {
        "ph-after" => ph_after_answer(args).and_then(|(w, chem, dose, mode, cautions)| {
            finish(
                args,
                ph_after_fields(args, &w, chem, dose, mode)?,
                &cautions,
                &mut text,
            )
        }),
        "dose-for-ph" => dose_for_ph_answer(args).and_then(|(r, chem, target, _, cautions)| {
            finish(
                args,
                dose_for_ph_fields(args, &r, chem, target)?,
                &cautions,
                &mut text,
            )
        }),
        _ => return None,
    };
    Some(written.and_then(|()| out.write_all(&text).map_err(CliError::output)))
}

/// The checks every command's answer passes in [`super::dispatch`] (no flag left unread),
/// then the water's `cautions` and the advisory, then the answer written into `text`: the
/// bytes [`cautioned`] and [`super::dispatch`]'s advisory give the same answer. Without a
/// caution of the water's own (nearly every line) the advisory list is the one rendered once.
fn finish(
    args: &Args,
    answer: Answer<'_>,
    cautions: &[Caution],
    text: &mut Vec<u8>,
) -> Result<(), CliError> {
    args.switch("json");
    args.reject_unused()?;
    if cautions.is_empty() {
        return answer
            .with("cautions", Field::Rendered(super::advisory_json_text()))
            .write(text);
    }
    // The water's cautions, then the advisory's rendered list without its `[`.
    let own = super::calc::cautions_json_text(cautions);
    let advisory = super::advisory_json_text();
    let rendered = format!(
        "{},{}",
        own.strip_suffix(']').unwrap_or(&own),
        advisory.strip_prefix('[').unwrap_or(advisory)
    );
    answer
        .with("cautions", Field::Rendered(&rendered))
        .write(text)
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

/// The answer to `ph-after`: the water after the dose, the chemical, the dose, the
/// precipitation mode.
type PhAfter = (
    WaterResult,
    &'static Chemical,
    f64,
    Precipitation,
    Vec<Caution>,
);

fn ph_after_answer(args: &Args) -> Result<PhAfter, CliError> {
    let chem = chemical(args)?;
    let dose = args.required_number("dose")?;
    let mode = precipitation(args, Precipitation::None)?;
    let (state, cautions) = water_state(args)?;
    let w = water::ph_after(&state, chem, dose, mode)?;
    Ok((w, chem, dose, mode, cautions))
}

fn ph_after_fields<'a>(
    args: &Args,
    w: &'a WaterResult,
    chem: &'static Chemical,
    dose: f64,
    mode: Precipitation,
) -> Result<Answer<'a>, CliError> {
    Answer::of_water(w)?
        .with("chemical", Field::Text(chem.id.as_str()))
        .with("dose_mg_l", Field::Number(dose))
        .with("precipitate", Field::Text(mode_name(mode)))
        .selected(args)
}

/// `molefeed ph-after --chemical X --dose D [--precipitate none|hydroxide|complete] WATER`
pub fn ph_after(args: &Args) -> CliResult {
    let (w, chem, dose, mode, cautions) = ph_after_answer(args)?;
    let json = ph_after_fields(args, &w, chem, dose, mode)?.to_value();
    let report = Report {
        human: human_text(args, || {
            format!(
                "after {dose} mg/L {} ({}):\n{}",
                chem.id,
                chem.formula,
                water_human(&w)
            )
        }),
        json,
    };
    Ok(cautioned(report, &cautions))
}

/// The answer to `dose-for-ph`: the dose and the water it gives, the chemical, the target,
/// the pH before.
type DoseForPh = (water::DoseResult, &'static Chemical, f64, f64, Vec<Caution>);

fn dose_for_ph_answer(args: &Args) -> Result<DoseForPh, CliError> {
    let chem = chemical(args)?;
    let target = args.required_number("target-ph")?;
    let mode = precipitation(args, Precipitation::None)?;
    let (state, cautions) = water_state(args)?;
    let r = water::dose_for_ph(&state, chem, target, mode)?;
    if !r.dose_mg_l.is_finite() {
        return Err(CliError {
            kind: "result-not-a-number".into(),
            message: "the dose came out as a number that is not one; check the inputs".into(),
            reason: None,
        });
    }
    Ok((r, chem, target, state.ph(), cautions))
}

fn dose_for_ph_fields<'a>(
    args: &Args,
    r: &'a water::DoseResult,
    chem: &'static Chemical,
    target: f64,
) -> Result<Answer<'a>, CliError> {
    Answer::of_water(&r.water)?
        .with("dose_mg_l", Field::Number(r.dose_mg_l))
        .with("chemical", Field::Text(chem.id.as_str()))
        .with("target_ph", Field::Number(target))
        .selected(args)
}

/// `molefeed dose-for-ph --chemical X --target-ph P WATER`
pub fn dose_for_ph(args: &Args) -> CliResult {
    let (r, chem, target, ph_before, cautions) = dose_for_ph_answer(args)?;
    let json = dose_for_ph_fields(args, &r, chem, target)?.to_value();
    let report = Report {
        human: human_text(args, || {
            format!(
                "{:.2} mg/L of {} ({}) brings pH {:.2} to {:.2}\n{}",
                r.dose_mg_l,
                chem.id,
                chem.formula,
                ph_before,
                r.water.ph,
                water_human(&r.water)
            )
        }),
        json,
    };
    Ok(cautioned(report, &cautions))
}

/// `molefeed stability WATER`
pub fn stability(args: &Args) -> CliResult {
    let (state, cautions) = water_state(args)?;
    let s = water::stability(&state)?;
    let fmt = |v: Option<f64>| v.map_or("n/a".to_string(), |v| format!("{v:+.2}"));
    Ok(cautioned(
        Report {
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
        },
        &cautions,
    ))
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
    let (state, cautions) = water_state(args)?;
    let c = water::curve(&state, chem, max, points as usize, mode)?;
    let mut human = format!("dose mg/L {}   pH\n", chem.id);
    for p in &c {
        human.push_str(&format!("{:>10.2}   {:.2}\n", p.dose_mg_l, p.ph));
    }
    Ok(cautioned(
        Report {
            human,
            json: json!({
                "chemical": chem.id,
                "points": c.iter().map(|p| json!({"dose_mg_l": p.dose_mg_l, "ph": p.ph})).collect::<Vec<_>>(),
            }),
        },
        &cautions,
    ))
}

/// `molefeed coagulant --chemical X --dose D [--precipitate ...] WATER`
pub fn coagulant(args: &Args) -> CliResult {
    let chem = chemical(args)?;
    let dose = args.required_number("dose")?;
    let mode = precipitation(args, Precipitation::Hydroxide)?;
    let (state, cautions) = water_state(args)?;
    let c = water::coagulate(&state, chem, dose, mode)?;
    Ok(cautioned(
        Report {
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
        },
        &cautions,
    ))
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
    let (state, cautions) = water_state(args)?;
    let n = waterside::neutralize_at_purity(&state, chem, target, percent)?;
    Ok(cautioned(
        Report {
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
        },
        &cautions,
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The answer written straight to the output is byte for byte the one `dispatch` builds
    /// as a value and prints (the form every command had before `stream`): with and without
    /// calcium (`si_calcite` null), with chlorine (`hocl_fraction` a number), a coagulant
    /// with hydroxide precipitating, and the inverse search; an analysis that does not
    /// balance (`water`: cations 2.30, anions 2.79 meq/L) and one that does (`balanced`).
    #[test]
    fn the_streamed_answer_is_the_printed_value_byte_for_byte() {
        let water = "--ph 7.4 --temperature 12 --alkalinity 80 --calcium-as-caco3 60 --magnesium-as-caco3 20 --sodium 15 --potassium 2 --chloride 20 --sulfate 30";
        let balanced = "--ph 7.5 --temperature 15 --alkalinity 100.1 --calcium-as-caco3 100.1 --magnesium-as-caco3 50.04 --sodium 20.69 --potassium 3.91 --chloride 35.45 --sulfate 48.03";
        let cases = [
            ("ph-after", format!("--chemical lime --dose 12 {water}")),
            ("ph-after", format!("--chemical lime --dose 12 {balanced}")),
            (
                "dose-for-ph",
                format!("--chemical caustic --target-ph 8.2 {balanced}"),
            ),
            (
                "ph-after",
                "--chemical hypochlorite --dose 3 --ph 6.8 --temperature 20 --alkalinity 40"
                    .to_string(),
            ),
            (
                "ph-after",
                format!("--chemical alum --dose 40 --precipitate hydroxide {water}"),
            ),
            (
                "dose-for-ph",
                format!("--chemical caustic --target-ph 8.2 {water}"),
            ),
            (
                "dose-for-ph",
                format!("--chemical sulfuric-acid --target-ph 6.9 {water} --tds 250"),
            ),
        ];
        for (command, flags) in cases {
            let words: Vec<String> = format!("{flags} --json")
                .split_whitespace()
                .map(String::from)
                .collect();
            let printed = format!(
                "{}\n",
                crate::cli::dispatch(command, &Args::parse(&words).unwrap())
                    .unwrap()
                    .json
            );
            let mut streamed = Vec::new();
            stream(command, &Args::parse(&words).unwrap(), &mut streamed)
                .expect("a water command with --json streams")
                .unwrap();
            assert_eq!(
                String::from_utf8(streamed).unwrap(),
                printed,
                "{command} {flags}"
            );
            // The water's own caution is there exactly when its analysis does not balance.
            assert_eq!(
                printed.contains("water-ion-balance"),
                flags.contains(water),
                "{command} {flags}: {printed}"
            );
        }
    }

    /// A streamed answer keeps every check of the printed one: an unknown flag is refused and
    /// nothing is written; `--help` and other commands are left to `dispatch`.
    #[test]
    fn the_streamed_answer_refuses_what_dispatch_refuses() {
        let args = |s: &str| {
            Args::parse(&s.split_whitespace().map(String::from).collect::<Vec<_>>()).unwrap()
        };
        let mut out = Vec::new();
        let e = stream(
            "ph-after",
            &args(
                "--chemical lime --dose 5 --ph 7 --temperature 20 --alkalinity 50 --dsoe 3 --json",
            ),
            &mut out,
        )
        .unwrap()
        .unwrap_err();
        assert!(e.message.contains("--dsoe"), "{}", e.message);
        assert!(out.is_empty());
        assert!(stream("ph-after", &args("--help"), &mut out).is_none());
        assert!(
            stream(
                "stability",
                &args("--ph 7 --temperature 20 --alkalinity 50"),
                &mut out
            )
            .is_none()
        );
    }

    /// The guard on each streamed number is `check_numbers`' guard: the same limits (a
    /// percentage has the lower one) and a refusal naming the same path.
    #[test]
    fn each_streamed_number_passes_the_output_guard() {
        for (path, v, refused) in [
            (&["ph"][..], 7.0, false),
            (&["species_mmol_l", "CO2"][..], 2e15, true),
            (&["charge_imbalance_percent"][..], 2e4, true),
            (&["charge_imbalance_meq_l"][..], 2e4, false),
        ] {
            let direct = crate::cli::check_number(path, v);
            let mut value = json!(v);
            for key in path.iter().rev() {
                value = json!({ *key: value });
            }
            let walked = crate::cli::check_numbers(&value);
            assert_eq!(direct.is_err(), refused, "{path:?} {v}");
            assert_eq!(walked.is_err(), refused, "{path:?} {v}");
            if let (Err(a), Err(b)) = (direct, walked) {
                assert_eq!(a.message, b.message);
            }
        }
    }
}
