//! What the Stock view and the Log screen's reading, delivery and monthly-report cards show,
//! in words: the tank rows with their cautions, the form's choices (what is recorded, of
//! which tank, product, meter or tap, the parameter, the unit), the recent readings, the
//! report's totals; and the [`AppState`] steps that join the stock controller, the log and the
//! session. Plain Rust with no Slint types, unit-tested here.
//!
//! Design choice: [`StockScreen`] records and reports; this module only words what it and the
//! log's `stock_rows` computed, so the numbers on the screen are the report's and the CLI's.
//! Volumes and masses are put in the site's unit system through `engine::quantity`'s units,
//! never by a factor of our own. The form's choices are the site profile's ids, so nothing
//! the profile does not know can be recorded.

use super::calc::key;
use super::log_screen::Chip;
use super::numbers::{self, Lang};
use super::session::Note;
use super::state::AppState;
use super::stock_screen::{Kind, StockScreen};
use super::words::Words;
use crate::engine::dosing::site::SiteProfile;
use crate::engine::quantity::{Unit, UnitSystem};
use crate::log::record::{DELIVERY_UNITS, Reading, parameter_unit};
use crate::log::report::{self, Report, StockRow};
use crate::log::{ReadingView, Status};
use chrono::{DateTime, FixedOffset, NaiveDate};

/// Days of use the Stock view averages over (common practice: a week of readings smooths a
/// weekend without hiding a change of dose).
pub const STOCK_WINDOW_DAYS: u32 = 7;
/// A level older than this many days is not "recent" (common practice: tanks are read daily).
pub const STALE_AFTER_DAYS: i64 = 1;
/// The recent readings the Log screen lists.
pub const RECENT_READINGS: usize = 20;

/// The kinds in the form's order.
pub const KINDS: [Kind; 4] = [
    Kind::TankLevel,
    Kind::Delivery,
    Kind::Totalizer,
    Kind::AtTap,
];

impl Kind {
    fn key(self) -> &'static str {
        match self {
            Kind::TankLevel => key("reading-kind-level"),
            Kind::Delivery => key("reading-kind-delivery"),
            Kind::Totalizer => key("reading-kind-totalizer"),
            Kind::AtTap => key("reading-kind-tap"),
        }
    }
}

/// A caution of a tank row: 0 info, 1 warning, 2 danger (as the card's), and its words.
#[derive(Clone, Debug, PartialEq)]
pub struct StockCaution {
    pub level: i32,
    pub word: String,
    pub text: String,
}

/// One tank of the Stock view, in words; a number not known is a dash, never a zero.
#[derive(Clone, Debug, PartialEq)]
pub struct StockLine {
    pub name: String,
    pub product: String,
    pub level: String,
    pub volume: String,
    pub fill: String,
    pub supply: String,
    pub reorder: String,
    pub cautions: Vec<StockCaution>,
}

/// The recording form's choices in words: the chosen one selected in each row.
#[derive(Clone, Debug, PartialEq)]
pub struct FormChoices {
    pub kinds: Vec<Chip>,
    pub subjects: Vec<Chip>,
    /// The tap's parameters (only for a reading at a tap).
    pub parameters: Vec<Chip>,
    /// The delivery's units (only for a delivery).
    pub units: Vec<Chip>,
    /// The unit the value is in (the tank's length unit, the totaliser's, the parameter's).
    pub value_unit: String,
}

/// One recent reading or delivery in the Log screen's list.
#[derive(Clone, Debug, PartialEq)]
pub struct ReadingLine {
    pub id: uuid::Uuid,
    /// When it was taken; "entered later at …" when it was recorded afterwards.
    pub when: String,
    pub what: String,
    pub value: String,
    pub status: String,
    pub voided: bool,
}

const DASH: &str = "—";

fn volume_unit(units: UnitSystem) -> Unit {
    match units {
        UnitSystem::Us => Unit::Gallons,
        UnitSystem::Si => Unit::Litres,
    }
}

fn unit_words(unit: Unit, words: &dyn Words) -> String {
    words.get(&format!("unit-{}", unit.code()))
}

/// The tap parameters of the site profiles that no limit names (limits bring their own
/// `parameter-*` words), so that each is worded in both languages.
pub const TAP_PARAMETER_WORDS: [&str; 4] = [
    key("parameter-alkalinity"),
    key("parameter-turbidity"),
    key("parameter-ammonia-n"),
    key("parameter-temperature"),
];

/// A parameter's name in words, or its code where there is no translation.
pub fn parameter_words(parameter: &str, words: &dyn Words) -> String {
    let k = format!("parameter-{parameter}");
    if words.has(&k) {
        words.get(&k)
    } else {
        parameter.to_string()
    }
}

fn product_words(site: &SiteProfile, id: &str, words: &dyn Words) -> String {
    site.delivered(id)
        .map(|p| words.name(&format!("product-{}", p.product)))
        .unwrap_or_else(|_| id.to_string())
}

/// The ids the form offers for `kind`, with their names in words.
fn subjects(site: &SiteProfile, kind: Kind, words: &dyn Words) -> Vec<(String, String)> {
    match kind {
        Kind::TankLevel => site
            .day_tanks
            .iter()
            .map(|t| (t.id.clone(), t.name.clone()))
            .collect(),
        Kind::Delivery => site
            .products
            .iter()
            .map(|p| (p.id.clone(), product_words(site, &p.id, words)))
            .collect(),
        Kind::Totalizer => site
            .flow_meters
            .iter()
            .filter(|m| m.totalizer_unit.is_some())
            .map(|m| (m.id.clone(), m.name.clone()))
            .collect(),
        Kind::AtTap => site
            .sampling_taps
            .iter()
            .map(|t| (t.id.clone(), t.name.clone()))
            .collect(),
    }
}

/// A recorded value as the operator typed it: up to six figures, no trailing zeros (a level
/// typed 4.5 is not shown as 4.500, which would claim figures nobody read).
fn as_recorded(v: f64, lang: Lang) -> String {
    let t = numbers::format_sig(v, 6, lang);
    if t.contains(['.', ',']) {
        t.trim_end_matches('0')
            .trim_end_matches(['.', ','])
            .to_string()
    } else {
        t
    }
}

/// The ids [`subjects`] offers, in its order.
fn subject_ids(site: &SiteProfile, kind: Kind) -> Vec<String> {
    match kind {
        Kind::TankLevel => site.day_tanks.iter().map(|t| t.id.clone()).collect(),
        Kind::Delivery => site.products.iter().map(|p| p.id.clone()).collect(),
        Kind::Totalizer => site
            .flow_meters
            .iter()
            .filter(|m| m.totalizer_unit.is_some())
            .map(|m| m.id.clone())
            .collect(),
        Kind::AtTap => site.sampling_taps.iter().map(|t| t.id.clone()).collect(),
    }
}

fn tap_parameters<'a>(site: &'a SiteProfile, tap: &str) -> &'a [String] {
    site.sampling_taps
        .iter()
        .find(|t| t.id == tap)
        .map_or(&[][..], |t| &t.parameters[..])
}

impl StockScreen {
    /// Chooses what the form records; the first subject (and parameter) of it is taken, and a
    /// delivery starts in the site's volume unit.
    pub fn pick_kind(&mut self, n: usize, site: &SiteProfile) {
        let Some(&kind) = KINDS.get(n) else { return };
        self.form.kind = kind;
        self.form.subject.clear();
        self.pick_subject(0, site);
        if kind == Kind::Delivery && !DELIVERY_UNITS.contains(&self.form.unit.as_str()) {
            self.form.unit = match site.units {
                UnitSystem::Us => "gal".into(),
                UnitSystem::Si => "l".into(),
            };
        }
    }

    /// Chooses subject `n` of the form's list (a tank, product, meter or tap).
    pub fn pick_subject(&mut self, n: usize, site: &SiteProfile) {
        let ids = subject_ids(site, self.form.kind);
        if let Some(id) = ids.get(n) {
            self.form.subject = id.clone();
        }
        if self.form.kind == Kind::AtTap {
            let params = tap_parameters(site, &self.form.subject);
            if !params.contains(&self.form.parameter) {
                self.form.parameter = params.first().cloned().unwrap_or_default();
            }
        }
    }

    pub fn pick_parameter(&mut self, n: usize, site: &SiteProfile) {
        if let Some(p) = tap_parameters(site, &self.form.subject).get(n) {
            self.form.parameter = p.clone();
        }
    }

    pub fn pick_unit(&mut self, n: usize) {
        if let Some(u) = DELIVERY_UNITS.get(n) {
            self.form.unit = (*u).to_string();
        }
    }

    /// The form's choice rows in words.
    pub fn choices(&self, site: &SiteProfile, words: &dyn Words) -> FormChoices {
        let f = &self.form;
        let chip = |label: String, selected: bool| Chip { label, selected };
        let subjects = subjects(site, f.kind, words);
        let parameters: Vec<Chip> = if f.kind == Kind::AtTap {
            tap_parameters(site, &f.subject)
                .iter()
                .map(|p| chip(parameter_words(p, words), *p == f.parameter))
                .collect()
        } else {
            Vec::new()
        };
        let units = if f.kind == Kind::Delivery {
            DELIVERY_UNITS
                .iter()
                .map(|u| chip((*u).to_string(), *u == f.unit))
                .collect()
        } else {
            Vec::new()
        };
        let value_unit = match f.kind {
            Kind::TankLevel => site
                .day_tanks
                .iter()
                .find(|t| t.id == f.subject)
                .map(|t| t.length_unit.symbol().to_string()),
            Kind::Delivery => Some(f.unit.clone()),
            Kind::Totalizer => site
                .flow_meters
                .iter()
                .find(|m| m.id == f.subject)
                .and_then(|m| m.totalizer_unit)
                .map(|u| u.symbol().to_string()),
            Kind::AtTap => {
                (!f.parameter.is_empty()).then(|| parameter_unit(&f.parameter).to_string())
            }
        };
        FormChoices {
            kinds: KINDS
                .iter()
                .map(|k| chip(words.get(k.key()), *k == f.kind))
                .collect(),
            subjects: subjects
                .into_iter()
                .map(|(id, name)| chip(name, id == f.subject))
                .collect(),
            parameters,
            units,
            value_unit: value_unit.unwrap_or_default(),
        }
    }

    /// Opens reading `r` for a correction or a void: the form shows it as recorded.
    pub fn open(&mut self, r: &ReadingView, lang: Lang) {
        let text = |v: f64| as_recorded(v, lang);
        self.selected = Some(r.id);
        self.form.note_number.clear();
        self.form.earlier.clear();
        self.form.yesterday = false;
        match &r.reading {
            Reading::TankLevel { tank, level, .. } => {
                self.form.kind = Kind::TankLevel;
                self.form.subject = tank.clone();
                self.form.value = text(*level);
            }
            Reading::Delivery {
                product,
                amount,
                unit,
                note_number,
                ..
            } => {
                self.form.kind = Kind::Delivery;
                self.form.subject = product.clone();
                self.form.value = text(*amount);
                self.form.unit = unit.clone();
                self.form.note_number = note_number.clone();
            }
            Reading::Totalizer { meter, value, .. } => {
                self.form.kind = Kind::Totalizer;
                self.form.subject = meter.clone();
                self.form.value = text(*value);
            }
            Reading::AtTap {
                tap,
                parameter,
                value,
                ..
            } => {
                self.form.kind = Kind::AtTap;
                self.form.subject = tap.clone();
                self.form.parameter = parameter.clone();
                self.form.value = text(*value);
            }
        }
    }

    /// The Stock view's rows in words, on `today`.
    pub fn lines(
        site: &SiteProfile,
        rows: &[StockRow],
        today: NaiveDate,
        words: &dyn Words,
    ) -> Vec<StockLine> {
        let lang = words.lang();
        let vol = volume_unit(site.units);
        let warn = |level: i32, note: Note| StockCaution {
            level,
            word: words.get(&format!(
                "caution-level-{}",
                ["info", "warning", "danger"][level as usize]
            )),
            text: words.note(&note),
        };
        rows.iter()
            .map(|r| {
                let tank = site.day_tanks.iter().find(|t| t.id == r.tank);
                let mut cautions = Vec::new();
                match (r.level, r.level_at) {
                    (None, _) | (_, None) => {
                        cautions.push(warn(1, Note::new(key("stock-caution-no-reading"))));
                    }
                    (Some(level), Some(at)) => {
                        if let Some(reorder) = tank.and_then(|t| t.reorder_level)
                            && level <= reorder
                        {
                            cautions.push(warn(
                                2,
                                Note::new(key("stock-caution-reorder"))
                                    .arg("level", numbers::format_sig(reorder, 3, lang))
                                    .arg("unit", &r.level_unit),
                            ));
                        }
                        let age = (today - at.date_naive()).num_days();
                        if age > STALE_AFTER_DAYS {
                            cautions.push(warn(
                                1,
                                Note::new(key("stock-caution-stale"))
                                    .arg("date", at.date_naive())
                                    .arg("days", age),
                            ));
                        }
                        if r.days_of_supply.is_none() {
                            cautions.push(warn(
                                0,
                                Note::new(key("stock-caution-no-rate"))
                                    .arg("days", STOCK_WINDOW_DAYS),
                            ));
                        }
                    }
                }
                let sig = |v: Option<f64>, figures| {
                    v.map_or_else(
                        || DASH.to_string(),
                        |v| numbers::format_sig(v, figures, lang),
                    )
                };
                StockLine {
                    name: r.name.clone(),
                    product: r
                        .product
                        .as_deref()
                        .map(|p| product_words(site, p, words))
                        .unwrap_or_default(),
                    level: r.level.map_or_else(
                        || DASH.to_string(),
                        |l| format!("{} {}", numbers::format_sig(l, 3, lang), r.level_unit),
                    ),
                    volume: r.volume_l.map_or_else(
                        || DASH.to_string(),
                        |l| {
                            format!(
                                "{} {}",
                                numbers::format_sig(vol.from_si(l), 3, lang),
                                unit_words(vol, words)
                            )
                        },
                    ),
                    fill: r.fill_percent.map_or_else(
                        || DASH.to_string(),
                        |p| format!("{} %", numbers::format_fixed(p, 0, lang)),
                    ),
                    supply: sig(r.days_of_supply, 2),
                    reorder: r
                        .reorder_date
                        .map_or_else(|| DASH.to_string(), |d| d.to_string()),
                    cautions,
                }
            })
            .collect()
    }

    /// The newest readings and deliveries of the site, newest first, in words.
    pub fn reading_lines(
        site: &SiteProfile,
        readings: &[ReadingView],
        words: &dyn Words,
    ) -> Vec<ReadingLine> {
        let lang = words.lang();
        let value = |v: f64, unit: &str| format!("{} {unit}", as_recorded(v, lang));
        let name = |list: Vec<(String, String)>, id: &str| {
            list.into_iter()
                .find(|(i, _)| i == id)
                .map_or_else(|| id.to_string(), |(_, n)| n)
        };
        let time = |t: &DateTime<FixedOffset>| t.format("%Y-%m-%d %H:%M").to_string();
        readings
            .iter()
            .rev()
            .take(RECENT_READINGS)
            .map(|r| {
                let (what, shown) = match &r.reading {
                    Reading::TankLevel {
                        tank, level, unit, ..
                    } => (
                        words.get_args(
                            key("reading-what-level"),
                            &[("tank", name(subjects(site, Kind::TankLevel, words), tank))],
                        ),
                        value(*level, unit),
                    ),
                    Reading::Delivery {
                        product,
                        amount,
                        unit,
                        note_number,
                        ..
                    } => (
                        words.get_args(
                            key("reading-what-delivery"),
                            &[
                                ("product", product_words(site, product, words)),
                                ("note", note_number.clone()),
                            ],
                        ),
                        value(*amount, unit),
                    ),
                    Reading::Totalizer {
                        meter,
                        value: v,
                        unit,
                        ..
                    } => (
                        words.get_args(
                            key("reading-what-totalizer"),
                            &[("meter", name(subjects(site, Kind::Totalizer, words), meter))],
                        ),
                        value(*v, unit),
                    ),
                    Reading::AtTap {
                        tap,
                        parameter,
                        value: v,
                        unit,
                        ..
                    } => (
                        words.get_args(
                            key("reading-what-tap"),
                            &[
                                ("parameter", parameter_words(parameter, words)),
                                ("tap", name(subjects(site, Kind::AtTap, words), tap)),
                            ],
                        ),
                        value(*v, unit),
                    ),
                };
                let operator = match &r.reading {
                    Reading::TankLevel { operator, .. }
                    | Reading::Delivery { operator, .. }
                    | Reading::Totalizer { operator, .. }
                    | Reading::AtTap { operator, .. } => operator.clone(),
                };
                let when = match r.entered_at {
                    Some(entered) => words.get_args(
                        key("reading-when-earlier"),
                        &[
                            ("when", time(&r.at)),
                            // Entered the same day: its time says enough.
                            (
                                "entered",
                                if entered.date_naive() == r.at.date_naive() {
                                    entered.format("%H:%M").to_string()
                                } else {
                                    time(&entered)
                                },
                            ),
                            ("initials", operator),
                        ],
                    ),
                    None => words.get_args(
                        key("reading-when"),
                        &[("when", time(&r.at)), ("initials", operator)],
                    ),
                };
                ReadingLine {
                    id: r.id,
                    when,
                    what,
                    value: shown,
                    status: match r.status {
                        Status::Original => String::new(),
                        Status::Corrected => words.get(key("log-status-corrected")),
                        Status::Voided => words.get(key("log-status-voided")),
                    },
                    voided: r.status == Status::Voided,
                }
            })
            .collect()
    }

    /// The saved report's totals in words: one line for the month, one per product.
    pub fn report_lines(r: &Report, words: &dyn Words) -> Vec<String> {
        let lang = words.lang();
        let vol = volume_unit(r.units);
        let mass = match r.units {
            UnitSystem::Us => Unit::Pounds,
            UnitSystem::Si => Unit::Kilograms,
        };
        let t = &r.totals;
        let mut lines = vec![words.get_args(
            key("report-totals"),
            &[
                ("from", r.from.to_string()),
                ("to", r.to.to_string()),
                (
                    "water",
                    numbers::format_sig(report::water_in(r.units, t.water_treated_l), 4, lang),
                ),
                ("water_unit", report::water_unit(r.units).to_string()),
                ("days", t.days_with_data.to_string()),
                ("corrections", t.corrections.to_string()),
                ("voids", t.voids.to_string()),
                ("exceedances", t.exceedances.to_string()),
            ],
        )];
        let site_name = |id: &str| id.to_string();
        for (id, p) in &t.products {
            lines.push(
                words.get_args(
                    key("report-product"),
                    &[
                        ("product", site_name(id)),
                        (
                            "used",
                            numbers::format_sig(vol.from_si(p.product_used_l), 3, lang),
                        ),
                        ("volume_unit", unit_words(vol, words)),
                        (
                            "active",
                            numbers::format_sig(mass.from_si(p.active_used_kg), 3, lang),
                        ),
                        ("mass_unit", unit_words(mass, words)),
                        (
                            "dose",
                            p.calculated_dose_mg_l.map_or_else(
                                || DASH.to_string(),
                                |d| numbers::format_sig(d, 3, lang),
                            ),
                        ),
                    ],
                ),
            );
        }
        lines
    }
}

/// The steps of the stock card and view that need the log, the session and the controller.
impl AppState {
    /// Records the form's reading or delivery at the current site, now or at the earlier
    /// time the form gives (on the clock of `now`).
    pub fn record_reading(&mut self, now: DateTime<FixedOffset>) -> Option<uuid::Uuid> {
        let lang = self.lang();
        let (stock, log, session) = (&mut self.stock, &mut self.log, &self.session);
        stock.record(
            log.store_mut(),
            session.site(),
            session.initials(),
            lang,
            now,
        )
    }

    /// The site's readings, oldest first (an unreadable log lists none and says why).
    pub fn site_readings(&self) -> Vec<ReadingView> {
        self.log
            .store()
            .readings(&self.session.site().name)
            .unwrap_or_default()
    }

    /// Opens reading `id` of the list for a correction or a void.
    pub fn open_reading(&mut self, id: uuid::Uuid) {
        let lang = self.lang();
        if let Some(r) = self.site_readings().into_iter().find(|r| r.id == id) {
            self.stock.open(&r, lang);
            self.stock.message = None;
        }
    }

    /// Corrects the open reading to what the form says, with `reason`.
    pub fn correct_reading(&mut self, reason: &str) -> bool {
        let Some(id) = self.stock.selected else {
            return false;
        };
        let lang = self.lang();
        let (stock, log, session) = (&mut self.stock, &mut self.log, &self.session);
        let done = stock.correct(
            log.store_mut(),
            session.site(),
            id,
            session.initials(),
            lang,
            reason,
        );
        if done {
            stock.selected = None;
            stock.form.value.clear();
        }
        done
    }

    /// Voids the open reading, with `reason`.
    pub fn void_reading(&mut self, reason: &str) -> bool {
        let Some(id) = self.stock.selected else {
            return false;
        };
        let (stock, log, session) = (&mut self.stock, &mut self.log, &self.session);
        let done = stock.void(log.store_mut(), id, session.initials(), reason);
        if done {
            stock.selected = None;
            stock.form.value.clear();
        }
        done
    }

    /// The Stock view's rows on `today`; none (and the reason in the stock message) when the
    /// log cannot be read.
    pub fn stock_lines(&self, today: NaiveDate, words: &dyn Words) -> Vec<StockLine> {
        let site = self.session.site();
        let Some(catalog) = self.session.catalog() else {
            return Vec::new();
        };
        StockScreen::stock(self.log.store(), site, catalog, today, STOCK_WINDOW_DAYS)
            .map(|rows| StockScreen::lines(site, &rows, today, words))
            .unwrap_or_default()
    }

    /// Produces the month typed in the report card and saves it in the export folder.
    pub fn save_month_report(&mut self) -> bool {
        let month = self.stock.month.clone();
        let (stock, log, session) = (&mut self.stock, &self.log, &self.session);
        let Some(folder) = session.export_folder() else {
            stock.report_note = Some(Note::new(key("log-need-path")));
            stock.report = None;
            return false;
        };
        let Some(catalog) = session.catalog() else {
            return false;
        };
        let saved = stock
            .save_report(log.store(), session.site(), catalog, &month, &folder)
            .is_some();
        stock.report_note = stock.message.take();
        saved
    }
}

#[cfg(test)]
mod tests {
    //! Over the demo plant's profile and the real crash-safe log; expected numbers are worked
    //! by hand beside each check.
    use super::*;
    use crate::app::dose_log::{DoseLog, PersistentLog};
    use crate::app::words::Dictionary;
    use crate::engine::dosing::catalog::Catalog;
    use chrono::TimeZone;

    const WORDS: Dictionary = Dictionary(&[
        ("unit-gal", "gal"),
        ("caution-level-danger", "Danger"),
        ("caution-level-warning", "Warning"),
        ("caution-level-info", "Note"),
        (
            "stock-caution-reorder",
            "At or below the reorder level { $level } { $unit }",
        ),
        ("stock-caution-no-reading", "No level"),
        ("stock-caution-stale", "Last read { $date }"),
        ("stock-caution-no-rate", "No rate over { $days } days"),
        ("reading-kind-level", "Tank level"),
        ("reading-what-level", "Level · { $tank }"),
        (
            "reading-what-delivery",
            "Delivery · { $product } · { $note }",
        ),
        ("reading-when", "{ $when } · { $initials }"),
        (
            "reading-when-earlier",
            "{ $when } (entered { $entered }) · { $initials }",
        ),
        ("parameter-chlorine", "Chlorine residual (free)"),
    ]);

    fn site() -> (Catalog, SiteProfile) {
        let c = Catalog::builtin().unwrap();
        let s = SiteProfile::demo(&c).unwrap();
        (c, s)
    }

    fn level_reading(day: u32, level: f64) -> ReadingView {
        ReadingView {
            id: uuid::Uuid::from_u128(u128::from(day)),
            at: FixedOffset::east_opt(0)
                .unwrap()
                .with_ymd_and_hms(2026, 11, day, 7, 0, 0)
                .unwrap(),
            entered_at: None,
            site: "Harrowmere Tarn Water Works (demo)".into(),
            status: Status::Original,
            reading: Reading::TankLevel {
                operator: "RK".into(),
                tank: "hypo-day-tank".into(),
                level,
                unit: "ft".into(),
            },
            revisions: 0,
        }
    }

    /// One Stock row case: the day tank read at `levels` (7:00 of 1, 2, 3 … November), seen on
    /// `today`; its volume text and its caution keys' words.
    fn check(levels: &[f64], today: u32, volume: &str, supply: &str, cautions: &[&str]) {
        let (c, s) = site();
        let readings: Vec<ReadingView> = levels
            .iter()
            .enumerate()
            .map(|(i, l)| level_reading(i as u32 + 1, *l))
            .collect();
        let today = NaiveDate::from_ymd_opt(2026, 11, today).unwrap();
        let rows = report::stock_rows(&s, &c, &readings, today, STOCK_WINDOW_DAYS);
        let lines = StockScreen::lines(&s, &rows, today, &WORDS);
        let day = lines
            .iter()
            .find(|l| l.name == "Hypochlorite day tank")
            .unwrap();
        assert_eq!(day.volume, volume, "{levels:?}");
        assert_eq!(day.supply, supply, "{levels:?}");
        let words: Vec<&str> = day.cautions.iter().map(|c| c.text.as_str()).collect();
        assert_eq!(words, cautions, "{levels:?}");
    }

    #[test]
    fn the_day_tank_row_says_its_volume_supply_and_cautions() {
        // By hand: a 4 ft vertical cylinder, π × 2² ft² × 4 ft = 50.27 ft³ = 376 gal (7.48052
        // gal/ft³: 1728 in³ / 231 in³); 0.5 ft/d use → 4 / 0.5 = 8.0 days.
        check(&[5.0, 4.5, 4.0], 3, "376 gal", "8.0", &[]);
        // 1.5 ft is the demo tank's reorder level: at or below it is a danger. π × 4 × 1.5
        // ft³ = 141 gal; 1.0 ft/d → 1.5 days.
        check(
            &[2.5, 1.5],
            2,
            "141 gal",
            "1.5",
            &["At or below the reorder level 1.50 ft"],
        );
        // Read three days ago: stale, and one reading gives no rate.
        check(
            &[4.0],
            4,
            "376 gal",
            DASH,
            &["Last read 2026-11-01", "No rate over 7 days"],
        );
        // Never read: no numbers, never a zero.
        check(&[], 4, DASH, DASH, &["No level"]);
    }

    #[test]
    fn the_form_offers_what_the_site_profile_has() {
        let (_, s) = site();
        let mut screen = StockScreen::default();
        screen.pick_kind(0, &s);
        assert_eq!(screen.form.subject, "hypo-day-tank");
        let ch = screen.choices(&s, &WORDS);
        assert_eq!(ch.value_unit, "ft");
        assert_eq!(ch.subjects.len(), 4, "the demo site's four tanks");
        assert!(ch.parameters.is_empty() && ch.units.is_empty());
        // Only the meter with a totaliser unit is offered.
        screen.pick_kind(2, &s);
        assert_eq!(screen.form.subject, "filter-effluent");
        assert_eq!(screen.choices(&s, &WORDS).subjects.len(), 1);
        // A delivery starts in the US site's gallons, and its units are offered.
        screen.pick_kind(1, &s);
        assert_eq!(
            (screen.form.subject.as_str(), screen.form.unit.as_str()),
            ("hypo-bulk", "gal")
        );
        assert_eq!(screen.choices(&s, &WORDS).units.len(), 4);
        // A tap's parameters are its own; the clearwell tap starts on chlorine.
        screen.pick_kind(3, &s);
        assert_eq!(screen.form.parameter, "ph", "the raw-water tap's first");
        // The clearwell tap also reads pH: the choice stays.
        screen.pick_subject(2, &s);
        assert_eq!(screen.form.subject, "clearwell-tap");
        assert_eq!(screen.form.parameter, "ph");
        let ch = screen.choices(&s, &WORDS);
        assert_eq!(ch.parameters[0].label, "Chlorine residual (free)");
        screen.pick_parameter(0, &s);
        assert_eq!(screen.form.parameter, "chlorine");
        assert_eq!(screen.choices(&s, &WORDS).value_unit, "mg/L");
    }

    #[test]
    fn recorded_readings_are_listed_newest_first_and_reopen_as_recorded() {
        let (_, s) = site();
        let mut log = PersistentLog::scratch();
        let mut screen = StockScreen::default();
        // The log takes an earlier time of today or yesterday only: the clock's.
        let now = chrono::Utc::now().fixed_offset();
        let yesterday = now.date_naive() - chrono::Duration::days(1);
        screen.pick_kind(0, &s);
        screen.form.value = "4.25".into();
        screen.form.earlier = "07:30".into();
        screen.form.yesterday = true;
        screen
            .record(&mut log, &s, "RK", Lang::En, now)
            .expect("level");
        screen.pick_kind(1, &s);
        screen.form.value = "280".into();
        screen.form.note_number = "DN-7".into();
        screen
            .record(&mut log, &s, "RK", Lang::En, now)
            .expect("delivery");
        let readings = log.readings(&s.name).unwrap();
        let lines = StockScreen::reading_lines(&s, &readings, &WORDS);
        assert_eq!(lines.len(), 2);
        assert_eq!(lines[1].what, "Level · Hypochlorite day tank");
        assert_eq!(lines[1].value, "4.25 ft");
        let taken = format!("{yesterday} 07:30 (entered ");
        assert!(lines[1].when.starts_with(&taken), "{}", lines[1].when);
        assert!(
            lines[0].what.starts_with("Delivery · "),
            "{}",
            lines[0].what
        );
        assert!(lines[0].what.ends_with(" · DN-7"), "{}", lines[0].what);
        assert_eq!(lines[0].value, "280 gal");
        let level = readings
            .iter()
            .find(|r| matches!(r.reading, Reading::TankLevel { .. }));
        screen.open(level.unwrap(), Lang::Es);
        assert_eq!(screen.form.kind, Kind::TankLevel);
        assert_eq!(screen.form.value, "4,25");
    }
}
