//! The app's composition root: navigation between the screens, and a thin facade over the
//! screen controllers for what crosses screens. Plain Rust with no Slint types.
//!
//! Design choice: each screen has its own controller (the calculators' [`CalcController`] with
//! the site prefill kept here, [`LogScreen`], [`plots`], the Settings editor's edits of the
//! site) over one shared [`Session`]. [`AppState`] owns them and does only what needs two of
//! them — "log this dose" (the card into the log), a correction (the log with the recomputed
//! card), a language or unit switch (the session and the calculator's fields) — so the bridge
//! keeps one handle and the tests keep their shape. Settings persist through the session in
//! the data directory the platform injects (desktop: XDG data dir; Android: internal storage).

pub use super::calc_screen::CalcScreen;
use super::dose_log::{DoseLog, Entry};
pub use super::log_screen::{
    DateRange, DateSpan, DetailRow, DetailValue, LatestDose, LogEdit, LogFilter, LogScreen,
    NotADay, parse_day, utc_today,
};
use super::numbers::Lang;
pub use super::path_screen::PathScreen;
use super::plots;
pub use super::plots::PlotView;
use super::seams::{CalcEngine, CalcKind};
pub use super::session::{Note, Session, Settings};
pub use super::site_editor::SiteEditor;
pub use super::stock_screen::StockScreen;
use super::words::Words;
use crate::engine::dosing::catalog::Catalog;
use crate::engine::dosing::site::SiteProfile;
use crate::engine::quantity::{Unit, UnitSystem};
use std::path::PathBuf;
use std::rc::Rc;

/// The screens, in navigation order (the index is what the Slint side switches on).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Screen {
    Start = 0,
    Calculators = 1,
    Plots = 2,
    Log = 3,
    Settings = 4,
    About = 5,
    /// The plant's water path (after Plots in the navigation bar; its index is the newest).
    Path = 6,
    /// Chemical on hand, opened from the Log screen (no bar item of its own).
    Stock = 7,
}

impl Screen {
    pub const ALL: [Screen; 8] = [
        Screen::Start,
        Screen::Calculators,
        Screen::Plots,
        Screen::Log,
        Screen::Settings,
        Screen::About,
        Screen::Path,
        Screen::Stock,
    ];

    pub fn from_index(i: i32) -> Option<Screen> {
        Screen::ALL.get(usize::try_from(i).ok()?).copied()
    }
}

pub struct AppState {
    pub session: Session,
    pub calc: CalcScreen,
    pub log: LogScreen,
    history: Vec<Screen>,
    screen: Screen,
    /// The Settings screen's site editor.
    pub sites: SiteEditor,
    /// The Plant path screen.
    pub path: PathScreen,
    /// Readings, deliveries, the Stock view and the monthly report (see `stock_view`).
    pub stock: StockScreen,
}

impl AppState {
    /// Builds the state; reads saved settings from `data_dir` when there are any.
    pub fn new(
        engine: Rc<dyn CalcEngine>,
        log: Box<dyn DoseLog>,
        data_dir: Option<PathBuf>,
        lang_override: Option<Lang>,
    ) -> AppState {
        let session = Session::open(data_dir, lang_override);
        AppState {
            calc: CalcScreen::new(engine, &session),
            session,
            log: LogScreen::new(log),
            history: Vec::new(),
            screen: Screen::Start,
            sites: SiteEditor::default(),
            path: PathScreen::default(),
            stock: StockScreen::new(),
        }
    }

    pub fn lang(&self) -> Lang {
        self.session.lang()
    }

    pub fn units(&self) -> UnitSystem {
        self.session.units()
    }

    pub fn screen(&self) -> Screen {
        self.screen
    }

    pub fn navigate(&mut self, to: Screen) {
        if to != self.screen {
            self.history.push(self.screen);
            self.screen = to;
            self.sites.clear();
            if to == Screen::Calculators {
                self.prefill_from_site();
            }
        }
    }

    /// Goes to the previous screen; `false` when already at the first one (the platform may
    /// then close the app).
    pub fn back(&mut self) -> bool {
        match self.history.pop() {
            Some(s) => {
                self.screen = s;
                true
            }
            None => false,
        }
    }

    /// Opens calculator `kind` from the Start screen's quick entries.
    pub fn open_calculator(&mut self, kind: CalcKind) {
        self.calc.open(kind);
        self.navigate(Screen::Calculators);
        self.prefill_from_site();
    }

    /// Opens the calculator of what point `i` of the plant's path feeds, with the water
    /// arriving there (the raw water after the points before it) as its readings; `false`
    /// when the point feeds nothing a calculator serves or the path cannot be run.
    pub fn open_path_point(&mut self, i: usize, words: &dyn Words) -> bool {
        let Some(kind) = self.path.calculator_at(&self.session, i) else {
            return false;
        };
        let Some(water) = self.path.water_arriving(&self.session, i, words) else {
            return false;
        };
        self.open_calculator(kind);
        // The path's name for each reading of the water and the calculators' field for it
        // (the same name but calcium's), taken where the open calculator has that field.
        const FIELDS: [(&str, &str); 4] = [
            ("ph", "ph"),
            ("temperature", "temperature"),
            ("alkalinity", "alkalinity"),
            ("calcium", "calcium-hardness"),
        ];
        for (reading, text) in water {
            let Some(&(_, name)) = FIELDS.iter().find(|(r, _)| *r == reading) else {
                continue;
            };
            if self.calc.fields().iter().any(|f| f.name == name) {
                self.calc.edit(name, &text);
            }
        }
        true
    }

    pub fn set_lang(&mut self, lang: Lang) {
        self.session.set_lang(lang);
        self.calc.switch_lang(lang);
    }

    pub fn set_units(&mut self, system: UnitSystem) {
        self.session.set_units(system);
        self.calc.switch_units(system);
    }

    pub fn set_high_contrast(&mut self, on: bool) {
        self.session.set_high_contrast(on);
    }

    pub fn site(&self) -> &SiteProfile {
        self.session.site()
    }

    /// The selected sampling tap's name: what the log records as the dose's point.
    pub fn point(&self) -> Option<&str> {
        self.session.point()
    }

    /// The tap names, in the picker's order.
    pub fn taps(&self) -> Vec<String> {
        self.session.taps()
    }

    pub fn catalog(&self) -> Option<&Catalog> {
        self.session.catalog()
    }

    pub fn pick_site(&mut self, index: usize) {
        self.session.pick_site(index);
    }

    pub fn pick_point(&mut self, index: usize) {
        self.session.pick_point(index);
        self.calc.recheck_note(&self.session);
    }

    /// Keeps up to 8 letters or digits, upper-cased, as the log requires; "enter your
    /// initials first" goes once they are there.
    pub fn set_initials(&mut self, text: &str) {
        self.session.set_initials(text);
        self.calc.recheck_note(&self.session);
    }

    /// The operator typed `text` in the open calculator's field at `index` (screen order).
    pub fn type_in_field(&mut self, index: usize, text: &str) {
        if let Some(field) = self.calc.fields().get(index) {
            self.calc.typed(&self.session, field.name, text);
        }
    }

    /// The operator cleared the open calculator's field at `index` (a carried reading).
    pub fn clear_field(&mut self, index: usize) {
        if let Some(field) = self.calc.fields().get(index) {
            self.calc.clear_field(field.name);
        }
    }

    pub fn initials(&self) -> &str {
        self.session.initials()
    }

    /// Runs an edit of the Settings screen's site editor on the session.
    pub fn edit_site<R>(&mut self, edit: impl FnOnce(&mut SiteEditor, &mut Session) -> R) -> R {
        edit(&mut self.sites, &mut self.session)
    }

    /// Fills the open calculator's empty inputs from the site (see
    /// [`CalcScreen::prefill_from_site`]).
    pub fn prefill_from_site(&mut self) {
        self.calc.prefill_from_site(&self.session);
    }

    /// Whether logged doses survive a restart (drives the "not saved" banner).
    pub fn log_is_persistent(&self) -> bool {
        self.log.persistent()
    }

    pub fn entries(&self) -> std::rc::Rc<Vec<Entry>> {
        self.log.entries()
    }

    /// Entry `id`'s whole record: what the operator was shown when it was logged, latest
    /// correction applied.
    pub fn logged_dose(&self, id: u64) -> Option<crate::log::record::Dose> {
        self.log.dose(id)
    }

    /// The newest entry for each (point, chemical) at the current site.
    pub fn latest_doses(&self) -> Vec<LatestDose> {
        self.log.latest_doses(&self.session)
    }

    /// "Correct…" on the Log screen, with the calculator's current card as the recomputed
    /// result (see [`LogScreen::correct_selected`]).
    pub fn correct_selected(&mut self, dose: &str, note: &str, reason: &str) -> Result<(), Note> {
        let (calc, session) = (&self.calc, &self.session);
        let card = |operator: &str, tap: &str| calc.card_dose(session, operator, tap);
        self.log.correct_selected(session, card, dose, note, reason)
    }

    /// "Void…" on the Log screen.
    pub fn void_selected(&mut self, reason: &str) -> Result<(), Note> {
        self.log.void_selected(&self.session, reason)
    }

    /// "Log this dose": records the current result for the selected site and point.
    pub fn log_current_dose(&mut self) -> Result<u64, Note> {
        self.calc.log_dose(&self.session, &mut self.log)
    }

    /// The titration curve of the open calculator (see [`plots::titration`]).
    pub fn titration_plot(&self) -> PlotView {
        plots::titration(&self.calc, self.lang())
    }

    /// The trend of logged doses (see [`plots::trend`]).
    pub fn trend_plot(&self) -> PlotView {
        plots::trend(&self.log, self.lang())
    }

    /// The display unit of the dose (same in both systems; here for the labels).
    pub fn dose_unit(&self) -> Unit {
        Unit::MgPerL
    }

    /// Puts back the calculator inputs kept by [`save_inputs`](Self::save_inputs), if any.
    pub fn restore_inputs(&mut self) {
        self.calc.restore_inputs(&self.session);
    }

    /// Keeps what was typed in the calculators (see [`CalcScreen::save_inputs`]).
    pub fn save_inputs(&self) {
        self.calc.save_inputs(&self.session);
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::app::calc::{Status, key};
    use crate::app::dose_log::PersistentLog;
    use crate::app::numbers;
    use crate::app::seams::Unconnected;
    use crate::log::record::{Dose, example_dose};

    fn state(engine: Rc<dyn CalcEngine>) -> AppState {
        AppState::new(engine, Box::new(PersistentLog::scratch()), None, None)
    }

    fn fill_feed(s: &mut AppState, dose: &str) {
        s.calc.set_kind(CalcKind::of("feed"));
        for (n, t) in [
            ("flow", "1"),
            ("dose", dose),
            ("strength", "12.5"),
            ("specific-gravity", "1.2"),
            ("pump-capacity", "10"),
        ] {
            s.calc.edit(n, t);
        }
    }

    #[test]
    fn a_path_point_opens_its_calculator_with_the_water_arriving_there() {
        let mut s = state(crate::app::seams::connected_engine());
        s.set_units(UnitSystem::Si);
        for (n, t) in [("ph", "7.60"), ("temperature", "12"), ("alkalinity", "60")] {
            s.path.edit_water(n, t);
        }
        let words = crate::app::words::Dictionary(&[]);
        let at = |s: &AppState, id: &str| {
            s.session
                .site()
                .path
                .iter()
                .position(|p| p.id == id)
                .unwrap()
        };
        assert!(
            !s.open_path_point(at(&s, "intake"), &words),
            "nothing fed at the intake"
        );
        assert_eq!(s.screen(), Screen::Start);
        let post = at(&s, "post-treatment");
        let arriving = s.path.water_arriving(&s.session, post, &words).unwrap();
        assert!(s.open_path_point(post, &words));
        assert_eq!(s.screen(), Screen::Calculators);
        assert_eq!(s.calc.kind(), CalcKind::of("ph-adjustment"));
        // pH adjustment's pH is the water's `ph`, as in every calculator: it gets the pH after
        // alum and chlorine, lower than the raw 7.60.
        assert_eq!(s.calc.text("ph"), arriving[0].1);
        assert!(numbers::parse(s.calc.text("ph"), Lang::En).unwrap() < 7.6);
        assert_eq!(s.calc.text("temperature"), "12.0");
        // No calcium was typed on the path, so none is handed on.
        assert!(
            arriving.iter().all(|(n, _)| *n != "calcium"),
            "{arriving:?}"
        );
    }

    #[test]
    fn back_retraces_navigation() {
        let mut s = state(Rc::new(Unconnected));
        assert!(!s.back());
        s.navigate(Screen::Settings);
        s.open_calculator(CalcKind::of("softening"));
        assert_eq!(s.screen(), Screen::Calculators);
        assert_eq!(s.calc.kind(), CalcKind::of("softening"));
        assert!(s.back());
        assert_eq!(s.screen(), Screen::Settings);
        assert!(s.back());
        assert_eq!(s.screen(), Screen::Start);
        assert!(!s.back());
    }

    #[test]
    fn logging_a_dose_stores_it_and_updates_latest() {
        let mut s = state(crate::app::seams::connected_engine());
        assert!(!s.log_is_persistent());
        assert!(s.log_current_dose().is_err(), "nothing computed yet");
        fill_feed(&mut s, "1.5");
        assert_eq!(
            s.log_current_dose().unwrap_err(),
            Note::new(key("log-need-initials"))
        );
        s.set_initials(" j.m ");
        assert_eq!(s.initials(), "JM");
        let id = s.log_current_dose().expect("logged");
        fill_feed(&mut s, "2.25");
        s.log_current_dose().expect("logged");
        let entries = s.entries();
        assert_eq!(entries.len(), 2);
        assert_eq!(entries[0].id, id);
        assert_eq!(entries[0].dose.tap, "Raw water tap at screen house");
        let whole = s.logged_dose(id).expect("read back whole");
        let flow = whole.result("flow").expect("flow kept with the entry");
        assert_eq!(
            (flow.value, flow.unit.as_str()),
            (1.0, "MGD"),
            "as typed and shown"
        );
        // Through the real engine: a liquid on a metering pump has a pump setting and no
        // feeder setting, which is absent rather than zero.
        assert!(whole.result("pump_setting").is_some());
        assert_eq!(
            whole.result("feeder_setting"),
            None,
            "not computed, not logged"
        );
        let latest = s.latest_doses();
        assert_eq!(latest.len(), 1);
        assert_eq!(latest[0].dose, "2.25");
        assert_eq!(s.calc.note.as_ref().unwrap().key, "log-saved");
        let trend = s.trend_plot();
        assert_eq!(trend.message, None);
        assert_eq!(trend.commands.matches('L').count(), 1, "{trend:?}");
    }

    #[test]
    fn trend_spaces_doses_by_the_days_between_them() {
        let mut s = state(Rc::new(Unconnected));
        for (when, dose) in [
            ("2026-11-01T08:00:00Z", 1.0),
            ("2026-11-02T08:00:00Z", 2.0),
            ("2026-11-11T08:00:00Z", 3.0),
        ] {
            seed(&mut s, when, "Clearwell", "NaOH", dose);
        }
        let trend = s.trend_plot();
        assert_eq!(trend.x_key, "plot-days-axis");
        // Day 0, day 1 and day 10 of a 10-day axis.
        assert_eq!(
            trend.commands, "M 0.0 600.0 L 100.0 300.0 L 1000.0 0.0",
            "{trend:?}"
        );
    }

    #[test]
    fn filter_matches_point_and_chemical() {
        let mut s = state(crate::app::seams::connected_engine());
        s.set_initials("AB");
        fill_feed(&mut s, "1");
        s.log_current_dose().unwrap();
        s.pick_point(1);
        fill_feed(&mut s, "2");
        s.log_current_dose().unwrap();
        s.log.filter.text = "SETTLED".into();
        let rows = s.log.filtered_entries();
        assert_eq!(rows.len(), 1);
        assert_eq!(rows[0].dose.dose_mg_per_l(), Some(2.0));
        // Both doses are of the same compound (the product's dose basis, such as Cl2).
        let chemical = s.entries()[0].dose.chemical.to_lowercase();
        s.log.filter.text = chemical;
        assert_eq!(s.log.filtered_entries().len(), 2);
    }

    /// A correction records the calculator's recomputed card whole: the new flow comes with
    /// the new dose, and a dose typed that the card does not show is refused.
    #[test]
    fn corrections_and_voids_need_a_reason_and_keep_history() {
        let mut s = state(crate::app::seams::connected_engine());
        // The seed is a feed-setting entry, as the card below computes.
        let id = seed(
            &mut s,
            "2026-12-02T06:00:00Z",
            "Clearwell",
            "test-chemical",
            1.5,
        );
        s.log.select(id);
        s.log.open_edit(LogEdit::Correct);
        assert_eq!(s.log.edit, LogEdit::Correct);
        assert_eq!(
            s.correct_selected("1.8", "", "wrong meter")
                .unwrap_err()
                .key,
            "log-need-initials"
        );
        s.set_initials("KT");
        assert_eq!(
            s.correct_selected("1.8", "", " ").unwrap_err().key,
            "log-need-reason"
        );
        assert_eq!(
            s.correct_selected("abc", "", "wrong meter")
                .unwrap_err()
                .key,
            "log-dose-invalid"
        );
        assert_eq!(
            s.correct_selected("1.8", "", "wrong meter")
                .unwrap_err()
                .key,
            "log-correct-needs-result",
            "nothing computed yet"
        );
        fill_feed(&mut s, "1.8");
        // Typed to three figures, so the card shows the dose as 1.8, to the two it was typed with.
        s.calc.edit("flow", "2.00");
        let differs = s.correct_selected("2.5", "", "wrong meter").unwrap_err();
        assert_eq!(differs.key, "log-correct-dose-differs");
        assert_eq!(
            s.log.selected_history().len(),
            1,
            "refused changes record nothing"
        );
        s.correct_selected("1.8", "meter fixed", "wrong meter")
            .unwrap();
        assert_eq!(s.log.edit, LogEdit::None, "form closes after saving");
        assert_eq!(s.log.edit_note.as_ref().unwrap().key, "log-corrected");
        let e = s.log.selected_entry().unwrap();
        assert_eq!(
            (e.dose.dose_mg_per_l(), e.dose.note.as_str()),
            (Some(1.8), "meter fixed")
        );
        let whole = s.log.selected_dose().expect("read back whole");
        let flow = whole.result("flow").expect("the recomputed flow");
        assert_eq!((flow.value, flow.shown.as_str()), (2.0, "2.00"));
        // The whole result is the recomputed card's, not the seed's.
        let Status::Ready(card) = s.calc.view().status else {
            panic!("the card shows a result")
        };
        let volume = whole
            .result("product_volume_rate")
            .expect("recomputed with the card");
        // As the card showed it: the number and the range beside it.
        let range = card.ranges[2].as_deref().expect("a flow meter's range");
        assert_eq!(volume.shown, format!("{} ({range})", card.product));
        assert_eq!(
            (e.dose.operator.as_str(), e.dose.tap.as_str()),
            ("KT", "Clearwell")
        );
        s.log.open_edit(LogEdit::Correct);
        assert_eq!(
            s.correct_selected("1.8", "meter fixed", "again")
                .unwrap_err()
                .key,
            "log-nothing-changed"
        );
        assert_eq!(s.log.selected_history().len(), 2);
        assert_eq!(s.void_selected("").unwrap_err().key, "log-need-reason");
        s.void_selected("logged at the wrong site").unwrap();
        assert!(s.log.selected_entry().unwrap().voided());
        assert_eq!(s.log.selected_history().len(), 3);
        s.log.open_edit(LogEdit::Correct);
        assert_eq!(s.log.edit, LogEdit::None, "a voided entry is not reopened");
        assert_eq!(s.log.edit_note.as_ref().unwrap().key, "log-entry-voided");
        assert!(
            s.latest_doses().is_empty(),
            "voided doses are not the latest"
        );
    }

    /// A logged dose at `point` of `chemical`, as the example feed with its dose set.
    fn logged(point: &str, chemical: &str, dose: f64) -> Dose {
        let mut d = example_dose();
        d.tap = point.into();
        d.chemical = chemical.into();
        d.results.iter_mut().find(|r| r.id == "dose").unwrap().value = dose;
        d
    }

    fn seed(s: &mut AppState, when: &str, point: &str, chemical: &str, dose: f64) -> u64 {
        s.log.append_at(when, logged(point, chemical, dose))
    }

    fn texts(s: &AppState) -> Vec<(&'static str, String)> {
        [
            "flow",
            "strength",
            "specific-gravity",
            "pump-capacity",
            "dose",
        ]
        .into_iter()
        .map(|n| (n, s.calc.text(n).to_string()))
        .collect()
    }

    fn expect(s: &AppState, want: &[(&'static str, &str)]) {
        let got = texts(s);
        for (name, text) in want {
            let have = &got.iter().find(|(n, _)| n == name).unwrap().1;
            assert_eq!(have, text, "field {name}: {got:?}");
        }
    }

    #[test]
    fn calculators_start_from_the_site_but_keep_what_was_typed() {
        let mut s = state(crate::app::seams::connected_engine());
        s.open_calculator(CalcKind::of("feed"));
        let view = s.calc.view();
        assert_eq!(
            view.products[view.product_index].id, "sodium-hypochlorite",
            "the delivered product is preselected"
        );
        // Hypochlorite as delivered: 12.5 % trade, SG 1.165, pump A 10 gph; typical 2.4 MGD.
        expect(
            &s,
            &[
                ("flow", "2.4"),
                ("strength", "12.5"),
                ("specific-gravity", "1.165"),
                ("pump-capacity", "10"),
                ("dose", ""),
            ],
        );
        // The operator measures the SG of this delivery: typed, it is the hypochlorite's.
        s.calc.edit("specific-gravity", "1.2");
        // Another product: its own numbers from the site; the alum pump is peristaltic, so no
        // metering-pump capacity is filled.
        choose(&mut s, "alum-liquid");
        expect(
            &s,
            &[
                ("strength", "8.2"),
                ("specific-gravity", "1.33"),
                ("pump-capacity", ""),
            ],
        );
        // A product the site does not stock: nothing of another product's; the flow, a reading
        // of the water, carries over.
        s.calc.edit("flow", "1.1");
        choose(&mut s, "sulfuric-acid");
        expect(
            &s,
            &[
                ("flow", "1.1"),
                ("strength", ""),
                ("specific-gravity", ""),
                ("pump-capacity", ""),
            ],
        );
        // Back on hypochlorite: what was typed for it is still there.
        choose(&mut s, "sodium-hypochlorite");
        expect(&s, &[("specific-gravity", "1.2"), ("strength", "12.5")]);
        // Metric units: the caustic pump's 30 L/h arrives as typed in the profile.
        let mut s = state(crate::app::seams::connected_engine());
        s.set_units(UnitSystem::Si);
        s.open_calculator(CalcKind::of("ph-adjustment"));
        let view = s.calc.view();
        assert_eq!(view.products[view.product_index].id, "sodium-hydroxide");
        expect(
            &s,
            &[
                ("strength", "25"),
                ("specific-gravity", "1.27"),
                ("pump-capacity", "30"),
            ],
        );
        // By hand: 2.4 MGD × 3785.411784 m³/MG = 9084.99 m³/d, converted: three figures.
        assert_eq!(s.calc.text("flow"), "9080", "2.4 MGD in m³/d");
    }

    #[test]
    fn a_dry_feeder_is_prefilled_by_mass_and_a_liquid_number_never_reaches_it() {
        let mut s = state(crate::app::seams::connected_engine());
        let expect = |s: &AppState, want: &[(&str, &str)]| {
            for (name, text) in want {
                assert_eq!(s.calc.text(name), *text, "field {name}");
            }
        };
        // Softening: the demo's lime silo (94 %) and its 400 lb/d volumetric feeder.
        s.open_calculator(CalcKind::of("softening"));
        expect(
            &s,
            &[("lime-purity", "94"), ("lime-feeder-capacity", "400")],
        );
        // pH adjustment with hydrated lime: purity and dry feeder, no SG or pump volume.
        s.open_calculator(CalcKind::of("ph-adjustment"));
        expect(&s, &[("specific-gravity", "1.27")]);
        let lime = s
            .calc
            .view()
            .products
            .iter()
            .position(|p| p.id == "hydrated-lime")
            .expect("lime is offered for pH");
        s.calc.set_product(lime);
        s.prefill_from_site();
        expect(&s, &[("purity", "94"), ("dry-feeder-capacity", "400")]);
        let names: Vec<_> = s.calc.fields().iter().map(|f| f.name).collect();
        assert!(!names.contains(&"specific-gravity") && !names.contains(&"pump-capacity"));
        // Typed text is the operator's: a later prefill leaves it.
        s.calc.edit("dry-feeder-capacity", "350");
        s.prefill_from_site();
        expect(&s, &[("dry-feeder-capacity", "350")]);
    }

    /// The cautions the card shows, through the real engine.
    fn card_cautions(s: &AppState) -> Vec<crate::app::seams::Caution> {
        match s.calc.view().status {
            Status::Ready(r) => r.cautions,
            other => panic!("no result: {other:?}"),
        }
    }

    #[test]
    fn targets_outside_the_site_limits_raise_cautions_naming_the_source() {
        let s = state(Rc::new(Unconnected));
        let limits = s.sites.site_limits(&s.session);
        let chlorine = limits.iter().find(|l| l.parameter == "chlorine").unwrap();
        assert!(
            chlorine.source.contains("Plant permit"),
            "the permit overrides"
        );
        assert!(
            limits
                .iter()
                .any(|l| l.parameter == "ph" && l.source.contains("CFR"))
        );
        // Through the real engine, which checks every target against the site's limits.
        let mut s = state(crate::app::seams::connected_engine());
        fill_chlorination(&mut s, "4.5");
        s.prefill_from_site();
        let cautions = card_cautions(&s);
        let breach = cautions
            .iter()
            .find(|c| c.code == "site-limit-above")
            .unwrap_or_else(|| panic!("no limit caution: {cautions:?}"));
        // The plant's permit is enforceable: beyond it is a danger.
        assert_eq!(breach.level, crate::app::seams::CautionLevel::Danger);
        assert!(
            breach
                .params
                .contains(&("field".into(), "field-target-residual".into()))
        );
        assert!(
            breach
                .params
                .iter()
                .any(|(k, v)| k == "source" && v.contains("Plant permit")),
            "{breach:?}"
        );
        s.calc.edit("target-residual", "0.1");
        assert!(
            card_cautions(&s)
                .iter()
                .any(|c| c.code == "site-limit-below")
        );
        s.calc.edit("target-residual", "1.5");
        assert!(
            !card_cautions(&s)
                .iter()
                .any(|c| c.code.starts_with("site-limit"))
        );
    }

    fn fill_chlorination(s: &mut AppState, residual: &str) {
        s.calc.set_kind(CalcKind::of("chlorination"));
        for (n, t) in [
            ("flow", "1"),
            ("chlorine-demand", "1"),
            ("target-residual", residual),
            ("strength", "12.5"),
            ("specific-gravity", "1.2"),
            ("pump-capacity", "10"),
        ] {
            s.calc.edit(n, t);
        }
    }

    /// What a product's own numbers are typed as in the open calculator, by field.
    fn field_text(s: &AppState, name: &str) -> String {
        let view = s.calc.view();
        let field = view.fields.iter().find(|f| f.name == name);
        field.map_or_else(String::new, |f| f.text.clone())
    }

    fn choose(s: &mut AppState, product: &str) {
        let view = s.calc.view();
        let i = view.products.iter().position(|p| p.id == product);
        s.calc
            .set_product(i.unwrap_or_else(|| panic!("{product} not offered")));
        s.prefill_from_site();
    }

    #[test]
    fn a_products_own_numbers_never_carry_to_another_product() {
        let mut s = state(crate::app::seams::connected_engine());
        s.open_calculator(CalcKind::of("feed"));
        choose(&mut s, "sodium-hypochlorite");
        for (name, text) in [
            ("strength", "11"),
            ("specific-gravity", "1.15"),
            ("pump-capacity", "9"),
        ] {
            s.calc.edit(name, text);
        }
        // Caustic in pH control: the site's caustic (25 %, SG 1.27), not the hypochlorite typed.
        s.open_calculator(CalcKind::of("ph-adjustment"));
        choose(&mut s, "sodium-hydroxide");
        assert_eq!(field_text(&s, "strength"), "25");
        assert_eq!(field_text(&s, "specific-gravity"), "1.27");
        let request = s.calc.current_request();
        assert!(
            request.is_none_or(|r| r.get("strength") == Some(0.25)),
            "caustic computed at a hypochlorite strength"
        );
        // Back on hypochlorite, what was typed for it is still there.
        s.open_calculator(CalcKind::of("feed"));
        choose(&mut s, "sodium-hypochlorite");
        assert_eq!(field_text(&s, "strength"), "11");
        assert_eq!(field_text(&s, "pump-capacity"), "9");
        // Readings of the water are the water's, whatever the product: flow carries over.
        s.calc.edit("flow", "3");
        choose(&mut s, "ferric-chloride");
        assert_eq!(field_text(&s, "flow"), "3");
    }

    #[test]
    fn typed_text_stays_typed_through_a_language_or_unit_switch() {
        let mut s = state(crate::app::seams::connected_engine());
        s.open_calculator(CalcKind::of("feed"));
        assert_eq!(field_text(&s, "flow"), "2.4", "the site's typical flow");
        assert_eq!(field_text(&s, "strength"), "12.5");
        // The operator reads the plant's flow meter and types over the app's number.
        s.calc.edit("flow", "1.10");
        s.set_lang(Lang::Es);
        s.navigate(Screen::Start);
        s.navigate(Screen::Calculators);
        assert_eq!(
            field_text(&s, "flow"),
            "1,10",
            "typed flow replaced after the switch"
        );
        // The app's own number is still the app's: it follows the site.
        assert_eq!(field_text(&s, "strength"), "12,5");
        s.set_units(UnitSystem::Si);
        s.navigate(Screen::Start);
        s.navigate(Screen::Calculators);
        let flow = numbers::parse(&field_text(&s, "flow"), Lang::Es).unwrap();
        assert!(
            (flow - 4164.0).abs() < 1.0,
            "1.10 MGD in m³/d, still typed: {flow}"
        );
    }

    /// The codes of the cautions the card shows now.
    fn caution_codes(s: &AppState) -> Vec<String> {
        match s.calc.view().status {
            Status::Ready(r) => r.cautions.iter().map(|c| c.code.clone()).collect(),
            other => panic!("no result: {other:?}"),
        }
    }

    #[test]
    fn a_flow_above_the_demo_plants_meters_is_questioned() {
        // The demo plant's meters read to 6 MGD; the request carries them to the engine.
        let mut s = state(crate::app::seams::connected_engine());
        s.open_calculator(CalcKind::of("chlorination"));
        fill_chlorination(&mut s, "2");
        let codes = caution_codes;
        let above = "flow-above-meter-range".to_string();
        s.calc.edit("flow", "2.4");
        assert!(!codes(&s).contains(&above), "{:?}", codes(&s));
        s.calc.edit("flow", "60");
        s.calc.edit("pump-capacity", "1000");
        assert!(codes(&s).contains(&above), "{:?}", codes(&s));
    }

    #[test]
    fn a_dose_above_the_delivered_products_max_use_level_is_flagged() {
        // The demo plant's hypochlorite is certified to 100 mg/L of product; at 12.5 trade %
        // and SG 1.2 that is about 10 mg/L as Cl2.
        let mut s = state(crate::app::seams::connected_engine());
        s.open_calculator(CalcKind::of("chlorination"));
        fill_chlorination(&mut s, "2");
        let codes = caution_codes;
        let over = "dose-above-max-use-level".to_string();
        assert!(
            !codes(&s).contains(&over),
            "3 mg/L flagged: {:?}",
            codes(&s)
        );
        s.calc.edit("chlorine-demand", "12");
        assert!(
            codes(&s).contains(&over),
            "14 mg/L not flagged: {:?}",
            codes(&s)
        );
        // A site that records no level for the product: the catalog's typical level is
        // checked instead, and named as typical.
        s.calc.set_max_use_levels(Default::default());
        assert!(codes(&s).contains(&over));
        assert!(codes(&s).contains(&"max-use-level-typical".to_string()));
    }

    /// The Log screen's detail of a gas feed: its feeder setting (not a pump's), the product's
    /// English name, and the numbers as the card showed them with their units.
    #[test]
    fn the_detail_of_a_logged_gas_feed_shows_what_the_card_showed() {
        let mut s = state(crate::app::seams::connected_engine());
        s.set_initials("AB");
        s.set_units(UnitSystem::Si);
        s.calc.set_kind(CalcKind::of("feed"));
        let gas = s
            .calc
            .view()
            .products
            .iter()
            .position(|p| p.id == "chlorine-gas");
        s.calc.set_product(gas.expect("chlorine gas is offered"));
        // Typed to three figures or more, so the card shows three (a whole "9000" would count
        // as one figure today).
        for (n, t) in [
            ("flow", "9000.0"),
            ("dose", "2.00"),
            ("purity", "100.0"),
            ("gas-feeder-capacity", "100.0"),
        ] {
            s.calc.edit(n, t);
        }
        assert!(s.log.selected_detail().is_empty(), "nothing selected");
        s.log_current_dose().expect("logged");
        let rows = s.log.selected_detail();
        let value = |label: &str| {
            rows.iter()
                .find(|r| r.label == label)
                .map(|r| r.value.clone())
                .unwrap_or_else(|| panic!("no {label} row: {rows:?}"))
        };
        assert_eq!(
            value("log-field-chemical"),
            DetailValue::Text("Chlorine gas".into())
        );
        // 9000 m³/d × 2.00 g/m³ = 18.0 kg/d, 18.0 % of a 100 kg/d feeder; the flow meter's
        // default ±2 % gives 17.64–18.36 for both.
        assert_eq!(
            value("result-feed"),
            DetailValue::Text("18.0 (17.6–18.4) kg/d".into())
        );
        assert_eq!(
            value("result-feeder-setting"),
            DetailValue::Text("18.0 (17.6–18.4) %".into())
        );
        assert!(rows.iter().all(|r| r.label != "result-pump"));
    }

    #[test]
    fn a_logged_dose_keeps_the_permit_warning_the_card_showed() {
        let mut s = state(crate::app::seams::connected_engine());
        s.set_initials("AB");
        fill_chlorination(&mut s, "5");
        s.prefill_from_site();
        let warned: Vec<String> = card_cautions(&s)
            .into_iter()
            .filter(|c| c.code.starts_with("site-limit"))
            .map(|c| c.code)
            .collect();
        assert_eq!(warned.len(), 1);
        let id = s.log_current_dose().expect("logged");
        let logged: Vec<String> = s
            .logged_dose(id)
            .expect("read back whole")
            .cautions
            .iter()
            .map(|c| c.code.clone())
            .collect();
        assert!(logged.contains(&warned[0]), "{logged:?} lacks {warned:?}");
    }

    #[test]
    fn titration_plot_waits_for_inputs_then_for_the_engine() {
        let mut s = state(Rc::new(Unconnected));
        assert_eq!(
            s.titration_plot().message.unwrap().key,
            "plot-need-inputs-ph-adjustment"
        );
        for (n, t) in [
            ("flow", "1"),
            ("ph", "6.8"),
            ("target-ph", "7.4"),
            ("alkalinity", "40"),
            ("temperature", "60"),
            ("strength", "25"),
            ("specific-gravity", "1.3"),
            ("pump-capacity", "5"),
        ] {
            s.calc.edit(n, t);
        }
        assert_eq!(
            s.titration_plot().message.unwrap().key,
            "calc-not-connected"
        );
    }

    #[test]
    fn titration_plot_marks_the_chosen_dose_for_ph_and_coagulation() {
        let engine = crate::app::seams::connected_engine();
        let mut s = state(engine);
        for (n, t) in [
            ("flow", "1.5"),
            ("ph", "6.80"),
            ("target-ph", "7.40"),
            ("alkalinity", "40"),
            ("temperature", "60"),
            ("strength", "25"),
            ("specific-gravity", "1.27"),
            ("pump-capacity", "5"),
        ] {
            s.calc.edit(n, t);
        }
        let ph = s.titration_plot();
        assert_eq!(ph.message, None);
        assert_eq!(ph.subject, "product-sodium-hydroxide");
        assert_eq!(ph.markers.matches('M').count(), 2, "{}", ph.markers);
        let legend = ph.legend.expect("the chosen point in words");
        assert_eq!(legend.key, "plot-chosen-point");
        assert!(
            legend.args.contains(&("ph", "7.40".to_string())),
            "{legend:?}"
        );
        assert!(
            legend.args.contains(&("start", "6.80".to_string())),
            "{legend:?}"
        );
        // The target pH typed (7.40) is marked and said; the pH axis carries round values,
        // one grid line each, placed where they fall across the axis.
        let target = ph.target_label.as_ref().expect("the target pH in words");
        assert_eq!(target.key, "plot-target-ph");
        assert!(
            target.args.contains(&("ph", "7.40".to_string())),
            "{target:?}"
        );
        assert_eq!(ph.target.matches('M').count(), 1, "{}", ph.target);
        assert!(ph.target_at > 0.0 && ph.target_at < 1.0);
        assert!(ph.y_ticks.len() >= 3, "{:?}", ph.y_ticks);
        for t in &ph.y_ticks {
            let v: f64 = t.label.parse().unwrap();
            assert!((0.0..=1.0).contains(&t.at), "{t:?}");
            // Steps of 1, 2 or 5 × 10ⁿ: a pH axis of a few units is labelled at round values.
            assert!((v * 10.0 - (v * 10.0).round()).abs() < 1e-9, "{t:?}");
        }
        assert_eq!(
            ph.grid.matches('M').count(),
            ph.y_ticks.len() + ph.x_ticks.len(),
            "a line per y value, a mark per x value"
        );
        assert!(ph.x_ticks.len() >= 3, "{:?}", ph.x_ticks);

        s.open_calculator(CalcKind::of("coagulation"));
        assert_eq!(
            s.titration_plot().message.unwrap().key,
            "plot-need-inputs-coagulation"
        );
        // Coagulation's own readings (each calculator keeps its own inputs).
        for (n, t) in [
            ("flow", "1.5"),
            ("alkalinity", "40"),
            ("temperature", "60"),
            ("jar-dose", "25"),
            ("alkalinity-setpoint", "20"),
            ("ph", "7.1"),
            ("strength", "8.3"),
            ("specific-gravity", "1.335"),
            // The alum's own pump: the caustic pump's 5 L/h typed above is the caustic's.
            ("pump-capacity", "20"),
        ] {
            s.calc.edit(n, t);
        }
        let coag = s.titration_plot();
        assert_eq!(coag.message, None, "{coag:?}");
        assert_eq!(coag.subject, "product-alum-liquid");
        let legend = coag.legend.expect("jar dose marked");
        // As the card shows it: never fewer than three figures, two typed or not.
        assert!(
            legend.args.contains(&("dose", "25.0".to_string())),
            "the card's figures: {legend:?}"
        );
        assert_eq!(coag.x_lo, "0");
        assert_eq!(coag.target_label, None, "coagulation doses to no target pH");
    }

    #[test]
    fn calculator_inputs_come_back_after_a_restart() {
        let dir = std::env::temp_dir().join(format!("molefeed-inputs-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        let open = || {
            AppState::new(
                Rc::new(Unconnected),
                Box::new(PersistentLog::scratch()),
                Some(dir.clone()),
                None,
            )
        };
        {
            let mut s = open();
            s.open_calculator(CalcKind::of("softening"));
            s.calc.edit("total-hardness", "265");
            s.save_inputs();
        }
        let mut s = open();
        assert_eq!(s.calc.text("total-hardness"), "", "nothing until restored");
        s.restore_inputs();
        assert_eq!(s.calc.kind(), CalcKind::of("softening"));
        assert_eq!(s.calc.text("total-hardness"), "265");
        assert!(!dir.join("calculator-inputs.json.tmp").exists());
        std::fs::remove_dir_all(&dir).unwrap();
    }
}
