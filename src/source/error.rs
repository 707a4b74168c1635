//! Errors of the source layer: each names the file and where in it.

use std::fmt;
use std::path::{Path, PathBuf};

use super::detect::Format;

/// Where in a file something went wrong.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Position {
    /// Nowhere more precise than the file itself (e.g. an empty file).
    File,
    /// A byte offset (in the decompressed stream when the file is compressed).
    Byte(u64),
    /// A text position: 1-based line and column, plus the byte offset.
    Text { line: u64, column: u64, byte: u64 },
    /// A Parquet row group (0-based, as in the footer).
    RowGroup(usize),
    /// An Arrow IPC record batch (0-based).
    Batch(usize),
    /// The Parquet or IPC footer / schema.
    Footer,
}

impl fmt::Display for Position {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Position::File => Ok(()),
            Position::Byte(b) => write!(f, "byte {b}"),
            Position::Text { line, column, byte } => {
                write!(f, "line {line}, column {column} (byte {byte})")
            }
            Position::RowGroup(g) => write!(f, "row group {g}"),
            Position::Batch(b) => write!(f, "record batch {b}"),
            Position::Footer => write!(f, "footer"),
        }
    }
}

#[derive(Debug, thiserror::Error)]
pub enum SourceError {
    #[error("{}: cannot read: {source}", path.display())]
    Io {
        path: PathBuf,
        #[source]
        source: std::io::Error,
    },
    /// The bytes do not follow the format's rules.
    #[error("{}{}: {message}", path.display(), at(position))]
    Malformed { path: PathBuf, format: Format, position: Position, message: String },
    /// The user forced a format the file is not in.
    #[error("{}: not {} data: {reason}", path.display(), expected.label())]
    WrongFormat { path: PathBuf, expected: Format, reason: String },
    #[error("{}: cannot tell the format: {reason} (use --format to say which)", path.display())]
    UnknownFormat { path: PathBuf, reason: String },
    #[error("{}: the file is encrypted (Parquet modular encryption); Plumbline cannot read encrypted files", path.display())]
    Encrypted { path: PathBuf },
    #[error("{}: the file is empty (0 bytes)", path.display())]
    Empty { path: PathBuf },
    #[error("{}{}: {message}", path.display(), at(position))]
    Limit { path: PathBuf, position: Position, message: String },
    #[error("{}: {message}", path.display())]
    Directory { path: PathBuf, message: String },
    /// A Plumbline report that cannot be read back.
    #[error("{}: {message}", path.display())]
    Report { path: PathBuf, message: String },
    /// A failure of Plumbline itself (an Arrow operation on valid data).
    #[error("{}: internal error: {message}", path.display())]
    Internal { path: PathBuf, message: String },
}

impl SourceError {
    pub fn io(path: &Path, source: std::io::Error) -> Self {
        SourceError::Io { path: path.to_path_buf(), source }
    }

    pub fn malformed(path: &Path, format: Format, position: Position, message: impl Into<String>) -> Self {
        SourceError::Malformed { path: path.to_path_buf(), format, position, message: message.into() }
    }

    /// The same error for a reader that started `lines` line breaks and
    /// `bytes` bytes into the file, placed in the whole file.
    pub fn shifted(mut self, lines: u64, bytes: u64) -> Self {
        if let SourceError::Malformed { position, .. } | SourceError::Limit { position, .. } = &mut self {
            match position {
                Position::Text { line, byte, .. } => {
                    *line += lines;
                    *byte += bytes;
                }
                Position::Byte(byte) => *byte += bytes,
                _ => {}
            }
        }
        self
    }

    /// The file this error is about.
    pub fn path(&self) -> &Path {
        match self {
            SourceError::Io { path, .. }
            | SourceError::Malformed { path, .. }
            | SourceError::WrongFormat { path, .. }
            | SourceError::UnknownFormat { path, .. }
            | SourceError::Encrypted { path }
            | SourceError::Empty { path }
            | SourceError::Limit { path, .. }
            | SourceError::Directory { path, .. }
            | SourceError::Report { path, .. }
            | SourceError::Internal { path, .. } => path,
        }
    }
}

fn at(position: &Position) -> String {
    match position {
        Position::File => String::new(),
        p => format!(": {p}"),
    }
}

/// 1-based line and column of `offset` within `bytes` (columns count bytes).
pub fn line_column(bytes: &[u8], offset: usize) -> (u64, u64) {
    let offset = offset.min(bytes.len());
    let before = &bytes[..offset];
    let line = before.iter().filter(|&&b| b == b'\n').count() as u64 + 1;
    let line_start = before.iter().rposition(|&b| b == b'\n').map_or(0, |i| i + 1);
    (line, (offset - line_start) as u64 + 1)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn messages_name_file_and_position() {
        let e = SourceError::malformed(
            Path::new("x.jsonl"),
            Format::JsonLines,
            Position::Text { line: 3, column: 7, byte: 40 },
            "expected ':'",
        );
        assert_eq!(e.to_string(), "x.jsonl: line 3, column 7 (byte 40): expected ':'");
        let e = SourceError::Empty { path: "e.csv".into() };
        assert_eq!(e.to_string(), "e.csv: the file is empty (0 bytes)");
    }

    #[test]
    fn shifted_errors_count_from_the_file() {
        let e = SourceError::malformed(
            Path::new("x.csv"),
            Format::Csv,
            Position::Text { line: 2, column: 1, byte: 9 },
            "bad",
        );
        assert_eq!(e.shifted(10, 100).to_string(), "x.csv: line 12, column 1 (byte 109): bad");
        let e = SourceError::Empty { path: "e.csv".into() };
        assert_eq!(e.shifted(10, 100).to_string(), "e.csv: the file is empty (0 bytes)");
    }

    #[test]
    fn line_column_counts_from_one() {
        assert_eq!(line_column(b"ab\ncd", 0), (1, 1));
        assert_eq!(line_column(b"ab\ncd", 4), (2, 2));
    }
}

/// Classifies an I/O error met while reading (decompressed) bytes at `position`.
pub fn read_failure(path: &Path, format: Format, position: Position, e: std::io::Error) -> SourceError {
    use super::decompress::RatioExceeded;
    if let Some(ratio) = e.get_ref().and_then(|inner| inner.downcast_ref::<RatioExceeded>()) {
        return SourceError::Limit { path: path.to_path_buf(), position, message: ratio.to_string() };
    }
    match e.kind() {
        std::io::ErrorKind::InvalidData | std::io::ErrorKind::InvalidInput | std::io::ErrorKind::UnexpectedEof => {
            SourceError::malformed(path, format, position, format!("corrupt compressed data: {e}"))
        }
        _ => SourceError::io(path, e),
    }
}
