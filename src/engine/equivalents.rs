//! Equivalents: "mg/L as CaCO3" and equivalent weights, derived from balanced reactions.
//!
//! The trade expresses alkalinity, hardness and acid/base doses "as CaCO3". Rather than typing
//! in 50, 0.5 or 0.925, we derive each factor: an alkalinity carrier's equivalents are the mol
//! of H+ it takes up in its titration reaction (`data/reactions.json`, `proton_references`),
//! and a chemical's effect comes from the coefficients of its balanced reaction with that
//! carrier. The result is a [`Trace`], so the UI can show the chain
//! `mg product → mmol product → mmol carrier → meq → mg as CaCO3`.

use super::formula::Formula;
use super::reaction::Reaction;
use super::sigfig::sig_figs_from_decimals;
use super::trace::{Origin, Quantity, Trace};
use super::{Error, ErrorKind, Result};
use num_rational::Ratio;
use num_traits::CheckedMul;
use serde::Deserialize;

const REACTIONS_JSON: &str = include_str!("../../data/reactions.json");

/// A reaction from the data file, balanced, with its id and source.
#[derive(Clone, Debug)]
pub struct NamedReaction {
    pub id: String,
    pub reaction: Reaction,
    pub source: String,
}

/// The embedded reaction data, parsed and balanced once by whoever holds it.
#[derive(Clone, Debug)]
pub struct ReactionLibrary {
    reactions: Vec<NamedReaction>,
    proton_references: Vec<(Formula, Reaction)>,
}

#[derive(Deserialize)]
struct File {
    reactions: Vec<Entry>,
    proton_references: ProtonFile,
}

#[derive(Deserialize)]
struct Entry {
    id: String,
    equation: String,
    source: String,
}

#[derive(Deserialize)]
struct ProtonFile {
    reactions: Vec<ProtonEntry>,
}

#[derive(Deserialize)]
struct ProtonEntry {
    species: String,
    equation: String,
}

impl ReactionLibrary {
    /// Parses and balances `data/reactions.json`. Fails only if the shipped data is broken,
    /// which the test suite checks.
    pub fn builtin() -> Result<ReactionLibrary> {
        Self::from_json(REACTIONS_JSON)
    }

    pub fn from_json(text: &str) -> Result<ReactionLibrary> {
        let file: File = serde_json::from_str(text).map_err(|e| {
            Error::new(
                ErrorKind::Syntax,
                format!("reaction data is not valid: {e}"),
            )
        })?;
        let reactions = file
            .reactions
            .into_iter()
            .map(|e| {
                let reaction = Reaction::balance(&e.equation)
                    .map_err(|err| Error::new(err.kind(), format!("reaction '{}': {err}", e.id)))?;
                Ok(NamedReaction {
                    id: e.id,
                    reaction,
                    source: e.source,
                })
            })
            .collect::<Result<Vec<_>>>()?;
        let proton_references = file
            .proton_references
            .reactions
            .into_iter()
            .map(|e| Ok((Formula::parse(&e.species)?, Reaction::balance(&e.equation)?)))
            .collect::<Result<Vec<_>>>()?;
        Ok(ReactionLibrary {
            reactions,
            proton_references,
        })
    }

    pub fn reactions(&self) -> &[NamedReaction] {
        &self.reactions
    }

    pub fn get(&self, id: &str) -> Result<&NamedReaction> {
        self.reactions.iter().find(|r| r.id == id).ok_or_else(|| {
            Error::new(
                ErrorKind::UnknownChemical,
                format!("no reaction '{id}' in the data"),
            )
            .with("id", id)
        })
    }

    /// Mol of H+ one mol of `species` takes up (bases, alkalinity) or gives (acids), exactly.
    pub fn proton_equivalents(&self, species: &str) -> Result<Ratio<i64>> {
        let formula = Formula::parse(species)?;
        let (_, reaction) = self
            .proton_references
            .iter()
            .find(|(f, _)| f.same_composition(&formula))
            .ok_or_else(|| {
                Error::new(
                    ErrorKind::UnknownChemical,
                    format!("no titration reaction for {formula} in the data"),
                )
                .with("species", &formula)
            })?;
        // Bases and alkalinity are titrated with H+, acids with OH-: whichever the reference
        // reaction uses is the unit of exchange (H+ itself is counted against OH-).
        let partner = if formula.to_string() != "H+" && reaction.find("H+").is_ok() {
            "H+"
        } else {
            "OH-"
        };
        reaction.mole_ratio(species, partner)
    }

    /// Equivalent weight in g/eq: molar mass divided by equivalents per mol.
    pub fn equivalent_weight(&self, species: &str) -> Result<f64> {
        let eq = self.proton_equivalents(species)?;
        let m = Formula::parse(species)?.molar_mass();
        Ok(m * *eq.denom() as f64 / *eq.numer() as f64)
    }

    /// Equivalents per mol of `species` through its reaction with an alkalinity `carrier`
    /// (e.g. FeCl3 with HCO3-: 3 mol HCO3- × 1 eq/mol = 3 eq per mol FeCl3), exactly.
    pub fn equivalents_via(
        &self,
        reaction: &Reaction,
        species: &str,
        carrier: &str,
    ) -> Result<Ratio<i64>> {
        let ratio = reaction.mole_ratio(species, carrier)?;
        ratio
            .checked_mul(&self.proton_equivalents(carrier)?)
            .ok_or_else(|| Error::new(ErrorKind::Overflow, "equivalents too large"))
    }

    /// Grams of `species` per equivalent of `carrier` through `reaction` (FeCl3 with HCO3-:
    /// 162.2 g/mol ÷ 3 eq/mol = 54.07 g/eq), from [`Self::equivalents_via`].
    pub fn equivalent_weight_via(
        &self,
        reaction: &Reaction,
        species: &str,
        carrier: &str,
    ) -> Result<f64> {
        let eq = self.equivalents_via(reaction, species, carrier)?;
        let m = reaction.find(species)?.formula.molar_mass();
        Ok(m * *eq.denom() as f64 / *eq.numer() as f64)
    }

    /// mg/L as CaCO3 of `carrier` consumed (or produced) per mg/L of `species`, per `reaction`,
    /// as a trace from 1 mg of the species.
    pub fn as_caco3_per_mg(
        &self,
        reaction: &Reaction,
        species: &str,
        carrier: &str,
    ) -> Result<Trace> {
        let s = reaction.find(species)?;
        let c = reaction.find(carrier)?;
        let s_name = s.formula.to_string();
        let c_name = c.formula.to_string();
        let m = s.formula.molar_mass();
        let carrier_eq = self.proton_equivalents(carrier)?;
        let caco3_weight = self.equivalent_weight("CaCO3")?;
        let caco3_formula = Formula::parse("CaCO3")?;
        let mut trace = Trace::new(Quantity::of(1.0, "mg", &s_name), Origin::Measured, None);
        trace.then(
            Quantity::of(1.0, "mmol", &s_name),
            Quantity::of(m, "mg", &s_name),
            Origin::MolarMass {
                formula: s_name.clone(),
            },
            Some(sig_figs_from_decimals(m, s.formula.molar_mass_decimals())),
        )?;
        trace.then(
            Quantity::of(c.coefficient as f64, "mmol", &c_name),
            Quantity::of(s.coefficient as f64, "mmol", &s_name),
            Origin::MoleRatio {
                reaction: reaction.to_string(),
            },
            None,
        )?;
        trace.then(
            Quantity::of(*carrier_eq.numer() as f64, "meq", &c_name),
            Quantity::of(*carrier_eq.denom() as f64, "mmol", &c_name),
            Origin::MoleRatio {
                reaction: format!("titration of {c_name} with H+"),
            },
            None,
        )?;
        trace.then(
            Quantity::of(caco3_weight, "mg", "CaCO3"),
            Quantity::of(1.0, "meq", &c_name),
            Origin::MolarMass {
                formula: "CaCO3 (½ mol per eq)".into(),
            },
            Some(sig_figs_from_decimals(
                caco3_weight,
                caco3_formula.molar_mass_decimals(),
            )),
        )?;
        Ok(trace)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn library() -> ReactionLibrary {
        ReactionLibrary::builtin().expect("shipped reaction data balances")
    }

    fn check_as_caco3(
        reaction_id: &str,
        species: &str,
        carrier: &str,
        published: f64,
        tolerance: f64,
    ) {
        let lib = library();
        let r = &lib.get(reaction_id).unwrap().reaction;
        let value = lib.as_caco3_per_mg(r, species, carrier).unwrap().value();
        assert!(
            (value - published).abs() <= tolerance,
            "{reaction_id}: derived {value}, published {published}"
        );
    }

    #[test]
    fn equivalent_weights_follow_from_titration_reactions() {
        let lib = library();
        // CaCO3 + 2 H+ -> ...: 100.086 / 2 g/eq.
        assert!((lib.equivalent_weight("CaCO3").unwrap() - 100.086 / 2.0).abs() < 1e-9);
        assert_eq!(lib.proton_equivalents("Ca(OH)2").unwrap(), Ratio::new(2, 1));
        assert_eq!(lib.proton_equivalents("HCO3-").unwrap(), Ratio::new(1, 1));
        assert_eq!(lib.proton_equivalents("H+").unwrap(), Ratio::new(1, 1));
        assert_eq!(lib.proton_equivalents("H2SO4").unwrap(), Ratio::new(2, 1));
        assert_eq!(lib.proton_equivalents("CO2").unwrap(), Ratio::new(1, 1));
        // Sulfuric acid: 98.072 / 2 g/eq, worked by hand from IUPAC weights.
        let h2so4 = (2.0 * 1.008 + 32.06 + 4.0 * 15.999) / 2.0;
        assert!((lib.equivalent_weight("H2SO4").unwrap() - h2so4).abs() < 1e-9);
        assert_eq!(
            lib.proton_equivalents("KMnO4").unwrap_err().kind(),
            ErrorKind::UnknownChemical
        );
    }

    #[test]
    fn a_coagulants_equivalent_weight_goes_through_its_carrier() {
        let lib = library();
        // FeCl3 + 3 HCO3- -> ...: 3 eq of bicarbonate a mole; 162.20 / 3 g/eq, worked by hand
        // from IUPAC weights (Fe 55.845, Cl 35.45).
        let r = &lib.get("ferric-chloride-bicarbonate").unwrap().reaction;
        let by_hand = (55.845 + 3.0 * 35.45) / 3.0;
        let weight = lib.equivalent_weight_via(r, "FeCl3", "HCO3-").unwrap();
        assert!(
            (weight - by_hand).abs() < 1e-9,
            "{weight} against {by_hand}"
        );
        assert_eq!(
            lib.equivalent_weight_via(r, "FeCl3", "OH-")
                .unwrap_err()
                .kind(),
            ErrorKind::NotInReaction
        );
    }

    #[test]
    fn alkalinity_consumed_by_coagulants() {
        // Published derived values: shared/domain/references.md §5 (alum 0.505, alum·18H2O
        // 0.45, FeCl3 0.925), and the trade's rule of thumb "1 mg/L alum uses 0.5 mg/L
        // alkalinity" (common practice).
        check_as_caco3(
            "alum-14-calcium-bicarbonate",
            "Al2(SO4)3·14H2O",
            "Ca(HCO3)2",
            0.505,
            0.001,
        );
        check_as_caco3(
            "alum-18-bicarbonate",
            "Al2(SO4)3·18H2O",
            "HCO3-",
            0.45,
            0.002,
        );
        check_as_caco3(
            "ferric-chloride-bicarbonate",
            "FeCl3",
            "HCO3-",
            0.925,
            0.001,
        );
    }

    #[test]
    fn every_shipped_reaction_has_a_source() {
        let lib = library();
        assert!(lib.reactions().len() >= 15);
        for r in lib.reactions() {
            assert!(!r.source.trim().is_empty(), "{} has no source", r.id);
        }
        assert_eq!(
            lib.get("nope").unwrap_err().kind(),
            ErrorKind::UnknownChemical
        );
    }
}
