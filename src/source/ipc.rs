//! Arrow IPC sources: the file format (with its footer) and the stream format.

use std::collections::BTreeMap;
use std::fs::File;
use std::io::BufReader;
use std::path::Path;

use arrow_ipc::reader::{FileReader, StreamReader};
use arrow_schema::SchemaRef;

use super::error::{Position, SourceError};
use super::facts::shorten_metadata_value;
use super::guard;
use super::ipc_big_endian::{BigEndianReader, is_big_endian_stream};
use super::{Batch, Compression, Facts, Format, Progress, Source, SourceInfo};

enum Reader {
    File(FileReader<BufReader<File>>),
    Stream(StreamReader<BufReader<File>>),
    BigEndian(Box<BigEndianReader>),
}

pub struct IpcSource {
    info: SourceInfo,
    reader: Reader,
    batch_index: usize,
    finished: bool,
}

impl IpcSource {
    pub fn open(path: &Path, format: Format, bytes: u64) -> Result<Self, SourceError> {
        let file = File::open(path).map_err(|e| SourceError::io(path, e))?;
        let buffered = BufReader::with_capacity(1 << 20, file);
        let malformed = |m: String| SourceError::malformed(path, format, Position::Footer, m);
        let big_endian = |file_format: bool| -> Result<(Reader, SchemaRef, Option<usize>), SourceError> {
            let r = guard::catch(|| BigEndianReader::open(path, file_format))
                .map_err(malformed)?
                .map_err(malformed)?;
            let schema = r.schema.clone();
            Ok((Reader::BigEndian(Box::new(r)), schema, None))
        };
        let (reader, schema, record_batches): (Reader, SchemaRef, Option<usize>) = match format {
            Format::ArrowFile => match guard::catch(|| FileReader::try_new(buffered, None)).map_err(malformed)? {
                Ok(r) => {
                    let schema = r.schema();
                    let n = r.num_batches();
                    (Reader::File(r), schema, Some(n))
                }
                // arrow-rs refuses big-endian files; they are converted here.
                Err(e) if e.to_string().contains("endianness") => big_endian(true)?,
                Err(e) => return Err(malformed(e.to_string())),
            },
            _ if is_big_endian_stream(path) => big_endian(false)?,
            _ => {
                let r = guard::catch(|| StreamReader::try_new(buffered, None))
                    .map_err(|m| SourceError::malformed(path, format, Position::Byte(0), m))?
                    .map_err(|e| SourceError::malformed(path, format, Position::Byte(0), e.to_string()))?;
                let schema = r.schema();
                (Reader::Stream(r), schema, None)
            }
        };
        let metadata: BTreeMap<String, String> =
            schema.metadata().iter().map(|(k, v)| (k.clone(), shorten_metadata_value(v))).collect();
        let info = SourceInfo {
            path: path.to_path_buf(),
            format,
            compression: Compression::None,
            bytes,
            parts: 1,
            rows: None,
            schema: Some(schema),
            parquet_leaves: None,
            facts: Facts { record_batches, metadata, ..Facts::default() },
        };
        Ok(IpcSource { info, reader, batch_index: 0, finished: false })
    }
}

impl Source for IpcSource {
    fn info(&self) -> &SourceInfo {
        &self.info
    }

    fn progress(&self) -> Progress {
        let total = self.info.facts.record_batches.unwrap_or(0) as u64;
        Progress { done: self.batch_index as u64, total }
    }

    fn next_batch(&mut self) -> Result<Option<Batch>, SourceError> {
        if self.finished {
            return Ok(None);
        }
        let next = guard::catch(|| match &mut self.reader {
            Reader::File(r) => r.next(),
            Reader::Stream(r) => r.next(),
            Reader::BigEndian(r) => r.next_batch().map_err(arrow_schema::ArrowError::IpcError).transpose(),
        });
        let position = Position::Batch(self.batch_index);
        let fail = |this: &mut Self, message: String| {
            this.finished = true;
            SourceError::malformed(&this.info.path, this.info.format, position.clone(), message)
        };
        match next {
            Ok(Some(Ok(batch))) => {
                self.batch_index += 1;
                Ok(Some(Batch::Arrow(batch)))
            }
            Ok(Some(Err(e))) => Err(fail(self, e.to_string())),
            Ok(None) => {
                self.finished = true;
                Ok(None)
            }
            Err(panic) => Err(fail(self, panic)),
        }
    }
}
