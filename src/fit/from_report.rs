//! Fit against a report instead of rows: a report states counts, not
//! which rows hold what, so each difference is judged from the field's
//! statistics. A count the statistics give exactly is used; a difference
//! they cannot rule out is taken to affect rows (the safe side for CI).

use super::check::Finding;
use super::verdict::RowTest;
use crate::shape::{FieldShape, Kind, Shape};

/// Places the report says `finding` affects: `Some(0)` when its statistics
/// rule it out, `None` when they cannot tell (taken as affecting some).
pub fn affected(shape: &Shape, finding: &Finding) -> Option<u64> {
    let test = finding.test.as_ref()?;
    let path = match test {
        RowTest::Present(p) => p.as_str(),
        _ => finding.path.as_str(),
    };
    if path.is_empty() {
        return Some(shape.rows);
    }
    let field = shape.find(path)?;
    match test {
        RowTest::Present(_) => Some(field.present()),
        RowTest::Empty { null, missing } => Some(u64::from(*null) * field.nulls() + u64::from(*missing) * field.missing),
        RowTest::KindIn(kinds) => Some(kinds.iter().map(|k| field.kinds.get(*k)).sum()),
        RowTest::IntOutside { low, high } => int_outside(field, *low, *high),
        RowTest::LosesAsFloat32 | RowTest::DecimalOutside(_) | RowTest::SubUnit { .. } => None,
    }
}

/// No integer lies outside when the stated range is inside.
fn int_outside(field: &FieldShape, low: i128, high: i128) -> Option<u64> {
    let (lo, hi) = field.kinds.int_range?;
    if field.kinds.get(Kind::Int) == 0 || (lo >= low && hi <= high) { Some(0) } else { None }
}
