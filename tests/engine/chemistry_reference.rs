//! Reference checks of the chemistry core against general-purpose libraries.
//!
//! Fixtures are generated offline by `tools/gen_chem_fixtures.py` (library versions are
//! recorded in each fixture) and committed, so this test needs no Python:
//! - molar masses: periodictable 2.1.0, which uses IUPAC's conventional atomic weights as we
//!   do (bound 0.002 g/mol), and molmass 2026.1.8, which uses isotopic-average weights for
//!   interval elements (so it is only expected within 0.05 g/mol, and the gap is reported);
//! - balanced coefficients: chempy 0.10.2 `balance_stoichiometry`.

use molefeed::engine::ErrorKind;
use molefeed::engine::equivalents::ReactionLibrary;
use molefeed::engine::formula::Formula;
use molefeed::engine::reaction::{Reaction, Side};
use serde_json::Value;

fn fixture(name: &str) -> Value {
    let path = format!("{}/tests/fixtures/{name}", env!("CARGO_MANIFEST_DIR"));
    serde_json::from_str(&std::fs::read_to_string(&path).expect(&path)).expect("fixture is JSON")
}

#[test]
fn molar_masses_match_periodictable_within_0_002() {
    let doc = fixture("molar_masses.json");
    let compounds = doc["compounds"].as_array().unwrap();
    assert!(
        compounds.len() >= 30,
        "at least 30 water-treatment compounds"
    );
    let mut worst = (0.0f64, String::new());
    let mut worst_molmass = (0.0f64, String::new());
    for c in compounds {
        let formula = c["formula"].as_str().unwrap();
        let ours = Formula::parse(formula)
            .unwrap_or_else(|e| panic!("{formula}: {e}"))
            .molar_mass();
        let reference = c["periodictable"].as_f64().unwrap();
        let delta = (ours - reference).abs();
        assert!(
            delta <= 0.002,
            "{formula}: ours {ours:.4}, periodictable {reference:.4}"
        );
        if delta >= worst.0 {
            worst = (delta, formula.to_string());
        }
        let molmass = c["molmass"].as_f64().unwrap();
        let delta = (ours - molmass).abs();
        assert!(
            delta <= 0.05,
            "{formula}: ours {ours:.4}, molmass {molmass:.4}"
        );
        if delta >= worst_molmass.0 {
            worst_molmass = (delta, formula.to_string());
        }
    }
    println!(
        "molar masses, {} compounds: worst |Δ| vs periodictable {:.5} g/mol ({}), vs molmass {:.4} g/mol ({})",
        compounds.len(),
        worst.0,
        worst.1,
        worst_molmass.0,
        worst_molmass.1
    );
}

#[test]
fn water_treatment_reactions_balance_as_chempy_does() {
    let doc = fixture("balanced_reactions.json");
    let library = ReactionLibrary::builtin().expect("shipped reactions balance");
    let expected = doc["reactions"].as_array().unwrap();
    assert!(expected.len() >= 15);
    assert_eq!(
        expected.len(),
        library.reactions().len(),
        "fixture covers every shipped reaction"
    );
    for case in expected {
        let id = case["id"].as_str().unwrap();
        let reaction = &library.get(id).unwrap().reaction;
        for (side, key) in [(Side::Reactant, "reactants"), (Side::Product, "products")] {
            let want: Vec<(String, u64)> = case[key]
                .as_array()
                .unwrap()
                .iter()
                .map(|p| (p[0].as_str().unwrap().to_string(), p[1].as_u64().unwrap()))
                .collect();
            let got: Vec<(String, u64)> = reaction
                .species()
                .iter()
                .filter(|s| s.side == side)
                .map(|s| (s.written.clone(), s.coefficient))
                .collect();
            assert_eq!(got, want, "{id} {key}");
        }
    }
}

fn check_failure(equation: &str, kind: ErrorKind, mentions: &str) {
    let error = Reaction::balance(equation).expect_err(equation);
    assert_eq!(error.kind(), kind, "{equation}: {error}");
    assert!(
        error.to_string().contains(mentions),
        "{equation}: '{error}' should mention '{mentions}'"
    );
}

#[test]
fn impossible_and_ambiguous_reactions_are_explained() {
    check_failure("NaCl -> KBr", ErrorKind::Impossible, "appears only");
    check_failure("Fe+3 + Cl- -> FeCl3 + Na+", ErrorKind::Impossible, "Na");
    check_failure("CO + O2 -> CO2 + C", ErrorKind::Ambiguous, "2 independent");
    check_failure("H2 + O2 -> H2O + H2O2", ErrorKind::Ambiguous, "H2O2");
    check_failure(
        "NH3 + HOCl -> NH2Cl + H2O + NH3",
        ErrorKind::SpeciesOnBothSides,
        "NH3",
    );
    check_failure(
        "NH3 + 2 HOCl -> NH2Cl + H2O",
        ErrorKind::WrongCoefficient,
        "NH3 + HOCl -> NH2Cl + H2O",
    );
}
