//! Rebuilds the demo data in `sample-data/`: an invented feed of parcel
//! deliveries by the cargo-bike couriers of the fictional town of Quillmoor.
//! Every name, code and number here is made up; the generator is seeded, so
//! the same files come out every time.
//!
//! Run with `cargo run --example make-sample-data` (writes into `sample-data/`).
//! The test `tests/sample_data.rs` checks the committed files are exactly
//! what this produces.

use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::Path;
use std::sync::Arc;

use arrow_array::RecordBatch;
use arrow_schema::{DataType, Field, Fields, Schema, SchemaRef, TimeUnit};
use serde_json::{Map, Value, json};

/// Rows in the first drop and in the later one.
pub const FIRST_DROP_ROWS: usize = 3000;
pub const LATER_DROP_ROWS: usize = 1500;

/// SplitMix64: small, seeded, and the same on every machine.
struct Rng(u64);

impl Rng {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }
    fn below(&mut self, n: u64) -> u64 {
        self.next() % n
    }
    fn unit(&mut self) -> f64 {
        (self.next() >> 11) as f64 / (1u64 << 53) as f64
    }
    fn chance(&mut self, p: f64) -> bool {
        self.unit() < p
    }
    fn pick<'a>(&mut self, items: &[&'a str]) -> &'a str {
        items[self.below(items.len() as u64) as usize]
    }
    fn uuid(&mut self) -> String {
        let a = self.next();
        let b = self.next();
        format!(
            "{:08x}-{:04x}-4{:03x}-{:04x}-{:012x}",
            a >> 32,
            (a >> 16) & 0xffff,
            a & 0x0fff,
            (b >> 48) & 0x3fff | 0x8000,
            b & 0xffff_ffff_ffff
        )
    }
}

const ZONES: &[&str] = &["Harbour", "Old Mill", "Tanners Row", "Lantern Hill", "Eastbank", "Quarry Gate"];
const VEHICLES: &[&str] = &["cargo-bike", "e-trike", "trailer-bike"];
const TAGS: &[&str] = &["fragile", "express", "cold-chain", "oversize", "signature"];
const STATUSES: &[&str] = &["returned", "lost", "refused"];

/// 2026-03-02T06:00:00Z, the first morning of the feed, in seconds.
const FEED_START: i64 = 1_772_431_200;

fn rfc3339(secs: i64) -> String {
    plumbline::time::rfc3339_from_unix(secs)
}

fn local_time(secs: i64) -> String {
    rfc3339(secs).trim_end_matches('Z').to_string()
}

/// One delivery, as two views: `raw` as the courier app writes JSON (keys
/// left out, numbers sometimes as text), `typed` as the warehouse exports it
/// (every key present, nulls explicit, one type per field).
struct Delivery {
    raw: Value,
    typed: Value,
}

fn delivery(rng: &mut Rng, index: usize, later: bool) -> Delivery {
    let id = rng.uuid();
    let pickup_at = FEED_START + index as i64 * 97 + rng.below(600) as i64;
    let mut zone = rng.pick(ZONES).to_string();
    if rng.chance(0.02) {
        zone = format!(" {zone} "); // typed in by hand, with stray spaces
    }
    let vehicle = rng.pick(VEHICLES);
    let courier_code = format!("QC-{:03}", 1 + rng.below(48));
    let delivered = !rng.chance(0.04);
    let mut dropoff_at = pickup_at + 600 + rng.below(3600) as i64;
    if rng.chance(0.01) {
        dropoff_at += 73 * 365 * 86_400; // a clock set to the far future
    }
    let stop_count = 1 + rng.below(4) as usize;
    let stops: Vec<Value> = (0..stop_count)
        .map(|s| {
            json!({
                "seq": s + 1,
                "eta": rfc3339(pickup_at + 300 * (s as i64 + 1)),
                "kind": if s + 1 == stop_count { "drop" } else { "handover" },
            })
        })
        .collect();
    let weight = (0.2 + rng.unit() * 14.0 * rng.unit()) as f32;
    let declared_cents = 500 + rng.below(30_000);
    let fee_cents = 350 + rng.below(1500);
    let tags: Vec<Value> = (0..rng.below(3))
        .map(|_| {
            let tag = rng.pick(TAGS);
            // Case variants from different app versions.
            match rng.below(10) {
                0 => tag.to_uppercase(),
                1 => format!("{}{}", tag[..1].to_uppercase(), &tag[1..]),
                _ => tag.to_string(),
            }
            .into()
        })
        .collect();
    let mut attributes = Map::new();
    attributes.insert("floor".into(), json!(rng.below(6).to_string()));
    if rng.chance(0.6) {
        let code = if rng.chance(0.15) { "N/A".to_string() } else { format!("{:04}", rng.below(10_000)) };
        attributes.insert("door_code".into(), json!(code));
    }
    if rng.chance(0.1) {
        attributes.insert("dog".into(), json!("friendly"));
    }
    let mut distance = 0.4 + rng.unit() * 6.0;
    if rng.chance(0.005) {
        distance = 999.0; // the app's "unknown" sentinel, a far outlier
    }
    let rating: Option<f64> = match rng.below(10) {
        0..=3 => None,
        4 => Some(-1.0), // "not asked" placeholder
        _ => Some(if later { (2 + rng.below(7)) as f64 / 2.0 } else { (1 + rng.below(5)) as f64 }),
    };
    let note = rng.chance(0.2).then(|| format!("leave with {}", rng.pick(&["neighbour", "concierge", "shop"])));
    let zip = format!("{:05}", 4100 + rng.below(40));
    let status = if delivered { "delivered" } else { rng.pick(STATUSES) };
    let co2 = (distance * 11.0) as i64;

    let typed_rating = match rating {
        Some(r) if later => json!(r),
        Some(r) => json!(r as i64),
        None => Value::Null,
    };
    let mut typed = json!({
        "delivery_id": id,
        "courier": {"code": courier_code, "vehicle": vehicle},
        "pickup": {"zone": zone, "at": rfc3339(pickup_at), "lat": 52.1 + rng.unit() / 20.0, "lon": 4.3 + rng.unit() / 20.0},
        "dropoff": if delivered { json!({"zone": rng.pick(ZONES), "at": rfc3339(dropoff_at)}) } else { Value::Null },
        "stops": stops,
        "parcel": {"weight_kg": weight, "declared_value": format!("{}.{:02}", declared_cents / 100, declared_cents % 100), "fragile": rng.chance(0.2)},
        "fee": format!("{}.{:02}", fee_cents / 100, fee_cents % 100),
        "tags": tags,
        "attributes": attributes,
        "distance_km": distance,
        "rating": typed_rating,
        "note": note,
        "zip_code": zip,
        "status": status,
        "currency": "EUR",
        "booked_local": local_time(pickup_at - 3600 - rng.below(86_400) as i64),
    });
    let vehicle_missing = later && rng.chance(0.1);
    if later {
        typed["co2_grams"] = json!(co2);
        if vehicle_missing {
            typed["courier"]["vehicle"] = Value::Null;
        }
    }

    // The raw view: what the app really sends.
    let mut raw = typed.clone();
    let obj = raw.as_object_mut().expect("row is an object");
    if note.is_none() && rng.chance(0.5) {
        obj.remove("note"); // older app versions leave the key out
    }
    if rating.is_none() && rng.chance(0.5) {
        obj.remove("rating");
    }
    if rng.chance(0.03) {
        obj.insert("zip_code".into(), json!(zip.parse::<i64>().expect("digits"))); // leading zeros lost
    }
    obj.insert("fee".into(), json!((fee_cents as f64) / 100.0));
    if vehicle_missing {
        raw["courier"].as_object_mut().expect("courier").remove("vehicle");
    }
    Delivery { raw, typed }
}

fn schema(later: bool) -> SchemaRef {
    // An offset, not a zone name: arrow-json here is built without a zone database.
    let utc = || DataType::Timestamp(TimeUnit::Microsecond, Some("+00:00".into()));
    let stop = Fields::from(vec![
        Field::new("seq", DataType::Int16, false),
        Field::new("eta", utc(), false),
        Field::new("kind", DataType::Utf8, false),
    ]);
    let entries = Field::new(
        "entries",
        DataType::Struct(Fields::from(vec![Field::new("key", DataType::Utf8, false), Field::new("value", DataType::Utf8, true)])),
        false,
    );
    let mut fields = vec![
        Field::new("delivery_id", DataType::Utf8, false),
        Field::new(
            "courier",
            DataType::Struct(Fields::from(vec![Field::new("code", DataType::Utf8, false), Field::new("vehicle", DataType::Utf8, true)])),
            false,
        ),
        Field::new(
            "pickup",
            DataType::Struct(Fields::from(vec![
                Field::new("zone", DataType::Utf8, false),
                Field::new("at", utc(), false),
                Field::new("lat", DataType::Float64, false),
                Field::new("lon", DataType::Float64, false),
            ])),
            false,
        ),
        Field::new(
            "dropoff",
            DataType::Struct(Fields::from(vec![Field::new("zone", DataType::Utf8, false), Field::new("at", utc(), false)])),
            true,
        ),
        Field::new("stops", DataType::List(Arc::new(Field::new("item", DataType::Struct(stop), false))), false),
        Field::new(
            "parcel",
            DataType::Struct(Fields::from(vec![
                Field::new("weight_kg", DataType::Float32, false),
                Field::new("declared_value", DataType::Decimal128(10, 2), false),
                Field::new("fragile", DataType::Boolean, false),
            ])),
            false,
        ),
        Field::new("fee", DataType::Decimal128(8, 2), false),
        Field::new("tags", DataType::List(Arc::new(Field::new("item", DataType::Utf8, false))), false),
        Field::new("attributes", DataType::Map(Arc::new(entries), false), false),
        Field::new("distance_km", DataType::Float64, false),
        Field::new("rating", if later { DataType::Float32 } else { DataType::Int8 }, true),
        Field::new("note", DataType::Utf8, true),
        Field::new("zip_code", DataType::Utf8, false),
        Field::new("status", DataType::Utf8, false),
        Field::new("currency", DataType::Utf8, false),
        Field::new("booked_local", DataType::Timestamp(TimeUnit::Microsecond, None), false),
    ];
    if later {
        fields.push(Field::new("co2_grams", DataType::Int32, false));
    }
    Arc::new(Schema::new(fields))
}

fn to_batch(schema: &SchemaRef, typed: &[Value]) -> RecordBatch {
    let mut decoder = arrow_json::ReaderBuilder::new(schema.clone()).build_decoder().expect("decoder");
    decoder.serialize(typed).expect("typed rows fit the schema");
    decoder.flush().expect("flush").expect("rows")
}

fn write_jsonl(path: &Path, rows: &[Value]) -> std::io::Result<()> {
    let mut out = BufWriter::new(File::create(path)?);
    for row in rows {
        serde_json::to_writer(&mut out, row)?;
        out.write_all(b"\n")?;
    }
    out.flush()
}

fn write_parquet(path: &Path, batch: &RecordBatch) {
    let props = parquet::file::properties::WriterProperties::builder()
        .set_compression(parquet::basic::Compression::ZSTD(Default::default()))
        .set_max_row_group_row_count(Some(1000))
        .set_created_by("plumbline sample-data generator".into())
        .build();
    let mut writer = parquet::arrow::ArrowWriter::try_new(File::create(path).expect("create"), batch.schema(), Some(props))
        .expect("parquet writer");
    writer.write(batch).expect("write");
    writer.close().expect("close");
}

fn write_ipc(path: &Path, batch: &RecordBatch) {
    let options = arrow_ipc::writer::IpcWriteOptions::default()
        .try_with_compression(Some(arrow_ipc::CompressionType::ZSTD))
        .expect("zstd");
    let file = File::create(path).expect("create");
    let mut writer = arrow_ipc::writer::FileWriter::try_new_with_options(file, &batch.schema(), options).expect("ipc writer");
    for offset in (0..batch.num_rows()).step_by(1000) {
        writer.write(&batch.slice(offset, 1000.min(batch.num_rows() - offset))).expect("write");
    }
    writer.finish().expect("finish");
}

/// A flat extract, as a spreadsheet user would receive it.
fn write_csv(path: &Path, typed: &[Value]) -> std::io::Result<()> {
    let mut out = csv::Writer::from_path(path)?;
    out.write_record(["delivery_id", "courier_code", "pickup_zone", "pickup_at", "dropoff_at", "weight_kg", "fee", "distance_km", "rating", "zip_code", "status"])?;
    for row in typed {
        let text = |v: &Value| match v {
            Value::Null => String::new(),
            Value::String(s) => s.clone(),
            other => other.to_string(),
        };
        out.write_record([
            text(&row["delivery_id"]),
            text(&row["courier"]["code"]),
            text(&row["pickup"]["zone"]),
            text(&row["pickup"]["at"]),
            text(&row["dropoff"]["at"]),
            format!("{:.3}", row["parcel"]["weight_kg"].as_f64().unwrap_or(0.0)),
            text(&row["fee"]),
            format!("{:.3}", row["distance_km"].as_f64().unwrap_or(0.0)),
            text(&row["rating"]),
            text(&row["zip_code"]),
            text(&row["status"]),
        ])?;
    }
    out.flush()
}

/// Writes every demo file under `dir`.
pub fn write_all(dir: &Path) -> std::io::Result<()> {
    std::fs::create_dir_all(dir.join("later"))?;
    for (later, rows, seed) in [(false, FIRST_DROP_ROWS, 0x51_11_a0_01u64), (true, LATER_DROP_ROWS, 0x51_11_a0_02)] {
        let mut rng = Rng(seed);
        let deliveries: Vec<Delivery> = (0..rows).map(|i| delivery(&mut rng, i + if later { 40_000 } else { 0 }, later)).collect();
        let raw: Vec<Value> = deliveries.iter().map(|d| d.raw.clone()).collect();
        let typed: Vec<Value> = deliveries.into_iter().map(|d| d.typed).collect();
        let batch = to_batch(&schema(later), &typed);
        let base = if later { dir.join("later") } else { dir.to_path_buf() };
        write_jsonl(&base.join("deliveries.jsonl"), &raw)?;
        write_parquet(&base.join("deliveries.parquet"), &batch);
        if !later {
            write_ipc(&base.join("deliveries.arrow"), &batch);
            write_csv(&base.join("deliveries.csv"), &typed)?;
        }
    }
    Ok(())
}

#[allow(dead_code)]
fn main() -> std::io::Result<()> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-data");
    write_all(&dir)?;
    println!("wrote the demo data to {}", dir.display());
    Ok(())
}
