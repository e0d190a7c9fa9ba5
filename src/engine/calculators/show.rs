//! "Show the work" as lines: a heading per trace, each conversion step beside where its
//! factor comes from, then the result rounded to the figures its inputs support.
//!
//! Design choice: the lines are language-neutral text (numbers, units, formulas) plus codes
//! (`trace-<label>` headings, `origin-<code>` origins) that a screen translates; the CLI and
//! the log keep them as [`TraceLine::plain`] text.

use crate::engine::dosing::{self, NamedTrace};
use crate::engine::trace::Origin;
use serde::Serialize;

/// Where a step's factor comes from; translated as `origin-<code>` with `$detail`.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct StepOrigin {
    pub code: &'static str,
    pub detail: String,
}

/// One line of "show the work".
#[derive(Clone, Debug, PartialEq, Serialize)]
pub enum TraceLine {
    /// A named trace begins; its title is the translation `trace-<label>`.
    Heading(String),
    /// A conversion step (`previous × factor = result`), with its factor's origin.
    Step {
        text: String,
        origin: Option<StepOrigin>,
    },
    /// The result rounded to the figures its inputs support.
    Result(String),
}

impl TraceLine {
    /// The line as the CLI prints it and the dose log stores it: headings as `[label]`.
    pub fn plain(&self) -> String {
        match self {
            TraceLine::Heading(label) => format!("[{label}]"),
            TraceLine::Step {
                text,
                origin: Some(o),
            } => format!("  {text}   ({}: {})", o.code, o.detail),
            TraceLine::Step { text, origin: None } => format!("  {text}"),
            TraceLine::Result(text) => format!("  {text}"),
        }
    }
}

/// The traces as lines: a heading per trace, each step beside the origin of its factor, then
/// the rounded result.
pub fn trace_lines(traces: &[NamedTrace]) -> Vec<TraceLine> {
    let mut lines = Vec::new();
    for t in traces {
        lines.push(TraceLine::Heading(t.label.to_string()));
        let texts = dosing::step_lines(&t.trace);
        for (i, text) in texts.into_iter().enumerate() {
            let origin = match t.trace.steps.get(i) {
                Some(step) => origin_of(&step.origin),
                None => origin_of(&t.trace.start_origin),
            };
            lines.push(TraceLine::Step {
                text,
                origin: Some(origin),
            });
        }
        if t.trace.sig_figs().is_some() {
            lines.push(TraceLine::Result(format!("≈ {}", t.trace.display_result())));
        }
    }
    lines
}

fn origin_of(origin: &Origin) -> StepOrigin {
    let (code, detail) = match origin {
        Origin::Measured => ("measured", String::new()),
        Origin::MolarMass { formula } => ("molar-mass", formula.clone()),
        Origin::MoleRatio { reaction } => ("mole-ratio", reaction.clone()),
        Origin::UnitDefinition => ("unit-definition", String::new()),
        Origin::Product { name } => ("product", name.clone()),
        Origin::Constant { source } => ("constant", source.clone()),
        Origin::Equilibrium => ("equilibrium", String::new()),
    };
    StepOrigin { code, detail }
}
