//! Rows whose field names and nesting break naive code generators:
//! reserved words of every target, spaces, dots, leading digits, unicode,
//! names differing only in case, 30-deep nesting and 500 fields. Written
//! as JSON Lines for the type proofs.

#![allow(dead_code)] // each proof uses its own subset

use std::fmt::Write as _;

/// Reserved words from the targets' published lists (Rust Reference,
/// Python `keyword.kwlist`, ECMAScript reserved words, Scala keywords).
pub const RESERVED: [&str; 24] = [
    "type", "self", "Self", "crate", "super", "fn", "match", "class", "def", "None", "True", "lambda", "from", "import",
    "yield", "async", "await", "function", "var", "new", "object", "val", "implicit", "enum",
];

pub const ODD: [&str; 12] = [
    "zip code", "a.b", "3d", "ünïcode", "日本語", "Name", "name", "NAME", "__dunder", "with-dash", "", "$ref",
];

/// `rows` JSON objects with every awkward name, a 30-deep nested object,
/// 500 numbered fields, and some nulls and missing keys.
pub fn nasty_jsonl(rows: usize) -> String {
    let mut out = String::new();
    for r in 0..rows {
        let mut members: Vec<String> = Vec::new();
        for (i, name) in RESERVED.iter().chain(ODD.iter()).enumerate() {
            let value = match (r + i) % 4 {
                0 if r > 0 => "null".to_string(),
                1 => format!("\"text {r}\""),
                _ => format!("\"{name} {i}\""),
            };
            if r % 5 != 1 || i % 3 != 0 {
                members.push(format!("{}:{value}", json_string(name)));
            }
        }
        let mut deep = format!("{{\"leaf\":{r}}}");
        for level in (0..30).rev() {
            deep = format!("{{\"level{level}\":{deep},\"n\":{level}}}");
        }
        members.push(format!("\"deep\":{deep}"));
        for f in 0..500 {
            members.push(format!("\"f{f}\":{}", r * 500 + f));
        }
        let _ = writeln!(out, "{{{}}}", members.join(","));
    }
    out
}

fn json_string(s: &str) -> String {
    serde_json::to_string(s).unwrap()
}
