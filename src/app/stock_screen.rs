//! The stock controller: readings and deliveries recorded with the care of a dose (initials,
//! the time taken, corrections and voids through the log), the "Stock" rows of each site tank,
//! and the monthly operating report saved as PDF and CSV.
//!
//! Design choice: plain Rust over the [`DoseLog`] seam, like [`super::log_screen`]; every
//! number comes from the engine or the log (`log::report::stock_rows`, `report_from_log`,
//! the tank geometry's `volume_l` for the check of a level), so the screen does no arithmetic
//! of its own and the app's report is the CLI's report.

use super::calc::key;
use super::dose_log::{DoseLog, LogError};
use super::numbers::Lang;
use super::session::Note;
use crate::engine::dosing::catalog::Catalog;
use crate::engine::dosing::site::SiteProfile;
use crate::log::record::{DELIVERY_UNITS, Reading};
use crate::log::report::{self, Format, Report, StockRow};
use chrono::{DateTime, Datelike, Duration, FixedOffset, NaiveDate, NaiveTime};
use std::path::{Path, PathBuf};

/// What the form records.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum Kind {
    /// A tank's level (`subject` = tank id).
    #[default]
    TankLevel,
    /// Product received (`subject` = the site's delivered-product id).
    Delivery,
    /// A flow meter's totaliser (`subject` = meter id).
    Totalizer,
    /// A parameter read at a tap (`subject` = tap id, `parameter` from the tap's list).
    AtTap,
}

/// The form as typed. Text stays as typed; it is read only when the operator records.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct StockForm {
    pub kind: Kind,
    pub subject: String,
    pub parameter: String,
    pub value: String,
    /// A delivery's unit (`gal`, `l`, `lb`, `kg`).
    pub unit: String,
    pub note_number: String,
    /// Empty: now. Else `HH:MM` of today, or of yesterday when `yesterday` is set.
    pub earlier: String,
    pub yesterday: bool,
}

/// The Stock screen's controller.
#[derive(Clone, Debug, Default)]
pub struct StockScreen {
    pub form: StockForm,
    /// The last outcome, in words (a translation key and its arguments).
    pub message: Option<Note>,
    /// The reading opened from the list for a correction or a void.
    pub selected: Option<uuid::Uuid>,
    /// The month the report card produces (`2026-11`), as typed.
    pub month: String,
    /// The last report saved, for its totals line, and where it went (or why it did not).
    pub report: Option<Report>,
    pub report_note: Option<Note>,
}

fn refuse(key: &str) -> Note {
    Note::new(key)
}

fn log_note(e: &LogError) -> Note {
    match e {
        LogError::Rejected { code, message } => {
            Note::new(&format!("log-error-{code}")).arg("detail", message)
        }
        LogError::Io(m) => Note::new(key("log-error-io")).arg("detail", m),
    }
}

/// The days of a month typed `2026-11` or `202611`.
pub fn month_days(text: &str) -> Option<(NaiveDate, NaiveDate)> {
    let t = text.trim();
    let (y, m) = match t.split_once('-') {
        Some((y, m)) => (y, m),
        None if t.len() == 6 => t.split_at(4),
        None => return None,
    };
    if y.len() != 4 || m.is_empty() || m.len() > 2 {
        return None;
    }
    let first = NaiveDate::from_ymd_opt(y.parse().ok()?, m.parse().ok()?, 1)?;
    let last = first.checked_add_months(chrono::Months::new(1))? - Duration::days(1);
    Some((first, last))
}

impl StockScreen {
    /// A fresh card: the report's month is last month (the month a report is due for).
    pub fn new() -> StockScreen {
        let today = chrono::Utc::now().date_naive();
        let first = today.with_day(1).unwrap_or(today);
        let last_month = first
            .checked_sub_months(chrono::Months::new(1))
            .unwrap_or(first);
        StockScreen {
            month: last_month.format("%Y-%m").to_string(),
            ..StockScreen::default()
        }
    }

    /// The time the reading was taken: now, or `HH:MM` today / yesterday on the site's clock
    /// (`now`'s offset). A time after now is refused; the log refuses anything older.
    fn taken_at(&self, now: DateTime<FixedOffset>) -> Result<Option<DateTime<FixedOffset>>, Note> {
        let text = self.form.earlier.trim();
        if text.is_empty() {
            return Ok(None);
        }
        let time = NaiveTime::parse_from_str(text, "%H:%M")
            .map_err(|_| refuse(key("stock-error-time")).arg("text", text))?;
        let mut day = now.date_naive();
        if self.form.yesterday {
            day -= Duration::days(1);
        }
        let at = day
            .and_time(time)
            .and_local_timezone(*now.offset())
            .single()
            .ok_or_else(|| refuse(key("stock-error-time")).arg("text", text))?;
        if at > now {
            return Err(refuse(key("stock-error-future")).arg("text", text));
        }
        Ok(Some(at))
    }

    /// The form's number, read as the calculators read one in `lang` (`numbers::parse`): in
    /// English "1,234" is refused, not taken for 1.234 (a level or totaliser 1000 times off),
    /// and in Spanish "1.234" is refused as ambiguous.
    fn value(&self, lang: Lang) -> Result<f64, Note> {
        crate::app::numbers::parse(&self.form.value, lang)
            .ok()
            .filter(|v| v.is_finite() && *v >= 0.0)
            .ok_or_else(|| refuse(key("stock-error-value")).arg("text", self.form.value.trim()))
    }

    /// The reading the form describes, checked against the site profile (and, for a level,
    /// against the tank's geometry, which must turn it into a volume).
    pub fn reading(&self, site: &SiteProfile, initials: &str, lang: Lang) -> Result<Reading, Note> {
        let operator = initials.trim();
        if operator.is_empty() {
            return Err(refuse(key("stock-error-initials")));
        }
        let operator = operator.to_string();
        let id = self.form.subject.trim();
        let unknown = || refuse(key("stock-error-unknown")).arg("id", id);
        let value = self.value(lang)?;
        match self.form.kind {
            Kind::TankLevel => {
                let tank = site
                    .day_tanks
                    .iter()
                    .find(|t| t.id == id)
                    .ok_or_else(unknown)?;
                let geometry = site.tank(id).map_err(|_| unknown())?.geometry;
                geometry
                    .volume_l(value * tank.metres())
                    .map_err(|_| refuse(key("stock-error-level")).arg("text", &self.form.value))?;
                Ok(Reading::TankLevel {
                    operator,
                    tank: id.to_string(),
                    level: value,
                    unit: tank.length_unit.symbol().to_string(),
                })
            }
            Kind::Delivery => {
                site.delivered(id).map_err(|_| unknown())?;
                let unit = self.form.unit.trim();
                if !DELIVERY_UNITS.contains(&unit) {
                    return Err(refuse(key("stock-error-unit")).arg("text", unit));
                }
                Ok(Reading::Delivery {
                    operator,
                    product: id.to_string(),
                    amount: value,
                    unit: unit.to_string(),
                    note_number: self.form.note_number.trim().to_string(),
                })
            }
            Kind::Totalizer => {
                let meter = site
                    .flow_meters
                    .iter()
                    .find(|m| m.id == id)
                    .ok_or_else(unknown)?;
                let unit = meter
                    .totalizer_unit
                    .ok_or_else(|| refuse(key("stock-error-no-totalizer")).arg("id", id))?;
                Ok(Reading::Totalizer {
                    operator,
                    meter: id.to_string(),
                    value,
                    unit: match unit.symbol() {
                        "m³" => "m3".to_string(),
                        s => s.to_lowercase(),
                    },
                })
            }
            Kind::AtTap => {
                let tap = site
                    .sampling_taps
                    .iter()
                    .find(|t| t.id == id)
                    .ok_or_else(unknown)?;
                let parameter = self.form.parameter.trim();
                if !tap.parameters.iter().any(|p| p == parameter) {
                    return Err(refuse(key("stock-error-unknown")).arg("id", parameter));
                }
                Ok(Reading::AtTap {
                    operator,
                    tap: id.to_string(),
                    parameter: parameter.to_string(),
                    value,
                    unit: crate::log::record::parameter_unit(parameter).to_string(),
                })
            }
        }
    }

    /// Records the form's reading through the log; the value is cleared once it is saved.
    pub fn record(
        &mut self,
        log: &mut dyn DoseLog,
        site: &SiteProfile,
        initials: &str,
        lang: Lang,
        now: DateTime<FixedOffset>,
    ) -> Option<uuid::Uuid> {
        let outcome = self.reading(site, initials, lang).and_then(|reading| {
            let at = self.taken_at(now)?;
            log.record_reading(&site.name, at, reading)
                .map_err(|e| log_note(&e))
        });
        match outcome {
            Ok(id) => {
                self.form.value.clear();
                self.form.earlier.clear();
                self.form.yesterday = false;
                self.message = Some(Note::new(key("stock-recorded")));
                Some(id)
            }
            Err(note) => {
                self.message = Some(note);
                None
            }
        }
    }

    /// Corrects reading `id` to what the form now says; the reason is required, and the
    /// corrector's initials go on the corrected reading (the original's stay in the history).
    pub fn correct(
        &mut self,
        log: &mut dyn DoseLog,
        site: &SiteProfile,
        id: uuid::Uuid,
        initials: &str,
        lang: Lang,
        reason: &str,
    ) -> bool {
        let outcome = if reason.trim().is_empty() {
            Err(refuse(key("stock-error-reason")))
        } else {
            self.reading(site, initials, lang).and_then(|reading| {
                log.correct_reading(id, reason.trim(), reading)
                    .map_err(|e| log_note(&e))
            })
        };
        self.finish(outcome, key("stock-corrected"))
    }

    /// Voids reading `id` (initials and a reason required); it stays in the log, marked.
    pub fn void(
        &mut self,
        log: &mut dyn DoseLog,
        id: uuid::Uuid,
        initials: &str,
        reason: &str,
    ) -> bool {
        let outcome = if initials.trim().is_empty() {
            Err(refuse(key("stock-error-initials")))
        } else if reason.trim().is_empty() {
            Err(refuse(key("stock-error-reason")))
        } else {
            log.void_reading(id, initials.trim(), reason.trim())
                .map_err(|e| log_note(&e))
        };
        self.finish(outcome, key("stock-voided"))
    }

    fn finish(&mut self, outcome: Result<(), Note>, done: &str) -> bool {
        let ok = outcome.is_ok();
        self.message = Some(outcome.err().unwrap_or_else(|| Note::new(done)));
        ok
    }

    /// The Stock view's rows: each site tank's latest level, volume, fill, days of supply and
    /// reorder date, from the engine's `stock_rows` over the last `window_days` days.
    pub fn stock(
        log: &dyn DoseLog,
        site: &SiteProfile,
        catalog: &Catalog,
        today: NaiveDate,
        window_days: u32,
    ) -> Result<Vec<StockRow>, Note> {
        let readings = log.readings(&site.name).map_err(|e| log_note(&e))?;
        Ok(report::stock_rows(
            site,
            catalog,
            &readings,
            today,
            window_days,
        ))
    }

    /// The operating report of the month typed (`2026-11`), from the log.
    pub fn month_report(
        log: &dyn DoseLog,
        site: &SiteProfile,
        catalog: &Catalog,
        month: &str,
    ) -> Result<Report, Note> {
        let (from, to) =
            month_days(month).ok_or_else(|| refuse(key("stock-error-month")).arg("text", month))?;
        log.operating_report(site, catalog, from, to)
            .map_err(|e| log_note(&e))
    }

    /// Produces the month's report and saves it in `export_dir` as PDF, CSV and JSON (the
    /// CLI's `--json` shape), named by the month (`molefeed-report-2026-11.pdf`), numbered
    /// `-2`, `-3` … rather than replace an earlier file. Returns the PDF and CSV paths; the
    /// report is kept for its totals.
    pub fn save_report(
        &mut self,
        log: &dyn DoseLog,
        site: &SiteProfile,
        catalog: &Catalog,
        month: &str,
        export_dir: &Path,
    ) -> Option<(PathBuf, PathBuf)> {
        let outcome = Self::month_report(log, site, catalog, month).and_then(|r| {
            std::fs::create_dir_all(export_dir)
                .map_err(|e| refuse(key("log-error-io")).arg("detail", e))?;
            let stem = format!("molefeed-report-{}", r.from.format("%Y-%m"));
            let [pdf, csv, json] = free_set(export_dir, &stem);
            for (path, format) in [
                (&pdf, Format::Pdf),
                (&csv, Format::Csv),
                (&json, Format::Json),
            ] {
                report::write_report(&r, format, path)
                    .map_err(|e| refuse(key("log-error-io")).arg("detail", e))?;
            }
            Ok((pdf, csv, json, r))
        });
        match outcome {
            Ok((pdf, csv, json, r)) => {
                self.message = Some(
                    Note::new(key("stock-report-saved"))
                        .arg("pdf", pdf.display())
                        .arg("csv", csv.display())
                        .arg("json", json.display()),
                );
                self.report = Some(r);
                Some((pdf, csv))
            }
            Err(note) => {
                self.message = Some(note);
                self.report = None;
                None
            }
        }
    }
}

/// The first `stem.pdf` / `stem.csv` / `stem.json` set (then `stem-2` …) of which no file
/// exists.
fn free_set(dir: &Path, stem: &str) -> [PathBuf; 3] {
    (1..)
        .map(|n| {
            let name = if n == 1 {
                stem.to_string()
            } else {
                format!("{stem}-{n}")
            };
            ["pdf", "csv", "json"].map(|ext| dir.join(format!("{name}.{ext}")))
        })
        .find(|set| set.iter().all(|p| !p.exists()))
        .unwrap_or_default()
}

#[cfg(test)]
mod tests {
    //! Through the real crash-safe log (`PersistentLog` over a fresh directory) and the demo
    //! plant's profile; expected numbers are worked by hand beside each check.
    use super::*;
    use crate::app::dose_log::PersistentLog;
    use crate::log::Status;
    use chrono::TimeZone;

    const SITE: &str = "Harrowmere Tarn Water Works (demo)";
    /// L in one cubic foot (0.3048 m a foot, exact) and in one US gallon (231 in³, exact).
    const FT3_L: f64 = 0.3048 * 0.3048 * 0.3048 * 1000.0;

    fn catalog() -> Catalog {
        Catalog::builtin().expect("built-in catalog")
    }

    fn site(catalog: &Catalog) -> SiteProfile {
        let site = SiteProfile::demo(catalog).expect("demo site");
        assert_eq!(site.name, SITE);
        site
    }

    fn temp_dir(name: &str) -> PathBuf {
        let dir = std::env::temp_dir().join(format!(
            "molefeed-stock-screen-{name}-{}",
            std::process::id()
        ));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(&dir).expect("temp dir");
        dir
    }

    fn now() -> DateTime<FixedOffset> {
        chrono::Utc::now().fixed_offset()
    }

    fn form(kind: Kind, subject: &str, value: &str) -> StockForm {
        StockForm {
            kind,
            subject: subject.into(),
            value: value.into(),
            ..StockForm::default()
        }
    }

    /// One refusal case: the form is refused with `key` and nothing reaches the log.
    fn check_refused(f: StockForm, initials: &str, now: DateTime<FixedOffset>, key: &str) {
        let c = catalog();
        let site = site(&c);
        let mut log = PersistentLog::scratch();
        let mut screen = StockScreen {
            form: f.clone(),
            ..StockScreen::default()
        };
        assert_eq!(
            screen.record(&mut log, &site, initials, Lang::En, now),
            None,
            "{f:?}"
        );
        assert_eq!(
            screen.message.as_ref().map(|n| n.key.as_str()),
            Some(key),
            "{f:?}"
        );
        assert!(log.readings(SITE).unwrap().is_empty(), "{f:?}");
    }

    #[test]
    fn a_form_that_is_not_right_is_refused_in_words() {
        let n = now();
        check_refused(
            form(Kind::TankLevel, "hypo-day-tank", "4"),
            " ",
            n,
            "stock-error-initials",
        );
        check_refused(
            form(Kind::TankLevel, "no-such-tank", "4"),
            "RK",
            n,
            "stock-error-unknown",
        );
        check_refused(
            form(Kind::TankLevel, "hypo-day-tank", "four"),
            "RK",
            n,
            "stock-error-value",
        );
        check_refused(
            form(Kind::TankLevel, "hypo-day-tank", "-1"),
            "RK",
            n,
            "stock-error-value",
        );
        // A comma in English is no decimal mark: "4,5" refused, not read as 4.5 (nor a
        // totaliser's "1,234" as 1.234, a thousand times off).
        check_refused(
            form(Kind::TankLevel, "hypo-day-tank", "4,5"),
            "RK",
            n,
            "stock-error-value",
        );
        check_refused(
            form(Kind::Totalizer, "filter-effluent", "48,000,000"),
            "RK",
            n,
            "stock-error-value",
        );
        // The demo day tank is 6 ft tall (data/demo-site.json): 7 ft is no level of it.
        check_refused(
            form(Kind::TankLevel, "hypo-day-tank", "7"),
            "RK",
            n,
            "stock-error-level",
        );
        // The raw-water venturi has no totaliser unit in the demo profile.
        check_refused(
            form(Kind::Totalizer, "raw-venturi", "5"),
            "RK",
            n,
            "stock-error-no-totalizer",
        );
        check_refused(
            form(Kind::Delivery, "hypo-bulk", "280"),
            "RK",
            n,
            "stock-error-unit",
        );
        check_refused(
            form(Kind::Delivery, "no-such-product", "280"),
            "RK",
            n,
            "stock-error-unknown",
        );
        let mut tap = form(Kind::AtTap, "clearwell-tap", "1.1");
        tap.parameter = "turbidity".into(); // not on the clearwell tap's list
        check_refused(tap, "RK", n, "stock-error-unknown");
        // An earlier time that is after the clock, or not a time.
        let eight = FixedOffset::east_opt(0)
            .unwrap()
            .with_ymd_and_hms(2026, 11, 3, 8, 0, 0)
            .unwrap();
        let mut later = form(Kind::TankLevel, "hypo-day-tank", "4");
        later.earlier = "09:00".into();
        check_refused(later.clone(), "RK", eight, "stock-error-future");
        later.earlier = "9 o'clock".into();
        check_refused(later, "RK", eight, "stock-error-time");
    }

    #[test]
    fn each_kind_is_recorded_with_initials_and_the_time_it_was_taken() {
        let dir = temp_dir("record");
        let c = catalog();
        let site = site(&c);
        let mut screen = StockScreen::default();
        {
            let mut log = PersistentLog::new(&dir, "test");
            let n = now();
            screen.form = form(Kind::TankLevel, "hypo-day-tank", "4.5");
            // Taken at midnight yesterday: before the clock, within the previous day.
            screen.form.earlier = "00:00".into();
            screen.form.yesterday = true;
            assert!(
                screen.record(&mut log, &site, "RK", Lang::En, n).is_some(),
                "{:?}",
                screen.message
            );
            assert_eq!(screen.form.value, "", "the value is cleared once saved");
            screen.form = form(Kind::Delivery, "hypo-bulk", "282");
            screen.form.unit = "gal".into();
            screen.form.note_number = "DN-1104".into();
            assert!(
                screen.record(&mut log, &site, "RK", Lang::En, n).is_some(),
                "{:?}",
                screen.message
            );
            screen.form = form(Kind::Totalizer, "filter-effluent", "48000000");
            assert!(
                screen.record(&mut log, &site, "RK", Lang::En, n).is_some(),
                "{:?}",
                screen.message
            );
            // Typed on a tablet in Spanish: the comma is its decimal mark.
            screen.form = form(Kind::AtTap, "clearwell-tap", "1,2");
            screen.form.parameter = "chlorine".into();
            assert!(
                screen.record(&mut log, &site, "RK", Lang::Es, n).is_some(),
                "{:?}",
                screen.message
            );
            assert_eq!(screen.message.as_ref().unwrap().key, "stock-recorded");
        }
        // Reopened from disk: the four readings as typed, oldest first.
        let log = PersistentLog::new(&dir, "test");
        let readings = log.readings(SITE).unwrap();
        assert_eq!(readings.len(), 4);
        let yesterday = now().date_naive() - Duration::days(1);
        assert_eq!(readings[0].at.date_naive(), yesterday);
        assert_eq!(readings[0].at.time(), NaiveTime::MIN);
        assert!(readings[0].entered_at.is_some(), "an earlier time says so");
        let kinds: Vec<String> = readings
            .iter()
            .map(|r| match &r.reading {
                Reading::TankLevel {
                    operator,
                    level,
                    unit,
                    ..
                } => format!("{operator} level {level} {unit}"),
                Reading::Delivery {
                    amount,
                    unit,
                    note_number,
                    ..
                } => format!("delivery {amount} {unit} {note_number}"),
                Reading::Totalizer { value, unit, .. } => format!("totalizer {value} {unit}"),
                Reading::AtTap {
                    parameter,
                    value,
                    unit,
                    ..
                } => format!("{parameter} {value} {unit}"),
            })
            .collect();
        assert_eq!(
            kinds,
            [
                "RK level 4.5 ft",
                "delivery 282 gal DN-1104",
                "totalizer 48000000 gal",
                "chlorine 1.2 mg/L"
            ]
        );
        drop(log);
        let _ = std::fs::remove_dir_all(&dir);
    }

    #[test]
    fn a_reading_is_corrected_and_voided_through_the_log_with_a_reason() {
        let dir = temp_dir("revise");
        let c = catalog();
        let site = site(&c);
        let mut log = PersistentLog::new(&dir, "test");
        let mut screen = StockScreen {
            form: form(Kind::TankLevel, "hypo-day-tank", "4.0"),
            ..StockScreen::default()
        };
        let level = screen
            .record(&mut log, &site, "RK", Lang::En, now())
            .expect("recorded");
        screen.form = form(Kind::Totalizer, "filter-effluent", "100");
        let meter = screen
            .record(&mut log, &site, "RK", Lang::En, now())
            .expect("recorded");
        // A correction needs a reason; then it records the form's reading with the
        // corrector's initials.
        screen.form = form(Kind::TankLevel, "hypo-day-tank", "4.5");
        assert!(!screen.correct(&mut log, &site, level, "JM", Lang::En, " "));
        assert_eq!(screen.message.as_ref().unwrap().key, "stock-error-reason");
        assert!(screen.correct(
            &mut log,
            &site,
            level,
            "JM",
            Lang::En,
            "misread the sight glass"
        ));
        // A void needs initials and a reason.
        assert!(!screen.void(&mut log, meter, "", "duplicate"));
        assert_eq!(screen.message.as_ref().unwrap().key, "stock-error-initials");
        assert!(!screen.void(&mut log, meter, "JM", ""));
        assert!(screen.void(&mut log, meter, "JM", "duplicate"));
        assert!(!screen.void(&mut log, uuid::Uuid::nil(), "JM", "no such"));
        assert_eq!(
            screen.message.as_ref().unwrap().key,
            "log-error-unknown-entry"
        );
        drop(log);
        let log = PersistentLog::new(&dir, "test");
        let readings = log.readings(SITE).unwrap();
        assert_eq!(readings.len(), 2, "a voided reading stays listed");
        let l = readings.iter().find(|r| r.id == level).unwrap();
        assert_eq!(l.status, Status::Corrected);
        assert_eq!(l.revisions, 1);
        assert!(
            matches!(&l.reading, Reading::TankLevel { level, operator, .. } if *level == 4.5 && operator == "JM")
        );
        let m = readings.iter().find(|r| r.id == meter).unwrap();
        assert_eq!(m.status, Status::Voided);
        drop(log);
        let _ = std::fs::remove_dir_all(&dir);
    }

    #[test]
    fn stock_of_the_day_tank_from_its_last_levels() {
        // Three morning levels of the 4 ft × 6 ft day tank: 5.0, 4.5, 4.0 ft, no delivery.
        let dir = temp_dir("stock");
        let c = catalog();
        let site = site(&c);
        let path = crate::log::site_file(&dir, SITE);
        {
            let mut log = crate::log::Log::open(&path, "test").unwrap();
            let offset = FixedOffset::west_opt(6 * 3600).unwrap();
            for (d, level) in [(1, 5.0), (2, 4.5), (3, 4.0)] {
                let when = offset.with_ymd_and_hms(2026, 11, d, 7, 0, 0).unwrap();
                log.append_at(
                    crate::log::Draft::Reading {
                        at: Some(when),
                        site: SITE.into(),
                        reading: Reading::TankLevel {
                            operator: "RK".into(),
                            tank: "hypo-day-tank".into(),
                            level,
                            unit: "ft".into(),
                        },
                    },
                    Some(when),
                )
                .unwrap();
            }
        }
        let log = PersistentLog::new(&dir, "test");
        let today = NaiveDate::from_ymd_opt(2026, 11, 3).unwrap();
        let rows = StockScreen::stock(&log, &site, &c, today, 7).unwrap();
        let row = rows.iter().find(|r| r.tank == "hypo-day-tank").unwrap();
        // By hand: volume π (2 ft)² × 4.0 ft; 0.5 ft a day used, so 4.0 / 0.5 = 8 days of
        // supply, and the 1.5 ft reorder level (demo profile) is (4.0 − 1.5) / 0.5 = 5 days off.
        let volume = std::f64::consts::PI * 4.0 * 4.0 * FT3_L;
        let rate = std::f64::consts::PI * 4.0 * 0.5 * FT3_L;
        assert_eq!(row.level, Some(4.0));
        assert_eq!(row.level_unit, "ft");
        assert!((row.volume_l.unwrap() - volume).abs() < 1e-9 * volume);
        assert!((row.use_rate_l_per_day.unwrap() - rate).abs() < 1e-9 * rate);
        assert!((row.days_of_supply.unwrap() - 8.0).abs() < 1e-9);
        assert_eq!(row.reorder_date, NaiveDate::from_ymd_opt(2026, 11, 8));
        // A tank never read has no level and no numbers, never a zero.
        let alum = rows.iter().find(|r| r.tank == "alum-bulk-tank").unwrap();
        assert_eq!(
            (alum.level, alum.volume_l, alum.days_of_supply),
            (None, None, None)
        );
        drop(log);
        let _ = std::fs::remove_dir_all(&dir);
    }

    #[test]
    fn months_are_read_whole_or_refused() {
        let d = |y, m, day| NaiveDate::from_ymd_opt(y, m, day).unwrap();
        assert_eq!(
            month_days("2026-11"),
            Some((d(2026, 11, 1), d(2026, 11, 30)))
        );
        assert_eq!(month_days("202602"), Some((d(2026, 2, 1), d(2026, 2, 28))));
        assert_eq!(month_days("2024-2"), Some((d(2024, 2, 1), d(2024, 2, 29))));
        assert_eq!(
            month_days("2026-12"),
            Some((d(2026, 12, 1), d(2026, 12, 31)))
        );
        for bad in ["2026-13", "26-11", "11/2026", "", "2026-", "november"] {
            assert_eq!(month_days(bad), None, "{bad}");
        }
    }

    #[test]
    fn the_november_report_is_saved_as_pdf_and_csv_never_over_an_earlier_one() {
        let dir = temp_dir("report");
        let c = catalog();
        let site = site(&c);
        std::fs::create_dir_all(dir.join("logs")).unwrap();
        crate::log::november::write(&crate::log::site_file(&dir.join("logs"), SITE), SITE, 0)
            .unwrap();
        let log = PersistentLog::new(&dir.join("logs"), "test");
        let mut screen = StockScreen::default();
        let exports = dir.join("exports");
        let (pdf, csv) = screen
            .save_report(&log, &site, &c, "2026-11", &exports)
            .expect("saved");
        assert_eq!(pdf, exports.join("molefeed-report-2026-11.pdf"));
        assert_eq!(csv, exports.join("molefeed-report-2026-11.csv"));
        assert!(std::fs::read(&pdf).unwrap().starts_with(b"%PDF"));
        let json = std::fs::read_to_string(exports.join("molefeed-report-2026-11.json")).unwrap();
        let json: serde_json::Value = serde_json::from_str(&json).unwrap();
        assert_eq!(json["days"].as_array().map(Vec::len), Some(30));
        assert_eq!(screen.report.as_ref().map(|r| r.days.len()), Some(30));
        let text = std::fs::read_to_string(&csv).unwrap();
        // 30 days, one product (hypochlorite) each, plus the header and the total.
        assert_eq!(text.lines().count(), 32, "{text}");
        // Day 1 (`log::november::Plan`): 2 000 000 + 20 000 × 1 gal of water = 2.02 MG.
        let day1: Vec<&str> = text.lines().nth(1).unwrap().split(',').collect();
        assert_eq!((day1[0], day1[2]), ("2026-11-01", "hypo-bulk"), "{text}");
        assert!(
            (day1[1].parse::<f64>().unwrap() - 2.02).abs() < 1e-9,
            "{text}"
        );
        let (pdf2, _) = screen
            .save_report(&log, &site, &c, "2026-11", &exports)
            .expect("saved again");
        assert_eq!(pdf2, exports.join("molefeed-report-2026-11-2.pdf"));
        assert_eq!(screen.message.as_ref().unwrap().key, "stock-report-saved");
        assert!(
            screen
                .save_report(&log, &site, &c, "2026-13", &exports)
                .is_none()
        );
        assert_eq!(screen.message.as_ref().unwrap().key, "stock-error-month");
        drop(log);
        let _ = std::fs::remove_dir_all(&dir);
    }
}
