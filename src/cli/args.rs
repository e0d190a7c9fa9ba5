//! A small, strict flag parser shared by subcommands and `molefeed batch`.
//!
//! Strict because a mistyped flag on a dosing calculation must not be silently ignored:
//! every flag given must be read by the subcommand, or the command fails with a usage error.
//! For the same reason a flag value written as a number is checked once, here, for every
//! subcommand: a value no measurement can take (`1e-300`, `1e30`) is refused before any
//! calculator sees it, because such inputs overflow or underflow into results that are not
//! numbers.

use super::CliError;
use serde_json::Value;
use std::cell::Cell;
use std::collections::BTreeMap;

/// Parsed arguments: positionals in order, and `--name value` / `--switch` flags.
#[derive(Debug, Default)]
pub struct Args {
    positional: Vec<String>,
    /// Each flag's value, and whether any code has read it (see [`Args::reject_unused`]).
    flags: Flags,
    /// Built from a `molefeed batch` line: stdin carries the batch, so no command may read it.
    from_batch: bool,
    /// Every value of a flag that may be given more than once ([`REPEATABLE`]), in order.
    repeated: BTreeMap<String, Vec<String>>,
}

/// The flags by name, in the order given. A command has a dozen at most, so a scan of a
/// list (names of other lengths are passed over without comparing their text) is cheaper
/// than a tree of owned keys: a batch line builds one per request.
#[derive(Default)]
struct Flags(Vec<(String, Flag)>);

/// By name, so two `Args` of the same flags given in another order print alike.
impl std::fmt::Debug for Flags {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let mut sorted: Vec<_> = self.0.iter().map(|(k, v)| (k, v)).collect();
        sorted.sort_by(|a, b| a.0.cmp(b.0));
        f.debug_map().entries(sorted).finish()
    }
}

impl Flags {
    fn get(&self, name: &str) -> Option<&Flag> {
        self.0.iter().find(|(k, _)| k == name).map(|(_, f)| f)
    }

    fn contains_key(&self, name: &str) -> bool {
        self.get(name).is_some()
    }

    /// Adds `flag`, or replaces the one of the same name and returns it.
    fn insert(&mut self, name: String, flag: Flag) -> Option<Flag> {
        match self.0.iter_mut().find(|(k, _)| *k == name) {
            Some((_, old)) => Some(std::mem::replace(old, flag)),
            None => {
                self.0.push((name, flag));
                None
            }
        }
    }
}

/// A flag as given, and whether a subcommand has read it.
#[derive(Debug)]
struct Flag {
    value: Option<String>,
    /// A value a batch line gave as a JSON number: read as that number (no text made and
    /// parsed back); its text (`text_of_number`) is made only if a command reads the flag as
    /// text.
    number: Option<(serde_json::Number, f64)>,
    text_of_number: std::cell::OnceCell<String>,
    used: Cell<bool>,
}

impl Flag {
    fn new(value: Option<String>) -> Flag {
        Flag {
            value,
            number: None,
            text_of_number: std::cell::OnceCell::new(),
            used: Cell::new(false),
        }
    }

    /// The flag's text: as given, or the JSON number's own text.
    fn text(&self) -> Option<&str> {
        match &self.number {
            Some((n, _)) => Some(self.text_of_number.get_or_init(|| n.to_string())),
            None => self.value.as_deref(),
        }
    }
}

/// Flags that may be given more than once, each adding a value in order (`--step lime=20
/// --step carbon-dioxide=8`); any other flag given twice is refused.
const REPEATABLE: [&str; 1] = ["step"];

/// The smallest magnitude a numeric flag may have (other than zero). Far below any reading a
/// plant takes in any unit the CLI accepts, and far above the underflow that turns a
/// quotient into NaN.
pub const SMALLEST_INPUT: f64 = 1e-12;

/// The largest magnitude a numeric flag may have: above a day's flow of the largest plants
/// in litres, and far below where a product of two inputs overflows.
pub const LARGEST_INPUT: f64 = 1e12;

impl Args {
    /// Parses command-line words. A flag takes the next word as its value unless that word is
    /// itself a flag; negative numbers (`--amount -3`) are values, not flags.
    pub fn parse(words: &[String]) -> Result<Args, CliError> {
        let mut args = Args::default();
        let mut i = 0;
        while i < words.len() {
            let word = &words[i];
            if let Some(name) = word.strip_prefix("--") {
                if let Some((name, value)) = name.split_once('=') {
                    args.insert(name, Some(value.to_string()))?;
                } else {
                    let next = words.get(i + 1).filter(|w| !is_flag(w));
                    if let Some(value) = next {
                        args.insert(name, Some(value.clone()))?;
                        i += 1;
                    } else {
                        args.insert(name, None)?;
                    }
                }
            } else {
                args.positional.push(word.clone());
            }
            i += 1;
        }
        Ok(args)
    }

    /// Builds arguments from a batch request's `args` object (names as the long flags, `_` for `-`).
    pub fn from_json(value: &Value) -> Result<Args, CliError> {
        let mut args = Args::batch();
        let Some(object) = value.as_object() else {
            return if value.is_null() {
                Ok(args)
            } else {
                Err(CliError::usage("\"args\" must be an object"))
            };
        };
        for (name, v) in object {
            args.add_json(name, v)?;
        }
        args.insert("json", None).ok();
        Ok(args)
    }

    /// A `molefeed batch` line read straight into its command and arguments, without the JSON
    /// tree of the whole line that [`Args::from_json`] reads (a map of owned keys, walked once
    /// and dropped): each argument's value is read on its own and added as `from_json` adds
    /// it. Returns `None` for anything but an object whose `args` is an object, and the caller
    /// reads such a line through `from_json`, which says what is wrong with it.
    pub fn from_request(text: &str) -> Option<(String, Result<Args, CliError>)> {
        let mut de = serde_json::Deserializer::from_str(text);
        let (command, args) = serde::Deserializer::deserialize_map(&mut de, Request).ok()?;
        // Trailing characters after the object are refused, as `serde_json::from_str` does.
        de.end().ok()?;
        Some((command?, args?))
    }

    /// No arguments, from a batch line.
    fn batch() -> Args {
        Args {
            from_batch: true,
            ..Args::default()
        }
    }

    /// Adds one entry of a batch request's `args` object (`name` as the long flag, `_` for
    /// `-`).
    fn add_json(&mut self, name: &str, v: &Value) -> Result<(), CliError> {
        let name = name.replace('_', "-");
        if name == "positional" {
            for p in v.as_array().into_iter().flatten() {
                self.positional.push(json_text(p));
            }
            return Ok(());
        }
        match v {
            // A repeatable flag's values as a list: `"step": ["lime=20", "alum=30"]`.
            Value::Array(items) if REPEATABLE.contains(&name.as_str()) => {
                for item in items {
                    self.insert(&name, Some(json_text(item)))?;
                }
            }
            Value::Bool(true) => self.insert(&name, None)?,
            Value::Bool(false) | Value::Null => {}
            // A repeatable flag keeps its values as text (`insert`), a number among them too.
            Value::Number(n) if !REPEATABLE.contains(&name.as_str()) => {
                let value = n.as_f64().unwrap_or(f64::NAN);
                if !out_of_range(value) {
                    let mut flag = Flag::new(None);
                    flag.number = Some((n.clone(), value));
                    return self.insert_flag(name, flag);
                }
                // Refused as its text would be.
                self.insert(&name, Some(n.to_string()))?
            }
            other => self.insert(&name, Some(json_text(other)))?,
        }
        Ok(())
    }

    fn insert(&mut self, name: &str, value: Option<String>) -> Result<(), CliError> {
        if let Some(text) = &value {
            check_magnitude(name, text)?;
        }
        if REPEATABLE.contains(&name) {
            let values = self.repeated.entry(name.to_string()).or_default();
            values.extend(value.clone());
            self.flags.insert(name.to_string(), Flag::new(value));
            return Ok(());
        }
        self.insert_flag(name.to_string(), Flag::new(value))
    }

    /// Adds a flag that may not be given twice.
    fn insert_flag(&mut self, name: String, flag: Flag) -> Result<(), CliError> {
        if self.flags.contains_key(&name) {
            return Err(CliError::usage(format!("--{name} given twice")));
        }
        self.flags.0.push((name, flag));
        Ok(())
    }

    /// True when these arguments came from a `molefeed batch` line, whose stdin is the batch.
    pub fn in_batch(&self) -> bool {
        self.from_batch
    }

    /// Notes that `name` was read (a flag not given has nothing to note).
    fn mark(&self, name: &str) {
        if let Some(flag) = self.flags.get(name) {
            flag.used.set(true);
        }
    }

    /// The n-th positional argument.
    pub fn positional(&self, n: usize) -> Option<&str> {
        self.positional.get(n).map(String::as_str)
    }

    pub fn required_positional(&self, n: usize, what: &str) -> Result<&str, CliError> {
        self.positional(n)
            .ok_or_else(|| CliError::usage(format!("missing {what}")))
    }

    /// A boolean switch such as `--json`.
    pub fn switch(&self, name: &str) -> bool {
        self.mark(name);
        self.flags.contains_key(name)
    }

    pub fn text(&self, name: &str) -> Result<Option<&str>, CliError> {
        let Some(flag) = self.flags.get(name) else {
            return Ok(None);
        };
        flag.used.set(true);
        match flag.text() {
            None => Err(CliError::usage(format!("--{name} needs a value"))),
            Some(v) => Ok(Some(v)),
        }
    }

    /// Every value of a repeatable flag, in the order given (empty when it is absent).
    pub fn texts(&self, name: &str) -> Result<Vec<&str>, CliError> {
        self.mark(name);
        match (self.flags.get(name), self.repeated.get(name)) {
            (None, _) => Ok(Vec::new()),
            (Some(_), Some(values)) if !values.is_empty() => {
                Ok(values.iter().map(String::as_str).collect())
            }
            _ => Err(CliError::usage(format!("--{name} needs a value"))),
        }
    }

    pub fn required_text(&self, name: &str) -> Result<&str, CliError> {
        self.text(name)?
            .ok_or_else(|| CliError::usage(format!("missing --{name}")))
    }

    pub fn number(&self, name: &str) -> Result<Option<f64>, CliError> {
        if let Some(Flag {
            number: Some((_, value)),
            used,
            ..
        }) = self.flags.get(name)
        {
            // A JSON number, checked when it was added.
            used.set(true);
            return Ok(Some(*value));
        }
        let Some(text) = self.text(name)? else {
            return Ok(None);
        };
        parse_number(text).map(Some).ok_or_else(|| CliError {
            kind: "invalid-input".into(),
            message: format!("--{name} must be a number, got '{text}'"),
            reason: None,
        })
    }

    pub fn required_number(&self, name: &str) -> Result<f64, CliError> {
        self.number(name)?
            .ok_or_else(|| CliError::usage(format!("missing --{name}")))
    }

    /// Fails if any flag was given that no code read: a typo must not change a dose silently.
    pub fn reject_unused(&self) -> Result<(), CliError> {
        // The first unused name in alphabetical order, so the message does not depend on
        // the order the flags were given in.
        match self
            .flags
            .0
            .iter()
            .filter(|(_, f)| !f.used.get())
            .map(|(k, _)| k)
            .min()
        {
            Some(unused) => Err(CliError::usage(format!(
                "unknown flag --{unused} for this command"
            ))),
            None => Ok(()),
        }
    }
}

/// Refuses a flag value that is written as a number outside what a measurement can be.
/// Only text with a digit counts as a number here, so names such as a formula `NaN` pass
/// untouched; `Args::number` refuses `inf` and `NaN` where a number is read.
fn check_magnitude(name: &str, text: &str) -> Result<(), CliError> {
    if !text.bytes().any(|b| b.is_ascii_digit()) {
        return Ok(());
    }
    let Ok(value) = text.trim().parse::<f64>() else {
        return Ok(());
    };
    if !out_of_range(value) {
        return Ok(());
    }
    Err(CliError {
        kind: "invalid-input".into(),
        message: format!(
            "--{name} {text} is outside what a measurement can be (0, or {SMALLEST_INPUT:e} to {LARGEST_INPUT:e} in size)"
        ),
        reason: None,
    })
}

/// Whether a number is beyond what a measurement can be (see [`check_magnitude`]).
fn out_of_range(value: f64) -> bool {
    let magnitude = value.abs();
    !(magnitude == 0.0 || (SMALLEST_INPUT..=LARGEST_INPUT).contains(&magnitude))
}

fn is_flag(word: &str) -> bool {
    word.starts_with("--") && word.len() > 2
}

/// A batch line's top level: `command` (a string) and `args` (an object, see [`ArgsObject`]);
/// any other key is skipped, as [`Args::from_json`]'s caller skips it. `None` in either place
/// sends the line to the slower path, which names what is wrong.
struct Request;

type RequestParts = (Option<String>, Option<Result<Args, CliError>>);

impl<'de> serde::de::Visitor<'de> for Request {
    type Value = RequestParts;

    fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
        f.write_str("a batch request object")
    }

    fn visit_map<M: serde::de::MapAccess<'de>>(self, mut map: M) -> Result<RequestParts, M::Error> {
        // No `args` is no arguments, as `"args": null` is.
        let (mut command, mut args) = (None, Some(Ok(Args::batch())));
        while let Some(key) = map.next_key::<Key<'de>>()? {
            match &*key.0 {
                // A later duplicate replaces an earlier one, as in a `Value` object.
                "command" => command = map.next_value::<Value>()?.as_str().map(String::from),
                "args" => args = map.next_value_seed(ArgsObject)?,
                _ => {
                    map.next_value::<serde::de::IgnoredAny>()?;
                }
            }
        }
        Ok((command, args))
    }
}

/// A batch request's `args` object, each entry added by [`Args::add_json`] as it is read.
/// The first refused entry is the answer; the rest of the object is still read, so that a
/// line that is not JSON is still refused as such. `None` when `args` is not an object.
struct ArgsObject;

impl<'de> serde::de::DeserializeSeed<'de> for ArgsObject {
    type Value = Option<Result<Args, CliError>>;

    fn deserialize<D: serde::Deserializer<'de>>(self, de: D) -> Result<Self::Value, D::Error> {
        de.deserialize_any(self)
    }
}

impl<'de> serde::de::Visitor<'de> for ArgsObject {
    type Value = Option<Result<Args, CliError>>;

    fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
        f.write_str("an object of arguments")
    }

    fn visit_map<M: serde::de::MapAccess<'de>>(self, mut map: M) -> Result<Self::Value, M::Error> {
        let mut args = Ok(Args::batch());
        while let Some(key) = map.next_key::<Key<'de>>()? {
            let value: Value = map.next_value()?;
            if let Ok(a) = &mut args
                && let Err(e) = a.add_json(&key.0, &value)
            {
                args = Err(e);
            }
        }
        Ok(Some(args.map(|mut a| {
            a.insert("json", None).ok();
            a
        })))
    }

    /// `"args": null` is no arguments, as in [`Args::from_json`].
    fn visit_unit<E>(self) -> Result<Self::Value, E> {
        Ok(Some(Ok(Args::batch())))
    }

    // Any other type: `None`, read again by the slower path.
    fn visit_bool<E>(self, _: bool) -> Result<Self::Value, E> {
        Ok(None)
    }
    fn visit_i64<E>(self, _: i64) -> Result<Self::Value, E> {
        Ok(None)
    }
    fn visit_u64<E>(self, _: u64) -> Result<Self::Value, E> {
        Ok(None)
    }
    fn visit_f64<E>(self, _: f64) -> Result<Self::Value, E> {
        Ok(None)
    }
    fn visit_str<E>(self, _: &str) -> Result<Self::Value, E> {
        Ok(None)
    }
    fn visit_seq<S: serde::de::SeqAccess<'de>>(self, mut seq: S) -> Result<Self::Value, S::Error> {
        while seq.next_element::<serde::de::IgnoredAny>()?.is_some() {}
        Ok(None)
    }
}

/// An object key, borrowed from the line unless it holds an escape.
struct Key<'de>(std::borrow::Cow<'de, str>);

impl<'de> serde::Deserialize<'de> for Key<'de> {
    fn deserialize<D: serde::Deserializer<'de>>(de: D) -> Result<Self, D::Error> {
        struct KeyVisitor;
        impl<'de> serde::de::Visitor<'de> for KeyVisitor {
            type Value = Key<'de>;
            fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
                f.write_str("a key")
            }
            fn visit_borrowed_str<E>(self, v: &'de str) -> Result<Key<'de>, E> {
                Ok(Key(std::borrow::Cow::Borrowed(v)))
            }
            fn visit_str<E>(self, v: &str) -> Result<Key<'de>, E> {
                Ok(Key(std::borrow::Cow::Owned(v.to_string())))
            }
        }
        de.deserialize_str(KeyVisitor)
    }
}

fn json_text(value: &Value) -> String {
    match value {
        Value::String(s) => s.clone(),
        other => other.to_string(),
    }
}

/// Parses a finite decimal number; rejects NaN and infinities, which no measurement can be.
pub fn parse_number(text: &str) -> Option<f64> {
    let value: f64 = text.trim().parse().ok()?;
    value.is_finite().then_some(value)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn words(s: &str) -> Vec<String> {
        s.split_whitespace().map(String::from).collect()
    }

    #[test]
    fn flags_values_and_positionals() {
        let args = Args::parse(&words("H2O --amount -3 --json --unit=g")).unwrap();
        assert_eq!(args.positional(0), Some("H2O"));
        assert_eq!(args.required_number("amount").unwrap(), -3.0);
        assert!(args.switch("json"));
        assert_eq!(args.text("unit").unwrap(), Some("g"));
        assert!(args.reject_unused().is_ok());
    }

    #[test]
    fn unused_and_duplicate_flags_fail() {
        let args = Args::parse(&words("--dose 3 --dsoe 4")).unwrap();
        args.number("dose").unwrap();
        assert!(args.reject_unused().unwrap_err().message.contains("--dsoe"));
        assert!(Args::parse(&words("--dose 3 --dose 4")).is_err());
    }

    #[test]
    fn a_repeatable_flag_keeps_every_value_in_order() {
        let args = Args::parse(&words("--step alum=30 --step caustic=8")).unwrap();
        assert_eq!(args.texts("step").unwrap(), ["alum=30", "caustic=8"]);
        assert!(args.reject_unused().is_ok());
        let args = Args::from_json(&serde_json::json!({ "step": ["lime=20", "carbon-dioxide=5"] }))
            .unwrap();
        assert_eq!(args.texts("step").unwrap(), ["lime=20", "carbon-dioxide=5"]);
        assert!(
            Args::parse(&words("--step"))
                .unwrap()
                .texts("step")
                .is_err()
        );
        assert!(Args::parse(&words("--ph 7 --ph 8")).is_err());
    }

    #[test]
    fn non_numbers_are_rejected() {
        for bad in ["abc", "NaN", "inf", ""] {
            let args = Args::from_json(&serde_json::json!({ "dose": bad })).unwrap();
            assert!(args.number("dose").is_err(), "{bad}");
        }
    }

    #[test]
    fn a_json_number_reads_as_itself_and_as_its_own_text() {
        let args =
            Args::from_json(&serde_json::json!({ "dose": 20, "ph": 7.25, "flow": -0.0 })).unwrap();
        assert_eq!(args.number("dose").unwrap(), Some(20.0));
        assert_eq!(args.text("dose").unwrap(), Some("20"));
        assert_eq!(args.required_number("ph").unwrap(), 7.25);
        assert_eq!(args.text("ph").unwrap(), Some("7.25"));
        assert_eq!(args.number("flow").unwrap(), Some(0.0));
        assert!(args.switch("json"), "a batch line always answers in JSON");
        assert!(args.reject_unused().is_ok());
        let e = Args::from_json(&serde_json::json!({ "dose": 1e30 })).unwrap_err();
        assert_eq!(e.kind, "invalid-input");
        assert!(e.message.contains("--dose 1e+30"), "{}", e.message);
        let e = Args::from_json(&serde_json::json!({ "dose": 20, "dose_": 1 }));
        assert!(e.is_ok(), "different names");
        // A repeatable flag given a number keeps it as its one text value.
        let args = Args::from_json(&serde_json::json!({ "step": 5 })).unwrap();
        assert_eq!(args.texts("step").unwrap(), ["5"]);
    }

    #[test]
    fn numbers_no_measurement_can_take_are_refused_when_parsed() {
        for bad in ["1e-300", "4e-320", "1e30", "-1e13", "1e400"] {
            let e = Args::parse(&words(&format!("--flow {bad}"))).unwrap_err();
            assert_eq!(e.kind, "invalid-input", "{bad}");
            assert!(e.message.contains("--flow"), "{bad}: {}", e.message);
            let e = Args::from_json(&serde_json::json!({ "flow": bad })).unwrap_err();
            assert_eq!(e.kind, "invalid-input", "{bad}");
        }
        for good in [
            "0",
            "-0.0",
            "1e-12",
            "2.5",
            "-3",
            "1e12",
            "NaN",
            "2026-03-01",
        ] {
            assert!(
                Args::parse(&words(&format!("--flow {good}"))).is_ok(),
                "{good}"
            );
        }
    }

    /// A batch line read straight (`from_request`) gives the arguments, or the refusal, the
    /// JSON tree (`from_json`) gives; lines that are not a well-formed request go to the tree.
    fn check_request(line: &str, fast: bool) {
        let tree: Value = serde_json::from_str(line).unwrap();
        let slow = Args::from_json(&tree["args"]);
        match Args::from_request(line) {
            Some((command, got)) => {
                assert!(fast, "{line}: read straight, expected the tree");
                assert_eq!(Some(command.as_str()), tree["command"].as_str(), "{line}");
                match (got, slow) {
                    (Ok(a), Ok(b)) => assert_eq!(format!("{a:?}"), format!("{b:?}"), "{line}"),
                    (Err(a), Err(b)) => assert_eq!(a.kind, b.kind, "{line}: {a:?} / {b:?}"),
                    (a, b) => panic!("{line}: straight {a:?}, tree {b:?}"),
                }
            }
            None => assert!(!fast, "{line}: sent to the tree, expected it read straight"),
        }
    }

    #[test]
    fn a_batch_line_read_straight_gives_what_its_json_tree_gives() {
        for line in [
            r#"{"command":"ph-after","args":{"chemical":"lime","dose":20,"ph":7.1,"temperature":12.5,"alkalinity":80}}"#,
            r#"{"args":{"calcium_as_caco3":120.5,"json":true,"precipitate":null,"help":false},"command":"ph-after"}"#,
            r#"{"command":"mass","args":{"positional":["H2O", 3]}}"#,
            r#"{"command":"path","args":{"step":["lime=20","carbon-dioxide=5"]},"note":{"any":[1,2]}}"#,
            r#"{"command":"mass","args":null}"#,
            r#"{"command":"mass"}"#,
            r#"{"command":"ph-after","args":{"d\u006fse":"1e30"}}"#,
            r#"{"command":"ph-after","args":{"dose":1e30,"ph":7}}"#,
            r#"{"command":"ph-after","args":{"dose":{"nested":1}}}"#,
            r#" {"command":"ph-after","args":{"dose":-0.0}} "#,
        ] {
            check_request(line, true);
        }
        for line in [
            r#"{"command":5,"args":{}}"#,
            r#"{"args":{}}"#,
            r#"{"command":"mass","args":[1]}"#,
            r#"{"command":"mass","args":"H2O"}"#,
            r#"["mass"]"#,
            r#""mass""#,
        ] {
            check_request(line, false);
        }
        // Not JSON (a trailing word, a cut line): left to the tree, which refuses it.
        assert!(Args::from_request(r#"{"command":"mass"} x"#).is_none());
        assert!(Args::from_request(r#"{"command":"mass","args":{"dose":"#).is_none());
    }
}
