//! Property tests of the chemistry core: conservation, no panics, round trips.

use molefeed::engine::equivalents::ReactionLibrary;
use molefeed::engine::formula::Formula;
use molefeed::engine::reaction::{Reaction, Side};
use proptest::prelude::*;
use std::collections::BTreeMap;

const SPECIES: &[&str] = &[
    "H2O",
    "H+",
    "OH-",
    "CO2",
    "HCO3-",
    "CO3-2",
    "Ca+2",
    "CaCO3",
    "Ca(OH)2",
    "Cl2",
    "HOCl",
    "OCl-",
    "Cl-",
    "NH3",
    "NH4+",
    "NH2Cl",
    "N2",
    "SO4-2",
    "HSO3-",
    "Al+3",
    "Al(OH)3",
    "Fe+2",
    "Fe+3",
    "Fe(OH)3",
    "MnO4-",
    "MnO2",
    "Na+",
    "O2",
    "H2",
    "Al2(SO4)3·14H2O",
    "Mg+2",
    "Mg(OH)2",
];

fn totals(reaction: &Reaction, side: Side) -> (BTreeMap<&'static str, u64>, i64) {
    let mut atoms = BTreeMap::new();
    let mut charge = 0i64;
    for s in reaction.species().iter().filter(|s| s.side == side) {
        for (symbol, n) in s.formula.atoms() {
            *atoms.entry(symbol).or_insert(0) += n * s.coefficient;
        }
        charge += s.formula.charge() as i64 * s.coefficient as i64;
    }
    (atoms, charge)
}

fn formula_text() -> impl Strategy<Value = String> {
    let element = prop::sample::select(vec![
        "H", "C", "N", "O", "Na", "Mg", "Al", "S", "Cl", "Ca", "Fe", "Mn", "K",
    ]);
    let count = prop::option::of(2u32..20).prop_map(|c| c.map_or(String::new(), |c| c.to_string()));
    let atom = (element, count.clone()).prop_map(|(e, c)| format!("{e}{c}"));
    let group = (
        prop::collection::vec(atom.clone(), 1..3),
        prop::sample::select(vec![('(', ')'), ('[', ']')]),
        count,
    )
        .prop_map(|(atoms, (o, c), n)| format!("{o}{}{c}{n}", atoms.concat()));
    let token = prop_oneof![3 => atom, 1 => group];
    let part = prop::collection::vec(token, 1..4).prop_map(|t| t.concat());
    let hydrate =
        prop::option::of(1u32..20).prop_map(|n| n.map_or(String::new(), |n| format!("·{n}H2O")));
    let charge = prop::sample::select(vec!["", "+", "-", "^2-", "^3+", "-2", "+3"]);
    (part, hydrate, charge).prop_map(|(p, h, c)| format!("{p}{h}{c}"))
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(400))]

    #[test]
    fn every_balanced_reaction_conserves_atoms_and_charge(
        picks in prop::collection::vec(prop::sample::select(SPECIES), 2..7),
        split in 1usize..6,
    ) {
        let mut unique = picks.clone();
        unique.sort();
        unique.dedup();
        prop_assume!(unique.len() >= 2);
        let split = split.min(unique.len() - 1);
        let equation = format!("{} -> {}", unique[..split].join(" + "), unique[split..].join(" + "));
        if let Ok(reaction) = Reaction::balance(&equation) {
            prop_assert_eq!(totals(&reaction, Side::Reactant), totals(&reaction, Side::Product), "{}", equation);
            prop_assert!(reaction.species().iter().all(|s| s.coefficient > 0));
            // Smallest whole numbers: no common factor.
            let g = reaction.species().iter().fold(0u64, |g, s| num_integer::gcd(g, s.coefficient));
            prop_assert_eq!(g, 1);
        }
    }

    #[test]
    fn shipped_reactions_balance_in_any_order_and_direction(
        index in 0usize..24,
        seed in any::<u64>(),
        reverse in any::<bool>(),
    ) {
        let library = ReactionLibrary::builtin().unwrap();
        let named = &library.reactions()[index % library.reactions().len()];
        let mut left: Vec<String> = named.reaction.reactants().map(|s| s.written.clone()).collect();
        let mut right: Vec<String> = named.reaction.products().map(|s| s.written.clone()).collect();
        let mut rng = seed;
        for side in [&mut left, &mut right] {
            for i in (1..side.len()).rev() {
                rng = rng.wrapping_mul(6364136223846793005).wrapping_add(1442695040888963407);
                side.swap(i, (rng >> 33) as usize % (i + 1));
            }
        }
        if reverse {
            std::mem::swap(&mut left, &mut right);
        }
        let equation = format!("{} -> {}", left.join(" + "), right.join(" + "));
        let reaction = Reaction::balance(&equation).expect("a reordered balanced reaction still balances");
        prop_assert_eq!(totals(&reaction, Side::Reactant), totals(&reaction, Side::Product), "{}", equation);
        for s in reaction.species() {
            let original = named.reaction.find(&s.written).unwrap();
            prop_assert_eq!(s.coefficient, original.coefficient, "{}", equation);
        }
    }

    #[test]
    fn parser_never_panics_on_any_string(text in "\\PC{0,40}") {
        let _ = Formula::parse(&text);
        let _ = Reaction::balance(&text);
    }

    #[test]
    fn parser_never_panics_on_formula_like_strings(text in "[A-Za-z0-9()\\[\\]{}·*.^+\\- ]{0,30}") {
        if let Ok(f) = Formula::parse(&text) {
            prop_assert!(f.molar_mass().is_finite());
        }
        let _ = Reaction::balance(&format!("{text} -> {text}2"));
    }

    #[test]
    fn formula_text_round_trips(text in formula_text()) {
        let first = Formula::parse(&text).expect("generated formulas are valid");
        let printed = first.to_string();
        let second = Formula::parse(&printed).expect("printed formulas parse");
        prop_assert!(first.same_species(&second), "{} -> {}", text, printed);
        prop_assert_eq!(printed.clone(), second.to_string());
        prop_assert_eq!(first.charge(), second.charge());
    }
}
