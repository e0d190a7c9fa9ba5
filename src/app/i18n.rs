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

    /// An engine error in words: its kind's translation with the error's parameters, or the
    /// engine's English message if a newer kind has no translation yet.
    pub fn error(&self, e: &engine::Error) -> String {
        let key = format!("error-{}", e.kind().code());
        if !self.has(&key) {
            return e.to_string();
        }
        let mut args: Vec<(&str, String)> =
            e.params().iter().map(|(k, v)| (*k, v.clone())).collect();
        args.push(("message", e.message().to_string()));
        self.get_args(&key, &args)
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
}
