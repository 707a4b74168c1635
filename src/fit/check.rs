//! Comparing a definition with the data's own model, field by field: what
//! differs, and for each difference the row test that counts the rows it
//! affects (run by [`super::rows`]). Nothing here reads rows.

use super::definition::DefinitionLang;
use super::verdict::{DecimalRule, Problem, RowTest};
use crate::shape::Kind;
use crate::types::model::{Field, Model, Scalar, Slot, Ty, Unit};

/// A difference found, before its rows are counted.
#[derive(Debug, Clone, PartialEq)]
pub struct Finding {
    pub path: String,
    pub problem: Problem,
    /// What the definition says and what the data holds, for the message.
    pub expected: String,
    pub found: String,
    /// The rows this difference affects; `None` when it concerns no row
    /// (a wider definition that loses nothing, say).
    pub test: Option<RowTest>,
}

/// What the comparison needs to know about the two sides.
pub struct Sides<'a> {
    pub definition: &'a Model,
    pub lang: DefinitionLang,
    pub data: &'a Model,
    /// The data declares no schema (JSON, CSV): its values are text or JSON.
    pub data_is_text: bool,
}

pub fn compare(sides: &Sides) -> Vec<Finding> {
    let mut out = Vec::new();
    fields(sides, &sides.definition.root().fields, &sides.data.root().fields, "", &mut out);
    out
}

fn fields(sides: &Sides, defined: &[Field], data: &[Field], parent: &str, out: &mut Vec<Finding>) {
    let path = |name: &str| crate::path::member(parent, name);
    let mut matched = vec![false; data.len()];
    for d in defined {
        let exact = data.iter().position(|f| f.name == d.name);
        let folded = || data.iter().position(|f| f.name.to_lowercase() == d.name.to_lowercase());
        match exact.map(|i| (i, true)).or_else(|| folded().map(|i| (i, false))) {
            Some((i, true)) => {
                matched[i] = true;
                slot(sides, &d.slot, d.may_be_missing, &data[i].slot, data[i].may_be_missing, &path(&d.name), out);
            }
            Some((i, false)) => {
                matched[i] = true;
                out.push(Finding {
                    path: path(&d.name),
                    problem: Problem::NameCase,
                    expected: format!("`{}`", d.name),
                    found: format!("`{}`", data[i].name),
                    test: Some(RowTest::Present(path(&data[i].name))),
                });
            }
            None => out.push(Finding {
                path: path(&d.name),
                problem: if d.may_be_missing { Problem::AbsentButOptional } else { Problem::NotInData },
                expected: label(sides.definition, &d.slot.ty),
                found: "no such field".into(),
                test: Some(RowTest::Present(parent.to_string())),
            }),
        }
    }
    for (f, _) in data.iter().zip(&matched).filter(|(_, m)| !**m) {
        out.push(Finding {
            path: path(&f.name),
            problem: Problem::NotInDefinition,
            expected: "no such field".into(),
            found: label(sides.data, &f.slot.ty),
            test: Some(RowTest::Present(path(&f.name))),
        });
    }
}

/// One place: its emptiness, then its type.
fn slot(sides: &Sides, defined: &Slot, defined_missing: bool, data: &Slot, data_missing: bool, path: &str, out: &mut Vec<Finding>) {
    let nulls = data.nullable && !defined.nullable;
    let missing = data_missing && !defined_missing;
    if nulls || missing {
        let found = match (nulls, missing) {
            (true, true) => "nulls and missing keys",
            (true, false) => "nulls",
            _ => "missing keys",
        };
        out.push(Finding {
            path: path.to_string(),
            problem: Problem::Empty,
            expected: "a value in every row".into(),
            found: found.into(),
            test: Some(RowTest::Empty { null: nulls, missing }),
        });
    }
    ty(sides, &defined.ty, &data.ty, path, out);
}

fn ty(sides: &Sides, defined: &Ty, data: &Ty, path: &str, out: &mut Vec<Finding>) {
    let (def_model, data_model) = (sides.definition, sides.data);
    match (defined, data) {
        (Ty::Any { .. }, _) | (_, Ty::Any { .. }) => {}
        (Ty::Record(d), Ty::Record(x)) => fields(sides, &def_model.records[*d].fields, &data_model.records[*x].fields, path, out),
        (Ty::List(d), Ty::List(x)) => slot(sides, d, true, x, false, &crate::path::element(path), out),
        (Ty::Map { key: dk, value: dv }, Ty::Map { key: xk, value: xv }) => {
            slot(sides, dk, true, xk, false, &crate::path::map_key(path), out);
            slot(sides, dv, true, xv, false, &crate::path::map_value(path), out);
        }
        // A JSON object whose keys vary is a map to a definition that says so.
        (Ty::Map { key, value }, Ty::Record(x)) if key.ty == Ty::Scalar(Scalar::String) && sides.data_is_text => {
            for f in &data_model.records[*x].fields {
                slot(sides, value, true, &f.slot, false, &crate::path::member(path, &f.name), out);
            }
        }
        (_, Ty::Mixed(kinds, variants)) => mixed_data(sides, defined, kinds, variants, path, out),
        (Ty::Mixed(_, choices), _) => {
            if !choices.iter().any(|c| accepts(sides, &c.ty, data, path)) {
                out.push(wrong_type(sides, defined, data, path));
            }
        }
        (Ty::Scalar(a), Ty::Scalar(b)) => scalar(sides, a, b, path, out),
        _ if text_takes_anything(sides, defined) => {}
        _ => out.push(wrong_type(sides, defined, data, path)),
    }
}

/// Spark's JSON reader reads any value into a STRING column as its text.
fn text_takes_anything(sides: &Sides, defined: &Ty) -> bool {
    sides.data_is_text && matches!(sides.lang, DefinitionLang::Scala | DefinitionLang::SparkDdl) && *defined == Ty::Scalar(Scalar::String)
}

/// Whether `defined` takes every value of `data` (no finding at all).
fn accepts(sides: &Sides, defined: &Ty, data: &Ty, path: &str) -> bool {
    let mut scratch = Vec::new();
    ty(sides, defined, data, path, &mut scratch);
    scratch.iter().all(|f| f.test.is_none() && f.problem.is_harmless())
}

/// Data of several kinds: the kinds the definition does not take are the
/// rows that do not fit.
fn mixed_data(sides: &Sides, defined: &Ty, kinds: &[(Kind, u64)], variants: &[Slot], path: &str, out: &mut Vec<Finding>) {
    if text_takes_anything(sides, defined) {
        return;
    }
    let refused: Vec<Kind> = kinds
        .iter()
        .zip(variants)
        .filter(|(_, v)| !accepts(sides, defined, &v.ty, path))
        .map(|((k, _), _)| *k)
        .collect();
    if refused.is_empty() {
        return;
    }
    let names: Vec<&str> = refused.iter().map(|k| k.name()).collect();
    out.push(Finding {
        path: path.to_string(),
        problem: Problem::OtherKinds,
        expected: label(sides.definition, defined),
        found: format!("also {} values", names.join(" and ")),
        test: Some(RowTest::KindIn(refused)),
    });
}

fn wrong_type(sides: &Sides, defined: &Ty, data: &Ty, path: &str) -> Finding {
    Finding {
        path: path.to_string(),
        problem: Problem::WrongType,
        expected: label(sides.definition, defined),
        found: label(sides.data, data),
        test: Some(RowTest::Present(path.to_string())),
    }
}

fn scalar(sides: &Sides, defined: &Scalar, data: &Scalar, path: &str, out: &mut Vec<Finding>) {
    let finding = |problem, test| Finding {
        path: path.to_string(),
        problem,
        expected: scalar_label(defined),
        found: scalar_label(data),
        test,
    };
    use Scalar::*;
    match (defined, data) {
        (Int { .. }, Int { .. }) => {
            let (want, have) = (int_range(defined), int_range(data));
            if have.0 < want.0 || have.1 > want.1 {
                out.push(finding(Problem::Narrower, Some(RowTest::IntOutside { low: want.0, high: want.1 })));
            }
        }
        // JSON numbers: only the ones written with a fraction or exponent fail.
        (Int { .. }, Float { .. }) if sides.data_is_text => out.push(finding(Problem::WrongType, Some(RowTest::KindIn(vec![Kind::Float])))),
        (Float { bits: 16 | 32 }, Float { bits: 64 }) => out.push(finding(Problem::Narrower, Some(RowTest::LosesAsFloat32))),
        (Float { .. }, Int { .. } | Float { .. }) => {}
        // In JSON a decimal is a number like any other.
        (Float { .. }, Decimal { .. }) if sides.lang == DefinitionLang::JsonSchema => {}
        (Float { .. }, Decimal { .. }) => out.push(finding(Problem::Inexact, None)),
        (Decimal { precision, scale }, Int { .. } | Float { .. } | Decimal { .. }) => {
            let floating = sides.lang == DefinitionLang::Rust && *defined == super::definition::FLOATING_DECIMAL;
            let rule = if floating {
                DecimalRule::Floating { digits: *precision as u32 }
            } else {
                DecimalRule::Fixed { whole: (*precision as i32 - *scale as i32).max(0) as u32, scale: (*scale).max(0) as u32 }
            };
            if !decimal_holds(defined, data, floating) {
                out.push(finding(Problem::DecimalDigits, Some(RowTest::DecimalOutside(rule))));
            }
        }
        (Instant { unit: want, .. }, Instant { unit: have, .. })
        | (LocalDateTime { unit: want }, LocalDateTime { unit: have })
        | (Time { unit: want }, Time { unit: have })
        | (Duration { unit: want }, Duration { unit: have }) => {
            if finer(*have, *want) {
                out.push(finding(Problem::Unit, Some(RowTest::SubUnit { have: *have, want: *want })));
            }
        }
        (Instant { .. }, LocalDateTime { .. }) | (LocalDateTime { .. }, Instant { .. }) => {
            out.push(finding(Problem::Zone, Some(RowTest::Present(path.to_string()))))
        }
        (Duration { .. }, Int { bits, .. }) if *bits <= 64 => {}
        // Text in the data: the definition's own type reads it when every
        // value has its form (the data's model says so, or the text is plain).
        (String, _) if sides.data_is_text => {}
        // A JSON Schema describes the JSON form, where dates and times are text.
        (String, Date | Time { .. } | Instant { .. } | LocalDateTime { .. }) if sides.lang == DefinitionLang::JsonSchema => {}
        (Binary, String) if sides.data_is_text => {}
        (a, b) if a == b => {}
        (Bool, Bool) | (String, String) | (Binary, Binary) | (Date, Date) => {}
        _ => out.push(finding(Problem::WrongType, Some(RowTest::Present(path.to_string())))),
    }
}

/// Whether every value of `data` fits the decimal `defined` by type alone.
fn decimal_holds(defined: &Scalar, data: &Scalar, floating: bool) -> bool {
    let Scalar::Decimal { precision: p, scale: s } = *defined else { return false };
    let (p, s) = (p as i32, s as i32);
    match *data {
        Scalar::Int { bits, signed } => {
            let digits = int_digits(bits, signed);
            if floating { digits <= p } else { digits <= p - s }
        }
        Scalar::Decimal { precision: dp, scale: ds } => {
            let (dp, ds) = (dp as i32, (ds as i32).max(0));
            if floating { dp <= p && ds <= s } else { dp - ds <= p - s && ds <= s }
        }
        _ => false,
    }
}

/// Decimal digits of the widest value of an integer type.
fn int_digits(bits: u8, signed: bool) -> i32 {
    let (low, high) = int_range(&Scalar::Int { bits, signed });
    low.unsigned_abs().max(high.unsigned_abs()).to_string().len() as i32
}

pub fn int_range(s: &Scalar) -> (i128, i128) {
    match *s {
        Scalar::Int { bits, signed: true } => (-(1i128 << (bits - 1)), (1i128 << (bits - 1)) - 1),
        Scalar::Int { bits, signed: false } => (0, (1i128 << bits) - 1),
        _ => (i128::MIN, i128::MAX),
    }
}

/// Whether `a` counts smaller steps than `b`.
fn finer(a: Unit, b: Unit) -> bool {
    ticks_per_second(a) > ticks_per_second(b)
}

pub fn ticks_per_second(u: Unit) -> i64 {
    match u {
        Unit::Second => 1,
        Unit::Milli => 1_000,
        Unit::Micro => 1_000_000,
        Unit::Nano => 1_000_000_000,
    }
}

/// A short, language-neutral name of a type, for verdicts.
pub fn label(model: &Model, ty: &Ty) -> String {
    match ty {
        Ty::Scalar(s) => scalar_label(s),
        Ty::List(e) => format!("list of {}", label(model, &e.ty)),
        Ty::Map { key, value } => format!("map of {} to {}", label(model, &key.ty), label(model, &value.ty)),
        Ty::Record(i) if model.records[*i].name.is_empty() => "record".into(),
        Ty::Record(i) => format!("record {}", model.records[*i].name),
        Ty::Any { .. } => "any value".into(),
        Ty::Mixed(kinds, variants) if kinds.is_empty() => {
            let names: Vec<String> = variants.iter().map(|v| label(model, &v.ty)).collect();
            format!("one of {}", names.join(", "))
        }
        Ty::Mixed(kinds, _) => {
            let names: Vec<&str> = kinds.iter().map(|(k, _)| k.name()).collect();
            format!("values of several kinds ({})", names.join(", "))
        }
    }
}

pub fn scalar_label(s: &Scalar) -> String {
    match s {
        Scalar::Bool => "boolean".into(),
        Scalar::Int { bits, signed: true } => format!("{bits}-bit integer"),
        Scalar::Int { bits, signed: false } => format!("unsigned {bits}-bit integer"),
        Scalar::Float { bits } => format!("{bits}-bit float"),
        Scalar::Decimal { precision, scale } => format!("decimal({precision},{scale})"),
        Scalar::String => "string".into(),
        Scalar::Binary => "binary".into(),
        Scalar::Date => "date".into(),
        Scalar::Time { unit } => format!("time of day in {}", unit.label()),
        Scalar::Instant { unit, .. } => format!("instant in {}", unit.label()),
        Scalar::LocalDateTime { unit } => format!("date-time without zone in {}", unit.label()),
        Scalar::Duration { unit } => format!("duration in {}", unit.label()),
    }
}
