//! The seams where the UI meets the chemistry engine: the only place the lead has to edit to
//! connect the calculators and the titration curve.
//!
//! Design choice: the UI talks to a trait, [`CalcEngine`], in SI units with named inputs, and
//! gets back numbers plus a trace and cautions. Until an engine function exists the seam
//! answers [`SeamError::NotConnected`] and the UI says so in words: the app never makes up a
//! dose. Tests plug in their own implementations to check wiring and formatting.

use crate::engine;
use crate::engine::calculators;
pub use crate::engine::calculators::{Curve, FeedForm, ProductChoice, StepOrigin, TraceLine};
use crate::engine::dosing::site::Limit;
use crate::engine::precision::{Instrument, Precision, Range};
use crate::engine::quantity::Quantity;
use std::collections::BTreeMap;
use std::rc::Rc;

/// A calculator screen of the app: a group of the engine's calculator table (`calc-<code>`),
/// in the table's order. Nothing here names a calculator: the menu is the table's.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub struct CalcKind(&'static str);

impl CalcKind {
    /// Every screen, in the table's order.
    pub fn all() -> Vec<CalcKind> {
        calculators::groups()
            .into_iter()
            .map(|(group, _)| CalcKind(group))
            .collect()
    }

    /// The screen whose code is `code`.
    pub fn find(code: &str) -> Option<CalcKind> {
        CalcKind::all().into_iter().find(|k| k.0 == code)
    }

    /// The screen `code` names (for code and tests that name one by a literal).
    #[cfg(test)]
    pub fn of(code: &str) -> CalcKind {
        CalcKind::find(code).expect("a group of the calculator table")
    }

    /// Stable code (the table's group); the translation key is `calc-<code>`.
    pub fn code(self) -> &'static str {
        self.0
    }

    /// The variants the screen offers: each calculator of the group, or each mode of its one
    /// calculator (coagulation: the alkali that keeps the residual alkalinity).
    pub fn modes(self) -> Vec<CalcMode> {
        let mut out = Vec::new();
        for c in calculators::all()
            .iter()
            .filter(|c| c.in_app && c.group == self.0)
        {
            if c.modes.is_empty() {
                out.push(CalcMode {
                    calculator: c.id,
                    mode: None,
                });
            }
            out.extend(c.modes.iter().map(|&m| CalcMode {
                calculator: c.id,
                mode: Some(m),
            }));
        }
        out
    }
}

/// A variant of a screen: one calculator of the table and, where it has modes, one mode. The
/// translation key of its chip is `mode-<code>`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub struct CalcMode {
    pub calculator: &'static str,
    pub mode: Option<&'static str>,
}

impl CalcMode {
    /// Every variant of every screen.
    pub fn all() -> Vec<CalcMode> {
        CalcKind::all()
            .into_iter()
            .flat_map(CalcKind::modes)
            .collect()
    }

    /// The variant whose code is `code`.
    pub fn find(code: &str) -> Option<CalcMode> {
        CalcMode::all().into_iter().find(|m| m.code() == code)
    }

    /// The variant `code` names (for tests that name one by a literal).
    #[cfg(test)]
    pub fn of(code: &str) -> CalcMode {
        CalcMode::find(code).expect("a calculator or mode of the table")
    }

    /// Stable code: the mode, else the calculator's id.
    pub fn code(self) -> &'static str {
        self.mode.unwrap_or(self.calculator)
    }

    /// The table's calculator this variant runs.
    pub fn calculator(self) -> &'static calculators::Calculator {
        calculators::all()
            .iter()
            .find(|c| c.id == self.calculator)
            .expect("a variant is made only from the table")
    }
}

/// What the UI asks the engine: the calculator, its variant, and every input in SI units,
/// keyed by the field names of [`super::calc::fields`] (`flow` in m³/d, `temperature` in °C,
/// concentrations in mg/L, `strength` in %, ...).
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
    /// The site's own limits; the engine checks targets against them (and the regulatory
    /// defaults where the site sets none).
    pub limits: Vec<Limit>,
    /// A "± x" the operator typed beside a reading, in SI, by input name.
    pub tolerances: BTreeMap<&'static str, f64>,
    /// The site's precision of its instruments, where it differs from the defaults.
    pub precisions: BTreeMap<Instrument, Precision>,
    /// The site's flow meters and pumps (`SiteProfile::facts`) for the engine's guards.
    pub site: Option<crate::engine::dosing::site::SiteFacts>,
    /// The inputs given as text (a jar-test stock's formula), by the table's name; an empty
    /// one is absent.
    pub texts: BTreeMap<&'static str, String>,
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
    /// The stable ids of the results in the dose and setting places (`actual_dose` and
    /// `suggested_pump_setting` for a cross-check), which caption them.
    pub dose_id: Option<&'static str>,
    pub setting_id: Option<&'static str>,
    /// The range each result may lie in given the precision of the readings, by result id.
    pub ranges: BTreeMap<&'static str, Range>,
    /// Further results a calculator reports beside the four big numbers (alkalinity
    /// consumed, pH after, soda ash ...), shown as a list under them.
    pub extras: Vec<Extra>,
    /// Significant figures the inputs support for the results (the least precise measured
    /// input along the engine's traces); `None` when every input was exact.
    pub figures: Option<u8>,
    /// "Show the work": headings and one line per conversion step, as the engine writes them.
    pub trace: Vec<TraceLine>,
    pub cautions: Vec<Caution>,
    /// The engine's whole outcome, which the dose log records (`None` for a stand-in engine).
    pub table: Option<Box<calculators::Outcome>>,
}

/// A further result: translation key `result-<key>`, value in SI for `quantity`.
#[derive(Clone, Debug, PartialEq)]
pub struct Extra {
    pub key: String,
    pub value: f64,
    pub quantity: Quantity,
    /// The range the precision of the readings allows, in SI.
    pub range: Option<Range>,
    /// A headline without a big place of its own (a cross-check's deviation): shown first.
    pub headline: bool,
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
            kind: CalcKind::of("feed"),
            mode: CalcMode::of("feed"),
            product: None,
            values: BTreeMap::from([("flow", 1000.0)]),
            figures: BTreeMap::new(),
            max_use_level_mg_l: None,
            limits: Vec::new(),
            tolerances: BTreeMap::new(),
            precisions: BTreeMap::new(),
            site: None,
            texts: BTreeMap::new(),
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
    fn the_menu_is_the_tables_groups_and_codes_are_distinct() {
        let kinds: Vec<_> = CalcKind::all().iter().map(|k| k.code()).collect();
        assert_eq!(
            kinds,
            [
                "ph-adjustment",
                "chlorination",
                "coagulation",
                "softening",
                "pump-check",
                "feed",
                "fluoridation",
                "corrosion-inhibitor",
                "permanganate",
                "chlorine-dioxide",
                "wastewater",
                "main-disinfection",
                "polymer",
                "jar-test"
            ]
        );
        let mut modes: Vec<_> = CalcMode::all().iter().map(|m| m.code()).collect();
        let n = modes.len();
        modes.sort();
        modes.dedup();
        assert_eq!(modes.len(), n);
        let chlorination: Vec<_> = CalcKind::of("chlorination")
            .modes()
            .iter()
            .map(|m| m.code())
            .collect();
        assert_eq!(
            chlorination,
            [
                "free-chlorine",
                "ammonia-with-chlorine",
                "ammonia-after-chlorine",
                "dechlorination"
            ]
        );
        assert_eq!(CalcKind::of("coagulation").modes()[1].code(), "alkali-lime");
    }
}
