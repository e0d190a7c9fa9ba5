//! An invented November for the demo plant, written through the real log API: a morning round
//! each day (hypochlorite day-tank level, the filter-effluent totaliser, the clearwell's
//! chlorine), a hypochlorite delivery every sixth day, the dose logged from the feed
//! calculator, one corrected level and one voided duplicate delivery. The numbers are made up
//! and simple, so a test can compute the report by hand ([`Plan`] holds them).
//!
//! Design choice: a plain function of a file path, used by the reference test, the CLI test
//! and the memory/time measurement (`examples/report_month.rs`), so all three report the same
//! month. `extra_doses_per_day` pads the month with further dose entries (the 10 000-entry
//! measurement) without changing its water or tank numbers.

use super::record::{LoggedResult, ProductRef, Reading, example_dose, result_id};
use super::{Draft, Log, Result};
use chrono::{DateTime, Duration, FixedOffset, NaiveDate, Offset, TimeZone};

/// The invented month's numbers.
pub struct Plan;

impl Plan {
    /// The plant's clock: US Central standard time.
    pub const OFFSET_S: i32 = -6 * 3600;
    /// The morning round's hour.
    pub const HOUR: u32 = 7;
    /// Filter-effluent totaliser at 07:00 on 1 November, gal.
    pub const TOTALIZER_START: f64 = 48_000_000.0;

    /// Water treated from day `d`'s round to the next, gal (d = 1 … 30).
    pub fn water_gal(d: u32) -> f64 {
        2_000_000.0 + 20_000.0 * f64::from(d % 5)
    }

    /// The day tank's level at day `d`'s round, ft (d = 1 … 31; 31 is 1 December): a six-day
    /// cycle from 5.5 ft down by 0.5 ft a day.
    pub fn level_ft(d: u32) -> f64 {
        5.5 - 0.5 * f64::from((d - 1) % 6)
    }

    /// Hypochlorite delivered between day `d`'s round and the next, gal: after the 3.0 ft
    /// round of each cycle.
    pub fn delivered_gal(d: u32) -> f64 {
        if (d - 1) % 6 == 5 { 282.0 } else { 0.0 }
    }

    /// The dose logged from the feed calculator on day `d`, mg/L as Cl2.
    pub fn logged_dose(d: u32) -> f64 {
        3.0 + 0.1 * f64::from(d % 3)
    }

    /// The clearwell's chlorine on day `d`, mg/L (one low reading on the 15th).
    pub fn chlorine(d: u32) -> f64 {
        if d == 15 { 0.15 } else { 1.2 }
    }
}

fn at(day: NaiveDate, hour: u32, minute: u32) -> DateTime<FixedOffset> {
    let offset = FixedOffset::east_opt(Plan::OFFSET_S).unwrap_or_else(|| chrono::Utc.fix());
    let naive = day.and_hms_opt(hour, minute, 0).unwrap_or_default();
    offset
        .from_local_datetime(&naive)
        .single()
        .unwrap_or_else(|| offset.from_utc_datetime(&naive))
}

/// Writes the invented November of `site` (the demo plant's name) into the log at `path`.
pub fn write(path: &std::path::Path, site: &str, extra_doses_per_day: u32) -> Result<()> {
    let mut log = Log::open(path, "generator@demo")?;
    let reading = |log: &mut Log, when: DateTime<FixedOffset>, reading: Reading| {
        log.append_at(
            Draft::Reading {
                at: Some(when),
                site: site.to_string(),
                reading,
            },
            Some(when),
        )
    };
    let mut totalizer = Plan::TOTALIZER_START;
    let first = NaiveDate::from_ymd_opt(2026, 11, 1).unwrap_or_default();
    for d in 1..=31u32 {
        let day = first + Duration::days(i64::from(d - 1));
        let round = at(day, Plan::HOUR, 0);
        let level = if d == 10 { 4.2 } else { Plan::level_ft(d) };
        let level_id = reading(
            &mut log,
            round,
            Reading::TankLevel {
                operator: "RK".into(),
                tank: "hypo-day-tank".into(),
                level,
                unit: "ft".into(),
            },
        )?;
        if d == 10 {
            // The 10th's level was misread and corrected at 07:20.
            log.append_at(
                Draft::ReadingCorrection {
                    at: Some(at(day, 7, 20)),
                    corrects: level_id,
                    reason: "misread the sight glass".into(),
                    reading: Reading::TankLevel {
                        operator: "RK".into(),
                        tank: "hypo-day-tank".into(),
                        level: Plan::level_ft(d),
                        unit: "ft".into(),
                    },
                },
                Some(at(day, 7, 20)),
            )?;
        }
        reading(
            &mut log,
            round + Duration::minutes(5),
            Reading::Totalizer {
                operator: "RK".into(),
                meter: "filter-effluent".into(),
                value: totalizer,
                unit: "gal".into(),
            },
        )?;
        if d == 31 {
            break;
        }
        totalizer += Plan::water_gal(d);
        reading(
            &mut log,
            round + Duration::minutes(10),
            Reading::AtTap {
                operator: "RK".into(),
                tap: "clearwell-tap".into(),
                parameter: "chlorine".into(),
                value: Plan::chlorine(d),
                unit: "mg/L".into(),
            },
        )?;
        let delivered = Plan::delivered_gal(d);
        if delivered > 0.0 {
            let delivery = Reading::Delivery {
                operator: "RK".into(),
                product: "hypo-bulk".into(),
                amount: delivered,
                unit: "gal".into(),
                note_number: format!("DN-{d:02}11 (invented)"),
            };
            reading(&mut log, at(day, 14, 0), delivery.clone())?;
            if d == 6 {
                // Typed twice; the second is voided.
                let twice = reading(&mut log, at(day, 14, 5), delivery)?;
                log.append_at(
                    Draft::Void {
                        at: Some(at(day, 14, 10)),
                        operator: "RK".into(),
                        voids: twice,
                        reason: "entered twice".into(),
                    },
                    Some(at(day, 14, 10)),
                )?;
            }
        }
        for n in 0..=extra_doses_per_day {
            let mut dose = example_dose();
            dose.product = Some(ProductRef {
                id: "sodium-hypochlorite".into(),
                name: "Sodium hypochlorite".into(),
            });
            dose.tap = "Clearwell inlet".into();
            // Padding entries log the same dose, so the day's statistics keep their average,
            // minimum and maximum.
            let value = Plan::logged_dose(d);
            dose.results.retain(|r| r.id != result_id::DOSE);
            dose.results.push(LoggedResult {
                id: result_id::DOSE.into(),
                value,
                shown: format!("{value:.2}"),
                unit: "mg/L".into(),
                basis: Some("Cl2".into()),
                headline: true,
                range: None,
            });
            let when = at(day, 8, 0) + Duration::seconds(i64::from(n));
            log.append_at(
                Draft::Entry {
                    at: Some(when),
                    site: site.to_string(),
                    dose,
                },
                Some(when),
            )?;
        }
    }
    Ok(())
}
