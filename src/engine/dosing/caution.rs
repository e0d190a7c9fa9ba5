//! Structured cautions attached to every dosing result.
//!
//! A caution is a severity, a kebab-case message key and named parameters, never prose: the
//! UI translates the key (the English text of each key is in `docs/dosing-notes.md`) and the
//! CLI prints the key with its parameters. Every result carries [`Caution::advisory`], because
//! the numbers inform a licensed operator's decision and never replace it.

use serde::Serialize;

/// How strongly the operator must attend to a caution.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Severity {
    /// Context the operator should know (source of a value, the advisory note).
    Info,
    /// A result that needs checking before it is used (pump turndown, ratio above theory).
    Warning,
    /// A safety hazard or a result beyond a regulatory or permit limit.
    Danger,
}

/// One caution: severity, translation key and parameters.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Caution {
    pub severity: Severity,
    pub key: String,
    pub params: Vec<(String, String)>,
}

impl Caution {
    pub fn new(severity: Severity, key: impl Into<String>) -> Caution {
        Caution {
            severity,
            key: key.into(),
            params: Vec::new(),
        }
    }

    pub fn info(key: impl Into<String>) -> Caution {
        Caution::new(Severity::Info, key)
    }

    pub fn warning(key: impl Into<String>) -> Caution {
        Caution::new(Severity::Warning, key)
    }

    pub fn danger(key: impl Into<String>) -> Caution {
        Caution::new(Severity::Danger, key)
    }

    pub fn with(mut self, name: &str, value: impl ToString) -> Caution {
        self.params.push((name.to_string(), value.to_string()));
        self
    }

    pub fn param(&self, name: &str) -> Option<&str> {
        self.params
            .iter()
            .find(|(n, _)| n == name)
            .map(|(_, v)| v.as_str())
    }

    /// The note every result carries.
    pub fn advisory() -> Caution {
        Caution::info("advisory-operator-decides")
    }
}

/// Ensures the advisory note is present exactly once, and orders cautions most severe first
/// so a small screen shows the dangerous ones above the fold.
pub fn finish(mut cautions: Vec<Caution>) -> Vec<Caution> {
    cautions.retain(|c| c.key != "advisory-operator-decides");
    // Said once: the same caution raised twice (by a product's hazards and by the process, one
    // naming the product and one not) keeps the copy that says more.
    let within = |a: &Caution, b: &Caution| a.params.iter().all(|p| b.params.contains(p));
    let mut seen: Vec<Caution> = Vec::new();
    for c in cautions {
        let same = seen.iter().position(|s| {
            s.key == c.key && s.severity == c.severity && (within(s, &c) || within(&c, s))
        });
        match same {
            Some(i) if c.params.len() > seen[i].params.len() => seen[i] = c,
            Some(_) => {}
            None => seen.push(c),
        }
    }
    // Stable: within a topic and a severity, the calculation's own order stays.
    seen.sort_by_key(|c| (c.topic(), std::cmp::Reverse(c.severity)));
    seen.push(Caution::advisory());
    seen
}

/// What a caution asks of the operator, in the order they must act on it: a limit of the plant
/// or of the product's certification, then what a cross-check found, then the process, then
/// the product's handling and protective equipment (the same on every result for a product,
/// so it comes last, before the advisory).
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub enum Topic {
    Limit,
    CrossCheck,
    Process,
    Handling,
}

/// Keys of the limit topic: the plant's permit, its meters and pumps, the product's maximum
/// use level, a setting no pump can make.
const LIMIT_KEYS: [&str; 8] = [
    "dose-above-max-use-level",
    "max-use-level-typical",
    "flow-above-meter-range",
    "pump-not-for-product",
    "pump-too-small",
    "setting-beyond-full-scale",
    "residual-above-limit",
    "ph-outside-range",
];

impl Caution {
    /// The caution's topic, from its key: `site-limit-*` and [`LIMIT_KEYS`] are limits,
    /// `pump-check-*` a cross-check, `hazard-*`, `incompatible-*` and `ppe-*` handling; every
    /// other caution is about the process.
    pub fn topic(&self) -> Topic {
        let k = self.key.as_str();
        if k.starts_with("site-limit-") || LIMIT_KEYS.contains(&k) {
            Topic::Limit
        } else if k.starts_with("pump-check-") {
            Topic::CrossCheck
        } else if ["hazard-", "incompatible-", "ppe-"]
            .iter()
            .any(|p| k.starts_with(p))
        {
            Topic::Handling
        } else {
            Topic::Process
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A permit breach comes before the handling boxes that every hypochlorite result carries,
    /// even though those are more severe; the advisory is last.
    #[test]
    fn a_caution_raised_twice_is_said_once_with_what_it_names() {
        let bare = Caution::danger("incompatible-ammonia-chloramine-gas");
        let named = bare.clone().with("product", "aqua-ammonia");
        let out = finish(vec![bare.clone(), named.clone(), bare.clone()]);
        assert_eq!(out, vec![named.clone(), Caution::advisory()]);
        // Two that name different things are both said.
        let other = bare.with("product", "ammonium-sulfate");
        let out = finish(vec![named.clone(), other.clone()]);
        assert_eq!(out, vec![named, other, Caution::advisory()]);
    }

    #[test]
    fn cautions_come_in_the_order_the_operator_acts_on_them() {
        let keys =
            |list: Vec<Caution>| -> Vec<String> { list.into_iter().map(|c| c.key).collect() };
        let finished = finish(vec![
            Caution::danger("hazard-oxidizer"),
            Caution::info("ppe-face-shield-gloves"),
            Caution::warning("ph-effect-end-state"),
            Caution::warning("pump-check-adjust"),
            Caution::danger("incompatible-acid-hypochlorite-chlorine-gas"),
            Caution::warning("site-limit-above"),
            Caution::danger("dose-above-max-use-level"),
            Caution::info("zero-dose"),
        ]);
        assert_eq!(
            keys(finished),
            [
                "dose-above-max-use-level",
                "site-limit-above",
                "pump-check-adjust",
                "ph-effect-end-state",
                "zero-dose",
                "hazard-oxidizer",
                "incompatible-acid-hypochlorite-chlorine-gas",
                "ppe-face-shield-gloves",
                "advisory-operator-decides",
            ]
        );
    }
}
