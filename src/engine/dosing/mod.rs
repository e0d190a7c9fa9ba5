//! Dosing calculators: from an operator's measurements to the feed setting, with the work shown.
//!
//! Design: every calculator is a pure function from typed inputs to a result struct that
//! carries the numbers, one or more named [`Trace`]s (each a unit-checked chain of
//! conversions) and structured [`Caution`]s. Every ratio comes from a balanced reaction in
//! `data/dosing-reactions.json` or a formula in `data/products.json`, so the familiar
//! operator constants (8.34, 7.6:1, 1.47 ...) are *results* that tests compare with the
//! published numbers, never inputs. Equilibrium (pH after a dose) belongs to the
//! water-chemistry engine; the seams are marked `SEAM(water)`.

pub mod catalog;
pub mod caution;
pub mod chlorine;
pub mod coagulation;
pub mod feed;
pub mod pumpcheck;
pub mod site;
pub mod softening;
pub mod units;

pub use caution::{Caution, Severity};

use super::trace::Trace;
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
pub fn show_work(traces: &[NamedTrace]) -> String {
    let mut out = String::new();
    for t in traces {
        out.push_str(&format!("[{}]\n{}", t.label, t.trace));
        if !out.ends_with('\n') {
            out.push('\n');
        }
    }
    out
}
