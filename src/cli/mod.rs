//! The command-line interface: the machine interface used by tests, scripts and support staff.
//!
//! Every subcommand prints human text, or exactly one JSON object with `--json`. Failures exit
//! non-zero with one line on stderr (and, with `--json`, `{"error": {"kind", "message"}}`, plus
//! the engine's `reason` code where it gave one, on
//! stdout) so scripts never have to parse prose. Each subcommand is a function from parsed
//! [`Args`] to a [`Report`]; `molefeed batch` calls the same functions, so a batch line and the
//! subcommand always agree.

pub mod aliases;
mod args;
mod calc;
mod chemistry;
mod log_cmd;
mod path;
mod stock_cmd;
mod water;
mod words;

/// The older dosing subcommands, each a thin alias of `calc`, as `dispatch` routes them.
pub use aliases::COMMANDS as DOSING_COMMANDS;
pub use args::Args;
/// Each older subcommand and the calculator of the table it stands for.
pub fn aliases() -> Vec<(&'static str, &'static str)> {
    aliases::ALIASES
        .iter()
        .map(|a| (a.command, a.calculator))
        .collect()
}

use serde_json::{Value, json};
use std::io::{BufRead, Read, Write};

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

    /// Writing the output failed: the answer did not reach its reader.
    pub fn output(e: std::io::Error) -> CliError {
        CliError {
            kind: OUTPUT_FAILED.into(),
            message: format!("cannot write the output: {e}"),
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
    if command != "calc" && args.switch("help") {
        return command_help(command);
    }
    let result = match command {
        "mass" => chemistry::mass(args),
        "balance" => chemistry::balance(args),
        "convert" => chemistry::convert(args),
        "reactions" => chemistry::reactions(args),
        "equivalent" => chemistry::equivalent(args),
        "calculators" => calc::list(args),
        "calc" => calc::run(args),
        c if aliases::find(c).is_some() => aliases::run_command(c, args),
        "log" => log_cmd::run(args),
        "ph-after" => water::ph_after(args).map(advisory),
        "dose-for-ph" => water::dose_for_ph(args).map(advisory),
        "stability" => water::stability(args).map(advisory),
        "curve" => water::curve(args).map(advisory),
        "coagulant" => water::coagulant(args).map(advisory),
        "neutralize" => water::neutralize(args).map(advisory),
        // The path's cautions end with the advisory already.
        "path" => path::run(args),
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

/// `molefeed COMMAND --help`: the command's lines of the overview, and for an older dosing
/// subcommand the calculator it stands for, with that calculator's inputs from the table.
fn command_help(command: &str) -> CliResult {
    let mut text: String = HELP
        .lines()
        .filter(|l| l.contains(command))
        .map(|l| format!("{l}\n"))
        .collect();
    if text.is_empty() {
        return Err(CliError::usage(format!(
            "unknown command '{command}'; try 'molefeed help'"
        )));
    }
    if let Some(alias) = aliases::find(command) {
        text.push('\n');
        text.push_str(&aliases::help(alias));
        text.push_str("\nThe calculator's inputs:\n\n");
        text.push_str(&calc::help(crate::engine::calculators::find(
            alias.calculator,
        )?)?);
    }
    Ok(Report {
        json: json!({ "help": text }),
        human: text,
    })
}

/// Water-chemistry results carry the same advisory caution as every dosing result: the
/// numbers inform; a licensed operator decides under the permit and local codes.
/// Its line and its JSON are the same every time, so they are rendered once (a batch of
/// `ph-after` lines would otherwise render the sentence for every line).
fn advisory(mut report: Report) -> Report {
    let rendered = advisory_rendered();
    report.human.push('\n');
    report.human.push_str(&rendered.line);
    report.human.push('\n');
    if let Some(object) = report.json.as_object_mut() {
        let cautions = object
            .entry("cautions")
            .or_insert_with(|| Value::Array(Vec::new()));
        if let (Some(list), Value::Array(advisory)) = (cautions.as_array_mut(), &rendered.json) {
            list.extend(advisory.iter().cloned());
        }
    }
    report
}

/// The advisory caution list as JSON text, for an answer written straight to the output
/// (`water::stream`): the `cautions` that [`advisory`] gives a report without any.
fn advisory_json_text() -> &'static str {
    &advisory_rendered().text
}

/// The advisory caution rendered once: its line, its JSON list, and that list as text.
struct Advisory {
    line: String,
    json: Value,
    text: String,
}

fn advisory_rendered() -> &'static Advisory {
    static RENDERED: std::sync::OnceLock<Advisory> = std::sync::OnceLock::new();
    RENDERED.get_or_init(|| {
        let caution = crate::engine::dosing::Caution::advisory();
        let json = calc::cautions_json(std::slice::from_ref(&caution));
        Advisory {
            line: words::caution_line(&caution),
            text: json.to_string(),
            json,
        }
    })
}

const HELP: &str =
    "molefeed — chemical feed for water treatment (advisory; a licensed operator decides)

usage: molefeed                       open the app on the built-in demo site
       molefeed COMMAND [ARGS] [--json]

water:      ph-after | dose-for-ph | stability | curve | coagulant | neutralize  (--ph --temperature --alkalinity [--calcium-as-caco3|--calcium-as-ca --magnesium-as-caco3|--magnesium-as-mg ions]; see docs/water-notes.md)
            ph-after and dose-for-ph with --json --fields K,K: only those keys of the answer (and its cautions)
plant path: path [--site FILE] [--flow Q --flow-unit m3-per-day|mgd] WATER --step CHEMICAL=DOSE ...   every dose in order, the water after each (with --site and no --step: the site's path and doses)
dose log:   log template | log append --file F < entry.json | log list --file F [--from D --to D] | log history --file F --id ID | log export --file F --format csv|jsonl | log merge --file F --from G | log salvage --file F --to G
readings:   log reading|delivery --file F --site S ... | log readings --file F [--from D --to D --tap THING --chemical WHAT] | log report --file F --site S --from D --to D
calculators: calculators [--json]                 every calculator, its inputs (units, basis) and result ids
            calc ID --INPUT VALUE ... [--product P] [--units si|us] [--site FILE] [--json]   (calc ID --help)
dosing:     feed | neutralize-feed | chlorine | coagulation | dechlor | ct | soften | pump-check | dilute | sludge  (older forms of calc: COMMAND --help shows how their flags translate)
chemistry:  mass FORMULA
            balance \"EQUATION\" [--per SPECIES]
            convert \"EQUATION\" --from F --amount N --unit g|kg|mg|mol|mmol --to F [--to-unit U]
            equivalent SPECIES [--reaction ID --carrier C]
            reactions
";

/// Runs the CLI on `args` (without the program name) and returns the process exit code.
///
/// Output goes through one buffered writer whose every failure (a closed pipe, a full disk,
/// `/dev/full`) becomes a non-zero exit with a one-line message: a script must never take an
/// empty or cut output for an answer.
pub fn main(argv: &[String]) -> i32 {
    let Some(command) = argv.first() else {
        return open_app();
    };
    // Decided from the words themselves, so even a command line that cannot be parsed
    // answers a script in JSON.
    let json = argv.iter().any(|a| a == "--json");
    if command == "batch" {
        return match batch_arguments(&argv[1..]) {
            Ok(()) => batch(),
            Err(e) => fail(&e, json),
        };
    }
    let mut out = Tracked {
        inner: std::io::BufWriter::new(std::io::stdout().lock()),
        started: false,
    };
    let result = run(command, &argv[1..], json, &mut out)
        .and_then(|()| out.flush().map_err(CliError::output));
    match result {
        Ok(()) => 0,
        Err(e) => {
            // A streamed answer may have begun before the failure: its line is ended so the
            // error object stands on a line of its own (the exit status is the verdict).
            let ended = if out.started && e.kind != OUTPUT_FAILED {
                writeln!(out)
            } else {
                Ok(())
            };
            let _unwritable = ended.and_then(|()| out.flush());
            fail(&e, json)
        }
    }
}

/// A writer that notes whether any output went through it.
struct Tracked<W> {
    inner: W,
    started: bool,
}

impl<W: Write> Write for Tracked<W> {
    fn write(&mut self, bytes: &[u8]) -> std::io::Result<usize> {
        let written = self.inner.write(bytes)?;
        self.started |= written > 0;
        Ok(written)
    }

    fn flush(&mut self) -> std::io::Result<()> {
        self.inner.flush()
    }
}

/// `molefeed batch` takes its requests on stdin; `--json` is accepted (every answer is JSON).
fn batch_arguments(rest: &[String]) -> Result<(), CliError> {
    match rest.iter().find(|a| *a != "--json") {
        Some(extra) => Err(CliError::usage(format!(
            "batch takes no arguments (got '{extra}'): one JSON request per stdin line"
        ))),
        None => Ok(()),
    }
}

/// One command line: help, or a subcommand whose output is written to `out`.
fn run(command: &str, rest: &[String], json: bool, out: &mut dyn Write) -> Result<(), CliError> {
    if matches!(command, "help" | "--help" | "-h") {
        return write_help(json, out);
    }
    if command.starts_with('-') {
        return Err(CliError::usage(format!(
            "'{command}' is not a command; the command comes first: molefeed COMMAND [ARGS]; try 'molefeed help'"
        )));
    }
    let args = Args::parse(rest)?;
    execute(command, &args, json, out)
}

fn write_help(json: bool, out: &mut dyn Write) -> Result<(), CliError> {
    let written = if json {
        writeln!(out, "{}", json!({ "help": HELP }))
    } else {
        out.write_all(HELP.as_bytes())
    };
    written.map_err(CliError::output)
}

/// Runs one subcommand and writes its output: the same path for a command line and a batch
/// line. `log list` and `log export` write entry by entry, so their memory does not grow
/// with the log; every other command builds its [`Report`] and is checked whole.
fn execute(command: &str, args: &Args, json: bool, out: &mut dyn Write) -> Result<(), CliError> {
    if command == "log"
        && let Some(streamed) = log_cmd::stream(args, json, out)
    {
        return streamed;
    }
    if json && let Some(streamed) = water::stream(command, args, out) {
        return streamed;
    }
    let report = dispatch(command, args)?;
    write_report(&report, json, out)
}

/// Prints a report, after [`check_numbers`] has passed it: no command prints a number that
/// is not one.
fn write_report(report: &Report, json: bool, out: &mut dyn Write) -> Result<(), CliError> {
    check_numbers(&report.json)?;
    check_text(&report.human, &report.json)?;
    if json {
        writeln!(out, "{}", report.json)
    } else {
        writeln!(out, "{}", report.human.trim_end())
    }
    .map_err(CliError::output)
}

/// The largest magnitude a printed number may have. No flow, dose, mass, volume or time the
/// CLI reports comes near it in any unit it prints (the largest plants treat about 1e10 L a
/// day); a result beyond it comes from an overflow, not from the water, and is refused. The
/// log refuses to record such a number too, so a listing never stops at one.
pub const LARGEST_OUTPUT: f64 = crate::log::record::LARGEST_NUMBER;

/// The one guard between a result and the output, used by every command and by `batch`:
/// fails if `value` holds a number beyond [`LARGEST_OUTPUT`] (a percentage beyond
/// [`LARGEST_PERCENT`]), or a caution parameter written as a number that is not finite or
/// beyond those limits (parameters are text, so `inf` could pass).
///
/// A non-finite number cannot reach here as a JSON number (serde_json turns it into
/// `null`); that is why inputs are bounded where they are parsed (`args`) and why
/// [`write_report`] also checks the human text with [`check_text`].
pub fn check_numbers(value: &Value) -> Result<(), CliError> {
    let mut path = Vec::new();
    match find_bad_number(value, &mut path) {
        None => Ok(()),
        Some(what) => Err(bad_number(&path.join("."), &what)),
    }
}

/// [`check_numbers`] for one number `v` written straight to the output (`water::stream`),
/// at `path` (the keys leading to it): the same limits, the same refusal.
fn check_number(path: &[&str], v: f64) -> Result<(), CliError> {
    let name = path.last().copied().unwrap_or("");
    if beyond_limit(name, v) {
        Err(bad_number(&path.join("."), &format!("{v:e}")))
    } else {
        Ok(())
    }
}

/// The refusal of an unprintable number `what` found at `path` (dotted keys).
fn bad_number(path: &str, what: &str) -> CliError {
    CliError {
        kind: "result-not-a-number".into(),
        message: format!(
            "the result at {} is {what}, which no measurement can produce; check the inputs",
            if path.is_empty() { "the top" } else { path }
        ),
        reason: None,
    }
}

/// Describes the first unprintable number in `value`, leaving `path` pointing at it.
fn find_bad_number(value: &Value, path: &mut Vec<String>) -> Option<String> {
    match value {
        Value::Number(n) => {
            let v = n.as_f64()?;
            // The quantity is named by the nearest object key (array indexes name nothing).
            let name = path.iter().rev().find(|p| p.parse::<usize>().is_err());
            beyond_limit(name.map_or("", String::as_str), v).then(|| format!("{v:e}"))
        }
        Value::Array(items) => items.iter().enumerate().find_map(|(i, item)| {
            path.push(i.to_string());
            let found = find_bad_number(item, path);
            if found.is_none() {
                path.pop();
            }
            found
        }),
        Value::Object(fields) => {
            if let (Some(Value::String(_)), Some(Value::Array(params))) =
                (fields.get("key"), fields.get("params"))
                && let Some(bad) = params.iter().find_map(bad_caution_parameter)
            {
                path.push("params".into());
                return Some(bad);
            }
            fields.iter().find_map(|(name, field)| {
                path.push(name.clone());
                let found = find_bad_number(field, path);
                if found.is_none() {
                    path.pop();
                }
                found
            })
        }
        _ => None,
    }
}

/// A caution parameter is a `[name, text]` pair; text that reads as a number must be one.
fn bad_caution_parameter(param: &Value) -> Option<String> {
    let name = param.get(0)?.as_str()?;
    let text = param.get(1)?.as_str()?;
    let v: f64 = text.trim().parse().ok()?;
    beyond_limit(name, v).then(|| format!("{name} '{text}'"))
}

/// The largest magnitude of a percentage: a pump set to a hundred times its full output is
/// not a setting but a mistyped capacity, and is refused rather than printed as `2.5e14 %`.
pub const LARGEST_PERCENT: f64 = 1e4;

/// Whether the number `v` of the quantity called `name` cannot be printed as a result.
fn beyond_limit(name: &str, v: f64) -> bool {
    // A deviation is no setting: the report's fed dose 130 times the logged one is what a
    // delivery typed with a digit too many gives, and the report must show it (with its
    // danger caution), not refuse to print.
    let limit = if name.contains("percent") && !name.contains("deviation") {
        LARGEST_PERCENT
    } else {
        LARGEST_OUTPUT
    };
    !v.is_finite() || v.abs() > limit
}

/// Fails if human text holds a word Rust prints for a number that is not one (`NaN`, `inf`),
/// unless the JSON beside it holds the same word in a string: that is text echoed from the
/// request (the formula `NaN`), not a number. A number that is not one shows in the JSON
/// as `null`, which a script cannot tell from "not given", so the text is where it shows.
fn check_text(human: &str, json: &Value) -> Result<(), CliError> {
    let bad = words(human).find(|word| NOT_A_NUMBER.contains(word) && !json_has_word(json, word));
    match bad {
        None => Ok(()),
        Some(word) => Err(CliError {
            kind: "result-not-a-number".into(),
            message: format!(
                "a result came out as '{word}', which no measurement can produce; check the inputs"
            ),
            reason: None,
        }),
    }
}

/// How Rust writes a non-finite `f64`, with or without a sign.
const NOT_A_NUMBER: [&str; 2] = ["NaN", "inf"];

fn words(text: &str) -> impl Iterator<Item = &str> {
    text.split(|c: char| !(c.is_alphanumeric() || c == '_'))
}

fn json_has_word(value: &Value, word: &str) -> bool {
    match value {
        Value::String(s) => words(s).any(|w| w == word),
        Value::Array(items) => items.iter().any(|v| json_has_word(v, word)),
        Value::Object(fields) => fields
            .iter()
            .any(|(k, v)| words(k).any(|w| w == word) || json_has_word(v, word)),
        _ => false,
    }
}

/// Reports a failure: one line on stderr, and with `--json` the error object on stdout.
/// Returns the exit code: 2 for a usage error, else 1.
fn fail(e: &CliError, json: bool) -> i32 {
    let mut stderr = std::io::stderr().lock();
    // Nowhere is left to report a failing stderr; the exit code below still says it failed.
    let _unreportable = writeln!(stderr, "molefeed: {}", one_line(&e.message));
    if json && e.kind != OUTPUT_FAILED {
        let mut stdout = std::io::stdout().lock();
        let _unreportable = writeln!(stdout, "{}", e.to_json()).and_then(|()| stdout.flush());
    }
    if e.kind == "usage" { 2 } else { 1 }
}

/// The kind of [`CliError::output`]: stdout itself failed, so nothing more goes there.
const OUTPUT_FAILED: &str = "output-failed";

/// Text as one printable line: control characters (a newline in a tap name, a terminal
/// escape), bidirectional overrides and line separators are shown as `\u{..}` escapes (`\n`,
/// `\r`, `\t` for the common ones), and a backslash is doubled, so escaped text cannot
/// forge a line or pass for other text, and the terminal runs nothing.
pub fn one_line(text: &str) -> std::borrow::Cow<'_, str> {
    let hidden = |c: char| {
        c.is_control()
            || c == '\\'
            || matches!(c, '\u{200e}' | '\u{200f}' | '\u{2028}' | '\u{2029}')
            || ('\u{202a}'..='\u{202e}').contains(&c)
            || ('\u{2066}'..='\u{2069}').contains(&c)
    };
    if !text.contains(hidden) {
        return std::borrow::Cow::Borrowed(text);
    }
    let mut out = String::with_capacity(text.len() + 8);
    for c in text.chars() {
        match c {
            '\n' => out.push_str("\\n"),
            '\r' => out.push_str("\\r"),
            '\t' => out.push_str("\\t"),
            '\\' => out.push_str("\\\\"),
            c if hidden(c) => out.push_str(&format!("\\u{{{:x}}}", c as u32)),
            c => out.push(c),
        }
    }
    std::borrow::Cow::Owned(out)
}

/// The largest input file read whole (a site profile is a few kilobytes).
const LARGEST_INPUT_FILE: u64 = 16 << 20;

/// Reads a small input file such as a site profile. Only a regular file is read: a FIFO, a
/// terminal or a device would block or never end. The path is checked before it is opened
/// (opening a FIFO waits for a writer) and the open file again, in case it was swapped.
pub fn read_input_file(path: &str, what: &str) -> Result<String, CliError> {
    let cannot = |why: String| CliError::io(format!("cannot read {what} {path}: {why}"));
    let regular = |meta: std::fs::Metadata| {
        if meta.is_file() {
            Ok(())
        } else {
            Err(cannot("not a regular file".into()))
        }
    };
    regular(std::fs::metadata(path).map_err(|e| cannot(e.to_string()))?)?;
    let file = std::fs::File::open(path).map_err(|e| cannot(e.to_string()))?;
    regular(file.metadata().map_err(|e| cannot(e.to_string()))?)?;
    let mut text = String::new();
    std::io::Read::take(file, LARGEST_INPUT_FILE + 1)
        .read_to_string(&mut text)
        .map_err(|e| cannot(e.to_string()))?;
    if text.len() as u64 > LARGEST_INPUT_FILE {
        return Err(cannot(format!("larger than {LARGEST_INPUT_FILE} bytes")));
    }
    Ok(text)
}

/// The longest batch line read: twice the largest record the log accepts
/// ([`crate::log::frame::MAX_PAYLOAD`]), room for JSON escapes and the request around an
/// entry. A longer line is answered with an error and never held in memory whole.
pub const MAX_BATCH_LINE: usize = 2 * crate::log::frame::MAX_PAYLOAD as usize;

/// `molefeed batch`: one JSON request per stdin line, one JSON answer per stdout line, in
/// order. Every line gets its answer, an error object for a line that is too long, not
/// UTF-8, not JSON or failed (blank lines carry no request and get none); the exit code is 1
/// if any line failed. A failed write to stdout ends the batch with exit code 1.
fn batch() -> i32 {
    let input = std::io::BufReader::with_capacity(BATCH_BUFFER, std::io::stdin().lock());
    let mut lines = BoundedLines::new(input, MAX_BATCH_LINE);
    // Answers are gathered in a buffer of our own (stdout's own is line-buffered: one write
    // call per answer) and written when no further request is waiting.
    let mut out = std::io::BufWriter::with_capacity(BATCH_BUFFER, std::io::stdout().lock());
    let mut failures = 0usize;
    let mut answer = Vec::new();
    loop {
        // The answers go out whenever no whole request is left in the input buffer, that is
        // before the batch could wait for more input: a script that talks to a batch line by
        // line gets each answer before it sends the next request (whatever follows it: a
        // blank line, half a request), and a batch read from a file or a pipe full of
        // requests costs one write call per buffer, not per answer.
        if !lines.line_buffered()
            && let Err(e) = out.flush()
        {
            return fail(&CliError::output(e), false);
        }
        let line = match lines.next() {
            Ok(Some(line)) => line,
            Ok(None) => break,
            Err(e) => {
                // The rest of stdin cannot be read: answer once, say so, and stop.
                failures += 1;
                let e = CliError::io(format!("reading the batch from stdin: {e}"));
                if let Err(e) = writeln!(out, "{}", e.to_json()).and_then(|()| out.flush()) {
                    return fail(&CliError::output(e), false);
                }
                fail(&e, false);
                break;
            }
        };
        if line.is_blank() {
            continue;
        }
        answer.clear();
        if let Err(e) = answer_line(&line, &mut answer) {
            failures += 1;
            answer.clear();
            // A Vec does not fail to grow short of running out of memory.
            let _infallible = writeln!(answer, "{}", e.to_json());
        }
        if let Err(e) = out.write_all(&answer) {
            return fail(&CliError::output(e), false);
        }
    }
    if let Err(e) = out.flush() {
        return fail(&CliError::output(e), false);
    }
    if failures > 0 { 1 } else { 0 }
}

/// The size of `batch`'s input and output buffers.
const BATCH_BUFFER: usize = 64 << 10;

/// The answer to one batch line, written into `answer`.
fn answer_line(line: &BatchLine, answer: &mut Vec<u8>) -> Result<(), CliError> {
    let text = match line {
        BatchLine::TooLong { bytes } => {
            return Err(CliError {
                kind: "line-too-long".into(),
                message: format!(
                    "batch line of {bytes} bytes is longer than {MAX_BATCH_LINE} bytes; it was skipped unread"
                ),
                reason: None,
            });
        }
        BatchLine::Bytes(bytes) => std::str::from_utf8(bytes).map_err(|e| CliError {
            kind: "not-utf8".into(),
            message: format!("batch line is not UTF-8 text: {e}"),
            reason: None,
        })?,
    };
    if let Some((command, args)) = Args::from_request(text) {
        return execute(&command, &args?, true, answer);
    }
    // Not a well-formed request: read as a JSON tree, which says what is wrong with it.
    let request: Value = serde_json::from_str(text)
        .map_err(|e| CliError::usage(format!("batch line is not JSON: {e}")))?;
    let command = request["command"]
        .as_str()
        .ok_or_else(|| CliError::usage("batch line needs a \"command\" string"))?;
    let args = Args::from_json(&request["args"])?;
    execute(command, &args, true, answer)
}

/// One line of a batch, as read: its bytes, or only its length when it was too long.
enum BatchLine {
    Bytes(Vec<u8>),
    TooLong { bytes: usize },
}

impl BatchLine {
    fn is_blank(&self) -> bool {
        matches!(self, BatchLine::Bytes(b) if b.iter().all(u8::is_ascii_whitespace))
    }
}

/// Splits a byte stream into lines without ever holding more than `limit` bytes of one:
/// the length is known before the bytes are decoded, and the rest of a long line is skipped
/// as it streams past.
struct BoundedLines<R> {
    input: std::io::BufReader<R>,
    limit: usize,
}

impl<R: Read> BoundedLines<R> {
    fn new(input: std::io::BufReader<R>, limit: usize) -> Self {
        BoundedLines { input, limit }
    }

    /// Whether a whole line is already in the buffer, so that the next [`Self::next`]
    /// returns without waiting for the input.
    fn line_buffered(&self) -> bool {
        self.input.buffer().contains(&b'\n')
    }

    /// The next line without its `\n`, or `None` at the end of the input.
    fn next(&mut self) -> std::io::Result<Option<BatchLine>> {
        let mut kept = Vec::new();
        let mut total = 0usize;
        loop {
            let buffer = match self.input.fill_buf() {
                Ok(buffer) => buffer,
                Err(e) if e.kind() == std::io::ErrorKind::Interrupted => continue,
                Err(e) => return Err(e),
            };
            if buffer.is_empty() {
                return Ok((total > 0).then(|| Self::finish(kept, total, self.limit)));
            }
            let (chunk, done) = match buffer.iter().position(|&b| b == b'\n') {
                Some(end) => (&buffer[..end], true),
                None => (buffer, false),
            };
            if total + chunk.len() <= self.limit {
                kept.extend_from_slice(chunk);
            } else if kept.capacity() > 0 {
                // Past the limit: the line is refused, so what was kept is no longer needed.
                kept = Vec::new();
            }
            total = total.saturating_add(chunk.len());
            let used = chunk.len() + usize::from(done);
            self.input.consume(used);
            if done {
                // A lone "\n" still counts as a (blank) line.
                return Ok(Some(Self::finish(kept, total, self.limit)));
            }
        }
    }

    fn finish(kept: Vec<u8>, total: usize, limit: usize) -> BatchLine {
        if total > limit {
            BatchLine::TooLong { bytes: total }
        } else {
            BatchLine::Bytes(kept)
        }
    }
}

/// `molefeed` with no arguments: the app, through the entry Android uses too.
#[cfg(feature = "app")]
fn open_app() -> i32 {
    const NEEDS_DISPLAY: &str = "molefeed: the app needs a graphical display; 'molefeed help' lists the command-line calculators";
    // On a Linux or BSD desktop without X or Wayland (a server, an SSH session), say so in one
    // line rather than the windowing library's error with its source paths.
    let unix_desktop = cfg!(all(
        unix,
        not(target_os = "macos"),
        not(target_os = "android")
    ));
    let no_display = ["DISPLAY", "WAYLAND_DISPLAY", "WAYLAND_SOCKET"]
        .iter()
        .all(|v| std::env::var_os(v).is_none_or(|x| x.is_empty()));
    if unix_desktop && no_display {
        eprintln!("{NEEDS_DISPLAY}.");
        return 2;
    }
    crate::app::prepare_desktop_fonts();
    match crate::app::run(crate::app::RunOptions::desktop()) {
        Ok(()) => 0,
        Err(e) => {
            // The first line of the backend's error names the cause; the rest is its internals.
            let cause = e.to_string();
            let cause = cause.lines().next().unwrap_or_default().to_string();
            eprintln!("{NEEDS_DISPLAY} (the window could not open: {cause}).");
            2
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_guard_refuses_huge_numbers_and_caution_parameters_that_are_not_numbers() {
        let fine = json!({"dose": 3.5, "cautions": [{"key": "pump-above-range", "params": [["percent", "104"]]}]});
        assert!(check_numbers(&fine).is_ok());
        for bad in [
            json!({"results": {"pump_percent": 4e307}}),
            json!({"cautions": [{"key": "pump-above-range", "params": [["percent", "inf"]]}]}),
            json!({"cautions": [{"key": "k", "params": [["ratio", "NaN"]]}]}),
            json!({"cautions": [{"key": "k", "params": [["dose", "2e20"]]}]}),
        ] {
            let e = check_numbers(&bad).unwrap_err();
            assert_eq!(e.kind, "result-not-a-number", "{bad}");
        }
        let e = check_numbers(&json!({"a": [1, {"b": -1e16}]})).unwrap_err();
        assert!(e.message.contains("a.1.b"), "{}", e.message);
        // A percentage has its own, lower limit; other quantities may be that large.
        assert!(check_numbers(&json!({"pump_percent": 2.5e14})).is_err());
        assert!(check_numbers(&json!({"pumps": [{"percent": [2e4]}]})).is_err());
        assert!(check_numbers(&json!({"gal_per_day": 2.5e14, "pump_percent": 250.0})).is_ok());
        let caution =
            json!({"cautions": [{"key": "pump-above-range", "params": [["percent", "2.5e14"]]}]});
        assert!(check_numbers(&caution).is_err());
    }

    #[test]
    fn text_with_a_non_number_fails_unless_the_request_echoed_it() {
        assert!(check_text("dose NaN mg/L", &json!({"dose": null})).is_err());
        assert!(check_text("pump-above-range: percent=inf", &json!({})).is_err());
        assert!(check_text("NaN: 36.997 g/mol", &json!({"formula": "NaN"})).is_ok());
        assert!(check_text("information, infinite", &json!({})).is_ok());
    }

    #[test]
    fn one_line_shows_what_would_break_a_line_or_drive_a_terminal() {
        assert_eq!(one_line("plain tap"), "plain tap");
        assert_eq!(one_line("a\nb\r\tc\\"), "a\\nb\\r\\tc\\\\");
        assert_eq!(
            one_line("\u{1b}[2J\u{9b}\u{202e}x"),
            "\\u{1b}[2J\\u{9b}\\u{202e}x"
        );
    }

    #[test]
    fn bounded_lines_measure_a_long_line_without_keeping_it() {
        let input: &[u8] = b"short\n0123456789abcdef\n\nlast";
        // A tiny buffer makes every line arrive in several pieces.
        let reader = std::io::BufReader::with_capacity(3, input);
        let mut lines = BoundedLines::new(reader, 8);
        let mut seen = Vec::new();
        while let Some(line) = lines.next().unwrap() {
            seen.push(match line {
                BatchLine::Bytes(b) => String::from_utf8(b).unwrap(),
                BatchLine::TooLong { bytes } => format!("too long: {bytes}"),
            });
        }
        assert_eq!(seen, ["short", "too long: 16", "", "last"]);
    }
}
