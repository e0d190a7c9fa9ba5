//! `mass`, `balance`, `convert`, `equivalent` and `reactions`: the chemistry core on the command line.

use super::{Args, CliResult, Report};
use crate::engine::convert::{AmountUnit, convert as convert_amount};
use crate::engine::equivalents::ReactionLibrary;
use crate::engine::formula::Formula;
use crate::engine::reaction::{Reaction, Side};
use crate::engine::sigfig::{Measured, format_measured};
use serde_json::{Map, Value, json};

pub fn mass(args: &Args) -> CliResult {
    let text = args.required_positional(0, "FORMULA")?;
    let formula = Formula::parse(text)?;
    let molar_mass = formula.molar_mass();
    let components = formula.composition();
    let mut composition = Map::new();
    let mut human = format!("{formula}: {molar_mass:.3} g/mol\n");
    for c in &components {
        composition.insert(c.symbol.to_string(), json!(c.mass_fraction));
        human.push_str(&format!(
            "  {:<2} ×{:<3} {:>9.3} g/mol  {:>7.3} %\n",
            c.symbol,
            c.count,
            c.mass,
            c.mass_fraction * 100.0
        ));
    }
    if formula.uses_mass_numbers() {
        human.push_str(
            "  note: an element without a standard atomic weight is counted by its mass number\n",
        );
    }
    Ok(Report {
        human,
        json: json!({
            "formula": formula.to_string(),
            "molar_mass_g_mol": molar_mass,
            "charge": formula.charge(),
            "composition": composition,
            "source": crate::engine::elements::SOURCE,
        }),
    })
}

pub fn balance(args: &Args) -> CliResult {
    let equation = args.required_positional(0, "\"EQUATION\"")?;
    let reaction = Reaction::balance(equation)?;
    let per = args
        .text("per")?
        .map(|species| reaction.per_mole_of(species))
        .transpose()?;
    let side = |wanted: Side| -> Vec<Value> {
        reaction
            .species()
            .iter()
            .filter(|s| s.side == wanted)
            .map(|s| json!({"formula": s.written, "coefficient": s.coefficient}))
            .collect()
    };
    let mut json = json!({
        "equation": reaction.to_string(),
        "reactants": side(Side::Reactant),
        "products": side(Side::Product),
    });
    let mut human = reaction.to_string();
    if let Some(per) = per {
        human.push_str(&format!("\nper mole: {per}"));
        json["per_mole"] = json!(per);
    }
    Ok(Report { human, json })
}

pub fn convert(args: &Args) -> CliResult {
    let equation = args.required_positional(0, "\"EQUATION\"")?;
    let reaction = Reaction::balance(equation)?;
    let from = args.required_text("from")?;
    let to = args.required_text("to")?;
    let amount_text = args.required_text("amount")?;
    let amount = Measured::parse(amount_text)?;
    let unit = AmountUnit::parse(args.required_text("unit")?)?;
    let to_unit = match args.text("to-unit")? {
        Some(u) => AmountUnit::parse(u)?,
        None => unit,
    };
    let trace = convert_amount(&reaction, from, amount, unit, to, to_unit)?;
    let result = trace.result();
    let sig_figs = trace.sig_figs();
    let steps: Vec<Value> = trace
        .steps
        .iter()
        .map(|s| {
            json!({
                "factor": {"numerator": s.numerator, "denominator": s.denominator},
                "origin": s.origin,
                "exact": s.sig_figs.is_none(),
                "sig_figs": s.sig_figs,
                "result": s.result,
            })
        })
        .collect();
    let shown = format_measured(result.value, sig_figs);
    Ok(Report {
        human: format!(
            "{reaction}\n{trace}= {shown} {} {}",
            result.unit,
            result.of.as_deref().unwrap_or("")
        ),
        json: json!({
            "equation": reaction.to_string(),
            "amount": result.value,
            "unit": result.unit,
            "species": result.of,
            "sig_figs": sig_figs,
            "display": shown,
            "steps": steps,
        }),
    })
}

/// `molefeed reactions`: the shipped reactions, balanced, with their sources.
pub fn reactions(_args: &Args) -> CliResult {
    let library = ReactionLibrary::builtin()?;
    let mut human = String::new();
    let list: Vec<Value> = library
        .reactions()
        .iter()
        .map(|r| {
            human.push_str(&format!(
                "{:<34} {}\n{:<34} source: {}\n",
                r.id, r.reaction, "", r.source
            ));
            json!({"id": r.id, "equation": r.reaction.to_string(), "source": r.source})
        })
        .collect();
    Ok(Report {
        human,
        json: json!({ "reactions": list }),
    })
}

/// `molefeed equivalent SPECIES [--reaction ID --carrier C]`: equivalent weight from the
/// species' own titration reaction, or (for a coagulant) from its reaction with an alkalinity
/// carrier, with mg/L as CaCO3 per mg/L of the species.
pub fn equivalent(args: &Args) -> CliResult {
    let species = args.required_positional(0, "SPECIES")?;
    let library = ReactionLibrary::builtin()?;
    let Some(id) = args.text("reaction")? else {
        let weight = library.equivalent_weight(species)?;
        let per_mol = library.proton_equivalents(species)?;
        return Ok(Report {
            human: format!("{species}: {weight:.3} g/eq ({per_mol} eq/mol)"),
            json: json!({"species": species, "equivalent_weight_g_eq": weight, "equivalents_per_mol": per_mol.to_string()}),
        });
    };
    let carrier = args.required_text("carrier")?;
    let named = library.get(id)?;
    let per_mol = library.equivalents_via(&named.reaction, species, carrier)?;
    let weight = library.equivalent_weight_via(&named.reaction, species, carrier)?;
    let trace = library.as_caco3_per_mg(&named.reaction, species, carrier)?;
    Ok(Report {
        human: format!(
            "{}\n{species}: {weight:.3} g/eq ({per_mol} eq/mol of {carrier})\n{trace}",
            named.reaction
        ),
        json: json!({
            "species": species,
            "reaction": named.reaction.to_string(),
            "equivalent_weight_g_eq": weight,
            "equivalents_per_mol": per_mol.to_string(),
            "as_caco3_mg_per_mg": trace.value(),
            "steps": trace.steps,
        }),
    })
}
