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
        self.add_count(s, 1);
    }

    /// `count` strings equal to `s`.
    pub fn add_count(&mut self, s: &str, count: u64) {
        self.lengths.add_count(char_count(s) as f64, count);
        if s.is_empty() {
            self.empty += count;
        } else if is_padded(s) {
            self.padded += count;
        }
    }

    /// A run of strings: the same statistics as adding them one at a time,
    /// with their lengths counted first (most runs hold a few lengths).
    pub fn add_all(&mut self, values: &[&str]) {
        self.lengths.add_whole_numbers(values.iter().map(|s| char_count(s)));
        for s in values {
            if s.is_empty() {
                self.empty += 1;
            } else if is_padded(s) {
                self.padded += 1;
            }
        }
    }

    pub fn merge(&mut self, other: &TextStats) {
        self.lengths.merge(&other.lengths);
        self.empty += other.empty;
        self.padded += other.padded;
    }
}

/// Characters in `s` (the standard library's count: it is built optimised
/// even into test builds, which matters for strings of gigabytes).
fn char_count(s: &str) -> usize {
    s.chars().count()
}

/// Leading or trailing whitespace (as `str::trim` sees it), on a non-empty string.
fn is_padded(s: &str) -> bool {
    s.starts_with(char::is_whitespace) || s.ends_with(char::is_whitespace)
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
        let mut run = TextStats::new();
        run.add_all(&["", "é", " a", "b ", "abc", "\tx"]);
        assert_eq!((run.empty, run.padded), (t.empty, t.padded));
        assert_eq!(run.lengths.quantiles(), t.lengths.quantiles());
        let (a, b) = (run.lengths.moments.mean().unwrap(), t.lengths.moments.mean().unwrap());
        assert!((a - b).abs() < 1e-12, "{a} vs {b}");
    }

    #[test]
    fn padding_is_any_unicode_space_at_either_end() {
        for s in ["\u{a0}x", "x\u{2003}", "\u{b}x", " ", "x\n"] {
            assert!(is_padded(s), "{s:?}");
        }
        assert!(!is_padded("x y") && !is_padded("é"));
    }
}
