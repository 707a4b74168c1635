//! Reading an existing record definition (Scala case classes, Rust structs
//! with serde attributes, a Spark SQL DDL schema string, a JSON Schema) into
//! the target-neutral [`Model`] the generators use, so it can be checked
//! against data. In a definition a field's `nullable` means "accepts null"
//! and `may_be_missing` means "accepts an absent key".

mod json_schema;
mod lexer;
mod order;
mod rust;
mod scala;
mod spark_ddl;

use std::path::Path;

pub use rust::FLOATING_DECIMAL;

use crate::types::model::Model;

/// The languages a definition can be read from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum DefinitionLang {
    /// Scala case classes.
    Scala,
    /// Rust structs with serde attributes.
    Rust,
    /// A Spark SQL DDL schema string.
    SparkDdl,
    /// JSON Schema (draft 2020-12 subset).
    JsonSchema,
}

impl DefinitionLang {
    /// The language a file's name suggests.
    pub fn from_path(path: &Path) -> Option<DefinitionLang> {
        let name = path.file_name()?.to_str()?.to_ascii_lowercase();
        let ext = name.rsplit('.').next()?;
        match ext {
            "scala" | "sc" => Some(DefinitionLang::Scala),
            "rs" => Some(DefinitionLang::Rust),
            "ddl" | "sql" => Some(DefinitionLang::SparkDdl),
            "json" => Some(DefinitionLang::JsonSchema),
            _ => None,
        }
    }

    pub fn label(self) -> &'static str {
        match self {
            DefinitionLang::Scala => "Scala",
            DefinitionLang::Rust => "Rust",
            DefinitionLang::SparkDdl => "Spark DDL",
            DefinitionLang::JsonSchema => "JSON Schema",
        }
    }
}

/// A definition read from text: the records, root last.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Definition {
    pub lang: DefinitionLang,
    pub model: Model,
}

/// What went wrong reading a definition, and where (1-based).
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("line {line}, column {column}: {message}")]
pub struct DefinitionError {
    pub line: usize,
    pub column: usize,
    pub message: String,
}

impl DefinitionError {
    pub fn at(line: usize, column: usize, message: impl Into<String>) -> Self {
        DefinitionError { line, column, message: message.into() }
    }
}

/// Reads `text` as a definition in `lang`. `root` names the record that
/// stands for one row; without it the reader picks the one no other record
/// uses (an error when that leaves a choice).
pub fn read(text: &str, lang: DefinitionLang, root: Option<&str>) -> Result<Definition, DefinitionError> {
    within_nesting_limit(text)?;
    let model = match lang {
        DefinitionLang::Scala => scala::read(text, root)?,
        DefinitionLang::Rust => rust::read(text, root)?,
        DefinitionLang::SparkDdl => spark_ddl::read(text)?,
        DefinitionLang::JsonSchema => json_schema::read(text, root)?,
    };
    Ok(Definition { lang, model })
}

/// Brackets deeper than this are refused before parsing, so a hostile file
/// cannot exhaust the readers' stack (no real definition nests this deep).
pub const MAX_NESTING: usize = 64;

/// Counts every bracket, even in strings and comments: a conservative limit.
fn within_nesting_limit(text: &str) -> Result<(), DefinitionError> {
    let (mut depth, mut line, mut column) = (0usize, 1usize, 1usize);
    for c in text.chars() {
        match c {
            '<' | '(' | '[' | '{' => {
                depth += 1;
                if depth > MAX_NESTING {
                    return Err(DefinitionError::at(line, column, format!("brackets nest deeper than {MAX_NESTING} levels")));
                }
            }
            '>' | ')' | ']' | '}' => depth = depth.saturating_sub(1),
            _ => {}
        }
        if c == '\n' {
            line += 1;
            column = 1;
        } else {
            column += 1;
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn deep_brackets_are_refused_where_they_pass_the_limit() {
        let text = format!("a {}INT{}", "ARRAY<".repeat(MAX_NESTING + 1), ">".repeat(MAX_NESTING + 1));
        let e = read(&text, DefinitionLang::SparkDdl, None).unwrap_err();
        assert_eq!((e.line, e.column), (1, 3 + 6 * MAX_NESTING + 5));
        let ok = format!("a {}INT{}", "ARRAY<".repeat(10), ">".repeat(10));
        assert!(read(&ok, DefinitionLang::SparkDdl, None).is_ok());
    }

    #[test]
    fn the_language_comes_from_the_file_name() {
        assert_eq!(DefinitionLang::from_path(Path::new("a/Row.scala")), Some(DefinitionLang::Scala));
        assert_eq!(DefinitionLang::from_path(Path::new("row.schema.json")), Some(DefinitionLang::JsonSchema));
        assert_eq!(DefinitionLang::from_path(Path::new("row.DDL")), Some(DefinitionLang::SparkDdl));
        assert_eq!(DefinitionLang::from_path(Path::new("row.txt")), None);
    }
}
