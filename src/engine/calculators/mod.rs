//! The calculator table: every calculator Molefeed offers, each defined once.
//!
//! Design choice: a calculator is a [`Calculator`] value in one static table — its stable id,
//! its modes, its inputs (quantity, the units it accepts, the basis where the quantity has one,
//! whether it describes the water, the product or the calculation), the products it offers, the
//! results it gives and one compute function. The command line, the app and the dose log are
//! generic over this table: they read a calculator's inputs from it, hand the values over in SI
//! as a [`Request`], and show, print or record the one uniform [`Outcome`] that comes back. No
//! front end knows any calculator by name, so a calculator added here appears everywhere at
//! once, and the CLI and the app cannot compute the same thing two ways.
//!
//! Checks that belong to every calculator live here, once: the plant's limits on a target
//! (through [`site::effective_limit`]), the guard that no result is ever a non-finite
//! number, and the plausibility guards of [`guards`] (magnitudes, percent typed as a fraction,
//! SG against strength, the water's CO2, gas solubility, maximum use level, the site's meters
//! and pumps, a setting beyond full scale).

mod compute;
mod guards;
pub use guards::SETTING_RESULTS;
pub mod ranges;
mod show;
mod table;

pub use super::precision::{Instrument, Precision, Range};
pub use show::{StepOrigin, TraceLine, trace_lines};
pub use table::TABLE;

use super::dosing::catalog::{Catalog, Form, Product, StrengthBasis};
use super::dosing::caution::{self, Caution};
use super::dosing::site::{self, Limit, SiteFacts};
use super::dosing::tank::Tank;
use super::dosing::{NamedTrace, Severity};
use super::quantity::Quantity;
use super::sigfig::{combine, count_sig_figs, format_sig};
use super::{Error, ErrorKind, Result};
use serde::Serialize;
use std::collections::BTreeMap;

/// Where an input's value belongs: a reading of the water (carries over between calculators),
/// a number of the product or its pump (kept per product), or a choice of this calculation.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Scope {
    Water,
    Product,
    Calculation,
}

/// One input of a calculator.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Input {
    /// Stable kebab-case name: the CLI flag (`--target-residual`), the app's field
    /// (`field-<name>`), the log's input name.
    pub name: &'static str,
    pub quantity: Quantity,
    /// What a value is expressed as, where the quantity has a basis ("as CaCO3", "as Cl2",
    /// "trade", "purity").
    pub basis: Option<&'static str>,
    /// May be left out: the calculator then does without it.
    pub optional: bool,
    pub scope: Scope,
    /// The plant limit (parameter of [`Limit`]) this input, a target, is checked against.
    pub limit: Option<&'static str>,
    /// What the value is read with; its precision gives the results their range. `None`: a
    /// target, a choice or label data, exact unless the operator types a "± x".
    pub instrument: Option<Instrument>,
    /// Another flag name the trade writes for this input (`sg` for `specific-gravity`), which
    /// the command line accepts beside `--<name>`; the two together are refused.
    pub short_flag: Option<&'static str>,
    /// The name of the flag that gives this input's unit where the trade writes it otherwise
    /// than `<name>-unit` (`volume-unit` for `tank-volume`); `--<name>-unit` is accepted too.
    pub unit_flag: Option<&'static str>,
    /// The results that need this input, when only some do (a pump's full scale is needed by
    /// the pump setting alone): without it the calculation runs and those results are absent,
    /// never zero. Empty: the calculation needs it (unless it is `optional`).
    pub only_for: &'static [&'static str],
    /// The name this input had before a rename (pH adjustment's `ph` was `ph-raw`, so that a
    /// reading of the water has one name in every calculator; free chlorine's
    /// `target-residual` was `residual-target`, as the corrosion inhibitor's target is named). The command line still takes
    /// `--<former>`, and the app reads inputs it saved under it as this one's. Log entries keep
    /// the name they were logged with: a record is what was shown.
    #[serde(skip)]
    pub former_name: Option<&'static str>,
}

impl Input {
    /// Whether the calculation can run without this input (some or all results then absent).
    pub fn may_be_missing(&self) -> bool {
        self.optional || !self.only_for.is_empty()
    }
}

/// A calculator's mode chosen through a named choice of its own (`--residual-basis p`), for the
/// calculators whose trade writes the choice so: the choice's name and, for each of its values,
/// the mode it stands for. Declared in the table beside the calculator (see
/// [`table::MODE_CHOICES`]); the command line reads it generically.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct ModeChoice {
    pub calculator: &'static str,
    /// The choice's name (the CLI flag, `--<name>`).
    pub name: &'static str,
    /// (value, mode) pairs, in the modes' order.
    pub values: &'static [(&'static str, &'static str)],
}

/// An input given as text rather than a number (a jar-test stock's compound, a formula), for
/// the few calculators that take one; declared in the table beside the calculator (see
/// [`table::TEXT_INPUTS`]). Optional: without it the calculator does as before.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct TextInput {
    pub calculator: &'static str,
    /// The CLI flag (`--<name>`) and the key in [`Request::texts`].
    pub name: &'static str,
    /// What the text is: `formula` (read by the engine's formula parser).
    pub kind: &'static str,
}

impl ModeChoice {
    /// The mode `value` stands for.
    pub fn mode(&self, value: &str) -> Option<&'static str> {
        self.values
            .iter()
            .find(|(v, _)| v.eq_ignore_ascii_case(value.trim()))
            .map(|(_, m)| *m)
    }
}

/// How a product reaches the water: a liquid through a metering pump (strength, SG, pump
/// volume), or a gas or dry chemical through a feeder set by mass (purity, feeder scale).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "kebab-case")]
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

    /// Fed by mass: there is no product volume, and the setting is a feeder's.
    pub fn by_mass(self) -> bool {
        self != FeedForm::Liquid
    }

    fn of(form: Form) -> FeedForm {
        match form {
            Form::Solution => FeedForm::Liquid,
            Form::Gas => FeedForm::Gas,
            Form::Dry => FeedForm::Dry,
        }
    }
}

/// A product a calculator offers.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ProductChoice {
    pub id: String,
    /// Translation key of its name (the screens).
    pub name_key: String,
    /// Its English name (the CLI and the log).
    pub name: String,
    pub form: FeedForm,
    /// The basis its strength is typed on (`trade`, `weight`, `as-al2o3`, `purity` ...).
    pub strength_basis: &'static str,
    /// The compound its dose is expressed as (`Cl2`, `N`, `NaOH` ...), where the table names it.
    pub dose_as: Option<&'static str>,
}

impl ProductChoice {
    fn of(p: &Product) -> ProductChoice {
        ProductChoice {
            id: p.id.clone(),
            name_key: p.name_key.clone(),
            name: p.name.clone(),
            form: FeedForm::of(p.form),
            strength_basis: p
                .strengths
                .first()
                .map_or(StrengthBasis::Weight, |s| s.basis)
                .code(),
            dose_as: DOSE_COMPOUNDS.iter().copied().find(|c| *c == p.dose_as),
        }
    }

    /// A table basis as it stands for this product: [`DOSE_AS`] becomes its dose compound and
    /// [`STRENGTH_BASIS`] its strength basis; any other basis is itself.
    pub fn basis(&self, basis: Option<&'static str>) -> Option<&'static str> {
        match basis {
            Some(DOSE_AS) => self.dose_as.or(basis),
            Some(STRENGTH_BASIS) => Some(self.strength_basis),
            other => other,
        }
    }
}

/// A result a calculator gives, as its table entry lists it.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct ResultSpec {
    /// Stable snake_case id (`dose`, `product_volume_rate`, `pump_setting`): the CLI's JSON key,
    /// the app's caption (`result-<id>` with dashes), the log's result id.
    pub id: &'static str,
    pub quantity: Quantity,
    /// One of the big numbers at the top of the card (the rest are listed under them).
    pub headline: bool,
    /// What the value is expressed as (a compound, [`PRODUCT`], [`DOSE_AS`] for the chosen
    /// product's dose compound); `None` for a pH, an index, a setting or a ratio.
    pub basis: Option<&'static str>,
}

impl ResultSpec {
    /// The same result, expressed as `basis`.
    pub(super) const fn on(self, basis: &'static str) -> ResultSpec {
        ResultSpec {
            basis: Some(basis),
            ..self
        }
    }
}

const fn headline(id: &'static str, quantity: Quantity) -> ResultSpec {
    ResultSpec {
        id,
        quantity,
        headline: true,
        basis: None,
    }
}

const fn secondary(id: &'static str, quantity: Quantity) -> ResultSpec {
    ResultSpec {
        id,
        quantity,
        headline: false,
        basis: None,
    }
}

/// Basis code of an input or result expressed as the chosen product's dose compound (Cl2 for
/// a chlorine product, N for ammonia, the coagulant as delivered …); resolved per product.
pub const DOSE_AS: &str = "dose-as";
/// Basis code of a strength on the chosen product's own strength basis; resolved per product.
pub const STRENGTH_BASIS: &str = "strength-basis";
/// Basis of a rate, volume or mass of the product as delivered.
pub const PRODUCT: &str = "product";

/// The compounds the catalog's products are dosed as, so that a resolved basis is a
/// `&'static str` like every other (a test holds this list to the catalog).
const DOSE_COMPOUNDS: [&str; 26] = [
    "Cl2",
    "N",
    "Al",
    "Al2(SO4)3·14H2O",
    "FeCl3",
    "Fe2(SO4)3",
    "NaOH",
    "H2SO4",
    "HCl",
    "CO2",
    "Ca(OH)2",
    "CaO",
    "Na2CO3",
    "NaHCO3",
    "SO2",
    "NaHSO3",
    "Na2S2O5",
    "Na2SO3",
    "Na2S2O3",
    "C6H8O6",
    // Fluoride, phosphate, permanganate, chlorite, magnesium hydroxide and carbon feeds.
    "F",
    "PO4",
    "KMnO4",
    "NaClO2",
    "Mg(OH)2",
    "C",
];

/// `basis` with the product's own filled in for [`DOSE_AS`] and [`STRENGTH_BASIS`].
fn resolve_basis(basis: Option<&'static str>, product: Option<&Product>) -> Option<&'static str> {
    match product {
        Some(p) => ProductChoice::of(p).basis(basis),
        None => basis,
    }
}

/// A basis code in words, for listings and printouts: "% trade", "% by weight", "as Cl2".
pub fn basis_text(basis: &str) -> String {
    match basis {
        "trade" => "% trade".into(),
        "weight" => "% by weight".into(),
        "as-al2o3" => "% as Al2O3".into(),
        "available-chlorine" => "% as available Cl2".into(),
        "purity" => "% purity".into(),
        STRENGTH_BASIS => "% on the product's strength basis".into(),
        DOSE_AS => "as the product's dose compound".into(),
        PRODUCT => "as product".into(),
        "water" => "of water".into(),
        "residual-basis" => "as the mode's basis (PO4, P or P2O5)".into(),
        "compound" => "as the chemical's own compound".into(),
        other => format!("as {other}"),
    }
}

/// The products a calculator offers.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Offer {
    /// No product choice (none is fed, or the calculator is about water only).
    None,
    /// Every product a pump or feeder can be set for, optionally only those whose dose is
    /// expressed as one of the given compounds.
    Feedable(Option<&'static [&'static str]>),
    /// Liquids only (a drawdown measures a volume).
    Liquids,
    /// These catalog products, in this order.
    Listed(&'static [&'static str]),
}

/// Which product inputs a calculator asks for once a product is chosen.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum ProductInputs {
    /// None (the calculator's own inputs cover the product).
    None,
    /// Strength and SG for a liquid, purity for a gas or dry chemical, and the full scale of
    /// the pump or feeder that form calls for.
    Feed,
    /// Strength and SG only (a drawdown test needs no pump capacity).
    Strength,
    /// The product's strength and the field test its form calls for: a liquid's drawdown
    /// (volume, time, pump setting), a dry or gas feeder's weighed catch (mass, time, feeder
    /// setting).
    FieldTest,
}

/// A titration curve a calculator can draw: x is the titrant in mg/L, y the pH.
#[derive(Clone, Debug, PartialEq, Default, Serialize)]
pub struct Curve {
    /// Translation key of the titrant's name.
    pub titrant: String,
    pub points: Vec<(f64, f64)>,
}

/// One calculator: its definition and its compute function.
pub struct Calculator {
    /// Stable id (`molefeed calc ID`, the log's calculator, the app's `calc-<id>` mode label).
    pub id: &'static str,
    /// The app's menu entry it sits under (`calc-<group>`); calculators sharing a group are
    /// offered as its variants.
    pub group: &'static str,
    /// Variants of the calculation itself (coagulation: the alkali that keeps the residual
    /// alkalinity); `mode-<code>` is a mode's label. Empty: one way only.
    pub modes: &'static [&'static str],
    /// The calculator's own inputs, in screen order; the product's follow (see `product_inputs`).
    pub inputs: &'static [Input],
    pub product_inputs: ProductInputs,
    pub offer: Offer,
    pub results: &'static [ResultSpec],
    /// Shown on the app's Start screen and in `molefeed calculators`; the CLI-only ones are
    /// scripting tools without a card.
    pub in_app: bool,
    compute: fn(&Calculators, &Request) -> Result<Outcome>,
    curve: Option<fn(&Calculators, &Request) -> Result<Curve>>,
}

impl std::fmt::Debug for Calculator {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Calculator").field("id", &self.id).finish()
    }
}

impl PartialEq for Calculator {
    fn eq(&self, other: &Calculator) -> bool {
        self.id == other.id
    }
}

impl Calculator {
    /// Draws a titration curve for this calculator, when it has one.
    pub fn has_curve(&self) -> bool {
        self.curve.is_some()
    }

    /// The inputs this calculator takes as text, where the table declares any.
    pub fn text_inputs(&self) -> impl Iterator<Item = &'static TextInput> + '_ {
        table::TEXT_INPUTS
            .iter()
            .filter(move |t| t.calculator == self.id)
    }

    /// The named choice that picks this calculator's mode, where the table declares one.
    pub fn mode_choice(&self) -> Option<&'static ModeChoice> {
        table::MODE_CHOICES.iter().find(|m| m.calculator == self.id)
    }

    /// The mode a request names, else the first (or none for a calculator without modes).
    fn mode(&self, asked: Option<&str>) -> Result<Option<&'static str>> {
        match asked {
            None => Ok(self.modes.first().copied()),
            Some(m) => self
                .modes
                .iter()
                .copied()
                .find(|x| *x == m)
                .map(Some)
                .ok_or_else(|| {
                    Error::new(
                        ErrorKind::InvalidInput,
                        format!(
                            "{} has no mode '{m}' (modes: {})",
                            self.id,
                            self.modes.join(", ")
                        ),
                    )
                    .because("unknown-mode")
                }),
        }
    }
}

/// Every calculator in table order.
pub fn all() -> &'static [Calculator] {
    &TABLE
}

/// The input name `name` stands for today: the input's own name, or the current name of the
/// input that was called `name` before a rename ([`Input::former_name`]).
pub fn current_name(name: &str) -> &str {
    TABLE
        .iter()
        .flat_map(|c| c.inputs)
        .find(|i| i.former_name == Some(name))
        .map_or(name, |i| i.name)
}

/// The calculator with id `id`.
pub fn find(id: &str) -> Result<&'static Calculator> {
    TABLE.iter().find(|c| c.id == id).ok_or_else(|| {
        let ids: Vec<&str> = TABLE.iter().map(|c| c.id).collect();
        Error::new(
            ErrorKind::InvalidInput,
            format!("no calculator '{id}' (calculators: {})", ids.join(", ")),
        )
        .because("unknown-calculator")
    })
}

/// The inputs `calculator` asks for with a product fed as `form` (strength on no particular
/// basis), in screen order.
pub fn inputs_for_form(calculator: &Calculator, form: FeedForm) -> Vec<Input> {
    let mut v = calculator.inputs.to_vec();
    v.extend(table::product_inputs(calculator.product_inputs, form, None));
    v
}

/// The app's menu: each group once, in table order, with its calculators.
pub fn groups() -> Vec<(&'static str, Vec<&'static Calculator>)> {
    let mut out: Vec<(&'static str, Vec<&'static Calculator>)> = Vec::new();
    for c in TABLE.iter().filter(|c| c.in_app) {
        match out.iter_mut().find(|(g, _)| *g == c.group) {
            Some((_, list)) => list.push(c),
            None => out.push((c.group, vec![c])),
        }
    }
    out
}

/// What a front end asks a calculator: the values the operator gave, in SI, by input name.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct Request {
    pub calculator: &'static str,
    pub mode: Option<&'static str>,
    /// The catalog id of the product chosen, for calculators that offer a choice.
    pub product: Option<String>,
    /// Every given input in its quantity's SI unit (`flow` m³/d, `temperature` °C,
    /// concentrations mg/L, percentages as percent, feeder scales kg/d).
    pub values: BTreeMap<&'static str, f64>,
    /// Significant figures each value was given with; an input absent here limits nothing
    /// (a temperature, or an exact number).
    pub figures: BTreeMap<&'static str, u8>,
    /// The chosen product's maximum use level as the site received it (mg/L of product).
    pub max_use_level_mg_l: Option<f64>,
    /// The plant's own limits; the regulatory defaults apply where it sets none.
    pub limits: Vec<Limit>,
    /// A "± x" the operator typed for a reading, in its quantity's SI unit, by input name.
    pub tolerances: BTreeMap<&'static str, f64>,
    /// The site's precision of its instruments, where it differs from the defaults.
    pub precisions: BTreeMap<Instrument, Precision>,
    /// Only the headline results are wanted: set on the runs that find a range, so that a
    /// calculator may skip a secondary result that costs an equilibrium solve of its own (the
    /// softened water's pH, the Langelier index after a pH adjustment).
    pub headlines_only: bool,
    /// The plant's flow meters and pumps (`SiteProfile::facts`), when a site is known: a flow
    /// above every meter's full scale and a pump set up for another product are cautioned.
    pub site: Option<SiteFacts>,
    /// The id of the site's pump or feeder the operator says feeds this dose, if named.
    pub pump: Option<String>,
    /// Inputs that are lists rather than numbers ([`Quantity::Chemicals`]), by input name, in
    /// the order given.
    pub lists: BTreeMap<&'static str, Vec<String>>,
    /// The text inputs given (a compound's formula), by name (see [`TextInput`]).
    pub texts: BTreeMap<&'static str, String>,
    /// The site's tank a tank calculation is for (`SiteProfile::tank`): its own shape,
    /// height, strapping table and reorder level, in SI.
    pub tank: Option<Tank>,
}

impl Request {
    pub fn new(calculator: &'static Calculator) -> Request {
        Request {
            calculator: calculator.id,
            mode: calculator.modes.first().copied(),
            ..Request::default()
        }
    }

    pub fn get(&self, name: &str) -> Option<f64> {
        self.values.get(name).copied()
    }

    /// The significant figures `name` was given with, if it limits precision.
    pub fn figures(&self, name: &str) -> Option<u8> {
        self.figures.get(name).copied()
    }
}

/// One computed result: value in SI, with what it is expressed as.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ResultValue {
    pub id: &'static str,
    pub value: f64,
    pub quantity: Quantity,
    /// What the value is expressed as: the compound of a dose ("Cl2", "N"), "product" for a
    /// rate of product as delivered, "CaCO3" for alkalinity and hardness.
    pub basis: Option<String>,
    pub headline: bool,
    /// The range the readings' precision allows (same unit as `value`); `None` when every
    /// input was exact, or when a reading moved by its precision could not be computed.
    pub range: Option<Range>,
    /// The id of the result this one repeats under the name scripts rely on (`fluoride_added`
    /// is the `dose`): a card that shows that result shows this one only there, once.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub same_as: Option<&'static str>,
}

/// A next step an outcome offers: another calculator of the table, opened with values this
/// one computed (a jar test's dose sent to the plant calculator that feeds it; the water of a
/// disinfected main sent to dechlorination). Front ends show it generically: the CLI prints its
/// command line, the app a button; neither knows which calculators these are.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct FollowUp {
    /// The calculator to open (an id of the table).
    pub calculator: &'static str,
    /// The product to choose there, where it is the same product.
    pub product: Option<String>,
    /// (input of that calculator, value in its quantity's SI unit).
    pub values: Vec<(&'static str, f64)>,
}

/// What fed the dose: the pump or feeder and the setting the calculator gives for it.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Device {
    MeteringPump,
    GasFeeder,
    DryFeeder,
}

impl Device {
    pub fn code(self) -> &'static str {
        match self {
            Device::MeteringPump => "metering-pump",
            Device::GasFeeder => "gas-feeder",
            Device::DryFeeder => "dry-feeder",
        }
    }
}

/// The setting to put on the pump or feeder.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Setting {
    pub device: Device,
    pub percent: f64,
}

/// An input as the calculation used it.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct InputUsed {
    pub name: &'static str,
    pub value: f64,
    pub quantity: Quantity,
    pub basis: Option<&'static str>,
    pub figures: Option<u8>,
    /// The ± the range was found with (SI), typed or from the instrument's precision.
    pub tolerance: Option<f64>,
}

/// The product a result is for.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ProductUsed {
    pub id: String,
    pub name_key: String,
    pub name: String,
    pub form: FeedForm,
}

/// What every calculator returns: the same shape for the CLI, the app and the log.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Outcome {
    pub calculator: &'static str,
    pub mode: Option<&'static str>,
    pub product: Option<ProductUsed>,
    /// The compound the dose is expressed as ("Cl2", "N", "NaOH").
    pub chemical: String,
    /// Results in table order; one that was not computed is absent, never zero.
    pub results: Vec<ResultValue>,
    pub setting: Option<Setting>,
    /// Significant figures the inputs support for the results (the least precise measured
    /// input along the traces); `None` when every input was exact.
    pub figures: Option<u8>,
    pub traces: Vec<NamedTrace>,
    /// Most severe first; the advisory note is always the last.
    pub cautions: Vec<Caution>,
    /// The inputs as used, in the calculator's order.
    pub inputs: Vec<InputUsed>,
    /// Other calculators this outcome's numbers go on to, with the values they receive.
    pub follow_ups: Vec<FollowUp>,
}

impl Outcome {
    pub fn result(&self, id: &str) -> Option<&ResultValue> {
        self.results.iter().find(|r| r.id == id)
    }

    /// "Show the work" as lines: a heading per trace, each step with its factor's origin.
    pub fn trace_lines(&self) -> Vec<TraceLine> {
        trace_lines(&self.traces)
    }
}

/// The calculators with the built-in product catalog: what a front end holds to compute.
#[derive(Debug)]
pub struct Calculators {
    catalog: Catalog,
    /// The threads a result's range may run its moved readings on (at most four), read once:
    /// the standard library reads the cgroup quota files on every ask, a tenth of a
    /// keystroke's engine time.
    range_threads: usize,
}

impl Calculators {
    pub fn new() -> Result<Calculators> {
        Ok(Calculators {
            catalog: Catalog::builtin()?,
            range_threads: std::thread::available_parallelism().map_or(1, |n| n.get().min(4)),
        })
    }

    pub fn catalog(&self) -> &Catalog {
        &self.catalog
    }

    /// The products `calculator` offers, in the order to show them.
    pub fn products(&self, calculator: &Calculator) -> Vec<ProductChoice> {
        let feedable = |p: &&Product| match p.form {
            Form::Solution => !p.strengths.is_empty(),
            // A gas or dry product is offered only when its usual strength is a purity, the one
            // input it asks for (calcium hypochlorite and dry alum, rated otherwise, are not).
            Form::Gas | Form::Dry => {
                p.strengths.first().map(|s| s.basis) == Some(StrengthBasis::Purity)
            }
        };
        let mut list: Vec<ProductChoice> = match calculator.offer {
            Offer::None => Vec::new(),
            Offer::Listed(ids) => ids
                .iter()
                .filter_map(|id| self.catalog.product(id).ok())
                .map(ProductChoice::of)
                .collect(),
            Offer::Liquids => self
                .catalog
                .products
                .iter()
                .filter(feedable)
                .filter(|p| p.form == Form::Solution)
                .map(ProductChoice::of)
                .collect(),
            Offer::Feedable(dose_as) => self
                .catalog
                .products
                .iter()
                .filter(feedable)
                .filter(|p| dose_as.is_none_or(|d| d.contains(&p.dose_as.as_str())))
                .map(ProductChoice::of)
                .collect(),
        };
        if matches!(calculator.offer, Offer::Feedable(_)) {
            list.sort_by_key(|c| FeedForm::ALL.iter().position(|f| *f == c.form));
        }
        list
    }

    /// The product `id` as `calculator` offers it.
    fn offered(&self, calculator: &Calculator, id: &str) -> Result<ProductChoice> {
        self.products(calculator)
            .into_iter()
            .find(|p| p.id == id)
            .ok_or_else(|| {
                Error::new(
                    ErrorKind::UnknownChemical,
                    format!("{} does not offer product '{id}'", calculator.id),
                )
                .because("product-not-for-calculator")
                .with("product", id)
            })
    }

    /// The inputs `calculator` asks for when `product` is chosen, in screen order. Without a
    /// product (or for a calculator without a choice) the product inputs of a liquid follow.
    pub fn inputs(&self, calculator: &Calculator, product: Option<&str>) -> Vec<Input> {
        let chosen = product.and_then(|id| self.catalog.product(id).ok());
        let choice = chosen.map(ProductChoice::of);
        let form = choice.as_ref().map_or(FeedForm::Liquid, |c| c.form);
        let basis = choice.as_ref().map(|c| c.strength_basis);
        let mut v = calculator.inputs.to_vec();
        v.extend(table::product_inputs(
            calculator.product_inputs,
            form,
            basis,
        ));
        for i in &mut v {
            i.basis = resolve_basis(i.basis, chosen);
        }
        v
    }

    /// Every input any product of `calculator` may ask for, each name once.
    pub fn all_inputs(&self, calculator: &Calculator) -> Vec<Input> {
        let mut v = calculator.inputs.to_vec();
        for form in FeedForm::ALL {
            for i in table::product_inputs(calculator.product_inputs, form, None) {
                if !v.iter().any(|x| x.name == i.name) {
                    v.push(i);
                }
            }
        }
        v
    }

    /// Runs one calculation. Every input the calculator asks for must be present unless it is
    /// optional; the plant's limits on targets are checked; no result is ever non-finite; each
    /// result carries the range the precision of the readings allows.
    pub fn compute(&self, request: &Request) -> Result<Outcome> {
        let calculator = find(request.calculator)?;
        let mode = calculator.mode(request.mode)?;
        let product = match (&request.product, calculator.offer) {
            (_, Offer::None) => None,
            (Some(id), _) => Some(self.offered(calculator, id)?),
            (None, _) => {
                return Err(Error::new(ErrorKind::UnknownChemical, "no product chosen")
                    .because("no-product-chosen"));
            }
        };
        let inputs = self.inputs(calculator, product.as_ref().map(|p| p.id.as_str()));
        for input in &inputs {
            if input.quantity == Quantity::Chemicals {
                if !input.optional && request.lists.get(input.name).is_none_or(Vec::is_empty) {
                    return Err(Error::new(
                        ErrorKind::InvalidInput,
                        format!("{} is missing", input.name),
                    )
                    .because("missing-input")
                    .with("input", input.name));
                }
                continue;
            }
            match request.get(input.name) {
                Some(v) if !v.is_finite() => {
                    return Err(Error::new(
                        ErrorKind::InvalidInput,
                        format!("{} must be a finite number", input.name),
                    )
                    .because("not-finite")
                    .with("input", input.name));
                }
                None if !input.may_be_missing() => {
                    return Err(Error::new(
                        ErrorKind::InvalidInput,
                        format!("{} is missing", input.name),
                    )
                    .because("missing-input")
                    .with("input", input.name));
                }
                _ => {}
            }
        }
        let (max_use_level, typical) = guards::max_use_level(&self.catalog, request);
        let request = Request {
            mode,
            max_use_level_mg_l: max_use_level,
            ..request.clone()
        };
        let mut guarded = guards::before(self, &inputs, &request)?;
        let mut outcome =
            (calculator.compute)(self, &request).map_err(|e| attributed(e, &inputs, &request))?;
        outcome.calculator = calculator.id;
        outcome.mode = mode;
        outcome.product = product.map(|p| ProductUsed {
            id: p.id,
            name_key: p.name_key,
            name: p.name,
            form: p.form,
        });
        outcome.inputs = inputs
            .iter()
            .filter_map(|i| {
                Some(InputUsed {
                    name: i.name,
                    value: request.get(i.name)?,
                    quantity: i.quantity,
                    basis: i.basis,
                    figures: request.figures(i.name),
                    tolerance: ranges::tolerance(i, &request),
                })
            })
            .collect();
        guarded.extend(guards::after(
            self,
            calculator,
            &request,
            typical,
            &mut outcome,
        )?);
        let mut cautions = std::mem::take(&mut outcome.cautions);
        cautions.extend(limit_cautions(&inputs, &request));
        cautions.extend(ranges(calculator, self, &inputs, &request, &mut outcome));
        cautions.extend(guarded);
        outcome.cautions = caution::finish(cautions);
        if outcome.figures.is_none() {
            outcome.figures = outcome
                .traces
                .iter()
                .fold(None, |acc, t| combine(acc, t.trace.sig_figs()));
        }
        finite(&outcome)?;
        Ok(outcome)
    }

    /// The titration curve of a calculator that draws one (x: titrant mg/L, y: pH).
    pub fn curve(&self, request: &Request) -> Result<Curve> {
        let calculator = find(request.calculator)?;
        let curve = calculator.curve.ok_or_else(|| {
            Error::new(
                ErrorKind::InvalidInput,
                format!("{} draws no titration curve", calculator.id),
            )
            .because("no-curve")
        })?;
        let request = Request {
            mode: calculator.mode(request.mode)?,
            ..request.clone()
        };
        let c = curve(self, &request)?;
        if c.points
            .iter()
            .any(|(x, y)| !x.is_finite() || !y.is_finite())
        {
            return Err(not_finite("curve"));
        }
        Ok(c)
    }
}

/// How far a value given as `text` (a plain decimal with a `.` mark) limits the precision of a
/// result. Unit changes are exact factors, so the figures survive them; a pH's decimals are
/// the figures of its hydrogen-ion activity (common practice for logarithms); a temperature
/// only selects equilibrium constants and limits none. The CLI and the app both count this way.
pub fn given_figures(quantity: Quantity, text: &str) -> Option<u8> {
    match quantity {
        Quantity::Temperature => None,
        Quantity::Ph => {
            let decimals = text.trim().split_once('.').map_or(0, |(_, after)| {
                after.chars().filter(char::is_ascii_digit).count()
            });
            Some(decimals.clamp(1, 15) as u8)
        }
        _ => count_sig_figs(text),
    }
}

/// Significant figures a card or a printout shows an outcome's numbers with: never fewer than
/// three (a setting rounded to one or two figures hides the deviations a cross-check exists to
/// catch: 26.3 % shown as "30 %"), four when the inputs support four or more (beyond that a
/// setting is more digits than any pump or scale takes). How far a number can be trusted is
/// said by its range, not by dropping digits; the significant figures of the inputs stay in
/// the show-the-work lines.
pub fn shown_figures(outcome: &Outcome) -> u32 {
    figures_shown(outcome.figures)
}

/// [`shown_figures`] from the figures the inputs support (`None`: every input exact): the one
/// rule every front end, card, plot legend and printout shows a result's number by.
pub fn figures_shown(figures: Option<u8>) -> u32 {
    figures.map_or(3, |f| u32::from(f).clamp(3, 4))
}

/// A refusal names the input it is about (`input`), so a front end can mark that field: a
/// compute function's check names its quantity in its own words ("chlorine residual"), so the
/// input is the one, if exactly one, whose value the refusal reports.
fn attributed(e: Error, inputs: &[Input], request: &Request) -> Error {
    let param = |name: &str| e.params().iter().find(|(k, _)| *k == name).map(|(_, v)| v);
    if param("input").is_some() {
        return e;
    }
    let Some(value) = param("value").and_then(|v| v.parse::<f64>().ok()) else {
        return e;
    };
    let mut named = inputs.iter().filter(|i| request.get(i.name) == Some(value));
    match (named.next(), named.next()) {
        (Some(input), None) => e.with("input", input.name),
        _ => e,
    }
}

fn not_finite(what: &str) -> Error {
    Error::new(
        ErrorKind::InvalidInput,
        format!("the calculation gave no finite number for {what}; check the inputs"),
    )
    .because("result-not-finite")
    .with("result", what.to_string())
}

/// Refuses an outcome with a non-finite number anywhere an operator could read it.
fn finite(outcome: &Outcome) -> Result<()> {
    if let Some(r) = outcome.results.iter().find(|r| !r.value.is_finite()) {
        return Err(not_finite(r.id));
    }
    if outcome.setting.is_some_and(|s| !s.percent.is_finite()) {
        return Err(not_finite("setting"));
    }
    Ok(())
}

/// Gives each result of `outcome` its range: the calculator is run again with each uncertain
/// reading moved down and up by its precision (see [`ranges`]). A moved reading the
/// calculator refuses (a flow moved to zero) leaves the results without a range and says which
/// reading, rather than showing a range narrower than the truth.
fn ranges(
    calculator: &Calculator,
    calculators: &Calculators,
    inputs: &[Input],
    request: &Request,
    outcome: &mut Outcome,
) -> Vec<Caution> {
    let jobs: Vec<(&'static str, [Request; 2])> = ranges::moved_requests(inputs, request).collect();
    if jobs.is_empty() {
        return Vec::new();
    }
    let runs = ranges::run_all(&jobs, calculators.range_threads, |r| {
        (calculator.compute)(calculators, r)
    });
    let mut moved: Vec<Vec<[f64; 2]>> = vec![Vec::new(); outcome.results.len()];
    for ((name, _), run) in jobs.iter().zip(runs) {
        let Some([Ok(low), Ok(high)]) = run else {
            for r in &mut outcome.results {
                r.range = None;
            }
            return vec![
                Caution::new(Severity::Info, "range-unavailable")
                    .with("field", format!("field-{name}")),
            ];
        };
        for (r, pair) in outcome.results.iter().zip(moved.iter_mut()) {
            let at = |o: &Outcome| o.result(r.id).map(|x| x.value).filter(|v| v.is_finite());
            match (at(&low), at(&high)) {
                (Some(a), Some(b)) => pair.push([a, b]),
                // The result is not computed at the moved reading (no setting without a
                // capacity): it has no range to give.
                _ => pair.push([f64::NAN, f64::NAN]),
            }
        }
    }
    for (r, pair) in outcome.results.iter_mut().zip(&moved) {
        r.range = pair
            .iter()
            .all(|p| p[0].is_finite() && p[1].is_finite())
            .then(|| ranges::worst_case(r.value, pair));
    }
    Vec::new()
}

/// Limit parameters a compute function checks itself rather than through an input's `limit`:
/// the chlorite a chlorine dioxide dose is expected to leave. A source scan in the tests keeps
/// this list whole.
const CHECKED_IN_COMPUTE: &[&str] = &["chlorite"];

/// Every plant-limit parameter some calculation checks, in a stable order: the limits of the
/// table's targets, the limits related to them (`site::related_limits`), those compute
/// functions check and the plant path's finished water ([`crate::engine::path`]). The one
/// list a front end offers a plant's limits from: a limit on any other parameter is checked
/// by no calculation (only against the readings logged at a tap, if any).
pub fn checked_limit_parameters() -> Vec<&'static str> {
    let mut out: Vec<&'static str> = Vec::new();
    let targets = all()
        .iter()
        .flat_map(|c| c.inputs.iter())
        .filter_map(|i| i.limit);
    let finished = crate::engine::path::FINISHED_PARAMETERS.iter().copied();
    for parameter in targets
        .chain(CHECKED_IN_COMPUTE.iter().copied())
        .chain(finished)
    {
        for p in std::iter::once(parameter).chain(site::related_limits(parameter).iter().copied()) {
            if !out.contains(&p) {
                out.push(p);
            }
        }
    }
    out
}

/// Cautions for targets outside the plant's limits: above a maximum or below a minimum, each
/// naming the limit and its source. The one limit check every calculator shares.
fn limit_cautions(inputs: &[Input], request: &Request) -> Vec<Caution> {
    let mut out = Vec::new();
    for input in inputs {
        let (Some(parameter), Some(value)) = (input.limit, request.get(input.name)) else {
            continue;
        };
        // The first limit of the family the value is beyond: the enforceable one before a
        // secondary standard or a recommended level.
        let Some((limit, key, bound)) = std::iter::once(parameter)
            .chain(site::related_limits(parameter).iter().copied())
            .filter_map(|p| site::effective_limit(&request.limits, p))
            .find_map(|limit| match (limit.min, limit.max) {
                (_, Some(max)) if value > max => Some((limit, "site-limit-above", max)),
                (Some(min), _) if value < min => Some((limit, "site-limit-below", min)),
                _ => None,
            })
        else {
            continue;
        };
        // Beyond an MCL, an MRDL or the permit a danger; beyond a secondary standard, a
        // recommendation or the plant's own target a warning.
        out.push(
            Caution::new(limit.severity(), key)
                .with("field", format!("field-{}", input.name))
                .with("value", format_sig(value, 3))
                .with("limit", format_sig(bound, 3))
                .with("unit", &limit.unit)
                .with("source", &limit.source),
        );
    }
    out
}

#[cfg(test)]
mod other_feeds_tests;
#[cfg(test)]
mod plant_feeds_tests;
#[cfg(test)]
mod reference_tests;
#[cfg(test)]
mod tests;
