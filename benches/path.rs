//! Timing of the plant's water path (issue 15's figures): pH after a dose and dose for a
//! target on a full-ion water, a six-point path with the ranges the readings allow, and a
//! two-target solve (alkalinity and LSI as the second target).

use criterion::{Criterion, criterion_group, criterion_main};
use molefeed::engine::path::{self, Path, Settings};
use molefeed::engine::water::targets::{SecondTarget, two_targets};
use molefeed::engine::water::{
    Catalog, Precipitation, WaterInput, WaterState, dose_for_ph, ph_after,
};
use std::collections::BTreeMap;
use std::hint::black_box;

/// An invented full-ion river water.
fn input() -> WaterInput {
    WaterInput {
        calcium_mg_l_as_caco3: Some(95.0),
        magnesium_mg_l_as_caco3: Some(35.0),
        sodium_mg_l: Some(18.0),
        potassium_mg_l: Some(3.0),
        chloride_mg_l: Some(25.0),
        sulfate_mg_l: Some(40.0),
        ..WaterInput::new(7.6, 14.0, 90.0)
    }
}

fn benches(c: &mut Criterion) {
    let state = WaterState::new(&input()).expect("bench water is valid");
    let catalog = Catalog::embedded().expect("catalog");
    let find = |id: &str| catalog.find(id).expect("chemical");
    let (lime, co2, caustic) = (find("lime"), find("carbon-dioxide"), find("caustic"));
    c.bench_function("full-ion ph_after lime 20 mg/L", |b| {
        b.iter(|| ph_after(&state, lime, black_box(20.0), Precipitation::None))
    });
    c.bench_function("full-ion dose_for_ph caustic to 8.3", |b| {
        b.iter(|| dose_for_ph(&state, caustic, black_box(8.3), Precipitation::None))
    });
    // Six points: alum, chlorine, caustic, CO2, lime, hypochlorite.
    let six = Path::of_steps(&[
        (find("alum"), 35.0),
        (find("chlorine"), 2.0),
        (caustic, 9.0),
        (co2, 3.0),
        (lime, 6.0),
        (find("hypochlorite"), 1.0),
    ]);
    let settings = Settings::default();
    let precisions = BTreeMap::new();
    c.bench_function("six-point path with ranges", |b| {
        b.iter(|| path::run_with_ranges(black_box(&input()), &six, &settings, &precisions))
    });
    c.bench_function("six-point path without ranges", |b| {
        b.iter(|| path::run(black_box(&state), &six, &settings))
    });
    c.bench_function("two targets lime+CO2 pH 8.0 alkalinity 110", |b| {
        b.iter(|| {
            two_targets(
                &state,
                lime,
                co2,
                black_box(8.0),
                SecondTarget::Alkalinity(110.0),
            )
        })
    });
    c.bench_function("two targets lime+CO2 pH 8.0 LSI 0.1", |b| {
        b.iter(|| two_targets(&state, lime, co2, black_box(8.0), SecondTarget::Lsi(0.1)))
    });
}

criterion_group!(path_benches, benches);
criterion_main!(path_benches);
