//! Uniform row samples of a stream whose length is not known in advance.
//!
//! [`Reservoir`] decides which rows enter the sample (Li's Algorithm L,
//! "Reservoir-sampling algorithms of time complexity O(n(1 + log(N/n)))",
//! ACM TOMS 1994): it draws how many rows to skip, so most rows cost
//! nothing. [`kept::KeptRows`] holds the chosen rows themselves.
//!
//! The choice depends only on the seed and the row sequence, never on how
//! the rows are cut into batches, so the same file gives the same sample.

pub mod kept;

/// The seed used when the user gives none, so reruns agree.
pub const DEFAULT_SEED: u64 = 1;

/// The largest sample offered: a sample is held in memory whole, so this
/// bounds memory (our own limit, sized for a few GB at typical row widths).
pub const MAX_ROWS: usize = 10_000_000;

/// SplitMix64 (Steele, Lea & Flood, "Fast splittable pseudorandom number
/// generators", OOPSLA 2014): small, fast, and passes BigCrush.
#[derive(Debug, Clone)]
pub struct SplitMix64(u64);

impl SplitMix64 {
    pub fn new(seed: u64) -> Self {
        SplitMix64(seed)
    }

    pub fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// Uniform in the open interval (0, 1), so its logarithm is finite.
    pub fn open_unit(&mut self) -> f64 {
        ((self.next_u64() >> 11) as f64 + 0.5) / (1u64 << 53) as f64
    }

    /// Uniform in `0..n` (Lemire's multiply-shift; the bias is below 2⁻³²
    /// for the reservoir sizes used here).
    pub fn below(&mut self, n: usize) -> usize {
        ((self.next_u64() as u128 * n as u128) >> 64) as usize
    }
}

/// Which rows of a stream enter a sample of `capacity` rows, and which
/// slot each one takes.
#[derive(Debug, Clone)]
pub struct Reservoir {
    capacity: usize,
    /// Rows offered so far.
    seen: u64,
    /// The number (0-based) of the next row to enter once the reservoir is full.
    next_pick: u64,
    w: f64,
    rng: SplitMix64,
}

/// A row that enters the sample: its number in the batch and the slot it
/// fills (a slot equal to the rows kept so far means "append").
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Pick {
    pub row_in_batch: usize,
    pub slot: usize,
}

impl Reservoir {
    pub fn new(capacity: usize, seed: u64) -> Self {
        assert!(capacity > 0, "a sample holds at least one row");
        let mut r = Reservoir { capacity, seen: 0, next_pick: 0, w: 1.0, rng: SplitMix64::new(seed) };
        r.w = (r.rng.open_unit().ln() / capacity as f64).exp();
        r.next_pick = capacity as u64 + r.skip();
        r
    }

    pub fn capacity(&self) -> usize {
        self.capacity
    }

    /// Rows offered so far.
    pub fn seen(&self) -> u64 {
        self.seen
    }

    /// Rows skipped before the next pick (geometric with parameter `w`).
    fn skip(&mut self) -> u64 {
        let skip = (self.rng.open_unit().ln() / (1.0 - self.w).ln()).floor();
        // `w` near 1 (tiny streams) or 0 (vast ones) can push the ratio
        // outside u64; saturate rather than wrap.
        if skip.is_finite() && skip >= 0.0 { skip.min(u64::MAX as f64 / 2.0) as u64 } else { u64::MAX / 2 }
    }

    /// Offers the next `rows` rows of the stream; returns the ones that
    /// enter, in order. A later pick may take the slot of an earlier one.
    pub fn offer(&mut self, rows: usize) -> Vec<Pick> {
        let start = self.seen;
        let end = start + rows as u64;
        let mut picks = Vec::new();
        let filling_end = end.min(self.capacity as u64);
        for row in start..filling_end {
            picks.push(Pick { row_in_batch: (row - start) as usize, slot: row as usize });
        }
        while self.next_pick < end {
            picks.push(Pick { row_in_batch: (self.next_pick - start) as usize, slot: self.rng.below(self.capacity) });
            self.w *= (self.rng.open_unit().ln() / self.capacity as f64).exp();
            self.next_pick += 1 + self.skip();
        }
        self.seen = end;
        picks
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The rows (by stream number) a reservoir keeps, fed in batches of `batch`.
    fn sample(capacity: usize, rows: u64, batch: usize, seed: u64) -> Vec<u64> {
        let mut r = Reservoir::new(capacity, seed);
        let mut slots = Vec::new();
        let mut offset = 0u64;
        while offset < rows {
            let n = (batch as u64).min(rows - offset) as usize;
            for p in r.offer(n) {
                let row = offset + p.row_in_batch as u64;
                if p.slot == slots.len() { slots.push(row) } else { slots[p.slot] = row }
            }
            offset += n as u64;
        }
        slots.sort();
        slots
    }

    #[test]
    fn unit_draws_stay_inside_the_open_interval() {
        let mut g = SplitMix64::new(0);
        let draws: Vec<f64> = (0..100_000).map(|_| g.open_unit()).collect();
        assert!(draws.iter().all(|&u| u > 0.0 && u < 1.0));
        let mean = draws.iter().sum::<f64>() / draws.len() as f64;
        // Uniform(0,1): mean 1/2, standard error 1/sqrt(12 n) ≈ 0.0009.
        assert!((mean - 0.5).abs() < 0.005, "{mean}");
        assert!((0..1000).all(|_| g.below(7) < 7));
    }

    #[test]
    fn a_short_stream_is_kept_whole() {
        assert_eq!(sample(10, 7, 3, 5), (0..7).collect::<Vec<_>>());
        assert_eq!(sample(10, 10, 4, 5), (0..10).collect::<Vec<_>>());
    }

    #[test]
    fn the_sample_does_not_depend_on_batch_boundaries() {
        let whole = sample(50, 100_000, 100_000, 9);
        assert_eq!(whole.len(), 50);
        for batch in [1, 7, 8192] {
            assert_eq!(sample(50, 100_000, batch, 9), whole, "batch {batch}");
        }
        assert_ne!(sample(50, 100_000, 8192, 10), whole, "another seed, another sample");
    }

    #[test]
    fn every_row_is_equally_likely_to_be_kept() {
        // Pearson's chi-square test of the inclusion counts: 10 of 200 rows,
        // 20,000 seeds, so each row is expected 1,000 times. With 199
        // degrees of freedom the 0.999 quantile of chi-square is about 267
        // (standard tables); a biased sampler (e.g. one favouring early or
        // late rows) lands far beyond it.
        let (rows, capacity, runs) = (200u64, 10usize, 20_000u64);
        let mut counts = vec![0u64; rows as usize];
        for seed in 0..runs {
            for row in sample(capacity, rows, 64, seed) {
                counts[row as usize] += 1;
            }
        }
        let expected = (runs * capacity as u64) as f64 / rows as f64;
        let chi2: f64 = counts.iter().map(|&c| (c as f64 - expected).powi(2) / expected).sum();
        assert!(chi2 < 267.0, "chi-square {chi2:.1} over 199 degrees of freedom");
        // Early and late halves get the same share (the classic failure).
        let early: u64 = counts[..100].iter().sum();
        let late: u64 = counts[100..].iter().sum();
        assert!((early as f64 / late as f64 - 1.0).abs() < 0.03, "{early} vs {late}");
    }

    #[test]
    fn long_streams_pick_rows_throughout() {
        let kept = sample(1000, 10_000_000, 8192, 3);
        assert_eq!(kept.len(), 1000);
        let mean = kept.iter().sum::<u64>() as f64 / 1000.0;
        // The mean of 1,000 uniform picks from 0..10⁷ is 5·10⁶ with a
        // standard error of about 91,000; allow 5 of them.
        assert!((mean - 5e6).abs() < 5.0 * 91_300.0, "mean row {mean}");
    }
}
