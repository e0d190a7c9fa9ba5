//! The product catalog and the stoichiometric reactions, embedded from `data/`.
//!
//! Design: the JSON holds only what a chemist would write down (formulas, unbalanced
//! equations, delivered strengths with their sources); everything numeric that follows from
//! chemistry (molar masses, available-chlorine equivalents, Al2O3 equivalents) is computed
//! here from the formula parser and the exact balancer. The catalog is parsed on demand into
//! an immutable value (no global state); the strength → product conversion is emitted as trace
//! steps so the operator sees each factor with its origin.

use crate::engine::formula::Formula;
use crate::engine::reaction::{Reaction, Side};
use crate::engine::sigfig::{Measured, combine, sig_figs_from_decimals};
use crate::engine::trace::{Origin, Quantity, Trace};
use crate::engine::{Error, ErrorKind, Result, check_positive, check_range};
use serde::{Deserialize, Serialize};
use std::sync::OnceLock;

const PRODUCTS_JSON: &str = include_str!("../../../data/products.json");
const REACTIONS_JSON: &str = include_str!("../../../data/dosing-reactions.json");
/// The chemistry core's reactions (also the basis of equivalents): the dosing calculators use
/// some of them too, so a reaction is written once, in one of the two files.
const CORE_REACTIONS_JSON: &str = include_str!("../../../data/reactions.json");

/// Physical form as delivered.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Form {
    Dry,
    Solution,
    Gas,
}

/// What a delivered strength is expressed as.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum StrengthBasis {
    /// % w/w of the active compound.
    Weight,
    /// Trade % for hypochlorite: g/L of available Cl2 divided by 10 (a mass per volume).
    Trade,
    /// % w/w expressed as Cl2.
    AvailableChlorine,
    /// % w/w expressed as Al2O3 (alum, PACl).
    AsAl2o3,
    /// % w/w of the compound, for dry products (lime, soda ash).
    Purity,
}

impl StrengthBasis {
    pub fn parse(text: &str) -> Result<StrengthBasis> {
        Ok(match text.trim() {
            "weight" => StrengthBasis::Weight,
            "trade" => StrengthBasis::Trade,
            "available-chlorine" => StrengthBasis::AvailableChlorine,
            "as-al2o3" => StrengthBasis::AsAl2o3,
            "purity" => StrengthBasis::Purity,
            other => {
                return Err(Error::new(
                    ErrorKind::InvalidInput,
                    format!(
                        "unknown strength basis '{other}': use weight, trade, available-chlorine, as-al2o3 or purity"
                    ),
                )
                .with("basis", other));
            }
        })
    }

    pub fn code(self) -> &'static str {
        match self {
            StrengthBasis::Weight => "weight",
            StrengthBasis::Trade => "trade",
            StrengthBasis::AvailableChlorine => "available-chlorine",
            StrengthBasis::AsAl2o3 => "as-al2o3",
            StrengthBasis::Purity => "purity",
        }
    }
}

/// A typical delivered strength listed in the catalog, with its source.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct TypicalStrength {
    pub value: f64,
    pub basis: StrengthBasis,
    pub sg: Option<f64>,
    #[serde(default)]
    pub basicity_percent: Option<f64>,
    pub source: String,
}

/// A product in the catalog.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Product {
    pub id: String,
    pub name_key: String,
    /// The product's English name, for records that must read the same in any language (the
    /// dose log, the CLI); the screens translate `name_key` instead.
    pub name: String,
    /// The active compound in the product, as a formula.
    pub compound: String,
    /// The substance a dose in mg/L is expressed as (Cl2 for chlorine products, N for ammonia).
    pub dose_as: String,
    /// How `compound` relates to `dose_as`: a reaction id, an element symbol both contain, or none.
    pub dose_basis_via: Option<String>,
    pub form: Form,
    pub reaction: Option<String>,
    pub standard: Option<String>,
    pub strengths: Vec<TypicalStrength>,
    pub hazards: Vec<String>,
    pub incompatibilities: Vec<String>,
    /// Specific gravity by strength, where the trade uses a table instead of a certificate value.
    #[serde(default)]
    pub density_table: Option<DensityTable>,
    /// A typical NSF/ANSI/CAN 60 maximum use level, used only when the site records none.
    #[serde(default)]
    pub typical_max_use_level: Option<TypicalMaxUseLevel>,
    /// A gas's solubility in water (Henry's law), for a dose no water can dissolve.
    #[serde(default)]
    pub henry: Option<Henry>,
}

/// A typical maximum use level (mg/L of product as delivered) with its source; a product's own
/// certificate may differ, so a site's figure always replaces it.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct TypicalMaxUseLevel {
    pub mg_l: f64,
    pub source: String,
}

/// Henry's law solubility of a gas: Hcp at 25 °C and its van 't Hoff temperature dependence,
/// in the form of Sander's compilation.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Henry {
    /// mol/(m³·Pa) at 298.15 K.
    pub hcp_mol_per_m3_pa: f64,
    /// d ln Hcp / d(1/T), K.
    pub d_ln_hcp_d_inv_t_k: f64,
    pub source: String,
    /// The gas's molar mass, g/mol, from its formula when the catalog is loaded (every water
    /// command checks its CO2 against this solubility; parsing the formula each time cost
    /// more than the check).
    #[serde(skip)]
    pub molar_mass: Option<f64>,
}

/// One standard atmosphere, Pa (exact by definition).
const PA_PER_ATM: f64 = 101_325.0;

impl Henry {
    /// mg/L of the gas that dissolves at `temperature_c` under one atmosphere of the gas itself:
    /// Hcp(T) = Hcp° · exp(B · (1/T − 1/298.15 K)); mol/m³ × g/mol = g/m³ = mg/L.
    pub fn solubility_mg_l_at_1_atm(&self, molar_mass: f64, temperature_c: f64) -> f64 {
        let t = temperature_c + 273.15;
        let hcp =
            self.hcp_mol_per_m3_pa * (self.d_ln_hcp_d_inv_t_k * (1.0 / t - 1.0 / 298.15)).exp();
        hcp * PA_PER_ATM * molar_mass
    }
}

impl Product {
    /// The SG the product's density table gives at `strength` on `basis`, with the table;
    /// `None` without a table, on another basis or outside the table's strengths.
    pub fn expected_sg(&self, basis: StrengthBasis, strength: f64) -> Option<(f64, &DensityTable)> {
        let t = self.density_table.as_ref()?;
        Some((t.sg_at(basis, strength)?, t))
    }

    /// The lowest strength the catalog lists for the product as delivered, on any basis.
    pub fn lowest_typical_strength(&self) -> Option<f64> {
        self.strengths
            .iter()
            .map(|s| s.value)
            .min_by(|a, b| a.total_cmp(b))
    }
}

fn default_tolerance() -> f64 {
    3.0
}

/// Specific gravity against strength at one temperature, with its source.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct DensityTable {
    pub basis: StrengthBasis,
    pub temperature_c: f64,
    pub source: String,
    /// How far (in % of the table's SG) a typed SG may stand from the table before a caution;
    /// the table's source note says why (3 % when it does not).
    #[serde(default = "default_tolerance")]
    pub tolerance_percent: f64,
    /// (strength %, SG) pairs in increasing strength.
    pub points: Vec<(f64, f64)>,
}

impl DensityTable {
    /// Linear interpolation inside the table; `None` outside it (no extrapolation: densities
    /// of concentrated solutions curve).
    pub fn sg_at(&self, basis: StrengthBasis, strength: f64) -> Option<f64> {
        if basis != self.basis || !strength.is_finite() {
            return None;
        }
        self.points.windows(2).find_map(|w| {
            let ((s0, g0), (s1, g1)) = (w[0], w[1]);
            (strength >= s0 && strength <= s1 && s1 > s0)
                .then(|| g0 + (g1 - g0) * (strength - s0) / (s1 - s0))
        })
    }
}

/// Fills in a missing SG of a solution from the product's density table. Returns the strength
/// to use and, when the table supplied the SG, an info caution naming it.
pub fn resolve_sg(p: &Product, s: &Strength) -> (Strength, Option<super::Caution>) {
    if s.sg.is_some() || p.form != Form::Solution {
        return (*s, None);
    }
    match p
        .density_table
        .as_ref()
        .and_then(|t| t.sg_at(s.basis, s.value.value).map(|sg| (t, sg)))
    {
        Some((t, sg)) => (
            Strength {
                sg: Some(Measured {
                    value: sg,
                    sig_figs: Some(3),
                }),
                ..*s
            },
            Some(
                super::Caution::info("sg-from-density-table")
                    .with("sg", format!("{sg:.3}"))
                    .with("temperature_c", t.temperature_c),
            ),
        ),
        None => (*s, None),
    }
}

/// A stoichiometric reaction with its source.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct ReactionEntry {
    pub id: String,
    pub equation: String,
    pub source: String,
    /// A field-practice amount, where the trade uses more than the stoichiometry.
    #[serde(default)]
    pub practice: Option<Practice>,
}

/// A field-practice ratio with its source, kept apart from the stoichiometric one.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Practice {
    pub mg_per_mg_cl2: f64,
    pub source: String,
}

#[derive(Deserialize)]
struct ProductsFile {
    products: Vec<Product>,
}

#[derive(Deserialize)]
struct ReactionsFile {
    reactions: Vec<ReactionEntry>,
}

/// The embedded catalog.
#[derive(Clone, Debug)]
pub struct Catalog {
    pub products: Vec<Product>,
    pub reactions: Vec<ReactionEntry>,
    /// Each reaction of the data as the engine balanced it the first time it was asked for,
    /// with the equation it was balanced from: a calculation reads mole ratios on every
    /// keystroke (and again for every reading moved by its precision), and balancing is the
    /// dearest step of it; balancing on first use keeps it out of start-up for the reactions
    /// no screen asks for. An entry added after the build (the validation tests do) has no
    /// slot, and one whose equation was changed no longer matches: both are balanced afresh.
    balanced: Vec<OnceLock<Option<(String, Reaction)>>>,
}

/// A strength as delivered (from the certificate of analysis or the operator).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Strength {
    pub value: Measured,
    pub basis: StrengthBasis,
    /// Specific gravity; required for solutions.
    pub sg: Option<Measured>,
}

impl Strength {
    pub fn new(value: Measured, basis: StrengthBasis, sg: Option<Measured>) -> Strength {
        Strength { value, basis, sg }
    }
}

/// (is a product, formula, coefficient) for each species of a balanced reaction.
type SpeciesKey = Vec<(bool, String, u64)>;

/// The species of a balanced reaction with their coefficients, in an order that does not
/// depend on how the equation was written: sorted, and taken in whichever direction sorts
/// first, so `A + B -> C` and `C <- B + A` (or `C -> A + B`) compare equal.
fn same_reaction_key(r: &Reaction) -> SpeciesKey {
    let side = |flip: bool| {
        let mut key: Vec<(bool, String, u64)> = r
            .species()
            .iter()
            .map(|s| {
                (
                    (s.side == Side::Product) != flip,
                    s.formula.to_string(),
                    s.coefficient,
                )
            })
            .collect();
        key.sort();
        key
    };
    side(false).min(side(true))
}

/// A typed SG further than this from the product's density relation (in % of the relation's
/// SG) is refused: temperature (±15 °C moves a caustic's or an acid's SG by about 1 %), a
/// certificate's strength tolerance (about 1 %) and impurities (a hypochlorite's salt, a
/// ferric's free acid: 1-3 %) together stay well inside it (from memory), while the typos it
/// exists for — 1.0 (water) or 0.5 for 50 % caustic at 1.52, a digit dropped — are 30-70 %
/// off and misfeed the product by as much. Between a table's own tolerance and this, the
/// caller cautions.
pub const SG_REFUSED_PERCENT: f64 = 10.0;

/// A typed SG against `p`'s density relation at `strength` on `basis`: an error beyond
/// [`SG_REFUSED_PERCENT`], else the SG expected and the table's tolerance when the SG is off by
/// more than that tolerance, else `None` (also without a relation at that strength). The one
/// check the calculator guards and the site profile share.
pub fn check_sg_against_strength(
    p: &Product,
    basis: StrengthBasis,
    strength: f64,
    sg: f64,
) -> Result<Option<(f64, f64)>> {
    let Some((expected, table)) = p.expected_sg(basis, strength) else {
        return Ok(None);
    };
    let off = (sg / expected - 1.0) * 100.0;
    let expected_text = format!("{expected:.3}");
    if off.abs() > SG_REFUSED_PERCENT {
        return Err(Error::new(
            ErrorKind::OutOfRange,
            format!(
                "SG {sg} does not belong to {} at {strength} % {}: its density table gives {expected_text} at {} °C",
                p.id,
                basis.code(),
                table.temperature_c
            ),
        )
        .because("sg-does-not-match-strength")
        .with("sg", sg)
        .with("strength", strength)
        .with("expected", expected_text)
        .with("product", &p.id));
    }
    Ok((off.abs() > table.tolerance_percent).then_some((expected, table.tolerance_percent)))
}

/// Checks a specific gravity against the range any water-treatment liquid can have.
pub fn check_sg(sg: f64) -> Result<f64> {
    check_range("specific gravity", sg, 0.5, 2.5, "")
}

/// Molar mass and the significant figures its atomic weights support.
pub fn molar_mass(formula: &str) -> Result<(f64, Option<u8>)> {
    let f = Formula::parse(formula)?;
    let m = f.molar_mass();
    Ok((m, Some(sig_figs_from_decimals(m, f.molar_mass_decimals()))))
}

impl Catalog {
    /// The embedded catalog, parsed the first time it is asked for and kept (a write-once cache
    /// of data that is part of the build, like the water engine's constants table): for the
    /// checks every water command makes, where parsing the catalog again would cost more than
    /// the chemistry.
    pub fn embedded() -> Result<&'static Catalog> {
        static CATALOG: OnceLock<Result<Catalog>> = OnceLock::new();
        CATALOG
            .get_or_init(Catalog::builtin)
            .as_ref()
            .map_err(Clone::clone)
    }

    /// Parses the embedded data. The data is part of the build, so a failure here is caught
    /// by the catalog tests; it is still a typed error, never a panic.
    pub fn builtin() -> Result<Catalog> {
        let products: ProductsFile = serde_json::from_str(PRODUCTS_JSON)
            .map_err(|e| Error::new(ErrorKind::Syntax, format!("data/products.json: {e}")))?;
        let reactions = |file: &str, text: &str| -> Result<Vec<ReactionEntry>> {
            serde_json::from_str::<ReactionsFile>(text)
                .map(|f| f.reactions)
                .map_err(|e| Error::new(ErrorKind::Syntax, format!("{file}: {e}")))
        };
        let mut all = reactions("data/dosing-reactions.json", REACTIONS_JSON)?;
        all.extend(reactions("data/reactions.json", CORE_REACTIONS_JSON)?);
        let balanced = all.iter().map(|_| OnceLock::new()).collect();
        let mut products = products.products;
        for p in &mut products {
            if let Some(h) = p.henry.as_mut() {
                h.molar_mass = Some(molar_mass(&p.compound)?.0);
            }
        }
        Ok(Catalog {
            products,
            reactions: all,
            balanced,
        })
    }

    pub fn product(&self, id: &str) -> Result<&Product> {
        self.products.iter().find(|p| p.id == id).ok_or_else(|| {
            let known: Vec<&str> = self.products.iter().map(|p| p.id.as_str()).collect();
            Error::new(
                ErrorKind::UnknownChemical,
                format!("unknown product '{id}'; known: {}", known.join(", ")),
            )
            .with("product", id)
        })
    }

    pub fn reaction_entry(&self, id: &str) -> Result<&ReactionEntry> {
        self.numbered_entry(id).map(|(_, entry)| entry)
    }

    /// The entry of reaction `id` with its place in `reactions` (and in `balanced`).
    fn numbered_entry(&self, id: &str) -> Result<(usize, &ReactionEntry)> {
        self.reactions
            .iter()
            .enumerate()
            .find(|(_, r)| r.id == id)
            .ok_or_else(|| {
                Error::new(
                    ErrorKind::UnknownChemical,
                    format!("unknown reaction '{id}'"),
                )
                .with("reaction", id)
            })
    }

    /// The reaction, balanced exactly by the engine (once, the first time it is asked for).
    pub fn reaction(&self, id: &str) -> Result<Reaction> {
        let (i, entry) = self.numbered_entry(id)?;
        let equation = &entry.equation;
        // A reaction that does not balance is not kept: asking again gives the balancer's
        // own error, as `validate` reports it.
        let cached = self.balanced.get(i).and_then(|slot| {
            slot.get_or_init(|| {
                Reaction::balance(equation)
                    .ok()
                    .map(|r| (equation.clone(), r))
            })
            .as_ref()
        });
        match cached {
            Some((balanced_from, reaction)) if balanced_from == equation => Ok(reaction.clone()),
            _ => Reaction::balance(equation),
        }
    }

    /// g of `to` per g of `from` in reaction `id`, with the trace origin naming the equation.
    pub fn mass_ratio(&self, id: &str, from: &str, to: &str) -> Result<(f64, Origin)> {
        let r = self.reaction(id)?;
        Ok((
            r.mass_ratio(from, to)?,
            Origin::MoleRatio {
                reaction: r.to_string(),
            },
        ))
    }

    /// Checks every formula and reaction in the catalog: used by tests and at app start.
    pub fn validate(&self) -> Result<()> {
        let mut seen: Vec<(&str, SpeciesKey)> = Vec::with_capacity(self.reactions.len());
        for r in &self.reactions {
            let balanced = Reaction::balance(&r.equation).map_err(|e| e.with("reaction", &r.id))?;
            let balanced = same_reaction_key(&balanced);
            // A reaction written twice (in one file or across the two) could drift apart in
            // its source or its species: one id and one balanced form each.
            if let Some((earlier, _)) = seen.iter().find(|(id, b)| *id == r.id || *b == balanced) {
                return Err(Error::new(
                    ErrorKind::InvalidInput,
                    format!("reaction '{}' repeats '{earlier}'", r.id),
                )
                .with("reaction", &r.id));
            }
            seen.push((&r.id, balanced));
        }
        for p in &self.products {
            Formula::parse(&p.compound)?;
            Formula::parse(&p.dose_as)?;
            if let Some(r) = &p.reaction {
                self.reaction_entry(r)?;
            }
            self.compound_per_dose_as(p)?;
            if let Some(t) = &p.density_table {
                for (strength, sg) in &t.points {
                    check_sg(*sg).map_err(|e| e.with("product", &p.id))?;
                    check_range("strength", *strength, 0.0, 100.0, "%")?;
                }
                // Built-in data, checked by the catalog tests: no quantity name an operator sees.
                if !(0.5..=10.0).contains(&t.tolerance_percent) {
                    return Err(Error::new(
                        ErrorKind::InvalidInput,
                        format!("{}: SG tolerance outside 0.5-10 %", p.id),
                    ));
                }
                // The catalog's own strengths must sit on its own relation.
                for s in &p.strengths {
                    if let (Some(sg), Some((expected, _))) = (s.sg, p.expected_sg(s.basis, s.value))
                        && ((sg / expected - 1.0) * 100.0).abs() > t.tolerance_percent
                    {
                        return Err(Error::new(
                            ErrorKind::InvalidInput,
                            format!(
                                "{}: typical SG {sg} is off its density table ({expected:.3})",
                                p.id
                            ),
                        )
                        .with("product", &p.id));
                    }
                }
            }
            if let Some(m) = &p.typical_max_use_level {
                check_positive("maximum use level", m.mg_l, "mg/L")?;
            }
            if let Some(h) = &p.henry
                && !(h.hcp_mol_per_m3_pa > 0.0 && h.d_ln_hcp_d_inv_t_k.is_finite())
            {
                return Err(Error::new(
                    ErrorKind::InvalidInput,
                    format!("{}: Henry's law constant must be positive", p.id),
                ));
            }
            for t in &p.strengths {
                let s = Strength::new(Measured::exact(t.value), t.basis, t.sg.map(Measured::exact));
                check_strength(self, p, &s).map_err(|e| e.with("product", &p.id))?;
            }
        }
        Ok(())
    }

    /// g of compound per g of the dose-as substance, with the trace steps that derive it.
    /// Steps go from `kg/d <dose_as>` to `kg/d <compound>`.
    pub fn compound_per_dose_as(&self, p: &Product) -> Result<Vec<StepSpec>> {
        let mut steps = Vec::new();
        match p.dose_basis_via.as_deref() {
            None => {}
            Some(via) if self.reactions.iter().any(|r| r.id == via) => {
                let (ratio, origin) = self.mass_ratio(via, &p.dose_as, &p.compound)?;
                let (_, sig_a) = molar_mass(&p.dose_as)?;
                let (_, sig_b) = molar_mass(&p.compound)?;
                steps.push(StepSpec {
                    numerator: Quantity::of(ratio, "kg/d", &p.compound),
                    denominator: Quantity::of(1.0, "kg/d", &p.dose_as),
                    origin,
                    sig_figs: combine(sig_a, sig_b),
                });
            }
            Some(element) => {
                steps.extend(via_element(&p.dose_as, &p.compound, element)?);
            }
        }
        Ok(steps)
    }

    /// The mass fraction of `dose_as` that pure compound carries as available chlorine, used to
    /// reject a strength no real product can have (e.g. 120 % available chlorine).
    fn max_available_chlorine_percent(&self, p: &Product) -> Result<f64> {
        Ok(100.0 / StepSpec::factor(&self.compound_per_dose_as(p)?))
    }
}

/// A trace step before it is applied.
#[derive(Clone, Debug)]
pub struct StepSpec {
    pub numerator: Quantity,
    pub denominator: Quantity,
    pub origin: Origin,
    pub sig_figs: Option<u8>,
}

impl StepSpec {
    /// The factor a chain of steps multiplies by (each numerator over its denominator).
    fn factor(steps: &[StepSpec]) -> f64 {
        steps
            .iter()
            .fold(1.0, |acc, s| acc * s.numerator.value / s.denominator.value)
    }

    pub fn apply(self, trace: &mut Trace) -> Result<()> {
        trace.then(self.numerator, self.denominator, self.origin, self.sig_figs)?;
        Ok(())
    }
}

/// Steps `kg/d from` → `kmol/d element` → `kg/d to`, relating two formulas through an element
/// they share (alum as Al2O3, ammonia as N).
fn via_element(from: &str, to: &str, element: &str) -> Result<Vec<StepSpec>> {
    let f_from = Formula::parse(from)?;
    let f_to = Formula::parse(to)?;
    let n_from = f_from.count(element);
    let n_to = f_to.count(element);
    if n_from == 0 || n_to == 0 {
        return Err(Error::new(
            ErrorKind::NotInReaction,
            format!("{element} is not in both {from} and {to}"),
        )
        .with("element", element));
    }
    let (m_from, sig_from) = molar_mass(from)?;
    let (m_to, sig_to) = molar_mass(to)?;
    let mol_unit = "kmol/d";
    Ok(vec![
        StepSpec {
            numerator: Quantity::of(n_from as f64, mol_unit, element),
            denominator: Quantity::of(m_from, "kg/d", from),
            origin: Origin::MolarMass {
                formula: from.to_string(),
            },
            sig_figs: sig_from,
        },
        StepSpec {
            numerator: Quantity::of(m_to, "kg/d", to),
            denominator: Quantity::of(n_to as f64, mol_unit, element),
            origin: Origin::MolarMass {
                formula: to.to_string(),
            },
            sig_figs: sig_to,
        },
    ])
}

/// The product needed for an active feed, as a trace from `kg/d <dose_as>`.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct ProductFeed {
    pub product_kg_per_day: f64,
    /// Litres of product per day; `None` for dry products and gases.
    pub product_l_per_day: Option<f64>,
    pub trace: Trace,
}

/// Validates a delivered strength for a product (0 < strength ≤ 100 %, SG 0.5–2.5 for solutions,
/// basis that fits the product).
pub fn check_strength(catalog: &Catalog, p: &Product, s: &Strength) -> Result<()> {
    check_positive("strength", s.value.value, "%")?;
    check_range("strength", s.value.value, 0.0, 100.0, "%")?;
    if let Some(sg) = s.sg {
        check_sg(sg.value)?;
    }
    if p.form == Form::Solution && s.sg.is_none() {
        return Err(Error::new(
            ErrorKind::InvalidInput,
            format!("{} is a solution: give its specific gravity", p.id),
        )
        .because("needs-specific-gravity")
        .with("quantity", "specific gravity"));
    }
    let wrong_basis = |why: &str| {
        Error::new(
            ErrorKind::InvalidInput,
            format!(
                "strength basis {} does not apply to {}: {why}",
                s.basis.code(),
                p.id
            ),
        )
        .because("basis-not-for-product")
        .with("basis", s.basis.code())
        .with("product", &p.id)
    };
    match s.basis {
        StrengthBasis::Trade | StrengthBasis::AvailableChlorine if p.dose_as != "Cl2" => {
            return Err(wrong_basis(
                "only chlorine products are rated as available chlorine",
            ));
        }
        StrengthBasis::Trade if p.form != Form::Solution => {
            return Err(wrong_basis("trade % is a mass per volume of a solution"));
        }
        StrengthBasis::AsAl2o3 if Formula::parse(&p.compound)?.count("Al") == 0 => {
            return Err(wrong_basis("the product contains no aluminium"));
        }
        StrengthBasis::AvailableChlorine => {
            let max = catalog.max_available_chlorine_percent(p)?;
            if s.value.value > max + 1e-9 {
                return Err(Error::new(
                    ErrorKind::OutOfRange,
                    format!(
                        "{} % available chlorine is more than pure {} carries ({max:.1} %)",
                        s.value.value, p.compound
                    ),
                )
                .because("strength-above-pure")
                .with("quantity", "strength")
                .with("value", s.value.value)
                .with("max", format!("{max:.1}")));
            }
        }
        StrengthBasis::AsAl2o3 => {
            // Pure compound is the most Al2O3 a product can carry (17.2 % for alum's
            // 14-hydrate): a strength above it is another basis typed as Al2O3 (the 48.5 % a
            // certificate gives as dry alum read as Al2O3 would underfeed six times).
            let max = 100.0 * StepSpec::factor(&via_element(&p.compound, "Al2O3", "Al")?);
            if s.value.value > max + 1e-9 {
                return Err(Error::new(
                    ErrorKind::OutOfRange,
                    format!(
                        "{} % as Al2O3 is more than pure {} carries ({max:.1} %). If it is the product's strength as {} (% by weight), it is {:.1} % as Al2O3",
                        s.value.value,
                        p.compound,
                        p.compound,
                        s.value.value * max / 100.0
                    ),
                )
                .because("strength-above-pure-al2o3")
                .with("quantity", "strength")
                .with("value", s.value.value)
                .with("max", format!("{max:.1}")));
            }
        }
        StrengthBasis::Trade => {
            // g/L of available Cl2 cannot exceed the solution's own density in g/L.
            let sg = s.sg.map_or(2.5, |m| m.value);
            if s.value.value * 10.0 > sg * 1000.0 {
                return Err(Error::new(
                    ErrorKind::OutOfRange,
                    format!(
                        "{} trade % is more chlorine than the solution weighs",
                        s.value.value
                    ),
                )
                .because("trade-strength-above-density")
                .with("quantity", "strength")
                .with("value", s.value.value));
            }
        }
        _ => {}
    }
    Ok(())
}

/// Extends `trace` (currently `kg/d <dose_as>`) to the product as delivered: kg/d of product
/// and, for solutions, L/d.
pub fn active_to_product(
    catalog: &Catalog,
    p: &Product,
    s: &Strength,
    mut trace: Trace,
) -> Result<ProductFeed> {
    check_strength(catalog, p, s)?;
    let label = format!("{} {} % {}", p.id, s.value.value, s.basis.code());
    let product_origin = || Origin::Product {
        name: label.clone(),
    };
    let product_name = format!("product {}", p.id);
    let density = |sg: Measured| {
        (
            Quantity::of(sg.value, "kg/d", &product_name),
            Quantity::of(1.0, "L/d", &product_name),
        )
    };
    match s.basis {
        StrengthBasis::Trade => {
            trace.then(
                Quantity::of(1000.0, "g/d", &p.dose_as),
                Quantity::of(1.0, "kg/d", &p.dose_as),
                Origin::UnitDefinition,
                None,
            )?;
            // Trade % is defined as g/L available Cl2 ÷ 10 (White, Handbook of Chlorination).
            trace.then(
                Quantity::of(1.0, "L/d", &product_name),
                Quantity::of(10.0 * s.value.value, "g/d", &p.dose_as),
                product_origin(),
                s.value.sig_figs,
            )?;
            let litres = trace.value();
            let sg = s.sg.ok_or_else(|| {
                Error::new(ErrorKind::InvalidInput, "specific gravity missing")
                    .because("needs-specific-gravity")
            })?;
            Ok(ProductFeed {
                product_kg_per_day: litres * sg.value,
                product_l_per_day: Some(litres),
                trace,
            })
        }
        basis => {
            if basis != StrengthBasis::AvailableChlorine {
                for step in catalog.compound_per_dose_as(p)? {
                    step.apply(&mut trace)?;
                }
            }
            let expressed_as = match basis {
                StrengthBasis::AvailableChlorine => p.dose_as.clone(),
                StrengthBasis::AsAl2o3 => {
                    for step in via_element(&p.compound, "Al2O3", "Al")? {
                        step.apply(&mut trace)?;
                    }
                    "Al2O3".to_string()
                }
                _ => p.compound.clone(),
            };
            trace.then(
                Quantity::of(100.0, "kg/d", &product_name),
                Quantity::of(s.value.value, "kg/d", &expressed_as),
                product_origin(),
                s.value.sig_figs,
            )?;
            let kg = trace.value();
            let litres = match (p.form, s.sg) {
                (Form::Solution, Some(sg)) => {
                    let (k, l) = density(sg);
                    // SG × 1 kg/L: water's density taken as 1 kg/L (common practice; the
                    // 0.1 % difference at 15 °C is below the SG's own precision).
                    trace.then(l, k, product_origin(), sg.sig_figs)?;
                    Some(trace.value())
                }
                _ => None,
            };
            Ok(ProductFeed {
                product_kg_per_day: kg,
                product_l_per_day: litres,
                trace,
            })
        }
    }
}
