//! `molefeed log reading`, `log delivery` and `log report`: the stock and plant readings, and
//! the monthly operating report, on the command line.
//!
//! Design choice: the site profile (`--site FILE`) is read first and every id is checked
//! against it — the tank, meter, tap and parameter, the delivered product — so a reading the
//! report could not place is refused when it is typed, not silently left out a month later.
//! A reading's unit is the site's (the tank's length unit, the meter's totaliser unit); the
//! log keeps the value as typed with that unit. `--at` records a reading taken earlier (the
//! same or the previous day), and the record keeps when it was entered as well.

use super::{Args, CliError, CliResult, Report};
use crate::engine::dosing::catalog::Catalog;
use crate::engine::dosing::site::SiteProfile;
use crate::log::{self, Draft, Reading};
use chrono::{DateTime, FixedOffset};
use serde_json::json;

fn site(args: &Args) -> Result<SiteProfile, CliError> {
    let path = args.required_text("site")?;
    let text = super::read_input_file(path, "site profile")?;
    Ok(SiteProfile::from_json(&text, &Catalog::builtin()?)?)
}

fn number(args: &Args, name: &str) -> Result<f64, CliError> {
    args.number(name)?
        .ok_or_else(|| CliError::usage(format!("missing --{name}")))
}

fn at(args: &Args) -> Result<Option<DateTime<FixedOffset>>, CliError> {
    args.text("at")?
        .map(|t| {
            DateTime::parse_from_rfc3339(t).map_err(|e| {
                CliError::usage(format!(
                    "--at must be an RFC 3339 time with its offset (2026-11-03T07:30:00-05:00), got '{t}': {e}"
                ))
            })
        })
        .transpose()
}

fn unknown(what: &str, id: &str, known: Vec<&str>) -> CliError {
    CliError {
        kind: "invalid-input".into(),
        message: format!(
            "the site profile has no {what} '{id}' ({what}s: {})",
            known.join(", ")
        ),
        reason: Some("not-in-site-profile"),
    }
}

/// The unit a parameter read at a tap is recorded in (see [`log::record::parameter_unit`]).
pub fn parameter_unit(parameter: &str) -> &'static str {
    log::record::parameter_unit(parameter)
}

fn append(args: &Args, site: &SiteProfile, reading: Reading) -> CliResult {
    let at = at(args)?;
    let file = args.required_text("file")?;
    let path = std::path::Path::new(file);
    super::log_cmd::usable_log_path(path)?;
    let device = super::log_cmd::device(args)?;
    let mut log = log::Log::open(path, &device).map_err(super::log_cmd::log_error)?;
    let id = log
        .append(Draft::Reading {
            at,
            site: site.name.clone(),
            reading,
        })
        .map_err(super::log_cmd::log_error)?;
    Ok(Report {
        human: id.to_string(),
        json: json!({"id": id}),
    })
}

/// `log reading --tank ID --level L | --meter ID --totalizer V | --tap ID --parameter P
/// --value V [--unit U]`.
pub fn reading(args: &Args) -> CliResult {
    let site = site(args)?;
    let operator = args.required_text("initials")?.to_string();
    let given = [
        args.text("tank")?.is_some(),
        args.text("meter")?.is_some(),
        args.text("tap")?.is_some(),
    ];
    if given.iter().filter(|g| **g).count() != 1 {
        return Err(CliError::usage(
            "give one of --tank ID --level L, --meter ID --totalizer V, or --tap ID --parameter P --value V",
        ));
    }
    let reading = if let Some(id) = args.text("tank")? {
        let tank = site.day_tanks.iter().find(|t| t.id == id).ok_or_else(|| {
            unknown(
                "tank",
                id,
                site.day_tanks.iter().map(|t| t.id.as_str()).collect(),
            )
        })?;
        let level = number(args, "level")?;
        // The level must be one the tank's geometry can turn into a volume.
        site.tank(id)?.geometry.volume_l(level * tank.metres())?;
        Reading::TankLevel {
            operator,
            tank: id.to_string(),
            level,
            unit: tank.length_unit.symbol().to_string(),
        }
    } else if let Some(id) = args.text("meter")? {
        let meter = site
            .flow_meters
            .iter()
            .find(|m| m.id == id)
            .ok_or_else(|| {
                unknown(
                    "meter",
                    id,
                    site.flow_meters.iter().map(|m| m.id.as_str()).collect(),
                )
            })?;
        let unit = meter.totalizer_unit.ok_or_else(|| {
            CliError::usage(format!(
                "meter '{id}' has no totaliser unit in the site profile (\"totalizer_unit\": \"gal\", \"l\" or \"m3\")"
            ))
        })?;
        Reading::Totalizer {
            operator,
            meter: id.to_string(),
            value: number(args, "totalizer")?,
            unit: match unit.symbol() {
                "m³" => "m3".to_string(),
                s => s.to_lowercase(),
            },
        }
    } else {
        let id = args.required_text("tap")?;
        let tap = site
            .sampling_taps
            .iter()
            .find(|t| t.id == id)
            .ok_or_else(|| {
                unknown(
                    "tap",
                    id,
                    site.sampling_taps.iter().map(|t| t.id.as_str()).collect(),
                )
            })?;
        let parameter = args.required_text("parameter")?;
        if !tap.parameters.iter().any(|p| p == parameter) {
            return Err(unknown(
                &format!("parameter at tap '{id}', namely"),
                parameter,
                tap.parameters.iter().map(String::as_str).collect(),
            ));
        }
        Reading::AtTap {
            operator,
            tap: id.to_string(),
            parameter: parameter.to_string(),
            value: number(args, "value")?,
            unit: args
                .text("unit")?
                .unwrap_or(parameter_unit(parameter))
                .to_string(),
        }
    };
    append(args, &site, reading)
}

/// `log delivery --product ID --amount A --amount-unit gal|l|lb|kg [--note-number N]`.
pub fn delivery(args: &Args) -> CliResult {
    let site = site(args)?;
    let operator = args.required_text("initials")?.to_string();
    let product = args.required_text("product")?;
    site.delivered(product).map_err(|_| {
        unknown(
            "product",
            product,
            site.products.iter().map(|p| p.id.as_str()).collect(),
        )
    })?;
    let unit = args.required_text("amount-unit")?;
    if !log::record::DELIVERY_UNITS.contains(&unit) {
        return Err(CliError::usage(format!(
            "--amount-unit must be one of {}, got '{unit}'",
            log::record::DELIVERY_UNITS.join(", ")
        )));
    }
    let reading = Reading::Delivery {
        operator,
        product: product.to_string(),
        amount: number(args, "amount")?,
        unit: unit.to_string(),
        note_number: args.text("note-number")?.unwrap_or_default().to_string(),
    };
    append(args, &site, reading)
}

fn date(args: &Args, name: &str) -> Result<chrono::NaiveDate, CliError> {
    let text = args.required_text(name)?;
    chrono::NaiveDate::parse_from_str(text, "%Y-%m-%d")
        .map_err(|_| CliError::usage(format!("--{name} must be a date YYYY-MM-DD, got '{text}'")))
}

/// The report of a period from a log file and a site profile: what `log report` prints and
/// what the app's Log screen saves (through [`crate::log::report::write_report`]).
pub fn report_of(
    file: &std::path::Path,
    site: &SiteProfile,
    from: chrono::NaiveDate,
    to: chrono::NaiveDate,
) -> Result<log::report::Report, CliError> {
    let log = log::Log::open_read_only(file).map_err(super::log_cmd::log_error)?;
    log::report::report_from_log(&log, site, &Catalog::builtin()?, from, to)
        .map_err(super::log_cmd::log_error)
}

/// `log report --file F --site S --from D --to D [--json | --csv OUT | --pdf OUT]`.
pub fn report(args: &Args) -> CliResult {
    // The JSON shape is printed with --json by the caller, as for every command.
    let _ = args.switch("json");
    let site = site(args)?;
    let file = args.required_text("file")?;
    if !std::path::Path::new(file).exists() {
        return Err(CliError::io(format!("no log file at {file}")));
    }
    super::log_cmd::usable_log_path(std::path::Path::new(file))?;
    let (from, to) = (date(args, "from")?, date(args, "to")?);
    if to < from {
        return Err(CliError::usage("--to is before --from"));
    }
    let csv = args.text("csv")?;
    let pdf = args.text("pdf")?;
    let report = report_of(std::path::Path::new(file), &site, from, to)?;
    let json = log::report::to_json(&report);
    let mut human = log::report::summary(&report);
    for (path, format) in [
        (csv, log::report::Format::Csv),
        (pdf, log::report::Format::Pdf),
    ] {
        if let Some(path) = path {
            log::report::write_report(&report, format, std::path::Path::new(path))
                .map_err(super::log_cmd::log_error)?;
            human.push_str(&format!("written to {path}\n"));
        }
    }
    Ok(Report { human, json })
}
