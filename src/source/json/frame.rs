//! Cutting a JSON stream into records without holding the whole file:
//! one record per line (JSON Lines), or one per element of a top-level
//! array. Each record comes with where it starts, so a syntax error inside
//! it can be placed exactly in the file.

use std::io::{self, BufRead};

use crate::source::limits::MAX_RECORD_BYTES;

use super::parse::is_json_ws;

/// Where a record starts in the (decompressed) stream.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Start {
    pub byte: u64,
    pub line: u64,
    pub column: u64,
}

#[derive(Debug)]
pub enum FrameError {
    Io(io::Error, Start),
    /// The structure around the records is wrong (at `Start`).
    Syntax(String, Start),
    /// A record longer than [`MAX_RECORD_BYTES`] starting at `Start`.
    TooLong(Start),
}

/// Tracks byte offset, line and column while bytes are consumed.
#[derive(Debug, Clone, Copy)]
struct Cursor {
    byte: u64,
    line: u64,
    line_start: u64,
}

impl Cursor {
    fn new() -> Self {
        Cursor { byte: 0, line: 1, line_start: 0 }
    }
    fn start(&self) -> Start {
        Start { byte: self.byte, line: self.line, column: self.byte - self.line_start + 1 }
    }
    fn advance(&mut self, b: u8) {
        self.byte += 1;
        if b == b'\n' {
            self.line += 1;
            self.line_start = self.byte;
        }
    }
}

/// The reader's buffered bytes, retrying a read that was interrupted.
fn fill<R: BufRead>(reader: &mut R) -> io::Result<&[u8]> {
    loop {
        match reader.fill_buf() {
            Ok(_) => break,
            Err(e) if e.kind() == io::ErrorKind::Interrupted => continue,
            Err(e) => return Err(e),
        }
    }
    reader.fill_buf()
}

/// One record per line; blank lines are skipped, `\r\n` is accepted.
pub struct LineFramer<R> {
    reader: R,
    cursor: Cursor,
}

impl<R: BufRead> LineFramer<R> {
    pub fn new(reader: R) -> Self {
        LineFramer { reader, cursor: Cursor::new() }
    }

    /// A framer over a stream that begins `byte` bytes into the file, at a
    /// line start; lines count from 1 there (the chunk places them later).
    pub fn starting_at(reader: R, byte: u64) -> Self {
        LineFramer { reader, cursor: Cursor { byte, line: 1, line_start: byte } }
    }

    /// Fills `buf` with the next non-blank line (without its line ending).
    pub fn next_record(&mut self, buf: &mut Vec<u8>) -> Result<Option<Start>, FrameError> {
        buf.clear();
        self.append_record(buf)
    }

    /// Appends the next non-blank line (without its line ending) to `buf`,
    /// so a batch of lines can share one buffer.
    pub fn append_record(&mut self, buf: &mut Vec<u8>) -> Result<Option<Start>, FrameError> {
        let base = buf.len();
        loop {
            buf.truncate(base);
            let mut start = self.cursor.start();
            let mut saw_newline = false;
            loop {
                let at = self.cursor.start();
                let chunk = fill(&mut self.reader).map_err(|e| FrameError::Io(e, at))?;
                if chunk.is_empty() {
                    break;
                }
                let (take, done) = match chunk.iter().position(|&b| b == b'\n') {
                    Some(i) => (i + 1, true),
                    None => (chunk.len(), false),
                };
                if buf.len() - base + take > MAX_RECORD_BYTES + 2 {
                    return Err(FrameError::TooLong(start));
                }
                buf.extend_from_slice(&chunk[..take]);
                self.reader.consume(take);
                if done {
                    saw_newline = true;
                    break;
                }
            }
            if buf.len() == base {
                return Ok(None);
            }
            self.cursor.byte += (buf.len() - base) as u64;
            if saw_newline {
                self.cursor.line += 1;
                self.cursor.line_start = self.cursor.byte;
                buf.pop();
            }
            if buf.len() > base && buf.last() == Some(&b'\r') {
                buf.pop();
            }
            if start.byte == 0 && buf[base..].starts_with(&[0xEF, 0xBB, 0xBF]) {
                buf.drain(base..base + 3);
                start.byte += 3;
                start.column += 3;
            }
            if buf.len() - base > MAX_RECORD_BYTES {
                return Err(FrameError::TooLong(start));
            }
            if buf[base..].iter().all(|&b| is_json_ws(b)) {
                continue;
            }
            return Ok(Some(start));
        }
    }
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum ArrayState {
    BeforeOpen,
    FirstElement,
    NextElement,
    Closed,
}

/// The elements of one top-level JSON array, one at a time.
pub struct ArrayFramer<R> {
    reader: R,
    cursor: Cursor,
    state: ArrayState,
}

impl<R: BufRead> ArrayFramer<R> {
    pub fn new(reader: R) -> Self {
        ArrayFramer { reader, cursor: Cursor::new(), state: ArrayState::BeforeOpen }
    }

    fn peek(&mut self) -> Result<Option<u8>, FrameError> {
        let at = self.cursor.start();
        Ok(fill(&mut self.reader).map_err(|e| FrameError::Io(e, at))?.first().copied())
    }

    fn bump(&mut self) {
        if let Ok(c) = self.reader.fill_buf()
            && let Some(&b) = c.first()
        {
            self.cursor.advance(b);
            self.reader.consume(1);
        }
    }

    fn skip_ws(&mut self) -> Result<(), FrameError> {
        while let Some(b) = self.peek()? {
            if !is_json_ws(b) {
                break;
            }
            self.bump();
        }
        Ok(())
    }

    /// Fills `buf` with the next element's bytes; `None` after the closing `]`.
    pub fn next_record(&mut self, buf: &mut Vec<u8>) -> Result<Option<Start>, FrameError> {
        buf.clear();
        self.append_record(buf)
    }

    /// Appends the next element's bytes to `buf`; `None` after the closing `]`.
    pub fn append_record(&mut self, buf: &mut Vec<u8>) -> Result<Option<Start>, FrameError> {
        let base = buf.len();
        match self.state {
            ArrayState::Closed => return Ok(None),
            ArrayState::BeforeOpen => {
                self.skip_bom()?;
                self.skip_ws()?;
                if self.peek()? != Some(b'[') {
                    return Err(FrameError::Syntax(
                        "expected '[' to open the top-level array".into(),
                        self.cursor.start(),
                    ));
                }
                self.bump();
                self.skip_ws()?;
                if self.peek()? == Some(b']') {
                    self.bump();
                    return self.close();
                }
                self.state = ArrayState::FirstElement;
            }
            ArrayState::FirstElement | ArrayState::NextElement => {}
        }
        self.skip_ws()?;
        let start = self.cursor.start();
        let mut depth = 0usize;
        let mut in_string = false;
        let mut escaped = false;
        loop {
            let at = self.cursor.start();
            let chunk = fill(&mut self.reader).map_err(|e| FrameError::Io(e, at))?;
            if chunk.is_empty() {
                return Err(FrameError::Syntax(
                    "the top-level array is not closed (end of input inside it)".into(),
                    self.cursor.start(),
                ));
            }
            let mut end = None;
            let mut used = 0;
            for &b in chunk {
                if in_string {
                    match (escaped, b) {
                        (true, _) => escaped = false,
                        (false, b'\\') => escaped = true,
                        (false, b'"') => in_string = false,
                        _ => {}
                    }
                } else {
                    match b {
                        b'"' => in_string = true,
                        b'{' | b'[' => depth += 1,
                        b'}' | b']' if depth > 0 => depth -= 1,
                        b',' | b']' if depth == 0 => {
                            end = Some(b);
                            break;
                        }
                        _ => {}
                    }
                }
                used += 1;
            }
            if buf.len() - base + used > MAX_RECORD_BYTES {
                return Err(FrameError::TooLong(start));
            }
            buf.extend_from_slice(&chunk[..used]);
            for &b in &chunk[..used] {
                self.cursor.advance(b);
            }
            self.reader.consume(used);
            if let Some(delim) = end {
                self.bump();
                if delim == b']' {
                    self.state = ArrayState::Closed;
                    self.check_trailing()?;
                } else {
                    self.state = ArrayState::NextElement;
                }
                return Ok(Some(start));
            }
        }
    }

    fn skip_bom(&mut self) -> Result<(), FrameError> {
        let has_bom = matches!(self.reader.fill_buf(), Ok(c) if c.starts_with(&[0xEF, 0xBB, 0xBF]));
        if has_bom {
            self.reader.consume(3);
            self.cursor.byte += 3;
            self.cursor.line_start += 3;
        }
        Ok(())
    }

    fn close(&mut self) -> Result<Option<Start>, FrameError> {
        self.state = ArrayState::Closed;
        self.check_trailing()?;
        Ok(None)
    }

    fn check_trailing(&mut self) -> Result<(), FrameError> {
        self.skip_ws()?;
        match self.peek()? {
            None => Ok(()),
            Some(_) => {
                Err(FrameError::Syntax("unexpected characters after the top-level array".into(), self.cursor.start()))
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn lines(text: &str) -> Vec<(String, Start)> {
        let mut f = LineFramer::new(text.as_bytes());
        let mut out = Vec::new();
        let mut buf = Vec::new();
        while let Some(s) = f.next_record(&mut buf).unwrap() {
            out.push((String::from_utf8(buf.clone()).unwrap(), s));
        }
        out
    }

    fn elements(text: &str) -> Result<Vec<(String, Start)>, FrameError> {
        let mut f = ArrayFramer::new(text.as_bytes());
        let mut out = Vec::new();
        let mut buf = Vec::new();
        while let Some(s) = f.next_record(&mut buf)? {
            out.push((String::from_utf8(buf.clone()).unwrap(), s));
        }
        Ok(out)
    }

    #[test]
    fn lines_skip_blanks_and_know_their_line_numbers() {
        let got = lines("{\"a\":1}\r\n\n  \n{\"a\":2}");
        assert_eq!(got.len(), 2);
        assert_eq!(got[0].0, "{\"a\":1}");
        assert_eq!(got[1].0, "{\"a\":2}");
        assert_eq!(got[1].1, Start { byte: 13, line: 4, column: 1 });
    }

    #[test]
    fn array_elements_are_cut_at_top_level_commas_only() {
        let got = elements("[ {\"a\":\"x,]\"},\n [1,2] , 3 ]").unwrap();
        let texts: Vec<&str> = got.iter().map(|(t, _)| t.trim()).collect();
        assert_eq!(texts, vec!["{\"a\":\"x,]\"}", "[1,2]", "3"]);
        assert_eq!(got[1].1.line, 2);
        assert_eq!(got[1].1.column, 2);
        assert!(elements("[]").unwrap().is_empty());
    }

    #[test]
    fn an_overlong_line_or_element_hits_the_limit() {
        use std::io::Read;
        let long = io::repeat(b'x').take(MAX_RECORD_BYTES as u64 + 10);
        let mut buf = Vec::new();
        let mut lines = LineFramer::new(io::BufReader::new(long));
        assert!(matches!(lines.next_record(&mut buf), Err(FrameError::TooLong(Start { line: 1, .. }))));
        let long = io::Cursor::new(b"[\"".to_vec()).chain(io::repeat(b'y').take(MAX_RECORD_BYTES as u64 + 10));
        let mut array = ArrayFramer::new(io::BufReader::new(long));
        assert!(matches!(array.next_record(&mut buf), Err(FrameError::TooLong(_))));
    }

    #[test]
    fn broken_arrays_are_reported_with_a_position() {
        match elements("[1, 2") {
            Err(FrameError::Syntax(msg, at)) => {
                assert!(msg.contains("not closed"));
                assert_eq!(at.byte, 5);
            }
            other => panic!("{other:?}"),
        }
        assert!(matches!(elements("[1] x"), Err(FrameError::Syntax(_, Start { byte: 4, .. }))));
        assert!(matches!(elements("{}"), Err(FrameError::Syntax(_, _))));
    }
}
