//! Timing of the water engine: forward pH after a dose, dose for a target pH, a 200-point
//! curve, stability, and lime softening to equilibrium, on an invented moderately hard water.

use criterion::{Criterion, criterion_group, criterion_main};
use molefeed::engine::water::{
    Catalog, Precipitation, WaterInput, WaterState, curve, dose_for_ph, ph_after, soften, stability,
};
use std::hint::black_box;

fn water() -> WaterState {
    let input = WaterInput {
        calcium_mg_l_as_caco3: Some(120.0),
        magnesium_mg_l_as_caco3: Some(40.0),
        sodium_mg_l: Some(25.0),
        chloride_mg_l: Some(30.0),
        sulfate_mg_l: Some(40.0),
        ..WaterInput::new(7.4, 15.0, 110.0)
    };
    WaterState::new(&input).expect("bench water is valid")
}

fn benches(c: &mut Criterion) {
    let state = water();
    let catalog = Catalog::embedded().expect("catalog");
    let lime = catalog.find("lime").expect("lime");
    let acid = catalog.find("sulfuric-acid").expect("acid");
    c.bench_function("ph_after lime 20 mg/L", |b| {
        b.iter(|| ph_after(&state, lime, black_box(20.0), Precipitation::None))
    });
    c.bench_function("dose_for_ph lime to 8.5", |b| {
        b.iter(|| dose_for_ph(&state, lime, black_box(8.5), Precipitation::None))
    });
    c.bench_function("dose_for_ph sulfuric acid to 6.8", |b| {
        b.iter(|| dose_for_ph(&state, acid, black_box(6.8), Precipitation::None))
    });
    c.bench_function("curve lime 200 points", |b| {
        b.iter(|| curve(&state, lime, black_box(60.0), 200, Precipitation::None))
    });
    c.bench_function("water state from readings", |b| {
        b.iter(|| WaterState::new(black_box(&WaterInput::new(7.4, 15.0, 110.0))))
    });
    c.bench_function("stability", |b| b.iter(|| stability(black_box(&state))));
    c.bench_function("soften with 150 mg/L lime to equilibrium", |b| {
        b.iter(|| soften(&state, lime, black_box(150.0)))
    });
}

criterion_group!(water_benches, benches);
criterion_main!(water_benches);
