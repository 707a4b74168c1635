//! Dictionary-encoded text columns (Parquet chunks read as Arrow
//! dictionaries, Arrow IPC dictionaries): the keys of every batch that
//! shares one dictionary are counted, and each distinct text is observed
//! once, with its count, when the dictionary changes or the field is read.
//! A column of a few thousand cities then costs a key count per row
//! instead of a hash, a length and a form per row.

use std::sync::Arc;

use arrow_array::cast::AsArray;
use arrow_array::types::Int32Type;
use arrow_array::{Array, ArrayRef};
use arrow_buffer::BooleanBuffer;
use arrow_schema::DataType;

use super::{FieldShape, Kind};
use crate::profile::hash;
use crate::profile::top::Kept;

/// Key counts gathered for one dictionary, not yet observed.
#[derive(Debug, Clone)]
pub struct PendingTexts {
    values: ArrayRef,
    counts: Vec<u64>,
}

// Arrow arrays are immutable once built: a panic cannot leave one half
// changed, so a Shape holding one may cross `catch_unwind` (the window's
// workers do).
impl std::panic::RefUnwindSafe for PendingTexts {}
impl std::panic::UnwindSafe for PendingTexts {}

impl PartialEq for PendingTexts {
    fn eq(&self, other: &Self) -> bool {
        self.counts == other.counts && self.values.to_data() == other.values.to_data()
    }
}

/// Whether a dictionary of `value_type` is observed here (text values).
pub fn handles(value_type: &DataType) -> bool {
    matches!(value_type, DataType::Utf8 | DataType::LargeUtf8 | DataType::Utf8View)
}

/// Counts the keys at the present positions of a dictionary array of text.
pub fn observe(node: &mut FieldShape, array: &dyn Array, present: Option<&BooleanBuffer>, n: u64) {
    let dictionary = array.as_any_dictionary();
    let values = dictionary.values();
    if !node.pending.as_ref().is_some_and(|p| Arc::ptr_eq(&p.values, values)) {
        settle(node);
        node.pending = Some(Box::new(PendingTexts { values: values.clone(), counts: vec![0; values.len()] }));
    }
    let counts = &mut node.pending.as_mut().expect("set above").counts;
    // Parquet's dictionaries have 32-bit keys: read them as they are.
    if let Some(typed) = array.as_dictionary_opt::<Int32Type>() {
        let keys = typed.keys().values();
        match present {
            Some(mask) => mask.set_indices().for_each(|i| counts[keys[i] as usize] += 1),
            None => keys.iter().for_each(|&k| counts[k as usize] += 1),
        }
    } else {
        let keys = dictionary.normalized_keys();
        match present {
            Some(mask) => mask.set_indices().for_each(|i| counts[keys[i]] += 1),
            None => keys.iter().for_each(|&k| counts[k] += 1),
        }
    }
    node.kinds.add(Kind::String, n);
}

/// Observes the texts counted so far in this field (not its children).
pub fn settle(node: &mut FieldShape) {
    let Some(pending) = node.pending.take() else { return };
    add_counted(node, &pending);
}

/// Observes another builder's counted texts in this field.
pub fn add_counted(node: &mut FieldShape, pending: &PendingTexts) {
    let values = pending.values.as_ref();
    let counted = pending.counts.iter().enumerate().filter(|(_, c)| **c > 0);
    match values.data_type() {
        DataType::Utf8 => {
            let a = values.as_string::<i32>();
            counted.for_each(|(k, &c)| observe_text(node, a.value(k), c));
        }
        DataType::LargeUtf8 => {
            let a = values.as_string::<i64>();
            counted.for_each(|(k, &c)| observe_text(node, a.value(k), c));
        }
        DataType::Utf8View => {
            let a = values.as_string_view();
            counted.for_each(|(k, &c)| observe_text(node, a.value(k), c));
        }
        other => unreachable!("only text dictionaries are counted, not {other}"),
    }
}

fn observe_text(node: &mut FieldShape, s: &str, count: u64) {
    let form = node.kinds.forms.observe_count(s, count);
    if let Some(stats) = node.stats.as_deref_mut() {
        stats.add_text_count(s, form, count);
        stats.add_scalar_count(hash::string(s), count, || Kept::Text(s.to_string()));
    }
}
