//! Proof of the Python and JSON Schema targets with tools outside the
//! project (tests/reference/check_types.py): python3 imports the generated
//! module and builds an instance from every row; python-jsonschema checks
//! the generated schema against the draft 2020-12 metaschema and validates
//! every row, formats included.

mod common;
#[path = "types/nasty.rs"]
mod nasty;

use std::ffi::OsStr;
use std::path::{Path, PathBuf};
use std::process::Command;

fn generate(input: &Path, lang: &str, extra: &[&str], out: &Path) {
    let mut args = vec!["types", input.to_str().unwrap(), "--lang", lang, "--root", "Row", "-o", out.to_str().unwrap()];
    args.extend(extra);
    let o = Command::new(env!("CARGO_BIN_EXE_plumbline")).args(&args).output().unwrap();
    assert!(o.status.success(), "{args:?}: {}", String::from_utf8_lossy(&o.stderr));
}

fn sample(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-data").join(name)
}

/// (name, types from, rows checked, options): the demo JSON Lines, the
/// demo Parquet file against its rows as pyarrow reads them, nasty names.
fn cases(dir: &Path) -> Option<Vec<(String, PathBuf, PathBuf, Vec<&'static str>)>> {
    let nasty_rows = dir.join("nasty.jsonl");
    std::fs::write(&nasty_rows, nasty::nasty_jsonl(40)).unwrap();
    let parquet_rows = dir.join("parquet-rows.jsonl");
    let parquet = sample("deliveries.parquet");
    let args = [OsStr::new("parquet-rows"), parquet.as_os_str(), parquet_rows.as_os_str()];
    common::run_reference_check("check_types.py", &args, "pyarrow")?;
    let jsonl = sample("deliveries.jsonl");
    Some(vec![
        ("deliveries".into(), jsonl.clone(), jsonl.clone(), vec![]),
        ("deliveries, unions".into(), jsonl.clone(), jsonl.clone(), vec!["--mixed", "union"]),
        ("deliveries, all optional".into(), jsonl.clone(), jsonl, vec!["--optional", "all"]),
        ("deliveries.parquet, rows read by pyarrow".into(), sample("deliveries.parquet"), parquet_rows, vec![]),
        ("nasty names".into(), nasty_rows.clone(), nasty_rows, vec![]),
    ])
}

fn lines(path: &Path) -> String {
    std::fs::read_to_string(path).unwrap().lines().count().to_string()
}

fn check(lang: &str, extension: &str, command: &str, needs: &str) {
    let dir = tempfile::tempdir().unwrap();
    let Some(cases) = cases(dir.path()) else { return };
    for (i, (name, types_from, rows, extra)) in cases.into_iter().enumerate() {
        let generated = dir.path().join(format!("case{i}.{extension}"));
        generate(&types_from, lang, &extra, &generated);
        let mut args: Vec<&OsStr> = vec![OsStr::new(command), generated.as_os_str(), rows.as_os_str()];
        if command == "python-module" {
            args.push(OsStr::new("Row"));
        }
        let Some(fitted) = common::run_reference_check("check_types.py", &args, needs) else { return };
        assert_eq!(fitted.trim(), lines(&rows), "{name}: every row fits");
    }
    // The later drop drifted (a field turned from text to number, …): the
    // first drop's types must not fit it, so the proof can fail.
    let generated = dir.path().join(format!("first.{extension}"));
    generate(&sample("deliveries.jsonl"), lang, &[], &generated);
    let later = sample("later/deliveries.jsonl");
    let mut args: Vec<&OsStr> = vec![OsStr::new(command), generated.as_os_str(), later.as_os_str()];
    if command == "python-module" {
        args.push(OsStr::new("Row"));
    }
    let script = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/reference/check_types.py");
    let o = Command::new("python3").arg(script).args(&args).output().unwrap();
    assert_eq!(o.status.code(), Some(1), "the drifted drop should not fit: {}", String::from_utf8_lossy(&o.stdout));
    assert!(String::from_utf8_lossy(&o.stderr).starts_with("line "), "{}", String::from_utf8_lossy(&o.stderr));
}

#[test]
fn generated_python_imports_and_builds_every_row() {
    check("python", "py", "python-module", "python3 3.10 or later");
}

#[test]
fn generated_json_schema_is_valid_and_every_row_validates() {
    check("json-schema", "json", "json-schema", "jsonschema and rfc3339-validator");
}

#[test]
fn the_python_keyword_list_is_pythons_own() {
    // Python's `keyword.kwlist`, from the interpreter itself.
    let Some(out) = common::run_reference_check("check_types.py", &[OsStr::new("python-keywords")], "python3") else { return };
    let theirs: Vec<String> = serde_json::from_str(&out).unwrap();
    let mut ours: Vec<String> = plumbline::types::python::KEYWORDS.0.iter().map(|s| s.to_string()).collect();
    ours.sort();
    assert_eq!(ours, theirs);
}
