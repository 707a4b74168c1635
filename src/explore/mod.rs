//! Row queries for the Rows area, through polars: a lazy scan of the source
//! with the user's filters pushed into it, a count of the rows they keep,
//! and one page of those rows at a time. Nothing here is drawn.

pub mod cells;
pub mod filter;
pub mod predicate;
pub mod scan;

use std::path::{Path, PathBuf};

use polars::prelude::*;

pub use cells::Cell;
pub use filter::{Condition, RowFilter};

use crate::source::SourceInfo;

#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{}: {message}", path.display())]
pub struct ExploreError {
    pub path: PathBuf,
    pub message: String,
}

impl ExploreError {
    pub fn new(path: &Path, message: impl Into<String>) -> Self {
        ExploreError { path: path.to_path_buf(), message: message.into() }
    }
}

fn nests_zoned_timestamp(dtype: &DataType) -> bool {
    match dtype {
        DataType::Datetime(_, zone) => zone.is_some(),
        DataType::Struct(fields) => fields.iter().any(|f| nests_zoned_timestamp(f.dtype())),
        DataType::List(inner) | DataType::Array(inner, _) => nests_zoned_timestamp(inner),
        _ => false,
    }
}

/// Rows of one page, in order.
#[derive(Debug, Clone, PartialEq)]
pub struct Page {
    /// Position of the first row among the rows the filters keep.
    pub offset: u64,
    pub rows: Vec<PageRow>,
}

#[derive(Debug, Clone, PartialEq)]
pub struct PageRow {
    /// The row's number in the whole source (0-based, read order).
    pub number: u64,
    /// One per column of [`RowSource::columns`].
    pub cells: Vec<Cell>,
}

/// The source's rows as polars sees them.
pub struct RowSource {
    path: PathBuf,
    frame: LazyFrame,
    /// The same scan without row-group statistics, for filters polars 0.55
    /// cannot check against them: on a struct holding a zoned timestamp its
    /// statistics code panics (the demo's `dropoff`).
    frame_without_statistics: LazyFrame,
    schema: SchemaRef,
    columns: Vec<String>,
}

impl RowSource {
    /// Prepares the scan and reads the columns' types (the footer for
    /// Parquet; every line for JSON Lines).
    pub fn open(info: &SourceInfo) -> Result<RowSource, ExploreError> {
        let mut frame = scan::scan(info, true)?;
        let schema = frame.collect_schema().map_err(|e| ExploreError::new(&info.path, e.to_string()))?;
        let columns = schema.iter_names().filter(|n| n.as_str() != scan::ROW_COLUMN).map(|n| n.to_string()).collect();
        // Only Parquet scans use statistics; the others would be built (and a
        // JSON document read) a second time for nothing.
        let frame_without_statistics =
            if info.format == crate::source::Format::Parquet { scan::scan(info, false)? } else { frame.clone() };
        Ok(RowSource { path: info.path.clone(), frame, frame_without_statistics, schema, columns })
    }

    /// True when a filter reads a column that nests a timestamp with a zone.
    fn needs_no_statistics(&self, filters: &[RowFilter]) -> bool {
        filters.iter().any(|f| match f {
            RowFilter::Rows(_) => false,
            RowFilter::Field { path, .. } => {
                let top = match crate::path::steps(path).as_deref() {
                    Some([crate::path::Step::Member(name), ..]) => name.clone(),
                    _ => return false,
                };
                self.schema.get(top.as_str()).is_some_and(|d| d.is_nested() && nests_zoned_timestamp(d))
            }
        })
    }

    /// The data columns, in the file's order (without the row number).
    pub fn columns(&self) -> &[String] {
        &self.columns
    }

    fn filtered(&self, filters: &[RowFilter]) -> Result<LazyFrame, ExploreError> {
        let keep = predicate::predicate(filters, &self.schema).map_err(|e| ExploreError::new(&self.path, e))?;
        let frame = if self.needs_no_statistics(filters) { &self.frame_without_statistics } else { &self.frame };
        Ok(match keep {
            Some(expr) => frame.clone().filter(expr),
            None => frame.clone(),
        })
    }

    fn fail(&self, e: PolarsError) -> ExploreError {
        ExploreError::new(&self.path, e.to_string())
    }

    /// How many rows the filters keep.
    pub fn count(&self, filters: &[RowFilter]) -> Result<u64, ExploreError> {
        let counted = self.filtered(filters)?.select([len().alias("n")]).collect().map_err(|e| self.fail(e))?;
        let n = counted.column("n").and_then(|c| c.get(0)).map_err(|e| self.fail(e))?;
        Ok(n.extract::<u64>().unwrap_or(0))
    }

    /// Up to `len` of the kept rows, from the `offset`-th on.
    pub fn page(&self, filters: &[RowFilter], offset: u64, len: usize) -> Result<Page, ExploreError> {
        let frame = self.filtered(filters)?.slice(offset as i64, len as IdxSize).collect().map_err(|e| self.fail(e))?;
        let numbers = frame.column(scan::ROW_COLUMN).map_err(|e| self.fail(e))?;
        let data: Vec<&Column> =
            self.columns.iter().map(|c| frame.column(c)).collect::<PolarsResult<_>>().map_err(|e| self.fail(e))?;
        let mut rows = Vec::with_capacity(frame.height());
        for i in 0..frame.height() {
            let number = numbers.get(i).map_err(|e| self.fail(e))?.extract::<u64>().unwrap_or(0);
            let cells = data
                .iter()
                .map(|c| c.get(i).map(|v| cells::cell(&v)))
                .collect::<PolarsResult<Vec<_>>>()
                .map_err(|e| self.fail(e))?;
            rows.push(PageRow { number, cells });
        }
        Ok(Page { offset, rows })
    }
}
