//! The app's side of the site profiles: where they are stored, how the old settings' sites
//! become profiles, the Settings editor's edits with validation in words, the calculator
//! prefill, and the cautions a result raises against the plant's limits.
//!
//! Design choice: the profile type is the engine's [`SiteProfile`]; this module only stores,
//! edits and reads it. Every edit is made on a copy that must pass
//! [`SiteProfile::validate`] (after the app's own checks, which can say what is wrong in the
//! operator's words) before it replaces the stored one, so a profile on disk is always one
//! the engine accepts. Profiles are preferences, not dose records: they live in `sites.json`
//! beside `settings.json`, written whole through a temporary file and a rename.

use super::calc::{self, key};
use super::numbers::{self, Lang};
use crate::engine;
use crate::engine::dosing::catalog::{Catalog, Form, StrengthBasis};
use crate::engine::dosing::feed::PumpKind;
use crate::engine::dosing::site::{
    DeliveredProduct, Limit, Pump, SamplingTap, SiteProfile, regulatory_defaults,
};
use crate::engine::dosing::units::VolumeRateUnit;
use crate::engine::quantity::{Quantity, UnitSystem};
use serde::{Deserialize, Serialize};
use std::collections::HashMap;
use std::path::Path;

pub const SITES_FILE: &str = "sites.json";

/// A site as the first versions of the app saved it inside `settings.json`.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct LegacySite {
    pub name: String,
    #[serde(default)]
    pub points: Vec<String>,
}

#[derive(Serialize, Deserialize)]
struct SitesFile {
    version: u32,
    sites: Vec<SiteProfile>,
}

/// A profile with only a name and taps, from an old `{name, points}` site.
pub fn migrate(old: &LegacySite, units: UnitSystem) -> SiteProfile {
    // A profile needs a name to validate; an old site saved without one still opens.
    let name = match old.name.trim() {
        "" => "Site",
        name => name,
    };
    let mut site = empty_site(name, units);
    for name in &old.points {
        add_tap(&mut site, name);
    }
    site
}

pub fn empty_site(name: &str, units: UnitSystem) -> SiteProfile {
    SiteProfile {
        name: name.to_string(),
        note: None,
        units: match units {
            UnitSystem::Us => engine::dosing::units::UnitSystem::Us,
            UnitSystem::Si => engine::dosing::units::UnitSystem::Si,
        },
        typical_flow: None,
        flow_meters: Vec::new(),
        sampling_taps: Vec::new(),
        contact_basins: Vec::new(),
        products: Vec::new(),
        pumps: Vec::new(),
        pump_usable_range_percent: Default::default(),
        day_tanks: Vec::new(),
        limits: Vec::new(),
        path: Vec::new(),
        instrument_precision: Default::default(),
        fed_dose_tolerance_percent: None,
    }
}

/// The embedded demo plant; a bare named site if the built-in data ever failed to load.
pub fn demo(catalog: Option<&Catalog>) -> SiteProfile {
    catalog
        .and_then(|c| SiteProfile::demo(c).ok())
        .unwrap_or_else(|| empty_site("Demo site", UnitSystem::Us))
}

/// Loads the stored profiles. Order: `sites.json`; else the old sites of `settings.json`,
/// migrated; else the demo. An unreadable `sites.json` is kept aside (never deleted) before
/// the app falls back, so nothing the operator entered is lost.
pub fn load(
    dir: Option<&Path>,
    legacy: &[LegacySite],
    units: UnitSystem,
    catalog: Option<&Catalog>,
) -> Vec<SiteProfile> {
    if let Some(dir) = dir
        && let Ok(text) = std::fs::read_to_string(dir.join(SITES_FILE))
    {
        match serde_json::from_str::<SitesFile>(&text) {
            Ok(file) if !file.sites.is_empty() => return file.sites,
            Ok(_) => {}
            Err(_) => {
                let _ = std::fs::rename(
                    dir.join(SITES_FILE),
                    dir.join(format!("{SITES_FILE}.unreadable")),
                );
            }
        }
    }
    if !legacy.is_empty() {
        return legacy.iter().map(|old| migrate(old, units)).collect();
    }
    vec![demo(catalog)]
}

/// Writes every profile (a preference write: temporary file, then rename over the old one).
pub fn save(dir: &Path, sites: &[SiteProfile]) -> std::io::Result<()> {
    std::fs::create_dir_all(dir)?;
    let text = serde_json::to_string_pretty(&SitesFile {
        version: 1,
        sites: sites.to_vec(),
    })
    .map_err(std::io::Error::other)?;
    super::files::write_whole(&dir.join(SITES_FILE), text.as_bytes())
}

/// An id not yet used in `taken`, from a stem (`tap-1`, `tap-2`, ...).
fn fresh_id<'a>(stem: &str, taken: impl Iterator<Item = &'a str> + Clone) -> String {
    (1..)
        .map(|n| format!("{stem}-{n}"))
        .find(|id| !taken.clone().any(|t| t == id))
        .expect("an unused id exists")
}

/// Marks tap `index` as sampling the finished water (held to the plant's limits) or raw or
/// process water (read to run the plant, not held to them); `false` for no such tap.
pub fn set_tap_finished(site: &mut SiteProfile, index: usize, finished: bool) -> bool {
    match site.sampling_taps.get_mut(index) {
        Some(tap) => {
            tap.finished_water = finished;
            true
        }
        None => false,
    }
}

/// Adds a tap; `false` when the name is blank or already there.
pub fn add_tap(site: &mut SiteProfile, name: &str) -> bool {
    let name = name.trim();
    if name.is_empty() || site.sampling_taps.iter().any(|t| t.name == name) {
        return false;
    }
    let id = fresh_id("tap", site.sampling_taps.iter().map(|t| t.id.as_str()));
    site.sampling_taps.push(SamplingTap {
        id,
        name: name.to_string(),
        parameters: Vec::new(),
        // Held to the plant's limits until the profile says it samples raw or process water:
        // an exceedance over-counted is checked, one left out is not.
        finished_water: true,
    });
    true
}

/// What is wrong with an edit, for the Settings screen.
#[derive(Clone, Debug, PartialEq)]
pub enum SiteProblem {
    /// The app's own check: a translation key and its arguments.
    Note(super::session::Note),
    /// The engine's validation refused the profile.
    Engine(engine::Error),
}

fn note(k: &str) -> SiteProblem {
    SiteProblem::Note(super::session::Note::new(k))
}

/// Parses a number the operator typed in `lang`; empty is `None`.
fn number(text: &str, lang: Lang, field_key: &'static str) -> Result<Option<f64>, SiteProblem> {
    match numbers::parse(text, lang) {
        Ok(v) => Ok(Some(v)),
        Err(numbers::NumberError::Empty) => Ok(None),
        Err(e) => Err(SiteProblem::Note(
            super::session::Note::new(key("site-number-problem"))
                .arg("field", field_key)
                .arg("problem", e.key()),
        )),
    }
}

fn required(text: &str, lang: Lang, field_key: &'static str) -> Result<f64, SiteProblem> {
    number(text, lang, field_key)?.ok_or_else(|| {
        SiteProblem::Note(
            super::session::Note::new(key("site-number-missing")).arg("field", field_key),
        )
    })
}

/// Replaces `site` with `edited` only if the engine accepts the result.
pub fn commit(
    site: &mut SiteProfile,
    edited: SiteProfile,
    catalog: Option<&Catalog>,
) -> Result<(), SiteProblem> {
    if let Some(catalog) = catalog {
        edited.validate(catalog).map_err(SiteProblem::Engine)?;
    }
    *site = edited;
    Ok(())
}

/// The strength bases the Settings editor offers, in this order.
pub const BASES: [StrengthBasis; 5] = [
    StrengthBasis::Weight,
    StrengthBasis::Trade,
    StrengthBasis::AvailableChlorine,
    StrengthBasis::AsAl2o3,
    StrengthBasis::Purity,
];

/// Translation key of a strength basis.
pub fn basis_key(b: StrengthBasis) -> &'static str {
    match b {
        StrengthBasis::Weight => key("site-basis-weight"),
        StrengthBasis::Trade => key("site-basis-trade"),
        StrengthBasis::AvailableChlorine => key("site-basis-available-chlorine"),
        StrengthBasis::AsAl2o3 => key("site-basis-as-al2o3"),
        StrengthBasis::Purity => key("site-basis-purity"),
    }
}

/// The metering-pump capacity units the editor offers.
pub const PUMP_UNITS: [VolumeRateUnit; 3] = [
    VolumeRateUnit::Gph,
    VolumeRateUnit::Lph,
    VolumeRateUnit::MlPerMin,
];

/// A product as delivered, as typed in the editor.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct ProductForm {
    /// Catalog id.
    pub product: String,
    pub strength: String,
    pub basis: Option<StrengthBasis>,
    pub sg: String,
    pub certificate: String,
}

/// Adds the delivered product, or replaces the one of the same catalog product.
pub fn save_product(
    site: &mut SiteProfile,
    form: &ProductForm,
    lang: Lang,
    catalog: Option<&Catalog>,
) -> Result<(), SiteProblem> {
    if form.product.is_empty() {
        return Err(note(key("site-pick-product")));
    }
    let strength = required(&form.strength, lang, key("site-strength"))?;
    let sg = number(&form.sg, lang, key("site-sg"))?;
    let Some(basis) = form.basis else {
        return Err(note(key("site-pick-basis")));
    };
    let mut edited = site.clone();
    let id = edited
        .delivered_of(&form.product)
        .map(|d| d.id.clone())
        .unwrap_or_else(|| fresh_id(&form.product, site.products.iter().map(|p| p.id.as_str())));
    let certificate = form.certificate.trim();
    let max_use = edited
        .delivered_of(&form.product)
        .and_then(|d| d.max_use_level_mg_l);
    let entry = DeliveredProduct {
        id: id.clone(),
        product: form.product.clone(),
        strength,
        strength_basis: basis,
        sg,
        certificate: (!certificate.is_empty()).then(|| certificate.to_string()),
        max_use_level_mg_l: max_use,
    };
    match edited.products.iter_mut().find(|p| p.id == id) {
        Some(p) => *p = entry,
        None => edited.products.push(entry),
    }
    commit(site, edited, catalog)
}

/// Removes a delivered product; refused while a pump still feeds it.
pub fn remove_product(site: &mut SiteProfile, index: usize) -> Result<(), SiteProblem> {
    let Some(p) = site.products.get(index) else {
        return Ok(());
    };
    if let Some(pump) = site.pump_for(&p.id) {
        return Err(SiteProblem::Note(
            super::session::Note::new(key("site-product-in-use")).arg("pump", &pump.name),
        ));
    }
    site.products.remove(index);
    Ok(())
}

/// A metering pump as typed in the editor.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct PumpForm {
    pub name: String,
    /// Index into the site's delivered products.
    pub product: Option<usize>,
    pub capacity: String,
    pub unit: Option<VolumeRateUnit>,
}

/// Adds a metering pump, or replaces the one with the same name.
pub fn save_pump(
    site: &mut SiteProfile,
    form: &PumpForm,
    lang: Lang,
    catalog: Option<&Catalog>,
) -> Result<(), SiteProblem> {
    let name = form.name.trim();
    if name.is_empty() {
        return Err(note(key("site-need-name")));
    }
    let Some(delivered) = form.product.and_then(|i| site.products.get(i)) else {
        return Err(note(key("site-pick-product")));
    };
    if let Some(c) = catalog
        && c.product(&delivered.product).map(|p| p.form).ok() != Some(Form::Solution)
    {
        return Err(note(key("site-pump-needs-liquid")));
    }
    if site
        .pumps
        .iter()
        .any(|p| p.name == name && !matches!(p.kind, PumpKind::Metering { .. }))
    {
        // Saving would turn a hose pump or feeder into a metering pump and lose its data.
        return Err(note(key("site-pump-not-metering")));
    }
    let capacity = required(&form.capacity, lang, key("site-capacity"))?;
    let unit = form.unit.unwrap_or(VolumeRateUnit::Gph);
    let mut edited = site.clone();
    let id = edited
        .pumps
        .iter()
        .find(|p| p.name == name)
        .map(|p| p.id.clone())
        .unwrap_or_else(|| fresh_id("pump", site.pumps.iter().map(|p| p.id.as_str())));
    let entry = Pump {
        id: id.clone(),
        name: name.to_string(),
        product: delivered.id.clone(),
        kind: PumpKind::Metering { capacity, unit },
    };
    match edited.pumps.iter_mut().find(|p| p.id == id) {
        Some(p) => *p = entry,
        None => edited.pumps.push(entry),
    }
    commit(site, edited, catalog)
}

/// A permit limit as typed in the editor.
#[derive(Clone, Debug, PartialEq)]
pub struct LimitForm {
    pub parameter: String,
    pub min: String,
    pub max: String,
    pub unit: String,
    pub source: String,
    /// A rule or the permit enforces it (beyond it a danger), or it is a secondary standard,
    /// a recommendation or the plant's own target (a warning).
    pub enforceable: bool,
}

impl Default for LimitForm {
    /// An empty form; a limit entered here is the permit's until the operator says otherwise.
    fn default() -> LimitForm {
        LimitForm {
            parameter: String::new(),
            min: String::new(),
            max: String::new(),
            unit: String::new(),
            source: String::new(),
            enforceable: true,
        }
    }
}

/// Adds the plant's limit for a parameter, or replaces it.
pub fn save_limit(
    site: &mut SiteProfile,
    form: &LimitForm,
    lang: Lang,
    catalog: Option<&Catalog>,
) -> Result<(), SiteProblem> {
    let parameter = form.parameter.trim().to_string();
    if parameter.is_empty() {
        return Err(note(key("site-need-parameter")));
    }
    // Only a parameter some calculation checks: a limit nothing reads would look like a
    // safeguard and be none.
    if !is_checked(&parameter) {
        return Err(note(key("site-limit-not-checked")));
    }
    let min = number(&form.min, lang, key("site-limit-min"))?;
    let max = number(&form.max, lang, key("site-limit-max"))?;
    if min.is_none() && max.is_none() {
        return Err(note(key("site-limit-empty")));
    }
    if let (Some(lo), Some(hi)) = (min, max)
        && lo > hi
    {
        return Err(note(key("site-limit-reversed")));
    }
    let source = form.source.trim();
    if source.is_empty() {
        return Err(note(key("site-need-source")));
    }
    let entry = Limit {
        parameter: parameter.clone(),
        min,
        max,
        unit: form.unit.trim().to_string(),
        source: source.to_string(),
        enforceable: form.enforceable,
    };
    let mut edited = site.clone();
    match edited.limits.iter_mut().find(|l| l.parameter == parameter) {
        Some(l) => *l = entry,
        None => edited.limits.push(entry),
    }
    commit(site, edited, catalog)
}

/// Whether a calculation checks a limit on `parameter` (the engine's one list).
pub fn is_checked(parameter: &str) -> bool {
    crate::engine::calculators::checked_limit_parameters().contains(&parameter)
}

/// Every limit that applies: the plant's entries, then the regulatory defaults it did not
/// override (each keeps its source).
pub fn effective_limits(site: &SiteProfile) -> Vec<Limit> {
    let mut out = site.limits.clone();
    for d in regulatory_defaults() {
        if !out.iter().any(|l| l.parameter == d.parameter) {
            out.push(d);
        }
    }
    out
}

/// The maximum use level of each delivered product that has one, by catalog product id.
pub fn max_use_levels(site: &SiteProfile) -> HashMap<String, f64> {
    site.products
        .iter()
        .filter_map(|d| Some((d.product.clone(), d.max_use_level_mg_l?)))
        .collect()
}

/// What the site can tell a calculator: values in the field's display unit, by field name.
/// Strength is offered only on the basis the calculator reads it on (the catalog product's
/// first basis), so a number on another basis is never shown as if it were comparable.
pub fn site_values(
    site: &SiteProfile,
    catalog: Option<&Catalog>,
    product: Option<&str>,
    system: UnitSystem,
) -> HashMap<&'static str, f64> {
    let mut out = HashMap::new();
    if let Some(f) = site.typical_flow
        && let Ok(flow) = f.m3_per_day()
    {
        out.insert(
            "flow",
            as_stated(f.value, Quantity::Flow.unit(system).from_si(flow)),
        );
    }
    let Some(delivered) = product.and_then(|p| site.delivered_of(p)) else {
        return out;
    };
    let usual_basis = catalog
        .and_then(|c| c.product(&delivered.product).ok())
        .and_then(|p| p.strengths.first().map(|s| s.basis));
    if usual_basis == Some(delivered.strength_basis) {
        // A purity is asked for under its own names (a gas or dry feed, the lime of softening),
        // so it never lands in a liquid's strength field.
        if delivered.strength_basis == StrengthBasis::Purity {
            out.insert("purity", delivered.strength);
            out.insert("lime-purity", delivered.strength);
        } else {
            out.insert("strength", delivered.strength);
        }
    }
    if let Some(sg) = delivered.sg {
        out.insert("specific-gravity", sg);
    }
    // The pump's full scale converted by the engine (`PumpKind::full_scale_si`), shown in the
    // app's units and kept as the site states it where the units agree.
    let kind = site.pump_for(&delivered.id).map(|p| p.kind);
    let full_scale = kind.and_then(|k| k.full_scale_si());
    let per_day =
        |capacity: f64, kg: f64| as_stated(capacity, Quantity::MassPerDay.unit(system).from_si(kg));
    match (kind, full_scale) {
        (Some(PumpKind::Metering { capacity, .. }), Some(l_per_hour)) => {
            out.insert(
                "pump-capacity",
                as_stated(
                    capacity,
                    Quantity::VolumePerHour.unit(system).from_si(l_per_hour),
                ),
            );
        }
        (Some(PumpKind::GasFeeder { capacity, .. }), Some(kg)) => {
            out.insert("gas-feeder-capacity", per_day(capacity, kg));
        }
        (Some(PumpKind::DryFeeder { capacity, .. }), Some(kg)) => {
            let scale = per_day(capacity, kg);
            out.insert("dry-feeder-capacity", scale);
            out.insert("lime-feeder-capacity", scale);
        }
        // A hose pump's capacity is not a volume per hour the field takes.
        _ => {}
    }
    out
}

/// A profile number as a field shows it: as stored when the field's unit is the stored one
/// (the same number back, to within float noise); converted into another unit, three
/// significant figures (30 L/h is 7.93 gal/h, not 7.925…): a prefill says what the plant
/// wrote down, and a conversion adds no digits it did not have.
fn as_stated(stored: f64, shown: f64) -> f64 {
    if (shown - stored).abs() <= 1e-9 * stored.abs() {
        stored
    } else {
        crate::engine::sigfig::round_sig(shown, 3)
    }
}

/// Remembers what the app filled in, so that it can refill its own text (another product
/// chosen) but never what the operator typed. Keyed by the controller's slot, so the app's
/// strength for one product is never mistaken for its strength for another.
#[derive(Clone, Debug, Default)]
pub struct Prefill {
    filled: HashMap<calc::Slot, String>,
}

impl Prefill {
    /// Fills `kind`/`mode`'s fields from `values`: a field is written when it is empty or still
    /// holds the app's own earlier text; a field the app filled and the site no longer knows is
    /// cleared rather than left with another product's number.
    pub fn apply(
        &mut self,
        controller: &mut calc::CalcController,
        values: &HashMap<&'static str, f64>,
        lang: Lang,
    ) {
        for spec in controller.fields() {
            let name = spec.name;
            let Some(slot) = controller.slot_of(name) else {
                continue;
            };
            let current = controller.text(name).to_string();
            let ours = self.filled.get(&slot).is_some_and(|t| *t == current);
            if !(current.trim().is_empty() || ours) {
                self.filled.remove(&slot);
                continue;
            }
            match values.get(name) {
                Some(v) => {
                    let text = show(*v, lang);
                    controller.edit(name, &text);
                    self.filled.insert(slot, text);
                }
                None if ours => {
                    controller.edit(name, "");
                    self.filled.remove(&slot);
                }
                None => {}
            }
        }
    }

    /// Runs a language or unit `switch`, which rewrites every number: text the app filled
    /// and the operator left alone is still the app's afterwards; text the operator typed
    /// over the app's is the operator's, and stays so.
    pub fn through(
        &mut self,
        controller: &mut calc::CalcController,
        switch: impl FnOnce(&mut calc::CalcController),
    ) {
        self.filled
            .retain(|slot, text| controller.text_in(slot) == text.as_str());
        switch(controller);
        for (slot, text) in self.filled.iter_mut() {
            *text = controller.text_in(slot).to_string();
        }
    }
}

/// A profile number for display: up to 4 significant figures, no trailing zeros.
pub fn show(v: f64, lang: Lang) -> String {
    trim_zeros(&numbers::format_sig(v, 4, lang), lang)
}

/// `12.50` → `12.5`, `10.00` → `10`: a prefilled number shows the digits the profile has.
fn trim_zeros(text: &str, lang: Lang) -> String {
    let mark = lang.decimal_mark();
    if !text.contains(mark) {
        return text.to_string();
    }
    text.trim_end_matches('0')
        .trim_end_matches(mark)
        .to_string()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The demo plant (`data/demo-site.json`): caustic pump 30 L/h, hypochlorite pump 10 gph,
    /// lime feeder 400 lb/d, typical flow 2.4 MGD. By hand with the exact definitions
    /// (1 US gal = 3.785411784 L, 1 lb = 0.45359237 kg): 30 L/h = 7.925 gal/h → 7.93;
    /// 10 gph = 37.854 L/h → 37.9; 400 lb/d = 181.44 kg/d → 181; 2.4 MGD = 9084.99 m³/d → 9080.
    #[test]
    fn a_prefill_converted_to_another_unit_has_three_figures() {
        let catalog = Catalog::builtin().unwrap();
        let site = SiteProfile::demo(&catalog).unwrap();
        let check = |product: &str, system: UnitSystem, field: &str, want: &str| {
            let values = site_values(&site, Some(&catalog), Some(product), system);
            assert_eq!(
                show(values[field], Lang::En),
                want,
                "{product} {field} {system:?}"
            );
        };
        check("sodium-hydroxide", UnitSystem::Us, "pump-capacity", "7.93");
        check("sodium-hydroxide", UnitSystem::Si, "pump-capacity", "30");
        check("sodium-hypochlorite", UnitSystem::Us, "pump-capacity", "10");
        check(
            "sodium-hypochlorite",
            UnitSystem::Si,
            "pump-capacity",
            "37.9",
        );
        check(
            "hydrated-lime",
            UnitSystem::Us,
            "lime-feeder-capacity",
            "400",
        );
        check(
            "hydrated-lime",
            UnitSystem::Si,
            "lime-feeder-capacity",
            "181",
        );
        check("sodium-hypochlorite", UnitSystem::Us, "flow", "2.4");
        check("sodium-hypochlorite", UnitSystem::Si, "flow", "9080");
        // Numbers of the certificate are never converted: as stored.
        check(
            "sodium-hypochlorite",
            UnitSystem::Si,
            "specific-gravity",
            "1.165",
        );
    }
}
