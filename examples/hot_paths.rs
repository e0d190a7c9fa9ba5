//! Runs one of issue 15's timed operations a given number of times, for instruction counts
//! (`tools/count_instructions.sh` runs it under valgrind's callgrind twice and takes the
//! difference, so start-up and one-time parsing cancel out). The water and doses are the
//! criterion bench's (`benches/path.rs`): an invented full-ion river water.
//!
//!     cargo run --release --no-default-features --example hot_paths -- OPERATION COUNT

use molefeed::cli::{Args, dispatch};
use molefeed::engine::path::{self, Path, Settings};
use molefeed::engine::water::targets::{SecondTarget, two_targets};
use molefeed::engine::water::{
    Catalog, Precipitation, WaterInput, WaterState, dose_for_ph, ph_after,
};
use std::collections::BTreeMap;
use std::hint::black_box;

/// The operations, by the name given on the command line.
const OPERATIONS: [&str; 7] = [
    "ph-after",
    "dose-for-ph",
    "path-with-ranges",
    "two-targets-alkalinity",
    "two-targets-lsi",
    "water-from-readings",
    "batch-line",
];

/// The bench's invented full-ion river water.
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

fn main() {
    let argv: Vec<String> = std::env::args().skip(1).collect();
    let (Some(op), Some(count)) = (
        argv.first(),
        argv.get(1).and_then(|n| n.parse::<u32>().ok()),
    ) else {
        eprintln!(
            "usage: hot_paths OPERATION COUNT; operations: {}",
            OPERATIONS.join(", ")
        );
        std::process::exit(2);
    };
    let state = WaterState::new(&input()).expect("bench water is valid");
    let catalog = Catalog::embedded().expect("catalog");
    let find = |id: &str| catalog.find(id).expect("chemical");
    let (lime, co2, caustic) = (find("lime"), find("carbon-dioxide"), find("caustic"));
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
    let line = serde_json::json!({
        "chemical": "lime", "dose": 20, "ph": 7.6, "temperature": 14, "alkalinity": 90,
        "calcium_as_caco3": 95, "magnesium_as_caco3": 35, "sodium": 18, "potassium": 3,
        "chloride": 25, "sulfate": 40,
    });
    for _ in 0..count {
        let ok = match op.as_str() {
            "ph-after" => ph_after(&state, lime, black_box(20.0), Precipitation::None).is_ok(),
            "dose-for-ph" => {
                dose_for_ph(&state, caustic, black_box(8.3), Precipitation::None).is_ok()
            }
            "path-with-ranges" => {
                path::run_with_ranges(black_box(&input()), &six, &settings, &precisions).is_ok()
            }
            "two-targets-alkalinity" => two_targets(
                &state,
                lime,
                co2,
                black_box(8.0),
                SecondTarget::Alkalinity(110.0),
            )
            .is_ok(),
            "two-targets-lsi" => {
                two_targets(&state, lime, co2, black_box(8.0), SecondTarget::Lsi(0.1)).is_ok()
            }
            "water-from-readings" => WaterState::new(black_box(&input())).is_ok(),
            "batch-line" => {
                let args = Args::from_json(black_box(&line)).expect("args");
                dispatch("ph-after", &args)
                    .map(|r| r.json.to_string())
                    .is_ok()
            }
            other => {
                eprintln!(
                    "unknown operation {other}; operations: {}",
                    OPERATIONS.join(", ")
                );
                std::process::exit(2);
            }
        };
        assert!(ok, "{op} failed on the bench water");
    }
}
