//! The catalog of treatment chemicals, from `data/chemicals.json`.
//!
//! Design: a chemical is data, not code. Each entry gives a formula and the text of its
//! dissolution reaction; the reaction is balanced exactly by [`Reaction::balance`], and what a
//! mole of the chemical adds to the water (Ca, Na, SO4, Cl, carbonate, Al, Fe, free chlorine)
//! is read from the balanced products through the file's ion table. Acid or base strength
//! needs no entry at all: it follows from the charge balance (the products are charged, the
//! chemical is not). Molar masses come from the formula parser. There is no special-case
//! function per chemical anywhere in the engine.

use super::constants::{Component, NC};
use crate::engine::formula::Formula;
use crate::engine::reaction::{Reaction, Side};
use crate::engine::{Error, ErrorKind, Result};
use serde::Deserialize;
use std::sync::OnceLock;

/// One catalog chemical.
#[derive(Clone, Debug)]
pub struct Chemical {
    /// Stable id (`caustic`, `alum`, ...).
    pub id: String,
    pub formula: Formula,
    /// Translation key for the display name.
    pub name_key: String,
    /// The balanced dissolution reaction, as canonical text.
    pub dissolution: String,
    /// g/mol of the pure compound (from the formula).
    pub molar_mass: f64,
    /// mol of each component added per mol of chemical.
    pub adds: [f64; NC],
}

impl Chemical {
    /// Whether the chemical brings a metal that hydrolyses and may precipitate (a coagulant).
    pub fn is_coagulant(&self) -> bool {
        self.adds[Component::Al.index()] > 0.0 || self.adds[Component::Fe.index()] > 0.0
    }
}

/// The parsed catalog.
#[derive(Clone, Debug)]
pub struct Catalog {
    pub chemicals: Vec<Chemical>,
    /// Dissolved species and the conserved component each feeds (`None`: the solvent's own).
    ions: Vec<(Formula, Option<Component>)>,
}

#[derive(Deserialize)]
struct RawCatalog {
    ions: Vec<RawIon>,
    chemicals: Vec<RawChemical>,
}

#[derive(Deserialize)]
struct RawIon {
    species: String,
    component: Option<String>,
}

#[derive(Deserialize)]
struct RawChemical {
    id: String,
    formula: String,
    name_key: String,
    dissolution: String,
}

fn data_error(message: String) -> Error {
    Error::new(
        ErrorKind::InvalidInput,
        format!("chemicals.json: {message}"),
    )
}

impl Catalog {
    pub fn parse(text: &str) -> Result<Catalog> {
        let raw: RawCatalog =
            serde_json::from_str(text).map_err(|e| data_error(format!("not valid: {e}")))?;
        let mut ions = Vec::new();
        for ion in &raw.ions {
            let formula = Formula::parse(&ion.species)?;
            let component = match &ion.component {
                None => None,
                Some(name) => Some(
                    Component::from_name(name)
                        .ok_or_else(|| data_error(format!("unknown component {name}")))?,
                ),
            };
            ions.push((formula, component));
        }
        let mut catalog = Catalog {
            chemicals: Vec::new(),
            ions,
        };
        for c in &raw.chemicals {
            let chemical = catalog.dissolving(&c.id, &c.formula, &c.name_key, &c.dissolution)?;
            catalog.chemicals.push(chemical);
        }
        Ok(catalog)
    }

    /// A chemical described by its dissolution reaction, built the way the catalog's own are:
    /// the reaction is balanced by the engine and what it adds is read from its products. For
    /// compounds whose composition is a product property (a polyaluminium chloride of the
    /// basicity on the certificate), so no fixed catalog entry can describe them.
    pub fn dissolving(
        &self,
        id: &str,
        formula: &str,
        name_key: &str,
        dissolution: &str,
    ) -> Result<Chemical> {
        let formula = Formula::parse(formula)?;
        let reaction = Reaction::balance(dissolution)?;
        let own = reaction
            .species()
            .iter()
            .find(|s| s.side == Side::Reactant && s.formula.same_composition(&formula))
            .ok_or_else(|| {
                data_error(format!("{id}: dissolution does not start from {formula}"))
            })?;
        let per = own.coefficient as f64;
        let mut adds = [0.0; NC];
        for s in reaction
            .species()
            .iter()
            .filter(|s| s.side == Side::Product)
        {
            let (_, component) = self
                .ions
                .iter()
                .find(|(f, _)| f.same_composition(&s.formula))
                .ok_or_else(|| {
                    data_error(format!(
                        "{id}: product {} is not in the ion table",
                        s.formula
                    ))
                })?;
            if let Some(component) = component {
                adds[component.index()] += s.coefficient as f64 / per;
            }
        }
        Ok(Chemical {
            id: id.to_string(),
            molar_mass: formula.molar_mass(),
            formula,
            name_key: name_key.to_string(),
            dissolution: reaction.to_string(),
            adds,
        })
    }

    /// The conserved component a dissolved species feeds (`None`: the solvent's own, or a gas
    /// that leaves); an error for a species the ion table does not know.
    pub fn component_of(&self, species: &Formula) -> Result<Option<Component>> {
        self.ions
            .iter()
            .find(|(f, _)| f.same_composition(species))
            .map(|(_, c)| *c)
            .ok_or_else(|| data_error(format!("{species} is not in the ion table")))
    }

    /// The embedded catalog, parsed and balanced on first use.
    pub fn embedded() -> Result<&'static Catalog> {
        static CATALOG: OnceLock<Result<Catalog>> = OnceLock::new();
        CATALOG
            .get_or_init(|| Catalog::parse(include_str!("../../../data/chemicals.json")))
            .as_ref()
            .map_err(Clone::clone)
    }

    /// Finds a chemical by id or by formula (any spelling of the same composition).
    pub fn find(&self, text: &str) -> Result<&Chemical> {
        let text = text.trim();
        if let Some(c) = self.chemicals.iter().find(|c| c.id == text) {
            return Ok(c);
        }
        let unknown = || {
            let ids: Vec<&str> = self.chemicals.iter().map(|c| c.id.as_str()).collect();
            Error::new(
                ErrorKind::UnknownChemical,
                format!(
                    "'{text}' is not in the chemical catalog ({})",
                    ids.join(", ")
                ),
            )
            .with("chemical", text)
        };
        match Formula::parse(text) {
            Ok(f) => self
                .chemicals
                .iter()
                .find(|c| c.formula.same_composition(&f))
                .ok_or_else(unknown),
            Err(_) => Err(unknown()),
        }
    }
}

/// Molar mass (g/mol) of a formula written in the engine's own code (never user input).
pub fn molar_mass(formula: &str) -> Result<f64> {
    Ok(Formula::parse(formula)?.molar_mass())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// `adds` of a chemical as (component, mol per mol) pairs.
    fn check(query: &str, expected: &[(Component, f64)]) {
        let catalog = Catalog::embedded().unwrap();
        let chem = catalog.find(query).unwrap();
        let mut want = [0.0; NC];
        for (c, n) in expected {
            want[c.index()] = *n;
        }
        assert_eq!(chem.adds, want, "{query}: {}", chem.dissolution);
    }

    #[test]
    fn dissolution_reactions_give_what_each_chemical_adds() {
        use Component::*;
        check("lime", &[(Ca, 1.0)]);
        check("CaO", &[(Ca, 1.0)]);
        check("NaOH", &[(Na, 1.0)]);
        check("Na2CO3", &[(Na, 2.0), (CO3, 1.0)]);
        check("NaHCO3", &[(Na, 1.0), (CO3, 1.0)]);
        check("H2SO4", &[(SO4, 1.0)]);
        check("HCl", &[(Cl, 1.0)]);
        check("CO2", &[(CO3, 1.0)]);
        check("Al2(SO4)3·14H2O", &[(Al, 2.0), (SO4, 3.0)]);
        check("Al2(SO4)3*14H2O", &[(Al, 2.0), (SO4, 3.0)]);
        check("FeCl3", &[(Fe, 1.0), (Cl, 3.0)]);
        check("Cl2", &[(Cl, 1.0), (OCl, 1.0)]);
        check("NaOCl", &[(Na, 1.0), (OCl, 1.0)]);
        check("Ca(OCl)2", &[(Ca, 1.0), (OCl, 2.0)]);
    }

    #[test]
    fn molar_masses_come_from_formulas() {
        let catalog = Catalog::embedded().unwrap();
        // Alum·14H2O 594 g/mol, FeCl3 162.2 (references.md §5, [D]).
        let alum = catalog.find("alum").unwrap().molar_mass;
        assert!((alum - 594.4).abs() < 0.2, "{alum}");
        let fecl3 = catalog.find("ferric-chloride").unwrap().molar_mass;
        assert!((fecl3 - 162.2).abs() < 0.05, "{fecl3}");
    }

    #[test]
    fn unknown_chemicals_are_typed_errors() {
        let catalog = Catalog::embedded().unwrap();
        for bad in ["KMnO4", "unobtainium", "", "((("] {
            let e = catalog.find(bad).unwrap_err();
            assert_eq!(e.kind(), ErrorKind::UnknownChemical, "{bad}");
        }
    }
}
