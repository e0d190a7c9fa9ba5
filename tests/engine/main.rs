//! The engine's integration tests, in one test binary.
//!
//! They were separate files once; every test binary links the whole crate (the UI included,
//! with the default features), so each one cost a link of several hundred megabytes in a
//! debug build. One binary per area keeps CI's disk and time small. Run one area with a
//! filter, e.g. `cargo test --test engine water_reference -- --nocapture`.

mod chemistry_properties;
mod chemistry_reference;
mod dosing_props;
mod dosing_reference;
mod dosing_validation;
mod dosing_water;
mod support;
mod water_path;
mod water_props;
mod water_reference;
