//! Limits that keep a hostile file from exhausting memory or stack.
//!
//! Each limit is reported by name when hit, so a user knows what stopped the
//! read. The values are our own choices, sized well above real data.

/// Deepest nesting of arrays/objects accepted in JSON (each level costs stack).
pub const MAX_NESTING_DEPTH: usize = 256;

/// Longest JSON line, JSON array element or CSV record, in bytes.
pub const MAX_RECORD_BYTES: usize = 64 * 1024 * 1024;

/// A compressed stream may grow at most this many times its compressed size...
pub const MAX_DECOMPRESSION_RATIO: u64 = 1000;

/// ...once it has produced this many bytes (small files may legitimately
/// compress very well, so the ratio is only checked beyond this).
pub const RATIO_CHECK_AFTER_BYTES: u64 = 64 * 1024 * 1024;
