//! The Settings screen's site editor: renaming and adding sites, the sampling taps, the
//! delivered products, the pumps and feeders, and the permit limits — each edit checked
//! (`super::sites` and the engine's `SiteProfile::validate`) before it is kept and saved.
//! Plain Rust with no Slint types, unit-tested here.
//!
//! Design choice: the editor holds only the last edit's outcome (a problem in words, or
//! "saved", and the part of the screen it belongs to); the profiles themselves live in the
//! shared [`Session`], which every edit borrows and saves whole when it went through.

use super::calc::key;
use super::numbers::Lang;
use super::session::{Note, Session};
use super::sites::{self, LimitForm, ProductForm, PumpForm, SiteProblem};
use super::words::Words;
use crate::engine::dosing::catalog::Catalog;
use crate::engine::dosing::feed::PumpKind;
use crate::engine::dosing::site::{Limit, SiteProfile};
use crate::engine::precision::{Instrument, Precision, tolerance_from_si, tolerance_to_si};

/// The Settings editor's last outcome.
#[derive(Clone, Debug, Default)]
pub struct SiteEditor {
    /// A problem in words, or `None`.
    pub problem: Option<SiteProblem>,
    /// The last edit went through and was saved.
    pub saved: bool,
    /// Which part of the editor the outcome belongs to (0 site, 1 taps, 2 products, 3 pumps,
    /// 4 limits, 5 instrument precision), so the message appears next to the button that was
    /// pressed.
    pub section: u8,
}

impl SiteEditor {
    /// Forgets the last outcome (another screen was opened).
    pub fn clear(&mut self) {
        self.problem = None;
        self.saved = false;
    }

    /// Runs one of the editor's checked edits on the current site, with the language its
    /// numbers are typed in and the catalog it is validated against.
    fn edit_with(
        &mut self,
        session: &mut Session,
        section: u8,
        edit: impl FnOnce(&mut SiteProfile, Lang, Option<&Catalog>) -> Result<(), SiteProblem>,
    ) -> bool {
        let lang = session.lang();
        let (site, catalog) = session.site_and_catalog();
        let outcome = edit(site, lang, catalog);
        self.edited(session, section, outcome)
    }

    fn edited(
        &mut self,
        session: &mut Session,
        section: u8,
        outcome: Result<(), SiteProblem>,
    ) -> bool {
        self.section = section;
        self.saved = outcome.is_ok();
        self.problem = outcome.err();
        if self.saved {
            session.save();
        }
        self.saved
    }

    fn need_name() -> Result<(), SiteProblem> {
        Err(SiteProblem::Note(Note::new(key("site-need-name"))))
    }

    pub fn rename_site(&mut self, session: &mut Session, name: &str) -> bool {
        let name = name.trim().to_string();
        let outcome = if name.is_empty() {
            Self::need_name()
        } else {
            session.site_mut().name = name;
            Ok(())
        };
        self.edited(session, 0, outcome)
    }

    pub fn add_site(&mut self, session: &mut Session, name: &str) -> bool {
        let name = name.trim();
        let outcome = if name.is_empty() {
            Self::need_name()
        } else {
            let site = sites::empty_site(name, session.units());
            let settings = &mut session.settings;
            settings.sites.push(site);
            settings.site_index = settings.sites.len() - 1;
            settings.point_index = 0;
            Ok(())
        };
        self.edited(session, 0, outcome)
    }

    /// Puts the embedded demo plant back in place of the current site.
    pub fn reset_to_demo(&mut self, session: &mut Session) {
        *session.site_mut() = sites::demo(session.catalog());
        session.settings.point_index = 0;
        self.edited(session, 0, Ok(()));
    }

    /// Adds a sampling tap and selects it (the operator is usually standing at it).
    pub fn add_point(&mut self, session: &mut Session, name: &str) -> bool {
        let added = sites::add_tap(session.site_mut(), name);
        let outcome = if added {
            session.settings.point_index = session.site().sampling_taps.len() - 1;
            Ok(())
        } else if name.trim().is_empty() {
            Self::need_name()
        } else {
            Err(SiteProblem::Note(Note::new(key("site-tap-exists"))))
        };
        self.edited(session, 1, outcome)
    }

    pub fn rename_point(&mut self, session: &mut Session, index: usize, name: &str) -> bool {
        let name = name.trim().to_string();
        let outcome = if name.is_empty() {
            Self::need_name()
        } else if session
            .taps()
            .iter()
            .enumerate()
            .any(|(i, t)| *t == name && i != index)
        {
            Err(SiteProblem::Note(Note::new(key("site-tap-exists"))))
        } else if let Some(tap) = session.site_mut().sampling_taps.get_mut(index) {
            tap.name = name;
            Ok(())
        } else {
            return false;
        };
        self.edited(session, 1, outcome)
    }

    pub fn remove_point(&mut self, session: &mut Session, index: usize) {
        if index < session.site().sampling_taps.len() {
            session.site_mut().sampling_taps.remove(index);
            let len = session.site().sampling_taps.len();
            if session.settings.point_index >= len {
                session.settings.point_index = len.saturating_sub(1);
            }
            self.edited(session, 1, Ok(()));
        }
    }

    pub fn save_product(&mut self, session: &mut Session, form: &ProductForm) -> bool {
        self.edit_with(session, 2, |site, lang, catalog| {
            sites::save_product(site, form, lang, catalog)
        })
    }

    pub fn remove_product(&mut self, session: &mut Session, index: usize) -> bool {
        let outcome = sites::remove_product(session.site_mut(), index);
        self.edited(session, 2, outcome)
    }

    pub fn save_pump(&mut self, session: &mut Session, form: &PumpForm) -> bool {
        self.edit_with(session, 3, |site, lang, catalog| {
            sites::save_pump(site, form, lang, catalog)
        })
    }

    pub fn remove_pump(&mut self, session: &mut Session, index: usize) {
        if index < session.site().pumps.len() {
            session.site_mut().pumps.remove(index);
            self.edited(session, 3, Ok(()));
        }
    }

    pub fn save_limit(&mut self, session: &mut Session, form: &LimitForm) -> bool {
        self.edit_with(session, 4, |site, lang, catalog| {
            sites::save_limit(site, form, lang, catalog)
        })
    }

    pub fn remove_limit(&mut self, session: &mut Session, index: usize) {
        if index < session.site().limits.len() {
            session.site_mut().limits.remove(index);
            self.edited(session, 4, Ok(()));
        }
    }

    /// Sets the site's own precision of `instrument` from the form: a ± in the instrument's
    /// unit (site units) and a ± in percent of the reading, either left empty for none; both
    /// empty returns the instrument to its default. Numbers are typed in the app's language.
    pub fn save_precision(
        &mut self,
        session: &mut Session,
        instrument: Instrument,
        form: &PrecisionForm,
    ) -> bool {
        let lang = session.lang();
        let unit = instrument.quantity().unit(session.units());
        let read = |text: &str| -> Result<f64, SiteProblem> {
            if text.trim().is_empty() {
                return Ok(0.0);
            }
            super::numbers::parse(text, lang)
                .ok()
                .filter(|v| v.is_finite() && *v >= 0.0)
                .ok_or_else(|| SiteProblem::Note(Note::new(key("site-precision-invalid"))))
        };
        let outcome = read(&form.absolute).and_then(|absolute| {
            let relative_percent = read(&form.relative)?;
            let site = session.site_mut();
            if absolute == 0.0 && relative_percent == 0.0 {
                site.instrument_precision.remove(instrument.code());
            } else {
                site.instrument_precision.insert(
                    instrument.code().to_string(),
                    Precision {
                        absolute: tolerance_to_si(unit, 0.0, absolute),
                        relative_percent,
                    },
                );
            }
            Ok(())
        });
        self.edited(session, 5, outcome)
    }

    /// Sets the site's fed-dose tolerance (± % of the dose logged) from the typed text, in
    /// the app's language; empty returns it to the default. The engine's check of the profile
    /// decides what is in range, so the rule lives once (`SiteProfile::validate`).
    pub fn save_fed_tolerance(&mut self, session: &mut Session, text: &str) -> bool {
        self.edit_with(session, 6, |site, lang, catalog| {
            let value = if text.trim().is_empty() {
                None
            } else {
                let v = super::numbers::parse(text.trim(), lang)
                    .ok()
                    .filter(|v| v.is_finite())
                    .ok_or_else(|| {
                        SiteProblem::Note(Note::new(key("site-fed-tolerance-invalid")))
                    })?;
                Some(v)
            };
            let mut checked = site.clone();
            checked.fed_dose_tolerance_percent = value;
            if let Some(catalog) = catalog {
                checked.validate(catalog).map_err(SiteProblem::Engine)?;
            }
            site.fed_dose_tolerance_percent = value;
            Ok(())
        })
    }

    /// The fed-dose tolerance as the form shows it: the site's, or empty for the default.
    pub fn fed_tolerance_text(session: &Session) -> String {
        session
            .site()
            .fed_dose_tolerance_percent
            .map(|t| super::numbers::format_sig(t, 3, session.lang()))
            .unwrap_or_default()
    }

    /// The form for `instrument` as the site has it (empty fields: the default applies).
    pub fn precision_form(&self, session: &Session, instrument: Instrument) -> PrecisionForm {
        let lang = session.lang();
        let unit = instrument.quantity().unit(session.units());
        let text = |v: f64| {
            if v == 0.0 {
                String::new()
            } else {
                sites::show(v, lang)
            }
        };
        match session.site().instrument_precision.get(instrument.code()) {
            Some(p) => PrecisionForm {
                absolute: text(tolerance_from_si(unit, p.absolute)),
                relative: text(p.relative_percent),
            },
            None => PrecisionForm::default(),
        }
    }

    /// The limits that apply at this site: the plant's permit entries, then the labelled
    /// regulatory defaults it does not override.
    pub fn site_limits(&self, session: &Session) -> Vec<Limit> {
        sites::effective_limits(session.site())
    }
}

/// The instrument-precision form's texts: a ± in the instrument's unit, a ± in percent.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct PrecisionForm {
    pub absolute: String,
    pub relative: String,
}

/// Each instrument's precision in words: its name, then "± 0.05 pH" or "± 2 % of the
/// reading" (either, or "the larger of" both), and whether it is the site's or the default.
pub fn precision_lines(session: &Session, words: &dyn Words) -> Vec<SiteLine> {
    let lang = session.lang();
    let site = session.site();
    Instrument::ALL
        .iter()
        .map(|&i| {
            let unit = i.quantity().unit(session.units());
            let own = site.instrument_precision.get(i.code()).copied();
            let p = own.unwrap_or_else(|| i.default_precision());
            let absolute = tolerance_from_si(unit, p.absolute);
            let unit_text = words.get(&format!("unit-{}", unit.code()));
            let abs = format!("± {} {unit_text}", sites::show(absolute, lang));
            let rel = format!("± {} %", sites::show(p.relative_percent, lang));
            let amount = match (absolute > 0.0, p.relative_percent > 0.0) {
                (true, true) => words.get_args(
                    key("precision-larger-of"),
                    &[("absolute", abs), ("relative", rel)],
                ),
                (false, true) => words.get_args(key("precision-of-reading"), &[("relative", rel)]),
                _ => abs.trim_end().to_string(),
            };
            SiteLine {
                title: words.get(&format!("instrument-{}", i.code())),
                detail: words.get_args(
                    if own.is_some() {
                        key("precision-this-site")
                    } else {
                        key("precision-default")
                    },
                    &[("amount", amount)],
                ),
            }
        })
        .collect()
}

/// The instruments' names, in the form's order ([`Instrument::ALL`]).
pub fn instrument_choices(words: &dyn Words) -> Vec<String> {
    Instrument::ALL
        .iter()
        .map(|i| words.get(&format!("instrument-{}", i.code())))
        .collect()
}

/// One row of the editor's lists: a title and a detail line.
#[derive(Clone, Debug, PartialEq)]
pub struct SiteLine {
    pub title: String,
    pub detail: String,
}

/// What the Settings screen's site editor shows, in words.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct EditorView {
    /// The delivered products: name, strength and basis; SG and certificate.
    pub products: Vec<SiteLine>,
    /// The pumps and feeders: name; what they feed and their kind or capacity.
    pub pumps: Vec<SiteLine>,
    /// The delivered products as the pump form's choices, `name (id)`.
    pub delivered: Vec<String>,
    /// The plant's own limits, then the regulatory defaults it does not override; a limit no
    /// calculation checks says so in its detail.
    pub limits: Vec<SiteLine>,
    pub default_limits: Vec<SiteLine>,
    /// Per tap, in the site's order: whether it samples the finished water (held to the
    /// limits) or raw or process water.
    pub taps_finished: Vec<bool>,
    /// The limit form's choice of parameter: the engine's checked parameters in words, and
    /// for each which of the site's taps read it.
    pub limit_parameters: Vec<String>,
    pub limit_parameter_hints: Vec<String>,
    /// The catalog's products (the product form's choices) and the strength bases.
    pub catalog_products: Vec<String>,
    pub bases: Vec<String>,
    /// The last edit's outcome in words, whether it is good news, and where it belongs.
    pub message: String,
    pub message_ok: bool,
    pub section: u8,
}

impl SiteEditor {
    /// The editor for the session's site, in words.
    pub fn view(&self, session: &Session, words: &dyn Words) -> EditorView {
        let site = session.site();
        let lang = session.lang();
        let number = |v: f64| sites::show(v, lang);
        let product_name = |catalog_id: &str| {
            session
                .catalog()
                .and_then(|c| c.product(catalog_id).ok())
                .map_or(catalog_id.to_string(), |p| words.name(&p.name_key))
        };
        let products = site
            .products
            .iter()
            .map(|d| SiteLine {
                title: format!(
                    "{} · {} % {}",
                    product_name(&d.product),
                    number(d.strength),
                    words.get(sites::basis_key(d.strength_basis))
                ),
                detail: [
                    d.sg.map(|v| format!("{} {}", words.get(key("site-sg")), number(v)))
                        .unwrap_or_default(),
                    d.certificate.clone().unwrap_or_default(),
                ]
                .into_iter()
                .filter(|t| !t.is_empty())
                .collect::<Vec<_>>()
                .join(" · "),
            })
            .collect();
        let pumps = site
            .pumps
            .iter()
            .map(|p| {
                let feeds = site
                    .products
                    .iter()
                    .find(|d| d.id == p.product)
                    .map_or(p.product.clone(), |d| product_name(&d.product));
                let kind = match p.kind {
                    PumpKind::Metering { capacity, unit } => {
                        format!("{} {}", number(capacity), unit.symbol())
                    }
                    PumpKind::Peristaltic { .. } => words.get(key("site-pump-peristaltic")),
                    PumpKind::DryFeeder { .. } => words.get(key("site-pump-dry")),
                    PumpKind::GasFeeder { .. } => words.get(key("site-pump-gas")),
                };
                SiteLine {
                    title: p.name.clone(),
                    detail: format!("{feeds} · {kind}"),
                }
            })
            .collect();
        let delivered = site
            .products
            .iter()
            .map(|d| format!("{} ({})", product_name(&d.product), d.id))
            .collect();
        let limits = site
            .limits
            .iter()
            .map(|l| limit_line(l, lang, words))
            .collect();
        let default_limits = self
            .site_limits(session)
            .iter()
            .filter(|l| !site.limits.iter().any(|own| own.parameter == l.parameter))
            .map(|l| limit_line(l, lang, words))
            .collect();
        let checked = limit_parameters();
        let parameter_names = checked.iter().map(|p| parameter_name(p, words)).collect();
        let limit_parameter_hints = checked
            .iter()
            .map(|p| {
                let taps: Vec<&str> = site
                    .sampling_taps
                    .iter()
                    .filter(|t| t.parameters.iter().any(|q| q.as_str() == *p))
                    .map(|t| t.name.as_str())
                    .collect();
                if taps.is_empty() {
                    words.get(key("settings-limit-no-tap"))
                } else {
                    words.get_args(key("settings-limit-taps"), &[("taps", taps.join(", "))])
                }
            })
            .collect();
        let catalog_products = session
            .catalog()
            .map(|c| c.products.iter().map(|p| words.name(&p.name_key)).collect())
            .unwrap_or_default();
        let bases = sites::BASES
            .iter()
            .map(|b| words.get(sites::basis_key(*b)))
            .collect();
        let (message, message_ok) = match (&self.problem, self.saved) {
            (Some(p), _) => (problem_text(p, words), false),
            (None, true) => (words.get(key("site-saved")), true),
            (None, false) => (String::new(), true),
        };
        EditorView {
            products,
            pumps,
            delivered,
            taps_finished: site
                .sampling_taps
                .iter()
                .map(|t| t.finished_water)
                .collect(),
            limits,
            default_limits,
            limit_parameters: parameter_names,
            limit_parameter_hints,
            catalog_products,
            bases,
            message,
            message_ok,
            section: self.section,
        }
    }
}

/// The product form as the screen holds it: the catalog product and the strength basis as
/// positions in their choice lists (`-1`: none chosen), the numbers as typed.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct ProductFields {
    pub catalog_index: i32,
    pub basis_index: i32,
    pub strength: String,
    pub sg: String,
    pub certificate: String,
}

impl ProductFields {
    /// The form the editor saves: positions become the catalog id and the basis (no choice
    /// reads as the first, as the screen shows it).
    pub fn to_form(&self, session: &Session) -> ProductForm {
        ProductForm {
            product: session
                .catalog()
                .and_then(|c| c.products.get(self.catalog_index.max(0) as usize))
                .map(|p| p.id.clone())
                .unwrap_or_default(),
            strength: self.strength.clone(),
            basis: sites::BASES.get(self.basis_index.max(0) as usize).copied(),
            sg: self.sg.clone(),
            certificate: self.certificate.clone(),
        }
    }
}

impl SiteEditor {
    /// The site's delivered product `index` in the form, to change it and save again.
    pub fn product_fields(&self, session: &Session, index: usize) -> Option<ProductFields> {
        let d = session.site().products.get(index)?;
        let lang = session.lang();
        let position = |found: Option<usize>| found.map_or(-1, |i| i as i32);
        Some(ProductFields {
            catalog_index: position(
                session
                    .catalog()
                    .and_then(|c| c.products.iter().position(|p| p.id == d.product)),
            ),
            basis_index: position(sites::BASES.iter().position(|b| *b == d.strength_basis)),
            strength: sites::show(d.strength, lang),
            sg: d.sg.map(|v| sites::show(v, lang)).unwrap_or_default(),
            certificate: d.certificate.clone().unwrap_or_default(),
        })
    }

    /// The site's pump `index` in the form: a metering pump's capacity and unit; another kind
    /// leaves the capacity empty and no unit.
    pub fn pump_form(&self, session: &Session, index: usize) -> Option<PumpForm> {
        let site = session.site();
        let p = site.pumps.get(index)?;
        let (capacity, unit) = match p.kind {
            PumpKind::Metering { capacity, unit } => {
                (sites::show(capacity, session.lang()), Some(unit))
            }
            _ => (String::new(), None),
        };
        Some(PumpForm {
            name: p.name.clone(),
            product: site.products.iter().position(|d| d.id == p.product),
            capacity,
            unit,
        })
    }

    /// The site's limit `index` in the form.
    pub fn limit_form(&self, session: &Session, index: usize) -> Option<LimitForm> {
        let l = session.site().limits.get(index)?;
        let number = |v: Option<f64>| {
            v.map(|v| sites::show(v, session.lang()))
                .unwrap_or_default()
        };
        Some(LimitForm {
            parameter: l.parameter.clone(),
            min: number(l.min),
            max: number(l.max),
            unit: l.unit.clone(),
            source: l.source.clone(),
            enforceable: l.enforceable,
        })
    }

    /// Marks tap `index` as sampling finished water, or raw or process water.
    pub fn set_tap_finished(&mut self, session: &mut Session, index: usize, finished: bool) {
        if sites::set_tap_finished(session.site_mut(), index, finished) {
            self.edited(session, 1, Ok(()));
        }
    }
}

/// The parameters a plant limit can be set for: the engine's checked ones, in its order.
pub fn limit_parameters() -> Vec<&'static str> {
    crate::engine::calculators::checked_limit_parameters()
}

/// A limit parameter in words (`parameter-<code>`), or its code where it has no name.
pub fn parameter_name(code: &str, words: &dyn Words) -> String {
    let k = format!("parameter-{code}");
    if words.has(&k) {
        words.get(&k)
    } else {
        code.to_string()
    }
}

/// A limit as a row: `parameter: range unit` over its source; a limit no calculation checks
/// says so first, so it is never taken for a safeguard.
fn limit_line(l: &Limit, lang: Lang, words: &dyn Words) -> SiteLine {
    let number = |v: f64| sites::show(v, lang);
    let range = match (l.min, l.max) {
        (Some(lo), Some(hi)) => format!("{}–{}", number(lo), number(hi)),
        (Some(lo), None) => format!("≥ {}", number(lo)),
        (None, Some(hi)) => format!("≤ {}", number(hi)),
        (None, None) => String::new(),
    };
    let mut detail = l.source.clone();
    // Beyond it a warning, not a danger: the row says so.
    if !l.enforceable {
        detail = format!(
            "{} {detail}",
            words.get(key("settings-limit-not-enforceable"))
        );
    }
    if !sites::is_checked(&l.parameter) {
        detail = format!("{} {detail}", words.get(key("settings-limit-unchecked")));
    }
    SiteLine {
        title: format!(
            "{}: {range} {}",
            parameter_name(&l.parameter, words),
            l.unit
        )
        .trim_end()
        .to_string(),
        detail,
    }
}

/// A problem from the editor, in words: arguments that are keys (a field's label, a number
/// problem) are translated; an engine refusal is said through `site-invalid`.
fn problem_text(problem: &SiteProblem, words: &dyn Words) -> String {
    match problem {
        SiteProblem::Note(note) => {
            let args: Vec<(&str, String)> =
                note.args.iter().map(|(k, v)| (*k, words.name(v))).collect();
            words.get_args(&note.key, &args)
        }
        SiteProblem::Engine(e) => {
            words.get_args(key("site-invalid"), &[("detail", words.error(e))])
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::quantity::UnitSystem;
    use std::path::PathBuf;

    /// The site editor over a session in `dir` (or none).
    struct Fixture {
        session: Session,
        editor: SiteEditor,
    }

    fn fixture(dir: Option<PathBuf>) -> Fixture {
        Fixture {
            session: Session::open(dir, None),
            editor: SiteEditor::default(),
        }
    }

    fn temp_dir(name: &str) -> PathBuf {
        let dir = std::env::temp_dir().join(format!("molefeed-{name}-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        dir
    }

    #[test]
    fn site_profile_edits() {
        let mut s = fixture(None);
        let taps = s.session.taps().len();
        assert!(s.editor.add_point(&mut s.session, "Filter effluent"));
        assert_eq!(
            s.session.point(),
            Some("Filter effluent"),
            "a new tap is chosen"
        );
        assert!(!s.editor.add_point(&mut s.session, "Filter effluent"));
        assert_eq!(problem_key(&s), Some("site-tap-exists".into()));
        assert_eq!(s.session.taps().len(), taps + 1);
        assert!(
            s.editor
                .rename_point(&mut s.session, taps, "Filter 2 effluent")
        );
        assert_eq!(s.session.point(), Some("Filter 2 effluent"));
        s.editor.remove_point(&mut s.session, taps);
        assert_eq!(s.session.taps().len(), taps);
        assert!(s.session.point().is_some());
        assert!(!s.editor.rename_site(&mut s.session, "   "));
        assert_eq!(problem_key(&s), Some("site-need-name".into()));
        assert!(s.editor.rename_site(&mut s.session, "  East wells "));
        assert_eq!(s.session.site().name, "East wells");
        assert!(s.editor.add_site(&mut s.session, "River intake"));
        assert_eq!(s.session.site().name, "River intake");
        assert_eq!(s.session.point(), None);
        s.editor.reset_to_demo(&mut s.session);
        assert!(s.session.site().name.contains("Harrowmere"));
        assert_eq!(s.session.settings.sites.len(), 2);
    }

    fn problem_key(s: &Fixture) -> Option<String> {
        match &s.editor.problem {
            Some(SiteProblem::Note(n)) => Some(n.key.clone()),
            Some(SiteProblem::Engine(e)) => Some(format!("engine:{}", e.kind().code())),
            None => None,
        }
    }

    #[test]
    fn a_fresh_data_dir_opens_on_the_demo_site_and_keeps_edits() {
        let dir = temp_dir("fresh-site");
        let mut s = fixture(Some(dir.clone()));
        assert!(
            s.session.site().name.contains("Harrowmere"),
            "{}",
            s.session.site().name
        );
        assert_eq!(s.session.point(), Some("Raw water tap at screen house"));
        assert!(!s.session.site().pumps.is_empty() && !s.session.site().products.is_empty());
        assert!(s.editor.add_point(&mut s.session, "Backwash return"));
        drop(s);
        let s = fixture(Some(dir.clone()));
        assert_eq!(s.session.point(), Some("Backwash return"));
        assert!(dir.join("sites.json").exists());
        let settings = std::fs::read_to_string(dir.join("settings.json")).unwrap();
        assert!(
            !settings.contains("sites"),
            "profiles kept out of settings: {settings}"
        );
        std::fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn old_settings_sites_become_profiles_with_sampling_taps() {
        let dir = temp_dir("migrate");
        std::fs::create_dir_all(&dir).unwrap();
        std::fs::write(
            dir.join("settings.json"),
            r#"{"lang":"es","us_units":false,"high_contrast":false,
               "sites":[{"name":"Planta Sur","points":["Agua cruda","Depósito"]},
                        {"name":" ","points":["Pozo 1","Pozo 1"]}],
               "site_index":0,"point_index":1}"#,
        )
        .unwrap();
        let s = fixture(Some(dir.clone()));
        assert_eq!(s.session.lang(), Lang::Es);
        assert_eq!(s.session.settings.sites.len(), 2);
        assert_eq!(s.session.site().name, "Planta Sur");
        assert_eq!(s.session.taps(), vec!["Agua cruda", "Depósito"]);
        assert_eq!(s.session.point(), Some("Depósito"));
        let ids: Vec<_> = s
            .session
            .site()
            .sampling_taps
            .iter()
            .map(|t| &t.id)
            .collect();
        assert_eq!(ids, ["tap-1", "tap-2"]);
        assert_eq!(s.session.settings.sites[1].name, "Site");
        assert_eq!(
            s.session.settings.sites[1].sampling_taps.len(),
            1,
            "duplicate tap kept once"
        );
        let catalog = Catalog::builtin().unwrap();
        for site in &s.session.settings.sites {
            site.validate(&catalog).expect("migrated profile is valid");
        }
        // Migrated once: the profiles are in sites.json and survive the next start.
        assert!(dir.join("sites.json").exists());
        drop(s);
        let s = fixture(Some(dir.clone()));
        assert_eq!(s.session.taps(), vec!["Agua cruda", "Depósito"]);
        // A damaged sites.json is kept aside, and the app still opens.
        std::fs::write(dir.join("sites.json"), "{ not json").unwrap();
        let s = fixture(Some(dir.clone()));
        assert!(!s.session.settings.sites.is_empty());
        assert!(dir.join("sites.json.unreadable").exists());
        std::fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn editor_problems_are_reported_in_words_and_nothing_invalid_is_kept() {
        let mut s = fixture(None);
        let before = s.session.site().clone();
        let hypo = |strength: &str, sg: &str| ProductForm {
            product: "sodium-hypochlorite".into(),
            strength: strength.into(),
            basis: Some(crate::engine::dosing::catalog::StrengthBasis::Trade),
            sg: sg.into(),
            certificate: "COA 1".into(),
        };
        type Edit = Box<dyn Fn(&mut Fixture) -> bool>;
        let cases: Vec<(&str, Edit, &str)> = vec![
            (
                "SG 5",
                Box::new(move |s| s.editor.save_product(&mut s.session, &hypo("12.5", "5"))),
                "engine:out-of-range",
            ),
            (
                "SG with a comma in English",
                Box::new(move |s| s.editor.save_product(&mut s.session, &hypo("12.5", "1,2"))),
                "site-number-problem",
            ),
            (
                "no strength",
                Box::new(move |s| s.editor.save_product(&mut s.session, &hypo("", "1.2"))),
                "site-number-missing",
            ),
            (
                "no SG for a liquid",
                Box::new(move |s| s.editor.save_product(&mut s.session, &hypo("12.5", ""))),
                "engine:invalid-input",
            ),
            (
                "product a pump feeds",
                Box::new(|s| s.editor.remove_product(&mut s.session, 0)),
                "site-product-in-use",
            ),
            (
                "metering pump on lime",
                Box::new(|s| {
                    let lime = s
                        .session
                        .site()
                        .products
                        .iter()
                        .position(|d| d.product == "hydrated-lime");
                    s.editor.save_pump(
                        &mut s.session,
                        &PumpForm {
                            name: "Lime pump".into(),
                            product: lime,
                            capacity: "5".into(),
                            unit: None,
                        },
                    )
                }),
                "site-pump-needs-liquid",
            ),
            (
                "metering settings on the hose pump",
                Box::new(|s| {
                    s.editor.save_pump(
                        &mut s.session,
                        &PumpForm {
                            name: "Alum peristaltic pump".into(),
                            product: Some(1),
                            capacity: "5".into(),
                            unit: None,
                        },
                    )
                }),
                "site-pump-not-metering",
            ),
            (
                "reversed limit",
                Box::new(|s| {
                    s.editor.save_limit(
                        &mut s.session,
                        &LimitForm {
                            parameter: "ph".into(),
                            min: "8".into(),
                            max: "7".into(),
                            unit: String::new(),
                            source: "Permit".into(),
                            enforceable: true,
                        },
                    )
                }),
                "site-limit-reversed",
            ),
            (
                "limit without a source",
                Box::new(|s| {
                    s.editor.save_limit(
                        &mut s.session,
                        &LimitForm {
                            parameter: "ph".into(),
                            max: "8".into(),
                            ..LimitForm::default()
                        },
                    )
                }),
                "site-need-source",
            ),
            (
                "a parameter no calculation checks",
                Box::new(|s| {
                    s.editor.save_limit(
                        &mut s.session,
                        &LimitForm {
                            parameter: "cloro".into(),
                            max: "4".into(),
                            source: "Permiso".into(),
                            ..LimitForm::default()
                        },
                    )
                }),
                "site-limit-not-checked",
            ),
        ];
        for (what, edit, want) in cases {
            assert!(!edit(&mut s), "{what} was accepted");
            assert_eq!(problem_key(&s).as_deref(), Some(want), "{what}");
            assert_eq!(s.session.site(), &before, "{what} changed the profile");
        }
        // The same edits, well formed, go through; Spanish takes a decimal comma.
        s.session.set_lang(Lang::Es);
        assert!(s.editor.save_product(&mut s.session, &hypo("15", "1,21")));
        let d = s
            .session
            .site()
            .delivered_of("sodium-hypochlorite")
            .unwrap();
        assert_eq!((d.strength, d.sg), (15.0, Some(1.21)));
        assert_eq!(
            s.session.site().products.len(),
            before.products.len(),
            "replaced, not added"
        );
        assert!(s.editor.save_limit(
            &mut s.session,
            &LimitForm {
                parameter: "ph".into(),
                min: "6,8".into(),
                max: "8,2".into(),
                unit: String::new(),
                source: "Permiso".into(),
                enforceable: true,
            }
        ));
        let ph = s
            .editor
            .site_limits(&s.session)
            .into_iter()
            .find(|l| l.parameter == "ph")
            .unwrap();
        assert_eq!(
            (ph.min, ph.max, ph.source.as_str(), ph.enforceable),
            (Some(6.8), Some(8.2), "Permiso", true)
        );
        // The same limit as the plant's own target: no rule enforces it, and its row says so.
        assert!(s.editor.save_limit(
            &mut s.session,
            &LimitForm {
                parameter: "ph".into(),
                min: "6,8".into(),
                max: "8,2".into(),
                unit: String::new(),
                source: "Meta de la planta".into(),
                enforceable: false,
            }
        ));
        let ph = s.session.site().effective_limit("ph").unwrap();
        assert!(!ph.enforceable);
        assert_eq!(
            crate::engine::dosing::waterside::PhRange::from_site(s.session.site())
                .check(9.0)
                .map(|c| c.severity),
            Some(crate::engine::dosing::Severity::Warning)
        );
        // What a tap samples: the raw-water tap is marked so, and no longer held to limits.
        s.editor.set_tap_finished(&mut s.session, 0, false);
        assert!(!s.session.site().sampling_taps[0].finished_water);
        s.editor.set_tap_finished(&mut s.session, 0, true);
        assert!(s.session.site().sampling_taps[0].finished_water);
        assert!(s.editor.save_pump(
            &mut s.session,
            &PumpForm {
                name: "Hypo pump B".into(),
                product: Some(0),
                capacity: "4".into(),
                unit: Some(crate::engine::dosing::units::VolumeRateUnit::Lph),
            }
        ));
        assert!(s.editor.saved);
        s.session
            .site()
            .validate(s.session.catalog().unwrap())
            .unwrap();
    }

    #[test]
    fn settings_persist_in_the_data_dir() {
        let dir = std::env::temp_dir().join(format!("molefeed-settings-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        {
            let mut s = fixture(Some(dir.clone()));
            s.session.set_lang(Lang::Es);
            s.session.set_units(UnitSystem::Si);
            s.editor.rename_site(&mut s.session, "Planta Sur");
        }
        let s = fixture(Some(dir.clone()));
        assert_eq!(s.session.lang(), Lang::Es);
        assert_eq!(s.session.units(), UnitSystem::Si);
        assert_eq!(s.session.site().name, "Planta Sur");
        std::fs::remove_dir_all(&dir).unwrap();
    }

    /// The demo plant's editor in words, written by hand from the dictionary and the demo
    /// profile (`data/demo-site.json`); and a problem's arguments that are keys translated.
    #[test]
    fn the_editor_is_worded_for_the_screen() {
        use crate::app::words::Dictionary;
        let words = Dictionary(&[
            ("site-saved", "Saved."),
            ("site-tap-exists", "There is a tap named so."),
            ("site-number-missing", "{ $field } is missing."),
            ("field-strength", "Strength"),
            ("site-pump-peristaltic", "hose pump"),
            ("parameter-ph", "pH"),
            ("parameter-chlorine", "Chlorine residual"),
            ("settings-limit-unchecked", "NOT CHECKED."),
            ("settings-limit-taps", "Read at { $taps }."),
            ("settings-limit-no-tap", "No tap reads it."),
        ]);
        let mut s = fixture(None);
        let view = s.editor.view(&s.session, &words);
        assert_eq!(view.message, "");
        assert!(view.message_ok);
        assert_eq!(view.products.len(), s.session.site().products.len());
        assert!(
            view.pumps
                .iter()
                .any(|p| p.title == "Alum peristaltic pump" && p.detail.ends_with("· hose pump")),
            "{:?}",
            view.pumps
        );
        assert!(
            view.limits
                .iter()
                .any(|l| l.title.starts_with("Chlorine residual: ")
                    && l.detail.starts_with("Plant permit")),
            "{:?}",
            view.limits
        );
        assert!(
            view.default_limits
                .iter()
                .all(|d| !view
                    .limits
                    .iter()
                    .any(|own| own.title.split(':').next() == d.title.split(':').next())),
            "a default the permit overrides is not listed twice"
        );
        assert!(s.editor.add_point(&mut s.session, "Clearwell outlet"));
        let view = s.editor.view(&s.session, &words);
        assert_eq!((view.message.as_str(), view.section), ("Saved.", 1));
        assert!(!s.editor.add_point(&mut s.session, "Clearwell outlet"));
        let view = s.editor.view(&s.session, &words);
        assert_eq!(view.message, "There is a tap named so.");
        assert!(!view.message_ok);
        let problem =
            SiteProblem::Note(Note::new("site-number-missing").arg("field", "field-strength"));
        assert_eq!(problem_text(&problem, &words), "Strength is missing.");
        let limit = Limit {
            parameter: "ph".into(),
            min: Some(6.5),
            max: Some(8.5),
            unit: String::new(),
            source: "Permit".into(),
            enforceable: true,
        };
        assert_eq!(
            limit_line(&limit, Lang::Es, &words),
            SiteLine {
                title: "pH: 6,5–8,5".into(),
                detail: "Permit".into()
            }
        );
        // The demo plant's aluminium limit (`data/demo-site.json`) and the iron default are
        // checked on the plant path's finished water; the manganese default by no calculation:
        // it stays listed, flagged.
        let flagged = |lines: &[SiteLine], name: &str| {
            lines
                .iter()
                .find(|l| l.title.starts_with(name))
                .map(|l| l.detail.starts_with("NOT CHECKED. "))
        };
        let view = s.editor.view(&s.session, &words);
        assert_eq!(
            flagged(&view.limits, "aluminium:"),
            Some(false),
            "{:?}",
            view.limits
        );
        assert_eq!(flagged(&view.limits, "Chlorine residual:"), Some(false));
        assert_eq!(flagged(&view.default_limits, "iron:"), Some(false));
        assert_eq!(
            flagged(&view.default_limits, "manganese:"),
            Some(true),
            "{:?}",
            view.default_limits
        );
        assert_eq!(flagged(&view.default_limits, "pH:"), Some(false));
        // The form offers the engine's checked parameters, in words, each with the taps that
        // read it (the demo's clearwell reads chlorine; no tap reads chlorite).
        let checked = crate::engine::calculators::checked_limit_parameters();
        assert_eq!(view.limit_parameters.len(), checked.len());
        let at = |code: &str| checked.iter().position(|p| *p == code).unwrap();
        assert_eq!(view.limit_parameters[at("chlorine")], "Chlorine residual");
        assert_eq!(
            view.limit_parameter_hints[at("chlorine")],
            "Read at Clearwell effluent."
        );
        assert_eq!(
            view.limit_parameter_hints[at("chlorite")],
            "No tap reads it."
        );
    }

    /// A delivered product, a pump and a limit come back into their forms as saved, so
    /// saving the form again changes nothing (the demo plant's numbers, `data/demo-site.json`).
    #[test]
    fn a_saved_item_comes_back_into_its_form() {
        let mut s = fixture(None);
        let before = s.session.site().clone();
        let hypo = before
            .products
            .iter()
            .position(|d| d.product == "sodium-hypochlorite")
            .unwrap();
        let fields = s.editor.product_fields(&s.session, hypo).unwrap();
        assert_eq!(fields.strength, "12.5");
        assert!(fields.catalog_index >= 0 && fields.basis_index >= 0);
        let form = fields.to_form(&s.session);
        assert_eq!(form.product, "sodium-hypochlorite");
        assert!(s.editor.save_product(&mut s.session, &form));
        let metering = before
            .pumps
            .iter()
            .position(|p| matches!(p.kind, PumpKind::Metering { .. }))
            .unwrap();
        let pump = s.editor.pump_form(&s.session, metering).unwrap();
        assert!(pump.unit.is_some() && !pump.capacity.is_empty());
        assert!(s.editor.save_pump(&mut s.session, &pump));
        let hose = before
            .pumps
            .iter()
            .position(|p| p.name == "Alum peristaltic pump")
            .unwrap();
        let pump = s.editor.pump_form(&s.session, hose).unwrap();
        assert_eq!((pump.capacity.as_str(), pump.unit), ("", None));
        let limit = s.editor.limit_form(&s.session, 0).unwrap();
        assert!(s.editor.save_limit(&mut s.session, &limit));
        assert_eq!(s.session.site(), &before, "saved back unchanged");
        assert_eq!(s.editor.product_fields(&s.session, 99), None);
    }

    /// A site's own precision is saved in SI from the site's units and read back in them; empty
    /// fields return the instrument to its default; a negative or unreadable number is refused.
    /// Expected values by hand: 0.1 MGD is 378.5411784 m³/d (1 US gal = 3.785411784 L, exact);
    /// 1.8 °F apart is 1 °C apart.
    #[test]
    fn the_fed_dose_tolerance_is_saved_checked_and_cleared() {
        let mut s = fixture(None);
        assert_eq!(
            SiteEditor::fed_tolerance_text(&s.session),
            "",
            "the default"
        );
        s.session.set_lang(Lang::Es);
        assert!(s.editor.save_fed_tolerance(&mut s.session, "7,5"));
        assert_eq!(s.session.site().fed_dose_tolerance_percent, Some(7.5));
        assert_eq!(SiteEditor::fed_tolerance_text(&s.session), "7,50");
        assert!(!s.editor.save_fed_tolerance(&mut s.session, "siete"));
        assert_eq!(problem_key(&s), Some("site-fed-tolerance-invalid".into()));
        // Out of range: the engine's check refuses it and the profile keeps its 7.5 %.
        assert!(!s.editor.save_fed_tolerance(&mut s.session, "80"));
        assert!(matches!(
            &s.editor.problem,
            Some(SiteProblem::Engine(e)) if e.reason() == Some("site-tolerance-out-of-range")
        ));
        assert_eq!(s.session.site().fed_dose_tolerance_percent, Some(7.5));
        assert!(s.editor.save_fed_tolerance(&mut s.session, " "));
        assert_eq!(s.session.site().fed_dose_tolerance_percent, None);
    }

    #[test]
    fn an_instruments_precision_is_kept_in_si_and_shown_in_the_sites_units() {
        let mut s = fixture(None);
        s.session.set_units(UnitSystem::Us);
        let form = |absolute: &str, relative: &str| PrecisionForm {
            absolute: absolute.into(),
            relative: relative.into(),
        };
        assert!(s.editor.save_precision(
            &mut s.session,
            Instrument::FlowMeter,
            &form("0.1", "1.5")
        ));
        let saved = s.session.site().precisions()[&Instrument::FlowMeter];
        assert!((saved.absolute - 378.541_178_4).abs() < 1e-6, "{saved:?}");
        assert_eq!(saved.relative_percent, 1.5);
        assert_eq!(
            s.editor.precision_form(&s.session, Instrument::FlowMeter),
            form("0.1", "1.5")
        );
        assert!(
            s.editor
                .save_precision(&mut s.session, Instrument::Thermometer, &form("1.8", ""))
        );
        let t = s.session.site().precisions()[&Instrument::Thermometer];
        assert!((t.absolute - 1.0).abs() < 1e-12, "{t:?}");
        assert!(
            !s.editor
                .save_precision(&mut s.session, Instrument::PhMeter, &form("-0.1", ""))
        );
        assert_eq!(problem_key(&s), Some("site-precision-invalid".into()));
        assert!(
            s.editor
                .save_precision(&mut s.session, Instrument::FlowMeter, &form("", ""))
        );
        assert!(
            !s.session
                .site()
                .precisions()
                .contains_key(&Instrument::FlowMeter)
        );
        assert_eq!(
            s.editor.precision_form(&s.session, Instrument::FlowMeter),
            PrecisionForm::default()
        );
    }
}
