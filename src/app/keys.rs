//! The translation keys the Rust side builds at run time from codes (units, calculators,
//! field names, engine error kinds, caution levels), so the translation check knows them.
//!
//! Design choice: keys written literally are marked with `calc::key("…")` and found by the
//! check's source scan; keys built with `format!` from an enumeration are listed here, from the
//! same enumerations the code uses, so a new variant without a translation fails the check.

use super::calc::all_field_names;
use super::seams::{CalcKind, CalcMode, CautionLevel};
use super::units::Unit;
use crate::engine::ErrorKind;

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
    "product-chlorine-gas",
    "product-sodium-hypochlorite",
    "product-calcium-hypochlorite",
    "product-alum-liquid",
    "product-alum-dry",
    "product-ferric-chloride",
    "product-ferric-sulfate",
    "product-pacl",
    "product-sodium-hydroxide",
    "product-hydrated-lime",
    "product-quicklime",
    "product-soda-ash",
    "product-sulfur-dioxide",
    "product-sodium-bisulfite",
    "product-sodium-metabisulfite",
    "product-sodium-sulfite",
    "product-sodium-thiosulfate",
    "product-ascorbic-acid",
    "product-aqua-ammonia",
    "product-ammonium-sulfate",
    "product-sulfuric-acid",
    "product-hydrochloric-acid",
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
];

/// Keys built from codes at run time.
pub fn dynamic_keys() -> Vec<String> {
    let mut keys = Vec::new();
    keys.extend(Unit::ALL.iter().map(|u| format!("unit-{}", u.code())));
    keys.extend(CalcKind::ALL.iter().map(|k| format!("calc-{}", k.code())));
    keys.extend(CalcMode::ALL.iter().map(|m| format!("mode-{}", m.code())));
    keys.extend(all_field_names().iter().map(|f| format!("field-{f}")));
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
    keys
}
