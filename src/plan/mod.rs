//! Lake plans: the profile of a source computed where it lives, by a
//! distributed engine, and written back as a Plumbline report.
//!
//! [`build`] turns a Shape (read locally from the source or from a local
//! part with the same schema) into a [`Plan`]: every field with the SQL
//! expression that reaches it, grouped into scopes (the rows, and one
//! exploded row set per list or map). [`spark_sql`] writes the plan as a
//! Spark SQL script; `driver.py` is the thin PySpark driver that runs it and
//! assembles the report.

pub mod spark_sql;

use serde::Serialize;

use crate::scan::Scan;
use crate::shape::{FieldShape, Kind, Role, Unified};
use crate::source::Format;

/// The view the driver registers over the source.
pub const SOURCE_VIEW: &str = "plumbline_source";
/// HyperLogLog++ relative standard deviation asked of `approx_count_distinct`.
pub const DISTINCT_RSD: f64 = 0.01;
/// `percentile_approx` accuracy; its rank error is at most 1 / accuracy.
pub const QUANTILE_ACCURACY: u32 = 10_000;
/// The quantiles every numeric field reports (p1 … p99).
pub const PROBABILITIES: [f64; 7] = [0.01, 0.05, 0.25, 0.5, 0.75, 0.95, 0.99];

/// The engines a plan can be written for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum Engine {
    /// Spark SQL, run by a PySpark driver (`spark-submit`, or `python3` with pyspark).
    SparkSql,
}

/// Which statistics a field gets, by what Spark will hold in it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Measure {
    Int,
    /// Floats and decimals (NaN and infinities counted apart for floats).
    Float,
    Decimal,
    Text,
    Bool,
    /// Timestamps with a zone: earliest, latest, share in the future.
    Instant,
    /// Timestamps without a zone, dates, times: distinct and top values.
    WallTime,
    Binary,
    List,
    Map,
    Struct,
    /// Arrow's null type: nothing but nulls to count.
    Null,
}

impl Measure {
    /// Distinct and top values are counted for scalars only.
    pub fn is_scalar(self) -> bool {
        !matches!(self, Measure::List | Measure::Map | Measure::Struct | Measure::Null)
    }

    /// Top values are counted for scalars Spark can write as text.
    pub fn has_top(self) -> bool {
        self.is_scalar() && self != Measure::Binary
    }

    pub fn is_number(self) -> bool {
        matches!(self, Measure::Int | Measure::Float | Measure::Decimal)
    }
}

/// A row set the statistics are computed over.
#[derive(Debug, Clone, Serialize)]
pub struct Scope {
    pub id: usize,
    /// The relation, as SQL (`plumbline_source`, or an exploding subquery).
    pub relation: String,
}

#[derive(Debug, Clone, Serialize)]
pub struct PlanField {
    /// Position in the report's field list; the column prefix `f{index}_`.
    pub index: usize,
    pub path: String,
    pub name: String,
    pub depth: usize,
    pub role: Role,
    pub declared_type: Option<String>,
    pub declared_nullable: Option<bool>,
    pub measure: Measure,
    /// The kind the report gives present values (the local shape's kind).
    pub kind: &'static str,
    /// For text read as a time: the form every value had (`timestamp`, …).
    pub text_form: Option<&'static str>,
    pub scope: usize,
    /// The SQL expression of the value within its scope.
    pub expr: String,
    /// SQL counting the places the field can have a value in its scope
    /// (every row of the scope, or those where the parent struct is present).
    pub places: String,
}

#[derive(Debug, Clone, Serialize)]
pub struct Plan {
    pub source: String,
    /// The format's name as reports give it (`Parquet`).
    pub format: &'static str,
    pub compression: crate::source::Compression,
    pub view: &'static str,
    pub distinct_rsd: f64,
    pub quantile_accuracy: u32,
    /// Spark's reader: `parquet`, `json` or `csv`.
    pub reader: &'static str,
    pub reader_options: Vec<(String, String)>,
    /// The schema handed to the reader (JSON and CSV, which declare none).
    pub schema_ddl: Option<String>,
    pub scopes: Vec<Scope>,
    pub fields: Vec<PlanField>,
    /// What the engine cannot tell apart or does not compute; stated in the report.
    pub limits: Vec<String>,
}

#[derive(Debug, thiserror::Error, PartialEq)]
pub enum PlanError {
    #[error("{format} cannot be read by Spark; convert it to Parquet first")]
    Unreadable { format: &'static str },
    #[error("field {path}: {why}")]
    Field { path: String, why: String },
}

/// Plans the profile of `source` (a path or URI as the engine will see it)
/// for the shape in `scan`.
pub fn build(scan: &Scan, source: &str) -> Result<Plan, PlanError> {
    let format = scan.info.format;
    let (reader, reader_options, schema_ddl, mut limits) = reader_for(scan, format)?;
    let mut planner = Planner { scopes: vec![Scope { id: 0, relation: SOURCE_VIEW.to_string() }], fields: Vec::new() };
    for field in &scan.shape.fields {
        planner.field(field, 0, 0, &quote(&field.name), None)?;
    }
    limits.push(format!(
        "distinct counts are HyperLogLog++ estimates (approx_count_distinct, relative standard deviation {DISTINCT_RSD})"
    ));
    limits.push(format!(
        "quantiles are percentile_approx values (accuracy {QUANTILE_ACCURACY}: rank error at most 1/{QUANTILE_ACCURACY}); histogram bins follow from them, their counts are exact"
    ));
    limits.push("no calendar or length histograms, no minority-kind examples".into());
    Ok(Plan {
        source: source.to_string(),
        format: format.label(),
        compression: scan.info.compression,
        view: SOURCE_VIEW,
        distinct_rsd: DISTINCT_RSD,
        quantile_accuracy: QUANTILE_ACCURACY,
        reader,
        reader_options,
        schema_ddl,
        scopes: planner.scopes,
        fields: planner.fields,
        limits,
    })
}

/// The PySpark driver for `plan`, with the plan written into it.
pub fn driver(plan: &Plan) -> String {
    let json = serde_json::to_string(plan).expect("plans serialize");
    // A JSON string literal is also a valid Python string literal.
    let literal = serde_json::to_string(&json).expect("strings serialize");
    include_str!("driver.py").replace("@PLAN_JSON@", &literal)
}

type Reader = (&'static str, Vec<(String, String)>, Option<String>, Vec<String>);

fn reader_for(scan: &Scan, format: Format) -> Result<Reader, PlanError> {
    let ddl = || spark_schema(scan);
    let option = |k: &str, v: &str| (k.to_string(), v.to_string());
    Ok(match format {
        Format::Parquet => ("parquet", Vec::new(), None, Vec::new()),
        Format::JsonLines | Format::Json => (
            "json",
            if format == Format::Json { vec![option("multiLine", "true")] } else { Vec::new() },
            Some(ddl()),
            vec![
                "missing keys are read as nulls (Spark cannot tell them apart): \"missing\" is 0 and \"nulls\" counts both".into(),
                "a field of several kinds is read as text".into(),
            ],
        ),
        Format::Csv | Format::Tsv => {
            let delimiter = if format == Format::Tsv { "\t" } else { scan.info.facts.delimited.as_ref().map_or(",", |d| d.delimiter.as_str()) };
            let header = scan.info.facts.delimited.as_ref().is_none_or(|d| d.header);
            (
                "csv",
                vec![option("header", if header { "true" } else { "false" }), option("sep", delimiter)],
                Some(ddl()),
                vec!["empty cells are read as nulls".into()],
            )
        }
        Format::ArrowFile | Format::ArrowStream => return Err(PlanError::Unreadable { format: format.label() }),
    })
}

/// The schema Spark reads text formats with: the shape's own types, every
/// field nullable (Spark's readers make them so anyway).
fn spark_schema(scan: &Scan) -> String {
    let options = crate::types::TypeOptions {
        root: "Row".into(),
        optional: crate::types::Optionality::All,
        mixed: crate::types::MixedChoice::Widest,
        time: crate::types::TimeChoice::Sql,
    };
    let code = crate::types::generate(scan, crate::types::Lang::SparkDdl, &options).code;
    code.lines().filter(|l| !l.starts_with("--")).collect::<Vec<_>>().join("\n")
}

struct Planner {
    scopes: Vec<Scope>,
    fields: Vec<PlanField>,
}

impl Planner {
    /// Adds `field` (reached by `expr` in `scope`) and everything under it.
    /// `parent` is the expression of the struct holding it, if any.
    fn field(&mut self, field: &FieldShape, depth: usize, scope: usize, expr: &str, parent: Option<&str>) -> Result<(), PlanError> {
        if field.role == Role::Variant {
            return Err(PlanError::Field { path: field.path.clone(), why: "union variants have no Spark type".into() });
        }
        let measure = measure_of(field);
        let places = match parent {
            Some(p) => format!("count_if({p} IS NOT NULL)"),
            None => "count(*)".to_string(),
        };
        self.fields.push(PlanField {
            index: self.fields.len(),
            path: field.path.clone(),
            name: field.name.clone(),
            depth,
            role: field.role,
            declared_type: field.declared.as_ref().map(|d| d.arrow.clone()),
            declared_nullable: field.declared.as_ref().map(|d| d.nullable),
            measure,
            kind: kind_of(field, measure),
            text_form: text_form(field),
            scope,
            expr: expr.to_string(),
            places,
        });
        match measure {
            Measure::Struct => {
                for child in &field.children {
                    let child_expr = format!("{expr}.{}", quote(&child.name));
                    self.field(child, depth + 1, scope, &child_expr, Some(expr))?;
                }
            }
            Measure::List => {
                let inner = self.explode(scope, expr, "explode({}) AS plumbline_e");
                for child in &field.children {
                    self.field(child, depth + 1, inner, "plumbline_e", None)?;
                }
            }
            Measure::Map => {
                let inner = self.explode(scope, expr, "explode({}) AS (plumbline_k, plumbline_v)");
                for child in &field.children {
                    let child_expr = if child.role == Role::MapKey { "plumbline_k" } else { "plumbline_v" };
                    self.field(child, depth + 1, inner, child_expr, None)?;
                }
            }
            _ => {}
        }
        Ok(())
    }

    /// A new scope: the elements of `expr` in `scope`, one row each.
    fn explode(&mut self, scope: usize, expr: &str, select: &str) -> usize {
        let id = self.scopes.len();
        let select = select.replace("{}", expr);
        let relation = format!("(SELECT {select} FROM {}) AS plumbline_s{id}", self.scopes[scope].relation);
        self.scopes.push(Scope { id, relation });
        id
    }
}

/// The kind seen most in the local shape, else the one the measure implies.
fn kind_of(field: &FieldShape, measure: Measure) -> &'static str {
    if let Some(kind) = field.kinds.majority() {
        return kind.name();
    }
    if let Some(d) = &field.declared {
        return crate::shape::kind_of(&d.data_type).name();
    }
    match measure {
        Measure::Int => "int",
        Measure::Float => "float",
        Measure::Decimal => "decimal",
        Measure::Text => "string",
        Measure::Bool => "bool",
        Measure::Instant | Measure::WallTime => "timestamp",
        Measure::Binary => "binary",
        Measure::List => "array",
        Measure::Map => "map",
        Measure::Struct => "object",
        Measure::Null => "null",
    }
}

/// The statistics a field gets: from its declared type when the source has
/// one, else from the kinds seen (a field of several kinds is read as text).
fn measure_of(field: &FieldShape) -> Measure {
    if let Some(d) = &field.declared {
        return measure_of_type(&d.data_type);
    }
    match field.kinds.unified() {
        Unified::One(kind) => match kind {
            Kind::Bool => Measure::Bool,
            Kind::Int => Measure::Int,
            Kind::Float => Measure::Float,
            // The record-type model reads JSON decimals beside floats as
            // doubles, wider integers as text.
            Kind::Decimal if field.kinds.get(Kind::Float) > 0 => Measure::Float,
            Kind::Object => Measure::Struct,
            Kind::Array => Measure::List,
            Kind::Map => Measure::Map,
            Kind::Binary => Measure::Binary,
            Kind::Timestamp => Measure::Instant,
            Kind::Date | Kind::Time => Measure::WallTime,
            _ => text_or_time(field),
        },
        _ => Measure::Text,
    }
}

/// Text read as a time when every value has one time form, as the
/// record-type model (and so the plan's schema) types it.
fn text_or_time(field: &FieldShape) -> Measure {
    match text_form(field) {
        Some("timestamp") => Measure::Instant,
        Some(_) => Measure::WallTime,
        None => Measure::Text,
    }
}

/// The time form every text value of a schema-less field has, if one.
fn text_form(field: &FieldShape) -> Option<&'static str> {
    let strings = field.kinds.get(Kind::String);
    let forms = &field.kinds.forms;
    if field.declared.is_some() || strings == 0 || field.kinds.unified() != Unified::One(Kind::String) {
        None
    } else if forms.timestamp == strings {
        Some("timestamp")
    } else if forms.timestamp_no_zone == strings {
        Some("timestamp_no_zone")
    } else if forms.date == strings {
        Some("date")
    } else {
        None
    }
}

fn measure_of_type(t: &arrow_schema::DataType) -> Measure {
    use arrow_schema::DataType as D;
    match t {
        D::Boolean => Measure::Bool,
        D::Int8 | D::Int16 | D::Int32 | D::Int64 | D::UInt8 | D::UInt16 | D::UInt32 | D::UInt64 => Measure::Int,
        D::Float16 | D::Float32 | D::Float64 => Measure::Float,
        D::Decimal32(..) | D::Decimal64(..) | D::Decimal128(..) | D::Decimal256(..) => Measure::Decimal,
        D::Utf8 | D::LargeUtf8 | D::Utf8View => Measure::Text,
        D::Binary | D::LargeBinary | D::BinaryView | D::FixedSizeBinary(_) => Measure::Binary,
        D::Timestamp(_, Some(_)) => Measure::Instant,
        D::Timestamp(_, None) | D::Date32 | D::Date64 | D::Time32(_) | D::Time64(_) => Measure::WallTime,
        D::List(_) | D::LargeList(_) | D::ListView(_) | D::LargeListView(_) | D::FixedSizeList(..) => Measure::List,
        D::Map(..) => Measure::Map,
        D::Struct(_) => Measure::Struct,
        D::Dictionary(_, value) => measure_of_type(value),
        D::Null => Measure::Null,
        _ => Measure::Text,
    }
}

/// A Spark SQL identifier in backticks (a backtick inside doubled).
pub fn quote(name: &str) -> String {
    format!("`{}`", name.replace('`', "``"))
}
