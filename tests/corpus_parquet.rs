//! Every file of the Apache Parquet `parquet-testing` corpus
//! (`../shared/corpus/parquet/`): readable files profile, encrypted ones
//! give a clear "encrypted" error, malformed ones a clear error naming the
//! file and where; none panics or hangs. `*_expect.csv` files give the
//! exact row and null counts.

mod common;

use std::path::Path;

use plumbline::scan::Coverage;
use plumbline::source::SourceError;

/// Files parquet-rs 60 cannot read although other readers can. Each gives a
/// clear error (checked below); the reason says why it is not ours to fix.
const UPSTREAM_LIMITS: &[(&str, &str)] = &[
    ("dict-page-offset-zero.parquet", "parquet-rs rejects the footer's column metadata (pyarrow reads 39 rows)"),
    ("repeated_no_annotation.parquet", "its row group states 6 rows (the file footer 0); parquet-rs produces none, pyarrow 6"),
];

/// Files malformed on purpose (described in data/README.md).
const MALFORMED_BY_DESIGN: &[&str] = &["nation.dict-malformed.parquet"];

fn name(path: &Path) -> &str {
    path.file_name().unwrap().to_str().unwrap()
}

fn is_encrypted(path: &Path) -> bool {
    name(path).ends_with(".encrypted")
}

fn assert_clear(path: &Path, message: &str) {
    assert!(message.contains(&path.display().to_string()), "error does not name the file: {message}");
    assert!(!message.contains('\n'), "error is not one line: {message}");
}

#[test]
fn every_data_file_profiles_or_says_it_is_encrypted() {
    let Some(dir) = common::corpus("parquet/data") else { return };
    let files = common::files_under(&dir, &|p| {
        let n = p.file_name().unwrap().to_string_lossy();
        n.ends_with(".parquet") || n.ends_with(".parquet.encrypted")
    });
    assert!(files.len() > 60, "expected the whole corpus, found {} files", files.len());
    let mut profiled = 0;
    for path in &files {
        let shape = common::shape_only(path);
        let full = common::full(path);
        if is_encrypted(path) {
            let full_error = match &full {
                Err(e) => e.to_string(),
                Ok(scan) => match &scan.coverage {
                    Coverage::Broken { error, .. } => error.clone(),
                    other => panic!("{}: encrypted file read as {other:?}", path.display()),
                },
            };
            assert!(full_error.contains("encrypted"), "{full_error}");
            assert_clear(path, &full_error);
            if let Err(e) = &shape {
                assert!(matches!(e, SourceError::Encrypted { .. }), "{e}");
            }
            continue;
        }
        let limit = UPSTREAM_LIMITS.iter().find(|(n, _)| *n == name(path));
        if limit.is_some() || MALFORMED_BY_DESIGN.contains(&name(path)) {
            let message = match (&shape, &full) {
                (Err(e), _) | (_, Err(e)) => e.to_string(),
                (_, Ok(scan)) => match &scan.coverage {
                    Coverage::Broken { error, .. } => error.clone(),
                    other => panic!("{}: expected a clear error, read as {other:?}; update the list", path.display()),
                },
            };
            assert_clear(path, &message);
            continue;
        }
        let shape = shape.unwrap_or_else(|e| panic!("shape-only: {e}"));
        assert_eq!(shape.coverage, Coverage::SchemaOnly);
        assert!(!shape.shape.fields.is_empty(), "{}: no fields", path.display());
        let full = full.unwrap_or_else(|e| panic!("full read: {e}"));
        assert_eq!(full.coverage, Coverage::Full, "{}", path.display());
        assert_eq!(Some(full.shape.rows), full.info.rows, "{}: rows read vs footer", path.display());
        for field in &full.shape.fields {
            assert_eq!(field.count, full.shape.rows, "{}: {}", path.display(), field.path);
        }
        profiled += 1;
    }
    assert!(profiled > 50, "only {profiled} files profiled");
}

#[test]
fn every_bad_data_file_gives_a_clear_error() {
    let Some(dir) = common::corpus("parquet/bad_data") else { return };
    let files = common::files_under(&dir, &|p| p.extension().is_some_and(|e| e == "parquet"));
    assert!(files.len() >= 8);
    // ARROW-GH-43605 describes a page that current readers decode correctly
    // (pyarrow 26 and parquet-rs 60 both read its 21,186 rows); it must read cleanly.
    let readable = ["ARROW-GH-43605.parquet"];
    for path in &files {
        let outcome = common::full(path);
        if readable.contains(&name(path)) {
            let scan = outcome.unwrap();
            assert_eq!(scan.coverage, Coverage::Full);
            assert_eq!(scan.shape.rows, 21_186);
            continue;
        }
        let message = match outcome {
            Err(e) => e.to_string(),
            Ok(scan) => match scan.coverage {
                Coverage::Broken { error, .. } => error,
                other => panic!("{}: a malformed file read as {other:?}", path.display()),
            },
        };
        assert_clear(path, &message);
        let positioned = ["footer", "row group"].iter().any(|p| message.contains(p));
        assert!(positioned, "no position in: {message}");
    }
}

/// Reads an `*_expect.csv` (written by the corpus authors) into row count
/// and per-column null counts (an empty cell is a null).
fn expected_counts(csv_path: &Path) -> (u64, Vec<u64>) {
    let mut reader = csv::ReaderBuilder::new().has_headers(true).from_path(csv_path).unwrap();
    let columns = reader.headers().unwrap().len();
    let mut rows = 0;
    let mut nulls = vec![0u64; columns];
    for record in reader.records() {
        let record = record.unwrap();
        rows += 1;
        for (i, cell) in record.iter().enumerate() {
            if cell.is_empty() {
                nulls[i] += 1;
            }
        }
    }
    (rows, nulls)
}

#[test]
fn expect_csv_files_match_rows_and_nulls() {
    let Some(dir) = common::corpus("parquet/data") else { return };
    let expects = common::files_under(&dir, &|p| p.to_string_lossy().ends_with("_expect.csv"));
    assert!(expects.len() >= 4);
    for expect in expects {
        let parquet = expect.to_string_lossy().replace("_expect.csv", ".parquet");
        let scan = common::full(Path::new(&parquet)).unwrap();
        let (rows, nulls) = expected_counts(&expect);
        assert_eq!(scan.shape.rows, rows, "{parquet}");
        assert_eq!(scan.shape.fields.len(), nulls.len(), "{parquet}: columns");
        for (field, expected) in scan.shape.fields.iter().zip(nulls) {
            assert_eq!(field.nulls(), expected, "{parquet}: nulls in {}", field.path);
        }
    }
}
