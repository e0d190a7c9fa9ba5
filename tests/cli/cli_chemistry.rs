//! The chemistry subcommands as a script sees them: exit codes, JSON keys, error objects.

use serde_json::Value;
use std::io::Write;
use std::process::{Command, Stdio};

fn run(args: &[&str]) -> (i32, Value, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_molefeed"))
        .args(args)
        .output()
        .expect("molefeed runs");
    let stdout = String::from_utf8_lossy(&out.stdout).to_string();
    let json = serde_json::from_str(stdout.trim()).unwrap_or(Value::Null);
    (
        out.status.code().unwrap_or(-1),
        json,
        String::from_utf8_lossy(&out.stderr).to_string(),
    )
}

#[test]
fn mass_reports_molar_mass_and_composition() {
    let (code, json, _) = run(&["mass", "Al2(SO4)3·14H2O", "--json"]);
    assert_eq!(code, 0);
    assert_eq!(json["formula"], "Al2(SO4)3·14H2O");
    // 2(26.9815384) + 3(32.06) + 26(15.999) + 28(1.008), IUPAC 2021 weights.
    let expected = 2.0 * 26.9815384 + 3.0 * 32.06 + 26.0 * 15.999 + 28.0 * 1.008;
    assert!((json["molar_mass_g_mol"].as_f64().unwrap() - expected).abs() < 1e-9);
    let total: f64 = json["composition"]
        .as_object()
        .unwrap()
        .values()
        .map(|v| v.as_f64().unwrap())
        .sum();
    assert!((total - 1.0).abs() < 1e-12);
}

#[test]
fn balance_lists_species_in_the_order_written() {
    let (code, json, _) = run(&["balance", "NH3 + Cl2 -> N2 + HCl", "--json"]);
    assert_eq!(code, 0);
    assert_eq!(json["equation"], "2 NH3 + 3 Cl2 -> N2 + 6 HCl");
    assert_eq!(json["reactants"][1]["formula"], "Cl2");
    assert_eq!(json["reactants"][1]["coefficient"], 3);
    assert_eq!(json["products"][1]["coefficient"], 6);
}

#[test]
fn convert_returns_amount_unit_and_steps() {
    let (code, json, _) = run(&[
        "convert",
        "Ca(OH)2 + CO2 -> CaCO3 + H2O",
        "--from",
        "Ca(OH)2",
        "--amount",
        "12.5",
        "--unit",
        "g",
        "--to",
        "CaCO3",
        "--json",
    ]);
    assert_eq!(code, 0);
    assert_eq!(json["unit"], "g");
    let m_lime = 40.078 + 2.0 * (15.999 + 1.008);
    let m_caco3 = 40.078 + 12.011 + 3.0 * 15.999;
    assert!((json["amount"].as_f64().unwrap() - 12.5 / m_lime * m_caco3).abs() < 1e-9);
    let steps = json["steps"].as_array().unwrap();
    assert_eq!(steps.len(), 3);
    assert_eq!(steps[1]["origin"]["kind"], "mole-ratio");
    assert_eq!(steps[1]["exact"], true);
    assert_eq!(json["display"], "16.9");
}

fn check_error(args: &[&str], kind: &str) {
    let (code, json, stderr) = run(args);
    assert_ne!(code, 0, "{args:?}");
    assert_eq!(json["error"]["kind"], kind, "{args:?}");
    assert!(!json["error"]["message"].as_str().unwrap_or("").is_empty());
    assert_eq!(stderr.lines().count(), 1, "one line on stderr: {stderr}");
}

#[test]
fn bad_input_exits_non_zero_with_a_typed_error() {
    check_error(&["mass", "Ca(OH", "--json"], "unbalanced-parenthesis");
    check_error(&["mass", "Qq", "--json"], "unknown-element");
    check_error(&["balance", "H2 + O2 -> H2O + H2O2", "--json"], "ambiguous");
    check_error(&["balance", "NaCl -> KBr", "--json"], "impossible");
    check_error(
        &[
            "convert",
            "H2 + O2 -> H2O",
            "--from",
            "H2",
            "--amount",
            "x",
            "--unit",
            "g",
            "--to",
            "H2O",
            "--json",
        ],
        "invalid-input",
    );
    check_error(&["mass", "H2O", "--dose", "3", "--json"], "usage");
    check_error(&["frobnicate", "--json"], "usage");
}

#[test]
fn batch_answers_each_line_in_order() {
    let mut child = Command::new(env!("CARGO_BIN_EXE_molefeed"))
        .arg("batch")
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .spawn()
        .expect("molefeed batch runs");
    child
        .stdin
        .take()
        .unwrap()
        .write_all(
            b"{\"command\":\"mass\",\"args\":{\"positional\":[\"NaOCl\"]}}\n\
              {\"command\":\"mass\",\"args\":{\"positional\":[\"Xx\"]}}\n\
              {\"command\":\"balance\",\"args\":{\"positional\":[\"CaO + H2O -> Ca(OH)2\"]}}\n",
        )
        .unwrap();
    let out = child.wait_with_output().unwrap();
    let lines: Vec<Value> = String::from_utf8_lossy(&out.stdout)
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    assert_eq!(lines.len(), 3);
    assert_eq!(lines[0]["formula"], "NaOCl");
    assert_eq!(lines[1]["error"]["kind"], "unknown-element");
    assert_eq!(lines[2]["equation"], "CaO + H2O -> Ca(OH)2");
}
