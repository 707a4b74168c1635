//! The target-neutral type model: records of fields, each a slot that is a
//! scalar, a list, a map, a record, or something the data leaves open
//! (never seen, or mixed kinds). Built once from the Shape; every target
//! renders this model and nothing else.

use arrow_schema::{DataType, TimeUnit};

use crate::shape::{FieldShape, Kind, Role, Shape, Unified};

#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Unit {
    Second,
    Milli,
    Micro,
    Nano,
}

impl Unit {
    fn of(unit: &TimeUnit) -> Unit {
        match unit {
            TimeUnit::Second => Unit::Second,
            TimeUnit::Millisecond => Unit::Milli,
            TimeUnit::Microsecond => Unit::Micro,
            TimeUnit::Nanosecond => Unit::Nano,
        }
    }

    pub fn label(self) -> &'static str {
        match self {
            Unit::Second => "seconds",
            Unit::Milli => "milliseconds",
            Unit::Micro => "microseconds",
            Unit::Nano => "nanoseconds",
        }
    }
}

#[derive(Debug, Clone, PartialEq, Eq, Hash)]
pub enum Scalar {
    Bool,
    Int { bits: u8, signed: bool },
    Float { bits: u8 },
    Decimal { precision: u8, scale: i8 },
    String,
    Binary,
    Date,
    Time { unit: Unit },
    /// An instant: a timestamp with a zone or offset (normalised to UTC by
    /// most targets). `zone` is the declared zone, `None` for RFC 3339 text.
    Instant { unit: Unit, zone: Option<String> },
    /// A wall-clock date-time without a zone.
    LocalDateTime { unit: Unit },
    Duration { unit: Unit },
}

#[derive(Debug, Clone, PartialEq, Eq, Hash)]
pub enum Ty {
    Scalar(Scalar),
    List(Box<Slot>),
    Map { key: Box<Slot>, value: Box<Slot> },
    /// Index into [`Model::records`].
    Record(usize),
    /// No non-null value was seen, or the type has no counterpart (Arrow
    /// intervals, JSON integers wider than 64 bits): any value.
    Any { why: String },
    /// Values of several kinds that do not unify, with their counts.
    Mixed(Vec<(Kind, u64)>, Vec<Slot>),
}

/// A place that holds a value: its type and whether it may be null.
#[derive(Debug, Clone, PartialEq, Eq, Hash)]
pub struct Slot {
    pub ty: Ty,
    pub nullable: bool,
}

#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Field {
    /// The name exactly as in the data.
    pub name: String,
    pub slot: Slot,
    /// The key may be absent (JSON), not only null.
    pub may_be_missing: bool,
}

impl Field {
    pub fn optional(&self) -> bool {
        self.slot.nullable || self.may_be_missing
    }
}

#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Record {
    /// The type name, unique in the model (see `naming`).
    pub name: String,
    /// The field path the record was first built for ("" for the root).
    pub path: String,
    pub fields: Vec<Field>,
}

impl Record {
    /// What one value of the record is, for a comment: `one row` for the
    /// root, else its path (in backticks when `code`).
    pub fn what(&self, code: bool) -> String {
        match (self.path.is_empty(), code) {
            (true, _) => "one row".into(),
            (false, true) => format!("`{}`", self.path),
            (false, false) => self.path.clone(),
        }
    }
}

#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Model {
    /// Nested records first, each before any record that uses it; the
    /// root is last.
    pub records: Vec<Record>,
    /// What the model could not keep, by field path.
    pub warnings: Vec<String>,
}

impl Model {
    pub fn root(&self) -> &Record {
        self.records.last().expect("a model has a root record")
    }
}

/// Where optionality comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, clap::ValueEnum)]
pub enum Optionality {
    /// Optional where nulls or missing keys were seen (declared nullability
    /// when no rows were read).
    #[default]
    Observed,
    /// Optional where the declared schema allows nulls (observed for
    /// formats without a schema).
    Declared,
    /// Every field optional.
    All,
}

/// Builds the model of `shape`. `rows_read` is false for a schema-only
/// shape, where observed optionality falls back to the declared one.
pub fn build(shape: &Shape, optionality: Optionality, rows_read: bool) -> Model {
    let mut b = Builder { records: Vec::new(), optionality, rows_read, warnings: Vec::new() };
    b.record("", &shape.fields);
    Model { records: b.records, warnings: b.warnings }
}

struct Builder {
    records: Vec<Record>,
    optionality: Optionality,
    rows_read: bool,
    warnings: Vec<String>,
}

impl Builder {
    /// Adds the record of these members (or finds an identical one).
    fn record(&mut self, path: &str, members: &[FieldShape]) -> usize {
        let mut fields: Vec<Field> = Vec::new();
        for f in members.iter().filter(|f| f.role == Role::Member) {
            // Arrow allows a name twice in one struct; no record type can.
            if fields.iter().any(|seen| seen.name == f.name) {
                self.warnings.push(format!(
                    "{}: the name appears more than once in one record; the types keep the first",
                    f.path
                ));
                continue;
            }
            fields.push(Field { name: f.name.clone(), slot: self.slot(f), may_be_missing: self.missing(f) });
        }
        // Records with the same fields share one type.
        if let Some(i) = self.records.iter().position(|r| r.fields == fields) {
            return i;
        }
        self.records.push(Record { name: String::new(), path: path.to_string(), fields });
        self.records.len() - 1
    }

    fn missing(&self, f: &FieldShape) -> bool {
        match self.optionality {
            Optionality::All => true,
            _ => self.rows_read && f.missing > 0,
        }
    }

    fn nullable(&self, f: &FieldShape) -> bool {
        let declared = f.declared.as_ref().map(|d| d.nullable);
        match self.optionality {
            Optionality::All => true,
            Optionality::Declared => declared.unwrap_or(f.nulls() > 0),
            Optionality::Observed if !self.rows_read => declared.unwrap_or(true),
            Optionality::Observed => f.nulls() > 0,
        }
    }

    fn slot(&mut self, f: &FieldShape) -> Slot {
        let ty = match &f.declared {
            Some(d) => self.declared_ty(f, &d.data_type.clone()),
            None => self.observed_ty(f),
        };
        Slot { ty, nullable: self.nullable(f) }
    }

    fn child<'a>(f: &'a FieldShape, role: Role) -> Option<&'a FieldShape> {
        f.children.iter().find(|c| c.role == role)
    }

    fn list_of(&mut self, f: &FieldShape) -> Ty {
        match Self::child(f, Role::Element) {
            Some(element) => Ty::List(Box::new(self.slot(element))),
            None => Ty::List(Box::new(Slot { ty: Ty::Any { why: "every list was empty".into() }, nullable: true })),
        }
    }

    fn map_of(&mut self, f: &FieldShape) -> Ty {
        let any = |why: &str| Slot { ty: Ty::Any { why: why.into() }, nullable: true };
        let key = Self::child(f, Role::MapKey).map_or_else(|| any("no entry seen"), |k| self.slot(k));
        let value = Self::child(f, Role::MapValue).map_or_else(|| any("no entry seen"), |v| self.slot(v));
        Ty::Map { key: Box::new(Slot { nullable: false, ..key }), value: Box::new(value) }
    }

    fn declared_ty(&mut self, f: &FieldShape, data_type: &DataType) -> Ty {
        use DataType::*;
        let int = |bits, signed| Ty::Scalar(Scalar::Int { bits, signed });
        match data_type {
            Boolean => Ty::Scalar(Scalar::Bool),
            Int8 => int(8, true),
            Int16 => int(16, true),
            Int32 => int(32, true),
            Int64 => int(64, true),
            UInt8 => int(8, false),
            UInt16 => int(16, false),
            UInt32 => int(32, false),
            UInt64 => int(64, false),
            Float16 => Ty::Scalar(Scalar::Float { bits: 16 }),
            Float32 => Ty::Scalar(Scalar::Float { bits: 32 }),
            Float64 => Ty::Scalar(Scalar::Float { bits: 64 }),
            Decimal32(p, s) | Decimal64(p, s) | Decimal128(p, s) | Decimal256(p, s) => {
                Ty::Scalar(Scalar::Decimal { precision: *p, scale: *s })
            }
            Utf8 | LargeUtf8 | Utf8View => Ty::Scalar(Scalar::String),
            Binary | LargeBinary | BinaryView | FixedSizeBinary(_) => Ty::Scalar(Scalar::Binary),
            Date32 | Date64 => Ty::Scalar(Scalar::Date),
            Time32(u) | Time64(u) => Ty::Scalar(Scalar::Time { unit: Unit::of(u) }),
            Timestamp(u, Some(zone)) => Ty::Scalar(Scalar::Instant { unit: Unit::of(u), zone: Some(zone.to_string()) }),
            Timestamp(u, None) => Ty::Scalar(Scalar::LocalDateTime { unit: Unit::of(u) }),
            Duration(u) => Ty::Scalar(Scalar::Duration { unit: Unit::of(u) }),
            List(_) | LargeList(_) | ListView(_) | LargeListView(_) | FixedSizeList(..) => self.list_of(f),
            Struct(_) => Ty::Record(self.record(&f.path, &f.children)),
            Map(..) => self.map_of(f),
            Dictionary(_, value) => self.declared_ty(f, value),
            RunEndEncoded(_, values) => self.declared_ty(f, &values.data_type().clone()),
            Union(..) => {
                let variants: Vec<Slot> =
                    f.children.iter().filter(|c| c.role == Role::Variant).map(|c| self.slot(c)).collect();
                let kinds = f.kinds.iter().filter(|(k, _)| *k != Kind::Null).collect();
                Ty::Mixed(kinds, variants)
            }
            Null => Ty::Any { why: "declared as null: no value can be seen".into() },
            other => Ty::Any { why: format!("{other} has no counterpart") },
        }
    }

    fn observed_ty(&mut self, f: &FieldShape) -> Ty {
        match f.kinds.unified() {
            Unified::Nothing => Ty::Any { why: "no non-null value was seen".into() },
            Unified::One(kind) => self.kind_ty(f, kind),
            Unified::Mixed => {
                let kinds: Vec<(Kind, u64)> = f.kinds.iter().filter(|(k, _)| *k != Kind::Null).collect();
                let variants = kinds.iter().map(|&(k, _)| Slot { ty: self.kind_ty(f, k), nullable: false }).collect();
                Ty::Mixed(kinds, variants)
            }
        }
    }

    /// The type of one observed kind of a schema-less field.
    fn kind_ty(&mut self, f: &FieldShape, kind: Kind) -> Ty {
        match kind {
            Kind::Bool => Ty::Scalar(Scalar::Bool),
            Kind::Int => match f.kinds.int_range {
                Some((lo, _)) if lo < i64::MIN as i128 => Ty::Any { why: "integers below the 64-bit range".into() },
                Some((_, hi)) if hi > u64::MAX as i128 => Ty::Any { why: "integers above the 64-bit range".into() },
                Some((lo, hi)) if lo >= 0 && hi > i64::MAX as i128 => Ty::Scalar(Scalar::Int { bits: 64, signed: false }),
                _ => Ty::Scalar(Scalar::Int { bits: 64, signed: true }),
            },
            Kind::Float => Ty::Scalar(Scalar::Float { bits: 64 }),
            Kind::Decimal if f.kinds.get(Kind::Float) > 0 => Ty::Scalar(Scalar::Float { bits: 64 }),
            Kind::Decimal => Ty::Any { why: "integers wider than 64 bits".into() },
            Kind::String => {
                let strings = f.kinds.get(Kind::String);
                let forms = &f.kinds.forms;
                if forms.timestamp == strings {
                    Ty::Scalar(Scalar::Instant { unit: Unit::Micro, zone: None })
                } else if forms.timestamp_no_zone == strings {
                    Ty::Scalar(Scalar::LocalDateTime { unit: Unit::Micro })
                } else if forms.date == strings {
                    Ty::Scalar(Scalar::Date)
                } else {
                    Ty::Scalar(Scalar::String)
                }
            }
            Kind::Object => Ty::Record(self.record(&f.path, &f.children)),
            Kind::Array => self.list_of(f),
            Kind::Map => self.map_of(f),
            other => Ty::Any { why: format!("{} values have no schema-less counterpart", other.name()) },
        }
    }
}
