//! Proof of the Avro target with the apache-avro crate (in a throwaway
//! crate, tests/types/avro_proof, locked dependencies): the generated schema
//! parses and resolves, and every JSON Lines row converts to an Avro value
//! that encodes against it.

mod common;
#[path = "types/nasty.rs"]
mod nasty;

use std::path::{Path, PathBuf};
use std::process::Command;

fn sample(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-data").join(name)
}

#[test]
fn apache_avro_parses_the_schema_and_encodes_every_row() {
    let dir = tempfile::tempdir().unwrap();
    let proof = common::build_proof_crate("avro_proof", &dir.path().join("proof"), &["src/main.rs"], "plumbline-avro-proof");
    let nasty_rows = dir.path().join("nasty.jsonl");
    std::fs::write(&nasty_rows, nasty::nasty_jsonl(40)).unwrap();
    let deliveries = sample("deliveries.jsonl");
    let cases: [(&Path, &[&str]); 4] =
        [(&deliveries, &[]), (&deliveries, &["--mixed", "union"]), (&deliveries, &["--optional", "all"]), (&nasty_rows, &[])];
    let run = |types_from: &Path, extra: &[&str], rows: &Path| {
        let schema = dir.path().join("schema.avsc");
        let mut args = vec!["types", types_from.to_str().unwrap(), "--lang", "avro", "--root", "Row", "--force", "-o"];
        args.push(schema.to_str().unwrap());
        args.extend(extra);
        let o = Command::new(env!("CARGO_BIN_EXE_plumbline")).args(&args).output().unwrap();
        assert!(o.status.success(), "{args:?}: {}", String::from_utf8_lossy(&o.stderr));
        Command::new(&proof).arg(&schema).arg(rows).output().unwrap()
    };
    for (input, extra) in cases {
        let o = run(input, extra, input);
        assert!(o.status.success(), "{} {extra:?}: {}", input.display(), String::from_utf8_lossy(&o.stderr));
        let lines = std::fs::read_to_string(input).unwrap().lines().count();
        assert_eq!(String::from_utf8_lossy(&o.stdout).trim(), lines.to_string(), "{}: every row encoded", input.display());
    }
    let o = run(&deliveries, &[], &sample("later/deliveries.jsonl"));
    assert!(!o.status.success(), "the drifted drop should not fit");
    assert!(String::from_utf8_lossy(&o.stderr).starts_with("row "), "{}", String::from_utf8_lossy(&o.stderr));
}
