//! One row of Arrow columns as a [`Value`], so the fit's row checks walk
//! Arrow and JSON rows alike. Timestamps and dates become RFC 3339 text
//! (with the fraction digits they need, as JSON would carry them), times and
//! durations their raw count in the column's unit, decimals their text (the
//! checks count digits), maps objects keyed by the key's text.

use arrow_array::cast::AsArray;
use arrow_array::types::*;
use arrow_array::{Array, RecordBatch};
use arrow_schema::{DataType, TimeUnit};

use crate::value::Value;

/// Row `row` of the named top-level columns of `batch`, as an object.
pub fn row_of(batch: &RecordBatch, columns: &[usize], row: usize) -> Value {
    let schema = batch.schema();
    Value::Object(columns.iter().map(|&c| (schema.field(c).name().clone(), value_at(batch.column(c).as_ref(), row))).collect())
}

pub fn value_at(array: &dyn Array, i: usize) -> Value {
    if array.is_null(i) {
        return Value::Null;
    }
    use DataType::*;
    match array.data_type() {
        Null => Value::Null,
        Boolean => Value::Bool(array.as_boolean().value(i)),
        Int8 => Value::Int(array.as_primitive::<Int8Type>().value(i).into()),
        Int16 => Value::Int(array.as_primitive::<Int16Type>().value(i).into()),
        Int32 => Value::Int(array.as_primitive::<Int32Type>().value(i).into()),
        Int64 => Value::Int(array.as_primitive::<Int64Type>().value(i)),
        UInt8 => Value::Int(array.as_primitive::<UInt8Type>().value(i).into()),
        UInt16 => Value::Int(array.as_primitive::<UInt16Type>().value(i).into()),
        UInt32 => Value::Int(array.as_primitive::<UInt32Type>().value(i).into()),
        UInt64 => {
            let v = array.as_primitive::<UInt64Type>().value(i);
            i64::try_from(v).map_or(Value::UInt(v), Value::Int)
        }
        Float16 => Value::Float(array.as_primitive::<Float16Type>().value(i).to_f64()),
        Float32 => Value::Float(array.as_primitive::<Float32Type>().value(i).into()),
        Float64 => Value::Float(array.as_primitive::<Float64Type>().value(i)),
        Utf8 => Value::Str(array.as_string::<i32>().value(i).to_string()),
        LargeUtf8 => Value::Str(array.as_string::<i64>().value(i).to_string()),
        Utf8View => Value::Str(array.as_string_view().value(i).to_string()),
        Date32 => Value::Str(date(array.as_primitive::<Date32Type>().value(i).into())),
        Date64 => Value::Str(date(array.as_primitive::<Date64Type>().value(i).div_euclid(86_400_000))),
        Timestamp(unit, zone) => {
            let (ticks, per_second) = match unit {
                TimeUnit::Second => (count::<TimestampSecondType>(array, i), 1),
                TimeUnit::Millisecond => (count::<TimestampMillisecondType>(array, i), 1_000),
                TimeUnit::Microsecond => (count::<TimestampMicrosecondType>(array, i), 1_000_000),
                TimeUnit::Nanosecond => (count::<TimestampNanosecondType>(array, i), 1_000_000_000),
            };
            Value::Str(crate::time::rfc3339_from_ticks(ticks, per_second, zone.is_some()))
        }
        Duration(unit) => Value::Int(match unit {
            TimeUnit::Second => count::<DurationSecondType>(array, i),
            TimeUnit::Millisecond => count::<DurationMillisecondType>(array, i),
            TimeUnit::Microsecond => count::<DurationMicrosecondType>(array, i),
            TimeUnit::Nanosecond => count::<DurationNanosecondType>(array, i),
        }),
        Time32(TimeUnit::Second) => Value::Int(array.as_primitive::<Time32SecondType>().value(i).into()),
        Time32(_) => Value::Int(array.as_primitive::<Time32MillisecondType>().value(i).into()),
        Time64(TimeUnit::Microsecond) => Value::Int(count::<Time64MicrosecondType>(array, i)),
        Time64(_) => Value::Int(count::<Time64NanosecondType>(array, i)),
        Struct(fields) => {
            let s = array.as_struct();
            Value::Object(fields.iter().zip(s.columns()).map(|(f, c)| (f.name().clone(), value_at(c.as_ref(), i))).collect())
        }
        List(_) => list(array.as_list::<i32>().value(i).as_ref()),
        LargeList(_) => list(array.as_list::<i64>().value(i).as_ref()),
        FixedSizeList(..) => list(array.as_fixed_size_list().value(i).as_ref()),
        Map(..) => {
            let entries = array.as_map().value(i);
            let (keys, values) = (entries.column(0), entries.column(1));
            Value::Object((0..entries.len()).map(|e| (text(keys.as_ref(), e), value_at(values.as_ref(), e))).collect())
        }
        Dictionary(..) => {
            let d = array.as_any_dictionary();
            let key = d.normalized_keys()[i];
            value_at(d.values().as_ref(), key)
        }
        _ => Value::Str(text(array, i)),
    }
}

fn date(days: i64) -> String {
    let (y, m, d) = crate::time::civil_from_days(days);
    format!("{y:04}-{m:02}-{d:02}")
}

fn list(values: &dyn Array) -> Value {
    Value::Array((0..values.len()).map(|e| value_at(values, e)).collect())
}

/// The value as Arrow displays it (decimals, binary, intervals).
fn text(array: &dyn Array, i: usize) -> String {
    arrow_cast::display::array_value_to_string(array, i).unwrap_or_default()
}

/// A 64-bit temporal column's raw count.
fn count<T: ArrowPrimitiveType<Native = i64>>(array: &dyn Array, i: usize) -> i64 {
    array.as_primitive::<T>().value(i)
}

#[cfg(test)]
mod tests {
    use std::sync::Arc;

    use arrow_array::builder::{MapBuilder, StringBuilder, Int32Builder};
    use arrow_array::{ArrayRef, Decimal128Array, ListArray, StructArray, TimestampNanosecondArray};
    use arrow_schema::Field;

    use super::*;

    #[test]
    fn nested_arrow_values_become_values() {
        let ts: ArrayRef = Arc::new(TimestampNanosecondArray::from(vec![Some(1_500), None]).with_timezone("UTC"));
        let dec: ArrayRef = Arc::new(Decimal128Array::from(vec![Some(12345), Some(-5)]).with_precision_and_scale(9, 2).unwrap());
        let s = StructArray::from(vec![(Arc::new(Field::new("at", ts.data_type().clone(), true)), ts)]);
        let list = ListArray::from_iter_primitive::<Int32Type, _, _>(vec![Some(vec![Some(1), None]), Some(vec![])]);
        let mut map = MapBuilder::new(None, StringBuilder::new(), Int32Builder::new());
        map.keys().append_value("k");
        map.values().append_value(7);
        map.append(true).unwrap();
        map.append(false).unwrap();
        let batch = RecordBatch::try_from_iter([
            ("s", Arc::new(s) as ArrayRef),
            ("d", dec),
            ("l", Arc::new(list)),
            ("m", Arc::new(map.finish())),
        ])
        .unwrap();
        let first = row_of(&batch, &[0, 1, 2, 3], 0);
        assert_eq!(
            first,
            Value::Object(vec![
                ("s".into(), Value::Object(vec![("at".into(), Value::Str("1970-01-01T00:00:00.0000015Z".into()))])),
                ("d".into(), Value::Str("123.45".into())),
                ("l".into(), Value::Array(vec![Value::Int(1), Value::Null])),
                ("m".into(), Value::Object(vec![("k".into(), Value::Int(7))])),
            ])
        );
        let second = row_of(&batch, &[0, 1, 3], 1);
        assert_eq!(
            second,
            Value::Object(vec![
                ("s".into(), Value::Object(vec![("at".into(), Value::Null)])),
                ("d".into(), Value::Str("-0.05".into())),
                ("m".into(), Value::Null),
            ])
        );
    }
}
