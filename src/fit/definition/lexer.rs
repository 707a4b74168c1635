//! A small tokenizer shared by the Scala and Spark DDL readers: names (plain
//! or in backticks), numbers, string literals and punctuation, each with the
//! line and column it starts at; comments are skipped.

use super::DefinitionError;

#[derive(Debug, Clone, PartialEq)]
pub enum Tok {
    /// A plain name (letters, digits, `_`, `$`).
    Name(String),
    /// A name written in backticks, with doubled backticks undone (DDL) or
    /// kept as written (Scala has no escape inside backticks).
    Quoted(String),
    Number(String),
    Text(String),
    Punct(char),
}

#[derive(Debug, Clone, PartialEq)]
pub struct Token {
    pub tok: Tok,
    pub line: usize,
    pub column: usize,
}

/// Which comment forms the language has.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Comments {
    /// `// …` and `/* … */` (nesting, as Scala's do).
    Scala,
    /// `-- …` and `/* … */`.
    Sql,
}

pub fn tokens(text: &str, comments: Comments) -> Result<Vec<Token>, DefinitionError> {
    let chars: Vec<char> = text.chars().collect();
    let mut out = Vec::new();
    let (mut i, mut line, mut column) = (0usize, 1usize, 1usize);
    // Moves past `n` characters, keeping line and column.
    let advance = |i: &mut usize, line: &mut usize, column: &mut usize, n: usize| {
        for _ in 0..n {
            if chars.get(*i) == Some(&'\n') {
                *line += 1;
                *column = 1;
            } else {
                *column += 1;
            }
            *i += 1;
        }
    };
    while i < chars.len() {
        let c = chars[i];
        let next = chars.get(i + 1).copied();
        let (start_line, start_column) = (line, column);
        let at = |message: String| DefinitionError::at(start_line, start_column, message);
        if c.is_whitespace() {
            advance(&mut i, &mut line, &mut column, 1);
        } else if (c == '/' && next == Some('/') && comments == Comments::Scala)
            || (c == '-' && next == Some('-') && comments == Comments::Sql)
        {
            while i < chars.len() && chars[i] != '\n' {
                advance(&mut i, &mut line, &mut column, 1);
            }
        } else if c == '/' && next == Some('*') {
            let mut depth = 0usize;
            loop {
                if i >= chars.len() {
                    return Err(at("a comment opened here is never closed".into()));
                }
                if chars[i] == '/' && chars.get(i + 1) == Some(&'*') {
                    depth += 1;
                    advance(&mut i, &mut line, &mut column, 2);
                } else if chars[i] == '*' && chars.get(i + 1) == Some(&'/') {
                    depth -= 1;
                    advance(&mut i, &mut line, &mut column, 2);
                    if depth == 0 || comments == Comments::Sql {
                        break;
                    }
                } else {
                    advance(&mut i, &mut line, &mut column, 1);
                }
            }
        } else if c == '`' {
            advance(&mut i, &mut line, &mut column, 1);
            let mut name = String::new();
            loop {
                match chars.get(i) {
                    None | Some('\n') => return Err(at("a name in backticks is never closed".into())),
                    Some('`') if comments == Comments::Sql && chars.get(i + 1) == Some(&'`') => {
                        name.push('`');
                        advance(&mut i, &mut line, &mut column, 2);
                    }
                    Some('`') => {
                        advance(&mut i, &mut line, &mut column, 1);
                        break;
                    }
                    Some(&ch) => {
                        name.push(ch);
                        advance(&mut i, &mut line, &mut column, 1);
                    }
                }
            }
            out.push(Token { tok: Tok::Quoted(name), line: start_line, column: start_column });
        } else if c == '"' || c == '\'' {
            let text = string_literal(&chars, &mut i, c).ok_or_else(|| at("a string opened here is never closed".into()))?;
            // The literal has no line breaks unless triple-quoted; recount.
            let consumed: String = text.1;
            for ch in consumed.chars() {
                if ch == '\n' {
                    line += 1;
                    column = 1;
                } else {
                    column += 1;
                }
            }
            out.push(Token { tok: Tok::Text(text.0), line: start_line, column: start_column });
        } else if c.is_ascii_digit() {
            let mut n = String::new();
            while let Some(&d) = chars.get(i).filter(|d| d.is_ascii_alphanumeric() || **d == '.' || **d == '_') {
                n.push(d);
                advance(&mut i, &mut line, &mut column, 1);
            }
            out.push(Token { tok: Tok::Number(n), line: start_line, column: start_column });
        } else if c.is_alphabetic() || c == '_' || c == '$' {
            let mut n = String::new();
            while let Some(&d) = chars.get(i).filter(|d| d.is_alphanumeric() || **d == '_' || **d == '$') {
                n.push(d);
                advance(&mut i, &mut line, &mut column, 1);
            }
            out.push(Token { tok: Tok::Name(n), line: start_line, column: start_column });
        } else {
            out.push(Token { tok: Tok::Punct(c), line: start_line, column: start_column });
            advance(&mut i, &mut line, &mut column, 1);
        }
    }
    Ok(out)
}

/// Reads a string literal starting at `chars[*i]` (the quote): its contents
/// with `\` escapes kept as the escaped character, and the raw text consumed.
/// Scala's triple-quoted strings are read whole.
fn string_literal(chars: &[char], i: &mut usize, quote: char) -> Option<(String, String)> {
    let start = *i;
    let triple = quote == '"' && chars.get(start + 1) == Some(&'"') && chars.get(start + 2) == Some(&'"');
    let mut value = String::new();
    if triple {
        *i += 3;
        loop {
            if *i >= chars.len() {
                return None;
            }
            if chars.get(*i) == Some(&'"') && chars.get(*i + 1) == Some(&'"') && chars.get(*i + 2) == Some(&'"') {
                *i += 3;
                break;
            }
            value.push(*chars.get(*i)?);
            *i += 1;
        }
    } else {
        *i += 1;
        loop {
            match chars.get(*i)? {
                '\n' => return None,
                '\\' => {
                    value.push(*chars.get(*i + 1)?);
                    *i += 2;
                }
                &c if c == quote => {
                    *i += 1;
                    break;
                }
                &c => {
                    value.push(c);
                    *i += 1;
                }
            }
        }
    }
    Some((value, chars[start..*i].iter().collect()))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn kinds(text: &str, comments: Comments) -> Vec<Tok> {
        tokens(text, comments).unwrap().into_iter().map(|t| t.tok).collect()
    }

    #[test]
    fn names_numbers_strings_and_punctuation_with_their_positions() {
        let t = tokens("a: DECIMAL(10, 2)\n  `b c` 'x'", Comments::Sql).unwrap();
        assert_eq!(t[0], Token { tok: Tok::Name("a".into()), line: 1, column: 1 });
        assert_eq!(t[1].tok, Tok::Punct(':'));
        assert_eq!(t[4], Token { tok: Tok::Number("10".into()), line: 1, column: 12 });
        assert_eq!(t[8], Token { tok: Tok::Quoted("b c".into()), line: 2, column: 3 });
        assert_eq!(t[9], Token { tok: Tok::Text("x".into()), line: 2, column: 9 });
    }

    #[test]
    fn comments_are_skipped_in_each_language_s_own_form() {
        assert_eq!(kinds("a -- b\n/* c */ d", Comments::Sql), vec![Tok::Name("a".into()), Tok::Name("d".into())]);
        assert_eq!(kinds("a // b\n/* c /* n */ */ d", Comments::Scala), vec![Tok::Name("a".into()), Tok::Name("d".into())]);
    }

    #[test]
    fn backticks_unescape_doubled_ones_only_in_sql() {
        assert_eq!(kinds("`a``b`", Comments::Sql), vec![Tok::Quoted("a`b".into())]);
        assert_eq!(kinds("`type`", Comments::Scala), vec![Tok::Quoted("type".into())]);
    }

    #[test]
    fn unclosed_pieces_name_where_they_start() {
        let e = tokens("a\n  `b", Comments::Sql).unwrap_err();
        assert_eq!((e.line, e.column), (2, 3));
        let e = tokens("x /* never", Comments::Scala).unwrap_err();
        assert_eq!((e.line, e.column), (1, 3));
        assert!(tokens("'open", Comments::Sql).is_err());
        assert!(tokens("\"\"\"open", Comments::Scala).is_err());
    }
}
