//! Declared types: what the file's own schema says about each field.

use std::collections::HashMap;

use arrow_schema::{DataType, Field, Schema};
use serde::Serialize;

use super::from_arrow::member_names;
use super::{FieldShape, Role};
use crate::source::parquet::ParquetLeaf;

#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct Declared {
    /// Arrow's display of the type, e.g. `Timestamp(µs, "UTC")`.
    pub arrow: String,
    #[serde(skip)]
    pub data_type: DataType,
    pub nullable: bool,
    /// For Parquet leaves: physical and logical type, repetition.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub parquet: Option<ParquetLeaf>,
}

/// Creates the field tree the schema declares under `root`.
pub fn seed_from_schema(root: &mut FieldShape, schema: &Schema, leaves: Option<&HashMap<String, ParquetLeaf>>) {
    let names = member_names(schema.fields());
    for (field, key) in schema.fields().iter().zip(&names) {
        let child = root.child_mut_named(key, field.name(), Role::Member);
        seed_field(child, field, leaves);
    }
}

fn seed_field(node: &mut FieldShape, field: &Field, leaves: Option<&HashMap<String, ParquetLeaf>>) {
    node.declared = Some(Declared {
        arrow: field.data_type().to_string(),
        data_type: field.data_type().clone(),
        nullable: field.is_nullable(),
        parquet: leaves.and_then(|l| l.get(&node.path)).cloned(),
    });
    seed_children(node, field.data_type(), leaves);
}

fn seed_children(node: &mut FieldShape, data_type: &DataType, leaves: Option<&HashMap<String, ParquetLeaf>>) {
    match data_type {
        DataType::Struct(fields) => {
            for (f, key) in fields.iter().zip(member_names(fields)) {
                let child = node.child_mut_named(&key, f.name(), Role::Member);
                seed_field(child, f, leaves);
            }
        }
        DataType::Union(fields, _) => {
            for ((_, f), key) in fields.iter().zip(member_names(fields.iter().map(|(_, f)| f))) {
                let child = node.child_mut_named(&key, f.name(), Role::Variant);
                seed_field(child, f, leaves);
            }
        }
        DataType::List(f)
        | DataType::LargeList(f)
        | DataType::ListView(f)
        | DataType::LargeListView(f)
        | DataType::FixedSizeList(f, _) => {
            let child = node.child_mut(f.name(), Role::Element);
            seed_field(child, f, leaves);
        }
        DataType::Map(entries, _) => {
            if let DataType::Struct(kv) = entries.data_type()
                && kv.len() == 2
            {
                let key = node.child_mut(kv[0].name(), Role::MapKey);
                seed_field(key, &kv[0], leaves);
                let value = node.child_mut(kv[1].name(), Role::MapValue);
                seed_field(value, &kv[1], leaves);
            }
        }
        DataType::Dictionary(_, value) => seed_children(node, value, leaves),
        DataType::RunEndEncoded(_, values) => seed_children(node, values.data_type(), leaves),
        _ => {}
    }
}

impl Declared {
    /// A compact label for trees and tables: `struct`, `list<int64>`, `map<utf8, float64>`.
    pub fn short_label(&self) -> String {
        short_type(&self.data_type)
    }
}

pub fn short_type(data_type: &DataType) -> String {
    match data_type {
        DataType::Struct(_) => "struct".into(),
        DataType::Union(..) => "union".into(),
        DataType::List(f) | DataType::ListView(f) => format!("list<{}>", short_type(f.data_type())),
        DataType::LargeList(f) | DataType::LargeListView(f) => format!("large_list<{}>", short_type(f.data_type())),
        DataType::FixedSizeList(f, n) => format!("fixed_list<{}; {n}>", short_type(f.data_type())),
        DataType::Map(entries, _) => match entries.data_type() {
            DataType::Struct(kv) if kv.len() == 2 => {
                format!("map<{}, {}>", short_type(kv[0].data_type()), short_type(kv[1].data_type()))
            }
            _ => "map".into(),
        },
        DataType::Dictionary(k, v) => format!("dictionary<{}, {}>", short_type(k), short_type(v)),
        DataType::RunEndEncoded(_, v) => format!("run_end_encoded<{}>", short_type(v.data_type())),
        other => other.to_string().to_lowercase(),
    }
}
