//! The rows a [`Reservoir`] chooses, held compactly: Arrow rows are copied
//! out of their batch (so the batch itself can be dropped), other rows are
//! kept as values. Memory stays near the sample's own size.

use std::path::PathBuf;

use arrow_array::{RecordBatch, RecordBatchOptions, UInt32Array};
use arrow_schema::ArrowError;

use super::Reservoir;
use crate::source::{Batch, SourceError};
use crate::value::Value;

#[derive(Debug)]
enum Slot {
    /// Row `row` of `pieces[piece]`.
    Arrow { piece: usize, row: usize },
    Value(Value),
}

/// A sample being gathered from a stream of batches.
#[derive(Debug)]
pub struct KeptRows {
    reservoir: Reservoir,
    /// Each kept row with its number in the stream.
    slots: Vec<(u64, Slot)>,
    /// Copies of chosen Arrow rows; some may since have been replaced.
    pieces: Vec<RecordBatch>,
    piece_rows: usize,
    /// The source, named in errors.
    path: PathBuf,
}

/// Rows of the sample in stream order, ready to be observed, with the
/// stream number of each row.
pub struct SampleBatch {
    pub batch: Batch,
    pub rows: Vec<u64>,
}

impl KeptRows {
    pub fn new(capacity: usize, seed: u64, path: PathBuf) -> Self {
        KeptRows { reservoir: Reservoir::new(capacity, seed), slots: Vec::new(), pieces: Vec::new(), piece_rows: 0, path }
    }

    /// Rows offered so far.
    pub fn seen(&self) -> u64 {
        self.reservoir.seen()
    }

    /// Offers every row of `batch`. JSON records are parsed only when chosen;
    /// a chosen record that does not parse is an error.
    pub fn offer(&mut self, batch: &Batch) -> Result<(), SourceError> {
        let first = self.reservoir.seen();
        let picks = self.reservoir.offer(batch.num_rows());
        if picks.is_empty() {
            return Ok(());
        }
        let slots: Vec<(u64, Slot)> = match batch {
            Batch::Arrow(b) => {
                let rows = UInt32Array::from_iter_values(picks.iter().map(|p| p.row_in_batch as u32));
                let piece = arrow_select::take::take_record_batch(b, &rows).map_err(|e| self.internal(e))?;
                self.pieces.push(piece);
                self.piece_rows += picks.len();
                let index = self.pieces.len() - 1;
                picks.iter().enumerate().map(|(k, p)| (first + p.row_in_batch as u64, Slot::Arrow { piece: index, row: k })).collect()
            }
            Batch::Rows(values) => {
                picks.iter().map(|p| (first + p.row_in_batch as u64, Slot::Value(values[p.row_in_batch].clone()))).collect()
            }
            Batch::Json(records) => picks
                .iter()
                .map(|p| Ok((first + p.row_in_batch as u64, Slot::Value(records.row(p.row_in_batch)?))))
                .collect::<Result<_, SourceError>>()?,
        };
        for (pick, slot) in picks.iter().zip(slots) {
            if pick.slot == self.slots.len() {
                self.slots.push(slot);
            } else {
                self.slots[pick.slot] = slot;
            }
        }
        // Replaced rows linger in their piece; copy the live ones together
        // once the pieces hold more than twice the sample.
        if self.piece_rows > 2 * self.reservoir.capacity() + crate::source::ARROW_BATCH_ROWS {
            self.compact()?;
        }
        Ok(())
    }

    /// Copies the live Arrow rows into one piece per schema.
    fn compact(&mut self) -> Result<(), SourceError> {
        let mut order: Vec<usize> = (0..self.slots.len()).filter(|&i| matches!(self.slots[i].1, Slot::Arrow { .. })).collect();
        order.sort_by_key(|&i| self.slots[i].0);
        let mut pieces = Vec::new();
        for group in self.runs_by_schema(&order) {
            let piece = self.gather(group)?;
            let index = pieces.len();
            for (k, &i) in group.iter().enumerate() {
                self.slots[i].1 = Slot::Arrow { piece: index, row: k };
            }
            pieces.push(piece);
        }
        self.piece_rows = self.slots.len();
        self.pieces = pieces;
        Ok(())
    }

    /// Splits slot indices (in order) into runs whose pieces share a schema.
    fn runs_by_schema<'a>(&self, order: &'a [usize]) -> Vec<&'a [usize]> {
        let schema_of = |i: usize| match self.slots[i].1 {
            Slot::Arrow { piece, .. } => Some(self.pieces[piece].schema()),
            Slot::Value(_) => None,
        };
        let mut runs = Vec::new();
        let mut start = 0;
        for k in 1..=order.len() {
            if k == order.len() || schema_of(order[k]) != schema_of(order[start]) {
                runs.push(&order[start..k]);
                start = k;
            }
        }
        runs
    }

    /// One batch of the Arrow rows at these slots, in this order.
    fn gather(&self, slots: &[usize]) -> Result<RecordBatch, SourceError> {
        let indices: Vec<(usize, usize)> = slots
            .iter()
            .map(|&i| match self.slots[i].1 {
                Slot::Arrow { piece, row } => (piece, row),
                Slot::Value(_) => unreachable!("gather is given Arrow slots only"),
            })
            .collect();
        let first = &self.pieces[indices[0].0];
        if first.num_columns() == 0 {
            let options = RecordBatchOptions::new().with_row_count(Some(indices.len()));
            return RecordBatch::try_new_with_options(first.schema(), vec![], &options).map_err(|e| self.internal(e));
        }
        let refs: Vec<&RecordBatch> = self.pieces.iter().collect();
        arrow_select::interleave::interleave_record_batch(&refs, &indices).map_err(|e| self.internal(e))
    }

    /// Copying rows of a valid batch fails only on a defect.
    fn internal(&self, e: ArrowError) -> SourceError {
        SourceError::Internal { path: self.path.clone(), message: format!("copying sampled rows: {e}") }
    }

    /// The sample in stream order, as batches of like rows.
    pub fn finish(mut self) -> Result<Vec<SampleBatch>, SourceError> {
        let mut order: Vec<usize> = (0..self.slots.len()).collect();
        order.sort_by_key(|&i| self.slots[i].0);
        let mut out = Vec::new();
        for run in self.runs_by_schema(&order) {
            let rows = run.iter().map(|&i| self.slots[i].0).collect();
            let batch = match self.slots[run[0]].1 {
                Slot::Arrow { .. } => Batch::Arrow(self.gather(run)?),
                Slot::Value(_) => Batch::Rows(
                    run.iter()
                        .map(|&i| match std::mem::replace(&mut self.slots[i].1, Slot::Value(Value::Null)) {
                            Slot::Value(v) => v,
                            Slot::Arrow { .. } => unreachable!("a run holds one kind of slot"),
                        })
                        .collect(),
                ),
            };
            out.push(SampleBatch { batch, rows });
        }
        Ok(out)
    }
}
