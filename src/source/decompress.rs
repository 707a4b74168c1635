//! Streaming decompression (gzip, zstd) with a guard against decompression
//! bombs. Compressed text is never decompressed into memory as a whole.

use std::fs::File;
use std::io::{self, BufRead, BufReader, Read};
use std::path::Path;
use std::sync::Arc;
use std::sync::atomic::{AtomicU64, Ordering};

use super::error::SourceError;
use super::limits::{MAX_DECOMPRESSION_RATIO, RATIO_CHECK_AFTER_BYTES};

#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Compression {
    None,
    Gzip,
    Zstd,
}

/// A decompressed byte stream and a live count of the file bytes consumed
/// (for progress, and for the decompression ratio guard).
pub struct Opened {
    pub reader: Box<dyn BufRead + Send>,
    pub file_bytes_read: Arc<AtomicU64>,
}

/// Opens `path` as a buffered stream of its decompressed bytes.
pub fn open_decompressed(path: &Path, compression: Compression) -> Result<Opened, SourceError> {
    let file = File::open(path).map_err(|e| SourceError::io(path, e))?;
    const BUF: usize = 256 * 1024;
    let (counted, consumed) = CountingReader::new(BufReader::with_capacity(BUF, file));
    let reader: Box<dyn BufRead + Send> = match compression {
        Compression::None => Box::new(counted),
        Compression::Gzip => {
            // MultiGzDecoder: concatenated gzip members are one stream (as `cat a.gz b.gz`).
            let decoder = flate2::read::MultiGzDecoder::new(counted);
            Box::new(BufReader::with_capacity(BUF, RatioGuard::new(decoder, consumed.clone())))
        }
        Compression::Zstd => {
            let decoder = zstd::stream::read::Decoder::with_buffer(counted).map_err(|e| SourceError::io(path, e))?;
            Box::new(BufReader::with_capacity(BUF, RatioGuard::new(decoder, consumed.clone())))
        }
    };
    Ok(Opened { reader, file_bytes_read: consumed })
}

/// Counts the compressed bytes the decoder pulls from the file.
struct CountingReader<R> {
    inner: R,
    count: Arc<AtomicU64>,
}

impl<R> CountingReader<R> {
    fn new(inner: R) -> (Self, Arc<AtomicU64>) {
        let count = Arc::new(AtomicU64::new(0));
        (CountingReader { inner, count: count.clone() }, count)
    }
}

impl<R: Read> Read for CountingReader<R> {
    fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
        let n = self.inner.read(buf)?;
        self.count.fetch_add(n as u64, Ordering::Relaxed);
        Ok(n)
    }
}

impl<R: BufRead> BufRead for CountingReader<R> {
    fn fill_buf(&mut self) -> io::Result<&[u8]> {
        self.inner.fill_buf()
    }
    fn consume(&mut self, amt: usize) {
        self.count.fetch_add(amt as u64, Ordering::Relaxed);
        self.inner.consume(amt);
    }
}

/// Fails the stream once the output outgrows the input beyond the limit.
struct RatioGuard<R> {
    inner: R,
    compressed: Arc<AtomicU64>,
    produced: u64,
}

impl<R> RatioGuard<R> {
    fn new(inner: R, compressed: Arc<AtomicU64>) -> Self {
        RatioGuard { inner, compressed, produced: 0 }
    }
}

/// Marker carried inside the io::Error so readers can report it as a limit.
#[derive(Debug)]
pub struct RatioExceeded {
    pub produced: u64,
}

impl std::fmt::Display for RatioExceeded {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "decompressed data grew past {MAX_DECOMPRESSION_RATIO} times its compressed size after {} bytes (limit against decompression bombs)",
            self.produced
        )
    }
}

impl std::error::Error for RatioExceeded {}

impl<R: Read> Read for RatioGuard<R> {
    fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
        let n = self.inner.read(buf)?;
        self.produced += n as u64;
        if self.produced > RATIO_CHECK_AFTER_BYTES {
            let compressed = self.compressed.load(Ordering::Relaxed).max(1);
            if self.produced > compressed.saturating_mul(MAX_DECOMPRESSION_RATIO) {
                return Err(io::Error::new(io::ErrorKind::InvalidData, RatioExceeded { produced: self.produced }));
            }
        }
        Ok(n)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::io::Write;

    #[test]
    fn gzip_members_are_read_as_one_stream() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("two.gz");
        let mut bytes = Vec::new();
        for part in [&b"first\n"[..], b"second\n"] {
            let mut enc = flate2::write::GzEncoder::new(Vec::new(), flate2::Compression::fast());
            enc.write_all(part).unwrap();
            bytes.extend(enc.finish().unwrap());
        }
        std::fs::write(&path, bytes).unwrap();
        let mut out = String::new();
        open_decompressed(&path, Compression::Gzip).unwrap().reader.read_to_string(&mut out).unwrap();
        assert_eq!(out, "first\nsecond\n");
    }

    #[test]
    fn a_decompression_bomb_is_stopped() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("bomb.zst");
        // 200 MB of zeros compress to a few kilobytes with zstd.
        let mut enc = zstd::stream::write::Encoder::new(Vec::new(), 3).unwrap();
        let zeros = vec![0u8; 1 << 20];
        for _ in 0..200 {
            enc.write_all(&zeros).unwrap();
        }
        std::fs::write(&path, enc.finish().unwrap()).unwrap();
        let mut reader = open_decompressed(&path, Compression::Zstd).unwrap().reader;
        let err = io::copy(&mut reader, &mut io::sink()).unwrap_err();
        let inner = err.get_ref().and_then(|e| e.downcast_ref::<RatioExceeded>());
        assert!(inner.is_some(), "{err}");
        assert!(err.to_string().contains("decompression bombs"));
    }
}
