//! The Plots screen's controller: the titration curve of the open calculator and the trend of
//! logged doses, as path commands with their axes, marks and messages. Plain Rust with no
//! Slint types; the geometry is [`super::plot`]'s.
//!
//! Design choice: plots are computed on demand from the calculator controller and the log
//! screen they draw (read, never changed), so this controller keeps no state of its own.

use super::calc::{CalcController, key};
use super::dose_log::Entry;
use super::log_screen::LogScreen;
use super::numbers::{self, Lang};
use super::plot::{self, Range};
use super::seams::{CalcKind, SeamError};
use super::session::Note;
use super::words::Words;
use crate::engine::quantity::Quantity;

/// A drawn plot: command strings in the view box of [`plot`], or why there is none.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct PlotView {
    pub commands: String,
    pub grid: String,
    /// Translation key of the x-axis label.
    pub x_key: String,
    /// What is plotted (titrant or chemical · point), as data.
    pub subject: String,
    pub y_lo: String,
    pub y_hi: String,
    pub x_lo: String,
    pub x_hi: String,
    /// Lines marking the chosen point (dose and the pH it reaches), and their legend in words.
    pub markers: String,
    pub legend: Option<Note>,
    pub message: Option<Note>,
    /// The values written along each axis, where each sits across it (0 at the low end).
    pub y_ticks: Vec<Tick>,
    pub x_ticks: Vec<Tick>,
    /// The line of the target (the pH the calculator doses to), and its label in words.
    pub target: String,
    pub target_label: Option<Note>,
    /// Where the target sits up the y axis (0 at the low end).
    pub target_at: f64,
}

/// One value written along an axis.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct Tick {
    pub label: String,
    pub at: f64,
}

/// About as many values as a phone's axis has room for.
const Y_TICKS: usize = 6;
const X_TICKS: usize = 5;

/// The titration curve for the calculator in use when it draws one (coagulation: pH
/// against coagulant, hydroxide precipitating), otherwise the first screen of the table
/// that draws one (pH adjustment). The chosen dose and the pH it reaches are marked on it
/// and said in words.
pub fn titration(calc: &CalcController, lang: Lang) -> PlotView {
    let open = (calc.kind(), calc.mode());
    let (kind, mode) = if open.1.calculator().has_curve() {
        open
    } else {
        CalcKind::all()
            .into_iter()
            .find_map(|k| {
                let m = k.modes().into_iter().find(|m| m.calculator().has_curve())?;
                Some((k, m))
            })
            .unwrap_or(open)
    };
    let need = format!("plot-need-inputs-{}", kind.code());
    let Some(request) = calc.request_for(kind, mode) else {
        return PlotView {
            message: Some(Note::new(&need)),
            ..PlotView::default()
        };
    };
    let engine = calc.engine();
    let curve = match engine.titration_curve(&request) {
        Ok(curve) => curve,
        Err(SeamError::NotConnected) => {
            return PlotView {
                message: Some(Note::new(key("calc-not-connected"))),
                ..PlotView::default()
            };
        }
        Err(SeamError::Engine(e)) => {
            return PlotView {
                message: Some(Note::new(&format!("error-{}", e.kind().code()))),
                ..PlotView::default()
            };
        }
    };
    let mut view = plot_of(
        &curve.points,
        key("plot-titrant-axis"),
        &curve.titrant,
        lang,
    );
    // The target: the calculator's pH input that is checked against a plant limit (a target,
    // in the table's terms), marked across the curve with its value.
    let target = mode
        .calculator()
        .inputs
        .iter()
        .find(|i| i.quantity == Quantity::Ph && i.limit.is_some())
        .and_then(|i| request.get(i.name));
    if let (Some(target), Some((x, y))) = (target, ranges(&curve.points))
        && (y.lo..=y.hi).contains(&target)
    {
        view.target = plot::crosshair(None, Some(target), x, y);
        view.target_at = plot::fraction(target, y);
        view.target_label = Some(
            Note::new(key("plot-target-ph")).arg("ph", numbers::format_fixed(target, 2, lang)),
        );
    }
    // The chosen point: the dose the calculator gives and the pH it reaches there.
    let outcome = engine.compute(&request).ok();
    let dose = outcome.as_ref().and_then(|o| o.dose_mg_per_l);
    let ph = outcome.as_ref().and_then(|o| {
        o.extras
            .iter()
            // The pH the dose leaves: the first pH the calculator reports after it.
            .find(|e| e.key.starts_with("ph-after"))
            .map(|e| e.value)
    });
    if let (Some(dose), Some(ph), Some((x, y))) = (dose, ph, ranges(&curve.points)) {
        // The dose to the figures the card shows it with (the engine's one rule): "30"
        // beside a card's 26.3 would be a second, coarser number.
        let figures =
            crate::engine::calculators::figures_shown(outcome.as_ref().and_then(|o| o.figures));
        view.markers = plot::crosshair(Some(dose), Some(ph), x, y);
        view.legend = Some(
            Note::new(key("plot-chosen-point"))
                .arg("dose", numbers::format_sig(dose, figures, lang))
                .arg("ph", numbers::format_fixed(ph, 2, lang))
                .arg(
                    "start",
                    numbers::format_fixed(curve.points.first().map_or(0.0, |p| p.1), 2, lang),
                ),
        );
    }
    view
}

/// Logged doses of the chemical of the selected (or newest) entry, oldest first.
pub fn trend(log: &LogScreen, lang: Lang) -> PlotView {
    // Read in place: a copy of a long log here was a large part of the start-up.
    let all = log.entries();
    let entries = || all.iter().filter(|e| !e.voided());
    let Some(focus) = log
        .selected_entry()
        .or_else(|| entries().next_back().cloned())
    else {
        return PlotView {
            message: Some(Note::new(key("plot-no-log"))),
            ..PlotView::default()
        };
    };
    let series: Vec<&Entry> = entries()
        .filter(|e| e.dose.chemical == focus.dose.chemical && e.dose.tap == focus.dose.tap)
        .collect();
    // Days since the series' first entry, so a gap of a week looks like a week.
    let days = |e: &Entry| {
        chrono::DateTime::parse_from_rfc3339(&e.when)
            .ok()
            .map(|t| t.timestamp() as f64 / 86_400.0)
    };
    let first = series.first().and_then(|e| days(e));
    let points: Vec<(f64, f64)> = series
        .iter()
        .filter_map(|e| Some((days(e)? - first?, e.dose.dose_mg_per_l()?)))
        .collect();
    if points.len() < 2 {
        return PlotView {
            message: Some(Note::new(key("plot-need-two"))),
            ..PlotView::default()
        };
    }
    let label = format!("{} · {}", focus.dose.chemical, focus.dose.tap);
    plot_of(&points, key("plot-days-axis"), &label, lang)
}

fn plot_of(points: &[(f64, f64)], x_key: &str, subject: &str, lang: Lang) -> PlotView {
    let Some((x, y)) = ranges(points) else {
        return PlotView {
            message: Some(Note::new(key("plot-no-data"))),
            ..PlotView::default()
        };
    };
    let y_ticks = plot::ticks(y, Y_TICKS);
    let x_ticks = plot::ticks(x, X_TICKS);
    let tick = |r: Range| {
        move |v: &f64| Tick {
            // A round number as it is written (7, 7.5, 0.2), in the language's mark.
            label: numbers::format_fixed(
                *v,
                format!("{v}").split('.').nth(1).map_or(0, str::len),
                lang,
            ),
            at: plot::fraction(*v, r),
        }
    };
    PlotView {
        commands: plot::polyline(points, x, y),
        // A grid line at each value of the y axis, a short mark at each of the x axis.
        grid: [plot::grid(&y_ticks, y), plot::x_marks(&x_ticks, x)]
            .join(" ")
            .trim()
            .to_string(),
        y_ticks: y_ticks.iter().map(tick(y)).collect(),
        x_ticks: x_ticks.iter().map(tick(x)).collect(),
        x_key: x_key.to_string(),
        subject: subject.to_string(),
        y_lo: numbers::format_sig(y.lo, 3, lang),
        y_hi: numbers::format_sig(y.hi, 3, lang),
        x_lo: numbers::format_sig(x.lo, 3, lang),
        x_hi: numbers::format_sig(x.hi, 3, lang),
        markers: String::new(),
        legend: None,
        message: None,
        target: String::new(),
        target_label: None,
        target_at: 0.0,
    }
}

/// A plot as the screen shows it: the drawing, and every label in words.
#[derive(Clone, Debug, PartialEq, Default)]
pub struct PlotText {
    pub title: String,
    pub commands: String,
    pub grid: String,
    /// The x-axis label and what is plotted: `axis — subject`; empty without a plot.
    pub x_label: String,
    pub y_label: String,
    pub y_lo: String,
    pub y_hi: String,
    pub x_lo: String,
    pub x_hi: String,
    pub markers: String,
    pub legend: String,
    pub message: String,
    pub y_ticks: Vec<Tick>,
    pub x_ticks: Vec<Tick>,
    pub target: String,
    pub target_label: String,
    pub target_at: f64,
}

impl PlotView {
    /// The plot in words, under the title `title_key` with the y axis `y_key`.
    pub fn worded(&self, title_key: &str, y_key: &str, words: &dyn Words) -> PlotText {
        let note = |n: &Option<Note>| n.as_ref().map(|n| words.note(n)).unwrap_or_default();
        PlotText {
            title: words.get(title_key),
            commands: self.commands.clone(),
            grid: self.grid.clone(),
            x_label: if self.x_key.is_empty() {
                String::new()
            } else {
                format!("{} — {}", words.get(&self.x_key), words.name(&self.subject))
            },
            y_label: words.get(y_key),
            y_lo: self.y_lo.clone(),
            y_hi: self.y_hi.clone(),
            x_lo: self.x_lo.clone(),
            x_hi: self.x_hi.clone(),
            markers: self.markers.clone(),
            legend: note(&self.legend),
            message: note(&self.message),
            y_ticks: self.y_ticks.clone(),
            x_ticks: self.x_ticks.clone(),
            target: self.target.clone(),
            target_label: note(&self.target_label),
            target_at: self.target_at,
        }
    }
}

/// The axis ranges of a plot of `points`.
fn ranges(points: &[(f64, f64)]) -> Option<(Range, Range)> {
    Some((
        Range::around(points.iter().map(|p| p.0))?,
        Range::around(points.iter().map(|p| p.1))?,
    ))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::app::words::Dictionary;

    const WORDS: Dictionary = Dictionary(&[
        ("plot-trend", "Dose trend"),
        ("plot-dose-axis", "Dose, mg/L"),
        ("plot-days-axis", "Days"),
        ("plot-need-two", "Log two doses to see a trend."),
        ("product-sodium-hydroxide", "Caustic soda"),
    ]);

    /// Labels written by hand from the dictionary; the drawing is passed through as it is.
    #[test]
    fn a_plot_is_worded_with_its_axis_and_subject() {
        let view = plot_of(
            &[(0.0, 1.0), (1.0, 2.0)],
            key("plot-days-axis"),
            "product-sodium-hydroxide",
            Lang::En,
        );
        let text = view.worded(key("plot-trend"), key("plot-dose-axis"), &WORDS);
        assert_eq!(text.title, "Dose trend");
        assert_eq!(text.x_label, "Days — Caustic soda");
        assert_eq!(text.y_label, "Dose, mg/L");
        assert_eq!(
            (text.commands, text.message),
            (view.commands, String::new())
        );
        let empty = PlotView {
            message: Some(Note::new(key("plot-need-two"))),
            ..PlotView::default()
        };
        let text = empty.worded(key("plot-trend"), key("plot-dose-axis"), &WORDS);
        assert_eq!(text.x_label, "", "no axis without a plot");
        assert_eq!(text.message, "Log two doses to see a trend.");
    }
}
