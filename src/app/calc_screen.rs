//! The Calculators screen's controller: the calculator controller ([`CalcController`], the
//! fields, parsing and the card) with what the screen adds around it — the site's prefill
//! and preselected product, the screen's message, "log this dose", and the inputs kept across
//! a restart. Plain Rust with no Slint types, unit-tested through `state`'s tests and here.
//!
//! Design choice: `CalcScreen` dereferences to its `CalcController`, so the screen and the
//! calculator are driven through one handle (`state.calc.edit(…)`) while the card-building
//! code stays in `calc.rs`, untouched by this split. What the screen shares with the others
//! (site, language, units, initials, the data directory) it borrows from the [`Session`].

use super::calc::{CalcController, CalcInputs, Status, key};
use super::dose_log::{Logging, dose_of};
use super::log_screen::LogScreen;
use super::numbers::Lang;
use super::seams::{CalcEngine, CalcKind, CalcMode};
use super::session::{Note, Session};
use super::sites::{self, Prefill};
use crate::engine::quantity::UnitSystem;
use crate::log::record::Dose;
use std::ops::{Deref, DerefMut};
use std::rc::Rc;

/// Where the calculator inputs are kept between runs, in the data directory.
pub const INPUTS_FILE: &str = "calculator-inputs.json";

/// The Calculators screen.
pub struct CalcScreen {
    calc: CalcController,
    /// The screen's message (logged, or why not).
    pub note: Option<Note>,
    prefill: Prefill,
    /// Calculator variants whose product was already preselected from the site.
    preselected: Vec<(CalcKind, CalcMode)>,
}

impl Deref for CalcScreen {
    type Target = CalcController;
    fn deref(&self) -> &CalcController {
        &self.calc
    }
}

impl DerefMut for CalcScreen {
    fn deref_mut(&mut self) -> &mut CalcController {
        &mut self.calc
    }
}

impl CalcScreen {
    pub fn new(engine: Rc<dyn CalcEngine>, session: &Session) -> CalcScreen {
        CalcScreen {
            calc: CalcController::new(engine, session.lang(), session.units()),
            note: None,
            prefill: Prefill::default(),
            preselected: Vec::new(),
        }
    }

    /// Another calculator (from the Start screen or the chips): the old message goes.
    pub fn open(&mut self, kind: CalcKind) {
        self.calc.set_kind(kind);
        self.note = None;
    }

    /// The language changed: the fields are shown in it, and the app's own numbers stay the
    /// app's (see [`Prefill::through`]).
    pub fn switch_lang(&mut self, lang: Lang) {
        self.prefill.through(&mut self.calc, |c| c.set_lang(lang));
    }

    /// The unit system changed, as [`switch_lang`](Self::switch_lang).
    pub fn switch_units(&mut self, system: UnitSystem) {
        self.prefill
            .through(&mut self.calc, |c| c.set_units(system));
    }

    /// Fills the open calculator's empty inputs from the site: on the first visit to a
    /// calculator variant the site's delivered product is chosen, then its strength, SG and
    /// metering-pump capacity and the plant's typical flow fill fields the operator left empty.
    pub fn prefill_from_site(&mut self, session: &Session) {
        let site = session.site();
        self.calc.set_max_use_levels(sites::max_use_levels(site));
        self.calc.set_limits(site.limits.clone());
        let (kind, mode) = (self.calc.kind(), self.calc.mode());
        if !self.preselected.contains(&(kind, mode)) {
            self.preselected.push((kind, mode));
            let offered = self.calc.engine().products(kind, mode);
            if let Some(i) = offered
                .iter()
                .position(|p| site.delivered_of(&p.id).is_some())
            {
                self.calc.set_product(i);
            }
        }
        let view = self.calc.view();
        let product = view.products.get(view.product_index).map(|p| p.id.clone());
        let values =
            sites::site_values(site, session.catalog(), product.as_deref(), session.units());
        self.prefill.apply(&mut self.calc, &values, session.lang());
    }

    /// The card as the log records it ([`dose_of`]): with the engine's cautions and the
    /// site's permit warnings, as the card showed them. `None` without a dose.
    pub fn card_dose(&self, session: &Session, operator: &str, tap: &str) -> Option<Dose> {
        dose_of(
            &self.calc.view(),
            Logging {
                operator,
                tap,
                lang: session.lang(),
                units: session.units(),
            },
        )
    }

    /// "Log this dose": records the card for the session's site and tap; the screen's
    /// message says what happened.
    pub fn log_dose(&mut self, session: &Session, log: &mut LogScreen) -> Result<u64, Note> {
        let logged = self.logged(session, log);
        self.note = Some(match &logged {
            Ok(id) => Note::new(key("log-saved")).arg("id", id),
            Err(note) => note.clone(),
        });
        logged
    }

    fn logged(&self, session: &Session, log: &mut LogScreen) -> Result<u64, Note> {
        let nothing = || Note::new(key("log-nothing-to-log"));
        if !matches!(self.calc.view().status, Status::Ready(_)) {
            return Err(nothing());
        }
        if session.initials().is_empty() {
            return Err(Note::new(key("log-need-initials")));
        }
        let tap = session.point().unwrap_or("");
        let dose = self
            .card_dose(session, session.initials(), tap)
            .ok_or_else(nothing)?;
        log.record(&session.site().name, dose)
    }

    /// Puts back the calculator inputs kept by [`save_inputs`](Self::save_inputs), if any.
    pub fn restore_inputs(&mut self, session: &Session) {
        if let Some(saved) = session
            .read_file(INPUTS_FILE)
            .and_then(|t| serde_json::from_str::<CalcInputs>(&t).ok())
        {
            self.calc.restore(&saved);
        }
    }

    /// Keeps what was typed in the calculators, so a restart (an Android activity killed in
    /// the background) comes back to the same readings. A preference-like file, written whole
    /// to a temporary name and renamed, so a crash leaves the old or the new one, never half.
    pub fn save_inputs(&self, session: &Session) {
        if let Ok(text) = serde_json::to_string_pretty(&self.calc.inputs()) {
            let _ = session.write_file(INPUTS_FILE, text.as_bytes());
        }
    }
}
