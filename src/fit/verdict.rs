//! What a fit says: one verdict per difference between a definition and the
//! data, with the rows it affects, up to five example rows, and whether it
//! makes the typed read fail.

use serde::Serialize;

use super::check::Finding;
use crate::shape::Kind;
use crate::types::model::Unit;

/// Examples kept per verdict.
pub const EXAMPLES: usize = 5;

#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Problem {
    /// In the definition (not optional), not in the data.
    NotInData,
    /// In the definition as optional, not in the data: reads empty.
    AbsentButOptional,
    /// In the data, not in the definition.
    NotInDefinition,
    /// The names are equal only when case is ignored.
    NameCase,
    WrongType,
    /// The definition's type holds a smaller range than the data's.
    Narrower,
    /// Exact decimals read into a binary float.
    Inexact,
    /// Not optional in the definition; nulls or missing keys in the data.
    Empty,
    /// An instant on one side, a date-time without zone on the other.
    Zone,
    /// The data counts finer steps than the definition holds.
    Unit,
    /// Decimal values with more digits than the definition's precision or scale.
    DecimalDigits,
    /// Data of several kinds, some of which the definition does not take.
    OtherKinds,
}

impl Problem {
    /// Differences that never make a row fail to fit.
    pub fn is_harmless(self) -> bool {
        matches!(self, Problem::AbsentButOptional | Problem::NotInDefinition | Problem::Inexact)
    }
}

/// How the rows a finding affects are recognised.
#[derive(Debug, Clone, PartialEq)]
pub enum RowTest {
    /// The field at this path holds a value (the empty path: every row).
    Present(String),
    Empty { null: bool, missing: bool },
    IntOutside { low: i128, high: i128 },
    /// A 64-bit float that a 32-bit one does not hold exactly.
    LosesAsFloat32,
    DecimalOutside(DecimalRule),
    /// A count of `have` steps that is not a whole number of `want` steps.
    SubUnit { have: Unit, want: Unit },
    KindIn(Vec<Kind>),
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum DecimalRule {
    /// At most `whole` digits before the point and `scale` after.
    Fixed { whole: u32, scale: u32 },
    /// At most `digits` significant digits, the point anywhere.
    Floating { digits: u32 },
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Severity {
    /// Worth knowing; every row still fits.
    Note,
    /// Every row read fits, but the definition is fragile here.
    Warns,
    /// Some rows do not fit.
    Fails,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Example {
    /// 0-based, in read order.
    pub row: u64,
    pub value: String,
}

#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Verdict {
    pub path: String,
    pub problem: Problem,
    pub severity: Severity,
    pub message: String,
    /// Rows affected.
    pub rows: u64,
    pub examples: Vec<Example>,
}

impl Verdict {
    /// The verdict for `finding` once its rows are counted (`rows` of
    /// `total`). `deny_extra` makes fields the definition lacks fail.
    pub fn of(finding: Finding, rows: u64, examples: Vec<Example>, deny_extra: bool) -> Verdict {
        use Problem::*;
        let some = rows > 0;
        let severity = match finding.problem {
            NotInData | NameCase | Empty | OtherKinds => Severity::Fails,
            NotInDefinition if deny_extra => Severity::Fails,
            AbsentButOptional | NotInDefinition => Severity::Note,
            Inexact => Severity::Warns,
            WrongType | Narrower | Zone | Unit | DecimalDigits if some => Severity::Fails,
            WrongType | Narrower | Zone | Unit | DecimalDigits => Severity::Warns,
        };
        let (expected, found) = (&finding.expected, &finding.found);
        let message = match finding.problem {
            NotInData => format!("the definition has it ({expected}); the data has no such field"),
            AbsentButOptional => "the data has no such field; the definition's optional field reads empty".into(),
            NotInDefinition => format!("the data has it ({found}); the definition does not"),
            NameCase => format!("the definition names it {expected}, the data {found}: equal only when case is ignored"),
            WrongType => format!("the definition says {expected}; the data holds {found}"),
            Narrower if some => format!("the definition says {expected}; the data holds {found}, and some values do not fit"),
            Narrower => format!("the definition says {expected}; the data holds {found}, though every value read fits"),
            Inexact => format!("the definition says {expected}; the data holds {found}, exact values that become binary fractions"),
            Empty => format!("not optional in the definition, but the data has {found}"),
            Zone => format!("the definition says {expected}; the data holds {found}"),
            Unit if some => format!("the definition holds {expected}; the data counts {found}, and some values have digits it drops"),
            Unit => format!("the definition holds {expected}; the data counts {found}, though no value read has finer digits"),
            DecimalDigits if some => format!("the definition says {expected}; the data holds {found} with more digits than that"),
            DecimalDigits => format!("the definition says {expected}; the data holds {found}, though every value read fits"),
            OtherKinds => format!("the definition says {expected}; the data holds {found}"),
        };
        Verdict { path: finding.path, problem: finding.problem, severity, message, rows, examples }
    }
}
