//! A polars lazy scan over a source Plumbline has opened, numbered by row in
//! the same order Plumbline reads (part files in the order the directory
//! listing gave them), so row numbers in findings match.

use std::path::{Path, PathBuf};

use polars::prelude::*;

use super::ExploreError;
use crate::source::{Compression, Format, SourceInfo};

/// The row-number column added to every scan; a name no data file uses.
pub const ROW_COLUMN: &str = "⟨row⟩";

/// A lazy scan of every row of the source, with the row number column first.
/// `use_statistics` lets a Parquet scan skip row groups by their min/max.
pub fn scan(info: &SourceInfo, use_statistics: bool) -> Result<LazyFrame, ExploreError> {
    let fail = |e: PolarsError| ExploreError::new(&info.path, e.to_string());
    if info.compression != Compression::None {
        return Err(ExploreError::new(
            &info.path,
            format!("Rows pages through uncompressed files only; this one is {:?}-compressed", info.compression),
        ));
    }
    let files = files(info);
    let row_index = Some(RowIndex { name: ROW_COLUMN.into(), offset: 0 });
    let hive = HiveOptions { enabled: Some(!info.facts.partition_fields.is_empty()), ..HiveOptions::new_disabled() };
    let frame = match info.format {
        Format::Parquet => {
            let args = ScanArgsParquet { row_index, hive_options: hive, use_statistics, ..Default::default() };
            LazyFrame::scan_parquet_files(paths(&files, &info.path)?, args).map_err(fail)?
        }
        Format::ArrowFile => {
            let args = UnifiedScanArgs { row_index, hive_options: hive, ..Default::default() };
            LazyFrame::scan_ipc_sources(ScanSources::Paths(paths(&files, &info.path)?), Default::default(), args)
                .map_err(fail)?
        }
        Format::JsonLines => LazyJsonLineReader::new_paths(paths(&files, &info.path)?)
            .with_row_index(row_index)
            // Every line decides the columns' types, as Plumbline's own shape does;
            // a sample could miss a rare kind and fail on it later.
            .with_infer_schema_length(None)
            .finish()
            .map_err(fail)?,
        Format::Csv | Format::Tsv => {
            let separator = if info.format == Format::Tsv { b'\t' } else { b',' };
            LazyCsvReader::new_paths(paths(&files, &info.path)?)
                .with_separator(separator)
                .with_row_index(row_index)
                .finish()
                .map_err(fail)?
        }
        Format::Json => json_document(&files, &info.path)?,
        Format::ArrowStream => {
            return Err(ExploreError::new(&info.path, "Rows pages through Arrow IPC files, not IPC streams"));
        }
    };
    Ok(frame)
}

/// The files of the source in Plumbline's read order.
fn files(info: &SourceInfo) -> Vec<PathBuf> {
    if info.facts.part_files.is_empty() {
        vec![info.path.clone()]
    } else {
        info.facts.part_files.iter().map(|p| info.path.join(p)).collect()
    }
}

/// The files as polars paths, collected into whatever buffer the scan takes.
fn paths<B: FromIterator<PlRefPath>>(files: &[PathBuf], source: &Path) -> Result<B, ExploreError> {
    files
        .iter()
        .map(|f| PlRefPath::try_from_path(f).map_err(|e| ExploreError::new(source, e.to_string())))
        .collect()
}

/// A JSON document (an array of records) has no lazy reader: it is one value
/// and is read whole, as Plumbline's own reader does.
fn json_document(files: &[PathBuf], source: &Path) -> Result<LazyFrame, ExploreError> {
    let mut frames = Vec::new();
    for file in files {
        let handle = std::fs::File::open(file).map_err(|e| ExploreError::new(file, e.to_string()))?;
        let frame = JsonReader::new(handle)
            .with_json_format(JsonFormat::Json)
            .infer_schema_len(None)
            .finish()
            .map_err(|e| ExploreError::new(file, e.to_string()))?;
        frames.push(frame.lazy());
    }
    let all = concat(frames, UnionArgs::default()).map_err(|e| ExploreError::new(source, e.to_string()))?;
    Ok(all.with_row_index(ROW_COLUMN, None))
}
