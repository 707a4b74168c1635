//! The `plumbline` binary as a user meets it: output, the JSON report's
//! keys, exit codes, and one clear `error:` line for bad input.

use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use serde_json::Value;

fn plumbline(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_plumbline")).args(args).output().expect("run plumbline")
}

fn sample(name: &str) -> String {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-data").join(name).display().to_string()
}

fn stdout(o: &Output) -> String {
    String::from_utf8_lossy(&o.stdout).into_owned()
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

fn read_json(path: &Path) -> Value {
    serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap()
}

/// Exactly one line on stderr, starting `error:`, and exit code 2.
fn assert_one_error_line(o: &Output) -> String {
    assert_eq!(o.status.code(), Some(2), "stdout: {}\nstderr: {}", stdout(o), stderr(o));
    let err = stderr(o);
    let lines: Vec<&str> = err.lines().collect();
    assert_eq!(lines.len(), 1, "stderr: {err}");
    assert!(lines[0].starts_with("error: "), "{err}");
    lines[0].to_string()
}

#[test]
fn profile_prints_the_field_tree_and_writes_the_report() {
    let dir = tempfile::tempdir().unwrap();
    let report = dir.path().join("report.json");
    let o = plumbline(&["profile", &sample("deliveries.parquet"), "--json", report.to_str().unwrap()]);
    assert!(o.status.success(), "{}", stderr(&o));
    let out = stdout(&o);
    assert!(out.contains("Parquet") && out.contains("3,000 rows") && out.contains("row groups: 3"), "{out}");
    assert!(out.contains("    seq") && out.contains("int16"), "nested fields indented with their types:\n{out}");
    let seq = out.lines().find(|l| l.trim_start().starts_with("seq")).unwrap();
    assert!(seq.contains("  4  ") && seq.contains("1 … 4"), "distinct and range columns: {seq}");
    assert!(out.contains("findings: instants_in_the_future"), "{out}");

    let r = read_json(&report);
    assert_eq!(r["plumbline_report"], 1);
    assert_eq!(r["partial"], false);
    assert_eq!(r["sampled"], false);
    assert_eq!(r["source"]["format"], "Parquet");
    assert_eq!(r["source"]["rows"], 3000);
    assert_eq!(r["source"]["parts"], 1);
    assert_eq!(r["source"]["facts"]["row_groups"], 3);
    assert_eq!(r["source"]["facts"]["codecs"][0], "ZSTD");
    let fields = r["fields"].as_array().unwrap();
    let eta = fields.iter().find(|f| f["path"] == "stops[].eta").expect("nested list field");
    assert_eq!(eta["depth"], 2);
    assert_eq!(eta["declared_type"], "Timestamp(µs, \"+00:00\")");
    assert_eq!(eta["parquet"]["physical"], "INT64");
    assert!(eta["parquet"]["logical"].as_str().unwrap().starts_with("TIMESTAMP(MICROS"));
    let stops = fields.iter().find(|f| f["path"] == "stops").unwrap();
    assert_eq!((stops["list_lengths"]["min"].as_f64(), stops["list_lengths"]["max"].as_f64()), (Some(1.0), Some(4.0)));
    let attributes = fields.iter().find(|f| f["path"] == "attributes").unwrap();
    assert!(attributes["list_lengths"]["max"].as_f64().unwrap() <= 3.0, "map entries per row");
    let dropoff_at = fields.iter().find(|f| f["path"] == "dropoff.at").unwrap();
    let calendar = &dropoff_at["calendar"];
    assert_eq!(calendar["unit"], "year", "73 years ahead stretch the range");
    let counted: u64 = calendar["buckets"].as_array().unwrap().iter().map(|b| b["count"].as_u64().unwrap()).sum();
    assert_eq!(counted, 2856, "every instant in a bucket");
    assert_eq!(calendar["buckets"][0]["label"], "2026");
    let dropoff = fields.iter().find(|f| f["path"] == "dropoff").unwrap();
    assert_eq!(dropoff["count"], 3000);
    assert_eq!(dropoff["nulls"], 144);
    assert_eq!(dropoff["missing"], 0);
    for key in ["path", "depth", "declared_type", "kinds", "count", "nulls", "missing", "examples"] {
        assert!(fields.iter().all(|f| f.get(key).is_some()), "every field has `{key}`");
    }
}

#[test]
fn json_report_keeps_nulls_apart_from_missing_keys_and_shows_mixed_examples() {
    let dir = tempfile::tempdir().unwrap();
    let report = dir.path().join("r.json");
    let o = plumbline(&["profile", &sample("deliveries.jsonl"), "--json", report.to_str().unwrap()]);
    assert!(o.status.success());
    let r = read_json(&report);
    let field = |p: &str| r["fields"].as_array().unwrap().iter().find(|f| f["path"] == p).unwrap().clone();
    let note = field("note");
    assert_eq!(note["declared_type"], Value::Null);
    assert!(note["nulls"].as_u64().unwrap() > 0 && note["missing"].as_u64().unwrap() > 0);
    assert_eq!(
        note["count"].as_u64().unwrap(),
        note["nulls"].as_u64().unwrap() + note["missing"].as_u64().unwrap() + note["kinds"]["string"].as_u64().unwrap()
    );
    let zip = field("zip_code");
    assert!(zip["observed"].as_str().unwrap().starts_with("mixed"));
    let examples = zip["examples"].as_array().unwrap();
    assert!(!examples.is_empty() && examples.iter().all(|e| e["kind"] == "int"), "{examples:?}");

    let quiet = dir.path().join("quiet.json");
    let o = plumbline(&["profile", &sample("deliveries.jsonl"), "--no-examples", "--json", quiet.to_str().unwrap()]);
    assert!(o.status.success());
    assert!(!stdout(&o).contains("e.g. row"), "no data values in the output");
    let q = read_json(&quiet);
    assert_eq!(q["examples_included"], false);
    assert!(q["fields"].as_array().unwrap().iter().all(|f| f["examples"].as_array().unwrap().is_empty()));
    assert!(q["fields"].as_array().unwrap().iter().all(|f| f.get("top").is_none()), "no top values either");
    let with_examples = r["fields"].as_array().unwrap().iter().find(|f| f["path"] == "status").unwrap();
    assert_eq!(with_examples["top"][0]["value"], "delivered");
}

#[test]
fn shape_only_reads_no_rows() {
    let dir = tempfile::tempdir().unwrap();
    let report = dir.path().join("r.json");
    let o = plumbline(&["profile", &sample("deliveries.parquet"), "--shape-only", "--json", report.to_str().unwrap()]);
    assert!(o.status.success());
    assert!(stdout(&o).contains("schema and metadata only"));
    let r = read_json(&report);
    assert_eq!(r["shape_only"], true);
    assert_eq!(r["partial"], false);
    assert_eq!(r["source"]["rows"], 3000, "the footer's row count");
    assert!(r["fields"].as_array().unwrap().iter().all(|f| f["kinds"].as_object().unwrap().is_empty()));

    let o = plumbline(&["profile", &sample("deliveries.jsonl"), "--shape-only"]);
    assert!(o.status.success());
    assert!(stdout(&o).contains("PARTIAL: inferred from the first 1000 rows only"), "{}", stdout(&o));
}

#[test]
fn an_existing_report_is_not_replaced_without_force() {
    let dir = tempfile::tempdir().unwrap();
    let report = dir.path().join("r.json");
    std::fs::write(&report, "keep me").unwrap();
    let o = plumbline(&["profile", &sample("deliveries.csv"), "--json", report.to_str().unwrap()]);
    let line = assert_one_error_line(&o);
    assert!(line.contains("already exists") && line.contains("--force"), "{line}");
    assert_eq!(std::fs::read_to_string(&report).unwrap(), "keep me");
    let o = plumbline(&["profile", &sample("deliveries.csv"), "--json", report.to_str().unwrap(), "--force"]);
    assert!(o.status.success());
    assert_eq!(read_json(&report)["source"]["format"], "CSV");
}

#[test]
fn a_forced_format_is_checked() {
    let line = assert_one_error_line(&plumbline(&["profile", &sample("deliveries.csv"), "--format", "parquet"]));
    assert!(line.contains("deliveries.csv") && line.contains("not Parquet data"), "{line}");
    let line = assert_one_error_line(&plumbline(&["profile", &sample("deliveries.parquet"), "--format", "jsonl"]));
    assert!(line.contains("it is a Parquet file"), "{line}");
    let o = plumbline(&["profile", &sample("deliveries.arrow"), "--format", "ipc"]);
    assert!(o.status.success());
}

#[test]
fn a_missing_file_is_one_error_line() {
    let line = assert_one_error_line(&plumbline(&["profile", "/no/such/file.parquet"]));
    assert!(line.contains("/no/such/file.parquet"), "{line}");
}

fn write(dir: &Path, name: &str, text: &str) -> PathBuf {
    let path = dir.join(name);
    if let Some(parent) = path.parent() {
        std::fs::create_dir_all(parent).unwrap();
    }
    std::fs::write(&path, text).unwrap();
    path
}

#[test]
fn a_file_broken_half_way_reports_what_was_read_as_partial() {
    let dir = tempfile::tempdir().unwrap();
    let mut text: String = (0..10).map(|i| format!("{{\"n\":{i}}}\n")).collect();
    text.push_str("{\"n\": 10, \"oops\"}\n");
    let path = write(dir.path(), "broken.jsonl", &text);
    let report = dir.path().join("r.json");
    let o = plumbline(&["profile", path.to_str().unwrap(), "--json", report.to_str().unwrap()]);
    let line = assert_one_error_line(&o);
    assert!(line.contains("broken.jsonl: line 11, column 17 (byte 96)"), "{line}");
    assert!(stdout(&o).contains("PARTIAL"), "{}", stdout(&o));
    let r = read_json(&report);
    assert_eq!(r["partial"], true);
    assert_eq!(r["source"]["rows"], 10);
    assert!(r["coverage_note"].as_str().unwrap().contains("line 11"));
}

#[test]
fn gzip_and_zstd_json_lines_are_read_streaming() {
    let dir = tempfile::tempdir().unwrap();
    let rows: String = (0..100).map(|i| format!("{{\"id\":{i},\"tag\":\"t{}\"}}\n", i % 3)).collect();
    let gz = dir.path().join("rows.jsonl.gz");
    let mut enc = flate2::write::GzEncoder::new(std::fs::File::create(&gz).unwrap(), flate2::Compression::default());
    enc.write_all(rows.as_bytes()).unwrap();
    enc.finish().unwrap();
    let zst = dir.path().join("rows.jsonl.zst");
    std::fs::write(&zst, zstd::encode_all(rows.as_bytes(), 3).unwrap()).unwrap();
    for path in [gz, zst] {
        let o = plumbline(&["profile", path.to_str().unwrap()]);
        assert!(o.status.success(), "{}", stderr(&o));
        assert!(stdout(&o).contains("JSON Lines") && stdout(&o).contains("100 rows"), "{}", stdout(&o));
    }
}

#[test]
fn a_directory_of_parts_is_one_source_with_partition_fields() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "day=1/part-0.jsonl", "{\"a\":1}\n{\"a\":2}\n");
    write(dir.path(), "day=2/part-0.jsonl", "{\"a\":3,\"b\":\"x\"}\n");
    write(dir.path(), "_SUCCESS", "");
    write(dir.path(), "day=1/.part-0.jsonl.crc", "checksum");
    write(dir.path(), "day=2/empty.jsonl", "");
    let report = dir.path().join("r.json");
    let o = plumbline(&["profile", dir.path().to_str().unwrap(), "--json", report.to_str().unwrap()]);
    assert!(o.status.success(), "{}", stderr(&o));
    let r = read_json(&report);
    assert_eq!(r["source"]["parts"], 2);
    assert_eq!(r["source"]["rows"], 3);
    assert_eq!(r["source"]["facts"]["partition_fields"][0], "day");
    let fields = r["fields"].as_array().unwrap();
    let day = fields.iter().find(|f| f["path"] == "day").unwrap();
    assert_eq!(day["kinds"]["int"], 3);
    let b = fields.iter().find(|f| f["path"] == "b").unwrap();
    assert_eq!(b["missing"], 2);
}

#[test]
fn parquet_parts_with_different_schemas_are_reported_field_by_field() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::copy(sample("deliveries.parquet"), dir.path().join("part-0.parquet")).unwrap();
    std::fs::copy(sample("later/deliveries.parquet"), dir.path().join("part-1.parquet")).unwrap();
    let o = plumbline(&["profile", dir.path().to_str().unwrap()]);
    assert!(o.status.success(), "{}", stderr(&o));
    let out = stdout(&o);
    assert!(out.contains("part-1.parquet: field `rating` is Float32 here but Int8 in part-0.parquet"), "{out}");
    assert!(out.contains("part-1.parquet: adds field `co2_grams` (Int32) not in part-0.parquet"), "{out}");
    assert!(out.contains("4,500 rows"), "{out}");
}

#[test]
fn mixed_formats_in_one_directory_are_an_error() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "a.jsonl", "{\"a\":1}\n{\"a\":2}\n");
    write(dir.path(), "b.csv", "x,y\n1,2\n");
    let line = assert_one_error_line(&plumbline(&["profile", dir.path().to_str().unwrap()]));
    assert!(line.contains("b.csv") && line.contains("one format"), "{line}");
}

#[test]
fn a_ragged_csv_record_is_an_error_with_its_line_after_the_good_rows() {
    let dir = tempfile::tempdir().unwrap();
    let path = write(dir.path(), "ragged.csv", "id,name\n1,ann\n2,bo\n3\n4,di\n");
    let o = plumbline(&["profile", path.to_str().unwrap()]);
    let line = assert_one_error_line(&o);
    assert!(line.contains("ragged.csv: line 4") && line.contains("expected 2 fields"), "{line}");
    assert!(stdout(&o).contains("2 rows") && stdout(&o).contains("PARTIAL"), "{}", stdout(&o));
}

#[test]
fn gzip_csv_and_tsv_are_detected_and_typed() {
    let dir = tempfile::tempdir().unwrap();
    let csv = "id,when,price,ok\n1,2024-05-01,1.50,true\n2,2024-05-02,,false\n";
    let gz = dir.path().join("prices.csv.gz");
    let mut enc = flate2::write::GzEncoder::new(std::fs::File::create(&gz).unwrap(), flate2::Compression::default());
    enc.write_all(csv.as_bytes()).unwrap();
    enc.finish().unwrap();
    let report = dir.path().join("r.json");
    let o = plumbline(&["profile", gz.to_str().unwrap(), "--json", report.to_str().unwrap()]);
    assert!(o.status.success(), "{}", stderr(&o));
    let r = read_json(&report);
    assert_eq!(r["source"]["format"], "CSV");
    assert_eq!(r["source"]["compression"], "gzip");
    assert_eq!(r["source"]["facts"]["delimited"]["header"], true);
    let observed: Vec<&str> = r["fields"].as_array().unwrap().iter().map(|f| f["observed"].as_str().unwrap()).collect();
    assert_eq!(observed, ["int (uint8)", "string (date)", "float", "bool"]);
    assert_eq!(r["fields"][2]["nulls"], 1);

    let tsv = write(dir.path(), "plain.txt", "a\tb\nx\t1\ny\t2\n");
    let o = plumbline(&["profile", tsv.to_str().unwrap()]);
    assert!(o.status.success());
    assert!(stdout(&o).contains("TSV") && stdout(&o).contains("delimiter: tab"), "{}", stdout(&o));
}

#[test]
fn a_sample_of_a_large_file_reads_pieces_of_it_and_says_so() {
    let dir = tempfile::tempdir().unwrap();
    let text: String = (0..100_000)
        .map(|i| format!("{{\"id\":{i},\"v\":{}}}\n", if i % 7 == 0 { "\"x\"".to_string() } else { i.to_string() }))
        .collect();
    let path = write(dir.path(), "big.jsonl", &text);
    let report = dir.path().join("r.json");
    let o = plumbline(&["profile", path.to_str().unwrap(), "--sample", "200", "--json", report.to_str().unwrap()]);
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(stdout(&o).contains("SAMPLE: a spread sample of 200 rows, drawn uniformly from the"), "{}", stdout(&o));
    let r = read_json(&report);
    assert_eq!((r["sampled"].as_bool(), r["sample"]["rows"].as_u64()), (Some(true), Some(200)));
    let (read, of) = (r["sample"]["pieces_read"].as_u64().unwrap(), r["sample"]["pieces"].as_u64().unwrap());
    assert!(read * 10 < of, "{read} of {of} pieces");
    assert!(r["sample"]["from_rows"].as_u64().unwrap() < 10_000);
    // Rows before a piece were never counted: its examples have no row number.
    let v = r["fields"].as_array().unwrap().iter().find(|f| f["path"] == "v").unwrap();
    let rows: Vec<&Value> = v["examples"].as_array().unwrap().iter().map(|e| &e["row"]).collect();
    assert!(rows.iter().any(|r| r.is_null()), "{rows:?}");

    let whole = plumbline(&["profile", path.to_str().unwrap(), "--sample", "200", "--sample-from-all"]);
    assert!(whole.status.success(), "{}", stderr(&whole));
    assert!(stdout(&whole).contains("SAMPLE: a uniform sample of 200 of the 100,000 rows read"), "{}", stdout(&whole));
}

#[test]
fn a_sample_profiles_that_many_rows_and_says_so() {
    let dir = tempfile::tempdir().unwrap();
    let report = dir.path().join("r.json");
    let o = plumbline(&["profile", &sample("deliveries.jsonl"), "--sample", "500", "--json", report.to_str().unwrap()]);
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(stdout(&o).contains("SAMPLE: a uniform sample of 500 of the 3,000 rows read (seed 1)"), "{}", stdout(&o));
    let r = read_json(&report);
    assert_eq!((r["sampled"].as_bool(), r["partial"].as_bool()), (Some(true), Some(false)));
    assert_eq!((r["source"]["rows"].as_u64(), r["sample"]["rows"].as_u64()), (Some(500), Some(500)));
    assert_eq!((r["sample"]["from_rows"].as_u64(), r["sample"]["seed"].as_u64()), (Some(3000), Some(1)));
    let field = |r: &Value, p: &str| r["fields"].as_array().unwrap().iter().find(|f| f["path"] == p).unwrap().clone();
    assert_eq!(field(&r, "delivery_id")["count"], 500);

    // Examples name the row of the file: that line holds the value shown.
    let lines: Vec<String> =
        std::fs::read_to_string(sample("deliveries.jsonl")).unwrap().lines().map(String::from).collect();
    let examples = field(&r, "zip_code")["examples"].as_array().unwrap().clone();
    assert!(!examples.is_empty(), "the sample still meets the minority kind");
    for e in &examples {
        let row: Value = serde_json::from_str(&lines[e["row"].as_u64().unwrap() as usize]).unwrap();
        assert_eq!(row["zip_code"].to_string(), e["value"].as_str().unwrap(), "{e}");
    }

    // The same seed draws the same rows; another seed others.
    let again = dir.path().join("again.json");
    let other = dir.path().join("other.json");
    assert!(
        plumbline(&["profile", &sample("deliveries.jsonl"), "--sample", "500", "--json", again.to_str().unwrap()])
            .status
            .success()
    );
    let args =
        ["profile", &sample("deliveries.jsonl"), "--sample", "500", "--seed", "2", "--json", other.to_str().unwrap()];
    assert!(plumbline(&args).status.success());
    let (again, other) = (read_json(&again), read_json(&other));
    assert_eq!(r["fields"], again["fields"]);
    assert_ne!(field(&r, "fee")["mean"], field(&other, "fee")["mean"]);
    assert_eq!(other["sample"]["seed"], 2);
}

#[test]
fn a_sample_larger_than_the_file_profiles_every_row() {
    let dir = tempfile::tempdir().unwrap();
    let report = dir.path().join("r.json");
    let o =
        plumbline(&["profile", &sample("deliveries.parquet"), "--sample", "5000", "--json", report.to_str().unwrap()]);
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(!stdout(&o).contains("SAMPLE:"));
    let r = read_json(&report);
    assert_eq!((r["sampled"].as_bool(), r["source"]["rows"].as_u64()), (Some(false), Some(3000)));
    assert!(r.get("sample").is_none());
}

#[test]
fn sample_options_out_of_range_are_refused() {
    for args in [
        vec!["--sample", "0"],
        vec!["--sample", "20000000"],
        vec!["--sample", "10", "--shape-only"],
        vec!["--seed", "3"],
    ] {
        let mut all = vec!["profile", "sample-data/deliveries.jsonl"];
        all.extend(&args);
        let o = plumbline(&all);
        assert_eq!(o.status.code(), Some(2), "{args:?}");
        assert!(stderr(&o).starts_with("error:"), "{args:?}: {}", stderr(&o));
    }
}

#[test]
fn json_rows_split_across_threads_keep_first_appearance_order_and_row_numbers() {
    // Two batches of 8,192 rows; with two threads each batch is split in
    // halves. `x` first appears in the second half of batch 1, `y` in the
    // first half of batch 2: the report must list x before y, as one
    // thread reading in order would, and name the rows of the examples.
    let dir = tempfile::tempdir().unwrap();
    let mut text = String::new();
    for row in 0..12_000 {
        let m = if row == 100 || row == 6_000 { "\"text\"".to_string() } else { row.to_string() };
        let extra = match row {
            5_000 => ",\"x\":1",
            9_000 => ",\"y\":2",
            _ => "",
        };
        text.push_str(&format!("{{\"id\":{row},\"m\":{m}{extra}}}\n"));
    }
    let path = write(dir.path(), "split.jsonl", &text);
    let report = dir.path().join("r.json");
    let o = Command::new(env!("CARGO_BIN_EXE_plumbline"))
        .args(["profile", path.to_str().unwrap(), "--json", report.to_str().unwrap()])
        .env("RAYON_NUM_THREADS", "2")
        .output()
        .unwrap();
    assert!(o.status.success(), "{}", stderr(&o));
    let r = read_json(&report);
    let paths: Vec<&str> = r["fields"].as_array().unwrap().iter().map(|f| f["path"].as_str().unwrap()).collect();
    assert_eq!(paths, ["id", "m", "x", "y"]);
    let m = r["fields"].as_array().unwrap().iter().find(|f| f["path"] == "m").unwrap();
    let rows: Vec<u64> = m["examples"].as_array().unwrap().iter().map(|e| e["row"].as_u64().unwrap()).collect();
    assert_eq!(rows, [100, 6_000]);
    assert_eq!(m["count"], 12_000);
}

#[test]
fn types_writes_to_stdout_or_atomically_to_a_file() {
    let o = plumbline(&["types", &sample("deliveries.jsonl"), "--lang", "rust", "--root", "Delivery"]);
    assert!(o.status.success(), "{}", stderr(&o));
    let code = stdout(&o);
    assert!(code.starts_with("// Generated by Plumbline on "), "{code}");
    assert!(code.contains("3,000 rows read") && code.contains("pub struct Delivery {"), "{code}");

    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("delivery.rs");
    let args = ["types", &sample("deliveries.jsonl"), "--lang", "rust", "-o", out.to_str().unwrap()];
    assert!(plumbline(&args).status.success());
    assert!(
        std::fs::read_to_string(&out).unwrap().contains("pub struct Deliveries {"),
        "the root is named after the file"
    );
    let again = plumbline(&args);
    assert!(assert_one_error_line(&again).contains("exists"), "refuses to overwrite without --force");
    let mut forced = args.to_vec();
    forced.push("--force");
    assert!(plumbline(&forced).status.success());

    let sampled = plumbline(&["types", &sample("deliveries.jsonl"), "--lang", "python", "--sample", "100"]);
    assert!(
        stdout(&sampled).contains("# SAMPLED: a uniform sample of 100 of the 3,000 rows read"),
        "{}",
        stdout(&sampled)
    );
    let missing = plumbline(&["types", "no-such-file.jsonl", "--lang", "rust"]);
    assert!(assert_one_error_line(&missing).contains("no-such-file.jsonl"));
}

#[test]
fn a_file_broken_half_way_gives_no_types() {
    let dir = tempfile::tempdir().unwrap();
    let path = write(dir.path(), "broken.jsonl", "{\"a\":1}\n{\"a\":2}\n{\"a\":\n");
    let o = plumbline(&["types", path.to_str().unwrap(), "--lang", "typescript"]);
    assert!(stdout(&o).is_empty(), "no partial types: {}", stdout(&o));
    assert!(assert_one_error_line(&o).contains("line 3"));
}

#[test]
fn what_a_target_cannot_express_is_warned_about_by_field() {
    // An Arrow IPC file with an unsigned 64-bit column, an integer-keyed
    // map and a time of day.
    use arrow_array::builder::{Int32Builder, MapBuilder, StringBuilder};
    use arrow_array::{ArrayRef, RecordBatch, Time64MicrosecondArray, UInt64Array};
    use std::sync::Arc;
    let mut map = MapBuilder::new(None, Int32Builder::new(), StringBuilder::new());
    map.keys().append_value(7);
    map.values().append_value("seven");
    map.append(true).unwrap();
    let columns: Vec<(&str, ArrayRef)> = vec![
        ("big", Arc::new(UInt64Array::from(vec![u64::MAX]))),
        ("by_number", Arc::new(map.finish())),
        ("at", Arc::new(Time64MicrosecondArray::from(vec![3_600_000_000]))),
    ];
    let batch = RecordBatch::try_from_iter(columns).unwrap();
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("odd.arrow");
    let mut writer =
        arrow_ipc::writer::FileWriter::try_new(std::fs::File::create(&path).unwrap(), &batch.schema()).unwrap();
    writer.write(&batch).unwrap();
    writer.finish().unwrap();

    let scala = plumbline(&["types", path.to_str().unwrap(), "--lang", "scala"]);
    assert!(scala.status.success());
    assert!(stdout(&scala).contains("big: BigDecimal"), "{}", stdout(&scala));
    assert!(stderr(&scala).contains("warning: big: unsigned 64-bit"), "{}", stderr(&scala));
    assert!(stderr(&scala).contains("warning: at: Spark has no time-of-day type"), "{}", stderr(&scala));
    let schema = plumbline(&["types", path.to_str().unwrap(), "--lang", "json-schema"]);
    assert!(stderr(&schema).contains("warning: by_number: JSON object keys are text"), "{}", stderr(&schema));
    assert!(stdout(&schema).contains("propertyNames"), "{}", stdout(&schema));
}

#[test]
fn fit_exits_0_when_every_row_fits_and_1_with_the_verdicts_when_not() {
    let dir = tempfile::tempdir().unwrap();
    let scala = dir.path().join("delivery.scala");
    let types =
        plumbline(&["types", &sample("deliveries.parquet"), "--lang", "scala", "-o", &scala.display().to_string()]);
    assert!(types.status.success(), "{}", stderr(&types));

    let o = plumbline(&["fit", &sample("deliveries.parquet"), &scala.display().to_string()]);
    assert_eq!(o.status.code(), Some(0), "{}{}", stdout(&o), stderr(&o));
    assert_eq!(stdout(&o), "Fits: every one of the 3,000 rows read fits the definition.\n");

    let json = dir.path().join("fit.json");
    let o = plumbline(&[
        "fit",
        &sample("later/deliveries.parquet"),
        &scala.display().to_string(),
        "--json",
        &json.display().to_string(),
    ]);
    assert_eq!(o.status.code(), Some(1), "{}{}", stdout(&o), stderr(&o));
    let out = stdout(&o);
    assert!(
        out.contains("does not fit: rating: the definition says 8-bit integer; the data holds 32-bit float"),
        "{out}"
    );
    assert!(
        out.contains("does not fit: courier.vehicle: not optional in the definition, but the data has nulls"),
        "{out}"
    );
    assert!(out.contains("note: co2_grams: the data has it (32-bit integer); the definition does not"), "{out}");
    assert!(out.ends_with("Does not fit: 2 differences make rows of the 1,500 read fail.\n"), "{out}");
    let report = read_json(&json);
    assert_eq!(report["fits"], false);
    assert_eq!(report["rows"], 1500);
    assert_eq!(report["lang"], "Scala");
    let verdicts = report["verdicts"].as_array().unwrap();
    assert_eq!(verdicts.len(), 3);
    let vehicle = verdicts.iter().find(|v| v["path"] == "courier.vehicle").unwrap();
    assert_eq!(vehicle["problem"], "empty");
    assert_eq!(vehicle["severity"], "fails");
    assert_eq!(vehicle["examples"][0]["value"], "null");

    // --no-examples leaves the values out of the text and the JSON.
    let o = plumbline(&[
        "fit",
        &sample("later/deliveries.parquet"),
        &scala.display().to_string(),
        "--no-examples",
        "--json",
        &json.display().to_string(),
        "--force",
    ]);
    assert_eq!(o.status.code(), Some(1));
    assert!(!stdout(&o).contains("e.g."), "{}", stdout(&o));
    assert!(read_json(&json)["verdicts"][0]["examples"][0].get("value").is_none());
}

#[test]
fn fit_errors_name_the_definition_and_the_position() {
    let dir = tempfile::tempdir().unwrap();
    let bad = dir.path().join("bad.scala");
    std::fs::write(&bad, "case class Row(\n  id: Widget)\n").unwrap();
    let line = assert_one_error_line(&plumbline(&["fit", &sample("deliveries.parquet"), &bad.display().to_string()]));
    assert!(line.contains("bad.scala: line 2, column 7: `Widget` is neither"), "{line}");

    let unnamed = dir.path().join("row.txt");
    std::fs::write(&unnamed, "id BIGINT NOT NULL").unwrap();
    let line =
        assert_one_error_line(&plumbline(&["fit", &sample("deliveries.parquet"), &unnamed.display().to_string()]));
    assert!(line.contains("give --lang"), "{line}");
    let o = plumbline(&["fit", &sample("deliveries.parquet"), &unnamed.display().to_string(), "--lang", "spark-ddl"]);
    assert_eq!(o.status.code(), Some(1), "{}", stdout(&o));

    // Data that breaks part-way: no verdicts from part of the rows.
    let broken = dir.path().join("broken.jsonl");
    std::fs::write(&broken, "{\"id\": 1}\n{\"id\": 2}\n{\"id\": \n").unwrap();
    let o = plumbline(&["fit", &broken.display().to_string(), &unnamed.display().to_string(), "--lang", "spark-ddl"]);
    let line = assert_one_error_line(&o);
    assert!(line.contains("broken.jsonl") && line.contains("line 3"), "{line}");
    assert!(!line.contains("internal"), "{line}");
    assert!(stdout(&o).is_empty(), "{}", stdout(&o));

    let line = assert_one_error_line(&plumbline(&[
        "fit",
        &sample("nowhere.parquet"),
        &unnamed.display().to_string(),
        "--lang",
        "spark-ddl",
    ]));
    assert!(line.contains("nowhere.parquet"), "{line}");
}

#[test]
fn compare_prints_the_schema_changes_and_drift_and_gates_on_them() {
    let (old, new) = (sample("deliveries.parquet"), sample("later/deliveries.parquet"));
    let o = plumbline(&["compare", &old, &new]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let out = stdout(&o);
    assert!(out.starts_with("Schema: + 1 added · ~ 1 type changed · ~ 1 nulls or missing keys changed\n"), "{out}");
    assert!(out.contains("  + co2_grams  int32\n"), "{out}");
    assert!(out.contains("  ~ rating  int8 → float32\n"), "{out}");
    assert!(out.contains("  ~ courier.vehicle  null or missing in 0 of 3,000 → 154 of 1,500\n"), "{out}");
    // The drift the generator put in, and nothing else drifted.
    let drifted: Vec<&str> = out.lines().filter(|l| l.starts_with("  drifted ")).collect();
    assert_eq!(drifted.len(), 2, "{out}");
    assert!(drifted[0].starts_with("  drifted courier.vehicle: null rate 0.0 % → 10.3 %"), "{out}");
    assert!(drifted[1].starts_with("  drifted rating: null rate"), "{out}");

    assert_eq!(plumbline(&["compare", &old, &new, "--fail-on", "schema"]).status.code(), Some(1));
    assert_eq!(plumbline(&["compare", &old, &new, "--fail-on", "drift"]).status.code(), Some(1));
    let same = plumbline(&["compare", &old, &old, "--fail-on", "schema", "--fail-on", "drift"]);
    assert_eq!(same.status.code(), Some(0), "{}", stdout(&same));
    assert!(stdout(&same).starts_with("Schema: No field changed.\nDrift: 0 of "), "{}", stdout(&same));

    let dir = tempfile::tempdir().unwrap();
    let json = dir.path().join("compare.json");
    let o = plumbline(&["compare", &old, &new, "--json", &json.display().to_string()]);
    assert_eq!(o.status.code(), Some(0));
    let report = read_json(&json);
    assert_eq!(report["schema_changed"], true);
    assert_eq!(report["drifted"], true);
    assert_eq!(report["changes"].as_array().unwrap().len(), 3);
    let rating = report["drift"].as_array().unwrap().iter().find(|d| d["path"] == "rating").unwrap();
    assert!(rating["numbers"]["ks"].as_f64().unwrap() > 0.1);
    assert!(rating["numbers"]["psi"].as_f64().unwrap() >= 0.25);

    let line = assert_one_error_line(&plumbline(&["compare", &old, &sample("nowhere.parquet")]));
    assert!(line.contains("nowhere.parquet"), "{line}");
}

#[test]
fn html_reports_are_written_once_and_replaced_only_with_force() {
    let dir = tempfile::tempdir().unwrap();
    let html = dir.path().join("report.html");
    let o = plumbline(&["profile", &sample("deliveries.parquet"), "--html", &html.display().to_string()]);
    assert!(o.status.success(), "{}", stderr(&o));
    let page = std::fs::read_to_string(&html).unwrap();
    assert!(page.starts_with("<!DOCTYPE html>"));
    assert!(page.contains("<h1>Profile of deliveries.parquet</h1>"));
    let again = assert_one_error_line(&plumbline(&[
        "profile",
        &sample("deliveries.parquet"),
        "--html",
        &html.display().to_string(),
    ]));
    assert!(again.contains("report.html"), "{again}");
    let o = plumbline(&[
        "compare",
        &sample("deliveries.parquet"),
        &sample("later/deliveries.parquet"),
        "--html",
        &html.display().to_string(),
        "--force",
    ]);
    assert_eq!(o.status.code(), Some(0), "{}", stderr(&o));
    let page = std::fs::read_to_string(&html).unwrap();
    assert!(page.contains("<h2>Compared with the earlier source</h2>"));
    assert!(page.contains("▲ drifted"));
}

#[test]
fn a_first_look_profiles_the_first_rows_and_the_report_and_types_say_so() {
    let dir = tempfile::tempdir().unwrap();
    let data = dir.path().join("long.jsonl");
    let text: String = (0..30_000).map(|i| format!("{{\"id\":{i},\"code\":\"c{}\"}}\n", i % 9)).collect();
    std::fs::write(&data, text).unwrap();
    let report = dir.path().join("r.json");
    let o = plumbline(&["profile", data.to_str().unwrap(), "--first-look", "--json", report.to_str().unwrap()]);
    assert!(o.status.success(), "{}", stderr(&o));
    let r = read_json(&report);
    assert_eq!((r["partial"].as_bool(), r["shape_only"].as_bool()), (Some(true), Some(false)));
    assert_eq!(r["source"]["rows"], 10_000);
    assert!(r["coverage_note"].as_str().unwrap().starts_with("a first look: the first 10,000 rows"), "{r}");
    let id = r["fields"].as_array().unwrap().iter().find(|f| f["path"] == "id").unwrap();
    assert_eq!(id["max"].as_f64(), Some(9_999.0), "statistics of the rows read");

    let o = plumbline(&["types", data.to_str().unwrap(), "--lang", "rust", "--first-look"]);
    assert!(o.status.success(), "{}", stderr(&o));
    assert!(stdout(&o).contains("PARTIAL: a first look: the first 10,000 rows"), "{}", stdout(&o));

    let o = plumbline(&["profile", data.to_str().unwrap(), "--first-look", "--sample", "5"]);
    assert_eq!(o.status.code(), Some(2), "a first look is not a sample");
}
