//! What was really fed, the stock on hand, and the monthly operating report: pure functions
//! over the log's readings and doses and the site profile.
//!
//! Design choice: nothing here reads a file or a clock. The caller (CLI, app) queries the log
//! and hands over the readings and dose views; the functions answer plain values the front ends
//! print, plot or write. Volumes come from the engine's one tank geometry
//! ([`crate::engine::dosing::tank`]) and active mass from the engine's strength chain
//! (`active_to_product`), so a tank drop is turned into product and active chemical exactly as
//! the feed calculator turns a dose into product.
//!
//! How a day is counted: a tank's or meter's use between two consecutive readings belongs to
//! the local day of the first of them, so with one morning round the day's use is "this
//! morning to tomorrow morning" for tanks and totalisers alike, and the last day of a month
//! is closed by the next month's first reading (the caller passes readings up to one day past
//! the period). Product used = the tank's volume drop + the product delivered in between;
//! a delivery is counted with the first tank the site names for its product.

use crate::engine::dosing::catalog::{Catalog, active_to_product};
use crate::engine::dosing::caution::{Caution, Severity};
use crate::engine::dosing::pumpcheck::Tolerance;
use crate::engine::dosing::site::SiteProfile;
use crate::engine::dosing::units::{Flow, LengthUnit, UnitSystem};
use crate::engine::sigfig::{Measured, format_sig};
use crate::engine::trace::{Origin, Quantity, Trace};
use crate::log::record::{in_parameter_unit, parameter_unit};
use crate::log::{Reading, ReadingView, Status, View};
use chrono::{DateTime, FixedOffset, NaiveDate};
use serde::Serialize;
use std::collections::{BTreeMap, BTreeSet};

/// The gallon and the pound: their exact definitions in [`crate::engine::quantity`].
pub use crate::engine::quantity::{KG_PER_LB, L_PER_GAL, L_PER_MG};

/// Minimum, maximum, average and count of some values.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
pub struct Stats {
    pub min: f64,
    pub max: f64,
    pub avg: f64,
    pub count: u32,
}

impl Stats {
    fn of(values: &[f64]) -> Option<Stats> {
        if values.is_empty() {
            return None;
        }
        let sum: f64 = values.iter().sum();
        Some(Stats {
            min: values.iter().copied().fold(f64::INFINITY, f64::min),
            max: values.iter().copied().fold(f64::NEG_INFINITY, f64::max),
            avg: sum / values.len() as f64,
            count: values.len() as u32,
        })
    }
}

/// One product on one day.
#[derive(Clone, Debug, Default, PartialEq, Serialize)]
pub struct ProductDay {
    /// Product used, L (tank drop + deliveries); `None` without two level readings.
    pub product_used_l: Option<f64>,
    /// How many days that use was counted over (see [`Day::water_treated_days`]).
    pub product_used_days: Option<i64>,
    /// Product delivered that day (by the delivery's own time, as its note has it), L.
    pub delivered_l: f64,
    /// Active chemical used, kg, as the product's dose compound.
    pub active_used_kg: Option<f64>,
    /// Active used ÷ water treated, mg/L.
    pub calculated_dose_mg_l: Option<f64>,
    /// The doses logged from the calculators that day (mg/L).
    pub logged_dose: Option<Stats>,
    /// The logged pump or feeder settings that day (%).
    pub logged_setting: Option<Stats>,
    /// (calculated − logged average) / logged average, %.
    pub deviation_percent: Option<f64>,
}

/// A tap reading beyond a limit of the site (its permit, else the regulatory default).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Exceedance {
    pub date: NaiveDate,
    pub tap: String,
    pub parameter: String,
    pub value: f64,
    /// `above` or `below`.
    pub side: &'static str,
    pub limit: f64,
    pub source: String,
}

/// One day of the report.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Day {
    pub date: NaiveDate,
    /// Water treated (totaliser differences), L.
    pub water_treated_l: Option<f64>,
    /// How many days that water was counted over: 1 with a reading every day; more when the
    /// next reading came days later (the use of the days between is booked here, and said).
    pub water_treated_days: Option<i64>,
    /// By delivered product id.
    pub products: BTreeMap<String, ProductDay>,
    /// By (tap, parameter).
    pub taps: BTreeMap<(String, String), Stats>,
    pub exceedances: Vec<Exceedance>,
}

impl Day {
    fn has_data(&self) -> bool {
        self.water_treated_l.is_some()
            || !self.taps.is_empty()
            || self.products.values().any(|p| {
                p.product_used_l.is_some() || p.logged_dose.is_some() || p.delivered_l > 0.0
            })
    }
}

/// A product's month.
#[derive(Clone, Debug, Default, PartialEq, Serialize)]
pub struct ProductTotal {
    pub product_used_l: f64,
    pub delivered_l: f64,
    pub active_used_kg: f64,
    /// Σ active ÷ Σ water over the days that have both, counted over the same days, mg/L.
    pub calculated_dose_mg_l: Option<f64>,
    /// Every dose logged in the period (mg/L).
    pub logged_dose: Option<Stats>,
}

#[derive(Clone, Debug, Default, PartialEq, Serialize)]
pub struct Totals {
    pub water_treated_l: f64,
    pub products: BTreeMap<String, ProductTotal>,
    pub days_with_data: u32,
    /// Corrections and voids of the period's entries and readings.
    pub corrections: u32,
    pub voids: u32,
    pub exceedances: u32,
}

/// The operating report of a period.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Report {
    pub plant: String,
    pub from: NaiveDate,
    pub to: NaiveDate,
    pub units: UnitSystem,
    pub days: Vec<Day>,
    pub totals: Totals,
    /// The cross-check of the pumps by tank drop, gaps in the readings.
    pub cautions: Vec<Caution>,
    /// By delivered product id: the compound its active chemical and doses are stated as
    /// (`Cl2` for hypochlorite, the hydrate for alum), so no amount is printed without it.
    pub bases: BTreeMap<String, String>,
}

/// What the report is computed from. `readings` should reach one day past `to` (the readings
/// that close the last day) and include voided ones (they are counted, not used).
pub struct Sources<'a> {
    pub site: &'a SiteProfile,
    pub catalog: &'a Catalog,
    pub readings: &'a [ReadingView],
    pub doses: &'a [View],
    pub from: NaiveDate,
    pub to: NaiveDate,
    /// The bands of the pump cross-check (common practice default: ±5 %, ±25 %).
    pub tolerance: Tolerance,
}

fn day_of(at: &DateTime<FixedOffset>) -> NaiveDate {
    at.date_naive()
}

fn metres(unit: &str) -> Option<f64> {
    LengthUnit::parse(unit).ok().map(|u| u.decimetres() / 10.0)
}

/// Litres of product from a delivery or a level; `l_per_kg` turns a mass of product into its
/// volume (from the product's density); `None` for a unit it cannot convert.
fn litres(amount: f64, unit: &str, l_per_kg: Option<f64>) -> Option<f64> {
    match unit {
        "gal" => Some(amount * L_PER_GAL),
        "l" => Some(amount),
        "m3" => Some(amount * 1000.0),
        "kg" => l_per_kg.map(|f| amount * f),
        "lb" => l_per_kg.map(|f| amount * KG_PER_LB * f),
        _ => None,
    }
}

/// Per delivered product: kg of active per L of product and L per kg of product, through the
/// catalog's strength chain for 1 kg/d of active (the feed calculator's conversion).
fn strength_factors(src: &Sources<'_>, delivered_id: &str) -> Option<(f64, Option<f64>)> {
    let d = src.site.delivered(delivered_id).ok()?;
    let p = src.catalog.product(&d.product).ok()?;
    let one = Trace::new(
        Quantity::of(1.0, "kg/d", &p.dose_as),
        Origin::Measured,
        None,
    );
    let per = active_to_product(src.catalog, p, &d.strength(), one).ok()?;
    let l_per_active_kg = per.product_l_per_day?;
    Some((
        1.0 / l_per_active_kg,
        Some(l_per_active_kg / per.product_kg_per_day),
    ))
}

/// How many local days an interval from the day `from` to the day `to` counts: 1 from one
/// morning round to the next; at least 1 (two readings on the same day).
fn spanned_days(from: NaiveDate, to: NaiveDate) -> i64 {
    (to - from).num_days().max(1)
}

/// A meter's or tank's readings `span` days apart: the use of the days between is booked to
/// the first, and said.
fn gap_caution(what: &str, from: NaiveDate, to: NaiveDate, span: i64) -> Caution {
    Caution::warning("readings-days-apart")
        .with("what", what)
        .with("from", from)
        .with("to", to)
        .with("days", span)
}

/// The volume unit of a site's unit system, as the report prints it (the unit of
/// [`volume_in`]).
pub fn volume_unit(units: UnitSystem) -> &'static str {
    match units {
        UnitSystem::Us => "gal",
        UnitSystem::Si => "L",
    }
}

fn live(readings: &[ReadingView]) -> impl Iterator<Item = &ReadingView> {
    readings.iter().filter(|r| r.status != Status::Voided)
}

/// The report: per day water treated, product and active used, calculated and logged doses,
/// tap readings and exceedances; the month's totals; the cautions of the cross-check.
pub fn report(src: &Sources<'_>) -> Report {
    let mut cautions = Vec::new();
    // One plant's report: a log merged from another plant's device (or an entry made for
    // another site) is left out, and said to be.
    let plant = src.site.name.as_str();
    let other_sites: BTreeSet<&str> = src
        .readings
        .iter()
        .map(|r| r.site.as_str())
        .chain(src.doses.iter().map(|v| v.site.as_str()))
        .filter(|s| *s != plant)
        .collect();
    let left_out = src.readings.iter().filter(|r| r.site != plant).count()
        + src.doses.iter().filter(|v| v.site != plant).count();
    if left_out > 0 {
        cautions.push(
            Caution::warning("report-other-sites-left-out")
                .with("count", left_out)
                .with(
                    "sites",
                    other_sites.into_iter().collect::<Vec<_>>().join(", "),
                ),
        );
    }
    let readings: Vec<ReadingView> = src
        .readings
        .iter()
        .filter(|r| r.site == plant)
        .cloned()
        .collect();
    let doses: Vec<View> = src
        .doses
        .iter()
        .filter(|v| v.site == plant)
        .cloned()
        .collect();
    let src = &Sources {
        readings: &readings,
        doses: &doses,
        ..*src
    };
    let in_period = |d: NaiveDate| d >= src.from && d <= src.to;
    let mut days: BTreeMap<NaiveDate, Day> = src
        .from
        .iter_days()
        .take_while(|d| *d <= src.to)
        .map(|date| {
            (
                date,
                Day {
                    date,
                    water_treated_l: None,
                    water_treated_days: None,
                    products: BTreeMap::new(),
                    taps: BTreeMap::new(),
                    exceedances: Vec::new(),
                },
            )
        })
        .collect();

    // Water treated: each totalising meter's differences, by the day of the earlier reading.
    for meter in src
        .site
        .flow_meters
        .iter()
        .filter(|m| m.totalizer_unit.is_some())
    {
        let mut series: Vec<(DateTime<FixedOffset>, f64)> = live(src.readings)
            .filter_map(|r| match &r.reading {
                Reading::Totalizer {
                    meter: m,
                    value,
                    unit,
                    ..
                } if *m == meter.id => Some((r.at, litres(*value, unit, None)?)),
                _ => None,
            })
            .collect();
        series.sort_by_key(|s| s.0);
        // The most the meter can pass in a day, L: its full scale.
        let full_scale_l_per_day = Flow::new(Measured::exact(meter.max), meter.unit)
            .to_l_per_day()
            .ok()
            .map(|l| l.value());
        for w in series.windows(2) {
            let ((t1, v1), (t2, v2)) = (w[0], w[1]);
            let date = day_of(&t1);
            if !in_period(date) {
                continue;
            }
            if v2 < v1 {
                cautions.push(
                    Caution::warning("totalizer-went-back")
                        .with("meter", &meter.id)
                        .with("date", date),
                );
                continue;
            }
            // More water than the meter passes at full scale in the time between the two
            // readings is a reading typed wrong (a digit too many), not water treated.
            let hours = (t2 - t1).num_seconds() as f64 / 3600.0;
            if let Some(most) = full_scale_l_per_day.map(|d| d * hours / 24.0)
                && v2 - v1 > most
            {
                cautions.push(
                    Caution::warning("totalizer-beyond-full-scale")
                        .with("meter", &meter.id)
                        .with("date", date)
                        .with("counted", format_sig(volume_in(src.site.units, v2 - v1), 3))
                        .with("most", format_sig(volume_in(src.site.units, most), 3))
                        .with("unit", volume_unit(src.site.units)),
                );
                continue;
            }
            let span = spanned_days(date, day_of(&t2));
            if span > 1 {
                cautions.push(gap_caution(&meter.id, date, day_of(&t2), span));
            }
            if let Some(day) = days.get_mut(&date) {
                *day.water_treated_l.get_or_insert(0.0) += v2 - v1;
                let days = day.water_treated_days.get_or_insert(span);
                *days = (*days).max(span);
            }
        }
    }

    // Product used: each tank's drop between readings plus what was delivered in between.
    let mut counted_deliveries = std::collections::HashSet::new();
    for tank in &src.site.day_tanks {
        let (Some(product), Ok(geometry)) = (&tank.product, tank.tank()) else {
            continue;
        };
        let factors = strength_factors(src, product);
        let l_per_kg = factors.and_then(|f| f.1);
        let mut series: Vec<(DateTime<FixedOffset>, f64)> = live(src.readings)
            .filter_map(|r| match &r.reading {
                Reading::TankLevel {
                    tank: t,
                    level,
                    unit,
                    ..
                } if *t == tank.id => {
                    let v = geometry.geometry.volume_l(level * metres(unit)?).ok()?;
                    Some((r.at, v))
                }
                _ => None,
            })
            .collect();
        series.sort_by_key(|s| s.0);
        for w in series.windows(2) {
            let ((t1, v1), (t2, v2)) = (w[0], w[1]);
            let date = day_of(&t1);
            let mut delivered = 0.0;
            for r in live(src.readings) {
                if let Reading::Delivery {
                    product: p,
                    amount,
                    unit,
                    ..
                } = &r.reading
                    && p == product
                    && r.at > t1
                    && r.at <= t2
                    && counted_deliveries.insert(r.id)
                {
                    // One that cannot be converted is said once, where deliveries are
                    // booked by their own day (below).
                    if let Some(l) = litres(*amount, unit, l_per_kg) {
                        delivered += l;
                    }
                }
            }
            if !in_period(date) {
                continue;
            }
            let span = spanned_days(date, day_of(&t2));
            if span > 1 {
                cautions.push(gap_caution(&tank.id, date, day_of(&t2), span));
            }
            let used = v1 - v2 + delivered;
            if used < 0.0 {
                cautions.push(
                    Caution::warning("tank-rose-without-delivery")
                        .with("tank", &tank.id)
                        .with("date", date),
                );
            }
            let Some(day) = days.get_mut(&date) else {
                continue;
            };
            let p = day.products.entry(product.clone()).or_default();
            *p.product_used_l.get_or_insert(0.0) += used;
            let days = p.product_used_days.get_or_insert(span);
            *days = (*days).max(span);
        }
    }

    // Deliveries by their own day, as the delivery notes have them: of every product of the
    // site, with a tank or without, before the first round of the month or after it. (The
    // use between two tank readings counts the deliveries in between, above.)
    for r in live(src.readings) {
        let Reading::Delivery {
            product,
            amount,
            unit,
            ..
        } = &r.reading
        else {
            continue;
        };
        let date = day_of(&r.at);
        let Some(day) = days.get_mut(&date) else {
            continue;
        };
        let l_per_kg = strength_factors(src, product).and_then(|f| f.1);
        match litres(*amount, unit, l_per_kg) {
            Some(l) => day.products.entry(product.clone()).or_default().delivered_l += l,
            None => cautions.push(
                Caution::warning("delivery-not-converted")
                    .with("product", product)
                    .with("unit", unit),
            ),
        }
    }

    // Doses logged from the calculators, by the site product of their catalog product.
    for v in src.doses.iter().filter(|v| v.status != Status::Voided) {
        let date = day_of(&v.at);
        let Some(day) = days.get_mut(&date) else {
            continue;
        };
        let Some(catalog_id) = v.dose.product.as_ref().map(|p| p.id.as_str()) else {
            continue;
        };
        let Some(delivered) = src.site.delivered_of(catalog_id) else {
            continue;
        };
        day.products.entry(delivered.id.clone()).or_default();
    }
    let doses_of = |date: NaiveDate, delivered_id: &str| -> (Vec<f64>, Vec<f64>) {
        let catalog_id = src
            .site
            .delivered(delivered_id)
            .map(|d| d.product.as_str())
            .unwrap_or_default();
        let mut doses = Vec::new();
        let mut settings = Vec::new();
        for v in src.doses.iter().filter(|v| v.status != Status::Voided) {
            if day_of(&v.at) != date
                || v.dose.product.as_ref().map(|p| p.id.as_str()) != Some(catalog_id)
            {
                continue;
            }
            if let Some(r) = v.dose.result("dose").filter(|r| r.unit == "mg/L") {
                doses.push(r.value);
            }
            if let Some(s) = &v.dose.setting {
                settings.push(s.percent);
            }
        }
        (doses, settings)
    };

    for day in days.values_mut() {
        let water = day.water_treated_l;
        let water_days = day.water_treated_days;
        let date = day.date;
        for (id, p) in day.products.iter_mut() {
            let factors = strength_factors(src, id);
            if let (Some(used), Some((active_per_l, _))) = (p.product_used_l, factors) {
                let active = used * active_per_l;
                p.active_used_kg = Some(active);
                // kg → mg is 10⁶; mg per L of water treated. Only where the chemical and the
                // water were counted over the same days: a missed totaliser reading puts two
                // days' water beside one day's chemical, half the dose fed.
                p.calculated_dose_mg_l = water
                    .filter(|w| *w > 0.0)
                    .filter(|_| p.product_used_days == water_days)
                    .map(|w| active * 1.0e6 / w);
            }
            let (doses, settings) = doses_of(date, id);
            p.logged_dose = Stats::of(&doses);
            p.logged_setting = Stats::of(&settings);
            if let (Some(calc), Some(logged)) = (p.calculated_dose_mg_l, p.logged_dose)
                && logged.avg > 0.0
            {
                let dev = (calc - logged.avg) / logged.avg * 100.0;
                p.deviation_percent = Some(dev);
                if dev.abs() > src.tolerance.within_percent {
                    let severity = if dev.abs() > src.tolerance.check_pump_percent {
                        Severity::Danger
                    } else {
                        Severity::Warning
                    };
                    cautions.push(
                        Caution::new(severity, "fed-dose-deviates")
                            .with("product", id)
                            .with("date", date)
                            .with("calculated", format!("{calc:.3}"))
                            .with("logged", format!("{:.3}", logged.avg))
                            .with("deviation", format!("{dev:.1}")),
                    );
                }
            }
        }
    }

    // Tap readings: statistics per tap and parameter, and each reading beyond a limit.
    let mut tap_values: BTreeMap<(NaiveDate, String, String), Vec<f64>> = BTreeMap::new();
    // Each parameter and unit that could not be checked, said once.
    let mut unchecked: BTreeSet<(String, String)> = BTreeSet::new();
    for r in live(src.readings) {
        let Reading::AtTap {
            tap,
            parameter,
            value,
            unit,
            ..
        } = &r.reading
        else {
            continue;
        };
        let date = day_of(&r.at);
        let Some(day) = days.get_mut(&date) else {
            continue;
        };
        // Limits and the statistics are in the parameter's own unit (the one the app records
        // in): a reading in the same unit written another way (mg/l, µg/L, °F) is converted
        // to it. One in a unit no conversion reaches (older logs could hold one) is kept apart
        // under its unit and not compared with a limit it cannot be compared with: said,
        // never silently mixed.
        let Some(value) = in_parameter_unit(parameter, *value, unit) else {
            tap_values
                .entry((date, tap.clone(), format!("{parameter} ({unit})")))
                .or_default()
                .push(*value);
            unchecked.insert((parameter.clone(), unit.clone()));
            continue;
        };
        tap_values
            .entry((date, tap.clone(), parameter.clone()))
            .or_default()
            .push(value);
        // The plant's limits are on the water it sends out: a raw or process tap's reading is
        // reported, not judged against them.
        let finished = src
            .site
            .sampling_taps
            .iter()
            .find(|t| t.id == *tap)
            .is_none_or(|t| t.finished_water);
        if !finished {
            continue;
        }
        if let Some(limit) = src.site.effective_limit(parameter) {
            let beyond = match (limit.min, limit.max) {
                (_, Some(max)) if value > max => Some(("above", max)),
                (Some(min), _) if value < min => Some(("below", min)),
                _ => None,
            };
            if let Some((side, bound)) = beyond {
                day.exceedances.push(Exceedance {
                    date,
                    tap: tap.clone(),
                    parameter: parameter.clone(),
                    value,
                    side,
                    limit: bound,
                    source: limit.source.clone(),
                });
            }
        }
    }
    for (parameter, unit) in unchecked {
        cautions.push(
            Caution::warning("reading-unit-not-checked")
                .with("parameter", &parameter)
                .with("unit", &unit)
                .with("own_unit", parameter_unit(&parameter)),
        );
    }
    for ((date, tap, parameter), values) in tap_values {
        if let (Some(day), Some(stats)) = (days.get_mut(&date), Stats::of(&values)) {
            day.taps.insert((tap, parameter), stats);
        }
    }

    cautions.extend(residual_days_missed(src, &days));
    let days: Vec<Day> = days.into_values().collect();
    let totals = totals(src, &days);
    let bases = totals
        .products
        .keys()
        .filter_map(|id| {
            let d = src.site.delivered(id).ok()?;
            let p = src.catalog.product(&d.product).ok()?;
            Some((id.clone(), p.dose_as.clone()))
        })
        .collect();
    Report {
        plant: src.site.name.clone(),
        from: src.from,
        to: src.to,
        units: src.site.units,
        days,
        totals,
        cautions,
        bases,
    }
}

/// The disinfectant residual parameters a finished-water tap reads.
const RESIDUALS: [&str; 4] = ["chlorine", "free-chlorine", "total-chlorine", "chloramines"];

/// Days the plant has records for but a finished-water tap's disinfectant residual has no
/// reading: the residual entering distribution is monitored every day the plant runs (common
/// practice; the permit says how often), and a day without it is a gap the report must show,
/// not a blank. One caution per tap and parameter, its dates listed.
fn residual_days_missed(src: &Sources<'_>, days: &BTreeMap<NaiveDate, Day>) -> Vec<Caution> {
    let running: Vec<NaiveDate> = days
        .values()
        .filter(|d| d.has_data())
        .map(|d| d.date)
        .collect();
    let (Some(first), Some(last)) = (running.first(), running.last()) else {
        return Vec::new();
    };
    let mut out = Vec::new();
    for tap in src.site.sampling_taps.iter().filter(|t| t.finished_water) {
        for parameter in tap
            .parameters
            .iter()
            .filter(|p| RESIDUALS.contains(&p.as_str()))
        {
            let missed: Vec<String> = days
                .range(*first..=*last)
                .filter(|(_, d)| {
                    !d.taps
                        .keys()
                        .any(|(t, p)| *t == tap.id && p.split(' ').next() == Some(parameter))
                })
                .map(|(date, _)| date.to_string())
                .collect();
            if !missed.is_empty() {
                out.push(
                    Caution::warning("residual-days-without-reading")
                        .with("tap", &tap.id)
                        .with("parameter", parameter)
                        .with("count", missed.len())
                        .with("dates", missed.join(", ")),
                );
            }
        }
    }
    out
}

fn totals(src: &Sources<'_>, days: &[Day]) -> Totals {
    let mut t = Totals::default();
    let mut dosed_water: BTreeMap<String, (f64, f64)> = BTreeMap::new();
    for day in days {
        t.water_treated_l += day.water_treated_l.unwrap_or(0.0);
        t.days_with_data += u32::from(day.has_data());
        t.exceedances += day.exceedances.len() as u32;
        for (id, p) in &day.products {
            let total = t.products.entry(id.clone()).or_default();
            total.product_used_l += p.product_used_l.unwrap_or(0.0);
            total.delivered_l += p.delivered_l;
            total.active_used_kg += p.active_used_kg.unwrap_or(0.0);
            // The days whose chemical and water were counted over the same days.
            if let (Some(a), Some(w), Some(_)) = (
                p.active_used_kg,
                day.water_treated_l,
                p.calculated_dose_mg_l,
            ) {
                let e = dosed_water.entry(id.clone()).or_default();
                e.0 += a;
                e.1 += w;
            }
        }
    }
    for (id, total) in t.products.iter_mut() {
        total.calculated_dose_mg_l = dosed_water
            .get(id)
            .filter(|(_, w)| *w > 0.0)
            .map(|(a, w)| a * 1.0e6 / w);
    }
    // The logged doses' own minimum and maximum over the month, not the days' averages.
    for (id, total) in t.products.iter_mut() {
        let catalog_id = src.site.delivered(id).map(|d| d.product.clone()).ok();
        let values: Vec<f64> = src
            .doses
            .iter()
            .filter(|v| v.status != Status::Voided)
            .filter(|v| {
                let d = day_of(&v.at);
                d >= src.from && d <= src.to
            })
            .filter(|v| v.dose.product.as_ref().map(|p| p.id.clone()) == catalog_id)
            .filter_map(|v| {
                v.dose
                    .result("dose")
                    .filter(|r| r.unit == "mg/L")
                    .map(|r| r.value)
            })
            .collect();
        total.logged_dose = Stats::of(&values);
    }
    let period = |at: &DateTime<FixedOffset>| {
        let d = day_of(at);
        d >= src.from && d <= src.to
    };
    let revisions = src
        .doses
        .iter()
        .filter(|v| period(&v.at))
        .map(|v| (v.status, v.revisions))
        .chain(
            src.readings
                .iter()
                .filter(|r| period(&r.at))
                .map(|r| (r.status, r.revisions)),
        );
    for (status, count) in revisions {
        let voided = u32::from(status == Status::Voided);
        t.voids += voided;
        t.corrections += count.saturating_sub(voided);
    }
    t
}

/// A tank's stock now: its last level, the volume, fill, use rate, days of supply and the
/// reorder date. `today` is the caller's (the engine and the log have no clock).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct StockRow {
    pub tank: String,
    pub name: String,
    pub product: Option<String>,
    pub level_at: Option<DateTime<FixedOffset>>,
    /// As read, in `level_unit`.
    pub level: Option<f64>,
    pub level_unit: String,
    pub volume_l: Option<f64>,
    pub fill_percent: Option<f64>,
    /// Average product used per day over the last `window_days` days with data, L/d.
    pub use_rate_l_per_day: Option<f64>,
    pub days_of_supply: Option<f64>,
    pub reorder_date: Option<NaiveDate>,
}

/// The Stock view's rows: one per tank of the site, from the latest level reading and the use
/// of the `window_days` days before `today`.
pub fn stock_rows(
    site: &SiteProfile,
    catalog: &Catalog,
    readings: &[ReadingView],
    today: NaiveDate,
    window_days: u32,
) -> Vec<StockRow> {
    let from = today - chrono::Days::new(u64::from(window_days.max(1)));
    let src = Sources {
        site,
        catalog,
        readings,
        doses: &[],
        from,
        to: today,
        tolerance: Tolerance::default(),
    };
    let recent = report(&src);
    site.day_tanks
        .iter()
        .map(|t| {
            let last = live(readings)
                .filter(|r| matches!(&r.reading, Reading::TankLevel { tank, .. } if *tank == t.id))
                .max_by_key(|r| r.at);
            let level = last.and_then(|r| match &r.reading {
                Reading::TankLevel { level, unit, .. } => Some((*level, unit.clone())),
                _ => None,
            });
            let tank = t.tank().ok();
            let volume = match (&tank, &level) {
                (Some(tank), Some((l, unit))) => {
                    metres(unit).and_then(|m| tank.geometry.volume_l(l * m).ok())
                }
                _ => None,
            };
            let capacity = tank.as_ref().and_then(|t| t.geometry.capacity_l().ok());
            let used: Vec<f64> = t
                .product
                .as_ref()
                .map(|p| {
                    recent
                        .days
                        .iter()
                        .filter_map(|d| d.products.get(p).and_then(|x| x.product_used_l))
                        .collect()
                })
                .unwrap_or_default();
            let rate = (!used.is_empty())
                .then(|| used.iter().sum::<f64>() / used.len() as f64)
                .filter(|r| *r > 0.0);
            let days = volume.zip(rate).map(|(v, r)| v / r);
            let reorder_volume = tank
                .as_ref()
                .and_then(|t| t.reorder_level.and_then(|r| t.geometry.volume_l(r).ok()));
            let reorder_date = match (volume, reorder_volume, rate) {
                (Some(v), Some(rv), Some(r)) => {
                    crate::engine::dosing::tank::date_after(today, ((v - rv) / r).max(0.0))
                }
                _ => None,
            };
            StockRow {
                tank: t.id.clone(),
                name: t.name.clone(),
                product: t.product.clone(),
                level_at: last.map(|r| r.at),
                level: level.as_ref().map(|l| l.0),
                level_unit: t.length_unit.symbol().to_string(),
                volume_l: volume,
                fill_percent: volume.zip(capacity).map(|(v, c)| v / c * 100.0),
                use_rate_l_per_day: rate,
                days_of_supply: days,
                reorder_date,
            }
        })
        .collect()
}

/// A value in the site's unit system: L → gal for a US plant.
pub fn volume_in(units: UnitSystem, litres: f64) -> f64 {
    match units {
        UnitSystem::Us => litres / L_PER_GAL,
        UnitSystem::Si => litres,
    }
}

/// Water treated in the site's unit system: million US gallons for a US plant, m³ for an SI
/// one (an SI plant's "2.1 MG" reads as ML, 3.785 times too little).
pub fn water_in(units: UnitSystem, litres: f64) -> f64 {
    match units {
        UnitSystem::Us => litres / L_PER_MG,
        UnitSystem::Si => litres / 1000.0,
    }
}

/// The unit of [`water_in`].
pub fn water_unit(units: UnitSystem) -> &'static str {
    match units {
        UnitSystem::Us => "MG",
        UnitSystem::Si => "m³",
    }
}

/// Active chemical in the site's unit system: lb for a US plant, kg for an SI one.
pub fn mass_in(units: UnitSystem, kg: f64) -> f64 {
    match units {
        UnitSystem::Us => kg / KG_PER_LB,
        UnitSystem::Si => kg,
    }
}

/// The unit of [`mass_in`].
pub fn mass_unit(units: UnitSystem) -> &'static str {
    match units {
        UnitSystem::Us => "lb",
        UnitSystem::Si => "kg",
    }
}

/// The report as the `--json` shape: `days` (date, water treated in MG, per product the
/// product used in the site's volume unit, active lb and calculated dose) and `totals`.
pub fn to_json(r: &Report) -> serde_json::Value {
    use serde_json::json;
    let unit = volume_unit(r.units);
    let basis = |id: &str| r.bases.get(id).cloned();
    let product = |id: &str, p: &ProductDay| {
        json!({
            "product_used": p.product_used_l.map(|l| volume_in(r.units, l)),
            "product_used_days": p.product_used_days,
            "active_used_lb": p.active_used_kg.map(|kg| kg / KG_PER_LB),
            "active_used_kg": p.active_used_kg,
            "active_as": basis(id),
            "calculated_dose_mg_l": p.calculated_dose_mg_l,
            "delivered": volume_in(r.units, p.delivered_l),
            "logged_dose_mg_l": p.logged_dose,
            "logged_setting_percent": p.logged_setting,
            "deviation_percent": p.deviation_percent,
        })
    };
    let days: Vec<serde_json::Value> = r
        .days
        .iter()
        .map(|d| {
            let products: serde_json::Map<String, serde_json::Value> = d
                .products
                .iter()
                .map(|(id, p)| (id.clone(), product(id, p)))
                .collect();
            let taps: Vec<serde_json::Value> = d
                .taps
                .iter()
                .map(|((tap, parameter), s)| {
                    json!({"tap": tap, "parameter": parameter, "min": s.min, "max": s.max, "avg": s.avg, "count": s.count})
                })
                .collect();
            json!({
                "date": d.date.to_string(),
                "water_treated_mg": d.water_treated_l.map(|l| l / L_PER_MG),
                "water_treated_m3": d.water_treated_l.map(|l| l / 1000.0),
                "water_treated_days": d.water_treated_days,
                "products": products,
                "taps": taps,
                "exceedances": d.exceedances,
            })
        })
        .collect();
    let products: serde_json::Map<String, serde_json::Value> = r
        .totals
        .products
        .iter()
        .map(|(id, p)| {
            (
                id.clone(),
                json!({
                    "product_used": volume_in(r.units, p.product_used_l),
                    "delivered": volume_in(r.units, p.delivered_l),
                    "active_used_lb": p.active_used_kg / KG_PER_LB,
                    "active_used_kg": p.active_used_kg,
                    "active_as": basis(id),
                    "calculated_dose_mg_l": p.calculated_dose_mg_l,
                    "logged_dose_mg_l": p.logged_dose,
                }),
            )
        })
        .collect();
    json!({
        "plant": r.plant,
        "from": r.from.to_string(),
        "to": r.to.to_string(),
        "product_used_unit": unit,
        "days": days,
        "totals": {
            "water_treated_mg": r.totals.water_treated_l / L_PER_MG,
            "water_treated_m3": r.totals.water_treated_l / 1000.0,
            "products": products,
            "days_with_data": r.totals.days_with_data,
            "corrections": r.totals.corrections,
            "voids": r.totals.voids,
            "exceedances": r.totals.exceedances,
        },
        "cautions": r.cautions.iter().map(|c| json!({"severity": c.severity, "key": c.key, "params": c.params})).collect::<Vec<_>>(),
        "advisory": ADVISORY,
    })
}

/// The advisory every report carries.
pub const ADVISORY: &str = "Advisory only: the calculated doses come from tank readings, deliveries and totaliser readings as logged; a licensed operator decides the feed, under the plant's permit and local codes.";

/// The daily table as CSV (RFC 4180, text defused like the log's export): one row per day and
/// product, in the site's units (water in MG or m³, product in gal or L, active in lb or kg,
/// with the compound it is stated as).
pub fn to_csv(r: &Report) -> String {
    let unit = volume_unit(r.units);
    let water_unit = match r.units {
        UnitSystem::Us => "MG",
        UnitSystem::Si => "m3",
    };
    let mass_unit = mass_unit(r.units);
    let mut out = format!(
        "date,water_treated_{water_unit},product,product_used_{unit},delivered_{unit},active_used_{mass_unit},active_as,calculated_dose_mg_per_L,logged_dose_avg_mg_per_L,logged_dose_min_mg_per_L,logged_dose_max_mg_per_L,deviation_percent\r\n"
    );
    let num = |v: Option<f64>| v.map(|x| format!("{x}")).unwrap_or_default();
    for d in &r.days {
        let water = d.water_treated_l.map(|l| water_in(r.units, l));
        if d.products.is_empty() {
            out.push_str(&format!("{},{},,,,,,,,,,\r\n", d.date, num(water)));
        }
        for (id, p) in &d.products {
            out.push_str(&format!(
                "{},{},{},{},{},{},{},{},{},{},{},{}\r\n",
                d.date,
                num(water),
                super::export::csv_text(id),
                num(p.product_used_l.map(|l| volume_in(r.units, l))),
                volume_in(r.units, p.delivered_l),
                num(p.active_used_kg.map(|kg| mass_in(r.units, kg))),
                super::export::csv_text(r.bases.get(id).map_or("", String::as_str)),
                num(p.calculated_dose_mg_l),
                num(p.logged_dose.map(|s| s.avg)),
                num(p.logged_dose.map(|s| s.min)),
                num(p.logged_dose.map(|s| s.max)),
                num(p.deviation_percent),
            ));
        }
    }
    // The month: the water, then each product's totals on a row of its own (the logged
    // dose's average, minimum and maximum over every entry of the month).
    let water = water_in(r.units, r.totals.water_treated_l);
    if r.totals.products.is_empty() {
        out.push_str(&format!("total,{water},,,,,,,,,,\r\n"));
    }
    for (id, p) in &r.totals.products {
        out.push_str(&format!(
            "total,{water},{},{},{},{},{},{},{},{},{},\r\n",
            super::export::csv_text(id),
            volume_in(r.units, p.product_used_l),
            volume_in(r.units, p.delivered_l),
            mass_in(r.units, p.active_used_kg),
            super::export::csv_text(r.bases.get(id).map_or("", String::as_str)),
            num(p.calculated_dose_mg_l),
            num(p.logged_dose.map(|s| s.avg)),
            num(p.logged_dose.map(|s| s.min)),
            num(p.logged_dose.map(|s| s.max)),
        ));
    }
    out
}

/// The report of `from..=to` from an open log: its readings up to one day past `to` (they
/// close the last day), voided ones included for the count, and its dose entries.
pub fn report_from_log(
    log: &super::Log,
    site: &SiteProfile,
    catalog: &Catalog,
    from: NaiveDate,
    to: NaiveDate,
) -> super::Result<Report> {
    let readings = log.readings(&super::Query {
        from: Some(from),
        to: to.checked_add_days(chrono::Days::new(1)),
        include_voided: true,
        ..super::Query::default()
    })?;
    let doses = log.query(&super::Query {
        from: Some(from),
        to: Some(to),
        include_voided: true,
        ..super::Query::default()
    })?;
    Ok(report(&Sources {
        site,
        catalog,
        readings: &readings,
        doses: &doses,
        from,
        to,
        // The site's own tolerance, where it states one (the pump check's otherwise).
        tolerance: site.fed_dose_tolerance(),
    }))
}

/// The files a report is written as.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Format {
    Csv,
    Json,
    Pdf,
}

/// Writes the report whole to `path` (a temporary file beside it, then a rename, so a reader
/// never sees half a report). The app's Log screen saves into its export folder through this.
pub fn write_report(r: &Report, format: Format, path: &std::path::Path) -> super::Result<()> {
    let bytes = match format {
        Format::Csv => to_csv(r).into_bytes(),
        Format::Json => serde_json::to_vec_pretty(&to_json(r)).unwrap_or_default(),
        Format::Pdf => super::report_pdf::pdf(r)?,
    };
    let tmp = path.with_extension("part");
    let io = |e: std::io::Error| super::Error::io("writing", path, &e);
    std::fs::write(&tmp, &bytes).map_err(io)?;
    std::fs::rename(&tmp, path).map_err(io)
}

/// The report in a few lines for the terminal: the period, the month's totals per product.
pub fn summary(r: &Report) -> String {
    let unit = volume_unit(r.units);
    let mut out = format!(
        "{}\n{} to {}: water treated {:.4} {}, {} days with data, {} corrections, {} voids, {} exceedances\n",
        r.plant,
        r.from,
        r.to,
        water_in(r.units, r.totals.water_treated_l),
        water_unit(r.units),
        r.totals.days_with_data,
        r.totals.corrections,
        r.totals.voids,
        r.totals.exceedances
    );
    for (id, p) in &r.totals.products {
        out.push_str(&format!(
            "{id}: used {:.1} {unit}, delivered {:.1} {unit}, active {:.1} {} as {}, calculated dose {}, logged dose {}\n",
            volume_in(r.units, p.product_used_l),
            volume_in(r.units, p.delivered_l),
            mass_in(r.units, p.active_used_kg),
            mass_unit(r.units),
            r.bases.get(id).map_or("?", String::as_str),
            p.calculated_dose_mg_l.map_or("-".to_string(), |d| format!(
                "{d:.3} mg/L as {}",
                r.bases.get(id).map_or("?", String::as_str)
            )),
            p.logged_dose
                .map_or("-".to_string(), |s| format!("{:.3} mg/L (avg)", s.avg)),
        ));
    }
    for c in &r.cautions {
        let params: Vec<String> = c.params.iter().map(|(k, v)| format!("{k}={v}")).collect();
        let severity = format!("{:?}", c.severity).to_lowercase();
        out.push_str(&format!("[{severity}] {} ({})\n", c.key, params.join(", ")));
    }
    out.push_str(ADVISORY);
    out.push('\n');
    out
}
