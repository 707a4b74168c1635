//! Proof of the Protobuf target with the Protocol Buffers compiler
//! (Debian `protobuf-compiler`, installed by `.ci/run`): protoc compiles the
//! generated proto3 file, warnings treated as failures.

mod common;
#[path = "types/nasty.rs"]
mod nasty;

use std::path::{Path, PathBuf};
use std::process::Command;

fn sample(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-data").join(name)
}

#[test]
fn protoc_compiles_the_generated_proto() {
    let Some(protoc) = common::tool_on_path("protoc", "`.ci/run` installs Debian's protobuf-compiler") else { return };
    let dir = tempfile::tempdir().unwrap();
    let nasty_rows = dir.path().join("nasty.jsonl");
    std::fs::write(&nasty_rows, nasty::nasty_jsonl(20)).unwrap();
    let (jsonl, parquet, arrow) = (sample("deliveries.jsonl"), sample("deliveries.parquet"), sample("deliveries.arrow"));
    let cases: [(&Path, &[&str]); 6] = [
        (&jsonl, &[]),
        (&jsonl, &["--mixed", "union"]),
        (&jsonl, &["--optional", "all"]),
        (&parquet, &[]),
        (&arrow, &[]),
        (&nasty_rows, &[]),
    ];
    for (i, (input, extra)) in cases.iter().enumerate() {
        let file = format!("case{i}.proto");
        let mut args = vec!["types", input.to_str().unwrap(), "--lang", "proto", "--root", "Row", "-o"];
        let out = dir.path().join(&file);
        args.push(out.to_str().unwrap());
        args.extend(*extra);
        let o = Command::new(env!("CARGO_BIN_EXE_plumbline")).args(&args).output().unwrap();
        assert!(o.status.success(), "{args:?}: {}", String::from_utf8_lossy(&o.stderr));
        let o = Command::new(&protoc)
            .arg(format!("--proto_path={}", dir.path().display()))
            .arg("--proto_path=/usr/include")
            .arg("--fatal_warnings")
            .arg(format!("--descriptor_set_out={}", dir.path().join(format!("case{i}.pb")).display()))
            .arg(&file)
            .output()
            .unwrap();
        assert!(o.status.success(), "{} {extra:?}: protoc says:\n{}", input.display(), String::from_utf8_lossy(&o.stderr));
    }
}
