//! The plant's water path: every dose in sequence, from the raw water to the finished water.
//!
//! Design: a [`Path`] is the plant's application points in order, each with the chemicals fed
//! there (as water-engine chemicals and mg/L of the compound, converted once from the dosing
//! catalog's products by [`crate::engine::dosing::waterside::product_compound`]) and the
//! contact basin that follows it. [`run`] feeds them one after another to the water engine's
//! [`WaterState::dosed`], so each step starts from the water the previous one left (never from
//! the raw water): coagulant metal precipitates as amorphous hydroxide (the engine's default
//! for coagulants, [`crate::engine::dosing::waterside::precipitation_of`]); a point followed
//! by a softening basin precipitates calcite and brucite to equilibrium
//! ([`crate::engine::water::softened`]). Nothing is computed twice: the Langelier index and CCPP
//! come from [`water::stability`], CT and its log-inactivation credit from the dosing engine's
//! Smith et al. regression ([`chlorine::ct_required`]), the limits from
//! [`site::effective_limit`]. Free chlorine is what was fed (the model has no chlorine demand)
//! unless the caller gives the residual measured after a point; a caution says which.
//!
//! Phosphate, fluoride and silica products are fed to the water engine like the others, and
//! the finished water's fluoride and orthophosphate residuals are checked against the
//! `fluoride`, `fluoride-secondary` and `orthophosphate` limits in [`finished_checks`]; a
//! product whose compound the engine lacks is carried along unmodelled with a
//! `water-effect-not-available` caution.

use crate::engine::dosing::catalog::Catalog;
use crate::engine::dosing::caution::{self, Caution};
use crate::engine::dosing::chlorine;
use crate::engine::dosing::site::{self, Limit, PointKind, SiteProfile};
use crate::engine::dosing::waterside::{precipitation_of, product_compound};
use crate::engine::precision::{Instrument, Precision, Range};
use crate::engine::water::{self, Chemical, Component, WaterInput, WaterState};
use crate::engine::{Error, ErrorKind, Result, check_positive};
use serde::Serialize;
use std::collections::BTreeMap;

/// One chemical fed at a point.
#[derive(Clone, Debug)]
pub struct Feed {
    /// What the operator knows it by: the site's delivered product id, or the chemical id.
    pub label: String,
    pub chemical: &'static Chemical,
    /// mg/L of the chemical's compound (the engine's basis).
    pub dose_mg_l: f64,
}

/// A contact basin after a point, in litres.
#[derive(Clone, Debug, PartialEq)]
pub struct Basin {
    pub id: String,
    pub volume_l: f64,
    /// T10/T.
    pub baffling_factor: f64,
}

/// One application point.
#[derive(Clone, Debug)]
pub struct Point {
    pub id: String,
    pub kind: Option<PointKind>,
    pub feeds: Vec<Feed>,
    pub basin: Option<Basin>,
    /// A softening basin follows: calcite and brucite precipitate after the feeds.
    pub softening: bool,
    /// Free chlorine measured after this point, mg/L as Cl2: replaces the modelled one for CT.
    pub residual_mg_l: Option<f64>,
    /// Products fed here whose effect on the water the engine cannot calculate.
    pub not_modelled: Vec<String>,
}

/// The points in the order the water meets them.
#[derive(Clone, Debug, Default)]
pub struct Path {
    pub points: Vec<Point>,
}

impl Path {
    /// One point per chemical, in order (the command line's `--step CHEMICAL=DOSE`).
    pub fn of_steps(steps: &[(&'static Chemical, f64)]) -> Path {
        Path {
            points: steps
                .iter()
                .enumerate()
                .map(|(i, (chemical, dose))| Point {
                    id: format!("step-{}", i + 1),
                    kind: None,
                    feeds: vec![Feed {
                        label: chemical.id.clone(),
                        chemical,
                        dose_mg_l: *dose,
                    }],
                    basin: None,
                    softening: false,
                    residual_mg_l: None,
                    not_modelled: Vec::new(),
                })
                .collect(),
        }
    }

    /// A site's path with today's doses: `today(point, product)` gives a dose typed or logged
    /// (mg/L as the product's dose compound), else the dose the site records; a feed with
    /// neither feeds nothing. Products are converted to the engine's chemicals once, here.
    pub fn of_site(
        site: &SiteProfile,
        catalog: &Catalog,
        today: &dyn Fn(&str, &str) -> Option<f64>,
    ) -> Result<Path> {
        let mut points = Vec::with_capacity(site.path.len());
        for p in &site.path {
            let mut feeds = Vec::new();
            let mut not_modelled = Vec::new();
            for f in &p.feeds {
                let delivered = site.delivered(&f.product)?;
                let Some(dose) = today(&p.id, &f.product).or(f.dose_mg_l) else {
                    continue;
                };
                match product_compound(catalog, &delivered.product, dose) {
                    Ok((chemical, mg_l, _)) => feeds.push(Feed {
                        label: f.product.clone(),
                        chemical,
                        dose_mg_l: mg_l,
                    }),
                    // Phosphates, fluoride, bisulfite …: not in the water engine (yet).
                    Err(_) => not_modelled.push(delivered.product.clone()),
                }
            }
            let basin = match &p.basin {
                None => None,
                Some(id) => {
                    let b = site.basin(id).ok_or_else(|| {
                        Error::new(ErrorKind::InvalidInput, format!("no contact basin '{id}'"))
                            .because("site-path-unknown-basin")
                            .with("basin", id)
                    })?;
                    Some(Basin {
                        id: b.id.clone(),
                        volume_l: b.volume * b.volume_unit.litres(),
                        baffling_factor: b.baffling_factor,
                    })
                }
            };
            points.push(Point {
                id: p.id.clone(),
                kind: Some(p.kind),
                feeds,
                basin,
                softening: p.softening,
                residual_mg_l: None,
                not_modelled,
            });
        }
        Ok(Path { points })
    }
}

/// The pairs of water-engine chemicals the two-target solve
/// ([`water::targets::two_targets`], the `two-targets` calculator) is offered for where a point
/// lists both, as (first, second): lime or quicklime with carbon dioxide (remineralisation:
/// pH with calcium or alkalinity), caustic with bicarbonate or soda ash (pH with alkalinity or
/// DIC for corrosion control), carbon dioxide with lime (recarbonation after softening), an
/// acid with caustic. These are the pairs plants use for two targets at once (common
/// practice); the solve itself takes any two chemicals and says when a pair cannot serve.
pub const TWO_TARGET_PAIRS: [(&str, &str); 8] = [
    ("lime", "carbon-dioxide"),
    ("quicklime", "carbon-dioxide"),
    ("caustic", "bicarbonate"),
    ("caustic", "soda-ash"),
    ("carbon-dioxide", "lime"),
    ("carbon-dioxide", "quicklime"),
    ("sulfuric-acid", "caustic"),
    ("hydrochloric-acid", "caustic"),
];

/// Two products a site point lists that the two-target solve can use together.
#[derive(Clone, Debug)]
pub struct TwoTargetPair {
    /// The site's delivered product ids, in the order solved.
    pub products: [String; 2],
    /// Their water-engine chemicals (the `two-targets` calculator's `chemicals`), same order.
    pub chemicals: [&'static Chemical; 2],
}

/// The pair of [`TWO_TARGET_PAIRS`] that point `point` of `site`'s path lists (fed today or
/// not), if any: the first pair found in the point's own order. Where both orders are pairs
/// (lime and carbon dioxide), the product the point lists first is solved first.
pub fn two_target_pair(
    site: &SiteProfile,
    catalog: &Catalog,
    point: usize,
) -> Option<TwoTargetPair> {
    let feeds = &site.path.get(point)?.feeds;
    let listed: Vec<(&str, &'static Chemical)> = feeds
        .iter()
        .filter_map(|f| {
            let delivered = site.delivered(&f.product).ok()?;
            // The chemical only: the dose does not matter here.
            let (chemical, _, _) = product_compound(catalog, &delivered.product, 0.0).ok()?;
            Some((f.product.as_str(), chemical))
        })
        .collect();
    let is_pair = |a: &Chemical, b: &Chemical| {
        TWO_TARGET_PAIRS
            .iter()
            .any(|(x, y)| *x == a.id && *y == b.id)
    };
    for (i, (pa, ca)) in listed.iter().enumerate() {
        for (pb, cb) in &listed[i + 1..] {
            let ordered = if is_pair(ca, cb) {
                Some(((pa, ca), (pb, cb)))
            } else if is_pair(cb, ca) {
                Some(((pb, cb), (pa, ca)))
            } else {
                None
            };
            if let Some(((p1, c1), (p2, c2))) = ordered {
                return Some(TwoTargetPair {
                    products: [p1.to_string(), p2.to_string()],
                    chemicals: [c1, c2],
                });
            }
        }
    }
    None
}

/// How to run a path.
#[derive(Clone, Debug, Default)]
pub struct Settings {
    /// Plant flow, m³/d: gives each basin its contact time. Without it no CT is computed.
    pub flow_m3_d: Option<f64>,
    /// The plant's own limits (the regulatory defaults apply where it sets none).
    pub limits: Vec<Limit>,
    /// Only what a range needs (pH, alkalinity, DIC after each step; no LSI, CCPP or CT):
    /// the runs with a reading moved by its precision.
    pub headlines_only: bool,
}

/// The water after a step or point: what the path shows.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct WaterAt {
    pub ph: f64,
    pub temperature_c: f64,
    pub alkalinity_mg_l_as_caco3: f64,
    pub dic_mmol_l: f64,
    pub calcium_mg_l_as_caco3: f64,
    /// `None` without calcium or alkalinity, or in a headline-only run.
    pub langelier_index: Option<f64>,
    pub ccpp_mg_l_as_caco3: Option<f64>,
    /// Free chlorine (HOCl + OCl-) as fed, mg/L as Cl2.
    pub free_chlorine_mg_l_as_cl2: f64,
    pub hocl_fraction: Option<f64>,
    /// Dissolved aluminium and iron left after the hydroxide precipitated, mg/L.
    pub aluminium_mg_l: f64,
    pub iron_mg_l: f64,
    /// Fluoride (every species of it, SiF6-2 and the pairs included), mg/L as F.
    pub fluoride_mg_l: f64,
    /// Orthophosphate (every species of it), mg/L as PO4.
    pub orthophosphate_mg_l_as_po4: f64,
    /// Ranges the readings' precision allows ([`run_with_ranges`]); same units.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub ph_range: Option<Range>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub alkalinity_range: Option<Range>,
}

/// One chemical fed, with the water after it.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Step {
    pub point: String,
    pub label: String,
    /// Water-engine chemical id.
    pub chemical: String,
    /// mg/L of the chemical's compound.
    pub dose_mg_l: f64,
    /// That compound's formula: the basis of `dose_mg_l` (NaOCl for hypochlorite, where a
    /// chlorine calculator's dose is as Cl2).
    pub dose_as: String,
    pub water: WaterAt,
}

/// CT through a basin, at the pH and temperature of the water in it.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct BasinCredit {
    pub basin: String,
    pub point: String,
    pub t10_minutes: f64,
    /// Free chlorine the CT is figured with, mg/L as Cl2.
    pub residual_mg_l: f64,
    /// The residual was measured (else it is the chlorine fed, without demand).
    pub residual_measured: bool,
    pub ph: f64,
    pub temperature_c: f64,
    pub ct_mg_min_l: f64,
    pub ct_required_3log_mg_min_l: f64,
    /// Giardia log inactivation credited (CT ÷ CT for 1 log).
    pub log_inactivation: f64,
}

/// The water after each point, step and basin, and the finished water's checks.
#[derive(Clone, Debug)]
pub struct PathResult {
    pub raw: WaterAt,
    pub steps: Vec<Step>,
    /// The water after each point, in path order (id, water).
    pub points: Vec<(String, WaterAt)>,
    /// The engine's state after each point, for a calculator opened at that point.
    pub states: Vec<WaterState>,
    pub basins: Vec<BasinCredit>,
    pub finished: WaterAt,
    /// Most severe first; the advisory note last.
    pub cautions: Vec<Caution>,
}

/// mg/L of `formula` (one of [`MASSES`]) in `mmol_l`, its molar mass computed from the
/// formula once.
fn mg_l(mmol_l: f64, formula: &str) -> Result<f64> {
    static TABLE: std::sync::OnceLock<Result<[f64; MASSES.len()]>> = std::sync::OnceLock::new();
    let table = TABLE
        .get_or_init(|| {
            let mut m = [0.0; MASSES.len()];
            for (slot, f) in m.iter_mut().zip(MASSES) {
                *slot = water::chemicals::molar_mass(f)?;
            }
            Ok(m)
        })
        .clone()?;
    let i = MASSES.iter().position(|f| *f == formula).ok_or_else(|| {
        Error::new(
            ErrorKind::UnknownChemical,
            format!("no molar mass kept for {formula}"),
        )
    })?;
    Ok(mmol_l * table[i])
}

/// The formulas the path reports concentrations as.
const MASSES: [&str; 6] = ["CaCO3", "Cl2", "Al", "Fe", "F", "PO4"];

/// What the path shows of a water; a headline-only run (`with_stability` false) reads pH,
/// alkalinity and totals off the state and skips the species list and the indices.
fn water_at(state: &WaterState, with_stability: bool) -> Result<WaterAt> {
    let total = |c: Component, formula: &str| mg_l(state.total_mmol_l(c), formula);
    let headline = WaterAt {
        ph: state.ph(),
        temperature_c: state.temperature_c(),
        alkalinity_mg_l_as_caco3: state.alkalinity_mg_l_as_caco3(),
        dic_mmol_l: state.total_mmol_l(Component::CO3),
        calcium_mg_l_as_caco3: total(Component::Ca, "CaCO3")?,
        langelier_index: None,
        ccpp_mg_l_as_caco3: None,
        free_chlorine_mg_l_as_cl2: total(Component::OCl, "Cl2")?,
        hocl_fraction: None,
        aluminium_mg_l: total(Component::Al, "Al")?,
        iron_mg_l: total(Component::Fe, "Fe")?,
        fluoride_mg_l: total(Component::F, "F")?,
        orthophosphate_mg_l_as_po4: total(Component::PO4, "PO4")?,
        ph_range: None,
        alkalinity_range: None,
    };
    if !with_stability {
        return Ok(headline);
    }
    let r = state.result()?;
    let (lsi, ccpp) = match water::stability(state) {
        Ok(s) => (s.langelier_index, Some(s.ccpp_mg_l_as_caco3)),
        // No calcium, no alkalinity: there is no calcium carbonate index to give.
        Err(_) => (None, None),
    };
    // The full water: pH, alkalinity and DIC from its speciation, with the indices.
    Ok(WaterAt {
        ph: r.ph,
        temperature_c: r.temperature_c,
        alkalinity_mg_l_as_caco3: r.alkalinity_mg_l_as_caco3,
        dic_mmol_l: r.dic_mmol_l,
        langelier_index: lsi,
        ccpp_mg_l_as_caco3: ccpp,
        hocl_fraction: r.hocl_fraction,
        ..headline
    })
}

/// The water after `feed` at a point (softening or not).
fn feed_into(state: &WaterState, feed: &Feed, softening: bool) -> Result<WaterState> {
    if softening {
        Ok(water::softened(state, feed.chemical, feed.dose_mg_l)?.0)
    } else {
        state.dosed(
            feed.chemical,
            feed.dose_mg_l,
            precipitation_of(feed.chemical),
        )
    }
}

/// Runs `path` from `raw`: the water after every step and point, CT through each basin, and
/// the finished water against the plant's limits.
pub fn run(raw: &WaterState, path: &Path, settings: &Settings) -> Result<PathResult> {
    let full = !settings.headlines_only;
    let mut state = raw.clone();
    let mut steps = Vec::new();
    let mut points = Vec::with_capacity(path.points.len());
    let mut states = Vec::with_capacity(path.points.len());
    let mut basins = Vec::new();
    // The raw water's analysis first: every water after it was figured from it.
    let mut cautions = crate::engine::dosing::waterside::water_cautions(raw)?;
    let mut chlorine_assumed = false;
    for point in &path.points {
        for feed in &point.feeds {
            state = feed_into(&state, feed, point.softening)?;
            steps.push(Step {
                point: point.id.clone(),
                label: feed.label.clone(),
                chemical: feed.chemical.id.clone(),
                dose_as: feed.chemical.formula.to_string(),
                dose_mg_l: feed.dose_mg_l,
                water: water_at(&state, full)?,
            });
        }
        for product in &point.not_modelled {
            cautions.push(Caution::info("water-effect-not-available").with("product", product));
        }
        // The water after the point: the last step's, else (nothing fed here) the water as it
        // came, its indices computed once.
        let after = match steps.last() {
            Some(s) if s.point == point.id => s.water.clone(),
            _ => water_at(&state, full)?,
        };
        if let (Some(basin), true) = (&point.basin, full) {
            match settings.flow_m3_d {
                Some(flow) => {
                    let credit = basin_credit(basin, point, &after, flow)?;
                    chlorine_assumed |= !credit.residual_measured && credit.residual_mg_l > 0.0;
                    if credit.ct_mg_min_l < credit.ct_required_3log_mg_min_l {
                        cautions.push(
                            Caution::warning("ct-below-3log")
                                .with("ct", format!("{:.0}", credit.ct_mg_min_l))
                                .with(
                                    "required",
                                    format!("{:.0}", credit.ct_required_3log_mg_min_l),
                                ),
                        );
                    }
                    basins.push(credit);
                }
                None => cautions.push(Caution::info("path-ct-needs-flow").with("basin", &basin.id)),
            }
        }
        points.push((point.id.clone(), after));
        states.push(state.clone());
    }
    if chlorine_assumed {
        cautions.push(Caution::info("path-chlorine-as-fed"));
    }
    let raw_at = water_at(raw, full)?;
    let finished = points
        .last()
        .map_or_else(|| raw_at.clone(), |(_, w)| w.clone());
    if full {
        cautions.extend(finished_checks(&finished, &settings.limits));
    }
    Ok(PathResult {
        raw: raw_at,
        steps,
        points,
        states,
        basins,
        finished,
        cautions: caution::finish(cautions),
    })
}

/// CT through `basin` at the water after `point`: T10 = V × T10/T ÷ Q; the CT required for
/// 3-log Giardia and the log credit from the regression the CT calculator uses, at the table
/// edges it uses (`chlorine::ct_free_chlorine`), with the residual measured, else the chlorine
/// fed.
fn basin_credit(
    basin: &Basin,
    point: &Point,
    water: &WaterAt,
    flow_m3_d: f64,
) -> Result<BasinCredit> {
    let flow = check_positive("flow", flow_m3_d, "m³/d")?;
    let (residual, measured) = match point.residual_mg_l {
        Some(r) => (r, true),
        None => (water.free_chlorine_mg_l_as_cl2, false),
    };
    let (ph, t) = (water.ph, water.temperature_c);
    let contact = chlorine::ContactTime::Basin {
        volume_l: basin.volume_l,
        baffling_factor: basin.baffling_factor,
        // m³/d → L/min.
        flow_l_per_min: flow * 1000.0 / 1440.0,
    };
    if residual > 0.0 {
        let r = chlorine::ct_free_chlorine(&chlorine::CtInput {
            residual: crate::engine::sigfig::Measured::exact(residual),
            ph,
            temperature_c: t,
            contact,
        })?;
        Ok(BasinCredit {
            basin: basin.id.clone(),
            point: point.id.clone(),
            t10_minutes: r.t10_minutes,
            residual_mg_l: residual,
            residual_measured: measured,
            ph,
            temperature_c: t,
            ct_mg_min_l: r.ct_mg_min_l,
            ct_required_3log_mg_min_l: r.ct_required_3log_mg_min_l,
            log_inactivation: r.giardia_log_inactivation,
        })
    } else {
        // No chlorine in the basin: no credit; what it would need, at the table's lowest
        // residual row, as the CT calculator reads the table.
        let t10 = contact.t10_minutes();
        Ok(BasinCredit {
            basin: basin.id.clone(),
            point: point.id.clone(),
            t10_minutes: t10,
            residual_mg_l: 0.0,
            residual_measured: measured,
            ph,
            temperature_c: t,
            ct_mg_min_l: 0.0,
            ct_required_3log_mg_min_l: chlorine::ct_required_as_tabled(3.0, 0.0, ph, t).0,
            log_inactivation: 0.0,
        })
    }
}

/// The finished water's parameters a plant may limit: the pH range, free chlorine, aluminium
/// and iron left, the corrosion-control targets (alkalinity, calcium, DIC, Langelier index,
/// CCPP), and the fluoride (against the enforceable maximum and the secondary standard) and
/// orthophosphate residuals. The one list the finished-water check and the list of checked
/// limits (`calculators::checked_limit_parameters`) read.
pub const FINISHED_PARAMETERS: [&str; 12] = [
    "ph",
    "chlorine",
    "aluminium",
    "iron",
    "alkalinity",
    "calcium-hardness",
    "dic",
    "langelier-index",
    "ccpp",
    "fluoride",
    "fluoride-secondary",
    "orthophosphate",
];

/// The values of [`FINISHED_PARAMETERS`], in their order, each with the unit it is in.
fn finished_values(w: &WaterAt) -> [(Option<f64>, &'static str); 12] {
    [
        (Some(w.ph), ""),
        (Some(w.free_chlorine_mg_l_as_cl2), "mg/L as Cl2"),
        (Some(w.aluminium_mg_l), "mg/L"),
        (Some(w.iron_mg_l), "mg/L"),
        (Some(w.alkalinity_mg_l_as_caco3), "mg/L as CaCO3"),
        (Some(w.calcium_mg_l_as_caco3), "mg/L as CaCO3"),
        (Some(w.dic_mmol_l), "mmol/L"),
        (w.langelier_index, ""),
        (w.ccpp_mg_l_as_caco3, "mg/L as CaCO3"),
        (Some(w.fluoride_mg_l), "mg/L as F"),
        (Some(w.fluoride_mg_l), "mg/L as F"),
        (Some(w.orthophosphate_mg_l_as_po4), "mg/L as PO4"),
    ]
}

/// The finished water against the plant's limits (its own, else the regulatory default):
/// `site-limit-finished-above` / `site-limit-finished-below` warnings naming the parameter, value, limit and
/// source.
pub fn finished_checks(w: &WaterAt, limits: &[Limit]) -> Vec<Caution> {
    let mut out = Vec::new();
    for (parameter, (value, unit)) in FINISHED_PARAMETERS.into_iter().zip(finished_values(w)) {
        let (Some(value), Some(limit)) = (value, site::effective_limit(limits, parameter)) else {
            continue;
        };
        let (key, bound) = match (limit.min, limit.max) {
            (_, Some(max)) if value > max => ("site-limit-finished-above", max),
            (Some(min), _) if value < min => ("site-limit-finished-below", min),
            _ => continue,
        };
        out.push(
            Caution::new(limit.severity(), key)
                .with("parameter", parameter)
                .with("value", crate::engine::sigfig::format_sig(value, 3))
                .with("limit", crate::engine::sigfig::format_sig(bound, 3))
                .with(
                    "unit",
                    if limit.unit.is_empty() {
                        unit
                    } else {
                        &limit.unit
                    },
                )
                .with("source", &limit.source),
        );
    }
    out
}

/// [`run`] from the readings, with the range each step's pH and alkalinity may lie in given
/// the precision of the readings (pH meter, titration, thermometer; the site's precision where
/// it states one): the path is run again with each reading moved down and up (headline-only
/// runs) and the deviations added, as the calculators' ranges are.
pub fn run_with_ranges(
    input: &WaterInput,
    path: &Path,
    settings: &Settings,
    precisions: &BTreeMap<Instrument, Precision>,
) -> Result<PathResult> {
    let mut result = run(&WaterState::new(input)?, path, settings)?;
    let precision = |i: Instrument| precisions.get(&i).copied().unwrap_or(i.default_precision());
    type Move = fn(&mut WaterInput, f64);
    let readings: [(Instrument, Option<f64>, Move); 4] = [
        (Instrument::PhMeter, Some(input.ph), |w, d| w.ph += d),
        (
            Instrument::Titration,
            Some(input.alkalinity_mg_l_as_caco3),
            |w, d| w.alkalinity_mg_l_as_caco3 = (w.alkalinity_mg_l_as_caco3 + d).max(0.0),
        ),
        (
            Instrument::Thermometer,
            Some(input.temperature_c),
            |w, d| w.temperature_c = (w.temperature_c + d).max(0.0),
        ),
        (
            Instrument::Titration,
            input.calcium_mg_l_as_caco3,
            |w, d| w.calcium_mg_l_as_caco3 = w.calcium_mg_l_as_caco3.map(|c| (c + d).max(0.0)),
        ),
    ];
    let quick = Settings {
        headlines_only: true,
        ..settings.clone()
    };
    let n = result.steps.len();
    let mut moved_ph: Vec<Vec<[f64; 2]>> = vec![Vec::new(); n + 1];
    let mut moved_alk: Vec<Vec<[f64; 2]>> = vec![Vec::new(); n + 1];
    for (instrument, value, shift) in readings {
        let Some(v) = value else { continue };
        let d = precision(instrument).of(v);
        if d <= 0.0 {
            continue;
        }
        let mut pair = Vec::with_capacity(2);
        for sign in [-1.0, 1.0] {
            let mut moved = input.clone();
            shift(&mut moved, sign * d);
            // A moved reading the engine refuses leaves no range rather than a narrower one.
            let Ok(r) = WaterState::new(&moved).and_then(|s| run(&s, path, &quick)) else {
                return Ok(result);
            };
            pair.push(r);
        }
        for k in 0..=n {
            let at = |r: &PathResult| {
                if k < n {
                    r.steps[k].water.clone()
                } else {
                    r.finished.clone()
                }
            };
            let (lo, hi) = (at(&pair[0]), at(&pair[1]));
            moved_ph[k].push([lo.ph, hi.ph]);
            moved_alk[k].push([lo.alkalinity_mg_l_as_caco3, hi.alkalinity_mg_l_as_caco3]);
        }
    }
    let worst = crate::engine::calculators::ranges::worst_case;
    for k in 0..=n {
        let w = if k < n {
            &mut result.steps[k].water
        } else {
            &mut result.finished
        };
        if !moved_ph[k].is_empty() {
            w.ph_range = Some(worst(w.ph, &moved_ph[k]));
            w.alkalinity_range = Some(worst(w.alkalinity_mg_l_as_caco3, &moved_alk[k]));
        }
    }
    Ok(result)
}
