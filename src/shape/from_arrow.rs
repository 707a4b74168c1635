//! Observing Arrow record batches into the field tree, in bulk.
//!
//! Nested arrays carry values at positions that do not count (children of a
//! null struct, elements under a null list), so each call gets a mask of the
//! positions that are places of the field; `None` means all of them.

use arrow_array::cast::AsArray;
use arrow_array::types::*;
use arrow_array::{Array, ArrowPrimitiveType, RecordBatch};
use arrow_buffer::{BooleanBuffer, BooleanBufferBuilder};
use std::sync::Arc;

use arrow_schema::{DataType, Field, TimeUnit, UnionMode};

use super::declared::Declared;
use super::{FieldShape, Kind, Role};
use crate::profile::hash;
use crate::profile::top::Kept;

pub fn observe_batch(root: &mut FieldShape, batch: &RecordBatch) {
    let schema = batch.schema();
    let names = member_names(schema.fields());
    for ((field, column), name) in schema.fields().iter().zip(batch.columns()).zip(&names) {
        let child = child_for(root, name, field, Role::Member);
        observe_array(child, column.as_ref(), None);
    }
}

/// The child for `field`, declaring its type if the schema seed did not.
fn child_for<'a>(node: &'a mut FieldShape, key: &str, field: &Field, role: Role) -> &'a mut FieldShape {
    let child = node.child_mut_named(key, field.name(), role);
    if child.declared.is_none() {
        child.declared = Some(Declared {
            arrow: field.data_type().to_string(),
            data_type: field.data_type().clone(),
            nullable: field.is_nullable(),
            parquet: None,
        });
    }
    child
}

/// Member names, with a repeated name (Arrow allows them) told apart as
/// `name#2`, `name#3`… so each field keeps its own place in the tree.
pub fn member_names<'a>(fields: impl IntoIterator<Item = &'a arrow_schema::FieldRef>) -> Vec<String> {
    let mut seen: std::collections::HashMap<&str, usize> = std::collections::HashMap::new();
    fields
        .into_iter()
        .map(|f| {
            let n = seen.entry(f.name().as_str()).or_insert(0);
            *n += 1;
            if *n == 1 { f.name().clone() } else { format!("{}#{n}", f.name()) }
        })
        .collect()
}

pub fn kind_of(data_type: &DataType) -> Kind {
    use DataType::*;
    match data_type {
        Null => Kind::Null,
        Boolean => Kind::Bool,
        Int8 | Int16 | Int32 | Int64 | UInt8 | UInt16 | UInt32 | UInt64 => Kind::Int,
        Float16 | Float32 | Float64 => Kind::Float,
        Decimal32(..) | Decimal64(..) | Decimal128(..) | Decimal256(..) => Kind::Decimal,
        Utf8 | LargeUtf8 | Utf8View => Kind::String,
        Binary | LargeBinary | BinaryView | FixedSizeBinary(_) => Kind::Binary,
        Date32 | Date64 => Kind::Date,
        Time32(_) | Time64(_) => Kind::Time,
        Timestamp(..) => Kind::Timestamp,
        Duration(_) => Kind::Duration,
        Interval(_) => Kind::Interval,
        Struct(_) => Kind::Object,
        List(_) | LargeList(_) | ListView(_) | LargeListView(_) | FixedSizeList(..) => Kind::Array,
        Map(..) => Kind::Map,
        Dictionary(_, v) => kind_of(v),
        RunEndEncoded(_, v) => kind_of(v.data_type()),
        // A union's kind is that of the variant each value takes (see below).
        Union(..) => Kind::Object,
    }
}

fn and_masks(a: Option<&BooleanBuffer>, b: Option<&BooleanBuffer>) -> Option<BooleanBuffer> {
    match (a, b) {
        (None, None) => None,
        (Some(m), None) | (None, Some(m)) => Some(m.clone()),
        (Some(a), Some(b)) => Some(a & b),
    }
}

fn observe_array(node: &mut FieldShape, array: &dyn Array, mask: Option<&BooleanBuffer>) {
    let len = array.len();
    let places = mask.map_or(len, |m| m.count_set_bits()) as u64;
    node.appeared += places;
    let valid = array.logical_nulls().map(|n| n.into_inner());
    let present_mask = and_masks(mask, valid.as_ref());
    let present = present_mask.as_ref().map_or(len, |p| p.count_set_bits()) as u64;
    node.kinds.add(Kind::Null, places - present);
    if present > 0 || array.data_type().is_nested() {
        observe_present(node, array, present_mask.as_ref(), present);
    }
}

/// Positions set in `mask`, or all of `0..len`.
fn positions(mask: Option<&BooleanBuffer>, len: usize) -> Positions<'_> {
    match mask {
        Some(m) => Positions::Set(m.set_indices()),
        None => Positions::All(0..len),
    }
}

/// The positions of [`positions`]: an enum rather than a boxed iterator,
/// so the per-value loops that use it inline (a virtual call per value
/// showed in profiles).
enum Positions<'a> {
    Set(arrow_buffer::bit_iterator::BitIndexIterator<'a>),
    All(std::ops::Range<usize>),
}

impl Iterator for Positions<'_> {
    type Item = usize;

    fn next(&mut self) -> Option<usize> {
        match self {
            Positions::Set(set) => set.next(),
            Positions::All(all) => all.next(),
        }
    }

    fn size_hint(&self) -> (usize, Option<usize>) {
        match self {
            Positions::Set(set) => set.size_hint(),
            Positions::All(all) => all.size_hint(),
        }
    }
}

fn observe_present(node: &mut FieldShape, array: &dyn Array, present: Option<&BooleanBuffer>, n: u64) {
    use DataType::*;
    match array.data_type() {
        Int8 => int_range::<Int8Type>(node, array, present),
        Int16 => int_range::<Int16Type>(node, array, present),
        Int32 => int_range::<Int32Type>(node, array, present),
        Int64 => int_range::<Int64Type>(node, array, present),
        UInt8 => int_range::<UInt8Type>(node, array, present),
        UInt16 => int_range::<UInt16Type>(node, array, present),
        UInt32 => int_range::<UInt32Type>(node, array, present),
        UInt64 => int_range::<UInt64Type>(node, array, present),
        Utf8 => {
            let a = array.as_string::<i32>();
            observe_strings(node, n, positions(present, a.len()).map(|i| a.value(i)));
        }
        LargeUtf8 => {
            let a = array.as_string::<i64>();
            observe_strings(node, n, positions(present, a.len()).map(|i| a.value(i)));
        }
        Utf8View => {
            let a = array.as_string_view();
            observe_strings(node, n, positions(present, a.len()).map(|i| a.value(i)));
        }
        Struct(fields) => {
            node.kinds.add(Kind::Object, n);
            let s = array.as_struct();
            let names = member_names(fields);
            for ((field, column), name) in fields.iter().zip(s.columns()).zip(&names) {
                let child = child_for(node, name, field, Role::Member);
                observe_array(child, column.as_ref(), present);
            }
        }
        List(field) => {
            let l = array.as_list::<i32>();
            let ranges = positions(present, l.len()).map(|i| (l.value_offsets()[i] as usize, l.value_length(i) as usize));
            observe_list(node, n, field, l.values().as_ref(), ranges);
        }
        LargeList(field) => {
            let l = array.as_list::<i64>();
            let ranges = positions(present, l.len()).map(|i| (l.value_offsets()[i] as usize, l.value_length(i) as usize));
            observe_list(node, n, field, l.values().as_ref(), ranges);
        }
        ListView(field) => {
            let l = array.as_list_view::<i32>();
            let ranges = positions(present, l.len()).map(|i| (l.value_offsets()[i] as usize, l.value_sizes()[i] as usize));
            observe_list(node, n, field, l.values().as_ref(), ranges);
        }
        LargeListView(field) => {
            let l = array.as_list_view::<i64>();
            let ranges = positions(present, l.len()).map(|i| (l.value_offsets()[i] as usize, l.value_sizes()[i] as usize));
            observe_list(node, n, field, l.values().as_ref(), ranges);
        }
        FixedSizeList(field, size) => {
            let l = array.as_fixed_size_list();
            let size = *size as usize;
            let ranges = positions(present, l.len()).map(|i| (i * size, size));
            observe_list(node, n, field, l.values().as_ref(), ranges);
        }
        Map(_, _) => {
            node.kinds.add(Kind::Map, n);
            let m = array.as_map();
            let ranges: Vec<(usize, usize)> =
                positions(present, m.len()).map(|i| (m.value_offsets()[i] as usize, m.value_length(i) as usize)).collect();
            if let Some(stats) = node.stats.as_deref_mut() {
                stats.add_list_lengths(ranges.iter().map(|&(_, len)| len));
            }
            let mask = ranges_mask(m.entries().len(), ranges.into_iter());
            let entries = m.entries();
            if let DataType::Struct(kv) = entries.data_type()
                && kv.len() == 2
            {
                observe_array(child_for(node, kv[0].name(), &kv[0], Role::MapKey), entries.column(0).as_ref(), Some(&mask));
                observe_array(child_for(node, kv[1].name(), &kv[1], Role::MapValue), entries.column(1).as_ref(), Some(&mask));
            }
        }
        Union(fields, mode) => {
            let u = array.as_union();
            let names = member_names(fields.iter().map(|(_, f)| f));
            for ((type_id, field), name) in fields.iter().zip(&names) {
                let chosen: Vec<usize> = positions(present, u.len()).filter(|&i| u.type_id(i) == type_id).collect();
                node.kinds.add(kind_of(field.data_type()), chosen.len() as u64);
                let child_array = u.child(type_id);
                let child_positions: Vec<usize> = match mode {
                    UnionMode::Sparse => chosen,
                    UnionMode::Dense => chosen.iter().map(|&i| u.value_offset(i)).collect(),
                };
                let mask = ranges_mask(child_array.len(), child_positions.into_iter().map(|p| (p, 1)));
                let child = child_for(node, name, field, Role::Variant);
                observe_array(child, child_array.as_ref(), Some(&mask));
            }
        }
        Dictionary(_, value_type) if super::dictionary::handles(value_type) => {
            super::dictionary::observe(node, array, present, n);
        }
        Dictionary(..) | RunEndEncoded(..) => {
            let target = value_type_of(array.data_type());
            match arrow_cast::cast(array, &target) {
                Ok(plain) => observe_present(node, plain.as_ref(), present, n),
                Err(_) => node.kinds.add(kind_of(&target), n),
            }
        }
        Float16 => {
            let a = array.as_primitive::<Float16Type>();
            observe_floats(node, n, positions(present, a.len()).map(|i| a.values()[i].to_f64()));
        }
        Float32 => {
            let a = array.as_primitive::<Float32Type>();
            observe_floats(node, n, positions(present, a.len()).map(|i| a.values()[i] as f64));
        }
        Float64 => {
            let a = array.as_primitive::<Float64Type>();
            observe_floats(node, n, positions(present, a.len()).map(|i| a.values()[i]));
        }
        Boolean => {
            let a = array.as_boolean();
            if let Some(stats) = node.stats.as_deref_mut() {
                let values: Vec<bool> = positions(present, a.len()).map(|i| a.value(i)).collect();
                let hashes: Vec<u64> = values.iter().map(|&b| hash::bool(b)).collect();
                stats.add_scalars(&hashes, |i| Kept::Text(values[i].to_string()));
            }
            node.kinds.add(Kind::Bool, n);
        }
        Decimal32(_, scale) => observe_decimals::<Decimal32Type>(node, n, array, present, *scale),
        Decimal64(_, scale) => observe_decimals::<Decimal64Type>(node, n, array, present, *scale),
        Decimal128(_, scale) => observe_decimals::<Decimal128Type>(node, n, array, present, *scale),
        Binary => {
            let a = array.as_binary::<i32>();
            observe_raw(node, Kind::Binary, n, array, positions(present, a.len()).map(|i| (i, a.value(i))));
        }
        LargeBinary => {
            let a = array.as_binary::<i64>();
            observe_raw(node, Kind::Binary, n, array, positions(present, a.len()).map(|i| (i, a.value(i))));
        }
        FixedSizeBinary(_) => {
            let a = array.as_fixed_size_binary();
            observe_raw(node, Kind::Binary, n, array, positions(present, a.len()).map(|i| (i, a.value(i))));
        }
        Date32 => observe_primitive_raw::<Date32Type>(node, Kind::Date, n, array, present),
        Date64 => observe_primitive_raw::<Date64Type>(node, Kind::Date, n, array, present),
        Time32(TimeUnit::Second) => observe_primitive_raw::<Time32SecondType>(node, Kind::Time, n, array, present),
        Time32(TimeUnit::Millisecond) => observe_primitive_raw::<Time32MillisecondType>(node, Kind::Time, n, array, present),
        Time64(TimeUnit::Microsecond) => observe_primitive_raw::<Time64MicrosecondType>(node, Kind::Time, n, array, present),
        Time64(TimeUnit::Nanosecond) => observe_primitive_raw::<Time64NanosecondType>(node, Kind::Time, n, array, present),
        Duration(TimeUnit::Second) => observe_primitive_raw::<DurationSecondType>(node, Kind::Duration, n, array, present),
        Duration(TimeUnit::Millisecond) => observe_primitive_raw::<DurationMillisecondType>(node, Kind::Duration, n, array, present),
        Duration(TimeUnit::Microsecond) => observe_primitive_raw::<DurationMicrosecondType>(node, Kind::Duration, n, array, present),
        Duration(TimeUnit::Nanosecond) => observe_primitive_raw::<DurationNanosecondType>(node, Kind::Duration, n, array, present),
        Timestamp(unit, zone) => {
            let (scale, raw) = match unit {
                arrow_schema::TimeUnit::Second => (1, array.as_primitive::<TimestampSecondType>().values().clone()),
                arrow_schema::TimeUnit::Millisecond => (1_000, array.as_primitive::<TimestampMillisecondType>().values().clone()),
                arrow_schema::TimeUnit::Microsecond => (1_000_000, array.as_primitive::<TimestampMicrosecondType>().values().clone()),
                arrow_schema::TimeUnit::Nanosecond => (1_000_000_000, array.as_primitive::<TimestampNanosecondType>().values().clone()),
            };
            if let Some(stats) = node.stats.as_deref_mut() {
                let shown_as = Arc::new(array.data_type().clone());
                let values: Vec<i64> = positions(present, array.len()).map(|i| raw[i]).collect();
                let hashes: Vec<u64> = values.iter().map(|v| hash::other(&v.to_le_bytes())).collect();
                let keep = |i: usize| Kept::Raw { raw: values[i].into(), shown_as: shown_as.clone() };
                // Only zoned timestamps are instants; local ones have no place in time.
                if zone.is_some() {
                    let seconds: Vec<i64> = values.iter().map(|v| v.div_euclid(scale)).collect();
                    stats.add_scalars_then(&hashes, keep, |stats, piece, run| stats.add_instants_by_run(&seconds, piece, run));
                } else {
                    stats.add_scalars(&hashes, keep);
                }
            }
            node.kinds.add(Kind::Timestamp, n);
        }
        other => node.kinds.add(kind_of(other), n),
    }
}

fn observe_strings<'a>(node: &mut FieldShape, n: u64, values: impl Iterator<Item = &'a str>) {
    let forms = &mut node.kinds.forms;
    match node.stats.as_deref_mut() {
        Some(stats) => {
            let values: Vec<&str> = values.collect();
            let hashes: Vec<u64> = values.iter().map(|v| hash::string(v)).collect();
            stats.add_text_scalars(&hashes, &values, forms);
        }
        None => values.for_each(|v| {
            forms.observe(v);
        }),
    }
    node.kinds.add(Kind::String, n);
}

/// Floats: numbers, distinct and top values (NaN counted apart).
fn observe_floats(node: &mut FieldShape, n: u64, values: impl Iterator<Item = f64>) {
    if let Some(stats) = node.stats.as_deref_mut() {
        let not_nan: Vec<f64> = values.filter(|v| !v.is_nan()).collect();
        stats.add_nan(n - not_nan.len() as u64);
        let hashes: Vec<u64> = not_nan.iter().map(|&v| hash::float(v)).collect();
        stats.add_numeric_scalars(&hashes, &not_nan, |i| Kept::Float(not_nan[i]));
    }
    node.kinds.add(Kind::Float, n);
}

/// Other scalars: distinct and top values by their raw bytes, shown as
/// Arrow displays them.
fn observe_raw<'a>(
    node: &mut FieldShape,
    kind: Kind,
    n: u64,
    array: &dyn Array,
    values: impl Iterator<Item = (usize, &'a [u8])>,
) {
    if let Some(stats) = node.stats.as_deref_mut() {
        let (at, hashes): (Vec<usize>, Vec<u64>) = values.map(|(i, bytes)| (i, hash::other(bytes))).unzip();
        stats.add_scalars(&hashes, |j| {
            Kept::Text(arrow_cast::display::array_value_to_string(array, at[j]).unwrap_or_default())
        });
    }
    node.kinds.add(kind, n);
}

/// Fixed-width primitives (temporal) by their native bytes, kept as raw
/// integers and rendered only if reported.
fn observe_primitive_raw<T>(node: &mut FieldShape, kind: Kind, n: u64, array: &dyn Array, present: Option<&BooleanBuffer>)
where
    T: ArrowPrimitiveType,
    T::Native: Into<i128>,
{
    let a = array.as_primitive::<T>();
    let bytes: &[u8] = a.values().inner().as_slice();
    let width = std::mem::size_of::<T::Native>();
    if let Some(stats) = node.stats.as_deref_mut() {
        let shown_as = Arc::new(array.data_type().clone());
        let at: Vec<usize> = positions(present, a.len()).collect();
        let hashes: Vec<u64> = at.iter().map(|&i| hash::other(&bytes[i * width..(i + 1) * width])).collect();
        stats.add_scalars(&hashes, |j| Kept::Raw { raw: a.values()[at[j]].into(), shown_as: shown_as.clone() });
    }
    node.kinds.add(kind, n);
}

/// Decimals: numbers (value / 10^scale, as f64), distinct and top values.
fn observe_decimals<T>(node: &mut FieldShape, n: u64, array: &dyn Array, present: Option<&BooleanBuffer>, scale: i8)
where
    T: ArrowPrimitiveType,
    T::Native: Into<i128>,
{
    let a = array.as_primitive::<T>();
    let divisor = 10f64.powi(scale as i32);
    if let Some(stats) = node.stats.as_deref_mut() {
        let shown_as = Arc::new(array.data_type().clone());
        let raws: Vec<i128> = positions(present, a.len()).map(|i| a.values()[i].into()).collect();
        let mut numbers = as_f64s(&raws);
        numbers.iter_mut().for_each(|x| *x /= divisor);
        let hashes: Vec<u64> = raws.iter().map(|&raw| hash::decimal(raw)).collect();
        stats.add_numeric_scalars(&hashes, &numbers, |i| Kept::Raw { raw: raws[i], shown_as: shown_as.clone() });
    }
    node.kinds.add(Kind::Decimal, n);
}

/// Integers as the nearest f64s, through i64 when every one fits it (the
/// same rounding): i128 to f64 is a library call, a tenth of a decimal
/// column's profile. The choice is made once per run; made per value, the
/// compiler folds both ways back into the library call.
fn as_f64s(values: &[i128]) -> Vec<f64> {
    if values.iter().all(|&v| v as i64 as i128 == v) {
        values.iter().map(|&v| v as i64 as f64).collect()
    } else {
        values.iter().map(|&v| v as f64).collect()
    }
}

/// A list's elements: the (offset, length) ranges of its present values.
fn observe_list(node: &mut FieldShape, n: u64, field: &Field, values: &dyn Array, ranges: impl Iterator<Item = (usize, usize)>) {
    node.kinds.add(Kind::Array, n);
    let ranges: Vec<(usize, usize)> = ranges.collect();
    if let Some(stats) = node.stats.as_deref_mut() {
        stats.add_list_lengths(ranges.iter().map(|&(_, len)| len));
    }
    let mask = ranges_mask(values.len(), ranges.into_iter());
    observe_array(child_for(node, field.name(), field, Role::Element), values, Some(&mask));
}

fn value_type_of(data_type: &DataType) -> DataType {
    match data_type {
        DataType::Dictionary(_, v) => v.as_ref().clone(),
        DataType::RunEndEncoded(_, v) => v.data_type().clone(),
        other => other.clone(),
    }
}

fn int_range<T>(node: &mut FieldShape, array: &dyn Array, present: Option<&BooleanBuffer>)
where
    T: ArrowPrimitiveType,
    T::Native: Into<i128>,
{
    let values = array.as_primitive::<T>().values();
    let present_values: Vec<i128> = match present {
        Some(mask) => mask.set_indices().map(|i| values[i].into()).collect(),
        None => values.iter().map(|&v| v.into()).collect(),
    };
    let (lo, hi) = present_values.iter().fold((i128::MAX, i128::MIN), |(lo, hi), &v| (lo.min(v), hi.max(v)));
    if let Some(stats) = node.stats.as_deref_mut() {
        let numbers = as_f64s(&present_values);
        let hashes: Vec<u64> = present_values.iter().map(|&v| hash::int(v)).collect();
        stats.add_numeric_scalars(&hashes, &numbers, |j| Kept::Int(present_values[j]));
    }
    node.kinds.add(Kind::Int, present_values.len() as u64);
    if !present_values.is_empty() {
        node.kinds.widen_int_range(lo, hi);
    }
}

/// A mask of length `len` with the given (start, length) ranges set.
fn ranges_mask(len: usize, ranges: impl Iterator<Item = (usize, usize)>) -> BooleanBuffer {
    let mut builder = BooleanBufferBuilder::new(len);
    // Lists' ranges come in order and do not overlap: append them as runs.
    // Ranges out of order (list views may share or reorder) set bit by bit.
    let mut in_order = true;
    for (start, n) in ranges {
        let end = (start + n).min(len);
        if in_order && start >= builder.len() {
            builder.append_n(start.min(len) - builder.len(), false);
            builder.append_n(end.saturating_sub(start), true);
            continue;
        }
        if in_order {
            in_order = false;
            builder.append_n(len - builder.len(), false);
        }
        (start..end).for_each(|i| builder.set_bit(i, true));
    }
    if builder.len() < len {
        builder.append_n(len - builder.len(), false);
    }
    builder.finish()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn raw_integers_round_to_the_same_f64_either_way() {
        let fit = [0, -1, (1 << 53) + 1, -(1 << 53) - 1, i64::MAX as i128, i64::MIN as i128];
        let wide = [i64::MAX as i128 + 1, i64::MIN as i128 - 1, i128::MAX, i128::MIN];
        for run in [&fit[..], &wide[..], &[&fit[..], &wide[..]].concat()] {
            let expected: Vec<u64> = run.iter().map(|&v| (v as f64).to_bits()).collect();
            assert_eq!(as_f64s(run).iter().map(|x| x.to_bits()).collect::<Vec<_>>(), expected, "{run:?}");
        }
    }

    #[test]
    fn ranges_mask_sets_exactly_the_ranges_in_any_order() {
        let set = |len, ranges: &[(usize, usize)]| -> Vec<usize> {
            ranges_mask(len, ranges.iter().copied()).set_indices().collect()
        };
        assert_eq!(set(10, &[(1, 2), (3, 0), (5, 3)]), [1, 2, 5, 6, 7]);
        // Out of order and overlapping (list views), and past the end.
        assert_eq!(set(10, &[(6, 2), (1, 1), (6, 3)]), [1, 6, 7, 8]);
        assert_eq!(set(4, &[(2, 5)]), [2, 3]);
        assert_eq!(set(3, &[]), Vec::<usize>::new());
        assert_eq!(ranges_mask(3, std::iter::empty()).len(), 3);
    }
}
