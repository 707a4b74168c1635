//! The Shape: a tree of fields, each with its declared type (from the file's
//! schema) and what was observed in the data: kinds with counts, and
//! present / null / missing counts.
//!
//! Counting rule: a field's `count` is the number of places it could have a
//! value — the rows for a top-level field, the times its parent was an
//! object for a member, the elements seen for `[]`, the entries for `{}`
//! and `{key}`. Each place is either present (a non-null value), null, or
//! missing (JSON: the key was absent; directories: the part lacks the field).

mod declared;
mod dictionary;
mod from_arrow;
mod from_values;
pub mod kinds;
pub mod strings;

use std::collections::{BTreeMap, HashMap};

use serde::{Deserialize, Serialize};

pub use declared::Declared;
pub use from_arrow::kind_of;
pub use kinds::{Kind, KindCounts, Unified};

use crate::profile::budget::Budget;
use crate::profile::field::FieldStats;
use crate::source::json::RawRecords;
use crate::source::{Batch, SourceError, SourceInfo};

/// Examples kept per kind per field (for showing minority kinds).
pub const EXAMPLES_PER_KIND: usize = 3;
/// Characters kept of an example's raw value.
pub const EXAMPLE_CHARS: usize = 80;

/// How a field hangs from its parent.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Role {
    Member,
    Element,
    MapKey,
    MapValue,
    /// A variant of an Arrow union: missing wherever another variant was taken.
    Variant,
}

/// A value seen in the data, kept to show what a kind looks like.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct Example {
    /// 0-based row number in the source; `None` when the rows before the
    /// one it came from were never counted (a spread sample of a text file).
    pub row: Option<u64>,
    /// The value as compact text, cut to [`EXAMPLE_CHARS`].
    pub value: String,
}

impl Example {
    /// Where the example came from, for people: `row 12` or `an uncounted row`.
    pub fn place(&self) -> String {
        match self.row {
            Some(row) => format!("row {}", crate::format::group_digits(row)),
            None => "an uncounted row".to_string(),
        }
    }
}

#[derive(Debug, Clone, PartialEq)]
pub struct FieldShape {
    pub name: String,
    pub path: String,
    pub role: Role,
    pub declared: Option<Declared>,
    pub kinds: KindCounts,
    /// Places where the field appeared, with a value or null.
    pub appeared: u64,
    /// Filled by [`ShapeBuilder::finish`]: see the module comment.
    pub count: u64,
    pub missing: u64,
    pub examples: BTreeMap<Kind, Vec<Example>>,
    pub children: Vec<FieldShape>,
    /// Statistics of the values, when the scan profiles.
    pub stats: Option<Box<FieldStats>>,
    /// Texts of a dictionary-encoded column counted but not yet observed
    /// (see `dictionary.rs`); settled before the field is read or merged.
    pending: Option<Box<dictionary::PendingTexts>>,
    /// The name as placed in the parent (differs from `name` only for a
    /// repeated field name: `name#2`).
    key: String,
    index: HashMap<String, usize>,
    /// The first row that held the field (`u64::MAX` until one does; 0 for
    /// declared fields), so chunks observed apart merge into the order of
    /// first appearance.
    first_row: u64,
}

impl FieldShape {
    pub fn new(name: &str, path: String, role: Role) -> Self {
        FieldShape {
            name: name.to_string(),
            path,
            role,
            declared: None,
            kinds: KindCounts::default(),
            appeared: 0,
            count: 0,
            missing: 0,
            examples: BTreeMap::new(),
            children: Vec::new(),
            stats: None,
            pending: None,
            key: name.to_string(),
            index: HashMap::new(),
            first_row: u64::MAX,
        }
    }

    /// Notes that row `row` holds this field.
    pub(crate) fn seen_at(&mut self, row: u64) {
        self.first_row = self.first_row.min(row);
    }

    /// Orders children (at every depth) by the row that first held them;
    /// ties keep their order.
    fn order_by_first_row(&mut self) {
        if self.children.windows(2).any(|w| w[0].first_row > w[1].first_row) {
            self.children.sort_by_key(|c| c.first_row);
            self.index = self.children.iter().enumerate().map(|(i, c)| (child_key(&c.key, c.role), i)).collect();
        }
        self.children.iter_mut().for_each(FieldShape::order_by_first_row);
    }

    pub fn nulls(&self) -> u64 {
        self.kinds.get(Kind::Null)
    }

    pub fn present(&self) -> u64 {
        self.kinds.non_null()
    }

    /// The child with `role` and `name`, created on first sight.
    pub(crate) fn child_mut(&mut self, name: &str, role: Role) -> &mut FieldShape {
        self.child_mut_named(name, name, role)
    }

    /// Like `child_mut`, for a child whose place in the tree (`key`, used in
    /// its path) differs from its name: the second of two same-named fields.
    pub(crate) fn child_mut_named(&mut self, key: &str, name: &str, role: Role) -> &mut FieldShape {
        let index_key = child_key(key, role);
        if let Some(&i) = self.index.get(&index_key) {
            return &mut self.children[i];
        }
        let path = match role {
            Role::Member | Role::Variant => crate::path::member(&self.path, key),
            Role::Element => crate::path::element(&self.path),
            Role::MapKey => crate::path::map_key(&self.path),
            Role::MapValue => crate::path::map_value(&self.path),
        };
        self.index.insert(index_key, self.children.len());
        let mut child = FieldShape::new(name, path, role);
        child.key = key.to_string();
        child.stats = self.stats.as_ref().map(|s| Box::new(FieldStats::with_budget(s.budget())));
        self.children.push(child);
        self.children.last_mut().expect("just pushed")
    }

    /// Looks a child up, trying position `hint` first (rows usually list
    /// their keys in the same order).
    pub(crate) fn member_mut_hinted(&mut self, name: &str, hint: usize) -> &mut FieldShape {
        if let Some(c) = self.children.get(hint)
            && c.role == Role::Member
            && c.name == name
        {
            return &mut self.children[hint];
        }
        self.child_mut(name, Role::Member)
    }

    pub(crate) fn note_example(&mut self, kind: Kind, row: u64, render: impl FnOnce() -> String) {
        let list = self.examples.entry(kind).or_default();
        if list.len() < EXAMPLES_PER_KIND {
            list.push(Example { row: Some(row), value: render() });
        }
    }

    /// Examples of the kinds other than the most common one, when mixed.
    pub fn minority_examples(&self) -> Vec<(Kind, &Example)> {
        if self.kinds.unified() != Unified::Mixed {
            return Vec::new();
        }
        let majority = self.kinds.majority();
        self.examples
            .iter()
            .filter(|(k, _)| Some(**k) != majority && **k != Kind::Null)
            .flat_map(|(k, list)| list.iter().map(move |e| (*k, e)))
            .collect()
    }

    /// A short type description: the declared type when there is one,
    /// otherwise what was observed.
    pub fn type_label(&self) -> String {
        if let Some(d) = &self.declared {
            return d.short_label();
        }
        observed_label(&self.kinds)
    }

    /// Adds another shape of the same field (from another chunk) to this one.
    pub fn merge(&mut self, other: &FieldShape) {
        if self.declared.is_none() {
            self.declared = other.declared.clone();
        }
        self.kinds.merge(&other.kinds);
        self.appeared += other.appeared;
        self.first_row = self.first_row.min(other.first_row);
        if let Some(theirs) = &other.stats {
            self.stats.get_or_insert_with(Box::default).merge(theirs);
        }
        if let Some(counted) = &other.pending {
            dictionary::add_counted(self, counted);
        }
        for (kind, list) in &other.examples {
            let mine = self.examples.entry(*kind).or_default();
            mine.extend(list.iter().cloned());
            mine.sort_by_key(|e| e.row);
            mine.truncate(EXAMPLES_PER_KIND);
        }
        for child in &other.children {
            self.child_mut_named(&child.key, &child.name, child.role).merge(child);
        }
    }

    fn finish(&mut self, places: u64) {
        self.count = places;
        self.missing = places.saturating_sub(self.appeared);
        let as_parent = self.kinds.get(Kind::Object);
        let present = self.present();
        for child in &mut self.children {
            let places = match child.role {
                Role::Member => as_parent,
                Role::Variant => present,
                Role::Element | Role::MapKey | Role::MapValue => child.appeared,
            };
            child.finish(places);
        }
    }

    /// This field and all below it, depth first, with their depth.
    pub fn walk(&self, depth: usize, visit: &mut impl FnMut(&FieldShape, usize)) {
        visit(self, depth);
        for c in &self.children {
            c.walk(depth + 1, visit);
        }
    }
}

fn child_key(name: &str, role: Role) -> String {
    match role {
        Role::Member => format!("m:{name}"),
        Role::Variant => format!("v:{name}"),
        Role::Element => "[]".into(),
        Role::MapKey => "{key}".into(),
        Role::MapValue => "{}".into(),
    }
}

/// Describes observed kinds: `int (int16)`, `string (timestamp)`,
/// `mixed: int 90%, string 10%`.
pub fn observed_label(kinds: &KindCounts) -> String {
    match kinds.unified() {
        Unified::Nothing => "null".into(),
        Unified::One(Kind::Int) => match kinds.int_range {
            Some((lo, hi)) => format!("int ({})", kinds::fitting_int(lo, hi)),
            None => "int".into(),
        },
        Unified::One(Kind::String) => {
            let total = kinds.get(Kind::String);
            match kinds.forms.iter().find(|&(_, n)| n == total) {
                Some((form, _)) => format!("string ({form})"),
                None => "string".into(),
            }
        }
        Unified::One(Kind::Float) if kinds.is_lossy() => "float (lossy: wide integers met floats)".into(),
        Unified::One(k) => k.name().into(),
        Unified::Mixed => {
            let total = kinds.non_null().max(1);
            let parts: Vec<String> = kinds
                .iter()
                .filter(|(k, _)| *k != Kind::Null)
                .map(|(k, n)| format!("{} {}%", k.name(), percent(n, total)))
                .collect();
            format!("mixed: {}", parts.join(", "))
        }
    }
}

fn percent(n: u64, total: u64) -> String {
    let p = n as f64 * 100.0 / total as f64;
    if p >= 1.0 || p == 0.0 { format!("{p:.0}") } else { "<1".into() }
}

/// The whole Shape of a source.
#[derive(Debug, Clone, PartialEq)]
pub struct Shape {
    pub rows: u64,
    /// Top-level fields in the order first seen (schema order for typed formats).
    pub fields: Vec<FieldShape>,
}

impl Shape {
    /// Every field, depth first, with its depth (0 for top level).
    pub fn walk(&self, mut visit: impl FnMut(&FieldShape, usize)) {
        for f in &self.fields {
            f.walk(0, &mut visit);
        }
    }

    /// Finds a field by its path.
    pub fn find(&self, path: &str) -> Option<&FieldShape> {
        fn find_in<'a>(fields: &'a [FieldShape], path: &str) -> Option<&'a FieldShape> {
            fields.iter().find_map(|f| if f.path == path { Some(f) } else { find_in(&f.children, path) })
        }
        find_in(&self.fields, path)
    }
}

/// Builds a Shape batch by batch; chunks built apart can be merged.
#[derive(Debug, Clone)]
pub struct ShapeBuilder {
    /// A virtual object whose members are the top-level fields.
    root: FieldShape,
    rows: u64,
    /// JSON: one builder per thread, each observing its share of every
    /// batch with the rows' own numbers, merged into `root` at the end.
    workers: Vec<ShapeBuilder>,
    /// What a new JSON worker's tree starts as (see [`Self::for_later_part`]);
    /// an empty tree when `None`.
    worker_start: Option<Box<FieldShape>>,
}

impl ShapeBuilder {
    /// Starts from the declared schema, so every declared field is shown even
    /// when no row holds it. With `profile`, every field also gathers
    /// statistics of its values.
    pub fn new(info: &SourceInfo, profile: bool) -> Self {
        let mut root = FieldShape::new("", String::new(), Role::Member);
        if profile {
            root.stats = Some(Box::default());
        }
        if let Some(schema) = &info.schema {
            declared::seed_from_schema(&mut root, schema, info.parquet_leaves.as_deref());
            root.walk_mut(&mut |f| f.first_row = 0);
        }
        let mut builder = ShapeBuilder { root, rows: 0, workers: Vec::new(), worker_start: None };
        builder.enforce_budget();
        builder
    }

    /// Gives every field its share of the memory budget for the fields known
    /// so far (a source's fields are known up front when it declares a
    /// schema; JSON fields appear as rows are read).
    fn enforce_budget(&mut self) {
        if self.root.stats.is_none() {
            return;
        }
        let mut fields = 0usize;
        self.root.walk_mut(&mut |_| fields += 1);
        let budget = Budget::for_fields(fields.saturating_sub(1));
        self.root.walk_mut(&mut |f| {
            if let Some(stats) = &mut f.stats {
                stats.set_budget(budget);
            }
        });
    }

    /// An empty builder for a chunk; merge it into the main one afterwards.
    pub fn empty(profile: bool) -> Self {
        let mut root = FieldShape::new("", String::new(), Role::Member);
        if profile {
            root.stats = Some(Box::default());
        }
        ShapeBuilder { root, rows: 0, workers: Vec::new(), worker_start: None }
    }

    pub fn rows(&self) -> u64 {
        self.rows
    }

    /// Observes one batch whose first row has number `self.rows()`. JSON
    /// records are parsed here, in parallel chunks; a bad record ends the
    /// batch: the rows before it are kept and its error returned.
    pub fn add(&mut self, batch: &Batch) -> Result<(), SourceError> {
        let first_row = self.rows;
        match batch {
            Batch::Arrow(b) => from_arrow::observe_batch(&mut self.root, b),
            Batch::Rows(rows) => from_values::observe_rows(&mut self.root, rows, first_row),
            Batch::Json(records) => return self.add_json(records),
        }
        self.count_rows(batch.num_rows() as u64);
        self.enforce_budget();
        Ok(())
    }

    fn count_rows(&mut self, n: u64) {
        self.rows += n;
        self.root.kinds.add(Kind::Object, n);
        self.root.appeared += n;
    }

    /// The records are cut into a few chunks per thread. Each chunk is
    /// parsed in parallel; once the first bad record, if any, is known, the
    /// rows before it are observed in parallel, each chunk by whichever
    /// worker builder is free. Workers keep their accumulators across
    /// batches, so nothing is merged per batch (a chunk-per-batch design
    /// spent a fifth of its time merging, on one core), and small chunks let
    /// a thread that finishes early take more.
    fn add_json(&mut self, records: &RawRecords) -> Result<(), SourceError> {
        use rayon::prelude::*;

        let profile = self.root.stats.is_some();
        let len = records.len();
        let chunks = (4 * rayon::current_num_threads()).max(1);
        let share = len.div_ceil(chunks).max(1);
        let range = |c: usize| (c * share).min(len)..((c + 1) * share).min(len);
        let parsed: Vec<(Vec<crate::value::Value>, Option<(usize, SourceError)>)> = (0..chunks)
            .into_par_iter()
            .map(|c| {
                let mut rows = Vec::with_capacity(range(c).len());
                for i in range(c) {
                    match records.row(i) {
                        Ok(row) => rows.push(row),
                        Err(e) => return (rows, Some((i, e))),
                    }
                }
                (rows, None)
            })
            .collect();
        // Chunks are in order, so the first error found is the earliest.
        let cut = parsed.iter().find_map(|(_, e)| e.as_ref().map(|(i, _)| *i)).unwrap_or(len);
        let first_row = self.rows;
        let pool = std::sync::Mutex::new(std::mem::take(&mut self.workers));
        parsed.par_iter().enumerate().for_each(|(c, (rows, _))| {
            let start = range(c).start;
            let keep = cut.saturating_sub(start).min(rows.len());
            if keep == 0 {
                return;
            }
            let taken = pool.lock().expect("no worker panics holding the pool").pop();
            let mut worker = taken.unwrap_or_else(|| match &self.worker_start {
                Some(start) => ShapeBuilder { root: start.as_ref().clone(), rows: 0, workers: Vec::new(), worker_start: None },
                None => ShapeBuilder::empty(profile),
            });
            from_values::observe_rows(&mut worker.root, &rows[..keep], first_row + start as u64);
            worker.count_rows(keep as u64);
            worker.enforce_budget();
            pool.lock().expect("no worker panics holding the pool").push(worker);
        });
        self.workers = pool.into_inner().expect("the pool is not poisoned");
        self.rows += cut as u64;
        parsed.into_iter().find_map(|(_, e)| e.map(|(_, e)| e)).map_or(Ok(()), Err)
    }

    /// Merges the workers' accumulators into the tree (their rows are
    /// already counted in `self.rows`).
    fn absorb_workers(&mut self) {
        if self.workers.is_empty() {
            return;
        }
        for worker in std::mem::take(&mut self.workers) {
            self.root.merge(&worker.root);
        }
        self.root.order_by_first_row();
        self.enforce_budget();
    }

    /// An empty builder for a later part of the same source, whose fields
    /// (every one seen so far) start past the exact structures this builder
    /// has already given up (see [`FieldStats::start_past`]): merging the
    /// part back could not make them exact again, so the part need not
    /// build them. Its JSON workers start from the same fields.
    pub fn for_later_part(&self, info: &SourceInfo) -> ShapeBuilder {
        fn start_past(part: &mut FieldShape, merged: &FieldShape) {
            if let (Some(mine), Some(theirs)) = (part.stats.as_deref_mut(), merged.stats.as_deref()) {
                mine.start_past(theirs);
            }
            for theirs in &merged.children {
                start_past(part.child_mut_named(&theirs.key, &theirs.name, theirs.role), theirs);
            }
        }
        let mut part = ShapeBuilder::new(info, self.root.stats.is_some());
        start_past(&mut part.root, &self.root);
        part.worker_start = Some(Box::new(part.root.clone()));
        part
    }

    /// Observes every dictionary's counted texts, so the fields hold
    /// everything added.
    fn settle(&mut self) {
        self.root.walk_mut(&mut dictionary::settle);
    }

    /// Merges a chunk that came after everything already added.
    pub fn merge_after(&mut self, mut later: ShapeBuilder) {
        self.absorb_workers();
        later.absorb_workers();
        self.settle();
        later.settle();
        let offset = self.rows;
        later.root.walk_mut(&mut |f| {
            if f.first_row != u64::MAX {
                f.first_row += offset;
            }
            for list in f.examples.values_mut() {
                for row in list.iter_mut().filter_map(|e| e.row.as_mut()) {
                    *row += offset;
                }
            }
        });
        self.root.merge(&later.root);
        self.rows += later.rows;
        self.enforce_budget();
    }

    /// Replaces each example's row number `i` with `rows[i]` (for a sample,
    /// whose row `i` is row `rows[i]` of the source, or of no counted row).
    pub fn renumber_examples(&mut self, rows: &[Option<u64>]) {
        self.root.walk_mut(&mut |f| {
            for list in f.examples.values_mut() {
                for e in list {
                    if let Some(&row) = e.row.and_then(|i| rows.get(i as usize)) {
                        e.row = row;
                    }
                }
            }
        });
    }

    pub fn finish(mut self) -> Shape {
        self.absorb_workers();
        self.settle();
        self.root.finish(self.rows);
        Shape { rows: self.rows, fields: self.root.children }
    }
}

impl FieldShape {
    fn walk_mut(&mut self, visit: &mut impl FnMut(&mut FieldShape)) {
        visit(self);
        for c in &mut self.children {
            c.walk_mut(visit);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::value::Value;

    fn row(pairs: &[(&str, Value)]) -> Value {
        Value::Object(pairs.iter().map(|(k, v)| (k.to_string(), v.clone())).collect())
    }

    fn rows() -> Vec<Value> {
        vec![
            row(&[("a", Value::Int(1)), ("b", Value::Str("x".into()))]),
            row(&[("a", Value::Null)]),
            row(&[("a", Value::Str("late".into())), ("c", Value::Array(vec![Value::Int(5)]))]),
            row(&[("b", Value::Str("2024-01-02".into()))]),
        ]
    }

    #[test]
    fn chunks_merged_in_order_equal_one_pass() {
        let all = rows();
        let mut whole = ShapeBuilder::empty(true);
        whole.add(&Batch::Rows(all.clone())).unwrap();
        let mut first = ShapeBuilder::empty(true);
        first.add(&Batch::Rows(all[..2].to_vec())).unwrap();
        let mut second = ShapeBuilder::empty(true);
        second.add(&Batch::Rows(all[2..].to_vec())).unwrap();
        first.merge_after(second);
        assert_eq!(first.finish(), whole.finish());
    }

    #[test]
    fn counts_follow_the_counting_rule() {
        let mut b = ShapeBuilder::empty(true);
        b.add(&Batch::Rows(rows())).unwrap();
        let shape = b.finish();
        let a = shape.find("a").unwrap();
        assert_eq!((a.count, a.present(), a.nulls(), a.missing), (4, 2, 1, 1));
        assert_eq!(a.kinds.unified(), Unified::Mixed);
        let examples = a.minority_examples();
        assert_eq!(examples.len(), 1, "the minority kind only: {examples:?}");
        assert_eq!(examples[0].1.row, Some(2));
        let mut wide = ShapeBuilder::empty(false);
        let mixed_numbers =
            vec![row(&[("n", Value::Float(1.5))]), row(&[("n", Value::BigInt("99999999999999999999".into()))])];
        wide.add(&Batch::Rows(mixed_numbers)).unwrap();
        let n = wide.finish();
        assert_eq!(observed_label(&n.find("n").unwrap().kinds), "float (lossy: wide integers met floats)");
        let c = shape.find("c[]").unwrap();
        assert_eq!((c.count, c.missing), (1, 0));
        assert_eq!(shape.find("b").unwrap().kinds.forms.date, 1);
    }

    /// A batch of `columns` int64 columns, each holding 0..rows.
    fn wide_batch(columns: usize, rows: i64) -> Batch {
        use std::sync::Arc;
        let fields: Vec<arrow_schema::Field> = (0..columns)
            .map(|i| arrow_schema::Field::new(format!("c{i}"), arrow_schema::DataType::Int64, false))
            .collect();
        let arrays: Vec<arrow_array::ArrayRef> =
            (0..columns).map(|_| Arc::new(arrow_array::Int64Array::from_iter_values(0..rows)) as _).collect();
        Batch::Arrow(arrow_array::RecordBatch::try_new(Arc::new(arrow_schema::Schema::new(fields)), arrays).unwrap())
    }

    #[test]
    fn wide_sources_give_each_field_a_smaller_exact_budget() {
        let distinct = |columns| {
            let mut b = ShapeBuilder::empty(true);
            b.add(&wide_batch(columns, 5_000)).unwrap();
            let shape = b.finish();
            let stats = shape.find("c0").unwrap().stats.as_ref().unwrap().distinct_count().unwrap();
            let quantiles_exact =
                shape.find("c0").unwrap().stats.as_ref().unwrap().numbers.as_ref().unwrap().is_exact();
            (stats.exact, quantiles_exact)
        };
        // 10 columns: the full budget (100,000 distinct, 10,000 values).
        assert_eq!(distinct(10), (true, true));
        // 600 columns: 2,000,000 / 600 = 3,333 distinct and values each, below 5,000.
        assert_eq!(distinct(600), (false, false));
    }
}
