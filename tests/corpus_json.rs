//! JSONTestSuite (Nicolas Seriot, `../shared/corpus/json/`): every `y_*`
//! document is accepted, every `n_*` rejected with an error naming the file
//! and a position, and no `i_*` crashes or hangs. `test_transform/` inputs
//! (huge numbers, duplicate keys, lone surrogates) are read, and what the
//! Shape reports for them is pinned here as documented behaviour.

mod common;

use std::path::Path;

use plumbline::scan::{Coverage, Scan};
use plumbline::shape::Kind;
use plumbline::source::SourceError;

fn suite_files(prefix: &str) -> Vec<std::path::PathBuf> {
    let Some(dir) = common::corpus("json/test_parsing") else { return Vec::new() };
    common::files_under(&dir, &|p| p.file_name().unwrap().to_string_lossy().starts_with(prefix))
}

/// A rejection: either opening failed or the read broke part-way.
fn rejection(outcome: Result<Scan, SourceError>) -> Option<String> {
    match outcome {
        Err(e) => Some(e.to_string()),
        Ok(scan) => match scan.coverage {
            Coverage::Broken { error, .. } => Some(error),
            _ => None,
        },
    }
}

#[test]
fn accepted_documents_are_read_whole() {
    let files = suite_files("y_");
    if files.is_empty() {
        return;
    }
    assert!(files.len() >= 95, "{}", files.len());
    for path in files {
        let scan = common::full(&path).unwrap_or_else(|e| panic!("{e}"));
        assert_eq!(scan.coverage, Coverage::Full, "{}", path.display());
        assert!(scan.shape.rows <= 1 || scan.info.format == plumbline::source::Format::Json);
    }
}

#[test]
fn rejected_documents_name_file_and_position() {
    let files = suite_files("n_");
    if files.is_empty() {
        return;
    }
    assert!(files.len() >= 180, "{}", files.len());
    for path in files {
        let message = rejection(common::full(&path)).unwrap_or_else(|| panic!("{}: accepted", path.display()));
        assert!(message.contains(&path.display().to_string()), "{message}");
        let positioned = message.contains("line ") || message.contains("byte ") || message.contains("empty");
        assert!(positioned, "no position: {message}");
    }
}

#[test]
fn implementation_defined_documents_never_crash() {
    for path in suite_files("i_") {
        // Either outcome is fine; a panic or a hang fails inside the helper.
        let _ = common::full(&path);
    }
}

fn transform(name: &str) -> Option<Scan> {
    let dir = common::corpus("json/test_transform")?;
    Some(common::full(&dir.join(name)).unwrap_or_else(|e| panic!("{e}")))
}

#[test]
fn transform_cases_are_reported_as_documented() {
    // Below i64::MIN: kept as a decimal, not rounded to a float.
    if let Some(scan) = transform("number_-9223372036854775809.json") {
        assert_eq!(scan.shape.find("value").unwrap().kinds.get(Kind::Decimal), 1);
    }
    // Above i64::MAX but within u64: still an integer, needing uint64.
    if let Some(scan) = transform("number_10000000000000000999.json") {
        let value = scan.shape.find("value").unwrap();
        assert_eq!(value.kinds.get(Kind::Int), 1);
        assert_eq!(value.kinds.int_range, Some((10000000000000000999, 10000000000000000999)));
    }
    // A duplicate key counts once; the last value wins.
    if let Some(scan) = transform("object_same_key_different_values.json") {
        let a = scan.shape.find("a").unwrap();
        assert_eq!(a.count, 1);
        assert_eq!(a.kinds.int_range, Some((2, 2)));
    }
    // A lone surrogate escape is read as U+FFFD…
    if let Some(scan) = transform("string_1_escaped_invalid_codepoint.json") {
        assert_eq!(scan.shape.find("value").unwrap().kinds.get(Kind::String), 1);
    }
    // …while raw invalid UTF-8 is rejected with its position.
    if let Some(dir) = common::corpus("json/test_transform") {
        let message = rejection(common::full(&dir.join("string_1_invalid_codepoint.json"))).expect("rejected");
        assert!(message.contains("invalid UTF-8") && message.contains("column"), "{message}");
    }
}

#[test]
fn every_transform_input_is_read_without_crashing() {
    let Some(dir) = common::corpus("json/test_transform") else { return };
    for path in common::files_under(&dir, &|p| p.extension().is_some_and(|e| e == "json")) {
        let _ = common::full(Path::new(&path));
    }
}
