//! `mass`, `balance` and `convert`: the chemistry core on the command line.
use super::{Args, CliError, CliResult};

pub fn mass(_args: &Args) -> CliResult {
    Err(CliError::usage("mass: under construction"))
}
pub fn balance(_args: &Args) -> CliResult {
    Err(CliError::usage("balance: under construction"))
}
pub fn convert(_args: &Args) -> CliResult {
    Err(CliError::usage("convert: under construction"))
}
