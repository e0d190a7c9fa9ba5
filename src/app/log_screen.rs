//! The Log screen's controller: the list and its filters (text, dates, tap, chemical), the
//! open entry with its detail rows and history, corrections and voids, export and import,
//! and the Start screen's latest doses. Plain Rust with no Slint types, unit-tested here.
//!
//! Design choice: the controller owns the [`DoseLog`] seam and the screen's own state; what
//! it shares with the other screens (site, initials, language, the data directory) it borrows
//! from the [`Session`] for the one call that needs it. The calculator's card reaches it only
//! as a finished log record (a correction's recomputed result), so it knows no calculator.

use super::calc::key;
use super::dose_log::{
    Amendment, DoseLog, Entry, EntryStatus, ExportFormat, LogError, Revision, RevisionKind,
};
use super::numbers::{self, Lang};
use super::session::{Note, Session};
use super::words::Words;
use crate::engine::quantity::Unit;
use crate::log::record::Dose;
use chrono::{Datelike, Days, Months, NaiveDate};
use std::path::PathBuf;
use std::rc::Rc;

/// One row of "latest logged dose" on the Start screen.
#[derive(Clone, Debug, PartialEq)]
pub struct LatestDose {
    pub point: String,
    /// The compound the dose is expressed as ("Cl2").
    pub chemical: String,
    /// The product's name key and English name, where the entry names a product.
    pub product_key: Option<String>,
    pub product_name: Option<String>,
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

/// The Log screen: the dose log and what the screen shows of it.
pub struct LogScreen {
    log: Box<dyn DoseLog>,
    pub filter: LogFilter,
    selected: Option<u64>,
    /// The export/import message.
    pub note: Option<Note>,
    /// The open correction/void form and its message.
    pub edit: LogEdit,
    pub edit_note: Option<Note>,
    pub format: ExportFormat,
}

impl LogScreen {
    pub fn new(log: Box<dyn DoseLog>) -> LogScreen {
        LogScreen {
            log,
            filter: LogFilter::default(),
            selected: None,
            note: None,
            edit: LogEdit::None,
            edit_note: None,
            format: ExportFormat::Csv,
        }
    }

    /// Whether logged doses survive a restart (drives the "not saved" banner).
    pub fn persistent(&self) -> bool {
        self.log.persistent()
    }

    /// The log itself, for the readings and the report of the stock controller.
    pub fn store(&self) -> &dyn DoseLog {
        &*self.log
    }

    pub fn store_mut(&mut self) -> &mut dyn DoseLog {
        &mut *self.log
    }

    /// Appends `dose` as logged at `when` (RFC 3339), for tests that need dated entries.
    #[cfg(test)]
    pub(crate) fn append_at(&mut self, when: &str, dose: Dose) -> u64 {
        let at = chrono::DateTime::parse_from_rfc3339(when).unwrap();
        self.log.append("Demo site", Some(at), dose).unwrap()
    }

    /// Appends a dose shown on the calculator card at the current site and opens it.
    pub fn record(&mut self, site: &str, dose: Dose) -> Result<u64, Note> {
        let id = self
            .log
            .append(site, None, dose)
            .map_err(|e| log_error_note(&e))?;
        self.selected = Some(id);
        Ok(id)
    }

    pub fn entries(&self) -> Rc<Vec<Entry>> {
        self.log.entries()
    }

    /// Entry `id`'s whole record, read from the log (see [`DoseLog::dose`]).
    pub fn dose(&self, id: u64) -> Option<Dose> {
        self.log.dose(id).ok()
    }

    /// Entries matching every filter, newest first, with today's date from the clock.
    pub fn filtered_entries(&self) -> Vec<Entry> {
        self.filtered_entries_on(utc_today())
    }

    /// Chooses a date chip: a quick range fills the From / To fields with its days (empty for
    /// an open end); "typed dates" keeps what the fields show, now fixed rather than following
    /// the clock.
    pub fn pick_range(&mut self, range: DateRange, today: NaiveDate) {
        let (from, to) = self.date_texts(today);
        let f = &mut self.filter;
        f.range = range;
        (f.from_text, f.to_text) = (from, to);
    }

    /// The operator typed in the From or To field: the typed dates decide from now on.
    pub fn edit_dates(&mut self, from: &str, to: &str) {
        let f = &mut self.filter;
        f.range = DateRange::Custom;
        f.from_text = from.to_string();
        f.to_text = to.to_string();
    }

    /// What the From / To fields show: a quick range's days on `today`, or what was typed.
    pub fn date_texts(&self, today: NaiveDate) -> (String, String) {
        let f = &self.filter;
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
    pub fn span(&self, today: NaiveDate) -> Result<DateSpan, Note> {
        let f = &self.filter;
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
    /// the typed dates cannot be read ([`log_span`](Self::span) says why).
    pub fn filtered_entries_on(&self, today: NaiveDate) -> Vec<Entry> {
        let (all, listed) = self.filtered_on(today);
        listed.into_iter().map(|i| all[i].clone()).collect()
    }

    /// The log and the positions in it of the entries matching every filter, newest first:
    /// the list reads them in place rather than copying a long log on every refresh.
    pub fn filtered_on(&self, today: NaiveDate) -> (Rc<Vec<Entry>>, Vec<usize>) {
        let all = self.log.entries();
        let f = &self.filter;
        let Ok(span) = self.span(today) else {
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
    pub fn choices(&self) -> (Vec<String>, Vec<String>) {
        let entries = self.log.entries();
        let mut points: Vec<String> = entries.iter().map(|e| e.dose.tap.clone()).collect();
        let mut chemicals: Vec<String> = entries.iter().map(|e| e.dose.chemical.clone()).collect();
        for list in [&mut points, &mut chemicals] {
            list.sort();
            list.dedup();
        }
        (points, chemicals)
    }

    pub fn select(&mut self, id: u64) {
        if self.selected != Some(id) {
            self.edit = LogEdit::None;
            self.edit_note = None;
        }
        self.selected = Some(id);
    }

    pub fn selected_entry(&self) -> Option<Entry> {
        let id = self.selected?;
        self.log.entries().iter().find(|e| e.id == id).cloned()
    }

    /// The selected entry's whole record as it stands now, read from the log (the list keeps
    /// only what it shows): `None` when nothing is selected or the log cannot read it.
    pub fn selected_dose(&self) -> Option<Dose> {
        self.log.dose(self.selected?).ok()
    }

    /// The detail of the selected entry, as rows of a label (a translation key) and a value:
    /// each number as the card showed it, in the unit it was logged in; what was not computed
    /// is a dash. The bridge only translates the labels.
    pub fn selected_detail(&self) -> Vec<DetailRow> {
        let (Some(e), Some(d)) = (self.selected_entry(), self.selected_dose()) else {
            return Vec::new();
        };
        let d = &d;
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
    pub fn open_edit(&mut self, edit: LogEdit) {
        self.edit_note = None;
        match self.selected_entry() {
            Some(e) if e.voided() && edit != LogEdit::None => {
                self.edit = LogEdit::None;
                self.edit_note = Some(Note::new(key("log-entry-voided")));
            }
            Some(_) => self.edit = edit,
            None => self.edit = LogEdit::None,
        }
    }

    /// Checks what every change needs: an open entry that is not voided, initials, a reason.
    fn change_target(&self, session: &Session, reason: &str) -> Result<Entry, Note> {
        let entry = self
            .selected_entry()
            .ok_or_else(|| Note::new(key("log-pick-entry")))?;
        if entry.voided() {
            return Err(Note::new(key("log-entry-voided")));
        }
        if session.initials().is_empty() {
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
    /// `card` is the calculator's card as the log records it, for an operator and a tap.
    pub fn correct_selected(
        &mut self,
        session: &Session,
        card: impl FnOnce(&str, &str) -> Option<Dose>,
        dose: &str,
        note: &str,
        reason: &str,
    ) -> Result<(), Note> {
        let result = self.change_target(session, reason).and_then(|entry| {
            let lang = session.lang();
            let typed = numbers::parse(dose, lang)
                .ok()
                .filter(|d| d.is_finite() && *d >= 0.0)
                .ok_or_else(|| Note::new(key("log-dose-invalid")))?;
            let mut fixed = card(session.initials(), &entry.dose.tap)
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
            let recorded = self.log.dose(entry.id).map_err(|e| log_error_note(&e))?;
            let unchanged = Dose {
                operator: fixed.operator.clone(),
                ..recorded
            };
            // Ranges are left out of "nothing changed": they are sums of re-run calculations
            // and may differ in their last bits where every number shown is the same.
            let without_ranges = |d: &Dose| {
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
    pub fn void_selected(&mut self, session: &Session, reason: &str) -> Result<(), Note> {
        let result = self.change_target(session, reason).and_then(|entry| {
            let initials = session.initials().to_string();
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
                self.edit = LogEdit::None;
                self.edit_note = Some(Note::new(done).arg("id", id));
                Ok(())
            }
            Err(note) => {
                self.edit_note = Some(note.clone());
                Err(note)
            }
        }
    }

    /// The newest entry for each (point, chemical) at the current site.
    pub fn latest_doses(&self, session: &Session) -> Vec<LatestDose> {
        let site = session.site().name.clone();
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
                product_key: e.dose.product.as_ref().map(|p| format!("product-{}", p.id)),
                product_name: e.dose.product.as_ref().map(|p| p.name.clone()),
                dose: e
                    .dose
                    .dose_mg_per_l()
                    .map_or_else(|| "—".into(), |d| numbers::format_sig(d, 3, session.lang())),
                when: e.when.replace('T', " ").trim_end_matches('Z').to_string(),
            });
        }
        out
    }

    /// Exports what the list shows to the typed path, or (left empty) to a file in the export
    /// folder named by its dates.
    pub fn export(&mut self, session: &Session, path: &str) {
        self.export_on(session, path, utc_today());
    }

    /// Exports exactly the entries the list shows on the UTC day `today` — date range, tap,
    /// chemical and free text applied, voided entries with their status — and says how many
    /// went out and which days they cover.
    pub fn export_on(&mut self, session: &Session, path: &str, today: NaiveDate) {
        self.note = Some(match self.export_listed(session, path, today) {
            Ok(note) | Err(note) => note,
        });
    }

    fn export_listed(&self, session: &Session, path: &str, today: NaiveDate) -> Result<Note, Note> {
        let span = self
            .span(today)
            .map_err(|_| Note::new(key("log-export-fix-dates")))?;
        let listed: Vec<u64> = self
            .filtered_entries_on(today)
            .iter()
            .map(|e| e.id)
            .collect();
        if listed.is_empty() {
            return Err(Note::new(key("log-export-nothing")));
        }
        let format = self.format;
        let target = if path.trim().is_empty() {
            Self::default_export_path(session, format, &span.file_stem(today))
                .ok_or_else(|| Note::new(key("log-need-path")))?
        } else {
            PathBuf::from(path.trim())
        };
        let f = &self.filter;
        let narrowed = f.point.is_some() || f.chemical.is_some() || !f.text.trim().is_empty();
        let filters = Note::new(if narrowed {
            key("log-export-narrowed")
        } else {
            key("log-export-not-narrowed")
        });
        self.log
            .export(&target, format, &listed, session.site().units)
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
    pub fn import(&mut self, path: &str) {
        if path.trim().is_empty() {
            self.note = Some(Note::new(key("log-need-import-path")));
            return;
        }
        self.note = Some(match self.log.import(&PathBuf::from(path.trim())) {
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

    /// `<export folder>/molefeed-log-<stem>.<ext>` (the stem names the days, see
    /// [`DateSpan::file_stem`]), numbered so no earlier export is overwritten; creates the
    /// folder.
    pub fn default_export_path(
        session: &Session,
        format: ExportFormat,
        stem: &str,
    ) -> Option<PathBuf> {
        let folder = session.export_folder()?;
        std::fs::create_dir_all(&folder).ok()?;
        let ext = format.extension();
        (1..1000)
            .map(|n| match n {
                1 => folder.join(format!("molefeed-log-{stem}.{ext}")),
                n => folder.join(format!("molefeed-log-{stem}-{n}.{ext}")),
            })
            .find(|p| !p.exists())
    }
}

fn log_error_note(e: &LogError) -> Note {
    match e {
        LogError::Rejected { code, message } => {
            Note::new(&format!("log-error-{code}")).arg("detail", message)
        }
        LogError::Io(message) => Note::new(key("log-io-error")).arg("detail", message),
    }
}

/// A UTC time as the screen shows it: `2026-12-02 06:00:00`.
fn when_text(iso: &str) -> String {
    iso.replace('T', " ").trim_end_matches('Z').to_string()
}

/// One row of the log list, in words.
#[derive(Clone, Debug, PartialEq)]
pub struct LogLine {
    pub id: u64,
    /// Date and time to the minute, UTC.
    pub when: String,
    pub site: String,
    pub place: String,
    pub chemical: String,
    pub dose: String,
    /// "corrected" / "voided"; empty for an untouched entry.
    pub status: String,
    pub voided: bool,
}

/// The list as the screen shows it: its rows, and the line under the date fields — what the
/// list covers, or what is wrong with the typed dates.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct LogList {
    pub lines: Vec<LogLine>,
    pub summary: String,
    pub date_problem: String,
}

/// One chip of a filter row.
#[derive(Clone, Debug, PartialEq)]
pub struct Chip {
    pub label: String,
    pub selected: bool,
}

/// The Log screen's chip rows and the export folder line, in words.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct LogChips {
    pub ranges: Vec<Chip>,
    pub points: Vec<Chip>,
    pub chemicals: Vec<Chip>,
    pub formats: Vec<Chip>,
    pub export_folder: String,
}

/// Choice `n` of a filter row: 0 is "any", then the values in order.
fn pick(values: &[String], n: i32) -> Option<String> {
    (n > 0)
        .then(|| values.get(n as usize - 1).cloned())
        .flatten()
}

/// One history line: "when · initials · what", then the reason (and note) below it.
#[derive(Clone, Debug, PartialEq)]
pub struct HistoryLine {
    pub heading: String,
    pub reason: String,
    pub note: String,
}

impl LogScreen {
    /// The list on the UTC day `today`, in words.
    pub fn list(&self, today: NaiveDate, words: &dyn Words, lang: Lang) -> LogList {
        let (all, listed) = self.filtered_on(today);
        let (summary, date_problem) = match self.span(today) {
            Ok(span) => (
                words.note(
                    &Note::new(key("log-showing"))
                        .arg("count", listed.len())
                        .part("span", span.phrase()),
                ),
                String::new(),
            ),
            Err(problem) => (String::new(), words.note(&problem)),
        };
        let lines = listed
            .iter()
            .map(|&i| &all[i])
            .map(|e| LogLine {
                id: e.id,
                when: when_text(&e.when).get(..16).unwrap_or_default().to_string(),
                site: e.site.clone(),
                place: e.dose.tap.clone(),
                chemical: words.name(&e.dose.chemical),
                dose: e
                    .dose
                    .dose_mg_per_l()
                    .map_or_else(|| "—".into(), |d| numbers::format_sig(d, 3, lang)),
                status: match e.status {
                    EntryStatus::Original => String::new(),
                    EntryStatus::Corrected => words.get(key("log-status-corrected")),
                    EntryStatus::Voided => words.get(key("log-status-voided")),
                },
                voided: e.voided(),
            })
            .collect();
        LogList {
            lines,
            summary,
            date_problem,
        }
    }

    /// Chooses tap filter `n` of [`chips`](Self::chips): 0 is any, then the taps in order.
    pub fn pick_point(&mut self, n: i32) {
        let (points, _) = self.choices();
        self.filter.point = pick(&points, n);
    }

    /// Chooses chemical filter `n`, as [`pick_point`](Self::pick_point).
    pub fn pick_chemical(&mut self, n: i32) {
        let (_, chemicals) = self.choices();
        self.filter.chemical = pick(&chemicals, n);
    }

    /// The chip rows in words, each with its chosen chip: date ranges, taps and chemicals
    /// (with "any" first), export formats; and where a default export goes.
    pub fn chips(&self, session: &Session, words: &dyn Words) -> LogChips {
        let f = &self.filter;
        let chip = |label: String, selected: bool| Chip { label, selected };
        let (points, chemicals) = self.choices();
        let row = |any: &str, values: &[String], picked: &Option<String>, named: bool| {
            std::iter::once(chip(words.get(any), picked.is_none()))
                .chain(values.iter().map(|v| {
                    let label = if named { words.name(v) } else { v.clone() };
                    chip(label, picked.as_deref() == Some(v.as_str()))
                }))
                .collect()
        };
        LogChips {
            ranges: DateRange::ALL
                .iter()
                .map(|r| chip(words.get(r.key()), *r == f.range))
                .collect(),
            points: row(key("log-any-point"), &points, &f.point, false),
            chemicals: row(key("log-any-chemical"), &chemicals, &f.chemical, true),
            formats: ExportFormat::ALL
                .iter()
                .map(|x| {
                    let label = match x {
                        ExportFormat::Csv => words.get(key("log-format-csv")),
                        ExportFormat::JsonLines => words.get(key("log-format-jsonl")),
                    };
                    chip(label, *x == self.format)
                })
                .collect(),
            export_folder: match session.export_folder() {
                Some(folder) => words.get_args(
                    key("log-export-folder"),
                    &[("path", folder.display().to_string())],
                ),
                None => words.get(key("log-no-export-folder")),
            },
        }
    }

    /// The correction form's dose and note for the open entry, as recorded: the dose to the
    /// figures the card showed it with (three when the entry kept no shown text), in the
    /// language's decimal mark — the number the operator read, not the engine's full float.
    pub fn correction_fields(&self, lang: Lang) -> Option<(String, String)> {
        let d = self.selected_dose()?;
        let dose = d.dose_mg_per_l().unwrap_or_default();
        let figures = d
            .result(crate::log::record::result_id::DOSE)
            .and_then(|r| {
                let shown = r.shown.split(" (").next()?.trim().replace(',', ".");
                crate::engine::sigfig::count_sig_figs(&shown)
            })
            .map_or(3, |f| u32::from(f).clamp(1, 6));
        Some((numbers::format_sig(dose, figures, lang), d.note))
    }

    /// The open entry's detail as "label: value" lines, and its status in words.
    pub fn detail_lines(&self, words: &dyn Words) -> (Vec<String>, String) {
        let status = match self.selected_entry().map(|e| e.status) {
            Some(EntryStatus::Corrected) => words.get(key("log-detail-corrected")),
            Some(EntryStatus::Voided) => words.get(key("log-detail-voided")),
            Some(EntryStatus::Original) | None => String::new(),
        };
        let lines = self
            .selected_detail()
            .into_iter()
            .map(|row| {
                let value = match row.value {
                    DetailValue::Text(t) => t,
                    DetailValue::Name(n) => words.name(&n),
                    DetailValue::When(w) => when_text(&w),
                };
                format!("{}: {}", words.get(row.label), value)
            })
            .collect();
        (lines, status)
    }

    /// The open entry's original, corrections and void, oldest first, in words.
    pub fn history_lines(&self, words: &dyn Words, lang: Lang) -> Vec<HistoryLine> {
        if self.selected_entry().is_none() {
            return Vec::new();
        }
        self.selected_history()
            .iter()
            .map(|r| history_line(r, words, lang))
            .collect()
    }
}

fn history_line(r: &Revision, words: &dyn Words, lang: Lang) -> HistoryLine {
    let dose = r.dose_mg_per_l.map(|d| {
        format!(
            "{} {}",
            numbers::format_sig(d, 3, lang),
            words.get(&format!("unit-{}", Unit::MgPerL.code()))
        )
    });
    let what = match r.kind {
        RevisionKind::Logged => words.get_args(
            key("log-history-logged"),
            &[("dose", dose.unwrap_or_default())],
        ),
        RevisionKind::Corrected => words.get_args(
            key("log-history-corrected"),
            &[("dose", dose.unwrap_or_default())],
        ),
        RevisionKind::Voided => words.get(key("log-history-voided")),
    };
    let reason = if r.reason.is_empty() {
        String::new()
    } else {
        words.get_args(key("log-history-reason"), &[("reason", r.reason.clone())])
    };
    let note = match r.note.as_deref() {
        Some(note) if !note.is_empty() => format!("{}: {note}", words.get(key("log-field-note"))),
        _ => String::new(),
    };
    HistoryLine {
        heading: format!("{} · {} · {what}", when_text(&r.when), r.operator),
        reason,
        note,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::app::dose_log::PersistentLog;
    use crate::log::record::example_dose;

    /// The Log screen over a scratch log, with a session in `dir` (or none).
    struct Fixture {
        session: Session,
        log: LogScreen,
    }

    fn fixture(dir: Option<PathBuf>) -> Fixture {
        Fixture {
            session: Session::open(dir, None),
            log: LogScreen::new(Box::new(PersistentLog::scratch())),
        }
    }

    fn temp_dir(name: &str) -> PathBuf {
        let dir = std::env::temp_dir().join(format!("molefeed-{name}-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        dir
    }

    /// A logged dose at `point` of `chemical`, as the example feed with its dose set.
    fn logged(point: &str, chemical: &str, dose: f64) -> Dose {
        let mut d = example_dose();
        d.tap = point.into();
        d.chemical = chemical.into();
        d.results.iter_mut().find(|r| r.id == "dose").unwrap().value = dose;
        d
    }

    fn seed(s: &mut Fixture, when: &str, point: &str, chemical: &str, dose: f64) -> u64 {
        let at = chrono::DateTime::parse_from_rfc3339(when).unwrap();
        s.log
            .log
            .append("Demo site", Some(at), logged(point, chemical, dose))
            .unwrap()
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
    fn date_point_and_chemical_filters_combine() {
        let mut s = fixture(None);
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
        let (points, chemicals) = s.log.choices();
        assert_eq!(points, ["Clearwell", "Raw water"]);
        assert_eq!(chemicals, ["NaOCl", "NaOH"]);
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
            let mut s = fixture(None);
            s.log.edit_dates(from, to);
            assert_eq!(
                s.log.filter.range,
                DateRange::Custom,
                "typing makes it custom"
            );
            let got = s.log.span(day("2026-12-02")).map(span_text);
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
        let mut s = fixture(None);
        s.log.edit_dates("2026-12-01", "2026-11-30");
        let note = s.log.span(day("2026-12-02")).unwrap_err();
        assert_eq!(
            note.args,
            [("from", "2026-12-01".into()), ("to", "2026-11-30".into())]
        );
        s.log.edit_dates(" 2026-02-30 ", "");
        let note = s.log.span(day("2026-12-02")).unwrap_err();
        assert_eq!(note.args, [("text", "2026-02-30".into())]);
    }

    #[test]
    fn quick_ranges_fill_the_fields_and_typing_takes_over() {
        let mut s = fixture(None);
        let today = day("2026-12-02");
        let fields = |s: &Fixture| s.log.date_texts(today);
        assert_eq!(fields(&s), (String::new(), String::new()), "All: both open");
        s.log.pick_range(DateRange::LastMonth, today);
        assert_eq!(fields(&s), ("2026-11-01".into(), "2026-11-30".into()));
        // "Typed dates" keeps the days the fields show, now fixed.
        s.log.pick_range(DateRange::Custom, today);
        assert_eq!(fields(&s), ("2026-11-01".into(), "2026-11-30".into()));
        assert_eq!(
            span_text(s.log.span(day("2027-05-05")).unwrap()),
            ("2026-11-01".into(), "2026-11-30".into()),
            "typed days do not follow the clock"
        );
        s.log.pick_range(DateRange::Week, today);
        s.log.edit_dates("2026-11-2", "2026-11-26");
        assert_eq!(s.log.filter.range, DateRange::Custom);
        assert_eq!(
            fields(&s),
            ("2026-11-2".into(), "2026-11-26".into()),
            "kept as typed"
        );
        s.log.pick_range(DateRange::All, today);
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
        let mut s = fixture(Some(dir.clone()));
        let today = day("2026-12-02");
        seed(&mut s, "2026-10-31T23:59:59Z", "Clearwell", "NaOCl", 1.0);
        seed(&mut s, "2026-11-01T00:00:00Z", "Clearwell", "NaOCl", 2.0);
        let raw = seed(&mut s, "2026-11-15T08:00:00Z", "Raw water", "NaOH", 3.0);
        seed(&mut s, "2026-11-30T23:59:59Z", "Clearwell", "NaOCl", 4.0);
        seed(&mut s, "2026-12-01T00:00:00Z", "Clearwell", "NaOCl", 5.0);
        s.session.set_initials("KT");
        s.log.select(raw);
        s.log.void_selected(&s.session, "wrong tap").unwrap();

        s.log.pick_range(DateRange::LastMonth, today);
        s.log.export_on(&s.session, "", today);
        let note = s.log.note.clone().unwrap();
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
        s.log.export_on(&s.session, "", today);
        let second = dir.join("exports/molefeed-log-2026-11-01_2026-11-30-2.csv");
        assert_eq!(csv_rows(&second), november);
        assert_eq!(csv_rows(&first), november);

        // A tap and free text narrow the file as they narrow the list, and the message says so.
        s.log.filter.point = Some("Clearwell".into());
        s.log.export_on(&s.session, "", today);
        let third = dir.join("exports/molefeed-log-2026-11-01_2026-11-30-3.csv");
        assert_eq!(
            csv_rows(&third),
            [rows("2", "original"), rows("4", "original")]
        );
        let filters = &s.log.note.as_ref().unwrap().parts[1];
        assert_eq!(filters, &("filters", Note::new("log-export-narrowed")));
        s.log.filter.point = None;
        s.log.filter.text = "raw wat".into();
        let typed = dir.join("november-raw.csv");
        s.log
            .export_on(&s.session, &typed.display().to_string(), today);
        assert_eq!(csv_rows(&typed), [rows("3", "voided")]);

        // Open ends and typed days name the file by what they cover.
        s.log.filter.text.clear();
        s.log.edit_dates("2026-11-30", "");
        s.log.export_on(&s.session, "", today);
        let onwards = dir.join("exports/molefeed-log-2026-11-30_onwards.csv");
        assert_eq!(
            csv_rows(&onwards),
            [rows("4", "original"), rows("5", "original")]
        );
        s.log.edit_dates("", "20261031");
        s.log.export_on(&s.session, "", today);
        let until = dir.join("exports/molefeed-log-until_2026-10-31.csv");
        assert_eq!(csv_rows(&until), [rows("1", "original")]);
        std::fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn bad_dates_or_an_empty_list_export_nothing() {
        let dir = temp_dir("no-export");
        let mut s = fixture(Some(dir.clone()));
        let today = day("2026-12-02");
        seed(&mut s, "2026-11-15T08:00:00Z", "Clearwell", "NaOCl", 1.0);
        let cases = [
            ("2026-11-31", "", "log-export-fix-dates"),
            ("2026-12-01", "2026-11-01", "log-export-fix-dates"),
            ("2026-12-01", "2026-12-31", "log-export-nothing"),
        ];
        for (from, to, want) in cases {
            s.log.edit_dates(from, to);
            assert!(s.log.filtered_entries_on(today).len() <= 1);
            s.log.export_on(&s.session, "", today);
            assert_eq!(s.log.note.as_ref().unwrap().key, want, "{from}..{to}");
        }
        s.log.edit_dates("2026-11-31", "");
        assert!(
            s.log.filtered_entries_on(today).is_empty(),
            "a bad date lists nothing"
        );
        let written = std::fs::read_dir(dir.join("exports"))
            .map(|d| d.count())
            .unwrap_or(0);
        assert_eq!(written, 0, "no file was written");
        let _ = std::fs::remove_dir_all(&dir);
    }

    #[test]
    fn export_goes_to_a_dated_file_in_the_export_folder() {
        let dir = std::env::temp_dir().join(format!("molefeed-export-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        let mut s = fixture(Some(dir.clone()));
        seed(&mut s, "2026-12-02T06:00:00Z", "Clearwell", "NaOCl", 1.5);
        let first =
            LogScreen::default_export_path(&s.session, ExportFormat::Csv, "2026-12-02").unwrap();
        assert_eq!(first, dir.join("exports/molefeed-log-2026-12-02.csv"));
        std::fs::write(&first, "earlier").unwrap();
        let second =
            LogScreen::default_export_path(&s.session, ExportFormat::JsonLines, "2026-12-02")
                .unwrap();
        assert!(second.ends_with("molefeed-log-2026-12-02.jsonl"));
        let third =
            LogScreen::default_export_path(&s.session, ExportFormat::Csv, "2026-12-02").unwrap();
        assert!(
            third.ends_with("molefeed-log-2026-12-02-2.csv"),
            "{third:?}"
        );
        s.log.format = ExportFormat::Csv;
        s.log.export(&s.session, "  ");
        let note = s.log.note.clone().unwrap();
        assert_eq!(note.key, "log-exported");
        let written = PathBuf::from(&note.args[1].1);
        assert!(std::fs::read_to_string(&written).unwrap().contains("NaOCl"));
        assert_eq!(std::fs::read_to_string(&first).unwrap(), "earlier");
        s.log.import("");
        assert_eq!(s.log.note.as_ref().unwrap().key, "log-need-import-path");
        s.log
            .import(&dir.join("missing.doselog").display().to_string());
        assert_eq!(s.log.note.as_ref().unwrap().key, "log-error-not-found");
        std::fs::remove_dir_all(&dir).unwrap();
    }

    /// The doses the list shows for a filter on a fixed day, newest first.
    fn shown(s: &mut Fixture, filter: LogFilter) -> Vec<f64> {
        s.log.filter = filter;
        s.log
            .filtered_entries_on(day("2026-12-02"))
            .iter()
            .map(|e| e.dose.dose_mg_per_l().unwrap())
            .collect()
    }

    /// The list, the detail and the history in words, with texts written by hand from the
    /// dictionary (the seed is the example feed: its dose set, the rest as recorded).
    #[test]
    fn the_list_detail_and_history_are_worded_for_the_screen() {
        use crate::app::words::Dictionary;
        let words = Dictionary(&[
            ("log-showing", "{ $count } shown, { $span }"),
            ("log-span-between", "{ $from } to { $to }"),
            ("log-to-bad", "Not a day: { $text }"),
            ("log-status-voided", "voided"),
            ("log-detail-voided", "This entry is voided."),
            ("log-field-when", "When"),
            ("log-field-point", "Tap"),
            ("log-field-note", "Note"),
            ("log-history-logged", "logged { $dose }"),
            ("log-history-voided", "voided"),
            ("log-history-reason", "Why: { $reason }"),
            ("unit-mg-per-l", "mg/L"),
            ("NaOCl", "Hypochlorite"),
        ]);
        let mut s = fixture(None);
        let today = day("2026-12-02");
        let first = seed(&mut s, "2026-11-15T08:00:00Z", "Clearwell", "NaOCl", 1.25);
        seed(&mut s, "2026-12-01T09:30:00Z", "Raw water", "NaOH", 3.0);
        s.session.set_initials("KT");
        s.log.select(first);
        s.log.void_selected(&s.session, "wrong tap").unwrap();
        s.log.edit_dates("2026-11-01", "2026-11-30");
        let list = s.log.list(today, &words, Lang::En);
        assert_eq!(list.summary, "1 shown, 2026-11-01 to 2026-11-30");
        assert_eq!(list.date_problem, "");
        let line = &list.lines[0];
        assert_eq!(
            (
                line.when.as_str(),
                line.place.as_str(),
                line.chemical.as_str()
            ),
            ("2026-11-15 08:00", "Clearwell", "Hypochlorite")
        );
        assert_eq!(
            (line.dose.as_str(), line.status.as_str(), line.voided),
            ("1.25", "voided", true)
        );
        // Spanish: the decimal comma.
        s.log.edit_dates("", "");
        let list = s.log.list(today, &words, Lang::Es);
        assert_eq!(list.lines.len(), 2);
        assert_eq!(list.lines[0].dose, "3,00", "newest first, to three figures");
        s.log.edit_dates("", "2026-11-31");
        let list = s.log.list(today, &words, Lang::En);
        assert!(list.lines.is_empty());
        assert_eq!(
            (list.summary.as_str(), list.date_problem.as_str()),
            ("", "Not a day: 2026-11-31")
        );

        let (detail, status) = s.log.detail_lines(&words);
        assert_eq!(status, "This entry is voided.");
        assert!(
            detail.contains(&"When: 2026-11-15 08:00:00".to_string()),
            "{detail:?}"
        );
        assert!(detail.contains(&"Tap: Clearwell".to_string()), "{detail:?}");
        let history = s.log.history_lines(&words, Lang::En);
        assert_eq!(history.len(), 2);
        assert_eq!(
            history[0].heading,
            "2026-11-15 08:00:00 · JM · logged 1.25 mg/L"
        );
        assert_eq!(history[0].reason, "");
        assert!(history[1].heading.ends_with("· KT · voided"), "{history:?}");
        assert_eq!(history[1].reason, "Why: wrong tap");
    }

    #[test]
    fn the_correction_form_starts_from_the_entry_as_recorded() {
        let mut s = fixture(None);
        assert_eq!(s.log.correction_fields(Lang::En), None, "nothing open");
        let check = |s: &mut Fixture, dose: f64, lang: Lang, want: &str| {
            let id = seed(s, "2026-11-15T08:00:00Z", "Clearwell", "NaOCl", dose);
            s.log.select(id);
            let (text, note) = s.log.correction_fields(lang).unwrap();
            assert_eq!(text, want, "{dose} in {lang:?}");
            assert_eq!(note, example_dose().note);
        };
        // The example entry showed its dose as "1.80": the form keeps those three figures.
        check(&mut s, 1.5, Lang::En, "1.50");
        check(&mut s, 1.5, Lang::Es, "1,50");
        check(&mut s, 2.0, Lang::En, "2.00");
        check(&mut s, 10.0, Lang::En, "10.0");
        check(&mut s, 0.123456, Lang::En, "0.123");
        check(&mut s, 8.506894, Lang::En, "8.51");
    }

    /// The chip rows: "any" first, the values present in the log, the chosen one marked; a
    /// tap or chemical is picked by its position in its row.
    #[test]
    fn filter_chips_offer_any_then_what_the_log_holds() {
        use crate::app::words::Dictionary;
        let words = Dictionary(&[
            ("log-any-point", "Any tap"),
            ("log-any-chemical", "Any chemical"),
            ("log-no-export-folder", "No export folder."),
            ("NaOH", "Caustic soda"),
        ]);
        let mut s = fixture(None);
        seed(&mut s, "2026-11-15T08:00:00Z", "Raw water", "NaOH", 1.0);
        seed(&mut s, "2026-11-16T08:00:00Z", "Clearwell", "NaOCl", 2.0);
        let labels = |chips: &[Chip]| -> Vec<(String, bool)> {
            chips
                .iter()
                .map(|c| (c.label.clone(), c.selected))
                .collect()
        };
        let row = |items: &[(&str, bool)]| -> Vec<(String, bool)> {
            items.iter().map(|(l, s)| (l.to_string(), *s)).collect()
        };
        s.log.pick_point(2);
        s.log.pick_chemical(1);
        let chips = s.log.chips(&s.session, &words);
        assert_eq!(
            labels(&chips.points),
            row(&[
                ("Any tap", false),
                ("Clearwell", false),
                ("Raw water", true)
            ])
        );
        assert_eq!(
            labels(&chips.chemicals),
            row(&[
                ("Any chemical", false),
                ("NaOCl", true),
                ("Caustic soda", false)
            ])
        );
        assert_eq!(chips.ranges.iter().filter(|c| c.selected).count(), 1);
        assert_eq!(chips.export_folder, "No export folder.");
        s.log.pick_point(0);
        s.log.pick_chemical(9);
        assert_eq!(
            (&s.log.filter.point, &s.log.filter.chemical),
            (&None, &None)
        );
    }
}
