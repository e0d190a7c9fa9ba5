//! `molefeed calculators` and `molefeed calc ID`: the calculator table on the command line.
//!
//! Design choice: nothing here knows a calculator by name. The flags of `calc ID` are the
//! table's input names (`--target-residual 1.0`), each with `--NAME-unit` for a quantity that
//! has more than one unit (or `--units si|us` for all of them; an ambiguous quantity without
//! either is refused rather than guessed); the printout is in the `--units` system (SI without
//! it), the JSON always in SI; values go to the engine in SI with the figures they
//! were written with, and the [`Outcome`] comes back in the one shape the app shows and the log
//! records. `--help` is generated from the table.

use super::{Args, CliError, CliResult, Report};
use crate::engine::calculators::{
    self, Calculator, Calculators, Input, Outcome, Request, ResultValue, given_figures,
    shown_figures,
};
use crate::engine::dosing::site::SiteProfile;
use crate::engine::dosing::units::LengthUnit;
use crate::engine::precision::{range_beside, split_tolerance, tolerance_to_si};
use crate::engine::quantity::{Quantity, Unit, UnitSystem};
use crate::engine::sigfig::{Measured, format_sig};
use serde_json::{Map, Value, json};

fn table() -> Result<Calculators, CliError> {
    Ok(Calculators::new()?)
}

fn unit_names(q: Quantity) -> Vec<&'static str> {
    q.units().into_iter().map(Unit::code).collect()
}

fn input_json(i: &Input) -> Value {
    json!({
        "name": i.name,
        "quantity": i.quantity,
        "units": unit_names(i.quantity),
        "si_unit": i.quantity.si().symbol(),
        "basis": i.basis,
        "optional": i.optional,
        "only_for": i.only_for,
        "scope": i.scope,
        // The other spellings the command line takes: `--sg`, `--volume-unit`.
        "short_flag": i.short_flag,
        "unit_flag": i.unit_flag.map_or_else(|| format!("{}-unit", i.name), str::to_string),
    })
}

/// The named choice that sets a calculator's mode, for listings: its flag and its values.
fn mode_choice_json(calc: &Calculator) -> Value {
    calc.mode_choice().map_or(Value::Null, |m| {
        json!({
            "name": m.name,
            "values": m.values.iter().map(|(v, _)| *v).collect::<Vec<_>>(),
            "modes": m.values.iter().map(|(_, mode)| *mode).collect::<Vec<_>>(),
        })
    })
}

/// `molefeed calculators`: every calculator with its inputs, products and result ids.
pub fn list(args: &Args) -> CliResult {
    let _ = args.switch("json");
    let c = table()?;
    let mut human = String::new();
    let mut list = Vec::new();
    for calc in calculators::all() {
        let products: Vec<String> = c.products(calc).into_iter().map(|p| p.id).collect();
        let inputs: Vec<Value> = c.all_inputs(calc).iter().map(input_json).collect();
        let results: Vec<Value> = calc
            .results
            .iter()
            .map(|r| json!({"id": r.id, "quantity": r.quantity, "unit": r.quantity.si().symbol(), "basis": r.basis, "headline": r.headline}))
            .collect();
        human.push_str(&format!(
            "{:<16} inputs: {}\n{:<16} results: {}\n",
            calc.id,
            c.all_inputs(calc)
                .iter()
                .map(|i| i.name)
                .collect::<Vec<_>>()
                .join(", "),
            "",
            calc.results
                .iter()
                .map(|r| r.id)
                .collect::<Vec<_>>()
                .join(", ")
        ));
        list.push(json!({
            "id": calc.id,
            "group": calc.group,
            "modes": calc.modes,
            "mode_choice": mode_choice_json(calc),
            "text_inputs": calc.text_inputs().map(|t| json!({"name": t.name, "kind": t.kind, "optional": true})).collect::<Vec<_>>(),
            "in_app": calc.in_app,
            "curve": calc.has_curve(),
            "products": products,
            "inputs": inputs,
            "results": results,
        }));
    }
    Ok(Report {
        human,
        json: json!({ "calculators": list }),
    })
}

/// `molefeed calc ID --help`: the inputs with their units and bases, from the table.
pub fn help(calc: &Calculator) -> Result<String, CliError> {
    let c = table()?;
    let mut out = format!(
        "molefeed calc {} [--product ID] [--mode M] --INPUT VALUE ... [--units si|us] [--site FILE] [--max-use-level MG_L] [--json]\n                  [--log FILE --initials XX --tap TAP --site FILE]   record what is printed\n\n",
        calc.id
    );
    if !calc.modes.is_empty() {
        out.push_str(&format!("modes: {}\n", calc.modes.join(", ")));
    }
    if let Some(m) = calc.mode_choice() {
        out.push_str(&format!(
            "  --{} {}   chooses the mode ({})\n",
            m.name,
            m.values
                .iter()
                .map(|(v, _)| *v)
                .collect::<Vec<_>>()
                .join("|"),
            m.values
                .iter()
                .map(|(v, mode)| format!("{v} = {mode}"))
                .collect::<Vec<_>>()
                .join(", ")
        ));
    }
    let products = c.products(calc);
    if !products.is_empty() {
        // Each with the basis its --strength (or --purity) is read on: the same number on
        // another basis is another amount of chemical (48.5 % as the alum vs 8.3 % as Al2O3).
        out.push_str(&format!(
            "products (the basis of their strength): {}\n",
            products
                .iter()
                .map(|p| format!("{} ({})", p.id, p.strength_basis))
                .collect::<Vec<_>>()
                .join(", ")
        ));
    }
    out.push_str("inputs:\n");
    for i in c.all_inputs(calc) {
        let units = unit_names(i.quantity);
        let unit = if i.quantity == Quantity::Chemicals {
            "comma-separated, as ph-after --chemical names them".to_string()
        } else if units.len() > 1 {
            let flag = i
                .unit_flag
                .map_or_else(|| format!("{}-unit", i.name), str::to_string);
            format!("--{flag} {}", units.join("|"))
        } else {
            format!("in {}", i.quantity.si().symbol())
        };
        let name = match (i.short_flag, i.former_name) {
            (Some(short), _) => format!("{} (--{short})", i.name),
            (None, Some(former)) => format!("{} (was --{former})", i.name),
            (None, None) => i.name.to_string(),
        };
        out.push_str(&format!(
            "  --{:<22} {}{}{}\n",
            name,
            unit,
            // A unit that names its basis already ("mg/L as CaCO3") is not followed by it again.
            i.basis
                .filter(|b| !i.quantity.si().symbol().ends_with(b))
                .map_or(String::new(), |b| format!(
                    ", {}",
                    calculators::basis_text(b)
                )),
            if i.optional {
                " (optional)".to_string()
            } else if !i.only_for.is_empty() {
                format!(" (only for {})", i.only_for.join(", "))
            } else {
                String::new()
            }
        ));
    }
    for t in calc.text_inputs() {
        out.push_str(&format!(
            "  --{:<22} {} (optional)\n",
            t.name,
            t.kind.to_uppercase()
        ));
    }
    out.push_str(&format!(
        "results: {}\n",
        calc.results
            .iter()
            .map(
                |r| match r.basis.filter(|b| !r.quantity.si().symbol().ends_with(b)) {
                    Some(b) => format!(
                        "{} ({} {})",
                        r.id,
                        r.quantity.si().symbol(),
                        calculators::basis_text(b)
                    ),
                    None => format!("{} ({})", r.id, r.quantity.si().symbol()),
                }
            )
            .collect::<Vec<_>>()
            .join(", ")
    ));
    out.push_str("Results are advisory; a licensed operator decides, under the plant's permit and local codes.\n");
    Ok(out)
}

/// The unit an input's value was given in: its own `--NAME-unit`, else its quantity's
/// `--QUANTITY-unit` (`--length-unit ft` for every length of a tank), else the unit the site's
/// tank is measured in, else the `--units` system (or the one system the other unit flags
/// name), else its only unit; a quantity with two units and nothing to choose by is refused.
fn unit_of(
    args: &Args,
    input: &Input,
    system: Option<UnitSystem>,
    defaults: &[Unit],
) -> Result<Unit, CliError> {
    let units = input.quantity.units();
    // `--<name>-unit`, or the flag the trade writes for it (`--volume-unit`), not both.
    let own = format!("{}-unit", input.name);
    let flags: Vec<&str> = std::iter::once(own.as_str())
        .chain(input.unit_flag.filter(|f| *f != own))
        .collect();
    // Else the quantity's `--QUANTITY-unit`, shared by every input of that quantity.
    let shared = format!("{}-unit", input.quantity.code());
    let flag = match one_of(args, &flags)? {
        Some(given) => Some(given),
        None => args.text(&shared)?.map(|code| (shared, code)),
    };
    if let Some((flag, code)) = flag {
        return units
            .iter()
            .copied()
            .find(|u| u.written_as(code))
            .ok_or_else(|| {
                CliError::usage(format!(
                    "--{flag} must be one of {}, got '{code}'",
                    unit_names(input.quantity).join(", ")
                ))
            });
    }
    if let Some(u) = defaults.iter().find(|u| units.contains(u)) {
        return Ok(*u);
    }
    match (units.as_slice(), system) {
        ([only], _) => Ok(*only),
        (_, Some(system)) => Ok(input.quantity.unit(system)),
        _ => Err(CliError::usage(format!(
            "--{} needs its unit: --{} {} (or --units si|us)",
            input.name,
            input
                .unit_flag
                .map_or_else(|| format!("{}-unit", input.name), str::to_string),
            unit_names(input.quantity).join("|")
        ))),
    }
}

/// The system an input without its own unit flag is read in. A system only implied by another
/// input's unit does not reach a temperature or a pump's capacity: plants that meter flow in
/// MGD often read temperature in °C, and metering pumps are rated in L/h as often as in gal/h,
/// so neither scale follows from the flow meter's (a 12 taken as °F, or 8 L/h taken as gal/h,
/// gave answers off by the whole difference). Those are refused without their unit.
fn implied_for(input: &Input, system: Option<UnitSystem>, implied: bool) -> Option<UnitSystem> {
    if implied && own_scale(input) {
        None
    } else {
        system
    }
}

/// An input whose unit is its instrument's own, neither implied by nor implying the others'.
fn own_scale(input: &Input) -> bool {
    matches!(
        input.quantity,
        Quantity::Temperature | Quantity::VolumePerHour
    )
}

/// The value of whichever of `flags` was given (the table's name and the trade's other
/// spelling of one input); both given is refused, never one of them silently preferred.
fn one_of<'a>(args: &'a Args, flags: &[&str]) -> Result<Option<(String, &'a str)>, CliError> {
    let mut found: Option<(String, &str)> = None;
    for flag in flags {
        if let Some(v) = args.text(flag)? {
            if let Some((first, _)) = &found {
                return Err(CliError::usage(format!(
                    "--{first} and --{flag} give the same entry: give one of them"
                )));
            }
            found = Some(((*flag).to_string(), v));
        }
    }
    Ok(found)
}

/// The one unit system the unit flags given name (`--length-unit ft`: US), if they name one.
/// A temperature's or a pump's unit names none ([`own_scale`]): °C is read at plants that
/// meter in MGD, and a pump rated in L/h says nothing of the flow meter.
fn system_of_flags(args: &Args, inputs: &[Input]) -> Result<Option<UnitSystem>, CliError> {
    let mut found = None;
    for input in inputs.iter().filter(|i| !own_scale(i)) {
        for flag in [
            format!("{}-unit", input.name),
            format!("{}-unit", input.quantity.code()),
        ] {
            let Some(code) = args.text(&flag)? else {
                continue;
            };
            let unit = input
                .quantity
                .units()
                .into_iter()
                .find(|u| u.code() == code);
            match (found, unit.and_then(|u| u.system())) {
                (_, None) => {}
                (None, Some(s)) => found = Some(s),
                (Some(f), Some(s)) if f == s => {}
                // Both systems named: nothing is implied.
                (Some(_), Some(_)) => return Ok(None),
            }
        }
    }
    Ok(found)
}

/// The mode the flags choose: `--mode`, or the calculator's own named choice (`--residual-basis
/// p`) as the table declares it; both given must agree.
fn mode_of(calc: &'static Calculator, args: &Args) -> Result<Option<&'static str>, CliError> {
    let by_mode =
        match args.text("mode")? {
            None => None,
            Some(mode) => Some(calc.modes.iter().copied().find(|m| *m == mode).ok_or_else(
                || {
                    CliError::usage(format!(
                        "{} has no mode '{mode}' (modes: {})",
                        calc.id,
                        calc.modes.join(", ")
                    ))
                },
            )?),
        };
    let Some(choice) = calc.mode_choice() else {
        return Ok(by_mode);
    };
    let Some(value) = args.text(choice.name)? else {
        return Ok(by_mode);
    };
    let mode = choice.mode(value).ok_or_else(|| {
        CliError::usage(format!(
            "--{} must be one of {}, got '{value}'",
            choice.name,
            choice
                .values
                .iter()
                .map(|(v, _)| *v)
                .collect::<Vec<_>>()
                .join(", ")
        ))
    })?;
    if by_mode.is_some_and(|m| m != mode) {
        return Err(CliError::usage(format!(
            "--mode and --{} {value} choose two different modes: give one",
            choice.name
        )));
    }
    Ok(Some(mode))
}

/// `--strength-basis`: the basis the strength was typed on, checked against the one the table
/// takes for the chosen product (the CLI converts no strength from one basis to another).
fn check_strength_basis(
    c: &Calculators,
    calc: &'static Calculator,
    request: &Request,
    args: &Args,
) -> Result<(), CliError> {
    let Some(v) = args.text("strength-basis")? else {
        return Ok(());
    };
    let basis = crate::engine::dosing::catalog::StrengthBasis::parse(v)?;
    let choice = request
        .product
        .as_deref()
        .and_then(|id| c.products(calc).into_iter().find(|p| p.id == id));
    match choice {
        Some(p) if basis.code() != p.strength_basis => Err(CliError::usage(format!(
            "--strength-basis {v}: the table takes the strength of {} as {}; give it on that basis",
            p.id, p.strength_basis
        ))),
        Some(_) => Ok(()),
        None => Err(CliError::usage(
            "--strength-basis goes with --product: it states the basis of that product's strength",
        )),
    }
}

/// What the flags said besides the request: the plant's name (from `--site`), the unit system
/// the human printout uses (`--units`, else SI), and each input's text as typed where it was
/// typed in that system's unit.
#[derive(Default)]
pub struct Given {
    pub site_name: Option<String>,
    pub system: UnitSystem,
    pub typed: std::collections::BTreeMap<&'static str, String>,
    /// The unit each number was read in, where it was not the system's (`--temperature-unit
    /// celsius` beside `--units us`): the `read as:` line shows it as given.
    pub read_in: std::collections::BTreeMap<&'static str, Unit>,
}

/// The request the flags make for `calc`, with the site's limits and maximum use level.
fn request(
    c: &Calculators,
    calc: &'static Calculator,
    args: &Args,
) -> Result<(Request, Given), CliError> {
    let mut given = Given::default();
    let mut request = Request::new(calc);
    // `--mode`, or the calculator's own named choice (`--shape`, `--route`).
    if let Some(mode) = mode_of(calc, args)? {
        request.mode = Some(mode);
    }
    request.product = args.text("product")?.map(str::to_string);
    check_strength_basis(c, calc, &request, args)?;
    for t in calc.text_inputs() {
        if let Some(text) = args.text(t.name)? {
            request.texts.insert(t.name, text.to_string());
        }
    }
    let system = match args.text("units")? {
        None => None,
        Some("si") => Some(UnitSystem::Si),
        Some("us") => Some(UnitSystem::Us),
        Some(other) => {
            return Err(CliError::usage(format!(
                "--units must be si or us, got '{other}'"
            )));
        }
    };
    // The lengths of the site's tank are in its own unit unless a flag says otherwise.
    let mut defaults: Vec<Unit> = Vec::new();
    let tank = args.text("tank")?;
    if tank.is_some() && args.text("site")?.is_none() {
        return Err(CliError::usage(
            "--tank names a tank of the site profile: give --site FILE too",
        ));
    }
    if let Some(path) = args.text("site")? {
        let text = super::read_input_file(path, "site profile")?;
        let site = SiteProfile::from_json(&text, c.catalog())?;
        given.site_name = Some(site.name.clone());
        request.limits = site.limits.clone();
        request.precisions = site.precisions();
        request.max_use_level_mg_l = request
            .product
            .as_deref()
            .and_then(|id| site.delivered_of(id))
            .and_then(|d| d.max_use_level_mg_l);
        // The site's meters and pumps for the engine's guards; `--pump ID` names the one used.
        request.site = Some(site.facts());
        request.pump = args.text("pump")?.map(str::to_string);
        if let Some(id) = tank {
            request.tank = Some(site.tank(id)?);
            let unit = site
                .day_tanks
                .iter()
                .find(|t| t.id == id)
                .map(|t| t.length_unit);
            defaults.extend(match unit {
                Some(LengthUnit::Ft) => Some(Unit::Feet),
                Some(LengthUnit::In) => Some(Unit::InchesOfLength),
                Some(LengthUnit::M) => Some(Unit::Metres),
                _ => None,
            });
        }
    }
    let inputs = c.inputs(calc, request.product.as_deref());
    // Without --units, the system the unit flags (or the site tank's unit) name sets the
    // rest: --length-unit ft gives a use rate in gal/d. Not a thermometer's scale or a pump's
    // nameplate (`implied_for`).
    let implied = system.is_none();
    let system = match system {
        Some(s) => Some(s),
        None => system_of_flags(args, &inputs)?.or(defaults.first().and_then(|u| u.system())),
    };
    given.system = system.unwrap_or(UnitSystem::Si);
    // The product's maximum use level from its certificate (mg/L of product), over the site's.
    if let Some(level) = args.number("max-use-level")? {
        request.max_use_level_mg_l = Some(level);
    }
    for input in inputs {
        let names: Vec<&str> = std::iter::once(input.name)
            .chain(input.short_flag)
            .chain(input.former_name)
            .collect();
        let Some((_, text)) = one_of(args, &names)? else {
            continue;
        };
        // A list (`--chemicals lime,carbon-dioxide`): names in order, no unit.
        if input.quantity == Quantity::Chemicals {
            let names: Vec<String> = text
                .split(',')
                .map(str::trim)
                .filter(|n| !n.is_empty())
                .map(str::to_string)
                .collect();
            request.lists.insert(input.name, names);
            given.typed.insert(input.name, text.trim().to_string());
            continue;
        }
        // "140±2": the reading with a precision of its own.
        let (reading, tolerance) = split_tolerance(text);
        let not_a_number = |what: &str| CliError {
            kind: "invalid-input".into(),
            message: format!(
                "--{} must be a number (or 'number ± number'), got '{what}'",
                input.name
            ),
            reason: Some("not-a-number"),
        };
        let value = Measured::parse(reading).map_err(|_| not_a_number(text))?;
        let unit = unit_of(
            args,
            &input,
            implied_for(&input, system, implied),
            &defaults,
        )?;
        request.values.insert(input.name, unit.to_si(value.value));
        if let Some(t) = tolerance {
            let t = Measured::parse(t)
                .ok()
                .filter(|t| t.value >= 0.0)
                .ok_or_else(|| not_a_number(text))?;
            request
                .tolerances
                .insert(input.name, tolerance_to_si(unit, value.value, t.value));
        }
        if let Some(f) = given_figures(input.quantity, reading) {
            request.figures.insert(input.name, f);
        }
        if unit == input.quantity.unit(given.system) {
            given.typed.insert(input.name, text.trim().to_string());
        } else {
            given.read_in.insert(input.name, unit);
        }
    }
    Ok((request, given))
}

/// A number as printed: to the figures the outcome supports; a pH or index to two decimals.
pub fn shown(value: f64, quantity: Quantity, figures: u32) -> String {
    match quantity {
        Quantity::Ph | Quantity::Index => format!("{value:.2}"),
        _ => format_sig(value, figures as u8),
    }
}

/// A result as printed, in `unit`: its value and, where the readings' precision leaves room,
/// the range it allows to the same decimals ("26.3 (25.0–27.7)").
pub fn shown_with_range(r: &ResultValue, unit: Unit, figures: u32) -> String {
    let value = shown(unit.from_si(r.value), r.quantity, figures);
    let Some(range) = r.range else {
        return value;
    };
    match range_beside(&value, range, unit, |v, d| format!("{v:.d$}")) {
        Some(range) => format!("{value} ({range})"),
        None => value,
    }
}

/// Every input as the calculation read it: a number typed without its unit is read in the
/// request's unit system (`--units`, or the one another unit flag names: `--length-unit ft`
/// makes a use rate gal/d; a temperature or a pump capacity needs its own, [`implied_for`]),
/// and this line shows which, next to the results that follow from it. A number given with a
/// unit of its own (`read_in`) is shown in that unit, as the operator wrote it.
fn read_as(
    outcome: &Outcome,
    system: UnitSystem,
    read_in: &std::collections::BTreeMap<&'static str, Unit>,
) -> String {
    let read: Vec<String> = outcome
        .inputs
        .iter()
        .map(|i| {
            let unit = read_in
                .get(i.name)
                .copied()
                .unwrap_or_else(|| i.quantity.unit(system));
            let value = unit.from_si(i.value);
            let value = match i.figures {
                Some(f) => shown(value, i.quantity, u32::from(f)),
                None => plain(value),
            };
            // A strength says its basis as the help does ("12.5 % trade", "8.3 % as Al2O3").
            let unit = match i.basis.map(calculators::basis_text) {
                Some(text) if unit.symbol() == "%" && text.starts_with('%') => text,
                _ => unit_text(unit, i.basis),
            };
            // A pH says its own unit ("ph 7.60").
            if unit.is_empty() || unit == "pH" {
                format!("{} {value}", i.name)
            } else {
                format!("{} {value} {unit}", i.name)
            }
        })
        .collect();
    format!("read as: {}", read.join(", "))
}

/// A number without the float noise a unit conversion leaves (8.000000000000002 gal/h → 8).
fn plain(value: f64) -> String {
    let text = format!("{value:.6}");
    let text = text.trim_end_matches('0').trim_end_matches('.');
    if text == "-0" {
        "0".into()
    } else {
        text.to_string()
    }
}

fn unit_text(unit: Unit, basis: Option<&str>) -> String {
    let symbol = unit.symbol();
    match (symbol, basis) {
        ("1", None) => String::new(),
        ("1", Some(b)) => format!("as {b}"),
        (s, None) => s.to_string(),
        // The unit already names its basis.
        (s, Some(b)) if s.ends_with(b) => s.to_string(),
        (s, Some(b)) => format!("{s} as {b}"),
    }
}

/// The outcome as printed (in the request's units) and as its JSON object (SI, results keyed
/// by their stable ids).
pub fn report(outcome: &Outcome, given: &Given) -> Report {
    let system = given.system;
    let figures = shown_figures(outcome);
    let mut results = Map::new();
    let mut lines = Vec::new();
    if let Some(p) = &outcome.product {
        lines.push(format!("{} ({})", p.name, outcome.calculator));
    }
    if !outcome.inputs.is_empty() {
        lines.push(read_as(outcome, system, &given.read_in));
    }
    for r in &outcome.results {
        let unit = r.quantity.si().symbol();
        let mut entry =
            json!({"value": r.value, "unit": unit, "basis": r.basis, "headline": r.headline});
        if let Some(range) = r.range {
            entry["low"] = json!(range.low);
            entry["high"] = json!(range.high);
        }
        results.insert(r.id.to_string(), entry);
        // The same number under the name scripts read (`fluoride_added` is the `dose`): the
        // JSON keeps both ids, the printout says it once.
        if let Some(same) = r.same_as {
            lines.push(format!("{:<28} = {same}", r.id));
            continue;
        }
        let shown_unit = r.quantity.unit(system);
        lines.push(format!(
            "{:<28} {} {}",
            r.id,
            shown_with_range(r, shown_unit, figures),
            unit_text(shown_unit, r.basis.as_deref())
        ));
    }
    let mut inputs = Map::new();
    for i in &outcome.inputs {
        inputs.insert(
            i.name.to_string(),
            json!({"value": i.value, "unit": i.quantity.si().symbol(), "basis": i.basis,
                "tolerance": i.tolerance}),
        );
    }
    let traces: Vec<String> = outcome.trace_lines().iter().map(|l| l.plain()).collect();
    let follow_ups: Vec<Value> = outcome
        .follow_ups
        .iter()
        .map(|f| {
            let values: Map<String, Value> = f
                .values
                .iter()
                .map(|(name, v)| (name.to_string(), json!(v)))
                .collect();
            json!({"calculator": f.calculator, "product": f.product, "values": values,
                "command": follow_up_command(f)})
        })
        .collect();
    let mut human = lines.join("\n");
    for f in &outcome.follow_ups {
        human.push_str(&format!("\nnext: {}", follow_up_command(f)));
    }
    human.push_str("\n\n");
    for t in &traces {
        human.push_str(t);
        human.push('\n');
    }
    human.push('\n');
    human.push_str(&super::words::cautions(&outcome.cautions));
    let json = json!({
        "calculator": outcome.calculator,
        "mode": outcome.mode,
        "product": outcome.product.as_ref().map(|p| json!({"id": p.id, "name": p.name, "form": p.form})),
        "chemical": outcome.chemical,
        "results": results,
        "setting": outcome.setting.map(|s| json!({"device": s.device.code(), "percent": s.percent})),
        "figures": figures,
        "inputs": inputs,
        "traces": traces,
        "cautions": cautions_json(&outcome.cautions),
        "follow_ups": follow_ups,
    });
    Report { human, json }
}

/// The command line that runs a follow-up: its calculator, product and values in SI (with the
/// SI unit named where the input has two), the rest of that calculator's inputs left to add.
fn follow_up_command(f: &crate::engine::calculators::FollowUp) -> String {
    let mut words = vec![format!("molefeed calc {}", f.calculator)];
    if let Some(p) = &f.product {
        words.push(format!("--product {p}"));
    }
    let inputs = calculators::find(f.calculator)
        .ok()
        .map(|c| c.inputs.to_vec())
        .unwrap_or_default();
    for (name, v) in &f.values {
        words.push(format!("--{name} {}", format_sig(*v, 4)));
        if let Some(i) = inputs.iter().find(|i| i.name == *name)
            && i.quantity.units().len() > 1
        {
            words.push(format!("--{name}-unit {}", i.quantity.si().code()));
        }
    }
    words.join(" ")
}

/// Cautions for a script: the engine's codes and parameters, and beside them the English
/// sentence the human printout shows, where the catalog has one.
pub fn cautions_json(cautions: &[crate::engine::dosing::Caution]) -> Value {
    serde_json::to_value(cautions_for_json(cautions)).unwrap_or(Value::Null)
}

/// [`cautions_json`] written as text, the bytes its value prints, without building the value
/// (a `batch` line whose water is cautioned writes this).
pub fn cautions_json_text(cautions: &[crate::engine::dosing::Caution]) -> String {
    // Room for a caution or two with their sentences, so the text is not grown step by step.
    let mut text = Vec::with_capacity(1024);
    match serde_json::to_writer(&mut text, &cautions_for_json(cautions)) {
        Ok(()) => String::from_utf8(text).unwrap_or_else(|_| "null".into()),
        Err(_) => "null".into(),
    }
}

/// One caution as a script reads it. The fields are in the order a JSON value keeps its keys
/// (sorted), so the text and the value print alike.
#[derive(serde::Serialize)]
struct CautionJson<'a> {
    key: &'a str,
    params: &'a [(String, String)],
    severity: crate::engine::dosing::Severity,
    #[serde(skip_serializing_if = "Option::is_none")]
    text: Option<String>,
}

fn cautions_for_json(cautions: &[crate::engine::dosing::Caution]) -> Vec<CautionJson<'_>> {
    cautions
        .iter()
        .map(|c| CautionJson {
            key: &c.key,
            params: &c.params,
            severity: c.severity,
            text: super::words::sentence(&c.key, &c.params),
        })
        .collect()
}

/// `molefeed calc ID ...`: runs any calculator of the table.
pub fn run(args: &Args) -> CliResult {
    let _ = args.switch("json");
    let id = args.required_positional(0, "calculator id (see 'molefeed calculators')")?;
    let calc = calculators::find(id)?;
    if args.switch("help") {
        return Ok(Report {
            human: help(calc)?,
            json: json!({"help": help(calc)?}),
        });
    }
    let c = table()?;
    let (request, given) = request(&c, calc, args)?;
    let outcome = c.compute(&request)?;
    let mut report = report(&outcome, &given);
    if let Some(id) = log_outcome(args, &outcome, &given)? {
        report.human.push_str(&format!("\nlogged as entry {id}\n"));
        report.json["logged"] = json!(id.to_string());
    }
    Ok(report)
}

/// `--log FILE --initials XX --tap TAP` (with `--site FILE` for the plant's name): appends
/// exactly what was printed, through the log's one conversion of an outcome, the one the app's
/// "Log this dose" uses. The id is reported only once the entry is on disk.
fn log_outcome(
    args: &Args,
    outcome: &Outcome,
    given: &Given,
) -> Result<Option<uuid::Uuid>, CliError> {
    let Some(file) = args.text("log")? else {
        return Ok(None);
    };
    let initials = args.required_text("initials")?;
    let tap = args.required_text("tap")?;
    let site = given.site_name.clone().ok_or_else(|| {
        CliError::usage("--log needs --site FILE: an entry records the plant it was made for")
    })?;
    let figures = shown_figures(outcome);
    let result = |r: &ResultValue, unit: Unit| shown_with_range(r, unit, figures);
    let input = |i: &crate::engine::calculators::InputUsed| given.typed.get(i.name).cloned();
    // The record has the severity of its own: the words are the sentence as printed.
    let caution = super::words::caution_text;
    let dose = crate::log::shown::dose_of_outcome(
        outcome,
        &crate::log::shown::Shown {
            // The record keeps what was printed, in the units it was printed in.
            system: given.system,
            result: &result,
            input: &input,
            caution: &caution,
        },
        initials,
        tap,
    );
    let path = std::path::Path::new(file);
    super::log_cmd::usable_log_path(path)?;
    let device = super::log_cmd::device(args)?;
    let mut log = crate::log::Log::open(path, &device).map_err(super::log_cmd::log_error)?;
    let id = log
        .append(crate::log::Draft::Entry {
            at: None,
            site,
            dose,
        })
        .map_err(super::log_cmd::log_error)?;
    Ok(Some(id))
}
