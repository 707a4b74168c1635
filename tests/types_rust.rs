//! Proof of the Rust target against the Rust compiler: generated structs
//! compile (rustc via cargo, with serde, serde_json, chrono and
//! rust_decimal) and deserialise every row of the JSON Lines input.

mod common;
#[path = "types/nasty.rs"]
mod nasty;

use std::path::Path;
use std::process::Command;

fn manifest() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

fn generate(input: &Path, extra: &[&str], out: &Path) {
    let mut args = vec!["types", input.to_str().unwrap(), "--lang", "rust", "--root", "Row", "-o", out.to_str().unwrap()];
    args.extend(extra);
    let o = Command::new(env!("CARGO_BIN_EXE_plumbline")).args(&args).output().unwrap();
    assert!(o.status.success(), "{args:?}: {}", String::from_utf8_lossy(&o.stderr));
}

#[test]
fn generated_rust_compiles_and_reads_every_row() {
    let dir = tempfile::tempdir().unwrap();
    let krate = dir.path().join("proof");
    std::fs::create_dir_all(krate.join("src")).unwrap();
    let nasty_rows = dir.path().join("nasty.jsonl");
    std::fs::write(&nasty_rows, nasty::nasty_jsonl(40)).unwrap();
    let deliveries = manifest().join("sample-data/deliveries.jsonl");
    let later = manifest().join("sample-data/later/deliveries.jsonl");
    let cases: Vec<(&str, &Path, Vec<&str>)> = vec![
        ("deliveries", &deliveries, vec![]),
        ("deliveries_union", &deliveries, vec!["--mixed", "union"]),
        ("deliveries_all_optional", &deliveries, vec!["--optional", "all"]),
        ("nasty", &nasty_rows, vec![]),
    ];
    let mut main = String::from("use std::io::BufRead;\n");
    for (name, input, extra) in &cases {
        generate(input, extra, &krate.join("src").join(format!("{name}.rs")));
        main.push_str(&format!("mod {name};\n"));
    }
    main.push_str(
        "fn main() {\n    let args: Vec<String> = std::env::args().collect();\n    \
         let file = std::io::BufReader::new(std::fs::File::open(&args[2]).unwrap());\n    let mut rows = 0;\n    \
         for (i, line) in file.lines().enumerate() {\n        let line = line.unwrap();\n        let result = match args[1].as_str() {\n",
    );
    for (name, _, _) in &cases {
        main.push_str(&format!(
            "            \"{name}\" => serde_json::from_str::<{name}::Row>(&line).map(|r| serde_json::to_string(&r).unwrap().len()),\n"
        ));
    }
    main.push_str(
        "            other => panic!(\"no case {other}\"),\n        };\n        \
         if let Err(e) = result { eprintln!(\"row {i}: {e}\"); std::process::exit(1); }\n        rows += 1;\n    }\n    println!(\"{rows}\");\n}\n",
    );
    std::fs::write(krate.join("src/main.rs"), main).unwrap();

    // The generated modules and main.rs are in place; the template adds the manifest and lock.
    let binary = common::build_proof_crate("rust_proof", &krate, &[], "plumbline-rust-proof");
    for (name, input, _) in &cases {
        let run = Command::new(&binary).args([name, input.to_str().unwrap()]).output().unwrap();
        let lines = std::fs::read_to_string(input).unwrap().lines().count();
        assert!(run.status.success(), "{name}: {}", String::from_utf8_lossy(&run.stderr));
        assert_eq!(String::from_utf8_lossy(&run.stdout).trim(), lines.to_string(), "{name}: every row read");
    }
    // The later drop changed: types from the first drop do not fit it, and
    // the proof binary says where (a check that the proof can fail).
    let run = Command::new(&binary).args(["deliveries", later.to_str().unwrap()]).output().unwrap();
    assert!(!run.status.success(), "the drifted drop should not fit the first drop's types");
    assert!(String::from_utf8_lossy(&run.stderr).starts_with("row "), "{}", String::from_utf8_lossy(&run.stderr));
}
