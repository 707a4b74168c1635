//! Helpers shared by the benchmarks: generated data files, peers in
//! Python, medians of timed runs.

#![allow(dead_code)] // each benchmark uses a different subset

use std::path::{Path, PathBuf};
use std::process::Command;
use std::sync::atomic::AtomicBool;
use std::time::{Duration, Instant};

use plumbline::scan::{self, ScanOptions};
use plumbline::source::OpenOptions;

/// Runs `tests/bench/<script>` with `args`; its trimmed stdout.
pub fn python(script: &str, args: &[&str]) -> String {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/bench").join(script);
    let out = Command::new("python3").arg(&path).args(args).output().expect("python3");
    assert!(out.status.success(), "{script} {args:?}: {}", String::from_utf8_lossy(&out.stderr));
    String::from_utf8_lossy(&out.stdout).trim().to_string()
}

/// A generated data file under `$PLUMBLINE_BENCH_DATA` (default: the system
/// temp folder), made once by `script make` and kept for later runs.
pub fn data_file(name: &str, script: &str, make: &[&str]) -> PathBuf {
    let dir = std::env::var_os("PLUMBLINE_BENCH_DATA").map(PathBuf::from).unwrap_or_else(std::env::temp_dir);
    let path = dir.join(name);
    if !path.exists() {
        eprintln!("generating {} (once)…", path.display());
        let partial = dir.join(format!("{name}.partial"));
        let mut args = vec![make[0], partial.to_str().unwrap()];
        args.extend(&make[1..]);
        python(script, &args);
        std::fs::rename(&partial, &path).unwrap();
    }
    path
}

pub fn median(mut times: Vec<Duration>) -> Duration {
    times.sort();
    times[times.len() / 2]
}

pub fn time_runs(runs: usize, mut f: impl FnMut()) -> Duration {
    median(
        (0..runs)
            .map(|_| {
                let t = Instant::now();
                f();
                t.elapsed()
            })
            .collect(),
    )
}

/// Scans `path` in process; the rows the Shape describes.
pub fn scan(path: &Path, options: ScanOptions) -> u64 {
    let stop = AtomicBool::new(false);
    let scan = scan::scan_path(path, OpenOptions::default(), options, &stop, &mut |_| {}).unwrap();
    assert!(!scan.coverage.is_partial(), "{:?}", scan.coverage);
    scan.shape.rows
}

/// The release binary (`cargo build --release` first).
pub fn plumbline_binary() -> PathBuf {
    let target = std::env::var_os("CARGO_TARGET_DIR")
        .map(PathBuf::from)
        .unwrap_or_else(|| Path::new(env!("CARGO_MANIFEST_DIR")).join("target"));
    let bin = target.join("release/plumbline");
    assert!(bin.exists(), "{} is missing: run cargo build --release first", bin.display());
    bin
}

pub fn seconds(text: &str) -> Duration {
    Duration::from_secs_f64(text.parse().unwrap_or_else(|_| panic!("not seconds: {text}")))
}
