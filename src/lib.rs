//! Molefeed: chemical feed for water treatment, from balanced reactions and equilibrium.
//!
//! Layers, bottom up: [`engine`] (pure chemistry, no I/O), [`log`] (the only writer of user
//! data), [`cli`] (machine interface over both), and `app` (the Slint UI, behind the `app`
//! feature). Lower layers never depend on higher ones.

pub mod app;
pub mod cli;
pub mod engine;
pub mod log;
