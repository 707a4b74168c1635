//! Sketch accuracy against published bounds.
//!
//! HyperLogLog: over many seeds and cardinalities from 10³ to 10⁷, the
//! relative error stays within 3 standard errors of 1.04/√m (Flajolet,
//! Fusy, Gandouet & Meunier 2007). Three standard errors is common practice
//! for a test bound (it fails by chance about 0.3 % of the time per case for
//! a normal error; the seeds are fixed, so the run is repeatable).

use plumbline::profile::distinct::{Distinct, hash_bytes, standard_error};

#[test]
fn hyperloglog_error_stays_within_three_standard_errors() {
    let bound = 3.0 * standard_error();
    let cases: [(u64, u64); 5] = [(1_000, 20), (10_000, 20), (100_000, 10), (1_000_000, 4), (10_000_000, 2)];
    for (cardinality, seeds) in cases {
        for seed in 0..seeds {
            // Budget 0: the sketch from the first value, so it is what is measured.
            let mut d = Distinct::with_budget(0);
            for i in 0..cardinality {
                let mut key = [0u8; 16];
                key[..8].copy_from_slice(&seed.to_le_bytes());
                key[8..].copy_from_slice(&i.to_le_bytes());
                d.add_hash(hash_bytes(&key));
            }
            let c = d.count();
            let error = (c.value as f64 - cardinality as f64).abs() / cardinality as f64;
            assert!(!c.exact);
            assert!(error <= bound, "n = {cardinality}, seed {seed}: error {:.3} % > {:.3} %", error * 100.0, bound * 100.0);
        }
    }
}
