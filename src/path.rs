//! The field path syntax shared by every layer: `pickup.zone` for a struct
//! member, `stops[]` for list elements, `tags{}` for map values and
//! `tags{key}` for map keys. A name that holds one of `.[]{}` or a backtick,
//! or is empty, is written in backticks (a backtick inside doubled).

/// Appends a struct member to `parent` (empty for a top-level field).
pub fn member(parent: &str, name: &str) -> String {
    let name = quote_name(name);
    if parent.is_empty() { name } else { format!("{parent}.{name}") }
}

/// The path of the elements of the list at `parent`.
pub fn element(parent: &str) -> String {
    format!("{parent}[]")
}

/// The path of the values of the map at `parent`.
pub fn map_value(parent: &str) -> String {
    format!("{parent}{{}}")
}

/// The path of the keys of the map at `parent`.
pub fn map_key(parent: &str) -> String {
    format!("{parent}{{key}}")
}

/// One step of a path, outermost first.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Step {
    Member(String),
    Element,
    MapValue,
    MapKey,
}

/// Splits a path written by this module into its steps; `None` when it is
/// not such a path (e.g. an unclosed backtick).
pub fn steps(path: &str) -> Option<Vec<Step>> {
    let mut out = Vec::new();
    let mut rest = path;
    let mut expect_name = true;
    while !rest.is_empty() || expect_name {
        if expect_name {
            let (name, after) = take_name(rest)?;
            out.push(Step::Member(name));
            rest = after;
            expect_name = false;
        } else if let Some(after) = rest.strip_prefix("[]") {
            out.push(Step::Element);
            rest = after;
        } else if let Some(after) = rest.strip_prefix("{key}") {
            out.push(Step::MapKey);
            rest = after;
        } else if let Some(after) = rest.strip_prefix("{}") {
            out.push(Step::MapValue);
            rest = after;
        } else {
            rest = rest.strip_prefix('.')?;
            expect_name = true;
        }
    }
    Some(out)
}

/// A plain or backticked name at the start of `text`, and what follows it.
fn take_name(text: &str) -> Option<(String, &str)> {
    if let Some(quoted) = text.strip_prefix('`') {
        let mut name = String::new();
        let mut chars = quoted.char_indices();
        while let Some((i, c)) = chars.next() {
            if c != '`' {
                name.push(c);
            } else if quoted[i + 1..].starts_with('`') {
                name.push('`');
                chars.next();
            } else {
                return Some((name, &quoted[i + 1..]));
            }
        }
        return None;
    }
    let end = text.find(['.', '[', '{']).unwrap_or(text.len());
    (end > 0).then(|| (text[..end].to_string(), &text[end..]))
}

fn quote_name(name: &str) -> String {
    let needs_quotes = name.is_empty() || name.contains(['.', '[', ']', '{', '}', '`']);
    if needs_quotes { format!("`{}`", name.replace('`', "``")) } else { name.to_string() }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn paths_compose_and_quote_awkward_names() {
        assert_eq!(member("", "pickup"), "pickup");
        assert_eq!(member("pickup", "zone"), "pickup.zone");
        assert_eq!(element(&member("", "stops")), "stops[]");
        assert_eq!(member(&element("stops"), "eta"), "stops[].eta");
        assert_eq!(map_value("tags"), "tags{}");
        assert_eq!(map_key("tags"), "tags{key}");
        assert_eq!(member("", "a.b"), "`a.b`");
        assert_eq!(member("x", "we`ird"), "x.`we``ird`");
        assert_eq!(member("", ""), "``");
    }

    #[test]
    fn steps_read_back_every_composed_path() {
        use Step::*;
        let m = |n: &str| Member(n.to_string());
        assert_eq!(steps("pickup.zone"), Some(vec![m("pickup"), m("zone")]));
        assert_eq!(steps("stops[].eta"), Some(vec![m("stops"), Element, m("eta")]));
        assert_eq!(steps("tags{}"), Some(vec![m("tags"), MapValue]));
        assert_eq!(steps("tags{key}"), Some(vec![m("tags"), MapKey]));
        assert_eq!(steps("a[][]"), Some(vec![m("a"), Element, Element]));
        let awkward = member(&element(&member("", "a.b")), "we`ird");
        assert_eq!(steps(&awkward), Some(vec![m("a.b"), Element, m("we`ird")]));
        assert_eq!(steps(&member("", "")), Some(vec![m("")]));
        for bad in ["", "a..b", "`open", "a.", "a[x"] {
            assert_eq!(steps(bad), None, "{bad}");
        }
    }
}
