//! Reports read back: a report `profile --json` wrote opens as a scan whose
//! report is the same one again, field for field; `compare`, `fit` and
//! `profile` take it in place of its source; a damaged report gives a clear
//! error naming the file and the place.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use serde_json::Value;

fn plumbline(args: &[&std::ffi::OsStr]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_plumbline")).args(args).output().expect("run plumbline")
}

fn demo(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-data").join(name)
}

fn write_report(data: &Path, into: &Path) {
    let o = plumbline(&["profile".as_ref(), data.as_os_str(), "--json".as_ref(), into.as_os_str()]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
}

#[test]
fn a_report_read_back_gives_the_same_report() {
    for name in ["deliveries.parquet", "deliveries.jsonl", "deliveries.csv"] {
        let dir = tempfile::tempdir().unwrap();
        let file = dir.path().join("r.json");
        write_report(&demo(name), &file);
        let original: Value = serde_json::from_str(&std::fs::read_to_string(&file).unwrap()).unwrap();
        let scan = plumbline::report::read::read(&file).unwrap_or_else(|e| panic!("{name}: {e}"));
        assert_eq!(scan.from_report.as_ref().map(|r| r.file.clone()), Some(file.clone()));
        let again = plumbline::report::build(&scan, Default::default());
        let again: Value = serde_json::from_str(&plumbline::report::to_json(&again)).unwrap();
        assert_eq!(again["source"], original["source"], "{name}: source");
        assert_eq!(again["generated_at"], original["generated_at"], "{name}: when it was made");
        let (a, b) = (again["fields"].as_array().unwrap(), original["fields"].as_array().unwrap());
        assert_eq!(a.len(), b.len(), "{name}: fields");
        for (x, y) in a.iter().zip(b) {
            let (mut x, mut y) = (x.clone(), y.clone());
            // Findings are judged afresh from the statistics (checked below).
            let (fx, fy) = (x.as_object_mut().unwrap().remove("findings"), y.as_object_mut().unwrap().remove("findings"));
            assert_eq!(x, y, "{name}: field {}", y["path"]);
            let kinds = |f: Option<Value>| -> Vec<String> {
                f.and_then(|v| v.as_array().cloned()).unwrap_or_default().iter().map(|f| f["kind"].as_str().unwrap().to_string()).collect()
            };
            assert_eq!(kinds(fx), kinds(fy), "{name}: findings of {}", y["path"]);
        }
    }
}

#[test]
fn compare_fit_and_profile_take_a_report_for_its_source() {
    let dir = tempfile::tempdir().unwrap();
    let data = demo("deliveries.parquet");
    let report = dir.path().join("deliveries.report.json");
    write_report(&data, &report);

    let o = plumbline(&["profile".as_ref(), report.as_os_str()]);
    assert!(o.status.success());
    let out = String::from_utf8_lossy(&o.stdout);
    assert!(out.contains("read from the report") && out.contains("made by Plumbline"), "{out}");

    let fail_on = ["--fail-on", "schema", "--fail-on", "drift"];
    let mut args: Vec<&std::ffi::OsStr> = vec!["compare".as_ref(), data.as_os_str(), report.as_os_str()];
    args.extend(fail_on.iter().map(|a| std::ffi::OsStr::new(a)));
    let o = plumbline(&args);
    assert!(o.status.success(), "{}{}", String::from_utf8_lossy(&o.stdout), String::from_utf8_lossy(&o.stderr));

    // The later drop's report shows the later drop's changes.
    let later = dir.path().join("later.report.json");
    write_report(&demo("later/deliveries.parquet"), &later);
    let o = plumbline(&["compare".as_ref(), report.as_os_str(), later.as_os_str(), "--fail-on".as_ref(), "schema".as_ref()]);
    assert_eq!(o.status.code(), Some(1), "{}", String::from_utf8_lossy(&o.stderr));

    // Types generated from the data fit its report; a definition with a
    // field the data lacks does not.
    let scala = dir.path().join("Deliveries.scala");
    let o = plumbline(&["types".as_ref(), data.as_os_str(), "--lang".as_ref(), "scala".as_ref(), "-o".as_ref(), scala.as_os_str()]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let o = plumbline(&["fit".as_ref(), report.as_os_str(), scala.as_os_str()]);
    let out = String::from_utf8_lossy(&o.stdout);
    assert!(o.status.success(), "{out}{}", String::from_utf8_lossy(&o.stderr));
    assert!(out.contains("nothing in the report's statistics"), "{out}");
    let ddl = dir.path().join("extra.ddl");
    std::fs::write(&ddl, "delivery_id STRING NOT NULL, courier_rating DOUBLE NOT NULL").unwrap();
    let o = plumbline(&["fit".as_ref(), report.as_os_str(), ddl.as_os_str()]);
    assert_eq!(o.status.code(), Some(1), "{}", String::from_utf8_lossy(&o.stdout));
    assert!(String::from_utf8_lossy(&o.stdout).contains("courier_rating"));
}

#[test]
fn a_damaged_report_gives_a_clear_error_naming_the_file_and_place() {
    let dir = tempfile::tempdir().unwrap();
    let good = dir.path().join("good.json");
    write_report(&demo("deliveries.parquet"), &good);
    let text = std::fs::read_to_string(&good).unwrap();

    let cut = dir.path().join("cut.json");
    std::fs::write(&cut, &text[..text.len() / 2]).unwrap();
    let newer = dir.path().join("newer.json");
    std::fs::write(&newer, text.replacen("\"plumbline_report\": 1", "\"plumbline_report\": 99", 1)).unwrap();
    let deep = dir.path().join("deep.json");
    let mut value: Value = serde_json::from_str(&text).unwrap();
    value["fields"][0]["depth"] = Value::from(3);
    std::fs::write(&deep, serde_json::to_string_pretty(&value).unwrap()).unwrap();
    let kinds = dir.path().join("kinds.json");
    let mut value: Value = serde_json::from_str(&text).unwrap();
    value["fields"][1]["kinds"]["quaternion"] = Value::from(1);
    std::fs::write(&kinds, serde_json::to_string_pretty(&value).unwrap()).unwrap();

    for (file, says) in [
        (&cut, "line "),
        (&newer, "report version 99 is newer"),
        (&deep, "field 1 (delivery_id): depth 3"),
        (&kinds, "unknown kind \"quaternion\""),
    ] {
        let o = plumbline(&["profile".as_ref(), file.as_os_str()]);
        assert_eq!(o.status.code(), Some(2), "{}", file.display());
        let err = String::from_utf8_lossy(&o.stderr);
        assert!(err.contains(&file.display().to_string()) && err.contains(says), "{err}");
        assert_eq!(err.lines().count(), 1, "{err}");
    }
}
