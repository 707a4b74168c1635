//! Per-field statistics, one accumulator per statistic, each mergeable so
//! chunks can run in parallel and be combined.
//!
//! This is the start of the profiler: the numeric kernels and their checks
//! against published references. They are not yet wired into the scan.

pub mod distinct;
pub mod histogram;
pub mod kll;
pub mod moments;
pub mod numbers;
pub mod quantiles;
