//! Turning the records a reader collected (in file order, referring to each
//! other by index) into a [`Model`]: the root chosen, records it does not
//! use dropped, each record before the records that use it, root last.

use super::DefinitionError;
use crate::types::model::{Model, Record, Slot, Ty};

/// A record as read, with where its declaration starts.
pub struct Read {
    pub record: Record,
    pub line: usize,
    pub column: usize,
}

/// The index of the root record: the one named `wanted`, else the only one
/// that may be a row (`can_be_root`) and no other record uses.
pub fn pick_root(records: &[Read], wanted: Option<&str>, can_be_root: &dyn Fn(usize) -> bool) -> Result<usize, DefinitionError> {
    let names = || records.iter().map(|r| r.record.name.as_str()).collect::<Vec<_>>().join(", ");
    if !(0..records.len()).any(can_be_root) {
        return Err(DefinitionError::at(1, 1, "no record definition found"));
    }
    if let Some(wanted) = wanted {
        return records
            .iter()
            .position(|r| r.record.name == wanted)
            .filter(|&i| can_be_root(i))
            .ok_or_else(|| DefinitionError::at(1, 1, format!("no record named {wanted} (found: {})", names())));
    }
    let mut used = vec![false; records.len()];
    for r in records {
        for f in &r.record.fields {
            mark_used(&f.slot, &mut used);
        }
    }
    let unused: Vec<usize> = (0..records.len()).filter(|&i| !used[i] && can_be_root(i)).collect();
    match unused.as_slice() {
        [one] => Ok(*one),
        [] => Err(DefinitionError::at(records[0].line, records[0].column, "every record is used by another: name the root")),
        several => {
            let list: Vec<&str> = several.iter().map(|&i| records[i].record.name.as_str()).collect();
            let first = &records[several[0]];
            Err(DefinitionError::at(
                first.line,
                first.column,
                format!("{} records are used by no other ({}): name the one that stands for a row", several.len(), list.join(", ")),
            ))
        }
    }
}

fn mark_used(slot: &Slot, used: &mut [bool]) {
    match &slot.ty {
        Ty::Record(i) => used[*i] = true,
        Ty::List(e) => mark_used(e, used),
        Ty::Map { key, value } => {
            mark_used(key, used);
            mark_used(value, used);
        }
        Ty::Mixed(_, variants) => variants.iter().for_each(|v| mark_used(v, used)),
        Ty::Scalar(_) | Ty::Any { .. } => {}
    }
}

/// The model rooted at `root`; a record that contains itself (directly or
/// through others) is an error, as no columnar schema can hold it.
pub fn model(records: Vec<Read>, root: usize) -> Result<Model, DefinitionError> {
    let mut order = Vec::new();
    let mut state = vec![Visit::New; records.len()];
    visit(&records, root, &mut state, &mut order)?;
    let mut new_index = vec![usize::MAX; records.len()];
    for (to, &from) in order.iter().enumerate() {
        new_index[from] = to;
    }
    let mut by_index: Vec<Option<Read>> = records.into_iter().map(Some).collect();
    let mut out = Vec::new();
    for &from in &order {
        let mut record = by_index[from].take().expect("each record is placed once").record;
        for f in &mut record.fields {
            renumber(&mut f.slot, &new_index);
        }
        out.push(record);
    }
    Ok(Model { records: out, warnings: Vec::new() })
}

#[derive(Clone, Copy, PartialEq)]
enum Visit {
    New,
    Open,
    Done,
}

fn visit(records: &[Read], at: usize, state: &mut [Visit], order: &mut Vec<usize>) -> Result<(), DefinitionError> {
    match state[at] {
        Visit::Done => return Ok(()),
        Visit::Open => {
            let r = &records[at];
            return Err(DefinitionError::at(r.line, r.column, format!("{} contains itself; a columnar schema cannot hold a recursive type", r.record.name)));
        }
        Visit::New => {}
    }
    state[at] = Visit::Open;
    let mut used = vec![false; records.len()];
    for f in &records[at].record.fields {
        mark_used(&f.slot, &mut used);
    }
    for (i, _) in used.iter().enumerate().filter(|(_, u)| **u) {
        visit(records, i, state, order)?;
    }
    state[at] = Visit::Done;
    order.push(at);
    Ok(())
}

fn renumber(slot: &mut Slot, new_index: &[usize]) {
    match &mut slot.ty {
        Ty::Record(i) => *i = new_index[*i],
        Ty::List(e) => renumber(e, new_index),
        Ty::Map { key, value } => {
            renumber(key, new_index);
            renumber(value, new_index);
        }
        Ty::Mixed(_, variants) => variants.iter_mut().for_each(|v| renumber(v, new_index)),
        Ty::Scalar(_) | Ty::Any { .. } => {}
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::types::model::{Field, Scalar};

    fn read(name: &str, uses: &[usize]) -> Read {
        let fields = uses
            .iter()
            .map(|&i| Field { name: format!("f{i}"), slot: Slot { ty: Ty::Record(i), nullable: false }, may_be_missing: false })
            .chain([Field { name: "n".into(), slot: Slot { ty: Ty::Scalar(Scalar::Bool), nullable: false }, may_be_missing: false }])
            .collect();
        Read { record: Record { name: name.into(), path: String::new(), fields }, line: 1, column: 1 }
    }

    #[test]
    fn the_root_is_the_record_nobody_uses_and_comes_last() {
        let records = vec![read("Row", &[1, 2]), read("Inner", &[2]), read("Leaf", &[]), read("Unused", &[])];
        assert!(pick_root(&records, None, &|_| true).unwrap_err().message.contains("Row, Unused"));
        let root = pick_root(&records, Some("Row"), &|_| true).unwrap();
        let m = model(records, root).unwrap();
        let names: Vec<&str> = m.records.iter().map(|r| r.name.as_str()).collect();
        assert_eq!(names, ["Leaf", "Inner", "Row"]);
        assert_eq!(m.root().fields[0].slot.ty, Ty::Record(1));
        assert_eq!(m.records[1].fields[0].slot.ty, Ty::Record(0));
    }

    #[test]
    fn a_record_that_contains_itself_is_refused() {
        let records = vec![read("A", &[1]), read("B", &[0])];
        assert!(pick_root(&records, None, &|_| true).is_err());
        let e = model(records, 0).unwrap_err();
        assert!(e.message.contains("contains itself"), "{e}");
    }

    #[test]
    fn a_root_name_that_is_not_there_lists_the_records() {
        let e = pick_root(&[read("A", &[])], Some("B"), &|_| true).unwrap_err();
        assert_eq!(e.message, "no record named B (found: A)");
    }
}
