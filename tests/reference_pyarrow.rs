//! Reference check against pyarrow (a general-purpose library nobody here
//! wrote): `tests/reference/tricky_types.py` writes Parquet and Arrow IPC
//! files with dictionary strings, decimal128(38,10), timestamp[ns, tz],
//! large_string, fixed_size_binary, uint64 max, map<string, list<struct>>,
//! all-null columns, zero rows and 2,000 columns, plus pyarrow's own view of
//! them; Plumbline's Shape must agree field by field.
//!
//! The script needs Python 3 with pyarrow (`.ci/run` installs the pinned
//! version from `tests/reference/requirements.txt`). Without it the test
//! says so loudly, and fails when `CI=true`.

mod common;

use arrow_schema::{DataType, TimeUnit};
use plumbline::scan::Coverage;
use serde_json::Value;

/// Arrow types spelled the way pyarrow's `str(type)` spells them.
fn pyarrow_spelling(t: &DataType) -> String {
    use DataType::*;
    let unit = |u: &TimeUnit| match u {
        TimeUnit::Second => "s",
        TimeUnit::Millisecond => "ms",
        TimeUnit::Microsecond => "us",
        TimeUnit::Nanosecond => "ns",
    };
    match t {
        Null => "null".into(),
        Boolean => "bool".into(),
        Int8 | Int16 | Int32 | Int64 | UInt8 | UInt16 | UInt32 | UInt64 => t.to_string().to_lowercase(),
        Float32 => "float".into(),
        Float64 => "double".into(),
        Utf8 => "string".into(),
        LargeUtf8 => "large_string".into(),
        Binary => "binary".into(),
        LargeBinary => "large_binary".into(),
        FixedSizeBinary(n) => format!("fixed_size_binary[{n}]"),
        Decimal128(p, s) => format!("decimal128({p}, {s})"),
        Timestamp(u, None) => format!("timestamp[{}]", unit(u)),
        Timestamp(u, Some(tz)) => format!("timestamp[{}, tz={tz}]", unit(u)),
        Dictionary(k, v) => format!("dictionary<values={}, indices={}", pyarrow_spelling(v), pyarrow_spelling(k)),
        List(f) => format!("list<{}: {}>", f.name(), pyarrow_spelling(f.data_type())),
        Struct(fields) => {
            let inner: Vec<String> = fields.iter().map(|f| format!("{}: {}", f.name(), pyarrow_spelling(f.data_type()))).collect();
            format!("struct<{}>", inner.join(", "))
        }
        Map(entries, _) => match entries.data_type() {
            Struct(kv) => format!("map<{}, {}>", pyarrow_spelling(kv[0].data_type()), pyarrow_spelling(kv[1].data_type())),
            _ => "map".into(),
        },
        other => format!("{other:?}"),
    }
}

/// pyarrow's spelling without the parts Arrow-rs types do not carry: the
/// dictionary's `ordered` flag and a map's field-name annotation.
fn normalise(pyarrow: &str) -> String {
    let mut s = pyarrow.to_string();
    if let Some(i) = s.find(", ordered=") {
        s.truncate(i);
    }
    if let Some(i) = s.find(" ('") {
        s = format!("{}>", &s[..i]);
    }
    s
}

fn reference_files() -> Option<(tempfile::TempDir, Value)> {
    let out = tempfile::tempdir().unwrap();
    common::run_reference_script("tricky_types.py", &[out.path().as_os_str()], "pyarrow")?;
    let expected = serde_json::from_str(&std::fs::read_to_string(out.path().join("expected.json")).unwrap()).unwrap();
    Some((out, expected))
}

#[test]
fn plumbline_agrees_with_pyarrow_field_by_field() {
    let Some((dir, expected)) = reference_files() else { return };
    let files = expected.as_object().unwrap();
    assert_eq!(files.len(), 6);
    for (name, view) in files {
        let path = dir.path().join(name);
        let scan = common::full(&path).unwrap_or_else(|e| panic!("{e}"));
        assert_eq!(scan.coverage, Coverage::Full, "{name}");
        assert_eq!(scan.shape.rows, view["rows"].as_u64().unwrap(), "{name}: rows");
        let fields = view["fields"].as_array().unwrap();
        assert_eq!(scan.shape.fields.len(), fields.len(), "{name}: columns");
        for (shape, reference) in scan.shape.fields.iter().zip(fields) {
            let what = format!("{name}: {}", shape.path);
            assert_eq!(shape.name, reference["name"].as_str().unwrap(), "{what}");
            let declared = &shape.declared.as_ref().unwrap().data_type;
            assert_eq!(pyarrow_spelling(declared), normalise(reference["type"].as_str().unwrap()), "{what}: type");
            assert_eq!(shape.nulls(), reference["nulls"].as_u64().unwrap(), "{what}: nulls");
            assert_eq!(shape.count, scan.shape.rows, "{what}: count");
            if let (Some(min), Some(max)) = (reference.get("min"), reference.get("max")) {
                let range = shape.kinds.int_range.expect("an integer range");
                assert_eq!(range.0, min.as_i64().map(i128::from).unwrap_or_else(|| min.as_u64().unwrap() as i128), "{what}: min");
                assert_eq!(range.1, max.as_i64().map(i128::from).unwrap_or_else(|| max.as_u64().unwrap() as i128), "{what}: max");
            }
        }
    }
}
