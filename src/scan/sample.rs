//! Profiling a uniform sample of the rows: every row is read and offered
//! to a reservoir; only the rows it keeps are observed.

use std::sync::atomic::{AtomicBool, Ordering};

use super::{Coverage, SampleOptions, Sampled, Scan};
use crate::sample::kept::KeptRows;
use crate::shape::ShapeBuilder;
use crate::source::{Progress, Source, SourceInfo};

pub(super) fn scan_sample(
    source: &mut dyn Source,
    info: SourceInfo,
    options: SampleOptions,
    profile: bool,
    stop: &AtomicBool,
    progress: &mut dyn FnMut(Progress),
) -> Scan {
    let mut kept = KeptRows::new(options.rows, options.seed, info.path.clone());
    let coverage = loop {
        if stop.load(Ordering::Relaxed) {
            break Coverage::Stopped(kept.seen());
        }
        match source.next_batch() {
            Ok(Some(batch)) => {
                if let Err(e) = kept.offer(&batch) {
                    break Coverage::Broken { rows: kept.seen(), error: e.to_string() };
                }
            }
            Ok(None) => break Coverage::Full,
            Err(e) => break Coverage::Broken { rows: kept.seen(), error: e.to_string() },
        }
        progress(source.progress());
    };
    let from_rows = kept.seen();
    let (shape, coverage) = observe_kept(kept, &info, profile, coverage, Some);
    let sample = (from_rows > shape.rows).then_some(Sampled { from_rows, seed: options.seed, spread: None });
    Scan { info, shape, coverage, sample, from_report: None }
}

/// Observes the rows a reservoir kept, in the order they were read; each
/// example names the source row `source_row` gives for its stream row.
pub(super) fn observe_kept(
    kept: KeptRows,
    info: &SourceInfo,
    profile: bool,
    mut coverage: Coverage,
    source_row: impl Fn(u64) -> Option<u64>,
) -> (crate::shape::Shape, Coverage) {
    let from_rows = kept.seen();
    let mut builder = ShapeBuilder::new(info, profile);
    let mut stream_rows = Vec::new();
    match kept.finish() {
        Ok(batches) => {
            for b in batches {
                if let Err(e) = builder.add(&b.batch) {
                    coverage = Coverage::Broken { rows: from_rows, error: e.to_string() };
                    break;
                }
                stream_rows.extend(b.rows);
            }
        }
        Err(e) => coverage = Coverage::Broken { rows: from_rows, error: e.to_string() },
    }
    // Examples name the row of the source, not of the sample.
    let rows: Vec<Option<u64>> = stream_rows.into_iter().map(source_row).collect();
    builder.renumber_examples(&rows);
    (builder.finish(), coverage)
}
