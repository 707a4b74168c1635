//! The lake plan, run for real: `plumbline plan` writes a Spark SQL script
//! and its PySpark driver for the demo data and every Parquet corpus file
//! Plumbline profiles; `tests/reference/run_plans.py` runs them all on
//! Spark (pyspark in local mode, installed by `.ci/run`); each report is
//! read back by Plumbline and must agree with Plumbline's own profile of
//! the same file: exact statistics equal, estimated ones within the error
//! the engine states (HyperLogLog++ relative standard deviation for
//! distinct counts, `percentile_approx`'s rank error for quantiles).

mod common;

use std::collections::HashMap;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use plumbline::profile::field::FieldStats;
use plumbline::scan::Scan;
use plumbline::shape::{FieldShape, Kind};

/// Notes a disagreement and goes on, so one run lists them all.
macro_rules! check {
    ($errors:expr, $cond:expr, $($message:tt)+) => {
        if !$cond {
            $errors.push(format!($($message)+));
        }
    };
}

macro_rules! check_eq {
    ($errors:expr, $a:expr, $b:expr, $($message:tt)+) => {
        if $a != $b {
            $errors.push(format!("{}: Spark {:?}, Plumbline {:?}", format!($($message)+), $a, $b));
        }
    };
}

fn plumbline(args: &[&std::ffi::OsStr]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_plumbline")).args(args).output().expect("run plumbline")
}

fn demo(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-data").join(name)
}

/// Writes the plan for `data` as `dir/name.sql` and `dir/name.py`.
fn write_plan(data: &Path, dir: &Path, name: &str) -> PathBuf {
    let script = dir.join(format!("{name}.sql"));
    let o = plumbline(&[
        "plan".as_ref(),
        data.as_os_str(),
        "--engine".as_ref(),
        "spark-sql".as_ref(),
        "-o".as_ref(),
        script.as_os_str(),
    ]);
    assert!(o.status.success(), "plan {}: {}", data.display(), String::from_utf8_lossy(&o.stderr));
    script.with_extension("py")
}

#[test]
fn plan_writes_a_script_and_a_driver_that_python_compiles() {
    let dir = tempfile::tempdir().unwrap();
    let driver = write_plan(&demo("deliveries.parquet"), dir.path(), "deliveries");
    let script = std::fs::read_to_string(driver.with_extension("sql")).unwrap();
    // The root row set, the stops' elements and the tags' elements and the attributes' entries.
    for marker in ["-- @statement summary 0", "-- @statement histogram 0", "-- @statement top 0", "approx_count_distinct("] {
        assert!(script.contains(marker), "no {marker:?} in the script");
    }
    assert!(script.contains("explode(`stops`)"), "the list of stops is not exploded");
    assert!(script.contains("explode(`attributes`) AS (plumbline_k, plumbline_v)"), "the map is not exploded into keys and values");
    let text = std::fs::read_to_string(&driver).unwrap();
    assert!(!text.contains("@PLAN_JSON@"), "the plan was not written into the driver");
    let Some(python) = common::tool_on_path("python3", "the machine's Python") else { return };
    let compiled = Command::new(python).args(["-m", "py_compile"]).arg(&driver).output().unwrap();
    assert!(compiled.status.success(), "{}", String::from_utf8_lossy(&compiled.stderr));
}

#[test]
fn plan_refuses_what_it_cannot_plan_naming_the_file() {
    let arrow = demo("deliveries.arrow");
    let o = plumbline(&["plan".as_ref(), arrow.as_os_str()]);
    assert_eq!(o.status.code(), Some(2));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("deliveries.arrow") && err.contains("convert it to Parquet"), "{err}");

    let o = plumbline(&["plan".as_ref(), "s3a://lake/deliveries/".as_ref()]);
    assert_eq!(o.status.code(), Some(2));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("s3a://lake/deliveries/") && err.contains("--like"), "{err}");

    // With --like, a URI is planned from a local file of the same schema.
    let o = plumbline(&["plan".as_ref(), "s3a://lake/deliveries/".as_ref(), "--like".as_ref(), demo("deliveries.parquet").as_os_str()]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    assert!(String::from_utf8_lossy(&o.stdout).contains("-- Plumbline lake plan: the profile of s3a://lake/deliveries/"));
}

/// Corpus files whose plan Spark 4.3 (pyspark, local mode) refuses to
/// read, and why: each is a limit of Spark's Parquet reader, seen in its
/// own error, not of the plan.
const SPARK_REFUSES: &[(&str, &str)] = &[
    ("byte_array_decimal.parquet", "the vectorized reader fails on a decimal stored as a byte array (NullPointerException on childColumns)"),
    ("byte_stream_split_extended.gzip.parquet", "no FLOAT16 type (PARQUET_TYPE_ILLEGAL)"),
    ("float16_nonzeros_and_nans.parquet", "no FLOAT16 type (PARQUET_TYPE_ILLEGAL)"),
    ("float16_zeros_and_nans.parquet", "no FLOAT16 type (PARQUET_TYPE_ILLEGAL)"),
    ("floating_orders_nan_count.parquet", "no FLOAT16 type (PARQUET_TYPE_ILLEGAL)"),
    ("large_string_map.brotli.parquet", "no Brotli codec in Spark's Hadoop libraries (BrotliCodec not found)"),
    ("map_no_value.parquet", "rejects a map without a value field (Invalid map type)"),
    ("non_hadoop_lz4_compressed.parquet", "reads LZ4 only in Hadoop's framing"),
    ("unknown-logical-type.parquet", "rejects a logical type it does not know"),
];

/// The corpus's `geospatial/` files: Spark 4.3 fails on their GEOMETRY and
/// GEOGRAPHY columns (a MatchError on BinaryView in its reader).
const SPARK_REFUSES_GEOSPATIAL: &[&str] = &[
    "crs-arbitrary-value.parquet",
    "crs-default.parquet",
    "crs-geography.parquet",
    "crs-projjson.parquet",
    "crs-srid.parquet",
    "geography-lines.parquet",
    "geography-points.parquet",
    "geography-polygons.parquet",
    "geospatial-with-nan.parquet",
    "geospatial.parquet",
];

#[test]
fn plans_run_on_spark_agree_with_the_local_profile() {
    let dir = tempfile::tempdir().unwrap();
    let mut sources = vec![demo("deliveries.parquet"), demo("deliveries.jsonl")];
    if let Some(corpus) = common::corpus("parquet/data") {
        for path in common::files_under(&corpus, &|p| p.extension().is_some_and(|e| e == "parquet")) {
            // Files Plumbline itself cannot profile in full are covered by corpus_parquet.rs.
            if common::full(&path).is_ok_and(|s| !s.coverage.is_partial()) && plannable(&path) {
                sources.push(path);
            }
        }
    }
    let drivers: Vec<PathBuf> =
        sources.iter().enumerate().map(|(i, s)| write_plan(s, dir.path(), &format!("plan{i}"))).collect();
    let args: Vec<&std::ffi::OsStr> = drivers.iter().map(|d| d.as_os_str()).collect();
    if common::run_reference_check("run_plans.py", &args, "pyspark (and Java 17)").is_none() {
        return;
    }
    let mut refused = Vec::new();
    let mut errors = Vec::new();
    for (source, driver) in sources.iter().zip(&drivers) {
        let name = source.file_name().unwrap().to_string_lossy().into_owned();
        let error = driver.with_extension("error.txt");
        if error.exists() {
            refused.push((name, std::fs::read_to_string(error).unwrap()));
            continue;
        }
        let report = driver.with_extension("report.json");
        let spark = plumbline::report::read::read(&report).unwrap_or_else(|e| panic!("{name}: the report does not read back: {e}"));
        assert_eq!(spark.from_report.as_ref().and_then(|r| r.engine.as_deref()), Some("spark"));
        let local = common::full(source).unwrap();
        agree(&mut errors, &name, &local, &spark);
        if name.ends_with(".parquet") {
            same_schema_and_no_drift(&mut errors, source, &report);
        }
    }
    assert!(errors.is_empty(), "{} disagreements:\n{}", errors.len(), errors.join("\n"));
    let mut expected: Vec<&str> = SPARK_REFUSES.iter().map(|(n, _)| *n).chain(SPARK_REFUSES_GEOSPATIAL.iter().copied()).collect();
    let mut got: Vec<&str> = refused.iter().map(|(n, _)| n.as_str()).collect();
    expected.sort();
    got.sort();
    assert_eq!(got, expected, "Spark refused other plans than expected: {refused:#?}");
}

/// Plans need a schema Spark can hold (Arrow unions and Parquet's
/// unannotated repeated fields have none); `plan` says so itself.
fn plannable(path: &Path) -> bool {
    let o = plumbline(&["plan".as_ref(), path.as_os_str()]);
    o.status.success()
}

/// `compare DATA REPORT`: no schema change, no drift.
fn same_schema_and_no_drift(errors: &mut Vec<String>, data: &Path, report: &Path) {
    let o = plumbline(&[
        "compare".as_ref(),
        data.as_os_str(),
        report.as_os_str(),
        "--fail-on".as_ref(),
        "schema".as_ref(),
        "--fail-on".as_ref(),
        "drift".as_ref(),
    ]);
    check!(
        errors,
        o.status.success(),
        "{}: compare with its Spark report:\n{}{}",
        data.display(),
        String::from_utf8_lossy(&o.stdout),
        String::from_utf8_lossy(&o.stderr)
    );
}

fn fields(scan: &Scan) -> HashMap<String, FieldShape> {
    let mut out = HashMap::new();
    scan.shape.walk(|f, _| {
        out.insert(f.path.clone(), f.clone());
    });
    out
}

fn close(errors: &mut Vec<String>, what: &str, spark: f64, local: f64, relative: f64) {
    let tolerance = relative * local.abs().max(1.0);
    check!(errors, (spark - local).abs() <= tolerance, "{what}: Spark {spark}, Plumbline {local}");
}

fn agree(errors: &mut Vec<String>, name: &str, local: &Scan, spark: &Scan) {
    check_eq!(errors, spark.shape.rows, local.shape.rows, "{name}: rows");
    let (l, s) = (fields(local), fields(spark));
    let mut local_paths: Vec<&String> = l.keys().collect();
    let mut spark_paths: Vec<&String> = s.keys().collect();
    local_paths.sort();
    spark_paths.sort();
    check_eq!(errors, spark_paths, local_paths, "{name}: field paths");
    for (path, lf) in &l {
        let sf = &s[path];
        let at = format!("{name} {path}");
        check_eq!(errors, sf.count, lf.count, "{at}: places");
        // Spark reads a missing key as null.
        check_eq!(errors, sf.nulls() + sf.missing, lf.nulls() + lf.missing, "{at}: nulls and missing");
        if let (Some(ls), Some(ss)) = (lf.stats.as_deref(), sf.stats.as_deref()) {
            agree_stats(errors, &at, lf, ls, ss);
        }
    }
}

fn agree_stats(errors: &mut Vec<String>, at: &str, field: &FieldShape, local: &FieldStats, spark: &FieldStats) {
    let (ld, sd) = (local.distinct.count(), spark.distinct.count());
    if ld.exact && ld.value > 0 && field.kinds.unified() != plumbline::shape::Unified::Mixed {
        // approx_count_distinct at rsd 0.01: three standard errors, and one value.
        let allowed = 3.0 * sd.standard_error * ld.value as f64 + 1.0;
        check!(errors, (sd.value as f64 - ld.value as f64).abs() <= allowed, "{at}: distinct Spark {} Plumbline {}", sd.value, ld.value);
    }
    if let (Some(ln), Some(sn)) = (&local.numbers, &spark.numbers) {
        let n = ln.moments.count();
        check_eq!(errors, sn.moments.count(), n, "{at}: numbers");
        check_eq!(errors, (sn.nan, sn.pos_inf + sn.neg_inf), (ln.nan, ln.pos_inf + ln.neg_inf), "{at}: NaN and infinities");
        if n > 0 {
            close(errors, &format!("{at}: min"), sn.moments.min().unwrap(), ln.moments.min().unwrap(), 1e-12);
            close(errors, &format!("{at}: max"), sn.moments.max().unwrap(), ln.moments.max().unwrap(), 1e-12);
            close(errors, &format!("{at}: mean"), sn.moments.mean().unwrap(), ln.moments.mean().unwrap(), 1e-9);
            if let (Some(a), Some(b)) = (sn.moments.std(), ln.moments.std()) {
                // Spark's one-pass variance loses digits as the mean dwarfs
                // the spread: relative error grows like ε·(mean/std)², the
                // condition number of the sum of squares (Chan, Golub &
                // LeVeque 1983); on hadoop_lz4_compressed.parquet c0 numpy
                // agrees with Plumbline (0.5773502691896257), Spark is 4e-8 off.
                let mean = ln.moments.mean().unwrap();
                let conditioned = if b > 0.0 { 8.0 * f64::EPSILON * (mean / b).powi(2) } else { 0.0 };
                close(errors, &format!("{at}: std"), a, b, 1e-9 + conditioned);
            }
            quantiles_within_rank_error(errors, at, ln, sn);
            let h = sn.histogram().expect("a histogram for numbers");
            check_eq!(errors, h.counts.iter().sum::<u64>(), n, "{at}: histogram counts");
        }
    }
    // Spark reads a field of several kinds as text: its text is every value's.
    let mixed = field.kinds.unified() == plumbline::shape::Unified::Mixed;
    if let (Some(lt), Some(st), false) = (&local.text, &spark.text, mixed) {
        check_eq!(errors, (st.empty, st.padded), (lt.empty, lt.padded), "{at}: empty and padded text");
        let (lm, sm) = (&lt.lengths.moments, &st.lengths.moments);
        check_eq!(errors, (sm.min(), sm.max()), (lm.min(), lm.max()), "{at}: text lengths");
        close(errors, &format!("{at}: mean length"), sm.mean().unwrap(), lm.mean().unwrap(), 1e-9);
    }
    if let (Some(ll), Some(sl)) = (&local.list_lengths, &spark.list_lengths) {
        let (lm, sm) = (&ll.moments, &sl.moments);
        check_eq!(errors, (sm.min(), sm.max()), (lm.min(), lm.max()), "{at}: elements per value");
        close(errors, &format!("{at}: mean elements"), sm.mean().unwrap(), lm.mean().unwrap(), 1e-9);
    }
    if let (Some(li), Some(si)) = (&local.instants, &spark.instants) {
        check_eq!(errors, (si.min, si.max), (li.min, li.max), "{at}: earliest and latest");
        check_eq!(errors, si.future, li.future, "{at}: instants in the future");
    }
    // Exact top values: every value Spark lists has Plumbline's count
    // (text and integers, which both sides write the same way).
    let comparable = match field.kinds.unified() {
        plumbline::shape::Unified::One(Kind::Int) => true,
        // Text Spark read as text (not as a timestamp, which it writes its own way).
        plumbline::shape::Unified::One(Kind::String) => spark.text.is_some(),
        _ => false,
    };
    if comparable && local.top.is_exact() && spark.top.is_exact() {
        let counted: HashMap<String, u64> = local.top.entries().collect();
        for (value, count) in spark.top.entries() {
            check_eq!(errors, counted.get(&value), Some(&count), "{at}: top value {value:?}");
        }
    }
}

/// Each Spark quantile q at p has Plumbline's share of values below q at
/// most p + ε and at or below q at least p − ε, with ε the stated rank
/// error (1/accuracy) plus one value's share (Spark returns a value of the
/// data, type 7 interpolates between two).
fn quantiles_within_rank_error(errors: &mut Vec<String>, at: &str, local: &plumbline::profile::numbers::NumberStats, spark: &plumbline::profile::numbers::NumberStats) {
    let q = spark.quantiles().expect("Spark states quantiles");
    let n = local.moments.count() as f64;
    let epsilon = q.rank_error.expect("a rank error is stated") + 1.0 / n + local.quantiles().and_then(|l| l.rank_error).unwrap_or(0.0);
    for (&p, &v) in plumbline::profile::quantiles::PROFILE_PROBABILITIES.iter().zip(&q.values) {
        // Spark's value can sit an ulp off the data's own (seen for
        // Float32 values widened to double), so allow the last digits.
        let slack = v.abs() * 1e-12;
        let below = local.share_below(v - slack);
        let at_or_below = local.share_below((v + slack).next_up());
        check!(errors, below <= p + epsilon && at_or_below >= p - epsilon, "{at}: p{} = {v}: {below} below, {at_or_below} at or below", p * 100.0);
    }
}

/// The driver as a user runs it (its own `main`, its own Spark session),
/// with `--no-examples`: the report keeps no value from the data.
#[test]
fn the_driver_runs_alone_and_leaves_data_values_out_on_request() {
    let dir = tempfile::tempdir().unwrap();
    let driver = write_plan(&demo("deliveries.parquet"), dir.path(), "deliveries");
    let report = dir.path().join("deliveries.report.json");
    let run = Command::new("python3")
        .arg(&driver)
        .args(["--master", "local[1]", "--no-examples", "--report"])
        .arg(&report)
        .output();
    match run {
        Ok(o) if o.status.success() => {}
        Ok(o) if String::from_utf8_lossy(&o.stderr).contains("No module named 'pyspark'") => {
            common::not_run::<()>("pyspark is not installed (`.ci/run` installs it)");
            return;
        }
        other => panic!("the driver failed: {other:?}"),
    }
    let text = std::fs::read_to_string(&report).unwrap();
    let value: serde_json::Value = serde_json::from_str(&text).unwrap();
    assert_eq!(value["examples_included"], false);
    for field in value["fields"].as_array().unwrap() {
        for key in ["top", "min", "max", "earliest", "latest"] {
            assert!(field.get(key).is_none(), "{} keeps {key}", field["path"]);
        }
    }
    assert!(value["source"]["bytes"].as_u64().is_some_and(|b| b > 0), "the file system's size of the source");
    let scan = plumbline::report::read::read(&report).unwrap();
    assert_eq!(scan.shape.rows, 3000);
}
