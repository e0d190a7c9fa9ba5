//! One calculation of the table, with and without the ranges beside its numbers: what a
//! keystroke costs the engine before the card is updated (`benches/app.rs` measures the whole
//! keystroke). Inputs are an invented plant's readings.
use criterion::{Criterion, criterion_group, criterion_main};
#[path = "common/plant.rs"]
mod plant;

use molefeed::engine::calculators::Calculators;
use std::hint::black_box;

fn benches(c: &mut Criterion) {
    let calculators = Calculators::new().expect("catalog");
    let cases = plant::CASES
        .iter()
        .map(|(id, _, _)| plant::request(id).expect("in the table"));
    for r in cases {
        assert!(calculators.compute(&r).is_ok(), "{}", r.calculator);
        c.bench_function(&format!("{} with ranges", r.calculator), |b| {
            b.iter(|| calculators.compute(black_box(&r)))
        });
        // Every reading typed exact: one run, no range.
        let mut exact = r.clone();
        for name in r.values.keys() {
            exact.tolerances.insert(name, 0.0);
        }
        c.bench_function(&format!("{} without ranges", r.calculator), |b| {
            b.iter(|| calculators.compute(black_box(&exact)))
        });
    }
}

criterion_group!(calculator_benches, benches);
criterion_main!(calculator_benches);
