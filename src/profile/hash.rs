//! Hashes of scalar values for distinct counts: XXH3 (64-bit), tagged by
//! kind so a string "1" and the number 1 stay apart, while an int and a
//! float of equal value count once.

use xxhash_rust::xxh3::{xxh3_64, xxh3_64_with_seed};

const NUMBER: u64 = 1;
const STRING: u64 = 2;
const BOOL: u64 = 3;
const OTHER: u64 = 4;
const DECIMAL: u64 = 5;

/// An integer, hashed by value (by its 8 bytes when it fits 64 bits, which
/// XXH3 hashes several times faster than 16).
pub fn int(v: i128) -> u64 {
    integer(v, NUMBER)
}

/// A float: integral values hash as the integer; -0.0 as 0.
pub fn float(v: f64) -> u64 {
    // Below 1e18 the cast to i64 is exact for whole numbers (and avoids
    // `f64::fract`, a library call on the baseline x86-64 target).
    let whole = v as i64;
    if v.abs() < 1e18 && whole as f64 == v {
        return int(whole.into());
    }
    xxh3_64_with_seed(&v.to_bits().to_le_bytes(), NUMBER)
}

/// A decimal's raw integer (the value times 10^scale), hashed as [`int`]
/// hashes an integer, under its own tag.
pub fn decimal(raw: i128) -> u64 {
    integer(raw, DECIMAL)
}

/// An integer by its 8 bytes when it fits 64 bits, else by its 16.
fn integer(v: i128, tag: u64) -> u64 {
    match i64::try_from(v) {
        Ok(narrow) => xxh3_64_with_seed(&narrow.to_le_bytes(), tag),
        Err(_) => xxh3_64_with_seed(&v.to_le_bytes(), tag),
    }
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
        assert_eq!(float(-3.0), int(-3));
        assert_eq!(float(1e17), int(100_000_000_000_000_000));
        assert_ne!(float(0.5), float(-0.5));
        // Past 64 bits the 16-byte form is hashed; both forms stay apart.
        assert_ne!(int(i64::MAX as i128 + 1), int(i64::MAX as i128));
        // Decimals by their raw integers, apart from other raw values.
        assert_ne!(decimal(123), other(&123i64.to_le_bytes()));
        assert_ne!(decimal(123), int(123));
        assert_ne!(decimal(i64::MAX as i128 + 1), decimal(i64::MAX as i128));
    }
}
