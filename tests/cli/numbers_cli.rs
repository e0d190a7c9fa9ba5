//! Numbers that are not answers never reach the output: an input no measurement can take
//! (`1e-300`, which used to underflow into NaN) is refused where it is parsed, and a result
//! beyond anything a plant produces is refused by the output guard, on the command line and
//! in `batch`, with a non-zero exit and a typed error instead of a printed number.

use crate::support::{run_with_input, text};
use serde_json::Value;
use std::time::Duration;

const LIMIT: Duration = Duration::from_secs(30);
const HYPO: [&str; 8] = [
    "--product",
    "sodium-hypochlorite",
    "--strength",
    "12.5",
    "--strength-basis",
    "trade",
    "--sg",
    "1.16",
];

fn run_json(args: &[&str]) -> (Option<i32>, Value, String) {
    let out = run_with_input(args, b"", LIMIT);
    let stdout = text(&out.stdout);
    let json = serde_json::from_str(stdout.trim())
        .unwrap_or_else(|e| panic!("{args:?}: not JSON ({e}): {stdout}"));
    (out.status.code(), json, stdout)
}

fn with_hypo(args: &[&'static str]) -> Vec<&'static str> {
    let mut all = args.to_vec();
    all.extend(HYPO);
    all.push("--json");
    all
}

#[test]
fn inputs_no_measurement_can_take_are_refused_not_printed_as_nan() {
    let cases = [
        with_hypo(&[
            "feed",
            "--flow",
            "1e-300",
            "--flow-unit",
            "mgd",
            "--dose",
            "3",
        ]),
        with_hypo(&[
            "feed",
            "--flow",
            "2.5",
            "--flow-unit",
            "mgd",
            "--dose",
            "4e-320",
        ]),
        vec![
            "convert",
            "NH3 + Cl2 -> N2 + HCl",
            "--from",
            "Cl2",
            "--amount",
            "1e-300",
            "--unit",
            "kg",
            "--to",
            "NH3",
            "--json",
        ],
        vec![
            "ct",
            "--residual",
            "1e-300",
            "--ph",
            "7",
            "--temperature",
            "10",
            "--contact-minutes",
            "80",
            "--json",
        ],
    ];
    for args in cases {
        let (code, json, stdout) = run_json(&args);
        assert_eq!(code, Some(1), "{args:?}: {stdout}");
        assert_eq!(json["error"]["kind"], "invalid-input", "{args:?}: {stdout}");
        assert!(!stdout.contains("NaN"), "{args:?}: {stdout}");
    }
}

#[test]
fn a_result_beyond_any_plant_is_an_error_not_a_number() {
    // 10^12 kg of chlorine is about 9.4e15 mmol of ammonia: arithmetic, not a dose.
    let args = [
        "convert",
        "NH3 + Cl2 -> N2 + HCl",
        "--from",
        "Cl2",
        "--amount",
        "1e12",
        "--unit",
        "kg",
        "--to",
        "NH3",
        "--to-unit",
        "mmol",
    ];
    let mut json_args = args.to_vec();
    json_args.push("--json");
    let (code, json, stdout) = run_json(&json_args);
    assert_eq!(code, Some(1), "{stdout}");
    assert_eq!(json["error"]["kind"], "result-not-a-number", "{stdout}");
    let human = run_with_input(&args, b"", LIMIT);
    assert_eq!(human.status.code(), Some(1));
    assert!(human.stdout.is_empty(), "{}", text(&human.stdout));
    assert!(text(&human.stderr).contains("no measurement can produce"));
    // The same request in a batch gets the same refusal, and the batch fails.
    let line = serde_json::json!({
        "command": "convert",
        "args": {"positional": [args[1]], "from": "Cl2", "amount": 1e12, "unit": "kg", "to": "NH3", "to_unit": "mmol"},
    });
    let tiny = serde_json::json!({"command": "feed", "args": {"flow": 1e-300, "flow_unit": "mgd", "dose": 3}});
    let out = run_with_input(&["batch"], format!("{line}\n{tiny}\n").as_bytes(), LIMIT);
    assert_eq!(out.status.code(), Some(1));
    let answers: Vec<Value> = text(&out.stdout)
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    assert_eq!(answers.len(), 2);
    assert_eq!(answers[0]["error"]["kind"], "result-not-a-number");
    assert_eq!(answers[1]["error"]["kind"], "invalid-input");
}

#[test]
fn a_pump_setting_of_a_mistyped_capacity_is_refused_not_printed() {
    // A capacity of 1e-12 gph would put 2.5 gph of product at 2.5e14 % of full output: no
    // pump is that small, and the capacity is refused as typed, before any setting.
    let mut args = with_hypo(&["feed", "--flow", "2.5", "--flow-unit", "mgd", "--dose", "3"]);
    args.pop();
    args.extend(["--pump-capacity", "1e-12", "--pump-unit", "gph"]);
    let human = run_with_input(&args, b"", LIMIT);
    assert_eq!(human.status.code(), Some(1), "{}", text(&human.stdout));
    assert!(
        !text(&human.stdout).contains("e14"),
        "{}",
        text(&human.stdout)
    );
    args.push("--json");
    let (code, json, stdout) = run_json(&args);
    assert_eq!(code, Some(1), "{stdout}");
    assert_eq!(json["error"]["reason"], "implausible-magnitude", "{stdout}");
    // The same pump at a real capacity answers: 2.5 gph of 10 gph is 25 %.
    let mut real = args.clone();
    let capacity = real.iter().position(|a| *a == "1e-12").unwrap();
    real[capacity] = "10";
    let (code, json, stdout) = run_json(&real);
    assert_eq!(code, Some(0), "{stdout}");
    assert!(
        (json["results"]["pump_setting"]["value"].as_f64().unwrap() - 25.0).abs() < 1e-9,
        "{stdout}"
    );
}

#[test]
fn the_same_conversion_within_range_still_answers() {
    let (code, json, stdout) = run_json(&[
        "convert",
        "NH3 + Cl2 -> N2 + HCl",
        "--from",
        "Cl2",
        "--amount",
        "10",
        "--unit",
        "kg",
        "--to",
        "NH3",
        "--to-unit",
        "mmol",
        "--json",
    ]);
    assert_eq!(code, Some(0), "{stdout}");
    // 10 kg Cl2 = 141.03 mol; 2 NH3 per 3 Cl2 = 94.02 mol = 94 020 mmol.
    let amount = json["amount"].as_f64().unwrap();
    assert!((amount - 94_020.0).abs() < 10.0, "{amount}");
}

#[test]
fn a_formula_spelled_like_nan_is_text_not_a_failed_number() {
    let out = run_with_input(&["mass", "NaN"], b"", LIMIT);
    assert_eq!(out.status.code(), Some(0), "{}", text(&out.stderr));
    assert!(
        text(&out.stdout).starts_with("NaN: 36.99"),
        "{}",
        text(&out.stdout)
    );
}
