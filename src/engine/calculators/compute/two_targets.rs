//! The `two-targets` calculator: two water-engine chemicals fed at one point for a target pH
//! and one second target (alkalinity, DIC, calcium, Langelier index or CCPP) together.
//!
//! Design choice: the table hands over names and numbers; the solve is the water engine's
//! [`two_targets`](crate::engine::water::targets::two_targets), so this file only reads the
//! request, refuses a request that does not name one pair and exactly one second target, and
//! puts the doses and the water they give on the outcome.

use super::{headline, outcome, result, value, water_after};
use crate::engine::calculators::{Calculators, Outcome, Request};
use crate::engine::dosing::NamedTrace;
use crate::engine::quantity::Quantity as Q;
use crate::engine::trace::{Origin, Quantity, Trace};
use crate::engine::water::targets::{SecondTarget, two_targets as solve};
use crate::engine::water::{Catalog, WaterInput, WaterState};
use crate::engine::{Error, ErrorKind, Result};

/// A second target from its value.
type Make = fn(f64) -> SecondTarget;

/// The second targets the calculator takes, by input name.
const SECOND_TARGETS: [(&str, Make); 5] = [
    ("target-alkalinity", SecondTarget::Alkalinity),
    ("target-dic", SecondTarget::Dic),
    ("target-calcium", SecondTarget::Calcium),
    ("target-lsi", SecondTarget::Lsi),
    ("target-ccpp", SecondTarget::Ccpp),
];

fn second_target(request: &Request) -> Result<SecondTarget> {
    let given: Vec<SecondTarget> = SECOND_TARGETS
        .iter()
        .filter_map(|(name, make)| request.get(name).map(make))
        .collect();
    match given.as_slice() {
        [one] => Ok(*one),
        _ => Err(Error::new(
            ErrorKind::InvalidInput,
            format!(
                "give exactly one second target besides the pH ({}), not {}",
                SECOND_TARGETS.map(|(n, _)| n).join(", "),
                given.len()
            ),
        )
        .because("one-second-target-needed")),
    }
}

/// Two chemicals, two targets: the first and second doses (mg/L of each compound), the pH,
/// alkalinity and Langelier index they leave.
pub(in crate::engine::calculators) fn two_targets(
    _c: &Calculators,
    request: &Request,
) -> Result<Outcome> {
    let names = request.lists.get("chemicals").cloned().unwrap_or_default();
    let [first, second] = names.as_slice() else {
        return Err(Error::new(
            ErrorKind::InvalidInput,
            format!(
                "two-targets needs two chemicals (--chemicals A,B), not {}",
                names.len()
            ),
        )
        .because("two-chemicals-needed"));
    };
    let catalog = Catalog::embedded()?;
    let (first, second) = (catalog.find(first)?, catalog.find(second)?);
    let mut input = WaterInput::new(
        value(request, "ph")?,
        value(request, "temperature")?,
        value(request, "alkalinity")?,
    );
    if let Some(calcium) = request.get("calcium-hardness") {
        input = input.with_calcium_as_caco3(calcium);
    }
    let state = WaterState::new(&input)?;
    let target = second_target(request)?;
    let ph_target = value(request, "target-ph")?;
    let r = solve(&state, first, second, ph_target, target)?;
    let (f1, f2) = (first.formula.to_string(), second.formula.to_string());
    let mut out = outcome(format!("{f1} + {f2}"));
    out.results.push(headline(
        "first_dose",
        r.first_mg_l,
        Q::Concentration,
        Some(&f1),
    ));
    out.results.push(headline(
        "second_dose",
        r.second_mg_l,
        Q::Concentration,
        Some(&f2),
    ));
    out.results
        .extend(water_after(r.ph, r.alkalinity_mg_l_as_caco3));
    if let (Some(lsi), false) = (r.langelier_index, request.headlines_only) {
        out.results
            .push(result("langelier_index_after", lsi, Q::Index, None));
    }
    let reached = format!("pH {:.2}, {} {:.4}", r.ph, target.code(), r.second_value);
    for (formula, dose) in [(&f1, r.first_mg_l), (&f2, r.second_mg_l)] {
        out.traces.push(NamedTrace::new(
            "two-targets",
            Trace::new(
                Quantity::of(dose, "mg/L", format!("{formula} ({reached})")),
                Origin::Equilibrium,
                None,
            ),
        ));
    }
    Ok(out)
}
