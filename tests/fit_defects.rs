//! A hand-written corpus of definitions of the demo deliveries, each with one
//! defect, and the exact verdicts each must produce. The base definitions
//! (one per language) are written by hand from sample-data/README.md and
//! must fit every row with no verdict at all.

mod common;

use std::path::{Path, PathBuf};
use std::sync::atomic::AtomicBool;

use plumbline::fit::verdict::Problem;
use plumbline::fit::{self, DefinitionLang, FitOptions, Severity};
use plumbline::source::OpenOptions;

fn sample(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-data").join(name)
}

const SCALA: &str = r#"
package quillmoor

case class Courier(code: String, vehicle: Option[String])
case class Pickup(zone: String, at: java.sql.Timestamp, lat: Double, lon: Double)
case class Dropoff(zone: String, at: java.sql.Timestamp)
case class Stop(seq: Short, eta: java.sql.Timestamp, kind: String)
case class Parcel(weight_kg: Float, declared_value: BigDecimal, fragile: Boolean)

case class Delivery(
  delivery_id: String,
  courier: Courier,
  pickup: Pickup,
  dropoff: Option[Dropoff],
  stops: Seq[Stop],
  parcel: Parcel,
  fee: BigDecimal,
  tags: Seq[String],
  attributes: Map[String, Option[String]],
  distance_km: Double,
  rating: Option[Byte],
  note: Option[String],
  zip_code: String,
  status: String,
  currency: String,
  booked_local: java.time.LocalDateTime
)
"#;

const RUST: &str = r#"
#[derive(serde::Deserialize)]
pub struct Delivery {
    pub delivery_id: String,
    pub courier: Courier,
    pub pickup: Place,
    pub dropoff: Option<Dropoff>,
    pub stops: Vec<Stop>,
    pub parcel: Parcel,
    pub fee: rust_decimal::Decimal,
    pub tags: Vec<String>,
    pub attributes: std::collections::HashMap<String, Option<String>>,
    pub distance_km: f64,
    pub rating: Option<i8>,
    pub note: Option<String>,
    pub zip_code: String,
    pub status: String,
    pub currency: String,
    pub booked_local: chrono::NaiveDateTime,
}
#[derive(serde::Deserialize)]
pub struct Courier { pub code: String, pub vehicle: Option<String> }
#[derive(serde::Deserialize)]
pub struct Place { pub zone: String, pub at: chrono::DateTime<chrono::Utc>, pub lat: f64, pub lon: f64 }
#[derive(serde::Deserialize)]
pub struct Dropoff { pub zone: String, pub at: chrono::DateTime<chrono::Utc> }
#[derive(serde::Deserialize)]
pub struct Stop { pub seq: i16, pub eta: chrono::DateTime<chrono::Utc>, pub kind: String }
#[derive(serde::Deserialize)]
pub struct Parcel { pub weight_kg: f32, pub declared_value: rust_decimal::Decimal, pub fragile: bool }
"#;

const DDL: &str = "delivery_id STRING NOT NULL,
courier STRUCT<code: STRING NOT NULL, vehicle: STRING> NOT NULL,
pickup STRUCT<zone: STRING NOT NULL, at: TIMESTAMP NOT NULL, lat: DOUBLE NOT NULL, lon: DOUBLE NOT NULL> NOT NULL,
dropoff STRUCT<zone: STRING NOT NULL, at: TIMESTAMP NOT NULL>,
stops ARRAY<STRUCT<seq: SMALLINT NOT NULL, eta: TIMESTAMP NOT NULL, kind: STRING NOT NULL>> NOT NULL,
parcel STRUCT<weight_kg: FLOAT NOT NULL, declared_value: DECIMAL(10,2) NOT NULL, fragile: BOOLEAN NOT NULL> NOT NULL,
fee DECIMAL(8,2) NOT NULL,
tags ARRAY<STRING> NOT NULL,
attributes MAP<STRING, STRING> NOT NULL,
distance_km DOUBLE NOT NULL,
rating TINYINT,
note STRING,
zip_code STRING NOT NULL,
status STRING NOT NULL,
currency STRING NOT NULL,
booked_local TIMESTAMP_NTZ NOT NULL";

const JSON_SCHEMA: &str = r##"{
  "type": "object",
  "required": ["delivery_id", "courier", "pickup", "stops", "parcel", "fee", "tags", "attributes", "distance_km",
               "zip_code", "status", "currency", "booked_local", "dropoff", "rating", "note"],
  "properties": {
    "delivery_id": {"type": "string"},
    "courier": {"type": "object", "required": ["code", "vehicle"],
                "properties": {"code": {"type": "string"}, "vehicle": {"type": ["string", "null"]}}},
    "pickup": {"type": "object", "required": ["zone", "at", "lat", "lon"],
               "properties": {"zone": {"type": "string"}, "at": {"type": "string", "format": "date-time"},
                              "lat": {"type": "number"}, "lon": {"type": "number"}}},
    "dropoff": {"anyOf": [{"type": "null"}, {"$ref": "#/$defs/Dropoff"}]},
    "stops": {"type": "array", "items": {"$ref": "#/$defs/Stop"}},
    "parcel": {"type": "object", "required": ["weight_kg", "declared_value", "fragile"],
               "properties": {"weight_kg": {"type": "number"}, "declared_value": {"type": "number"},
                              "fragile": {"type": "boolean"}}},
    "fee": {"type": "number"},
    "tags": {"type": "array", "items": {"type": "string"}},
    "attributes": {"type": "object", "additionalProperties": {"type": ["string", "null"]}},
    "distance_km": {"type": "number"},
    "rating": {"type": ["integer", "null"], "minimum": -128, "maximum": 127},
    "note": {"type": ["string", "null"]},
    "zip_code": {"type": "string"},
    "status": {"type": "string"},
    "currency": {"type": "string"},
    "booked_local": {"type": "string"}
  },
  "$defs": {
    "Dropoff": {"type": "object", "required": ["zone", "at"],
                "properties": {"zone": {"type": "string"}, "at": {"type": "string", "format": "date-time"}}},
    "Stop": {"type": "object", "required": ["seq", "eta", "kind"],
             "properties": {"seq": {"type": "integer", "minimum": -32768, "maximum": 32767},
                            "eta": {"type": "string", "format": "date-time"}, "kind": {"type": "string"}}}
  }
}"##;

fn verdicts(data: &Path, text: &str, lang: DefinitionLang) -> (fit::Fit, Vec<(String, Problem, Severity)>) {
    let definition = fit::definition::read(text, lang, None).unwrap_or_else(|e| panic!("{lang:?}: {e}"));
    let scan = common::full(data).unwrap();
    let outcome = fit::fit(&scan, OpenOptions::default(), &definition, FitOptions::default(), &AtomicBool::new(false)).unwrap();
    let mut list: Vec<_> = outcome.verdicts.iter().map(|v| (v.path.clone(), v.problem, v.severity)).collect();
    list.sort_by(|a, b| a.0.cmp(&b.0));
    (outcome, list)
}

fn with_defect(base: &str, from: &str, to: &str) -> String {
    assert!(base.contains(from), "the defect's text {from:?} is in the base");
    base.replacen(from, to, 1)
}

#[test]
fn the_hand_written_bases_fit_every_row() {
    for (text, lang) in [(SCALA, DefinitionLang::Scala), (RUST, DefinitionLang::Rust), (DDL, DefinitionLang::SparkDdl), (JSON_SCHEMA, DefinitionLang::JsonSchema)] {
        let (outcome, list) = verdicts(&sample("deliveries.parquet"), text, lang);
        assert_eq!(list, vec![], "{lang:?}:\n{}", fit::render(&outcome, false));
        assert_eq!(outcome.rows, 3000);
    }
}

#[test]
fn each_defect_gives_its_verdict() {
    use Problem::*;
    use Severity::*;
    let parquet = sample("deliveries.parquet");
    let data = common::full(&parquet).unwrap();
    let nulls = |path: &str| data.shape.find(path).map(|f| f.nulls() + f.missing).unwrap();
    // Counted from the JSON Lines copy of the same rows, with serde_json.
    let rows: Vec<serde_json::Value> = std::fs::read_to_string(sample("deliveries.jsonl"))
        .unwrap()
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    let with_tags = rows.iter().filter(|r| r["tags"].as_array().is_some_and(|t| !t.is_empty())).count() as u64;
    let fee_cents = rows
        .iter()
        .filter(|r| r["fee"].as_f64().is_some_and(|f| ((f * 100.0).round() as i64) % 10 != 0))
        .count() as u64;
    assert!(with_tags > 0 && fee_cents > 0);
    let cases: Vec<(&str, DefinitionLang, String, Vec<(&str, Problem, Severity, u64)>)> = vec![
        (
            "a wrong name",
            DefinitionLang::Scala,
            with_defect(SCALA, "  delivery_id: String,", "  delivery_ref: String,"),
            vec![("delivery_id", NotInDefinition, Note, 3000), ("delivery_ref", NotInData, Fails, 3000)],
        ),
        (
            "a missing Option",
            DefinitionLang::Scala,
            with_defect(SCALA, "note: Option[String]", "note: String"),
            vec![("note", Empty, Fails, nulls("note"))],
        ),
        (
            "a zoned timestamp for a wall-clock one",
            DefinitionLang::Scala,
            with_defect(SCALA, "booked_local: java.time.LocalDateTime", "booked_local: java.sql.Timestamp"),
            vec![("booked_local", Zone, Fails, 3000)],
        ),
        (
            "a name that differs only in case",
            DefinitionLang::Scala,
            with_defect(SCALA, "  zip_code: String,", "  Zip_Code: String,"),
            vec![("Zip_Code", NameCase, Fails, 3000)],
        ),
        (
            "wrong nesting: pickup's coordinates at the top",
            DefinitionLang::Scala,
            with_defect(
                &with_defect(SCALA, "case class Pickup(zone: String, at: java.sql.Timestamp, lat: Double, lon: Double)", "case class Pickup(zone: String, at: java.sql.Timestamp)"),
                "  distance_km: Double,",
                "  distance_km: Double,\n  lat: Double,\n  lon: Double,",
            ),
            vec![
                ("lat", NotInData, Fails, 3000),
                ("lon", NotInData, Fails, 3000),
                ("pickup.lat", NotInDefinition, Note, 3000),
                ("pickup.lon", NotInDefinition, Note, 3000),
            ],
        ),
        (
            "a whole number for a fraction",
            DefinitionLang::Rust,
            with_defect(RUST, "pub distance_km: f64", "pub distance_km: i64"),
            vec![("distance_km", WrongType, Fails, 3000)],
        ),
        (
            "NOT NULL on a column with nulls",
            DefinitionLang::SparkDdl,
            with_defect(DDL, "rating TINYINT,", "rating TINYINT NOT NULL,"),
            vec![("rating", Empty, Fails, nulls("rating"))],
        ),
        (
            "numbers where the list holds text",
            DefinitionLang::JsonSchema,
            with_defect(JSON_SCHEMA, r#""tags": {"type": "array", "items": {"type": "string"}}"#, r#""tags": {"type": "array", "items": {"type": "integer"}}"#),
            vec![("tags[]", WrongType, Fails, with_tags)],
        ),
        (
            "a decimal scale too small",
            DefinitionLang::SparkDdl,
            with_defect(DDL, "fee DECIMAL(8,2)", "fee DECIMAL(8,1)"),
            vec![("fee", DecimalDigits, Fails, fee_cents)],
        ),
    ];
    for (what, lang, text, expected) in cases {
        let (outcome, list) = verdicts(&parquet, &text, lang);
        let want: Vec<(String, Problem, Severity)> = expected.iter().map(|(p, pr, s, _)| (p.to_string(), *pr, *s)).collect();
        assert_eq!(list, want, "{what}:\n{}", fit::render(&outcome, false));
        for (path, _, _, rows) in &expected {
            let v = outcome.verdicts.iter().find(|v| v.path == *path).unwrap();
            assert_eq!(v.rows, *rows, "{what}: rows of {path}");
            assert!(v.examples.len() <= 5);
        }
        assert!(!outcome.fits(), "{what}");
    }
}

#[test]
fn an_int_for_a_64_bit_field_counts_the_values_that_overflow() {
    let dir = tempfile::tempdir().unwrap();
    let data = dir.path().join("ids.jsonl");
    // Written here: ids past 2^31 - 1 in rows 1 and 3 only.
    std::fs::write(&data, "{\"id\": 7}\n{\"id\": 3000000000}\n{\"id\": -2147483648}\n{\"id\": -2147483649}\n").unwrap();
    let (outcome, list) = verdicts(&data, "case class Row(id: Int)", DefinitionLang::Scala);
    assert_eq!(list, vec![("id".to_string(), Problem::Narrower, Severity::Fails)]);
    let v = &outcome.verdicts[0];
    assert_eq!(v.rows, 2);
    let rows: Vec<(u64, &str)> = v.examples.iter().map(|e| (e.row, e.value.as_str())).collect();
    assert_eq!(rows, vec![(1, "3000000000"), (3, "-2147483649")]);
    // A Long takes them all.
    let (_, list) = verdicts(&data, "case class Row(id: Long)", DefinitionLang::Scala);
    assert_eq!(list, vec![]);
}
