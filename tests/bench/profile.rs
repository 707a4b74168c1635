//! The full profile beside peers in the same run (figures go in the notes;
//! no test asserts a time):
//!
//! 1. Parquet, 10 M rows × 15 mixed columns (ints, floats, a decimal,
//!    strings of moderate and high cardinality, nullable text, timestamp,
//!    date, bool, a list, a struct), pyarrow's default writer settings:
//!    Plumbline's every-statistic profile beside polars (read_parquet plus
//!    null count, n_unique, min, max, mean, std and seven quantiles of every
//!    leaf) and beside pyarrow's bare `read_table`, the decode floor.
//! 2. The same rows' first 3 M as JSON Lines (≥ 1 GB) beside polars
//!    `read_ndjson` plus the same statistics.
//! 3. Peak memory (`/usr/bin/time -v`, maximum resident set) of the
//!    `plumbline profile` command on a ≥ 4 GB Parquet file of the same
//!    columns, beside pyarrow's `read_table` of the same file.
//!
//! Run: `cargo build --release && cargo bench --bench profile`. Needs Python
//! with `tests/bench/requirements.txt`. Data is generated once into
//! `$PLUMBLINE_BENCH_DATA` (default: the system temp folder), about 6 GB.
//! Set `PLUMBLINE_BENCH_SKIP_MEMORY=1` to leave out part 3.

#[path = "common.rs"]
mod common;

use std::path::Path;
use std::process::Command;

use common::{data_file, plumbline_binary, python, seconds, time_runs};
use plumbline::scan::ScanOptions;

// The allocator the `plumbline` binary uses, so in-process figures match it.
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

const PEERS: &str = "profile_peers.py";

fn profile(path: &Path) -> u64 {
    common::scan(path, ScanOptions::default())
}

/// Maximum resident set size in MB of a command, from `/usr/bin/time -v`.
fn peak_rss_mb(program: &Path, args: &[&str]) -> f64 {
    let out = Command::new("/usr/bin/time").arg("-v").arg(program).args(args).output().expect("/usr/bin/time");
    assert!(out.status.success(), "{program:?} {args:?}: {}", String::from_utf8_lossy(&out.stderr));
    let report = String::from_utf8_lossy(&out.stderr);
    let kb: f64 = report
        .lines()
        .find_map(|l| l.trim().strip_prefix("Maximum resident set size (kbytes): "))
        .expect("time -v reports the peak")
        .parse()
        .unwrap();
    kb / 1024.0
}

fn main() {
    let parquet = data_file("plumbline-bench-mixed-10m.parquet", PEERS, &["make-parquet", "10000000"]);
    let p = parquet.to_str().unwrap();
    let mut rows = 0;
    let ours = time_runs(3, || rows = profile(&parquet));
    // Our own decode floor: every row read and its kinds counted, no statistics.
    let shape_only = ScanOptions { skip_statistics: true, ..ScanOptions::default() };
    let reading = time_runs(3, || rows = common::scan(&parquet, shape_only));
    let polars = seconds(&python(PEERS, &["polars-parquet", p]));
    let floor = seconds(&python(PEERS, &["read-table", p]));
    let mb = std::fs::metadata(&parquet).unwrap().len() as f64 / 1e6;
    println!("Parquet full profile, {rows} rows, 15 columns, {mb:.0} MB (median of 3 runs each):");
    println!("  plumbline (every statistic, every leaf): {:>7.2} s", ours.as_secs_f64());
    println!("  plumbline reading every row, no statistics: {:>4.2} s", reading.as_secs_f64());
    println!("  polars read_parquet + statistics:        {:>7.2} s", polars.as_secs_f64());
    println!("  pyarrow read_table (decode only):        {:>7.2} s", floor.as_secs_f64());
    println!("  ratio plumbline / polars:     {:.2}", ours.as_secs_f64() / polars.as_secs_f64());
    println!("  ratio plumbline / read_table: {:.2}", ours.as_secs_f64() / floor.as_secs_f64());

    let jsonl = data_file("plumbline-bench-mixed-3m.jsonl", PEERS, &["make-jsonl", "3000000"]);
    let bytes = std::fs::metadata(&jsonl).unwrap().len() as f64;
    assert!(bytes >= 1e9, "{} is only {bytes} bytes", jsonl.display());
    let ours = time_runs(1, || rows = profile(&jsonl));
    let polars = seconds(&python(PEERS, &["polars-ndjson", jsonl.to_str().unwrap()]));
    let mb = bytes / 1e6;
    println!("JSON Lines full profile, {rows} rows, {mb:.0} MB (one run each):");
    println!("  plumbline:                       {:>7.2} s  {:>6.1} MB/s", ours.as_secs_f64(), mb / ours.as_secs_f64());
    println!("  polars read_ndjson + statistics: {:>7.2} s  {:>6.1} MB/s", polars.as_secs_f64(), mb / polars.as_secs_f64());
    println!("  ratio plumbline / polars: {:.2}", ours.as_secs_f64() / polars.as_secs_f64());

    if std::env::var_os("PLUMBLINE_BENCH_SKIP_MEMORY").is_some() {
        return;
    }
    let big = data_file("plumbline-bench-mixed-66m.parquet", PEERS, &["make-parquet", "66000000"]);
    let gb = std::fs::metadata(&big).unwrap().len() as f64 / 1e9;
    assert!(gb >= 4.0, "{} is only {gb:.2} GB", big.display());
    let ours = peak_rss_mb(&plumbline_binary(), &["profile", big.to_str().unwrap()]);
    let script = "import sys, pyarrow.parquet as pq; pq.read_table(sys.argv[1])";
    let pyarrow = peak_rss_mb(Path::new("python3"), &["-c", script, big.to_str().unwrap()]);
    println!("Peak memory (maximum resident set), {gb:.2} GB Parquet:");
    println!("  plumbline profile:   {ours:>7.0} MB");
    println!("  pyarrow read_table:  {pyarrow:>7.0} MB");
    println!("  ratio plumbline / pyarrow: {:.3}", ours / pyarrow);
}
