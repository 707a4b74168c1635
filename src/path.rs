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
}
