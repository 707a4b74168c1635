//! Hashes of scalar values for distinct counts: XXH3 (64-bit), tagged by
//! kind so a string "1" and the number 1 stay apart, while an int and a
//! float of equal value count once.

use xxhash_rust::xxh3::{xxh3_64, xxh3_64_with_seed};

const NUMBER: u64 = 1;
const STRING: u64 = 2;
const BOOL: u64 = 3;
const OTHER: u64 = 4;

/// An integer, hashed by value.
pub fn int(v: i128) -> u64 {
    xxh3_64_with_seed(&v.to_le_bytes(), NUMBER)
}

/// A float: integral values hash as the integer; -0.0 as 0.
pub fn float(v: f64) -> u64 {
    if v.fract() == 0.0 && v.abs() < 1e18 {
        return int(v as i128);
    }
    xxh3_64_with_seed(&v.to_bits().to_le_bytes(), NUMBER)
}

pub fn string(s: &str) -> u64 {
    xxh3_64_with_seed(s.as_bytes(), STRING)
}

pub fn bool(b: bool) -> u64 {
    xxh3_64_with_seed(&[b as u8], BOOL)
}

/// Raw bytes of any other kind (binary, temporal and decimal raw values).
pub fn other(bytes: &[u8]) -> u64 {
    xxh3_64_with_seed(bytes, OTHER)
}

/// Plain bytes, untagged.
pub fn bytes(b: &[u8]) -> u64 {
    xxh3_64(b)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn equal_numbers_hash_alike_and_kinds_stay_apart() {
        assert_eq!(int(1), float(1.0));
        assert_eq!(float(0.0), float(-0.0));
        assert_ne!(float(1.5), float(2.5));
        assert_ne!(int(1), string("1"));
        assert_ne!(bool(true), int(1));
    }
}
