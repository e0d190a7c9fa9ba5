//! Coagulation, stoichiometric part: alkalinity consumed, supplemental alkali for a residual
//! alkalinity setpoint, and dry solids (sludge) produced.
//!
//! Design: alkalinity is counted as equivalents of HCO3⁻ consumed in the balanced hydrolysis
//! reaction and reported as CaCO3 through its equivalent weight (molar mass ÷ |charge of
//! CO3²⁻|), so the "0.5 mg/L per mg/L alum" rule is derived. PACl's reaction is built for the
//! basicity entered (Al_n(OH)_m Cl_(3n−m)). With the operator's water,
//! [`coagulation_in_water`] adds the coagulated pH, alkalinity and Langelier index from the
//! water engine, and the same after the supplemental alkali: the stoichiometric numbers say how
//! much alkalinity goes, only the equilibrium says where the pH lands.

use super::NamedTrace;
use super::catalog::{Catalog, molar_mass};
use super::caution::{Caution, finish};
use super::units::{Flow, pounds_factor};
use super::waterside::{PhRange, WaterEffect, dose_effect, water_chemical};
use crate::engine::formula::Formula;
use crate::engine::reaction::Reaction;
use crate::engine::sigfig::Measured;
use crate::engine::trace::{Origin, Quantity, Trace};
use crate::engine::water::{Chemical, Precipitation, WaterState};
use crate::engine::{Error, ErrorKind, Result, check_positive, check_range};
use serde::Serialize;

/// The coagulant and the substance its dose is expressed as.
#[derive(Clone, Copy, Debug, PartialEq, Serialize)]
#[serde(tag = "type", rename_all = "kebab-case")]
pub enum Coagulant {
    /// Dose as Al2(SO4)3·14H2O.
    Alum14,
    /// Dose as Al2(SO4)3·18H2O.
    Alum18,
    /// Alum, dose expressed as Al2O3.
    AlumAsAl2o3,
    /// Dose as FeCl3.
    FerricChloride,
    /// Dose as Fe2(SO4)3.
    FerricSulfate,
    /// Polyaluminium chloride, dose as Al, with basicity in %.
    Pacl { basicity_percent: f64 },
    /// Sodium aluminate, dose as Al: an alkaline coagulant that adds alkalinity.
    SodiumAluminate,
}

impl Coagulant {
    pub fn parse(text: &str, basicity_percent: Option<f64>) -> Result<Coagulant> {
        Ok(match text.trim() {
            "alum" | "alum-14" | "alum14" => Coagulant::Alum14,
            "alum-18" | "alum18" => Coagulant::Alum18,
            "alum-as-al2o3" => Coagulant::AlumAsAl2o3,
            "ferric-chloride" | "FeCl3" => Coagulant::FerricChloride,
            "ferric-sulfate" | "Fe2(SO4)3" => Coagulant::FerricSulfate,
            "sodium-aluminate" | "NaAlO2" => Coagulant::SodiumAluminate,
            "pacl" => Coagulant::Pacl {
                basicity_percent: basicity_percent.ok_or_else(|| {
                    Error::new(ErrorKind::InvalidInput, "PACl needs its basicity in %")
                        .because("needs-basicity")
                        .with("quantity", "basicity")
                })?,
            },
            other => {
                return Err(Error::new(
                    ErrorKind::UnknownChemical,
                    format!(
                        "unknown coagulant '{other}': use alum, alum-18, alum-as-al2o3, ferric-chloride, ferric-sulfate, pacl or sodium-aluminate"
                    ),
                )
                .with("coagulant", other));
            }
        })
    }

    /// The formula the dose is expressed as.
    pub fn dose_as(self) -> &'static str {
        match self {
            Coagulant::Alum14 => "Al2(SO4)3·14H2O",
            Coagulant::Alum18 => "Al2(SO4)3·18H2O",
            Coagulant::AlumAsAl2o3 => "Al2O3",
            Coagulant::FerricChloride => "FeCl3",
            Coagulant::FerricSulfate => "Fe2(SO4)3",
            Coagulant::Pacl { .. } | Coagulant::SodiumAluminate => "Al",
        }
    }

    /// Whether its hydrolysis adds alkalinity (an aluminate frees hydroxide) rather than
    /// consuming it (a metal salt's acidity).
    pub fn adds_alkalinity(self) -> bool {
        matches!(self, Coagulant::SodiumAluminate)
    }

    /// The heading of its alkalinity-per-dose trace: an aluminate's is alkalinity added.
    pub fn alkalinity_per_dose_label(self) -> &'static str {
        if self.adds_alkalinity() {
            "alkalinity-added-per-dose"
        } else {
            "alkalinity-per-dose"
        }
    }

    /// The metal hydroxide it precipitates.
    fn hydroxide(self) -> &'static str {
        match self {
            Coagulant::FerricChloride | Coagulant::FerricSulfate => "Fe(OH)3",
            _ => "Al(OH)3",
        }
    }
}

/// The hydrolysis reaction, and the formula in it that the dose is converted to first.
fn hydrolysis(catalog: &Catalog, c: Coagulant) -> Result<(Reaction, String)> {
    Ok(match c {
        Coagulant::Alum14 | Coagulant::AlumAsAl2o3 => (
            catalog.reaction("alum-14-alkalinity")?,
            "Al2(SO4)3·14H2O".into(),
        ),
        Coagulant::Alum18 => (
            catalog.reaction("alum-18-bicarbonate")?,
            "Al2(SO4)3·18H2O".into(),
        ),
        Coagulant::FerricChloride => (
            catalog.reaction("ferric-chloride-bicarbonate")?,
            "FeCl3".into(),
        ),
        Coagulant::FerricSulfate => (
            catalog.reaction("ferric-sulfate-alkalinity")?,
            "Fe2(SO4)3".into(),
        ),
        Coagulant::SodiumAluminate => (
            catalog.reaction("sodium-aluminate-hydrolysis")?,
            "NaAlO2".into(),
        ),
        Coagulant::Pacl { basicity_percent } => {
            let formula = pacl_formula(basicity_percent)?;
            (
                Reaction::balance(&format!("{formula} + HCO3- -> Al(OH)3 + Cl- + CO2"))?,
                formula,
            )
        }
    })
}

/// PACl of a basicity as one formula, Al100(OH)m Cl(300−m): 100 Al atoms resolve basicity to
/// 1/3 %, finer than any certificate states it.
fn pacl_formula(basicity_percent: f64) -> Result<String> {
    check_range("basicity", basicity_percent, 0.0, 90.0, "%")?;
    let m = (3.0 * basicity_percent).round() as u32;
    let oh = if m > 0 {
        format!("(OH){m}")
    } else {
        String::new()
    };
    Ok(format!("Al100{oh}Cl{}", 300 - m))
}

/// mg/L as CaCO3 per mg/L of HCO3⁻-equivalents: steps `mmol/L HCO3-` → `meq/L` → `mg/L CaCO3`.
fn hco3_to_caco3(t: &mut Trace) -> Result<()> {
    let hco3 = Formula::parse("HCO3-")?;
    let co3 = Formula::parse("CO3^2-")?;
    let (m_caco3, s) = molar_mass("CaCO3")?;
    t.then(
        Quantity::of(hco3.charge().unsigned_abs() as f64, "meq/L", "alkalinity"),
        Quantity::of(1.0, "mmol/L", "HCO3-"),
        Origin::MolarMass {
            formula: "HCO3-".into(),
        },
        None,
    )?;
    t.then(
        Quantity::of(
            m_caco3 / co3.charge().unsigned_abs() as f64,
            "mg/L",
            "CaCO3",
        ),
        Quantity::of(1.0, "meq/L", "alkalinity"),
        Origin::MolarMass {
            formula: "CaCO3".into(),
        },
        s,
    )?;
    Ok(())
}

/// Steps from `mg/L dose_as` to `mmol/L <reaction formula>`.
fn dose_to_reactant_mmol(c: Coagulant, reactant: &str, t: &mut Trace) -> Result<()> {
    let dose_as = c.dose_as();
    let (m, s) = molar_mass(dose_as)?;
    let f = Formula::parse(dose_as)?;
    if matches!(
        c,
        Coagulant::AlumAsAl2o3 | Coagulant::Pacl { .. } | Coagulant::SodiumAluminate
    ) {
        // Relate through aluminium atoms: Al2O3 → 2 Al → alum or the PACl formula unit.
        t.then(
            Quantity::of(f.count("Al") as f64, "mmol/L", "Al"),
            Quantity::of(m, "mg/L", dose_as),
            Origin::MolarMass {
                formula: dose_as.into(),
            },
            s,
        )?;
        let r = Formula::parse(reactant)?;
        t.then(
            Quantity::of(1.0, "mmol/L", reactant),
            Quantity::of(r.count("Al") as f64, "mmol/L", "Al"),
            Origin::MolarMass {
                formula: reactant.into(),
            },
            None,
        )?;
    } else {
        t.then(
            Quantity::of(1.0, "mmol/L", dose_as),
            Quantity::of(m, "mg/L", dose_as),
            Origin::MolarMass {
                formula: dose_as.into(),
            },
            s,
        )?;
    }
    Ok(())
}

/// mg/L alkalinity (as CaCO3) consumed per mg/L of coagulant dose, with the trace; for a
/// coagulant that [adds alkalinity](Coagulant::adds_alkalinity), the alkalinity it adds (the
/// hydroxide its hydrolysis frees, turned to bicarbonate as caustic's is).
pub fn alkalinity_per_dose(catalog: &Catalog, c: Coagulant) -> Result<(f64, Trace)> {
    let (r, reactant) = hydrolysis(catalog, c)?;
    let mut t = Trace::new(
        Quantity::of(1.0, "mg/L", c.dose_as()),
        Origin::Measured,
        None,
    );
    dose_to_reactant_mmol(c, &reactant, &mut t)?;
    if c.adds_alkalinity() {
        t.then_mole_ratio(&r, &reactant, "NaOH", "mmol/L")?;
        t.then_mole_ratio(
            &catalog.reaction("caustic-alkalinity")?,
            "NaOH",
            "HCO3-",
            "mmol/L",
        )?;
    } else {
        t.then_mole_ratio(&r, &reactant, "HCO3-", "mmol/L")?;
    }
    hco3_to_caco3(&mut t)?;
    Ok((t.value(), t))
}

/// How the metal hydroxide in the sludge is counted: the bare hydroxide of the hydrolysis
/// reaction, or the hydrated floc of a `sludge-floc-*-hydrated` reaction in `data/`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Floc {
    Bare,
    Hydrated,
}

/// Where each published sludge coefficient comes from, beside the basis it implies.
pub const SLUDGE_SOURCE_ALUMINIUM: &str = "0.44 × alum dose, hydrated floc Al(OH)3·3H2O: Cornwell, AWWA Water Treatment Plant Waste Management (1987) [M]; Lang et al. (1985) metric form";
pub const SLUDGE_SOURCE_IRON: &str = "1.9 × Fe, bare Fe(OH)3: Cornwell, AWWA Water Treatment Plant Waste Management (1987) [M]; Lang et al. (1985) metric form";
pub const SLUDGE_SOURCE_IRON_ALTERNATIVE: &str = "2.9 × Fe, hydrated floc Fe(OH)3·3H2O: the alternative some editions print (Cornwell / AWWA 1987) [M]";

impl Coagulant {
    fn is_iron(self) -> bool {
        matches!(self, Coagulant::FerricChloride | Coagulant::FerricSulfate)
    }

    /// The basis of the published sludge coefficient for this coagulant and its source: alum
    /// (and PACl, aluminium alike) as the hydrated floc (0.44 × alum dose), iron as bare
    /// Fe(OH)3 (1.9 × Fe).
    pub fn published_floc(self) -> (Floc, &'static str) {
        if self.is_iron() {
            (Floc::Bare, SLUDGE_SOURCE_IRON)
        } else {
            (Floc::Hydrated, SLUDGE_SOURCE_ALUMINIUM)
        }
    }

    /// The published alternative basis, where one is printed (iron: 2.9 × Fe, hydrated).
    pub fn alternative_floc(self) -> Option<(Floc, &'static str)> {
        self.is_iron()
            .then_some((Floc::Hydrated, SLUDGE_SOURCE_IRON_ALTERNATIVE))
    }
}

/// The formula the sludge solid is counted as: the hydrolysis hydroxide, or the hydrated floc
/// read from the product of its `sludge-floc-*-hydrated` reaction (with that reaction).
fn floc_formula(catalog: &Catalog, c: Coagulant, floc: Floc) -> Result<(String, Option<Reaction>)> {
    let hyd = c.hydroxide();
    match floc {
        Floc::Bare => Ok((hyd.to_string(), None)),
        Floc::Hydrated => {
            let id = if c.is_iron() {
                "sludge-floc-iron-hydrated"
            } else {
                "sludge-floc-aluminium-hydrated"
            };
            let r = catalog.reaction(id)?;
            let solid = r
                .species()
                .iter()
                .find(|s| s.side == crate::engine::reaction::Side::Product)
                .map(|s| s.written.clone())
                .ok_or_else(|| {
                    Error::new(ErrorKind::InvalidInput, format!("{id} has no product"))
                })?;
            Ok((solid, Some(r)))
        }
    }
}

/// Dry solids per mg/L of coagulant dose (mg/L of hydroxide sludge) on the published basis
/// ([`Coagulant::published_floc`]), with the trace.
pub fn solids_per_dose(catalog: &Catalog, c: Coagulant) -> Result<(f64, Trace)> {
    solids_per_dose_as(catalog, c, c.published_floc().0)
}

/// mg of floc per mg of the coagulant's metal (Fe(OH)3/Fe = 1.91, Fe(OH)3·3H2O/Fe = 2.88,
/// Al(OH)3·3H2O/Al = 4.89), from molar masses: the form the published iron coefficient is
/// printed in.
pub fn floc_per_metal(catalog: &Catalog, c: Coagulant, floc: Floc) -> Result<f64> {
    let (solid, _) = floc_formula(catalog, c, floc)?;
    let metal = if c.is_iron() { "Fe" } else { "Al" };
    let f = Formula::parse(&solid)?;
    let (m_metal, _) = molar_mass(metal)?;
    Ok(f.molar_mass() / (f.count(metal) as f64 * m_metal))
}

/// Dry solids per mg/L of coagulant dose, the metal counted as `floc`, with the trace.
pub fn solids_per_dose_as(catalog: &Catalog, c: Coagulant, floc: Floc) -> Result<(f64, Trace)> {
    let (r, reactant) = hydrolysis(catalog, c)?;
    let mut t = Trace::new(
        Quantity::of(1.0, "mg/L", c.dose_as()),
        Origin::Measured,
        None,
    );
    dose_to_reactant_mmol(c, &reactant, &mut t)?;
    let hyd = c.hydroxide();
    t.then_mole_ratio(&r, &reactant, hyd, "mmol/L")?;
    let (solid, hydration) = floc_formula(catalog, c, floc)?;
    if let Some(h) = &hydration {
        t.then_mole_ratio(h, hyd, &solid, "mmol/L")?;
    }
    let (m, s) = molar_mass(&solid)?;
    t.then(
        Quantity::of(m, "mg/L", &solid),
        Quantity::of(1.0, "mmol/L", &solid),
        Origin::MolarMass {
            formula: solid.clone(),
        },
        s,
    )?;
    Ok((t.value(), t))
}

/// Alkali used to restore alkalinity.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Alkali {
    HydratedLime,
    Quicklime,
    Caustic,
    SodaAsh,
}

impl Alkali {
    pub fn parse(text: &str) -> Result<Alkali> {
        Ok(match text.trim() {
            "lime" | "hydrated-lime" | "Ca(OH)2" => Alkali::HydratedLime,
            "quicklime" | "CaO" => Alkali::Quicklime,
            "caustic" | "sodium-hydroxide" | "NaOH" => Alkali::Caustic,
            "soda-ash" | "Na2CO3" => Alkali::SodaAsh,
            other => {
                return Err(Error::new(
                    ErrorKind::UnknownChemical,
                    format!("unknown alkali '{other}': use lime, quicklime, caustic or soda-ash"),
                )
                .with("alkali", other));
            }
        })
    }

    pub fn formula(self) -> &'static str {
        match self {
            Alkali::HydratedLime => "Ca(OH)2",
            Alkali::Quicklime => "CaO",
            Alkali::Caustic => "NaOH",
            Alkali::SodaAsh => "Na2CO3",
        }
    }
}

/// mg/L alkalinity as CaCO3 added per mg/L of pure alkali, from its reaction with CO2.
pub fn alkalinity_per_alkali(catalog: &Catalog, a: Alkali) -> Result<(f64, Trace)> {
    let f = a.formula();
    let mut t = Trace::new(Quantity::of(1.0, "mg/L", f), Origin::Measured, None);
    let (m, s) = molar_mass(f)?;
    t.then(
        Quantity::of(1.0, "mmol/L", f),
        Quantity::of(m, "mg/L", f),
        Origin::MolarMass { formula: f.into() },
        s,
    )?;
    let through = |id: &str, from: &str, to: &str, t: &mut Trace| -> Result<()> {
        t.then_mole_ratio(&catalog.reaction(id)?, from, to, "mmol/L")?;
        Ok(())
    };
    match a {
        Alkali::HydratedLime => through("lime-alkalinity", "Ca(OH)2", "HCO3-", &mut t)?,
        Alkali::Quicklime => {
            through("quicklime-slaking", "CaO", "Ca(OH)2", &mut t)?;
            through("lime-alkalinity", "Ca(OH)2", "HCO3-", &mut t)?;
        }
        Alkali::Caustic => through("caustic-alkalinity", "NaOH", "HCO3-", &mut t)?,
        Alkali::SodaAsh => through("soda-ash-alkalinity", "Na2CO3", "HCO3-", &mut t)?,
    }
    hco3_to_caco3(&mut t)?;
    Ok((t.value(), t))
}

/// Inputs for [`coagulation`].
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CoagulationInput {
    pub coagulant: Coagulant,
    pub dose: Measured,
    /// Raw-water alkalinity, mg/L as CaCO3.
    pub raw_alkalinity: Measured,
    /// Alkalinity to keep after coagulation, mg/L as CaCO3.
    pub residual_alkalinity_setpoint: f64,
    pub alkali: Alkali,
    /// Purity of the alkali as delivered, %.
    pub alkali_purity_percent: f64,
}

/// Result of [`coagulation`].
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct CoagulationResult {
    pub alkalinity_per_mg: f64,
    /// Below zero for a coagulant that adds alkalinity (sodium aluminate).
    pub alkalinity_consumed_mg_l: f64,
    pub alkalinity_remaining_mg_l: f64,
    /// Pure alkali needed to hold the setpoint (0 when the raw water has enough).
    pub alkali_mg_l: f64,
    /// The same as delivered (÷ purity).
    pub alkali_product_mg_l: f64,
    pub solids_per_mg: f64,
    /// The coagulant's effect on the operator's water (when given), from the water engine.
    pub water: Option<WaterEffect>,
    /// The same water after the supplemental alkali too (when alkali is needed).
    pub water_with_alkali: Option<WaterEffect>,
    pub traces: Vec<NamedTrace>,
    pub cautions: Vec<Caution>,
}

/// The water-engine chemical for a coagulant and the mg/L of it that `dose` (as
/// `c.dose_as()`) delivers. Alum doses as Al2O3 or as the 18-hydrate are carried to the
/// 14-hydrate through their aluminium atoms (the hydration water does not change the water).
/// PACl is built for its basicity from its dissolution (Al³⁺, OH⁻ and Cl⁻), since its
/// composition is a property of the product, not of a catalog entry.
pub fn coagulant_chemical(c: Coagulant, dose: f64) -> Result<(Chemical, f64)> {
    let chemical = match c {
        Coagulant::Alum14 | Coagulant::Alum18 | Coagulant::AlumAsAl2o3 => {
            water_chemical("Al2(SO4)3·14H2O")?.clone()
        }
        Coagulant::FerricChloride => water_chemical("FeCl3")?.clone(),
        Coagulant::FerricSulfate => water_chemical("Fe2(SO4)3")?.clone(),
        Coagulant::SodiumAluminate => water_chemical("NaAlO2")?.clone(),
        Coagulant::Pacl { basicity_percent } => {
            let formula = pacl_formula(basicity_percent)?;
            let products = if formula.contains("(OH)") {
                "Al+3 + OH- + Cl-"
            } else {
                "Al+3 + Cl-"
            };
            crate::engine::water::Catalog::embedded()?.dissolving(
                "pacl",
                &formula,
                "chemical.pacl",
                &format!("{formula} -> {products}"),
            )?
        }
    };
    let dose_as = Formula::parse(c.dose_as())?;
    let (m_as, _) = molar_mass(c.dose_as())?;
    let metal = if chemical.formula.count("Al") > 0 {
        "Al"
    } else {
        "Fe"
    };
    let per_as = dose_as.count(metal) as f64;
    let per_chem = chemical.formula.count(metal) as f64;
    let mg_l = dose / m_as * per_as / per_chem * chemical.molar_mass;
    Ok((chemical, mg_l))
}

/// [`coagulation`] in the operator's water: pH, alkalinity and LSI after the coagulant (metal
/// precipitated as amorphous hydroxide at equilibrium) and after the supplemental alkali, with
/// a `ph-outside-range` warning for the pH the water leaves with. The raw alkalinity of `input`
/// must be the water's own.
pub fn coagulation_in_water(
    catalog: &Catalog,
    input: &CoagulationInput,
    water: &WaterState,
    ph_range: PhRange,
) -> Result<CoagulationResult> {
    let water_alk = water.alkalinity_mg_l_as_caco3();
    if (water_alk - input.raw_alkalinity.value).abs() > 0.01 * water_alk.max(10.0) {
        return Err(Error::new(
            ErrorKind::InvalidInput,
            format!(
                "the raw alkalinity ({} mg/L) is not the water's ({water_alk:.1} mg/L as CaCO3)",
                input.raw_alkalinity.value
            ),
        )
        .because("alkalinity-differs-from-water")
        .with("quantity", "alkalinity"));
    }
    let mut r = coagulation(catalog, input)?;
    let (chemical, mg_l) = coagulant_chemical(input.coagulant, input.dose.value)?;
    let (after, effect) = dose_effect(water, &chemical, mg_l, Precipitation::Hydroxide)?;
    let mut final_ph = effect.ph_after;
    let mut cautions: Vec<Caution> = r
        .cautions
        .into_iter()
        .filter(|c| c.key != "give-water-for-ph-effect")
        .collect();
    if r.alkali_mg_l > 0.0 {
        let alkali = water_chemical(input.alkali.formula())?;
        let (_, with) = dose_effect(&after, alkali, r.alkali_mg_l, Precipitation::None)?;
        final_ph = with.ph_after;
        r.water_with_alkali = Some(with);
    }
    cautions.extend(ph_range.check(final_ph));
    r.water = Some(effect);
    r.cautions = finish(cautions);
    Ok(r)
}

/// Alkalinity consumed, and the alkali needed to keep the residual alkalinity setpoint.
pub fn coagulation(catalog: &Catalog, input: &CoagulationInput) -> Result<CoagulationResult> {
    let c = input.coagulant;
    check_positive("coagulant dose", input.dose.value, "mg/L")?;
    check_range("coagulant dose", input.dose.value, 0.0, 1000.0, "mg/L")?;
    check_range(
        "alkalinity",
        input.raw_alkalinity.value,
        0.0,
        2000.0,
        "mg/L as CaCO3",
    )?;
    check_range(
        "alkalinity setpoint",
        input.residual_alkalinity_setpoint,
        0.0,
        2000.0,
        "mg/L as CaCO3",
    )?;
    check_positive("alkali purity", input.alkali_purity_percent, "%")?;
    check_range(
        "alkali purity",
        input.alkali_purity_percent,
        0.0,
        100.0,
        "%",
    )?;
    let (per, per_trace) = alkalinity_per_dose(catalog, c)?;
    let (solids, solids_trace) = solids_per_dose(catalog, c)?;
    let mut t = Trace::new(
        Quantity::of(input.dose.value, "mg/L", c.dose_as()),
        Origin::Measured,
        input.dose.sig_figs,
    );
    t.then(
        Quantity::of(per, "mg/L", "CaCO3"),
        Quantity::of(1.0, "mg/L", c.dose_as()),
        Origin::Constant {
            source: format!("derived in trace {}", c.alkalinity_per_dose_label()),
        },
        per_trace.sig_figs(),
    )?;
    // An aluminate's alkalinity is added: consumed below zero, so the remaining and the
    // deficit follow from one sign.
    let consumed = if c.adds_alkalinity() {
        -t.value()
    } else {
        t.value()
    };
    let remaining = input.raw_alkalinity.value - consumed;
    let deficit = (input.residual_alkalinity_setpoint - remaining).max(0.0);
    let (alk_per, alk_trace) = alkalinity_per_alkali(catalog, input.alkali)?;
    let alkali = deficit / alk_per;
    // Without the water the pH effect cannot be calculated; say how to get it.
    let mut cautions = vec![Caution::info("give-water-for-ph-effect")];
    if remaining < 0.0 {
        cautions.push(
            Caution::danger("alkalinity-exhausted")
                .with("consumed_mg_l", format!("{consumed:.1}"))
                .with("raw_mg_l", input.raw_alkalinity.value),
        );
    }
    if deficit > 0.0 {
        cautions.push(
            Caution::warning("supplemental-alkali-needed")
                .with("alkali", input.alkali.formula())
                .with("mg_l", format!("{alkali:.1}")),
        );
        cautions.push(Caution::danger("incompatible-acid-caustic-heat"));
    }
    Ok(CoagulationResult {
        alkalinity_per_mg: per,
        alkalinity_consumed_mg_l: consumed,
        alkalinity_remaining_mg_l: remaining,
        alkali_mg_l: alkali,
        alkali_product_mg_l: alkali * 100.0 / input.alkali_purity_percent,
        solids_per_mg: solids,
        water: None,
        water_with_alkali: None,
        traces: vec![
            NamedTrace::new(c.alkalinity_per_dose_label(), per_trace),
            NamedTrace::new(
                if c.adds_alkalinity() {
                    "alkalinity-added"
                } else {
                    "alkalinity-consumed"
                },
                t,
            ),
            NamedTrace::new("alkalinity-per-alkali", alk_trace),
            NamedTrace::new("solids-per-dose", solids_trace),
        ],
        cautions: finish(cautions),
    })
}

/// Inputs for [`sludge`]: S = Q × (k·dose + SS + A), the published coagulant-sludge formula
/// (Cornwell, AWWA *Water Treatment Plant Waste Management*, 1987; also in ASCE/AWWA *Water
/// Treatment Plant Design*) [M: form recalled], with k derived by [`solids_per_dose`].
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SludgeInput {
    pub flow: Flow,
    pub coagulant: Coagulant,
    pub dose: Measured,
    /// Raw-water suspended solids removed, mg/L (measured, or b × NTU with the plant's own b).
    pub suspended_solids_mg_l: f64,
    /// Other additives removed (polymer, carbon, clay), mg/L.
    pub additives_mg_l: f64,
}

/// Result of [`sludge`].
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SludgeResult {
    /// The formula the metal's solids are counted as on the published basis, and its source.
    pub floc: String,
    pub source: &'static str,
    pub solids_per_mg: f64,
    pub solids_mg_l: f64,
    pub dry_solids_kg_per_day: f64,
    pub dry_solids_lb_per_day: f64,
    /// The same on the published alternative basis, where one is printed (iron: 2.9 × Fe).
    pub alternative: Option<SludgeAlternative>,
    pub traces: Vec<NamedTrace>,
    pub cautions: Vec<Caution>,
}

/// Dry solids on a coagulant's published alternative basis.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct SludgeAlternative {
    pub floc: String,
    pub source: &'static str,
    pub solids_per_mg: f64,
    pub solids_mg_l: f64,
    pub dry_solids_kg_per_day: f64,
}

/// Dry solids produced per day.
pub fn sludge(catalog: &Catalog, input: &SludgeInput) -> Result<SludgeResult> {
    check_positive("coagulant dose", input.dose.value, "mg/L")?;
    check_range(
        "suspended solids",
        input.suspended_solids_mg_l,
        0.0,
        100_000.0,
        "mg/L",
    )?;
    check_range("additives", input.additives_mg_l, 0.0, 10_000.0, "mg/L")?;
    let (k, k_trace) = solids_per_dose(catalog, input.coagulant)?;
    let mg_l = k * input.dose.value + input.suspended_solids_mg_l + input.additives_mg_l;
    let mut si = input.flow.to_l_per_day()?;
    si.times(
        Quantity::of(mg_l, "mg/L", "dry solids"),
        "mg/d",
        Origin::Measured,
        None,
    )?;
    si.then(
        Quantity::new(1.0, "kg/d"),
        Quantity::new(1_000_000.0, "mg/d"),
        Origin::UnitDefinition,
        None,
    )?;
    let mgd = input.flow.to_mgd()?.value();
    let lb = mgd * mg_l * pounds_factor().value();
    let (floc, source) = input.coagulant.published_floc();
    let floc_text = floc_formula(catalog, input.coagulant, floc)?.0;
    // Each coefficient with the basis and the source it stands on.
    let mut cautions = vec![
        Caution::info("sludge-estimate-only"),
        Caution::info("sludge-basis")
            .with("floc", &floc_text)
            .with("source", source),
    ];
    let alternative = match input.coagulant.alternative_floc() {
        Some((alt, alt_source)) => {
            let (k_alt, _) = solids_per_dose_as(catalog, input.coagulant, alt)?;
            cautions.push(
                Caution::info("sludge-basis-alternative")
                    .with("floc", floc_formula(catalog, input.coagulant, alt)?.0)
                    .with("source", alt_source),
            );
            let alt_mg_l =
                k_alt * input.dose.value + input.suspended_solids_mg_l + input.additives_mg_l;
            Some(SludgeAlternative {
                floc: floc_formula(catalog, input.coagulant, alt)?.0,
                source: alt_source,
                solids_per_mg: k_alt,
                solids_mg_l: alt_mg_l,
                // Same flow, same conversion as the published basis: kg/d scale with mg/L.
                dry_solids_kg_per_day: si.value() * alt_mg_l / mg_l,
            })
        }
        None => None,
    };
    Ok(SludgeResult {
        floc: floc_text,
        source,
        alternative,
        solids_per_mg: k,
        solids_mg_l: mg_l,
        dry_solids_kg_per_day: si.value(),
        dry_solids_lb_per_day: lb,
        traces: vec![
            NamedTrace::new("solids-per-dose", k_trace),
            NamedTrace::new("dry-solids", si),
        ],
        cautions: finish(cautions),
    })
}
