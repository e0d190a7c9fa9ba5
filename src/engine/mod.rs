//! The chemistry engine: formulas, atomic weights, exact balancing, traced conversions.
//!
//! Pure Rust with no UI, no I/O and no global mutable state. Reference data in `data/` is
//! embedded at build time (atomic weights as generated code, catalogs with `include_str!`)
//! and parsed into immutable values; every public function that takes user input returns
//! [`Result`]; nothing here panics on what an operator types.

pub mod calculators;
pub mod convert;
pub mod dosing;
pub mod elements;
pub mod equivalents;
mod error;
pub mod formula;
pub mod path;
pub mod precision;
pub mod quantity;
pub mod reaction;
pub mod sigfig;
pub mod trace;
pub mod water;

pub use error::{Error, ErrorKind, Result, check_positive, check_range};
