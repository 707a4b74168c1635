//! Comparing two sources: their shapes field by field (added, removed,
//! moved in nesting, changed type, started or stopped holding nulls or
//! missing keys) and, for fields in both, how the values drifted
//! ([`drift`]). The window's Compare area and `plumbline compare` show it.

pub mod drift;
pub mod ks;
pub mod psi;
pub mod text;

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
    /// Only in the first source here; the second has it, same name and
    /// type, at this other path.
    MovedTo(String),
    /// Only in the second source here; the first had it at this path.
    MovedFrom(String),
}

impl Change {
    /// A symbol that says the same as the colour it is shown in.
    pub fn symbol(&self) -> &'static str {
        match self {
            Change::Same => "=",
            Change::Added => "+",
            Change::Removed => "−",
            Change::TypeChanged | Change::EmptinessChanged => "~",
            Change::MovedTo(_) | Change::MovedFrom(_) => "»",
        }
    }

    pub fn label(&self) -> &'static str {
        match self {
            Change::Same => "same",
            Change::Added => "added",
            Change::Removed => "removed",
            Change::TypeChanged => "type changed",
            Change::EmptinessChanged => "nulls or missing keys changed",
            Change::MovedTo(_) | Change::MovedFrom(_) => "moved in nesting",
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
    pair_moves(&mut out);
    out
}

/// A removed field and an added one with the same name and type, each the
/// only such, were moved: mark both with the other's path.
fn pair_moves(changes: &mut [FieldChange]) {
    type Key = (String, String);
    let mut removed: HashMap<Key, Vec<usize>> = HashMap::new();
    let mut added: HashMap<Key, Vec<usize>> = HashMap::new();
    for (i, c) in changes.iter().enumerate() {
        let (side, into) = match c.change {
            Change::Removed => (&c.before, &mut removed),
            Change::Added => (&c.after, &mut added),
            _ => continue,
        };
        if let Some(s) = side {
            into.entry((last_name(&c.path).to_string(), s.type_label.clone())).or_default().push(i);
        }
    }
    for (key, gone) in &removed {
        if let (Some([to]), [from]) = (added.get(key).map(Vec::as_slice), gone.as_slice()) {
            let (to_path, from_path) = (changes[*to].path.clone(), changes[*from].path.clone());
            changes[*from].change = Change::MovedTo(to_path);
            changes[*to].change = Change::MovedFrom(from_path);
        }
    }
}

/// The last member name of a path (`pickup.lat` → `lat`; `stops[]` → `stops[]`).
fn last_name(path: &str) -> &str {
    path.rsplit('.').next().unwrap_or(path)
}

fn by_path<'a>(fields: &'a [FieldShape], out: &mut HashMap<&'a str, &'a FieldShape>) {
    for f in fields {
        out.insert(f.path.as_str(), f);
        by_path(&f.children, out);
    }
}

/// Two sources compared: every field's change, and the drift of each field
/// both have (in the first source's order).
#[derive(Debug, Clone)]
pub struct Compared {
    pub changes: Vec<FieldChange>,
    pub drifts: Vec<drift::Drift>,
}

impl Compared {
    pub fn schema_changed(&self) -> bool {
        self.changes.iter().any(|c| c.change != Change::Same)
    }

    pub fn drifted(&self) -> bool {
        self.drifts.iter().any(|d| d.drifted())
    }
}

/// Compares the shapes and, from the profiles, the values of fields in both.
pub fn compare(before: &Shape, after: &Shape) -> Compared {
    let changes = compare_shapes(before, after);
    let mut later: HashMap<&str, &FieldShape> = HashMap::new();
    by_path(&after.fields, &mut later);
    let mut drifts = Vec::new();
    before.walk(|f, _| {
        if let Some(other) = later.get(f.path.as_str())
            && f.stats.is_some()
            && f.children.is_empty()
        {
            drifts.push(drift::drift(f, other));
        }
    });
    Compared { changes, drifts }
}

/// How many fields changed in each way (not counting `Same`).
pub fn summary(changes: &[FieldChange]) -> String {
    let count = |c: Change| changes.iter().filter(|f| f.change == c).count();
    let moved = changes.iter().filter(|f| matches!(f.change, Change::MovedFrom(_))).count();
    let parts: Vec<String> = [Change::Added, Change::Removed, Change::TypeChanged, Change::EmptinessChanged, Change::MovedFrom(String::new())]
        .into_iter()
        .map(|c| (if matches!(c, Change::MovedFrom(_)) { moved } else { count(c.clone()) }, c))
        .filter(|(n, _)| *n > 0)
        .map(|(n, c)| format!("{} {n} {}", c.symbol(), c.label()))
        .collect();
    if parts.is_empty() { "No field changed.".into() } else { parts.join(" · ") }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::source::Batch;
    use crate::value::Value;

    fn shape(json_rows: &[&str]) -> Shape {
        let rows: Vec<Value> = json_rows.iter().map(|r| crate::source::json::parse::parse_value(r.as_bytes()).unwrap()).collect();
        let mut b = crate::shape::ShapeBuilder::empty(true);
        b.add(&Batch::Rows(rows)).unwrap();
        b.finish()
    }

    #[test]
    fn a_field_that_changed_parent_is_moved_not_removed_and_added() {
        let before = shape(&[r#"{"pickup": {"lat": 1.5, "zone": "a"}, "id": 1}"#]);
        let after = shape(&[r#"{"pickup": {"zone": "a"}, "lat": 1.5, "id": 2}"#]);
        let changes = compare_shapes(&before, &after);
        let of = |p: &str| changes.iter().find(|c| c.path == p).map(|c| c.change.clone()).unwrap();
        assert_eq!(of("pickup.lat"), Change::MovedTo("lat".into()));
        assert_eq!(of("lat"), Change::MovedFrom("pickup.lat".into()));
        assert_eq!(of("id"), Change::Same);
        assert_eq!(summary(&changes), "» 1 moved in nesting");
    }
}
