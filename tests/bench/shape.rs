//! Benchmarks for reading a source's shape, with peers in the same run:
//!
//! 1. `--shape-only` on a Parquet file of at least 1 GB: Plumbline's
//!    in-process time (open, footer, Shape) and the CLI's time to its first
//!    line of output, each beside pyarrow's `read_metadata` on the same file.
//! 2. JSON Lines: shape inference with the full profile (every row read,
//!    every statistic) on a 500 MB file, in MB/s, beside `polars.read_ndjson`
//!    (which only reads) on the same file.
//!
//! Run: `cargo bench --bench shape` (release build). The data is generated on
//! first use into `$PLUMBLINE_BENCH_DATA` (default: the system temp folder)
//! and not committed. Needs Python with `tests/bench/requirements.txt`.

#[path = "common.rs"]
mod common;

use std::io::Read;
use std::path::Path;
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

use common::{data_file, median, plumbline_binary, python, seconds, time_runs};
use plumbline::scan::ScanOptions;

// The allocator the `plumbline` binary uses, so in-process figures match it.
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

fn shape(path: &Path, shape_only: bool) -> u64 {
    common::scan(path, ScanOptions { shape_only, ..Default::default() })
}

/// Wall time from starting a command to its first byte of output.
fn first_output(command: &mut Command) -> Duration {
    let start = Instant::now();
    let mut child = command.stdout(Stdio::piped()).spawn().unwrap_or_else(|e| panic!("{command:?}: {e}"));
    let mut first = [0u8; 1];
    child.stdout.as_mut().unwrap().read_exact(&mut first).unwrap();
    let elapsed = start.elapsed();
    child.wait().unwrap();
    elapsed
}

fn main() {
    let parquet = data_file("plumbline-bench-1g.parquet", "peers.py", &["make-parquet"]);
    let size = std::fs::metadata(&parquet).unwrap().len();
    assert!(size >= 1 << 30, "{} is only {size} bytes", parquet.display());
    let ours = time_runs(20, || {
        shape(&parquet, true);
    });
    let bin = plumbline_binary();
    let cli = median(
        (0..10).map(|_| first_output(Command::new(&bin).args(["profile", "--shape-only", parquet.to_str().unwrap()]))).collect(),
    );
    let footer_script = "import sys, pyarrow.parquet as pq; pq.read_metadata(sys.argv[1]); print(1)";
    let pyarrow_cli =
        median((0..5).map(|_| first_output(Command::new("python3").args(["-c", footer_script, parquet.to_str().unwrap()]))).collect());
    let pyarrow = seconds(&python("peers.py", &["footer", parquet.to_str().unwrap()]));
    println!("Parquet --shape-only, {:.2} GB, {} row groups:", size as f64 / 1e9, 110);
    println!("  plumbline in-process (open + footer + Shape): {:>9.3} ms", ours.as_secs_f64() * 1e3);
    println!("  pyarrow read_metadata:                         {:>9.3} ms", pyarrow.as_secs_f64() * 1e3);
    println!("  ratio plumbline / pyarrow:                     {:>9.2}", ours.as_secs_f64() / pyarrow.as_secs_f64());
    println!("  plumbline CLI, start to first output:          {:>9.3} ms", cli.as_secs_f64() * 1e3);
    println!("  python3 + pyarrow read_metadata, start to output: {:>6.3} ms", pyarrow_cli.as_secs_f64() * 1e3);
    println!("  ratio plumbline CLI / python3 + pyarrow:       {:>9.2}", cli.as_secs_f64() / pyarrow_cli.as_secs_f64());

    let jsonl = data_file("plumbline-bench-500m.jsonl", "peers.py", &["make-jsonl"]);
    let bytes = std::fs::metadata(&jsonl).unwrap().len() as f64;
    let mut rows = 0;
    let ours = time_runs(3, || rows = shape(&jsonl, false));
    let polars = seconds(&python("peers.py", &["ndjson", jsonl.to_str().unwrap()]));
    let mb = bytes / 1e6;
    println!("JSON Lines shape and full profile, {:.0} MB, {rows} rows:", mb);
    println!("  plumbline (every row, every statistic): {:>8.2} s  {:>7.1} MB/s", ours.as_secs_f64(), mb / ours.as_secs_f64());
    println!("  polars.read_ndjson (read only):         {:>8.2} s  {:>7.1} MB/s", polars.as_secs_f64(), mb / polars.as_secs_f64());
    println!("  ratio plumbline / polars time: {:.2}", ours.as_secs_f64() / polars.as_secs_f64());
}
