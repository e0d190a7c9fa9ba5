//! Dosing calculators: from an operator's measurements to the feed setting, with the work shown.
//!
//! Design: every calculator is a pure function from typed inputs to a result struct that
//! carries the numbers, one or more named [`Trace`]s (each a unit-checked chain of
//! conversions) and structured [`Caution`]s. Every ratio comes from a balanced reaction in
//! `data/dosing-reactions.json` or a formula in `data/products.json`, so the familiar
//! operator constants (8.34, 7.6:1, 1.47 ...) are *results* that tests compare with the
//! published numbers, never inputs. Equilibrium (pH after a dose) belongs to the
//! water-chemistry engine; [`waterside`] connects the calculators to it when the operator gives
//! the water (softening's softened water comes from `engine::water::softening`).

pub mod catalog;
pub mod caution;
pub mod chlorine;
pub mod coagulation;
pub mod feed;
pub mod neutralization;
pub mod pumpcheck;
pub mod site;
pub mod softening;
pub mod tank;
pub mod units;
pub mod waterside;

pub use caution::{Caution, Severity};

use super::sigfig::{combine, format_measured, format_sig, round_sig};
use super::trace::{Origin, Quantity, Trace};
use serde::Serialize;

/// A trace with a stable, kebab-case label the UI translates (`trace-` + label).
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct NamedTrace {
    pub label: &'static str,
    pub trace: Trace,
}

impl NamedTrace {
    pub fn new(label: &'static str, trace: Trace) -> NamedTrace {
        NamedTrace { label, trace }
    }
}

/// Renders traces as "show the work" text, one block per trace.
///
/// Each line is `previous × (numerator / denominator) = result`. Intermediate values are shown
/// with at least three significant figures in plain notation (an operator's calculator shows
/// them that way, and no digit is dropped that a later step needs); the last line states the
/// result rounded to the significant figures the inputs support.
pub fn show_work(traces: &[NamedTrace]) -> String {
    let mut out = String::new();
    for t in traces {
        out.push_str(&format!("[{}]\n", t.label));
        out.push_str(&render_trace(&t.trace));
    }
    out
}

fn label(q: &Quantity) -> String {
    match &q.of {
        Some(s) => format!("{} {}", q.unit, s),
        None => q.unit.clone(),
    }
}

/// A number as written: measured values to their significant figures, exact ones in full
/// (trimmed), in plain decimal notation where that stays readable.
fn written(v: f64, sig: Option<u8>) -> String {
    match sig {
        // A value that its figures represent exactly was typed that way; a derived factor
        // (litres per kg of active) keeps guard figures so the line's arithmetic can be followed.
        Some(s) if (round_sig(v, s) - v).abs() <= 1e-12 * v.abs() => plain(v, s, false),
        Some(s) => plain(v, (s + 2).max(4), false),
        // Exact: a defined factor has at most ten significant digits (3.785411784 L/gal,
        // 0.45359237 kg/lb) and is written in full; more digits are the float of a derived
        // value (82.2181281122 kg/d was seen) and are written to six.
        None => {
            let text = format_measured(v, None);
            let digits = text
                .chars()
                .skip_while(|c| !c.is_ascii_digit() || *c == '0')
                .filter(char::is_ascii_digit)
                .count();
            if text.len() <= 13 && digits <= 10 && !text.contains('e') {
                text
            } else {
                plain(v, 6, true)
            }
        }
    }
}

/// An intermediate result: one guard figure beyond what the inputs support (at least three),
/// so no digit a later step needs is hidden.
fn carried(v: f64, sig: Option<u8>) -> String {
    match sig {
        Some(s) => plain(v, (s + 1).max(3), false),
        None => written(v, None),
    }
}

fn plain(v: f64, s: u8, trim: bool) -> String {
    if !v.is_finite() {
        return "—".into();
    }
    let r = round_sig(v, s);
    if r == 0.0 {
        return "0".into();
    }
    let magnitude = r.abs().log10().floor() as i32;
    if !(-5..12).contains(&magnitude) {
        return format_sig(r, s);
    }
    let decimals = (s as i32 - 1 - magnitude).max(0) as usize;
    let text = format!("{r:.decimals$}");
    if trim && text.contains('.') {
        text.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        text
    }
}

fn render_trace(t: &Trace) -> String {
    let mut out = String::new();
    for line in step_lines(t) {
        out.push_str("  ");
        out.push_str(&line);
        out.push('\n');
    }
    if t.sig_figs().is_some() {
        out.push_str(&format!("  ≈ {}\n", t.display_result()));
    }
    out
}

/// One line per step of `t` (`previous × factor = result`), in step order, so a caller can
/// set each line beside its step's [`Origin`]; a trace without steps gives its start alone.
pub fn step_lines(t: &Trace) -> Vec<String> {
    let mut previous = t.start.clone();
    let mut sig = t.start_sig_figs;
    if t.steps.is_empty() {
        return vec![format!(
            "{} {}",
            written(previous.value, sig),
            label(&previous)
        )];
    }
    let mut lines = Vec::with_capacity(t.steps.len());
    for step in &t.steps {
        let factor = if step.denominator.unit == "1" {
            format!(
                "{} {}",
                written(step.numerator.value, step.sig_figs),
                label(&step.numerator)
            )
        } else {
            // Whole-number sides (1 L, 2 mol Al) are counts or unit definitions; the factor's
            // precision shows on the other side, where the measured number actually is.
            let (n_sig, d_sig) = if step.numerator.value.fract() == 0.0 {
                (None, step.sig_figs)
            } else {
                (step.sig_figs, None)
            };
            format!(
                "({} {} / {} {})",
                written(step.numerator.value, n_sig),
                label(&step.numerator),
                written(step.denominator.value, d_sig),
                label(&step.denominator)
            )
        };
        let before = sig;
        sig = combine(sig, step.sig_figs);
        lines.push(format!(
            "{} {} × {} = {} {}",
            if previous == t.start && t.start_origin == Origin::Measured {
                written(previous.value, before)
            } else {
                carried(previous.value, before)
            },
            label(&previous),
            factor,
            carried(step.result.value, sig),
            label(&step.result)
        ));
        previous = step.result.clone();
    }
    lines
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::sigfig::Measured;
    use units::{Flow, FlowUnit};

    /// Exact numbers as defined (the US gallon, the pound: exact by definition), a derived
    /// float to six figures.
    #[test]
    fn an_exact_number_is_written_in_full_a_derived_float_to_six_figures() {
        assert_eq!(written(3.785411784, None), "3.785411784");
        assert_eq!(written(0.45359237, None), "0.45359237");
        assert_eq!(written(1000.0, None), "1000");
        assert_eq!(written(82.2181281122, None), "82.2181");
    }

    #[test]
    fn show_work_keeps_exact_factors_and_typed_inputs_as_written() {
        let text = show_work(&[NamedTrace::new("pounds-factor", units::pounds_factor())]);
        assert!(text.contains("(3.785411784 L/d / 1 gal/d)"), "{text}");
        assert!(text.contains("= 8.345404452 lb/d"), "{text}");
        let flow = Flow::new(Measured::parse("2.5").unwrap(), FlowUnit::Mgd);
        let si = feed::active_feed_si(&flow, Measured::parse("3.0").unwrap(), "Cl2").unwrap();
        let text = show_work(&[NamedTrace::new("active-feed-si", si)]);
        assert!(text.starts_with("[active-feed-si]\n  2.5 MGD ×"), "{text}");
        assert!(text.contains("× 3.0 mg/L Cl2"), "{text}");
        assert!(text.trim_end().ends_with("≈ 28 kg/d Cl2"), "{text}");
    }
}
