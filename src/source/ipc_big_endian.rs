//! Reading Arrow IPC written on a big-endian machine.
//!
//! The IPC metadata (flatbuffers, message lengths) is little-endian on every
//! machine, but body buffers are in the writer's byte order, which arrow-rs
//! does not convert. This reader walks the messages itself, reverses the
//! bytes of every multi-byte value in each body following the buffer layout
//! of the Arrow columnar format ("Buffer Layouts" in the specification), and
//! then hands the corrected body to arrow-rs's own batch decoder.

use std::collections::HashMap;
use std::fs::File;
use std::io::{BufReader, Read, Seek, SeekFrom};
use std::path::Path;
use std::sync::Arc;

use arrow_array::{ArrayRef, RecordBatch};
use arrow_buffer::Buffer;
use arrow_ipc::{Endianness, MessageHeader, MetadataVersion};
use arrow_schema::{DataType, Field, IntervalUnit, Schema, SchemaRef, UnionMode};

/// How to turn one buffer's bytes around.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Swap {
    /// Bitmaps, bytes, UTF-8 data: byte order does not apply.
    None,
    /// Reverse each group of this many bytes.
    Width(usize),
    /// Interval month-day-nano: i32, i32, i64 per value.
    MonthDayNano,
}

/// The buffers one field contributes to a batch body, in order, followed by
/// its children's (the Arrow columnar format's buffer layouts).
fn field_buffers(data_type: &DataType, out: &mut Vec<Swap>) -> Result<(), String> {
    use DataType::*;
    let validity = Swap::None;
    match data_type {
        Null => {}
        Boolean => out.extend([validity, Swap::None]),
        Int8 | UInt8 => out.extend([validity, Swap::None]),
        Int16 | UInt16 | Float16 => out.extend([validity, Swap::Width(2)]),
        Int32 | UInt32 | Float32 | Date32 | Time32(_) | Decimal32(..) => out.extend([validity, Swap::Width(4)]),
        Int64 | UInt64 | Float64 | Date64 | Time64(_) | Timestamp(..) | Duration(_) | Decimal64(..) => {
            out.extend([validity, Swap::Width(8)])
        }
        Decimal128(..) => out.extend([validity, Swap::Width(16)]),
        Decimal256(..) => out.extend([validity, Swap::Width(32)]),
        Interval(IntervalUnit::YearMonth) | Interval(IntervalUnit::DayTime) => out.extend([validity, Swap::Width(4)]),
        Interval(IntervalUnit::MonthDayNano) => out.extend([validity, Swap::MonthDayNano]),
        Utf8 | Binary => out.extend([validity, Swap::Width(4), Swap::None]),
        LargeUtf8 | LargeBinary => out.extend([validity, Swap::Width(8), Swap::None]),
        FixedSizeBinary(_) => out.extend([validity, Swap::None]),
        List(f) | Map(f, _) => {
            out.extend([validity, Swap::Width(4)]);
            field_buffers(f.data_type(), out)?;
        }
        LargeList(f) => {
            out.extend([validity, Swap::Width(8)]);
            field_buffers(f.data_type(), out)?;
        }
        FixedSizeList(f, _) => {
            out.push(validity);
            field_buffers(f.data_type(), out)?;
        }
        Struct(fields) => {
            out.push(validity);
            for f in fields {
                field_buffers(f.data_type(), out)?;
            }
        }
        Union(fields, mode) => {
            out.push(Swap::None); // type ids are single bytes
            if *mode == UnionMode::Dense {
                out.push(Swap::Width(4));
            }
            for (_, f) in fields.iter() {
                field_buffers(f.data_type(), out)?;
            }
        }
        // The values live in dictionary batches; the column holds indices.
        Dictionary(key, _) => field_buffers(key, out)?,
        RunEndEncoded(run_ends, values) => {
            field_buffers(run_ends.data_type(), out)?;
            field_buffers(values.data_type(), out)?;
        }
        other => return Err(format!("big-endian {other} columns are not supported")),
    }
    Ok(())
}

/// Reverses the byte order of every value in `body`, buffer by buffer.
fn swap_body(body: &mut [u8], batch: &arrow_ipc::RecordBatch, fields: &[&DataType]) -> Result<(), String> {
    if batch.compression().is_some() {
        return Err("compressed big-endian record batches are not supported".into());
    }
    let mut layout = Vec::new();
    for t in fields {
        field_buffers(t, &mut layout)?;
    }
    let buffers = batch.buffers().ok_or("a record batch without buffers")?;
    if buffers.len() != layout.len() {
        return Err(format!("the batch has {} buffers where its schema calls for {}", buffers.len(), layout.len()));
    }
    for (buffer, swap) in buffers.iter().zip(layout) {
        let start = usize::try_from(buffer.offset()).map_err(|_| "a negative buffer offset")?;
        let len = usize::try_from(buffer.length()).map_err(|_| "a negative buffer length")?;
        let bytes = body.get_mut(start..start + len).ok_or("a buffer reaches past the message body")?;
        match swap {
            Swap::None => {}
            Swap::Width(w) => bytes.chunks_exact_mut(w).for_each(|c| c.reverse()),
            Swap::MonthDayNano => bytes.chunks_exact_mut(16).for_each(|c| {
                c[0..4].reverse();
                c[4..8].reverse();
                c[8..16].reverse();
            }),
        }
    }
    Ok(())
}

/// True when the stream's schema message says its data is big-endian.
pub fn is_big_endian_stream(path: &Path) -> bool {
    let Ok(file) = File::open(path) else { return false };
    let mut reader = BufReader::new(file);
    match read_message(&mut reader) {
        Ok(Some(raw)) => raw
            .message()
            .ok()
            .and_then(|m| m.header_as_schema())
            .is_some_and(|s| s.endianness() == Endianness::Big),
        _ => false,
    }
}

/// A message read from the stream: its flatbuffer bytes and its body.
struct RawMessage {
    metadata: Vec<u8>,
    body: Vec<u8>,
}

impl RawMessage {
    fn message(&self) -> Result<arrow_ipc::Message<'_>, String> {
        arrow_ipc::root_as_message(&self.metadata).map_err(|e| format!("unreadable message header: {e}"))
    }
}

/// Reads one encapsulated message (continuation marker optional, for
/// pre-0.15 writers); `None` at the end-of-stream marker or end of input.
fn read_message(reader: &mut impl Read) -> Result<Option<RawMessage>, String> {
    let mut word = [0u8; 4];
    match reader.read_exact(&mut word) {
        Ok(()) => {}
        Err(e) if e.kind() == std::io::ErrorKind::UnexpectedEof => return Ok(None),
        Err(e) => return Err(e.to_string()),
    }
    if word == [0xff; 4] {
        reader.read_exact(&mut word).map_err(|e| e.to_string())?;
    }
    let len = i32::from_le_bytes(word);
    if len == 0 {
        return Ok(None);
    }
    let len = usize::try_from(len).map_err(|_| format!("a negative message length {len}"))?;
    let mut metadata = vec![0u8; len];
    reader.read_exact(&mut metadata).map_err(|e| format!("message header cut short: {e}"))?;
    let body_len = arrow_ipc::root_as_message(&metadata).map_err(|e| format!("unreadable message header: {e}"))?.bodyLength();
    let body_len = usize::try_from(body_len).map_err(|_| "a negative body length")?;
    let mut body = vec![0u8; body_len];
    reader.read_exact(&mut body).map_err(|e| format!("message body cut short: {e}"))?;
    Ok(Some(RawMessage { metadata, body }))
}

/// Batches of a big-endian IPC file or stream, converted to this machine's order.
pub struct BigEndianReader {
    reader: BufReader<File>,
    /// For the file format: where each record batch / dictionary starts.
    blocks: Option<std::vec::IntoIter<u64>>,
    pub schema: SchemaRef,
    dictionaries: HashMap<i64, ArrayRef>,
    version: MetadataVersion,
}

impl BigEndianReader {
    /// Opens a stream (from its first byte) or a file (`ARROW1` magic).
    pub fn open(path: &Path, file_format: bool) -> Result<Self, String> {
        let mut file = File::open(path).map_err(|e| e.to_string())?;
        let blocks = if file_format { Some(file_blocks(&mut file)?) } else { None };
        let start = if file_format { 8 } else { 0 };
        file.seek(SeekFrom::Start(start)).map_err(|e| e.to_string())?;
        let mut reader = BufReader::new(file);
        let first = read_message(&mut reader)?.ok_or("no schema message")?;
        let message = first.message()?;
        let version = message.version();
        let ipc_schema = message.header_as_schema().ok_or("the first message is not a schema")?;
        let schema = Arc::new(schema_of(ipc_schema)?);
        Ok(BigEndianReader { reader, blocks: blocks.map(Vec::into_iter), schema, dictionaries: HashMap::new(), version })
    }

    fn next_message(&mut self) -> Result<Option<RawMessage>, String> {
        if let Some(blocks) = &mut self.blocks {
            let Some(offset) = blocks.next() else { return Ok(None) };
            self.reader.seek(SeekFrom::Start(offset)).map_err(|e| e.to_string())?;
        }
        read_message(&mut self.reader)
    }

    /// The next record batch, reading any dictionary batches before it.
    pub fn next_batch(&mut self) -> Result<Option<RecordBatch>, String> {
        loop {
            let Some(mut raw) = self.next_message()? else { return Ok(None) };
            let metadata = raw.metadata.clone();
            let message = arrow_ipc::root_as_message(&metadata).map_err(|e| format!("unreadable message header: {e}"))?;
            match message.header_type() {
                MessageHeader::RecordBatch => {
                    let batch = message.header_as_record_batch().ok_or("a record batch message without its header")?;
                    let types: Vec<&DataType> = self.schema.fields().iter().map(|f| f.data_type()).collect();
                    swap_body(&mut raw.body, &batch, &types)?;
                    let body = Buffer::from(raw.body);
                    let decoded = arrow_ipc::reader::read_record_batch(
                        &body,
                        batch,
                        self.schema.clone(),
                        &self.dictionaries,
                        None,
                        &self.version,
                    );
                    return decoded.map(Some).map_err(|e| e.to_string());
                }
                MessageHeader::DictionaryBatch => {
                    let dictionary = message.header_as_dictionary_batch().ok_or("a dictionary message without its header")?;
                    let value_type = dictionary_value_type(&self.schema, dictionary.id())?;
                    let data = dictionary.data().ok_or("a dictionary batch without data")?;
                    swap_body(&mut raw.body, &data, &[&value_type])?;
                    let body = Buffer::from(raw.body);
                    arrow_ipc::reader::read_dictionary(&body, dictionary, &self.schema, &mut self.dictionaries, &self.version)
                        .map_err(|e| e.to_string())?;
                }
                MessageHeader::Schema => return Err("a second schema message in the stream".into()),
                _ => return Err("an unknown message type".into()),
            }
        }
    }
}

/// The schema, converted field by field: arrow-rs's own conversion refuses
/// big-endian decimals, which this reader converts. (`Field::from` panics on
/// a malformed field; callers run this under `guard::catch`.)
fn schema_of(ipc: arrow_ipc::Schema) -> Result<Schema, String> {
    let fields: Vec<Field> = ipc.fields().ok_or("the schema has no fields")?.iter().map(Field::from).collect();
    let metadata: HashMap<String, String> = ipc
        .custom_metadata()
        .into_iter()
        .flatten()
        .filter_map(|kv| Some((kv.key()?.to_string(), kv.value()?.to_string())))
        .collect();
    Ok(Schema::new_with_metadata(fields, metadata))
}

#[allow(deprecated)] // arrow-rs still keys dictionaries by the field's dict_id.
fn dictionary_value_type(schema: &Schema, id: i64) -> Result<DataType, String> {
    let fields = schema.fields_with_dict_id(id);
    match fields.first().map(|f| f.data_type()) {
        Some(DataType::Dictionary(_, value)) => Ok(value.as_ref().clone()),
        _ => Err(format!("dictionary id {id} is not in the schema")),
    }
}

/// Offsets of the dictionary blocks, then the record batch blocks, from the
/// file footer (the last 10 bytes are the footer length and `ARROW1`).
fn file_blocks(file: &mut File) -> Result<Vec<u64>, String> {
    let len = file.seek(SeekFrom::End(0)).map_err(|e| e.to_string())?;
    if len < 18 {
        return Err("too short for an Arrow IPC file".into());
    }
    let mut tail = [0u8; 10];
    file.seek(SeekFrom::Start(len - 10)).map_err(|e| e.to_string())?;
    file.read_exact(&mut tail).map_err(|e| e.to_string())?;
    let footer_len = i32::from_le_bytes([tail[0], tail[1], tail[2], tail[3]]);
    let footer_len = u64::try_from(footer_len).map_err(|_| "a negative footer length")?;
    if footer_len + 10 > len {
        return Err("the footer length points outside the file".into());
    }
    let mut footer = vec![0u8; footer_len as usize];
    file.seek(SeekFrom::Start(len - 10 - footer_len)).map_err(|e| e.to_string())?;
    file.read_exact(&mut footer).map_err(|e| e.to_string())?;
    let footer = arrow_ipc::root_as_footer(&footer).map_err(|e| format!("unreadable footer: {e}"))?;
    let mut all: Vec<u64> = Vec::new();
    for blocks in [footer.dictionaries(), footer.recordBatches()].into_iter().flatten() {
        all.extend(blocks.iter().map(|block| block.offset().max(0) as u64));
    }
    Ok(all)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn buffer_layouts_follow_the_columnar_format() {
        let mut out = Vec::new();
        let list = DataType::List(Arc::new(Field::new("item", DataType::Int32, true)));
        field_buffers(&list, &mut out).unwrap();
        assert_eq!(out, vec![Swap::None, Swap::Width(4), Swap::None, Swap::Width(4)]);
        out.clear();
        field_buffers(&DataType::LargeUtf8, &mut out).unwrap();
        assert_eq!(out, vec![Swap::None, Swap::Width(8), Swap::None]);
        out.clear();
        field_buffers(&DataType::Dictionary(Box::new(DataType::Int16), Box::new(DataType::Utf8)), &mut out).unwrap();
        assert_eq!(out, vec![Swap::None, Swap::Width(2)]);
        assert!(field_buffers(&DataType::Utf8View, &mut out).is_err());
    }
}
