//! Compute functions of the wastewater, distribution and bench calculators: alkalinity for
//! nitrification, metal salts for phosphorus removal, disinfection of a new main, tank or
//! well, polymer make-down, and the dose a jar test represents.
//!
//! Design choice: a child of [`super`] (the table's compute functions), so it shares their
//! helpers (named SI values with their figures, the product's strength, the feed to the pump)
//! without widening them, and sits in a file of its own beside the other calculators. Every
//! ratio comes from a balanced reaction in `data/` or from formulas (alkalinity per mg N, alkali
//! per alkalinity, metal per phosphorus, the charge of a metal ion); the only typed factors are
//! unit definitions, which the traces mark exact.

use super::{
    Calculators, Outcome, Request, chosen, headline, measured, outcome, result, value, water_after,
};
use crate::engine::calculators::{Device, FollowUp, Setting};
use crate::engine::dosing::NamedTrace;
use crate::engine::dosing::catalog::{Catalog, active_to_product, molar_mass};
use crate::engine::dosing::caution::Caution;
use crate::engine::dosing::coagulation::alkalinity_per_dose;
use crate::engine::dosing::feed::product_cautions;
use crate::engine::formula::Formula;
use crate::engine::quantity::Quantity as Q;
use crate::engine::sigfig::{Measured, combine, format_sig};
use crate::engine::trace::{Origin, Quantity, Trace};
use crate::engine::{Error, ErrorKind, Result, check_positive, check_range};

/// The metal-to-phosphorus molar ratio the trade doses, low and high (common practice; Metcalf
/// & Eddy, Wastewater Engineering, 5th ed. (2014), ch. 6, chemical phosphorus removal, from
/// memory): the 1:1 of the phosphate precipitate is never enough, because the metal's own
/// hydroxide competes for it.
pub(crate) const METAL_RATIO_PRACTICE: (f64, f64) = (1.5, 2.5);
const METAL_RATIO_SOURCE: &str = "common practice; US EPA phosphorus removal design manual and Metcalf & Eddy, Wastewater Engineering, 5th ed. (2014), ch. 6 (from memory)";

/// The disinfection methods (the calculator's modes) with the free chlorine each commonly
/// aims at, used when no target is given and shown beside a target that is: continuous feed
/// about 25 mg/L with at least 10 mg/L left after 24 h, slug about 100 mg/L held 3 h
/// (`/work/shared/domain/references.md` §9, from memory of AWWA C651 [M]); tablets placed to
/// give about 25 mg/L (common practice, AWWA C651 style, from memory). The plant's own
/// procedure and the local authority's rules win over all three.
pub(crate) const DISINFECTION_METHODS: [(&str, f64); 3] =
    [("continuous-feed", 25.0), ("slug", 100.0), ("tablet", 25.0)];
const DISINFECTION_SOURCE: &str = "common practice (AWWA C651/C652 style targets, from memory)";

fn non_negative(name: &'static str, v: f64, unit: &str) -> Result<f64> {
    check_range(name, v, 0.0, f64::MAX, unit)
}

fn missing(name: &'static str) -> Error {
    Error::new(ErrorKind::InvalidInput, format!("{name} is missing"))
        .because("missing-input")
        .with("input", name)
}

/// A reading that may be absent, with its figures.
fn maybe(request: &Request, name: &str) -> Option<Measured> {
    request.get(name).map(|value| Measured {
        value,
        sig_figs: request.figures(name),
    })
}

/// mg/L as CaCO3 per meq/L: CaCO3's molar mass over the charge of the carbonate ion it is
/// counted as (the convention the coagulation calculator uses too).
fn caco3_per_meq() -> Result<(f64, Option<u8>)> {
    let (m, s) = molar_mass("CaCO3")?;
    let co3 = Formula::parse("CO3-2")?;
    Ok((m / f64::from(co3.charge().unsigned_abs()), s))
}

/// mg/L as CaCO3 of alkalinity that `reaction` destroys (the carrier is H+) or returns (OH-)
/// per mg/L of nitrogen in `species`: mg N → mmol species → mmol carrier (balanced reaction)
/// → meq → mg CaCO3.
pub(crate) fn alkalinity_per_mg_n(
    catalog: &Catalog,
    reaction: &str,
    species: &str,
    carrier: &str,
) -> Result<Trace> {
    let r = catalog.reaction(reaction)?;
    let (m_n, s_n) = molar_mass("N")?;
    let n_per_species = Formula::parse(species)?.count("N") as f64;
    let (per_meq, s_caco3) = caco3_per_meq()?;
    let charge = f64::from(Formula::parse(carrier)?.charge().unsigned_abs());
    let mut t = Trace::new(Quantity::of(1.0, "mg/L", "N"), Origin::Measured, None);
    t.then(
        Quantity::of(1.0, "mmol/L", species),
        Quantity::of(m_n * n_per_species, "mg/L", "N"),
        Origin::MolarMass {
            formula: "N".into(),
        },
        s_n,
    )?;
    t.then_mole_ratio(&r, species, carrier, "mmol/L")?;
    t.then(
        Quantity::of(charge, "meq/L", "alkalinity"),
        Quantity::of(1.0, "mmol/L", carrier),
        Origin::MolarMass {
            formula: carrier.into(),
        },
        None,
    )?;
    t.then(
        Quantity::of(per_meq, "mg/L", "CaCO3"),
        Quantity::of(1.0, "meq/L", "alkalinity"),
        Origin::MolarMass {
            formula: "CaCO3".into(),
        },
        s_caco3,
    )?;
    Ok(t)
}

/// mg/L of an alkali's compound per mg/L as CaCO3 of alkalinity it adds, from the product's
/// alkalinity reaction (its compound against HCO3-): mg CaCO3 → meq → mmol HCO3- → mmol
/// compound → mg compound.
pub(crate) fn alkali_per_caco3(catalog: &Catalog, product: &str) -> Result<Trace> {
    let p = catalog.product(product)?;
    let reaction = p.reaction.as_deref().ok_or_else(|| {
        Error::new(
            ErrorKind::UnknownChemical,
            format!("{product} has no alkalinity reaction"),
        )
        .because("product-not-for-calculator")
        .with("product", product)
    })?;
    let r = catalog.reaction(reaction)?;
    let (per_meq, s_caco3) = caco3_per_meq()?;
    let (m, s_m) = molar_mass(&p.compound)?;
    let mut t = Trace::new(Quantity::of(1.0, "mg/L", "CaCO3"), Origin::Measured, None);
    t.then(
        Quantity::of(1.0, "meq/L", "alkalinity"),
        Quantity::of(per_meq, "mg/L", "CaCO3"),
        Origin::MolarMass {
            formula: "CaCO3".into(),
        },
        s_caco3,
    )?;
    t.then(
        Quantity::of(1.0, "mmol/L", "HCO3-"),
        Quantity::of(1.0, "meq/L", "alkalinity"),
        Origin::MolarMass {
            formula: "HCO3-".into(),
        },
        None,
    )?;
    t.then_mole_ratio(&r, "HCO3-", &p.compound, "mmol/L")?;
    t.then(
        Quantity::of(m, "mg/L", &p.compound),
        Quantity::of(1.0, "mmol/L", &p.compound),
        Origin::MolarMass {
            formula: p.compound.clone(),
        },
        s_m,
    )?;
    Ok(t)
}

/// The alkalis a nitrifying plant feeds.
pub(crate) const ALKALIS: [&str; 5] = [
    "sodium-hydroxide",
    "hydrated-lime",
    "soda-ash",
    "sodium-bicarbonate",
    "magnesium-hydroxide",
];

/// Alkalinity for nitrification: 2 H+ per N nitrified destroy alkalinity, 1 OH- per N
/// denitrified returns some; the alkali makes up what the influent lacks for the residual
/// wanted. When the influent already has enough, nothing is fed and a caution says so.
pub(crate) fn nitrification_alkalinity(c: &Calculators, request: &Request) -> Result<Outcome> {
    let product = chosen(request)?;
    if !ALKALIS.contains(&product) {
        return Err(Error::new(
            ErrorKind::UnknownChemical,
            format!("{product} is not an alkali for nitrification"),
        )
        .because("product-not-for-calculator")
        .with("product", product));
    }
    let nh3 = measured(request, "ammonia-n")?;
    let influent = measured(request, "alkalinity")?;
    let residual = measured(request, "residual-alkalinity")?;
    let nitrate = maybe(request, "nitrate-n-denitrified");
    non_negative("ammonia-N", nh3.value, "mg/L")?;
    non_negative("alkalinity", influent.value, "mg/L")?;
    non_negative("alkalinity setpoint", residual.value, "mg/L")?;
    if let Some(n) = nitrate {
        non_negative("nitrate-N", n.value, "mg/L")?;
    }
    let per_n_nitrified = alkalinity_per_mg_n(&c.catalog, "nitrification", "NH4+", "H+")?;
    let per_n_denitrified =
        alkalinity_per_mg_n(&c.catalog, "denitrification-methanol", "NO3-", "OH-")?;
    let consumed = nh3.value * per_n_nitrified.value();
    let credit = nitrate.map_or(0.0, |n| n.value * per_n_denitrified.value());
    let needed = (consumed - credit + residual.value - influent.value).max(0.0);
    let figures = [Some(nh3), Some(influent), Some(residual), nitrate]
        .into_iter()
        .flatten()
        .fold(None, |acc, m| combine(acc, m.sig_figs));
    let mut traces = vec![NamedTrace::new(
        "alkalinity-per-n-nitrified",
        per_n_nitrified,
    )];
    if nitrate.is_some() {
        traces.push(NamedTrace::new(
            "alkalinity-per-n-denitrified",
            per_n_denitrified,
        ));
    }
    let dose_as = c.catalog.product(product)?.dose_as.clone();
    let mut out = if needed > 0.0 {
        let per = alkali_per_caco3(&c.catalog, product)?;
        let dose = Measured {
            value: needed * per.value(),
            sig_figs: figures,
        };
        traces.push(NamedTrace::new("alkali-per-alkalinity", per));
        let r = c.feed_for(request, dose)?;
        c.feed_outcome(&r, traces, Vec::new())?
    } else {
        let mut out = outcome(dose_as.clone());
        out.results
            .push(headline("dose", 0.0, Q::Concentration, Some(&dose_as)));
        out.traces = traces;
        out.cautions.push(
            Caution::info("alkalinity-already-enough")
                .with("alkalinity", format_sig(influent.value, 3))
                .with("needed", format_sig(consumed - credit + residual.value, 3)),
        );
        out
    };
    out.results.insert(
        0,
        headline("alkalinity_needed", needed, Q::AsCaCO3, Some("CaCO3")),
    );
    out.figures = figures;
    Ok(out)
}

/// The metal a coagulant precipitates phosphorus with, from its dose compound's formula.
fn metal_of(dose_as: &str) -> Result<&'static str> {
    let f = Formula::parse(dose_as)?;
    ["Al", "Fe"]
        .into_iter()
        .find(|m| f.count(m) > 0)
        .ok_or_else(|| {
            Error::new(
                ErrorKind::UnknownChemical,
                format!("{dose_as} carries no aluminium or iron"),
            )
            .because("product-not-for-calculator")
        })
}

/// Phosphorus removal with a metal salt: metal = P (mol) × the molar ratio; the dose as the
/// product's compound from its formula; the alkalinity the dose consumes (or, sodium
/// aluminate, adds) from the coagulant's hydrolysis reaction, as in coagulation; dry solids as
/// the metal phosphate for the phosphorus and the hydroxide for the metal beyond it.
pub(crate) fn phosphorus_removal(c: &Calculators, request: &Request) -> Result<Outcome> {
    let p = measured(request, "phosphorus")?;
    let ratio = measured(request, "metal-ratio")?;
    check_positive("phosphorus", p.value, "mg/L")?;
    check_positive("metal ratio", ratio.value, "mol/mol")?;
    let product = c.catalog.product(chosen(request)?)?;
    let metal = metal_of(&product.dose_as)?;
    let (m_p, s_p) = molar_mass("P")?;
    let (m_metal, s_metal) = molar_mass(metal)?;
    let (m_dose, s_dose) = molar_mass(&product.dose_as)?;
    let metal_per_dose = Formula::parse(&product.dose_as)?.count(metal) as f64;
    let mut t = Trace::new(
        Quantity::of(p.value, "mg/L", "P"),
        Origin::Measured,
        p.sig_figs,
    );
    t.then(
        Quantity::of(1.0, "mmol/L", "P"),
        Quantity::of(m_p, "mg/L", "P"),
        Origin::MolarMass {
            formula: "P".into(),
        },
        s_p,
    )?;
    t.then(
        Quantity::of(ratio.value, "mmol/L", metal),
        Quantity::of(1.0, "mmol/L", "P"),
        Origin::Measured,
        ratio.sig_figs,
    )?;
    let metal_mmol = t.value();
    let mut metal_trace = t.clone();
    metal_trace.then(
        Quantity::of(m_metal, "mg/L", metal),
        Quantity::of(1.0, "mmol/L", metal),
        Origin::MolarMass {
            formula: metal.into(),
        },
        s_metal,
    )?;
    let mut dose_trace = t.clone();
    dose_trace.then(
        Quantity::of(m_dose, "mg/L", &product.dose_as),
        Quantity::of(metal_per_dose, "mmol/L", metal),
        Origin::MolarMass {
            formula: product.dose_as.clone(),
        },
        s_dose,
    )?;
    // Alkalinity as the coagulation calculator reckons it, from the coagulant's own hydrolysis
    // reaction in `data/`: a metal salt consumes its charge's worth (less for a basic PACl);
    // sodium aluminate frees hydroxide and adds alkalinity instead.
    let coagulant = super::coagulant(c, request)?;
    if coagulant.dose_as() != product.dose_as {
        return Err(Error::new(
            ErrorKind::UnknownChemical,
            format!(
                "{} is dosed as {}, its coagulant as {}",
                product.id,
                product.dose_as,
                coagulant.dose_as()
            ),
        )
        .because("product-not-for-calculator"));
    }
    let (per, per_trace) = alkalinity_per_dose(&c.catalog, coagulant)?;
    let mut alkalinity_trace = dose_trace.clone();
    alkalinity_trace.then(
        Quantity::of(per, "mg/L", "CaCO3"),
        Quantity::of(1.0, "mg/L", &product.dose_as),
        Origin::Constant {
            source: format!("derived in trace {}", coagulant.alkalinity_per_dose_label()),
        },
        per_trace.sig_figs(),
    )?;
    let alkalinity = alkalinity_trace.value();
    // Solids: MPO4 for each P, M(OH)3 for the metal beyond it.
    let (m_po4, _) = molar_mass(&format!("{metal}PO4"))?;
    let (m_oh, _) = molar_mass(&format!("{metal}(OH)3"))?;
    let p_mmol = p.value / m_p;
    let excess = (metal_mmol - p_mmol).max(0.0);
    let solids_mg_l = p_mmol.min(metal_mmol) * m_po4 + excess * m_oh;
    let flow_m3_d = value(request, "flow")?;
    // mg/L × m³/d = g/d; ÷ 1000 → kg/d (unit definitions).
    let solids_kg_d = solids_mg_l * flow_m3_d / 1000.0;
    let dose = Measured {
        value: dose_trace.value(),
        sig_figs: combine(p.sig_figs, ratio.sig_figs),
    };
    let r = c.feed_for(request, dose)?;
    let metal_dose = metal_trace.value();
    let adds = coagulant.adds_alkalinity();
    let traces = vec![
        NamedTrace::new("metal-for-phosphorus", metal_trace),
        NamedTrace::new("coagulant-for-phosphorus", dose_trace),
        NamedTrace::new(coagulant.alkalinity_per_dose_label(), per_trace),
        NamedTrace::new(
            if adds {
                "alkalinity-added"
            } else {
                "alkalinity-consumed"
            },
            alkalinity_trace,
        ),
    ];
    let mut cautions = Vec::new();
    let (low, high) = METAL_RATIO_PRACTICE;
    cautions.push(
        Caution::info(if (low..=high).contains(&ratio.value) {
            "metal-ratio-practice"
        } else {
            "metal-ratio-outside-practice"
        })
        .with("ratio", format_sig(ratio.value, 3))
        .with("low", low)
        .with("high", high)
        .with("source", METAL_RATIO_SOURCE),
    );
    let mut out = c.feed_outcome(&r, traces, cautions)?;
    out.results.insert(
        0,
        headline("metal_dose", metal_dose, Q::Concentration, Some(metal)),
    );
    out.results.push(result(
        if adds {
            "alkalinity_added"
        } else {
            "alkalinity_consumed"
        },
        alkalinity,
        Q::AsCaCO3,
        Some("CaCO3"),
    ));
    out.results.push(result(
        "sludge_mass_rate",
        solids_kg_d,
        Q::MassPerDay,
        Some("dry solids"),
    ));
    Ok(out)
}

/// What is disinfected, told by the dimensions given: each object with the inputs that
/// describe it (the depth of water is shared by a well and a tank by dimensions).
const OBJECTS: [(&str, &[&str]); 5] = [
    ("pipe", &["diameter", "length"]),
    ("well", &["casing-diameter", "water-depth"]),
    ("tank", &["tank-volume"]),
    ("tank-cylinder", &["tank-diameter", "water-depth"]),
    (
        "tank-rectangle",
        &["tank-length", "tank-width", "water-depth"],
    ),
];

/// The object the request's dimensions describe: the one whose own dimensions (the depth of
/// water aside) are given. None given is a missing input; two, or a depth of water beside a
/// pipe or a tank volume, is refused: the volume would be one of two guesses.
fn disinfected_object(request: &Request) -> Result<&'static str> {
    let given = |name: &str| request.get(name).is_some();
    let named: Vec<&'static str> = OBJECTS
        .iter()
        .filter(|(_, inputs)| {
            inputs
                .iter()
                .filter(|i| **i != "water-depth")
                .any(|i| given(i))
        })
        .map(|(o, _)| *o)
        .collect();
    let depth_unused = given("water-depth") && named.iter().all(|o| matches!(*o, "pipe" | "tank"));
    match named.as_slice() {
        [] => Err(missing("diameter")),
        [one] if !depth_unused => Ok(*one),
        _ => Err(Error::new(
            ErrorKind::InvalidInput,
            "give the dimensions of one pipe, tank or well: these describe more than one",
        )
        .because("disinfected-object-ambiguous")),
    }
}

/// A dimension the object needs, positive, with its figures.
fn dimension(
    request: &Request,
    name: &'static str,
    what: &'static str,
    unit: &str,
) -> Result<Measured> {
    let m = maybe(request, name).ok_or_else(|| missing(name))?;
    check_positive(what, m.value, unit)?;
    Ok(m)
}

/// The volume of water a main, a tank or a well holds, in L with its trace: π (d/2)² × length
/// for a pipe, a well's water column or a round tank, length × width × depth for a rectangular
/// one (unit factors exact).
fn disinfected_volume(request: &Request) -> Result<Trace> {
    // A cylinder: its diameter in m (a pipe's or casing's is typed in mm: ÷ 1000, exact)
    // and its length or depth of water in m.
    let cylinder = |d: Measured, d_to_m: f64, l: Measured, what: &str| -> Result<Trace> {
        let r_m = d.value * d_to_m / 2.0;
        let mut t = Trace::new(
            Quantity::of(l.value, "m", what),
            Origin::Measured,
            l.sig_figs,
        );
        // Cross-section π r².
        t.then(
            Quantity::of(std::f64::consts::PI * r_m * r_m, "m³", what),
            Quantity::of(1.0, "m", what),
            Origin::Measured,
            d.sig_figs,
        )?;
        Ok(t)
    };
    let litres = |mut t: Trace, what: &str| -> Result<Trace> {
        t.then(
            Quantity::of(1000.0, "L", "water"),
            Quantity::of(1.0, "m³", what),
            Origin::UnitDefinition,
            None,
        )?;
        Ok(t)
    };
    match disinfected_object(request)? {
        "tank" => {
            let v = dimension(request, "tank-volume", "tank volume", "L")?;
            Ok(Trace::new(
                Quantity::of(v.value, "L", "water"),
                Origin::Measured,
                v.sig_figs,
            ))
        }
        "tank-cylinder" => {
            let d = dimension(request, "tank-diameter", "pipe diameter", "m")?;
            let h = dimension(request, "water-depth", "pipe length", "m")?;
            litres(cylinder(d, 1.0, h, "tank")?, "tank")
        }
        "tank-rectangle" => {
            let l = dimension(request, "tank-length", "pipe length", "m")?;
            let w = dimension(request, "tank-width", "pipe length", "m")?;
            let h = dimension(request, "water-depth", "pipe length", "m")?;
            let mut t = Trace::new(
                Quantity::of(h.value, "m", "tank"),
                Origin::Measured,
                h.sig_figs,
            );
            t.then(
                Quantity::of(l.value * w.value, "m³", "tank"),
                Quantity::of(1.0, "m", "tank"),
                Origin::Measured,
                combine(l.sig_figs, w.sig_figs),
            )?;
            litres(t, "tank")
        }
        "well" => {
            let d = dimension(request, "casing-diameter", "pipe diameter", "mm")?;
            let h = dimension(request, "water-depth", "pipe length", "m")?;
            litres(cylinder(d, 1.0e-3, h, "well")?, "well")
        }
        _ => {
            let d = dimension(request, "diameter", "pipe diameter", "mm")?;
            let l = dimension(request, "length", "pipe length", "m")?;
            litres(cylinder(d, 1.0e-3, l, "pipe")?, "pipe")
        }
    }
}

/// Disinfecting a new main, a tank or a well: the water it holds, the chlorine for the target
/// concentration (the method's common one when none is given), and the hypochlorite that
/// carries it (mass, and volume for a solution). The tablet method places calcium
/// hypochlorite tablets: a solution is refused for it.
pub(crate) fn main_disinfection(c: &Calculators, request: &Request) -> Result<Outcome> {
    let method = request.mode.unwrap_or(DISINFECTION_METHODS[0].0);
    let practice = DISINFECTION_METHODS
        .iter()
        .find(|(m, _)| *m == method)
        .map_or(DISINFECTION_METHODS[0].1, |(_, t)| *t);
    let typed = maybe(request, "target-chlorine");
    let target = typed.unwrap_or(Measured::exact(practice));
    check_positive("chlorine dose", target.value, "mg/L")?;
    let (id, strength) = c.strength(request)?;
    let p = c.catalog.product(&id)?;
    if method == "tablet" && p.form == crate::engine::dosing::catalog::Form::Solution {
        return Err(Error::new(
            ErrorKind::InvalidInput,
            format!("the tablet method places calcium hypochlorite tablets, not {id}"),
        )
        .because("product-not-for-calculator")
        .with("product", id.clone()));
    }
    let mut t = disinfected_volume(request)?;
    let litres = t.value();
    t.then(
        Quantity::of(target.value, "mg", "Cl2"),
        Quantity::of(1.0, "L", "water"),
        match typed {
            Some(_) => Origin::Measured,
            None => Origin::Constant {
                source: format!("{method}: {DISINFECTION_SOURCE}"),
            },
        },
        target.sig_figs,
    )?;
    t.then(
        Quantity::of(1.0, "kg", "Cl2"),
        Quantity::of(1.0e6, "mg", "Cl2"),
        Origin::UnitDefinition,
        None,
    )?;
    let chlorine_kg = t.value();
    // The product per kg of chlorine, through the catalog's strength chain (its steps read per
    // day; a ratio, the same for a batch).
    let one = Trace::new(
        Quantity::of(1.0, "kg/d", &p.dose_as),
        Origin::Measured,
        None,
    );
    let per = active_to_product(&c.catalog, p, &strength, one)?;
    let mut out = outcome(p.dose_as.clone());
    out.results
        .push(headline("water_volume", litres, Q::Volume, Some("water")));
    out.results
        .push(headline("chlorine_mass", chlorine_kg, Q::Mass, Some("Cl2")));
    out.results.push(headline(
        "product_mass",
        chlorine_kg * per.product_kg_per_day,
        Q::Mass,
        Some("product"),
    ));
    if let Some(l) = per.product_l_per_day {
        out.results.push(headline(
            "product_volume",
            chlorine_kg * l,
            Q::Volume,
            Some("product"),
        ));
    }
    out.traces = vec![
        NamedTrace::new("chlorine-for-volume", t),
        NamedTrace::new("product-per-chlorine", per.trace),
    ];
    // The volume travels with the caution (and the follow-up) so that a front end can open
    // the dechlorination calculator for it.
    out.cautions.push(
        Caution::warning("dechlorinate-before-discharge")
            .with("volume", format_sig(litres, 3))
            .with("unit", "L")
            .with("target", format_sig(target.value, 3)),
    );
    out.cautions.push(
        Caution::info(if typed.is_some() {
            "disinfection-target-practice"
        } else {
            "disinfection-target-from-practice"
        })
        .with("method", format!("mode-{method}"))
        .with("target", practice)
        .with("source", DISINFECTION_SOURCE),
    );
    out.cautions.extend(product_cautions(p));
    // Dechlorination before discharge: its residual is the chlorine the water was left at.
    out.follow_ups.push(FollowUp {
        calculator: "dechlorination",
        product: None,
        values: vec![("residual-in", target.value)],
    });
    Ok(out)
}

/// Polymer: the active polymer per day (flow × dose, or dry solids × dose per tonne), the neat
/// product it is in, and the made-down solution the pump feeds.
pub(crate) fn polymer(_c: &Calculators, request: &Request) -> Result<Outcome> {
    let active = measured(request, "active-percent")?;
    let sg = measured(request, "specific-gravity")?;
    let solution = measured(request, "solution-percent")?;
    check_range("strength", active.value, 0.0, 100.0, "%")?;
    check_positive("strength", active.value, "%")?;
    check_positive("specific gravity", sg.value, "")?;
    check_positive("solution strength", solution.value, "%")?;
    if solution.value > active.value {
        return Err(Error::new(
            ErrorKind::OutOfRange,
            format!(
                "a {} % solution cannot be made down from a {} % product",
                solution.value, active.value
            ),
        )
        .because("solution-stronger-than-product"));
    }
    let mut t = match request.mode {
        Some("dewatering") => {
            let solids =
                maybe(request, "dry-solids-rate").ok_or_else(|| missing("dry-solids-rate"))?;
            let dose = maybe(request, "solids-dose").ok_or_else(|| missing("solids-dose"))?;
            check_positive("dry solids rate", solids.value, "kg/d")?;
            check_positive("dose", dose.value, "kg/t")?;
            let mut t = Trace::new(
                Quantity::of(solids.value, "kg/d", "dry solids"),
                Origin::Measured,
                solids.sig_figs,
            );
            t.then(
                Quantity::of(1.0, "t/d", "dry solids"),
                Quantity::of(1000.0, "kg/d", "dry solids"),
                Origin::UnitDefinition,
                None,
            )?;
            t.then(
                Quantity::of(dose.value, "kg/d", "active polymer"),
                Quantity::of(1.0, "t/d", "dry solids"),
                Origin::Measured,
                dose.sig_figs,
            )?;
            t
        }
        _ => {
            let flow = maybe(request, "flow").ok_or_else(|| missing("flow"))?;
            let dose = maybe(request, "dose").ok_or_else(|| missing("dose"))?;
            check_positive("flow", flow.value, "m³/d")?;
            check_positive("dose", dose.value, "mg/L")?;
            let mut t = Trace::new(
                Quantity::of(flow.value, "m³/d", "water"),
                Origin::Measured,
                flow.sig_figs,
            );
            t.then(
                Quantity::of(dose.value, "g/d", "active polymer"),
                Quantity::of(1.0, "m³/d", "water"),
                Origin::Measured,
                dose.sig_figs,
            )?;
            t.then(
                Quantity::of(1.0, "kg/d", "active polymer"),
                Quantity::of(1000.0, "g/d", "active polymer"),
                Origin::UnitDefinition,
                None,
            )?;
            t
        }
    };
    let active_kg_d = t.value();
    let mut neat = t.clone();
    neat.then(
        Quantity::of(100.0, "kg/d", "neat product"),
        Quantity::of(active.value, "kg/d", "active polymer"),
        Origin::Measured,
        active.sig_figs,
    )?;
    neat.then(
        Quantity::of(1.0, "L/d", "neat product"),
        Quantity::of(sg.value, "kg/d", "neat product"),
        Origin::Measured,
        sg.sig_figs,
    )?;
    neat.then(
        Quantity::of(1.0, "L/h", "neat product"),
        Quantity::of(24.0, "L/d", "neat product"),
        Origin::UnitDefinition,
        None,
    )?;
    t.then(
        Quantity::of(100.0, "kg/d", "solution"),
        Quantity::of(solution.value, "kg/d", "active polymer"),
        Origin::Measured,
        solution.sig_figs,
    )?;
    // A made-down solution of a few tenths of a percent weighs as water, 1 kg/L (common
    // practice: its density differs from water's by less than the percent's own precision).
    t.then(
        Quantity::of(1.0, "L/d", "solution"),
        Quantity::of(1.0, "kg/d", "solution"),
        Origin::Constant {
            source: "dilute polymer solution taken as 1 kg/L (common practice)".into(),
        },
        None,
    )?;
    t.then(
        Quantity::of(1.0, "L/h", "solution"),
        Quantity::of(24.0, "L/d", "solution"),
        Origin::UnitDefinition,
        None,
    )?;
    let solution_l_h = t.value();
    let mut out = outcome("active polymer".into());
    out.results.push(headline(
        "neat_product_rate",
        neat.value(),
        Q::VolumePerHour,
        Some("product"),
    ));
    out.results.push(headline(
        "solution_rate",
        solution_l_h,
        Q::VolumePerHour,
        Some("solution"),
    ));
    if let Some(capacity) = request.get("pump-capacity") {
        check_positive("pump capacity", capacity, "L/h")?;
        let percent = solution_l_h / capacity * 100.0;
        out.results
            .push(headline("pump_setting", percent, Q::Percent, None));
        out.setting = Some(Setting {
            device: Device::MeteringPump,
            percent,
        });
    }
    out.results.push(result(
        "feed_mass_rate",
        active_kg_d,
        Q::MassPerDay,
        Some("active polymer"),
    ));
    out.traces = vec![
        NamedTrace::new("polymer-solution", t),
        NamedTrace::new("polymer-neat", neat),
    ];
    Ok(out)
}

/// The same compound but for water of hydration (FeCl3·6H2O and FeCl3): every element but H
/// and O in the same count, and the H and O that differ make whole H2O. One mole of either
/// carries the same mole of the salt.
fn same_but_water(a: &Formula, b: &Formula) -> bool {
    let others = |f: &Formula| -> Vec<(&'static str, u64)> {
        f.atoms().filter(|(e, _)| *e != "H" && *e != "O").collect()
    };
    let (h, o) = (
        a.count("H") as i128 - b.count("H") as i128,
        a.count("O") as i128 - b.count("O") as i128,
    );
    others(a) == others(b) && h == 2 * o && a.charge() == b.charge()
}

/// A jar test's dose: the stock's mass per volume × the millilitres dosed ÷ the jar's water,
/// as the stock's compound (its formula when given, else the chosen product's dose compound)
/// and as the product delivered. The dose is per litre of water in the jar, as a plant dose
/// is per litre of water treated. A stock compound other than the product's dose compound is
/// taken mole for mole only when the two differ by water of hydration; any other compound is
/// refused (the product would be the wrong one). The outcome sends the dose on to the plant
/// calculator that feeds it (`JAR_SENDS_TO` in the table).
pub(crate) fn jar_test(c: &Calculators, request: &Request) -> Result<Outcome> {
    let stock = measured(request, "stock-concentration")?;
    let ml = measured(request, "ml-dosed")?;
    let jar = measured(request, "jar-volume-ml")?;
    check_positive("stock concentration", stock.value, "g/L")?;
    non_negative("dose", ml.value, "mL")?;
    check_positive("jar volume", jar.value, "mL")?;
    let (id, strength) = c.strength(request)?;
    let p = c.catalog.product(&id)?;
    let dose_as = Formula::parse(&p.dose_as)?;
    let compound = match request.texts.get("stock-compound") {
        Some(text) => Formula::parse(text)?,
        None => dose_as.clone(),
    };
    if !same_but_water(&compound, &dose_as) {
        return Err(Error::new(
            ErrorKind::InvalidInput,
            format!(
                "a stock of {compound} is not {id} (dosed as {}): choose the product the stock is made of",
                p.dose_as
            ),
        )
        .because("stock-compound-not-product")
        .with("compound", compound.to_string())
        .with("product", id.clone()));
    }
    // The product's own spelling when it is the same compound, else the formula as typed.
    let what = if compound.same_composition(&dose_as) {
        p.dose_as.clone()
    } else {
        compound.to_string()
    };
    let mut t = Trace::new(
        Quantity::of(ml.value, "mL", "stock"),
        Origin::Measured,
        ml.sig_figs,
    );
    // g/L is mg/mL (unit definitions).
    t.then(
        Quantity::of(stock.value, "mg", &what),
        Quantity::of(1.0, "mL", "stock"),
        Origin::Measured,
        stock.sig_figs,
    )?;
    t.then(
        Quantity::of(1000.0, "mg/L", &what),
        Quantity::of(jar.value, "mg", &what),
        Origin::Measured,
        jar.sig_figs,
    )?;
    let dose = t.value();
    // As the product's dose compound: mg compound → mmol (one per mmol of the salt) → mg.
    let mut as_product_compound = t.clone();
    if what != p.dose_as {
        as_product_compound.then(
            Quantity::of(1.0, "mmol/L", &what),
            Quantity::of(compound.molar_mass(), "mg/L", &what),
            Origin::MolarMass {
                formula: what.clone(),
            },
            None,
        )?;
        as_product_compound.then(
            Quantity::of(dose_as.molar_mass(), "mg/L", &p.dose_as),
            Quantity::of(1.0, "mmol/L", &what),
            Origin::MolarMass {
                formula: p.dose_as.clone(),
            },
            None,
        )?;
    }
    let dose_as_product_compound = as_product_compound.value();
    let one = Trace::new(
        Quantity::of(1.0, "kg/d", &p.dose_as),
        Origin::Measured,
        None,
    );
    let per = active_to_product(&c.catalog, p, &strength, one)?;
    let mut out = outcome(what.clone());
    out.results
        .push(headline("jar_dose", dose, Q::Concentration, Some(&what)));
    out.results.push(headline(
        "jar_dose_product",
        dose_as_product_compound * per.product_kg_per_day,
        Q::Concentration,
        Some("product"),
    ));
    out.traces = vec![NamedTrace::new("jar-dose", t)];
    if what != p.dose_as {
        out.traces.push(NamedTrace::new(
            "jar-dose-as-product-compound",
            as_product_compound,
        ));
    }
    out.traces
        .push(NamedTrace::new("product-per-compound", per.trace));
    // The dose, on the product's dose compound, to the plant calculator that feeds it.
    if let Some((_, calculator, input)) = super::super::table::JAR_SENDS_TO
        .iter()
        .find(|(product, _, _)| *product == id)
    {
        out.follow_ups.push(FollowUp {
            calculator,
            product: Some(id.clone()),
            values: vec![(*input, dose_as_product_compound)],
        });
    }
    Ok(out)
}

/// The water-engine chemical and the mg/L of it per mg/L of the product's dose, when the
/// request gives the water (pH, alkalinity and temperature, all three) and the product's
/// compound is in the water catalog. The dose is on the product's `dose_as` basis; it becomes
/// mg/L of the compound through the one element other than H and O the two share (PO4 → H3PO4
/// through P, F → H2SiF6 through F). `None` (the caller raises `water-effect-not-available`)
/// for a compound of no fixed formula (a zinc or blended phosphate) or a water not given.
pub(crate) fn water_modelled(
    c: &Calculators,
    request: &Request,
) -> Result<Option<(&'static crate::engine::water::Chemical, f64)>> {
    if ["ph", "alkalinity", "temperature"]
        .iter()
        .any(|name| request.get(name).is_none())
    {
        return Ok(None);
    }
    let product = c.catalog.product(chosen(request)?)?;
    let Ok(chemical) = crate::engine::dosing::waterside::water_chemical(&product.compound) else {
        return Ok(None);
    };
    let dose_as = Formula::parse(&product.dose_as)?;
    if dose_as.same_composition(&chemical.formula) {
        return Ok(Some((chemical, 1.0)));
    }
    let shared: Vec<&str> = dose_as
        .atoms()
        .map(|(e, _)| e)
        .filter(|e| !matches!(*e, "H" | "O") && chemical.formula.count(e) > 0)
        .collect();
    let [element] = shared[..] else {
        return Ok(None);
    };
    let per = (dose_as.count(element) as f64 / dose_as.molar_mass())
        * (chemical.molar_mass / chemical.formula.count(element) as f64);
    Ok(Some((chemical, per)))
}

/// Pushes `ph_after` and `alkalinity_after` (with a `ph-outside-range` warning) for a dose of
/// `dose_mg_l` on the product's `dose_as` basis, when [`water_modelled`] finds the water and the
/// compound. Skipped in the headline-only runs of the ranges: it is an equilibrium solve of its
/// own. A coagulant's metal precipitates as amorphous hydroxide at equilibrium.
pub(crate) fn push_water_after(
    c: &Calculators,
    request: &Request,
    dose_mg_l: f64,
    out: &mut Outcome,
) -> Result<()> {
    use crate::engine::dosing::waterside::{PhRange, dose_effect};
    use crate::engine::water::{Precipitation, WaterInput, WaterState};
    let Some((chemical, per)) = water_modelled(c, request)? else {
        return Ok(());
    };
    if request.headlines_only {
        return Ok(());
    }
    let state = WaterState::new(&WaterInput::new(
        value(request, "ph")?,
        value(request, "temperature")?,
        value(request, "alkalinity")?,
    ))?;
    let precipitation = if chemical.is_coagulant() {
        Precipitation::Hydroxide
    } else {
        Precipitation::None
    };
    let (_, effect) = dose_effect(&state, chemical, dose_mg_l * per, precipitation)?;
    out.results.extend(water_after(
        effect.ph_after,
        effect.alkalinity_after_mg_l_as_caco3,
    ));
    out.cautions
        .extend(PhRange::from_limits(&request.limits).check(effect.ph_after));
    Ok(())
}
