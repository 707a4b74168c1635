//! Filters as polars expressions, typed by the scan's schema so that a value
//! written as text ("42", "2026-03-02T08:00:00Z") is compared as what the
//! column holds. A condition on a path inside a list or map holds for a row
//! when any element meets it.

use polars::prelude::*;

use super::filter::{Condition, RowFilter};
use super::scan::ROW_COLUMN;
use crate::path::Step;

/// The expression keeping the rows every filter keeps; `Err` says why a
/// filter cannot be expressed (e.g. a value that is not of the column's type).
pub fn predicate(filters: &[RowFilter], schema: &Schema) -> Result<Option<Expr>, String> {
    let mut all: Option<Expr> = None;
    for filter in filters {
        let one = match filter {
            RowFilter::Rows(rows) => rows_expr(rows),
            RowFilter::Field { path, condition } => field_expr(path, condition, schema)?,
        };
        all = Some(match all {
            None => one,
            Some(before) => before.and(one),
        });
    }
    Ok(all)
}

fn rows_expr(rows: &[u64]) -> Expr {
    rows.iter()
        .map(|r| col(ROW_COLUMN).eq(lit(*r as IdxSize)))
        .reduce(|a, b| a.or(b))
        .unwrap_or_else(|| lit(false))
}

fn field_expr(path: &str, condition: &Condition, schema: &Schema) -> Result<Expr, String> {
    let steps = crate::path::steps(path).ok_or_else(|| format!("{path:?} is not a field path"))?;
    let Some((Step::Member(top), rest)) = steps.split_first() else {
        return Err(format!("{path:?} does not start with a field name"));
    };
    let dtype = schema.get(top.as_str()).ok_or_else(|| format!("the rows have no column {top:?}"))?;
    nested(col(top.as_str()), dtype, rest, &|value, dtype| leaf(value, dtype, condition))
        .map_err(|e| format!("{path}: {e}"))
}

/// Walks `steps` down from `value` (of `dtype`), applying `test` at the end;
/// lists and maps are entered with "any element".
fn nested(value: Expr, dtype: &DataType, steps: &[Step], test: &dyn Fn(Expr, &DataType) -> Result<Expr, String>) -> Result<Expr, String> {
    let Some((step, rest)) = steps.split_first() else { return test(value, dtype) };
    match (step, dtype) {
        (Step::Member(name), DataType::Struct(fields)) => {
            let field = fields.iter().find(|f| f.name() == name.as_str()).ok_or_else(|| format!("no member {name:?}"))?;
            nested(value.struct_().field_by_name(name), field.dtype(), rest, test)
        }
        (Step::Element, DataType::List(inner) | DataType::Array(inner, _)) => {
            let inside = nested(element(), inner, rest, test)?;
            Ok(value.list().eval(inside).list().max())
        }
        // A map is read as a list of {key, value} entries.
        (Step::MapKey | Step::MapValue, DataType::List(inner)) => {
            let DataType::Struct(entry) = inner.as_ref() else { return Err("a map that is not a list of entries".into()) };
            let index = usize::from(*step == Step::MapValue);
            let part = entry.get(index).ok_or("a map entry without a key and a value")?;
            let inside = nested(element().struct_().field_by_index(index as i64), part.dtype(), rest, test)?;
            Ok(value.list().eval(inside).list().max())
        }
        (step, dtype) => Err(format!("cannot follow {step:?} into a column of type {dtype}")),
    }
}

/// The condition on a value of `dtype`.
fn leaf(value: Expr, dtype: &DataType, condition: &Condition) -> Result<Expr, String> {
    Ok(match condition {
        Condition::Empty => value.is_null(),
        Condition::Between { low, high, high_inclusive } => {
            let number = as_number(value, dtype)?;
            let below = if *high_inclusive { number.clone().lt_eq(lit(*high)) } else { number.clone().lt(lit(*high)) };
            number.gt_eq(lit(*low)).and(below)
        }
        Condition::Outside { low, high } => {
            let number = as_number(value, dtype)?;
            number.clone().lt(lit(*low)).or(number.gt(lit(*high)))
        }
        Condition::During { start, end } => during(value, dtype, *start, *end)?,
        Condition::OneOf(values) => {
            let mut any: Option<Expr> = None;
            for v in values {
                let one = equals(value.clone(), dtype, v)?;
                any = Some(match any {
                    None => one,
                    Some(before) => before.or(one),
                });
            }
            any.unwrap_or_else(|| lit(false))
        }
    })
}

fn as_number(value: Expr, dtype: &DataType) -> Result<Expr, String> {
    if dtype.is_primitive_numeric() || dtype.is_decimal() {
        Ok(value.cast(DataType::Float64))
    } else if matches!(dtype, DataType::Datetime(..) | DataType::Date | DataType::Duration(_) | DataType::Time) {
        Ok(value.cast(DataType::Int64).cast(DataType::Float64))
    } else {
        Err(format!("a range of numbers on a {dtype} column"))
    }
}

/// Units of a temporal column per second.
fn per_second(dtype: &DataType) -> Option<i64> {
    match dtype {
        DataType::Datetime(TimeUnit::Nanoseconds, _) | DataType::Duration(TimeUnit::Nanoseconds) | DataType::Time => {
            Some(1_000_000_000)
        }
        DataType::Datetime(TimeUnit::Microseconds, _) | DataType::Duration(TimeUnit::Microseconds) => Some(1_000_000),
        DataType::Datetime(TimeUnit::Milliseconds, _) | DataType::Duration(TimeUnit::Milliseconds) => Some(1_000),
        _ => None,
    }
}

fn during(value: Expr, dtype: &DataType, start: i64, end: i64) -> Result<Expr, String> {
    match dtype {
        DataType::Datetime(..) => {
            let per = per_second(dtype).unwrap_or(1);
            let ticks = value.cast(DataType::Int64);
            Ok(ticks.clone().gt_eq(lit(start.saturating_mul(per))).and(ticks.lt(lit(end.saturating_mul(per)))))
        }
        DataType::Date => {
            let days = value.cast(DataType::Int32).cast(DataType::Int64);
            Ok(days.clone().gt_eq(lit(start.div_euclid(86_400))).and(days.lt(lit(end.div_euclid(86_400)))))
        }
        // Instants kept as RFC 3339 text (JSON, CSV) sort as text when they
        // share one offset, as exports almost always do.
        DataType::String => {
            let from = crate::time::rfc3339_from_unix(start);
            let to = crate::time::rfc3339_from_unix(end);
            Ok(value.clone().gt_eq(lit(from[..19].to_string())).and(value.lt(lit(to[..19].to_string()))))
        }
        _ => Err(format!("a range of instants on a {dtype} column")),
    }
}

/// `value == text`, with `text` read as the column's type.
fn equals(value: Expr, dtype: &DataType, text: &str) -> Result<Expr, String> {
    let mismatch = || format!("{text:?} is not a value of a {dtype} column");
    Ok(match dtype {
        DataType::String => value.eq(lit(text.to_string())),
        DataType::Boolean => value.eq(lit(text.parse::<bool>().map_err(|_| mismatch())?)),
        d if d.is_integer() => match text.parse::<i64>() {
            Ok(n) => value.cast(DataType::Int64).eq(lit(n)),
            Err(_) => value.cast(DataType::UInt64).eq(lit(text.parse::<u64>().map_err(|_| mismatch())?)),
        },
        d if d.is_float() || d.is_decimal() => value.cast(DataType::Float64).eq(lit(text.parse::<f64>().map_err(|_| mismatch())?)),
        DataType::Datetime(..) => {
            let nanos = rfc3339_nanos(text).ok_or_else(mismatch)?;
            let per = per_second(dtype).unwrap_or(1) as i128;
            value.cast(DataType::Int64).eq(lit((nanos * per / 1_000_000_000) as i64))
        }
        DataType::Date => {
            let secs = crate::time::rfc3339_seconds(&format!("{}T00:00:00Z", text.get(..10).unwrap_or(text))).ok_or_else(mismatch)?;
            value.cast(DataType::Int32).cast(DataType::Int64).eq(lit(secs.div_euclid(86_400)))
        }
        _ => value.cast(DataType::String).eq(lit(text.to_string())),
    })
}

/// Nanoseconds since the epoch of an RFC 3339 instant with an optional fraction.
fn rfc3339_nanos(text: &str) -> Option<i128> {
    let secs = crate::time::rfc3339_seconds(text)? as i128;
    let fraction = text.get(19..).filter(|f| f.starts_with('.')).map(|f| {
        let digits: String = f[1..].chars().take_while(char::is_ascii_digit).take(9).collect();
        format!("{digits:0<9}").parse::<i128>().unwrap_or(0)
    });
    Some(secs * 1_000_000_000 + fraction.unwrap_or(0))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fractions_of_a_second_are_kept() {
        assert_eq!(rfc3339_nanos("1970-01-01T00:00:01Z"), Some(1_000_000_000));
        assert_eq!(rfc3339_nanos("1970-01-01T00:00:01.25Z"), Some(1_250_000_000));
        assert_eq!(rfc3339_nanos("1970-01-01T01:00:00.000001+01:00"), Some(1_000));
        assert_eq!(rfc3339_nanos("yesterday"), None);
    }
}
