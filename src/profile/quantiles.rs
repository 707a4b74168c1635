//! Exact quantiles of a small sample by Hyndman & Fan's definition 7
//! (1996, "Sample Quantiles in Statistical Packages"): linear interpolation
//! between order statistics at h = (n − 1)·p — numpy's default "linear".

/// The quantiles a profile reports.
pub const PROFILE_PROBABILITIES: [f64; 7] = [0.01, 0.05, 0.25, 0.50, 0.75, 0.95, 0.99];

/// Quantile `p` (0 ≤ p ≤ 1) of `sorted` (ascending, no NaN).
pub fn type7(sorted: &[f64], p: f64) -> Option<f64> {
    if sorted.is_empty() || !(0.0..=1.0).contains(&p) {
        return None;
    }
    let h = (sorted.len() - 1) as f64 * p;
    let lo = h.floor() as usize;
    let hi = (lo + 1).min(sorted.len() - 1);
    let frac = h - lo as f64;
    // x_lo + frac·(x_hi − x_lo), written so equal neighbours give themselves.
    Some(sorted[lo] + frac * (sorted[hi] - sorted[lo]))
}

/// Sorts a copy of `values` (NaN left out) and takes each probability.
pub fn exact(values: &[f64], probabilities: &[f64]) -> Vec<Option<f64>> {
    let mut sorted: Vec<f64> = values.iter().copied().filter(|v| !v.is_nan()).collect();
    sorted.sort_by(f64::total_cmp);
    probabilities.iter().map(|&p| type7(&sorted, p)).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hyndman_fan_type_7_on_small_samples() {
        // Worked by hand from the definition: n = 4, h = 3p.
        let v = [1.0, 2.0, 3.0, 4.0];
        assert_eq!(type7(&v, 0.0), Some(1.0));
        assert_eq!(type7(&v, 0.5), Some(2.5));
        assert_eq!(type7(&v, 0.25), Some(1.75));
        assert_eq!(type7(&v, 1.0), Some(4.0));
        assert_eq!(type7(&[7.0], 0.99), Some(7.0));
        assert_eq!(type7(&[], 0.5), None);
        assert_eq!(exact(&[3.0, f64::NAN, 1.0, 2.0], &[0.5]), vec![Some(2.0)]);
    }
}
