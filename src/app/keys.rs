//! The translation keys the Rust side builds at run time from codes (units, calculators,
//! field names, engine error kinds, caution levels), so the translation check knows them.
//!
//! Design choice: keys written literally are marked with `calc::key("…")` and found by the
//! check's source scan; keys built with `format!` from an enumeration are listed here, from the
//! same enumerations the code uses, so a new variant without a translation fails the check.

use super::calc::all_field_names;
use super::seams::{CalcKind, CautionLevel};
use crate::engine::ErrorKind;
use crate::engine::quantity::Unit;

/// Every engine error kind. The match makes adding a kind a compile error here until it is
/// listed (the enum is `non_exhaustive` only outside this crate).
pub fn all_error_kinds() -> Vec<ErrorKind> {
    fn listed(kind: ErrorKind) -> bool {
        match kind {
            ErrorKind::Syntax
            | ErrorKind::UnknownElement
            | ErrorKind::UnbalancedParenthesis
            | ErrorKind::EmptyGroup
            | ErrorKind::ZeroCount
            | ErrorKind::Overflow
            | ErrorKind::Impossible
            | ErrorKind::Ambiguous
            | ErrorKind::SpeciesOnBothSides
            | ErrorKind::WrongCoefficient
            | ErrorKind::NotInReaction
            | ErrorKind::UnknownChemical
            | ErrorKind::OutOfRange
            | ErrorKind::Unreachable
            | ErrorKind::InvalidInput => true,
        }
    }
    let all = vec![
        ErrorKind::Syntax,
        ErrorKind::UnknownElement,
        ErrorKind::UnbalancedParenthesis,
        ErrorKind::EmptyGroup,
        ErrorKind::ZeroCount,
        ErrorKind::Overflow,
        ErrorKind::Impossible,
        ErrorKind::Ambiguous,
        ErrorKind::SpeciesOnBothSides,
        ErrorKind::WrongCoefficient,
        ErrorKind::NotInReaction,
        ErrorKind::UnknownChemical,
        ErrorKind::OutOfRange,
        ErrorKind::Unreachable,
        ErrorKind::InvalidInput,
    ];
    debug_assert!(all.iter().all(|k| listed(*k)));
    all
}

/// Keys the engine emits as data: product name keys from its catalog and caution keys (see the
/// dosing notes). The bridge translates them when a translation exists and otherwise shows
/// the key with its parameters, so a new engine key degrades to readable, not to blank.
pub const ENGINE_TEXT_KEYS: &[&str] = &[
    // The calculator table's check of targets against the plant's limits.
    "site-limit-above",
    "site-limit-below",
    // The stock: a tank at or below its reorder level.
    "tank-at-reorder-level",
    // The operating report's cross-check by tank drop and its gaps (`log::report`).
    "fed-dose-deviates",
    "totalizer-went-back",
    "report-other-sites-left-out",
    "totalizer-beyond-full-scale",
    "readings-days-apart",
    "residual-days-without-reading",
    "reading-unit-not-checked",
    "tank-rose-without-delivery",
    "delivery-not-converted",
    "hazard-toxic-gas",
    "hazard-toxic-vapour",
    "hazard-corrosive",
    "hazard-corrosive-mild",
    "hazard-corrosive-acid",
    "hazard-corrosive-caustic",
    "hazard-oxidizer",
    "hazard-irritant",
    "hazard-irritant-dust",
    "hazard-stains",
    "hazard-heat-on-dilution",
    "hazard-heat-on-slaking",
    "hazard-releases-so2-with-acid",
    "ppe-scba-gas",
    "ppe-face-shield-gloves",
    "ppe-dust-mask-goggles",
    "incompatible-acid-hypochlorite-chlorine-gas",
    "incompatible-ammonia-chloramine-gas",
    "incompatible-organics-oxidizer",
    "incompatible-alkali-heat",
    "incompatible-acid-caustic-heat",
    "incompatible-water-into-concentrate",
    "incompatible-water-quicklime-heat",
    "incompatible-oxidizer-reducer",
    "incompatible-acid-releases-so2",
    "incompatible-alkali-releases-ammonia",
    "pump-over-capacity",
    "pump-above-usable-range",
    "pump-below-usable-range",
    "setting-fraction-of-percent",
    "dose-above-max-use-level",
    // The table's plausibility guards (`engine::calculators::guards`).
    "max-use-level-typical",
    "sg-unlike-strength",
    "water-co2-high",
    "pump-too-small",
    "setting-beyond-full-scale",
    "flow-above-meter-range",
    "pump-not-for-product",
    "strength-unusual",
    "sg-from-density-table",
    "add-chemical-to-water",
    "zero-dose",
    "pump-check-within-tolerance",
    "pump-check-adjust",
    "pump-check-inspect",
    "breakpoint-practice-range",
    "residual-above-limit",
    "ph-alkalinity-effect-from-water-engine",
    "alkalinity-exhausted",
    "supplemental-alkali-needed",
    "give-water-for-ph-effect",
    "ph-outside-range",
    "softening-no-excess-lime",
    "sludge-estimate-only",
    "sludge-basis",
    "sludge-basis-alternative",
    "chloramine-practice-range",
    "chloramine-ratio-above-theoretical",
    "dechlor-field-dose-separate",
    "dechlor-oxygen-demand",
    "ph-effect-end-state",
    "ph-effect-demand-acid",
    "natural-ammonia-covers-ratio",
    "natural-ammonia-credited",
    "natural-ammonia-broken-first",
    "chlorine-short-of-natural-breakpoint",
    "free-ammonia-nitrification",
    // The plant's other feeds (part A): fluoride, phosphate, permanganate, chlorine dioxide.
    "hazard-fluoride-acid",
    "hazard-fluoride-dust",
    "hazard-carbon-dust",
    "incompatible-oxidizer-solid-acid",
    "incompatible-acid-chlorite-clo2-gas",
    "water-already-at-target",
    "water-effect-not-available",
    "fluoride-feed-interlock",
    "fluoride-full-scale-above-limit",
    "permanganate-pink-water",
    "permanganate-no-demand",
    "clo2-generator-ratio",
    "clo2-acid-as-pure-hcl",
    "expected-chlorite-above-limit",
    "chlorite-conversion-typical",
    // A reading moved by its precision that the calculator refuses (`calculators::ranges`).
    "range-unavailable",
    // CT has no card in the app; the command line prints these sentences.
    "ct-regression-not-table",
    "ct-outside-table-range",
    "ct-below-3log",
    // Wastewater, distribution and bench calculators.
    "alkalinity-already-enough",
    "metal-ratio-practice",
    "metal-ratio-outside-practice",
    "dechlorinate-before-discharge",
    "disinfection-target-practice",
    "disinfection-target-from-practice",
    // The plant's water path (`engine::path`).
    "site-limit-finished-above",
    "site-limit-finished-below",
    "path-ct-needs-flow",
    "path-chlorine-as-fed",
    // The analysis a water was read from (`engine::dosing::waterside::water_cautions`).
    "water-ion-balance",
];

/// Further results listed under the card's big numbers (`result-<id>` with dashes): every
/// result of a calculator the app shows that has no big place of its own.
pub fn extra_keys() -> Vec<String> {
    let mut keys: Vec<String> = crate::engine::calculators::all()
        .iter()
        .filter(|c| c.in_app)
        .flat_map(|c| c.results.iter())
        .filter(|r| !super::engine_adapter::BIG_RESULTS.contains(&r.id))
        .map(|r| r.id.replace('_', "-"))
        .collect();
    keys.sort();
    keys.dedup();
    keys
}

/// Trace labels (`trace-<label>`): the engine's named traces and the adapter's own.
pub const TRACE_LABELS: &[&str] = &[
    "days-of-supply",
    "product-feed",
    "product-strength",
    "ph-adjustment",
    "two-targets",
    "active-feed-si",
    "active-feed-us",
    "actual-dose",
    "alkalinity-consumed",
    "alkalinity-added",
    "alkalinity-per-alkali",
    "alkalinity-per-dose",
    "alkalinity-added-per-dose",
    "ammonia-dose",
    "breakpoint-dose",
    "breakpoint-ratio",
    "breakpoint-alkalinity",
    "breakpoint-alkalinity-ratio",
    "chlorine-as-compound",
    "concentrate-strength",
    "contact-time",
    "ct",
    "dechlor-dose",
    "dechlor-ratio",
    "dilution",
    "dry-solids",
    "flow",
    "giardia-log-inactivation",
    "lime-per-alkalinity",
    "lime-per-co2",
    "lime-per-magnesium",
    "magnesium-from-hardness",
    "monochloramine-ratio",
    "pounds-factor",
    "pump-setting",
    "feeder-setting",
    "soda-ash-per-nch",
    "solids-per-dose",
    "target-strength",
    "batch-mass",
    "concentrate-mass",
    // Wastewater, distribution and bench calculators.
    "alkalinity-per-n-nitrified",
    "alkalinity-per-n-denitrified",
    "alkali-per-alkalinity",
    "metal-for-phosphorus",
    "coagulant-for-phosphorus",
    "chlorine-for-volume",
    "product-per-chlorine",
    "polymer-solution",
    "polymer-neat",
    "jar-dose",
    "jar-dose-as-product-compound",
    "product-per-compound",
    // The plant's other feeds (part A).
    "phosphate-as-po4",
    "permanganate-per-iron",
    "permanganate-per-manganese",
    "clo2-chlorite",
    "clo2-reactant",
];

/// Where a step's factor comes from (`origin-<code>`), as the adapter names them.
pub const ORIGIN_CODES: &[&str] = &[
    "measured",
    "molar-mass",
    "mole-ratio",
    "unit-definition",
    "product",
    "constant",
    "equilibrium",
];

/// Why the engine refused an input (`error-reason-<code>`, set with `Error::because`). The
/// source scan in the tests below finds every reason the engine or app gives, so a new one
/// cannot reach the screen as a bare kind.
pub const ERROR_REASONS: &[&str] = &[
    "product-not-for-calculator",
    "missing-input",
    "negative-reading",
    "not-finite",
    "result-not-finite",
    "unknown-calculator",
    "unknown-mode",
    "no-product-chosen",
    "no-curve",
    "not-a-number",
    "not-positive",
    "needs-specific-gravity",
    "basis-not-for-product",
    "strength-above-pure",
    "strength-above-pure-al2o3",
    "trade-strength-above-density",
    "pump-needs-liquid",
    "feeder-cannot-feed-product",
    "needs-liquid-product",
    "dilution-not-weaker",
    "dilution-masses-inconsistent",
    "calcium-above-total-hardness",
    "needs-basicity",
    "alkalinity-differs-from-water",
    "stability-needs-positive",
    "site-id-used-twice",
    "site-needs-name",
    "pump-cannot-feed-product",
    "tank-dimension-missing",
    "limit-minimum-above-maximum",
    "limit-unit-not-understood",
    "site-has-no-such-pump",
    "factor-not-usable",
    "implausible-magnitude",
    "percent-looks-like-fraction",
    "solution-stronger-than-product",
    "sg-does-not-match-strength",
    "alkalinity-below-end-point",
    "water-co2-beyond-solubility",
    "gas-dose-beyond-solubility",
    "disinfected-object-ambiguous",
    "stock-compound-not-product",
    "site-path-out-of-order",
    "site-tolerance-out-of-range",
    "site-path-unknown-product",
    "site-path-unknown-basin",
    "target-out-of-reach",
    "same-chemical-twice",
    "one-second-target-needed",
    "two-chemicals-needed",
    "strapping-table-invalid",
    "level-outside-strapping-table",
    "level-above-tank-height",
    "cone-taller-than-tank",
    "tank-drop-needs-straight-sides",
    "site-has-no-such-tank",
    "tank-given-twice",
    "strapping-needs-site-tank",
];

/// The quantity names the engine puts in its errors (`quantity` parameter), exactly as it
/// writes them; each is translated through [`quantity_key`].
pub const QUANTITY_NAMES: &[&str] = &[
    "cone height",
    "reorder level",
    "tank height",
    "tank level",
    "use rate",
    "Cl2:NH3-N ratio",
    "TDS",
    "additives",
    "alkali purity",
    "alkalinity",
    "alkalinity setpoint",
    "ammonia-N",
    "amount",
    "baffling factor",
    "basicity",
    "basin volume",
    "calcium",
    "calcium-hardness",
    "caught mass",
    "check-pump threshold",
    "chloride",
    "chlorine demand",
    "chlorine dose",
    "chlorine residual",
    "chlorite conversion",
    "coagulant dose",
    "conductivity",
    "contact time",
    "current setting",
    "dose",
    "drawdown volume",
    "final volume",
    "flow",
    "flow meter full scale",
    "generator yield",
    "level drop",
    "lime purity",
    "limit",
    "magnesium",
    "maximum dose",
    "maximum speed",
    "maximum use level",
    "orthophosphate share",
    "pH",
    "points",
    "potassium",
    "precipitate",
    "pump capacity",
    "purity",
    "soda ash purity",
    "sodium",
    "specific gravity",
    "strength",
    "sulfate",
    "suspended solids",
    "tank diameter",
    "tank dimension",
    "tank length",
    "tank width",
    "target dose",
    "target pH",
    "temperature",
    "test time",
    "tolerance",
    "usable range maximum",
    "usable range minimum",
    "volume per revolution",
    "nitrate-N",
    "phosphorus",
    "metal ratio",
    "pipe diameter",
    "pipe length",
    "tank volume",
    "solution strength",
    "dry solids rate",
    "stock concentration",
    "jar volume",
];

/// `quantity-<slug>`: the engine's name lower-cased, every run of other characters one `-`
/// ("Cl2:NH3-N ratio" → `quantity-cl2-nh3-n-ratio`).
pub fn quantity_key(name: &str) -> String {
    let mut slug = String::with_capacity(name.len());
    for c in name.chars() {
        if c.is_ascii_alphanumeric() {
            slug.push(c.to_ascii_lowercase());
        } else if !slug.is_empty() && !slug.ends_with('-') {
            slug.push('-');
        }
    }
    format!("quantity-{}", slug.trim_end_matches('-'))
}

/// Keys built from codes at run time.
pub fn dynamic_keys() -> Vec<String> {
    let mut keys = Vec::new();
    keys.extend(Unit::ALL.iter().map(|u| format!("unit-{}", u.code())));
    keys.extend(CalcKind::all().iter().map(|k| format!("calc-{}", k.code())));
    // Every product's name, from the catalog itself.
    if let Ok(catalog) = crate::engine::dosing::catalog::Catalog::builtin() {
        keys.extend(catalog.products.iter().map(|p| p.name_key.clone()));
    }
    // A variant's chip is shown only where a screen has more than one.
    for kind in CalcKind::all() {
        let modes = kind.modes();
        if modes.len() > 1 {
            keys.extend(modes.iter().map(|m| format!("mode-{}", m.code())));
        }
        if modes.iter().any(|m| m.calculator().has_curve()) {
            keys.push(format!("plot-need-inputs-{}", kind.code()));
        }
    }
    keys.extend(all_field_names().iter().map(|f| format!("field-{f}")));
    // The inputs given as text, and what each kind of text is.
    for t in crate::engine::calculators::all()
        .iter()
        .flat_map(|c| c.text_inputs())
    {
        keys.push(format!("field-{}", t.name));
        keys.push(format!("text-input-{}", t.kind));
    }
    // The Plant path screen's raw-water fields.
    keys.extend(
        super::path_screen::WATER_FIELDS
            .iter()
            .map(|(name, _, _)| format!("path-field-{name}")),
    );
    keys.extend(
        all_error_kinds()
            .iter()
            .map(|k| format!("error-{}", k.code())),
    );
    keys.extend(
        CautionLevel::ALL
            .iter()
            .map(|l| format!("caution-level-{}", l.code())),
    );
    keys.extend(
        super::dose_log::ERROR_CODES
            .iter()
            .map(|code| format!("log-error-{code}")),
    );
    keys.extend(ENGINE_TEXT_KEYS.iter().map(|k| k.to_string()));
    keys.extend(extra_keys().iter().map(|k| format!("result-{k}")));
    // The Settings screen names each instrument whose precision a plant may state.
    keys.extend(
        crate::engine::precision::Instrument::ALL
            .iter()
            .map(|i| format!("instrument-{}", i.code())),
    );
    // A plant limit's parameter in words: those a calculation checks (the form's choices)
    // and those of the regulatory defaults listed beside them.
    keys.extend(
        crate::engine::calculators::checked_limit_parameters()
            .into_iter()
            .map(str::to_string)
            .chain(
                crate::engine::dosing::site::regulatory_defaults()
                    .into_iter()
                    .map(|l| l.parameter),
            )
            .map(|p| format!("parameter-{p}")),
    );
    // Every field's unit says its basis.
    keys.extend(
        super::calc_screen::BASIS_WORDS
            .iter()
            .map(|b| format!("basis-{b}")),
    );
    // The dose place is captioned by the id of the result in it (a cross-check's actual dose).
    keys.extend(
        super::engine_adapter::DOSE
            .iter()
            .map(|id| format!("result-{}", id.replace('_', "-"))),
    );
    keys.extend(TRACE_LABELS.iter().map(|k| format!("trace-{k}")));
    keys.extend(ORIGIN_CODES.iter().map(|k| format!("origin-{k}")));
    keys.extend(ERROR_REASONS.iter().map(|r| format!("error-reason-{r}")));
    keys.extend(QUANTITY_NAMES.iter().map(|q| quantity_key(q)));
    keys
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The Rust sources under `src/<dirs>`, keys.rs itself left out, as one text.
    fn sources(dirs: &[&str]) -> String {
        let src = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
        let mut text = String::new();
        let mut stack: Vec<_> = dirs.iter().map(|d| src.join(d)).collect();
        while let Some(dir) = stack.pop() {
            for entry in std::fs::read_dir(dir).unwrap() {
                let path = entry.unwrap().path();
                if path.is_dir() {
                    stack.push(path);
                } else if path.extension().is_some_and(|e| e == "rs") && !path.ends_with("keys.rs")
                {
                    text.push_str(&std::fs::read_to_string(path).unwrap());
                }
            }
        }
        text
    }

    /// The string literals that directly follow `marker` in `text`.
    fn literals_after(text: &str, marker: &str) -> Vec<String> {
        text.split(marker)
            .skip(1)
            .filter_map(|rest| {
                let rest = rest.trim_start();
                let rest = rest.strip_prefix('"')?;
                Some(rest[..rest.find('"')?].to_string())
            })
            .collect()
    }

    /// Every trace label the engine names (`NamedTrace::new("…")` in its sources), every
    /// caution key and refusal reason it raises, and every quantity it names in an error is
    /// listed, so none reaches the screen untranslated.
    #[test]
    fn engine_labels_and_cautions_are_listed() {
        // The engine and the app: what can reach the screen (the CLI prints keys as they are).
        let text = sources(&["engine", "app"]);
        let mut missing: Vec<String> = literals_after(&text, "NamedTrace::new(")
            .into_iter()
            .filter(|label| !TRACE_LABELS.contains(&label.as_str()))
            .collect();
        for marker in ["Caution::info(", "Caution::warning(", "Caution::danger("] {
            // The advisory is shown by the card itself; CT has no calculator in the app yet.
            missing.extend(literals_after(&text, marker).into_iter().filter(|key| {
                key != "advisory-operator-decides"
                    && !key.starts_with("ct-")
                    && !ENGINE_TEXT_KEYS.contains(&key.as_str())
            }));
        }
        missing.extend(
            literals_after(&text, ".because(")
                .into_iter()
                .filter(|reason| !ERROR_REASONS.contains(&reason.as_str())),
        );
        // Every place a quantity name enters an engine error: the range checks, the engine's
        // own wrappers around them, and the `quantity` parameter set directly.
        let engine_text = sources(&["engine"]);
        let mut named = std::collections::BTreeSet::new();
        for marker in [
            "check_range(",
            "check_positive(",
            "check_chlorine(",
            "optional(",
            "needs(",
            ".with(\"quantity\",",
        ] {
            named.extend(literals_after(&engine_text, marker));
        }
        // The scan itself must see the engine's names, or it would pass on nothing.
        assert!(named.len() > 40, "the scan found only {named:?}");
        missing.extend(
            named
                .into_iter()
                .filter(|name| !QUANTITY_NAMES.contains(&name.as_str())),
        );
        missing.sort();
        missing.dedup();
        assert!(missing.is_empty(), "not listed: {missing:?}");
    }

    #[test]
    fn quantity_keys_are_kebab_case_and_distinct() {
        let keys: std::collections::BTreeSet<String> =
            QUANTITY_NAMES.iter().map(|q| quantity_key(q)).collect();
        assert_eq!(keys.len(), QUANTITY_NAMES.len(), "two names share a key");
        for (name, key) in [
            ("Cl2:NH3-N ratio", "quantity-cl2-nh3-n-ratio"),
            ("target pH", "quantity-target-ph"),
            ("calcium-hardness", "quantity-calcium-hardness"),
        ] {
            assert_eq!(quantity_key(name), key);
        }
    }
}
