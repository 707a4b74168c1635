//! Format detection: by content first (magic bytes, then the shape of the
//! text), by file extension only where the content cannot decide.

use std::fs::File;
use std::io::Read;
use std::path::Path;

use super::decompress::{Compression, open_decompressed};
use super::error::SourceError;
use super::json::parse::is_json_ws;

#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Format {
    Parquet,
    ArrowFile,
    ArrowStream,
    Json,
    JsonLines,
    Csv,
    Tsv,
}

impl Format {
    /// The name used in reports and on the command line's output.
    pub fn label(self) -> &'static str {
        match self {
            Format::Parquet => "Parquet",
            Format::ArrowFile => "Arrow IPC file",
            Format::ArrowStream => "Arrow IPC stream",
            Format::Json => "JSON",
            Format::JsonLines => "JSON Lines",
            Format::Csv => "CSV",
            Format::Tsv => "TSV",
        }
    }

    /// The format a report names by its [`Self::label`].
    pub fn from_label(label: &str) -> Option<Format> {
        [Format::Parquet, Format::ArrowFile, Format::ArrowStream, Format::Json, Format::JsonLines, Format::Csv, Format::Tsv]
            .into_iter()
            .find(|f| f.label() == label)
    }

    pub fn is_text(self) -> bool {
        matches!(self, Format::Json | Format::JsonLines | Format::Csv | Format::Tsv)
    }
}

/// What the user may force with `--format`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum FormatChoice {
    Parquet,
    /// Arrow IPC, file or stream (told apart by the file's first bytes).
    Ipc,
    Json,
    Jsonl,
    Csv,
    Tsv,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Detected {
    pub format: Format,
    pub compression: Compression,
}

const PARQUET_MAGIC: &[u8] = b"PAR1";
/// Parquet with an encrypted footer (Parquet modular encryption spec).
const PARQUET_ENCRYPTED_MAGIC: &[u8] = b"PARE";
const ARROW_FILE_MAGIC: &[u8] = b"ARROW1";
const GZIP_MAGIC: &[u8] = &[0x1f, 0x8b];
const ZSTD_MAGIC: &[u8] = &[0x28, 0xb5, 0x2f, 0xfd];
/// How much (decompressed) text is looked at to tell JSON, JSON Lines and CSV apart.
const SNIFF_BYTES: usize = 64 * 1024;

/// Detects the format of one file, or checks the forced one.
pub fn detect(path: &Path, forced: Option<FormatChoice>) -> Result<Detected, SourceError> {
    let mut head = [0u8; 8];
    let mut file = File::open(path).map_err(|e| SourceError::io(path, e))?;
    let len = file.metadata().map_err(|e| SourceError::io(path, e))?.len();
    if len == 0 {
        return Err(SourceError::Empty { path: path.to_path_buf() });
    }
    let n = read_up_to(&mut file, &mut head).map_err(|e| SourceError::io(path, e))?;
    let head = &head[..n];
    let compression = if head.starts_with(GZIP_MAGIC) {
        Compression::Gzip
    } else if head.starts_with(ZSTD_MAGIC) {
        Compression::Zstd
    } else {
        Compression::None
    };

    let binary = binary_format(head);
    if let Some(choice) = forced {
        return check_forced(path, choice, binary, compression);
    }
    if let Some(format) = binary {
        return Ok(Detected { format, compression });
    }
    // Streams written before Arrow 0.15 lack the continuation marker, so
    // their first bytes prove nothing; the extension decides.
    if compression == Compression::None && matches!(extension_of(path).as_str(), "arrows" | "stream") {
        return Ok(Detected { format: Format::ArrowStream, compression });
    }
    let text = sniff_text(path, compression)?;
    let mut format = text_format(path, &text)?;
    if format == Format::Json && text.len() == SNIFF_BYTES && !text.contains(&b'\n') && first_value_unfinished(&text) {
        // One line longer than the window: a wide JSON Lines record or a
        // one-line document. (A first value spanning lines is a document.)
        format = after_long_first_line(path, compression)?;
    }
    Ok(Detected { format, compression })
}

/// Streams past the first value (as far as one record may be long), a
/// window at a time, and decides by what follows it.
fn after_long_first_line(path: &Path, compression: Compression) -> Result<Format, SourceError> {
    let mut reader = open_decompressed(path, compression)?.reader;
    let mut scan = FirstValue::default();
    let mut buf = vec![0u8; SNIFF_BYTES];
    let mut read = 0usize;
    while read <= super::limits::MAX_RECORD_BYTES {
        let n = read_up_to(&mut reader, &mut buf).map_err(|e| SourceError::io(path, e))?;
        if n == 0 {
            return Ok(Format::Json);
        }
        read += n;
        match scan.feed(&buf[..n]) {
            Step::Ended(end) => {
                // What follows the value: the rest of this window and the next.
                let mut rest = buf[end..n].to_vec();
                let mut more = vec![0u8; SNIFF_BYTES];
                let m = read_up_to(&mut reader, &mut more).map_err(|e| SourceError::io(path, e))?;
                rest.extend_from_slice(&more[..m]);
                return Ok(after_first_value(&rest));
            }
            Step::Broken => return Ok(Format::Json),
            Step::More => {}
        }
    }
    let lines = matches!(extension_of(path).as_str(), "jsonl" | "ndjson");
    Ok(if lines { Format::JsonLines } else { Format::Json })
}

/// True when `text` starts a bracketed JSON value that does not end in it.
fn first_value_unfinished(text: &[u8]) -> bool {
    let body = strip_bom(text);
    match body.iter().position(|&b| !is_json_ws(b)) {
        Some(i) if matches!(body[i], b'{' | b'[') => end_of_first_value(&body[i..]).is_none(),
        _ => false,
    }
}

fn binary_format(head: &[u8]) -> Option<Format> {
    if head.starts_with(PARQUET_MAGIC) || head.starts_with(PARQUET_ENCRYPTED_MAGIC) {
        Some(Format::Parquet)
    } else if head.starts_with(ARROW_FILE_MAGIC) {
        Some(Format::ArrowFile)
    } else if looks_like_ipc_stream(head) {
        Some(Format::ArrowStream)
    } else {
        None
    }
}

/// An IPC stream begins with the continuation marker 0xFFFFFFFF and a
/// little-endian metadata length (Arrow columnar format, "Encapsulated
/// message format").
fn looks_like_ipc_stream(head: &[u8]) -> bool {
    if head.len() < 8 || head[..4] != [0xff; 4] {
        return false;
    }
    let len = i32::from_le_bytes([head[4], head[5], head[6], head[7]]);
    len > 0
}

/// A pre-0.15 stream starts with a little-endian metadata length; accepted
/// only when the user forces `--format ipc`, and checked by the reader.
fn head_is_legacy_ipc_stream(path: &Path) -> bool {
    let mut head = [0u8; 4];
    File::open(path).and_then(|mut f| f.read_exact(&mut head)).is_ok() && i32::from_le_bytes(head) > 0
}

fn check_forced(
    path: &Path,
    choice: FormatChoice,
    binary: Option<Format>,
    compression: Compression,
) -> Result<Detected, SourceError> {
    let wrong = |expected: Format, reason: String| SourceError::WrongFormat {
        path: path.to_path_buf(),
        expected,
        reason,
    };
    let format = match choice {
        FormatChoice::Parquet => match binary {
            Some(Format::Parquet) => Format::Parquet,
            _ => return Err(wrong(Format::Parquet, "the file does not begin with the PAR1 magic".into())),
        },
        FormatChoice::Ipc => match binary {
            Some(f @ (Format::ArrowFile | Format::ArrowStream)) => f,
            None if head_is_legacy_ipc_stream(path) => Format::ArrowStream,
            _ => {
                return Err(wrong(
                    Format::ArrowFile,
                    "the file begins with neither the ARROW1 magic nor an IPC stream message".into(),
                ));
            }
        },
        text_choice => {
            let format = match text_choice {
                FormatChoice::Json => Format::Json,
                FormatChoice::Jsonl => Format::JsonLines,
                FormatChoice::Csv => Format::Csv,
                _ => Format::Tsv,
            };
            if let Some(b) = binary {
                return Err(wrong(format, format!("it is a {} file", b.label())));
            }
            let text = sniff_text(path, compression)?;
            if !is_text(&text) {
                return Err(wrong(format, "it holds binary data (NUL bytes or invalid UTF-8)".into()));
            }
            format
        }
    };
    Ok(Detected { format, compression })
}

fn sniff_text(path: &Path, compression: Compression) -> Result<Vec<u8>, SourceError> {
    let mut reader = open_decompressed(path, compression)?.reader;
    let mut buf = vec![0u8; SNIFF_BYTES];
    let n = read_up_to(&mut reader, &mut buf).map_err(|e| SourceError::io(path, e))?;
    buf.truncate(n);
    Ok(buf)
}

fn read_up_to(reader: &mut impl Read, buf: &mut [u8]) -> std::io::Result<usize> {
    let mut filled = 0;
    while filled < buf.len() {
        match reader.read(&mut buf[filled..]) {
            Ok(0) => break,
            Ok(n) => filled += n,
            Err(e) if e.kind() == std::io::ErrorKind::Interrupted => continue,
            Err(e) => return Err(e),
        }
    }
    Ok(filled)
}

/// Text with no NUL bytes that is valid UTF-8 (a character cut by the end
/// of the sniffed window is allowed).
fn is_text(bytes: &[u8]) -> bool {
    if bytes.contains(&0) {
        return false;
    }
    match std::str::from_utf8(bytes) {
        Ok(_) => true,
        Err(e) => e.error_len().is_none(),
    }
}

fn extension_of(path: &Path) -> String {
    let name = path.file_name().map(|n| n.to_string_lossy().to_lowercase()).unwrap_or_default();
    let name = name.strip_suffix(".gz").or_else(|| name.strip_suffix(".zst")).unwrap_or(&name);
    name.rsplit_once('.').map(|(_, e)| e.to_string()).unwrap_or_default()
}

fn text_format(path: &Path, text: &[u8]) -> Result<Format, SourceError> {
    let ext = extension_of(path);
    if !is_text(text) {
        return match ext.as_str() {
            "json" => Ok(Format::Json),
            "jsonl" | "ndjson" => Ok(Format::JsonLines),
            _ => Err(SourceError::UnknownFormat {
                path: path.to_path_buf(),
                reason: "binary content with no known magic bytes".into(),
            }),
        };
    }
    let body = strip_bom(text);
    let first = body.iter().position(|&b| !is_json_ws(b));
    match first.map(|i| body[i]) {
        Some(b'{' | b'[') => Ok(json_or_lines(&body[first.unwrap_or(0)..])),
        _ if matches!(ext.as_str(), "json") => Ok(Format::Json),
        _ if matches!(ext.as_str(), "jsonl" | "ndjson") => Ok(Format::JsonLines),
        None => Err(SourceError::UnknownFormat {
            path: path.to_path_buf(),
            reason: "the file holds only whitespace".into(),
        }),
        Some(_) => Ok(match super::csv::sniff_delimiter(body) {
            b'\t' => Format::Tsv,
            _ => Format::Csv,
        }),
    }
}

pub fn strip_bom(bytes: &[u8]) -> &[u8] {
    bytes.strip_prefix(&[0xEF, 0xBB, 0xBF][..]).unwrap_or(bytes)
}

/// JSON Lines when the first value ends on its line and another value
/// starts on a later line; otherwise a single JSON document.
fn json_or_lines(text: &[u8]) -> Format {
    match end_of_first_value(text) {
        Some(end) => after_first_value(&text[end..]),
        None => Format::Json, // the first value is larger than the sniffed window
    }
}

/// Decides by what follows the first value: another value on a later line
/// makes JSON Lines.
fn after_first_value(rest: &[u8]) -> Format {
    let Some(next) = rest.iter().position(|&b| !is_json_ws(b)) else {
        return Format::Json;
    };
    let newline_between = rest[..next].contains(&b'\n');
    let starts_value = matches!(rest[next], b'{' | b'[' | b'"' | b'-' | b'0'..=b'9' | b't' | b'f' | b'n');
    if newline_between && starts_value { Format::JsonLines } else { Format::Json }
}

/// Byte offset just past the first bracketed value, tracking strings so
/// brackets inside them do not count.
fn end_of_first_value(text: &[u8]) -> Option<usize> {
    match FirstValue::default().feed(text) {
        Step::Ended(end) => Some(end),
        Step::Broken | Step::More => None,
    }
}

/// Where the first bracketed value ends, fed a window at a time.
#[derive(Default)]
struct FirstValue {
    depth: usize,
    in_string: bool,
    escaped: bool,
}

enum Step {
    /// Ends just before this offset of the window fed.
    Ended(usize),
    /// A closing bracket with none open: not JSON Lines.
    Broken,
    More,
}

impl FirstValue {
    fn feed(&mut self, window: &[u8]) -> Step {
        for (i, &b) in window.iter().enumerate() {
            if self.in_string {
                match (self.escaped, b) {
                    (true, _) => self.escaped = false,
                    (false, b'\\') => self.escaped = true,
                    (false, b'"') => self.in_string = false,
                    _ => {}
                }
                continue;
            }
            match b {
                b'"' => self.in_string = true,
                b'{' | b'[' => self.depth += 1,
                b'}' | b']' => {
                    let Some(depth) = self.depth.checked_sub(1) else { return Step::Broken };
                    self.depth = depth;
                    if depth == 0 {
                        return Step::Ended(i + 1);
                    }
                }
                _ => {}
            }
        }
        Step::More
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::io::Write;

    fn detect_bytes(name: &str, bytes: &[u8]) -> Result<Detected, SourceError> {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join(name);
        std::fs::write(&path, bytes).unwrap();
        detect(&path, None)
    }

    fn format_of(name: &str, bytes: &[u8]) -> Format {
        detect_bytes(name, bytes).unwrap().format
    }

    #[test]
    fn magic_bytes_win_over_extension() {
        assert_eq!(format_of("x.csv", b"PAR1\x15\x04"), Format::Parquet);
        assert_eq!(format_of("x.json", b"ARROW1\0\0"), Format::ArrowFile);
        assert_eq!(format_of("x.bin", &[0xff, 0xff, 0xff, 0xff, 0x10, 0, 0, 0]), Format::ArrowStream);
    }

    #[test]
    fn json_documents_and_lines_are_told_apart_by_content() {
        assert_eq!(format_of("a.json", b"{\"a\":1}\n{\"a\":2}\n"), Format::JsonLines);
        assert_eq!(format_of("a.txt", b"[{\"a\":1},\n{\"a\":2}]"), Format::Json);
        assert_eq!(format_of("a.jsonl", b"{\"a\":\n1}"), Format::Json);
        assert_eq!(format_of("a", b"[1,2]\n[3]\n"), Format::JsonLines);
        assert_eq!(format_of("a.json", b"\"just a string\""), Format::Json);
        assert_eq!(format_of("a.json", b"{\"a\":\"}\"}  \n"), Format::Json);
    }

    #[test]
    fn json_lines_whose_first_record_outgrows_the_window_are_still_lines() {
        let dir = tempfile::tempdir().unwrap();
        let wide = format!("{{\"a\":\"{}\"}}\n{{\"a\":\"x\"}}\n", "y".repeat(2 * SNIFF_BYTES));
        for name in ["wide.jsonl", "wide.txt", "wide.json"] {
            let path = dir.path().join(name);
            std::fs::write(&path, &wide).unwrap();
            assert_eq!(detect(&path, None).unwrap().format, Format::JsonLines, "{name}");
        }
        // Gzipped, the same.
        let path = dir.path().join("wide.jsonl.gz");
        let mut gz = flate2::write::GzEncoder::new(Vec::new(), flate2::Compression::fast());
        std::io::Write::write_all(&mut gz, wide.as_bytes()).unwrap();
        std::fs::write(&path, gz.finish().unwrap()).unwrap();
        assert_eq!(detect(&path, None).unwrap().format, Format::JsonLines);
        // One large document stays a document, on many lines or on one.
        for doc in [format!("{{\"a\":\n\"{}\"}}\n", "y".repeat(2 * SNIFF_BYTES)), format!("[\"{}\", 1]  ", "y".repeat(2 * SNIFF_BYTES))] {
            let path = dir.path().join("doc.json");
            std::fs::write(&path, &doc).unwrap();
            assert_eq!(detect(&path, None).unwrap().format, Format::Json);
        }
    }

    #[test]
    fn delimited_text_is_csv_or_tsv() {
        assert_eq!(format_of("a.txt", b"a,b\n1,2\n"), Format::Csv);
        assert_eq!(format_of("a.csv", b"a\tb\n1\t2\n"), Format::Tsv);
    }

    #[test]
    fn gzip_is_looked_through() {
        let mut enc = flate2::write::GzEncoder::new(Vec::new(), flate2::Compression::fast());
        enc.write_all(b"{\"a\":1}\n{\"a\":2}\n").unwrap();
        let gz = enc.finish().unwrap();
        let d = detect_bytes("x.json.gz", &gz).unwrap();
        assert_eq!((d.format, d.compression), (Format::JsonLines, Compression::Gzip));
    }

    #[test]
    fn forced_format_is_checked_not_trusted() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("t.csv");
        std::fs::write(&path, b"a,b\n1,2\n").unwrap();
        let e = detect(&path, Some(FormatChoice::Parquet)).unwrap_err();
        assert!(e.to_string().contains("not Parquet data"), "{e}");
        let parquet = dir.path().join("p.parquet");
        std::fs::write(&parquet, b"PAR1....").unwrap();
        let e = detect(&parquet, Some(FormatChoice::Csv)).unwrap_err();
        assert!(e.to_string().contains("it is a Parquet file"), "{e}");
    }

    #[test]
    fn empty_and_unknown_files_are_errors() {
        assert!(matches!(detect_bytes("e.csv", b""), Err(SourceError::Empty { .. })));
        assert!(matches!(detect_bytes("b.dat", &[0, 1, 2, 3, 0, 9]), Err(SourceError::UnknownFormat { .. })));
    }
}
