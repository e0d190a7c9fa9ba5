//! The Plant path screen's controller: the raw water and today's doses in, the water after
//! every application point out (pH, alkalinity, LSI, CT through each basin), the finished
//! water against the plant's limits, and a plot of pH and alkalinity along the path. Plain
//! Rust with no Slint types, unit-tested here.
//!
//! Design choice: the chemistry is `engine::path`'s, run on the site's own path
//! ([`Path::of_site`]); this controller only keeps what the operator typed on this screen (the
//! raw water and any dose that differs from the site's usual one), reads it in the operator's
//! units and language, and words the answer. A typed dose replaces the site's for this screen
//! only; the site profile is never changed from here.
//!
//! Where a point lists two chemicals the two-target solve can use together
//! ([`path::two_target_pair`]), the screen offers it there: the operator picks the second
//! target and types both; the doses come from the engine's `two-targets` calculator (the one
//! `molefeed calc two-targets` runs), started from the water arriving at the point as a
//! calculator opened there gets it. This file builds the calculator's request from texts and
//! words its outcome; it computes nothing.

use super::calc::key;
use super::calc_screen::{CautionLine, caution_lines};
use super::engine_adapter;
use super::numbers::{self, Lang};
use super::plot::{self, Range};
use super::seams::CalcKind;
use super::session::Session;
use super::words::Words;
use crate::engine::calculators::{self, Calculators, Outcome, Request, TABLE};
use crate::engine::path::{self, Path, PathResult, Settings, WaterAt};
use crate::engine::precision::range_beside;
use crate::engine::quantity::{Quantity, Unit, UnitSystem};
use crate::engine::water::WaterInput;
use std::cell::OnceCell;
use std::collections::BTreeMap;
use std::sync::Arc;

/// The raw-water readings the path starts from, in the order the screen asks for them.
pub const WATER_FIELDS: [(&str, Quantity, bool); 4] = [
    ("ph", Quantity::Ph, true),
    ("temperature", Quantity::Temperature, true),
    ("alkalinity", Quantity::AsCaCO3, true),
    ("calcium", Quantity::AsCaCO3, false),
];

/// One raw-water field as the screen shows it.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct PathField {
    pub name: String,
    pub label: String,
    pub unit: String,
    pub text: String,
    /// Why the typed text was refused, in words (empty when it was not).
    pub error: String,
}

/// One product fed at a point, with the dose the path uses.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct PathFeedLine {
    pub point: String,
    pub product: String,
    /// "Flash mixer · Alum (liquid)".
    pub label: String,
    /// The dose typed on this screen, else the site's usual dose.
    pub text: String,
    pub error: String,
}

/// One application point with the water after it.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct PathPointLine {
    pub name: String,
    /// What is fed here, in words ("Alum 28 mg/L"); empty when nothing is.
    pub feeds: String,
    /// The water after the point: pH, alkalinity, LSI.
    pub water: String,
    /// CT through the basin that follows, when one does.
    pub basin: String,
    /// A calculator opens here with the water arriving at this point.
    pub opens: bool,
    /// The point lists two chemicals the two-target solve can use together.
    pub two: bool,
}

/// The second targets the two-target solve takes besides the pH: the code of the `two-targets`
/// calculator's input `target-<code>`, its short name (the chooser) and its field's label.
pub const SECOND_TARGETS: [(&str, &str, &str); 5] = [
    (
        "alkalinity",
        key("path-two-target-alkalinity"),
        key("path-two-value-alkalinity"),
    ),
    ("dic", key("path-two-target-dic"), key("path-two-value-dic")),
    (
        "calcium",
        key("path-two-target-calcium"),
        key("path-two-value-calcium"),
    ),
    ("lsi", key("path-two-target-lsi"), key("path-two-value-lsi")),
    (
        "ccpp",
        key("path-two-target-ccpp"),
        key("path-two-value-ccpp"),
    ),
];

/// The two-target panel of one point.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct TwoTargetsView {
    /// The point's index on the path.
    pub point: usize,
    /// "Caustic soda + Soda ash".
    pub pair: String,
    /// "Two targets at once: Caustic soda + Soda ash".
    pub title: String,
    /// The water the solve starts from, in words.
    pub arriving: String,
    /// (code, label) of each second target; `second` is the one chosen.
    pub seconds: Vec<(String, String)>,
    pub second: String,
    /// The target pH and the second target as typed.
    pub ph: PathField,
    pub value: PathField,
    /// Each chemical's dose: "Caustic soda: 4.14 (1.11–7.37) mg/L as NaOH".
    pub doses: Vec<String>,
    /// The water after both: pH, alkalinity, LSI.
    pub after: String,
    /// What is missing, or why the pair cannot do it, in words.
    pub message: String,
    /// What would reach a target out of reach, in words.
    pub reach: String,
}

/// What the operator chose and typed in the two-target panel.
#[derive(Clone, Debug)]
struct TwoTargets {
    point: usize,
    second: &'static str,
    ph: String,
    value: String,
}

/// The whole screen.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct PathView {
    pub fields: Vec<PathField>,
    pub feeds: Vec<PathFeedLine>,
    pub points: Vec<PathPointLine>,
    /// The finished water in one line.
    pub finished: String,
    pub cautions: Vec<CautionLine>,
    /// Why there is no path to show (no path in the site profile, readings missing), in words.
    pub message: String,
    /// pH and alkalinity along the path in the plot view box; their axis ends.
    pub ph_line: String,
    pub alkalinity_line: String,
    pub grid: String,
    pub ph_lo: String,
    pub ph_hi: String,
    pub alkalinity_lo: String,
    pub alkalinity_hi: String,
    /// The two-target panel, while open.
    pub two: Option<TwoTargetsView>,
}

/// What the screen keeps: the texts typed on it.
#[derive(Clone, Debug, Default)]
pub struct PathScreen {
    water: BTreeMap<String, String>,
    /// Typed doses by (point id, site product id), mg/L of the product's dose compound.
    doses: BTreeMap<(String, String), String>,
    /// The two-target panel, while open.
    two: Option<TwoTargets>,
    /// The engine's calculators (or why they could not be built), built on first use and
    /// kept: building them parses the catalog, which every view would otherwise pay once per
    /// point.
    calculators: OnceCell<Result<Arc<Calculators>, crate::engine::Error>>,
}

impl PathScreen {
    fn calculators(&self) -> Result<&Calculators, crate::engine::Error> {
        match self
            .calculators
            .get_or_init(|| Calculators::new().map(Arc::new))
        {
            Ok(c) => Ok(c),
            Err(e) => Err(e.clone()),
        }
    }

    pub fn edit_water(&mut self, name: &str, text: &str) {
        self.water.insert(name.to_string(), text.to_string());
    }

    /// A dose typed for `point`'s `product`; an empty text goes back to the site's dose.
    pub fn edit_dose(&mut self, point: &str, product: &str, text: &str) {
        let k = (point.to_string(), product.to_string());
        if text.trim().is_empty() {
            self.doses.remove(&k);
        } else {
            self.doses.insert(k, text.to_string());
        }
    }

    /// Opens the two-target panel at point `i` (alkalinity as the second target), or closes
    /// it if it is open there. A point without a pair opens nothing.
    pub fn open_two_targets(&mut self, session: &Session, i: usize) {
        if self.two.as_ref().is_some_and(|t| t.point == i) {
            self.two = None;
            return;
        }
        let offered = session
            .catalog()
            .and_then(|c| path::two_target_pair(session.site(), c, i))
            .is_some();
        self.two = offered.then(|| TwoTargets {
            point: i,
            second: SECOND_TARGETS[0].0,
            ph: String::new(),
            value: String::new(),
        });
    }

    /// The second target, by its code; its typed value is kept for the next one.
    pub fn pick_second_target(&mut self, code: &str) {
        if let (Some(t), Some((c, _, _))) = (
            self.two.as_mut(),
            SECOND_TARGETS.iter().find(|(c, _, _)| *c == code),
        ) {
            t.second = c;
        }
    }

    /// A target typed in the panel: `target-ph`, or the second target.
    pub fn edit_two_targets(&mut self, name: &str, text: &str) {
        if let Some(t) = self.two.as_mut() {
            if name == "target-ph" {
                t.ph = text.to_string();
            } else {
                t.value = text.to_string();
            }
        }
    }

    /// The raw water as typed, in SI, and each field as shown; `None` while a reading the
    /// path needs is missing or refused.
    fn water_input(
        &self,
        lang: Lang,
        system: UnitSystem,
        words: &dyn Words,
    ) -> (Option<WaterInput>, Vec<PathField>) {
        let mut fields = Vec::new();
        let mut si: BTreeMap<&str, f64> = BTreeMap::new();
        let mut complete = true;
        for (name, quantity, required) in WATER_FIELDS {
            let unit = quantity.unit(system);
            let text = self.water.get(name).cloned().unwrap_or_default();
            let mut error = String::new();
            if text.trim().is_empty() {
                complete &= !required;
            } else {
                // A pH may be any number the engine then checks; a concentration not below 0.
                match read(&text, lang, quantity == Quantity::AsCaCO3, words) {
                    Ok(v) => {
                        si.insert(name, unit.to_si(v));
                    }
                    Err(why) => {
                        error = why;
                        complete = false;
                    }
                }
            }
            fields.push(PathField {
                name: name.to_string(),
                label: words.get(&format!("path-field-{name}")),
                unit: words.get(&format!("unit-{}", unit.code())),
                text,
                error,
            });
        }
        let input = match (
            complete,
            si.get("ph"),
            si.get("temperature"),
            si.get("alkalinity"),
        ) {
            (true, Some(&ph), Some(&t), Some(&alk)) => {
                let mut w = WaterInput::new(ph, t, alk);
                w.calcium_mg_l_as_caco3 = si.get("calcium").copied();
                Some(w)
            }
            _ => None,
        };
        (input, fields)
    }

    /// The doses the path uses (typed, else the site's) and each feed as shown.
    fn feed_lines(
        &self,
        session: &Session,
        lang: Lang,
        words: &dyn Words,
    ) -> (BTreeMap<(String, String), f64>, Vec<PathFeedLine>, bool) {
        let site = session.site();
        let mut doses = BTreeMap::new();
        let mut lines = Vec::new();
        let mut all_read = true;
        for p in &site.path {
            for f in &p.feeds {
                let k = (p.id.clone(), f.product.clone());
                let typed = self.doses.get(&k).cloned();
                let mut error = String::new();
                let text = match typed {
                    Some(t) => {
                        match read(&t, lang, true, words) {
                            Ok(v) => {
                                doses.insert(k.clone(), v);
                            }
                            Err(why) => {
                                error = why;
                                all_read = false;
                            }
                        }
                        t
                    }
                    None => f
                        .dose_mg_l
                        // As the site file states it ("28", "2.2"), with the language's mark.
                        .map(|d| d.to_string().replace('.', &lang.decimal_mark().to_string()))
                        .unwrap_or_default(),
                };
                let product = site
                    .delivered(&f.product)
                    .map(|d| words.name(&format!("product-{}", d.product)))
                    .unwrap_or_else(|_| f.product.clone());
                lines.push(PathFeedLine {
                    point: p.id.clone(),
                    product: f.product.clone(),
                    label: format!("{} · {product}", p.name),
                    text,
                    error,
                });
            }
        }
        (doses, lines, all_read)
    }

    /// Runs the site's path and words it.
    pub fn view(&self, session: &Session, words: &dyn Words) -> PathView {
        let lang = session.lang();
        let (input, fields) = self.water_input(lang, session.units(), words);
        let (doses, feeds, doses_read) = self.feed_lines(session, lang, words);
        let mut view = PathView {
            fields,
            feeds,
            ..PathView::default()
        };
        let site = session.site();
        if site.path.is_empty() {
            view.message = words.get(key("path-none"));
            return view;
        }
        let (Some(input), true) = (input, doses_read) else {
            view.message = words.get(key("path-need-water"));
            return view;
        };
        let Some(catalog) = session.catalog() else {
            view.message = words.get(key("path-none"));
            return view;
        };
        let run = || -> crate::engine::Result<(PathResult, Path)> {
            let today = |point: &str, product: &str| {
                doses
                    .get(&(point.to_string(), product.to_string()))
                    .copied()
            };
            let path = Path::of_site(site, catalog, &today)?;
            let settings = Settings {
                flow_m3_d: match site.typical_flow {
                    Some(f) => Some(f.m3_per_day()?),
                    None => None,
                },
                limits: site.limits.clone(),
                headlines_only: false,
            };
            let precisions =
                crate::engine::precision::precisions_from_codes(&site.instrument_precision);
            Ok((
                path::run_with_ranges(&input, &path, &settings, &precisions)?,
                path,
            ))
        };
        match run() {
            Ok((r, path)) => self.word_result(&mut view, &r, &path, session, words),
            Err(e) => view.message = words.error(&e),
        }
        if view.message.is_empty() {
            view.two = self.two_targets_view(session, words);
        }
        view
    }

    fn word_result(
        &self,
        view: &mut PathView,
        r: &PathResult,
        path: &Path,
        session: &Session,
        words: &dyn Words,
    ) {
        let lang = session.lang();
        let site = session.site();
        for (i, p) in site.path.iter().enumerate() {
            let water = r
                .points
                .get(i)
                .map(|(_, w)| water_words(w, lang, words))
                .unwrap_or_default();
            let fed: Vec<String> = r
                .steps
                .iter()
                .filter(|s| s.point == p.id)
                .map(|s| {
                    let name = site
                        .delivered(&s.label)
                        .map(|d| words.name(&format!("product-{}", d.product)))
                        .unwrap_or_else(|_| s.label.clone());
                    // With its basis: hypochlorite's dose here is as NaOCl, where the site's
                    // (and a chlorine calculator's) is as Cl2.
                    format!(
                        "{name} {} {}",
                        numbers::format_sig(s.dose_mg_l, 3, lang),
                        super::calc_screen::unit_with_basis(Unit::MgPerL, Some(&s.dose_as), words)
                    )
                })
                .collect();
            let basin = r
                .basins
                .iter()
                .find(|b| b.point == p.id)
                .map(|b| {
                    // Credit is earned with the residual measured leaving the basin; with the
                    // chlorine fed it is an upper estimate (demand only lowers it).
                    let text = if b.residual_measured {
                        key("path-basin-ct")
                    } else {
                        key("path-basin-ct-as-fed")
                    };
                    words.get_args(
                        text,
                        &[
                            ("basin", b.basin.clone()),
                            ("ct", numbers::format_sig(b.ct_mg_min_l, 3, lang)),
                            (
                                "required",
                                numbers::format_sig(b.ct_required_3log_mg_min_l, 3, lang),
                            ),
                            ("log", numbers::format_fixed(b.log_inactivation, 1, lang)),
                        ],
                    )
                })
                .unwrap_or_default();
            let opens = path.points.get(i).is_some_and(|pt| !pt.feeds.is_empty())
                && self.calculator_at(session, i).is_some();
            let two = session
                .catalog()
                .and_then(|c| path::two_target_pair(site, c, i))
                .is_some();
            view.points.push(PathPointLine {
                name: p.name.clone(),
                feeds: fed.join(", "),
                water,
                basin,
                opens,
                two,
            });
        }
        view.finished = water_words(&r.finished, lang, words);
        view.cautions = caution_lines(&engine_adapter::cautions(&r.cautions), words);
        // The plot: x is the point's place on the path; pH and alkalinity each on their own
        // scale (the axis ends say which), raw water first.
        let mut waters: Vec<&WaterAt> = vec![&r.raw];
        waters.extend(r.points.iter().map(|(_, w)| w));
        let xs: Vec<f64> = (0..waters.len()).map(|i| i as f64).collect();
        let x = Range {
            lo: 0.0,
            hi: (waters.len().max(2) - 1) as f64,
        };
        let ph: Vec<f64> = waters.iter().map(|w| w.ph).collect();
        let alk: Vec<f64> = waters.iter().map(|w| w.alkalinity_mg_l_as_caco3).collect();
        if let (Some(yp), Some(ya)) = (
            Range::around(ph.iter().copied()),
            Range::around(alk.iter().copied()),
        ) {
            let pts = |ys: &[f64]| {
                xs.iter()
                    .copied()
                    .zip(ys.iter().copied())
                    .collect::<Vec<_>>()
            };
            view.ph_line = plot::polyline(&pts(&ph), x, yp);
            view.alkalinity_line = plot::polyline(&pts(&alk), x, ya);
            let ticks: Vec<f64> = (yp.lo.ceil() as i32..=yp.hi.floor() as i32)
                .map(f64::from)
                .collect();
            view.grid = plot::grid(&ticks, yp);
            view.ph_lo = numbers::format_fixed(yp.lo, 1, lang);
            view.ph_hi = numbers::format_fixed(yp.hi, 1, lang);
            view.alkalinity_lo = numbers::format_sig(ya.lo, 2, lang);
            view.alkalinity_hi = numbers::format_sig(ya.hi, 2, lang);
        }
    }

    /// The calculator that serves the first product fed at point `i` (by the table's product
    /// lists), shown in the app.
    pub fn calculator_at(&self, session: &Session, i: usize) -> Option<CalcKind> {
        let site = session.site();
        let feed = site.path.get(i)?.feeds.first()?;
        let product = site.delivered(&feed.product).ok()?.product.clone();
        let calculators = self.calculators().ok()?;
        let calc = TABLE.iter().find(|c| {
            c.in_app
                && calculators
                    .products(c)
                    .iter()
                    .any(|choice| choice.id == product)
        })?;
        CalcKind::find(calc.group)
    }

    /// The readings a calculator opened at point `i` starts from: the water arriving there
    /// (after the points before it), as texts in the operator's units.
    pub fn water_arriving(
        &self,
        session: &Session,
        i: usize,
        words: &dyn Words,
    ) -> Option<Vec<(&'static str, String)>> {
        let lang = session.lang();
        let system = session.units();
        let site = session.site();
        let (input, _) = self.water_input(lang, system, words);
        let input = input?;
        let (doses, _, read) = self.feed_lines(session, lang, words);
        if !read {
            return None;
        }
        let catalog = session.catalog()?;
        let today = |point: &str, product: &str| {
            doses
                .get(&(point.to_string(), product.to_string()))
                .copied()
        };
        let mut path = Path::of_site(site, catalog, &today).ok()?;
        path.points.truncate(i);
        let settings = Settings {
            headlines_only: true,
            ..Settings::default()
        };
        let r = path::run(
            &crate::engine::water::WaterState::new(&input).ok()?,
            &path,
            &settings,
        )
        .ok()?;
        let w = if i == 0 { &r.raw } else { &r.finished };
        let t = Quantity::Temperature.unit(system).from_si(w.temperature_c);
        let mut readings = vec![
            ("ph", numbers::format_fixed(w.ph, 2, lang)),
            ("temperature", numbers::format_sig(t, 3, lang)),
            (
                "alkalinity",
                numbers::format_sig(w.alkalinity_mg_l_as_caco3, 3, lang),
            ),
        ];
        // Calcium only where it was typed: the engine's 0 for "not given" is not a reading.
        if input.calcium_mg_l_as_caco3.is_some() {
            readings.push((
                "calcium",
                numbers::format_sig(w.calcium_mg_l_as_caco3, 3, lang),
            ));
        }
        Some(readings)
    }
}

impl PathScreen {
    /// The open two-target panel: the targets as typed, and the doses of the point's pair
    /// from the `two-targets` calculator, or why there are none.
    fn two_targets_view(&self, session: &Session, words: &dyn Words) -> Option<TwoTargetsView> {
        let t = self.two.as_ref()?;
        let site = session.site();
        let catalog = session.catalog()?;
        let pair = path::two_target_pair(site, catalog, t.point)?;
        let lang = session.lang();
        let system = session.units();
        let calc = calculators::find("two-targets").ok()?;
        let name = |product: &str| {
            site.delivered(product)
                .map(|d| words.name(&format!("product-{}", d.product)))
                .unwrap_or_else(|_| product.to_string())
        };
        let names = pair.products.clone().map(|p| name(&p));
        let second_input = format!("target-{}", t.second);
        let field = |input: &str, label: String, text: &str| {
            let unit = calc
                .inputs
                .iter()
                .find(|i| i.name == input)
                .map(|i| {
                    super::calc_screen::unit_with_basis(i.quantity.unit(system), i.basis, words)
                })
                .unwrap_or_default();
            PathField {
                name: input.to_string(),
                label,
                unit,
                text: text.to_string(),
                error: String::new(),
            }
        };
        let second_label = SECOND_TARGETS
            .iter()
            .find(|(c, _, _)| *c == t.second)
            .map_or_else(String::new, |(_, _, k)| words.get(k));
        let pair_words = names.join(" + ");
        let mut view = TwoTargetsView {
            point: t.point,
            title: words.get_args(key("path-two-title"), &[("pair", pair_words.clone())]),
            pair: pair_words,
            seconds: SECOND_TARGETS
                .iter()
                .map(|(c, k, _)| (c.to_string(), words.get(k)))
                .collect(),
            second: t.second.to_string(),
            ph: field("target-ph", words.get(key("path-two-target-ph")), &t.ph),
            value: field(&second_input, second_label, &t.value),
            ..TwoTargetsView::default()
        };
        let Some(arriving) = self.water_arriving(session, t.point, words) else {
            view.message = words.get(key("path-need-water"));
            return Some(view);
        };
        view.arriving = words.get_args(
            key("path-two-arriving"),
            &[("water", arriving_words(&arriving, system, words))],
        );
        // The targets: a pH or an index may be below zero where the engine says so; an
        // amount may not.
        let amount = matches!(t.second, "alkalinity" | "dic" | "calcium");
        let ph = read_target(&t.ph, false, lang, words, &mut view.ph.error);
        let value = read_target(&t.value, amount, lang, words, &mut view.value.error);
        let (Some(ph), Some(value)) = (ph, value) else {
            if view.ph.error.is_empty() && view.value.error.is_empty() {
                view.message = words.get(key("path-two-need-targets"));
            }
            return Some(view);
        };
        let mut request = Request::new(calc);
        request.lists.insert(
            "chemicals",
            pair.chemicals.iter().map(|c| c.id.clone()).collect(),
        );
        // As `molefeed calc two-targets --site FILE` takes the plant: its limits, its
        // instruments' precision, its meters and pumps.
        request.limits = site.limits.clone();
        request.precisions = site.precisions();
        request.site = Some(site.facts());
        let mut readings: Vec<(&str, String)> = arriving
            .into_iter()
            // The calculators call the water's calcium `calcium-hardness`.
            .map(|(n, text)| {
                (
                    if n == "calcium" {
                        "calcium-hardness"
                    } else {
                        n
                    },
                    text,
                )
            })
            .collect();
        readings.push(("target-ph", ph));
        readings.push((second_input.as_str(), value));
        for (name, text) in readings {
            let Some(input) = calc.inputs.iter().find(|i| i.name == name) else {
                continue;
            };
            let Ok(v) = numbers::parse(&text, lang) else {
                continue;
            };
            request
                .values
                .insert(input.name, input.quantity.unit(system).to_si(v));
            if let Some(f) = numbers::figures(&text, lang) {
                request.figures.insert(input.name, f);
            }
        }
        match self.calculators().and_then(|c| c.compute(&request)) {
            Ok(outcome) => word_two_doses(&mut view, &outcome, &names, lang, system, words),
            Err(e) => {
                view.message = match e.reason() {
                    Some("target-out-of-reach") => {
                        view.reach = reach_words(&e, catalog, &view, lang, words);
                        out_of_reach_words(&e, &names, &view, lang, words)
                    }
                    _ => words.error(&e),
                }
            }
        }
        Some(view)
    }
}

/// A target as typed: `None` while empty, or refused (the reason in `error`).
fn read_target(
    text: &str,
    non_negative: bool,
    lang: Lang,
    words: &dyn Words,
    error: &mut String,
) -> Option<String> {
    if text.trim().is_empty() {
        return None;
    }
    match read(text, lang, non_negative, words) {
        Ok(_) => Some(text.to_string()),
        Err(why) => {
            *error = why;
            None
        }
    }
}

/// How each reading of the water arriving is said ("alkalinity 47.4 mg/L as CaCO₃").
const READING_WORDS: [(&str, &str); 4] = [
    ("ph", key("path-two-reading-ph")),
    ("temperature", key("path-two-reading-temperature")),
    ("alkalinity", key("path-two-reading-alkalinity")),
    ("calcium", key("path-two-reading-calcium")),
];

/// The readings a calculator opened at a point gets, in one line, each with its unit.
fn arriving_words(readings: &[(&str, String)], system: UnitSystem, words: &dyn Words) -> String {
    readings
        .iter()
        .filter_map(|(name, text)| {
            let (_, k) = READING_WORDS.iter().find(|(n, _)| n == name)?;
            let unit = field_unit(name, system)
                .map(|u| words.get(&format!("unit-{}", u.code())))
                .unwrap_or_default();
            Some(words.get_args(k, &[("value", text.clone()), ("unit", unit)]))
        })
        .collect::<Vec<_>>()
        .join(" · ")
}

/// The doses of both chemicals with their ranges and bases, and the water they leave.
fn word_two_doses(
    view: &mut TwoTargetsView,
    outcome: &Outcome,
    names: &[String; 2],
    lang: Lang,
    system: UnitSystem,
    words: &dyn Words,
) {
    let get = |id: &str| outcome.results.iter().find(|r| r.id == id);
    for (id, name) in ["first_dose", "second_dose"].into_iter().zip(names) {
        let Some(r) = get(id) else { continue };
        let unit = r.quantity.unit(system);
        let dose = numbers::format_sig(unit.from_si(r.value), 3, lang);
        let range = r
            .range
            .and_then(|range| {
                range_beside(&dose, range, unit, |v, d| numbers::format_fixed(v, d, lang))
            })
            .map(|t| format!(" ({t})"))
            .unwrap_or_default();
        view.doses.push(words.get_args(
            key("path-two-dose"),
            &[
                ("product", name.clone()),
                ("dose", format!("{dose}{range}")),
                (
                    "unit",
                    super::calc_screen::unit_with_basis(unit, r.basis.as_deref(), words),
                ),
            ],
        ));
    }
    if let (Some(ph), Some(alk)) = (get("ph_after"), get("alkalinity_after")) {
        let mut args = vec![
            ("ph", numbers::format_fixed(ph.value, 2, lang)),
            ("alkalinity", numbers::format_sig(alk.value, 3, lang)),
        ];
        view.after = match get("langelier_index_after") {
            Some(lsi) => {
                args.push(("lsi", numbers::format_fixed(lsi.value, 2, lang)));
                words.get_args(key("path-water-lsi"), &args)
            }
            None => words.get_args(key("path-water"), &args),
        };
    }
}

/// A number the engine put in an error's parameter, in the operator's language.
fn param_number(e: &crate::engine::Error, name: &str, lang: Lang) -> Option<String> {
    let v: f64 = e.param(name)?.parse().ok()?;
    Some(numbers::format_sig(v, 3, lang))
}

/// Which target the pair cannot reach, in words: the engine's `target` and `value`.
fn out_of_reach_words(
    e: &crate::engine::Error,
    names: &[String; 2],
    view: &TwoTargetsView,
    lang: Lang,
    words: &dyn Words,
) -> String {
    let ph = e.param("target") == Some("ph");
    let (target, unit) = if ph {
        (view.ph.label.clone(), String::new())
    } else {
        (view.value.label.clone(), view.value.unit.clone())
    };
    words.get_args(
        key("path-two-out-of-reach"),
        &[
            ("target", target),
            (
                "value",
                format!(
                    "{} {unit}",
                    param_number(e, "value", lang).unwrap_or_default()
                )
                .trim_end()
                .to_string(),
            ),
            ("first", names[0].clone()),
            ("second", names[1].clone()),
        ],
    )
}

/// What would reach it, in words: the chemical the engine names for a pH no share of the
/// pair reaches, or the range of the second target the pair gives at the target pH.
fn reach_words(
    e: &crate::engine::Error,
    catalog: &crate::engine::dosing::catalog::Catalog,
    view: &TwoTargetsView,
    lang: Lang,
    words: &dyn Words,
) -> String {
    if let Some(chemical) = e.param("suggestion") {
        // The engine names a water-engine chemical; the operator knows the product.
        let product = catalog.products.iter().find(|p| {
            crate::engine::dosing::waterside::water_chemical(&p.compound)
                .is_ok_and(|c| c.id == chemical)
        });
        let name = product.map_or_else(|| chemical.to_string(), |p| words.name(&p.name_key));
        return words.get_args(key("path-two-reach-with"), &[("chemical", name)]);
    }
    match (param_number(e, "low", lang), param_number(e, "high", lang)) {
        (Some(low), Some(high)) => words.get_args(
            key("path-two-reach-range"),
            &[
                ("low", low),
                ("high", high),
                ("unit", view.value.unit.clone()),
            ],
        ),
        _ => String::new(),
    }
}

/// A typed number in the operator's language, or why it is refused, in words: not a number,
/// or below zero where `non_negative` (a dose, an alkalinity).
fn read(text: &str, lang: Lang, non_negative: bool, words: &dyn Words) -> Result<f64, String> {
    match numbers::parse(text, lang) {
        Ok(v) if v.is_finite() && (!non_negative || v >= 0.0) => Ok(v),
        Ok(_) => Err(words.get(key("path-negative"))),
        Err(e) => Err(words.get(e.key())),
    }
}

/// A water in one line: pH, alkalinity and (where it exists) the Langelier index.
fn water_words(w: &WaterAt, lang: Lang, words: &dyn Words) -> String {
    let mut args = vec![
        ("ph", numbers::format_fixed(w.ph, 2, lang)),
        (
            "alkalinity",
            numbers::format_sig(w.alkalinity_mg_l_as_caco3, 3, lang),
        ),
    ];
    match w.langelier_index {
        Some(lsi) => {
            args.push(("lsi", numbers::format_fixed(lsi, 2, lang)));
            words.get_args(key("path-water-lsi"), &args)
        }
        None => words.get_args(key("path-water"), &args),
    }
}

/// The unit a raw-water field is typed in.
pub fn field_unit(name: &str, system: UnitSystem) -> Option<Unit> {
    WATER_FIELDS
        .iter()
        .find(|(n, _, _)| *n == name)
        .map(|(_, q, _)| q.unit(system))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::app::words::Dictionary;

    const WORDS: Dictionary = Dictionary(&[
        ("path-water", "pH { $ph } · { $alkalinity }"),
        (
            "path-water-lsi",
            "pH { $ph } · { $alkalinity } · LSI { $lsi }",
        ),
        ("path-need-water", "need water"),
        ("path-none", "no path"),
        ("number-invalid", "not a number"),
        ("path-negative", "negative"),
        ("path-two-dose", "{ $product }: { $dose } { $unit }"),
        ("path-two-need-targets", "need targets"),
        (
            "path-two-out-of-reach",
            "{ $target } { $value } out of reach with { $first } + { $second }",
        ),
        ("path-two-reach-with", "{ $chemical } would reach it"),
        ("path-two-reach-range", "{ $low } to { $high } { $unit }"),
        ("path-two-target-ph", "Target pH"),
        ("path-two-value-alkalinity", "Alkalinity"),
        ("unit-mg-per-l", "mg/L"),
        ("unit-mg-per-l-caco3", "mg/L as CaCO3"),
        ("basis-as", "as { $compound }"),
    ]);

    /// The demo plant in SI units, with the raw water typed as `water` (name, text).
    fn screen(water: &[(&str, &str)]) -> (PathScreen, Session) {
        let mut session = Session::open(None, Some(Lang::En));
        session.set_units(UnitSystem::Si);
        let mut s = PathScreen::default();
        for (name, text) in water {
            s.edit_water(name, text);
        }
        (s, session)
    }

    const RAW: [(&str, &str); 4] = [
        ("ph", "7.60"),
        ("temperature", "12"),
        ("alkalinity", "60"),
        ("calcium", "50"),
    ];

    /// The pH written at the start of a water line ("pH 7.60 · ...").
    fn ph_of(line: &str) -> f64 {
        line.split_whitespace().nth(1).unwrap().parse().unwrap()
    }

    #[test]
    fn without_the_raw_water_the_screen_says_what_it_needs() {
        let (s, session) = screen(&[("ph", "7.6")]);
        let v = s.view(&session, &WORDS);
        assert_eq!(v.message, "need water");
        assert!(v.points.is_empty());
        assert_eq!(v.fields.len(), 4);
        // The demo path's feeds are listed with the site's usual doses, to be changed.
        assert!(
            v.feeds
                .iter()
                .any(|f| f.product == "alum-bulk" && f.text == "28"),
            "{:?}",
            v.feeds
        );
    }

    #[test]
    fn letters_in_a_reading_are_refused_at_the_field() {
        let (s, session) = screen(&[("ph", "7.6"), ("temperature", "12"), ("alkalinity", "six")]);
        let v = s.view(&session, &WORDS);
        let alk = v.fields.iter().find(|f| f.name == "alkalinity").unwrap();
        assert_eq!(alk.error, "not a number");
        assert_eq!(v.message, "need water");
    }

    #[test]
    fn each_point_shows_the_water_after_the_doses_before_it() {
        let (s, session) = screen(&RAW);
        let v = s.view(&session, &WORDS);
        assert_eq!(v.message, "", "{v:?}");
        assert_eq!(v.points.len(), session.site().path.len());
        let ph: Vec<f64> = v.points.iter().map(|p| ph_of(&p.water)).collect();
        // Raw water point feeds nothing: the water is the raw water.
        assert_eq!(ph[0], 7.60);
        // Alum is an acid salt (Al3+ hydrolyses to Al(OH)3 + 3 H+): the flash mixer lowers pH.
        assert!(ph[1] < ph[0], "{ph:?}");
        // Caustic after the filters raises it again.
        let post = session
            .site()
            .path
            .iter()
            .position(|p| p.id == "post-treatment")
            .unwrap();
        assert!(ph[post] > ph[post - 1], "{ph:?}");
        assert!(v.finished.starts_with("pH "), "{}", v.finished);
        assert!(!v.ph_line.is_empty() && !v.alkalinity_line.is_empty());
    }

    #[test]
    fn a_dose_typed_here_replaces_the_sites_and_zero_feeds_nothing() {
        let (mut s, session) = screen(&RAW);
        s.edit_dose("flash-mixer", "alum-bulk", "0");
        let v = s.view(&session, &WORDS);
        assert_eq!(ph_of(&v.points[1].water), 7.60, "{:?}", v.points[1]);
        s.edit_dose("flash-mixer", "alum-bulk", "");
        let back = s.view(&session, &WORDS);
        assert!(
            ph_of(&back.points[1].water) < 7.60,
            "the site's 28 mg/L again"
        );
        s.edit_dose("flash-mixer", "alum-bulk", "-3");
        let refused = s.view(&session, &WORDS);
        assert_eq!(refused.message, "need water");
        assert_eq!(refused.feeds[0].error, "negative");
    }

    #[test]
    fn a_point_opens_the_calculator_of_what_it_feeds_with_the_water_arriving() {
        let (s, session) = screen(&RAW);
        let at = |id: &str| session.site().path.iter().position(|p| p.id == id).unwrap();
        assert_eq!(s.calculator_at(&session, at("intake")), None, "nothing fed");
        assert_eq!(
            s.calculator_at(&session, at("flash-mixer")),
            CalcKind::find("coagulation")
        );
        assert_eq!(
            s.calculator_at(&session, at("post-treatment")),
            CalcKind::find("ph-adjustment")
        );
        let v = s.view(&session, &WORDS);
        let post = at("post-treatment");
        let arriving = s.water_arriving(&session, post, &WORDS).unwrap();
        // The water arriving at post-treatment is the water after the point before it.
        let before = ph_of(&v.points[post - 1].water);
        let ph: f64 = arriving[0].1.parse().unwrap();
        assert_eq!((arriving[0].0, ph), ("ph", before));
        assert_eq!(arriving[1], ("temperature", "12.0".to_string()));
    }

    /// The demo plant's post-treatment channel, with the raw water of [`RAW`] typed and the
    /// two-target panel open there with targets `ph` and alkalinity `alkalinity`.
    fn two_at_post(ph: &str, alkalinity: &str) -> (PathScreen, Session, usize) {
        let (mut s, session) = screen(&RAW);
        let post = session
            .site()
            .path
            .iter()
            .position(|p| p.id == "post-treatment")
            .unwrap();
        s.open_two_targets(&session, post);
        s.edit_two_targets("target-ph", ph);
        s.edit_two_targets("target-alkalinity", alkalinity);
        (s, session, post)
    }

    #[test]
    fn two_targets_are_offered_only_where_a_point_lists_a_pair() {
        let (mut s, session) = screen(&RAW);
        let v = s.view(&session, &WORDS);
        let offered: Vec<&str> = v
            .points
            .iter()
            .zip(&session.site().path)
            .filter(|(line, _)| line.two)
            .map(|(_, p)| p.id.as_str())
            .collect();
        // Caustic and soda ash at post-treatment (the demo lists both); alum, hypochlorite
        // alone elsewhere.
        assert_eq!(offered, ["post-treatment"]);
        let flash = 1;
        s.open_two_targets(&session, flash);
        assert_eq!(
            s.view(&session, &WORDS).two,
            None,
            "no pair at the flash mixer"
        );
        let (mut s, session, post) = two_at_post("", "");
        let two = s.view(&session, &WORDS).two.unwrap();
        assert_eq!(two.point, post);
        assert_eq!(two.pair, "product-sodium-hydroxide + product-soda-ash");
        assert_eq!(two.second, "alkalinity");
        assert_eq!(two.seconds.len(), 5);
        assert_eq!(two.message, "need targets");
        assert!(two.doses.is_empty());
        // Tapped again, it closes.
        s.open_two_targets(&session, post);
        assert_eq!(s.view(&session, &WORDS).two, None);
    }

    /// `molefeed calc two-targets` run through the command line's own code (flags parsed,
    /// converted, computed, reported), its JSON results.
    fn cli_two_targets(flags: &[(&str, String)]) -> serde_json::Value {
        let site = concat!(env!("CARGO_MANIFEST_DIR"), "/data/demo-site.json");
        let mut argv: Vec<String> = ["two-targets", "--units", "si", "--site", site, "--json"]
            .map(String::from)
            .to_vec();
        for (flag, value) in flags {
            argv.push(format!("--{flag}"));
            argv.push(value.clone());
        }
        let args = crate::cli::Args::parse(&argv).unwrap();
        let report = crate::cli::dispatch("calc", &args).unwrap();
        report.json["results"].clone()
    }

    #[test]
    fn the_two_doses_are_the_command_lines_for_the_water_arriving() {
        // At pH 8.0 caustic alone leaves about 63 mg/L as CaCO3 here and soda ash adds to it
        // (the out-of-reach case below gives the pair's span): 70 is within reach.
        let (s, session, post) = two_at_post("8.0", "70");
        let two = s.view(&session, &WORDS).two.unwrap();
        assert_eq!(two.message, "", "{two:?}");
        // The same water (the readings a calculator opened here gets) and the same targets,
        // through `molefeed calc two-targets --site demo-site.json`.
        let arriving = s.water_arriving(&session, post, &WORDS).unwrap();
        let mut flags: Vec<(&str, String)> = arriving
            .iter()
            .map(|(n, t)| {
                (
                    if *n == "calcium" {
                        "calcium-hardness"
                    } else {
                        *n
                    },
                    t.clone(),
                )
            })
            .collect();
        flags.push(("chemicals", "caustic,soda-ash".into()));
        flags.push(("target-ph", "8.0".into()));
        flags.push(("target-alkalinity", "70".into()));
        let cli = cli_two_targets(&flags);
        let shown = |id: &str, product: &str, compound: &str| {
            let r = &cli[id];
            let f = |v: &serde_json::Value| v.as_f64().unwrap();
            let dose = numbers::format_sig(f(&r["value"]), 3, Lang::En);
            let d = crate::engine::sigfig::shown_decimals(&dose);
            let (lo, hi) = (
                numbers::format_fixed(f(&r["low"]), d, Lang::En),
                numbers::format_fixed(f(&r["high"]), d, Lang::En),
            );
            format!("product-{product}: {dose} ({lo}–{hi}) mg/L as {compound}")
        };
        assert_eq!(
            two.doses,
            [
                shown("first_dose", "sodium-hydroxide", "NaOH"),
                shown("second_dose", "soda-ash", "Na2CO3"),
            ]
        );
        // Both targets met, as the command line reports them.
        let ph = cli["ph_after"]["value"].as_f64().unwrap();
        let alk = cli["alkalinity_after"]["value"].as_f64().unwrap();
        assert!(
            (ph - 8.0).abs() < 1e-3 && (alk - 70.0).abs() < 0.01,
            "{ph} {alk}"
        );
        assert!(
            two.after.starts_with("pH 8.00 · 70.0 · LSI "),
            "{}",
            two.after
        );
    }

    #[test]
    fn a_target_out_of_reach_is_named_with_what_would_reach_it() {
        // Caustic and soda ash only add alkalinity: 20 mg/L as CaCO3 is below the water
        // arriving (about 46 after 28 mg/L alum: 0.094 mmol Al x 3 meq x 50 = 14 consumed).
        let (s, session, post) = two_at_post("8.0", "20");
        let two = s.view(&session, &WORDS).two.unwrap();
        assert_eq!(
            two.message,
            "Alkalinity 20.0 mg/L as CaCO3 out of reach with product-sodium-hydroxide + product-soda-ash"
        );
        let arriving = s.water_arriving(&session, post, &WORDS).unwrap();
        let alk: f64 = arriving[2].1.parse().unwrap();
        let low: f64 = two
            .reach
            .split_whitespace()
            .next()
            .unwrap()
            .parse()
            .unwrap();
        assert!(
            low >= alk - 0.5,
            "the pair gives no less than arrives: {}",
            two.reach
        );
        assert!(two.doses.is_empty());
        // Both raise the pH: a pH below the water arriving needs an acid.
        let (s, session, _) = two_at_post("5.0", "50");
        let two = s.view(&session, &WORDS).two.unwrap();
        assert!(
            two.message.starts_with("Target pH 5.00 "),
            "{}",
            two.message
        );
        assert_eq!(two.reach, "product-sulfuric-acid would reach it");
    }

    #[test]
    fn a_target_with_letters_is_refused_at_its_field() {
        let (mut s, session, _) = two_at_post("8.0", "fifty");
        let two = s.view(&session, &WORDS).two.unwrap();
        assert_eq!(two.value.error, "not a number");
        assert_eq!(two.message, "");
        assert!(two.doses.is_empty());
        // A negative alkalinity is refused; a negative LSI is a target like any other.
        s.edit_two_targets("target-alkalinity", "-5");
        assert_eq!(
            s.view(&session, &WORDS).two.unwrap().value.error,
            "negative"
        );
        s.pick_second_target("lsi");
        s.edit_two_targets("target-lsi", "-0.2");
        let lsi = s.view(&session, &WORDS).two.unwrap();
        assert_eq!((lsi.second.as_str(), lsi.value.error.as_str()), ("lsi", ""));
    }
}
