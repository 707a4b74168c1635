//! Helpers shared by the integration tests.
#![allow(dead_code)]

use std::path::{Path, PathBuf};
use std::sync::atomic::AtomicBool;
use std::sync::mpsc;
use std::time::Duration;

use plumbline::scan::{self, Scan, ScanOptions};
use plumbline::source::{OpenOptions, SourceError};

/// A folder of `../shared/corpus/` (or of `$PLUMBLINE_CORPUS` when set).
/// When it is absent the tests say so loudly, and fail under CI (`CI=true`)
/// rather than pass without checking.
pub fn corpus(sub: &str) -> Option<PathBuf> {
    let root = std::env::var_os("PLUMBLINE_CORPUS")
        .map(PathBuf::from)
        .unwrap_or_else(|| Path::new(env!("CARGO_MANIFEST_DIR")).join("../shared/corpus"));
    let dir = root.join(sub);
    if dir.is_dir() {
        return Some(dir);
    }
    let message = format!("CORPUS MISSING: {} does not exist, so these checks did NOT run", dir.display());
    if std::env::var("CI").is_ok_and(|v| v == "true") {
        panic!("{message}");
    }
    eprintln!("\n*** {message} ***\n");
    None
}

pub fn files_under(dir: &Path, keep: &dyn Fn(&Path) -> bool) -> Vec<PathBuf> {
    let mut out = Vec::new();
    let mut stack = vec![dir.to_path_buf()];
    while let Some(d) = stack.pop() {
        for entry in std::fs::read_dir(&d).unwrap() {
            let path = entry.unwrap().path();
            if path.is_dir() {
                stack.push(path);
            } else if keep(&path) {
                out.push(path);
            }
        }
    }
    out.sort();
    out
}

/// Scans `path` on another thread and fails the test if it takes longer
/// than `limit` (a hang) or panics.
pub fn scan_with_timeout(path: &Path, options: ScanOptions, limit: Duration) -> Result<Scan, SourceError> {
    let (tx, rx) = mpsc::channel();
    let owned = path.to_path_buf();
    std::thread::spawn(move || {
        let stop = AtomicBool::new(false);
        let result = scan::scan_path(&owned, OpenOptions::default(), options, &stop, &mut |_| {});
        let _ = tx.send(result);
    });
    match rx.recv_timeout(limit) {
        Ok(result) => result,
        Err(mpsc::RecvTimeoutError::Timeout) => panic!("{}: no answer within {limit:?} (a hang?)", path.display()),
        Err(mpsc::RecvTimeoutError::Disconnected) => panic!("{}: the reader panicked", path.display()),
    }
}

pub fn full(path: &Path) -> Result<Scan, SourceError> {
    scan_with_timeout(path, ScanOptions::default(), Duration::from_secs(120))
}

pub fn shape_only(path: &Path) -> Result<Scan, SourceError> {
    scan_with_timeout(path, ScanOptions { shape_only: true, ..Default::default() }, Duration::from_secs(30))
}

/// Runs a reference script under `tests/reference/` with `args`. When Python
/// or the package it needs is missing, says so loudly and returns `None` —
/// or fails under CI (`CI=true`) rather than pass without checking.
pub fn run_reference_script(script: &str, args: &[&std::ffi::OsStr], needs: &str) -> Option<()> {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/reference").join(script);
    let run = std::process::Command::new("python3").arg(&path).args(args).output();
    match run {
        Ok(o) if o.status.success() => Some(()),
        other => {
            let why = match other {
                Ok(o) => String::from_utf8_lossy(&o.stderr).into_owned(),
                Err(e) => e.to_string(),
            };
            not_run(&format!("python3 with {needs} is needed ({})", why.trim()))
        }
    }
}

/// Exit code of a reference script whose package is not installed.
pub const PACKAGE_MISSING: i32 = 3;

/// Runs a checking script under `tests/reference/` and returns its stdout.
/// The script itself judges: any failure fails the test, except a missing
/// python3 or package (exit code [`PACKAGE_MISSING`]), which is reported
/// loudly and returns `None` — or fails under CI (`CI=true`).
pub fn run_reference_check(script: &str, args: &[&std::ffi::OsStr], needs: &str) -> Option<String> {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/reference").join(script);
    let not_run = |why: String| not_run(&format!("python3 with {needs} is needed ({})", why.trim()));
    match std::process::Command::new("python3").arg(&path).args(args).output() {
        Err(e) => not_run(e.to_string()),
        Ok(o) if o.status.code() == Some(PACKAGE_MISSING) => not_run(String::from_utf8_lossy(&o.stderr).into_owned()),
        Ok(o) if o.status.success() => Some(String::from_utf8_lossy(&o.stdout).into_owned()),
        Ok(o) => panic!("{script} {args:?} failed:\n{}{}", String::from_utf8_lossy(&o.stdout), String::from_utf8_lossy(&o.stderr)),
    }
}

/// Copies the throwaway crate under `tests/types/<template>` (Cargo.toml,
/// Cargo.lock and any `extra` files already written into `into`), builds it
/// with locked dependencies in `$CARGO_TARGET_DIR/types-proof` (kept between
/// runs), and returns the built binary `name`. A build failure fails the
/// test with cargo's own words.
pub fn build_proof_crate(template: &str, into: &Path, files: &[&str], name: &str) -> PathBuf {
    let manifest = Path::new(env!("CARGO_MANIFEST_DIR"));
    std::fs::create_dir_all(into.join("src")).unwrap();
    for file in ["Cargo.toml", "Cargo.lock"].iter().chain(files) {
        std::fs::copy(manifest.join("tests/types").join(template).join(file), into.join(file)).unwrap();
    }
    let target = std::env::var_os("CARGO_TARGET_DIR").map(PathBuf::from).unwrap_or_else(|| manifest.join("target")).join("types-proof");
    let build = std::process::Command::new("cargo")
        .args(["build", "--quiet", "--locked"])
        .current_dir(into)
        .env("CARGO_TARGET_DIR", &target)
        .output()
        .expect("cargo");
    assert!(build.status.success(), "{template} does not build:\n{}", String::from_utf8_lossy(&build.stderr));
    target.join("debug").join(name)
}

/// Says loudly that a check against an outside tool did not run, and
/// returns `None` — or fails under CI (`CI=true`), where every tool is
/// installed by `.ci/run`.
pub fn not_run<T>(message: &str) -> Option<T> {
    let message = format!("REFERENCE CHECK NOT RUN: {message}");
    if std::env::var("CI").is_ok_and(|v| v == "true") {
        panic!("{message}");
    }
    eprintln!("\n*** {message} ***\n");
    None
}

/// A program on PATH, or [`not_run`] naming what installs it.
pub fn tool_on_path(name: &str, installed_by: &str) -> Option<PathBuf> {
    std::env::split_paths(&std::env::var_os("PATH").unwrap_or_default())
        .map(|d| d.join(name))
        .find(|p| p.exists())
        .or_else(|| not_run(&format!("{name} is not installed ({installed_by})")))
}
