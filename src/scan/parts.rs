//! Reading a source split into independent parts, in parallel.

use std::sync::atomic::{AtomicBool, Ordering};

use super::{Coverage, Scan};
use crate::shape::ShapeBuilder;
use crate::source::{Progress, Source, SourceInfo};

/// Reads independent parts (row groups) a few at a time in parallel, each
/// into its own builder, merging each window into the result in order so
/// memory holds only a window's builders. A part that breaks or is stopped
/// ends the scan there, keeping everything before it.
pub(super) fn scan_parts(
    info: SourceInfo,
    parts: Vec<Box<dyn Source>>,
    profile: bool,
    stop: &AtomicBool,
    progress: &mut dyn FnMut(Progress),
) -> Scan {
    use rayon::prelude::*;

    let window = 2 * rayon::current_num_threads().max(1);
    let total = info.rows.unwrap_or(0);
    let mut merged = ShapeBuilder::new(&info, profile);
    let mut parts = parts.into_iter();
    let mut coverage = Coverage::Full;
    'windows: loop {
        let batch: Vec<Box<dyn Source>> = parts.by_ref().take(window).collect();
        if batch.is_empty() {
            break;
        }
        let results: Vec<(ShapeBuilder, Option<String>, bool)> = batch
            .into_par_iter()
            .map(|mut part| {
                let mut builder = ShapeBuilder::new(&info, profile);
                loop {
                    if stop.load(Ordering::Relaxed) {
                        return (builder, None, true);
                    }
                    match part.next_batch() {
                        Ok(Some(b)) => {
                            if let Err(e) = builder.add(&b) {
                                return (builder, Some(e.to_string()), false);
                            }
                        }
                        Ok(None) => return (builder, None, false),
                        Err(e) => return (builder, Some(e.to_string()), false),
                    }
                }
            })
            .collect();
        for (builder, error, stopped) in results {
            merged.merge_after(builder);
            if let Some(error) = error {
                coverage = Coverage::Broken { rows: merged.rows(), error };
                break 'windows;
            }
            if stopped {
                coverage = Coverage::Stopped(merged.rows());
                break 'windows;
            }
        }
        progress(Progress { done: merged.rows(), total });
    }
    Scan { info, shape: merged.finish(), coverage, sample: None, from_report: None }
}
