//! How big each field's exact structures may grow before they give way to
//! sketches. A source with many fields gives each a smaller share, so one
//! builder's memory stays bounded whatever the width (2,000-column Parquet
//! files are common): the totals below, not the field count, set it.
//!
//! The totals are our own choice, sized so a builder's exact structures
//! stay under roughly 100 MB; they are not a standard.

use super::{distinct, numbers, top};

/// Distinct-value hashes kept exactly, over all fields (≈ 40 MB of sets).
pub const TOTAL_DISTINCT: usize = 2_000_000;
/// Exactly counted values for top values, over all fields.
pub const TOTAL_TOP: usize = 200_000;
/// Values kept for exact quantiles, over all fields.
pub const TOTAL_SAMPLE: usize = 2_000_000;

/// The least any field gets, however wide the source.
pub const MIN_DISTINCT: usize = 1_000;
pub const MIN_TOP: usize = 100;
pub const MIN_SAMPLE: usize = 1_000;

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Budget {
    /// Distinct values counted exactly before HyperLogLog++.
    pub distinct: usize,
    /// Values counted exactly before the Misra–Gries summary.
    pub top: usize,
    /// Counters the summary keeps.
    pub counters: usize,
    /// Values kept for exact quantiles and histograms before KLL.
    pub sample: usize,
}

impl Default for Budget {
    fn default() -> Self {
        Budget::for_fields(1)
    }
}

impl Budget {
    /// Each field's share when a source has `fields` fields (every node of
    /// the field tree, nested ones included).
    pub fn for_fields(fields: usize) -> Self {
        let share = |total: usize, min: usize, max: usize| (total / fields.max(1)).clamp(min, max);
        let top = share(TOTAL_TOP, MIN_TOP, top::EXACT_VALUES);
        Budget {
            distinct: share(TOTAL_DISTINCT, MIN_DISTINCT, distinct::EXACT_BUDGET),
            top,
            counters: top.min(top::COUNTERS),
            sample: share(TOTAL_SAMPLE, MIN_SAMPLE, numbers::EXACT_SAMPLE),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn narrow_sources_get_the_full_budget_and_wide_ones_a_share() {
        let full = Budget::for_fields(15);
        assert_eq!(
            (full.distinct, full.top, full.counters, full.sample),
            (distinct::EXACT_BUDGET, top::EXACT_VALUES, top::COUNTERS, numbers::EXACT_SAMPLE)
        );
        let wide = Budget::for_fields(2_000);
        assert_eq!((wide.distinct, wide.top, wide.counters, wide.sample), (1_000, 100, 100, 1_000));
        let middle = Budget::for_fields(100);
        assert_eq!((middle.distinct, middle.top, middle.sample), (20_000, 2_000, 10_000));
        // The total stays bounded however wide.
        for fields in [1, 10, 100, 1_000, 100_000] {
            let b = Budget::for_fields(fields);
            assert!(b.distinct * fields <= TOTAL_DISTINCT.max(MIN_DISTINCT * fields), "{fields}");
        }
    }
}
