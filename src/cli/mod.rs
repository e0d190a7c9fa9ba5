//! The command-line interface: the machine interface used by tests, scripts and support staff.
//!
//! Every subcommand prints human text, or exactly one JSON object with `--json`. Failures exit
//! non-zero with one line on stderr (and, with `--json`, `{"error": {"kind", "message"}}`, plus
//! the engine's `reason` code where it gave one, on
//! stdout) so scripts never have to parse prose. Each subcommand is a function from parsed
//! [`Args`] to a [`Report`]; `molefeed batch` calls the same functions, so a batch line and the
//! subcommand always agree.

mod args;
mod calc;
mod chemistry;
mod dosing;
mod log_cmd;
mod water;

pub use args::Args;
/// The dosing subcommands, as `dispatch` routes them.
pub use dosing::COMMANDS as DOSING_COMMANDS;

use serde_json::{Value, json};
use std::io::Write;

/// What a subcommand produces: the text a person reads and the object a script reads.
pub struct Report {
    pub human: String,
    pub json: Value,
}

/// A CLI failure: a stable kind code and a one-line message.
#[derive(Debug)]
pub struct CliError {
    pub kind: String,
    pub message: String,
    /// The engine's reason code, where it gave one (what the app translates).
    pub reason: Option<&'static str>,
}

impl CliError {
    pub fn usage(message: impl Into<String>) -> CliError {
        CliError {
            kind: "usage".into(),
            message: message.into(),
            reason: None,
        }
    }

    pub fn io(message: impl Into<String>) -> CliError {
        CliError {
            kind: "io".into(),
            message: message.into(),
            reason: None,
        }
    }

    pub fn to_json(&self) -> Value {
        let mut error = json!({"kind": self.kind, "message": self.message});
        if let Some(reason) = self.reason {
            error["reason"] = json!(reason);
        }
        json!({ "error": error })
    }
}

impl From<crate::engine::Error> for CliError {
    fn from(e: crate::engine::Error) -> CliError {
        CliError {
            kind: e.kind().code().into(),
            message: e.to_string(),
            reason: e.reason(),
        }
    }
}

pub type CliResult = Result<Report, CliError>;

/// The subcommands, by name. `batch` and the app-opening default are handled in [`main`].
pub fn dispatch(command: &str, args: &Args) -> CliResult {
    let result = match command {
        "mass" => chemistry::mass(args),
        "balance" => chemistry::balance(args),
        "convert" => chemistry::convert(args),
        "reactions" => chemistry::reactions(args),
        "equivalent" => chemistry::equivalent(args),
        "calculators" => calc::list(args),
        "calc" => calc::run(args),
        c if dosing::COMMANDS.contains(&c) => dosing::run(c, args),
        "log" => log_cmd::run(args),
        "ph-after" => water::ph_after(args).map(advisory),
        "dose-for-ph" => water::dose_for_ph(args).map(advisory),
        "stability" => water::stability(args).map(advisory),
        "curve" => water::curve(args).map(advisory),
        "coagulant" => water::coagulant(args).map(advisory),
        "neutralize" => water::neutralize(args).map(advisory),
        other => {
            return Err(CliError::usage(format!(
                "unknown command '{other}'; try 'molefeed help'"
            )));
        }
    }?;
    args.switch("json");
    args.reject_unused()?;
    Ok(result)
}

/// Water-chemistry results carry the same advisory caution as every dosing result: the
/// numbers inform; a licensed operator decides under the permit and local codes.
fn advisory(mut report: Report) -> Report {
    let caution = crate::engine::dosing::Caution::advisory();
    report.human.push_str("\n[note] advisory-operator-decides: results are advisory; a licensed operator decides, under the plant's permit and local codes\n");
    if let Some(object) = report.json.as_object_mut() {
        let cautions = object
            .entry("cautions")
            .or_insert_with(|| Value::Array(Vec::new()));
        if let Some(list) = cautions.as_array_mut() {
            list.push(serde_json::to_value(&caution).unwrap_or(Value::Null));
        }
    }
    report
}

const HELP: &str =
    "molefeed — chemical feed for water treatment (advisory; a licensed operator decides)

usage: molefeed                       open the app on the built-in demo site
       molefeed COMMAND [ARGS] [--json]

water:      ph-after | dose-for-ph | stability | curve | coagulant | neutralize  (--ph --temperature --alkalinity [ions]; see docs/water-notes.md)
dose log:   log template | log append --file F < entry.json | log list --file F [--from D --to D] | log history --file F --id ID | log export --file F --format csv|jsonl | log merge --file F --from G
calculators: calculators [--json]                 every calculator, its inputs (units, basis) and result ids
            calc ID --INPUT VALUE ... [--product P] [--units si|us] [--site FILE] [--json]   (calc ID --help)
dosing:     feed | neutralize-feed | chlorine | coagulation | dechlor | ct | soften | pump-check | dilute | sludge  (--json, --site FILE; see docs/dosing-notes.md)
chemistry:  mass FORMULA
            balance \"EQUATION\" [--per SPECIES]
            convert \"EQUATION\" --from F --amount N --unit g|kg|mg|mol|mmol --to F [--to-unit U]
            equivalent SPECIES [--reaction ID --carrier C]
            reactions
";

/// Runs the CLI on `args` (without the program name) and returns the process exit code.
pub fn main(argv: &[String]) -> i32 {
    let Some(command) = argv.first() else {
        return open_app();
    };
    if matches!(command.as_str(), "help" | "--help" | "-h") {
        print!("{HELP}");
        return 0;
    }
    if command == "batch" {
        return batch();
    }
    let args = match Args::parse(&argv[1..]) {
        Ok(args) => args,
        Err(e) => return fail(&e, argv.iter().any(|a| a == "--json")),
    };
    let json = args.switch("json");
    match dispatch(command, &args) {
        Ok(report) => {
            let mut out = std::io::stdout().lock();
            let _ = if json {
                writeln!(out, "{}", report.json)
            } else {
                writeln!(out, "{}", report.human.trim_end())
            };
            0
        }
        Err(e) => fail(&e, json),
    }
}

fn fail(e: &CliError, json: bool) -> i32 {
    eprintln!("molefeed: {}", e.message);
    if json {
        println!("{}", e.to_json());
    }
    if e.kind == "usage" { 2 } else { 1 }
}

/// `molefeed batch`: one JSON request per stdin line, one JSON result per stdout line, in order.
fn batch() -> i32 {
    let stdin = std::io::stdin();
    let mut out = std::io::BufWriter::new(std::io::stdout().lock());
    let mut failures = 0;
    for line in std::io::BufRead::lines(stdin.lock()) {
        let Ok(line) = line else { break };
        if line.trim().is_empty() {
            continue;
        }
        let result = batch_line(&line);
        if result.is_err() {
            failures += 1;
        }
        let value = match result {
            Ok(report) => report.json,
            Err(e) => e.to_json(),
        };
        let _ = writeln!(out, "{value}");
    }
    let _ = out.flush();
    if failures > 0 { 1 } else { 0 }
}

fn batch_line(line: &str) -> CliResult {
    let request: Value = serde_json::from_str(line)
        .map_err(|e| CliError::usage(format!("batch line is not JSON: {e}")))?;
    let command = request["command"]
        .as_str()
        .ok_or_else(|| CliError::usage("batch line needs a \"command\" string"))?;
    let args = Args::from_json(&request["args"])?;
    dispatch(command, &args)
}

/// `molefeed` with no arguments: the app, through the entry Android uses too.
#[cfg(feature = "app")]
fn open_app() -> i32 {
    crate::app::prepare_desktop_fonts();
    match crate::app::run(crate::app::RunOptions::desktop()) {
        Ok(()) => 0,
        Err(e) => {
            eprintln!("molefeed: cannot open the app window: {e}");
            1
        }
    }
}

#[cfg(not(feature = "app"))]
fn open_app() -> i32 {
    eprintln!(
        "molefeed: this binary was built without the app (feature `app` is off); rebuild with default features, or use a subcommand (see 'molefeed help')."
    );
    2
}
