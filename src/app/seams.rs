//! The seams where the UI meets the chemistry engine: the only place the lead has to edit to
//! connect the calculators and the titration curve.
//!
//! Design choice: the UI talks to a trait, [`CalcEngine`], in SI units with named inputs, and
//! gets back numbers plus a trace and cautions. Until an engine function exists the seam
//! answers [`SeamError::NotConnected`] and the UI says so in words: the app never makes up a
//! dose. Tests plug in their own implementations to check wiring and formatting.

use crate::engine;
use std::collections::BTreeMap;
use std::rc::Rc;

/// The calculators the app offers, in menu order.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum CalcKind {
    PhControl,
    Chlorination,
    Coagulation,
    Softening,
    PumpCheck,
    FeedSetting,
}

impl CalcKind {
    pub const ALL: [CalcKind; 6] = [
        CalcKind::PhControl,
        CalcKind::Chlorination,
        CalcKind::Coagulation,
        CalcKind::Softening,
        CalcKind::PumpCheck,
        CalcKind::FeedSetting,
    ];

    /// Stable code; the translation key is `calc-<code>`.
    pub fn code(self) -> &'static str {
        match self {
            CalcKind::PhControl => "ph-control",
            CalcKind::Chlorination => "chlorination",
            CalcKind::Coagulation => "coagulation",
            CalcKind::Softening => "softening",
            CalcKind::PumpCheck => "pump-check",
            CalcKind::FeedSetting => "feed-setting",
        }
    }

    /// The variants a calculator offers (chlorination has three; the others one).
    pub fn modes(self) -> &'static [CalcMode] {
        match self {
            CalcKind::Chlorination => &[
                CalcMode::FreeChlorine,
                CalcMode::Chloramine,
                CalcMode::Dechlorination,
            ],
            _ => &[CalcMode::Standard],
        }
    }
}

/// A calculator variant; the translation key is `mode-<code>`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum CalcMode {
    Standard,
    FreeChlorine,
    Chloramine,
    Dechlorination,
}

impl CalcMode {
    pub const ALL: [CalcMode; 4] = [
        CalcMode::Standard,
        CalcMode::FreeChlorine,
        CalcMode::Chloramine,
        CalcMode::Dechlorination,
    ];

    pub fn code(self) -> &'static str {
        match self {
            CalcMode::Standard => "standard",
            CalcMode::FreeChlorine => "free-chlorine",
            CalcMode::Chloramine => "chloramine",
            CalcMode::Dechlorination => "dechlorination",
        }
    }
}

/// What the UI asks the engine: the calculator, its variant, and every input in SI units,
/// keyed by the field names of [`super::calc::fields`] (`flow` in m³/d, `temperature` in °C,
/// concentrations in mg/L, `strength` as a fraction 0–1, ...).
#[derive(Clone, Debug, PartialEq)]
pub struct CalcRequest {
    pub kind: CalcKind,
    pub mode: CalcMode,
    /// The catalog id of the product chosen, for calculators that offer a choice.
    pub product: Option<String>,
    pub values: BTreeMap<&'static str, f64>,
}

/// A product the operator can pick for a calculator; `name_key` is its translation key.
#[derive(Clone, Debug, PartialEq)]
pub struct ProductChoice {
    pub id: String,
    pub name_key: String,
}

impl CalcRequest {
    pub fn get(&self, name: &str) -> Option<f64> {
        self.values.get(name).copied()
    }
}

/// How serious a caution is. The UI shows each level with its own colour, icon and word.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum CautionLevel {
    Info,
    Warning,
    Danger,
}

impl CautionLevel {
    pub const ALL: [CautionLevel; 3] = [
        CautionLevel::Info,
        CautionLevel::Warning,
        CautionLevel::Danger,
    ];

    /// Translation key stem: `caution-level-<code>`.
    pub fn code(self) -> &'static str {
        match self {
            CautionLevel::Info => "info",
            CautionLevel::Warning => "warning",
            CautionLevel::Danger => "danger",
        }
    }
}

/// A caution from the engine. `code` selects the translation `caution-<code>` when one
/// exists; otherwise the English `message` is shown.
#[derive(Clone, Debug, PartialEq)]
pub struct Caution {
    pub level: CautionLevel,
    pub code: String,
    pub message: String,
    pub params: Vec<(String, String)>,
}

/// What the engine returns for one calculation, in SI units. Fields a calculator does not
/// produce are `None` and shown as a dash.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct CalcOutcome {
    /// The chemical (or product) the dose refers to, as the engine names it.
    pub chemical: String,
    pub dose_mg_per_l: Option<f64>,
    pub feed_kg_per_day: Option<f64>,
    pub product_l_per_hour: Option<f64>,
    /// Metering-pump setting, percent of full stroke/speed.
    pub pump_setting_percent: Option<f64>,
    /// "Show the work": one line per step, as the engine writes it.
    pub trace: Vec<String>,
    pub cautions: Vec<Caution>,
}

/// A titration curve: titrant added (mg/L) against pH.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct Curve {
    pub titrant: String,
    pub points: Vec<(f64, f64)>,
}

/// Why the seam could not answer.
#[derive(Clone, Debug, PartialEq)]
pub enum SeamError {
    /// No engine function is connected to this calculator yet.
    NotConnected,
    /// The engine refused the inputs; shown via its `ErrorKind::code()` translation.
    Engine(engine::Error),
}

impl From<engine::Error> for SeamError {
    fn from(e: engine::Error) -> SeamError {
        SeamError::Engine(e)
    }
}

/// The calculators' entry point. One method per screen need; each defaults to "not connected".
pub trait CalcEngine {
    /// The products calculator `kind` in `mode` offers (none: no choice shown).
    fn products(&self, _kind: CalcKind, _mode: CalcMode) -> Vec<ProductChoice> {
        Vec::new()
    }

    fn compute(&self, _request: &CalcRequest) -> Result<CalcOutcome, SeamError> {
        Err(SeamError::NotConnected)
    }

    /// The titration curve for the pH-control inputs (x: titrant mg/L, y: pH).
    fn titration_curve(&self, _request: &CalcRequest) -> Result<Curve, SeamError> {
        Err(SeamError::NotConnected)
    }
}

/// The engine as it stands: nothing connected yet.
pub struct Unconnected;

impl CalcEngine for Unconnected {}

/// SEAM FOR THE LEAD: the engine the app uses. Desktop and Android both get it here.
/// [`super::engine_adapter::DosingEngine`] answers the calculators the dosing engine covers so
/// far and says "not connected" for the rest; if the built-in catalog ever failed to load, the
/// app would show that instead of numbers.
pub fn connected_engine() -> Rc<dyn CalcEngine> {
    match super::engine_adapter::DosingEngine::new() {
        Ok(engine) => Rc::new(engine),
        Err(_) => Rc::new(Unconnected),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn unconnected_engine_refuses_rather_than_inventing() {
        let request = CalcRequest {
            kind: CalcKind::FeedSetting,
            mode: CalcMode::Standard,
            product: None,
            values: BTreeMap::from([("flow", 1000.0)]),
        };
        assert_eq!(Unconnected.compute(&request), Err(SeamError::NotConnected));
        assert_eq!(
            Unconnected.titration_curve(&request),
            Err(SeamError::NotConnected)
        );
        assert_eq!(
            connected_engine().titration_curve(&request),
            Err(SeamError::NotConnected),
            "no titration curve engine yet"
        );
    }

    #[test]
    fn codes_are_distinct() {
        let mut codes: Vec<_> = CalcKind::ALL.iter().map(|k| k.code()).collect();
        codes.extend(CalcMode::ALL.iter().map(|m| m.code()));
        let n = codes.len();
        codes.sort();
        codes.dedup();
        assert_eq!(codes.len(), n);
        assert_eq!(CalcKind::Chlorination.modes().len(), 3);
    }
}
