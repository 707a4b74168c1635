//! The Arrow integration "gold" files (`../shared/corpus/arrow-ipc/`,
//! written by the Arrow implementations): every IPC file and stream opens,
//! and field names, types, row counts and top-level null counts match the
//! `*.json.gz` golden description beside it.

mod common;

use std::io::Read;
use std::path::Path;

use arrow_schema::{DataType, IntervalUnit, TimeUnit, UnionMode};
use plumbline::scan::Coverage;
use plumbline::shape::{FieldShape, Role};
use serde_json::Value;

fn golden(path: &Path) -> Value {
    let stem = path.to_string_lossy().replace(".arrow_file", "").replace(".stream", "");
    let mut text = String::new();
    flate2::read::GzDecoder::new(std::fs::File::open(format!("{stem}.json.gz")).unwrap())
        .read_to_string(&mut text)
        .unwrap();
    serde_json::from_str(&text).unwrap()
}

fn unit_name(u: &TimeUnit) -> &'static str {
    match u {
        TimeUnit::Second => "SECOND",
        TimeUnit::Millisecond => "MILLISECOND",
        TimeUnit::Microsecond => "MICROSECOND",
        TimeUnit::Nanosecond => "NANOSECOND",
    }
}

/// One canonical spelling of a type, from Arrow's side.
fn canonical(t: &DataType) -> String {
    use DataType::*;
    match t {
        Null => "null".into(),
        Boolean => "bool".into(),
        Int8 => "int8".into(),
        Int16 => "int16".into(),
        Int32 => "int32".into(),
        Int64 => "int64".into(),
        UInt8 => "uint8".into(),
        UInt16 => "uint16".into(),
        UInt32 => "uint32".into(),
        UInt64 => "uint64".into(),
        Float16 => "float16".into(),
        Float32 => "float32".into(),
        Float64 => "float64".into(),
        Utf8 => "utf8".into(),
        LargeUtf8 => "largeutf8".into(),
        Utf8View => "utf8view".into(),
        Binary => "binary".into(),
        LargeBinary => "largebinary".into(),
        BinaryView => "binaryview".into(),
        FixedSizeBinary(n) => format!("fixedsizebinary({n})"),
        Decimal32(p, s) => format!("decimal({p},{s},32)"),
        Decimal64(p, s) => format!("decimal({p},{s},64)"),
        Decimal128(p, s) => format!("decimal({p},{s},128)"),
        Decimal256(p, s) => format!("decimal({p},{s},256)"),
        Date32 => "date(DAY)".into(),
        Date64 => "date(MILLISECOND)".into(),
        Time32(u) | Time64(u) => format!("time({})", unit_name(u)),
        Timestamp(u, tz) => format!("timestamp({},{})", unit_name(u), tz.as_deref().unwrap_or("")),
        Duration(u) => format!("duration({})", unit_name(u)),
        Interval(IntervalUnit::YearMonth) => "interval(YEAR_MONTH)".into(),
        Interval(IntervalUnit::DayTime) => "interval(DAY_TIME)".into(),
        Interval(IntervalUnit::MonthDayNano) => "interval(MONTH_DAY_NANO)".into(),
        List(_) => "list".into(),
        LargeList(_) => "largelist".into(),
        ListView(_) => "listview".into(),
        LargeListView(_) => "largelistview".into(),
        FixedSizeList(_, n) => format!("fixedsizelist({n})"),
        Struct(_) => "struct".into(),
        Map(..) => "map".into(),
        Union(_, UnionMode::Sparse) => "union(SPARSE)".into(),
        Union(_, UnionMode::Dense) => "union(DENSE)".into(),
        Dictionary(k, v) => format!("dictionary({},{})", canonical(k), canonical(v)),
        RunEndEncoded(..) => "runendencoded".into(),
    }
}

/// The same spelling from the golden file's JSON type (Arrow integration
/// JSON format).
fn canonical_golden(field: &Value) -> String {
    let t = &field["type"];
    let s = |k: &str| t[k].as_str().unwrap_or("").to_string();
    let plain = match t["name"].as_str().unwrap() {
        "int" => format!("{}int{}", if t["isSigned"].as_bool().unwrap() { "" } else { "u" }, t["bitWidth"]),
        "floatingpoint" => match s("precision").as_str() {
            "HALF" => "float16".into(),
            "SINGLE" => "float32".into(),
            _ => "float64".into(),
        },
        "fixedsizebinary" => format!("fixedsizebinary({})", t["byteWidth"]),
        "decimal" => format!("decimal({},{},{})", t["precision"], t["scale"], t["bitWidth"].as_u64().unwrap_or(128)),
        "date" => format!("date({})", s("unit")),
        "time" => format!("time({})", s("unit")),
        "timestamp" => format!("timestamp({},{})", s("unit"), s("timezone")),
        "duration" => format!("duration({})", s("unit")),
        "interval" => format!("interval({})", s("unit")),
        "fixedsizelist" => format!("fixedsizelist({})", t["listSize"]),
        "union" => format!("union({})", s("mode")),
        "utf8view" | "binaryview" | "listview" | "largelistview" | "runendencoded" => t["name"].as_str().unwrap().into(),
        other => other.to_string(),
    };
    match field.get("dictionary") {
        Some(d) => {
            let index = &d["indexType"];
            let key = format!("{}int{}", if index["isSigned"].as_bool().unwrap() { "" } else { "u" }, index["bitWidth"]);
            format!("dictionary({key},{plain})")
        }
        None => plain,
    }
}

fn compare_field(file: &Path, shape: &FieldShape, golden: &Value) {
    // The Arrow format does not hold writers to the names of a map's key and
    // value fields, and some streams here were re-written with the standard
    // names (pyarrow 26 reads "key"/"value" from them too), so only their
    // types are compared.
    let map_entry = matches!(shape.role, Role::MapKey | Role::MapValue);
    if !map_entry {
        assert_eq!(shape.name, golden["name"].as_str().unwrap(), "{}: field name", file.display());
    }
    let declared = shape.declared.as_ref().expect("IPC declares every field");
    assert_eq!(canonical(&declared.data_type), canonical_golden(golden), "{}: type of {}", file.display(), shape.path);
    assert_eq!(declared.nullable, golden["nullable"].as_bool().unwrap(), "{}: nullability of {}", file.display(), shape.path);
    let children = golden["children"].as_array().unwrap();
    let child_fields: Vec<&FieldShape> = match &declared.data_type {
        // A map's golden child is the entries struct; compare its key/value.
        DataType::Map(..) => {
            let entries = &children[0];
            let kv = entries["children"].as_array().unwrap();
            assert_eq!(shape.children.len(), 2);
            for (s, g) in shape.children.iter().zip(kv) {
                compare_field(file, s, g);
            }
            return;
        }
        // Run-end encoded: the golden children are run_ends and values; the Shape shows values.
        DataType::RunEndEncoded(..) => return,
        _ => shape.children.iter().collect(),
    };
    assert_eq!(child_fields.len(), children.len(), "{}: children of {}", file.display(), shape.path);
    for (s, g) in child_fields.into_iter().zip(children) {
        compare_field(file, s, g);
    }
}

fn validity(column: &Value) -> Option<Vec<bool>> {
    Some(column.get("VALIDITY")?.as_array()?.iter().map(|v| v.as_u64() == Some(1)).collect())
}

/// Logical nulls of a golden column: a dictionary-encoded value is null when
/// its index is null or the dictionary entry it points at is null.
fn golden_nulls(golden: &Value, field: &Value, column: &Value) -> Option<u64> {
    let valid = validity(column)?;
    let Some(id) = field.get("dictionary").map(|d| d["id"].as_u64().unwrap()) else {
        return Some(valid.iter().filter(|v| !**v).count() as u64);
    };
    let dictionary = golden["dictionaries"].as_array()?.iter().find(|d| d["id"].as_u64() == Some(id))?;
    let entries = validity(&dictionary["data"]["columns"][0]).unwrap_or_default();
    let keys = column["DATA"].as_array()?;
    let nulls = valid
        .iter()
        .zip(keys)
        .filter(|(v, key)| {
            let key = key.as_u64().or_else(|| key.as_str().and_then(|s| s.parse().ok())).unwrap_or(0) as usize;
            !**v || !entries.get(key).copied().unwrap_or(true)
        })
        .count();
    Some(nulls as u64)
}

/// Smallest and largest valid value of integer column `i` (the golden files
/// write 64-bit integers as strings). Checks the values, not just the counts
/// — for big-endian files, that their bytes were turned around.
fn golden_int_range(batches: &[Value], i: usize) -> Option<(i128, i128)> {
    let mut range: Option<(i128, i128)> = None;
    for batch in batches {
        let column = &batch["columns"][i];
        let valid = validity(column).unwrap_or_default();
        for (v, ok) in column["DATA"].as_array().into_iter().flatten().zip(valid) {
            if !ok {
                continue;
            }
            let n: i128 = v.as_i64().map(i128::from).or_else(|| v.as_u64().map(i128::from)).unwrap_or_else(|| v.as_str().unwrap().parse().unwrap());
            range = Some(range.map_or((n, n), |(lo, hi)| (lo.min(n), hi.max(n))));
        }
    }
    range
}

fn check_file(path: &Path) {
    let golden = golden(path);
    let scan = common::full(path).unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(scan.coverage, Coverage::Full, "{}", path.display());
    let fields = golden["schema"]["fields"].as_array().unwrap();
    assert_eq!(scan.shape.fields.len(), fields.len(), "{}: top-level fields", path.display());
    for (shape, g) in scan.shape.fields.iter().zip(fields) {
        compare_field(path, shape, g);
    }
    let batches = golden["batches"].as_array().unwrap();
    let rows: u64 = batches.iter().map(|b| b["count"].as_u64().unwrap()).sum();
    assert_eq!(scan.shape.rows, rows, "{}: rows", path.display());
    for (i, shape) in scan.shape.fields.iter().enumerate() {
        let data_type = &shape.declared.as_ref().unwrap().data_type;
        // Unions and run-end encoding carry no validity of their own; Null has none at all.
        if matches!(data_type, DataType::Union(..) | DataType::RunEndEncoded(..) | DataType::Null) {
            continue;
        }
        if data_type.is_integer() {
            assert_eq!(shape.kinds.int_range, golden_int_range(batches, i), "{}: range of {}", path.display(), shape.path);
        }
        let nulls: Option<u64> = batches.iter().map(|b| golden_nulls(&golden, &fields[i], &b["columns"][i])).sum();
        if let Some(nulls) = nulls {
            assert_eq!(shape.nulls(), nulls, "{}: nulls in {}", path.display(), shape.path);
        }
    }
}

fn ipc_files(endian: &str) -> Vec<std::path::PathBuf> {
    let Some(dir) = common::corpus("arrow-ipc/data/arrow-ipc-stream/integration") else { return Vec::new() };
    common::files_under(&dir, &|p| {
        let s = p.to_string_lossy();
        let big = s.contains("bigendian");
        (s.ends_with(".arrow_file") || s.ends_with(".stream")) && (big == (endian == "big"))
    })
}

#[test]
fn little_endian_files_and_streams_match_their_golden_files() {
    let files = ipc_files("little");
    if files.is_empty() && common::corpus("arrow-ipc").is_none() {
        return;
    }
    assert!(files.len() > 100, "found only {} files", files.len());
    for path in files {
        check_file(&path);
    }
}

#[test]
fn big_endian_files_and_streams_match_their_golden_files() {
    let files = ipc_files("big");
    if files.is_empty() && common::corpus("arrow-ipc").is_none() {
        return;
    }
    assert!(files.len() >= 40, "found only {} files", files.len());
    for path in files {
        check_file(&path);
    }
}
