//! Statistics of text values: length in characters (as a number, with its
//! own moments and histogram), empty strings, and strings with leading or
//! trailing whitespace.

use super::numbers::NumberStats;

#[derive(Debug, Clone, Default)]
pub struct TextStats {
    pub lengths: NumberStats,
    pub empty: u64,
    pub padded: u64,
}

impl TextStats {
    pub fn new() -> Self {
        TextStats::with_limit(super::numbers::EXACT_SAMPLE)
    }

    /// Lengths exact while at most `limit` strings have been seen.
    pub fn with_limit(limit: usize) -> Self {
        TextStats { lengths: NumberStats::with_limit(limit), empty: 0, padded: 0 }
    }

    pub fn add(&mut self, s: &str) {
        self.lengths.add(s.chars().count() as f64);
        if s.is_empty() {
            self.empty += 1;
        } else if s.trim() != s {
            self.padded += 1;
        }
    }

    pub fn merge(&mut self, other: &TextStats) {
        self.lengths.merge(&other.lengths);
        self.empty += other.empty;
        self.padded += other.padded;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn lengths_count_characters_and_padding_is_seen() {
        let mut t = TextStats::new();
        for s in ["", "é", " a", "b ", "abc", "\tx"] {
            t.add(s);
        }
        assert_eq!((t.empty, t.padded), (1, 3));
        assert_eq!(t.lengths.moments.max(), Some(3.0));
        assert_eq!(t.lengths.moments.min(), Some(0.0));
        assert_eq!(t.lengths.moments.count(), 6);
    }
}
