//! Peak memory of `plumbline profile` on sources far larger than memory
//! budgets (figures go in the notes; nothing asserts a size):
//!
//! 1. A generated JSON Lines file of at least 8 GB (23 M rows of the
//!    profile benchmark's 15 mixed columns), read whole: peak resident set
//!    and wall time; then `--first-look` and `--sample 10000` (a spread
//!    sample) on the same file, beside it.
//! 2. A directory of 5,000 Parquet part files (2,000 rows each, Hive-style
//!    `week=N` partitions): peak resident set and wall time, and of a
//!    spread sample of it.
//!
//! Peak memory is `/usr/bin/time -v`'s maximum resident set size (Debian
//! package `time`). Run: `cargo build --release && cargo bench --bench
//! memory`. Needs Python with `tests/bench/requirements.txt`; data is
//! generated once into `$PLUMBLINE_BENCH_DATA` (default: the system temp
//! folder), about 9 GB, which takes several minutes.

#[path = "common.rs"]
mod common;

use std::path::{Path, PathBuf};
use std::process::Command;
use std::time::{Duration, Instant};

use common::{data_file, plumbline_binary, python};

const PEERS: &str = "profile_peers.py";

struct Run {
    peak_mb: f64,
    wall: Duration,
    stdout: String,
}

/// Runs the release binary under `/usr/bin/time -v`.
fn measured(args: &[&str]) -> Run {
    let started = Instant::now();
    let out =
        Command::new("/usr/bin/time").arg("-v").arg(plumbline_binary()).args(args).output().expect("/usr/bin/time");
    let wall = started.elapsed();
    let report = String::from_utf8_lossy(&out.stderr);
    assert!(out.status.success(), "plumbline {args:?}: {report}");
    let kb: f64 = report
        .lines()
        .find_map(|l| l.trim().strip_prefix("Maximum resident set size (kbytes): "))
        .expect("time -v reports the peak")
        .parse()
        .unwrap();
    Run { peak_mb: kb / 1024.0, wall, stdout: String::from_utf8_lossy(&out.stdout).into_owned() }
}

fn parts_dir(parts: usize, rows: usize) -> PathBuf {
    let base = std::env::var_os("PLUMBLINE_BENCH_DATA").map(PathBuf::from).unwrap_or_else(std::env::temp_dir);
    let dir = base.join(format!("plumbline-bench-parts-{parts}x{rows}"));
    if !dir.exists() {
        eprintln!("generating {} (once)…", dir.display());
        let partial = base.join(format!("plumbline-bench-parts-{parts}x{rows}.partial"));
        let _ = std::fs::remove_dir_all(&partial);
        python(PEERS, &["make-parts", partial.to_str().unwrap(), &parts.to_string(), &rows.to_string()]);
        std::fs::rename(&partial, &dir).unwrap();
    }
    dir
}

fn first_line(stdout: &str) -> &str {
    stdout.lines().next().unwrap_or("")
}

fn main() {
    let jsonl = data_file("plumbline-bench-mixed-23m.jsonl", PEERS, &["make-jsonl", "23000000"]);
    let bytes = std::fs::metadata(&jsonl).unwrap().len() as f64;
    assert!(bytes >= 8e9, "{} is only {bytes} bytes", jsonl.display());
    let path = jsonl.to_str().unwrap();
    let whole = measured(&["profile", path]);
    let look = measured(&["profile", "--first-look", path]);
    let sample = measured(&["profile", "--sample", "10000", path]);
    println!("JSON Lines, {:.2} GB: {}", bytes / 1e9, first_line(&whole.stdout));
    println!("  profile (every row):   peak {:>7.0} MB  {:>8.1} s", whole.peak_mb, whole.wall.as_secs_f64());
    println!("  profile --first-look:  peak {:>7.0} MB  {:>8.3} s", look.peak_mb, look.wall.as_secs_f64());
    println!("  profile --sample 10000: peak {:>7.0} MB  {:>8.3} s", sample.peak_mb, sample.wall.as_secs_f64());
    println!("  {}", sample.stdout.lines().find(|l| l.contains("SAMPLE:")).unwrap_or("(no SAMPLE line)").trim());
    println!("  peak / file size: {:.4}", whole.peak_mb * 1024.0 * 1024.0 / bytes);
    println!("  first look / whole read, time: {:.5}", look.wall.as_secs_f64() / whole.wall.as_secs_f64());
    println!("  spread sample / whole read, time: {:.5}", sample.wall.as_secs_f64() / whole.wall.as_secs_f64());

    let dir = parts_dir(5_000, 2_000);
    let parts = measured(&["profile", dir.to_str().unwrap()]);
    let parts_sample = measured(&["profile", "--sample", "10000", dir.to_str().unwrap()]);
    let dir_bytes: u64 = walk_bytes(&dir);
    println!("Directory of 5,000 Parquet parts, {:.2} GB: {}", dir_bytes as f64 / 1e9, first_line(&parts.stdout));
    println!("  profile (every part):  peak {:>7.0} MB  {:>8.1} s", parts.peak_mb, parts.wall.as_secs_f64());
    println!(
        "  profile --sample 10000: peak {:>7.0} MB  {:>8.3} s",
        parts_sample.peak_mb,
        parts_sample.wall.as_secs_f64()
    );
}

fn walk_bytes(dir: &Path) -> u64 {
    std::fs::read_dir(dir)
        .unwrap()
        .map(|e| {
            let e = e.unwrap();
            let meta = e.metadata().unwrap();
            if meta.is_dir() { walk_bytes(&e.path()) } else { meta.len() }
        })
        .sum()
}
