//! Comparing two sources' shapes field by field: which fields were added,
//! removed, changed type, or started (or stopped) holding nulls or missing
//! keys. The window's Compare area shows this; drift statistics per field
//! are meant to join each [`FieldChange`] later.

use std::collections::HashMap;

use crate::shape::{FieldShape, Shape};

/// What happened to one field between the two sources.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Change {
    Same,
    /// Only in the second source.
    Added,
    /// Only in the first source.
    Removed,
    /// In both, with another type (declared, else observed).
    TypeChanged,
    /// In both with the same type, but only one has nulls or missing keys
    /// (a record type's optionality would differ).
    EmptinessChanged,
}

impl Change {
    /// A symbol that says the same as the colour it is shown in.
    pub fn symbol(&self) -> &'static str {
        match self {
            Change::Same => "=",
            Change::Added => "+",
            Change::Removed => "−",
            Change::TypeChanged | Change::EmptinessChanged => "~",
        }
    }

    pub fn label(&self) -> &'static str {
        match self {
            Change::Same => "same",
            Change::Added => "added",
            Change::Removed => "removed",
            Change::TypeChanged => "type changed",
            Change::EmptinessChanged => "nulls or missing keys changed",
        }
    }
}

/// One field of either source and what changed.
#[derive(Debug, Clone, PartialEq)]
pub struct FieldChange {
    pub path: String,
    pub depth: usize,
    pub change: Change,
    /// The field as the first source has it (None when added).
    pub before: Option<FieldSide>,
    /// The field as the second source has it (None when removed).
    pub after: Option<FieldSide>,
}

/// What the comparison looks at on each side.
#[derive(Debug, Clone, PartialEq)]
pub struct FieldSide {
    pub type_label: String,
    /// Places that were null or missing.
    pub empty: u64,
    pub count: u64,
}

impl FieldSide {
    fn of(field: &FieldShape) -> Self {
        FieldSide { type_label: field.type_label(), empty: field.nulls() + field.missing, count: field.count }
    }
}

/// Every field of `before` in its order, each with its change, then the
/// fields only `after` has, in its order.
pub fn compare_shapes(before: &Shape, after: &Shape) -> Vec<FieldChange> {
    let mut later: HashMap<&str, &FieldShape> = HashMap::new();
    by_path(&after.fields, &mut later);
    let mut out = Vec::new();
    let mut seen = std::collections::HashSet::new();
    before.walk(|f, depth| {
        seen.insert(f.path.clone());
        let b = FieldSide::of(f);
        let (change, a) = match later.get(f.path.as_str()) {
            None => (Change::Removed, None),
            Some(other) => {
                let a = FieldSide::of(other);
                let change = if a.type_label != b.type_label {
                    Change::TypeChanged
                } else if (a.empty > 0) != (b.empty > 0) {
                    Change::EmptinessChanged
                } else {
                    Change::Same
                };
                (change, Some(a))
            }
        };
        out.push(FieldChange { path: f.path.clone(), depth, change, before: Some(b), after: a });
    });
    after.walk(|f, depth| {
        if !seen.contains(&f.path) {
            out.push(FieldChange { path: f.path.clone(), depth, change: Change::Added, before: None, after: Some(FieldSide::of(f)) });
        }
    });
    out
}

fn by_path<'a>(fields: &'a [FieldShape], out: &mut HashMap<&'a str, &'a FieldShape>) {
    for f in fields {
        out.insert(f.path.as_str(), f);
        by_path(&f.children, out);
    }
}

/// How many fields changed in each way (not counting `Same`).
pub fn summary(changes: &[FieldChange]) -> String {
    let count = |c: Change| changes.iter().filter(|f| f.change == c).count();
    let parts: Vec<String> = [Change::Added, Change::Removed, Change::TypeChanged, Change::EmptinessChanged]
        .into_iter()
        .map(|c| (count(c.clone()), c))
        .filter(|(n, _)| *n > 0)
        .map(|(n, c)| format!("{} {n} {}", c.symbol(), c.label()))
        .collect();
    if parts.is_empty() { "No field changed.".into() } else { parts.join(" · ") }
}
