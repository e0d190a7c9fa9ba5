//! The older dosing subcommands end to end through the binary, with `--json` and through
//! `batch`. Each is a thin alias of `molefeed calc` (its JSON is the calculator's: `results`
//! keyed by stable ids, in SI), so these cases hold the older flags to hand-worked figures;
//! `parity_cli` holds every alias to `calc` itself.

use serde_json::Value;
use std::io::Write;
use std::process::{Command, Stdio};

fn run(args: &str) -> (i32, Value, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_molefeed"))
        .args(args.split_whitespace())
        .output()
        .expect("binary runs");
    let stdout = String::from_utf8_lossy(&out.stdout).to_string();
    let json = serde_json::from_str(stdout.trim()).unwrap_or(Value::Null);
    (out.status.code().unwrap_or(-1), json, stdout)
}

/// The one helper: run, expect success, and compare a result (SI) within a relative tolerance.
fn check(args: &str, id: &str, expected: f64, rel: f64) {
    let (code, json, text) = run(args);
    assert_eq!(code, 0, "{args}: {text}");
    let v = json["results"][id]["value"]
        .as_f64()
        .unwrap_or_else(|| panic!("{args}: no result {id}: {text}"));
    assert!(
        (v - expected).abs() <= rel * expected.abs(),
        "{args}: {id} = {v}, expected {expected}"
    );
}

/// Runs `args`, expects a refusal with exit `code` whose message contains `words`.
fn refused(args: &str, code: i32, words: &str) {
    let (got, json, text) = run(args);
    assert_eq!(got, code, "{args}: {text}");
    let message = json["error"]["message"].as_str().unwrap_or_default();
    assert!(message.contains(words), "{args}: {message}");
}

const HYPO: &str = "--product sodium-hypochlorite --strength 12.5 --strength-basis trade --sg 1.16";
const PUMP: &str = "--pump-capacity 10 --pump-unit gph";
/// US gallon in litres (exact by definition).
const L_PER_GAL: f64 = 3.785411784;

#[test]
fn feed_keys() {
    let a = format!("feed --flow 2.5 --flow-unit mgd --dose 3.0 {HYPO} {PUMP} --json");
    // Pounds formula 2.5 × 3.0 × 8.34 = 62.55 lb/d (operator math), 0.1 % for the rounded 8.34;
    // in kg/d that is 62.55 × 0.45359237.
    check(&a, "feed_mass_rate", 62.55 * 0.45359237, 0.001);
    check(&a, "feed_mass_rate", 2.5 * 3.0 * L_PER_GAL, 1e-9);
    // 125 g/L trade: 60 gal/d of product, per hour.
    check(&a, "product_volume_rate", 60.0 * L_PER_GAL / 24.0, 1e-9);
    check(&a, "pump_setting", 25.0, 1e-9);
    let (_, json, _) = run(&a);
    assert!(json["traces"].as_array().unwrap().len() >= 4);
    let advisory = json["cautions"]
        .as_array()
        .unwrap()
        .iter()
        .find(|c| c["key"] == "advisory-operator-decides")
        .expect("the advisory");
    // JSON keeps the code and adds the sentence of i18n/en/molefeed.ftl.
    assert!(
        advisory["text"]
            .as_str()
            .unwrap()
            .starts_with("Advisory only")
    );
    // Without a pump the table has no setting to give (the pump's scale is `only_for` the
    // setting): the feed is computed as above and the setting is absent, never zero.
    let no_pump = format!("feed --flow 2.5 --flow-unit mgd --dose 3.0 {HYPO} --json");
    check(&no_pump, "feed_mass_rate", 2.5 * 3.0 * L_PER_GAL, 1e-9);
    let (_, json, _) = run(&no_pump);
    assert!(json["results"]["pump_setting"].is_null(), "{json}");
    // SI flows.
    check(
        &format!("feed --flow 8000 --flow-unit m3d --dose 2.0 {HYPO} {PUMP} --json"),
        "feed_mass_rate",
        16.0,
        1e-12,
    );
    // A flow unit the table does not take is refused, not converted.
    refused(
        &format!("feed --flow 100 --flow-unit lps --dose 1.0 {HYPO} {PUMP} --json"),
        2,
        "m3-per-day",
    );
}

#[test]
fn pump_check_keys() {
    let a = format!(
        "pump-check --drawdown-ml 250 --seconds 60 --flow 2.5 --flow-unit mgd {HYPO} --target-dose 3.0 --current-setting 30 --json"
    );
    // 250 mL/min = 360 L/d × 125 g/L = 45 kg/d over 9 463 529 L/d = 4.755 mg/L.
    let actual = 360.0 * 125.0 * 1000.0 / (2.5e6 * L_PER_GAL);
    check(&a, "actual_dose", actual, 1e-9);
    check(&a, "deviation", (actual - 3.0) / 3.0 * 100.0, 1e-9);
    let (_, json, _) = run(&a);
    assert!(
        json["cautions"]
            .as_array()
            .unwrap()
            .iter()
            .any(|c| c["key"] == "pump-check-inspect"),
        "58 % off is a pump to inspect: {json}"
    );
    refused(&format!("{a} --catch-g 12"), 2, "--drawdown-ml");
}

#[test]
fn dechlor_chlorine_ct_soften_keys() {
    let bisulfite = "dechlor --residual 2.0 --agent NaHSO3 --flow 1.2 --flow-unit mgd --product sodium-bisulfite --strength 38 --strength-basis weight --sg 1.36 --pump-capacity 5 --pump-unit gph --json";
    // NaHSO3 + HOCl: 104.06 / 70.90 = 1.468 mg per mg Cl2 (balanced reaction), × 2.0 mg/L.
    check(bisulfite, "dose", 2.94, 0.003);
    let chlorine = format!(
        "chlorine --demand 1.4 --residual 1.0 --ammonia-n 0.3 --flow 2.5 --flow-unit mgd {HYPO} {PUMP} --json"
    );
    check(&chlorine, "breakpoint_dose", 0.3 * 7.6, 0.01);
    check(&chlorine, "dose", 2.4 + 0.3 * 7.6, 0.01);
    check(
        &format!(
            "chlorine --demand 1.4 --residual 1.0 --flow 2.5 --flow-unit mgd {HYPO} {PUMP} --json"
        ),
        "dose",
        2.4,
        1e-12,
    );
    // EPA Table B-1: 92 at 15 °C, pH 7.5, 1.2 mg/L; the regression is conservative (100.6).
    let ct = "ct --residual 1.2 --ph 7.5 --temperature 15 --contact-minutes 80 --json";
    check(ct, "ct", 96.0, 1e-12);
    check(ct, "ct_required_3log", 92.0, 0.10);
    check(ct, "giardia_log_inactivation", 3.0 * 96.0 / 100.6, 0.002);
    // 250 000 gal at 2 MGD is 180 min; × 0.5 baffling = 90 min.
    check(
        "ct --residual 1.0 --ph 7 --temperature 10 --volume 250000 --volume-unit gal --baffling 0.5 --flow 2 --flow-unit mgd --json",
        "t10",
        90.0,
        1e-9,
    );
    // Non-carbonate hardness 250 − 200 = 50 mg/L as CaCO3 × 105.99/100.09 = 52.95 mg/L Na2CO3.
    let soften = "soften --flow 5000 --flow-unit m3-per-day --product hydrated-lime --total-hardness 250 --calcium-hardness 200 --alkalinity 200 --ph 7.6 --temperature 15 --excess-lime 35 --lime-purity 93 --soda-ash-purity 98 --json";
    check(soften, "soda_ash_dose", 53.0, 0.002);
    check(soften, "non_carbonate_hardness", 50.0, 1e-12);
    // The older softening flags cannot be translated without chemistry: each names what to give.
    refused(
        "soften --alkalinity 200 --excess-lime 35 --nch 50 --json",
        2,
        "--total-hardness",
    );
    for magnesium in ["--magnesium", "--magnesium-as-mg", "--magnesium-as-caco3"] {
        refused(
            &format!("soften --alkalinity 200 {magnesium} 10 --json"),
            2,
            "--calcium-hardness",
        );
    }
}

#[test]
fn purity_and_strength_are_percent_and_an_unusable_purity_flag_is_refused() {
    // The older coagulation read its alkali purity in percent; the table gives the alkali
    // pure, so the flag is refused rather than dropped.
    refused(
        "coagulation --coagulant alum --dose 30 --alkalinity 60 --ph 7.2 --temperature 15 --alkali-purity 0.9 --json",
        2,
        "pure compound",
    );
    // A strength typed on another basis than the table's is refused, not converted.
    refused(
        "feed --flow 2.5 --flow-unit mgd --dose 3.0 --product sodium-hypochlorite --strength 10.7 --strength-basis weight --sg 1.16 --pump-capacity 10 --pump-unit gph --json",
        2,
        "trade",
    );
}

#[test]
fn site_profile_supplies_strength_and_pump() {
    let site = concat!(env!("CARGO_MANIFEST_DIR"), "/data/demo-site.json");
    // hypo-bulk: 12.5 trade % SG 1.165, pump hypo-pump-a 10 gph.
    let a = format!(
        "feed --site {site} --product hypo-bulk --flow 2.5 --flow-unit mgd --dose 3.0 --json"
    );
    check(&a, "pump_setting", 25.0, 1e-9);
    // The demo certificate's maximum use level (100 mg/L of product) is not reached at 3 mg/L
    // (28 mg/L of product); a plant entering 10 mg/L is warned.
    let has_mul = |args: &str| {
        let (_, json, text) = run(args);
        json["cautions"]
            .as_array()
            .unwrap_or_else(|| panic!("{args}: {text}"))
            .iter()
            .any(|c| c["key"] == "dose-above-max-use-level")
    };
    assert!(!has_mul(&a));
    assert!(has_mul(&format!("{a} --max-use-level 10")));
    check(
        &format!(
            "ct --site {site} --basin clearwell --flow 2 --flow-unit mgd --residual 1 --ph 7 --temperature 10 --json"
        ),
        "t10",
        90.0,
        1e-9,
    );
}

#[test]
fn chlorine_and_dechlor_continue_to_the_product_feed() {
    // 2.4 mg/L at 2.5 MGD of 12.5 trade % hypochlorite: 2.4/3.0 of the 60 gal/d worked example.
    check(
        &format!(
            "chlorine --demand 1.4 --residual 1.0 --flow 2.5 --flow-unit mgd {HYPO} {PUMP} --json"
        ),
        "product_volume_rate",
        48.0 * L_PER_GAL / 24.0,
        1e-9,
    );
    let base = "dechlor --residual 2.0 --agent NaHSO3 --flow 1.2 --flow-unit mgd --product sodium-bisulfite --strength 38 --strength-basis weight --sg 1.36 --pump-capacity 5 --pump-unit gph --json";
    // The field-practice dose is not the table's: asked for, it is refused with the reason.
    refused(&format!("{base} --field-dose"), 2, "balanced reaction");
    // A product dosed as something else than the agent is refused.
    refused(
        &format!(
            "dechlor --residual 2 --agent NaHSO3 --flow 1 --flow-unit mgd {HYPO} {PUMP} --json"
        ),
        2,
        "dosed as Cl2",
    );
}

#[test]
fn errors_and_typos_fail_cleanly() {
    let (code, json, _) = run(&format!(
        "feed --flow 0 --flow-unit mgd --dose 3 {HYPO} {PUMP} --json"
    ));
    assert_eq!(code, 1, "{json}");
    assert_eq!(json["error"]["kind"], "out-of-range");
    // The same reason code the app translates, so a script can tell refusals apart.
    assert_eq!(json["error"]["reason"], "not-positive");
    let (code, json, _) = run(&format!(
        "feed --flow 2.5 --flow-unit mgd --dose 3 {HYPO} {PUMP} --sg 3.1 --json"
    ));
    assert!(
        json["error"].get("reason").is_none(),
        "a usage error has no reason: {json}"
    );
    assert_eq!(code, 2, "duplicate --sg is a usage error: {json}");
    let (code, json, _) = run(&format!(
        "feed --flow 2.5 --flow-unit mgd --dose 3 --product sodium-hypochlorite --strength 12.5 --strength-basis trade --sg 2.6 {PUMP} --json"
    ));
    assert_eq!(code, 1, "{json}");
    // SG 2.6 is beyond any hypochlorite: refused against the product's density table.
    assert_eq!(
        json["error"]["reason"], "sg-does-not-match-strength",
        "{json}"
    );
    let (code, _, _) = run(&format!(
        "feed --flow 2.5 --flow-unit mgd --dose 3 {HYPO} --pump-capacty 10 --json"
    ));
    assert_eq!(code, 2, "a misspelt flag must not be ignored");
    let (code, json, _) = run(&format!(
        "dechlor --residual 2 --agent salt --product salt --flow 1 --flow-unit mgd {PUMP} --json"
    ));
    assert_eq!(code, 1);
    assert_eq!(json["error"]["kind"], "unknown-chemical");
}

#[test]
fn batch_runs_the_same_commands() {
    let mut child = Command::new(env!("CARGO_BIN_EXE_molefeed"))
        .arg("batch")
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .spawn()
        .unwrap();
    let lines = concat!(
        r#"{"command":"dechlor","args":{"residual":2.0,"agent":"Na2SO3","product":"sodium-sulfite","strength":100,"flow":1.2,"flow_unit":"mgd","feeder_capacity":50,"feeder_unit":"kg/d"}}"#,
        "\n",
        r#"{"command":"feed","args":{"flow":2.5,"flow_unit":"mgd","dose":3.0,"product":"sodium-hypochlorite","strength":12.5,"strength_basis":"trade","sg":1.16,"pump_capacity":10,"pump_unit":"gph"}}"#,
        "\n"
    );
    child
        .stdin
        .take()
        .unwrap()
        .write_all(lines.as_bytes())
        .unwrap();
    let out = child.wait_with_output().unwrap();
    let text = String::from_utf8_lossy(&out.stdout);
    let results: Vec<Value> = text
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    assert_eq!(results.len(), 2, "{text}");
    // Na2SO3 + HOCl: 126.04 / 70.90 = 1.778 mg per mg Cl2 (balanced reaction), × 2.0 mg/L.
    let dose = results[0]["results"]["dose"]["value"].as_f64().unwrap();
    assert!((dose / 2.0 - 1.78).abs() < 0.005, "{text}");
    let lph = results[1]["results"]["product_volume_rate"]["value"]
        .as_f64()
        .unwrap();
    assert!((lph - 60.0 * L_PER_GAL / 24.0).abs() < 1e-9, "{text}");
}
