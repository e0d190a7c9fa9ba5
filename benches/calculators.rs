//! One calculation of the table, with and without the ranges beside its numbers: what a
//! keystroke costs the engine before the card is updated (`benches/app.rs` measures the whole
//! keystroke). Inputs are an invented plant's readings.
use criterion::{Criterion, criterion_group, criterion_main};
use molefeed::engine::calculators::{Calculators, Request, find};
use std::hint::black_box;

fn request(id: &str, product: &str, values: &[(&'static str, f64)]) -> Request {
    let mut r = Request::new(find(id).expect("in the table"));
    r.product = Some(product.into());
    r.values = values.iter().copied().collect();
    r
}

fn benches(c: &mut Criterion) {
    let calculators = Calculators::new().expect("catalog");
    let cases = [
        request(
            "softening",
            "quicklime",
            &[
                ("flow", 4164.0),
                ("total-hardness", 265.0),
                ("calcium-hardness", 190.0),
                ("alkalinity", 175.0),
                ("ph", 7.45),
                ("temperature", 12.8),
                ("excess-lime", 35.0),
                ("lime-purity", 90.0),
                ("soda-ash-purity", 98.0),
            ],
        ),
        request(
            "ph-adjustment",
            "sodium-hydroxide",
            &[
                ("flow", 9085.0),
                ("ph-raw", 6.9),
                ("ph-target", 7.8),
                ("alkalinity", 60.0),
                ("temperature", 14.0),
                ("calcium-hardness", 80.0),
                ("strength", 50.0),
                ("specific-gravity", 1.52),
                ("pump-capacity", 20.0),
            ],
        ),
        request(
            "coagulation",
            "alum-liquid",
            &[
                ("flow", 9085.0),
                ("jar-dose", 32.0),
                ("alkalinity", 38.0),
                ("alkalinity-setpoint", 25.0),
                ("ph", 7.15),
                ("temperature", 10.0),
                ("strength", 8.3),
                ("specific-gravity", 1.335),
                ("pump-capacity", 75.0),
            ],
        ),
    ];
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
