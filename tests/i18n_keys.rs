//! Translation completeness: every key is in every locale, every key is used, every key the
//! code uses exists, and each translation takes the same arguments as the English one.
//!
//! Design choice: a plain source scan (no UI build needed, runs with or without the `app`
//! feature). Literal keys are found as `Tr.t("…")` / `key: "…"` in `.slint` files and as
//! `key("…")` / `.t("…")` in Rust; keys built from codes come from `app::keys::dynamic_keys()`.

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};

const ROOT: &str = env!("CARGO_MANIFEST_DIR");
const LOCALES: [&str; 2] = ["en", "es"];

/// key → set of `$arguments`, from one Fluent file.
fn ftl(locale: &str) -> BTreeMap<String, BTreeSet<String>> {
    let path = Path::new(ROOT).join(format!("i18n/{locale}/molefeed.ftl"));
    let text = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{path:?}: {e}"));
    let mut out = BTreeMap::new();
    for line in text.lines() {
        let Some((key, value)) = line.split_once('=') else {
            continue;
        };
        let key = key.trim();
        if line.starts_with([' ', '#']) || key.is_empty() {
            continue;
        }
        assert!(
            key.chars()
                .all(|c| c.is_ascii_lowercase() || c.is_ascii_digit() || c == '-'),
            "{locale}: odd key {key:?}"
        );
        let args = value
            .split('$')
            .skip(1)
            .map(|a| {
                a.chars()
                    .take_while(|c| c.is_ascii_alphanumeric() || *c == '-' || *c == '_')
                    .collect()
            })
            .collect();
        assert!(
            out.insert(key.to_string(), args).is_none(),
            "{locale}: duplicate key {key}"
        );
    }
    out
}

fn files(dir: &Path, ext: &str, out: &mut Vec<PathBuf>) {
    for entry in std::fs::read_dir(dir).unwrap() {
        let path = entry.unwrap().path();
        if path.is_dir() {
            files(&path, ext, out);
        } else if path.extension().is_some_and(|e| e == ext) {
            out.push(path);
        }
    }
}

/// The string literals that follow each of `markers` in `text`.
fn literals_after(text: &str, markers: &[&str]) -> Vec<String> {
    let mut found = Vec::new();
    for marker in markers {
        let mut rest = text;
        while let Some(i) = rest.find(marker) {
            rest = &rest[i + marker.len()..];
            // Only key-shaped literals: prose such as `key("…")` in doc comments is skipped.
            if let Some(end) = rest.find('"') {
                let lit = &rest[..end];
                if !lit.is_empty()
                    && lit
                        .chars()
                        .all(|c| c.is_ascii_lowercase() || c.is_ascii_digit() || c == '-')
                {
                    found.push(lit.to_string());
                }
            }
        }
    }
    found
}

fn used_keys() -> BTreeSet<String> {
    let mut used = BTreeSet::new();
    let mut slint = Vec::new();
    files(&Path::new(ROOT).join("ui"), "slint", &mut slint);
    assert!(slint.len() >= 8, "UI files not found");
    for path in slint {
        let text = std::fs::read_to_string(&path).unwrap();
        used.extend(literals_after(&text, &["Tr.t(\"", "key: \""]));
    }
    let mut rust = Vec::new();
    files(&Path::new(ROOT).join("src"), "rs", &mut rust);
    for path in rust {
        let text = std::fs::read_to_string(&path).unwrap();
        used.extend(literals_after(&text, &["key(\"", ".t(\""]));
    }
    used
}

#[test]
fn every_locale_has_every_key_with_the_same_arguments() {
    let en = ftl("en");
    assert!(
        en.len() > 100,
        "English file looks truncated: {} keys",
        en.len()
    );
    for locale in &LOCALES[1..] {
        let other = ftl(locale);
        let missing: Vec<_> = en.keys().filter(|k| !other.contains_key(*k)).collect();
        let extra: Vec<_> = other.keys().filter(|k| !en.contains_key(*k)).collect();
        assert!(missing.is_empty(), "{locale} lacks {missing:?}");
        assert!(
            extra.is_empty(),
            "{locale} has keys English lacks: {extra:?}"
        );
        for (key, args) in &en {
            assert_eq!(&other[key], args, "{locale}: arguments of {key} differ");
        }
    }
}

#[test]
fn every_used_key_exists_and_every_key_is_used() {
    let en = ftl("en");
    let used = used_keys();
    let dynamic: BTreeSet<String> = molefeed::app::keys::dynamic_keys().into_iter().collect();
    let missing: Vec<_> = used
        .union(&dynamic)
        .filter(|k| !en.contains_key(*k))
        .collect();
    assert!(
        missing.is_empty(),
        "keys used but not translated: {missing:?}"
    );
    let unused: Vec<_> = en
        .keys()
        .filter(|k| !used.contains(*k) && !dynamic.contains(*k))
        .collect();
    assert!(
        unused.is_empty(),
        "keys translated but never used: {unused:?}"
    );
}

#[test]
fn the_scanner_sees_keys() {
    // Guards the scan itself: if a refactor changed the markers, the test above could pass
    // on an empty set.
    let used = used_keys();
    for k in [
        "nav-start",
        "advisory-note",
        "calc-invalid",
        "number-wrong-mark",
    ] {
        assert!(used.contains(k), "scanner missed {k}");
    }
}

/// The texts an operator's safety rests on: every caution the engine raises (hazards, PPE,
/// incompatibilities, limits, process warnings), the caution levels and the advisory.
fn safety_keys() -> Vec<String> {
    let mut keys: Vec<String> = molefeed::app::keys::ENGINE_TEXT_KEYS
        .iter()
        .map(|k| k.to_string())
        .collect();
    keys.extend(
        ftl("en")
            .into_keys()
            .filter(|k| k.starts_with("advisory-") || k.starts_with("caution-level-")),
    );
    keys.sort();
    keys.dedup();
    keys
}

/// key → text as written after `=` in one Fluent file (single-line messages, as all are).
fn ftl_texts(locale: &str) -> BTreeMap<String, String> {
    let path = Path::new(ROOT).join(format!("i18n/{locale}/molefeed.ftl"));
    std::fs::read_to_string(&path)
        .unwrap()
        .lines()
        .filter(|l| !l.starts_with([' ', '#']))
        .filter_map(|l| l.split_once('='))
        .map(|(k, v)| (k.trim().to_string(), v.trim().to_string()))
        .collect()
}

/// FNV-1a, 64 bits: a fixed hash of a text (no dependency, same result on every machine).
fn fnv1a(text: &str) -> String {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for b in text.bytes() {
        h ^= u64::from(b);
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    format!("{h:016x}")
}

#[test]
fn the_hash_is_fnv1a() {
    // Published FNV-1a 64 test vectors (the FNV reference, draft-eastlake-fnv): "" and "a".
    assert_eq!(fnv1a(""), "cbf29ce484222325");
    assert_eq!(fnv1a("a"), "af63dc4c8601ec8c");
}

/// A safety text changes only with a reviewed English–Spanish pair: `i18n/reviewed-safety.txt`
/// holds, for every safety key, the hashes of the English and the Spanish text a bilingual
/// reviewer read together. Changing either text (or adding a caution) fails here until the
/// pair is reviewed and its line written; the message gives the line to write after review.
#[test]
fn safety_texts_change_only_with_a_reviewed_pair() {
    let reviewed_path = Path::new(ROOT).join("i18n/reviewed-safety.txt");
    let reviewed: BTreeMap<String, (String, String)> = std::fs::read_to_string(&reviewed_path)
        .unwrap()
        .lines()
        .filter(|l| !l.trim().is_empty() && !l.starts_with('#'))
        .map(|l| {
            let parts: Vec<&str> = l.split_whitespace().collect();
            assert_eq!(parts.len(), 3, "odd line {l:?}");
            (
                parts[0].to_string(),
                (parts[1].to_string(), parts[2].to_string()),
            )
        })
        .collect();
    let (en, es) = (ftl_texts("en"), ftl_texts("es"));
    let keys = safety_keys();
    assert!(keys.len() > 80, "only {} safety keys", keys.len());
    let mut unreviewed = Vec::new();
    for key in &keys {
        let pair = (fnv1a(&en[key]), fnv1a(&es[key]));
        if reviewed.get(key) != Some(&pair) {
            unreviewed.push(format!(
                "{key} {} {}\n    en: {}\n    es: {}",
                pair.0, pair.1, en[key], es[key]
            ));
        }
    }
    let stale: Vec<_> = reviewed.keys().filter(|k| !keys.contains(k)).collect();
    assert!(
        unreviewed.is_empty(),
        "safety texts without a reviewed English–Spanish pair; after review, write each first \
         line into i18n/reviewed-safety.txt:\n{}",
        unreviewed.join("\n")
    );
    assert!(stale.is_empty(), "reviewed keys no longer used: {stale:?}");
}
