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

use std::io::Read;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::sync::atomic::AtomicBool;
use std::time::{Duration, Instant};

use plumbline::scan::{self, ScanOptions};

// The allocator the `plumbline` binary uses, so in-process figures match it.
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;
use plumbline::source::OpenOptions;

fn peers_script() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/bench/peers.py")
}

fn python(args: &[&str]) -> String {
    let out = Command::new("python3").arg(peers_script()).args(args).output().expect("python3");
    assert!(out.status.success(), "peers.py {args:?}: {}", String::from_utf8_lossy(&out.stderr));
    String::from_utf8_lossy(&out.stdout).trim().to_string()
}

fn data_file(name: &str, make: &str) -> PathBuf {
    let dir = std::env::var_os("PLUMBLINE_BENCH_DATA").map(PathBuf::from).unwrap_or_else(std::env::temp_dir);
    let path = dir.join(name);
    if !path.exists() {
        eprintln!("generating {} (once)…", path.display());
        let partial = dir.join(format!("{name}.partial"));
        python(&[make, partial.to_str().unwrap()]);
        std::fs::rename(&partial, &path).unwrap();
    }
    path
}

fn median(mut times: Vec<Duration>) -> Duration {
    times.sort();
    times[times.len() / 2]
}

fn time_runs(runs: usize, mut f: impl FnMut()) -> Duration {
    median((0..runs).map(|_| {
        let t = Instant::now();
        f();
        t.elapsed()
    }).collect())
}

fn shape(path: &Path, shape_only: bool) -> u64 {
    let stop = AtomicBool::new(false);
    let scan = scan::scan_path(path, OpenOptions::default(), ScanOptions { shape_only, ..Default::default() }, &stop, &mut |_| {}).unwrap();
    assert!(!scan.coverage.is_partial(), "{:?}", scan.coverage);
    scan.shape.rows
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

fn plumbline_binary() -> PathBuf {
    let target = std::env::var_os("CARGO_TARGET_DIR")
        .map(PathBuf::from)
        .unwrap_or_else(|| Path::new(env!("CARGO_MANIFEST_DIR")).join("target"));
    let bin = target.join("release/plumbline");
    assert!(bin.exists(), "{} is missing: run cargo build --release first", bin.display());
    bin
}

fn main() {
    let parquet = data_file("plumbline-bench-1g.parquet", "make-parquet");
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
    let pyarrow = Duration::from_secs_f64(python(&["footer", parquet.to_str().unwrap()]).parse().unwrap());
    println!("Parquet --shape-only, {:.2} GB, {} row groups:", size as f64 / 1e9, 110);
    println!("  plumbline in-process (open + footer + Shape): {:>9.3} ms", ours.as_secs_f64() * 1e3);
    println!("  pyarrow read_metadata:                         {:>9.3} ms", pyarrow.as_secs_f64() * 1e3);
    println!("  ratio plumbline / pyarrow:                     {:>9.2}", ours.as_secs_f64() / pyarrow.as_secs_f64());
    println!("  plumbline CLI, start to first output:          {:>9.3} ms", cli.as_secs_f64() * 1e3);
    println!("  python3 + pyarrow read_metadata, start to output: {:>6.3} ms", pyarrow_cli.as_secs_f64() * 1e3);
    println!("  ratio plumbline CLI / python3 + pyarrow:       {:>9.2}", cli.as_secs_f64() / pyarrow_cli.as_secs_f64());

    let jsonl = data_file("plumbline-bench-500m.jsonl", "make-jsonl");
    let bytes = std::fs::metadata(&jsonl).unwrap().len() as f64;
    let mut rows = 0;
    let ours = time_runs(3, || rows = shape(&jsonl, false));
    let polars = Duration::from_secs_f64(python(&["ndjson", jsonl.to_str().unwrap()]).parse().unwrap());
    let mb = bytes / 1e6;
    println!("JSON Lines shape and full profile, {:.0} MB, {rows} rows:", mb);
    println!("  plumbline (every row, every statistic): {:>8.2} s  {:>7.1} MB/s", ours.as_secs_f64(), mb / ours.as_secs_f64());
    println!("  polars.read_ndjson (read only):         {:>8.2} s  {:>7.1} MB/s", polars.as_secs_f64(), mb / polars.as_secs_f64());
    println!("  ratio plumbline / polars time: {:.2}", ours.as_secs_f64() / polars.as_secs_f64());
}
