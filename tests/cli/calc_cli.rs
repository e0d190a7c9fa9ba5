//! `molefeed calculators` and `molefeed calc ID`: the calculator table on the command line,
//! end to end through the binary, and its parity with the older subcommands.

use serde_json::Value;
use std::process::Command;

fn run(args: &[&str]) -> (i32, Value, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_molefeed"))
        .args(args)
        .output()
        .expect("binary runs");
    let stdout = String::from_utf8_lossy(&out.stdout).to_string();
    let json = serde_json::from_str(stdout.trim()).unwrap_or(Value::Null);
    (out.status.code().unwrap_or(-1), json, stdout)
}

fn words(text: &str) -> Vec<&str> {
    text.split_whitespace().collect()
}

/// The one helper: run `calc`, expect success, and return the JSON.
fn calc(args: &str) -> Value {
    let (code, json, text) = run(&words(args));
    assert_eq!(code, 0, "{args}: {text}");
    json
}

fn result(json: &Value, id: &str) -> Option<f64> {
    json["results"][id]["value"].as_f64()
}

#[test]
fn calculators_lists_every_calculator_the_app_shows_with_inputs_and_results() {
    let (code, json, text) = run(&["calculators", "--json"]);
    assert_eq!(code, 0, "{text}");
    let listed: Vec<&str> = json["calculators"]
        .as_array()
        .unwrap()
        .iter()
        .map(|c| c["id"].as_str().unwrap())
        .collect();
    // Every variant the app's screens offer is a calculator of the list.
    for mode in molefeed::app::seams::CalcMode::all() {
        assert!(
            listed.contains(&mode.calculator),
            "{} missing from {listed:?}",
            mode.calculator
        );
    }
    for id in [
        "ph-adjustment",
        "free-chlorine",
        "chloramine",
        "dechlorination",
        "coagulation",
        "softening",
        "pump-check",
        "feed",
        "ct",
        "dilution",
        "sludge",
    ] {
        assert!(listed.contains(&id), "{id}");
    }
    let feed = &json["calculators"][listed.iter().position(|c| *c == "feed").unwrap()];
    let flow = feed["inputs"]
        .as_array()
        .unwrap()
        .iter()
        .find(|i| i["name"] == "flow")
        .unwrap();
    assert_eq!(flow["units"], serde_json::json!(["m3-per-day", "mgd"]));
    let strength = feed["inputs"]
        .as_array()
        .unwrap()
        .iter()
        .find(|i| i["name"] == "purity")
        .unwrap();
    assert_eq!(strength["basis"], "purity");
    assert!(
        feed["results"]
            .as_array()
            .unwrap()
            .iter()
            .any(|r| r["id"] == "pump_setting" && r["unit"] == "%")
    );
}

const CAUSTIC: &str = "--product sodium-hydroxide --strength 25 --specific-gravity 1.27";

#[test]
fn calc_ph_adjustment_and_neutralize_feed_give_the_same_dose_and_pump_setting() {
    let table = calc(&format!(
        "calc ph-adjustment --flow 1.5 --flow-unit mgd --ph 6.9 --target-ph 7.8 --alkalinity 40 \
         --temperature 15 --temperature-unit celsius {CAUSTIC} --pump-capacity 2 --pump-capacity-unit gal-per-hour --json"
    ));
    let (code, old, text) = run(&words(
        "neutralize-feed --flow 1.5 --flow-unit mgd --ph 6.9 --target-ph 7.8 --alkalinity 40 \
         --temperature 15 --product sodium-hydroxide --strength 25 --strength-basis weight --sg 1.27 \
         --pump-capacity 2 --pump-unit gph --json",
    ));
    assert_eq!(code, 0, "{text}");
    let dose = result(&table, "dose").unwrap();
    let old_dose = result(&old, "dose").unwrap();
    assert!(
        (dose - old_dose).abs() <= 1e-9 * old_dose,
        "{dose} vs {old_dose}"
    );
    let pump = result(&table, "pump_setting").unwrap();
    let old_pump = result(&old, "pump_setting").unwrap();
    assert!(
        (pump - old_pump).abs() <= 1e-9 * old_pump,
        "{pump} vs {old_pump}"
    );
    assert_eq!(table["results"]["dose"]["basis"], "NaOH");
    assert_eq!(table["results"]["dose"]["unit"], "mg/L");
}

/// pH adjustment's `ph` and `target-ph` were `ph-raw` and `ph-target` before 2026-12-04, and
/// free chlorine's `target-residual` was `residual-target`: a script written then still runs,
/// under `calc` and under its older subcommand, with the same answer; the old and the new name
/// together are one entry given twice.
#[test]
fn renamed_inputs_take_their_former_names() {
    // Chlorine demand 1.4 plus the residual 1.0: 2.4 mg/L as Cl2 either way.
    let chlorine = "calc free-chlorine --chlorine-demand 1.4 --flow 2.5 --flow-unit mgd \
         --product sodium-hypochlorite --strength 12.5 --specific-gravity 1.16 --json";
    for flag in ["target-residual", "residual-target"] {
        let json = calc(&format!("{chlorine} --{flag} 1.0"));
        assert_eq!(result(&json, "dose"), Some(2.4), "--{flag}: {json}");
    }
    let water = "--flow 1.5 --flow-unit mgd --alkalinity 40 --temperature 15";
    let now = calc(&format!(
        "calc ph-adjustment {water} --temperature-unit celsius --ph 6.9 --target-ph 7.8 {CAUSTIC} --json"
    ));
    let before = calc(&format!(
        "calc ph-adjustment {water} --temperature-unit celsius --ph-raw 6.9 --ph-target 7.8 {CAUSTIC} --json"
    ));
    let (code, alias, text) = run(&words(&format!(
        "neutralize-feed {water} --ph-raw 6.9 --ph-target 7.8 --product sodium-hydroxide \
         --strength 25 --strength-basis weight --sg 1.27 --json"
    )));
    assert_eq!(code, 0, "{text}");
    let dose = result(&now, "dose").unwrap();
    // By hand (pK1 of carbonic acid about 6.42 at 15 °C, from memory; no activities): 0.80
    // meq/L of bicarbonate holds 0.265 mmol/L of CO2 at pH 6.9 and 0.042 per meq at pH 7.8,
    // so x = (0.265 − 0.042·0.80)/1.042 = 0.22 mmol/L of NaOH, 8.9 mg/L.
    assert!(dose > 8.0 && dose < 9.6, "{dose}");
    for other in [&before, &alias] {
        assert_eq!(result(other, "dose"), Some(dose), "{other}");
    }
    let (code, _, text) = run(&words(&format!(
        "calc ph-adjustment {water} --temperature-unit celsius --ph 6.9 --ph-raw 6.9 --target-ph 7.8 {CAUSTIC} --json"
    )));
    assert_ne!(code, 0, "{text}");
    assert!(
        text.contains("--ph and --ph-raw give the same entry"),
        "{text}"
    );
}

#[test]
fn a_gas_feed_prints_no_product_volume_and_no_pump_setting() {
    let json = calc(
        "calc feed --product chlorine-gas --flow 9000 --flow-unit m3-per-day --dose 2.0 \
         --purity 100 --gas-feeder-capacity 100 --gas-feeder-capacity-unit kg-per-day --json",
    );
    assert!(
        json["results"].get("product_volume_rate").is_none(),
        "{json}"
    );
    assert!(json["results"].get("pump_setting").is_none(), "{json}");
    // 9000 m³/d × 2.0 mg/L = 18.0 kg/d on a 100 kg/d feeder.
    assert!((result(&json, "feeder_setting").unwrap() - 18.0).abs() < 1e-9);
    assert_eq!(json["setting"]["device"], "gas-feeder");
    assert_eq!(json["product"]["name"], "Chlorine gas");
    assert!(json["inputs"]["flow"]["value"].as_f64().unwrap() == 9000.0);
}

#[test]
fn a_quantity_with_two_units_and_no_unit_given_is_refused() {
    let (code, _, _) = run(&words(
        "calc feed --product chlorine-gas --flow 2 --dose 2 --purity 100 --gas-feeder-capacity 100 --json",
    ));
    assert_eq!(code, 2, "flow without its unit must not be guessed");
    // `--units us` settles every quantity at once: 2 MGD, 100 lb/d.
    let json = calc(
        "calc feed --product chlorine-gas --flow 2 --dose 2.0 --purity 100 --gas-feeder-capacity 100 --units us --json",
    );
    // 2 MGD × 2.0 mg/L × 8.345 lb/(MG·mg/L) = 33.38 lb/d of a 100 lb/d feeder.
    let setting = result(&json, "feeder_setting").unwrap();
    assert!(
        (setting - 2.0 * 2.0 * 3.785411784 / 0.45359237).abs() < 1e-6,
        "{setting}"
    );
}

#[test]
fn a_misspelt_input_is_an_error_not_ignored() {
    let (code, _, _) = run(&words(
        "calc feed --product chlorine-gas --flow 2 --units si --dose 2 --purity 100 \
         --gas-feeder-capacity 100 --dosse 3",
    ));
    assert_eq!(code, 2);
}

#[test]
fn help_is_generated_from_the_table() {
    let (code, _, text) = run(&["calc", "softening", "--help"]);
    assert_eq!(code, 0, "{text}");
    assert!(text.contains("--lime-purity"), "{text}");
    // Every strength and concentration names its basis in words.
    assert!(text.contains("% purity"), "{text}");
    assert!(
        text.contains("--excess-lime            in mg/L, as CaO"),
        "{text}"
    );
    assert!(text.contains("free_co2 (mg/L as CO2)"), "{text}");
    assert!(text.contains("--flow-unit m3-per-day|mgd"), "{text}");
    assert!(text.contains("(optional)"), "{text}");
    assert!(text.contains("hardness_softened"), "{text}");
}

#[test]
fn an_unknown_calculator_names_the_ones_there_are() {
    let (code, json, _) = run(&["calc", "fluoridaton", "--json"]);
    assert_eq!(code, 1);
    assert_eq!(json["error"]["reason"], "unknown-calculator");
    assert!(
        json["error"]["message"]
            .as_str()
            .unwrap()
            .contains("free-chlorine")
    );
}

/// `calc feed ... --log`: the entry holds what was printed — inputs and results with units, the
/// product's English name — and nothing that was not computed (a gas has no product volume
/// and no pump setting, not 0), read back through the log's own JSON Lines export.
#[test]
fn a_logged_gas_feed_carries_what_was_printed_and_no_invented_zeros() {
    let dir = std::env::temp_dir().join(format!("molefeed-calc-log-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let log = dir.join("plant.doselog");
    let site = concat!(env!("CARGO_MANIFEST_DIR"), "/data/demo-site.json");
    let printed = calc(&format!(
        "calc feed --product chlorine-gas --flow 9000 --flow-unit m3-per-day --dose 2.0 \
         --purity 100 --gas-feeder-capacity 100 --gas-feeder-capacity-unit kg-per-day \
         --site {site} --log {} --initials JM --tap clearwell --json",
        log.display()
    ));
    assert!(printed["logged"].is_string(), "{printed}");
    let (code, _, text) = run(&[
        "log",
        "export",
        "--file",
        log.to_str().unwrap(),
        "--format",
        "jsonl",
    ]);
    assert_eq!(code, 0, "{text}");
    let entry: Value = serde_json::from_str(text.lines().next().unwrap()).unwrap();
    let dose = &entry["dose"];
    assert_eq!(dose["calculator"], "feed");
    assert_eq!(dose["product"]["name"], "Chlorine gas");
    assert_eq!(dose["chemical"], "Cl2");
    let results = dose["results"].as_array().unwrap();
    let ids: Vec<&str> = results.iter().map(|r| r["id"].as_str().unwrap()).collect();
    assert!(!ids.contains(&"product_volume_rate"), "{ids:?}");
    assert!(!ids.contains(&"pump_setting"), "{ids:?}");
    let result = |id: &str| results.iter().find(|r| r["id"] == id).unwrap();
    // 9000 m³/d × 2.0 g/m³ = 18.0 kg/d of Cl2, on a 100 kg/d feeder: 18.0 %.
    assert_eq!(result("feed_mass_rate")["unit"], "kg/d");
    assert!((result("feed_mass_rate")["value"].as_f64().unwrap() - 18.0).abs() < 1e-9);
    // Shown as printed, with the range of a flow meter's default ±2 %: 17.64–18.36 kg/d.
    assert_eq!(result("feed_mass_rate")["shown"], "18.0 (17.6–18.4)");
    let range = result("feed_mass_rate")["range"]
        .as_array()
        .unwrap()
        .clone();
    assert!(
        (range[0].as_f64().unwrap() - 17.64).abs() < 1e-9,
        "{range:?}"
    );
    assert!(
        (range[1].as_f64().unwrap() - 18.36).abs() < 1e-9,
        "{range:?}"
    );
    assert_eq!(printed["results"]["feed_mass_rate"]["low"], range[0]);
    assert_eq!(dose["setting"]["device"], "gas-feeder");
    let flow = dose["inputs"]
        .as_array()
        .unwrap()
        .iter()
        .find(|i| i["name"] == "flow")
        .unwrap();
    assert_eq!(
        (flow["text"].as_str(), flow["unit"].as_str()),
        (Some("9000"), Some("m³/d"))
    );
    // The cautions are recorded in the words printed: the advisory's English sentence
    // (`advisory-note` in i18n/en/molefeed.ftl), its severity beside it.
    let advisory = dose["cautions"]
        .as_array()
        .unwrap()
        .iter()
        .find(|c| c["code"] == "advisory-operator-decides")
        .unwrap();
    assert_eq!(
        advisory["text"],
        "Advisory only: a licensed operator decides the feed, under the plant's permit and local codes."
    );
    let _ = std::fs::remove_dir_all(&dir);
}

/// `molefeed feed --help` used to answer "missing --dose": an older subcommand's help names
/// the calculator it stands for and lists that calculator's inputs from the table.
#[test]
fn an_older_subcommand_answers_help_with_its_calculator() {
    let (code, _, text) = run(&["neutralize-feed", "--help"]);
    assert_eq!(code, 0, "{text}");
    assert!(text.contains("molefeed calc ph-adjustment"), "{text}");
    assert!(text.contains("--target-ph (was --ph-target)"), "{text}");
    // And how its older flags translate.
    assert!(text.contains("--target-ph"), "{text}");
    assert!(text.contains("--calcium-as-caco3"), "{text}");
    let (code, json, _) = run(&["stability", "--help", "--json"]);
    assert_eq!(code, 0);
    assert!(json["help"].as_str().unwrap().contains("stability"));
}

/// The pump cross-check prints the actual dose and the deviation first, each with the range the
/// readings allow, at three figures at least: 140 mL in 60 s of 12.5 % trade hypochlorite
/// (125 mg/mL available chlorine) into 9,100 m³/d is 2.77 mg/L, −7.69 % from 3.0. Rounded to
/// one figure ("60" s taken as one figure), the card once said "3 mg/L" and hid the under-feed.
#[test]
fn a_cross_check_prints_its_deviation_first_with_ranges() {
    let check = |flow: &str| {
        let (code, _, out) = run(&[
            "calc",
            "pump-check",
            "--flow",
            flow,
            "--flow-unit",
            "m3-per-day",
            "--dose",
            "3.0",
            "--drawdown-volume",
            "140",
            "--drawdown-time",
            "60",
            "--pump-setting",
            "24.3",
            "--product",
            "sodium-hypochlorite",
            "--strength",
            "12.5",
            "--specific-gravity",
            "1.16",
        ]);
        assert_eq!(code, 0, "{out}");
        out
    };
    let out = check("9100");
    // The inputs as read come first, each in its unit, then the results.
    assert!(
        out.lines().nth(1).is_some_and(|l| l.starts_with(
            "read as: flow 9100 m³/d, dose 3.0 mg/L as Cl2, drawdown-volume 140 mL as product"
        )),
        "{out}"
    );
    let lines: Vec<&str> = out.lines().skip(2).take(2).collect();
    assert!(
        lines[0].starts_with("actual_dose") && lines[0].contains(" 2.77 ("),
        "{out}"
    );
    assert!(
        lines[1].starts_with("deviation") && lines[1].contains(" -7.69 ("),
        "{out}"
    );
    // A typed "± 0" makes the flow exact: only the column and the stopwatch are left.
    // Dose range by hand: 2.7692 × (1 − 2/140 − (1 − 60/60.5)) = 2.7069 and
    // 2.7692 × (1 + 2/140 + (60/59.5 − 1)) = 2.8320.
    let out = check("9100 ± 0");
    assert!(out.contains("2.77 (2.71–2.83) mg/L"), "{out}");
}

enum Guarded {
    Refused(&'static str),
    Caution(&'static str),
}

/// The table's plausibility guards reach the command line as they are: a refusal (exit 1 with
/// the reason in the JSON) or a named caution on a printed result.
#[test]
fn the_tables_guards_refuse_or_caution_on_the_command_line() {
    use Guarded::*;
    let site = concat!(env!("CARGO_MANIFEST_DIR"), "/data/demo-site.json");
    let hypo = "calc feed --product sodium-hypochlorite --units si --dose 2 --strength 12.5 \
                --specific-gravity 1.165 --json";
    let cases = [
        (
            "calc feed --product sodium-hydroxide --units si --flow 9000 --dose 10 --strength 50 \
             --specific-gravity 1.0 --pump-capacity 30 --json"
                .to_string(),
            Refused("sg-does-not-match-strength"),
        ),
        (
            "calc softening --product hydrated-lime --units si --flow 4000 --total-hardness 250 \
             --calcium-hardness 180 --alkalinity 200 --ph 7.4 --temperature 12 --excess-lime 35 \
             --lime-purity 0.9 --soda-ash-purity 98 --json"
                .to_string(),
            Refused("percent-looks-like-fraction"),
        ),
        // A certificate's 48.5 % (as dry alum) typed on alum's Al2O3 basis: pure alum carries
        // 17.2 % Al2O3.
        (
            "calc feed --product alum-liquid --units si --flow 9000 --dose 30 --strength 48.5 \
             --specific-gravity 1.33 --json"
                .to_string(),
            Refused("strength-above-pure-al2o3"),
        ),
        (
            format!("{hypo} --flow 9000 --pump-capacity 15 --site {site} --pump alum-hose-pump"),
            Caution("pump-not-for-product"),
        ),
        // 60 MGD at a plant whose meters read to about 6 MGD.
        (
            format!("{hypo} --flow 227125 --pump-capacity 1000 --site {site}"),
            Caution("flow-above-meter-range"),
        ),
        (
            format!("{hypo} --flow 9000 --pump-capacity 1"),
            Caution("pump-too-small"),
        ),
    ];
    for (args, expect) in cases {
        let (code, json, text) = run(&words(&args));
        match expect {
            Refused(reason) => {
                assert_eq!(code, 1, "{args}: {text}");
                assert_eq!(json["error"]["reason"], reason, "{args}: {text}");
            }
            Caution(key) => {
                assert_eq!(code, 0, "{args}: {text}");
                let keys: Vec<&str> = json["cautions"]
                    .as_array()
                    .unwrap()
                    .iter()
                    .filter_map(|c| c["key"].as_str())
                    .collect();
                assert!(keys.contains(&key), "{args}: {keys:?}");
                // A caution about the pump's size comes without a setting to set.
                if key == "pump-too-small" {
                    assert!(json["results"].get("pump_setting").is_none(), "{text}");
                }
            }
        }
    }
}

#[test]
fn two_targets_takes_a_list_of_chemicals_and_gives_both_doses() {
    let json = calc(
        "calc two-targets --units si --chemicals lime,carbon-dioxide --ph 7.0 --temperature 12 --alkalinity 20 --calcium-hardness 15 --target-ph 8.2 --target-calcium 55 --json",
    );
    // By hand: only lime adds calcium; 40 mg/L as CaCO3 is 40 × 74.093 / 100.087 mg/L Ca(OH)2.
    let lime = result(&json, "first_dose").unwrap();
    assert!((lime - 29.61).abs() < 0.05, "{lime}");
    assert!(result(&json, "second_dose").unwrap() > 0.0);
    assert!((result(&json, "ph_after").unwrap() - 8.2).abs() < 0.01);
    assert_eq!(json["results"]["first_dose"]["basis"], "Ca(OH)2");
    for (args, reason) in [
        (
            "--chemicals lime --target-alkalinity 40",
            "two-chemicals-needed",
        ),
        (
            "--chemicals lime,lime --target-alkalinity 40",
            "same-chemical-twice",
        ),
        (
            "--chemicals lime,carbon-dioxide --target-alkalinity 40 --target-dic 1",
            "one-second-target-needed",
        ),
        (
            "--chemicals lime,carbon-dioxide --target-calcium 5",
            "target-out-of-reach",
        ),
    ] {
        let line = format!(
            "calc two-targets --units si {args} --ph 7.0 --temperature 12 --alkalinity 20 --calcium-hardness 15 --target-ph 8.2 --json"
        );
        let (code, json, text) = run(&words(&line));
        assert_ne!(code, 0, "{line}: {text}");
        assert_eq!(json["error"]["reason"], reason, "{line}: {text}");
    }
}

/// A number typed without its unit is read in the request's unit system (`--units`, the
/// site's, or one another unit flag implies), and the printout says so on its "read as" line,
/// before any result that follows from it. A system only implied by the flow's unit does not
/// reach a pump's nameplate or a thermometer: `--flow-unit mgd` with a pump capacity or a
/// temperature and no unit of its own is refused. By hand: 2.4 MGD × 2.5 mg/L × 8.3454 =
/// 50.1 lb/d of Cl2, 182 L/d of 12.5 % trade product = 7.57 L/h, 25 % of 8 gal/h (30.28 L/h).
#[test]
fn the_printout_says_how_each_input_was_read() {
    let feed = |more: &[&str]| {
        let mut args = vec![
            "calc",
            "feed",
            "--product",
            "sodium-hypochlorite",
            "--flow",
            "2.4",
            "--flow-unit",
            "mgd",
            "--dose",
            "2.5",
            "--strength",
            "12.5",
            "--specific-gravity",
            "1.165",
            "--pump-capacity",
            "8",
        ];
        args.extend_from_slice(more);
        run(&args)
    };
    let (code, json, out) = feed(&["--json"]);
    assert_eq!(code, 2, "{out}");
    assert!(
        json["error"]["message"]
            .as_str()
            .is_some_and(|m| m.contains("--pump-capacity needs its unit: --pump-unit")),
        "{out}"
    );
    let (code, _, out) = feed(&["--pump-unit", "gal-per-hour"]);
    assert_eq!(code, 0, "{out}");
    let read = out.lines().nth(1).unwrap_or_default();
    assert!(
        read.starts_with("read as: flow 2.4 MGD, dose 2.5 mg/L as Cl2"),
        "{out}"
    );
    assert!(read.ends_with("pump-capacity 8 gal/h"), "{out}");
    assert!(out.contains("pump_setting                 25.0"), "{out}");
    let ct = |more: &[&str]| {
        let mut args = vec![
            "calc",
            "ct",
            "--residual",
            "1.1",
            "--ph",
            "7.6",
            "--temperature",
            "38",
            "--t10",
            "38",
        ];
        args.extend_from_slice(more);
        run(&args)
    };
    let (code, _, out) = ct(&["--units", "us"]);
    assert_eq!(code, 0, "{out}");
    assert!(
        out.lines()
            .next()
            .is_some_and(|l| l
                == "read as: residual 1.1 mg/L as Cl2, ph 7.60, temperature 38 °F, t10 38 min"),
        "{out}"
    );
    let (code, json, out) = ct(&["--flow", "2", "--flow-unit", "mgd", "--json"]);
    assert_eq!(code, 2, "{out}");
    assert!(
        json["error"]["message"]
            .as_str()
            .is_some_and(|m| m.contains("--temperature needs its unit")),
        "{out}"
    );
    // The older `ct` command read its temperature in °C; beside `--units us` that is a guess
    // either way, so it is refused, and answered once the unit is named.
    let older = |more: &[&str]| {
        let mut args = vec![
            "ct",
            "--residual",
            "1.1",
            "--ph",
            "7.6",
            "--temperature",
            "15",
            "--contact-minutes",
            "38",
        ];
        args.extend_from_slice(more);
        run(&args)
    };
    let (code, json, out) = older(&["--units", "us", "--json"]);
    assert_eq!(code, 2, "{out}");
    assert!(
        json["error"]["message"].as_str().is_some_and(|m| m
            .contains("reads --temperature in celsius, but --units is given too")
            && m.contains("--temperature-unit")),
        "{out}"
    );
    let (code, _, out) = older(&["--units", "us", "--temperature-unit", "celsius"]);
    assert_eq!(code, 0, "{out}");
    assert!(
        out.lines()
            .next()
            .is_some_and(|l| l.contains("temperature 15 °C")),
        "{out}"
    );
    let (code, _, out) = older(&[]);
    assert_eq!(code, 0, "{out}");
    assert!(
        out.lines()
            .next()
            .is_some_and(|l| l.contains("temperature 15 °C")),
        "{out}"
    );
}

/// A calculator's help names the basis each product's strength is read on, from the table.
#[test]
fn the_help_names_each_products_strength_basis() {
    let (code, _, out) = run(&["calc", "feed", "--help"]);
    assert_eq!(code, 0, "{out}");
    for product in [
        "sodium-hypochlorite (trade)",
        "alum-liquid (as-al2o3)",
        "sodium-hydroxide (weight)",
    ] {
        assert!(out.contains(product), "{product}: {out}");
    }
}

/// A thermometer's unit names no unit system: `--temperature-unit celsius` beside
/// `--flow-unit mgd` leaves the printout in the flow's (US) units, where it once turned it to
/// SI. Its strength reads on the product's basis, as the help names it.
#[test]
fn a_temperature_unit_does_not_choose_the_units_of_the_rest() {
    let (code, _, out) = run(&words(
        "calc coagulation --product alum-liquid --flow 2 --flow-unit mgd --jar-dose 30 \
         --alkalinity 80 --alkalinity-setpoint 30 --ph 7.4 --temperature 15 \
         --temperature-unit celsius --strength 8.3 --sg 1.33",
    ));
    assert_eq!(code, 0, "{out}");
    assert!(out.contains("strength 8.3 % as Al2O3"), "{out}");
    assert!(
        out.lines()
            .any(|l| l.starts_with("feed_mass_rate") && l.contains("lb/d")),
        "{out}"
    );
}
