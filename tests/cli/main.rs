//! The command-line interface as a script sees it, in one test binary (see
//! `tests/engine/main.rs` for why areas share a binary). Filter with e.g.
//! `cargo test --test cli water_cli`.

mod batch_cli;
mod calc_cli;
mod cli_chemistry;
mod dosing_cli;
mod fuzz_cli;
mod log_cli;
mod numbers_cli;
mod other_feeds_cli;
mod output_cli;
mod parity_cli;
mod stock_cli;
mod support;
mod water_cli;
