//! Timing of the plant's water path (issue 15's figures): pH after a dose and dose for a
//! target on a full-ion water, a six-point path with the ranges the readings allow, and a
//! two-target solve (alkalinity and LSI as the second target); and where a `molefeed batch`
//! line for `ph-after` spends its time (reading the arguments, the equilibrium constants at the
//! water's temperature, the chemistry, the report and its JSON text).

use criterion::{Criterion, criterion_group, criterion_main};
use molefeed::cli::{Args, dispatch};
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
    // Where a path's time goes: the calcium carbonate indices of each step's water.
    let r = path::run(&state, &six, &settings).expect("path");
    for (k, s) in r.states.iter().enumerate() {
        c.bench_function(&format!("stability after step {}", k + 1), |b| {
            b.iter(|| molefeed::engine::water::stability(black_box(s)))
        });
    }
    c.bench_function("stability of the raw water", |b| {
        b.iter(|| molefeed::engine::water::stability(black_box(&state)))
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
    // A batch line's parts, for a full-ion water (what `molefeed batch` does per line).
    let line = serde_json::json!({
        "chemical": "lime", "dose": 20, "ph": 7.6, "temperature": 14, "alkalinity": 90,
        "calcium_as_caco3": 95, "magnesium_as_caco3": 35, "sodium": 18, "potassium": 3,
        "chloride": 25, "sulfate": 40,
    });
    c.bench_function("batch part: arguments from the JSON line", |b| {
        b.iter(|| Args::from_json(black_box(&line)))
    });
    let table = molefeed::engine::water::constants::Table::embedded();
    c.bench_function(
        "batch part: the constants at the water's temperature",
        |b| b.iter(|| table.at(black_box(14.0))),
    );
    c.bench_function("batch part: water state from full-ion readings", |b| {
        b.iter(|| WaterState::new(black_box(&input())))
    });
    c.bench_function(
        "batch part: ph-after dispatched (readings, chemistry, report)",
        |b| {
            b.iter(|| {
                let args = Args::from_json(black_box(&line)).expect("args");
                dispatch("ph-after", &args).map(|r| r.json)
            })
        },
    );
    let args = Args::from_json(&line).expect("args");
    let report = dispatch("ph-after", &args).expect("report");
    c.bench_function("batch part: the report's JSON written as text", |b| {
        b.iter(|| black_box(&report.json).to_string())
    });
}

criterion_group!(path_benches, benches);
criterion_main!(path_benches);
