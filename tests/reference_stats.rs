//! Reference check against pyarrow.compute (a general-purpose library
//! nobody here wrote): null counts, distinct counts, min, max, mean, standard
//! deviation, quantiles, top value counts and string lengths of generated
//! Parquet columns (ints with nulls,
//! floats, a small-cardinality int, strings, decimals), written with
//! pyarrow's own results by `tests/reference/pyarrow_stats.py`.
//!
//! The small file (5,000 rows) is profiled exactly; in the large one
//! (300,000 rows) distinct counts beyond the exact budget must be within 3
//! standard errors (common practice for a test bound), and sketched
//! quantiles within the sketch's stated rank error: between pyarrow's
//! quantiles at p − 0.01 and p + 0.01.

mod common;

use plumbline::profile::kll::RANK_ERROR;
use plumbline::report::{self, ReportOptions};
use serde_json::Value;

fn reference() -> Option<(tempfile::TempDir, Value)> {
    let dir = tempfile::tempdir().unwrap();
    common::run_reference_script("pyarrow_stats.py", &[dir.path().as_os_str()], "pyarrow and numpy")?;
    let text = std::fs::read_to_string(dir.path().join("expected.json")).unwrap();
    Some((dir, serde_json::from_str(&text).unwrap()))
}

fn f(v: &Value) -> f64 {
    v.as_f64().unwrap_or_else(|| panic!("not a number: {v}"))
}

fn close(a: f64, b: f64, rel: f64) -> bool {
    (a - b).abs() <= rel * b.abs().max(1.0)
}

#[test]
fn statistics_agree_with_pyarrow_compute() {
    let Some((dir, expected)) = reference() else { return };
    assert_eq!(RANK_ERROR, 0.01, "the reference brackets quantiles at p ∓ 0.01");
    for (file, view) in expected.as_object().unwrap() {
        let scan = common::full(&dir.path().join(file)).unwrap();
        let ours = report::build(&scan, ReportOptions::default());
        let ours = serde_json::to_value(&ours).unwrap();
        assert_eq!(ours["source"]["rows"], view["rows"]);
        for (name, reference) in view["fields"].as_object().unwrap() {
            let field = ours["fields"].as_array().unwrap().iter().find(|x| x["path"] == *name).unwrap();
            let what = format!("{file}: {name}");
            assert_eq!(field["nulls"], reference["nulls"], "{what}: nulls");
            let distinct = f(&field["distinct"]);
            let expected_distinct = f(&reference["distinct"]);
            if field["distinct_exact"] == true {
                assert_eq!(distinct, expected_distinct, "{what}: distinct");
            } else {
                let bound = 3.0 * f(&field["distinct_error"]) * expected_distinct;
                assert!((distinct - expected_distinct).abs() <= bound, "{what}: distinct {distinct} vs {expected_distinct}");
            }
            if let Some(value_counts) = reference.get("value_counts").and_then(|v| v.as_object())
                && value_counts.len() <= 1000
            {
                assert_eq!(field["top_exact"], true, "{what}");
                let top = field["top"].as_array().unwrap();
                assert_eq!(top.len(), value_counts.len().min(20), "{what}: top size");
                let counts: Vec<u64> = top.iter().map(|t| t["count"].as_u64().unwrap()).collect();
                assert!(counts.windows(2).all(|w| w[0] >= w[1]), "{what}: most frequent first");
                assert_eq!(counts[0], value_counts.values().map(|c| c.as_u64().unwrap()).max().unwrap());
                for t in top {
                    let expected = &value_counts[t["value"].as_str().unwrap()];
                    assert_eq!(&t["count"], expected, "{what}: count of {}", t["value"]);
                }
            }
            if let Some(lengths) = reference.get("lengths") {
                assert_eq!(field["lengths"]["min"].as_f64(), lengths["min"].as_f64(), "{what}: shortest");
                assert_eq!(field["lengths"]["max"].as_f64(), lengths["max"].as_f64(), "{what}: longest");
                assert!(close(f(&field["lengths"]["mean"]), f(&lengths["mean"]), 1e-12), "{what}: mean length");
            }
            let Some(min) = reference.get("min") else { continue };
            assert!(close(f(&field["min"]), f(min), 1e-12), "{what}: min {} vs {min}", field["min"]);
            assert!(close(f(&field["max"]), f(&reference["max"]), 1e-12), "{what}: max");
            assert!(close(f(&field["mean"]), f(&reference["mean"]), 1e-9), "{what}: mean {} vs {}", field["mean"], reference["mean"]);
            assert!(close(f(&field["std"]), f(&reference["std"]), 1e-9), "{what}: std {} vs {}", field["std"], reference["std"]);
            let q = &field["quantiles"];
            let ours: Vec<f64> = ["p1", "p5", "p25", "p50", "p75", "p95", "p99"].iter().map(|k| f(&q[k])).collect();
            for (i, value) in ours.iter().enumerate() {
                if field["quantiles_exact"] == true {
                    assert!(close(*value, f(&reference["quantiles"][i]), 1e-9), "{what}: quantile {i}");
                } else {
                    let (lo, hi) = (f(&reference["below"][i]), f(&reference["above"][i]));
                    assert!(lo <= *value && *value <= hi, "{what}: quantile {i} = {value} outside [{lo}, {hi}]");
                }
            }
        }
    }
}
