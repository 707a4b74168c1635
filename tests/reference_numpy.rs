//! Reference check against numpy (a general-purpose library nobody here
//! wrote): quantiles by `numpy.percentile(method="linear")` (Hyndman & Fan
//! type 7), histogram bin edges by `numpy.histogram_bin_edges(bins="auto")`
//! and counts by `numpy.histogram`, on samples that
//! `tests/reference/numpy_stats.py` generates (normal, lognormal, heavy
//! duplicates, two far clusters, sorted, reversed, tiny).
//!
//! Needs Python 3 with numpy (`.ci/run` installs it). Without it the test says
//! so loudly, and fails when `CI=true`.

mod common;

use plumbline::profile::{histogram, quantiles};
use serde_json::Value;

fn reference() -> Option<Value> {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("numpy.json");
    common::run_reference_script("numpy_stats.py", &[out.as_os_str()], "numpy")?;
    Some(serde_json::from_str(&std::fs::read_to_string(&out).unwrap()).unwrap())
}

fn floats(v: &Value) -> Vec<f64> {
    v.as_array().unwrap().iter().map(|x| x.as_f64().unwrap()).collect()
}

fn close(a: f64, b: f64, scale: f64) -> bool {
    (a - b).abs() <= 1e-9 * scale.max(1.0)
}

#[test]
fn quantiles_and_histograms_match_numpy() {
    let Some(reference) = reference() else { return };
    let probabilities: Vec<f64> = floats(&reference["probabilities"]).iter().map(|p| p / 100.0).collect();
    let samples = reference["samples"].as_array().unwrap();
    assert_eq!(samples.len(), 9);
    for sample in samples {
        let name = sample["name"].as_str().unwrap();
        let values = floats(&sample["values"]);
        let scale = values.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        let ours = quantiles::exact(&values, &probabilities);
        for ((p, q), expected) in probabilities.iter().zip(&ours).zip(floats(&sample["percentiles"])) {
            let q = q.expect("a quantile");
            assert!(close(q, expected, scale), "{name}: p{p}: {q} vs numpy {expected}");
        }
        let edges = histogram::auto_edges(&values);
        let expected_edges = floats(&sample["edges"]);
        assert_eq!(edges.len(), expected_edges.len(), "{name}: bin count");
        for (a, b) in edges.iter().zip(&expected_edges) {
            assert!(close(*a, *b, scale), "{name}: edge {a} vs numpy {b}");
        }
        let counts = histogram::counts(&values, &expected_edges);
        let expected_counts: Vec<u64> = sample["counts"].as_array().unwrap().iter().map(|c| c.as_u64().unwrap()).collect();
        assert_eq!(counts, expected_counts, "{name}: counts");
    }
}
