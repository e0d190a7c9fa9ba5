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

use super::calc::key;
use super::calc_screen::{CautionLine, caution_lines};
use super::engine_adapter;
use super::numbers::{self, Lang};
use super::plot::{self, Range};
use super::seams::CalcKind;
use super::session::Session;
use super::words::Words;
use crate::engine::calculators::{Calculators, TABLE};
use crate::engine::path::{self, Path, PathResult, Settings, WaterAt};
use crate::engine::quantity::{Quantity, Unit, UnitSystem};
use crate::engine::water::WaterInput;
use std::collections::BTreeMap;

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
}

/// What the screen keeps: the texts typed on it.
#[derive(Clone, Debug, Default)]
pub struct PathScreen {
    water: BTreeMap<String, String>,
    /// Typed doses by (point id, site product id), mg/L of the product's dose compound.
    doses: BTreeMap<(String, String), String>,
}

impl PathScreen {
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
                    format!(
                        "{name} {} {}",
                        numbers::format_sig(s.dose_mg_l, 3, lang),
                        words.get(key("unit-mg-per-l"))
                    )
                })
                .collect();
            let basin = r
                .basins
                .iter()
                .find(|b| b.point == p.id)
                .map(|b| {
                    words.get_args(
                        key("path-basin-ct"),
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
            view.points.push(PathPointLine {
                name: p.name.clone(),
                feeds: fed.join(", "),
                water,
                basin,
                opens,
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
        let calculators = Calculators::new().ok()?;
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
}
