//! The water subcommands through `dispatch` (the same path as the binary and `molefeed batch`):
//! each JSON report carries the fields the issue names, and failures carry typed kinds.

use molefeed::cli::{Args, dispatch};
use serde_json::Value;

const WATER: &str = "--ph 7.4 --temperature 12 --alkalinity 90 --calcium-as-caco3 110 --magnesium-as-caco3 35 --sodium 18 --chloride 22 --sulfate 35 --json";

fn run(command: &str, flags: &str) -> Result<Value, String> {
    let mut words: Vec<String> = flags.split_whitespace().map(String::from).collect();
    words.extend(WATER.split_whitespace().map(String::from));
    let args = Args::parse(&words).map_err(|e| e.kind)?;
    dispatch(command, &args).map(|r| r.json).map_err(|e| e.kind)
}

/// Runs a command and checks that every listed field is a number.
fn check(command: &str, flags: &str, fields: &[&str]) -> Value {
    let json = run(command, flags).unwrap_or_else(|e| panic!("{command} {flags}: {e}"));
    for f in fields {
        assert!(
            json[*f].as_f64().is_some_and(f64::is_finite),
            "{command}: {f} in {json}"
        );
    }
    json
}

#[test]
fn every_water_command_reports_its_fields() {
    check(
        "ph-after",
        "--chemical Ca(OH)2 --dose 15",
        &[
            "ph",
            "alkalinity_mg_l_as_caco3",
            "dic_mmol_l",
            "ionic_strength",
            "si_calcite",
        ],
    );
    check(
        "ph-after",
        "--chemical FeCl3 --dose 25 --precipitate hydroxide",
        &["ph", "precipitated_metal_mmol_l"],
    );
    let d = check(
        "dose-for-ph",
        "--chemical NaOH --target-ph 8.8",
        &["dose_mg_l", "ph"],
    );
    assert!((d["ph"].as_f64().unwrap() - 8.8).abs() < 1e-6);
    check(
        "stability",
        "",
        &[
            "langelier_index",
            "phs",
            "ryznar_index",
            "ccpp_mg_l_as_caco3",
            "si_calcite",
        ],
    );
    let c = check(
        "coagulant",
        "--chemical Al2(SO4)3·14H2O --dose 30",
        &[
            "alkalinity_consumed_mg_l_as_caco3",
            "ph",
            "alkalinity_mg_l_as_caco3",
        ],
    );
    // ≈ 0.5 mg/L as CaCO3 per mg/L alum (common practice; references.md §5: 0.505 [D]).
    let per_mg = c["alkalinity_consumed_mg_l_as_caco3"].as_f64().unwrap() / 30.0;
    assert!((per_mg - 0.5).abs() < 0.03, "{per_mg}");
    check(
        "neutralize",
        "--chemical CaO --target-ph 8.2 --purity 92",
        &["dose_mg_l", "product_mg_l", "ph"],
    );
    let curve = run("curve", "--chemical H2SO4 --max-dose 40 --points 200").unwrap();
    let points = curve["points"].as_array().unwrap();
    assert_eq!(points.len(), 200);
    assert!(
        points
            .windows(2)
            .all(|p| p[1]["ph"].as_f64() < p[0]["ph"].as_f64())
    );
}

#[test]
fn failures_have_typed_kinds() {
    for (command, flags, kind) in [
        (
            "dose-for-ph",
            "--chemical H2SO4 --target-ph 9",
            "unreachable",
        ),
        (
            "dose-for-ph",
            "--chemical NaHCO3 --target-ph 9.8",
            "unreachable",
        ),
        ("ph-after", "--chemical KMnO4 --dose 3", "unknown-chemical"),
        ("ph-after", "--chemical NaOH --dose -3", "out-of-range"),
        (
            "ph-after",
            "--chemical NaOH --dose 3 --precipitate maybe",
            "invalid-input",
        ),
        ("ph-after", "--chemical NaOH --dose 3 --dsoe 4", "usage"),
        ("ph-after", "--chemical NaOH", "usage"),
        // The purity is in percent: a fraction (its older meaning) is refused, not read as
        // a hundredth of a percent.
        (
            "neutralize",
            "--chemical CaO --target-ph 8.2 --purity 0.92",
            "invalid-input",
        ),
        // Above 100 % is no purity.
        (
            "neutralize",
            "--chemical CaO --target-ph 8.2 --purity 120",
            "out-of-range",
        ),
    ] {
        assert_eq!(run(command, flags).unwrap_err(), kind, "{command} {flags}");
    }
}

#[test]
fn every_water_result_carries_the_advisory_caution() {
    for args in [
        &[
            "stability",
            "--ph",
            "8.1",
            "--temperature",
            "20",
            "--alkalinity",
            "120",
            "--calcium-as-caco3",
            "150",
            "--json",
        ][..],
        &[
            "ph-after",
            "--chemical",
            "NaOH",
            "--dose",
            "5",
            "--ph",
            "7.1",
            "--temperature",
            "12",
            "--alkalinity",
            "60",
            "--json",
        ][..],
    ] {
        let out = std::process::Command::new(env!("CARGO_BIN_EXE_molefeed"))
            .args(args)
            .output()
            .unwrap();
        assert!(out.status.success(), "{args:?}");
        let json: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
        let keys: Vec<&str> = json["cautions"]
            .as_array()
            .unwrap()
            .iter()
            .filter_map(|c| c["key"].as_str())
            .collect();
        assert!(
            keys.contains(&"advisory-operator-decides"),
            "{args:?}: {keys:?}"
        );
    }
}

/// `--calcium` and `--magnesium` did not say their basis (as CaCO3 here, as the ion in the
/// older softening command): each is refused with a sentence naming the flag that does.
#[test]
fn hardness_flags_state_their_basis() {
    for (old, new) in [
        ("--calcium", "--calcium-as-caco3"),
        ("--magnesium", "--magnesium-as-caco3"),
    ] {
        let words: Vec<String> = format!("--ph 7.4 --temperature 12 --alkalinity 90 {old} 35")
            .split_whitespace()
            .map(String::from)
            .collect();
        let e = dispatch("stability", &Args::parse(&words).unwrap())
            .err()
            .unwrap();
        assert_eq!(e.kind, "usage", "{old}");
        assert!(e.message.contains(new), "{old}: {}", e.message);
    }
}

/// The same water with its calcium and magnesium as the ions: 44.05 mg/L Ca is 110.0 mg/L as
/// CaCO3 (× 100.087/40.078) and 8.500 mg/L Mg is 35.0 mg/L as CaCO3 (× 100.087/24.305), IUPAC
/// atomic weights; the pH after a dose comes out the same to the third decimal.
#[test]
fn calcium_and_magnesium_may_be_given_as_the_ion() {
    let as_ion = "--ph 7.4 --temperature 12 --alkalinity 90 --calcium-as-ca 44.05 --magnesium-as-mg 8.500 --sodium 18 --chloride 22 --sulfate 35";
    let as_caco3 = WATER.trim_end_matches(" --json");
    let ph = |water: &str| {
        let words: Vec<String> = format!("--chemical NaOH --dose 5 {water}")
            .split_whitespace()
            .map(String::from)
            .collect();
        dispatch("ph-after", &Args::parse(&words).unwrap())
            .unwrap_or_else(|e| panic!("{water}: {}", e.message))
            .json["ph"]
            .as_f64()
            .unwrap()
    };
    assert!((ph(as_ion) - ph(as_caco3)).abs() < 1e-3);
    let both: Vec<String> =
        "--ph 7.4 --temperature 12 --alkalinity 90 --calcium-as-ca 44 --calcium-as-caco3 110"
            .split_whitespace()
            .map(String::from)
            .collect();
    let e = dispatch("stability", &Args::parse(&both).unwrap())
        .err()
        .unwrap();
    assert_eq!(e.kind, "usage");
}

/// `molefeed path` through `dispatch`: `--step` in order, JSON `steps` with the issue's fields.
fn path(flags: &str) -> Result<Value, String> {
    let words: Vec<String> = flags.split_whitespace().map(String::from).collect();
    let args = Args::parse(&words).map_err(|e| e.kind)?;
    dispatch("path", &args).map(|r| r.json).map_err(|e| e.kind)
}

#[test]
fn path_prints_every_step_in_order_with_the_issues_fields() {
    let json = path(&format!(
        "--step alum=30 --step caustic=8 --step chlorine=2 {WATER}"
    ))
    .unwrap();
    let steps = json["steps"].as_array().unwrap();
    let chemicals: Vec<&str> = steps
        .iter()
        .map(|s| s["chemical"].as_str().unwrap())
        .collect();
    assert_eq!(chemicals, ["alum", "caustic", "chlorine"]);
    for s in steps {
        for f in [
            "dose_mg_l",
            "ph",
            "alkalinity_mg_l_as_caco3",
            "dic_mmol_l",
            "langelier_index",
            "ccpp_mg_l_as_caco3",
        ] {
            assert!(s[f].as_f64().is_some_and(f64::is_finite), "{f} in {s}");
        }
    }
    // Each step starts from the last one's water: alum lowers the pH, caustic raises it.
    let ph: Vec<f64> = steps.iter().map(|s| s["ph"].as_f64().unwrap()).collect();
    assert!(ph[0] < 7.4 && ph[1] > ph[0] && ph[2] < ph[1], "{ph:?}");
    // The same chemical as ph-after names it gives the same water for a one-step path.
    let one = path(&format!("--step lime=15 {WATER}")).unwrap();
    let after = run("ph-after", "--chemical lime --dose 15").unwrap();
    assert_eq!(one["steps"][0]["ph"], after["ph"]);
}

#[test]
fn path_refuses_a_step_it_cannot_read_and_needs_steps_or_a_site() {
    for (flags, kind) in [
        ("--step alum", "usage"),
        ("--step alum=-3", "invalid-input"),
        ("--step no-such-thing=3", "unknown-chemical"),
        ("", "usage"),
    ] {
        assert_eq!(
            path(&format!("{flags} {WATER}")).unwrap_err(),
            kind,
            "{flags}"
        );
    }
}

#[test]
fn path_on_the_demo_site_runs_its_own_path_with_ct_through_the_clearwell() {
    let site = concat!(env!("CARGO_MANIFEST_DIR"), "/data/demo-site.json");
    let json = path(&format!("--site {site} {WATER}")).unwrap();
    let labels: Vec<&str> = json["steps"]
        .as_array()
        .unwrap()
        .iter()
        .map(|s| s["label"].as_str().unwrap())
        .collect();
    assert_eq!(labels, ["alum-bulk", "hypo-bulk", "caustic-bulk"]);
    // 250 000 gal × 0.5 ÷ (2.4 MGD ÷ 1440 min/d) = 75 min (by hand).
    let t10 = json["basins"][0]["t10_minutes"].as_f64().unwrap();
    assert!((t10 - 75.0).abs() < 1e-6, "{t10}");
    assert!(json["finished"]["ph_range"].is_array());
}

#[test]
fn fields_keeps_only_the_keys_asked_for_and_always_the_advisory() {
    let whole = run("ph-after", "--chemical Ca(OH)2 --dose 15").unwrap();
    let chosen = run(
        "ph-after",
        "--chemical Ca(OH)2 --dose 15 --fields ph,dic_mmol_l",
    )
    .unwrap();
    let mut keys: Vec<&str> = chosen
        .as_object()
        .unwrap()
        .keys()
        .map(String::as_str)
        .collect();
    keys.sort_unstable();
    assert_eq!(keys, ["cautions", "dic_mmol_l", "ph"], "{chosen}");
    assert_eq!(chosen["ph"], whole["ph"]);
    assert_eq!(chosen["dic_mmol_l"], whole["dic_mmol_l"]);
    assert_eq!(chosen["cautions"], whole["cautions"]);
    let named = run(
        "ph-after",
        "--chemical Ca(OH)2 --dose 15 --fields cautions,ph",
    )
    .unwrap();
    assert_eq!(
        named,
        run("ph-after", "--chemical Ca(OH)2 --dose 15 --fields ph").unwrap()
    );
    let dose = run(
        "dose-for-ph",
        "--chemical NaOH --target-ph 8.2 --fields dose_mg_l",
    )
    .unwrap();
    assert!(
        dose["dose_mg_l"].as_f64().is_some_and(|d| d > 0.0),
        "{dose}"
    );
    assert!(dose.get("ph").is_none(), "{dose}");
    // A key the answer does not have, an empty list, and the human text: refused.
    assert_eq!(
        run("ph-after", "--chemical Ca(OH)2 --dose 15 --fields pH").unwrap_err(),
        "usage"
    );
    assert_eq!(
        run("ph-after", "--chemical Ca(OH)2 --dose 15 --fields ,").unwrap_err(),
        "usage"
    );
    let words: Vec<String> =
        "--chemical Ca(OH)2 --dose 15 --ph 7.4 --temperature 12 --alkalinity 90 --fields ph"
            .split_whitespace()
            .map(String::from)
            .collect();
    let Err(e) = dispatch("ph-after", &Args::parse(&words).unwrap()) else {
        panic!("--fields without --json was answered");
    };
    assert!(e.message.contains("--json"), "{}", e.message);
}

/// Every water command, with the flags of a dose it can compute (the water is added).
const EVERY_WATER_COMMAND: [(&str, &str); 6] = [
    ("ph-after", "--chemical lime --dose 10"),
    ("dose-for-ph", "--chemical caustic --target-ph 8.5"),
    ("stability", ""),
    ("curve", "--chemical caustic --max-dose 20 --points 5"),
    ("coagulant", "--chemical alum --dose 30"),
    (
        "neutralize",
        "--chemical caustic --target-ph 8.5 --purity 50",
    ),
];

/// A complete analysis whose cations and anions do not balance (Standard Methods 1030 E) is
/// cautioned by every water command, ahead of the advisory; a balanced one is not. The
/// unbalanced analysis is the balanced one with its calcium typed as the ion (40 mg/L of Ca
/// is 100 mg/L as CaCO3) in the field that means as CaCO3: cations 2.80 against 4.00 meq/L.
#[test]
fn every_water_command_cautions_an_analysis_that_does_not_balance() {
    let balanced = "--ph 7.5 --temperature 15 --alkalinity 100.1 --calcium-as-caco3 100.1 --magnesium-as-caco3 50.04 --sodium 20.69 --potassium 3.91 --chloride 35.45 --sulfate 48.03 --json";
    let unbalanced = balanced.replace("--calcium-as-caco3 100.1", "--calcium-as-caco3 40");
    let keys = |command: &str, flags: &str, water: &str| -> Vec<String> {
        let words: Vec<String> = format!("{flags} {water}")
            .split_whitespace()
            .map(String::from)
            .collect();
        let json = dispatch(command, &Args::parse(&words).unwrap())
            .unwrap_or_else(|e| panic!("{command}: {}", e.message))
            .json;
        json["cautions"]
            .as_array()
            .unwrap_or_else(|| panic!("{command}: no cautions in {json}"))
            .iter()
            .map(|c| c["key"].as_str().unwrap().to_string())
            .collect()
    };
    for (command, flags) in EVERY_WATER_COMMAND {
        assert_eq!(
            keys(command, flags, balanced),
            ["advisory-operator-decides"],
            "{command}"
        );
        assert_eq!(
            keys(command, flags, &unbalanced),
            ["water-ion-balance", "advisory-operator-decides"],
            "{command}"
        );
    }
}

/// Every water command checks the water's pH against its alkalinity as the calculator table
/// does: free CO2 beyond what dissolves under one atmosphere is refused (pH 3.0 with the
/// alkalinity given as 0 meant a DIC of 2.8 mol/L; pH 5.0 with 100 mg/L as CaCO3, about
/// 1 970 mg/L of CO2 at 25 °C), and a high but possible CO2 (pH 6.0, about 200 mg/L) is
/// cautioned. The CO2 by hand is in `waterside`'s test of the same readings.
#[test]
fn every_water_command_checks_the_ph_against_the_alkalinity() {
    let dispatched = |command: &str, flags: &str, water: &str| {
        let words: Vec<String> = format!("{flags} {water} --json")
            .split_whitespace()
            .map(String::from)
            .collect();
        dispatch(command, &Args::parse(&words).unwrap())
    };
    for (command, flags) in EVERY_WATER_COMMAND {
        for water in [
            "--ph 3.0 --temperature 11 --alkalinity 0",
            "--ph 5.0 --temperature 25 --alkalinity 100",
        ] {
            let e = dispatched(command, flags, water)
                .err()
                .unwrap_or_else(|| panic!("{command} {water}: answered"));
            assert_eq!(
                e.reason,
                Some("water-co2-beyond-solubility"),
                "{command} {water}: {}",
                e.message
            );
        }
        let json = dispatched(
            command,
            flags,
            "--ph 6.0 --temperature 25 --alkalinity 100 --calcium-as-caco3 80",
        )
        .unwrap_or_else(|e| panic!("{command}: {}", e.message))
        .json;
        assert_eq!(
            json["cautions"][0]["key"], "water-co2-high",
            "{command}: {json}"
        );
    }
}
