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
    let mut seen: Vec<Caution> = Vec::new();
    for c in cautions {
        if !seen.contains(&c) {
            seen.push(c);
        }
    }
    seen.sort_by_key(|c| std::cmp::Reverse(c.severity));
    seen.push(Caution::advisory());
    seen
}

/// Renders cautions for the CLI: `[warning] key (name=value, ...)`.
pub fn render(cautions: &[Caution]) -> String {
    cautions
        .iter()
        .map(|c| {
            let sev = match c.severity {
                Severity::Info => "note",
                Severity::Warning => "warning",
                Severity::Danger => "DANGER",
            };
            if c.params.is_empty() {
                format!("[{sev}] {}\n", c.key)
            } else {
                let p: Vec<String> = c.params.iter().map(|(n, v)| format!("{n}={v}")).collect();
                format!("[{sev}] {} ({})\n", c.key, p.join(", "))
            }
        })
        .collect()
}
