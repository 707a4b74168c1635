//! Property tests: for random JSON Lines documents, the Shape's present,
//! null and missing counts equal a direct count over the same values.

use std::collections::HashMap;
use std::sync::atomic::AtomicBool;

use plumbline::path;
use plumbline::scan::{self, Coverage, ScanOptions};
use plumbline::shape::{FieldShape, Kind, Role};
use plumbline::source::OpenOptions;
use proptest::prelude::*;
use serde_json::Value;

fn json_value() -> impl Strategy<Value = Value> {
    let leaf = prop_oneof![
        Just(Value::Null),
        any::<bool>().prop_map(Value::Bool),
        any::<i64>().prop_map(Value::from),
        (-1e9f64..1e9).prop_map(|f| serde_json::json!(f)),
        "[a-z ]{0,6}".prop_map(Value::String),
    ];
    leaf.prop_recursive(3, 24, 4, |inner| {
        prop_oneof![
            prop::collection::vec(inner.clone(), 0..4).prop_map(Value::Array),
            prop::collection::btree_map(prop::sample::select(vec!["a", "b", "x.y", "c"]), inner, 0..4)
                .prop_map(|m| Value::Object(m.into_iter().map(|(k, v)| (k.to_string(), v)).collect())),
        ]
    })
}

fn row() -> impl Strategy<Value = Value> {
    prop::collection::btree_map(prop::sample::select(vec!["a", "b", "x.y", "c"]), json_value(), 0..4)
        .prop_map(|m| Value::Object(m.into_iter().map(|(k, v)| (k.to_string(), v)).collect()))
}

#[derive(Default, Debug)]
struct Direct {
    appeared: u64,
    nulls: u64,
    present: u64,
    objects: u64,
}

/// The reference count: walks the values directly.
fn count(value: &Value, at: &str, stats: &mut HashMap<String, Direct>) {
    let s = stats.entry(at.to_string()).or_default();
    s.appeared += 1;
    match value {
        Value::Null => s.nulls += 1,
        _ => s.present += 1,
    }
    match value {
        Value::Object(members) => {
            s.objects += 1;
            for (k, v) in members {
                count(v, &path::member(at, k), stats);
            }
        }
        Value::Array(items) => {
            for item in items {
                count(item, &path::element(at), stats);
            }
        }
        _ => {}
    }
}

fn check(field: &FieldShape, parent_objects: u64, stats: &HashMap<String, Direct>) {
    let direct = stats.get(&field.path).unwrap_or_else(|| panic!("{} not in the data", field.path));
    assert_eq!(field.present(), direct.present, "present of {}", field.path);
    assert_eq!(field.nulls(), direct.nulls, "nulls of {}", field.path);
    let missing = match field.role {
        Role::Member => parent_objects - direct.appeared,
        _ => 0,
    };
    assert_eq!(field.missing, missing, "missing of {}", field.path);
    assert_eq!(field.kinds.get(Kind::Object), direct.objects, "objects at {}", field.path);
    for child in &field.children {
        check(child, direct.objects, stats);
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 64, ..ProptestConfig::default() })]

    #[test]
    fn shape_counts_equal_a_direct_count(rows in prop::collection::vec(row(), 1..40)) {
        let dir = tempfile::tempdir().unwrap();
        let file = dir.path().join("rows.jsonl");
        let text: String = rows.iter().map(|r| format!("{r}\n")).collect();
        std::fs::write(&file, text).unwrap();
        let stop = AtomicBool::new(false);
        let scan = scan::scan_path(&file, OpenOptions::default(), ScanOptions::default(), &stop, &mut |_| {}).unwrap();
        prop_assert_eq!(&scan.coverage, &Coverage::Full);
        prop_assert_eq!(scan.shape.rows, rows.len() as u64);
        let mut stats = HashMap::new();
        let mut top = Direct::default();
        for r in &rows {
            if let Value::Object(members) = r {
                top.objects += 1;
                for (k, v) in members {
                    count(v, &path::member("", k), &mut stats);
                }
            }
        }
        let mut paths_in_shape = 0;
        scan.shape.walk(|_, _| paths_in_shape += 1);
        prop_assert_eq!(paths_in_shape, stats.len(), "every path seen, no more");
        for field in &scan.shape.fields {
            check(field, top.objects, &stats);
        }
    }
}
