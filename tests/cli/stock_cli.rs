//! The stock on the command line: `calc tank-volume`, `log reading`, `log delivery` and
//! `log report`, run as a script runs them.

use serde_json::Value;
use std::process::Command;

fn run(args: &[&str]) -> (i32, Value, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_molefeed"))
        .args(args)
        .output()
        .expect("binary runs");
    let stdout = String::from_utf8_lossy(&out.stdout).to_string();
    let json = serde_json::from_str(stdout.trim()).unwrap_or(Value::Null);
    let stderr = String::from_utf8_lossy(&out.stderr).to_string();
    (out.status.code().unwrap_or(-1), json, stdout + &stderr)
}

const SITE: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/data/demo-site.json");

/// `molefeed log report` of the demo site's November from the log `file`, with `more` flags.
fn november_report(file: &std::path::Path, more: &[&str]) -> (i32, Value, String) {
    let mut args = vec![
        "log",
        "report",
        "--file",
        file.to_str().unwrap(),
        "--site",
        SITE,
        "--from",
        "2026-11-01",
        "--to",
        "2026-11-30",
    ];
    args.extend_from_slice(more);
    run(&args)
}

/// L in one US gallon and in one cubic foot (exact: 231 in³ a gallon, 0.3048 m a foot).
const GAL_L: f64 = 3.785_411_784;
const FT3_L: f64 = 0.3048 * 0.3048 * 0.3048 * 1000.0;

fn close(a: f64, b: f64, what: &str) {
    assert!(
        (a - b).abs() <= 1e-9 * b.abs().max(1.0),
        "{what}: {a} against {b}"
    );
}

fn result(json: &Value, id: &str) -> f64 {
    json["results"][id]["value"]
        .as_f64()
        .unwrap_or_else(|| panic!("{id} in {json}"))
}

#[test]
fn tank_volume_from_its_shape_and_from_the_site() {
    // Half a 6 ft × 12 ft horizontal cylinder: π 3² × 12 / 2 ft³; --length-unit ft makes the
    // use rate gal/d, so 50 gal/d lasts V / (50 gal) days.
    let (code, json, text) = run(&[
        "calc",
        "tank-volume",
        "--shape",
        "horizontal-cylinder",
        "--diameter",
        "6",
        "--length",
        "12",
        "--level",
        "3",
        "--length-unit",
        "ft",
        "--use-rate",
        "50",
        "--json",
    ]);
    assert_eq!(code, 0, "{text}");
    let v = std::f64::consts::PI * 9.0 * 12.0 / 2.0 * FT3_L;
    close(result(&json, "volume"), v, "volume");
    close(result(&json, "fill_percent"), 50.0, "fill");
    close(result(&json, "days_of_supply"), v / (50.0 * GAL_L), "days");
    // The demo's bisulfite tote by its chart (inches, gallons): 30 in is halfway from 24 in
    // (205 gal) to 36 in (315 gal); reorder at 8 in, 40 + (95 − 40)·2/6 gal.
    let (code, json, text) = run(&[
        "calc",
        "tank-volume",
        "--site",
        SITE,
        "--tank",
        "bisulfite-tote",
        "--level",
        "30",
        "--use-rate",
        "10",
        "--json",
    ]);
    assert_eq!(code, 0, "{text}");
    close(result(&json, "volume"), 260.0 * GAL_L, "tote");
    let reorder = 40.0 + 55.0 * 2.0 / 6.0;
    close(
        result(&json, "days_to_reorder"),
        (260.0 - reorder) / 10.0,
        "reorder",
    );
    // A level beyond the chart is refused with its reason.
    let (code, json, _) = run(&[
        "calc",
        "tank-volume",
        "--site",
        SITE,
        "--tank",
        "bisulfite-tote",
        "--level",
        "50",
        "--json",
    ]);
    assert_ne!(code, 0);
    assert_eq!(
        json["error"]["reason"], "level-outside-strapping-table",
        "{json}"
    );
}

#[test]
fn readings_and_deliveries_are_checked_against_the_site() {
    let dir = std::env::temp_dir().join(format!("molefeed-stock-cli-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let log = dir.join("plant.doselog");
    let file = log.to_str().unwrap();
    let ok = [
        vec![
            "log",
            "reading",
            "--file",
            file,
            "--site",
            SITE,
            "--tank",
            "hypo-day-tank",
            "--level",
            "4.5",
            "--initials",
            "AB",
        ],
        vec![
            "log",
            "reading",
            "--file",
            file,
            "--site",
            SITE,
            "--meter",
            "filter-effluent",
            "--totalizer",
            "123456",
            "--initials",
            "AB",
        ],
        vec![
            "log",
            "reading",
            "--file",
            file,
            "--site",
            SITE,
            "--tap",
            "clearwell-tap",
            "--parameter",
            "chlorine",
            "--value",
            "1.1",
            "--initials",
            "AB",
        ],
        vec![
            "log",
            "delivery",
            "--file",
            file,
            "--site",
            SITE,
            "--product",
            "hypo-bulk",
            "--amount",
            "55",
            "--amount-unit",
            "gal",
            "--note-number",
            "DN-7",
            "--initials",
            "AB",
        ],
    ];
    for args in ok {
        let (code, _, text) = run(&args);
        assert_eq!(code, 0, "{args:?}: {text}");
    }
    let refused = [
        // Not in the site profile, not a parameter of that tap, above the tank, no totaliser.
        vec![
            "log",
            "reading",
            "--file",
            file,
            "--site",
            SITE,
            "--tank",
            "no-such-tank",
            "--level",
            "1",
            "--initials",
            "AB",
        ],
        vec![
            "log",
            "reading",
            "--file",
            file,
            "--site",
            SITE,
            "--tap",
            "clearwell-tap",
            "--parameter",
            "fluoride",
            "--value",
            "1",
            "--initials",
            "AB",
        ],
        vec![
            "log",
            "reading",
            "--file",
            file,
            "--site",
            SITE,
            "--tank",
            "hypo-day-tank",
            "--level",
            "7",
            "--initials",
            "AB",
        ],
        vec![
            "log",
            "reading",
            "--file",
            file,
            "--site",
            SITE,
            "--meter",
            "raw-venturi",
            "--totalizer",
            "1",
            "--initials",
            "AB",
        ],
        vec![
            "log",
            "delivery",
            "--file",
            file,
            "--site",
            SITE,
            "--product",
            "hypo-bulk",
            "--amount",
            "5",
            "--amount-unit",
            "tons",
            "--initials",
            "AB",
        ],
        // Two days back is not "earlier the same or the previous day".
        vec![
            "log",
            "reading",
            "--file",
            file,
            "--site",
            SITE,
            "--tank",
            "hypo-day-tank",
            "--level",
            "4",
            "--at",
            "2020-01-01T07:00:00-06:00",
            "--initials",
            "AB",
        ],
    ];
    for args in refused {
        let (code, _, text) = run(&args);
        assert_ne!(code, 0, "{args:?}: {text}");
    }
    std::fs::remove_dir_all(&dir).unwrap();
}

#[test]
fn the_november_report_from_the_command_line() {
    let dir = std::env::temp_dir().join(format!("molefeed-report-cli-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let log = dir.join("november.doselog");
    molefeed::log::november::write(&log, "Harrowmere Tarn Water Works (demo)", 0).unwrap();
    let csv = dir.join("november.csv");
    let (code, json, text) = november_report(&log, &["--csv", csv.to_str().unwrap(), "--json"]);
    assert_eq!(code, 0, "{text}");
    // Day 1 by hand (see `log::stock_tests`): 2 020 000 gal of water; 0.5 ft from the 4 ft
    // day tank, 4π ft² × 0.5 ft × 1728/231 gal per ft³.
    let day1 = &json["days"][0];
    assert_eq!(day1["date"], "2026-11-01");
    close(day1["water_treated_mg"].as_f64().unwrap(), 2.02, "MG");
    let used = 4.0 * std::f64::consts::PI * 0.5 * 1728.0 / 231.0;
    close(
        day1["products"]["hypo-bulk"]["product_used"]
            .as_f64()
            .unwrap(),
        used,
        "gal",
    );
    close(
        day1["products"]["hypo-bulk"]["calculated_dose_mg_l"]
            .as_f64()
            .unwrap(),
        used * 0.125 * 1e6 / 2.02e6,
        "dose (gal cancel: kg per L of product × L per L of water)",
    );
    assert_eq!(json["days"].as_array().unwrap().len(), 30);
    assert_eq!(json["totals"]["voids"], 1);
    let csv = std::fs::read_to_string(&csv).unwrap();
    assert!(
        csv.starts_with("date,water_treated_MG,product,product_used_gal"),
        "{csv}"
    );
    // The month's totals: the water, and the product's on its row with its compound.
    let total = csv
        .lines()
        .find(|l| l.starts_with("total,"))
        .unwrap_or_else(|| panic!("{csv}"));
    let cells: Vec<&str> = total.split(',').collect();
    assert_eq!(cells[2], "hypo-bulk", "{total}");
    assert_eq!(cells[6], "Cl2", "{total}");
    assert!(cells[5].parse::<f64>().is_ok_and(|lb| lb > 0.0), "{total}");
    std::fs::remove_dir_all(&dir).unwrap();
}

/// The "done when" of the stock work: the demo plant's invented November reported by the
/// built binary (`log report --json`) and by the app's Stock controller over its persistent
/// log shows the same numbers, day by day and in total. The numbers themselves are checked by
/// hand in `the_november_report_from_the_command_line` and `log::stock_tests`.
#[test]
fn the_november_report_is_the_same_from_the_cli_and_from_the_app() {
    use molefeed::app::dose_log::PersistentLog;
    use molefeed::app::stock_screen::StockScreen;
    let name = "Harrowmere Tarn Water Works (demo)";
    let dir = std::env::temp_dir().join(format!("molefeed-report-parity-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    let logs = dir.join("logs");
    std::fs::create_dir_all(&logs).unwrap();
    let file = molefeed::log::site_file(&logs, name);
    molefeed::log::november::write(&file, name, 0).unwrap();
    let (code, cli, text) = november_report(&file, &["--json"]);
    assert_eq!(code, 0, "{text}");
    let catalog = molefeed::engine::dosing::catalog::Catalog::builtin().unwrap();
    let site = molefeed::engine::dosing::site::SiteProfile::demo(&catalog).unwrap();
    assert_eq!(site.name, name);
    let log = PersistentLog::new(&logs, "parity");
    let app = StockScreen::month_report(&log, &site, &catalog, "2026-11").unwrap();
    let app = molefeed::log::report::to_json(&app);
    // The CLI reads the same demo profile from data/demo-site.json; the app has it built in.
    assert_eq!(cli["plant"], app["plant"]);
    assert_eq!(cli["days"].as_array().map(Vec::len), Some(30));
    same_numbers(&cli["days"], &app["days"], "days");
    same_numbers(&cli["totals"], &app["totals"], "totals");
    assert!(
        cli["totals"]["water_treated_mg"].as_f64().unwrap() > 60.0,
        "{}",
        cli["totals"]
    );
    // The files the app saves carry the same daily table as the CLI's --csv.
    let cli_csv = dir.join("cli.csv");
    let (code, _, text) = november_report(&file, &["--csv", cli_csv.to_str().unwrap()]);
    assert_eq!(code, 0, "{text}");
    let mut screen = StockScreen::default();
    let (_, app_csv) = screen
        .save_report(&log, &site, &catalog, "2026-11", &dir.join("exports"))
        .expect("saved");
    assert_eq!(
        std::fs::read_to_string(&cli_csv).unwrap(),
        std::fs::read_to_string(&app_csv).unwrap()
    );
    drop(log);
    let _ = std::fs::remove_dir_all(&dir);
}

/// The same JSON tree, numbers equal to within parsing: serde_json's default float parser may
/// read the CLI's printed digits one unit in the last place off (its `float_roundtrip`
/// feature is not enabled), so numbers agree to 1e-12 relative, everything else exactly.
fn same_numbers(a: &Value, b: &Value, at: &str) {
    match (a, b) {
        (Value::Number(x), Value::Number(y)) => {
            let (x, y) = (x.as_f64().unwrap(), y.as_f64().unwrap());
            assert!(
                (x - y).abs() <= 1e-12 * x.abs().max(y.abs()),
                "{at}: {x} against {y}"
            );
        }
        (Value::Array(x), Value::Array(y)) => {
            assert_eq!(x.len(), y.len(), "{at}: lengths");
            for (i, (x, y)) in x.iter().zip(y).enumerate() {
                same_numbers(x, y, &format!("{at}[{i}]"));
            }
        }
        (Value::Object(x), Value::Object(y)) => {
            assert_eq!(
                x.keys().collect::<Vec<_>>(),
                y.keys().collect::<Vec<_>>(),
                "{at}: keys"
            );
            for (k, v) in x {
                same_numbers(v, &y[k], &format!("{at}.{k}"));
            }
        }
        _ => assert_eq!(a, b, "{at}"),
    }
}

/// A tap reading given in the same unit written another way, or one an exact factor reaches
/// (°F, µg/L, "mg/L as Cl2", ppm), is held to the parameter's limit in its unit: 5 000 µg/L of
/// chlorine is 5.0 mg/L, above the demo permit's 4.0; 54 °F is 12.2 °C and averaged with 12 °C.
/// A unit nothing converts (chlorine "as N", alkalinity in plain mg/L, which may be as HCO3) is
/// refused when recorded, so no exceedance is left out. A raw or process tap's reading is not
/// held to the finished-water limits. Expected rows worked by hand.
#[test]
fn a_tap_reading_in_another_unit_is_held_to_the_limit_in_its_parameters_unit() {
    let dir = std::env::temp_dir().join(format!("molefeed-units-cli-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let log = dir.join("plant.doselog");
    let file = log.to_str().unwrap();
    let reading = |tap: &str, parameter: &str, value: &str, unit: Option<&str>| {
        let mut args = vec![
            "log",
            "reading",
            "--file",
            file,
            "--site",
            SITE,
            "--tap",
            tap,
            "--parameter",
            parameter,
            "--value",
            value,
            "--initials",
            "AB",
            "--json",
        ];
        if let Some(u) = unit {
            args.extend(["--unit", u]);
        }
        run(&args)
    };
    for (parameter, value, unit) in [
        ("temperature", "12", None),
        ("temperature", "54", Some("°F")),
        ("chlorine", "1.2", None),
        ("chlorine", "5000", Some("µg/L")),
        ("chlorine", "0.05", Some("mg/L as Cl2")),
        ("chlorine", "0.10", Some("ppm")),
    ] {
        let (code, _, text) = reading("clearwell-tap", parameter, value, unit);
        assert_eq!(code, 0, "{parameter} {value} {unit:?}: {text}");
    }
    // A raw and a process tap (the demo marks them so): read, reported, not held to the
    // finished-water limits (alkalinity at least 30, aluminium at most 0.1).
    for (tap, parameter, value) in [
        ("raw-tap", "alkalinity", "25"),
        ("settled-tap", "aluminium", "0.15"),
    ] {
        let (code, _, text) = reading(tap, parameter, value, None);
        assert_eq!(code, 0, "{tap} {parameter}: {text}");
    }
    for (tap, parameter, unit) in [
        ("clearwell-tap", "chlorine", "mg/L as N"),
        ("raw-tap", "alkalinity", "mg/L"),
        ("clearwell-tap", "temperature", "K"),
    ] {
        let (code, json, text) = reading(tap, parameter, "1", Some(unit));
        assert_ne!(code, 0, "{parameter} in {unit}: {text}");
        assert!(
            json["error"]["message"]
                .as_str()
                .is_some_and(|m| m.contains("cannot be held to its limit")),
            "{text}"
        );
    }
    let today = chrono::Local::now().date_naive();
    let from = (today - chrono::Days::new(1)).to_string();
    let to = today.to_string();
    let (code, json, text) = run(&[
        "log", "report", "--file", file, "--site", SITE, "--from", &from, "--to", &to, "--json",
    ]);
    assert_eq!(code, 0, "{text}");
    let rows: Vec<(String, f64, u64)> = json["days"]
        .as_array()
        .unwrap()
        .iter()
        .flat_map(|d| d["taps"].as_array().unwrap().clone())
        .map(|t| {
            (
                t["parameter"].as_str().unwrap().to_string(),
                t["avg"].as_f64().unwrap(),
                t["count"].as_u64().unwrap(),
            )
        })
        .collect();
    let row = |name: &str| {
        rows.iter()
            .find(|r| r.0 == name)
            .unwrap_or_else(|| panic!("{name} in {rows:?}"))
    };
    // (12 + (54 − 32) × 5/9) / 2 = (12 + 12.222…) / 2.
    let temperature = row("temperature");
    assert!(
        (temperature.1 - (12.0 + 110.0 / 9.0) / 2.0).abs() < 1e-9,
        "{rows:?}"
    );
    assert_eq!(temperature.2, 2);
    // (1.2 + 5.0 + 0.05 + 0.10) / 4 = 1.5875.
    let chlorine = row("chlorine");
    assert!((chlorine.1 - 1.5875).abs() < 1e-9, "{rows:?}");
    assert_eq!(chlorine.2, 4);
    assert_eq!(row("alkalinity").1, 25.0);
    assert_eq!(row("aluminium").1, 0.15);
    assert_eq!(rows.len(), 4, "{rows:?}");
    // At the clearwell: 5.0 above the maximum of 4.0; 0.05 and 0.10 below the permit's
    // minimum of 0.2. Not the raw alkalinity nor the settled aluminium.
    assert_eq!(json["totals"]["exceedances"], 3, "{json}");
    assert!(
        !json["cautions"]
            .as_array()
            .unwrap()
            .iter()
            .any(|c| c["key"] == "reading-unit-not-checked"),
        "{json}"
    );
    std::fs::remove_dir_all(&dir).unwrap();
}

/// A delivery typed with two zeros too many (28 200 gal for 282) makes that day's fed dose
/// some 600 times the logged one (a deviation beyond 10 000 %, the most a setting may be): the report prints it with a danger caution naming the day, rather
/// than refusing to print a deviation beyond a setting's range.
#[test]
fn a_delivery_typed_wrong_is_reported_with_its_deviation() {
    let dir = std::env::temp_dir().join(format!("molefeed-typo-cli-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("november.doselog");
    molefeed::log::november::write(&path, "Harrowmere Tarn Water Works (demo)", 0).unwrap();
    {
        let mut log = molefeed::log::Log::open(&path, "office").unwrap();
        let day = chrono::NaiveDate::from_ymd_opt(2026, 11, 18).unwrap();
        let delivery = log
            .readings(&molefeed::log::Query {
                from: Some(day),
                to: Some(day),
                readings: true,
                ..molefeed::log::Query::default()
            })
            .unwrap()
            .into_iter()
            .find(|r| matches!(r.reading, molefeed::log::Reading::Delivery { .. }))
            .expect("the 18th has a delivery");
        let molefeed::log::Reading::Delivery {
            product,
            note_number,
            ..
        } = delivery.reading
        else {
            unreachable!()
        };
        log.append(molefeed::log::Draft::ReadingCorrection {
            at: None,
            corrects: delivery.id,
            reason: "as typed".into(),
            reading: molefeed::log::Reading::Delivery {
                operator: "SB".into(),
                product,
                amount: 28_200.0,
                unit: "gal".into(),
                note_number,
            },
        })
        .unwrap();
    }
    let (code, json, text) = november_report(&path, &["--json"]);
    assert_eq!(code, 0, "{text}");
    let deviation = json["cautions"]
        .as_array()
        .unwrap()
        .iter()
        .find(|c| c["key"] == "fed-dose-deviates" && c["severity"] == "danger")
        .unwrap_or_else(|| panic!("{json}"));
    let params = deviation["params"].to_string();
    assert!(params.contains("2026-11-18"), "{params}");
    let day = &json["days"][17]["products"]["hypo-bulk"];
    assert!(
        day["deviation_percent"].as_f64().is_some_and(|d| d > 1e4),
        "{day}"
    );
    std::fs::remove_dir_all(&dir).unwrap();
}

/// `log readings` lists what was read, as recorded: the 15th's low chlorine at the clearwell,
/// the 10th's level as corrected (4.0 ft: 5.5 − 0.5 × 3, the plan's six-day cycle) and
/// marked so, filtered by the thing read and what was read; numbers with their units.
#[test]
fn the_readings_are_listed_as_recorded() {
    let dir = std::env::temp_dir().join(format!("molefeed-readings-cli-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("november.doselog");
    molefeed::log::november::write(&path, "Harrowmere Tarn Water Works (demo)", 0).unwrap();
    let file = path.to_str().unwrap();
    let day = |d: &str| ["--from", d, "--to", d].map(String::from);
    let run_on = |more: &[String]| {
        let mut args = vec!["log", "readings", "--file", file];
        args.extend(more.iter().map(String::as_str));
        run(&args)
    };
    let mut chlorine = day("2026-11-15").to_vec();
    chlorine.extend(["--tap", "clearwell-tap", "--json"].map(String::from));
    let (code, json, text) = run_on(&chlorine);
    assert_eq!(code, 0, "{text}");
    let list = json["readings"].as_array().unwrap();
    assert_eq!(list.len(), 1, "{json}");
    assert_eq!(list[0]["reading"]["value"], 0.15, "{json}");
    assert_eq!(list[0]["reading"]["parameter"], "chlorine", "{json}");
    let mut level = day("2026-11-10").to_vec();
    level.extend(["--chemical", "level"].map(String::from));
    let (code, _, text) = run_on(&level);
    assert_eq!(code, 0, "{text}");
    let lines: Vec<&str> = text.lines().collect();
    assert_eq!(lines.len(), 2, "{text}");
    assert!(
        lines[0].contains("hypo-day-tank / level  4 ft  [corrected]"),
        "{text}"
    );
    assert_eq!(lines[1], "1 readings");
    std::fs::remove_dir_all(&dir).unwrap();
}
