//! Benchmarks of the chemistry core. Targets (issue "Foundation"): parse + molar mass of a
//! hydrate ≤ 2 µs; balancing a 7-species reaction ≤ 20 µs.
use criterion::{Criterion, criterion_group, criterion_main};
use molefeed::engine::formula::Formula;
use molefeed::engine::reaction::Reaction;
use std::hint::black_box;

fn parse_and_mass(c: &mut Criterion) {
    c.bench_function("parse + molar mass Al2(SO4)3·14H2O", |b| {
        b.iter(|| Formula::parse(black_box("Al2(SO4)3·14H2O")).map(|f| f.molar_mass()))
    });
}

fn balance_seven_species(c: &mut Criterion) {
    c.bench_function(
        "balance KMnO4 + Fe+2 + H2O -> MnO2 + Fe(OH)3 + K+ + H+",
        |b| {
            b.iter(|| {
                Reaction::balance(black_box("KMnO4 + Fe+2 + H2O -> MnO2 + Fe(OH)3 + K+ + H+"))
            })
        },
    );
}

criterion_group!(benches, parse_and_mass, balance_seven_species);
criterion_main!(benches);
