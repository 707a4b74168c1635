//! Numeric histogram bins by numpy's `auto` rule, as numpy 2 implements it
//! (`numpy.histogram_bin_edges`, `_hist_bin_auto`): the smaller width of
//! Sturges (range / (log2 n + 1)) and Freedman–Diaconis (2·IQR·n^(−1/3)),
//! where the Freedman–Diaconis width is first raised to at least half the
//! square-root rule's (range / √n / 2) so a small IQR cannot ask for a flood
//! of bins. (Older numpy took Freedman–Diaconis unbounded, Sturges alone when
//! the IQR was zero; the design notes describe that older rule.)

use super::quantiles;

/// Bin edges over `[min, max]` for the finite `values` (numpy `auto`).
pub fn auto_edges(values: &[f64]) -> Vec<f64> {
    auto_edges_with(values, false)
}

/// As [`auto_edges`]; for integer data, bins are at least 1 wide (numpy
/// does the same for integer arrays).
pub fn auto_edges_with(values: &[f64], integers: bool) -> Vec<f64> {
    let mut sorted: Vec<f64> = values.iter().copied().filter(|v| v.is_finite()).collect();
    if sorted.is_empty() {
        return Vec::new();
    }
    sorted.sort_by(f64::total_cmp);
    let (lo, hi) = (sorted[0], sorted[sorted.len() - 1]);
    let q1 = quantiles::type7(&sorted, 0.25).unwrap_or(lo);
    let q3 = quantiles::type7(&sorted, 0.75).unwrap_or(hi);
    auto_edges_from_summary(lo, hi, q1, q3, sorted.len() as f64, integers)
}

/// The same rule from a summary: range, quartiles and count (for inputs
/// known only through a sketch).
pub fn auto_edges_from_summary(lo: f64, hi: f64, q1: f64, q3: f64, n: f64, integers: bool) -> Vec<f64> {
    if lo == hi {
        // numpy widens an empty range to [lo − 0.5, hi + 0.5] with one bin.
        return vec![lo - 0.5, hi + 0.5];
    }
    let range = hi - lo;
    let sturges_width = range / (n.log2() + 1.0);
    let iqr = q3 - q1;
    let fd_width = 2.0 * iqr / n.cbrt();
    let sqrt_width = range / n.sqrt();
    let mut width = fd_width.max(sqrt_width / 2.0).min(sturges_width);
    if integers && width < 1.0 {
        width = 1.0;
    }
    let bins = ((range / width).ceil() as usize).max(1);
    // numpy spaces edges evenly between min and max (linspace).
    (0..=bins).map(|i| lo + range * i as f64 / bins as f64).collect()
}

/// Counts per bin; the last bin includes its right edge (numpy's rule).
pub fn counts(values: &[f64], edges: &[f64]) -> Vec<u64> {
    if edges.len() < 2 {
        return Vec::new();
    }
    let bins = edges.len() - 1;
    let (lo, hi) = (edges[0], edges[bins]);
    let mut out = vec![0u64; bins];
    for &v in values.iter().filter(|v| v.is_finite() && **v >= lo && **v <= hi) {
        // Binary search on the edges, as numpy does for uneven float edges.
        let i = edges.partition_point(|&e| e <= v).saturating_sub(1).min(bins - 1);
        out[i] += 1;
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_constant_sample_gets_one_unit_bin() {
        assert_eq!(auto_edges(&[5.0, 5.0, 5.0]), vec![4.5, 5.5]);
        assert_eq!(counts(&[5.0, 5.0, 5.0], &[4.5, 5.5]), vec![3]);
    }

    #[test]
    fn integer_data_gets_bins_at_least_one_wide() {
        let values: Vec<f64> = (0..1000).map(|i| (i % 5) as f64).collect();
        assert_eq!(auto_edges_with(&values, true).len(), 5, "4 unit bins over 0..=4");
        assert!(auto_edges(&values).len() > 5);
    }

    #[test]
    fn the_last_bin_is_closed() {
        let edges = [0.0, 1.0, 2.0];
        assert_eq!(counts(&[0.0, 0.5, 1.0, 2.0, 2.5, f64::NAN], &edges), vec![2, 2]);
    }
}
