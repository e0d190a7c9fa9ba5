//! Translations: Fluent files embedded in the binary, looked up by key at run time.
//!
//! Design choice: i18n-embed's `FluentLanguageLoader` over `i18n/<lang>/molefeed.ftl`,
//! embedded with rust-embed so the app is fully offline. Keys are kebab-case; engine errors
//! use `error-<ErrorKind::code()>`, units `unit-<code>`, calculators `calc-<code>`. Numbers in
//! arguments are re-formatted with the language's decimal mark before they reach Fluent.

use super::numbers::{self, Lang};
use crate::engine;
use i18n_embed::LanguageLoader;
use i18n_embed::fluent::FluentLanguageLoader;
use rust_embed::RustEmbed;
use std::collections::HashMap;

#[derive(RustEmbed)]
#[folder = "i18n/"]
struct Localizations;

/// The loaded translations for one language at a time.
pub struct Texts {
    loader: FluentLanguageLoader,
    lang: Lang,
}

impl Texts {
    pub fn new(lang: Lang) -> Texts {
        let loader: FluentLanguageLoader = i18n_embed::fluent::fluent_language_loader!();
        let mut texts = Texts {
            loader,
            lang: Lang::En,
        };
        texts.set_lang(lang);
        texts
    }

    pub fn lang(&self) -> Lang {
        self.lang
    }

    pub fn set_lang(&mut self, lang: Lang) {
        let id: unic_langid::LanguageIdentifier =
            lang.tag().parse().expect("built-in language tags parse");
        let fallback = self.loader.fallback_language().clone();
        self.loader
            .load_languages(&Localizations, &[id, fallback])
            .expect("embedded translations load");
        // Loading makes new bundles, which isolate placeholders again: switch it off each time
        // (the marks would show as stray glyphs and break exact label matches).
        self.loader.set_use_isolating(false);
        self.lang = lang;
    }

    /// Whether `key` exists in the current language (or the fallback).
    pub fn has(&self, key: &str) -> bool {
        self.loader.has(key)
    }

    pub fn get(&self, key: &str) -> String {
        self.loader.get(key)
    }

    /// `key` with named arguments; arguments that are numbers get the language's decimal mark.
    pub fn get_args(&self, key: &str, args: &[(&str, String)]) -> String {
        if args.is_empty() {
            return self.get(key);
        }
        let map: HashMap<String, String> = args
            .iter()
            .map(|(k, v)| ((*k).to_string(), self.localize_number(v)))
            .collect();
        self.loader.get_args(key, map)
    }

    /// An engine error in words: the translation of its reason (or, without one, of its kind)
    /// with the error's parameters; the engine's English message only if a newer error has no
    /// translation yet. The quantity it names is translated too, and the sentence starts with a
    /// capital unless its first word is written with one of its own (pH, TDS, Cl2).
    pub fn error(&self, e: &engine::Error) -> String {
        let key = match e.reason() {
            Some(reason) => format!("error-reason-{reason}"),
            None => format!("error-{}", e.kind().code()),
        };
        if !self.has(&key) {
            return e.to_string();
        }
        let mut args: Vec<(&str, String)> = e
            .params()
            .iter()
            .map(|(name, value)| {
                let value = match *name {
                    "quantity" => self.quantity(value),
                    // A unit follows a number with a space; an empty one leaves no gap.
                    "unit" if !value.is_empty() => format!(" {value}"),
                    _ => value.clone(),
                };
                (*name, value)
            })
            .collect();
        args.push(("message", e.message().to_string()));
        sentence_case(self.get_args(&key, &args))
    }

    /// A quantity name from the engine in the current language (the name itself if a newer
    /// one has no translation).
    fn quantity(&self, name: &str) -> String {
        let key = super::keys::quantity_key(name);
        if self.has(&key) {
            self.get(&key)
        } else {
            name.to_string()
        }
    }

    fn localize_number(&self, v: &str) -> String {
        match v.parse::<f64>() {
            Ok(n) if v.contains('.') && n.is_finite() => {
                let decimals = v.split('.').nth(1).map_or(0, str::len);
                numbers::format_fixed(n, decimals, self.lang)
            }
            _ => v.to_string(),
        }
    }
}

/// Capitalises the first letter, unless the first word already has a capital in it.
fn sentence_case(text: String) -> String {
    let first_word = text.split_whitespace().next().unwrap_or("");
    if first_word.chars().any(char::is_uppercase) {
        return text;
    }
    let mut chars = text.chars();
    match chars.next() {
        Some(first) => first.to_uppercase().chain(chars).collect(),
        None => text,
    }
}

/// The controllers' translation seam, answered by the Fluent texts.
impl super::words::Words for Texts {
    fn has(&self, key: &str) -> bool {
        Texts::has(self, key)
    }

    fn get_args(&self, key: &str, args: &[(&str, String)]) -> String {
        Texts::get_args(self, key, args)
    }

    fn error(&self, e: &engine::Error) -> String {
        Texts::error(self, e)
    }

    fn lang(&self) -> Lang {
        Texts::lang(self)
    }

    fn get(&self, key: &str) -> String {
        Texts::get(self, key)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn switches_language_at_run_time() {
        let mut t = Texts::new(Lang::En);
        let en = t.get("nav-start");
        t.set_lang(Lang::Es);
        let es = t.get("nav-start");
        assert!(!en.is_empty() && !es.is_empty());
        assert_ne!(en, es);
        assert_eq!(t.lang(), Lang::Es);
    }

    #[test]
    fn engine_errors_are_translated_with_parameters() {
        let e = engine::check_range("pH", 15.5, 0.0, 14.0, "").unwrap_err();
        let t = Texts::new(Lang::Es);
        let text = t.error(&e);
        assert!(text.contains("15,5"), "{text}");
        assert!(!text.contains('\u{2068}'), "isolation marks in {text:?}");
        assert!(!text.contains("outside"), "English leaked: {text}");
        let en = Texts::new(Lang::En).error(&e);
        assert!(en.contains("15.5"), "{en}");
    }

    /// One engine error in both languages, against the exact sentence.
    fn check(error: engine::Error, english: &str, spanish: &str) {
        assert_eq!(Texts::new(Lang::En).error(&error), english);
        assert_eq!(Texts::new(Lang::Es).error(&error), spanish);
    }

    #[test]
    fn reasons_and_quantities_are_said_in_the_operators_language() {
        check(
            engine::check_range("target pH", 15.5, 0.0, 14.0, "").unwrap_err(),
            "Target pH 15.5 is outside 0–14.",
            "pH objetivo 15,5 está fuera de 0–14.",
        );
        check(
            engine::check_range("temperature", 61.0, 0.0, 50.0, "°C").unwrap_err(),
            "Temperature 61 °C is outside 0–50 °C.",
            "Temperatura 61 °C está fuera de 0–50 °C.",
        );
        check(
            engine::check_positive("flow", 0.0, "m³/d").unwrap_err(),
            "Flow must be greater than zero.",
            "Caudal debe ser mayor que cero.",
        );
        check(
            engine::check_positive("specific gravity", f64::NAN, "").unwrap_err(),
            "Specific gravity must be a number.",
            "Densidad relativa debe ser un número.",
        );
    }

    #[test]
    fn an_engine_refusal_with_a_reason_names_it_with_its_numbers() {
        use crate::engine::dosing::softening::{self, HardnessAnalysis};
        use crate::engine::sigfig::Measured;
        let refused = softening::removal_from_analysis(&HardnessAnalysis {
            total_hardness: Measured::new(150.0, 3),
            calcium_hardness: Measured::new(180.0, 3),
            alkalinity: Measured::new(120.0, 3),
            co2: Measured::new(5.0, 1),
        })
        .unwrap_err();
        assert_eq!(refused.reason(), Some("calcium-above-total-hardness"));
        let es = Texts::new(Lang::Es).error(&refused);
        assert!(es.starts_with("La dureza cálcica (180 mg/L)"), "{es}");
        assert!(!es.contains("more than"), "English leaked: {es}");
    }

    #[test]
    fn a_first_word_with_its_own_capitals_is_left_alone() {
        assert_eq!(sentence_case("pH 9 is high".into()), "pH 9 is high");
        assert_eq!(sentence_case("flow is zero".into()), "Flow is zero");
        assert_eq!(sentence_case("ácido".into()), "Ácido");
        assert_eq!(sentence_case(String::new()), "");
    }

    /// Prefixes of the app's translation keys: a rendered word that starts with one of these
    /// and is kebab-case is a key that reached the screen untranslated.
    const KEY_PREFIXES: &[&str] = &[
        "product-",
        "hazard-",
        "ppe-",
        "incompatible-",
        "result-",
        "field-",
        "error-",
        "caution-",
        "trace-",
        "origin-",
        "unit-",
        "calc-",
        "mode-",
        "quantity-",
        "basis-",
        "site-",
        "log-",
        "plot-",
        "settings-",
        "pump-",
        "limit-",
        "parameter-",
        "instrument-",
    ];

    /// The first word of `text` that reads as a translation key, if any: i18n-embed's text for
    /// a missing message, a word that is a key the app uses, or a kebab-case word with a key's
    /// prefix (`product-carbon-dioxide`).
    fn key_like(text: &str, keys: &std::collections::BTreeSet<String>) -> Option<String> {
        if text.contains("No localization") {
            return Some(text.to_string());
        }
        text.split(|c: char| !(c.is_ascii_alphanumeric() || c == '-'))
            .find(|w| {
                let kebab = w.contains('-')
                    && w.split('-').all(|p| {
                        !p.is_empty()
                            && p.chars()
                                .all(|c| c.is_ascii_lowercase() || c.is_ascii_digit())
                    });
                kebab && (keys.contains(*w) || KEY_PREFIXES.iter().any(|k| w.starts_with(k)))
            })
            .map(str::to_string)
    }

    /// Arguments for `key`: each `$name` of its English text, with a plain value ("1.5"; a
    /// `field` gets a field key, as the engine's limit caution passes one).
    fn args_of(key: &str) -> Vec<(String, String)> {
        let en = include_str!("../../i18n/en/molefeed.ftl");
        let line = en
            .lines()
            .find(|l| l.split_once('=').is_some_and(|(k, _)| k.trim() == key))
            .unwrap_or_default();
        line.split('$')
            .skip(1)
            .map(|a| {
                let name: String = a
                    .chars()
                    .take_while(|c| c.is_ascii_alphanumeric() || *c == '_' || *c == '-')
                    .collect();
                let value = if name == "field" {
                    "field-target-residual".to_string()
                } else {
                    "1.5".to_string()
                };
                (name, value)
            })
            .collect()
    }

    /// No key reaches the screen in either language: every product chip of every calculator
    /// (the products the engine offers each screen variant), every catalog product, every
    /// caution the engine can raise as the card words it, every refusal reason as the card
    /// says it, every result caption, calculator, variant, field, unit, trace heading and
    /// factor origin — all through the Fluent texts the app runs on. A missing translation
    /// would show the key itself (the chip once read `product-carbon-dioxide`).
    #[test]
    fn no_key_reaches_the_screen_in_either_language() {
        use super::super::calc_screen::caution_lines;
        use super::super::engine_adapter::DosingEngine;
        use super::super::keys;
        use super::super::seams::{CalcEngine, CalcKind, Caution, CautionLevel};
        use super::super::words::Words;

        let known: std::collections::BTreeSet<String> = keys::dynamic_keys().into_iter().collect();
        let engine = DosingEngine::new().unwrap();
        let catalog = engine::dosing::catalog::Catalog::builtin().unwrap();
        let mut checked = 0;
        for lang in Lang::ALL {
            let texts = Texts::new(lang);
            let words: &dyn Words = &texts;
            let mut shown: Vec<(String, String)> = Vec::new();
            let mut see = |what: String, text: String| shown.push((what, text));
            for kind in CalcKind::all() {
                see(
                    kind.code().into(),
                    words.get(&format!("calc-{}", kind.code())),
                );
                let modes = kind.modes();
                for mode in &modes {
                    // A variant's chip is shown only where a screen has more than one.
                    if modes.len() > 1 {
                        see(
                            mode.code().into(),
                            words.get(&format!("mode-{}", mode.code())),
                        );
                    }
                    let mode = *mode;
                    for p in engine.products(kind, mode) {
                        see(p.name_key.clone(), words.name(&p.name_key));
                    }
                }
            }
            for p in &catalog.products {
                see(p.name_key.clone(), words.name(&p.name_key));
            }
            for code in keys::ENGINE_TEXT_KEYS {
                let caution = Caution {
                    level: CautionLevel::Warning,
                    code: code.to_string(),
                    message: code.to_string(),
                    params: args_of(code),
                };
                for line in caution_lines(&[caution], words) {
                    see(code.to_string(), line.text);
                    see(code.to_string(), line.word);
                }
            }
            for reason in keys::ERROR_REASONS {
                let e = engine::Error::new(engine::ErrorKind::InvalidInput, "refused")
                    .because(reason)
                    .with("quantity", "flow")
                    .with("value", "1.5");
                see(reason.to_string(), texts.error(&e));
            }
            for kind in keys::all_error_kinds() {
                let e = engine::Error::new(kind, "refused");
                see(kind.code().into(), texts.error(&e));
            }
            for k in keys::extra_keys() {
                see(k.clone(), words.get(&format!("result-{k}")));
            }
            for k in [
                "result-dose",
                "result-actual-dose",
                "result-feed",
                "result-product",
                "result-feeder-rate",
                "result-pump",
                "result-feeder-setting",
                "result-suggested-pump-setting",
                "result-suggested-feeder-setting",
            ] {
                see(k.into(), words.get(k));
            }
            for k in known.iter().filter(|k| {
                [
                    "field-",
                    "unit-",
                    "trace-",
                    "origin-",
                    "quantity-",
                    "basis-",
                ]
                .iter()
                .any(|p| k.starts_with(p))
            }) {
                let args: Vec<(String, String)> = args_of(k);
                let args: Vec<(&str, String)> =
                    args.iter().map(|(n, v)| (n.as_str(), v.clone())).collect();
                see(k.clone(), words.get_args(k, &args));
            }
            for (what, text) in &shown {
                // A unit of nothing (a pH, a ratio) is rightly empty; nothing else is.
                assert!(
                    !text.trim().is_empty() || what.starts_with("unit-"),
                    "{lang:?}: {what} shows nothing"
                );
                if let Some(word) = key_like(text, &known) {
                    panic!("{lang:?}: {what} shows the key {word:?} in {text:?}");
                }
            }
            checked += shown.len();
        }
        assert!(checked > 600, "only {checked} texts rendered");
    }

    /// The check itself sees a key: the words a missing translation would show.
    #[test]
    fn a_key_on_screen_is_seen() {
        let known = ["product-carbon-dioxide".to_string()].into_iter().collect();
        let texts = Texts::new(Lang::Es);
        for (text, seen) in [
            ("product-carbon-dioxide", true),
            ("Dióxido de carbono · product-carbon-dioxide", true),
            (texts.get("product-no-such-thing").as_str(), true),
            ("hazard-new-one (ppm = 3)", true),
            ("Dióxido de carbono", false),
            ("pH 6.5–8.5, Cl2:NH3-N 4.5:1", false),
            ("físico-químico", false),
        ] {
            assert_eq!(key_like(text, &known).is_some(), seen, "{text}");
        }
    }
}
