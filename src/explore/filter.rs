//! What the user narrowed Rows to, in terms of the profile (field paths and
//! the values as Plumbline shows them), independent of any query engine.

use crate::format::{decimal, group_digits};
use crate::profile::findings::Behind;

/// One narrowing of the rows; several are combined with "and".
#[derive(Debug, Clone, PartialEq)]
pub enum RowFilter {
    /// The value at `path` meets `condition` (for a path inside a list or
    /// map: at least one element does).
    Field { path: String, condition: Condition },
    /// Exactly these rows, by 0-based number in read order.
    Rows(Vec<u64>),
}

#[derive(Debug, Clone, PartialEq)]
pub enum Condition {
    /// `low <= v < high`, or `<= high` for a histogram's last bar.
    Between { low: f64, high: f64, high_inclusive: bool },
    /// Instants in `[start, end)`, in seconds since the epoch.
    During { start: i64, end: i64 },
    /// Equal to one of these values, written as the profile writes them.
    OneOf(Vec<String>),
    /// Below `low` or above `high`.
    Outside { low: f64, high: f64 },
    /// Null (for JSON also a missing key: the row reader cannot tell them apart).
    Empty,
}

impl RowFilter {
    /// The rows behind a finding on the field at `path`; `None` when the
    /// finding is not about particular rows.
    pub fn behind_finding(path: &str, behind: &Behind) -> Option<RowFilter> {
        let on_field = |condition| Some(RowFilter::Field { path: path.to_string(), condition });
        match behind {
            Behind::Nothing => None,
            Behind::Rows(rows) if rows.is_empty() => None,
            Behind::Rows(rows) => Some(RowFilter::Rows(rows.clone())),
            Behind::Values(values) if values.is_empty() => None,
            Behind::Values(values) => on_field(Condition::OneOf(values.clone())),
            Behind::Empty => on_field(Condition::Empty),
            Behind::Outside { low, high } => on_field(Condition::Outside { low: *low, high: *high }),
            Behind::During { start, end } => on_field(Condition::During { start: *start, end: *end }),
        }
    }

    /// A short label for the filter's chip.
    pub fn label(&self) -> String {
        match self {
            RowFilter::Rows(rows) => {
                let shown: Vec<String> = rows.iter().take(5).map(|r| group_digits(*r)).collect();
                let more = if rows.len() > 5 { format!(" and {} more", rows.len() - 5) } else { String::new() };
                format!("row {}{more}", shown.join(", "))
            }
            RowFilter::Field { path, condition } => match condition {
                Condition::Between { low, high, high_inclusive } => {
                    let close = if *high_inclusive { ']' } else { ')' };
                    format!("{path} in [{}, {}{close}", decimal(*low), decimal(*high))
                }
                Condition::During { start, end } => format!(
                    "{path} from {} to {}",
                    crate::time::rfc3339_from_unix(*start),
                    crate::time::rfc3339_from_unix(*end)
                ),
                Condition::OneOf(values) if values.len() == 1 => format!("{path} = {}", shorten(&values[0])),
                Condition::OneOf(values) => {
                    format!("{path} one of {}", values.iter().map(|v| shorten(v)).collect::<Vec<_>>().join(", "))
                }
                Condition::Outside { low, high } => {
                    format!("{path} outside [{}, {}]", decimal(*low), decimal(*high))
                }
                Condition::Empty => format!("{path} is null"),
            },
        }
    }
}

/// A value quoted for a label, cut to a readable length.
fn shorten(value: &str) -> String {
    const MOST: usize = 40;
    if value.chars().count() <= MOST {
        format!("{value:?}")
    } else {
        let cut: String = value.chars().take(MOST).collect();
        format!("{cut:?}…")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn field(condition: Condition) -> RowFilter {
        RowFilter::Field { path: "fare.total".into(), condition }
    }

    #[test]
    fn labels_say_what_each_filter_keeps() {
        assert_eq!(field(Condition::Between { low: 10.0, high: 20.0, high_inclusive: false }).label(), "fare.total in [10, 20)");
        assert_eq!(field(Condition::Between { low: 10.0, high: 20.0, high_inclusive: true }).label(), "fare.total in [10, 20]");
        assert_eq!(field(Condition::OneOf(vec!["late".into()])).label(), "fare.total = \"late\"");
        assert_eq!(field(Condition::OneOf(vec!["a".into(), "b".into()])).label(), "fare.total one of \"a\", \"b\"");
        assert_eq!(field(Condition::Empty).label(), "fare.total is null");
        assert_eq!(field(Condition::Outside { low: -1.5, high: 3.0 }).label(), "fare.total outside [-1.5, 3]");
        assert_eq!(
            field(Condition::During { start: 0, end: 86_400 }).label(),
            "fare.total from 1970-01-01T00:00:00Z to 1970-01-02T00:00:00Z"
        );
        assert_eq!(RowFilter::Rows(vec![3, 1200]).label(), "row 3, 1,200");
        assert_eq!(RowFilter::Rows((0..7).collect()).label(), "row 0, 1, 2, 3, 4 and 2 more");
        let long = "x".repeat(60);
        assert_eq!(field(Condition::OneOf(vec![long])).label(), format!("fare.total = \"{}\"…", "x".repeat(40)));
    }

    #[test]
    fn findings_about_rows_become_filters_and_the_others_do_not() {
        let path = "fare.total";
        assert_eq!(RowFilter::behind_finding(path, &Behind::Nothing), None);
        assert_eq!(RowFilter::behind_finding(path, &Behind::Rows(vec![])), None);
        assert_eq!(RowFilter::behind_finding(path, &Behind::Rows(vec![4])), Some(RowFilter::Rows(vec![4])));
        assert_eq!(RowFilter::behind_finding(path, &Behind::Empty), Some(field(Condition::Empty)));
        assert_eq!(
            RowFilter::behind_finding(path, &Behind::Values(vec!["N/A".into()])),
            Some(field(Condition::OneOf(vec!["N/A".into()])))
        );
        assert_eq!(
            RowFilter::behind_finding(path, &Behind::Outside { low: 1.0, high: 2.0 }),
            Some(field(Condition::Outside { low: 1.0, high: 2.0 }))
        );
    }
}
