//! Runs one calculation of the table, with the range beside each number, a given number of
//! times: instruction counts for the engine's share of a keystroke (`benches/app.rs` times the
//! whole keystroke). Under valgrind's callgrind, run it with COUNT+1 and 1 and take the
//! difference, as `tools/count_instructions.sh` does. The readings are `benches/calculators.rs`'s
//! invented plant's (`benches/common/plant.rs`).
//!
//!     cargo run --release --no-default-features --example calculator_ranges -- ID COUNT [exact]
//!
//! `exact` gives every reading a tolerance of zero: the calculation without its ranges.

#[path = "../benches/common/plant.rs"]
mod plant;

use molefeed::engine::calculators::Calculators;
use std::hint::black_box;

fn main() {
    let argv: Vec<String> = std::env::args().skip(1).collect();
    let (Some(mut r), Some(count)) = (
        argv.first().and_then(|id| plant::request(id)),
        argv.get(1).and_then(|n| n.parse::<u32>().ok()),
    ) else {
        eprintln!("usage: calculator_ranges softening|ph-adjustment|coagulation COUNT [exact]");
        std::process::exit(2);
    };
    if argv.get(2).is_some_and(|a| a == "exact") {
        let names: Vec<&'static str> = r.values.keys().copied().collect();
        r.tolerances = names.into_iter().map(|n| (n, 0.0)).collect();
    }
    let calculators = Calculators::new().expect("catalog");
    for _ in 0..count {
        black_box(
            calculators
                .compute(black_box(&r))
                .expect("the bench's readings are valid"),
        );
    }
}
