//! Observed kinds of values, their counts, and how kinds unify.
//!
//! Unification (DESIGN §3): int ∪ float → float; int ∪ decimal → decimal;
//! float ∪ decimal → float (lossy); null ∪ T → T with nulls; anything else
//! that meets → mixed, reported and never silently coerced.

use serde::Serialize;

use super::strings::StringForms;

#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Kind {
    Null,
    Bool,
    Int,
    Float,
    /// Exact decimals, and integer literals wider than 64 bits.
    Decimal,
    String,
    Binary,
    Date,
    Time,
    Timestamp,
    Duration,
    Interval,
    Object,
    Array,
    Map,
}

impl Kind {
    pub const ALL: [Kind; 15] = [
        Kind::Null,
        Kind::Bool,
        Kind::Int,
        Kind::Float,
        Kind::Decimal,
        Kind::String,
        Kind::Binary,
        Kind::Date,
        Kind::Time,
        Kind::Timestamp,
        Kind::Duration,
        Kind::Interval,
        Kind::Object,
        Kind::Array,
        Kind::Map,
    ];

    pub fn name(self) -> &'static str {
        match self {
            Kind::Null => "null",
            Kind::Bool => "bool",
            Kind::Int => "int",
            Kind::Float => "float",
            Kind::Decimal => "decimal",
            Kind::String => "string",
            Kind::Binary => "binary",
            Kind::Date => "date",
            Kind::Time => "time",
            Kind::Timestamp => "timestamp",
            Kind::Duration => "duration",
            Kind::Interval => "interval",
            Kind::Object => "object",
            Kind::Array => "array",
            Kind::Map => "map",
        }
    }

    /// The kind a report names by its [`Self::name`].
    pub fn from_name(name: &str) -> Option<Kind> {
        Kind::ALL.into_iter().find(|k| k.name() == name)
    }

    fn index(self) -> usize {
        self as usize
    }

    fn is_numeric(self) -> bool {
        matches!(self, Kind::Int | Kind::Float | Kind::Decimal)
    }
}

/// What a field's values come to after unification.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Unified {
    /// No non-null value was seen.
    Nothing,
    One(Kind),
    /// More than one kind that does not unify.
    Mixed,
}

/// Counts per kind, the integer range, and string forms.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct KindCounts {
    counts: [u64; Kind::ALL.len()],
    /// Smallest and largest integer seen (for the fitting width).
    pub int_range: Option<(i128, i128)>,
    pub forms: StringForms,
}

impl KindCounts {
    pub fn add(&mut self, kind: Kind, n: u64) {
        self.counts[kind.index()] += n;
    }

    pub fn get(&self, kind: Kind) -> u64 {
        self.counts[kind.index()]
    }

    pub fn add_int(&mut self, v: i128) {
        self.counts[Kind::Int.index()] += 1;
        self.widen_int_range(v, v);
    }

    pub fn widen_int_range(&mut self, lo: i128, hi: i128) {
        self.int_range = Some(match self.int_range {
            None => (lo, hi),
            Some((a, b)) => (a.min(lo), b.max(hi)),
        });
    }

    /// Non-zero counts in kind order.
    pub fn iter(&self) -> impl Iterator<Item = (Kind, u64)> + '_ {
        Kind::ALL.iter().map(|&k| (k, self.get(k))).filter(|&(_, n)| n > 0)
    }

    pub fn non_null(&self) -> u64 {
        self.iter().filter(|(k, _)| *k != Kind::Null).map(|(_, n)| n).sum()
    }

    pub fn merge(&mut self, other: &KindCounts) {
        for (a, b) in self.counts.iter_mut().zip(other.counts.iter()) {
            *a += b;
        }
        if let Some((lo, hi)) = other.int_range {
            self.widen_int_range(lo, hi);
        }
        self.forms.merge(&other.forms);
    }

    pub fn unified(&self) -> Unified {
        let kinds: Vec<Kind> = self.iter().map(|(k, _)| k).filter(|&k| k != Kind::Null).collect();
        match kinds.as_slice() {
            [] => Unified::Nothing,
            [one] => Unified::One(*one),
            many if many.iter().all(|k| k.is_numeric()) => {
                Unified::One(if many.contains(&Kind::Float) { Kind::Float } else { Kind::Decimal })
            }
            _ => Unified::Mixed,
        }
    }

    /// The most frequent non-null kind (ties go to the earlier kind).
    pub fn majority(&self) -> Option<Kind> {
        let mut best: Option<(Kind, u64)> = None;
        for (k, n) in self.iter().filter(|(k, _)| *k != Kind::Null) {
            if best.is_none_or(|(_, m)| n > m) {
                best = Some((k, n));
            }
        }
        best.map(|(k, _)| k)
    }

    /// True when float and decimal met: the unified float cannot hold every
    /// decimal exactly.
    pub fn is_lossy(&self) -> bool {
        self.get(Kind::Float) > 0 && self.get(Kind::Decimal) > 0
    }
}

/// The smallest integer type holding every value in `lo..=hi`.
pub fn fitting_int(lo: i128, hi: i128) -> &'static str {
    if lo >= 0 {
        match hi {
            h if h <= u8::MAX as i128 => "uint8",
            h if h <= u16::MAX as i128 => "uint16",
            h if h <= u32::MAX as i128 => "uint32",
            h if h <= u64::MAX as i128 => "uint64",
            _ => "wider than 64 bits",
        }
    } else {
        let fits = |min: i128, max: i128| lo >= min && hi <= max;
        if fits(i8::MIN as i128, i8::MAX as i128) {
            "int8"
        } else if fits(i16::MIN as i128, i16::MAX as i128) {
            "int16"
        } else if fits(i32::MIN as i128, i32::MAX as i128) {
            "int32"
        } else if fits(i64::MIN as i128, i64::MAX as i128) {
            "int64"
        } else {
            "wider than 64 bits"
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn counts(kinds: &[(Kind, u64)]) -> KindCounts {
        let mut c = KindCounts::default();
        for &(k, n) in kinds {
            c.add(k, n);
        }
        c
    }

    #[test]
    fn numbers_unify_and_other_kinds_mix() {
        assert_eq!(counts(&[(Kind::Int, 3), (Kind::Float, 1)]).unified(), Unified::One(Kind::Float));
        assert_eq!(counts(&[(Kind::Int, 3), (Kind::Decimal, 1)]).unified(), Unified::One(Kind::Decimal));
        assert_eq!(counts(&[(Kind::Int, 3), (Kind::Null, 9)]).unified(), Unified::One(Kind::Int));
        assert_eq!(counts(&[(Kind::Int, 3), (Kind::String, 1)]).unified(), Unified::Mixed);
        assert_eq!(counts(&[(Kind::Null, 2)]).unified(), Unified::Nothing);
        assert!(counts(&[(Kind::Float, 1), (Kind::Decimal, 1)]).is_lossy());
    }

    #[test]
    fn majority_is_the_largest_non_null_kind() {
        let c = counts(&[(Kind::Null, 100), (Kind::Int, 3), (Kind::String, 5)]);
        assert_eq!(c.majority(), Some(Kind::String));
    }

    #[test]
    fn fitting_int_picks_the_smallest_width() {
        assert_eq!(fitting_int(0, 255), "uint8");
        assert_eq!(fitting_int(0, 256), "uint16");
        assert_eq!(fitting_int(-1, 127), "int8");
        assert_eq!(fitting_int(-129, 0), "int16");
        assert_eq!(fitting_int(i64::MIN as i128, 0), "int64");
        assert_eq!(fitting_int(0, u64::MAX as i128), "uint64");
        assert_eq!(fitting_int(-1, u64::MAX as i128), "wider than 64 bits");
    }
}
