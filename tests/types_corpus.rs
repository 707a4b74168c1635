//! Record types for every Parquet file of the corpus (`../shared/corpus/
//! parquet/data`) and every little-endian Arrow integration file
//! (`arrow-ipc/…/integration`) that Plumbline reads whole: every target generates; the
//! JSON Schema is valid and every row, as pyarrow reads it, validates
//! (python-jsonschema); the proto3 file compiles with protoc.

mod common;

use std::process::Command;

use plumbline::scan::{Coverage, Scan};
use plumbline::types::{self, Lang, MixedChoice, Optionality, TimeChoice, TypeOptions};


#[test]
fn every_readable_corpus_file_gets_types_that_hold() {
    let Some(dir) = common::corpus("parquet/data") else { return };
    let mut files = common::files_under(&dir, &|p| p.extension().is_some_and(|e| e == "parquet"));
    // The Arrow integration files (little-endian IPC files: pyarrow reads them for the row check).
    if let Some(ipc) = common::corpus("arrow-ipc/data/arrow-ipc-stream/integration") {
        files.extend(common::files_under(&ipc, &|p| {
            let s = p.to_string_lossy();
            s.ends_with(".arrow_file") && !s.contains("bigendian")
        }));
    }
    let out = tempfile::tempdir().unwrap();
    let mut manifest = Vec::new();
    let mut in_scope: Vec<Scan> = Vec::new();
    for path in &files {
        // In scope: files read whole (not encrypted, not beyond parquet-rs).
        if let Ok(scan) = common::full(path)
            && scan.coverage == Coverage::Full
        {
            in_scope.push(scan);
        }
    }
    let options = TypeOptions { root: "Row".into(), optional: Optionality::Observed, mixed: MixedChoice::Widest, time: TimeChoice::Sql };
    assert!(in_scope.len() > 50, "only {} corpus files in scope", in_scope.len());
    let protoc = common::tool_on_path("protoc", "`.ci/run` installs Debian's protobuf-compiler");
    for (i, scan) in in_scope.iter().enumerate() {
        let path = &scan.info.path;
        for lang in Lang::ALL {
            let name = lang.name();
            let generated = types::generate(scan, lang, &options);
            assert!(!generated.code.is_empty(), "{}: no {name}", path.display());
            std::fs::write(out.path().join(format!("f{i}.{name}")), generated.code).unwrap();
        }
        let schema = out.path().join(format!("f{i}.json-schema"));
        manifest.push(serde_json::json!({"schema": schema, "parquet": path}));
        let avro: serde_json::Value = serde_json::from_str(&std::fs::read_to_string(out.path().join(format!("f{i}.avro"))).unwrap())
            .unwrap_or_else(|e| panic!("{}: the Avro schema is not JSON: {e}", path.display()));
        assert_eq!(avro["type"], "record");
        if let Some(protoc) = &protoc {
            let proto = format!("f{i}.proto");
            let o = Command::new(protoc)
                .arg(format!("--proto_path={}", out.path().display()))
                .arg("--proto_path=/usr/include")
                .arg("--descriptor_set_out=/dev/null")
                .arg(&proto)
                .output()
                .unwrap();
            assert!(o.status.success(), "{}: protoc says:\n{}", path.display(), String::from_utf8_lossy(&o.stderr));
        }
    }
    let manifest_path = out.path().join("manifest.json");
    std::fs::write(&manifest_path, serde_json::to_string(&manifest).unwrap()).unwrap();
    let Some(result) = common::run_reference_check("check_types.py", &[std::ffi::OsStr::new("corpus-json-schema"), manifest_path.as_os_str()], "pyarrow and jsonschema") else { return };
    let results: serde_json::Map<String, serde_json::Value> = serde_json::from_str(&result).unwrap();
    let errors: Vec<String> = results.iter().filter_map(|(f, r)| r.get("error").map(|e| format!("{f}: {e}"))).collect();
    assert!(errors.is_empty(), "rows that do not fit their schema:\n{}", errors.join("\n"));
    let checked = results.values().filter(|r| r.get("rows").is_some()).count();
    let skipped: Vec<String> = results.iter().filter_map(|(f, r)| r.get("skipped").map(|s| format!("{f}: {s}"))).collect();
    eprintln!("JSON Schema rows checked for {checked} files; pyarrow could not turn these into values:\n{}", skipped.join("\n"));
    assert!(checked > 80, "only {checked} files checked");
}
