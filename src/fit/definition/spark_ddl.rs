//! A Spark SQL DDL schema string: `name TYPE [NOT NULL] [COMMENT '…']`
//! separated by commas, optionally wrapped in `STRUCT<…>`; types as Spark's
//! DDL parser names them (case-insensitive), with its defaults: every field
//! nullable unless `NOT NULL`, array elements and map values nullable,
//! `DECIMAL` alone is `DECIMAL(10,0)`. Timestamps hold microseconds.

use super::DefinitionError;
use super::lexer::{Comments, Tok, Token, tokens};
use super::order::{self, Read};
use crate::types::model::{Field, Model, Record, Scalar, Slot, Ty, Unit};

pub fn read(text: &str) -> Result<Model, DefinitionError> {
    let toks = tokens(text, Comments::Sql)?;
    let mut p = Parser { toks, at: 0, records: Vec::new(), end: end_of(text) };
    if p.toks.is_empty() {
        return Err(DefinitionError::at(1, 1, "the schema is empty"));
    }
    let (line, column) = p.here();
    // `STRUCT<…>` around the whole schema is the same schema.
    let wrapped = p.is_word(0, "struct") && p.is_punct(1, '<');
    let fields = if wrapped {
        p.at += 2;
        let fields = p.fields(true)?;
        p.expect('>')?;
        fields
    } else {
        p.fields(false)?
    };
    if p.at < p.toks.len() {
        return Err(p.error("expected `,` or the end of the schema"));
    }
    p.records.push(Read { record: Record { name: "row".into(), path: String::new(), fields }, line, column });
    let root = p.records.len() - 1;
    order::model(p.records, root)
}

fn end_of(text: &str) -> (usize, usize) {
    let line = text.lines().count().max(1);
    let column = text.lines().last().map_or(0, |l| l.chars().count()) + 1;
    (line, column)
}

struct Parser {
    toks: Vec<Token>,
    at: usize,
    records: Vec<Read>,
    end: (usize, usize),
}

impl Parser {
    fn here(&self) -> (usize, usize) {
        self.toks.get(self.at).map_or(self.end, |t| (t.line, t.column))
    }

    fn error(&self, message: &str) -> DefinitionError {
        let (line, column) = self.here();
        let found = match self.toks.get(self.at).map(|t| &t.tok) {
            None => "the end".to_string(),
            Some(Tok::Name(n)) => format!("`{n}`"),
            Some(Tok::Quoted(n)) => format!("`{n}` in backticks"),
            Some(Tok::Number(n)) => n.clone(),
            Some(Tok::Text(t)) => format!("'{t}'"),
            Some(Tok::Punct(c)) => format!("`{c}`"),
        };
        DefinitionError::at(line, column, format!("{message}, found {found}"))
    }

    fn is_word(&self, ahead: usize, word: &str) -> bool {
        matches!(self.toks.get(self.at + ahead).map(|t| &t.tok), Some(Tok::Name(n)) if n.eq_ignore_ascii_case(word))
    }

    fn is_punct(&self, ahead: usize, c: char) -> bool {
        matches!(self.toks.get(self.at + ahead).map(|t| &t.tok), Some(Tok::Punct(p)) if *p == c)
    }

    fn expect(&mut self, c: char) -> Result<(), DefinitionError> {
        if self.is_punct(0, c) {
            self.at += 1;
            Ok(())
        } else {
            Err(self.error(&format!("expected `{c}`")))
        }
    }

    /// Fields up to (not including) `>` inside a struct, or to the end.
    fn fields(&mut self, in_struct: bool) -> Result<Vec<Field>, DefinitionError> {
        let mut fields: Vec<Field> = Vec::new();
        if in_struct && self.is_punct(0, '>') {
            return Ok(fields);
        }
        loop {
            let (line, column) = self.here();
            let field = self.field()?;
            if fields.iter().any(|f| f.name == field.name) {
                return Err(DefinitionError::at(line, column, format!("the field `{}` appears twice", field.name)));
            }
            fields.push(field);
            if self.is_punct(0, ',') {
                self.at += 1;
            } else {
                return Ok(fields);
            }
        }
    }

    fn field(&mut self) -> Result<Field, DefinitionError> {
        let name = match self.toks.get(self.at).map(|t| &t.tok) {
            Some(Tok::Name(n)) | Some(Tok::Quoted(n)) => n.clone(),
            _ => return Err(self.error("expected a field name")),
        };
        self.at += 1;
        if self.is_punct(0, ':') {
            self.at += 1;
        }
        let ty = self.ty()?;
        let mut nullable = true;
        if self.is_word(0, "not") && self.is_word(1, "null") {
            self.at += 2;
            nullable = false;
        }
        if self.is_word(0, "comment") {
            self.at += 1;
            match self.toks.get(self.at).map(|t| &t.tok) {
                Some(Tok::Text(_)) => self.at += 1,
                _ => return Err(self.error("expected the comment's text in quotes")),
            }
        }
        Ok(Field { name, slot: Slot { ty, nullable }, may_be_missing: nullable })
    }

    fn ty(&mut self) -> Result<Ty, DefinitionError> {
        let word = match self.toks.get(self.at).map(|t| &t.tok) {
            Some(Tok::Name(n)) => n.to_ascii_lowercase(),
            _ => return Err(self.error("expected a type")),
        };
        let (line, column) = self.here();
        self.at += 1;
        let scalar = |s: Scalar| Ok(Ty::Scalar(s));
        let int = |bits| scalar(Scalar::Int { bits, signed: true });
        match word.as_str() {
            "boolean" => scalar(Scalar::Bool),
            "tinyint" | "byte" => int(8),
            "smallint" | "short" => int(16),
            "int" | "integer" => int(32),
            "bigint" | "long" => int(64),
            "float" | "real" => scalar(Scalar::Float { bits: 32 }),
            "double" => scalar(Scalar::Float { bits: 64 }),
            "decimal" | "dec" | "numeric" => {
                let (precision, scale) = self.decimal_digits()?;
                scalar(Scalar::Decimal { precision, scale })
            }
            "string" => scalar(Scalar::String),
            "char" | "varchar" => {
                self.expect('(')?;
                self.number()?;
                self.expect(')')?;
                scalar(Scalar::String)
            }
            "binary" => scalar(Scalar::Binary),
            "date" => scalar(Scalar::Date),
            "timestamp" | "timestamp_ltz" => scalar(Scalar::Instant { unit: Unit::Micro, zone: None }),
            "timestamp_ntz" => scalar(Scalar::LocalDateTime { unit: Unit::Micro }),
            "void" => Ok(Ty::Any { why: "declared VOID".into() }),
            "array" => {
                self.expect('<')?;
                let element = self.ty()?;
                self.expect('>')?;
                Ok(Ty::List(Box::new(Slot { ty: element, nullable: true })))
            }
            "map" => {
                self.expect('<')?;
                let key = self.ty()?;
                self.expect(',')?;
                let value = self.ty()?;
                self.expect('>')?;
                Ok(Ty::Map { key: Box::new(Slot { ty: key, nullable: false }), value: Box::new(Slot { ty: value, nullable: true }) })
            }
            "struct" => {
                self.expect('<')?;
                let fields = self.fields(true)?;
                self.expect('>')?;
                let name = format!("struct{}", self.records.len() + 1);
                self.records.push(Read { record: Record { name, path: String::new(), fields }, line, column });
                Ok(Ty::Record(self.records.len() - 1))
            }
            other => Err(DefinitionError::at(line, column, format!("`{other}` is not a Spark SQL type Plumbline reads"))),
        }
    }

    /// `(p, s)`, `(p)` or nothing (Spark's default is 10, 0).
    fn decimal_digits(&mut self) -> Result<(u8, i8), DefinitionError> {
        if !self.is_punct(0, '(') {
            return Ok((10, 0));
        }
        self.at += 1;
        let (line, column) = self.here();
        let precision = self.number()?;
        let scale = if self.is_punct(0, ',') {
            self.at += 1;
            self.number()?
        } else {
            0
        };
        self.expect(')')?;
        if !(1..=38).contains(&precision) || scale > precision {
            return Err(DefinitionError::at(line, column, format!("DECIMAL({precision},{scale}) is outside Spark's 1 ≤ scale ≤ precision ≤ 38")));
        }
        Ok((precision as u8, scale as i8))
    }

    fn number(&mut self) -> Result<u32, DefinitionError> {
        match self.toks.get(self.at).map(|t| &t.tok) {
            Some(Tok::Number(n)) => {
                let n = n.parse().map_err(|_| self.error("expected a whole number"))?;
                self.at += 1;
                Ok(n)
            }
            _ => Err(self.error("expected a whole number")),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn columns_with_nested_types_nullability_and_comments() {
        let m = read(
            "-- made by hand\nid BIGINT NOT NULL, `pick up` STRUCT<zone: STRING NOT NULL, at: TIMESTAMP>,\n\
             tags ARRAY<string> COMMENT 'labels', fees MAP<STRING, DECIMAL(9,2)>",
        )
        .unwrap();
        let root = m.root();
        assert_eq!(root.fields.iter().map(|f| f.name.as_str()).collect::<Vec<_>>(), ["id", "pick up", "tags", "fees"]);
        assert_eq!(root.fields[0].slot, Slot { ty: Ty::Scalar(Scalar::Int { bits: 64, signed: true }), nullable: false });
        assert!(root.fields[1].slot.nullable && root.fields[1].may_be_missing);
        let Ty::Record(i) = root.fields[1].slot.ty else { panic!("a struct") };
        assert_eq!(m.records[i].fields[0].slot, Slot { ty: Ty::Scalar(Scalar::String), nullable: false });
        assert_eq!(m.records[i].fields[1].slot.ty, Ty::Scalar(Scalar::Instant { unit: Unit::Micro, zone: None }));
        let Ty::Map { value, .. } = &root.fields[3].slot.ty else { panic!("a map") };
        assert_eq!(value.ty, Ty::Scalar(Scalar::Decimal { precision: 9, scale: 2 }));
    }

    #[test]
    fn a_wrapping_struct_and_spark_s_type_aliases() {
        let m = read("STRUCT<a: LONG, b: DEC, c: TIMESTAMP_NTZ, d: VARCHAR(8)>").unwrap();
        let tys: Vec<&Ty> = m.root().fields.iter().map(|f| &f.slot.ty).collect();
        assert_eq!(tys[0], &Ty::Scalar(Scalar::Int { bits: 64, signed: true }));
        assert_eq!(tys[1], &Ty::Scalar(Scalar::Decimal { precision: 10, scale: 0 }));
        assert_eq!(tys[2], &Ty::Scalar(Scalar::LocalDateTime { unit: Unit::Micro }));
        assert_eq!(tys[3], &Ty::Scalar(Scalar::String));
    }

    #[test]
    fn errors_name_the_line_and_column() {
        let e = read("a INT,\nb STRUCT<c: WIDGET>").unwrap_err();
        assert_eq!((e.line, e.column), (2, 13));
        assert!(e.message.contains("`widget` is not a Spark SQL type"), "{e}");
        let e = read("a INT b INT").unwrap_err();
        assert_eq!((e.line, e.column, e.message.as_str()), (1, 7, "expected `,` or the end of the schema, found `b`"));
        let e = read("a ARRAY<INT").unwrap_err();
        assert_eq!((e.line, e.column), (1, 12));
        assert!(read("a DECIMAL(40,2)").is_err());
        assert!(read("a INT, a STRING").unwrap_err().message.contains("twice"));
        assert!(read("  ").is_err());
    }
}
