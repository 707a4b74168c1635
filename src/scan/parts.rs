//! Reading a source split into independent parts, in parallel.

use std::sync::atomic::{AtomicBool, Ordering};

use super::{Coverage, Scan};
use crate::shape::ShapeBuilder;
use crate::source::{Progress, Source, SourceError, SourceInfo};

/// One part read into its own builder.
struct PartRead {
    builder: ShapeBuilder,
    error: Option<SourceError>,
    stopped: bool,
    part: Box<dyn Source>,
}

/// Reads independent parts (row groups, line chunks, part files) a few at
/// a time in parallel, each into its own builder, merging each window into
/// the result in order, so memory holds only a window's builders and only
/// a window's files are open (parts open their file when first read). A
/// part that breaks or is stopped ends the scan there, keeping everything
/// before it.
pub(super) fn scan_parts(
    info: SourceInfo,
    parts: Vec<Box<dyn Source>>,
    profile: bool,
    stop: &AtomicBool,
    progress: &mut dyn FnMut(Progress),
) -> Scan {
    use rayon::prelude::*;

    let window = 2 * rayon::current_num_threads().max(1);
    let mut merged = ShapeBuilder::new(&info, profile);
    let mut parts = parts.into_iter();
    let mut coverage = Coverage::Full;
    let mut bytes_done = 0;
    // Where the part after the last merged one must start, if it has a seam.
    let mut expected_start: Option<u64> = None;
    'windows: loop {
        let batch: Vec<Box<dyn Source>> = parts.by_ref().take(window).collect();
        if batch.is_empty() {
            break;
        }
        let start = merged.for_later_part(&info);
        let results: Vec<PartRead> = batch.into_par_iter().map(|part| read_part(part, &start, stop)).collect();
        for mut read in results {
            if let (Some(expected), Some(seam)) = (expected_start, read.part.seam())
                && seam.start != expected
                && let Some(again) = read.part.reread_from(expected)
            {
                // The guessed start fell inside a record (a quoted line
                // break in CSV): read this part again from where the part
                // before it really ended.
                read = read_part(again, &start, stop);
            }
            expected_start = read.part.seam().and_then(|s| s.next_record);
            bytes_done += read.part.info().bytes;
            merged.merge_after(read.builder);
            if let Some(error) = read.error {
                coverage = Coverage::Broken { rows: merged.rows(), error: error.to_string() };
                break 'windows;
            }
            if read.stopped {
                coverage = Coverage::Stopped(merged.rows());
                break 'windows;
            }
        }
        progress(match info.rows {
            Some(total) => Progress { done: merged.rows(), total },
            None => Progress { done: bytes_done, total: info.bytes },
        });
    }
    Scan { info, shape: merged.finish(), coverage, sample: None, from_report: None }
}

/// Reads one part into a builder that begins as `start`.
fn read_part(mut part: Box<dyn Source>, start: &ShapeBuilder, stop: &AtomicBool) -> PartRead {
    let mut builder = start.clone();
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
    PartRead { builder, error, stopped, part }
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
