//! Proof of the TypeScript target with the TypeScript compiler: `tsc
//! --strict --noEmit` (npm package `typescript`, installed by `.ci/run`)
//! accepts the generated interfaces and a file assigning rows to them as
//! object literals (so strict mode's excess-property and missing-property
//! checks apply to every row assigned).

mod common;
#[path = "types/nasty.rs"]
mod nasty;

use std::path::{Path, PathBuf};
use std::process::Command;

/// Rows assigned per case: enough to meet every kind, null and missing key.
const ROWS: usize = 400;

fn tsc() -> Option<PathBuf> {
    let path = std::env::var_os("PLUMBLINE_TSC").map(PathBuf::from).unwrap_or_else(|| {
        PathBuf::from(std::env::var_os("HOME").unwrap_or_default()).join(".cache/plumbline/npm/node_modules/.bin/tsc")
    });
    if path.exists() {
        return Some(path);
    }
    common::not_run(&format!("tsc not found at {} (`.ci/run` installs it)", path.display()))
}

fn sample(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-data").join(name)
}

/// Writes `types.ts` from `types_from` and `rows.ts` with rows of `rows_from`; runs tsc.
fn compile(dir: &Path, tsc: &Path, types_from: &Path, extra: &[&str], rows_from: &Path) -> std::process::Output {
    let types = dir.join("types.ts");
    let mut args = vec!["types", types_from.to_str().unwrap(), "--lang", "typescript", "--root", "Row", "--force", "-o"];
    args.push(types.to_str().unwrap());
    args.extend(extra);
    let o = Command::new(env!("CARGO_BIN_EXE_plumbline")).args(&args).output().unwrap();
    assert!(o.status.success(), "{args:?}: {}", String::from_utf8_lossy(&o.stderr));
    let text = std::fs::read_to_string(rows_from).unwrap();
    let rows: Vec<&str> = text.lines().take(ROWS).collect();
    let literal = format!("import type {{ Row }} from \"./types\";\n\nexport const rows: Row[] = [\n{}\n];\n", rows.join(",\n"));
    std::fs::write(dir.join("rows.ts"), literal).unwrap();
    Command::new(tsc)
        .args(["--strict", "--noEmit", "--target", "es2020", "--module", "commonjs", "types.ts", "rows.ts"])
        .current_dir(dir)
        .output()
        .unwrap()
}

#[test]
fn tsc_accepts_the_interfaces_and_the_rows_assigned_to_them() {
    let Some(tsc) = tsc() else { return };
    let dir = tempfile::tempdir().unwrap();
    let nasty_rows = dir.path().join("nasty.jsonl");
    std::fs::write(&nasty_rows, nasty::nasty_jsonl(40)).unwrap();
    let deliveries = sample("deliveries.jsonl");
    let cases: [(&Path, &[&str]); 4] =
        [(&deliveries, &[]), (&deliveries, &["--mixed", "union"]), (&deliveries, &["--optional", "all"]), (&nasty_rows, &[])];
    for (input, extra) in cases {
        let o = compile(dir.path(), &tsc, input, extra, input);
        assert!(o.status.success(), "{} {extra:?}: tsc says:\n{}", input.display(), String::from_utf8_lossy(&o.stdout));
    }
    // The later drop adds a field and leaves `courier.vehicle` out: strict
    // mode must refuse its rows against the first drop's interfaces.
    let o = compile(dir.path(), &tsc, &deliveries, &[], &sample("later/deliveries.jsonl"));
    let said = String::from_utf8_lossy(&o.stdout);
    assert!(!o.status.success(), "the drifted drop should not fit");
    assert!(said.contains("rows.ts(") && said.contains("co2_grams"), "{said}");
}
