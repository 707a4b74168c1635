//! Reading a source split into independent parts, in parallel.

use std::collections::BTreeMap;
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::mpsc;
use std::sync::{Arc, Condvar, Mutex, MutexGuard};

use super::{Coverage, Scan};
use crate::shape::ShapeBuilder;
use crate::source::{Progress, Source, SourceError, SourceInfo};

/// One part read into its own builder.
struct PartRead {
    builder: ShapeBuilder,
    error: Option<SourceError>,
    stopped: bool,
    part: Box<dyn Source>,
    /// What the builder began as (for reading the part again).
    start: Arc<ShapeBuilder>,
}

/// How many parts merged before part `index` its builder starts past: all
/// but the last `lag` before it. Fixed by the part's place in the order,
/// never by timing, so every run gives the same result; with `lag` the
/// number of threads, a thread can start a part while the others still read
/// the parts before it, so no thread waits for the slowest of a group.
fn start_count(index: usize, lag: usize) -> usize {
    index.saturating_sub(lag)
}

/// What the threads reading parts and the thread merging them share.
struct Handout {
    parts: Vec<Option<Box<dyn Source>>>,
    /// The next part to hand out.
    next: usize,
    /// The merge ended (a part broke, was stopped, or a thread panicked):
    /// hand out no more.
    halted: bool,
    /// Merged states that parts not yet handed out start past, by how many
    /// parts they hold (see [`start_count`]).
    starts: Vec<(usize, Arc<ShapeBuilder>)>,
}

type Shared = (Mutex<Handout>, Condvar);

fn lock(shared: &Shared) -> MutexGuard<'_, Handout> {
    // A thread that panicked halted the handout first; what it left is sound.
    shared.0.lock().unwrap_or_else(|poisoned| poisoned.into_inner())
}

/// Halts the handout if its thread unwinds, so no thread waits forever for
/// a merge that will not come (the panic then reaches the caller).
struct HaltOnPanic<'a>(&'a Shared);

impl Drop for HaltOnPanic<'_> {
    fn drop(&mut self) {
        if std::thread::panicking() {
            lock(self.0).halted = true;
            self.0.1.notify_all();
        }
    }
}

/// Reads independent parts (row groups, line chunks, part files) on one
/// thread per core (fewer for fewer parts), each into its own builder, and
/// merges them into the result in order as they come, so memory holds a few
/// parts' builders and only the files of parts being read are open (parts
/// open their file when first read). A part that breaks or is stopped ends
/// the scan there, keeping everything before it.
pub(super) fn scan_parts(
    info: SourceInfo,
    parts: Vec<Box<dyn Source>>,
    profile: bool,
    stop: &AtomicBool,
    progress: &mut dyn FnMut(Progress),
) -> Scan {
    let total = parts.len();
    let threads = rayon::current_num_threads().max(1);
    let readers = threads.min(total).max(1);
    let lag = readers;
    let mut merged = ShapeBuilder::new(&info, profile);
    let shared: Shared = (
        Mutex::new(Handout {
            parts: parts.into_iter().map(Some).collect(),
            next: 0,
            halted: false,
            starts: vec![(0, Arc::new(merged.for_later_part(&info)))],
        }),
        Condvar::new(),
    );
    let mut coverage = Coverage::Full;
    std::thread::scope(|scope| {
        let (sender, results) = mpsc::channel::<(usize, PartRead)>();
        for _ in 0..readers {
            let sender = sender.clone();
            let shared = &shared;
            scope.spawn(move || {
                // Each reader has its own share of the threads for the
                // parallel work inside a part (parsing JSON): in the shared
                // pool, every part's batches would be spread over every
                // thread, each part then building and merging a worker
                // tree per thread.
                let read = || read_parts(shared, lag, stop, &sender);
                match rayon::ThreadPoolBuilder::new().num_threads((threads / readers).max(1)).build() {
                    Ok(own) => own.install(read),
                    Err(_) => read(),
                }
            });
        }
        drop(sender);
        let _halt = HaltOnPanic(&shared);
        let mut waiting = BTreeMap::new();
        let mut done = 0;
        let mut bytes_done = 0;
        // Where the part after the last merged one must start, if it has a seam.
        let mut expected_start: Option<u64> = None;
        'merging: for (index, read) in results.iter() {
            waiting.insert(index, read);
            while let Some(mut read) = waiting.remove(&done) {
                if let (Some(expected), Some(seam)) = (expected_start, read.part.seam())
                    && seam.start != expected
                    && let Some(again) = read.part.reread_from(expected)
                {
                    // The guessed start fell inside a record (a quoted line
                    // break in CSV): read this part again from where the part
                    // before it really ended.
                    read = read_part(again, read.start, stop);
                }
                expected_start = read.part.seam().and_then(|s| s.next_record);
                bytes_done += read.part.info().bytes;
                merged.merge_after(read.builder);
                done += 1;
                let ended = match (read.error, read.stopped) {
                    (Some(error), _) => Some(Coverage::Broken { rows: merged.rows(), error: error.to_string() }),
                    (None, true) => Some(Coverage::Stopped(merged.rows())),
                    (None, false) => None,
                };
                if let Some(ended) = ended {
                    coverage = ended;
                    lock(&shared).halted = true;
                    shared.1.notify_all();
                    break 'merging;
                }
                if done + lag < total {
                    let start = Arc::new(merged.for_later_part(&info));
                    let mut handout = lock(&shared);
                    let next = handout.next;
                    handout.starts.retain(|(count, _)| *count >= start_count(next, lag));
                    handout.starts.push((done, start));
                    drop(handout);
                    shared.1.notify_all();
                }
                progress(match info.rows {
                    Some(total) => Progress { done: merged.rows(), total },
                    None => Progress { done: bytes_done, total: info.bytes },
                });
            }
        }
    });
    Scan { info, shape: merged.finish(), coverage, sample: None, from_report: None }
}

/// One thread's share: takes the next part once the state it starts past
/// is merged, reads it and sends it to be merged, until none are left.
fn read_parts(shared: &Shared, lag: usize, stop: &AtomicBool, merge: &mpsc::Sender<(usize, PartRead)>) {
    let _halt = HaltOnPanic(shared);
    loop {
        let (index, part, start) = {
            let mut handout = lock(shared);
            let start = loop {
                if handout.halted || handout.next == handout.parts.len() {
                    return;
                }
                let needed = start_count(handout.next, lag);
                match handout.starts.iter().find(|(count, _)| *count == needed) {
                    Some((_, start)) => break Arc::clone(start),
                    None => handout = shared.1.wait(handout).unwrap_or_else(|poisoned| poisoned.into_inner()),
                }
            };
            let index = handout.next;
            handout.next += 1;
            let part = handout.parts[index].take().expect("each part is handed out once");
            (index, part, start)
        };
        if merge.send((index, read_part(part, start, stop))).is_err() {
            return;
        }
    }
}

/// Reads one part into a builder that begins as `start`.
fn read_part(mut part: Box<dyn Source>, start: Arc<ShapeBuilder>, stop: &AtomicBool) -> PartRead {
    let mut builder = (*start).clone();
    let (error, stopped) = loop {
        if stop.load(Ordering::Relaxed) {
            break (None, true);
        }
        match part.next_batch() {
            Ok(Some(b)) => {
                if let Err(e) = builder.add(&b) {
                    break (Some(part.place_error(e)), false);
                }
            }
            Ok(None) => break (None, false),
            Err(e) => break (Some(e), false),
        }
    };
    PartRead { builder, error, stopped, part, start }
}

#[cfg(test)]
mod tests {
    use std::path::Path;

    use super::*;
    use crate::source::csv::CsvSource;
    use crate::source::json::JsonSource;
    use crate::source::{Compression, Format};

    fn no_stop() -> AtomicBool {
        AtomicBool::new(false)
    }

    /// The file read whole, and read in chunks of about `target` bytes.
    fn whole_and_chunked(path: &Path, format: Format, target: u64) -> (Scan, Scan) {
        let bytes = std::fs::metadata(path).unwrap().len();
        let whole = {
            let mut source = crate::source::open_file(path, Default::default()).unwrap();
            super::super::scan_source(source.as_mut(), Default::default(), &no_stop(), &mut |_| {})
        };
        let (info, parts) = match format {
            Format::JsonLines => {
                let mut s = JsonSource::open(path, format, Compression::None, bytes).unwrap();
                (s.info().clone(), s.split_every(target).expect("more than one chunk"))
            }
            _ => {
                let mut s = CsvSource::open(path, format, Compression::None, bytes).unwrap();
                (s.info().clone(), s.split_every(target).expect("more than one chunk"))
            }
        };
        assert!(parts.len() > 2, "{} chunks of {target} bytes", parts.len());
        let chunked = scan_parts(info, parts, true, &no_stop(), &mut |_| {});
        (whole, chunked)
    }

    /// What a user sees of a scan: its report, less the time it was made.
    fn seen(scan: &Scan) -> serde_json::Value {
        let mut report = serde_json::to_value(crate::report::build(scan, Default::default())).unwrap();
        report["generated_at"] = serde_json::Value::Null;
        report
    }

    /// Equal reports, but for the last bits of sums merged in another order.
    fn same(a: &serde_json::Value, b: &serde_json::Value, at: &str) -> Result<(), String> {
        use serde_json::Value as J;
        match (a, b) {
            (J::Number(x), J::Number(y)) if x != y => {
                let (x, y) = (x.as_f64().unwrap(), y.as_f64().unwrap());
                let close = (x - y).abs() <= 1e-12 * x.abs().max(y.abs());
                if close { Ok(()) } else { Err(format!("{at}: {x} vs {y}")) }
            }
            (J::Array(x), J::Array(y)) if x.len() == y.len() => {
                x.iter().zip(y).enumerate().try_for_each(|(i, (x, y))| same(x, y, &format!("{at}[{i}]")))
            }
            (J::Object(x), J::Object(y)) if x.len() == y.len() => x.iter().try_for_each(|(k, v)| match y.get(k) {
                Some(w) => same(v, w, &format!("{at}.{k}")),
                None => Err(format!("{at}.{k} missing")),
            }),
            _ if a == b => Ok(()),
            _ => Err(format!("{at}: {a} vs {b}")),
        }
    }

    fn assert_same(chunked: &Scan, whole: &Scan, what: &str) {
        if let Err(e) = same(&seen(chunked), &seen(whole), "report") {
            panic!("{what}: {e}");
        }
    }

    fn json_lines() -> String {
        let mut text = String::new();
        for i in 0..300 {
            let line = match i % 5 {
                0 => format!("{{\"id\":{i},\"tags\":[\"a\",\"b\"],\"at\":\"2024-03-0{}T10:00:00Z\"}}", 1 + i % 9),
                1 => format!("{{\"id\":\"late-{i}\",\"nested\":{{\"x\":{i}.5}}}}"),
                2 => format!("{{\"id\":{i},\"tags\":null}}"),
                3 => "\n".to_string(),
                _ => format!("{{\"id\":{i},\"map\":{{\"k{}\":true}}}}", i % 7),
            };
            text.push_str(&line);
            text.push('\n');
        }
        text
    }

    /// A part of `rows` rows `{"x": first + i}` in one batch; reading it
    /// may panic or set a stop flag, and counts itself in `reads`.
    struct Scripted {
        info: SourceInfo,
        first: i64,
        rows: i64,
        panics: bool,
        stops: Option<Arc<AtomicBool>>,
        reads: Arc<std::sync::atomic::AtomicUsize>,
        done: bool,
    }

    impl Source for Scripted {
        fn info(&self) -> &SourceInfo {
            &self.info
        }
        fn next_batch(&mut self) -> Result<Option<crate::source::Batch>, SourceError> {
            if std::mem::replace(&mut self.done, true) {
                return Ok(None);
            }
            self.reads.fetch_add(1, Ordering::Relaxed);
            assert!(!self.panics, "a part that panics");
            if let Some(stop) = &self.stops {
                stop.store(true, Ordering::Relaxed);
            }
            let row = |i: i64| crate::value::Value::Object(vec![("x".into(), crate::value::Value::Int(self.first + i))]);
            Ok(Some(crate::source::Batch::Rows((0..self.rows).map(row).collect())))
        }
        fn progress(&self) -> Progress {
            Progress { done: 0, total: 1 }
        }
    }

    fn scripted_info() -> SourceInfo {
        SourceInfo {
            path: "parts.jsonl".into(),
            format: Format::JsonLines,
            compression: Compression::None,
            bytes: 1,
            parts: 1,
            rows: None,
            schema: None,
            parquet_leaves: None,
            facts: Default::default(),
        }
    }

    /// Parts of the given sizes, numbered on from one another; `panics` and
    /// `stops` name parts by index.
    fn scripted(sizes: &[i64], panics: Option<usize>, stops: Option<(usize, Arc<AtomicBool>)>) -> (Vec<Box<dyn Source>>, Arc<std::sync::atomic::AtomicUsize>) {
        let reads = Arc::new(std::sync::atomic::AtomicUsize::new(0));
        let mut first = 0;
        let parts = sizes
            .iter()
            .enumerate()
            .map(|(i, &rows)| {
                let part = Scripted {
                    info: scripted_info(),
                    first,
                    rows,
                    panics: panics == Some(i),
                    stops: stops.as_ref().filter(|(at, _)| *at == i).map(|(_, flag)| Arc::clone(flag)),
                    reads: Arc::clone(&reads),
                    done: false,
                };
                first += rows;
                Box::new(part) as Box<dyn Source>
            })
            .collect();
        (parts, reads)
    }

    fn on_threads<T: Send>(threads: usize, run: impl FnOnce() -> T + Send) -> T {
        rayon::ThreadPoolBuilder::new().num_threads(threads).build().unwrap().install(run)
    }

    #[test]
    fn each_part_starts_past_all_but_the_last_few_before_it() {
        assert_eq!((0..7).map(|i| start_count(i, 2)).collect::<Vec<_>>(), [0, 0, 0, 1, 2, 3, 4]);
        assert_eq!((0..3).map(|i| start_count(i, 1)).collect::<Vec<_>>(), [0, 0, 1]);
    }

    #[test]
    fn parts_are_merged_in_order_whatever_the_threads() {
        // Uneven parts, so later ones often finish first.
        let sizes = [500, 3, 40, 1_000, 7, 7, 260, 1, 90, 2_000, 33];
        let scan = |threads| {
            on_threads(threads, || scan_parts(scripted_info(), scripted(&sizes, None, None).0, true, &no_stop(), &mut |_| {}))
        };
        let alone = scan(1);
        let total: i64 = sizes.iter().sum();
        assert_eq!((alone.coverage.clone(), alone.shape.rows), (Coverage::Full, total as u64));
        let numbers = alone.shape.fields[0].stats.as_ref().unwrap().numbers.as_ref().unwrap();
        assert_eq!((numbers.moments.min(), numbers.moments.max()), (Some(0.0), Some((total - 1) as f64)));
        for threads in [2, 3, 16] {
            let shared = scan(threads);
            assert_same(&shared, &alone, &format!("{threads} threads"));
            assert_eq!(seen(&shared), seen(&scan(threads)), "two runs on {threads} threads");
        }
    }

    #[test]
    fn a_stopped_part_ends_the_scan_after_it() {
        let stop = Arc::new(AtomicBool::new(false));
        let (parts, reads) = scripted(&[10, 20, 30, 40, 50], None, Some((2, Arc::clone(&stop))));
        let scan = on_threads(1, || scan_parts(scripted_info(), parts, true, &stop, &mut |_| {}));
        // The stopping part's rows were read before the stop was seen.
        assert_eq!(scan.coverage, Coverage::Stopped(60));
        assert_eq!(scan.shape.rows, 60);
        assert_eq!(reads.load(Ordering::Relaxed), 3, "no part after the stop is read");
    }

    #[test]
    fn a_panicking_part_reaches_the_caller_instead_of_hanging() {
        for threads in [1, 2, 4] {
            let (parts, _) = scripted(&[100; 12], Some(1), None);
            let run = std::panic::AssertUnwindSafe(|| on_threads(threads, || scan_parts(scripted_info(), parts, true, &no_stop(), &mut |_| {})));
            assert!(std::panic::catch_unwind(run).is_err(), "{threads} threads");
        }
    }

    #[test]
    fn json_lines_in_chunks_equal_one_pass() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("rows.jsonl");
        std::fs::write(&path, json_lines()).unwrap();
        for target in [40, 333, 2_000] {
            let (whole, chunked) = whole_and_chunked(&path, Format::JsonLines, target);
            assert_eq!(chunked.coverage, Coverage::Full);
            assert_same(&chunked, &whole, &format!("chunks of {target} bytes"));
        }
    }

    #[test]
    fn csv_chunks_cut_inside_quoted_line_breaks_are_read_again() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("notes.csv");
        let mut text = String::from("id,note,height\n");
        for i in 0..200 {
            let note = match i % 4 {
                0 => "\"two\nlines, and a comma\"".to_string(),
                1 => "\"\"\"quoted\"\"\n\n\"".to_string(),
                2 => "plain".to_string(),
                _ => String::new(),
            };
            // A quote inside an unquoted cell is a literal: parity proves nothing.
            text.push_str(&format!("{i},{note},5'{}\"\n", i % 12));
        }
        std::fs::write(&path, &text).unwrap();
        for target in [1, 7, 19, 64, 500] {
            let (whole, chunked) = whole_and_chunked(&path, Format::Csv, target);
            assert_eq!(whole.shape.rows, 200);
            assert_eq!(chunked.coverage, Coverage::Full, "chunks of {target} bytes");
            assert_same(&chunked, &whole, &format!("chunks of {target} bytes"));
        }
    }

    #[test]
    fn errors_in_later_chunks_name_the_line_of_the_file() {
        let dir = tempfile::tempdir().unwrap();
        let mut text = json_lines();
        text.push_str("{\"id\": oops}\n{\"id\":1}\n");
        let path = dir.path().join("bad.jsonl");
        std::fs::write(&path, &text).unwrap();
        let (whole, chunked) = whole_and_chunked(&path, Format::JsonLines, 500);
        assert!(
            matches!(&whole.coverage, Coverage::Broken { error, .. } if error.contains("line 361, column 8")),
            "{:?}",
            whole.coverage
        );
        assert_eq!(chunked.coverage, whole.coverage);
        assert_same(&chunked, &whole, "chunks of 500 bytes");

        let mut text = String::from("a,b\n");
        for i in 0..100 {
            text.push_str(&format!("{i},\"x\ny\"\n"));
        }
        text.push_str("1,2,3\n");
        let path = dir.path().join("bad.csv");
        std::fs::write(&path, &text).unwrap();
        let (whole, chunked) = whole_and_chunked(&path, Format::Csv, 100);
        assert!(
            matches!(&whole.coverage, Coverage::Broken { error, .. } if error.contains("line 202") && error.contains("expected 2 fields")),
            "{:?}",
            whole.coverage
        );
        assert_eq!(chunked.coverage, whole.coverage);
    }
}
