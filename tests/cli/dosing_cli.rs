//! The dosing subcommands end to end through the binary, with `--json` and through `batch`.

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

/// The one helper: run, expect success, and compare a JSON number within a relative tolerance.
fn check(args: &str, key: &str, expected: f64, rel: f64) {
    let (code, json, text) = run(args);
    assert_eq!(code, 0, "{args}: {text}");
    let v = json[key]
        .as_f64()
        .unwrap_or_else(|| panic!("{args}: no number at {key}: {text}"));
    assert!(
        (v - expected).abs() <= rel * expected.abs(),
        "{args}: {key} = {v}, expected {expected}"
    );
}

const HYPO: &str = "--product sodium-hypochlorite --strength 12.5 --strength-basis trade --sg 1.16";

#[test]
fn feed_keys() {
    let a = format!(
        "feed --flow 2.5 --flow-unit mgd --dose 3.0 {HYPO} --pump-capacity 10 --pump-unit gph --json"
    );
    // Pounds formula 2.5 × 3.0 × 8.34 = 62.55 lb/d (operator math), 0.1 % for the rounded 8.34.
    check(&a, "active_lb_per_day", 62.55, 0.001);
    check(&a, "active_kg_per_day", 2.5 * 3.0 * 3.785411784, 1e-9);
    check(
        &a,
        "product_l_per_day",
        2.5 * 3.0 * 3.785411784e6 / 125_000.0,
        1e-9,
    );
    check(&a, "product_gal_per_day", 60.0, 1e-9);
    check(&a, "pump_percent", 25.0, 1e-9);
    let (_, json, _) = run(&a);
    assert!(json["traces"].as_array().unwrap().len() >= 4);
    assert!(
        json["cautions"]
            .as_array()
            .unwrap()
            .iter()
            .any(|c| c["key"] == "advisory-operator-decides")
    );
    // Without a pump the key is present and null.
    let (_, json, _) = run(&format!(
        "feed --flow 2.5 --flow-unit mgd --dose 3.0 {HYPO} --json"
    ));
    assert!(json["pump_percent"].is_null());
    // SI flows.
    check(
        &format!("feed --flow 8000 --flow-unit m3d --dose 2.0 {HYPO} --json"),
        "active_kg_per_day",
        16.0,
        1e-12,
    );
    check(
        &format!("feed --flow 100 --flow-unit lps --dose 1.0 {HYPO} --json"),
        "active_kg_per_day",
        8.64,
        1e-12,
    );
}

#[test]
fn pump_check_keys() {
    let a = format!(
        "pump-check --drawdown-ml 250 --seconds 60 --flow 2.5 --flow-unit mgd {HYPO} --target-dose 3.0 --json"
    );
    // 250 mL/min = 360 L/d × 125 g/L = 45 kg/d over 9 463 529 L/d = 4.755 mg/L.
    let actual = 360.0 * 125.0 * 1000.0 / (2.5e6 * 3.785411784);
    check(&a, "actual_dose_mg_l", actual, 1e-9);
    check(&a, "deviation_percent", (actual - 3.0) / 3.0 * 100.0, 1e-9);
    let (_, json, _) = run(&a);
    assert_eq!(json["verdict"], "check-pump");
}

#[test]
fn dechlor_chlorine_ct_soften_keys() {
    check(
        "dechlor --residual 2.0 --agent NaHSO3 --json",
        "agent_mg_per_mg_cl2",
        1.47,
        0.003,
    );
    check(
        "dechlor --residual 2.0 --agent NaHSO3 --json",
        "agent_mg_l",
        2.94,
        0.003,
    );
    check(
        "chlorine --demand 1.4 --residual 1.0 --ammonia-n 0.3 --json",
        "breakpoint_mg_l",
        0.3 * 7.6,
        0.01,
    );
    check(
        "chlorine --demand 1.4 --residual 1.0 --ammonia-n 0.3 --json",
        "dose_mg_l",
        2.4 + 0.3 * 7.6,
        0.01,
    );
    check(
        "chlorine --demand 1.4 --residual 1.0 --json",
        "dose_mg_l",
        2.4,
        1e-12,
    );
    // EPA Table B-1: 92 at 15 °C, pH 7.5, 1.2 mg/L; the regression is conservative (100.6).
    let ct = "ct --residual 1.2 --ph 7.5 --temperature 15 --contact-minutes 80 --json";
    check(ct, "ct_mg_min_l", 96.0, 1e-12);
    check(ct, "ct_required_3log_mg_min_l", 92.0, 0.10);
    check(ct, "giardia_log_inactivation", 3.0 * 96.0 / 100.6, 0.002);
    check(
        "ct --residual 1.0 --ph 7 --temperature 10 --volume 250000 --volume-unit gal --baffling 0.5 --flow 2 --flow-unit mgd --json",
        "t10_minutes",
        90.0,
        1e-9,
    );
    check(
        "soften --alkalinity 200 --excess-lime 35 --nch 50 --json",
        "soda_ash_mg_l",
        53.0,
        0.002,
    );
}

#[test]
fn site_profile_supplies_strength_and_pump() {
    let site = concat!(env!("CARGO_MANIFEST_DIR"), "/data/demo-site.json");
    // hypo-bulk: 12.5 trade % SG 1.165, pump hypo-pump-a 10 gph.
    let a = format!(
        "feed --site {site} --product hypo-bulk --flow 2.5 --flow-unit mgd --dose 3.0 --json"
    );
    check(&a, "pump_percent", 25.0, 1e-9);
    // The demo certificate's maximum use level (100 mg/L of product) is not reached at 3 mg/L
    // (28 mg/L of product); a plant entering 10 mg/L is warned.
    let has_mul = |args: &str| {
        let (_, json, _) = run(args);
        json["cautions"]
            .as_array()
            .unwrap()
            .iter()
            .any(|c| c["key"] == "dose-above-max-use-level")
    };
    assert!(!has_mul(&a));
    assert!(has_mul(&format!("{a} --max-use-level 10")));
    check(
        &format!(
            "ct --site {site} --basin clearwell --flow 2 --flow-unit mgd --residual 1 --ph 7 --temperature 10 --json"
        ),
        "t10_minutes",
        90.0,
        1e-9,
    );
}

#[test]
fn chlorine_and_dechlor_continue_to_the_product_feed() {
    // 2.4 mg/L at 2.5 MGD of 12.5 trade % hypochlorite: 2.4/3.0 of the 60 gal/d worked example.
    let (code, json, text) = run(&format!(
        "chlorine --demand 1.4 --residual 1.0 --flow 2.5 --flow-unit mgd {HYPO} --json"
    ));
    assert_eq!(code, 0, "{text}");
    let gal = json["feed"]["product_gal_per_day"].as_f64().unwrap();
    assert!((gal - 48.0).abs() < 1e-9, "{gal}");
    // Bisulfite feed for the stoichiometric dose, and the field dose on request.
    let base = "dechlor --residual 2.0 --agent NaHSO3 --flow 1.2 --flow-unit mgd --product sodium-bisulfite --strength 38 --strength-basis weight --sg 1.36 --json";
    let (_, stoich, _) = run(base);
    let (_, field, _) = run(&format!("{base} --field-dose"));
    let a = stoich["feed"]["active_kg_per_day"].as_f64().unwrap();
    let b = field["feed"]["active_kg_per_day"].as_f64().unwrap();
    assert!((b / a - 1.61 / stoich["agent_mg_per_mg_cl2"].as_f64().unwrap()).abs() < 1e-9);
    // A product dosed as something else is refused.
    let (code, _, _) = run(&format!(
        "dechlor --residual 2 --agent NaHSO3 --flow 1 --flow-unit mgd {HYPO} --json"
    ));
    assert_eq!(code, 2);
}

#[test]
fn errors_and_typos_fail_cleanly() {
    let (code, json, _) = run(&format!(
        "feed --flow 0 --flow-unit mgd --dose 3 {HYPO} --json"
    ));
    assert_eq!(code, 1);
    assert_eq!(json["error"]["kind"], "out-of-range");
    // The same reason code the app translates, so a script can tell refusals apart.
    assert_eq!(json["error"]["reason"], "not-positive");
    let (code, json, _) = run(&format!(
        "feed --flow 2.5 --flow-unit mgd --dose 3 {HYPO} --sg 3.1 --json"
    ));
    assert!(
        json["error"].get("reason").is_none(),
        "a usage error has no reason: {json}"
    );
    assert_eq!(code, 2, "duplicate --sg is a usage error: {json}");
    let (code, json, _) = run(
        "feed --flow 2.5 --flow-unit mgd --dose 3 --product sodium-hypochlorite --strength 12.5 --strength-basis trade --sg 2.6 --json",
    );
    assert_eq!(code, 1);
    assert!(
        json["error"]["message"]
            .as_str()
            .unwrap()
            .contains("specific gravity")
    );
    let (code, _, _) = run(&format!(
        "feed --flow 2.5 --flow-unit mgd --dose 3 {HYPO} --pump-capacty 10 --json"
    ));
    assert_eq!(code, 2, "a misspelt flag must not be ignored");
    let (code, json, _) = run("dechlor --residual 2 --agent salt --json");
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
        r#"{"command":"dechlor","args":{"residual":2.0,"agent":"Na2SO3"}}"#,
        "\n",
        r#"{"command":"feed","args":{"flow":2.5,"flow_unit":"mgd","dose":3.0,"product":"sodium-hypochlorite","strength":12.5,"strength_basis":"trade","sg":1.16}}"#,
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
    assert_eq!(results.len(), 2);
    assert!((results[0]["agent_mg_per_mg_cl2"].as_f64().unwrap() - 1.78).abs() < 0.005);
    assert!((results[1]["product_gal_per_day"].as_f64().unwrap() - 60.0).abs() < 1e-9);
}
