//! Cautions and the advisory as English sentences on the command line, from the same Fluent
//! catalog the app translates (`i18n/en/molefeed.ftl`, embedded at build time).
//!
//! Design choice: the app's Fluent machinery is behind the `app` feature and the CLI must build
//! without it, so this is a small renderer for exactly the part of Fluent the catalog uses:
//! one message per `key = value` line (indented lines continue it), placeables that name a
//! parameter (`{ $name }`) and string literals (`{ "" }`). Anything else — a selector, a term
//! or message reference, a parameter the caution does not carry — is not guessed at: the
//! message is not rendered and the caller prints the code with its parameters, as before.
//! A parameter whose value is itself a catalog key (`field-flow`) is shown as that key's text.

use crate::engine::dosing::Caution;
use crate::engine::dosing::Severity;
use std::collections::BTreeMap;
use std::sync::OnceLock;

/// The English catalog, as the app ships it.
const EN: &str = include_str!("../../i18n/en/molefeed.ftl");

/// Codes whose sentence has another key in the catalog: the advisory every result carries is
/// the note the app's card shows under its own key.
const SAME_TEXT: [(&str, &str); 1] = [("advisory-operator-decides", "advisory-note")];

/// key → the message's text (continuation lines joined with a space).
fn catalog() -> &'static BTreeMap<&'static str, String> {
    static CATALOG: OnceLock<BTreeMap<&'static str, String>> = OnceLock::new();
    CATALOG.get_or_init(|| parse(EN))
}

/// The messages of a Fluent file: `key = value` at the start of a line, comments (`#`) and
/// blank lines skipped, an indented line continuing the message above it.
fn parse(text: &'static str) -> BTreeMap<&'static str, String> {
    let mut out: BTreeMap<&'static str, String> = BTreeMap::new();
    let mut last: Option<&'static str> = None;
    for line in text.lines() {
        if line.starts_with('#') || line.trim().is_empty() {
            last = None;
            continue;
        }
        if line.starts_with([' ', '\t']) {
            if let Some(value) = last.and_then(|k| out.get_mut(k)) {
                if !value.is_empty() {
                    value.push(' ');
                }
                value.push_str(line.trim());
            }
            continue;
        }
        last = None;
        if let Some((key, value)) = line.split_once('=') {
            let key = key.trim();
            if !key.is_empty() && !key.contains(char::is_whitespace) {
                out.insert(key, value.trim().to_string());
                last = Some(key);
            }
        }
    }
    out
}

/// The message `key` with `params` filled in, or `None` when the catalog has no such message
/// or it uses Fluent this renderer does not handle or a parameter the caller did not give.
pub fn sentence(key: &str, params: &[(String, String)]) -> Option<String> {
    let key = SAME_TEXT
        .iter()
        .find(|(code, _)| *code == key)
        .map_or(key, |(_, k)| *k);
    fill(catalog().get(key)?, params)
}

/// Fills the placeables of one message's text.
fn fill(text: &str, params: &[(String, String)]) -> Option<String> {
    let mut out = String::with_capacity(text.len() + 16);
    let mut rest = text;
    while let Some(open) = rest.find('{') {
        out.push_str(&rest[..open]);
        let after = &rest[open + 1..];
        let close = after.find('}')?;
        out.push_str(&placeable(after[..close].trim(), params)?);
        rest = &after[close + 1..];
    }
    if rest.contains('}') {
        return None;
    }
    out.push_str(rest);
    Some(out)
}

/// One placeable's text: a parameter's value (a catalog key shown as its text) or a string
/// literal; `None` for anything else.
fn placeable(inside: &str, params: &[(String, String)]) -> Option<String> {
    if let Some(name) = inside.strip_prefix('$') {
        let plain = name
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || c == '_' || c == '-');
        if !plain || name.is_empty() {
            return None;
        }
        let value = params.iter().find(|(n, _)| n == name).map(|(_, v)| v)?;
        return Some(match catalog().get(value.as_str()) {
            Some(text) if !text.contains('{') => text.clone(),
            _ => value.clone(),
        });
    }
    let literal = inside.strip_prefix('"')?.strip_suffix('"')?;
    if literal.contains(['"', '\\']) {
        return None;
    }
    Some(literal.to_string())
}

fn severity_word(severity: Severity) -> &'static str {
    match severity {
        Severity::Info => "note",
        Severity::Warning => "warning",
        Severity::Danger => "DANGER",
    }
}

/// A caution's words: its sentence, or, where the catalog has no sentence for it, its code with
/// the parameters (`code (name=value, ...)`) so nothing is lost. What the log records.
pub fn caution_text(c: &Caution) -> String {
    match sentence(&c.key, &c.params) {
        Some(text) => text,
        None if c.params.is_empty() => c.key.clone(),
        None => {
            let p: Vec<String> = c.params.iter().map(|(n, v)| format!("{n}={v}")).collect();
            format!("{} ({})", c.key, p.join(", "))
        }
    }
}

/// One caution as printed: `[warning] ` and its words.
pub fn caution_line(c: &Caution) -> String {
    format!("[{}] {}", severity_word(c.severity), caution_text(c))
}

/// Cautions as printed, one line each.
pub fn cautions(list: &[Caution]) -> String {
    list.iter().map(|c| caution_line(c) + "\n").collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn params(list: &[(&str, &str)]) -> Vec<(String, String)> {
        list.iter()
            .map(|(n, v)| (n.to_string(), v.to_string()))
            .collect()
    }

    /// The one helper: a message written in Fluent, rendered with `given`.
    fn check(ftl: &'static str, given: &[(&str, &str)], expected: Option<&str>) {
        let messages = parse(ftl);
        let text = messages.get("k").expect("the case defines k");
        assert_eq!(fill(text, &params(given)).as_deref(), expected, "{ftl}");
    }

    #[test]
    fn the_fluent_subset_renders_and_anything_else_is_refused() {
        // Expected texts written by hand from the Fluent syntax guide's rules.
        check("k = plain words", &[], Some("plain words"));
        check(
            "k = Dose { $dose } mg/L",
            &[("dose", "3.5")],
            Some("Dose 3.5 mg/L"),
        );
        check("k = {$a}-{ $b }", &[("a", "1"), ("b", "2")], Some("1-2"));
        check("k = { \"\" }", &[], Some(""));
        check(
            "# c\nk = first\n    second line",
            &[],
            Some("first second line"),
        );
        // A parameter the caution does not carry: not a sentence with a hole in it.
        check("k = Dose { $dose }", &[], None);
        // Selectors, terms and message references are not this renderer's.
        check("k = { $n -> [one] a *[other] b }", &[("n", "1")], None);
        check("k = { -brand }", &[], None);
        check("k = { other-key }", &[], None);
        check("k = unclosed { $a", &[("a", "1")], None);
        check("k = stray } brace", &[], None);
    }

    #[test]
    fn a_caution_prints_its_sentence_or_its_code() {
        let c = Caution::warning("pump-above-usable-range")
            .with("percent", "96")
            .with("max", "95");
        // The English text of the key, in i18n/en/molefeed.ftl.
        assert_eq!(
            caution_line(&c),
            "[warning] Setting 96 % is above the usable range (max 95 %)."
        );
        assert_eq!(
            caution_line(&Caution::advisory()),
            "[note] Advisory only: a licensed operator decides the feed, under the plant's permit and local codes."
        );
        // A parameter that is a catalog key (a field's name) shows as its text.
        let limit = Caution::warning("site-limit-above")
            .with("field", "field-target-residual")
            .with("value", "4.5")
            .with("limit", "4")
            .with("unit", "mg/L")
            .with("source", "permit");
        assert_eq!(
            caution_line(&limit),
            "[warning] Target residual 4.5 is above this site's limit of 4 mg/L (permit)."
        );
        // An unknown code, or a known one missing a parameter, prints as the code.
        let unknown = Caution::danger("no-such-code").with("x", "1");
        assert_eq!(caution_line(&unknown), "[DANGER] no-such-code (x=1)");
        let short = Caution::warning("pump-above-usable-range").with("percent", "96");
        assert_eq!(
            caution_line(&short),
            "[warning] pump-above-usable-range (percent=96)"
        );
    }

    /// The caution codes the engine's sources raise (`Caution::info("…")` and its kin), found
    /// by a scan so a new code cannot be missed, with the catalog keys the engine emits as data
    /// (product hazards, the table's limit checks).
    fn engine_caution_codes() -> Vec<String> {
        let src = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("src/engine");
        let mut stack = vec![src];
        let mut text = String::new();
        while let Some(dir) = stack.pop() {
            for entry in std::fs::read_dir(dir).unwrap() {
                let path = entry.unwrap().path();
                if path.is_dir() {
                    stack.push(path);
                } else if path.extension().is_some_and(|e| e == "rs") {
                    text.push_str(&std::fs::read_to_string(path).unwrap());
                }
            }
        }
        let mut codes: Vec<String> = Vec::new();
        for marker in ["Caution::info(", "Caution::warning(", "Caution::danger("] {
            for rest in text.split(marker).skip(1) {
                if let Some(lit) = rest.trim_start().strip_prefix('"')
                    && let Some(end) = lit.find('"')
                {
                    codes.push(lit[..end].to_string());
                }
            }
        }
        // The scan must see the engine's codes, or it would pass on nothing.
        assert!(codes.len() > 30, "the scan found only {codes:?}");
        codes.extend(
            crate::app::keys::ENGINE_TEXT_KEYS
                .iter()
                .map(|k| k.to_string()),
        );
        codes.sort();
        codes.dedup();
        codes
    }

    #[test]
    fn every_caution_the_engine_can_raise_renders_as_a_whole_sentence() {
        let mut missing = Vec::new();
        for code in engine_caution_codes() {
            let key = SAME_TEXT
                .iter()
                .find(|(c, _)| *c == code)
                .map_or(code.as_str(), |(_, k)| *k);
            let Some(text) = catalog().get(key) else {
                missing.push(code);
                continue;
            };
            // Every parameter the message names, given a value.
            let given: Vec<(String, String)> = text
                .split('$')
                .skip(1)
                .map(|a| {
                    let name: String = a
                        .chars()
                        .take_while(|c| c.is_ascii_alphanumeric() || *c == '_' || *c == '-')
                        .collect();
                    (name, "7".to_string())
                })
                .collect();
            let line = caution_line(&Caution {
                severity: Severity::Warning,
                key: code.clone(),
                params: given,
            });
            assert!(
                !line.contains(['{', '}', '$']) && !line.contains(&code),
                "{code}: {line}"
            );
        }
        assert!(missing.is_empty(), "no English sentence for {missing:?}");
    }
}
