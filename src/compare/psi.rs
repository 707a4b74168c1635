//! The population stability index, PSI = Σ (a − e)·ln(a / e) over shared
//! bins, a being a bin's share in the later source and e in the earlier
//! one. Readings of 0.1 and 0.25 ("some" and "major" shift) are common
//! practice in credit scoring, not a standard.

/// A share of zero is replaced by this, so a bin empty on one side counts
/// as a large shift instead of an infinite one (common practice; the value
/// is our choice).
pub const ZERO_SHARE: f64 = 1e-4;

/// Shift worth a look (common practice in credit scoring).
pub const SOME_SHIFT: f64 = 0.1;
/// Major shift (common practice in credit scoring).
pub const MAJOR_SHIFT: f64 = 0.25;

/// PSI of two count vectors over the same bins; `None` when either is empty.
pub fn psi(before: &[u64], after: &[u64]) -> Option<f64> {
    let (nb, na) = (before.iter().sum::<u64>(), after.iter().sum::<u64>());
    if nb == 0 || na == 0 || before.len() != after.len() {
        return None;
    }
    let share = |c: u64, n: u64| (c as f64 / n as f64).max(ZERO_SHARE);
    Some(before.iter().zip(after).map(|(&b, &a)| {
        let (e, a) = (share(b, nb), share(a, na));
        (a - e) * (a / e).ln()
    }).sum())
}

/// Weighted ascending values counted into the bins `edges` make, plus one
/// bin below the first edge and one above the last (for values the later
/// source has outside the earlier one's range). The last inner bin holds
/// its right edge, as numpy's histogram does.
pub fn counts_in(edges: &[f64], values: &[(f64, u64)]) -> Vec<u64> {
    let mut counts = vec![0u64; edges.len() + 1];
    let last = edges.len().saturating_sub(1);
    for &(v, w) in values {
        let bin = if edges.is_empty() || v < edges[0] {
            0
        } else if v > edges[last] {
            edges.len()
        } else if v == edges[last] {
            last.max(1)
        } else {
            // The first edge above v ends v's bin.
            edges.partition_point(|e| *e <= v)
        };
        counts[bin] += w;
    }
    counts
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn psi_of_a_worked_example() {
        // Worked by hand: shares (0.5, 0.5) → (0.4, 0.6):
        // (0.4 − 0.5)·ln(0.8) + (0.6 − 0.5)·ln(1.2)
        //   = 0.1 × 0.2231436 + 0.1 × 0.1823216 = 0.0405465.
        let v = psi(&[50, 50], &[40, 60]).unwrap();
        assert!((v - 0.040_546_5).abs() < 1e-7, "{v}");
        assert_eq!(psi(&[10, 20], &[1, 2]), Some(0.0), "the same shares");
        assert_eq!(psi(&[], &[]), None);
        // A bin empty before: its share counts as 0.0001.
        let v = psi(&[10, 0], &[5, 5]).unwrap();
        let by_hand = (0.5 - 1.0) * (0.5f64 / 1.0).ln() + (0.5 - 1e-4) * (0.5f64 / 1e-4).ln();
        assert!((v - by_hand).abs() < 1e-12);
    }

    #[test]
    fn values_fall_into_the_bins_numpy_would_use_plus_two_outside() {
        let edges = [0.0, 1.0, 2.0];
        let values = [(-1.0, 1), (0.0, 1), (0.5, 1), (1.0, 1), (2.0, 1), (3.0, 2)];
        assert_eq!(counts_in(&edges, &values), vec![1, 2, 2, 2]);
    }
}
