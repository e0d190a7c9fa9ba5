//! The site profile: a plant's meters, taps, products as delivered, feeders and limits.
//!
//! Design: plain serde types so the app stores a profile as JSON and the engine parses it
//! from a string (pure: reading the file is the caller's job). Parsing is followed by
//! validation against the catalog with typed errors that name the offending entry. Limits are
//! what the plant's permit says; regulatory defaults exist only where a federal rule sets a
//! number, each labelled with its source, and a plant entry for the same parameter overrides it.

use super::catalog::{
    Catalog, Form, Strength, StrengthBasis, check_sg, check_sg_against_strength, check_strength,
};
use super::caution::Severity;
use super::feed::{PumpKind, UsableRange};
use super::pumpcheck::Tolerance;
use super::tank::{Geometry, Strapping, Tank, TankShape};
use super::units::{Flow, FlowUnit, LengthUnit, UnitSystem, VolumeUnit};
use crate::engine::precision::{Instrument, Precision, precisions_from_codes};
use crate::engine::sigfig::{Measured, count_sig_figs};
use crate::engine::{Error, ErrorKind, Result, check_positive, check_range};
use serde::{Deserialize, Serialize};
use std::collections::BTreeMap;

const DEMO_SITE_JSON: &str = include_str!("../../../data/demo-site.json");

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct FlowMeter {
    pub id: String,
    pub name: String,
    pub unit: FlowUnit,
    /// Full-scale reading, in `unit`.
    pub max: f64,
    /// The unit its totaliser counts the water in (`gal`, `l`, `m3`), if it has one: the
    /// log's totaliser readings on this meter are in it.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub totalizer_unit: Option<VolumeUnit>,
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct SamplingTap {
    pub id: String,
    pub name: String,
    #[serde(default)]
    pub parameters: Vec<String>,
    /// Whether the tap samples the water the plant sends out (clearwell effluent, entry to
    /// distribution): only such a tap's readings are held to the plant's limits, which are
    /// limits on finished water. A raw or process tap (settled water) is read to run the
    /// plant, and its alkalinity of 25 is no breach of a finished-water minimum of 30. Absent:
    /// finished, so an older profile counts every exceedance it counted before.
    #[serde(default = "finished_unless_said")]
    pub finished_water: bool,
}

fn finished_unless_said() -> bool {
    true
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ContactBasin {
    pub id: String,
    pub name: String,
    pub volume: f64,
    pub volume_unit: VolumeUnit,
    /// T10/T from a tracer study or the EPA guidance table.
    pub baffling_factor: f64,
}

/// A product as delivered to this plant (strength and SG from the certificate of analysis).
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct DeliveredProduct {
    pub id: String,
    /// Catalog id.
    pub product: String,
    pub strength: f64,
    pub strength_basis: StrengthBasis,
    pub sg: Option<f64>,
    #[serde(default)]
    pub certificate: Option<String>,
    /// NSF/ANSI/CAN 60 maximum use level, mg/L of product, if the plant records it.
    #[serde(default)]
    pub max_use_level_mg_l: Option<f64>,
}

impl DeliveredProduct {
    /// The strength as an engine value; significant figures are those of the number as stored.
    pub fn strength(&self) -> Strength {
        let measured = |v: f64| Measured {
            value: v,
            sig_figs: count_sig_figs(&v.to_string()),
        };
        Strength::new(
            measured(self.strength),
            self.strength_basis,
            self.sg.map(measured),
        )
    }
}

#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Pump {
    pub id: String,
    pub name: String,
    /// Id of a delivered product.
    pub product: String,
    pub kind: PumpKind,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum DayTankShape {
    VerticalCylinder,
    HorizontalCylinder,
    Rectangular,
    ConeBottom,
    /// The volume comes from the tank's own strapping table.
    Strapping,
}

/// A tank maker's chart: levels in the tank's `length_unit`, volumes in `volume_unit`.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct StrappingTable {
    pub volume_unit: VolumeUnit,
    /// `[level, volume]` pairs, levels rising.
    pub points: Vec<[f64; 2]>,
}

/// A day or bulk tank of the plant, dimensions in `length_unit`.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct DayTank {
    pub id: String,
    pub name: String,
    pub shape: DayTankShape,
    #[serde(default)]
    pub diameter: Option<f64>,
    #[serde(default)]
    pub length: Option<f64>,
    #[serde(default)]
    pub width: Option<f64>,
    /// Full height from the lowest point (a cone bottom's tip); a horizontal cylinder's is its
    /// diameter.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub height: Option<f64>,
    /// A cone bottom's cone part of the height.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub cone_height: Option<f64>,
    pub length_unit: LengthUnit,
    /// Id of the delivered product the tank holds.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub product: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub strapping: Option<StrappingTable>,
    /// The level (in `length_unit`) at which the plant reorders.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub reorder_level: Option<f64>,
}

impl DayTank {
    /// The tank's shape in its own length unit (`None` for a strapping-table tank); a
    /// missing dimension is refused, naming the tank.
    pub fn shape(&self) -> Result<Option<TankShape>> {
        let need = |v: Option<f64>| {
            v.ok_or_else(|| {
                invalid(
                    "tank-dimension-missing",
                    format!("tank '{}' is missing a dimension", self.id),
                    &self.id,
                )
            })
        };
        Ok(Some(match self.shape {
            DayTankShape::VerticalCylinder => TankShape::VerticalCylinder {
                diameter: need(self.diameter)?,
            },
            DayTankShape::HorizontalCylinder => TankShape::HorizontalCylinder {
                diameter: need(self.diameter)?,
                length: need(self.length)?,
            },
            DayTankShape::Rectangular => TankShape::Rectangular {
                length: need(self.length)?,
                width: need(self.width)?,
            },
            DayTankShape::ConeBottom => TankShape::ConeBottom {
                diameter: need(self.diameter)?,
                cone_height: need(self.cone_height)?,
            },
            DayTankShape::Strapping => return Ok(None),
        }))
    }

    /// Metres per unit of the tank's lengths (exact: 1 in = 2.54 cm).
    pub fn metres(&self) -> f64 {
        self.length_unit.decimetres() / 10.0
    }

    /// The tank in SI (metres, litres) for the volume at a level: its shape and full height,
    /// or its strapping table.
    pub fn tank(&self) -> Result<Tank> {
        let m = self.metres();
        let geometry = match self.shape()? {
            Some(shape) => {
                let si = match shape {
                    TankShape::VerticalCylinder { diameter } => TankShape::VerticalCylinder {
                        diameter: diameter * m,
                    },
                    TankShape::HorizontalCylinder { diameter, length } => {
                        TankShape::HorizontalCylinder {
                            diameter: diameter * m,
                            length: length * m,
                        }
                    }
                    TankShape::Rectangular { length, width } => TankShape::Rectangular {
                        length: length * m,
                        width: width * m,
                    },
                    TankShape::ConeBottom {
                        diameter,
                        cone_height,
                    } => TankShape::ConeBottom {
                        diameter: diameter * m,
                        cone_height: cone_height * m,
                    },
                };
                Geometry::shape(si, self.height.map(|h| h * m))
                    .map_err(|e| e.with("entry", &self.id))?
            }
            None => {
                let table = self.strapping.as_ref().ok_or_else(|| {
                    invalid(
                        "tank-dimension-missing",
                        format!("tank '{}' has no strapping table", self.id),
                        &self.id,
                    )
                })?;
                let litres = table.volume_unit.litres();
                Geometry::Strapping(
                    Strapping::new(
                        table
                            .points
                            .iter()
                            .map(|[level, volume]| (level * m, volume * litres))
                            .collect(),
                    )
                    .map_err(|e| e.with("entry", &self.id))?,
                )
            }
        };
        if let Some(r) = self.reorder_level {
            check_range("reorder level", r, 0.0, f64::MAX, self.length_unit.symbol())
                .map_err(|e| e.with("entry", &self.id))?;
        }
        Ok(Tank {
            id: self.id.clone(),
            name: self.name.clone(),
            product: self.product.clone(),
            geometry,
            reorder_level: self.reorder_level.map(|r| r * m),
        })
    }
}

/// Where along the plant an application point sits, in the order the water meets them.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum PointKind {
    Raw,
    RapidMix,
    Settled,
    Filtered,
    PostTreatment,
    Clearwell,
    EntryToDistribution,
}

impl PointKind {
    pub const ALL: [PointKind; 7] = [
        PointKind::Raw,
        PointKind::RapidMix,
        PointKind::Settled,
        PointKind::Filtered,
        PointKind::PostTreatment,
        PointKind::Clearwell,
        PointKind::EntryToDistribution,
    ];

    /// Stable kebab-case code (the profile's JSON, `point-<code>` translation keys).
    pub fn code(self) -> &'static str {
        match self {
            PointKind::Raw => "raw",
            PointKind::RapidMix => "rapid-mix",
            PointKind::Settled => "settled",
            PointKind::Filtered => "filtered",
            PointKind::PostTreatment => "post-treatment",
            PointKind::Clearwell => "clearwell",
            PointKind::EntryToDistribution => "entry-to-distribution",
        }
    }
}

/// A delivered product fed at an application point, with the dose set today.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct PointFeed {
    /// Id of a delivered product of this site.
    pub product: String,
    /// The dose set today, mg/L expressed as the product's dose compound (as Cl2 for a
    /// chlorine product); `None` when the plant records none (the path then feeds nothing
    /// here until a dose is typed or logged).
    #[serde(default)]
    pub dose_mg_l: Option<f64>,
}

/// One application point of the plant's water path: what is fed there and the contact basin
/// the water flows through after it.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ApplicationPoint {
    pub id: String,
    pub name: String,
    pub kind: PointKind,
    /// The products fed here, in the order they are fed.
    #[serde(default)]
    pub feeds: Vec<PointFeed>,
    /// Id of the contact basin that follows this point (its volume and baffling factor).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub basin: Option<String>,
    /// A softening basin follows: calcite and brucite precipitate to equilibrium after the
    /// feeds of this point.
    #[serde(default, skip_serializing_if = "std::ops::Not::not")]
    pub softening: bool,
}

/// A limit on a chemical dose or a finished-water parameter.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Limit {
    /// Kebab-case parameter key: chlorine, chloramines, chlorine-dioxide, ph, aluminium, ...
    pub parameter: String,
    pub min: Option<f64>,
    pub max: Option<f64>,
    pub unit: String,
    pub source: String,
    /// Whether going beyond it breaks a rule or the plant's permit (an MCL, an MRDL, a permit
    /// entry) rather than a secondary standard, a recommendation or a target of the plant's
    /// own: beyond it is a danger, beyond the others a warning. A plant's entry is its
    /// permit's unless the profile says `"enforceable": false`.
    #[serde(default = "enforceable_unless_said")]
    pub enforceable: bool,
}

fn enforceable_unless_said() -> bool {
    true
}

impl Limit {
    /// How strongly a value beyond this limit is cautioned: [`Severity::Danger`] beyond an
    /// enforceable one, [`Severity::Warning`] beyond the others.
    pub fn severity(&self) -> Severity {
        if self.enforceable {
            Severity::Danger
        } else {
            Severity::Warning
        }
    }
}

/// The plant's usual flow (design or typical), so a calculator can start from it; the flow the
/// operator reads off the meter always replaces it.
#[derive(Clone, Copy, Debug, PartialEq, Serialize, Deserialize)]
pub struct TypicalFlow {
    pub value: f64,
    pub unit: FlowUnit,
}

impl TypicalFlow {
    /// The flow in m³/d, through the exact unit definitions (rejects a non-positive flow).
    pub fn m3_per_day(&self) -> Result<f64> {
        let l_per_day = Flow::new(Measured::exact(self.value), self.unit).to_l_per_day()?;
        Ok(l_per_day.value() / 1000.0)
    }
}

/// A plant's profile.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct SiteProfile {
    pub name: String,
    #[serde(default)]
    pub note: Option<String>,
    #[serde(default)]
    pub units: UnitSystem,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub typical_flow: Option<TypicalFlow>,
    #[serde(default)]
    pub flow_meters: Vec<FlowMeter>,
    #[serde(default)]
    pub sampling_taps: Vec<SamplingTap>,
    #[serde(default)]
    pub contact_basins: Vec<ContactBasin>,
    #[serde(default)]
    pub products: Vec<DeliveredProduct>,
    #[serde(default)]
    pub pumps: Vec<Pump>,
    #[serde(default)]
    pub pump_usable_range_percent: UsableRange,
    #[serde(default)]
    pub day_tanks: Vec<DayTank>,
    #[serde(default)]
    pub limits: Vec<Limit>,
    /// The water path: application points in the order the water meets them.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub path: Vec<ApplicationPoint>,
    /// The plant's own precision of its instruments, by instrument code (`flow-meter`,
    /// `ph-meter` ...), where it differs from the defaults; absolute parts in the SI unit of
    /// what the instrument reads (mg/L, °C, s, mL, g). The ranges shown beside results follow.
    #[serde(default, skip_serializing_if = "BTreeMap::is_empty")]
    pub instrument_precision: BTreeMap<String, Precision>,
    /// How far, in %, the dose fed by the tank readings may differ from the dose logged before
    /// the operating report raises `fed-dose-deviates` (the pump's third cross-check, after
    /// drawdown and catch). Absent: the pump check's ±5 % (common practice, see
    /// [`Tolerance::default`]). See [`SiteProfile::fed_dose_tolerance`].
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub fed_dose_tolerance_percent: Option<f64>,
}

/// A limit a rule enforces (an MCL, an MRDL).
fn rule(parameter: &str, min: Option<f64>, max: Option<f64>, unit: &str, source: &str) -> Limit {
    Limit {
        parameter: parameter.into(),
        min,
        max,
        unit: unit.into(),
        source: source.into(),
        enforceable: true,
    }
}

/// A secondary standard or a recommendation: no rule enforces it.
fn guide(parameter: &str, min: Option<f64>, max: Option<f64>, unit: &str, source: &str) -> Limit {
    Limit {
        enforceable: false,
        ..rule(parameter, min, max, unit, source)
    }
}

/// The unit a parameter is read at a tap and held to its limit in (common practice: pH in pH
/// units, temperature in °C, turbidity in NTU, conductivity in µS/cm, alkalinity, hardness and
/// CCPP as CaCO3, DIC in mmol/L, the Langelier index without a unit, everything else in mg/L).
/// One table for the CLI, the app, the log's report and the engine's limit checks.
pub fn parameter_unit(parameter: &str) -> &'static str {
    match parameter {
        "ph" => "pH",
        "langelier-index" => "",
        "temperature" => "°C",
        "turbidity" => "NTU",
        "conductivity" => "µS/cm",
        "alkalinity" | "hardness" | "calcium-hardness" | "ccpp" => "mg/L as CaCO3",
        "dic" => "mmol/L",
        _ => "mg/L",
    }
}

/// The basis a parameter read at a tap (or limited) is stated on, where the trade writes one after
/// "mg/L as": chlorine residuals as Cl2 (DPD reads them so), fluoride as F, alkalinity and
/// hardness as CaCO3. `None` for a parameter read as itself.
fn parameter_basis(parameter: &str) -> Option<&'static str> {
    match parameter {
        "chlorine" | "free-chlorine" | "total-chlorine" | "chloramines" | "monochloramine" => {
            Some("Cl2")
        }
        "chlorine-dioxide" => Some("ClO2"),
        "fluoride" | "fluoride-secondary" | "fluoride-recommended" => Some("F"),
        "ammonia-n" | "ammonia" => Some("N"),
        "orthophosphate" => Some("PO4"),
        "alkalinity" | "hardness" | "calcium-hardness" | "ccpp" => Some("CaCO3"),
        _ => None,
    }
}

/// A tap reading's value in its parameter's own unit ([`parameter_unit`]), where `unit` is that
/// unit written another way ("mg/l", "mg/L as Cl2" for chlorine, "ppm", a mass fraction the
/// trade reads as mg/L in drinking water: common practice) or one a factor of which is exact
/// (µg/L and ppb: 1/1000; °F for a temperature). `None` for a unit that cannot be compared
/// with the parameter's limit (mg/L as N for a parameter read as itself, NTU for a
/// concentration): such a reading is refused when recorded and kept apart by the report.
pub fn in_parameter_unit(parameter: &str, value: f64, unit: &str) -> Option<f64> {
    let own = parameter_unit(parameter);
    let unit = unit.trim();
    if unit == own {
        return Some(value);
    }
    let lower = unit.to_lowercase().replace(' ', "");
    match own {
        "pH" => matches!(lower.as_str(), "" | "ph" | "su").then_some(value),
        "" => lower.is_empty().then_some(value),
        "mmol/L" => match lower.as_str() {
            "mmol/l" => Some(value),
            "µmol/l" | "umol/l" | "μmol/l" => Some(value / 1000.0),
            _ => None,
        },
        "°C" => match lower.as_str() {
            "c" | "°c" | "degc" | "celsius" => Some(value),
            "f" | "°f" | "degf" | "fahrenheit" => Some((value - 32.0) * 5.0 / 9.0),
            _ => None,
        },
        "NTU" => (lower == "ntu").then_some(value),
        "µS/cm" => matches!(lower.as_str(), "µs/cm" | "us/cm" | "μs/cm").then_some(value),
        _ => {
            // Split a basis off: "mg/L as CaCO3" → ("mg/l", Some("CaCO3")).
            let (amount, basis) = match unit.split_once(" as ") {
                Some((a, b)) => (a.to_lowercase().replace(' ', ""), Some(b.trim())),
                None => (lower.clone(), None),
            };
            // A basis must be the parameter's own. Where the parameter's own unit writes its
            // basis (alkalinity as CaCO3), a unit without one is ambiguous (alkalinity in mg/L
            // may be as HCO3, 1.22 times as much) and is not read.
            let written = own.contains(" as ");
            if (basis.is_some() && basis != parameter_basis(parameter))
                || (written && basis.is_none())
            {
                return None;
            }
            match amount.as_str() {
                "mg/l" | "ppm" => Some(value),
                "µg/l" | "ug/l" | "μg/l" | "ppb" => Some(value / 1000.0),
                _ => None,
            }
        }
    }
}

/// Limits a federal US rule sets, each with its source; a plant's permit entry overrides them.
pub fn regulatory_defaults() -> Vec<Limit> {
    vec![
        rule(
            "chlorine",
            None,
            Some(4.0),
            "mg/L as Cl2",
            "US EPA MRDL, 40 CFR 141.65 (running annual average)",
        ),
        rule(
            "chloramines",
            None,
            Some(4.0),
            "mg/L as Cl2",
            "US EPA MRDL, 40 CFR 141.65 (running annual average)",
        ),
        rule(
            "chlorine-dioxide",
            None,
            Some(0.8),
            "mg/L as ClO2",
            "US EPA MRDL, 40 CFR 141.65",
        ),
        rule(
            "chlorite",
            None,
            Some(1.0),
            "mg/L",
            "US EPA MCL, 40 CFR 141.64",
        ),
        rule(
            "bromate",
            None,
            Some(0.010),
            "mg/L",
            "US EPA MCL, 40 CFR 141.64",
        ),
        guide(
            "ph",
            Some(6.5),
            Some(8.5),
            "",
            "US EPA SMCL, 40 CFR 143.3 (secondary, non-enforceable)",
        ),
        guide(
            "aluminium",
            None,
            Some(0.2),
            "mg/L",
            "US EPA SMCL range 0.05–0.2 mg/L, 40 CFR 143.3 (upper end; secondary)",
        ),
        rule(
            "fluoride",
            None,
            Some(4.0),
            "mg/L as F",
            "US EPA MCL, 40 CFR 141.62 (from memory)",
        ),
        guide(
            "fluoride-secondary",
            None,
            Some(2.0),
            "mg/L as F",
            "US EPA SMCL, 40 CFR 143.3 (from memory; secondary, non-enforceable)",
        ),
        guide(
            "fluoride-recommended",
            None,
            Some(0.7),
            "mg/L as F",
            "US Public Health Service (2015) recommendation, Public Health Reports 130:318-331; Federal Register 80:24936 (not a CFR limit)",
        ),
        guide("iron", None, Some(0.3), "mg/L", "US EPA SMCL, 40 CFR 143.3"),
        guide(
            "manganese",
            None,
            Some(0.05),
            "mg/L",
            "US EPA SMCL, 40 CFR 143.3",
        ),
        guide(
            "sulfate",
            None,
            Some(250.0),
            "mg/L",
            "US EPA SMCL, 40 CFR 143.3",
        ),
        guide(
            "chloride",
            None,
            Some(250.0),
            "mg/L",
            "US EPA SMCL, 40 CFR 143.3",
        ),
    ]
}

/// The widest fed-dose tolerance a site may set, %: beyond it the cross-check would pass a
/// pump feeding half or double the dose (a guard of ours, not a rule of the trade).
pub const MAX_FED_DOSE_TOLERANCE_PERCENT: f64 = 50.0;

fn invalid(reason: &'static str, what: String, id: &str) -> Error {
    Error::new(ErrorKind::InvalidInput, what)
        .because(reason)
        .with("entry", id)
}

fn unique<'a>(kind: &str, ids: impl Iterator<Item = &'a str>) -> Result<()> {
    let mut seen: Vec<&str> = Vec::new();
    for id in ids {
        if seen.contains(&id) {
            return Err(invalid(
                "site-id-used-twice",
                format!("{kind} id '{id}' is used twice"),
                id,
            ));
        }
        seen.push(id);
    }
    Ok(())
}

impl SiteProfile {
    /// Parses and validates a profile from JSON text (pure; the caller reads the file).
    pub fn from_json(text: &str, catalog: &Catalog) -> Result<SiteProfile> {
        let site: SiteProfile = serde_json::from_str(text).map_err(|e| {
            Error::new(ErrorKind::Syntax, format!("site profile: {e}"))
                .with("line", e.line())
                .with("column", e.column())
        })?;
        site.validate(catalog)?;
        Ok(site)
    }

    /// The precision of the plant's instruments where it states its own.
    pub fn precisions(&self) -> BTreeMap<Instrument, Precision> {
        precisions_from_codes(&self.instrument_precision)
    }

    /// The bands of the fed-dose cross-check: the site's own tolerance where it gives one,
    /// with the pump check's "check the pump" band kept at least as wide; else the pump
    /// check's defaults (common practice).
    pub fn fed_dose_tolerance(&self) -> Tolerance {
        let default = Tolerance::default();
        match self.fed_dose_tolerance_percent {
            Some(within) => Tolerance {
                within_percent: within,
                check_pump_percent: default.check_pump_percent.max(within),
            },
            None => default,
        }
    }

    /// The embedded demo plant.
    pub fn demo(catalog: &Catalog) -> Result<SiteProfile> {
        SiteProfile::from_json(DEMO_SITE_JSON, catalog)
    }

    pub fn to_json(&self) -> Result<String> {
        serde_json::to_string_pretty(self)
            .map_err(|e| Error::new(ErrorKind::InvalidInput, format!("site profile: {e}")))
    }

    /// Checks references, ranges and strengths, naming the entry at fault.
    pub fn validate(&self, catalog: &Catalog) -> Result<()> {
        if self.name.trim().is_empty() {
            return Err(invalid(
                "site-needs-name",
                "the plant needs a name".into(),
                "",
            ));
        }
        unique("flow meter", self.flow_meters.iter().map(|m| m.id.as_str()))?;
        if let Some(t) = self.fed_dose_tolerance_percent
            && !(t.is_finite() && t > 0.0 && t <= MAX_FED_DOSE_TOLERANCE_PERCENT)
        {
            return Err(invalid(
                "site-tolerance-out-of-range",
                format!(
                    "the fed-dose tolerance must be more than 0 and at most {MAX_FED_DOSE_TOLERANCE_PERCENT} %"
                ),
                "",
            ));
        }
        for (code, p) in &self.instrument_precision {
            if Instrument::from_code(code).is_none() {
                let known: Vec<&str> = Instrument::ALL.iter().map(|i| i.code()).collect();
                return Err(invalid(
                    "site-unknown-instrument",
                    format!("no instrument '{code}' (instruments: {})", known.join(", ")),
                    code,
                ));
            }
            if !p.is_valid() {
                return Err(invalid(
                    "site-precision-invalid",
                    format!("the precision of '{code}' must be finite and not negative"),
                    code,
                ));
            }
        }
        unique("product", self.products.iter().map(|p| p.id.as_str()))?;
        unique("pump", self.pumps.iter().map(|p| p.id.as_str()))?;
        unique("basin", self.contact_basins.iter().map(|p| p.id.as_str()))?;
        unique("tap", self.sampling_taps.iter().map(|t| t.id.as_str()))?;
        if let Some(flow) = &self.typical_flow {
            flow.m3_per_day()?;
        }
        for m in &self.flow_meters {
            check_positive("flow meter full scale", m.max, m.unit.symbol())
                .map_err(|e| e.with("entry", &m.id))?;
        }
        for b in &self.contact_basins {
            check_positive("basin volume", b.volume, b.volume_unit.symbol())
                .map_err(|e| e.with("entry", &b.id))?;
            check_positive("baffling factor", b.baffling_factor, "")
                .map_err(|e| e.with("entry", &b.id))?;
            check_range("baffling factor", b.baffling_factor, 0.0, 1.0, "")
                .map_err(|e| e.with("entry", &b.id))?;
        }
        for d in &self.products {
            let p = catalog
                .product(&d.product)
                .map_err(|e| e.with("entry", &d.id))?;
            if let Some(sg) = d.sg {
                check_sg(sg).map_err(|e| e.with("entry", &d.id))?;
            }
            check_strength(catalog, p, &d.strength()).map_err(|e| e.with("entry", &d.id))?;
            // A certificate's SG far from the product's density relation is a typo that would
            // misfeed every dose from this site (the calculators refuse it too).
            if let Some(sg) = d.sg {
                check_sg_against_strength(p, d.strength_basis, d.strength, sg)
                    .map_err(|e| e.with("entry", &d.id))?;
            }
            if let Some(mul) = d.max_use_level_mg_l {
                check_positive("maximum use level", mul, "mg/L")
                    .map_err(|e| e.with("entry", &d.id))?;
            }
        }
        for pump in &self.pumps {
            pump.kind
                .validate()
                .map_err(|e| e.with("entry", &pump.id))?;
            let d = self
                .delivered(&pump.product)
                .map_err(|e| e.with("entry", &pump.id))?;
            let form = catalog.product(&d.product)?.form;
            let fits = match pump.kind {
                PumpKind::Metering { .. } | PumpKind::Peristaltic { .. } => form == Form::Solution,
                PumpKind::DryFeeder { .. } => form == Form::Dry,
                PumpKind::GasFeeder { .. } => form == Form::Gas,
            };
            if !fits {
                return Err(invalid(
                    "pump-cannot-feed-product",
                    format!("pump '{}' cannot feed '{}' ({:?})", pump.id, d.id, form),
                    &pump.id,
                ));
            }
        }
        self.pump_usable_range_percent.validate()?;
        unique("tank", self.day_tanks.iter().map(|t| t.id.as_str()))?;
        for t in &self.day_tanks {
            // An older profile names a day tank by its plan only (for the level-drop test):
            // its height is needed only for a volume, so only the plan is required here.
            if let Some(shape) = t.shape()? {
                shape.check().map_err(|e| e.with("entry", &t.id))?;
            }
            if t.height.is_some() || t.shape()?.is_none() {
                t.tank()?;
            }
            if let Some(p) = &t.product {
                self.delivered(p).map_err(|e| e.with("entry", &t.id))?;
            }
        }
        for l in &self.limits {
            // A limit a check compares with must be in its parameter's unit or one an exact
            // factor reaches (see `in_parameter_unit`); otherwise a reading of 0.5 mg/L would
            // be held to "100" of an unknown unit. A limit on a parameter nothing reads (no
            // calculation, no tap of this site) is kept as written, for the record: an older
            // profile's note is no reason to refuse the whole plant.
            if self.compared(&l.parameter)
                && in_parameter_unit(&l.parameter, 1.0, &l.unit).is_none()
            {
                return Err(invalid(
                    "limit-unit-not-understood",
                    format!(
                        "limit for {}: unit '{}' cannot be compared with its readings; give it in {}",
                        l.parameter,
                        l.unit,
                        parameter_unit(&l.parameter)
                    ),
                    &l.parameter,
                )
                .with("unit", parameter_unit(&l.parameter)));
            }
            for v in [l.min, l.max].into_iter().flatten() {
                check_range("limit", v, 0.0, 1e6, &l.unit)
                    .map_err(|e| e.with("entry", &l.parameter))?;
            }
            if let (Some(lo), Some(hi)) = (l.min, l.max)
                && lo > hi
            {
                return Err(invalid(
                    "limit-minimum-above-maximum",
                    format!("limit for {}: minimum above maximum", l.parameter),
                    &l.parameter,
                ));
            }
        }
        self.validate_path()
    }

    /// Whether some check holds `parameter` to its limit: a calculation (the regulatory
    /// defaults' parameters, the plant path's finished water) or a tap of this site that
    /// reads it.
    fn compared(&self, parameter: &str) -> bool {
        regulatory_defaults()
            .iter()
            .any(|l| l.parameter == parameter)
            || crate::engine::path::FINISHED_PARAMETERS.contains(&parameter)
            || self
                .sampling_taps
                .iter()
                .any(|t| t.parameters.iter().any(|p| p == parameter))
    }

    /// The water path: ids once, points in plant order, every product and basin known, every
    /// dose a number not below zero, each basin followed by one point only.
    fn validate_path(&self) -> Result<()> {
        unique("point", self.path.iter().map(|p| p.id.as_str()))?;
        let mut basins_used: Vec<&str> = Vec::new();
        for pair in self.path.windows(2) {
            if pair[1].kind < pair[0].kind {
                return Err(invalid(
                    "site-path-out-of-order",
                    format!(
                        "point '{}' ({}) comes after '{}' ({}): points go raw, rapid mix, settled, filtered, post-treatment, clearwell, entry to distribution",
                        pair[1].id,
                        pair[1].kind.code(),
                        pair[0].id,
                        pair[0].kind.code()
                    ),
                    &pair[1].id,
                ));
            }
        }
        for point in &self.path {
            for feed in &point.feeds {
                if self.delivered(&feed.product).is_err() {
                    return Err(invalid(
                        "site-path-unknown-product",
                        format!(
                            "point '{}' feeds '{}', which is not a delivered product of the site",
                            point.id, feed.product
                        ),
                        &point.id,
                    )
                    .with("product", &feed.product));
                }
                if let Some(dose) = feed.dose_mg_l {
                    let checked = check_range("dose", dose, 0.0, 100_000.0, "mg/L");
                    let checked = if dose < 0.0 {
                        checked.map_err(|e| e.because("negative-reading"))
                    } else {
                        checked
                    };
                    checked.map_err(|e| e.with("entry", &point.id))?;
                }
            }
            if let Some(basin) = &point.basin {
                if !self.contact_basins.iter().any(|b| &b.id == basin) {
                    return Err(invalid(
                        "site-path-unknown-basin",
                        format!(
                            "point '{}' is followed by basin '{basin}', which is not a contact basin of the site",
                            point.id
                        ),
                        &point.id,
                    )
                    .with("basin", basin));
                }
                if basins_used.contains(&basin.as_str()) {
                    return Err(invalid(
                        "site-id-used-twice",
                        format!("basin '{basin}' follows two points of the path"),
                        basin,
                    ));
                }
                basins_used.push(basin);
            }
        }
        Ok(())
    }

    /// The contact basin `id`.
    pub fn basin(&self, id: &str) -> Option<&ContactBasin> {
        self.contact_basins.iter().find(|b| b.id == id)
    }

    pub fn delivered(&self, id: &str) -> Result<&DeliveredProduct> {
        self.products.iter().find(|p| p.id == id).ok_or_else(|| {
            Error::new(
                ErrorKind::UnknownChemical,
                format!("no delivered product '{id}' in the site profile"),
            )
            .with("product", id)
        })
    }

    /// The delivered product of a catalog product (first entry), if the site stocks it.
    pub fn delivered_of(&self, catalog_id: &str) -> Option<&DeliveredProduct> {
        self.products.iter().find(|p| p.product == catalog_id)
    }

    pub fn pump(&self, id: &str) -> Result<&Pump> {
        self.pumps.iter().find(|p| p.id == id).ok_or_else(|| {
            Error::new(
                ErrorKind::InvalidInput,
                format!("no pump '{id}' in the site profile"),
            )
            .because("site-has-no-such-pump")
            .with("pump", id)
        })
    }

    /// The tank `id` in SI, for its volume at a level.
    pub fn tank(&self, id: &str) -> Result<Tank> {
        self.day_tanks
            .iter()
            .find(|t| t.id == id)
            .ok_or_else(|| {
                Error::new(
                    ErrorKind::InvalidInput,
                    format!("no tank '{id}' in the site profile"),
                )
                .because("site-has-no-such-tank")
                .with("tank", id)
            })?
            .tank()
    }

    /// The first pump feeding a delivered product.
    pub fn pump_for(&self, delivered_id: &str) -> Option<&Pump> {
        self.pumps.iter().find(|p| p.product == delivered_id)
    }

    /// The limit that applies: the plant's own entry, else the regulatory default, else none.
    pub fn effective_limit(&self, parameter: &str) -> Option<Limit> {
        effective_limit(&self.limits, parameter)
    }
}

/// What a calculation checks against the plant besides its limits: how far its flow meters
/// read, and which product each of its pumps and feeders is set up for. A front end that knows
/// the site passes `site.facts()` with the request, whatever the calculator.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct SiteFacts {
    pub flow_meters: Vec<MeterScale>,
    pub pumps: Vec<PumpFeeds>,
}

/// A flow meter's full scale, in m³/d and as the site states it.
#[derive(Clone, Debug, PartialEq)]
pub struct MeterScale {
    pub name: String,
    pub full_scale_m3_d: f64,
    /// The full scale in the meter's own unit ("6 MGD").
    pub stated: String,
}

/// A pump or feeder and the catalog product of the delivered product it feeds.
#[derive(Clone, Debug, PartialEq)]
pub struct PumpFeeds {
    pub id: String,
    pub name: String,
    pub product: String,
}

impl SiteProfile {
    /// The site's meters and pumps as a calculation checks them (a meter whose scale cannot
    /// be converted, or a pump whose product is not stocked, is left out: `validate` refuses
    /// both before a profile is stored).
    pub fn facts(&self) -> SiteFacts {
        SiteFacts {
            flow_meters: self
                .flow_meters
                .iter()
                .filter_map(|m| {
                    let l_per_day = Flow::new(Measured::exact(m.max), m.unit)
                        .to_l_per_day()
                        .ok()?
                        .value();
                    Some(MeterScale {
                        name: m.name.clone(),
                        full_scale_m3_d: l_per_day / 1000.0,
                        stated: format!("{} {}", m.max, m.unit.symbol()),
                    })
                })
                .collect(),
            pumps: self
                .pumps
                .iter()
                .filter_map(|p| {
                    Some(PumpFeeds {
                        id: p.id.clone(),
                        name: p.name.clone(),
                        product: self.delivered(&p.product).ok()?.product.clone(),
                    })
                })
                .collect(),
        }
    }
}

/// The other parameters that bound a target limited by `parameter`, most binding last: a
/// fluoride target is held to the enforceable maximum, the secondary standard and the
/// recommended level, each its own entry a plant may override.
pub fn related_limits(parameter: &str) -> &'static [&'static str] {
    match parameter {
        "fluoride" => &["fluoride-secondary", "fluoride-recommended"],
        _ => &[],
    }
}

/// The limit on `parameter` that applies given a plant's own entries: its entry, else the
/// regulatory default, else none. The one place a limit is chosen; every check goes through it.
/// An entry in another unit than its parameter's (µg/L for aluminium) comes back in the
/// parameter's unit ([`parameter_unit`]), so a check compares like with like; one in a unit
/// no conversion reaches is refused when the profile is read (`limit-unit-not-understood`)
/// where anything compares it, and otherwise has no bounds here.
pub fn effective_limit(plant: &[Limit], parameter: &str) -> Option<Limit> {
    let limit = plant
        .iter()
        .find(|l| l.parameter == parameter)
        .cloned()
        .or_else(|| {
            regulatory_defaults()
                .into_iter()
                .find(|l| l.parameter == parameter)
        })?;
    // The same unit written another way ("mg/L as Cl2" for chlorine) is kept as written.
    if in_parameter_unit(parameter, 1.0, &limit.unit) == Some(1.0) {
        return Some(limit);
    }
    let convert = |v: Option<f64>| v.and_then(|v| in_parameter_unit(parameter, v, &limit.unit));
    Some(Limit {
        min: convert(limit.min),
        max: convert(limit.max),
        unit: parameter_unit(parameter).to_string(),
        ..limit
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A tap reading in `unit` as the report compares it: `expected` in the parameter's own
    /// unit, or `None` where no conversion is known (each worked by hand).
    fn check_unit(parameter: &str, value: f64, unit: &str, expected: Option<f64>) {
        let got = in_parameter_unit(parameter, value, unit);
        match (got, expected) {
            (Some(g), Some(e)) => assert!((g - e).abs() < 1e-12, "{parameter} {value} {unit}: {g}"),
            _ => assert_eq!(got, expected, "{parameter} {value} {unit}"),
        }
    }

    #[test]
    fn a_tap_reading_is_compared_in_its_parameters_own_unit() {
        check_unit("chlorine", 0.05, "mg/L", Some(0.05));
        check_unit("chlorine", 0.05, "mg/l", Some(0.05));
        check_unit("chlorine", 0.05, "ppm", Some(0.05));
        check_unit("chlorine", 0.05, "mg/L as Cl2", Some(0.05));
        check_unit("chlorine", 0.05, "mg/L as HOCl", None);
        check_unit("aluminium", 150.0, "µg/L", Some(0.15));
        check_unit("aluminium", 150.0, "ug/l", Some(0.15));
        check_unit("aluminium", 150.0, "ppb", Some(0.15));
        check_unit("aluminium", 0.15, "NTU", None);
        check_unit("alkalinity", 25.0, "mg/L as CaCO3", Some(25.0));
        check_unit("alkalinity", 25.0, "mg/l as CaCO3", Some(25.0));
        check_unit("alkalinity", 25.0, "mg/L", None);
        check_unit("alkalinity", 25.0, "mg/L as HCO3", None);
        check_unit("ammonia-n", 0.4, "mg/L as N", Some(0.4));
        check_unit("ammonia-n", 0.4, "mg/L as NH3", None);
        check_unit("fluoride", 0.7, "mg/L as F", Some(0.7));
        // (59 − 32) × 5/9 = 15 °C.
        check_unit("temperature", 59.0, "°F", Some(15.0));
        check_unit("temperature", 15.0, "C", Some(15.0));
        check_unit("temperature", 15.0, "K", None);
        check_unit("ph", 7.2, "", Some(7.2));
        check_unit("ph", 7.2, "SU", Some(7.2));
        check_unit("turbidity", 0.3, "ntu", Some(0.3));
        check_unit("turbidity", 0.3, "FNU", None);
        // The parameters only a limit names: DIC, the Langelier index, CCPP, orthophosphate.
        check_unit("dic", 1.2, "mmol/L", Some(1.2));
        check_unit("dic", 1200.0, "µmol/L", Some(1.2));
        check_unit("dic", 1.2, "mg/L", None);
        check_unit("langelier-index", -0.2, "", Some(-0.2));
        check_unit("langelier-index", -0.2, "mg/L", None);
        check_unit("ccpp", 4.0, "mg/L as CaCO3", Some(4.0));
        check_unit("orthophosphate", 1.0, "mg/L as PO4", Some(1.0));
        check_unit("orthophosphate", 1.0, "mg/L as P", None);
        check_unit("chlorine-dioxide", 0.8, "mg/L as ClO2", Some(0.8));
    }

    /// A plant's limit in µg/L is held in mg/L, the unit its checks compare in (100 µg/L is
    /// 0.1 mg/L); one in a unit nothing converts is refused when the profile is read.
    #[test]
    fn a_limit_in_another_unit_is_held_in_its_parameters_unit() {
        let catalog = super::super::catalog::Catalog::builtin().unwrap();
        let with_limit = |unit: &str| {
            let mut json: serde_json::Value =
                serde_json::from_str(&SiteProfile::demo(&catalog).unwrap().to_json().unwrap())
                    .unwrap();
            let limits = json["limits"].as_array_mut().unwrap();
            limits.retain(|l| l["parameter"] != "aluminium");
            limits.push(
                serde_json::json!({"parameter": "aluminium", "min": null, "max": 100,
                "unit": unit, "source": "plant permit (invented)"}),
            );
            SiteProfile::from_json(&json.to_string(), &catalog)
        };
        let site = with_limit("µg/L").unwrap();
        let limit = site.effective_limit("aluminium").unwrap();
        assert!((limit.max.unwrap() - 0.1).abs() < 1e-15, "{limit:?}");
        assert_eq!(limit.unit, "mg/L");
        assert!(limit.enforceable);
        // As written where no factor is needed: the rule's own words in the caution.
        let chlorine = effective_limit(&[], "chlorine").unwrap();
        assert_eq!(chlorine.unit, "mg/L as Cl2");
        let e = with_limit("NTU").unwrap_err();
        assert_eq!(e.reason(), Some("limit-unit-not-understood"), "{e}");
        // A limit on a parameter nothing reads (no calculation, no tap of the demo) is kept
        // as written, for the record: no reason to refuse the plant.
        let mut json: serde_json::Value =
            serde_json::from_str(&SiteProfile::demo(&catalog).unwrap().to_json().unwrap()).unwrap();
        json["limits"]
            .as_array_mut()
            .unwrap()
            .push(serde_json::json!({
            "parameter": "strontium", "min": null, "max": 4, "unit": "mg/L as Sr2+",
            "source": "plant note (invented)"}));
        assert!(SiteProfile::from_json(&json.to_string(), &catalog).is_ok());
    }

    /// Every regulatory default is in a unit its parameter's checks read, with no factor: the
    /// caution then says the limit as the rule writes it.
    #[test]
    fn the_regulatory_defaults_are_in_their_parameters_units() {
        for l in regulatory_defaults() {
            for v in [l.min, l.max].into_iter().flatten() {
                assert_eq!(
                    in_parameter_unit(&l.parameter, v, &l.unit),
                    Some(v),
                    "{} in '{}'",
                    l.parameter,
                    l.unit
                );
            }
        }
    }
}
