//! A small syntax highlighter for the generated code: comments, string
//! literals, keywords and type names, enough to read the code at a glance.
//! It only colours; it never changes the text.

use std::ops::Range;

use eframe::egui::text::{LayoutJob, TextFormat};
use eframe::egui::{Color32, FontId, Visuals};

use crate::types::Lang;

/// What a stretch of code is, for its colour.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Token {
    Plain,
    Comment,
    Text,
    Keyword,
    TypeName,
}

fn keywords(lang: Lang) -> &'static [&'static str] {
    match lang {
        Lang::Scala => &["case", "class", "object", "package", "import", "val", "def", "extends", "type", "sealed", "trait"],
        Lang::SparkDdl => &["STRUCT", "ARRAY", "MAP", "NOT", "NULL", "COMMENT"],
        Lang::Rust => &["pub", "struct", "enum", "use", "mod", "impl", "fn", "type", "crate", "r#type"],
        Lang::Python => &["from", "import", "class", "def", "return", "None", "if", "else", "for", "in", "True", "False"],
        Lang::Typescript => &["export", "interface", "type", "null", "import"],
        Lang::JsonSchema | Lang::Avro => &["true", "false", "null"],
        Lang::Proto => &["syntax", "package", "import", "message", "repeated", "optional", "map", "oneof", "enum", "option"],
    }
}

fn line_comment(lang: Lang) -> Option<&'static str> {
    match lang {
        Lang::Scala | Lang::Rust | Lang::Typescript | Lang::Proto => Some("//"),
        Lang::Python => Some("#"),
        Lang::SparkDdl => Some("--"),
        Lang::JsonSchema | Lang::Avro => None,
    }
}

/// Splits `code` into tokens: (byte range, token), covering every byte.
pub fn tokens(code: &str, lang: Lang) -> Vec<(std::ops::Range<usize>, Token)> {
    let comment = line_comment(lang);
    let words = keywords(lang);
    let bytes = code.as_bytes();
    let mut out = Vec::new();
    let mut i = 0;
    let mut plain_from = 0;
    let push = |out: &mut Vec<_>, from: usize, to: usize, token| {
        if from < to {
            out.push((from..to, token));
        }
    };
    while i < bytes.len() {
        let rest = &code[i..];
        let (len, token) = if comment.is_some_and(|c| rest.starts_with(c)) {
            (rest.find('\n').unwrap_or(rest.len()), Token::Comment)
        } else if rest.starts_with("\"\"\"") {
            (rest[3..].find("\"\"\"").map_or(rest.len(), |e| e + 6), Token::Text)
        } else if bytes[i] == b'"' {
            (string_end(rest), Token::Text)
        } else if is_word_byte(bytes[i]) && (i == 0 || !is_word_byte(bytes[i - 1])) {
            let len = rest.bytes().take_while(|&b| is_word_byte(b)).count();
            let word = &rest[..len];
            let token = if words.contains(&word) {
                Token::Keyword
            } else if word.starts_with(|c: char| c.is_ascii_uppercase()) && lang != Lang::SparkDdl {
                Token::TypeName
            } else {
                Token::Plain
            };
            (len, token)
        } else {
            // One whole character, so ranges stay on character boundaries.
            (rest.chars().next().map_or(1, char::len_utf8), Token::Plain)
        };
        if token == Token::Plain {
            i += len;
            continue;
        }
        push(&mut out, plain_from, i, Token::Plain);
        push(&mut out, i, i + len, token);
        i += len;
        plain_from = i;
    }
    push(&mut out, plain_from, code.len(), Token::Plain);
    out
}

fn is_word_byte(b: u8) -> bool {
    b.is_ascii_alphanumeric() || b == b'_'
}

/// Length of the string literal at the start of `s` (quote to quote, past
/// escaped quotes; the rest of the line when unclosed).
fn string_end(s: &str) -> usize {
    let mut escaped = false;
    for (i, c) in s.char_indices().skip(1) {
        match c {
            '\\' if !escaped => escaped = true,
            '"' if !escaped => return i + 1,
            '\n' => return i,
            _ => escaped = false,
        }
    }
    s.len()
}

fn colour(token: Token, visuals: &Visuals) -> Color32 {
    let dark = visuals.dark_mode;
    match token {
        Token::Plain => visuals.text_color(),
        Token::Comment => if dark { Color32::from_rgb(140, 150, 140) } else { Color32::from_rgb(100, 112, 100) },
        Token::Text => if dark { Color32::from_rgb(214, 180, 120) } else { Color32::from_rgb(150, 84, 20) },
        Token::Keyword => if dark { Color32::from_rgb(150, 170, 240) } else { Color32::from_rgb(40, 70, 170) },
        Token::TypeName => if dark { Color32::from_rgb(110, 200, 180) } else { Color32::from_rgb(20, 120, 110) },
    }
}

/// Code split into lines with its tokens, so that only the lines on screen
/// are laid out (long code would otherwise cost a whole frame to lay out).
pub struct Lines {
    code: String,
    /// Each line's byte range, without its line break.
    lines: Vec<Range<usize>>,
    tokens: Vec<(Range<usize>, Token)>,
    /// The most characters on one line, for the width of the view.
    pub widest: usize,
}

impl Lines {
    pub fn new(code: String, lang: Lang) -> Self {
        let tokens = tokens(&code, lang);
        let mut lines = Vec::new();
        let mut start = 0;
        for line in code.split('\n') {
            lines.push(start..start + line.len());
            start += line.len() + 1;
        }
        let widest = lines.iter().map(|r| code[r.clone()].chars().count()).max().unwrap_or(0);
        Lines { code, lines, tokens, widest }
    }

    pub fn len(&self) -> usize {
        self.lines.len()
    }

    pub fn is_empty(&self) -> bool {
        self.lines.is_empty()
    }

    /// Line `index` coloured in the monospace font; a token that spans
    /// lines (a doc string) keeps its colour on each of them.
    pub fn line(&self, index: usize, visuals: &Visuals, font: &FontId) -> LayoutJob {
        let line = self.lines[index].clone();
        let mut job = LayoutJob::default();
        let first = self.tokens.partition_point(|(r, _)| r.end <= line.start);
        for (range, token) in self.tokens[first..].iter().take_while(|(r, _)| r.start < line.end) {
            let piece = range.start.max(line.start)..range.end.min(line.end);
            job.append(&self.code[piece], 0.0, TextFormat::simple(font.clone(), colour(*token, visuals)));
        }
        job
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn spans(code: &str, lang: Lang) -> Vec<(&str, Token)> {
        tokens(code, lang).into_iter().map(|(r, t)| (&code[r], t)).filter(|(s, _)| !s.trim().is_empty()).collect()
    }

    #[test]
    fn comments_strings_keywords_and_types_are_told_apart() {
        let code = "// rows: 3\ncase class Row(`a b`: Option[String], n: Long = \"x\\\"y\")";
        let s = spans(code, Lang::Scala);
        assert_eq!(s[0], ("// rows: 3", Token::Comment));
        assert!(s.contains(&("case", Token::Keyword)) && s.contains(&("class", Token::Keyword)));
        assert!(s.contains(&("Option", Token::TypeName)) && s.contains(&("Long", Token::TypeName)));
        assert!(s.contains(&("\"x\\\"y\"", Token::Text)), "{s:?}");
        let py = spans("name: str  # a comment\n\"\"\"doc \"quoted\" \"\"\"", Lang::Python);
        assert_eq!(py.last(), Some(&("\"\"\"doc \"quoted\" \"\"\"", Token::Text)));
        assert!(py.contains(&("# a comment", Token::Comment)));
    }

    #[test]
    fn lines_hold_the_code_line_by_line_with_their_colours() {
        let code = "name: str\n\"\"\"two\nlines\"\"\"\n\nünï # é".to_string();
        let lines = Lines::new(code.clone(), Lang::Python);
        let font = FontId::monospace(12.0);
        let visuals = Visuals::dark();
        let texts: Vec<String> = (0..lines.len()).map(|i| lines.line(i, &visuals, &font).text).collect();
        assert_eq!(texts.join("\n"), code);
        assert_eq!(lines.len(), 5);
        assert_eq!(lines.widest, 9, "the first line, in characters");
        // The doc string's second line is coloured as text, like its first.
        let text_colour = colour(Token::Text, &visuals);
        let second = lines.line(2, &visuals, &font);
        assert!(second.sections.iter().all(|s| s.format.color == text_colour), "{:?}", second.sections);
        let last = lines.line(4, &visuals, &font);
        assert_eq!(last.sections.last().map(|s| s.format.color), Some(colour(Token::Comment, &visuals)));
    }

    #[test]
    fn tokens_cover_every_byte_of_any_text() {
        for code in ["", "ünïcödé \"unclosed", "a//b\n\"", "\u{202e}x\"\"\"", "message M { map<string, int64> m = 1; }"] {
            for lang in Lang::ALL {
                let joined: String = tokens(code, lang).into_iter().map(|(r, _)| &code[r]).collect();
                assert_eq!(joined, code, "{lang:?}");
            }
        }
    }
}
