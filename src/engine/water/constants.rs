//! Temperature-dependent equilibrium constants, read from `data/water-constants.json`.
//!
//! Design: the data file (embedded with `include_str!`) holds every species as its formation
//! reaction from a fixed set of master species ([`Component`]) plus H+, with its log K and the
//! published temperature function, each beside its source. It is parsed once into an immutable
//! [`Table`]; [`Table::at`] evaluates every log K at one temperature into a [`Thermo`] that the
//! solver holds, so the inner loops never touch text or transcendental T-functions.

use crate::engine::{Error, ErrorKind, Result};
use serde::Deserialize;
use std::collections::BTreeMap;
use std::sync::OnceLock;

/// The master species the engine conserves (H+ and water are handled separately).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Component {
    Ca,
    Mg,
    Na,
    K,
    Cl,
    SO4,
    /// Total dissolved inorganic carbon.
    CO3,
    Al,
    Fe,
    /// Free chlorine (HOCl + OCl-).
    OCl,
    /// Total ammonia (NH4+ + NH3).
    NH4,
    /// Total orthophosphate (H3PO4 … PO4-3 and its pairs).
    PO4,
    /// Total fluoride (F-, HF, HF2-, pairs, and the six of each SiF6-2).
    F,
    /// Total dissolved silica (H4SiO4, H3SiO4-, H2SiO4-2 and SiF6-2).
    Si,
}

pub const NC: usize = 14;

impl Component {
    pub const ALL: [Component; NC] = [
        Component::Ca,
        Component::Mg,
        Component::Na,
        Component::K,
        Component::Cl,
        Component::SO4,
        Component::CO3,
        Component::Al,
        Component::Fe,
        Component::OCl,
        Component::NH4,
        Component::PO4,
        Component::F,
        Component::Si,
    ];

    /// Components whose species the solver skips entirely while their totals are zero (a
    /// carbonate water pays nothing for them): phosphate, fluoride and silica.
    pub const EXTENDED: [Component; 3] = [Component::PO4, Component::F, Component::Si];

    pub fn index(self) -> usize {
        self as usize
    }

    pub fn name(self) -> &'static str {
        match self {
            Component::Ca => "Ca",
            Component::Mg => "Mg",
            Component::Na => "Na",
            Component::K => "K",
            Component::Cl => "Cl",
            Component::SO4 => "SO4",
            Component::CO3 => "CO3",
            Component::Al => "Al",
            Component::Fe => "Fe",
            Component::OCl => "OCl",
            Component::NH4 => "NH4",
            Component::PO4 => "PO4",
            Component::F => "F",
            Component::Si => "Si",
        }
    }

    pub fn from_name(name: &str) -> Option<Component> {
        Component::ALL.into_iter().find(|c| c.name() == name)
    }
}

/// How log K varies with temperature.
#[derive(Clone, Debug)]
enum LogK {
    Constant(f64),
    VantHoff { log_k25: f64, delta_h_kcal: f64 },
    Analytic([f64; 5]),
}

/// 10^l as e^(l·ln 10): the same number to a few units in the last place, at a fraction of the
/// cost of `powf` (every water read evaluates the whole table, and every solver step its γ).
pub(super) fn pow10(l: f64) -> f64 {
    (l * std::f64::consts::LN_10).exp()
}

const T25: f64 = 298.15;
/// Gas constant, J/(mol K) (CODATA 2018, exact by SI definition).
const R: f64 = 8.314462618;
/// Thermochemical calorie, J (exact by definition).
const CAL: f64 = 4.184;

impl LogK {
    /// log K at `t` kelvin; `log10_t` is log10(t), computed once for a whole table.
    fn at(&self, t: f64, log10_t: f64) -> f64 {
        match self {
            LogK::Constant(k) => *k,
            LogK::VantHoff {
                log_k25,
                delta_h_kcal,
            } => {
                log_k25
                    - delta_h_kcal * 1000.0 * CAL / (R * std::f64::consts::LN_10)
                        * (1.0 / t - 1.0 / T25)
            }
            LogK::Analytic(a) => a[0] + a[1] * t + a[2] / t + a[3] * log10_t + a[4] / (t * t),
        }
    }
}

/// Activity-coefficient model of one species.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum GammaModel {
    /// Extended (WATEQ) Debye–Hückel with ion size `a` (Å) and linear term `b`.
    Wateq { a: f64, b: f64 },
    /// Davies equation (charged species without WATEQ parameters).
    Davies,
    /// Uncharged: log γ = b·I.
    Neutral,
}

/// One aqueous species: formation from masters and H+.
#[derive(Clone, Debug)]
pub struct SpeciesDef {
    pub name: String,
    pub z: i32,
    /// (component, stoichiometric count), sparse.
    pub comp: Vec<(Component, i32)>,
    /// H+ count in the formation reaction (negative for hydroxo species).
    pub h: i32,
    pub gamma: GammaModel,
    /// Alkalinity contribution (eq per mol), from the masters' reference levels.
    pub alkalinity: f64,
    log_k: LogK,
}

impl SpeciesDef {
    /// Whether the species contains phosphate, fluoride or silica.
    pub fn is_extended(&self) -> bool {
        self.comp
            .iter()
            .any(|(c, _)| Component::EXTENDED.contains(c))
    }
}

/// A solid phase: log K is log10 of the ion activity product at saturation.
#[derive(Clone, Debug)]
pub struct PhaseDef {
    pub name: String,
    pub comp: Vec<(Component, i32)>,
    pub h: i32,
    log_k: LogK,
}

/// The parsed data file.
#[derive(Debug)]
pub struct Table {
    /// Masters first (index = component index), then the other species.
    pub species: Vec<SpeciesDef>,
    pub h_gamma: GammaModel,
    pub davies_linear: f64,
    pub neutral_b: f64,
    pub phases: Vec<PhaseDef>,
    /// Species past this index all contain an extended component ([`Component::EXTENDED`]):
    /// the solver stops its species loops here while those totals are zero.
    pub n_core: usize,
    /// K of each species whose log K does not depend on the temperature (the masters, and
    /// pairs given without an enthalpy), made once: [`Table::at`] takes no e^x for them.
    k_fixed: Vec<Option<f64>>,
    /// The solver's per-species helpers, built on first use.
    layout: OnceLock<super::speciation::Layout>,
}

/// The table evaluated at one temperature.
#[derive(Clone, Debug)]
pub struct Thermo {
    pub t_kelvin: f64,
    /// log10 K of each species (masters 0).
    pub log_k: Vec<f64>,
    /// K of each species.
    pub k: Vec<f64>,
    /// Debye–Hückel A and B (B per Å).
    pub a_dh: f64,
    pub b_dh: f64,
    /// log10 K of each phase, in table order.
    pub phase_log_k: Vec<f64>,
}

#[derive(Deserialize)]
struct RawFile {
    activity: RawActivity,
    masters: Vec<RawMaster>,
    hydrogen: RawHydrogen,
    species: Vec<RawSpecies>,
    phases: Vec<RawPhase>,
}

#[derive(Deserialize)]
struct RawActivity {
    davies_linear: f64,
    neutral_b: f64,
}

#[derive(Deserialize)]
struct RawMaster {
    component: String,
    species: String,
    z: i32,
    gamma: Option<[f64; 2]>,
    alkalinity: f64,
}

#[derive(Deserialize)]
struct RawHydrogen {
    gamma: [f64; 2],
}

#[derive(Deserialize)]
struct RawSpecies {
    species: String,
    z: i32,
    #[serde(default)]
    comp: BTreeMap<String, i32>,
    #[serde(default)]
    h: i32,
    log_k: f64,
    analytic: Option<[f64; 5]>,
    delta_h_kcal: Option<f64>,
    /// ΔH in kJ/mol, for a source that tabulates it so (converted with the thermochemical
    /// calorie; only one of the two may be given).
    delta_h_kj: Option<f64>,
    plus: Option<String>,
    gamma: Option<[f64; 2]>,
}

#[derive(Deserialize)]
struct RawPhase {
    phase: String,
    comp: BTreeMap<String, i32>,
    h: i32,
    log_k: f64,
    analytic: Option<[f64; 5]>,
    delta_h_kcal: Option<f64>,
}

fn data_error(message: String) -> Error {
    Error::new(
        ErrorKind::InvalidInput,
        format!("water-constants.json: {message}"),
    )
}

fn log_k_of(log_k: f64, analytic: Option<[f64; 5]>, delta_h: Option<f64>) -> LogK {
    match (analytic, delta_h) {
        (Some(a), _) => LogK::Analytic(a),
        (None, Some(h)) => LogK::VantHoff {
            log_k25: log_k,
            delta_h_kcal: h,
        },
        (None, None) => LogK::Constant(log_k),
    }
}

fn gamma_of(gamma: Option<[f64; 2]>, z: i32) -> GammaModel {
    match (gamma, z) {
        (Some([a, b]), _) => GammaModel::Wateq { a, b },
        (None, 0) => GammaModel::Neutral,
        (None, _) => GammaModel::Davies,
    }
}

fn components(raw: &BTreeMap<String, i32>) -> Result<Vec<(Component, i32)>> {
    raw.iter()
        .map(|(name, n)| {
            Component::from_name(name)
                .map(|c| (c, *n))
                .ok_or_else(|| data_error(format!("unknown component {name}")))
        })
        .collect()
}

impl Table {
    /// Parses the data file text.
    pub fn parse(text: &str) -> Result<Table> {
        let raw: RawFile =
            serde_json::from_str(text).map_err(|e| data_error(format!("not valid: {e}")))?;
        if raw.masters.len() != NC {
            return Err(data_error(format!("expected {NC} masters")));
        }
        let mut species = Vec::new();
        let mut alk = [0.0; NC];
        for (i, m) in raw.masters.iter().enumerate() {
            let c = Component::from_name(&m.component)
                .ok_or_else(|| data_error(format!("unknown component {}", m.component)))?;
            if c.index() != i {
                return Err(data_error(format!("master {} out of order", m.component)));
            }
            alk[i] = m.alkalinity;
            species.push(SpeciesDef {
                name: m.species.clone(),
                z: m.z,
                comp: vec![(c, 1)],
                h: 0,
                gamma: gamma_of(m.gamma, m.z),
                alkalinity: m.alkalinity,
                log_k: LogK::Constant(0.0),
            });
        }
        // First pass: own log K; second pass adds the `plus` species (resolved by name).
        let mut own: Vec<(String, LogK, Option<String>)> = Vec::new();
        for s in &raw.species {
            let comp = components(&s.comp)?;
            let delta_h = match (s.delta_h_kcal, s.delta_h_kj) {
                (Some(_), Some(_)) => {
                    return Err(data_error(format!(
                        "{}: delta_h given in both kcal and kJ",
                        s.species
                    )));
                }
                (kcal, kj) => kcal.or(kj.map(|kj| kj / CAL)),
            };
            let alkalinity = comp
                .iter()
                .map(|(c, n)| alk[c.index()] * *n as f64)
                .sum::<f64>()
                - s.h as f64;
            species.push(SpeciesDef {
                name: s.species.clone(),
                z: s.z,
                comp,
                h: s.h,
                gamma: gamma_of(s.gamma, s.z),
                alkalinity,
                log_k: LogK::Constant(0.0),
            });
            own.push((
                s.species.clone(),
                log_k_of(s.log_k, s.analytic, delta_h),
                s.plus.clone(),
            ));
        }
        let mut phases = Vec::new();
        for p in &raw.phases {
            phases.push(PhaseDef {
                name: p.phase.clone(),
                comp: components(&p.comp)?,
                h: p.h,
                log_k: log_k_of(p.log_k, p.analytic, p.delta_h_kcal),
            });
        }
        let table = Table {
            species,
            h_gamma: gamma_of(Some(raw.hydrogen.gamma), 1),
            davies_linear: raw.activity.davies_linear,
            neutral_b: raw.activity.neutral_b,
            phases,
            n_core: 0,
            k_fixed: Vec::new(),
            layout: OnceLock::new(),
        };
        let mut table = table;
        // Store the composite log K functions: own, plus the named species' function.
        let own_index: BTreeMap<String, usize> = own
            .iter()
            .enumerate()
            .map(|(i, (n, _, _))| (n.clone(), i))
            .collect();
        for (i, (_, lk, plus)) in own.iter().enumerate() {
            let f = match plus {
                None => lk.clone(),
                Some(p) => {
                    let j = *own_index
                        .get(p)
                        .ok_or_else(|| data_error(format!("'plus' names unknown species {p}")))?;
                    if own[j].2.is_some() {
                        return Err(data_error(format!("'plus' chain through {p}")));
                    }
                    Composite::sum(lk, &own[j].1)
                }
            };
            table.species[NC + i].log_k = f;
        }
        table.k_fixed = table
            .species
            .iter()
            .map(|s| match s.log_k {
                LogK::Constant(l) => Some(pow10(l)),
                _ => None,
            })
            .collect();
        table.n_core = table
            .species
            .iter()
            .rposition(|s| !s.is_extended())
            .map_or(0, |i| i + 1)
            .max(NC);
        table.check_fits_the_solver()?;
        Ok(table)
    }

    /// The solver keeps its scratch in fixed-size arrays and its species' masters in three
    /// bytes; a table beyond those sizes is refused here, where it would otherwise lose
    /// species, classes or masters without a word.
    fn check_fits_the_solver(&self) -> Result<()> {
        use super::speciation::{MAX_CLASSES, MAX_MASTERS_PER_SPECIES, MAX_SPECIES};
        if self.species.len() > MAX_SPECIES {
            return Err(data_error(format!(
                "{} species; the solver holds at most {MAX_SPECIES}",
                self.species.len()
            )));
        }
        for s in &self.species {
            if s.comp.len() > MAX_MASTERS_PER_SPECIES
                || s.comp.iter().any(|&(_, n)| !(1..=255).contains(&n))
            {
                return Err(data_error(format!(
                    "{}: a species is made of at most {MAX_MASTERS_PER_SPECIES} masters, each \
                     counted 1 to 255 times",
                    s.name
                )));
            }
        }
        // The classes as the solver's layout groups them (built here once, and kept: every
        // solve of this table uses it).
        let classes = self.layout().class_count();
        if classes > MAX_CLASSES {
            return Err(data_error(format!(
                "{classes} activity classes (distinct γ models and charges); the solver holds at \
                 most {MAX_CLASSES}"
            )));
        }
        Ok(())
    }

    /// The embedded table, parsed on first use (the text is compiled in and tested, so a
    /// failure here is a build defect, not an input error).
    pub fn embedded() -> &'static Table {
        static TABLE: OnceLock<Table> = OnceLock::new();
        TABLE.get_or_init(|| {
            Table::parse(include_str!("../../../data/water-constants.json"))
                .expect("embedded data/water-constants.json is valid (checked by unit tests)")
        })
    }

    /// The solver's per-species helpers for this table, built once: they do not depend on the
    /// temperature, and every water would otherwise rebuild them.
    pub fn layout(&self) -> &super::speciation::Layout {
        self.layout
            .get_or_init(|| super::speciation::Layout::of(self))
    }

    pub fn species_index(&self, name: &str) -> Option<usize> {
        self.species.iter().position(|s| s.name == name)
    }

    pub fn phase_index(&self, name: &str) -> Option<usize> {
        self.phases.iter().position(|p| p.name == name)
    }

    /// Evaluates every constant at `t_celsius`.
    pub fn at(&self, t_celsius: f64) -> Thermo {
        let t = t_celsius + 273.15;
        let log10_t = t.log10();
        let log_k: Vec<f64> = self
            .species
            .iter()
            .map(|s| s.log_k.at(t, log10_t))
            .collect();
        let k = log_k
            .iter()
            .zip(&self.k_fixed)
            .map(|(&l, fixed)| fixed.unwrap_or_else(|| pow10(l)))
            .collect();
        // Dielectric constant of water and Debye–Hückel A, B (Standard Methods 2330).
        let eps = 60954.0 / (t + 116.0) - 68.937;
        let et = eps * t;
        Thermo {
            t_kelvin: t,
            log_k,
            k,
            a_dh: 1.82e6 * et.powf(-1.5),
            b_dh: 50.29 * et.powf(-0.5),
            phase_log_k: self.phases.iter().map(|p| p.log_k.at(t, log10_t)).collect(),
        }
    }
}

/// Sum of two temperature functions, kept exact by folding into one analytic form where possible.
struct Composite;

impl Composite {
    fn sum(a: &LogK, b: &LogK) -> LogK {
        // van't Hoff with constant ΔH is A + C/T, so every form folds into the analytic one.
        fn analytic(l: &LogK) -> [f64; 5] {
            match l {
                LogK::Constant(k) => [*k, 0.0, 0.0, 0.0, 0.0],
                LogK::VantHoff {
                    log_k25,
                    delta_h_kcal,
                } => {
                    let c = delta_h_kcal * 1000.0 * CAL / (R * std::f64::consts::LN_10);
                    [log_k25 + c / T25, 0.0, -c, 0.0, 0.0]
                }
                LogK::Analytic(a) => *a,
            }
        }
        let (x, y) = (analytic(a), analytic(b));
        LogK::Analytic([
            x[0] + y[0],
            x[1] + y[1],
            x[2] + y[2],
            x[3] + y[3],
            x[4] + y[4],
        ])
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// log K of a species at a temperature, from the embedded table.
    fn log_k(name: &str, t_c: f64) -> f64 {
        let table = Table::embedded();
        let i = table.species_index(name).expect("species in table");
        table.at(t_c).log_k[i]
    }

    fn check(name: &str, t_c: f64, expected: f64, tol: f64) {
        let got = log_k(name, t_c);
        assert!(
            (got - expected).abs() <= tol,
            "{name} at {t_c} C: log K {got:.4}, expected {expected} ± {tol}"
        );
    }

    #[test]
    fn embedded_table_parses_and_lists_every_master() {
        let table = Table::embedded();
        assert!(table.species.len() > NC + 20);
        for c in Component::ALL {
            assert_eq!(table.species[c.index()].comp, vec![(c, 1)]);
        }
    }

    #[test]
    fn constants_at_25_c_match_their_sources() {
        // pKw 14.00 at 25 C, 14.94 at 0 C: references.md §1 (Harned & Owen fit) [D].
        check("OH-", 25.0, -14.00, 0.01);
        check("OH-", 0.0, -14.94, 0.01);
        // pK2 10.33, pK1 6.35 at 25 C: Plummer & Busenberg 1982 (log K 10.329, 16.681 in phreeqc.dat).
        check("HCO3-", 25.0, 10.329, 0.002);
        check("CO2", 25.0, 16.681, 0.002);
        // HOCl pKa 7.54 at 25 C and 7.75 at 5 C: Morris 1966 via references.md §1 [D].
        check("HOCl", 25.0, 7.54, 0.01);
        check("HOCl", 5.0, 7.75, 0.01);
        // NH4+ pKa 9.25 at 25 C: Emerson et al. 1975 via references.md §1.
        check("NH3", 25.0, -9.25, 0.01);
        // The composite NaHCO3 = -0.25 + log K(HCO3-) at 25 C (phreeqc.dat).
        check("NaHCO3", 25.0, 10.079, 0.002);
        // Phosphate, fluoride, silica at 25 C as tabulated in phreeqc.dat (phreeqpython 1.6.2):
        // pKa 2.17, 7.21, 12.35 for phosphoric acid; HF 3.18 (its analytic expression gives
        // 3.176 by hand); H4SiO4 9.83 (analytic, 9.832 by hand); SiF6-2 30.18.
        check("HPO4-2", 25.0, 12.346, 1e-9);
        check("H2PO4-", 25.0, 19.553, 1e-9);
        check("H3PO4", 25.0, 21.721, 1e-9);
        check("HF", 25.0, 3.176, 0.001);
        check("H3SiO4-", 25.0, -9.832, 0.001);
        check("SiF6-2", 25.0, 30.18, 1e-9);
        // CaHPO4 = 2.739 + log K(HPO4-2) (phreeqc.dat writes it from HPO4-2).
        check("CaHPO4", 25.0, 15.085, 1e-9);
        // H3PO4 with delta_h -10.1 kJ (van't Hoff by hand): at 5 C log K rises by
        // 10100 / (8.314462618 × ln 10) × (1/278.15 − 1/298.15) = 0.1272.
        check("H3PO4", 5.0, 21.848, 0.001);
    }

    #[test]
    fn calcite_pks_and_debye_huckel_a() {
        let table = Table::embedded();
        let th = table.at(25.0);
        let i = table.phase_index("Calcite").unwrap();
        // pKs 8.48 at 25 C: Plummer & Busenberg 1982 (references.md §1).
        assert!(
            (th.phase_log_k[i] + 8.48).abs() < 0.01,
            "{}",
            th.phase_log_k[i]
        );
        // A ≈ 0.51 at 25 C (references.md §2, Davies A ≈ 0.509).
        assert!((th.a_dh - 0.509).abs() < 0.003, "A = {}", th.a_dh);
        // B ≈ 0.33 per angstrom at 25 C (Truesdell & Jones 1974) [from memory].
        assert!((th.b_dh - 0.329).abs() < 0.002, "B = {}", th.b_dh);
    }

    #[test]
    fn bad_data_is_a_typed_error() {
        assert!(Table::parse("{}").is_err());
        assert!(Table::parse("not json").is_err());
    }

    /// The embedded table with `edit` applied to its JSON, parsed: the error's text, or None.
    fn parse_edited(edit: impl Fn(&mut serde_json::Value)) -> Option<String> {
        let mut raw: serde_json::Value =
            serde_json::from_str(include_str!("../../../data/water-constants.json")).unwrap();
        edit(&mut raw);
        Table::parse(&raw.to_string()).err().map(|e| e.to_string())
    }

    fn check_refused(edit: impl Fn(&mut serde_json::Value), expected: &str) {
        match parse_edited(edit) {
            Some(message) => assert!(message.contains(expected), "{message}"),
            None => panic!("a table beyond the solver's sizes was accepted ({expected})"),
        }
    }

    /// A copy of the table's first non-master species (OH-) under a new name.
    fn extra_species(n: usize) -> serde_json::Value {
        let mut raw: serde_json::Value =
            serde_json::from_str(include_str!("../../../data/water-constants.json")).unwrap();
        let mut s = raw["species"][0].take();
        s["species"] = format!("Extra{n}-").into();
        s
    }

    #[test]
    fn a_table_beyond_the_solvers_sizes_is_refused() {
        // The table as shipped fits (the other tests use it).
        assert_eq!(parse_edited(|_| {}), None);
        check_refused(
            |raw| {
                let list = raw["species"].as_array_mut().unwrap();
                for n in NC + list.len()..=super::super::speciation::MAX_SPECIES {
                    list.push(extra_species(n));
                }
            },
            "97 species; the solver holds at most 96",
        );
        check_refused(
            |raw| {
                raw["species"][0]["comp"] = serde_json::json!({"Ca": 1, "Mg": 1, "Na": 1, "K": 1})
            },
            "at most 3 masters",
        );
        check_refused(
            |raw| raw["species"][0]["comp"] = serde_json::json!({"Ca": 0}),
            "counted 1 to 255 times",
        );
        check_refused(
            |raw| {
                // A γ of its own for each of the table's species: classes beyond 48, with as
                // many species as before.
                let list = raw["species"].as_array_mut().unwrap();
                for (n, s) in list.iter_mut().enumerate() {
                    s["gamma"] = serde_json::json!([3.0 + n as f64 * 0.01, 0.0]);
                }
            },
            "activity classes",
        );
    }
}
