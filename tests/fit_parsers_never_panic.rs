//! Property tests: the four definition readers return a definition or an
//! error for any input, never a panic. Random text alone rarely gets past
//! the first token, so each reader also gets "token soup": random sequences
//! of its own language's words and punctuation.

use plumbline::fit::definition::{self, DefinitionLang};
use proptest::prelude::*;

fn soup(words: &'static [&'static str]) -> impl Strategy<Value = String> {
    prop::collection::vec(prop::sample::select(words), 0..60).prop_map(|w| w.join(" "))
}

const SCALA: &[&str] = &[
    "case", "class", "object", "A", "B", "Row", "(", ")", "[", "]", "{", "}", ":", ",", "=", "@", ".", "Option", "Seq",
    "Map", "Array", "Byte", "Int", "Long", "String", "BigDecimal", "java", "sql", "Timestamp", "`x y`", "\"s\"", "//",
    "/*", "*/", "val", "private", "extends", "1", "\n",
];
const RUST: &[&str] = &[
    "struct", "enum", "pub", "A", "B", "{", "}", "(", ")", "<", ">", ":", ",", ";", "#", "[", "]", "serde", "rename",
    "=", "\"x\"", "Option", "Vec", "HashMap", "i32", "u8", "String", "chrono", "::", "DateTime", "Utc", "untagged",
    "default", "rename_all", "\"camelCase\"", "mod", "r#type",
];
const DDL: &[&str] = &[
    "a", "`b`", "STRUCT", "ARRAY", "MAP", "<", ">", ",", ":", "INT", "BIGINT", "DECIMAL", "(", ")", "10", "2", "99",
    "STRING", "NOT", "NULL", "COMMENT", "'c'", "TIMESTAMP", "--", "/*", "*/", "\n",
];
const JSON: &[&str] = &[
    "{", "}", "[", "]", ":", ",", "\"type\"", "\"object\"", "\"array\"", "\"integer\"", "\"null\"", "\"properties\"",
    "\"items\"", "\"required\"", "\"$ref\"", "\"#/$defs/A\"", "\"$defs\"", "\"A\"", "\"anyOf\"", "\"minimum\"", "1", "-5",
    "true", "false", "null", "\"additionalProperties\"",
];

fn never_panics(text: &str, lang: DefinitionLang) {
    let _ = definition::read(text, lang, None);
    let _ = definition::read(text, lang, Some("A"));
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(400))]

    #[test]
    fn any_text(text in "\\PC{0,200}") {
        for lang in [DefinitionLang::Scala, DefinitionLang::Rust, DefinitionLang::SparkDdl, DefinitionLang::JsonSchema] {
            never_panics(&text, lang);
        }
    }

    #[test]
    fn scala_token_soup(text in soup(SCALA)) {
        never_panics(&text, DefinitionLang::Scala);
    }

    #[test]
    fn rust_token_soup(text in soup(RUST)) {
        never_panics(&text, DefinitionLang::Rust);
    }

    #[test]
    fn ddl_token_soup(text in soup(DDL)) {
        never_panics(&text, DefinitionLang::SparkDdl);
    }

    #[test]
    fn json_schema_token_soup(text in soup(JSON)) {
        never_panics(&text, DefinitionLang::JsonSchema);
    }
}

/// Deep nesting is refused or read, never a stack overflow.
#[test]
fn deep_nesting_does_not_overflow_the_stack() {
    let depth = 5000;
    let ddl = format!("a {}INT{}", "ARRAY<".repeat(depth), ">".repeat(depth));
    let _ = definition::read(&ddl, DefinitionLang::SparkDdl, None);
    let scala = format!("case class A(x: {}Int{})", "Seq[".repeat(depth), "]".repeat(depth));
    let _ = definition::read(&scala, DefinitionLang::Scala, None);
    let json = format!("{{\"properties\": {{\"a\": {}{{\"type\": \"string\"}}{}}}}}", "{\"type\": \"array\", \"items\": ".repeat(depth), "}".repeat(depth));
    let _ = definition::read(&json, DefinitionLang::JsonSchema, None);
    let rust = format!("struct A {{ x: {}i32{} }}", "Vec<".repeat(depth), ">".repeat(depth));
    let _ = definition::read(&rust, DefinitionLang::Rust, None);
}
