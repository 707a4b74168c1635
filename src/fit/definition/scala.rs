//! Scala case classes, the subset people write for typed datasets: several
//! classes per file (also inside objects), `Option`, `Seq`/`List`/`Array`/
//! `Vector`/`Set`, `Map`, the primitives, `BigDecimal`, the `java.sql` and
//! `java.time` types, backticked names; annotations, modifiers, default
//! values and class bodies are skipped. Types follow the encoder rules of
//! DESIGN.md §5 (`BigDecimal` is `DECIMAL(38,18)`, instants hold microseconds).

use std::collections::HashMap;

use super::DefinitionError;
use super::lexer::{Comments, Tok, Token, tokens};
use super::order::{self, Read};
use crate::types::model::{Field, Model, Record, Scalar, Slot, Ty, Unit};

pub fn read(text: &str, root: Option<&str>) -> Result<Model, DefinitionError> {
    let toks = tokens(text, Comments::Scala)?;
    // First the class names, so a field may use a class declared below it.
    let mut names = HashMap::new();
    let mut starts = Vec::new();
    for i in 0..toks.len() {
        if word(&toks, i, "case") && word(&toks, i + 1, "class") {
            let Some(name) = name_at(&toks, i + 2) else {
                return Err(error_at(&toks, i + 2, "expected the case class's name"));
            };
            if names.insert(name.clone(), starts.len()).is_some() {
                return Err(error_at(&toks, i + 2, &format!("case class {name} is declared twice")));
            }
            starts.push(i);
        }
    }
    let mut records = Vec::new();
    for &start in &starts {
        let mut p = Parser { toks: &toks, at: start + 2, names: &names };
        records.push(p.class()?);
    }
    let root = order::pick_root(&records, root, &|_| true)?;
    order::model(records, root)
}

fn word(toks: &[Token], i: usize, w: &str) -> bool {
    matches!(toks.get(i).map(|t| &t.tok), Some(Tok::Name(n)) if n == w)
}

fn name_at(toks: &[Token], i: usize) -> Option<String> {
    match toks.get(i).map(|t| &t.tok) {
        Some(Tok::Name(n)) | Some(Tok::Quoted(n)) => Some(n.clone()),
        _ => None,
    }
}

fn error_at(toks: &[Token], i: usize, message: &str) -> DefinitionError {
    match toks.get(i).or(toks.last()) {
        Some(t) => DefinitionError::at(t.line, t.column, message),
        None => DefinitionError::at(1, 1, message),
    }
}

struct Parser<'a> {
    toks: &'a [Token],
    at: usize,
    names: &'a HashMap<String, usize>,
}

impl Parser<'_> {
    fn punct(&self, c: char) -> bool {
        matches!(self.toks.get(self.at).map(|t| &t.tok), Some(Tok::Punct(p)) if *p == c)
    }

    fn expect(&mut self, c: char) -> Result<(), DefinitionError> {
        if self.punct(c) {
            self.at += 1;
            Ok(())
        } else {
            Err(error_at(self.toks, self.at, &format!("expected `{c}`")))
        }
    }

    /// `Name [type parameters] ( fields )`, at the name.
    fn class(&mut self) -> Result<Read, DefinitionError> {
        let (line, column) = (self.toks[self.at].line, self.toks[self.at].column);
        let name = name_at(self.toks, self.at).expect("checked while collecting names");
        self.at += 1;
        if self.punct('[') {
            return Err(error_at(self.toks, self.at, &format!("case class {name} has type parameters; an encoder needs concrete types")));
        }
        // Modifiers before the parameter list (`private`, an annotation).
        while !self.punct('(') {
            if self.at >= self.toks.len() || self.punct('{') || word(self.toks, self.at, "extends") {
                return Err(error_at(self.toks, self.at, &format!("expected the fields of case class {name} in `(…)`")));
            }
            self.at += 1;
        }
        self.at += 1;
        let mut fields: Vec<Field> = Vec::new();
        while !self.punct(')') {
            let at = self.at;
            let field = self.field()?;
            if fields.iter().any(|f| f.name == field.name) {
                return Err(error_at(self.toks, at, &format!("the field `{}` appears twice in {name}", field.name)));
            }
            fields.push(field);
            if self.punct(',') {
                self.at += 1;
            } else if !self.punct(')') {
                return Err(error_at(self.toks, self.at, "expected `,` or `)` after a field"));
            }
        }
        Ok(Read { record: Record { name, path: String::new(), fields }, line, column })
    }

    fn field(&mut self) -> Result<Field, DefinitionError> {
        loop {
            if self.punct('@') {
                self.skip_annotation();
            } else if ["val", "var", "private", "protected", "override", "final", "implicit", "lazy"]
                .iter()
                .any(|w| word(self.toks, self.at, w))
            {
                self.at += 1;
                if self.punct('[') {
                    self.skip_balanced();
                }
            } else {
                break;
            }
        }
        let name = name_at(self.toks, self.at).ok_or_else(|| error_at(self.toks, self.at, "expected a field name"))?;
        self.at += 1;
        self.expect(':')?;
        let slot = self.slot()?;
        if self.punct('=') {
            self.skip_default();
        }
        Ok(Field { name, may_be_missing: slot.nullable, slot })
    }

    /// `@name`, `@a.b.name(…)`.
    fn skip_annotation(&mut self) {
        self.at += 1;
        while name_at(self.toks, self.at).is_some() {
            self.at += 1;
            if self.punct('.') {
                self.at += 1;
            } else {
                break;
            }
        }
        if self.punct('(') {
            self.skip_balanced();
        }
    }

    /// Skips from an opening bracket to its partner.
    fn skip_balanced(&mut self) {
        let mut depth = 0i32;
        while let Some(t) = self.toks.get(self.at) {
            self.at += 1;
            match t.tok {
                Tok::Punct('(' | '[' | '{') => depth += 1,
                Tok::Punct(')' | ']' | '}') => {
                    depth -= 1;
                    if depth <= 0 {
                        return;
                    }
                }
                _ => {}
            }
        }
    }

    /// A default value: everything up to the `,` or `)` that ends the field.
    fn skip_default(&mut self) {
        let mut depth = 0i32;
        while let Some(t) = self.toks.get(self.at) {
            match t.tok {
                Tok::Punct('(' | '[' | '{') => depth += 1,
                Tok::Punct(')' | ']' | '}') if depth == 0 => return,
                Tok::Punct(')' | ']' | '}') => depth -= 1,
                Tok::Punct(',') if depth == 0 => return,
                _ => {}
            }
            self.at += 1;
        }
    }

    /// A dotted name: `Long`, `java.sql.Timestamp`, `scala.collection.Seq`.
    fn qualified(&mut self) -> Result<(String, usize), DefinitionError> {
        let start = self.at;
        let mut name = name_at(self.toks, self.at).ok_or_else(|| error_at(self.toks, self.at, "expected a type"))?;
        self.at += 1;
        while self.punct('.') && name_at(self.toks, self.at + 1).is_some() {
            name.push('.');
            name.push_str(&name_at(self.toks, self.at + 1).unwrap_or_default());
            self.at += 2;
        }
        Ok((name, start))
    }

    fn type_arguments(&mut self, count: usize, of: &str, at: usize) -> Result<Vec<Slot>, DefinitionError> {
        if !self.punct('[') {
            return Err(error_at(self.toks, at, &format!("{of} needs {count} type argument{}", if count == 1 { "" } else { "s" })));
        }
        self.at += 1;
        let mut out = vec![self.slot()?];
        while self.punct(',') {
            self.at += 1;
            out.push(self.slot()?);
        }
        if out.len() != count {
            return Err(error_at(self.toks, at, &format!("{of} takes {count} type argument{}", if count == 1 { "" } else { "s" })));
        }
        self.expect(']')?;
        Ok(out)
    }

    fn slot(&mut self) -> Result<Slot, DefinitionError> {
        let (name, at) = self.qualified()?;
        let short = name.rsplit('.').next().unwrap_or(&name).to_string();
        let scalar = |s| Ok(Slot { ty: Ty::Scalar(s), nullable: false });
        let int = |bits| scalar(Scalar::Int { bits, signed: true });
        match short.as_str() {
            "Option" => {
                let inner = self.type_arguments(1, "Option", at)?.remove(0);
                Ok(Slot { nullable: true, ..inner })
            }
            "Seq" | "List" | "Vector" | "IndexedSeq" | "Iterable" | "Set" | "Array" => {
                let element = self.type_arguments(1, &short, at)?.remove(0);
                if short == "Array" && element.ty == Ty::Scalar(Scalar::Int { bits: 8, signed: true }) && !element.nullable {
                    return scalar(Scalar::Binary);
                }
                Ok(Slot { ty: Ty::List(Box::new(element)), nullable: false })
            }
            "Map" | "HashMap" => {
                let mut kv = self.type_arguments(2, "Map", at)?;
                let value = kv.pop().expect("two arguments");
                let key = kv.pop().expect("two arguments");
                Ok(Slot { ty: Ty::Map { key: Box::new(key), value: Box::new(value) }, nullable: false })
            }
            "Boolean" => scalar(Scalar::Bool),
            "Byte" => int(8),
            "Short" => int(16),
            "Int" => int(32),
            "Long" => int(64),
            "Float" => scalar(Scalar::Float { bits: 32 }),
            "Double" => scalar(Scalar::Float { bits: 64 }),
            "String" => scalar(Scalar::String),
            // The encoders' DecimalType.SYSTEM_DEFAULT.
            "BigDecimal" => scalar(Scalar::Decimal { precision: 38, scale: 18 }),
            "BigInteger" | "BigInt" => scalar(Scalar::Decimal { precision: 38, scale: 0 }),
            "Date" | "LocalDate" => scalar(Scalar::Date),
            "Timestamp" | "Instant" => scalar(Scalar::Instant { unit: Unit::Micro, zone: None }),
            "LocalDateTime" => scalar(Scalar::LocalDateTime { unit: Unit::Micro }),
            "Duration" => scalar(Scalar::Duration { unit: Unit::Micro }),
            _ => match self.names.get(&short) {
                Some(&i) => Ok(Slot { ty: Ty::Record(i), nullable: false }),
                None => Err(error_at(self.toks, at, &format!("`{name}` is neither a case class in this file nor a type an encoder maps"))),
            },
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const DELIVERY: &str = r#"
package demo.lanes
import java.sql.Timestamp

/** a stop */
case class Stop(@deprecated("x", "1") eta: Option[Timestamp], `type`: String = "drop", n: Int)

object Types {
  final case class Delivery(
    id: Long,
    stops: Seq[Stop],
    tags: Map[String, Option[Double]],
    blob: Array[Byte],
    fee: Option[BigDecimal] = None, // money
    at: java.time.LocalDateTime,
  ) extends Product {
    def total: Int = stops.size
  }
}
"#;

    #[test]
    fn classes_fields_and_types_of_a_typical_file() {
        let m = read(DELIVERY, None).unwrap();
        let root = m.root();
        assert_eq!(root.name, "Delivery");
        let names: Vec<&str> = root.fields.iter().map(|f| f.name.as_str()).collect();
        assert_eq!(names, ["id", "stops", "tags", "blob", "fee", "at"]);
        assert_eq!(root.fields[0].slot, Slot { ty: Ty::Scalar(Scalar::Int { bits: 64, signed: true }), nullable: false });
        let Ty::List(stop) = &root.fields[1].slot.ty else { panic!("a list") };
        let Ty::Record(i) = stop.ty else { panic!("of records") };
        let stop = &m.records[i];
        assert_eq!(stop.fields[1].name, "type");
        assert!(stop.fields[0].slot.nullable && stop.fields[0].may_be_missing);
        let Ty::Map { value, .. } = &root.fields[2].slot.ty else { panic!("a map") };
        assert!(value.nullable);
        assert_eq!(root.fields[3].slot.ty, Ty::Scalar(Scalar::Binary));
        assert_eq!(root.fields[4].slot, Slot { ty: Ty::Scalar(Scalar::Decimal { precision: 38, scale: 18 }), nullable: true });
        assert_eq!(root.fields[5].slot.ty, Ty::Scalar(Scalar::LocalDateTime { unit: Unit::Micro }));
    }

    #[test]
    fn the_root_can_be_named_and_unknown_types_are_placed() {
        let two = "case class A(x: Int)\ncase class B(y: Int)";
        assert!(read(two, None).unwrap_err().message.contains("A, B"));
        assert_eq!(read(two, Some("B")).unwrap().root().name, "B");
        let e = read("case class A(\n  x: Widget)", None).unwrap_err();
        assert_eq!((e.line, e.column), (2, 6));
        assert!(e.message.contains("`Widget`"), "{e}");
        let e = read("case class A(x: Option)", None).unwrap_err();
        assert!(e.message.contains("Option needs 1 type argument"), "{e}");
        assert!(read("case class A(x: Int y: Int)", None).is_err());
        assert!(read("class A(x: Int)", None).unwrap_err().message.contains("no record"));
    }
}
