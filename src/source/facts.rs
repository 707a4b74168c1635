//! Facts about a source read from its metadata alone (no row data).

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

/// Longest metadata value kept verbatim; longer ones (e.g. the base64
/// `ARROW:schema` blob) are cut and their length stated.
const MAX_METADATA_VALUE_CHARS: usize = 200;

#[derive(Debug, Clone, Default, Serialize, Deserialize, PartialEq)]
#[serde(default)]
pub struct Facts {
    /// Parquet: row groups in the footer.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub row_groups: Option<usize>,
    /// Arrow IPC file: record batches listed in the footer.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub record_batches: Option<usize>,
    /// Compression codecs used by the column chunks / IPC buffers.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub codecs: Vec<String>,
    /// Parquet: per leaf column, bytes on disk and decoded.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub columns: Vec<ColumnFacts>,
    /// The program that wrote the file (Parquet `created_by`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub writer: Option<String>,
    /// File-level key/value metadata.
    #[serde(skip_serializing_if = "BTreeMap::is_empty")]
    pub metadata: BTreeMap<String, String>,
    /// Delimited text: how it was read.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub delimited: Option<DelimitedFacts>,
    /// Directories: the part files read, in order.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub part_files: Vec<String>,
    /// Directories: fields taken from `key=value` path segments.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub partition_fields: Vec<String>,
    /// Directories: how part schemas differ from the first part, field by field.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub schema_differences: Vec<String>,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct ColumnFacts {
    pub path: String,
    pub physical_type: String,
    pub compressed_bytes: u64,
    pub uncompressed_bytes: u64,
}

#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct DelimitedFacts {
    pub delimiter: String,
    pub header: bool,
}

/// Keeps a metadata value readable in reports.
pub fn shorten_metadata_value(value: &str) -> String {
    if value.chars().count() <= MAX_METADATA_VALUE_CHARS {
        return value.to_string();
    }
    let head: String = value.chars().take(MAX_METADATA_VALUE_CHARS).collect();
    format!("{head}… ({} bytes in all)", value.len())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn long_metadata_values_are_cut_with_their_length() {
        assert_eq!(shorten_metadata_value("short"), "short");
        let long = "x".repeat(500);
        let cut = shorten_metadata_value(&long);
        assert!(cut.ends_with("… (500 bytes in all)"), "{cut}");
        assert_eq!(cut.chars().filter(|&c| c == 'x').count(), MAX_METADATA_VALUE_CHARS);
    }
}
