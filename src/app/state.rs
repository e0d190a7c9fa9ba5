//! The app controller: settings, navigation, the site profile, and the log screens' logic.
//! Plain Rust with no Slint types, so every behaviour here is unit-tested without a window.
//!
//! Design choice: one owner ([`AppState`]) for everything the screens show, mutated only by
//! named methods the Slint bridge calls from callbacks; after each call the bridge re-reads the
//! state and pushes it into the Slint globals. Settings persist as a small JSON file in the
//! data directory the platform injects (desktop: XDG data dir; Android: internal storage).

use super::calc::{CalcController, CalcInputs, Status, key};
use super::dose_log::{
    Amendment, DoseLog, Entry, ExportFormat, LogError, Logging, Revision, dose_of,
};
use super::numbers::{self, Lang};
use super::plot::{self, Range};
use super::seams::{CalcEngine, CalcKind, CalcMode, SeamError};
use super::sites::{self, LegacySite, LimitForm, Prefill, ProductForm, PumpForm, SiteProblem};
use crate::engine::dosing::catalog::Catalog;
use crate::engine::dosing::site::{Limit, SiteProfile};
use crate::engine::quantity::{Unit, UnitSystem};
use chrono::{Datelike, Days, Months, NaiveDate};
use serde::{Deserialize, Serialize};
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
}

impl Screen {
    pub const ALL: [Screen; 6] = [
        Screen::Start,
        Screen::Calculators,
        Screen::Plots,
        Screen::Log,
        Screen::Settings,
        Screen::About,
    ];

    pub fn from_index(i: i32) -> Option<Screen> {
        Screen::ALL.get(usize::try_from(i).ok()?).copied()
    }
}

/// What the operator chose in Settings; saved between runs in `settings.json`. The site
/// profiles themselves are kept in `sites.json` (see [`super::sites`]); `sites` is filled from
/// there on start and never written into this file.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct Settings {
    pub lang: String,
    pub us_units: bool,
    pub high_contrast: bool,
    #[serde(skip)]
    pub sites: Vec<SiteProfile>,
    /// Sites as the first versions saved them here (`{name, points}`): read once, migrated.
    #[serde(rename = "sites", skip_serializing)]
    legacy_sites: Vec<LegacySite>,
    pub site_index: usize,
    pub point_index: usize,
    /// Operator initials, remembered so logging a dose is one tap.
    pub initials: String,
}

impl Default for Settings {
    fn default() -> Settings {
        Settings {
            lang: "en".into(),
            us_units: true,
            high_contrast: false,
            sites: Vec::new(),
            legacy_sites: Vec::new(),
            site_index: 0,
            point_index: 0,
            initials: String::new(),
        }
    }
}

/// A short message for the operator: a translation key and its arguments.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct Note {
    pub key: String,
    pub args: Vec<(&'static str, String)>,
    /// Arguments that are phrases of their own (a date span inside the export message):
    /// translated first, then passed in, so each language words the whole sentence.
    pub parts: Vec<(&'static str, Note)>,
}

impl Note {
    pub(crate) fn new(key: &str) -> Note {
        Note {
            key: key.into(),
            args: Vec::new(),
            parts: Vec::new(),
        }
    }

    pub(crate) fn arg(mut self, name: &'static str, value: impl ToString) -> Note {
        self.args.push((name, value.to_string()));
        self
    }

    pub(crate) fn part(mut self, name: &'static str, phrase: Note) -> Note {
        self.parts.push((name, phrase));
        self
    }
}

/// One row of "latest logged dose" on the Start screen.
#[derive(Clone, Debug, PartialEq)]
pub struct LatestDose {
    pub point: String,
    pub chemical: String,
    pub dose: String,
    pub when: String,
}

/// The date choices of the log list, in UTC calendar days (the list shows UTC times): quick
/// ranges that follow the clock, or the From / To dates the operator typed (`Custom`).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum DateRange {
    #[default]
    All,
    Today,
    /// Today and the six days before it.
    Week,
    /// Today and the 29 days before it.
    Days30,
    /// The calendar month of today, first to last day.
    ThisMonth,
    /// The calendar month before today's: what the monthly report covers.
    LastMonth,
    Custom,
}

/// First and last day of a date filter, both included; `None` is an open end.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct DateSpan {
    pub from: Option<NaiveDate>,
    pub to: Option<NaiveDate>,
}

impl DateSpan {
    fn between(from: Option<NaiveDate>, to: Option<NaiveDate>) -> DateSpan {
        DateSpan { from, to }
    }

    pub fn contains(&self, day: NaiveDate) -> bool {
        self.from.is_none_or(|f| day >= f) && self.to.is_none_or(|t| day <= t)
    }

    /// The span in words, for the summary under the fields and the export message.
    pub fn phrase(&self) -> Note {
        match (self.from, self.to) {
            (Some(f), Some(t)) => Note::new(key("log-span-between"))
                .arg("from", f)
                .arg("to", t),
            (Some(f), None) => Note::new(key("log-span-from")).arg("from", f),
            (None, Some(t)) => Note::new(key("log-span-until")).arg("to", t),
            (None, None) => Note::new(key("log-span-all")),
        }
    }

    /// The part of an export's file name that says what it covers; an unlimited export is
    /// named by its day, as before, since it holds the log as of that day.
    pub fn file_stem(&self, today: NaiveDate) -> String {
        match (self.from, self.to) {
            (Some(f), Some(t)) => format!("{f}_{t}"),
            (Some(f), None) => format!("{f}_onwards"),
            (None, Some(t)) => format!("until_{t}"),
            (None, None) => today.to_string(),
        }
    }
}

impl DateRange {
    /// The chips, in the order the Log screen shows them: the months early, so that on a
    /// phone, where the row scrolls sideways, the monthly report's range is in sight.
    pub const ALL: [DateRange; 7] = [
        DateRange::All,
        DateRange::Today,
        DateRange::ThisMonth,
        DateRange::LastMonth,
        DateRange::Week,
        DateRange::Days30,
        DateRange::Custom,
    ];

    /// The days a quick range covers on `today`; `None` for `Custom`, whose days are typed.
    /// Month ends come from chrono's calendar (28 to 31 days, leap years included).
    pub fn span_on(self, today: NaiveDate) -> Option<DateSpan> {
        let days_back = |n| today.checked_sub_days(Days::new(n));
        let month_start = today.with_day(1);
        let month_end = |first: NaiveDate| {
            first
                .checked_add_months(Months::new(1))
                .and_then(|next| next.pred_opt())
        };
        Some(match self {
            DateRange::All => DateSpan::default(),
            DateRange::Today => DateSpan::between(Some(today), Some(today)),
            DateRange::Week => DateSpan::between(days_back(6), Some(today)),
            DateRange::Days30 => DateSpan::between(days_back(29), Some(today)),
            DateRange::ThisMonth => DateSpan::between(month_start, month_start.and_then(month_end)),
            DateRange::LastMonth => {
                let first = month_start.and_then(|d| d.checked_sub_months(Months::new(1)));
                DateSpan::between(first, month_start.and_then(|d| d.pred_opt()))
            }
            DateRange::Custom => return None,
        })
    }

    /// Translation key of the chip.
    pub fn key(self) -> &'static str {
        match self {
            DateRange::All => key("log-range-all"),
            DateRange::Today => key("log-range-today"),
            DateRange::Week => key("log-range-week"),
            DateRange::Days30 => key("log-range-30-days"),
            DateRange::ThisMonth => key("log-range-this-month"),
            DateRange::LastMonth => key("log-range-last-month"),
            DateRange::Custom => key("log-range-custom"),
        }
    }
}

/// A typed day: `2026-11-30`, or its eight digits `20261130` — all a numeric keypad can type,
/// as it has no hyphen. Empty is an open end. The year must have four digits, so `26-11-30`
/// is refused rather than read as the year 26; chrono checks the day exists (no 30 February).
pub fn parse_day(text: &str) -> Result<Option<NaiveDate>, NotADay> {
    let text = text.trim();
    if text.is_empty() {
        return Ok(None);
    }
    let digits = |s: &str| !s.is_empty() && s.chars().all(|c| c.is_ascii_digit());
    let format = if text.len() == 8 && digits(text) {
        "%Y%m%d"
    } else {
        match text.split('-').collect::<Vec<_>>()[..] {
            [y, m, d] if y.len() == 4 && digits(y) && digits(m) && digits(d) => "%Y-%m-%d",
            _ => return Err(NotADay),
        }
    };
    NaiveDate::parse_from_str(text, format)
        .map(Some)
        .map_err(|_| NotADay)
}

/// Text that is not a day [`parse_day`] reads; the screen says which field it was in.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct NotADay;

/// Today's date in UTC, the calendar the list's times are shown in.
pub fn utc_today() -> NaiveDate {
    chrono::Utc::now().date_naive()
}

/// The log list's filters; all of them apply together.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct LogFilter {
    /// Free text: site, point, chemical, initials or note contains it.
    pub text: String,
    pub range: DateRange,
    /// The From / To fields as typed (a quick range fills them with its days); they decide
    /// the dates only while `range` is `Custom`.
    pub from_text: String,
    pub to_text: String,
    /// A tap (sampling/dosing point) present in the log; `None` is any.
    pub point: Option<String>,
    /// A chemical present in the log; `None` is any.
    pub chemical: Option<String>,
}

/// Which change form the log's detail pane shows.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum LogEdit {
    #[default]
    None,
    Correct,
    Void,
}

/// A drawn plot: command strings in the view box of [`plot`], or why there is none.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct PlotView {
    pub commands: String,
    pub grid: String,
    /// Translation key of the x-axis label.
    pub x_key: String,
    /// What is plotted (titrant or chemical · point), as data.
    pub subject: String,
    pub y_lo: String,
    pub y_hi: String,
    pub x_lo: String,
    pub x_hi: String,
    /// Lines marking the chosen point (dose and the pH it reaches), and their legend in words.
    pub markers: String,
    pub legend: Option<Note>,
    pub message: Option<Note>,
}

/// One row of a log entry's detail: a label (translation key) and its value.
#[derive(Clone, Debug, PartialEq)]
pub struct DetailRow {
    pub label: &'static str,
    pub value: DetailValue,
}

/// A detail value: text as recorded, a name that may be a translation key, or a time the
/// screen formats.
#[derive(Clone, Debug, PartialEq)]
pub enum DetailValue {
    Text(String),
    Name(String),
    When(String),
}

impl DetailRow {
    fn text(label: &'static str, value: &str) -> DetailRow {
        DetailRow {
            label,
            value: DetailValue::Text(value.to_string()),
        }
    }

    fn name(label: &'static str, value: &str) -> DetailRow {
        DetailRow {
            label,
            value: DetailValue::Name(value.to_string()),
        }
    }

    fn when(label: &'static str, value: &str) -> DetailRow {
        DetailRow {
            label,
            value: DetailValue::When(value.to_string()),
        }
    }
}

pub struct AppState {
    pub settings: Settings,
    pub calc: CalcController,
    log: Box<dyn DoseLog>,
    data_dir: Option<PathBuf>,
    history: Vec<Screen>,
    screen: Screen,
    pub log_filter: LogFilter,
    selected: Option<u64>,
    pub calc_note: Option<Note>,
    /// The export/import message.
    pub log_note: Option<Note>,
    /// The open correction/void form and its message.
    pub log_edit: LogEdit,
    pub log_edit_note: Option<Note>,
    pub log_format: ExportFormat,
    catalog: Option<Catalog>,
    prefill: Prefill,
    /// Calculator variants whose product was already preselected from the site.
    preselected: Vec<(CalcKind, CalcMode)>,
    /// The Settings editor's last outcome: a problem in words, or "saved".
    pub site_problem: Option<SiteProblem>,
    pub site_saved: bool,
    /// Which part of the editor the outcome belongs to (0 site, 1 taps, 2 products, 3 pumps,
    /// 4 limits), so the message appears next to the button that was pressed.
    pub site_section: u8,
}

impl AppState {
    /// Builds the state; reads saved settings from `data_dir` when there are any.
    pub fn new(
        engine: Rc<dyn CalcEngine>,
        log: Box<dyn DoseLog>,
        data_dir: Option<PathBuf>,
        lang_override: Option<Lang>,
    ) -> AppState {
        let mut settings = data_dir
            .as_ref()
            .and_then(|d| std::fs::read_to_string(d.join("settings.json")).ok())
            .and_then(|t| serde_json::from_str::<Settings>(&t).ok())
            .unwrap_or_default();
        if let Some(lang) = lang_override {
            settings.lang = lang.tag().into();
        }
        let lang = Lang::from_tag(&settings.lang).unwrap_or(Lang::En);
        let system = if settings.us_units {
            UnitSystem::Us
        } else {
            UnitSystem::Si
        };
        let catalog = Catalog::builtin().ok();
        let legacy = std::mem::take(&mut settings.legacy_sites);
        settings.sites = sites::load(data_dir.as_deref(), &legacy, system, catalog.as_ref());
        let migrated = !legacy.is_empty()
            && data_dir
                .as_ref()
                .is_some_and(|d| !d.join(sites::SITES_FILE).exists());
        AppState {
            calc: CalcController::new(engine, lang, system),
            settings,
            log,
            data_dir,
            history: Vec::new(),
            screen: Screen::Start,
            log_filter: LogFilter::default(),
            selected: None,
            calc_note: None,
            log_note: None,
            log_edit: LogEdit::None,
            log_edit_note: None,
            log_format: ExportFormat::Csv,
            catalog,
            prefill: Prefill::default(),
            preselected: Vec::new(),
            site_problem: None,
            site_saved: false,
            site_section: 0,
        }
        .saved_if(migrated)
    }

    /// Writes the migrated profiles at once, so the old sites are read only one time.
    fn saved_if(self, migrated: bool) -> AppState {
        if migrated {
            self.save();
        }
        self
    }

    pub fn lang(&self) -> Lang {
        Lang::from_tag(&self.settings.lang).unwrap_or(Lang::En)
    }

    pub fn units(&self) -> UnitSystem {
        if self.settings.us_units {
            UnitSystem::Us
        } else {
            UnitSystem::Si
        }
    }

    pub fn screen(&self) -> Screen {
        self.screen
    }

    pub fn navigate(&mut self, to: Screen) {
        if to != self.screen {
            self.history.push(self.screen);
            self.screen = to;
            self.site_problem = None;
            self.site_saved = false;
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
        self.calc.set_kind(kind);
        self.calc_note = None;
        self.navigate(Screen::Calculators);
        self.prefill_from_site();
    }

    pub fn set_lang(&mut self, lang: Lang) {
        self.settings.lang = lang.tag().into();
        self.prefill.through(&mut self.calc, |c| c.set_lang(lang));
        self.save();
    }

    pub fn set_units(&mut self, system: UnitSystem) {
        self.settings.us_units = system == UnitSystem::Us;
        self.prefill
            .through(&mut self.calc, |c| c.set_units(system));
        self.save();
    }

    pub fn set_high_contrast(&mut self, on: bool) {
        self.settings.high_contrast = on;
        self.save();
    }

    pub fn site(&self) -> &SiteProfile {
        let i = self.settings.site_index.min(self.settings.sites.len() - 1);
        &self.settings.sites[i]
    }

    fn site_mut(&mut self) -> &mut SiteProfile {
        let i = self.settings.site_index.min(self.settings.sites.len() - 1);
        &mut self.settings.sites[i]
    }

    /// The selected sampling tap's name: what the log records as the dose's point.
    pub fn point(&self) -> Option<&str> {
        self.site()
            .sampling_taps
            .get(self.settings.point_index)
            .map(|t| t.name.as_str())
    }

    /// The tap names, in the picker's order.
    pub fn taps(&self) -> Vec<String> {
        self.site()
            .sampling_taps
            .iter()
            .map(|t| t.name.clone())
            .collect()
    }

    pub fn catalog(&self) -> Option<&Catalog> {
        self.catalog.as_ref()
    }

    pub fn pick_site(&mut self, index: usize) {
        if index < self.settings.sites.len() {
            self.settings.site_index = index;
            self.settings.point_index = 0;
            self.save();
        }
    }

    pub fn pick_point(&mut self, index: usize) {
        if index < self.site().sampling_taps.len() {
            self.settings.point_index = index;
            self.save();
        }
    }

    /// Keeps up to 8 letters or digits, upper-cased, as the log requires.
    pub fn set_initials(&mut self, text: &str) {
        let initials: String = text
            .chars()
            .filter(|c| c.is_alphanumeric())
            .take(8)
            .collect::<String>()
            .to_uppercase();
        if initials != self.settings.initials {
            self.settings.initials = initials;
            self.save();
        }
    }

    pub fn initials(&self) -> &str {
        &self.settings.initials
    }

    /// Records the editor's outcome and saves when the edit went through.
    /// Runs one of the editor's checked edits on the current site, with the language its
    /// numbers are typed in and the catalog it is validated against.
    fn edit_with(
        &mut self,
        section: u8,
        edit: impl FnOnce(&mut SiteProfile, Lang, Option<&Catalog>) -> Result<(), SiteProblem>,
    ) -> bool {
        let lang = self.lang();
        let i = self.settings.site_index.min(self.settings.sites.len() - 1);
        let outcome = edit(&mut self.settings.sites[i], lang, self.catalog.as_ref());
        self.edited(section, outcome)
    }

    fn edited(&mut self, section: u8, outcome: Result<(), SiteProblem>) -> bool {
        self.site_section = section;
        self.site_saved = outcome.is_ok();
        self.site_problem = outcome.err();
        if self.site_saved {
            self.save();
        }
        self.site_saved
    }

    fn need_name() -> Result<(), SiteProblem> {
        Err(SiteProblem::Note(Note::new(key("site-need-name"))))
    }

    pub fn rename_site(&mut self, name: &str) -> bool {
        let name = name.trim().to_string();
        let outcome = if name.is_empty() {
            Self::need_name()
        } else {
            self.site_mut().name = name;
            Ok(())
        };
        self.edited(0, outcome)
    }

    pub fn add_site(&mut self, name: &str) -> bool {
        let name = name.trim();
        let outcome = if name.is_empty() {
            Self::need_name()
        } else {
            self.settings
                .sites
                .push(sites::empty_site(name, self.units()));
            self.settings.site_index = self.settings.sites.len() - 1;
            self.settings.point_index = 0;
            Ok(())
        };
        self.edited(0, outcome)
    }

    /// Puts the embedded demo plant back in place of the current site.
    pub fn reset_to_demo(&mut self) {
        *self.site_mut() = sites::demo(self.catalog.as_ref());
        self.settings.point_index = 0;
        self.edited(0, Ok(()));
    }

    /// Adds a sampling tap and selects it (the operator is usually standing at it).
    pub fn add_point(&mut self, name: &str) -> bool {
        let added = sites::add_tap(self.site_mut(), name);
        let outcome = if added {
            self.settings.point_index = self.site().sampling_taps.len() - 1;
            Ok(())
        } else if name.trim().is_empty() {
            Self::need_name()
        } else {
            Err(SiteProblem::Note(Note::new(key("site-tap-exists"))))
        };
        self.edited(1, outcome)
    }

    pub fn rename_point(&mut self, index: usize, name: &str) -> bool {
        let name = name.trim().to_string();
        let outcome = if name.is_empty() {
            Self::need_name()
        } else if self
            .taps()
            .iter()
            .enumerate()
            .any(|(i, t)| *t == name && i != index)
        {
            Err(SiteProblem::Note(Note::new(key("site-tap-exists"))))
        } else if let Some(tap) = self.site_mut().sampling_taps.get_mut(index) {
            tap.name = name;
            Ok(())
        } else {
            return false;
        };
        self.edited(1, outcome)
    }

    pub fn remove_point(&mut self, index: usize) {
        if index < self.site().sampling_taps.len() {
            self.site_mut().sampling_taps.remove(index);
            let len = self.site().sampling_taps.len();
            if self.settings.point_index >= len {
                self.settings.point_index = len.saturating_sub(1);
            }
            self.edited(1, Ok(()));
        }
    }

    pub fn save_product(&mut self, form: &ProductForm) -> bool {
        self.edit_with(2, |site, lang, catalog| {
            sites::save_product(site, form, lang, catalog)
        })
    }

    pub fn remove_product(&mut self, index: usize) -> bool {
        let outcome = sites::remove_product(self.site_mut(), index);
        self.edited(2, outcome)
    }

    pub fn save_pump(&mut self, form: &PumpForm) -> bool {
        self.edit_with(3, |site, lang, catalog| {
            sites::save_pump(site, form, lang, catalog)
        })
    }

    pub fn remove_pump(&mut self, index: usize) {
        if index < self.site().pumps.len() {
            self.site_mut().pumps.remove(index);
            self.edited(3, Ok(()));
        }
    }

    pub fn save_limit(&mut self, form: &LimitForm) -> bool {
        self.edit_with(4, |site, lang, catalog| {
            sites::save_limit(site, form, lang, catalog)
        })
    }

    pub fn remove_limit(&mut self, index: usize) {
        if index < self.site().limits.len() {
            self.site_mut().limits.remove(index);
            self.edited(4, Ok(()));
        }
    }

    /// The limits that apply at this site: the plant's permit entries, then the labelled
    /// regulatory defaults it does not override.
    pub fn site_limits(&self) -> Vec<Limit> {
        sites::effective_limits(self.site())
    }

    /// Fills the open calculator's empty inputs from the site: on the first visit to a
    /// calculator variant the site's delivered product is chosen, then its strength, SG and
    /// metering-pump capacity and the plant's typical flow fill fields the operator left empty.
    pub fn prefill_from_site(&mut self) {
        self.calc
            .set_max_use_levels(sites::max_use_levels(self.site()));
        self.calc.set_limits(self.site().limits.clone());
        self.calc.set_precisions(self.site().precisions());
        self.calc.set_site_facts(Some(self.site().facts()));
        let (kind, mode) = (self.calc.kind(), self.calc.mode());
        if !self.preselected.contains(&(kind, mode)) {
            self.preselected.push((kind, mode));
            let offered = self.calc.engine().products(kind, mode);
            if let Some(i) = offered
                .iter()
                .position(|p| self.site().delivered_of(&p.id).is_some())
            {
                self.calc.set_product(i);
            }
        }
        let view = self.calc.view();
        let product = view.products.get(view.product_index).map(|p| p.id.clone());
        let values = sites::site_values(
            self.site(),
            self.catalog.as_ref(),
            product.as_deref(),
            self.units(),
        );
        let lang = self.lang();
        self.prefill.apply(&mut self.calc, &values, lang);
    }

    /// Preferences only (never a dose record); a failed write just loses the preference. The
    /// profiles go first, so an interrupted save never leaves settings without sites.
    fn save(&self) {
        if let Some(dir) = &self.data_dir
            && sites::save(dir, &self.settings.sites).is_ok()
            && let Ok(text) = serde_json::to_string_pretty(&self.settings)
        {
            let _ = super::files::write_whole(&dir.join("settings.json"), text.as_bytes());
        }
    }

    /// Whether logged doses survive a restart (drives the "not saved" banner).
    pub fn log_is_persistent(&self) -> bool {
        self.log.persistent()
    }

    /// "Log this dose": records the current result for the selected site and point.
    pub fn log_current_dose(&mut self) -> Result<u64, Note> {
        let nothing = Note::new(key("log-nothing-to-log"));
        if !matches!(self.calc.view().status, Status::Ready(_)) {
            self.calc_note = Some(nothing.clone());
            return Err(nothing);
        }
        if self.settings.initials.is_empty() {
            let note = Note::new(key("log-need-initials"));
            self.calc_note = Some(note.clone());
            return Err(note);
        }
        let initials = self.settings.initials.clone();
        let Some(dose) = self.card_dose(&initials, self.point().unwrap_or("")) else {
            self.calc_note = Some(nothing.clone());
            return Err(nothing);
        };
        let site = self.site().name.clone();
        match self.log.append(&site, None, dose) {
            Ok(id) => {
                self.calc_note = Some(Note::new(key("log-saved")).arg("id", id));
                self.selected = Some(id);
                Ok(id)
            }
            Err(e) => {
                let note = log_error_note(&e);
                self.calc_note = Some(note.clone());
                Err(note)
            }
        }
    }

    /// The calculator card as the log records it ([`dose_of`]): with the engine's cautions
    /// and the site's permit warnings, as the card showed them. `None` without a dose.
    fn card_dose(&self, operator: &str, tap: &str) -> Option<crate::log::record::Dose> {
        dose_of(
            &self.calc.view(),
            Logging {
                operator,
                tap,
                lang: self.lang(),
                units: self.units(),
            },
        )
    }

    pub fn entries(&self) -> std::rc::Rc<Vec<Entry>> {
        self.log.entries()
    }

    /// Entries matching every filter, newest first, with today's date from the clock.
    pub fn filtered_entries(&self) -> Vec<Entry> {
        self.filtered_entries_on(utc_today())
    }

    /// Chooses a date chip: a quick range fills the From / To fields with its days (empty for
    /// an open end); "typed dates" keeps what the fields show, now fixed rather than following
    /// the clock.
    pub fn pick_log_range(&mut self, range: DateRange, today: NaiveDate) {
        let (from, to) = self.log_date_texts(today);
        let f = &mut self.log_filter;
        f.range = range;
        (f.from_text, f.to_text) = (from, to);
    }

    /// The operator typed in the From or To field: the typed dates decide from now on.
    pub fn edit_log_dates(&mut self, from: &str, to: &str) {
        let f = &mut self.log_filter;
        f.range = DateRange::Custom;
        f.from_text = from.to_string();
        f.to_text = to.to_string();
    }

    /// What the From / To fields show: a quick range's days on `today`, or what was typed.
    pub fn log_date_texts(&self, today: NaiveDate) -> (String, String) {
        let f = &self.log_filter;
        match f.range.span_on(today) {
            Some(span) => {
                let text = |d: Option<NaiveDate>| d.map(|d| d.to_string()).unwrap_or_default();
                (text(span.from), text(span.to))
            }
            None => (f.from_text.clone(), f.to_text.clone()),
        }
    }

    /// The days the list covers on `today`, or why the typed dates cannot be used (in words,
    /// never a guess: a bad date filters nothing until it is fixed).
    pub fn log_span(&self, today: NaiveDate) -> Result<DateSpan, Note> {
        let f = &self.log_filter;
        if let Some(span) = f.range.span_on(today) {
            return Ok(span);
        }
        let from = parse_day(&f.from_text)
            .map_err(|NotADay| Note::new(key("log-from-bad")).arg("text", f.from_text.trim()))?;
        let to = parse_day(&f.to_text)
            .map_err(|NotADay| Note::new(key("log-to-bad")).arg("text", f.to_text.trim()))?;
        if let (Some(a), Some(b)) = (from, to)
            && a > b
        {
            return Err(Note::new(key("log-dates-reversed"))
                .arg("from", a)
                .arg("to", b));
        }
        Ok(DateSpan::between(from, to))
    }

    /// Entries matching every filter, newest first, on the UTC day `today`. Nothing while
    /// the typed dates cannot be read ([`log_span`](Self::log_span) says why).
    pub fn filtered_entries_on(&self, today: NaiveDate) -> Vec<Entry> {
        let (all, listed) = self.filtered_on(today);
        listed.into_iter().map(|i| all[i].clone()).collect()
    }

    /// The log and the positions in it of the entries matching every filter, newest first:
    /// the list reads them in place rather than copying a long log on every refresh.
    pub fn filtered_on(&self, today: NaiveDate) -> (std::rc::Rc<Vec<Entry>>, Vec<usize>) {
        let all = self.log.entries();
        let f = &self.log_filter;
        let Ok(span) = self.log_span(today) else {
            return (all, Vec::new());
        };
        let needle = f.text.trim().to_lowercase();
        let utc_day = |when: &str| {
            chrono::DateTime::parse_from_rfc3339(when)
                .ok()
                .map(|t| t.with_timezone(&chrono::Utc).date_naive())
        };
        let listed = all
            .iter()
            .enumerate()
            .rev()
            .filter(|(_, e)| {
                let d = &e.dose;
                let dated = span == DateSpan::default()
                    || utc_day(&e.when).is_some_and(|day| span.contains(day));
                let product = d.product.as_ref().map_or("", |p| p.name.as_str());
                dated
                    && f.point.as_ref().is_none_or(|p| *p == d.tap)
                    && f.chemical.as_ref().is_none_or(|c| *c == d.chemical)
                    && (needle.is_empty()
                        || [&e.site, &d.tap, &d.chemical, product, &d.operator, &d.note]
                            .iter()
                            .any(|s| s.to_lowercase().contains(&needle)))
            })
            .map(|(i, _)| i)
            .collect();
        (all, listed)
    }

    /// The taps and the chemicals present in the log, sorted, for the filter choices.
    pub fn log_choices(&self) -> (Vec<String>, Vec<String>) {
        let entries = self.log.entries();
        let mut points: Vec<String> = entries.iter().map(|e| e.dose.tap.clone()).collect();
        let mut chemicals: Vec<String> = entries.iter().map(|e| e.dose.chemical.clone()).collect();
        for list in [&mut points, &mut chemicals] {
            list.sort();
            list.dedup();
        }
        (points, chemicals)
    }

    pub fn select_entry(&mut self, id: u64) {
        if self.selected != Some(id) {
            self.log_edit = LogEdit::None;
            self.log_edit_note = None;
        }
        self.selected = Some(id);
    }

    pub fn selected_entry(&self) -> Option<Entry> {
        let id = self.selected?;
        self.log.entries().iter().find(|e| e.id == id).cloned()
    }

    /// The detail of the selected entry, as rows of a label (a translation key) and a value:
    /// each number as the card showed it, in the unit it was logged in; what was not computed
    /// is a dash. The bridge only translates the labels.
    pub fn selected_detail(&self) -> Vec<DetailRow> {
        let Some(e) = self.selected_entry() else {
            return Vec::new();
        };
        let d = &e.dose;
        let shown = |id: &str| {
            d.result(id).map_or("—".to_string(), |r| {
                format!("{} {}", r.shown, r.unit).trim_end().to_string()
            })
        };
        let (setting_label, setting) = if d.result("feeder_setting").is_some() {
            (key("result-feeder-setting"), shown("feeder_setting"))
        } else {
            (key("result-pump"), shown("pump_setting"))
        };
        vec![
            DetailRow::when(key("log-field-when"), &e.when),
            DetailRow::text(key("log-field-site"), &e.site),
            DetailRow::text(key("log-field-point"), &d.tap),
            // The product's English name as recorded, else the compound (translated if a
            // name key).
            match &d.product {
                Some(p) => DetailRow::text(key("log-field-chemical"), &p.name),
                None => DetailRow::name(key("log-field-chemical"), &d.chemical),
            },
            DetailRow::text(key("result-dose"), &shown("dose")),
            DetailRow::text(key("result-feed"), &shown("feed_mass_rate")),
            DetailRow::text(setting_label, &setting),
            DetailRow::text(key("log-field-operator"), &d.operator),
            DetailRow::text(key("log-field-note"), &d.note),
        ]
    }

    /// The selected entry's original and every correction and void, oldest first.
    pub fn selected_history(&self) -> Vec<Revision> {
        self.selected
            .and_then(|id| self.log.history(id).ok())
            .unwrap_or_default()
    }

    /// Opens the correction or void form for the selected entry. A voided entry stays as
    /// it is: correcting it would silently bring it back.
    pub fn open_log_edit(&mut self, edit: LogEdit) {
        self.log_edit_note = None;
        match self.selected_entry() {
            Some(e) if e.voided() && edit != LogEdit::None => {
                self.log_edit = LogEdit::None;
                self.log_edit_note = Some(Note::new(key("log-entry-voided")));
            }
            Some(_) => self.log_edit = edit,
            None => self.log_edit = LogEdit::None,
        }
    }

    /// Checks what every change needs: an open entry that is not voided, initials, a reason.
    fn change_target(&mut self, reason: &str) -> Result<Entry, Note> {
        let entry = self
            .selected_entry()
            .ok_or_else(|| Note::new(key("log-pick-entry")))?;
        if entry.voided() {
            return Err(Note::new(key("log-entry-voided")));
        }
        if self.settings.initials.is_empty() {
            return Err(Note::new(key("log-need-initials")));
        }
        if reason.trim().is_empty() {
            return Err(Note::new(key("log-need-reason")));
        }
        Ok(entry)
    }

    /// "Correct…": records a correction of the selected entry, with a reason. A correction is a
    /// whole recomputed result: the calculator's current card for the entry's calculator (at
    /// the entry's tap), whose dose is the one typed in the form, so the corrected dose never
    /// sits beside the old flow or pump setting. Fix the readings in the calculator first.
    pub fn correct_selected(&mut self, dose: &str, note: &str, reason: &str) -> Result<(), Note> {
        let result = self.change_target(reason).and_then(|entry| {
            let lang = self.lang();
            let typed = numbers::parse(dose, lang)
                .ok()
                .filter(|d| d.is_finite() && *d >= 0.0)
                .ok_or_else(|| Note::new(key("log-dose-invalid")))?;
            let initials = self.settings.initials.clone();
            let mut fixed = self
                .card_dose(&initials, &entry.dose.tap)
                .filter(|d| d.calculator == entry.dose.calculator)
                .ok_or_else(|| Note::new(key("log-correct-needs-result")))?;
            // The dose as shown, without the range beside it.
            let shown = fixed
                .result(crate::log::record::result_id::DOSE)
                .and_then(|r| r.shown.split(" (").next().map(str::to_string))
                .unwrap_or_default();
            if numbers::parse(&shown, lang).ok() != Some(typed) {
                return Err(Note::new(key("log-correct-dose-differs")).arg("dose", shown));
            }
            fixed.tap = entry.dose.tap.clone();
            fixed.note = note.trim().to_string();
            let unchanged = crate::log::record::Dose {
                operator: fixed.operator.clone(),
                ..entry.dose.clone()
            };
            // Ranges are left out of "nothing changed": they are sums of re-run calculations
            // and may differ in their last bits where every number shown is the same.
            let without_ranges = |d: &crate::log::record::Dose| {
                let mut d = d.clone();
                d.results.iter_mut().for_each(|r| r.range = None);
                d
            };
            if without_ranges(&fixed) == without_ranges(&unchanged) {
                return Err(Note::new(key("log-nothing-changed")));
            }
            let fix = Amendment {
                reason: reason.trim().to_string(),
                dose: fixed,
            };
            self.log
                .correct(entry.id, fix)
                .map(|()| entry.id)
                .map_err(|e| log_error_note(&e))
        });
        self.finish_change(result, key("log-corrected"))
    }

    /// "Void…": records that the selected entry should not count, with a reason.
    pub fn void_selected(&mut self, reason: &str) -> Result<(), Note> {
        let result = self.change_target(reason).and_then(|entry| {
            let initials = self.settings.initials.clone();
            self.log
                .void(entry.id, &initials, reason.trim())
                .map(|()| entry.id)
                .map_err(|e| log_error_note(&e))
        });
        self.finish_change(result, key("log-voided"))
    }

    fn finish_change(&mut self, result: Result<u64, Note>, done: &str) -> Result<(), Note> {
        match result {
            Ok(id) => {
                self.log_edit = LogEdit::None;
                self.log_edit_note = Some(Note::new(done).arg("id", id));
                Ok(())
            }
            Err(note) => {
                self.log_edit_note = Some(note.clone());
                Err(note)
            }
        }
    }

    /// The newest entry for each (point, chemical) at the current site.
    pub fn latest_doses(&self) -> Vec<LatestDose> {
        let site = self.site().name.clone();
        let mut out: Vec<LatestDose> = Vec::new();
        let mut seen: Vec<(String, String)> = Vec::new();
        for e in self.log.entries().iter().rev().filter(|e| !e.voided()) {
            let pair = (e.dose.tap.clone(), e.dose.chemical.clone());
            if e.site != site || seen.contains(&pair) {
                continue;
            }
            seen.push(pair);
            out.push(LatestDose {
                point: e.dose.tap.clone(),
                chemical: e.dose.chemical.clone(),
                dose: e
                    .dose
                    .dose_mg_per_l()
                    .map_or_else(|| "—".into(), |d| numbers::format_sig(d, 3, self.lang())),
                when: e.when.replace('T', " ").trim_end_matches('Z').to_string(),
            });
        }
        out
    }

    /// Exports what the list shows to the typed path, or (left empty) to a file in the export
    /// folder named by its dates.
    pub fn export_log(&mut self, path: &str) {
        self.export_log_on(path, utc_today());
    }

    /// Exports exactly the entries the list shows on the UTC day `today` — date range, tap,
    /// chemical and free text applied, voided entries with their status — and says how many
    /// went out and which days they cover.
    pub fn export_log_on(&mut self, path: &str, today: NaiveDate) {
        self.log_note = Some(match self.export_listed(path, today) {
            Ok(note) | Err(note) => note,
        });
    }

    fn export_listed(&self, path: &str, today: NaiveDate) -> Result<Note, Note> {
        let span = self
            .log_span(today)
            .map_err(|_| Note::new(key("log-export-fix-dates")))?;
        let listed: Vec<u64> = self
            .filtered_entries_on(today)
            .iter()
            .map(|e| e.id)
            .collect();
        if listed.is_empty() {
            return Err(Note::new(key("log-export-nothing")));
        }
        let format = self.log_format;
        let target = if path.trim().is_empty() {
            self.default_export_path(format, &span.file_stem(today))
                .ok_or_else(|| Note::new(key("log-need-path")))?
        } else {
            PathBuf::from(path.trim())
        };
        let f = &self.log_filter;
        let narrowed = f.point.is_some() || f.chemical.is_some() || !f.text.trim().is_empty();
        let filters = Note::new(if narrowed {
            key("log-export-narrowed")
        } else {
            key("log-export-not-narrowed")
        });
        self.log
            .export(&target, format, &listed, self.site().units)
            .map(|n| {
                Note::new(key("log-exported"))
                    .arg("count", n)
                    .arg("path", target.display())
                    .part("span", span.phrase())
                    .part("filters", filters)
            })
            .map_err(|e| log_error_note(&e))
    }

    /// Merges another device's log file; the message counts new, known and conflicting records.
    pub fn import_log(&mut self, path: &str) {
        if path.trim().is_empty() {
            self.log_note = Some(Note::new(key("log-need-import-path")));
            return;
        }
        self.log_note = Some(match self.log.import(&PathBuf::from(path.trim())) {
            Ok(r) => Note::new(key("log-imported"))
                .arg("added", r.added)
                .arg("present", r.already_present)
                .arg("conflicts", r.conflicting)
                .arg("unreadable", r.unreadable),
            Err(e) => log_error_note(&e),
        });
        self.selected = self
            .selected
            .filter(|id| self.log.entries().iter().any(|e| e.id == *id));
    }

    /// The app's export folder (`<data dir>/exports`), when the platform gave a data dir.
    pub fn export_folder(&self) -> Option<PathBuf> {
        self.data_dir.as_ref().map(|d| d.join("exports"))
    }

    /// `<export folder>/molefeed-log-<stem>.<ext>` (the stem names the days, see
    /// [`DateSpan::file_stem`]), numbered so no earlier export is overwritten; creates the
    /// folder.
    pub fn default_export_path(&self, format: ExportFormat, stem: &str) -> Option<PathBuf> {
        let folder = self.export_folder()?;
        std::fs::create_dir_all(&folder).ok()?;
        let ext = format.extension();
        (1..1000)
            .map(|n| match n {
                1 => folder.join(format!("molefeed-log-{stem}.{ext}")),
                n => folder.join(format!("molefeed-log-{stem}-{n}.{ext}")),
            })
            .find(|p| !p.exists())
    }

    /// The titration curve for the calculator in use when it draws one (coagulation: pH
    /// against coagulant, hydroxide precipitating), otherwise the first screen of the table
    /// that draws one (pH adjustment). The chosen dose and the pH it reaches are marked on it
    /// and said in words.
    pub fn titration_plot(&self) -> PlotView {
        let open = (self.calc.kind(), self.calc.mode());
        let (kind, mode) = if open.1.calculator().has_curve() {
            open
        } else {
            CalcKind::all()
                .into_iter()
                .find_map(|k| {
                    let m = k.modes().into_iter().find(|m| m.calculator().has_curve())?;
                    Some((k, m))
                })
                .unwrap_or(open)
        };
        let need = format!("plot-need-inputs-{}", kind.code());
        let Some(request) = self.calc.request_for(kind, mode) else {
            return PlotView {
                message: Some(Note::new(&need)),
                ..PlotView::default()
            };
        };
        let engine = self.calc.engine();
        let curve = match engine.titration_curve(&request) {
            Ok(curve) => curve,
            Err(SeamError::NotConnected) => {
                return PlotView {
                    message: Some(Note::new(key("calc-not-connected"))),
                    ..PlotView::default()
                };
            }
            Err(SeamError::Engine(e)) => {
                return PlotView {
                    message: Some(Note::new(&format!("error-{}", e.kind().code()))),
                    ..PlotView::default()
                };
            }
        };
        let mut view = self.plot_of(&curve.points, key("plot-titrant-axis"), &curve.titrant);
        // The chosen point: the dose the calculator gives and the pH it reaches there.
        let outcome = engine.compute(&request).ok();
        let dose = outcome.as_ref().and_then(|o| o.dose_mg_per_l);
        let ph = outcome.as_ref().and_then(|o| {
            o.extras
                .iter()
                // The pH the dose leaves: the first pH the calculator reports after it.
                .find(|e| e.key.starts_with("ph-after"))
                .map(|e| e.value)
        });
        if let (Some(dose), Some(ph), Some((x, y))) = (dose, ph, ranges(&curve.points)) {
            let lang = self.lang();
            // The dose to the figures the calculator shows it with.
            let figures = outcome
                .as_ref()
                .and_then(|o| o.figures)
                .map_or(3, |f| u32::from(f).clamp(1, 4));
            view.markers = plot::crosshair(Some(dose), Some(ph), x, y);
            view.legend = Some(
                Note::new(key("plot-chosen-point"))
                    .arg("dose", numbers::format_sig(dose, figures, lang))
                    .arg("ph", numbers::format_fixed(ph, 2, lang))
                    .arg(
                        "start",
                        numbers::format_fixed(curve.points.first().map_or(0.0, |p| p.1), 2, lang),
                    ),
            );
        }
        view
    }

    /// Logged doses of the chemical of the selected (or newest) entry, oldest first.
    pub fn trend_plot(&self) -> PlotView {
        // Read in place: a copy of a long log here was a large part of the start-up.
        let all = self.log.entries();
        let entries = || all.iter().filter(|e| !e.voided());
        let Some(focus) = self
            .selected_entry()
            .or_else(|| entries().next_back().cloned())
        else {
            return PlotView {
                message: Some(Note::new(key("plot-no-log"))),
                ..PlotView::default()
            };
        };
        let series: Vec<&Entry> = entries()
            .filter(|e| e.dose.chemical == focus.dose.chemical && e.dose.tap == focus.dose.tap)
            .collect();
        // Days since the series' first entry, so a gap of a week looks like a week.
        let days = |e: &Entry| {
            chrono::DateTime::parse_from_rfc3339(&e.when)
                .ok()
                .map(|t| t.timestamp() as f64 / 86_400.0)
        };
        let first = series.first().and_then(|e| days(e));
        let points: Vec<(f64, f64)> = series
            .iter()
            .filter_map(|e| Some((days(e)? - first?, e.dose.dose_mg_per_l()?)))
            .collect();
        if points.len() < 2 {
            return PlotView {
                message: Some(Note::new(key("plot-need-two"))),
                ..PlotView::default()
            };
        }
        let label = format!("{} · {}", focus.dose.chemical, focus.dose.tap);
        self.plot_of(&points, key("plot-days-axis"), &label)
    }

    fn plot_of(&self, points: &[(f64, f64)], x_key: &str, subject: &str) -> PlotView {
        let Some((x, y)) = ranges(points) else {
            return PlotView {
                message: Some(Note::new(key("plot-no-data"))),
                ..PlotView::default()
            };
        };
        let lang = self.lang();
        PlotView {
            commands: plot::polyline(points, x, y),
            grid: plot::grid(&[y.lo + (y.hi - y.lo) / 2.0], y),
            x_key: x_key.to_string(),
            subject: subject.to_string(),
            y_lo: numbers::format_sig(y.lo, 3, lang),
            y_hi: numbers::format_sig(y.hi, 3, lang),
            x_lo: numbers::format_sig(x.lo, 3, lang),
            x_hi: numbers::format_sig(x.hi, 3, lang),
            markers: String::new(),
            legend: None,
            message: None,
        }
    }

    /// The display unit of the dose (same in both systems; here for the labels).
    pub fn dose_unit(&self) -> Unit {
        Unit::MgPerL
    }

    /// Puts back the calculator inputs kept by [`save_inputs`](Self::save_inputs), if any.
    pub fn restore_inputs(&mut self) {
        if let Some(saved) = self
            .data_dir
            .as_ref()
            .and_then(|d| std::fs::read_to_string(d.join(INPUTS_FILE)).ok())
            .and_then(|t| serde_json::from_str::<CalcInputs>(&t).ok())
        {
            self.calc.restore(&saved);
        }
    }

    /// Keeps what was typed in the calculators, so a restart (an Android activity killed in
    /// the background) comes back to the same readings. A preference-like file, written whole
    /// to a temporary name and renamed, so a crash leaves the old or the new one, never half.
    pub fn save_inputs(&self) {
        let Some(dir) = &self.data_dir else {
            return;
        };
        let Ok(text) = serde_json::to_string_pretty(&self.calc.inputs()) else {
            return;
        };
        if std::fs::create_dir_all(dir).is_ok() {
            let _ = super::files::write_whole(&dir.join(INPUTS_FILE), text.as_bytes());
        }
    }
}

/// Where the calculator inputs are kept between runs, in the data directory.
const INPUTS_FILE: &str = "calculator-inputs.json";

/// The axis ranges of a plot of `points`.
fn ranges(points: &[(f64, f64)]) -> Option<(Range, Range)> {
    Some((
        Range::around(points.iter().map(|p| p.0))?,
        Range::around(points.iter().map(|p| p.1))?,
    ))
}

fn log_error_note(e: &LogError) -> Note {
    match e {
        LogError::Rejected { code, message } => {
            Note::new(&format!("log-error-{code}")).arg("detail", message)
        }
        LogError::Io(message) => Note::new(key("log-io-error")).arg("detail", message),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::app::dose_log::PersistentLog;
    use crate::app::seams::Unconnected;
    use crate::app::sites::{LimitForm, ProductForm, PumpForm, SiteProblem};
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
        let flow = entries[0]
            .dose
            .result("flow")
            .expect("flow kept with the entry");
        assert_eq!(
            (flow.value, flow.unit.as_str()),
            (1.0, "MGD"),
            "as typed and shown"
        );
        // Through the real engine: a liquid on a metering pump has a pump setting and no
        // feeder setting, which is absent rather than zero.
        assert!(entries[0].dose.result("pump_setting").is_some());
        assert_eq!(
            entries[0].dose.result("feeder_setting"),
            None,
            "not computed, not logged"
        );
        let latest = s.latest_doses();
        assert_eq!(latest.len(), 1);
        assert_eq!(latest[0].dose, "2.25");
        assert_eq!(s.calc_note.as_ref().unwrap().key, "log-saved");
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
        s.log_filter.text = "SETTLED".into();
        let rows = s.filtered_entries();
        assert_eq!(rows.len(), 1);
        assert_eq!(rows[0].dose.dose_mg_per_l(), Some(2.0));
        // Both doses are of the same compound (the product's dose basis, such as Cl2).
        let chemical = s.entries()[0].dose.chemical.to_lowercase();
        s.log_filter.text = chemical;
        assert_eq!(s.filtered_entries().len(), 2);
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
        let at = chrono::DateTime::parse_from_rfc3339(when).unwrap();
        s.log
            .append("Demo site", Some(at), logged(point, chemical, dose))
            .unwrap()
    }

    /// The doses the list shows for a filter on a fixed day, newest first.
    fn shown(s: &mut AppState, filter: LogFilter) -> Vec<f64> {
        s.log_filter = filter;
        s.filtered_entries_on(day("2026-12-02"))
            .iter()
            .map(|e| e.dose.dose_mg_per_l().unwrap())
            .collect()
    }

    #[test]
    fn date_point_and_chemical_filters_combine() {
        let mut s = state(Rc::new(Unconnected));
        seed(&mut s, "2026-10-15T08:00:00Z", "Clearwell", "NaOCl", 1.0);
        seed(&mut s, "2026-11-28T08:00:00Z", "Clearwell", "NaOCl", 2.0);
        seed(&mut s, "2026-12-02T06:00:00Z", "Raw water", "NaOH", 3.0);
        seed(&mut s, "2026-12-02T07:00:00Z", "Clearwell", "NaOCl", 4.0);
        let f = |range, point: Option<&str>, chemical: Option<&str>| LogFilter {
            range,
            point: point.map(str::to_string),
            chemical: chemical.map(str::to_string),
            ..LogFilter::default()
        };
        let cases: [(LogFilter, &[f64]); 7] = [
            (f(DateRange::All, None, None), &[4.0, 3.0, 2.0, 1.0]),
            (f(DateRange::Today, None, None), &[4.0, 3.0]),
            (f(DateRange::Week, None, None), &[4.0, 3.0, 2.0]),
            (f(DateRange::Days30, None, None), &[4.0, 3.0, 2.0]),
            (f(DateRange::All, Some("Clearwell"), None), &[4.0, 2.0, 1.0]),
            (
                f(DateRange::Week, Some("Clearwell"), Some("NaOCl")),
                &[4.0, 2.0],
            ),
            (f(DateRange::Today, None, Some("NaOH")), &[3.0]),
        ];
        for (filter, expected) in cases {
            assert_eq!(shown(&mut s, filter.clone()), expected, "{filter:?}");
        }
        let (points, chemicals) = s.log_choices();
        assert_eq!(points, ["Clearwell", "Raw water"]);
        assert_eq!(chemicals, ["NaOCl", "NaOH"]);
    }

    fn day(text: &str) -> NaiveDate {
        NaiveDate::parse_from_str(text, "%Y-%m-%d").unwrap()
    }

    /// `""` is an open end.
    fn span_text(span: DateSpan) -> (String, String) {
        let text = |d: Option<NaiveDate>| d.map(|d| d.to_string()).unwrap_or_default();
        (text(span.from), text(span.to))
    }

    #[test]
    fn quick_ranges_are_utc_calendar_days() {
        fn check(range: DateRange, today: &str, expected: Option<(&str, &str)>) {
            let got = range.span_on(day(today)).map(span_text);
            let want = expected.map(|(f, t)| (f.to_string(), t.to_string()));
            assert_eq!(got, want, "{range:?} on {today}");
        }
        use DateRange::*;
        check(LastMonth, "2026-12-02", Some(("2026-11-01", "2026-11-30")));
        check(LastMonth, "2026-12-01", Some(("2026-11-01", "2026-11-30")));
        check(LastMonth, "2026-12-31", Some(("2026-11-01", "2026-11-30")));
        check(LastMonth, "2028-03-01", Some(("2028-02-01", "2028-02-29")));
        check(LastMonth, "2027-03-01", Some(("2027-02-01", "2027-02-28")));
        check(LastMonth, "2027-01-01", Some(("2026-12-01", "2026-12-31")));
        check(LastMonth, "2026-08-31", Some(("2026-07-01", "2026-07-31")));
        check(ThisMonth, "2026-12-02", Some(("2026-12-01", "2026-12-31")));
        check(ThisMonth, "2028-02-15", Some(("2028-02-01", "2028-02-29")));
        check(ThisMonth, "2026-04-30", Some(("2026-04-01", "2026-04-30")));
        check(ThisMonth, "2026-01-01", Some(("2026-01-01", "2026-01-31")));
        check(Today, "2026-12-02", Some(("2026-12-02", "2026-12-02")));
        check(Week, "2026-12-02", Some(("2026-11-26", "2026-12-02")));
        check(Week, "2026-03-03", Some(("2026-02-25", "2026-03-03")));
        check(Days30, "2026-12-02", Some(("2026-11-03", "2026-12-02")));
        check(All, "2026-12-02", Some(("", "")));
        check(Custom, "2026-12-02", None);
    }

    #[test]
    fn typed_dates_are_read_or_refused_in_words() {
        fn check(from: &str, to: &str, expected: Result<(&str, &str), &str>) {
            let mut s = state(Rc::new(Unconnected));
            s.edit_log_dates(from, to);
            assert_eq!(
                s.log_filter.range,
                DateRange::Custom,
                "typing makes it custom"
            );
            let got = s.log_span(day("2026-12-02")).map(span_text);
            let got = got.as_ref().map_err(|n| n.key.as_str());
            let want = expected.map(|(f, t)| (f.to_string(), t.to_string()));
            assert_eq!(got, want.as_ref().map_err(|k| *k), "{from:?} .. {to:?}");
        }
        check("2026-11-01", "2026-11-30", Ok(("2026-11-01", "2026-11-30")));
        check("20261101", "20261130", Ok(("2026-11-01", "2026-11-30")));
        check(" 2026-11-01 ", "", Ok(("2026-11-01", "")));
        check("", "2026-11-30", Ok(("", "2026-11-30")));
        check("", "", Ok(("", "")));
        check("  ", "\t", Ok(("", "")));
        check("2026-11-30", "2026-11-30", Ok(("2026-11-30", "2026-11-30")));
        check("2028-02-29", "", Ok(("2028-02-29", "")));
        check("2026-02-29", "", Err("log-from-bad"));
        check("2026-11-31", "", Err("log-from-bad"));
        check("2026-13-01", "", Err("log-from-bad"));
        check("26-11-01", "", Err("log-from-bad"));
        check("+2026-11-01", "", Err("log-from-bad"));
        check("2026-11", "", Err("log-from-bad"));
        check("2026/11/01", "", Err("log-from-bad"));
        check("yesterday", "", Err("log-from-bad"));
        check("2026111", "", Err("log-from-bad"));
        check("", "30/11/2026", Err("log-to-bad"));
        check("", "2026-1130", Err("log-to-bad"));
        check("", "202611301", Err("log-to-bad"));
        check("2026-12-01", "2026-11-30", Err("log-dates-reversed"));
        check("20261201", "2026-11-30", Err("log-dates-reversed"));
    }

    #[test]
    fn a_date_problem_names_what_was_typed() {
        let mut s = state(Rc::new(Unconnected));
        s.edit_log_dates("2026-12-01", "2026-11-30");
        let note = s.log_span(day("2026-12-02")).unwrap_err();
        assert_eq!(
            note.args,
            [("from", "2026-12-01".into()), ("to", "2026-11-30".into())]
        );
        s.edit_log_dates(" 2026-02-30 ", "");
        let note = s.log_span(day("2026-12-02")).unwrap_err();
        assert_eq!(note.args, [("text", "2026-02-30".into())]);
    }

    #[test]
    fn quick_ranges_fill_the_fields_and_typing_takes_over() {
        let mut s = state(Rc::new(Unconnected));
        let today = day("2026-12-02");
        let fields = |s: &AppState| s.log_date_texts(today);
        assert_eq!(fields(&s), (String::new(), String::new()), "All: both open");
        s.pick_log_range(DateRange::LastMonth, today);
        assert_eq!(fields(&s), ("2026-11-01".into(), "2026-11-30".into()));
        // "Typed dates" keeps the days the fields show, now fixed.
        s.pick_log_range(DateRange::Custom, today);
        assert_eq!(fields(&s), ("2026-11-01".into(), "2026-11-30".into()));
        assert_eq!(
            span_text(s.log_span(day("2027-05-05")).unwrap()),
            ("2026-11-01".into(), "2026-11-30".into()),
            "typed days do not follow the clock"
        );
        s.pick_log_range(DateRange::Week, today);
        s.edit_log_dates("2026-11-2", "2026-11-26");
        assert_eq!(s.log_filter.range, DateRange::Custom);
        assert_eq!(
            fields(&s),
            ("2026-11-2".into(), "2026-11-26".into()),
            "kept as typed"
        );
        s.pick_log_range(DateRange::All, today);
        assert_eq!(fields(&s), (String::new(), String::new()));
    }

    /// The dose column and status of each data row of an export, in file order.
    fn csv_rows(path: &std::path::Path) -> Vec<(String, String)> {
        let mut reader = csv::Reader::from_path(path).unwrap();
        let header = reader.headers().expect("a header row").clone();
        let column = |t: &str| header.iter().position(|c| c == t).unwrap();
        let (dose, status) = (column("dose_mg_per_L"), column("status"));
        reader
            .records()
            .map(|cells| {
                let cells = cells.unwrap();
                (cells[dose].to_string(), cells[status].to_string())
            })
            .collect()
    }

    #[test]
    fn last_month_exports_only_its_entries_to_a_file_named_by_its_days() {
        let dir = temp_dir("month-export");
        let mut s = open(&dir, Rc::new(Unconnected));
        let today = day("2026-12-02");
        seed(&mut s, "2026-10-31T23:59:59Z", "Clearwell", "NaOCl", 1.0);
        seed(&mut s, "2026-11-01T00:00:00Z", "Clearwell", "NaOCl", 2.0);
        let raw = seed(&mut s, "2026-11-15T08:00:00Z", "Raw water", "NaOH", 3.0);
        seed(&mut s, "2026-11-30T23:59:59Z", "Clearwell", "NaOCl", 4.0);
        seed(&mut s, "2026-12-01T00:00:00Z", "Clearwell", "NaOCl", 5.0);
        s.set_initials("KT");
        s.select_entry(raw);
        s.void_selected("wrong tap").unwrap();

        s.pick_log_range(DateRange::LastMonth, today);
        s.export_log_on("", today);
        let note = s.log_note.clone().unwrap();
        assert_eq!(note.key, "log-exported", "{note:?}");
        assert!(note.args.contains(&("count", "3".into())), "{note:?}");
        let span = &note.parts.iter().find(|(n, _)| *n == "span").unwrap().1;
        assert_eq!(span.key, "log-span-between");
        assert_eq!(
            span.args,
            [("from", "2026-11-01".into()), ("to", "2026-11-30".into())]
        );
        let first = dir.join("exports/molefeed-log-2026-11-01_2026-11-30.csv");
        let rows = |dose: &str, status: &str| (dose.to_string(), status.to_string());
        // Oldest first; the voided entry is in the report, marked.
        let november = [
            rows("2", "original"),
            rows("3", "voided"),
            rows("4", "original"),
        ];
        assert_eq!(csv_rows(&first), november);

        // Again: a numbered file, the first left as it was.
        s.export_log_on("", today);
        let second = dir.join("exports/molefeed-log-2026-11-01_2026-11-30-2.csv");
        assert_eq!(csv_rows(&second), november);
        assert_eq!(csv_rows(&first), november);

        // A tap and free text narrow the file as they narrow the list, and the message says so.
        s.log_filter.point = Some("Clearwell".into());
        s.export_log_on("", today);
        let third = dir.join("exports/molefeed-log-2026-11-01_2026-11-30-3.csv");
        assert_eq!(
            csv_rows(&third),
            [rows("2", "original"), rows("4", "original")]
        );
        let filters = &s.log_note.as_ref().unwrap().parts[1];
        assert_eq!(filters, &("filters", Note::new("log-export-narrowed")));
        s.log_filter.point = None;
        s.log_filter.text = "raw wat".into();
        let typed = dir.join("november-raw.csv");
        s.export_log_on(&typed.display().to_string(), today);
        assert_eq!(csv_rows(&typed), [rows("3", "voided")]);

        // Open ends and typed days name the file by what they cover.
        s.log_filter.text.clear();
        s.edit_log_dates("2026-11-30", "");
        s.export_log_on("", today);
        let onwards = dir.join("exports/molefeed-log-2026-11-30_onwards.csv");
        assert_eq!(
            csv_rows(&onwards),
            [rows("4", "original"), rows("5", "original")]
        );
        s.edit_log_dates("", "20261031");
        s.export_log_on("", today);
        let until = dir.join("exports/molefeed-log-until_2026-10-31.csv");
        assert_eq!(csv_rows(&until), [rows("1", "original")]);
        std::fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn bad_dates_or_an_empty_list_export_nothing() {
        let dir = temp_dir("no-export");
        let mut s = open(&dir, Rc::new(Unconnected));
        let today = day("2026-12-02");
        seed(&mut s, "2026-11-15T08:00:00Z", "Clearwell", "NaOCl", 1.0);
        let cases = [
            ("2026-11-31", "", "log-export-fix-dates"),
            ("2026-12-01", "2026-11-01", "log-export-fix-dates"),
            ("2026-12-01", "2026-12-31", "log-export-nothing"),
        ];
        for (from, to, want) in cases {
            s.edit_log_dates(from, to);
            assert!(s.filtered_entries_on(today).len() <= 1);
            s.export_log_on("", today);
            assert_eq!(s.log_note.as_ref().unwrap().key, want, "{from}..{to}");
        }
        s.edit_log_dates("2026-11-31", "");
        assert!(
            s.filtered_entries_on(today).is_empty(),
            "a bad date lists nothing"
        );
        let written = std::fs::read_dir(dir.join("exports"))
            .map(|d| d.count())
            .unwrap_or(0);
        assert_eq!(written, 0, "no file was written");
        let _ = std::fs::remove_dir_all(&dir);
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
        s.select_entry(id);
        s.open_log_edit(LogEdit::Correct);
        assert_eq!(s.log_edit, LogEdit::Correct);
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
            s.selected_history().len(),
            1,
            "refused changes record nothing"
        );
        s.correct_selected("1.8", "meter fixed", "wrong meter")
            .unwrap();
        assert_eq!(s.log_edit, LogEdit::None, "form closes after saving");
        assert_eq!(s.log_edit_note.as_ref().unwrap().key, "log-corrected");
        let e = s.selected_entry().unwrap();
        assert_eq!(
            (e.dose.dose_mg_per_l(), e.dose.note.as_str()),
            (Some(1.8), "meter fixed")
        );
        let flow = e.dose.result("flow").expect("the recomputed flow");
        assert_eq!((flow.value, flow.shown.as_str()), (2.0, "2.00"));
        // The whole result is the recomputed card's, not the seed's.
        let Status::Ready(card) = s.calc.view().status else {
            panic!("the card shows a result")
        };
        let volume = e
            .dose
            .result("product_volume_rate")
            .expect("recomputed with the card");
        // As the card showed it: the number and the range beside it.
        let range = card.ranges[2].as_deref().expect("a flow meter's range");
        assert_eq!(volume.shown, format!("{} ({range})", card.product));
        assert_eq!(
            (e.dose.operator.as_str(), e.dose.tap.as_str()),
            ("KT", "Clearwell")
        );
        s.open_log_edit(LogEdit::Correct);
        assert_eq!(
            s.correct_selected("1.8", "meter fixed", "again")
                .unwrap_err()
                .key,
            "log-nothing-changed"
        );
        assert_eq!(s.selected_history().len(), 2);
        assert_eq!(s.void_selected("").unwrap_err().key, "log-need-reason");
        s.void_selected("logged at the wrong site").unwrap();
        assert!(s.selected_entry().unwrap().voided());
        assert_eq!(s.selected_history().len(), 3);
        s.open_log_edit(LogEdit::Correct);
        assert_eq!(s.log_edit, LogEdit::None, "a voided entry is not reopened");
        assert_eq!(s.log_edit_note.as_ref().unwrap().key, "log-entry-voided");
        assert!(
            s.latest_doses().is_empty(),
            "voided doses are not the latest"
        );
    }

    #[test]
    fn export_goes_to_a_dated_file_in_the_export_folder() {
        let dir = std::env::temp_dir().join(format!("molefeed-export-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        let mut s = AppState::new(
            Rc::new(Unconnected),
            Box::new(PersistentLog::scratch()),
            Some(dir.clone()),
            None,
        );
        seed(&mut s, "2026-12-02T06:00:00Z", "Clearwell", "NaOCl", 1.5);
        let first = s
            .default_export_path(ExportFormat::Csv, "2026-12-02")
            .unwrap();
        assert_eq!(first, dir.join("exports/molefeed-log-2026-12-02.csv"));
        std::fs::write(&first, "earlier").unwrap();
        let second = s
            .default_export_path(ExportFormat::JsonLines, "2026-12-02")
            .unwrap();
        assert!(second.ends_with("molefeed-log-2026-12-02.jsonl"));
        let third = s
            .default_export_path(ExportFormat::Csv, "2026-12-02")
            .unwrap();
        assert!(
            third.ends_with("molefeed-log-2026-12-02-2.csv"),
            "{third:?}"
        );
        s.log_format = ExportFormat::Csv;
        s.export_log("  ");
        let note = s.log_note.clone().unwrap();
        assert_eq!(note.key, "log-exported");
        let written = PathBuf::from(&note.args[1].1);
        assert!(std::fs::read_to_string(&written).unwrap().contains("NaOCl"));
        assert_eq!(std::fs::read_to_string(&first).unwrap(), "earlier");
        s.import_log("");
        assert_eq!(s.log_note.as_ref().unwrap().key, "log-need-import-path");
        s.import_log(&dir.join("missing.doselog").display().to_string());
        assert_eq!(s.log_note.as_ref().unwrap().key, "log-error-not-found");
        std::fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn site_profile_edits() {
        let mut s = state(Rc::new(Unconnected));
        let taps = s.taps().len();
        assert!(s.add_point("Filter effluent"));
        assert_eq!(s.point(), Some("Filter effluent"), "a new tap is chosen");
        assert!(!s.add_point("Filter effluent"));
        assert_eq!(problem_key(&s), Some("site-tap-exists".into()));
        assert_eq!(s.taps().len(), taps + 1);
        assert!(s.rename_point(taps, "Filter 2 effluent"));
        assert_eq!(s.point(), Some("Filter 2 effluent"));
        s.remove_point(taps);
        assert_eq!(s.taps().len(), taps);
        assert!(s.point().is_some());
        assert!(!s.rename_site("   "));
        assert_eq!(problem_key(&s), Some("site-need-name".into()));
        assert!(s.rename_site("  East wells "));
        assert_eq!(s.site().name, "East wells");
        assert!(s.add_site("River intake"));
        assert_eq!(s.site().name, "River intake");
        assert_eq!(s.point(), None);
        s.reset_to_demo();
        assert!(s.site().name.contains("Harrowmere"));
        assert_eq!(s.settings.sites.len(), 2);
    }

    fn problem_key(s: &AppState) -> Option<String> {
        match &s.site_problem {
            Some(SiteProblem::Note(n)) => Some(n.key.clone()),
            Some(SiteProblem::Engine(e)) => Some(format!("engine:{}", e.kind().code())),
            None => None,
        }
    }

    fn temp_dir(name: &str) -> PathBuf {
        let dir = std::env::temp_dir().join(format!("molefeed-{name}-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        dir
    }

    fn open(dir: &std::path::Path, engine: Rc<dyn CalcEngine>) -> AppState {
        AppState::new(
            engine,
            Box::new(PersistentLog::scratch()),
            Some(dir.to_path_buf()),
            None,
        )
    }

    #[test]
    fn a_fresh_data_dir_opens_on_the_demo_site_and_keeps_edits() {
        let dir = temp_dir("fresh-site");
        let mut s = open(&dir, Rc::new(Unconnected));
        assert!(s.site().name.contains("Harrowmere"), "{}", s.site().name);
        assert_eq!(s.point(), Some("Raw water tap at screen house"));
        assert!(!s.site().pumps.is_empty() && !s.site().products.is_empty());
        assert!(s.add_point("Backwash return"));
        drop(s);
        let s = open(&dir, Rc::new(Unconnected));
        assert_eq!(s.point(), Some("Backwash return"));
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
        let s = open(&dir, Rc::new(Unconnected));
        assert_eq!(s.lang(), Lang::Es);
        assert_eq!(s.settings.sites.len(), 2);
        assert_eq!(s.site().name, "Planta Sur");
        assert_eq!(s.taps(), vec!["Agua cruda", "Depósito"]);
        assert_eq!(s.point(), Some("Depósito"));
        let ids: Vec<_> = s.site().sampling_taps.iter().map(|t| &t.id).collect();
        assert_eq!(ids, ["tap-1", "tap-2"]);
        assert_eq!(s.settings.sites[1].name, "Site");
        assert_eq!(
            s.settings.sites[1].sampling_taps.len(),
            1,
            "duplicate tap kept once"
        );
        let catalog = Catalog::builtin().unwrap();
        for site in &s.settings.sites {
            site.validate(&catalog).expect("migrated profile is valid");
        }
        // Migrated once: the profiles are in sites.json and survive the next start.
        assert!(dir.join("sites.json").exists());
        drop(s);
        let s = open(&dir, Rc::new(Unconnected));
        assert_eq!(s.taps(), vec!["Agua cruda", "Depósito"]);
        // A damaged sites.json is kept aside, and the app still opens.
        std::fs::write(dir.join("sites.json"), "{ not json").unwrap();
        let s = open(&dir, Rc::new(Unconnected));
        assert!(!s.settings.sites.is_empty());
        assert!(dir.join("sites.json.unreadable").exists());
        std::fs::remove_dir_all(&dir).unwrap();
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
        let flow: f64 = s.calc.text("flow").parse().unwrap();
        assert!((flow - 9085.0).abs() < 1.0, "2.4 MGD in m³/d: {flow}");
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
    fn targets_outside_the_site_limits_raise_warnings_naming_the_source() {
        let s = state(Rc::new(Unconnected));
        let limits = s.site_limits();
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
        assert_eq!(breach.level, crate::app::seams::CautionLevel::Warning);
        assert!(
            breach
                .params
                .contains(&("field".into(), "field-residual-target".into()))
        );
        assert!(
            breach
                .params
                .iter()
                .any(|(k, v)| k == "source" && v.contains("Plant permit")),
            "{breach:?}"
        );
        s.calc.edit("residual-target", "0.1");
        assert!(
            card_cautions(&s)
                .iter()
                .any(|c| c.code == "site-limit-below")
        );
        s.calc.edit("residual-target", "1.5");
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
            ("residual-target", residual),
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

    #[test]
    fn a_flow_above_the_demo_plants_meters_is_questioned() {
        // The demo plant's meters read to 6 MGD; the request carries them to the engine.
        let mut s = state(crate::app::seams::connected_engine());
        s.open_calculator(CalcKind::of("chlorination"));
        fill_chlorination(&mut s, "2");
        let codes = |s: &AppState| -> Vec<String> {
            match s.calc.view().status {
                Status::Ready(r) => r.cautions.iter().map(|c| c.code.clone()).collect(),
                other => panic!("no result: {other:?}"),
            }
        };
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
        let codes = |s: &AppState| -> Vec<String> {
            match s.calc.view().status {
                Status::Ready(r) => r.cautions.iter().map(|c| c.code.clone()).collect(),
                other => panic!("no result: {other:?}"),
            }
        };
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
        assert!(s.selected_detail().is_empty(), "nothing selected");
        s.log_current_dose().expect("logged");
        let rows = s.selected_detail();
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
        s.log_current_dose().expect("logged");
        let logged: Vec<String> = s.entries()[0]
            .dose
            .cautions
            .iter()
            .map(|c| c.code.clone())
            .collect();
        assert!(logged.contains(&warned[0]), "{logged:?} lacks {warned:?}");
    }

    #[test]
    fn editor_problems_are_reported_in_words_and_nothing_invalid_is_kept() {
        let mut s = state(Rc::new(Unconnected));
        let before = s.site().clone();
        let hypo = |strength: &str, sg: &str| ProductForm {
            product: "sodium-hypochlorite".into(),
            strength: strength.into(),
            basis: Some(crate::engine::dosing::catalog::StrengthBasis::Trade),
            sg: sg.into(),
            certificate: "COA 1".into(),
        };
        type Edit = Box<dyn Fn(&mut AppState) -> bool>;
        let cases: Vec<(&str, Edit, &str)> = vec![
            (
                "SG 5",
                Box::new(move |s| s.save_product(&hypo("12.5", "5"))),
                "engine:out-of-range",
            ),
            (
                "SG with a comma in English",
                Box::new(move |s| s.save_product(&hypo("12.5", "1,2"))),
                "site-number-problem",
            ),
            (
                "no strength",
                Box::new(move |s| s.save_product(&hypo("", "1.2"))),
                "site-number-missing",
            ),
            (
                "no SG for a liquid",
                Box::new(move |s| s.save_product(&hypo("12.5", ""))),
                "engine:invalid-input",
            ),
            (
                "product a pump feeds",
                Box::new(|s| s.remove_product(0)),
                "site-product-in-use",
            ),
            (
                "metering pump on lime",
                Box::new(|s| {
                    let lime = s
                        .site()
                        .products
                        .iter()
                        .position(|d| d.product == "hydrated-lime");
                    s.save_pump(&PumpForm {
                        name: "Lime pump".into(),
                        product: lime,
                        capacity: "5".into(),
                        unit: None,
                    })
                }),
                "site-pump-needs-liquid",
            ),
            (
                "metering settings on the hose pump",
                Box::new(|s| {
                    s.save_pump(&PumpForm {
                        name: "Alum peristaltic pump".into(),
                        product: Some(1),
                        capacity: "5".into(),
                        unit: None,
                    })
                }),
                "site-pump-not-metering",
            ),
            (
                "reversed limit",
                Box::new(|s| {
                    s.save_limit(&LimitForm {
                        parameter: "ph".into(),
                        min: "8".into(),
                        max: "7".into(),
                        unit: String::new(),
                        source: "Permit".into(),
                    })
                }),
                "site-limit-reversed",
            ),
            (
                "limit without a source",
                Box::new(|s| {
                    s.save_limit(&LimitForm {
                        parameter: "ph".into(),
                        max: "8".into(),
                        ..LimitForm::default()
                    })
                }),
                "site-need-source",
            ),
        ];
        for (what, edit, want) in cases {
            assert!(!edit(&mut s), "{what} was accepted");
            assert_eq!(problem_key(&s).as_deref(), Some(want), "{what}");
            assert_eq!(s.site(), &before, "{what} changed the profile");
        }
        // The same edits, well formed, go through; Spanish takes a decimal comma.
        s.set_lang(Lang::Es);
        assert!(s.save_product(&hypo("15", "1,21")));
        let d = s.site().delivered_of("sodium-hypochlorite").unwrap();
        assert_eq!((d.strength, d.sg), (15.0, Some(1.21)));
        assert_eq!(
            s.site().products.len(),
            before.products.len(),
            "replaced, not added"
        );
        assert!(s.save_limit(&LimitForm {
            parameter: "pH".into(),
            min: "6,8".into(),
            max: "8,2".into(),
            unit: String::new(),
            source: "Permiso".into(),
        }));
        let ph = s
            .site_limits()
            .into_iter()
            .find(|l| l.parameter == "ph")
            .unwrap();
        assert_eq!(
            (ph.min, ph.max, ph.source.as_str()),
            (Some(6.8), Some(8.2), "Permiso")
        );
        assert!(s.save_pump(&PumpForm {
            name: "Hypo pump B".into(),
            product: Some(0),
            capacity: "4".into(),
            unit: Some(crate::engine::dosing::units::VolumeRateUnit::Lph),
        }));
        assert!(s.site_saved);
        s.site().validate(s.catalog().unwrap()).unwrap();
    }

    #[test]
    fn settings_persist_in_the_data_dir() {
        let dir = std::env::temp_dir().join(format!("molefeed-settings-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        {
            let mut s = AppState::new(
                Rc::new(Unconnected),
                Box::new(PersistentLog::scratch()),
                Some(dir.clone()),
                None,
            );
            s.set_lang(Lang::Es);
            s.set_units(UnitSystem::Si);
            s.rename_site("Planta Sur");
        }
        let s = AppState::new(
            Rc::new(Unconnected),
            Box::new(PersistentLog::scratch()),
            Some(dir.clone()),
            None,
        );
        assert_eq!(s.lang(), Lang::Es);
        assert_eq!(s.units(), UnitSystem::Si);
        assert_eq!(s.site().name, "Planta Sur");
        std::fs::remove_dir_all(&dir).unwrap();
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
            ("ph-raw", "6.8"),
            ("ph-target", "7.4"),
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
            ("ph-raw", "6.80"),
            ("ph-target", "7.40"),
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

        s.open_calculator(CalcKind::of("coagulation"));
        assert_eq!(
            s.titration_plot().message.unwrap().key,
            "plot-need-inputs-coagulation"
        );
        for (n, t) in [
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
        assert!(
            legend.args.contains(&("dose", "25".to_string())),
            "two figures typed: {legend:?}"
        );
        assert_eq!(coag.x_lo, "0");
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
