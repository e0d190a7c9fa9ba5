//! The range of a result that the precision of its readings allows.
//!
//! Design choice: a result's range is found by running the calculator again with each
//! uncertain reading moved by its precision ([`crate::engine::precision`]), down and up, one
//! at a time, and adding the deviations on each side: the worst case, every reading off by its
//! full precision in the unfavourable direction. Re-running the calculator itself, rather than
//! propagating derivatives by hand, keeps the range true through equilibrium solves and
//! breakpoints, and needs nothing per calculator.

use super::{Input, Request};
use crate::engine::precision::Range;
use crate::engine::quantity::Quantity;

/// The ± of input `input` in this request (SI): the operator's own, else the site's precision
/// for its instrument, else the instrument's default; `None` for an exact input.
pub fn tolerance(input: &Input, request: &Request) -> Option<f64> {
    let value = request.get(input.name)?;
    let t = match request.tolerances.get(input.name) {
        Some(t) => *t,
        None => {
            let instrument = input.instrument?;
            request
                .precisions
                .get(&instrument)
                .copied()
                .filter(|p| p.is_valid())
                .unwrap_or_else(|| instrument.default_precision())
                .of(value)
        }
    };
    (t.is_finite() && t > 0.0).then_some(t.abs())
}

/// Quantities that cannot go below zero: a reading moved down by its precision stops at zero.
fn never_negative(q: Quantity) -> bool {
    !matches!(q, Quantity::Ph | Quantity::Temperature | Quantity::Index)
}

/// The requests a result's range is found from: for each uncertain input, the request with that
/// input moved down and up by its ±. An input whose lower side would cross zero stops at zero.
pub(super) fn moved_requests<'a>(
    inputs: &'a [Input],
    request: &'a Request,
) -> impl Iterator<Item = (&'static str, [Request; 2])> + 'a {
    inputs.iter().filter_map(move |input| {
        let t = tolerance(input, request)?;
        let v = request.get(input.name)?;
        let low = if never_negative(input.quantity) {
            (v - t).max(0.0)
        } else {
            v - t
        };
        let moved = |x: f64| {
            let mut r = request.clone();
            r.values.insert(input.name, x);
            r.headlines_only = true;
            r
        };
        Some((input.name, [moved(low), moved(v + t)]))
    })
}

/// Runs `compute` on every moved request, the pairs spread over `threads` threads, the
/// calling one among them: the runs are independent pure calculations, and a phone has the
/// cores to spare while the operator types. The answers come back in the order of `jobs`; a
/// pair whose thread could not finish is `None` (the range is then said to be unavailable,
/// never narrowed).
pub(super) fn run_all<T, F>(
    jobs: &[(&'static str, [Request; 2])],
    threads: usize,
    compute: F,
) -> Vec<Option<[T; 2]>>
where
    T: Send,
    F: Fn(&Request) -> T + Sync,
{
    let pair = |(_, [low, high]): &(&'static str, [Request; 2])| [compute(low), compute(high)];
    let threads = threads.min(jobs.len());
    if threads <= 1 {
        return jobs.iter().map(|j| Some(pair(j))).collect();
    }
    // Job i goes to thread i % threads, so a dear input and a cheap one share the load; share
    // 0 is the calling thread's own (one thread fewer to start, a tenth of a moved run).
    let share = |t: usize| {
        jobs.iter()
            .enumerate()
            .skip(t)
            .step_by(threads)
            .map(|(i, j)| (i, pair(j)))
            .collect::<Vec<_>>()
    };
    let mut out: Vec<Option<[T; 2]>> = (0..jobs.len()).map(|_| None).collect();
    std::thread::scope(|scope| {
        let handles: Vec<_> = (1..threads)
            .map(|t| {
                let share = &share;
                scope.spawn(move || share(t))
            })
            .collect();
        // A share that could not finish leaves its pairs `None`, on this thread as on the
        // others (a panic here is caught as `join` catches one there).
        let own = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| share(0)));
        for (i, answer) in own.unwrap_or_default() {
            out[i] = Some(answer);
        }
        for h in handles {
            for (i, answer) in h.join().unwrap_or_default() {
                out[i] = Some(answer);
            }
        }
    });
    out
}

/// Adds each input's deviations, side by side: `central` the value at the readings as given,
/// `moved` the values with one input moved down and up at a time.
pub fn worst_case(central: f64, moved: &[[f64; 2]]) -> Range {
    let (mut below, mut above) = (0.0, 0.0);
    for pair in moved {
        let lo = pair[0].min(pair[1]).min(central);
        let hi = pair[0].max(pair[1]).max(central);
        below += central - lo;
        above += hi - central;
    }
    Range {
        low: central - below,
        high: central + above,
    }
}
