//! Runs one calculation of the table, with the range beside each number, a given number of
//! times: instruction counts for the engine's share of a keystroke (`benches/app.rs` times the
//! whole keystroke). Under valgrind's callgrind, run it with COUNT+1 and 1 and take the
//! difference, as `tools/count_instructions.sh` does. The readings are `benches/calculators.rs`'s
//! invented plant's.
//!
//!     cargo run --release --no-default-features --example calculator_ranges -- ID COUNT [exact]
//!
//! `exact` gives every reading a tolerance of zero: the calculation without its ranges.

use molefeed::engine::calculators::{Calculators, Request, find};
use std::hint::black_box;

fn request(id: &str) -> Option<Request> {
    let (product, values): (&str, &[(&'static str, f64)]) = match id {
        "softening" => (
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
        "ph-adjustment" => (
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
        _ => return None,
    };
    let mut r = Request::new(find(id).ok()?);
    r.product = Some(product.into());
    r.values = values.iter().copied().collect();
    Some(r)
}

fn main() {
    let argv: Vec<String> = std::env::args().skip(1).collect();
    let (Some(mut r), Some(count)) = (
        argv.first().and_then(|id| request(id)),
        argv.get(1).and_then(|n| n.parse::<u32>().ok()),
    ) else {
        eprintln!("usage: calculator_ranges softening|ph-adjustment COUNT [exact]");
        std::process::exit(2);
    };
    if argv.get(2).is_some_and(|a| a == "exact") {
        let names: Vec<&'static str> = r.values.keys().copied().collect();
        r.tolerances = names.into_iter().map(|n| (n, 0.0)).collect();
    }
    let calculators = Calculators::new().expect("catalog");
    for _ in 0..count {
        black_box(calculators.compute(black_box(&r)).expect("the bench's readings are valid"));
    }
}
