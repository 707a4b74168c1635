//! Sources split into many parts are read with a bounded number of open
//! files: each part opens its file when it is read and closes it at its end.
//! The binary runs under `ulimit -n 48`, far below the part counts here, so
//! a reader that opened every part up front fails with "too many open files".

use std::fs::File;
use std::path::Path;
use std::process::{Command, Output};
use std::sync::Arc;

use arrow_array::{ArrayRef, Int64Array, RecordBatch, StringArray};

/// Open files the binary may hold: a handful for itself, and 32 parts at a
/// time while a directory's footers are read (`PEEKS_AT_ONCE` in
/// src/source/dir.rs), a few at a time while they are read.
const FILE_LIMIT: u32 = 48;

fn profile_under_file_limit(source: &Path, report: &Path) -> Output {
    let script = format!("ulimit -n {FILE_LIMIT} && exec \"$0\" profile \"$1\" --json \"$2\"");
    Command::new("sh")
        .arg("-c")
        .arg(script)
        .arg(env!("CARGO_BIN_EXE_plumbline"))
        .arg(source)
        .arg(report)
        .output()
        .expect("run plumbline under sh")
}

fn report_of(source: &Path, dir: &Path) -> serde_json::Value {
    let report = dir.join("report.json");
    let o = profile_under_file_limit(source, &report);
    assert!(o.status.success(), "{}\n{}", String::from_utf8_lossy(&o.stdout), String::from_utf8_lossy(&o.stderr));
    serde_json::from_str(&std::fs::read_to_string(report).unwrap()).unwrap()
}

fn field<'a>(report: &'a serde_json::Value, path: &str) -> &'a serde_json::Value {
    report["fields"].as_array().unwrap().iter().find(|f| f["path"] == path).unwrap_or_else(|| panic!("no field {path}"))
}

#[test]
fn a_directory_of_two_thousand_parts_is_read_with_few_open_files() {
    let dir = tempfile::tempdir().unwrap();
    let data = dir.path().join("drop");
    for part in 0..2_000 {
        let day = dir_for_day(&data, part % 7);
        let rows: String = (0..3).map(|i| format!("{{\"id\":{},\"note\":\"n{}\"}}\n", part * 3 + i, i)).collect();
        std::fs::write(day.join(format!("part-{part:05}.jsonl")), rows).unwrap();
    }
    let report = report_of(&data, dir.path());
    assert_eq!(report["source"]["parts"], 2_000);
    assert_eq!(report["source"]["rows"], 6_000);
    let id = field(&report, "id");
    assert_eq!((id["min"].as_f64(), id["max"].as_f64()), (Some(0.0), Some(5_999.0)), "{id}");
    assert_eq!(field(&report, "day")["distinct"], 7);
}

fn dir_for_day(data: &Path, day: usize) -> std::path::PathBuf {
    let path = data.join(format!("day={day}"));
    std::fs::create_dir_all(&path).unwrap();
    path
}

#[test]
fn a_parquet_file_of_five_hundred_row_groups_is_read_with_few_open_files() {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("groups.parquet");
    let ids: Vec<i64> = (0..5_000).collect();
    let codes = StringArray::from_iter_values(ids.iter().map(|i| format!("c{}", i % 13)));
    let batch = RecordBatch::try_from_iter([
        ("id", Arc::new(Int64Array::from(ids)) as ArrayRef),
        ("code", Arc::new(codes) as ArrayRef),
    ])
    .unwrap();
    let props = parquet::file::properties::WriterProperties::builder().set_max_row_group_row_count(Some(10)).build();
    let mut writer =
        parquet::arrow::ArrowWriter::try_new(File::create(&path).unwrap(), batch.schema(), Some(props)).unwrap();
    writer.write(&batch).unwrap();
    writer.close().unwrap();

    let report = report_of(&path, dir.path());
    assert_eq!(report["source"]["rows"], 5_000);
    assert_eq!(field(&report, "code")["distinct"], 13);
    assert_eq!(field(&report, "id")["max"].as_f64(), Some(4_999.0));
}

#[test]
fn a_directory_of_five_hundred_parquet_parts_is_opened_with_few_open_files() {
    let dir = tempfile::tempdir().unwrap();
    let data = dir.path().join("drop");
    for part in 0..500i64 {
        let ids = Int64Array::from_iter_values(part * 4..part * 4 + 4);
        let batch = RecordBatch::try_from_iter([("id", Arc::new(ids) as ArrayRef)]).unwrap();
        let file = File::create(dir_for_day(&data, part as usize % 7).join(format!("part-{part:05}.parquet"))).unwrap();
        let mut writer = parquet::arrow::ArrowWriter::try_new(file, batch.schema(), None).unwrap();
        writer.write(&batch).unwrap();
        writer.close().unwrap();
    }
    let report = report_of(&data, dir.path());
    assert_eq!(report["source"]["parts"], 500);
    assert_eq!(report["source"]["rows"], 2_000);
    assert_eq!(field(&report, "id")["max"].as_f64(), Some(1_999.0));
}
