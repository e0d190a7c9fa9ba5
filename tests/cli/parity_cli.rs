//! Parity of the command line and the app: every variant the app offers, with every product it
//! offers, computed through `molefeed calc` (a real process, flags parsed and converted) and
//! through the app's calculator controller (fields typed as text, parsed and converted), must
//! give the same results and the same cautions. Both front ends are generic over the engine's
//! calculator table, so this is the test that they stay so.

use molefeed::app::calc::{CalcController, Status};
use molefeed::app::numbers::Lang;
use molefeed::app::seams::{CalcKind, connected_engine};
use molefeed::cli::aliases::{ALIASES, Alias, Becomes};
use molefeed::engine::calculators::{self, Calculators, FeedForm, Input};
use molefeed::engine::quantity::UnitSystem;
use serde_json::Value;
use std::process::Command;

/// A plausible reading for an input, by name (an invented plant's numbers); a product's
/// strength and SG come from the catalog's first typical strength.
fn reading(input: &Input, strength: Option<(f64, Option<f64>)>) -> Option<String> {
    let v = match input.name {
        "flow" => "5000",
        "target-ph" => "7.8",
        "alkalinity" => "60",
        "temperature" => "15",
        "calcium-hardness" => "80",
        "chlorine-demand" => "1.2",
        "ph" => "7.4",
        "chlorine-dose" => "3.5",
        "cl2-n-ratio" => "4.5",
        "residual-in" => "0.8",
        "jar-dose" => "30",
        "alkalinity-setpoint" => "20",
        "total-hardness" => "250",
        "excess-lime" => "35",
        "lime-purity" => "93",
        "lime-feeder-capacity" => "600",
        "soda-ash-purity" => "98",
        "dose" => "2.5",
        "drawdown-volume" => "140",
        "drawdown-time" => "60",
        "pump-setting" => "30",
        "catch-mass" => "150",
        "catch-time" => "60",
        "feeder-setting" => "40",
        "pump-capacity" => "12",
        "gas-feeder-capacity" => "150",
        "dry-feeder-capacity" => "600",
        // The scripting calculators' inputs (no card in the app).
        "residual" => "1.2",
        "t10" => "80",
        "target-strength" => "1",
        "target-specific-gravity" => "1.02",
        "final-volume" => "200",
        "suspended-solids" => "12",
        // Wastewater, distribution and bench calculators.
        "residual-alkalinity" => "70",
        // Ammonia-N is optional elsewhere but nitrified here: a low reading keeps the
        // chlorination cases feeding (breakpoint, chloramine credit) and nitrification positive.
        "ammonia-n" => "0.3",
        "nitrate-n-denitrified" => "1",
        "phosphorus" => "3.5",
        "metal-ratio" => "2",
        "diameter" => "200",
        "length" => "450",
        // One object at a time: a pipe (a tank's or well's dimensions beside it are refused).
        "target-chlorine" => "25",
        "dry-solids-rate" => "3000",
        "solids-dose" => "4",
        "active-percent" => "40",
        "solution-percent" => "0.5",
        "stock-concentration" => "10",
        "ml-dosed" => "3",
        "jar-volume-ml" => "1000",
        // The plant's other feeds (part A).
        "target-fluoride" => "0.7",
        "natural-fluoride" => "0.2",
        "target-residual" => "1.0",
        "present-residual" => "0.3",
        "orthophosphate-share" => "70",
        "iron" => "0.8",
        "manganese" => "0.15",
        "other-demand" => "0.5",
        "clo2-dose" => "0.6",
        "generator-yield" => "95",
        "chlorite-conversion" => "60",
        "strength" | "purity" => return strength.map(|(s, _)| s.to_string()),
        "specific-gravity" => return strength.and_then(|(_, sg)| sg).map(|sg| sg.to_string()),
        // Optional readings the cases leave out (ammonia in the water).
        _ if input.optional => return None,
        other => panic!("no reading for {other}: add one"),
    };
    Some(v.to_string())
}

#[test]
fn every_calculator_the_app_shows_gives_the_same_numbers_and_cautions_on_the_command_line() {
    let table = Calculators::new().unwrap();
    let mut compared = 0;
    let mut refused = 0;
    for kind in CalcKind::all() {
        for mode in kind.modes() {
            let calc = mode.calculator();
            for product in table.products(calc) {
                let strength = table
                    .catalog()
                    .product(&product.id)
                    .unwrap()
                    .strengths
                    .first()
                    .map(|s| (s.value, s.sg));
                let inputs: Vec<(Input, String)> = table
                    .inputs(calc, Some(&product.id))
                    .into_iter()
                    .filter_map(|i| reading(&i, strength).map(|t| (i, t)))
                    .collect();
                // The app: the screen, the variant, the product, then every field typed.
                let mut app = CalcController::new(connected_engine(), Lang::En, UnitSystem::Si);
                app.set_kind(kind);
                app.set_mode(mode);
                let index = app
                    .view()
                    .products
                    .iter()
                    .position(|p| p.id == product.id)
                    .unwrap();
                app.set_product(index);
                for (input, text) in &inputs {
                    app.edit(input.name, text);
                }
                let view = app.view();
                // The command line, as a script would call it.
                let mut args = vec![
                    "calc".to_string(),
                    calc.id.to_string(),
                    "--product".into(),
                    product.id.clone(),
                    "--units".into(),
                    "si".into(),
                    "--json".into(),
                ];
                if let Some(m) = mode.mode {
                    args.extend(["--mode".to_string(), m.to_string()]);
                }
                for (input, text) in &inputs {
                    args.extend([format!("--{}", input.name), text.clone()]);
                }
                let out = Command::new(env!("CARGO_BIN_EXE_molefeed"))
                    .args(&args)
                    .output()
                    .unwrap();
                let stdout = String::from_utf8_lossy(&out.stdout);
                let cli: Value = serde_json::from_str(stdout.trim()).unwrap();
                let card = match view.status {
                    Status::Ready(card) => card,
                    // A refusal (an acid asked to raise the pH) is the same refusal in both.
                    Status::Refused(e) => {
                        assert!(!out.status.success(), "{args:?}: the CLI computed {stdout}");
                        assert_eq!(cli["error"]["kind"], e.kind().code(), "{args:?}");
                        assert_eq!(cli["error"]["reason"].as_str(), e.reason(), "{args:?}");
                        refused += 1;
                        continue;
                    }
                    other => panic!("{} / {}: the app shows {other:?}", calc.id, product.id),
                };
                assert!(out.status.success(), "{args:?}: {stdout}");
                let outcome = card.outcome.table.expect("the engine's outcome");
                let cli_results = cli["results"].as_object().unwrap();
                assert_eq!(
                    cli_results.len(),
                    outcome.results.len(),
                    "{} / {}: {cli_results:?} vs {:?}",
                    calc.id,
                    product.id,
                    outcome.results
                );
                for r in &outcome.results {
                    let v = cli_results[r.id]["value"].as_f64().unwrap();
                    assert!(
                        (v - r.value).abs() <= 1e-12 * r.value.abs().max(1e-9),
                        "{} / {}: {} CLI {v} app {}",
                        calc.id,
                        product.id,
                        r.id,
                        r.value
                    );
                }
                let cli_cautions: Vec<&str> = cli["cautions"]
                    .as_array()
                    .unwrap()
                    .iter()
                    .map(|c| c["key"].as_str().unwrap())
                    .collect();
                let app_cautions: Vec<&str> =
                    outcome.cautions.iter().map(|c| c.key.as_str()).collect();
                assert_eq!(cli_cautions, app_cautions, "{} / {}", calc.id, product.id);
                // The card shows every engine caution but the advisory, which it shows itself.
                assert_eq!(card.cautions.len() + 1, outcome.cautions.len());
                compared += 1;
            }
        }
    }
    // Every variant with every product: the table's size, counted so a silent skip fails.
    assert!(compared >= 25, "only {compared} cases compared");
    println!(
        "parity: {compared} calculator/product cases identical, {refused} refused alike by both"
    );
}

/// The older command's flag that gives the table's input `name`, if it has one of its own.
fn old_flag(alias: &Alias, name: &str) -> Option<&'static str> {
    alias
        .flags
        .iter()
        .find_map(|(flag, becomes)| match becomes {
            Becomes::Input(i) if *i == name => Some(*flag),
            Becomes::Strength if name == "strength" || name == "purity" => Some(*flag),
            Becomes::FeederScale if name.ends_with("feeder-capacity") => Some(*flag),
            _ => None,
        })
}

/// The older unit flag and code that give `unit` (a table code) for the input `name`.
fn old_unit(alias: &Alias, name: &str, unit: &str) -> Option<(&'static str, &'static str)> {
    alias
        .flags
        .iter()
        .find_map(|(flag, becomes)| match becomes {
            Becomes::UnitOf(i, map) if *i == name => map
                .iter()
                .find(|(_, new)| *new == unit)
                .map(|(old, _)| (*flag, *old)),
            Becomes::FeederUnit if name.ends_with("feeder-capacity") && unit == "kg-per-day" => {
                Some((*flag, "kg/d"))
            }
            _ => None,
        })
}

/// The JSON a command line prints, and whether it succeeded.
fn json_of(args: &[String]) -> (bool, Value) {
    let out = Command::new(env!("CARGO_BIN_EXE_molefeed"))
        .args(args)
        .output()
        .unwrap();
    let stdout = String::from_utf8_lossy(&out.stdout);
    let json =
        serde_json::from_str(stdout.trim()).unwrap_or_else(|e| panic!("{args:?}: {e}: {stdout}"));
    (out.status.success(), json)
}

/// Every older dosing command (the list from the code) with every product and mode its
/// calculator offers, typed with the older flags, prints the very JSON `molefeed calc` prints
/// for the same readings: the aliases compute nothing of their own.
#[test]
fn every_older_command_prints_what_calc_prints_for_the_same_readings() {
    let table = Calculators::new().unwrap();
    let mut compared = 0;
    let mut commands = std::collections::BTreeSet::new();
    for alias in &ALIASES {
        let calc = calculators::find(alias.calculator).unwrap();
        let products: Vec<Option<calculators::ProductChoice>> = {
            let p = table.products(calc);
            if p.is_empty() {
                vec![None]
            } else {
                p.into_iter().map(Some).collect()
            }
        };
        let modes: Vec<Option<&str>> = if calc.modes.is_empty() {
            vec![None]
        } else {
            calc.modes.iter().map(|m| Some(*m)).collect()
        };
        for product in &products {
            for mode in &modes {
                let id = product.as_ref().map(|p| p.id.as_str());
                let form = product.as_ref().map_or(FeedForm::Liquid, |p| p.form);
                let catalog = id.map(|id| table.catalog().product(id).unwrap());
                let strength = catalog
                    .and_then(|p| p.strengths.first())
                    .map(|s| (s.value, s.sg));
                let mut new = vec!["calc".to_string(), calc.id.to_string()];
                let mut old = vec![alias.command.to_string()];
                for words in [&mut new, &mut old] {
                    words.extend(["--units", "si", "--json"].map(String::from));
                }
                if let (Some(id), Some(p)) = (id, product) {
                    new.extend(["--product".to_string(), id.to_string()]);
                    let named = alias.flags.iter().find_map(|(flag, b)| match b {
                        Becomes::Product([]) => Some((*flag, id)),
                        Becomes::Product(map) => {
                            map.iter().find(|(_, n)| *n == id).map(|(o, _)| (*flag, *o))
                        }
                        _ => None,
                    });
                    let (flag, name) = named.expect("the alias names the product");
                    old.extend([format!("--{flag}"), name.to_string()]);
                    for (flag, becomes) in alias.flags {
                        match becomes {
                            Becomes::StrengthBasis if *flag == "strength-basis" => {
                                old.extend([format!("--{flag}"), p.strength_basis.to_string()]);
                            }
                            Becomes::GasSwitch if form == FeedForm::Gas => {
                                old.push(format!("--{flag}"));
                            }
                            Becomes::Agent => {
                                let dose_as = catalog.unwrap().dose_as.clone();
                                old.extend([format!("--{flag}"), dose_as]);
                            }
                            _ => {}
                        }
                    }
                }
                if let Some(m) = mode {
                    new.extend(["--mode".to_string(), m.to_string()]);
                    let value = alias.flags.iter().find_map(|(flag, b)| match b {
                        Becomes::Mode(map) => {
                            map.iter().find(|(_, n)| n == m).map(|(o, _)| (*flag, *o))
                        }
                        _ => None,
                    });
                    match value {
                        Some((flag, v)) => old.extend([format!("--{flag}"), v.to_string()]),
                        None => old.extend(["--mode".to_string(), m.to_string()]),
                    }
                }
                for input in table.inputs(calc, id) {
                    let Some(text) = reading(&input, strength) else {
                        continue;
                    };
                    new.extend([format!("--{}", input.name), text.clone()]);
                    let flag = old_flag(alias, input.name).unwrap_or(input.name);
                    old.extend([format!("--{flag}"), text]);
                    let units = input.quantity.units();
                    if units.len() > 1 {
                        let si = input.quantity.si().code();
                        new.extend([format!("--{}-unit", input.name), si.to_string()]);
                        let (flag, code) = old_unit(alias, input.name, si)
                            .map_or((format!("{}-unit", input.name), si), |(f, c)| {
                                (f.to_string(), c)
                            });
                        old.extend([format!("--{flag}"), code.to_string()]);
                    }
                }
                let (ok_new, json_new) = json_of(&new);
                let (ok_old, json_old) = json_of(&old);
                assert_eq!(ok_new, ok_old, "{old:?}: {json_old}\n{new:?}: {json_new}");
                if ok_new {
                    assert_eq!(json_old, json_new, "{old:?} vs {new:?}");
                    compared += 1;
                    commands.insert(alias.command);
                } else {
                    assert_eq!(
                        json_old["error"]["kind"], json_new["error"]["kind"],
                        "{old:?}"
                    );
                    assert_eq!(json_old["error"]["reason"], json_new["error"]["reason"]);
                }
            }
        }
    }
    // Every alias answered at least once: a row that cannot reach its calculator fails here.
    let missing: Vec<&str> = ALIASES
        .iter()
        .map(|a| a.command)
        .filter(|c| !commands.contains(c))
        .collect();
    assert!(missing.is_empty(), "never answered: {missing:?}");
    println!("aliases: {compared} command/product/mode cases print what calc prints");
}
