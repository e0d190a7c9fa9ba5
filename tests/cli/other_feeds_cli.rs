//! The command lines of the plant's other feeds as their issue writes them: each calculator's
//! own flags, the common flags every feed takes (`--flow --flow-unit --product --strength
//! --strength-basis --sg --pump-capacity --pump-unit --site`), and the result ids scripts rely
//! on. Expected numbers are worked by hand beside each check (atomic weights IUPAC 2021, unit
//! definitions exact); the rest checks that the ids the issue names are there.

use serde_json::Value;
use std::process::Command;

const SITE: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/data/demo-site.json");

fn run(args: &[&str]) -> (i32, Value, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_molefeed"))
        .args(args)
        .output()
        .expect("binary runs");
    let stdout = String::from_utf8_lossy(&out.stdout).to_string();
    let json = serde_json::from_str(stdout.trim()).unwrap_or(Value::Null);
    (out.status.code().unwrap_or(-1), json, stdout)
}

/// The one helper: runs `calc` with `line` (words; `SITE` for the demo plant's file), expects
/// success, and checks that every id in `ids` is a result; returns the JSON.
fn check(line: &str, ids: &[&str]) -> Value {
    let mut args: Vec<&str> = vec!["calc"];
    args.extend(
        line.split_whitespace()
            .map(|w| if w == "SITE" { SITE } else { w }),
    );
    args.push("--json");
    let (code, json, text) = run(&args);
    assert_eq!(code, 0, "{line}: {text}");
    for id in ids {
        assert!(
            json["results"][id]["value"].as_f64().is_some(),
            "{line}: no {id} in {}",
            json["results"]
        );
    }
    json
}

fn value(json: &Value, id: &str) -> f64 {
    json["results"][id]["value"].as_f64().unwrap()
}

/// The common flags, on a liquid product with its pump (an invented plant's numbers).
const COMMON: &str = "--flow 2 --flow-unit mgd --strength-basis weight --pump-capacity 20 --pump-unit gal-per-hour --site SITE";

#[test]
fn each_command_line_of_the_issue_answers_with_the_result_ids_it_names() {
    let feed = ["product_mass_rate", "product_volume_rate", "pump_setting"];
    let with =
        |ids: &[&'static str]| -> Vec<&'static str> { ids.iter().copied().chain(feed).collect() };
    check(
        &format!(
            "fluoridation --target-fluoride 0.7 --natural-fluoride 0.2 --product fluorosilicic-acid --strength 23 --sg 1.19 {COMMON}"
        ),
        &with(&["fluoride_added"]),
    );
    for basis in ["po4", "p", "p2o5"] {
        check(
            &format!(
                "corrosion-inhibitor --target-residual 1.0 --residual-basis {basis} --present-residual 0.2 --product phosphoric-acid --strength 75 --sg 1.58 {COMMON}"
            ),
            &with(&["dose_as_po4", "orthophosphate_as_po4"]),
        );
    }
    check(
        &format!(
            "permanganate --iron 0.8 --manganese 0.15 --other-demand 0.5 --product potassium-permanganate-solution --strength 3 --sg 1.02 {COMMON}"
        ),
        &with(&["dose"]),
    );
    for route in ["chlorine-chlorite", "acid-chlorite"] {
        check(
            &format!(
                "chlorine-dioxide --clo2-dose 0.6 --route {route} --product sodium-chlorite --strength 25 --sg 1.22 {COMMON}"
            ),
            &[
                "chlorite_feed_rate",
                "chlorine_or_acid_feed_rate",
                "expected_chlorite",
                "clo2_dose",
            ],
        );
    }
    check(
        &format!(
            "nitrification-alkalinity --ammonia-n 25 --alkalinity 150 --residual-alkalinity 70 --nitrate-n-denitrified 5 --product sodium-hydroxide --strength 50 --sg 1.52 {COMMON}"
        ),
        &with(&["alkalinity_needed", "dose"]),
    );
    check(
        &format!(
            "phosphorus-removal --phosphorus 3.5 --metal-ratio 2 --product ferric-chloride --strength 40 --sg 1.415 {COMMON}"
        ),
        &[
            "metal_dose",
            "dose",
            "alkalinity_consumed",
            "product_mass_rate",
            "product_volume_rate",
            "sludge_mass_rate",
        ],
    );
    let main = [
        "water_volume",
        "chlorine_mass",
        "product_mass",
        "product_volume",
    ];
    let hypo = "--product sodium-hypochlorite --strength 12.5 --strength-basis trade --sg 1.16";
    // 8 in × 1000 ft: π × 0.1016² × 304.8 m³ = 9.8846 m³ (25.4 mm/in, 0.3048 m/ft, exact).
    let pipe = check(
        &format!(
            "main-disinfection --diameter 8 --diameter-unit in --length 1000 --length-unit ft --target-chlorine 25 {hypo}"
        ),
        &main,
    );
    let litres = std::f64::consts::PI * 0.1016_f64.powi(2) * 304.8 * 1000.0;
    assert!((value(&pipe, "water_volume") - litres).abs() < 1e-6 * litres);
    for (unit, litres) in [("gal", 3.785_411_784e5), ("m3", 1.0e5), ("l", 100.0)] {
        // 100 000 gal × 3.785411784 L/gal; 100 m³ × 1000 L/m³; 100 L (definitions).
        let v = if unit == "gal" { "100000" } else { "100" };
        let tank = check(
            &format!(
                "main-disinfection --tank-volume {v} --volume-unit {unit} --target-chlorine 25 {hypo}"
            ),
            &main,
        );
        assert!(
            (value(&tank, "water_volume") - litres).abs() < 1e-9 * litres,
            "{unit}"
        );
    }
    // A 6 in casing with 100 ft of water: π × 0.0762² × 30.48 m³ = 556.0 L.
    let well = check(
        &format!(
            "main-disinfection --casing-diameter 6 --diameter-unit in --water-depth 100 --length-unit ft --target-chlorine 50 {hypo}"
        ),
        &main,
    );
    let litres = std::f64::consts::PI * 0.0762_f64.powi(2) * 30.48 * 1000.0;
    assert!((value(&well, "water_volume") - litres).abs() < 1e-6 * litres);
    check(
        "polymer --dose 1.5 --active-percent 40 --solution-percent 0.5 --sg 1.05 --flow 2 --flow-unit mgd --pump-capacity 30 --pump-unit gal-per-hour",
        &["neat_product_rate", "solution_rate", "pump_setting"],
    );
    // Powdered activated carbon slurry, fed as a product of its own (dose as C).
    let pac = check(
        &format!("feed --dose 10 --product pac-slurry --strength 5 --sg 1.02 {COMMON}"),
        &with(&["dose"]),
    );
    assert_eq!(pac["results"]["dose"]["basis"], "C");
    for (strength, unit) in [("10", "g/l"), ("1", "percent")] {
        // 10 g/L and 1 % w/v are the same stock (1 % = 10 g/L): 3 mL in a 1 L jar is 30 mg/L.
        let jar = check(
            &format!(
                "jar-test --stock-concentration {strength} --stock-unit {unit} --stock-compound FeCl3 --ml-dosed 3 --jar-volume-ml 1000 --product ferric-chloride --strength 40 --sg 1.415"
            ),
            &["jar_dose"],
        );
        assert!((value(&jar, "jar_dose") - 30.0).abs() < 1e-9, "{unit}");
    }
}

#[test]
fn a_residual_basis_is_converted_through_phosphorus() {
    // 1.0 mg/L as P = 1.0 × M(PO4)/M(P) = 94.969/30.974 = 3.0661 mg/L as PO4 (references §9:
    // × 3.066); as P2O5: × 2 × 94.969/141.943 = 1.3381 (× 1.338).
    for (basis, per) in [("p", 3.0661), ("p2o5", 1.3381), ("po4", 1.0)] {
        let json = check(
            &format!(
                "corrosion-inhibitor --target-residual 1.0 --residual-basis {basis} --present-residual 0 --product phosphoric-acid --strength 75 --sg 1.58 {COMMON}"
            ),
            &["dose_as_po4"],
        );
        assert!((value(&json, "dose_as_po4") - per).abs() < 2e-4, "{basis}");
        assert_eq!(json["mode"], format!("residual-as-{basis}"));
    }
    // --mode and --residual-basis that disagree are refused, not one of them preferred.
    let (code, _, _) = run(&[
        "calc",
        "corrosion-inhibitor",
        "--mode",
        "residual-as-p",
        "--residual-basis",
        "po4",
        "--target-residual",
        "1",
        "--present-residual",
        "0",
        "--product",
        "phosphoric-acid",
        "--strength",
        "75",
        "--sg",
        "1.58",
        "--flow",
        "100",
        "--flow-unit",
        "m3-per-day",
        "--pump-capacity",
        "2",
        "--pump-unit",
        "l-per-hour",
    ]);
    assert_eq!(code, 2);
}

#[test]
fn a_flag_and_its_other_spelling_together_and_a_wrong_strength_basis_are_refused() {
    let base = "calc polymer --dose 1 --active-percent 40 --solution-percent 0.5 --flow 100 --flow-unit m3-per-day";
    let (code, _, text) = run(&format!("{base} --sg 1.05 --specific-gravity 1.05")
        .split_whitespace()
        .collect::<Vec<_>>());
    assert_eq!(code, 2, "{text}");
    let (code, _, text) = run(
        &format!(
            "calc fluoridation --target-fluoride 0.7 --natural-fluoride 0.2 --product fluorosilicic-acid --strength 23 --strength-basis trade --sg 1.19 {}",
            COMMON.replace("--strength-basis weight ", "").replace("SITE", SITE)
        )
        .split_whitespace()
        .collect::<Vec<_>>(),
    );
    assert_eq!(code, 2, "{text}");
}

#[test]
fn a_jar_test_sends_its_dose_on_and_the_printed_command_runs() {
    // A stock of FeCl3·6H2O (the hexahydrate) for ferric chloride dosed as FeCl3: 30 mg/L of
    // the hexahydrate is 30 × 162.20/270.29 = 18.003 mg/L as FeCl3 (M: Fe 55.845, Cl 35.45,
    // H 1.008, O 15.999).
    let jar = check(
        "jar-test --stock-concentration 10 --stock-unit g/l --stock-compound FeCl3·6H2O --ml-dosed 3 --jar-volume-ml 1000 --product ferric-chloride --strength 40 --sg 1.415",
        &["jar_dose", "jar_dose_product"],
    );
    let fecl3 = 55.845 + 3.0 * 35.45;
    let hexa = fecl3 + 6.0 * (2.0 * 1.008 + 15.999);
    assert!((value(&jar, "jar_dose") - 30.0).abs() < 1e-9);
    let follow = &jar["follow_ups"][0];
    assert_eq!(follow["calculator"], "coagulation");
    assert_eq!(follow["product"], "ferric-chloride");
    let sent = follow["values"]["jar-dose"].as_f64().unwrap();
    assert!((sent - 30.0 * fecl3 / hexa).abs() < 1e-3, "{sent}");
    // The printed command, completed with the plant's readings, runs the coagulation
    // calculator with that dose.
    let command = follow["command"].as_str().unwrap();
    let mut args: Vec<&str> = command.split_whitespace().skip(1).collect();
    args.extend(
        "--flow 100 --flow-unit m3-per-day --alkalinity 80 --alkalinity-setpoint 30 --ph 7.2 --temperature 15 --temperature-unit celsius --strength 40 --sg 1.415 --pump-capacity 2 --pump-capacity-unit l-per-hour --json"
            .split_whitespace(),
    );
    let (code, json, text) = run(&args);
    assert_eq!(code, 0, "{command}: {text}");
    assert!((value(&json, "dose") - sent).abs() < 1e-3 * sent);
    // A stock of another compound than the product's is refused.
    let (code, json, _) = run(&[
        "calc",
        "jar-test",
        "--stock-concentration",
        "10",
        "--stock-unit",
        "g/l",
        "--stock-compound",
        "Fe2(SO4)3",
        "--ml-dosed",
        "3",
        "--jar-volume-ml",
        "1000",
        "--product",
        "ferric-chloride",
        "--strength",
        "40",
        "--sg",
        "1.415",
        "--json",
    ]);
    assert_eq!(code, 1);
    assert_eq!(json["error"]["reason"], "stock-compound-not-product");
}

#[test]
fn calculators_lists_the_other_spellings_the_mode_choices_and_the_text_inputs() {
    let (code, json, text) = run(&["calculators", "--json"]);
    assert_eq!(code, 0, "{text}");
    let calc = |id: &str| {
        json["calculators"]
            .as_array()
            .unwrap()
            .iter()
            .find(|c| c["id"] == id)
            .unwrap()
            .clone()
    };
    assert_eq!(
        calc("corrosion-inhibitor")["mode_choice"]["name"],
        "residual-basis"
    );
    assert_eq!(calc("chlorine-dioxide")["mode_choice"]["name"], "route");
    assert_eq!(calc("jar-test")["text_inputs"][0]["name"], "stock-compound");
    let input = |c: &Value, name: &str| {
        c["inputs"]
            .as_array()
            .unwrap()
            .iter()
            .find(|i| i["name"] == name)
            .unwrap()
            .clone()
    };
    let main = calc("main-disinfection");
    assert_eq!(input(&main, "tank-volume")["unit_flag"], "volume-unit");
    assert_eq!(
        input(&main, "casing-diameter")["unit_flag"],
        "diameter-unit"
    );
    assert_eq!(
        input(&calc("polymer"), "specific-gravity")["short_flag"],
        "sg"
    );
    assert_eq!(
        input(&calc("jar-test"), "stock-concentration")["unit_flag"],
        "stock-unit"
    );
}

#[test]
fn the_printout_says_the_named_dose_once_and_prints_the_next_command() {
    let (code, _, text) = run(&[
        "calc",
        "fluoridation",
        "--target-fluoride",
        "0.7",
        "--natural-fluoride",
        "0.2",
        "--product",
        "sodium-fluoride",
        "--strength",
        "98",
        "--flow",
        "100",
        "--flow-unit",
        "m3-per-day",
        "--dry-feeder-capacity",
        "5",
        "--dry-feeder-capacity-unit",
        "kg-per-day",
    ]);
    assert_eq!(code, 0, "{text}");
    let named: Vec<&str> = text
        .lines()
        .filter(|l| l.starts_with("fluoride_added"))
        .collect();
    assert_eq!(named.len(), 1, "{text}");
    assert!(
        named[0]
            .split_whitespace()
            .eq(["fluoride_added", "=", "dose"]),
        "{text}"
    );
    // A tank's water goes on to dechlorination at the chlorine it was left at.
    let (code, _, text) = run(&[
        "calc",
        "main-disinfection",
        "--tank-volume",
        "50",
        "--volume-unit",
        "m3",
        "--target-chlorine",
        "10",
        "--product",
        "calcium-hypochlorite",
        "--strength",
        "65",
    ]);
    assert_eq!(code, 0, "{text}");
    assert!(
        text.lines()
            .any(|l| l == "next: molefeed calc dechlorination --residual-in 10.00"),
        "{text}"
    );
}
