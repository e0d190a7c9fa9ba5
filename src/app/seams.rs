//! The seams where the UI meets the chemistry engine: the only place the lead has to edit to
//! connect the calculators and the titration curve.
//!
//! Design choice: the UI talks to a trait, [`CalcEngine`], in SI units with named inputs, and
//! gets back numbers plus a trace and cautions. Until an engine function exists the seam
//! answers [`SeamError::NotConnected`] and the UI says so in words: the app never makes up a
//! dose. Tests plug in their own implementations to check wiring and formatting.

use super::units::Quantity;
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
            // Coagulation's variants are the alkali that keeps the residual alkalinity.
            CalcKind::Coagulation => &[
                CalcMode::AlkaliCaustic,
                CalcMode::AlkaliLime,
                CalcMode::AlkaliSodaAsh,
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
    AlkaliCaustic,
    AlkaliLime,
    AlkaliSodaAsh,
}

impl CalcMode {
    pub const ALL: [CalcMode; 7] = [
        CalcMode::Standard,
        CalcMode::FreeChlorine,
        CalcMode::Chloramine,
        CalcMode::Dechlorination,
        CalcMode::AlkaliCaustic,
        CalcMode::AlkaliLime,
        CalcMode::AlkaliSodaAsh,
    ];

    pub fn code(self) -> &'static str {
        match self {
            CalcMode::Standard => "standard",
            CalcMode::FreeChlorine => "free-chlorine",
            CalcMode::Chloramine => "chloramine",
            CalcMode::Dechlorination => "dechlorination",
            CalcMode::AlkaliCaustic => "alkali-caustic",
            CalcMode::AlkaliLime => "alkali-lime",
            CalcMode::AlkaliSodaAsh => "alkali-soda-ash",
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
    /// Significant figures of each value as typed; a field absent here does not limit the
    /// precision of a result (temperature, or an input that was not typed).
    pub figures: BTreeMap<&'static str, u8>,
    /// The maximum use level of the chosen product as the site received it (mg/L of product,
    /// from its certification), so the engine can flag a dose above it; `None` when the site
    /// records none.
    pub max_use_level_mg_l: Option<f64>,
}

/// A product the operator can pick for a calculator; `name_key` is its translation key.
#[derive(Clone, Debug, PartialEq)]
pub struct ProductChoice {
    pub id: String,
    pub name_key: String,
    /// How it is fed, which decides the product inputs the calculator asks for.
    pub form: FeedForm,
}

/// How a product reaches the water: a liquid through a metering pump (strength, SG, pump
/// volume), or a gas or dry chemical through a feeder set by mass (purity, feeder scale).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash)]
pub enum FeedForm {
    #[default]
    Liquid,
    Gas,
    Dry,
}

impl FeedForm {
    pub const ALL: [FeedForm; 3] = [FeedForm::Liquid, FeedForm::Gas, FeedForm::Dry];

    /// Stable code, the stem of the form's translation keys.
    pub fn code(self) -> &'static str {
        match self {
            FeedForm::Liquid => "liquid",
            FeedForm::Gas => "gas",
            FeedForm::Dry => "dry",
        }
    }

    /// Fed by mass: there is no product volume to show, and the setting is a feeder's.
    pub fn by_mass(self) -> bool {
        self != FeedForm::Liquid
    }
}

impl CalcRequest {
    pub fn get(&self, name: &str) -> Option<f64> {
        self.values.get(name).copied()
    }

    /// The significant figures `name` was typed with, if it limits precision.
    pub fn figures(&self, name: &str) -> Option<u8> {
        self.figures.get(name).copied()
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
    /// Product as delivered per day: the rate a gas or dry feeder is set to.
    pub product_kg_per_day: Option<f64>,
    /// Pump setting, percent of full stroke/speed, or a feeder's percent of full scale.
    pub pump_setting_percent: Option<f64>,
    /// Further results a calculator reports beside the four big numbers (alkalinity
    /// consumed, pH after, soda ash ...), shown as a list under them.
    pub extras: Vec<Extra>,
    /// Significant figures the inputs support for the results (the least precise measured
    /// input along the engine's traces); `None` when every input was exact.
    pub figures: Option<u8>,
    /// "Show the work": headings and one line per conversion step, as the engine writes them.
    pub trace: Vec<TraceLine>,
    pub cautions: Vec<Caution>,
}

/// A further result: translation key `result-<key>`, value in SI for `quantity`.
#[derive(Clone, Debug, PartialEq)]
pub struct Extra {
    pub key: &'static str,
    pub value: f64,
    pub quantity: Quantity,
}

/// Where a step's factor comes from; translated as `origin-<code>` with `$detail`.
#[derive(Clone, Debug, PartialEq)]
pub struct StepOrigin {
    pub code: &'static str,
    pub detail: String,
}

/// One line of "show the work".
#[derive(Clone, Debug, PartialEq)]
pub enum TraceLine {
    /// A named trace begins; its title is the translation `trace-<label>`.
    Heading(String),
    /// A conversion step (`previous × factor = result`), with its factor's origin.
    Step {
        text: String,
        origin: Option<StepOrigin>,
    },
    /// The result rounded to the figures its inputs support, or a note from the adapter.
    Result(String),
}

impl TraceLine {
    /// The line as stored in the dose log: language-neutral, headings as `[label]`.
    pub fn plain(&self) -> String {
        match self {
            TraceLine::Heading(label) => format!("[{label}]"),
            TraceLine::Step {
                text,
                origin: Some(o),
            } => format!("  {text}   ({}: {})", o.code, o.detail),
            TraceLine::Step { text, origin: None } => format!("  {text}"),
            TraceLine::Result(text) => format!("  {text}"),
        }
    }
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

    /// The titration curve for the pH-control or coagulation inputs (x: titrant mg/L, y: pH).
    fn titration_curve(&self, _request: &CalcRequest) -> Result<Curve, SeamError> {
        Err(SeamError::NotConnected)
    }
}

/// The engine as it stands: nothing connected yet.
pub struct Unconnected;

impl CalcEngine for Unconnected {}

/// The engine the app uses; desktop and Android both get it here.
/// [`super::engine_adapter::DosingEngine`] answers every calculator; if the built-in catalog
/// ever failed to load, the app would say "not connected" instead of showing numbers.
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
            figures: BTreeMap::new(),
            max_use_level_mg_l: None,
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
