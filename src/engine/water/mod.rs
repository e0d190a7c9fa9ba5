//! Water chemistry: pH after a dose, dose for a target pH, CaCO3 stability, from equilibrium.
//!
//! Design: an operator's field readings ([`WaterInput`]) are validated and turned once into a
//! [`WaterState`]: component totals (mol/L), the carbonate total that makes the measured pH
//! and alkalinity agree, and the charge imbalance of the inputs, which is reported and then
//! carried unchanged (as PHREEQC does) so that a dose moves the pH only by what it adds. A dose
//! of any catalog chemical adds the components its balanced dissolution reaction releases; the
//! new pH is the root of the charge balance ([`speciation`]). Inverse problems (dose for a
//! target pH, pHs, CCPP) are bracketed Brent solves over the forward model, so they always
//! converge or return a typed error that says why. Nothing here does I/O or keeps mutable
//! global state; constants and the catalog are embedded data parsed once.

pub mod activity;
pub mod chemicals;
pub mod constants;
pub mod softening;
pub mod solve;
pub mod speciation;
pub mod stability;
pub mod targets;

pub use chemicals::{Catalog, Chemical};
pub use constants::Component;
pub use softening::{Softened, soften, softened};
pub use stability::{Stability, stability};

use crate::engine::{Error, ErrorKind, Result, check_range};
use constants::NC;
use solve::brent;
use speciation::{Problem, Solver, Speciation};
use std::sync::OnceLock;

/// Field readings at the tap. Concentrations are mg/L; `None` means not measured.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct WaterInput {
    pub ph: f64,
    pub temperature_c: f64,
    pub alkalinity_mg_l_as_caco3: f64,
    pub calcium_mg_l_as_caco3: Option<f64>,
    pub magnesium_mg_l_as_caco3: Option<f64>,
    pub sodium_mg_l: Option<f64>,
    pub potassium_mg_l: Option<f64>,
    pub chloride_mg_l: Option<f64>,
    /// As SO4.
    pub sulfate_mg_l: Option<f64>,
    pub tds_mg_l: Option<f64>,
    pub conductivity_us_cm: Option<f64>,
}

impl WaterInput {
    /// The three readings every operator has.
    pub fn new(ph: f64, temperature_c: f64, alkalinity_mg_l_as_caco3: f64) -> WaterInput {
        WaterInput {
            ph,
            temperature_c,
            alkalinity_mg_l_as_caco3,
            ..WaterInput::default()
        }
    }

    /// Alkalinity given in meq/L instead of mg/L as CaCO3.
    pub fn with_alkalinity_meq_l(mut self, meq_l: f64) -> Result<WaterInput> {
        self.alkalinity_mg_l_as_caco3 = meq_l * masses()?.caco3 / 2.0;
        Ok(self)
    }

    pub fn with_calcium_as_caco3(mut self, mg_l: f64) -> WaterInput {
        self.calcium_mg_l_as_caco3 = Some(mg_l);
        self
    }

    /// Calcium given as mg/L of the Ca ion.
    pub fn with_calcium_as_ion(mut self, mg_l_ca: f64) -> Result<WaterInput> {
        let m = masses()?;
        self.calcium_mg_l_as_caco3 = Some(mg_l_ca / m.ca * m.caco3);
        Ok(self)
    }

    pub fn with_magnesium_as_caco3(mut self, mg_l: f64) -> WaterInput {
        self.magnesium_mg_l_as_caco3 = Some(mg_l);
        self
    }

    /// Magnesium given as mg/L of the Mg ion.
    pub fn with_magnesium_as_ion(mut self, mg_l_mg: f64) -> Result<WaterInput> {
        let m = masses()?;
        self.magnesium_mg_l_as_caco3 = Some(mg_l_mg / m.mg * m.caco3);
        Ok(self)
    }
}

/// Where the ionic strength came from.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum IonicStrengthBasis {
    /// Computed from the ions given (Na, K, Cl or SO4 among them).
    Ions,
    /// Ions given plus background from TDS: I ≈ 2.5e-5 × TDS (Langelier).
    Tds,
    /// Ions given plus background from conductivity: I ≈ 1.6e-5 × EC (Russell).
    Conductivity,
    /// Only Ca, Mg and alkalinity known: a lower bound.
    MajorIonsOnly,
}

/// What happens to the Al or Fe a coagulant brings.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
pub enum Precipitation {
    /// Everything stays dissolved (hydrolysed species at equilibrium).
    #[default]
    None,
    /// Amorphous Al(OH)3 / Fe(OH)3 at equilibrium (precipitates what is supersaturated).
    Hydroxide,
    /// All the metal leaves as hydroxide.
    Complete,
}

impl Precipitation {
    pub fn parse(text: &str) -> Result<Precipitation> {
        match text {
            "none" => Ok(Precipitation::None),
            "hydroxide" => Ok(Precipitation::Hydroxide),
            "complete" => Ok(Precipitation::Complete),
            other => Err(Error::new(
                ErrorKind::InvalidInput,
                format!("precipitation must be none, hydroxide or complete, not '{other}'"),
            )
            .with("quantity", "precipitate")),
        }
    }
}

/// Molar masses the engine converts with, each from its formula.
#[derive(Clone, Copy, Debug)]
pub(crate) struct Masses {
    pub caco3: f64,
    pub ca: f64,
    pub mg: f64,
    pub na: f64,
    pub k: f64,
    pub cl: f64,
    pub so4: f64,
    pub co2: f64,
    pub n: f64,
}

pub(crate) fn masses() -> Result<Masses> {
    static MASSES: OnceLock<Result<Masses>> = OnceLock::new();
    MASSES
        .get_or_init(|| {
            let m = chemicals::molar_mass;
            Ok(Masses {
                caco3: m("CaCO3")?,
                ca: m("Ca")?,
                mg: m("Mg")?,
                na: m("Na")?,
                k: m("K")?,
                cl: m("Cl")?,
                so4: m("SO4")?,
                co2: m("CO2")?,
                n: m("N")?,
            })
        })
        .clone()
}

/// Upper limit for any concentration or dose, mg/L (a brine, far beyond any field water).
const MAX_MG_L: f64 = 100_000.0;

/// A validated, speciated water.
#[derive(Clone, Debug)]
pub struct WaterState {
    solver: Solver,
    problem: Problem,
    sp: Speciation,
    basis: IonicStrengthBasis,
    /// What the water was read from (a dosed water keeps its source's).
    readings: Readings,
    /// The molar masses its readings were converted with.
    masses: Masses,
}

/// The readings a water was read from, as far as its checks need them: the pH and alkalinity
/// (mg/L as CaCO3) as typed, which the water's own equal within the solve's 1e-9, and the
/// analysis's ion balance.
#[derive(Clone, Copy, Debug)]
struct Readings {
    ph: f64,
    alkalinity_mg_l_as_caco3: f64,
    ion_balance: Option<IonBalance>,
}

/// The cation and anion sums of a complete major-ion analysis, meq/L: the check of
/// Standard Methods 1030 E that every major ion was measured and written down in its basis.
/// Cations: calcium, magnesium, sodium and potassium; anions: the alkalinity, chloride and
/// sulfate. Made only when all six ions are given (a laboratory's list for the check): with
/// one of them missing the sums differ by that ion, whatever the analysis's accuracy, and
/// potassium alone (often 0.1 meq/L) is half of what a low sum may differ by.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct IonBalance {
    pub cations_meq_l: f64,
    pub anions_meq_l: f64,
}

impl IonBalance {
    /// 100 · (cations − anions) / (cations + anions), as Standard Methods 1030 E writes it.
    pub fn difference_percent(&self) -> f64 {
        let sum = self.cations_meq_l + self.anions_meq_l;
        if sum > 0.0 {
            100.0 * (self.cations_meq_l - self.anions_meq_l) / sum
        } else {
            0.0
        }
    }
}

/// The chemistry of a water: what `ph-after` and the UI show.
#[derive(Clone, Debug, PartialEq)]
pub struct WaterResult {
    pub ph: f64,
    pub temperature_c: f64,
    pub alkalinity_mg_l_as_caco3: f64,
    /// Dissolved inorganic carbon, mmol/L.
    pub dic_mmol_l: f64,
    /// Dissolved CO2, mg/L as CO2.
    pub co2_mg_l: f64,
    pub ionic_strength: f64,
    /// log(IAP/Ksp) for calcite; `None` without calcium.
    pub si_calcite: Option<f64>,
    /// Charge imbalance of the inputs, meq/L (cations − anions), carried through doses.
    pub charge_imbalance_meq_l: f64,
    /// The same as a percentage of the ion sum.
    pub charge_imbalance_percent: f64,
    /// Fraction of free chlorine present as HOCl (`None` without chlorine).
    pub hocl_fraction: Option<f64>,
    /// Al or Fe precipitated as hydroxide, mmol/L of metal.
    pub precipitated_metal_mmol_l: f64,
    /// Every species above 1e-12 mol/L, in mmol/L, in table order.
    pub species: Vec<(&'static str, f64)>,
}

fn optional(name: &'static str, value: Option<f64>) -> Result<f64> {
    match value {
        None => Ok(0.0),
        Some(v) => check_range(name, v, 0.0, MAX_MG_L, "mg/L"),
    }
}

impl WaterState {
    /// Validates the readings and speciates the water.
    pub fn new(input: &WaterInput) -> Result<WaterState> {
        let ph = check_range("pH", input.ph, 0.0, 14.0, "")?;
        let t = check_range("temperature", input.temperature_c, 0.0, 50.0, "°C")?;
        let alk = check_range(
            "alkalinity",
            input.alkalinity_mg_l_as_caco3,
            0.0,
            MAX_MG_L,
            "mg/L as CaCO3",
        )?;
        let m = masses()?;
        let mut totals = [0.0; NC];
        let eq_caco3 = m.caco3 / 2.0; // mg per meq of anything "as CaCO3"
        totals[Component::Ca.index()] =
            optional("calcium", input.calcium_mg_l_as_caco3)? / m.caco3 / 1000.0;
        totals[Component::Mg.index()] =
            optional("magnesium", input.magnesium_mg_l_as_caco3)? / m.caco3 / 1000.0;
        totals[Component::Na.index()] = optional("sodium", input.sodium_mg_l)? / m.na / 1000.0;
        totals[Component::K.index()] = optional("potassium", input.potassium_mg_l)? / m.k / 1000.0;
        totals[Component::Cl.index()] = optional("chloride", input.chloride_mg_l)? / m.cl / 1000.0;
        totals[Component::SO4.index()] = optional("sulfate", input.sulfate_mg_l)? / m.so4 / 1000.0;
        let tds = match input.tds_mg_l {
            Some(v) => Some(check_range("TDS", v, 0.0, MAX_MG_L, "mg/L")?),
            None => None,
        };
        let ec = match input.conductivity_us_cm {
            Some(v) => Some(check_range("conductivity", v, 0.0, 200_000.0, "µS/cm")?),
            None => None,
        };
        let alkalinity = alk / eq_caco3 / 1000.0;
        let complete = [
            input.calcium_mg_l_as_caco3,
            input.magnesium_mg_l_as_caco3,
            input.sodium_mg_l,
            input.potassium_mg_l,
            input.chloride_mg_l,
            input.sulfate_mg_l,
        ]
        .iter()
        .all(Option::is_some);
        let ion_balance = complete.then(|| {
            let meq = |c: Component, z: f64| z * totals[c.index()] * 1000.0;
            IonBalance {
                cations_meq_l: meq(Component::Ca, 2.0)
                    + meq(Component::Mg, 2.0)
                    + meq(Component::Na, 1.0)
                    + meq(Component::K, 1.0),
                anions_meq_l: alkalinity * 1000.0
                    + meq(Component::Cl, 1.0)
                    + meq(Component::SO4, 2.0),
            }
        });
        let solver = Solver::new(t);
        let mut problem = Problem::new(totals);
        let mut sp = solver.at_ph_and_alkalinity(ph, alkalinity, &problem)?;
        let ions_given = [
            input.sodium_mg_l,
            input.potassium_mg_l,
            input.chloride_mg_l,
            input.sulfate_mg_l,
        ]
        .iter()
        .any(Option::is_some);
        let estimate = match (tds, ec) {
            // Langelier: I ≈ 2.5e-5 × TDS (references.md §2).
            (Some(tds), _) => Some((2.5e-5 * tds, IonicStrengthBasis::Tds)),
            // Russell (1976): I ≈ 1.6e-5 × EC (references.md §2).
            (None, Some(ec)) => Some((1.6e-5 * ec, IonicStrengthBasis::Conductivity)),
            (None, None) => None,
        };
        let basis = match (ions_given, estimate) {
            (true, _) => IonicStrengthBasis::Ions,
            (false, Some((i_est, basis))) => {
                problem.i_background = (i_est - sp.ionic_strength).max(0.0);
                sp = solver.at_ph_and_alkalinity(ph, alkalinity, &problem)?;
                basis
            }
            (false, None) => IonicStrengthBasis::MajorIonsOnly,
        };
        problem.totals = sp.totals;
        problem.z_excess = solver.charge_sum(&sp);
        Ok(WaterState {
            solver,
            problem,
            sp,
            basis,
            readings: Readings {
                ph,
                alkalinity_mg_l_as_caco3: alk,
                ion_balance,
            },
            masses: m,
        })
    }

    pub fn ph(&self) -> f64 {
        -self.sp.log_h
    }

    /// The total of `component` in the water, mmol/L (what a dose left dissolved: precipitated
    /// metal and softening precipitates have left).
    pub fn total_mmol_l(&self, component: Component) -> f64 {
        self.problem.totals[component.index()] * 1000.0
    }

    pub fn ionic_strength_basis(&self) -> IonicStrengthBasis {
        self.basis
    }

    /// The cation and anion sums of the analysis the water was read from, when it was a
    /// complete one ([`IonBalance`]).
    pub fn ion_balance(&self) -> Option<IonBalance> {
        self.readings.ion_balance
    }

    /// The pH and the alkalinity (mg/L as CaCO3) of the readings the water was read from.
    pub fn readings(&self) -> (f64, f64) {
        (self.readings.ph, self.readings.alkalinity_mg_l_as_caco3)
    }

    pub fn temperature_c(&self) -> f64 {
        self.solver.th.t_kelvin - 273.15
    }

    /// Alkalinity in eq/L.
    fn alkalinity_eq(&self) -> f64 {
        self.solver.alkalinity(&self.sp)
    }

    /// Free (dissolved, molecular) CO2, mg/L as CO2.
    pub fn co2_mg_l(&self) -> f64 {
        self.co2_mg_l_of(&self.sp)
    }

    fn co2_mg_l_of(&self, sp: &Speciation) -> f64 {
        self.solver.species(sp, "CO2") * 1000.0 * self.masses.co2
    }

    pub fn alkalinity_mg_l_as_caco3(&self) -> f64 {
        self.alkalinity_eq() * 1000.0 * self.masses.caco3 / 2.0
    }

    /// The water's chemistry as a result record.
    pub fn result(&self) -> Result<WaterResult> {
        self.describe(&self.sp)
    }

    fn describe(&self, sp: &Speciation) -> Result<WaterResult> {
        let m = self.masses;
        let s = &self.solver;
        let calcite = s.table.phase_index("Calcite");
        let si = match calcite {
            Some(i)
                if sp.totals[Component::Ca.index()] > 0.0
                    && sp.totals[Component::CO3.index()] > 0.0 =>
            {
                Some(s.saturation_index(sp, i))
            }
            _ => None,
        };
        let mut pos = 10f64.powf(sp.log_h) / sp.gamma_h;
        let mut neg = 0.0;
        for (c, d) in sp.conc.iter().zip(&s.table.species) {
            let q = d.z as f64 * c;
            if q > 0.0 { pos += q } else { neg -= q }
        }
        let ocl_total = sp.totals[Component::OCl.index()];
        let hocl_fraction =
            (ocl_total > 0.0).then(|| s.species(sp, "HOCl") / s.dissolved(sp, Component::OCl));
        let metal = |c: Component| (sp.totals[c.index()] - s.dissolved(sp, c)).max(0.0);
        let precipitated = metal(Component::Al) + metal(Component::Fe);
        let species = s
            .table
            .species
            .iter()
            .zip(&sp.conc)
            .filter(|(_, c)| **c > 1e-12)
            .map(|(d, c)| (d.name.as_str(), c * 1000.0))
            .collect();
        Ok(WaterResult {
            ph: -sp.log_h,
            temperature_c: self.temperature_c(),
            alkalinity_mg_l_as_caco3: s.alkalinity(sp) * 1000.0 * m.caco3 / 2.0,
            dic_mmol_l: s.dissolved(sp, Component::CO3) * 1000.0,
            co2_mg_l: self.co2_mg_l_of(sp),
            ionic_strength: sp.ionic_strength,
            si_calcite: si,
            charge_imbalance_meq_l: self.problem.z_excess * 1000.0,
            charge_imbalance_percent: if pos + neg > 0.0 {
                100.0 * (pos - neg) / (pos + neg)
            } else {
                0.0
            },
            hocl_fraction,
            precipitated_metal_mmol_l: precipitated * 1000.0,
            species,
        })
    }

    /// The problem after `dose_mg_l` of `chemical`.
    fn dosed_problem(
        &self,
        chemical: &Chemical,
        dose_mg_l: f64,
        precipitation: Precipitation,
    ) -> Problem {
        let mol = dose_mg_l / chemical.molar_mass / 1000.0;
        let mut p = self.problem.clone();
        for c in Component::ALL {
            let i = c.index();
            let metal = matches!(c, Component::Al | Component::Fe);
            if metal && precipitation == Precipitation::Complete {
                continue;
            }
            p.totals[i] += chemical.adds[i] * mol;
        }
        if precipitation == Precipitation::Hydroxide {
            p.caps[Component::Al.index()] = self.solver.table.phase_index("Al(OH)3(a)");
            p.caps[Component::Fe.index()] = self.solver.table.phase_index("Fe(OH)3(a)");
        }
        p
    }

    fn solve_dose(
        &self,
        chemical: &Chemical,
        dose_mg_l: f64,
        precipitation: Precipitation,
        warm: Option<&Speciation>,
    ) -> Result<Speciation> {
        let dose = check_range("dose", dose_mg_l, 0.0, MAX_MG_L, "mg/L")?;
        let p = self.dosed_problem(chemical, dose, precipitation);
        self.solver.solve(&p, Some(warm.unwrap_or(&self.sp)))
    }

    /// The water after a dose, as a new state (its pH and alkalinity are the dosed ones).
    pub fn dosed(
        &self,
        chemical: &Chemical,
        dose_mg_l: f64,
        precipitation: Precipitation,
    ) -> Result<WaterState> {
        self.dosed_together(&[(chemical, dose_mg_l)], precipitation)
    }

    /// The water after several chemicals fed at the same point, in one equilibrium solve
    /// (closed system: the end state does not depend on the order they mix in).
    pub fn dosed_together(
        &self,
        feeds: &[(&Chemical, f64)],
        precipitation: Precipitation,
    ) -> Result<WaterState> {
        let mut problem = self.problem.clone();
        for (chemical, dose_mg_l) in feeds {
            let dose = check_range("dose", *dose_mg_l, 0.0, MAX_MG_L, "mg/L")?;
            let mol = dose / chemical.molar_mass / 1000.0;
            for c in Component::ALL {
                let metal = matches!(c, Component::Al | Component::Fe);
                if metal && precipitation == Precipitation::Complete {
                    continue;
                }
                problem.totals[c.index()] += chemical.adds[c.index()] * mol;
            }
        }
        if precipitation == Precipitation::Hydroxide {
            problem.caps[Component::Al.index()] = self.solver.table.phase_index("Al(OH)3(a)");
            problem.caps[Component::Fe.index()] = self.solver.table.phase_index("Fe(OH)3(a)");
        }
        let sp = self.solver.solve(&problem, Some(&self.sp))?;
        // Precipitated metal has left the water.
        for c in [Component::Al, Component::Fe] {
            problem.totals[c.index()] = self.solver.dissolved(&sp, c);
            problem.caps[c.index()] = None;
        }
        let sp = Speciation {
            totals: problem.totals,
            ..sp
        };
        Ok(WaterState {
            solver: self.solver.clone(),
            problem,
            sp,
            basis: self.basis,
            readings: self.readings,
            masses: self.masses,
        })
    }
}

impl WaterState {
    /// The same water at the same measured pH and alkalinity with `mg_l_n` mg/L of total
    /// ammonia (NH4+ + NH3, as N) in it: the NH3 share is part of the alkalinity the titration
    /// measured, so the carbonate total is solved again as [`WaterState::new`] does.
    pub fn with_ammonia_as_n(&self, mg_l_n: f64) -> Result<WaterState> {
        let n = check_range("ammonia-N", mg_l_n, 0.0, MAX_MG_L, "mg/L")?;
        let mut problem = self.problem.clone();
        problem.totals[Component::NH4.index()] = n / masses()?.n / 1000.0;
        let sp = self
            .solver
            .at_ph_and_alkalinity(self.ph(), self.alkalinity_eq(), &problem)?;
        problem.totals = sp.totals;
        problem.z_excess = self.solver.charge_sum(&sp);
        Ok(WaterState {
            solver: self.solver.clone(),
            problem,
            sp,
            basis: self.basis,
            readings: self.readings,
            masses: self.masses,
        })
    }

    /// The water after `reaction` has run to `extent_mmol_l` mmol/L of `per` (one of its
    /// reactants) consumed: each dissolved species of the reaction moves its component's total
    /// by its coefficient (reactants leave, products arrive; H+, OH-, H2O and gases that leave
    /// feed none, the charge balance takes care of the protons). The breakpoint end state is
    /// this with the breakpoint reaction. A reactant whose component would go below zero is
    /// refused: the reaction cannot run further than the water holds.
    pub fn reacted(
        &self,
        reaction: &crate::engine::reaction::Reaction,
        per: &str,
        extent_mmol_l: f64,
    ) -> Result<WaterState> {
        use crate::engine::reaction::Side;
        // Called with amounts the engine derived, never typed: a bad one is a program error,
        // still refused rather than solved.
        if !(extent_mmol_l.is_finite() && (0.0..=1000.0).contains(&extent_mmol_l)) {
            return Err(Error::new(
                ErrorKind::OutOfRange,
                format!("reaction extent {extent_mmol_l} mmol/L is out of range"),
            ));
        }
        let extent = extent_mmol_l;
        let per_formula = crate::engine::formula::Formula::parse(per)?;
        let own = reaction
            .species()
            .iter()
            .find(|s| s.side == Side::Reactant && s.formula.same_composition(&per_formula))
            .ok_or_else(|| {
                Error::new(
                    ErrorKind::NotInReaction,
                    format!("{per} is not a reactant of {reaction}"),
                )
            })?;
        let scale = extent / 1000.0 / own.coefficient as f64;
        let catalog = Catalog::embedded()?;
        let mut problem = self.problem.clone();
        for s in reaction.species() {
            let Some(c) = catalog.component_of(&s.formula)? else {
                continue;
            };
            let sign = if s.side == Side::Reactant { -1.0 } else { 1.0 };
            problem.totals[c.index()] += sign * s.coefficient as f64 * scale;
        }
        // A few ulps below zero is the same total consumed; more is a reaction the water
        // cannot run.
        for t in problem.totals.iter_mut() {
            if *t < -1e-12 {
                return Err(Error::new(
                    ErrorKind::Unreachable,
                    format!("{reaction}: the water holds too little {per} for this extent"),
                ));
            }
            *t = t.max(0.0);
        }
        let sp = self.solver.solve(&problem, Some(&self.sp))?;
        let sp = Speciation {
            totals: problem.totals,
            ..sp
        };
        Ok(WaterState {
            solver: self.solver.clone(),
            problem,
            sp,
            basis: self.basis,
            readings: self.readings,
            masses: self.masses,
        })
    }
}

/// pH and chemistry after `dose_mg_l` (mg/L of the pure compound) of `chemical`.
pub fn ph_after(
    state: &WaterState,
    chemical: &Chemical,
    dose_mg_l: f64,
    precipitation: Precipitation,
) -> Result<WaterResult> {
    let sp = state.solve_dose(chemical, dose_mg_l, precipitation, None)?;
    state.describe(&sp)
}

/// A dose that reaches a target pH, with the water it gives.
#[derive(Clone, Debug, PartialEq)]
pub struct DoseResult {
    pub dose_mg_l: f64,
    pub water: WaterResult,
}

/// Largest dose the inverse search considers, mg/L.
const MAX_SEARCH_DOSE: f64 = 20_000.0;

fn suggestion(raise: bool) -> (&'static str, &'static str) {
    if raise {
        ("caustic", "caustic soda (NaOH) or lime")
    } else {
        ("sulfuric-acid", "sulfuric or hydrochloric acid")
    }
}

/// The dose of `chemical` (mg/L of the pure compound) that brings the water to `target_ph`.
/// Unreachable targets are an `Unreachable` error that says why and what would reach it.
pub fn dose_for_ph(
    state: &WaterState,
    chemical: &Chemical,
    target_ph: f64,
    precipitation: Precipitation,
) -> Result<DoseResult> {
    let target = check_range("target pH", target_ph, 0.0, 14.0, "")?;
    let ph0 = state.ph();
    if (target - ph0).abs() < 1e-9 {
        return Ok(DoseResult {
            dose_mg_l: 0.0,
            water: state.result()?,
        });
    }
    let raise = target > ph0;
    let (suggest_id, suggest_text) = suggestion(raise);
    let unreachable = |why: String| {
        Error::new(
            ErrorKind::Unreachable,
            format!(
                "{} cannot bring pH {ph0:.2} to {target:.2}: {why}; {suggest_text} would",
                chemical.id
            ),
        )
        .with("chemical", &chemical.id)
        .with("ph", format!("{ph0:.2}"))
        .with("target", format!("{target:.2}"))
        .with("suggestion", suggest_id)
    };
    let mut warm = state.sp.clone();
    let mut ph_at = |d: f64| -> Result<f64> {
        let sp = state.solve_dose(chemical, d, precipitation, Some(&warm))?;
        let ph = -sp.log_h;
        warm = sp;
        Ok(ph)
    };
    // Direction of the chemical's effect at a tiny dose.
    let probe = ph_at(1e-3)?;
    let effect = probe - ph0;
    if effect.abs() < 1e-12 || (effect > 0.0) != raise {
        let direction = if effect > 0.0 {
            "it raises the pH"
        } else if effect < 0.0 {
            "it lowers the pH"
        } else {
            "it does not change the pH"
        };
        return Err(unreachable(direction.to_string()));
    }
    let f = |ph: f64| if raise { ph - target } else { target - ph };
    let (mut lo, mut flo) = (0.0, f(ph0));
    let mut hi = 1.0;
    let mut fhi = f(ph_at(hi)?);
    while fhi < 0.0 {
        if hi >= MAX_SEARCH_DOSE {
            let limit = ph_at(MAX_SEARCH_DOSE)?;
            return Err(unreachable(format!(
                "its pH levels off near {limit:.2} (reached at {MAX_SEARCH_DOSE} mg/L)"
            ))
            .with("limit_ph", format!("{limit:.2}")));
        }
        lo = hi;
        flo = fhi;
        hi = (hi * 4.0).min(MAX_SEARCH_DOSE);
        fhi = f(ph_at(hi)?);
    }
    let mut failure = None;
    let dose = brent(
        |d| match ph_at(d) {
            Ok(ph) => f(ph),
            Err(e) => {
                failure = Some(e);
                f64::NAN
            }
        },
        lo,
        hi,
        flo,
        fhi,
        1e-10 * hi,
    );
    if let Some(e) = failure {
        return Err(e);
    }
    let dose = dose
        .ok_or_else(|| unreachable("the pH does not change monotonically with the dose".into()))?;
    let water = ph_after(state, chemical, dose, precipitation)?;
    Ok(DoseResult {
        dose_mg_l: dose,
        water,
    })
}

/// One point of a titration curve.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CurvePoint {
    pub dose_mg_l: f64,
    pub ph: f64,
}

/// pH against dose at `points` evenly spaced doses from 0 to `max_dose_mg_l`.
pub fn curve(
    state: &WaterState,
    chemical: &Chemical,
    max_dose_mg_l: f64,
    points: usize,
    precipitation: Precipitation,
) -> Result<Vec<CurvePoint>> {
    let max = check_range("maximum dose", max_dose_mg_l, 0.0, MAX_MG_L, "mg/L")?;
    if !(2..=10_000).contains(&points) {
        return Err(Error::new(
            ErrorKind::OutOfRange,
            format!("a curve needs 2–10000 points, not {points}"),
        )
        .with("quantity", "points"));
    }
    let mut warm = state.sp.clone();
    let mut out = Vec::with_capacity(points);
    for k in 0..points {
        let d = max * k as f64 / (points - 1) as f64;
        let sp = state.solve_dose(chemical, d, precipitation, Some(&warm))?;
        out.push(CurvePoint {
            dose_mg_l: d,
            ph: -sp.log_h,
        });
        warm = sp;
    }
    Ok(out)
}

/// A neutralization: the product dose for a target pH and what it leaves.
#[derive(Clone, Debug, PartialEq)]
pub struct Neutralization {
    /// mg/L of the pure compound.
    pub dose_mg_l: f64,
    /// mg/L of the product as sold (pure dose ÷ purity).
    pub product_mg_l: f64,
    pub ph: f64,
    pub alkalinity_mg_l_as_caco3: f64,
    /// Langelier index after the dose (`None` without calcium).
    pub langelier_index: Option<f64>,
}

/// Dose of a neutralizing chemical (lime, quicklime, caustic, soda ash, bicarbonate, sulfuric
/// or hydrochloric acid, CO2) for `target_ph`; `purity` is the mass fraction of the pure
/// compound in the product (e.g. 0.90 for quicklime with 90 % CaO).
pub fn neutralize(
    state: &WaterState,
    chemical: &Chemical,
    target_ph: f64,
    purity: f64,
) -> Result<Neutralization> {
    let mut n = neutralizing_dose(state, chemical, target_ph, purity)?;
    let after = state.dosed(chemical, n.dose_mg_l, Precipitation::None)?;
    n.langelier_index = stability(&after).ok().and_then(|s| s.langelier_index);
    Ok(n)
}

/// [`neutralize`] without the treated water's Langelier index (`langelier_index` is `None`):
/// the index costs a second solve and a search for calcite saturation, half the price of the
/// dose, and a range's moved readings or a caller that judges the water itself does not read it.
pub fn neutralizing_dose(
    state: &WaterState,
    chemical: &Chemical,
    target_ph: f64,
    purity: f64,
) -> Result<Neutralization> {
    let purity = check_range("purity", purity, 0.01, 1.0, "")?;
    let r = dose_for_ph(state, chemical, target_ph, Precipitation::None)?;
    Ok(Neutralization {
        dose_mg_l: r.dose_mg_l,
        product_mg_l: r.dose_mg_l / purity,
        ph: r.water.ph,
        alkalinity_mg_l_as_caco3: r.water.alkalinity_mg_l_as_caco3,
        langelier_index: None,
    })
}

/// A coagulant dose and its effect on pH and alkalinity.
#[derive(Clone, Debug, PartialEq)]
pub struct Coagulation {
    pub dose_mg_l: f64,
    pub ph: f64,
    pub alkalinity_mg_l_as_caco3: f64,
    pub alkalinity_consumed_mg_l_as_caco3: f64,
    pub precipitated_metal_mmol_l: f64,
}

/// Alkalinity consumed and pH after a coagulant (or any chemical) dose.
pub fn coagulate(
    state: &WaterState,
    chemical: &Chemical,
    dose_mg_l: f64,
    precipitation: Precipitation,
) -> Result<Coagulation> {
    let after = ph_after(state, chemical, dose_mg_l, precipitation)?;
    Ok(Coagulation {
        dose_mg_l,
        ph: after.ph,
        alkalinity_mg_l_as_caco3: after.alkalinity_mg_l_as_caco3,
        alkalinity_consumed_mg_l_as_caco3: state.alkalinity_mg_l_as_caco3()
            - after.alkalinity_mg_l_as_caco3,
        precipitated_metal_mmol_l: after.precipitated_metal_mmol_l,
    })
}

#[cfg(test)]
mod tests;
