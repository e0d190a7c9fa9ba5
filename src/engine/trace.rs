//! Traces: every number the app shows, as a chain of conversions whose units cancel.
//!
//! A [`Trace`] starts from a quantity and applies factors written as a fraction
//! `numerator / denominator`. A factor is only accepted if its denominator's unit (and
//! substance) is the unit the chain currently has, so a trace that type-checks here is a
//! dimensional-analysis chain a person can follow: `12.5 g Ca(OH)2 × 1 mol Ca(OH)2 / 74.092 g
//! Ca(OH)2 = 0.169 mol Ca(OH)2`. Each factor says where it came from (a molar mass computed
//! from a formula, a mole ratio from a balanced reaction, a unit definition, a measurement)
//! and whether it is exact, which is what decides the result's significant figures.

use super::sigfig::{self, combine};
use super::{Error, ErrorKind, Result};
use serde::Serialize;
use std::fmt;

/// A value with a unit and, for amounts of matter, the substance it counts.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Quantity {
    pub value: f64,
    pub unit: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub of: Option<String>,
}

impl Quantity {
    pub fn new(value: f64, unit: impl Into<String>) -> Quantity {
        Quantity {
            value,
            unit: unit.into(),
            of: None,
        }
    }

    pub fn of(value: f64, unit: impl Into<String>, substance: impl Into<String>) -> Quantity {
        Quantity {
            value,
            unit: unit.into(),
            of: Some(substance.into()),
        }
    }

    fn label(&self) -> String {
        match &self.of {
            Some(s) => format!("{} {}", self.unit, s),
            None => self.unit.clone(),
        }
    }

    fn same_unit(&self, other: &Quantity) -> bool {
        self.unit == other.unit && (self.of.is_none() || other.of.is_none() || self.of == other.of)
    }
}

/// Where a factor comes from.
#[derive(Clone, Debug, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "kebab-case")]
pub enum Origin {
    /// A value the operator entered.
    Measured,
    /// A molar mass summed from IUPAC atomic weights for this formula.
    MolarMass { formula: String },
    /// A mole ratio read from the coefficients of a balanced reaction.
    MoleRatio { reaction: String },
    /// A definition of units (exact by definition).
    UnitDefinition,
    /// A property of the delivered product (strength, specific gravity) from the site profile.
    Product { name: String },
    /// A published constant, named with its source.
    Constant { source: String },
    /// A result of the water-chemistry engine.
    Equilibrium,
}

/// One step of a trace: `previous × numerator / denominator = result`.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Step {
    pub numerator: Quantity,
    pub denominator: Quantity,
    pub origin: Origin,
    /// Significant figures of the factor; `None` when it is exact.
    pub sig_figs: Option<u8>,
    pub result: Quantity,
}

/// A chain of conversions from a starting quantity.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Trace {
    pub start: Quantity,
    pub start_origin: Origin,
    pub start_sig_figs: Option<u8>,
    pub steps: Vec<Step>,
}

impl Trace {
    pub fn new(start: Quantity, origin: Origin, sig_figs: Option<u8>) -> Trace {
        Trace {
            start,
            start_origin: origin,
            start_sig_figs: sig_figs,
            steps: Vec::new(),
        }
    }

    /// The quantity at the end of the chain.
    pub fn result(&self) -> &Quantity {
        self.steps.last().map_or(&self.start, |s| &s.result)
    }

    pub fn value(&self) -> f64 {
        self.result().value
    }

    /// Significant figures the result can stand behind; `None` if every input was exact.
    pub fn sig_figs(&self) -> Option<u8> {
        self.steps
            .iter()
            .fold(self.start_sig_figs, |acc, s| combine(acc, s.sig_figs))
    }

    /// The result rounded for display, with its unit.
    pub fn display_result(&self) -> String {
        let r = self.result();
        format!(
            "{} {}",
            sigfig::format_measured(r.value, self.sig_figs()),
            r.label()
        )
    }

    /// Applies `numerator / denominator`. The denominator must carry the chain's current unit
    /// (so it cancels); the result takes the numerator's unit and substance.
    pub fn then(
        &mut self,
        numerator: Quantity,
        denominator: Quantity,
        origin: Origin,
        sig_figs: Option<u8>,
    ) -> Result<&mut Trace> {
        let current = self.result().clone();
        if !current.same_unit(&denominator) {
            return Err(Error::new(
                ErrorKind::InvalidInput,
                format!(
                    "units do not cancel: {} cannot be divided out of {}",
                    denominator.label(),
                    current.label()
                ),
            ));
        }
        if denominator.value == 0.0
            || !denominator.value.is_finite()
            || !numerator.value.is_finite()
        {
            return Err(Error::new(
                ErrorKind::OutOfRange,
                format!(
                    "a conversion factor of {} per {} is not usable",
                    numerator.label(),
                    denominator.label()
                ),
            )
            .because("factor-not-usable"));
        }
        let value = current.value * numerator.value / denominator.value;
        let of = numerator.of.clone().or(if numerator.unit == current.unit {
            current.of.clone()
        } else {
            None
        });
        let result = Quantity {
            value,
            unit: numerator.unit.clone(),
            of,
        };
        self.steps.push(Step {
            numerator,
            denominator,
            origin,
            sig_figs,
            result,
        });
        Ok(self)
    }

    /// Applies the exact mole ratio of `to` per `from` read from a balanced reaction, both
    /// counted in `unit` (e.g. `mmol/L`).
    pub fn then_mole_ratio(
        &mut self,
        reaction: &super::reaction::Reaction,
        from: &str,
        to: &str,
        unit: &str,
    ) -> Result<&mut Trace> {
        let q = reaction.mole_ratio(from, to)?;
        self.then(
            Quantity::of(*q.numer() as f64 / *q.denom() as f64, unit, to),
            Quantity::of(1.0, unit, from),
            Origin::MoleRatio {
                reaction: reaction.to_string(),
            },
            None,
        )
    }

    /// Multiplies by a quantity that is not a per-unit factor (dose × flow): the caller names
    /// the unit of the product, as in `mg/L × MGD = mg/L·MGD`.
    pub fn times(
        &mut self,
        by: Quantity,
        result_unit: impl Into<String>,
        origin: Origin,
        sig_figs: Option<u8>,
    ) -> Result<&mut Trace> {
        let unit = result_unit.into();
        let one = Quantity::new(1.0, "1");
        let current = self.result().clone();
        if !by.value.is_finite() {
            return Err(Error::new(
                ErrorKind::InvalidInput,
                format!("{} is not a number", by.label()),
            ));
        }
        let result = Quantity {
            value: current.value * by.value,
            unit,
            of: current.of.clone(),
        };
        self.steps.push(Step {
            numerator: by,
            denominator: one,
            origin,
            sig_figs,
            result,
        });
        Ok(self)
    }
}

impl fmt::Display for Trace {
    /// One line per step, e.g. `12.5 g Ca(OH)2 × (1 mol Ca(OH)2 / 74.092 g Ca(OH)2) = 0.169 mol Ca(OH)2`.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let start = sigfig::format_measured(self.start.value, self.start_sig_figs);
        if self.steps.is_empty() {
            return write!(f, "{start} {}", self.start.label());
        }
        // Intermediate values carry two guard digits beyond what the result can claim, so
        // rounding happens once, at the end, as in careful hand calculation.
        let final_sig = self.sig_figs();
        let guarded = final_sig.map(|s| s.saturating_add(2));
        let mut carried = start;
        let mut previous = &self.start;
        for (i, step) in self.steps.iter().enumerate() {
            let last = i + 1 == self.steps.len();
            let shown =
                sigfig::format_measured(step.result.value, if last { final_sig } else { guarded });
            let numerator = sigfig::format_measured(step.numerator.value, None);
            let factor = if step.denominator.unit == "1" {
                format!("{numerator} {}", step.numerator.label())
            } else {
                let denominator = sigfig::format_measured(step.denominator.value, None);
                format!(
                    "({numerator} {} / {denominator} {})",
                    step.numerator.label(),
                    step.denominator.label()
                )
            };
            writeln!(
                f,
                "{carried} {} × {factor} = {shown} {}",
                previous.label(),
                step.result.label()
            )?;
            carried = shown;
            previous = &step.result;
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn units_must_cancel() {
        let mut t = Trace::new(
            Quantity::of(12.5, "g", "Ca(OH)2"),
            Origin::Measured,
            Some(3),
        );
        t.then(
            Quantity::of(1.0, "mol", "Ca(OH)2"),
            Quantity::of(74.092, "g", "Ca(OH)2"),
            Origin::MolarMass {
                formula: "Ca(OH)2".into(),
            },
            Some(5),
        )
        .unwrap();
        assert_eq!(t.result().unit, "mol");
        assert!((t.value() - 12.5 / 74.092).abs() < 1e-15);
        assert_eq!(t.sig_figs(), Some(3));
        assert_eq!(t.display_result(), "0.169 mol Ca(OH)2");
        let wrong = t.then(
            Quantity::new(1.0, "kg"),
            Quantity::new(1000.0, "g"),
            Origin::UnitDefinition,
            None,
        );
        assert!(wrong.unwrap_err().message().contains("do not cancel"));
        let other_substance = t.then(
            Quantity::of(1.0, "g", "X"),
            Quantity::of(1.0, "mol", "CaCO3"),
            Origin::UnitDefinition,
            None,
        );
        assert!(other_substance.is_err());
    }

    #[test]
    fn exact_factors_do_not_limit_precision() {
        let mut t = Trace::new(Quantity::new(2.0, "gal"), Origin::Measured, Some(1));
        t.then(
            Quantity::new(3.785411784, "L"),
            Quantity::new(1.0, "gal"),
            Origin::UnitDefinition,
            None,
        )
        .unwrap();
        assert_eq!(t.sig_figs(), Some(1));
        assert_eq!(t.display_result(), "8 L");
        let text = t.to_string();
        assert!(text.contains("(3.785411784 L / 1 gal)"), "{text}");
    }
}
