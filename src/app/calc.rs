//! The calculator controller: which inputs each calculator asks for, what the operator typed,
//! and what the results card shows. Plain Rust, no Slint types, unit-tested without the UI.
//!
//! Design choice: the controller keeps the *text* the operator typed, per calculator (a
//! product's own numbers per product), parses it in the current language, converts it to SI
//! and hands it to the [`CalcEngine`] seam. A reading of the water typed in one calculator is
//! offered to the others at the same tap during the same shift ([`Carried`]): shown with where
//! and when it was taken, and cleared with one tap; nothing else crosses calculators. It returns a [`CalcView`] of translation keys
//! and formatted strings; the Slint bridge only translates and copies. A field that does not
//! parse produces a message and no number, never a partial result.

use super::engine_adapter::{DOSE, FEED, PRODUCT, SETTING};
use super::numbers::{self, Lang, NumberError};
use super::seams::{
    CalcEngine, CalcKind, CalcMode, CalcOutcome, CalcRequest, Caution, FeedForm, ProductChoice,
    SeamError, TraceLine,
};
use crate::engine;
use crate::engine::calculators::TextInput;
use crate::engine::dosing::site::{Limit, SiteFacts};
use crate::engine::precision::{
    Instrument, Precision, Range, range_beside, split_tolerance, tolerance_from_si, tolerance_to_si,
};
use crate::engine::quantity::{Quantity, Unit, UnitSystem};
use chrono::{DateTime, Utc};
use serde::{Deserialize, Serialize};
use std::collections::{BTreeMap, HashMap};
use std::rc::Rc;

/// Marks a literal as a translation key (the i18n test scans for `key("…")`).
pub const fn key(k: &'static str) -> &'static str {
    k
}

/// One input of a calculator. Its label is the translation `field-<name>`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct FieldSpec {
    pub name: &'static str,
    pub quantity: Quantity,
    /// May be left empty: the engine then does without it (its label says so).
    pub optional: bool,
    /// What a value is expressed as, as the table states it (the chosen product resolves a
    /// product-dependent basis: its dose compound, its strength basis).
    pub basis: Option<&'static str>,
    /// The results that alone need it (a pump's full scale: the setting); empty: all do.
    pub only_for: &'static [&'static str],
}

impl FieldSpec {
    fn of(input: &engine::calculators::Input) -> FieldSpec {
        FieldSpec {
            name: input.name,
            quantity: input.quantity,
            optional: input.optional,
            basis: input.basis,
            only_for: input.only_for,
        }
    }

    /// Whether the card can show results while it is empty.
    pub fn may_be_missing(&self) -> bool {
        self.optional || !self.only_for.is_empty()
    }
}

/// The inputs of `kind` in `mode` for a product fed as `form`, in screen order, as the
/// engine's calculator table lists them. Values reach the engine in SI under these names.
pub fn fields(kind: CalcKind, mode: CalcMode, form: FeedForm) -> Vec<FieldSpec> {
    let _ = kind;
    engine::calculators::inputs_for_form(mode.calculator(), form)
        .iter()
        .map(FieldSpec::of)
        .collect()
}

/// Whether field `name` describes a product or its pump rather than the water: what is
/// typed in it belongs to the product chosen when it was typed (the table's product scope).
/// A hypochlorite's 12.5 % must never become the caustic's strength when the operator moves
/// to pH control; the flow, the pH and the other readings of the water carry over.
fn is_product_field(name: &str) -> bool {
    engine::calculators::all().iter().any(|c| {
        FeedForm::ALL.iter().any(|&form| {
            engine::calculators::inputs_for_form(c, form)
                .iter()
                .any(|i| i.name == name && i.scope == engine::calculators::Scope::Product)
        })
    })
}

/// Whether field `name` is a reading of the water wherever the table uses it: what may carry
/// over, visibly, to another calculator at the same tap.
fn is_water_field(name: &str) -> bool {
    let mut scopes: Vec<engine::calculators::Scope> = Vec::new();
    for c in engine::calculators::all() {
        for form in FeedForm::ALL {
            scopes.extend(
                engine::calculators::inputs_for_form(c, form)
                    .iter()
                    .filter(|i| i.name == name)
                    .map(|i| i.scope),
            );
        }
    }
    !scopes.is_empty()
        && scopes
            .iter()
            .all(|s| *s == engine::calculators::Scope::Water)
}

/// Every field any calculator uses with any product form, each name once.
fn all_fields() -> Vec<FieldSpec> {
    let mut specs: Vec<FieldSpec> = Vec::new();
    for kind in CalcKind::all() {
        for mode in kind.modes() {
            for form in FeedForm::ALL {
                for spec in fields(kind, mode, form) {
                    if !specs.iter().any(|s| s.name == spec.name) {
                        specs.push(spec);
                    }
                }
            }
        }
    }
    specs
}

/// Every field name any calculator uses (for the translation check).
pub fn all_field_names() -> Vec<&'static str> {
    all_fields().into_iter().map(|s| s.name).collect()
}

/// Every field name of the table and which of them are a product's own, derived once per
/// controller: the keystroke path looks names up here instead of walking the table.
#[derive(Debug)]
struct FieldIndex {
    names: Vec<&'static str>,
    product: Vec<&'static str>,
    water: Vec<&'static str>,
}

impl FieldIndex {
    fn build() -> FieldIndex {
        let names = all_field_names();
        let product = names
            .iter()
            .copied()
            .filter(|n| is_product_field(n))
            .collect();
        let water = names
            .iter()
            .copied()
            .filter(|n| is_water_field(n))
            .collect();
        FieldIndex {
            names,
            product,
            water,
        }
    }

    fn is_water(&self, name: &str) -> bool {
        self.water.contains(&name)
    }

    /// The field called `name`, as the table spells it, or the field of the input that had
    /// that name before a rename (inputs an older version saved).
    fn find(&self, name: &str) -> Option<&'static str> {
        let name = engine::calculators::current_name(name);
        self.names.iter().copied().find(|n| *n == name)
    }

    fn is_product(&self, name: &str) -> bool {
        self.product.contains(&name)
    }
}

/// One input row as the screen shows it.
#[derive(Clone, Debug, PartialEq)]
pub struct FieldView {
    pub name: &'static str,
    /// May stay empty (its label says so).
    pub optional: bool,
    pub unit: Unit,
    /// What the value is expressed as ("trade", "purity", "Cl2", "product" ...), for the chosen
    /// product: every strength, dose and concentration says its basis.
    pub basis: Option<&'static str>,
    pub text: String,
    /// Translation key of the problem with this field, if any.
    pub error: Option<&'static str>,
    /// The engine's refusal of the value typed here (said at the field, in its unit).
    pub refusal: Option<engine::Error>,
    /// The results that alone need it (empty: all do).
    pub only_for: &'static [&'static str],
    /// Empty while the card needs it: said under the card by name.
    pub missing: bool,
    /// The value shown was taken in another calculator at this tap on this shift.
    pub carried: Option<Carried>,
}

/// A reading of the water shown in a calculator where it was not typed: where and when it was
/// taken. The operator sees it beside the field and can clear it.
#[derive(Clone, Debug, PartialEq)]
pub struct Carried {
    /// The calculator it was typed in.
    pub from: CalcMode,
    /// When it was typed (UTC).
    pub at: DateTime<Utc>,
}

/// The latest reading of one water quantity the operator typed: in which calculator's slot,
/// when, at which tap.
#[derive(Clone, Debug, PartialEq)]
struct Reading {
    slot: Slot,
    from: CalcMode,
    at: DateTime<Utc>,
    tap: Option<String>,
}

/// How long a reading of the water is offered to the other calculators: a plant shift of
/// eight to twelve hours (common practice); a reading from the last shift is taken again.
pub const SHIFT_HOURS: i64 = 12;

/// The results card, formatted for display in the current language and units.
#[derive(Clone, Debug, PartialEq)]
pub struct ResultView {
    pub chemical: String,
    /// Translation key of the first big number's caption: the dose, or a cross-check's actual
    /// dose.
    pub dose_caption: String,
    pub dose: String,
    pub feed: String,
    pub feed_unit: Unit,
    pub product: String,
    pub product_unit: Unit,
    /// Translation key of the third big number's caption: the product volume for a liquid,
    /// the rate to set for a gas or dry feeder.
    pub product_caption: &'static str,
    pub pump: String,
    /// Translation key of the fourth big number's caption: pump or feeder setting.
    pub pump_caption: &'static str,
    /// Says in words why no product volume is shown (a product fed by mass).
    pub no_volume_note: Option<&'static str>,
    /// The range beside each big number (dose, feed, product, setting) that the precision of
    /// the readings allows; `None` where it adds nothing.
    pub ranges: [Option<String>; 4],
    /// Further results under the big numbers, in display units.
    pub extras: Vec<ExtraView>,
    /// Significant figures every number on the card is rounded to.
    pub figures: u32,
    /// The input that limits them (first in screen order), when one does.
    pub limiting: Option<&'static str>,
    pub trace: Vec<TraceLine>,
    pub cautions: Vec<Caution>,
    /// The raw outcome in SI, for logging.
    pub outcome: CalcOutcome,
}

/// A further result as shown: label `result-<key>`, formatted value and its unit.
#[derive(Clone, Debug, PartialEq)]
pub struct ExtraView {
    pub key: String,
    pub value: String,
    pub unit: Unit,
    /// The range the readings' precision allows, formatted like `value`.
    pub range: Option<String>,
    /// A headline without a big place (a cross-check's deviation): shown before the big
    /// numbers.
    pub lead: bool,
}

/// What the results card says.
#[derive(Clone, Debug, PartialEq)]
pub enum Status {
    /// Some inputs are still empty.
    Incomplete,
    /// Some inputs do not parse; see the fields' errors.
    Invalid,
    /// The engine for this calculator is not connected yet.
    NotConnected,
    /// The engine refused the inputs.
    Refused(engine::Error),
    Ready(Box<ResultView>),
}

impl Status {
    /// The translation key of the message shown instead of numbers (`None` when ready).
    pub fn message_key(&self) -> Option<String> {
        match self {
            Status::Incomplete => Some(key("calc-incomplete").into()),
            Status::Invalid => Some(key("calc-invalid").into()),
            Status::NotConnected => Some(key("calc-not-connected").into()),
            Status::Refused(e) => Some(format!("error-{}", e.kind().code())),
            Status::Ready(_) => None,
        }
    }
}

#[derive(Clone, Debug, PartialEq)]
pub struct CalcView {
    pub kind: CalcKind,
    pub mode: CalcMode,
    /// Products to choose from (empty: the calculator has no choice) and the chosen one.
    pub products: Vec<ProductChoice>,
    pub product_index: usize,
    pub fields: Vec<FieldView>,
    pub status: Status,
}

impl CalcView {
    /// The fields the card still waits for, in screen order: while incomplete, those every
    /// result needs; once ready, those only some results need (the setting's pump scale).
    pub fn missing(&self) -> Vec<&FieldView> {
        self.fields.iter().filter(|f| f.missing).collect()
    }
}

/// The most figures a follow-up value is written into a field with: as many as the card
/// shows at most (`calculators::figures_shown`); beyond four, a feed setting is more digits
/// than any pump or scale can be set to.
const MAX_FIGURES: u32 = 4;

/// Where a field's text is kept: its name, and the product's id for a product's own field,
/// the calculator's id for any other.
pub type Slot = (&'static str, Option<String>);

/// `name` or `name@product`, the key a slot is saved under.
fn slot_key((name, product): &Slot) -> String {
    match product {
        Some(id) => format!("{name}@{id}"),
        None => name.to_string(),
    }
}

pub struct CalcController {
    engine: Rc<dyn CalcEngine>,
    kind: CalcKind,
    mode: CalcMode,
    lang: Lang,
    system: UnitSystem,
    texts: HashMap<Slot, String>,
    /// The inputs given as text (see [`CalcController::text_inputs`]), by calculator and name:
    /// each calculator keeps its own.
    text_inputs: HashMap<(&'static str, &'static str), String>,
    products: HashMap<(CalcKind, CalcMode), String>,
    /// Maximum use levels (mg/L of product) of the site's delivered products, by catalog id.
    max_use_levels: HashMap<String, f64>,
    /// The site's own limits, which every request carries for the engine's limit check.
    limits: Vec<Limit>,
    /// The site's precision of its instruments, where it differs from the defaults.
    precisions: BTreeMap<Instrument, Precision>,
    /// The site's meters and pumps, which every request carries for the engine's guards.
    site: Option<SiteFacts>,
    fields: Rc<FieldIndex>,
    /// The latest reading of each water quantity typed, offered to the other calculators.
    readings: HashMap<&'static str, Reading>,
    /// The tap the dose will be logged to: readings carry over only at the same tap.
    tap: Option<String>,
    clock: fn() -> DateTime<Utc>,
}

impl CalcController {
    pub fn new(engine: Rc<dyn CalcEngine>, lang: Lang, system: UnitSystem) -> CalcController {
        CalcController {
            engine,
            // The table's first screen and its first variant.
            kind: CalcKind::all()[0],
            mode: CalcKind::all()[0].modes()[0],
            lang,
            system,
            texts: HashMap::new(),
            text_inputs: HashMap::new(),
            products: HashMap::new(),
            max_use_levels: HashMap::new(),
            limits: Vec::new(),
            precisions: BTreeMap::new(),
            site: None,
            fields: Rc::new(FieldIndex::build()),
            readings: HashMap::new(),
            tap: None,
            clock: Utc::now,
        }
    }

    /// The tap the dose will be logged to; readings taken at another tap are not offered.
    pub fn set_tap(&mut self, tap: Option<&str>) {
        self.tap = tap.map(str::to_string);
    }

    /// The clock readings are timed by (tests set a fixed one).
    pub fn set_clock(&mut self, clock: fn() -> DateTime<Utc>) {
        self.clock = clock;
    }

    /// The site's own limits (the engine adds the regulatory defaults where it sets none).
    pub fn set_limits(&mut self, limits: Vec<Limit>) {
        self.limits = limits;
    }

    /// The site's precision of its instruments (the defaults apply where it states none).
    pub fn set_precisions(&mut self, precisions: BTreeMap<Instrument, Precision>) {
        self.precisions = precisions;
    }

    /// The site's flow meters and pumps (a flow above every meter's full scale is cautioned).
    pub fn set_site_facts(&mut self, site: Option<SiteFacts>) {
        self.site = site;
    }

    /// The site's maximum use levels by catalog product id; each request carries the chosen
    /// product's, so a dose above its certification is flagged by the engine.
    pub fn set_max_use_levels(&mut self, levels: HashMap<String, f64>) {
        self.max_use_levels = levels;
    }

    pub fn kind(&self) -> CalcKind {
        self.kind
    }

    pub fn mode(&self) -> CalcMode {
        self.mode
    }

    pub fn engine(&self) -> &Rc<dyn CalcEngine> {
        &self.engine
    }

    pub fn set_kind(&mut self, kind: CalcKind) {
        self.kind = kind;
        if !kind.modes().contains(&self.mode) {
            self.mode = kind.modes()[0];
        }
    }

    pub fn set_mode(&mut self, mode: CalcMode) {
        if self.kind.modes().contains(&mode) {
            self.mode = mode;
        }
    }

    /// Chooses the product by its index in the engine's list for this calculator.
    pub fn set_product(&mut self, index: usize) {
        if let Some(p) = self.engine.products(self.kind, self.mode).get(index) {
            self.products.insert((self.kind, self.mode), p.id.clone());
        }
    }

    /// How the chosen product is fed (a calculator without a choice feeds liquids).
    pub fn form(&self) -> FeedForm {
        let (list, index, _) = self.product();
        list.get(index).map_or(FeedForm::Liquid, |p| p.form)
    }

    /// The inputs the current calculator asks for with the chosen product, in screen order.
    pub fn fields(&self) -> Vec<FieldSpec> {
        fields(self.kind, self.mode, self.form())
    }

    /// The chosen product (the first offered when none was chosen) and its index.
    fn product(&self) -> (Vec<ProductChoice>, usize, Option<String>) {
        let list = self.engine.products(self.kind, self.mode);
        let chosen = self.products.get(&(self.kind, self.mode));
        let index = chosen
            .and_then(|id| list.iter().position(|p| &p.id == id))
            .unwrap_or(0);
        let id = list.get(index).map(|p| p.id.clone());
        (list, index, id)
    }

    /// The slot of field `name` when `product` is chosen in the open calculator.
    fn slot(&self, name: &'static str, product: Option<&str>) -> Slot {
        if self.fields.is_product(name) {
            (name, product.map(str::to_string))
        } else {
            (name, Some(self.mode.calculator.to_string()))
        }
    }

    /// Where field `name`'s text is kept in the open calculator for the product chosen now
    /// (see [`is_product_field`]); the product list is looked up only for a product's own field.
    pub fn slot_of(&self, name: &str) -> Option<Slot> {
        let spec = self.fields.find(name)?;
        if self.fields.is_product(spec) {
            Some((spec, self.product().2))
        } else {
            Some(self.slot(spec, None))
        }
    }

    /// Records text for field `name` in the open calculator (for the chosen product, if the
    /// field is one of the product's own).
    pub fn edit(&mut self, name: &str, text: &str) {
        if let Some(slot) = self.slot_of(name) {
            self.texts.insert(slot, text.to_string());
        }
    }

    /// What the operator typed in field `name`: kept as [`edit`](Self::edit) does, and a reading
    /// of the water becomes the one the other calculators at this tap are offered. The app's
    /// own text (a prefill) goes through `edit` and is no reading.
    pub fn type_in(&mut self, name: &str, text: &str) {
        self.edit(name, text);
        let Some(slot) = self.slot_of(name) else {
            return;
        };
        if self.fields.is_water(slot.0) && !text.trim().is_empty() {
            let reading = Reading {
                slot: slot.clone(),
                from: self.mode,
                at: (self.clock)(),
                tap: self.tap.clone(),
            };
            self.readings.insert(slot.0, reading);
        }
    }

    /// Clears field `name` in the open calculator: a carried reading is no longer offered
    /// here (an empty field the operator left is the calculator's own).
    pub fn clear(&mut self, name: &str) {
        self.edit(name, "");
    }

    /// The text field `name` shows in the open calculator: its own, or a reading carried over.
    pub fn text(&self, name: &str) -> &str {
        let Some(slot) = self.slot_of(name) else {
            return "";
        };
        self.shown(&slot).0
    }

    /// The text of `slot` and, when it has no text of its own, the reading carried over to it.
    fn shown(&self, slot: &Slot) -> (&str, Option<Carried>) {
        if let Some(own) = self.texts.get(slot) {
            return (own.as_str(), None);
        }
        match self.carried(slot) {
            Some(r) => (
                self.text_in(&r.slot),
                Some(Carried {
                    from: r.from,
                    at: r.at,
                }),
            ),
            None => ("", None),
        }
    }

    /// The reading offered to `slot`: a water field never typed in this calculator gets the
    /// latest reading typed in another at the same tap within [`SHIFT_HOURS`].
    fn carried(&self, slot: &Slot) -> Option<&Reading> {
        if !self.fields.is_water(slot.0) {
            return None;
        }
        let r = self.readings.get(slot.0)?;
        let fresh = (self.clock)() - r.at <= chrono::Duration::hours(SHIFT_HOURS);
        let offered = r.slot != *slot
            && r.tap == self.tap
            && fresh
            && !self.text_in(&r.slot).trim().is_empty();
        offered.then_some(r)
    }

    /// The text kept in `slot`, whatever product is chosen now.
    pub fn text_in(&self, slot: &Slot) -> &str {
        self.texts.get(slot).map_or("", String::as_str)
    }

    fn text_for(&self, name: &'static str, product: Option<&str>) -> (&str, Option<Carried>) {
        self.shown(&self.slot(name, product))
    }

    /// Switches the language, rewriting typed numbers with the new decimal mark.
    pub fn set_lang(&mut self, lang: Lang) {
        let old = self.lang;
        for text in self.texts.values_mut() {
            // "1.2 ± 0.1": the reading and its own precision, each with the new mark.
            if let Some(new) = rewritten(
                text,
                old,
                |reading, v| reformat(reading, v, lang),
                |_, t, t_value| reformat(t, t_value, lang),
            ) {
                *text = new;
            }
        }
        self.lang = lang;
    }

    /// Switches units, converting every typed number so the quantity stays the same.
    pub fn set_units(&mut self, system: UnitSystem) {
        let old = self.system;
        let lang = self.lang;
        let quantities: HashMap<&'static str, Quantity> = all_fields()
            .into_iter()
            .map(|s| (s.name, s.quantity))
            .collect();
        for ((name, _), text) in self.texts.iter_mut() {
            let q = quantities[name];
            if q.unit(old) == q.unit(system) {
                continue;
            }
            // "1.2 ± 0.1" MGD: the reading and its own precision both change unit. Left as
            // typed, the text would be read in the new unit (1.2 m³/d, 3785 times less).
            let (from, to) = (q.unit(old), q.unit(system));
            if let Some(new) = rewritten(
                text,
                lang,
                |_, v| numbers::format_sig(to.from_si(from.to_si(v)), 4, lang),
                |v, _, t| {
                    let t_si = tolerance_to_si(from, v, t);
                    numbers::format_sig(tolerance_from_si(to, t_si), 4, lang)
                },
            ) {
                *text = new;
            }
        }
        self.system = system;
    }

    /// The request the current inputs make, or the per-field problems.
    fn request(&self) -> (Vec<FieldView>, Option<CalcRequest>, bool) {
        let mut views = Vec::new();
        let mut values = BTreeMap::new();
        let mut figures = BTreeMap::new();
        let mut tolerances = BTreeMap::new();
        let mut empty = false;
        let mut invalid = false;
        let (offered, index, product) = self.product();
        let choice = offered.get(index).filter(|_| product.is_some());
        for spec in self.fields() {
            let unit = spec.quantity.unit(self.system);
            let (text, carried) = self.text_for(spec.name, product.as_deref());
            let text = text.to_string();
            let mut missing = false;
            // "140 ± 2": the reading with a precision of the operator's own.
            let (reading, tolerance) = split_tolerance(&text);
            let tolerance = tolerance.map(|t| {
                numbers::parse(t, self.lang)
                    .and_then(|t| (t >= 0.0).then_some(t).ok_or(NumberError::NotANumber))
            });
            let error = match (numbers::parse(reading, self.lang), tolerance) {
                (Ok(_), Some(Err(e))) => {
                    invalid = true;
                    Some(e.key())
                }
                (Ok(v), tolerance) => {
                    values.insert(spec.name, unit.to_si(v));
                    if let Some(Ok(t)) = tolerance {
                        tolerances.insert(spec.name, tolerance_to_si(unit, v, t));
                    }
                    if let Some(n) = typed_figures(spec.quantity, reading, self.lang) {
                        figures.insert(spec.name, n);
                    }
                    None
                }
                (Err(NumberError::Empty), _) => {
                    empty |= !spec.may_be_missing();
                    missing = !spec.optional;
                    None
                }
                (Err(e), _) => {
                    invalid = true;
                    Some(e.key())
                }
            };
            views.push(FieldView {
                name: spec.name,
                optional: spec.optional,
                unit,
                basis: choice.map_or(spec.basis, |c| c.basis(spec.basis)),
                text,
                error,
                refusal: None,
                only_for: spec.only_for,
                missing,
                carried,
            });
        }
        let max_use_level_mg_l = product
            .as_ref()
            .and_then(|id| self.max_use_levels.get(id))
            .copied();
        let request = (!empty && !invalid).then_some(CalcRequest {
            kind: self.kind,
            mode: self.mode,
            product,
            values,
            figures,
            max_use_level_mg_l,
            limits: self.limits.clone(),
            tolerances,
            precisions: self.precisions.clone(),
            site: self.site.clone(),
            texts: self
                .text_inputs()
                .into_iter()
                .filter_map(|t| {
                    let text = self.text_input(t.name).trim();
                    (!text.is_empty()).then(|| (t.name, text.to_string()))
                })
                .collect(),
        });
        (views, request, invalid)
    }

    /// The request calculator `kind` in `mode` would make from its own values (and the readings
    /// carried over to it), with its chosen product: what a plot of that calculator draws.
    pub fn request_for(&self, kind: CalcKind, mode: CalcMode) -> Option<CalcRequest> {
        let probe = CalcController {
            engine: self.engine.clone(),
            kind,
            mode,
            lang: self.lang,
            system: self.system,
            texts: self.texts.clone(),
            text_inputs: self.text_inputs.clone(),
            products: self.products.clone(),
            max_use_levels: self.max_use_levels.clone(),
            limits: self.limits.clone(),
            precisions: self.precisions.clone(),
            site: self.site.clone(),
            fields: self.fields.clone(),
            readings: self.readings.clone(),
            tap: self.tap.clone(),
            clock: self.clock,
        };
        probe.current_request()
    }

    /// The request for the current inputs, if they are complete and valid.
    pub fn current_request(&self) -> Option<CalcRequest> {
        self.request().1
    }

    pub fn view(&self) -> CalcView {
        let (mut fields, request, invalid) = self.request();
        let status = match request {
            None if invalid => Status::Invalid,
            None => Status::Incomplete,
            Some(request) => match self.engine.compute(&request) {
                Ok(outcome) => Status::Ready(Box::new(self.result_view(&request, outcome))),
                Err(SeamError::NotConnected) => Status::NotConnected,
                Err(SeamError::Engine(e)) => Status::Refused(e),
            },
        };
        // A refusal about one input is said at that field too.
        if let Status::Refused(e) = &status
            && let Some((_, input)) = e.params().iter().find(|(k, _)| *k == "input")
            && let Some(f) = fields.iter_mut().find(|f| f.name == input.as_str())
        {
            f.refusal = Some(e.clone());
        }
        // While the card waits for what every result needs, only that is named missing.
        if !matches!(status, Status::Ready(_)) {
            for f in &mut fields {
                f.missing &= f.only_for.is_empty();
            }
        }
        let (products, product_index, _) = self.product();
        CalcView {
            kind: self.kind,
            mode: self.mode,
            products,
            product_index,
            fields,
            status,
        }
    }

    fn result_view(&self, request: &CalcRequest, outcome: CalcOutcome) -> ResultView {
        let lang = self.lang;
        // Never fewer than three figures: how far a number can be trusted is said by its
        // range, not by dropping digits a cross-check needs.
        let figures = engine::calculators::figures_shown(outcome.figures);
        let limiting = outcome.figures.and_then(|f| {
            self.fields()
                .into_iter()
                .map(|spec| spec.name)
                .find(|name| request.figures(name) == Some(f))
        });
        let show = |v: Option<f64>, unit: Unit| {
            v.map_or("—".to_string(), |v| {
                numbers::format_sig(unit.from_si(v), figures, lang)
            })
        };
        // The range beside a value shown as `text` in `unit`, to the same decimals.
        let range = |r: Option<Range>, text: &str, unit: Unit| {
            range_beside(text, r?, unit, |v, d| numbers::format_fixed(v, d, lang))
        };
        let ranged = |ids: &[&str]| ids.iter().find_map(|id| outcome.ranges.get(id)).copied();
        let feed_unit = Quantity::MassPerDay.unit(self.system);
        // A gas or dry product has no volume worth showing: its third number is the mass of
        // product per day the feeder is set to, said in words.
        let form = self.form();
        let (product_value, product_unit) = if form.by_mass() {
            (outcome.product_kg_per_day, feed_unit)
        } else {
            (
                outcome.product_l_per_hour,
                Quantity::VolumePerHour.unit(self.system),
            )
        };
        // In the engine's order: what the operator must act on first.
        let cautions = outcome.cautions.clone();
        let extras = outcome
            .extras
            .iter()
            .map(|e| {
                let unit = e.quantity.unit(self.system);
                // A pH (and an index made of pHs) is shown to two decimals, the precision of a
                // field meter (common practice).
                let value = if matches!(e.quantity, Quantity::Ph | Quantity::Index) {
                    numbers::format_fixed(e.value, 2, lang)
                } else {
                    show(Some(e.value), unit)
                };
                ExtraView {
                    key: e.key.clone(),
                    range: range(e.range, &value, unit),
                    value,
                    unit,
                    lead: e.headline,
                }
            })
            .collect();
        let dose = show(outcome.dose_mg_per_l, Unit::MgPerL);
        let feed = show(outcome.feed_kg_per_day, feed_unit);
        let product = show(product_value, product_unit);
        let pump = show(outcome.pump_setting_percent, Unit::Percent);
        let product_id = if form.by_mass() {
            PRODUCT[1]
        } else {
            PRODUCT[0]
        };
        let ranges = [
            range(ranged(&DOSE), &dose, Unit::MgPerL),
            range(ranged(&[FEED]), &feed, feed_unit),
            range(ranged(&[product_id]), &product, product_unit),
            range(ranged(&SETTING), &pump, Unit::Percent),
        ];
        ResultView {
            chemical: outcome.chemical.clone(),
            dose_caption: format!(
                "result-{}",
                outcome.dose_id.unwrap_or(DOSE[0]).replace('_', "-")
            ),
            dose,
            feed,
            feed_unit,
            product,
            product_unit,
            product_caption: match form {
                FeedForm::Liquid => key("result-product"),
                FeedForm::Gas | FeedForm::Dry => key("result-feeder-rate"),
            },
            pump,
            pump_caption: match (form, outcome.setting_id) {
                // A cross-check's setting is the one that would reach the target.
                (_, Some(id)) if id == SETTING[2] => key("result-suggested-pump-setting"),
                (_, Some(id)) if id == SETTING[3] => key("result-suggested-feeder-setting"),
                (FeedForm::Liquid, _) => key("result-pump"),
                (FeedForm::Gas | FeedForm::Dry, _) => key("result-feeder-setting"),
            },
            no_volume_note: match form {
                FeedForm::Liquid => None,
                FeedForm::Gas => Some(key("result-no-volume-gas")),
                FeedForm::Dry => Some(key("result-no-volume-dry")),
            },
            ranges,
            extras,
            figures,
            limiting,
            trace: outcome.trace.clone(),
            cautions,
            outcome,
        }
    }
}

/// The screen and variant each follow-up of `view`'s card opens, in the engine's order; empty
/// when the card is not ready or offers none. Read off a view already computed: a screen that
/// has its view asks the engine once per keystroke, not again for the buttons.
pub fn follow_ups_of(view: &CalcView) -> Vec<(CalcKind, CalcMode)> {
    let Status::Ready(card) = &view.status else {
        return Vec::new();
    };
    card.outcome
        .table
        .iter()
        .flat_map(|o| o.follow_ups.iter())
        .filter_map(|f| variant_of(f.calculator))
        .collect()
}

/// Follow-ups of the card shown (the engine's `Outcome::follow_ups`): generic over the table,
/// so a screen offers one button per follow-up without knowing which calculators they join.
impl CalcController {
    /// The screen and variant each follow-up of the current card opens, in the engine's order;
    /// empty when the card is not ready or offers none. Its label is the screen's `calc-<code>`.
    pub fn follow_ups(&self) -> Vec<(CalcKind, CalcMode)> {
        follow_ups_of(&self.view())
    }

    /// Opens follow-up `index` of the current card: its screen and variant, its product, and
    /// each value it carries typed into its field in the current units and language (the
    /// operator asked for it, so a field's earlier text is replaced). False when there is none.
    pub fn follow_up(&mut self, index: usize) -> bool {
        let Status::Ready(card) = self.view().status else {
            return false;
        };
        let Some(f) = card
            .outcome
            .table
            .as_ref()
            .and_then(|o| o.follow_ups.get(index))
            .cloned()
        else {
            return false;
        };
        let Some((kind, mode)) = variant_of(f.calculator) else {
            return false;
        };
        self.set_kind(kind);
        self.set_mode(mode);
        if let Some(product) = &f.product
            && let Some(i) = self
                .engine
                .products(kind, mode)
                .iter()
                .position(|p| &p.id == product)
        {
            self.set_product(i);
        }
        for (name, si) in &f.values {
            let Some(spec) = self.fields().into_iter().find(|s| s.name == *name) else {
                continue;
            };
            let unit = spec.quantity.unit(self.system);
            let text = numbers::format_sig(unit.from_si(*si), MAX_FIGURES, self.lang);
            self.edit(name, &text);
        }
        true
    }
}

/// Inputs given as text rather than a number (a jar-test stock's compound), as the engine's
/// table declares them for the calculator shown: generic, so a screen draws one text field per
/// entry without knowing which calculators take one. Always optional; kept as typed (no
/// number to convert when the language or units change).
impl CalcController {
    /// The text inputs of the calculator shown, in the table's order.
    pub fn text_inputs(&self) -> Vec<&'static TextInput> {
        self.mode.calculator().text_inputs().collect()
    }

    /// What is typed in text input `name` of the calculator shown ("" when nothing is).
    pub fn text_input(&self, name: &str) -> &str {
        self.text_inputs
            .iter()
            .find(|((calc, n), _)| *calc == self.mode.calculator && *n == name)
            .map_or("", |(_, text)| text.as_str())
    }

    /// The operator typed `text` in text input `name` of the calculator shown; a name the
    /// calculator does not take is ignored.
    pub fn edit_text_input(&mut self, name: &str, text: &str) {
        if let Some(t) = self.text_inputs().into_iter().find(|t| t.name == name) {
            self.text_inputs
                .insert((self.mode.calculator, t.name), text.to_string());
        }
    }
}

/// The screen and variant that run calculator `id` (its first variant).
fn variant_of(id: &str) -> Option<(CalcKind, CalcMode)> {
    CalcKind::all()
        .into_iter()
        .flat_map(|k| k.modes().into_iter().map(move |m| (k, m)))
        .find(|(_, m)| m.calculator == id)
}

/// What the operator has typed and chosen in the calculators, kept across a restart: an
/// Android activity can be killed in the background, and the readings taken at the tap must
/// still be there when the operator comes back. Texts are kept as typed, with the language and
/// units they were typed in, so a restore in other settings converts them like a live switch.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct CalcInputs {
    pub kind: String,
    pub mode: String,
    pub lang: String,
    pub us_units: bool,
    pub texts: BTreeMap<String, String>,
    /// `kind/mode` → chosen product id.
    pub products: BTreeMap<String, String>,
    /// The readings of the water offered to the other calculators, by field name.
    #[serde(default)]
    pub readings: BTreeMap<String, SavedReading>,
    /// The text inputs typed (a jar-test stock's formula), as `name@calculator`.
    #[serde(default)]
    pub text_inputs: BTreeMap<String, String>,
}

/// A reading as kept: the slot it was typed in (`name@calculator`), the variant's code, when
/// (RFC 3339) and at which tap.
#[derive(Clone, Debug, Default, PartialEq, Serialize, Deserialize)]
pub struct SavedReading {
    pub slot: String,
    pub from: String,
    pub at: String,
    pub tap: Option<String>,
}

impl CalcController {
    pub fn inputs(&self) -> CalcInputs {
        CalcInputs {
            kind: self.kind.code().into(),
            mode: self.mode.code().into(),
            lang: self.lang.tag().into(),
            us_units: self.system == UnitSystem::Us,
            // An empty field is kept only where it declines a reading carried over.
            texts: self
                .texts
                .iter()
                .filter(|(slot, t)| {
                    !t.trim().is_empty()
                        || self.readings.get(slot.0).is_some_and(|r| r.slot != **slot)
                })
                .map(|(slot, v)| (slot_key(slot), v.clone()))
                .collect(),
            products: self
                .products
                .iter()
                .map(|((k, m), id)| (format!("{}/{}", k.code(), m.code()), id.clone()))
                .collect(),
            readings: self
                .readings
                .iter()
                .map(|(name, r)| {
                    let saved = SavedReading {
                        slot: slot_key(&r.slot),
                        from: r.from.code().into(),
                        at: r.at.to_rfc3339(),
                        tap: r.tap.clone(),
                    };
                    (name.to_string(), saved)
                })
                .collect(),
            text_inputs: self
                .text_inputs
                .iter()
                .filter(|(_, t)| !t.trim().is_empty())
                .map(|((calc, name), t)| (format!("{name}@{calc}"), t.clone()))
                .collect(),
        }
    }

    /// Puts back what [`inputs`](Self::inputs) kept; names that are no longer fields (an older
    /// version's) are dropped, never guessed at.
    pub fn restore(&mut self, saved: &CalcInputs) {
        let (lang, system) = (self.lang, self.system);
        self.lang = Lang::from_tag(&saved.lang).unwrap_or(lang);
        self.system = if saved.us_units {
            UnitSystem::Us
        } else {
            UnitSystem::Si
        };
        let fields = self.fields.clone();
        // A reading saved without its calculator (an older file, when readings were shared)
        // belongs to the calculator that was open.
        let open = CalcMode::all()
            .into_iter()
            .find(|m| m.code() == saved.mode)
            .map_or(self.mode.calculator, |m| m.calculator);
        let slot_of_key = |key: &str| -> Option<Slot> {
            let (name, owner) = match key.split_once('@') {
                Some((name, id)) => (name, Some(id.to_string())),
                None => (key, None),
            };
            let name = fields.find(name)?;
            match (fields.is_product(name), owner) {
                (true, Some(id)) => Some((name, Some(id))),
                // A product's own field saved without its product has no owner: dropped rather
                // than given to whichever product happens to be chosen.
                (true, None) => None,
                (false, Some(id)) => engine::calculators::find(&id)
                    .ok()
                    .map(|c| (name, Some(c.id.to_string()))),
                (false, None) => Some((name, Some(open.to_string()))),
            }
        };
        for (key, text) in &saved.texts {
            if let Some(slot) = slot_of_key(key) {
                self.texts.insert(slot, text.clone());
            }
        }
        for (name, r) in &saved.readings {
            let (Some(name), Some(slot), Some(from), Ok(at)) = (
                fields.find(name),
                slot_of_key(&r.slot),
                CalcMode::find(&r.from),
                DateTime::parse_from_rfc3339(&r.at),
            ) else {
                continue;
            };
            let reading = Reading {
                slot,
                from,
                at: at.with_timezone(&Utc),
                tap: r.tap.clone(),
            };
            self.readings.insert(name, reading);
        }
        // Only a text input the table still declares, for its own calculator.
        for (key, text) in &saved.text_inputs {
            let declared = key.split_once('@').and_then(|(name, calc)| {
                engine::calculators::all()
                    .iter()
                    .flat_map(|c| c.text_inputs())
                    .find(|t| t.name == name && t.calculator == calc)
            });
            if let Some(t) = declared {
                self.text_inputs
                    .insert((t.calculator, t.name), text.clone());
            }
        }
        for (key, id) in &saved.products {
            let Some((k, m)) = key.split_once('/') else {
                continue;
            };
            let kind = CalcKind::all().into_iter().find(|x| x.code() == k);
            let mode = CalcMode::all().into_iter().find(|x| x.code() == m);
            if let (Some(kind), Some(mode)) = (kind, mode) {
                self.products.insert((kind, mode), id.clone());
            }
        }
        if let Some(kind) = CalcKind::all().into_iter().find(|k| k.code() == saved.kind) {
            self.set_kind(kind);
            if let Some(mode) = CalcMode::all().into_iter().find(|m| m.code() == saved.mode) {
                self.set_mode(mode);
            }
        }
        self.set_lang(lang);
        self.set_units(system);
    }
}

/// How far a typed value limits a result's precision: the engine's rule, on the text with
/// the language's decimal mark made a point.
fn typed_figures(quantity: Quantity, text: &str, lang: Lang) -> Option<u8> {
    numbers::parse(text, lang).ok()?;
    engine::calculators::given_figures(quantity, &text.trim().replace(',', "."))
}

/// A field's text rewritten by a language or unit switch: its reading (parsed in `lang`) by
/// `reading(text, value)`, and its own ± if it has one by `tolerance(reading's value, text,
/// value)`; a ± that does not parse is kept as typed, still marked wrong on the card beside
/// the rewritten reading. `None` when the reading itself is not a number (left as typed).
fn rewritten(
    text: &str,
    lang: Lang,
    reading: impl Fn(&str, f64) -> String,
    tolerance: impl Fn(f64, &str, f64) -> String,
) -> Option<String> {
    let (reading_text, tolerance_text) = split_tolerance(text);
    let v = numbers::parse(reading_text, lang).ok()?;
    let mut new = reading(reading_text, v);
    if let Some(t) = tolerance_text {
        new.push_str(" ± ");
        match numbers::parse(t, lang) {
            Ok(t_value) => new.push_str(&tolerance(v, t, t_value)),
            Err(_) => new.push_str(t),
        }
    }
    Some(new)
}

fn reformat(text: &str, v: f64, lang: Lang) -> String {
    // Keep the operator's digits; only the decimal mark changes.
    let decimals = text
        .trim()
        .rsplit(['.', ','])
        .next()
        .filter(|_| text.contains(['.', ',']))
        .map_or(0, str::len);
    numbers::format_fixed(v, decimals, lang)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::app::seams::{CautionLevel, Unconnected};
    use std::cell::RefCell;

    /// A stand-in engine that records the request and reports the SI inputs back as outputs,
    /// so the tests check the controller's plumbing and formatting, not chemistry.
    #[derive(Default)]
    struct Recorder {
        seen: RefCell<Vec<CalcRequest>>,
    }

    impl CalcEngine for Recorder {
        fn products(&self, kind: CalcKind, _mode: CalcMode) -> Vec<ProductChoice> {
            if kind != CalcKind::of("feed") {
                return Vec::new();
            }
            [
                ("first", FeedForm::Liquid),
                ("second", FeedForm::Liquid),
                ("gas", FeedForm::Gas),
            ]
            .iter()
            .map(|(id, form)| ProductChoice {
                id: id.to_string(),
                name_key: format!("product-{id}"),
                name: id.to_string(),
                form: *form,
                strength_basis: "weight",
                dose_as: None,
            })
            .collect()
        }

        fn compute(&self, request: &CalcRequest) -> Result<CalcOutcome, SeamError> {
            self.seen.borrow_mut().push(request.clone());
            if request.get("flow") == Some(0.0) {
                return Err(SeamError::Engine(engine::Error::new(
                    engine::ErrorKind::OutOfRange,
                    "flow must be greater than zero",
                )));
            }
            Ok(CalcOutcome {
                chemical: "echo".into(),
                dose_mg_per_l: request.get("dose"),
                feed_kg_per_day: request.get("flow"),
                product_l_per_hour: request.get("pump-capacity"),
                product_kg_per_day: request.get("gas-feeder-capacity"),
                pump_setting_percent: None,
                extras: Vec::new(),
                figures: request.figures("dose"),
                trace: vec![TraceLine::Heading("step".into())],
                cautions: vec![
                    Caution {
                        level: CautionLevel::Info,
                        code: "x".into(),
                        message: "info".into(),
                        params: vec![],
                    },
                    Caution {
                        level: CautionLevel::Danger,
                        code: "y".into(),
                        message: "danger".into(),
                        params: vec![],
                    },
                ],
                table: None,
                ..CalcOutcome::default()
            })
        }
    }

    fn fill(c: &mut CalcController, pairs: &[(&str, &str)]) {
        for (n, t) in pairs {
            c.edit(n, t);
        }
    }

    #[test]
    fn incomplete_until_every_field_has_a_number() {
        let rec = Rc::new(Recorder::default());
        let mut c = CalcController::new(rec.clone(), Lang::En, UnitSystem::Si);
        c.set_kind(CalcKind::of("feed"));
        assert_eq!(c.view().status, Status::Incomplete);
        fill(&mut c, &[("flow", "1000"), ("dose", "2")]);
        assert_eq!(c.view().status, Status::Incomplete);
        assert!(
            rec.seen.borrow().is_empty(),
            "engine called with missing inputs"
        );
    }

    #[test]
    fn invalid_text_gives_a_field_error_and_no_numbers() {
        let rec = Rc::new(Recorder::default());
        let mut c = CalcController::new(rec.clone(), Lang::En, UnitSystem::Si);
        c.set_kind(CalcKind::of("feed"));
        fill(
            &mut c,
            &[
                ("flow", "12x"),
                ("dose", "2"),
                ("strength", "12.5"),
                ("specific-gravity", "1.2"),
                ("pump-capacity", "10"),
            ],
        );
        let view = c.view();
        assert_eq!(view.status, Status::Invalid);
        assert_eq!(view.status.message_key().as_deref(), Some("calc-invalid"));
        assert_eq!(view.fields[0].error, Some("number-invalid"));
        assert!(rec.seen.borrow().is_empty());
    }

    #[test]
    fn values_reach_the_engine_in_si_and_come_back_in_display_units() {
        let rec = Rc::new(Recorder::default());
        let mut c = CalcController::new(rec.clone(), Lang::En, UnitSystem::Us);
        c.set_kind(CalcKind::of("feed"));
        fill(
            &mut c,
            &[
                ("flow", "1"),
                ("dose", "2.00"),
                ("strength", "12.5"),
                ("specific-gravity", "1.2"),
                ("pump-capacity", "10"),
            ],
        );
        let Status::Ready(r) = c.view().status else {
            panic!("expected a result")
        };
        let seen = rec.seen.borrow()[0].clone();
        assert_eq!(seen.figures("dose"), Some(3));
        assert_eq!(seen.figures("flow"), Some(1));
        assert!((seen.get("flow").unwrap() - 3785.411784).abs() < 1e-6);
        assert!((seen.get("pump-capacity").unwrap() - 37.85411784).abs() < 1e-9);
        // The recorder reports flow (m³/d) as kg/d; in US units that is shown as lb/d.
        assert_eq!(
            r.feed,
            numbers::format_sig(3785.411784 / 0.45359237, 3, Lang::En)
        );
        assert_eq!(r.feed_unit, Unit::LbPerDay);
        assert_eq!(r.dose, "2.00");
        assert_eq!(r.pump, "—");
        // The card keeps the engine's order (the stand-in raises the info caution first).
        assert_eq!(
            r.cautions.iter().map(|c| c.level).collect::<Vec<_>>(),
            [CautionLevel::Info, CautionLevel::Danger],
        );
    }

    #[test]
    fn spanish_comma_input_and_output() {
        let rec = Rc::new(Recorder::default());
        let mut c = CalcController::new(rec.clone(), Lang::Es, UnitSystem::Si);
        c.set_kind(CalcKind::of("feed"));
        fill(
            &mut c,
            &[
                ("flow", "1500"),
                ("dose", "2,5"),
                ("strength", "12,5"),
                ("specific-gravity", "1,2"),
                ("pump-capacity", "10"),
            ],
        );
        let Status::Ready(r) = c.view().status else {
            panic!("expected a result")
        };
        assert_eq!(r.dose, "2,50", "two figures typed, three shown at least");
        assert_eq!(rec.seen.borrow()[0].get("dose"), Some(2.5));
        assert_eq!(rec.seen.borrow()[0].figures("dose"), Some(2));
    }

    #[test]
    fn results_show_three_figures_at_least_and_four_at_most() {
        // The recorder reports the figures of "dose" as the result's; flow (m³/d) comes back
        // as the feed, so the rounding of one number by another's precision is visible.
        fn check(dose: &str, flow: &str, shown_dose: &str, shown_feed: &str, figures: u32) {
            let rec = Rc::new(Recorder::default());
            let mut c = CalcController::new(rec, Lang::En, UnitSystem::Si);
            c.set_kind(CalcKind::of("feed"));
            fill(
                &mut c,
                &[
                    ("flow", flow),
                    ("dose", dose),
                    ("strength", "12.5"),
                    ("specific-gravity", "1.20"),
                    ("pump-capacity", "10.0"),
                ],
            );
            let Status::Ready(r) = c.view().status else {
                panic!("expected a result for {dose}")
            };
            assert_eq!(
                (r.dose.as_str(), r.feed.as_str(), r.figures),
                (shown_dose, shown_feed, figures),
                "dose {dose}, flow {flow}"
            );
            assert_eq!(r.limiting, Some("dose"));
        }
        // Fewer figures typed never round a setpoint coarser than three: a card once showed
        // "3" for 2.77 mg/L. The range says how far the number can be trusted.
        check("2", "3785", "2.00", "3790", 3);
        check("2.0", "3785", "2.00", "3790", 3);
        check("2.50", "3785", "2.50", "3790", 3);
        // More figures than a pump can be set to are not shown.
        check("2.50000", "3785.4", "2.500", "3785", 4);
    }

    /// A "± x" typed after a reading reaches the engine as that reading's precision, in SI; a
    /// tolerance that is not a number, or negative, is the field's error, never dropped.
    #[test]
    fn a_typed_tolerance_goes_with_its_reading() {
        let rec = Rc::new(Recorder::default());
        let mut c = CalcController::new(rec.clone(), Lang::Es, UnitSystem::Us);
        c.set_kind(CalcKind::of("feed"));
        fill(
            &mut c,
            &[
                ("flow", "2,4 ± 0,1"),
                ("dose", "2,5"),
                ("strength", "12,5"),
                ("specific-gravity", "1,2"),
                ("pump-capacity", "10"),
            ],
        );
        assert!(matches!(c.view().status, Status::Ready(_)));
        let seen = rec.seen.borrow()[0].clone();
        // 0.1 MGD is 378.5411784 m³/d (1 US gal = 3.785411784 L, exact).
        let t = seen.tolerances.get("flow").copied().unwrap();
        assert!((t - 378.541_178_4).abs() < 1e-6, "{t}");
        assert_eq!(seen.figures("flow"), Some(2), "the reading's own figures");
        for bad in ["2,4 ± x", "2,4 ± -0,1"] {
            c.edit("flow", bad);
            let v = c.view();
            assert_eq!(v.status, Status::Invalid, "{bad}");
            let flow = v.fields.iter().find(|f| f.name == "flow").unwrap();
            assert!(flow.error.is_some(), "{bad}");
        }
    }

    /// The cross-check's card through the real engine: its first place is the actual dose,
    /// captioned so, its deviation leads the list, and each carries the range of the readings.
    /// By hand (12.5 % trade = 125 mg/mL available chlorine): 140 mL in 60 s into 9,100 m³/d
    /// is 2.7692 mg/L; with the flow typed exact, the column (±2 mL) and the stopwatch
    /// (±0.5 s) give 2.7692 × (1 − 2/140 − (1 − 60/60.5)) = 2.707 to
    /// 2.7692 × (1 + 2/140 + (60/59.5 − 1)) = 2.832.
    #[test]
    fn a_cross_checks_card_leads_with_its_actual_dose_and_deviation() {
        let engine = Rc::new(super::super::engine_adapter::DosingEngine::new().unwrap());
        let mut c = CalcController::new(engine, Lang::En, UnitSystem::Si);
        c.set_kind(CalcKind::of("pump-check"));
        let product = c
            .view()
            .products
            .iter()
            .position(|p| p.id == "sodium-hypochlorite")
            .unwrap();
        c.set_product(product);
        fill(
            &mut c,
            &[
                ("flow", "9100 ± 0"),
                ("dose", "3.0"),
                ("drawdown-volume", "140"),
                ("drawdown-time", "60"),
                ("pump-setting", "24.3"),
                ("strength", "12.5"),
                ("specific-gravity", "1.16"),
            ],
        );
        let Status::Ready(r) = c.view().status else {
            panic!("expected a result: {:?}", c.view().status)
        };
        assert_eq!(r.dose_caption, "result-actual-dose");
        assert_eq!(
            (r.dose.as_str(), r.ranges[0].as_deref()),
            ("2.77", Some("2.71–2.83"))
        );
        let lead = &r.extras[0];
        assert!(lead.lead, "{lead:?}");
        assert_eq!(
            (lead.key.as_str(), lead.value.as_str()),
            ("deviation", "-7.69")
        );
        assert!(lead.range.is_some(), "{lead:?}");
        assert_eq!(r.pump_caption, "result-suggested-pump-setting");
    }

    #[test]
    fn extras_and_trace_lines_pass_to_the_card() {
        struct Extras;
        impl CalcEngine for Extras {
            fn compute(&self, _: &CalcRequest) -> Result<CalcOutcome, SeamError> {
                Ok(CalcOutcome {
                    chemical: "x".into(),
                    dose_mg_per_l: Some(1.0),
                    extras: vec![
                        super::super::seams::Extra {
                            key: "ph-after".into(),
                            value: 7.456,
                            quantity: Quantity::Ph,
                            range: None,
                            headline: false,
                        },
                        super::super::seams::Extra {
                            key: "coagulant-solids".into(),
                            value: 45.359237,
                            quantity: Quantity::MassPerDay,
                            range: None,
                            headline: false,
                        },
                    ],
                    figures: Some(3),
                    trace: vec![TraceLine::Heading("flow".into())],
                    ..CalcOutcome::default()
                })
            }
        }
        let mut c = CalcController::new(Rc::new(Extras), Lang::Es, UnitSystem::Us);
        c.set_kind(CalcKind::of("feed"));
        for n in [
            "flow",
            "dose",
            "strength",
            "specific-gravity",
            "pump-capacity",
        ] {
            c.edit(n, "1");
        }
        let Status::Ready(r) = c.view().status else {
            panic!("expected a result")
        };
        let shown: Vec<_> = r
            .extras
            .iter()
            .map(|e| (e.key.as_str(), e.value.as_str(), e.unit))
            .collect();
        assert_eq!(
            shown,
            [
                ("ph-after", "7,46", Unit::PhUnits),
                ("coagulant-solids", "100", Unit::LbPerDay)
            ]
        );
        assert_eq!(r.limiting, None, "no typed input has three figures");
        assert_eq!(r.trace, [TraceLine::Heading("flow".into())]);
    }

    #[test]
    fn engine_refusal_and_unconnected_engine_are_reported() {
        let rec = Rc::new(Recorder::default());
        let mut c = CalcController::new(rec, Lang::En, UnitSystem::Si);
        c.set_kind(CalcKind::of("feed"));
        let inputs = [
            ("flow", "0"),
            ("dose", "2"),
            ("strength", "12.5"),
            ("specific-gravity", "1.2"),
            ("pump-capacity", "10"),
        ];
        fill(&mut c, &inputs);
        assert_eq!(
            c.view().status.message_key().as_deref(),
            Some("error-out-of-range")
        );
        let mut u = CalcController::new(Rc::new(Unconnected), Lang::En, UnitSystem::Si);
        u.set_kind(CalcKind::of("feed"));
        fill(&mut u, &inputs);
        assert_eq!(u.view().status, Status::NotConnected);
    }

    #[test]
    fn switching_units_and_language_keeps_the_quantity() {
        let mut c = CalcController::new(Rc::new(Unconnected), Lang::En, UnitSystem::Us);
        c.edit("flow", "1");
        c.edit("temperature", "68");
        c.edit("ph", "7.25");
        c.set_units(UnitSystem::Si);
        assert_eq!(c.text("flow"), "3785");
        assert_eq!(c.text("temperature"), "20.00");
        assert_eq!(c.text("ph"), "7.25");
        c.set_lang(Lang::Es);
        assert_eq!(c.text("ph"), "7,25");
        assert_eq!(c.text("temperature"), "20,00");
    }

    /// A reading typed with its own precision changes unit whole: 1.2 ± 0.1 MGD is
    /// 4542 ± 378.5 m³/d (× 3785.411784 m³/d per MGD, by hand), never left as "1.2" to be read
    /// as 1.2 m³/d; 68 ± 1.8 °F is 20 ± 1 °C (a difference converts by the factor alone). A
    /// language switch changes both marks.
    #[test]
    fn switching_units_converts_a_reading_with_its_own_precision() {
        let mut c = CalcController::new(Rc::new(Unconnected), Lang::En, UnitSystem::Us);
        c.edit("flow", "1.2 ± 0.1");
        c.edit("temperature", "68 ± 1.8");
        c.edit("alkalinity", "40 ± x");
        c.set_units(UnitSystem::Si);
        assert_eq!(c.text("flow"), "4542 ± 378.5");
        assert_eq!(c.text("temperature"), "20.00 ± 1.000");
        // The same unit in both systems: untouched.
        assert_eq!(c.text("alkalinity"), "40 ± x");
        c.set_lang(Lang::Es);
        assert_eq!(c.text("flow"), "4542 ± 378,5");
        assert_eq!(c.text("temperature"), "20,00 ± 1,000");
        // Back: 378.5 m³/d (the text shown, four figures) is 0.09999 MGD.
        c.set_units(UnitSystem::Us);
        assert_eq!(c.text("flow"), "1,200 ± 0,09999");
    }

    #[test]
    fn the_chosen_product_goes_with_the_request() {
        let rec = Rc::new(Recorder::default());
        let mut c = CalcController::new(rec.clone(), Lang::En, UnitSystem::Si);
        c.set_kind(CalcKind::of("feed"));
        fill(
            &mut c,
            &[
                ("flow", "100"),
                ("dose", "2"),
                ("strength", "12.5"),
                ("specific-gravity", "1.2"),
                ("pump-capacity", "10"),
            ],
        );
        let view = c.view();
        assert_eq!(view.products.len(), 3);
        assert_eq!(view.product_index, 0);
        c.set_product(1);
        assert_eq!(c.view().product_index, 1);
        // The second product's own numbers are its own: until they are typed, no request.
        let requests = rec.seen.borrow().len();
        c.view();
        assert_eq!(
            rec.seen.borrow().len(),
            requests,
            "computed with another product's strength"
        );
        fill(
            &mut c,
            &[
                ("strength", "10"),
                ("specific-gravity", "1.3"),
                ("pump-capacity", "5"),
            ],
        );
        c.view();
        let seen = rec.seen.borrow();
        assert_eq!(seen[0].product.as_deref(), Some("first"));
        assert_eq!(seen.last().unwrap().product.as_deref(), Some("second"));
        drop(seen);
        c.set_kind(CalcKind::of("softening"));
        assert!(c.view().products.is_empty());
    }

    #[test]
    fn inputs_survive_a_restart_in_other_settings() {
        let mut c = CalcController::new(Rc::new(Unconnected), Lang::Es, UnitSystem::Us);
        c.set_kind(CalcKind::of("chlorination"));
        c.set_mode(CalcMode::of("dechlorination"));
        c.edit("flow", "1,5");
        c.edit("residual-in", "0,80");
        c.edit("ph", "");
        let saved: CalcInputs =
            serde_json::from_str(&serde_json::to_string(&c.inputs()).unwrap()).unwrap();
        assert!(
            !saved.texts.keys().any(|k| k == "ph"),
            "empty fields are not kept"
        );
        let mut back = CalcController::new(Rc::new(Unconnected), Lang::En, UnitSystem::Si);
        back.restore(&saved);
        assert_eq!(
            (back.kind(), back.mode()),
            (CalcKind::of("chlorination"), CalcMode::of("dechlorination"))
        );
        assert_eq!(
            back.text("residual-in"),
            "0.80",
            "decimal mark of the new language"
        );
        assert_eq!(back.text("flow"), "5678", "1.5 MGD in m³/d");
        let mut odd = saved.clone();
        odd.texts.insert("no-such-field".into(), "1".into());
        odd.kind = "retired-calculator".into();
        let mut c = CalcController::new(Rc::new(Unconnected), Lang::En, UnitSystem::Si);
        c.restore(&odd);
        assert_eq!(c.text("no-such-field"), "");
        assert_eq!(c.kind(), CalcKind::of("ph-adjustment"));
    }

    #[test]
    fn an_optional_field_may_stay_empty_but_not_be_wrong() {
        let rec = Rc::new(Recorder::default());
        let mut c = CalcController::new(rec.clone(), Lang::En, UnitSystem::Si);
        c.set_kind(CalcKind::of("chlorination"));
        fill(
            &mut c,
            &[
                ("flow", "1000"),
                ("chlorine-demand", "1.2"),
                ("target-residual", "1.0"),
                ("strength", "12.5"),
                ("specific-gravity", "1.2"),
                ("pump-capacity", "10"),
            ],
        );
        assert!(matches!(c.view().status, Status::Ready(_)));
        assert_eq!(rec.seen.borrow().last().unwrap().get("ammonia-n"), None);
        c.edit("ammonia-n", "0.35");
        assert!(matches!(c.view().status, Status::Ready(_)));
        assert_eq!(
            rec.seen.borrow().last().unwrap().get("ammonia-n"),
            Some(0.35)
        );
        c.edit("ammonia-n", "0.3x");
        assert_eq!(c.view().status, Status::Invalid);
    }

    #[test]
    fn chlorination_modes_change_the_inputs() {
        let mut c = CalcController::new(Rc::new(Unconnected), Lang::En, UnitSystem::Si);
        c.set_kind(CalcKind::of("chlorination"));
        assert_eq!(c.mode(), CalcMode::of("free-chlorine"));
        c.set_mode(CalcMode::of("dechlorination"));
        let names: Vec<_> = c.view().fields.iter().map(|f| f.name).collect();
        assert!(names.contains(&"residual-in"));
        assert!(!names.contains(&"chlorine-demand"));
        c.set_kind(CalcKind::of("softening"));
        assert_eq!(c.mode(), CalcMode::of("softening"));
    }

    #[test]
    fn a_gas_asks_for_purity_and_feeder_scale_and_never_uses_a_liquids_numbers() {
        let rec = Rc::new(Recorder::default());
        let mut c = CalcController::new(rec.clone(), Lang::En, UnitSystem::Us);
        c.set_kind(CalcKind::of("feed"));
        fill(
            &mut c,
            &[
                ("flow", "1"),
                ("dose", "2.0"),
                ("strength", "12.5"),
                ("specific-gravity", "1.2"),
                ("pump-capacity", "10"),
            ],
        );
        assert!(matches!(c.view().status, Status::Ready(_)));
        c.set_product(2);
        assert_eq!(c.form(), FeedForm::Gas);
        let names: Vec<_> = c.view().fields.iter().map(|f| f.name).collect();
        assert_eq!(names, ["flow", "dose", "purity", "gas-feeder-capacity"]);
        // The liquid's numbers are still typed, but the gas waits for its own.
        assert_eq!(c.view().status, Status::Incomplete);
        fill(
            &mut c,
            &[("purity", "99.5"), ("gas-feeder-capacity", "100")],
        );
        let Status::Ready(r) = c.view().status else {
            panic!("expected a result")
        };
        let seen = rec.seen.borrow().last().cloned().unwrap();
        for liquid in ["strength", "specific-gravity", "pump-capacity"] {
            assert_eq!(seen.get(liquid), None, "{liquid} reached a gas calculation");
        }
        // The feeder scale is typed in lb/d and reaches the engine in kg/d.
        assert!((seen.get("gas-feeder-capacity").unwrap() - 45.359237).abs() < 1e-9);
        assert_eq!(seen.get("purity"), Some(99.5));
        // No volume for a gas: the third number is the mass rate to set, said in words.
        assert_eq!(r.product_caption, "result-feeder-rate");
        assert_eq!(r.pump_caption, "result-feeder-setting");
        assert_eq!(r.no_volume_note, Some("result-no-volume-gas"));
        assert_eq!(
            (r.product.as_str(), r.product_unit),
            ("100", Unit::LbPerDay)
        );
        // Back to a liquid: its own inputs and captions again.
        c.set_product(0);
        let Status::Ready(r) = c.view().status else {
            panic!("expected a result")
        };
        assert_eq!(r.product_caption, "result-product");
        assert_eq!(r.no_volume_note, None);
        assert_eq!(rec.seen.borrow().last().unwrap().get("purity"), None);
    }

    #[test]
    fn softening_asks_for_the_lime_feeder_as_an_option() {
        let specs = fields(
            CalcKind::of("softening"),
            CalcMode::of("softening"),
            FeedForm::Dry,
        );
        let feeder = specs
            .iter()
            .find(|s| s.name == "lime-feeder-capacity")
            .expect("lime feeder field");
        assert!(feeder.optional);
        assert_eq!(feeder.quantity, Quantity::MassPerDay);
        assert!(!specs.iter().any(|s| s.name == "specific-gravity"));
    }

    /// A jar test's card offers its follow-up, and opening it types the dose into the plant
    /// calculator's field: 10 g/L × 3 mL ÷ 1000 mL = 30 mg/L (g/L = mg/mL), in Spanish with its
    /// decimal comma.
    #[test]
    fn a_follow_up_opens_its_calculator_with_the_value_typed() {
        let mut c = CalcController::new(
            crate::app::seams::connected_engine(),
            Lang::Es,
            UnitSystem::Si,
        );
        c.set_kind(CalcKind::of("jar-test"));
        fill(
            &mut c,
            &[
                ("stock-concentration", "10"),
                ("ml-dosed", "3"),
                ("jar-volume-ml", "1000"),
                ("strength", "8,3"),
                ("specific-gravity", "1,335"),
            ],
        );
        assert!(
            matches!(c.view().status, Status::Ready(_)),
            "{:?}",
            c.view().status
        );
        let follow = c.follow_ups();
        assert_eq!(follow.len(), 1);
        assert!(c.follow_up(0));
        assert_eq!(c.kind(), follow[0].0);
        assert_eq!(c.mode().calculator, "coagulation");
        assert_eq!(numbers::parse(c.text("jar-dose"), Lang::Es).unwrap(), 30.0);
        assert!(!c.follow_up(5));
    }

    /// A text input is the calculator's own: typed in the jar test, it reaches the engine
    /// trimmed, is not offered to another calculator, and an empty one is absent; a name the
    /// calculator does not take is ignored.
    #[test]
    fn a_text_input_belongs_to_its_calculator_and_reaches_the_request() {
        let mut c = CalcController::new(
            crate::app::seams::connected_engine(),
            Lang::En,
            UnitSystem::Si,
        );
        c.set_kind(CalcKind::of("jar-test"));
        let names: Vec<&str> = c.text_inputs().iter().map(|t| t.name).collect();
        assert_eq!(names, ["stock-compound"]);
        fill(
            &mut c,
            &[
                ("stock-concentration", "10"),
                ("ml-dosed", "3"),
                ("jar-volume-ml", "1000"),
                ("strength", "40"),
                ("specific-gravity", "1.4"),
            ],
        );
        let texts = |c: &CalcController| c.current_request().map(|r| r.texts);
        assert_eq!(texts(&c), Some(BTreeMap::new()));
        c.edit_text_input("stock-compound", " FeCl3·6H2O ");
        c.edit_text_input("no-such-input", "x");
        assert_eq!(
            texts(&c),
            Some(BTreeMap::from([(
                "stock-compound",
                "FeCl3·6H2O".to_string()
            )]))
        );
        assert_eq!(c.text_input("no-such-input"), "");
        c.set_kind(CalcKind::of("coagulation"));
        assert!(c.text_inputs().is_empty());
        assert_eq!(c.text_input("stock-compound"), "");
        c.set_kind(CalcKind::of("jar-test"));
        assert_eq!(c.text_input("stock-compound"), " FeCl3·6H2O ");
        // Kept across a restart, for its calculator only; one the table does not declare is
        // dropped.
        let mut saved = c.inputs();
        saved
            .text_inputs
            .insert("stock-compound@coagulation".into(), "X".into());
        let mut back = CalcController::new(
            crate::app::seams::connected_engine(),
            Lang::En,
            UnitSystem::Si,
        );
        back.restore(&saved);
        assert_eq!(back.inputs().text_inputs, c.inputs().text_inputs);
        back.set_kind(CalcKind::of("jar-test"));
        assert_eq!(back.text_input("stock-compound"), " FeCl3·6H2O ");
        c.edit_text_input("stock-compound", "  ");
        assert_eq!(texts(&c), Some(BTreeMap::new()));
        assert!(c.inputs().text_inputs.is_empty());
    }

    fn at_10_42() -> DateTime<Utc> {
        DateTime::parse_from_rfc3339("2026-12-03T10:42:00Z")
            .unwrap()
            .with_timezone(&Utc)
    }

    /// 13 hours later: beyond a shift of [`SHIFT_HOURS`].
    fn next_shift() -> DateTime<Utc> {
        DateTime::parse_from_rfc3339("2026-12-03T23:42:00Z")
            .unwrap()
            .with_timezone(&Utc)
    }

    fn field(c: &CalcController, name: &str) -> FieldView {
        c.view()
            .fields
            .into_iter()
            .find(|f| f.name == name)
            .unwrap_or_else(|| panic!("{name} is no field of {:?}", c.mode()))
    }

    /// A controller at the Clearwell tap at 10:42, with no engine.
    fn at_the_clearwell() -> CalcController {
        let mut c = CalcController::new(Rc::new(Unconnected), Lang::En, UnitSystem::Us);
        c.set_clock(at_10_42);
        c.set_tap(Some("Clearwell"));
        c
    }

    /// Alkalinity 200 typed in Softening once changed pH adjustment's lime dose: each calculator
    /// keeps its own inputs; a reading of the water typed in one is offered to another that has
    /// none of its own, at the same tap and shift, saying where and when it was taken, and can
    /// be cleared; a target or choice never crosses.
    #[test]
    fn each_calculator_keeps_its_own_inputs_and_readings_carry_over_visibly() {
        let mut c = at_the_clearwell();
        c.set_kind(CalcKind::of("ph-adjustment"));
        c.type_in("alkalinity", "40");
        c.set_kind(CalcKind::of("softening"));
        c.type_in("alkalinity", "200");
        c.type_in("ph", "7.8");
        c.set_kind(CalcKind::of("ph-adjustment"));
        let own = field(&c, "alkalinity");
        assert_eq!((own.text.as_str(), own.carried), ("40", None), "its own");
        let softening = CalcMode::of("softening");
        c.set_kind(CalcKind::of("coagulation"));
        let carried = field(&c, "alkalinity");
        assert_eq!(carried.text, "200");
        assert_eq!(
            carried.carried,
            Some(Carried {
                from: softening,
                at: at_10_42()
            })
        );
        assert_eq!(field(&c, "ph").text, "7.8");
        // Cleared here, it stays cleared here; Softening keeps its reading.
        c.clear("alkalinity");
        assert_eq!(
            (
                field(&c, "alkalinity").text.as_str(),
                field(&c, "alkalinity").carried
            ),
            ("", None)
        );
        // Not at another tap, and not on the next shift.
        c.set_tap(Some("Raw water"));
        assert_eq!(field(&c, "ph").text, "");
        c.set_tap(Some("Clearwell"));
        assert_eq!(field(&c, "ph").text, "7.8");
        c.set_clock(next_shift);
        assert_eq!(field(&c, "ph").text, "");
        c.set_clock(at_10_42);
        c.set_kind(CalcKind::of("softening"));
        assert_eq!(field(&c, "alkalinity").text, "200");
        // A target is the calculator's own: the feed's dose is not the cross-check's.
        c.set_kind(CalcKind::of("feed"));
        c.type_in("dose", "2.5");
        c.set_kind(CalcKind::of("pump-check"));
        assert_eq!(field(&c, "dose").text, "");
        // The plot of a calculator draws its own inputs, carried readings included.
        let probe = c.request_for(CalcKind::of("ph-adjustment"), CalcMode::of("ph-adjustment"));
        assert_eq!(probe, None, "pH adjustment is not complete");
        // Kept across a restart with where and when they were taken.
        let saved: CalcInputs =
            serde_json::from_str(&serde_json::to_string(&c.inputs()).unwrap()).unwrap();
        let mut back = at_the_clearwell();
        back.restore(&saved);
        back.set_kind(CalcKind::of("ph-adjustment"));
        assert_eq!(field(&back, "alkalinity").text, "40");
        back.set_kind(CalcKind::of("coagulation"));
        assert_eq!(field(&back, "alkalinity").text, "", "cleared here");
        assert_eq!(field(&back, "ph").carried.map(|r| r.from), Some(softening));
    }

    /// pH adjustment's pH is the water's `ph`, so a pH read at the tap for another calculator
    /// carries over to it; a pH it saved under its former name (`ph-raw`, before 2026-12-04)
    /// comes back as its own.
    #[test]
    fn a_ph_read_for_another_calculator_carries_to_ph_adjustment() {
        let mut c = at_the_clearwell();
        c.set_kind(CalcKind::of("softening"));
        c.type_in("ph", "7.8");
        c.set_kind(CalcKind::of("ph-adjustment"));
        let ph = field(&c, "ph");
        assert_eq!(ph.text, "7.8");
        assert_eq!(ph.carried.map(|r| r.from), Some(CalcMode::of("softening")));
        c.type_in("ph", "6.9");
        c.type_in("target-ph", "7.6");
        let saved = serde_json::to_string(&c.inputs()).unwrap();
        assert!(saved.contains("ph@ph-adjustment"), "{saved}");
        let older = saved
            .replace("\"ph@ph-adjustment\"", "\"ph-raw@ph-adjustment\"")
            .replace("\"target-ph@ph-adjustment\"", "\"ph-target@ph-adjustment\"");
        assert_ne!(older, saved);
        let mut back = at_the_clearwell();
        back.restore(&serde_json::from_str(&older).unwrap());
        back.set_kind(CalcKind::of("ph-adjustment"));
        assert_eq!(field(&back, "ph").text, "6.9");
        assert_eq!(field(&back, "target-ph").text, "7.6");
    }

    /// The card names what it waits for: every empty field the results need while incomplete;
    /// once the dose is shown, the pump scale that only the setting needs.
    #[test]
    fn the_card_names_the_fields_still_missing() {
        let engine = Rc::new(super::super::engine_adapter::DosingEngine::new().unwrap());
        let mut c = CalcController::new(engine, Lang::En, UnitSystem::Si);
        c.set_kind(CalcKind::of("feed"));
        let hypochlorite = c
            .view()
            .products
            .iter()
            .position(|p| p.id == "sodium-hypochlorite")
            .unwrap();
        c.set_product(hypochlorite);
        c.edit("flow", "10000");
        let names = |c: &CalcController| -> Vec<&'static str> {
            c.view().missing().iter().map(|f| f.name).collect()
        };
        assert_eq!(c.view().status, Status::Incomplete);
        assert_eq!(names(&c), ["dose", "strength", "specific-gravity"]);
        fill(
            &mut c,
            &[
                ("dose", "2"),
                ("strength", "12.5"),
                ("specific-gravity", "1.16"),
            ],
        );
        let view = c.view();
        let Status::Ready(r) = &view.status else {
            panic!("the dose needs no pump capacity: {:?}", view.status)
        };
        // 20 kg/d at 125 g/L available chlorine = 160 L/d = 6.67 L/h (by hand).
        assert_eq!((r.dose.as_str(), r.product.as_str()), ("2.00", "6.67"));
        assert_eq!(r.pump, "—", "no setting without the pump's full scale");
        assert_eq!(names(&c), ["pump-capacity"]);
        c.edit("pump-capacity", "15");
        assert!(names(&c).is_empty());
    }

    /// A value the engine refuses is marked at its field: "-1" in the residual target.
    #[test]
    fn a_refused_value_is_marked_at_its_field() {
        let engine = Rc::new(super::super::engine_adapter::DosingEngine::new().unwrap());
        let mut c = CalcController::new(engine, Lang::En, UnitSystem::Us);
        c.set_kind(CalcKind::of("chlorination"));
        fill(
            &mut c,
            &[
                ("flow", "1"),
                ("chlorine-demand", "1.2"),
                ("target-residual", "-1"),
                ("strength", "12.5"),
                ("specific-gravity", "1.16"),
            ],
        );
        let view = c.view();
        assert!(
            matches!(view.status, Status::Refused(_)),
            "{:?}",
            view.status
        );
        let marked: Vec<_> = view
            .fields
            .iter()
            .filter(|f| f.refusal.is_some())
            .map(|f| f.name)
            .collect();
        assert_eq!(marked, ["target-residual"]);
        // Letters are no number: said at the field, not dropped.
        c.edit("target-residual", "abc");
        assert_eq!(
            field(&c, "target-residual").error,
            Some(NumberError::NotANumber.key())
        );
    }
}
