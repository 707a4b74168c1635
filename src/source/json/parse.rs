//! A strict RFC 8259 parser for one JSON value held in a byte slice.
//!
//! Written here rather than taken from a general crate because profiling needs
//! what most parsers throw away: integers wider than 64 bits as their digits,
//! an exact byte offset for every error, and a nesting limit that turns a
//! hostile file into a clear message instead of a stack overflow.
//!
//! Decisions on inputs RFC 8259 leaves open (JSONTestSuite's `i_*` cases):
//! a lone UTF-16 surrogate in a `\u` escape becomes U+FFFD; invalid UTF-8
//! inside a string is rejected; a duplicate key keeps the last value;
//! numbers too large for f64 become ±infinity.

use crate::source::limits::MAX_NESTING_DEPTH;
use crate::value::Value;

/// A syntax error at a byte offset within the parsed slice.
#[derive(Debug, Clone, PartialEq)]
pub struct SyntaxError {
    pub offset: usize,
    pub message: String,
}

type Result<T> = std::result::Result<T, SyntaxError>;

/// Parses exactly one JSON value from `bytes`, allowing surrounding whitespace.
pub fn parse_value(bytes: &[u8]) -> Result<Value> {
    // Valid UTF-8 throughout (nearly every record) is checked once here, so
    // strings are sliced from it unchecked; otherwise each string's run is
    // checked, which places the error.
    let text = std::str::from_utf8(bytes).ok();
    let mut p = Parser { bytes, text, pos: 0 };
    p.skip_ws();
    if p.pos == bytes.len() {
        return Err(p.error("expected a JSON value, found end of input"));
    }
    let value = p.value(0)?;
    p.skip_ws();
    if p.pos != bytes.len() {
        return Err(p.error("unexpected characters after the JSON value"));
    }
    Ok(value)
}

/// True for the bytes RFC 8259 counts as insignificant whitespace.
pub fn is_json_ws(b: u8) -> bool {
    matches!(b, b' ' | b'\t' | b'\n' | b'\r')
}

struct Parser<'a> {
    bytes: &'a [u8],
    /// `bytes` as text, when they are valid UTF-8.
    text: Option<&'a str>,
    pos: usize,
}

impl<'a> Parser<'a> {
    fn error(&self, message: impl Into<String>) -> SyntaxError {
        SyntaxError { offset: self.pos, message: message.into() }
    }

    fn error_at(&self, offset: usize, message: impl Into<String>) -> SyntaxError {
        SyntaxError { offset, message: message.into() }
    }

    fn peek(&self) -> Option<u8> {
        self.bytes.get(self.pos).copied()
    }

    fn skip_ws(&mut self) {
        while let Some(&b) = self.bytes.get(self.pos) {
            if !is_json_ws(b) {
                break;
            }
            self.pos += 1;
        }
    }

    fn found(&self) -> String {
        match self.peek() {
            None => "end of input".to_string(),
            Some(b) if b.is_ascii_graphic() => format!("'{}'", b as char),
            Some(b) => format!("byte 0x{b:02x}"),
        }
    }

    fn value(&mut self, depth: usize) -> Result<Value> {
        match self.peek() {
            Some(b'{') => self.object(depth + 1),
            Some(b'[') => self.array(depth + 1),
            Some(b'"') => Ok(Value::Str(self.string()?)),
            Some(b't') => self.literal(b"true", Value::Bool(true)),
            Some(b'f') => self.literal(b"false", Value::Bool(false)),
            Some(b'n') => self.literal(b"null", Value::Null),
            Some(b'-' | b'0'..=b'9') => self.number(),
            _ => Err(self.error(format!("expected a JSON value, found {}", self.found()))),
        }
    }

    fn check_depth(&self, depth: usize) -> Result<()> {
        if depth > MAX_NESTING_DEPTH {
            return Err(self.error(format!(
                "nesting deeper than {MAX_NESTING_DEPTH} levels (limit against hostile files)"
            )));
        }
        Ok(())
    }

    fn literal(&mut self, word: &[u8], value: Value) -> Result<Value> {
        if self.bytes[self.pos..].starts_with(word) {
            self.pos += word.len();
            Ok(value)
        } else {
            Err(self.error(format!("expected '{}'", String::from_utf8_lossy(word))))
        }
    }

    fn array(&mut self, depth: usize) -> Result<Value> {
        self.check_depth(depth)?;
        self.pos += 1; // '['
        let mut items = Vec::new();
        self.skip_ws();
        if self.peek() == Some(b']') {
            self.pos += 1;
            return Ok(Value::Array(items));
        }
        loop {
            self.skip_ws();
            items.push(self.value(depth)?);
            self.skip_ws();
            match self.peek() {
                Some(b',') => self.pos += 1,
                Some(b']') => {
                    self.pos += 1;
                    return Ok(Value::Array(items));
                }
                _ => {
                    return Err(self.error(format!(
                        "expected ',' or ']' in array, found {}",
                        self.found()
                    )));
                }
            }
        }
    }

    fn object(&mut self, depth: usize) -> Result<Value> {
        self.check_depth(depth)?;
        self.pos += 1; // '{'
        let mut members: Vec<(String, Value)> = Vec::new();
        self.skip_ws();
        if self.peek() == Some(b'}') {
            self.pos += 1;
            return Ok(Value::Object(members));
        }
        loop {
            self.skip_ws();
            if self.peek() != Some(b'"') {
                return Err(self.error(format!(
                    "expected a string key in object, found {}",
                    self.found()
                )));
            }
            let key = self.string()?;
            self.skip_ws();
            if self.peek() != Some(b':') {
                return Err(self.error(format!("expected ':' after key, found {}", self.found())));
            }
            self.pos += 1;
            self.skip_ws();
            let value = self.value(depth)?;
            insert_last_wins(&mut members, key, value);
            self.skip_ws();
            match self.peek() {
                Some(b',') => self.pos += 1,
                Some(b'}') => {
                    self.pos += 1;
                    return Ok(Value::Object(members));
                }
                _ => {
                    return Err(self.error(format!(
                        "expected ',' or '}}' in object, found {}",
                        self.found()
                    )));
                }
            }
        }
    }

    fn number(&mut self) -> Result<Value> {
        let start = self.pos;
        let b = self.bytes;
        if b[self.pos] == b'-' {
            self.pos += 1;
        }
        match self.peek() {
            Some(b'0') => {
                self.pos += 1;
                if matches!(self.peek(), Some(b'0'..=b'9')) {
                    return Err(self.error("leading zeros are not allowed in JSON numbers"));
                }
            }
            Some(b'1'..=b'9') => self.skip_digits(),
            _ => return Err(self.error(format!("expected a digit, found {}", self.found()))),
        }
        let mut integral = true;
        if self.peek() == Some(b'.') {
            integral = false;
            self.pos += 1;
            if !matches!(self.peek(), Some(b'0'..=b'9')) {
                return Err(self.error("expected a digit after the decimal point"));
            }
            self.skip_digits();
        }
        if matches!(self.peek(), Some(b'e' | b'E')) {
            integral = false;
            self.pos += 1;
            if matches!(self.peek(), Some(b'+' | b'-')) {
                self.pos += 1;
            }
            if !matches!(self.peek(), Some(b'0'..=b'9')) {
                return Err(self.error("expected a digit in the exponent"));
            }
            self.skip_digits();
        }
        // The grammar above admits only ASCII, so this cannot fail.
        let text = match self.text.and_then(|t| t.get(start..self.pos)) {
            Some(text) => text,
            None => std::str::from_utf8(&b[start..self.pos]).expect("number text is ASCII"),
        };
        if integral {
            if let Ok(i) = text.parse::<i64>() {
                return Ok(Value::Int(i));
            }
            if let Ok(u) = text.parse::<u64>() {
                return Ok(Value::UInt(u));
            }
            return Ok(Value::BigInt(text.into()));
        }
        text.parse::<f64>()
            .map(Value::Float)
            .map_err(|_| self.error_at(start, "malformed number"))
    }

    fn skip_digits(&mut self) {
        while matches!(self.peek(), Some(b'0'..=b'9')) {
            self.pos += 1;
        }
    }

    fn string(&mut self) -> Result<String> {
        let open = self.pos;
        self.pos += 1; // opening quote
        let mut out = String::new();
        loop {
            let run_start = self.pos;
            // Jump to the next quote or backslash, then check the run for
            // control characters (both loops are vectorised).
            let rest = &self.bytes[run_start..];
            let stop = memchr::memchr2(b'"', b'\\', rest).unwrap_or(rest.len());
            let stop = rest[..stop].iter().position(|&b| b < 0x20).unwrap_or(stop);
            self.pos = run_start + stop;
            // A run starts and ends at ASCII bytes (quotes, backslashes,
            // escapes), so slicing the checked text there cannot fail.
            let text = match self.text.and_then(|t| t.get(run_start..self.pos)) {
                Some(s) => s,
                None => match std::str::from_utf8(&self.bytes[run_start..self.pos]) {
                    Ok(s) => s,
                    Err(e) => {
                        return Err(self.error_at(run_start + e.valid_up_to(), "invalid UTF-8 in string"));
                    }
                },
            };
            // Most strings are one run: take it at its exact size.
            if out.is_empty() && self.peek() == Some(b'"') {
                self.pos += 1;
                return Ok(text.to_owned());
            }
            out.push_str(text);
            match self.peek() {
                Some(b'"') => {
                    self.pos += 1;
                    return Ok(out);
                }
                Some(b'\\') => self.escape(&mut out)?,
                Some(b) => {
                    return Err(self.error(format!(
                        "unescaped control character 0x{b:02x} in string"
                    )));
                }
                None => return Err(self.error_at(open, "string is not closed")),
            }
        }
    }

    fn escape(&mut self, out: &mut String) -> Result<()> {
        self.pos += 1; // backslash
        let c = match self.peek() {
            Some(b'"') => '"',
            Some(b'\\') => '\\',
            Some(b'/') => '/',
            Some(b'b') => '\u{8}',
            Some(b'f') => '\u{c}',
            Some(b'n') => '\n',
            Some(b'r') => '\r',
            Some(b't') => '\t',
            Some(b'u') => {
                self.pos += 1;
                let unit = self.hex4()?;
                out.push(self.finish_utf16(unit)?);
                return Ok(());
            }
            _ => return Err(self.error(format!("invalid escape, found {}", self.found()))),
        };
        self.pos += 1;
        out.push(c);
        Ok(())
    }

    /// Joins a high surrogate with a following `\uDC00..DFFF` escape; a lone
    /// surrogate becomes U+FFFD (documented above).
    fn finish_utf16(&mut self, unit: u16) -> Result<char> {
        if (0xD800..0xDC00).contains(&unit) {
            let rest = &self.bytes[self.pos..];
            if rest.len() >= 6 && rest[0] == b'\\' && rest[1] == b'u' {
                let save = self.pos;
                self.pos += 2;
                let low = self.hex4()?;
                if (0xDC00..0xE000).contains(&low) {
                    let code = 0x10000 + (((unit as u32) - 0xD800) << 10) + ((low as u32) - 0xDC00);
                    return Ok(char::from_u32(code).unwrap_or('\u{FFFD}'));
                }
                self.pos = save;
            }
            return Ok('\u{FFFD}');
        }
        Ok(char::from_u32(unit as u32).unwrap_or('\u{FFFD}'))
    }

    fn hex4(&mut self) -> Result<u16> {
        let mut v: u16 = 0;
        for _ in 0..4 {
            let d = match self.peek() {
                Some(b @ b'0'..=b'9') => b - b'0',
                Some(b @ b'a'..=b'f') => b - b'a' + 10,
                Some(b @ b'A'..=b'F') => b - b'A' + 10,
                _ => return Err(self.error(format!("expected a hex digit, found {}", self.found()))),
            };
            v = (v << 4) | d as u16;
            self.pos += 1;
        }
        Ok(v)
    }
}

/// Adds a member, replacing an earlier one of the same key (last wins).
fn insert_last_wins(members: &mut Vec<(String, Value)>, key: String, value: Value) {
    if let Some(slot) = members.iter_mut().find(|(k, _)| *k == key) {
        slot.1 = value;
    } else {
        members.push((key, value));
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn ok(s: &str) -> Value {
        parse_value(s.as_bytes()).unwrap_or_else(|e| panic!("{s}: {e:?}"))
    }

    fn err(s: &str) -> SyntaxError {
        parse_value(s.as_bytes()).expect_err(s)
    }

    #[test]
    fn integers_keep_their_width() {
        assert_eq!(ok("-9223372036854775808"), Value::Int(i64::MIN));
        assert_eq!(ok("18446744073709551615"), Value::UInt(u64::MAX));
        assert_eq!(ok("18446744073709551616"), Value::BigInt("18446744073709551616".into()));
        assert_eq!(ok("1.5e2"), Value::Float(150.0));
        assert_eq!(ok("1e400"), Value::Float(f64::INFINITY));
    }

    #[test]
    fn strings_decode_escapes_and_surrogates() {
        assert_eq!(ok(r#""a\nb\u00e9\ud83d\ude00""#), Value::Str("a\nb\u{e9}\u{1F600}".into()));
        assert_eq!(ok(r#""\ud800x""#), Value::Str("\u{FFFD}x".into()));
    }

    #[test]
    fn duplicate_keys_keep_the_last_value() {
        assert_eq!(
            ok(r#"{"a":1,"b":2,"a":3}"#),
            Value::Object(vec![("a".into(), Value::Int(3)), ("b".into(), Value::Int(2))])
        );
    }

    #[test]
    fn errors_carry_the_offset() {
        assert_eq!(err("[1,]").offset, 3);
        assert_eq!(err("{\"a\" 1}").offset, 5);
        assert_eq!(err("012").offset, 1);
        assert_eq!(err("[1] x").offset, 4);
        assert!(err("\"abc").message.contains("not closed"));
    }

    #[test]
    fn deep_nesting_is_refused_with_a_message() {
        let deep = "[".repeat(MAX_NESTING_DEPTH + 1);
        let e = err(&deep);
        assert!(e.message.contains("nesting deeper"), "{e:?}");
        let fine = format!("{}{}", "[".repeat(MAX_NESTING_DEPTH), "]".repeat(MAX_NESTING_DEPTH));
        ok(&fine);
    }
}
