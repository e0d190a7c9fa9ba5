//! The invented plant's readings for one calculation of each equilibrium calculator: the same
//! requests for the engine's bench (`benches/calculators.rs`) and its instruction counts
//! (`examples/calculator_ranges.rs`), so the two measure the same thing.

use molefeed::engine::calculators::{Request, find};

/// A case: calculator id, product and readings (SI).
pub type Case = (&'static str, &'static str, &'static [(&'static str, f64)]);

pub const CASES: &[Case] = &[
    (
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
    (
        "ph-adjustment",
        "sodium-hydroxide",
        &[
            ("flow", 9085.0),
            ("ph", 6.9),
            ("target-ph", 7.8),
            ("alkalinity", 60.0),
            ("temperature", 14.0),
            ("calcium-hardness", 80.0),
            ("strength", 50.0),
            ("specific-gravity", 1.52),
            ("pump-capacity", 20.0),
        ],
    ),
    (
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

/// The request of case `id`, `None` for an id not among the cases.
pub fn request(id: &str) -> Option<Request> {
    let (calculator, product, values) = CASES.iter().find(|(c, _, _)| *c == id)?;
    let mut r = Request::new(find(calculator).ok()?);
    r.product = Some((*product).into());
    r.values = values.iter().copied().collect();
    Some(r)
}
