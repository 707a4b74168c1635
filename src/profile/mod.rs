//! Per-field statistics, one accumulator per statistic, each mergeable so
//! chunks can run in parallel and be combined.
//!
//! The Shape's nodes carry a [`field::FieldStats`] when a scan profiles (not
//! for `--shape-only`); the observers in `shape/` feed it.

pub mod budget;
pub mod calendar;
pub mod distinct;
pub mod few;
pub mod field;
pub mod findings;
pub mod hash;
pub mod histogram;
pub mod hll;
pub mod kll;
pub mod moments;
pub mod numbers;
pub mod quantiles;
pub mod tally;
pub mod text;
pub mod top;
