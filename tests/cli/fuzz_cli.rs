//! A fixed-seed fuzz of the real command line, run with the ordinary suite: requests made
//! by mutating valid ones (values swapped for extreme numbers, odd text, wrong types; flags
//! dropped and invented) and raw byte lines are fed through `molefeed batch`, and a sample
//! of argument vectors through separate processes. Every answer must be one JSON object or
//! error, no process may panic, and no number in any output may be non-finite or beyond
//! what a plant can produce. The seed is fixed so a failure reproduces; the counts are
//! printed (`cargo test --test cli fuzz -- --nocapture`).

use crate::support::{remove, scratch, text, wait_within};
use serde_json::{Value, json};
use std::io::Write;
use std::process::{Command, Stdio};
use std::time::Duration;

const SEED: u64 = 0x6d6f_6c65_6665_6564;
const BATCH_LINES: usize = 10_000;
const ARGUMENT_VECTORS: usize = 300;

/// xorshift64*: small, deterministic, and enough to spread choices.
struct Rng(u64);

impl Rng {
    fn next(&mut self) -> u64 {
        self.0 ^= self.0 >> 12;
        self.0 ^= self.0 << 25;
        self.0 ^= self.0 >> 27;
        self.0.wrapping_mul(0x2545_F491_4F6C_DD1D)
    }

    fn below(&mut self, n: usize) -> usize {
        (self.next() % n as u64) as usize
    }

    fn pick<'a, T>(&mut self, items: &'a [T]) -> &'a T {
        &items[self.below(items.len())]
    }

    fn chance(&mut self, percent: usize) -> bool {
        self.below(100) < percent
    }
}

const HYPO: &str = "--product sodium-hypochlorite --strength 12.5 --strength-basis trade --sg 1.16";
const WATER: &str = "--ph 7.4 --temperature 12 --alkalinity 90 --calcium-as-caco3 110 --magnesium-as-caco3 35 --sodium 18 --chloride 22 --sulfate 35";

/// Valid (or nearly valid) requests the mutations start from, one per command.
fn templates() -> Vec<(String, String)> {
    let t = |c: &str, a: String| (c.to_string(), a);
    vec![
        t("feed", format!("--flow 2.5 --flow-unit mgd --dose 3.0 {HYPO} --pump-capacity 10 --pump-unit gph")),
        t("chlorine", format!("--demand 1.4 --residual 1.0 --ammonia-n 0.3 --flow 2.5 --flow-unit mgd {HYPO} --pump-capacity 10 --pump-unit gph")),
        t("dechlor", "--residual 2.0 --agent NaHSO3 --flow 1.2 --flow-unit mgd --product sodium-bisulfite --strength 38 --strength-basis weight --sg 1.36 --pump-capacity 5 --pump-unit gph".into()),
        t("ct", "--residual 1.0 --ph 7 --temperature 10 --volume 250000 --volume-unit gal --baffling 0.5 --flow 2 --flow-unit mgd".into()),
        t("soften", "--flow 5000 --flow-unit m3-per-day --product hydrated-lime --total-hardness 250 --calcium-hardness 200 --alkalinity 200 --ph 7.6 --temperature 15 --excess-lime 35 --lime-purity 93 --soda-ash-purity 98".into()),
        t("pump-check", format!("--drawdown-ml 250 --seconds 60 --flow 2.5 --flow-unit mgd {HYPO} --target-dose 3.0 --current-setting 30")),
        t("dilute", "--product sodium-hypochlorite --strength 12.5 --strength-basis trade --sg 1.16 --target-strength 1 --target-basis trade --target-sg 1.02 --volume 200 --volume-unit L".into()),
        t("sludge", "--coagulant alum --dose 30 --suspended-solids 12 --flow 2 --flow-unit mgd".into()),
        t("coagulation", "--coagulant alum --dose 30 --ph 7.4 --temperature 12 --alkalinity 90 --flow 2 --flow-unit mgd --strength 8.3 --sg 1.33 --pump-capacity 20 --pump-unit gph".into()),
        t("neutralize-feed", "--target-ph 8.2 --flow 2 --flow-unit mgd --product sodium-hydroxide --strength 50 --strength-basis weight --sg 1.52 --pump-capacity 10 --pump-unit gph --ph 7.4 --temperature 12 --alkalinity 90 --calcium-as-caco3 110".into()),
        t("ph-after", format!("--chemical Ca(OH)2 --dose 15 {WATER}")),
        t("dose-for-ph", format!("--chemical NaOH --target-ph 8.8 {WATER}")),
        t("stability", WATER.into()),
        t("coagulant", format!("--chemical FeCl3 --dose 25 {WATER}")),
        t("neutralize", format!("--chemical CaO --target-ph 8.2 --purity 92 {WATER}")),
        t("curve", format!("--chemical H2SO4 --max-dose 40 --points 50 {WATER}")),
        t("convert", "--from Cl2 --amount 10 --unit kg --to NH3".into()),
        t("mass", String::new()),
        t("balance", String::new()),
        t("equivalent", String::new()),
        t("reactions", String::new()),
        t("log", "--file f.doselog".into()),
    ]
}

/// Positional words a command takes, a few of them wrong on purpose.
fn positionals_for(command: &str) -> &'static [&'static str] {
    match command {
        "mass" => &[
            "H2O",
            "Al2(SO4)3·14H2O",
            "NaN",
            "CaCO3",
            "Ca(OH",
            "Qq",
            "H999999999",
        ],
        "balance" | "convert" => &[
            "NH3 + Cl2 -> N2 + HCl",
            "H2 + O2 -> H2O + H2O2",
            "NaCl -> KBr",
            "Ca(OH)2 + CO2 -> CaCO3 + H2O",
        ],
        "equivalent" => &["CaCO3", "Ca", "H2SO4", "NaN"],
        "log" => &[
            "list",
            "export",
            "history",
            "template",
            "append",
            "merge",
            "soak",
            "frobnicate",
        ],
        _ => &["stray", "H2O"],
    }
}

const FLAGS: [&str; 24] = [
    "flow",
    "dose",
    "strength",
    "sg",
    "ph",
    "temperature",
    "alkalinity",
    "calcium",
    "residual",
    "pump-capacity",
    "volume",
    "seconds",
    "drawdown-ml",
    "target-dose",
    "amount",
    "points",
    "max-dose",
    "purity",
    "usable-min",
    "usable-max",
    "format",
    "from",
    "to",
    "site",
];

/// Replacement values: numbers at and beyond every edge, odd text, wrong JSON types.
fn value(rng: &mut Rng) -> Value {
    match rng.below(12) {
        0 => {
            // Any magnitude from subnormal to near overflow, either sign.
            let exponent = rng.below(640) as i32 - 320;
            let sign = if rng.chance(30) { -1.0 } else { 1.0 };
            let mantissa = 1.0 + rng.below(1000) as f64 / 1000.0;
            json!(format!("{}", sign * mantissa * 10f64.powi(exponent)))
        }
        1 => json!(
            rng.pick(&[
                "0",
                "-0",
                "1e-300",
                "5e-324",
                "1.7976931348623157e308",
                "1e-12",
                "1e12",
                "1e13"
            ])
            .to_string()
        ),
        2 => json!(
            rng.pick(&[
                "NaN", "inf", "-inf", "infinity", "", " ", "0x10", "1,5", "½"
            ])
            .to_string()
        ),
        3 => json!(rng.below(1_000_000) as f64 / 997.0),
        4 => json!(
            rng.pick(&[
                "mgd", "gpm", "lps", "m3d", "m3h", "gal", "L", "gph", "kg", "mol", "csv", "jsonl",
                "trade", "weight", "nonsense"
            ])
            .to_string()
        ),
        5 => json!(
            rng.pick(&[
                "sodium-hypochlorite",
                "alum-liquid",
                "hydrated-lime",
                "chlorine-gas",
                "pacl",
                "unknown-product"
            ])
            .to_string()
        ),
        6 => json!(true),
        7 => json!([1, "two", null]),
        8 => json!({"nested": {"deeper": [1e300]}}),
        9 => json!("\u{1b}[2J\n=HYPERLINK(\"x\")\0"),
        10 => json!(
            rng.pick(&[
                "f.doselog",
                "sub/dir/x.doselog",
                "/dev/null",
                "/dev/full",
                "",
                "."
            ])
            .to_string()
        ),
        _ => json!(-(rng.below(100) as i64)),
    }
}

/// Parses "--a 1 --b x" into a JSON args object.
fn args_object(flags: &str) -> serde_json::Map<String, Value> {
    let words: Vec<&str> = flags.split_whitespace().collect();
    let mut object = serde_json::Map::new();
    let mut i = 0;
    while i < words.len() {
        let name = words[i].trim_start_matches("--");
        match words.get(i + 1).filter(|w| !w.starts_with("--")) {
            Some(v) => {
                object.insert(name.to_string(), json!(v));
                i += 2;
            }
            None => {
                object.insert(name.to_string(), json!(true));
                i += 1;
            }
        }
    }
    object
}

/// One mutated request as a JSON object.
fn request(rng: &mut Rng, templates: &[(String, String)]) -> Value {
    let (command, flags) = rng.pick(templates);
    let mut args = args_object(flags);
    // Zero to two changes: a request with many is refused for the first and tests little.
    for _ in 0..rng.below(3) {
        let keys: Vec<String> = args.keys().cloned().collect();
        match rng.below(8) {
            0..=4 if !keys.is_empty() => {
                let key = rng.pick(&keys).clone();
                args.insert(key, value(rng));
            }
            5 | 6 if !keys.is_empty() => {
                let key = rng.pick(&keys).clone();
                args.remove(&key);
            }
            _ => {
                args.insert(rng.pick(&FLAGS).to_string(), value(rng));
            }
        }
    }
    if rng.chance(10)
        || matches!(
            command.as_str(),
            "mass" | "balance" | "equivalent" | "log" | "convert"
        )
    {
        let count = if rng.chance(90) { 1 } else { 2 };
        let positional: Vec<&str> = (0..count)
            .map(|_| *rng.pick(positionals_for(command)))
            .collect();
        args.insert("positional".into(), json!(positional));
    }
    let command = if rng.chance(3) {
        "no-such-command"
    } else {
        command.as_str()
    };
    json!({"command": command, "args": args})
}

/// A raw line: usually a request, sometimes broken bytes, cut JSON or the wrong shape.
fn batch_line(rng: &mut Rng, templates: &[(String, String)]) -> Vec<u8> {
    let line = request(rng, templates).to_string().into_bytes();
    match rng.below(20) {
        0 => (0..rng.below(200))
            .map(|_| rng.next() as u8)
            .filter(|b| *b != b'\n')
            .collect(),
        1 => line[..rng.below(line.len())].to_vec(),
        2 => {
            let mut broken = line.clone();
            let at = rng.below(broken.len());
            broken[at] = 0xff;
            broken
        }
        3 => b"[1,2,3]".to_vec(),
        4 => b"{\"command\": 7}".to_vec(),
        _ => line,
    }
}

/// Fails on any number in `value` that a result must never be.
fn assert_printable_numbers(value: &Value, context: &str) {
    match value {
        Value::Number(n) => {
            let v = n.as_f64().unwrap();
            assert!(
                v.is_finite() && v.abs() <= molefeed::cli::LARGEST_OUTPUT,
                "{v} in {context}"
            );
        }
        Value::Array(items) => items
            .iter()
            .for_each(|v| assert_printable_numbers(v, context)),
        Value::Object(fields) => fields
            .values()
            .for_each(|v| assert_printable_numbers(v, context)),
        _ => {}
    }
}

#[test]
fn fuzzed_batch_lines_and_argument_vectors_never_panic_or_print_a_non_number() {
    let dir = scratch("fuzz");
    let templates = templates();
    let mut rng = Rng(SEED);
    let mut input = Vec::new();
    let mut requests = 0;
    for _ in 0..BATCH_LINES {
        let line = batch_line(&mut rng, &templates);
        if !line.iter().all(u8::is_ascii_whitespace) {
            requests += 1;
        }
        input.extend_from_slice(&line);
        input.push(b'\n');
    }
    let mut child = Command::new(crate::support::BIN)
        .arg("batch")
        .current_dir(&dir)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let mut stdin = child.stdin.take().unwrap();
    let feeder = std::thread::spawn(move || stdin.write_all(&input));
    let out = wait_within(child, Duration::from_secs(120));
    feeder.join().unwrap().unwrap();
    let stderr = text(&out.stderr);
    assert!(!stderr.contains("panicked"), "{stderr}");
    assert!(matches!(out.status.code(), Some(0 | 1)), "{:?}", out.status);
    let stdout = text(&out.stdout);
    let answers: Vec<&str> = stdout.lines().collect();
    assert_eq!(answers.len(), requests, "one answer per line");
    let mut failed = 0;
    for answer in &answers {
        let value: Value = serde_json::from_str(answer).unwrap_or_else(|e| panic!("{e}: {answer}"));
        assert!(value.is_object(), "{answer}");
        failed += usize::from(value.get("error").is_some());
        assert_printable_numbers(&value, answer);
    }
    // Most lines are wrong on purpose, but the mutations must also reach real answers.
    assert!(
        failed > answers.len() / 4 && failed < answers.len(),
        "{failed} failed"
    );

    for n in 0..ARGUMENT_VECTORS {
        let request = request(&mut rng, &templates);
        let mut argv = vec![request["command"].as_str().unwrap().to_string()];
        for (name, v) in request["args"].as_object().unwrap() {
            if name == "positional" {
                argv.extend(
                    v.as_array()
                        .unwrap()
                        .iter()
                        .map(|p| p.as_str().unwrap().to_string()),
                );
                continue;
            }
            argv.push(format!("--{name}"));
            match v {
                Value::Bool(true) => {}
                Value::String(s) => argv.push(s.clone()),
                other => argv.push(other.to_string()),
            }
        }
        if argv.iter().any(|a| a == "soak") {
            continue;
        }
        // An argument vector cannot carry a NUL byte (batch lines above do).
        for a in &mut argv {
            *a = a.replace('\0', "");
        }
        let json = rng.chance(50);
        if json {
            argv.push("--json".into());
        }
        let child = Command::new(crate::support::BIN)
            .args(&argv)
            .current_dir(&dir)
            .stdin(Stdio::null())
            .stdout(Stdio::piped())
            .stderr(Stdio::piped())
            .spawn()
            .unwrap();
        let out = wait_within(child, Duration::from_secs(60));
        let context = format!("vector {n}: {argv:?}");
        let stderr = text(&out.stderr);
        assert!(!stderr.contains("panicked"), "{context}: {stderr}");
        assert!(
            matches!(out.status.code(), Some(0..=2)),
            "{context}: {:?}",
            out.status
        );
        let stdout = text(&out.stdout);
        if json && !argv.iter().any(|a| a == "export") {
            for line in stdout.lines() {
                let value: Value =
                    serde_json::from_str(line).unwrap_or_else(|e| panic!("{context}: {e}: {line}"));
                assert_printable_numbers(&value, &context);
            }
        } else {
            for word in ["NaN", "inf"] {
                let echoed = argv.iter().any(|a| a.contains(word));
                assert!(
                    echoed
                        || !stdout
                            .split(|c: char| !c.is_alphanumeric())
                            .any(|w| w == word),
                    "{context}: {stdout}"
                );
            }
        }
    }
    println!(
        "fuzz: {BATCH_LINES} batch lines ({requests} requests, {failed} refused) and {ARGUMENT_VECTORS} argument vectors, seed {SEED:#x}"
    );
    remove(&dir);
}
