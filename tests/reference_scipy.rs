//! Reference check against scipy (a general-purpose library nobody here
//! wrote): `tests/reference/ks_scipy.py` draws pairs of samples and writes
//! scipy.stats.ks_2samp's statistic and asymptotic p-value, and scipy's
//! Kolmogorov distribution (kstwobign) at the Stephens-corrected point.
//! Plumbline's statistic must equal scipy's; its p-value must equal
//! kstwobign's at the same point to 1e-9, and lie within 0.02 of ks_2samp's
//! asymptotic p-value when nm/(n+m) ≥ 100, within 0.05 below (scipy
//! evaluates the finite-n distribution kstwo there, a different
//! approximation of the same quantity; both bounds are ours).
//! Also: the profile's own distribution (NumberStats, exact below 10,000
//! values) gives the same statistic as the raw samples.
//!
//! Needs Python 3 with numpy and scipy (`.ci/run` installs the pinned
//! versions from `tests/reference/requirements.txt`).

mod common;

use plumbline::compare::ks;
use plumbline::profile::numbers::NumberStats;
use serde_json::Value;

#[test]
fn kolmogorov_smirnov_agrees_with_scipy() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("ks.json");
    if common::run_reference_check("ks_scipy.py", &[out.as_os_str()], "numpy and scipy").is_none() {
        return;
    }
    let cases: Vec<Value> = serde_json::from_str(&std::fs::read_to_string(&out).unwrap()).unwrap();
    assert!(cases.len() >= 7);
    for case in &cases {
        let name = case["name"].as_str().unwrap();
        let sample = |key: &str| -> Vec<f64> { case[key].as_array().unwrap().iter().map(|v| v.as_f64().unwrap()).collect() };
        let (a, b) = (sample("a"), sample("b"));
        let weighted = |xs: &[f64]| {
            let mut v: Vec<(f64, u64)> = xs.iter().map(|&x| (x, 1)).collect();
            v.sort_by(|p, q| p.0.total_cmp(&q.0));
            v
        };
        let d = ks::statistic(&weighted(&a), &weighted(&b)).unwrap();
        let want = case["statistic"].as_f64().unwrap();
        assert!((d - want).abs() < 1e-12, "{name}: D {d} vs scipy {want}");

        let p = ks::p_value(d, a.len() as u64, b.len() as u64);
        let stephens = case["p_value_stephens"].as_f64().unwrap();
        assert!((p - stephens).abs() < 1e-9, "{name}: p {p} vs scipy kstwobign {stephens}");
        let asymp = case["p_value_asymp"].as_f64().unwrap();
        let en = (a.len() * b.len()) as f64 / (a.len() + b.len()) as f64;
        let bound = if en >= 100.0 { 0.02 } else { 0.05 };
        assert!((p - asymp).abs() < bound, "{name}: p {p} vs scipy ks_2samp asymp {asymp}");

        // Through the profile's statistics, as compare computes it.
        let stats = |xs: &[f64]| {
            let mut s = NumberStats::new();
            xs.iter().for_each(|&x| s.add(x));
            s
        };
        let ((da, exact_a), (db, exact_b)) = (stats(&a).distribution(), stats(&b).distribution());
        assert!(exact_a && exact_b, "{name}: below 10,000 values the profile keeps them all");
        assert_eq!(ks::statistic(&da, &db), Some(d), "{name}");
    }
}
