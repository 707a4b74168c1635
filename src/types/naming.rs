//! Names in generated code: record type names from field paths, and field
//! identifiers that are valid in a target while the data's own names are
//! kept exactly (through each target's rename mechanism).

use std::collections::HashSet;

use super::model::Model;

/// Words a target language reserves (see each target for its source).
pub struct Reserved(pub &'static [&'static str]);

impl Reserved {
    pub fn contains(&self, word: &str) -> bool {
        self.0.contains(&word)
    }
}

/// `delivery_id`, `pickup.at`, `stops[]` → `DeliveryId`, `PickupAt`, `StopsItem`:
/// ASCII letters and digits of each word, capitalised; `[]` is "Item",
/// `{}` "Value", `{key}` "Key". Empty or leading-digit results get a prefix.
pub fn pascal_case(path: &str) -> String {
    let spelled = path.replace("[]", " item ").replace("{key}", " key ").replace("{}", " value ");
    let mut out = String::new();
    for word in spelled.split(|c: char| !c.is_ascii_alphanumeric()).filter(|w| !w.is_empty()) {
        let mut chars = word.chars();
        if let Some(first) = chars.next() {
            out.push(first.to_ascii_uppercase());
            out.extend(chars);
        }
    }
    if out.is_empty() || out.starts_with(|c: char| c.is_ascii_digit()) {
        out.insert(0, 'T');
    }
    out
}

/// A `snake_case` identifier of ASCII letters, digits and underscores;
/// `None` when nothing of the name is left.
pub fn snake_case(name: &str) -> Option<String> {
    let mut out = String::new();
    let mut previous_lower = false;
    for c in name.chars() {
        if c.is_ascii_alphanumeric() {
            if c.is_ascii_uppercase() && previous_lower && !out.ends_with('_') {
                out.push('_');
            }
            previous_lower = c.is_ascii_lowercase() || c.is_ascii_digit();
            out.push(c.to_ascii_lowercase());
        } else if !out.is_empty() && !out.ends_with('_') {
            out.push('_');
            previous_lower = false;
        }
    }
    let out = out.trim_end_matches('_');
    match out.chars().next() {
        None => None,
        Some(c) if c.is_ascii_digit() => Some(format!("_{out}")),
        Some(_) => Some(out.to_string()),
    }
}

/// True for `[A-Za-z_][A-Za-z0-9_]*`.
pub fn is_ascii_identifier(name: &str) -> bool {
    let mut chars = name.chars();
    chars.next().is_some_and(|c| c.is_ascii_alphabetic() || c == '_') && chars.all(|c| c.is_ascii_alphanumeric() || c == '_')
}

/// Hands out names unique within one scope, numbering repeats (`x`, `x_2`).
#[derive(Default)]
pub struct Scope {
    taken: HashSet<String>,
}

impl Scope {
    pub fn unique(&mut self, wanted: &str, separator: &str) -> String {
        let mut name = wanted.to_string();
        let mut n = 2;
        while !self.taken.insert(name.clone()) {
            name = format!("{wanted}{separator}{n}");
            n += 1;
        }
        name
    }
}

/// Gives every record a type name: the root's from `root`, the others from
/// their paths, numbered when two differ only in spelling. Names that clash
/// with `reserved` (e.g. a target's own type names) get a suffix.
pub fn name_records(model: &mut Model, root: &str, reserved: &Reserved) {
    let mut scope = Scope::default();
    let last = model.records.len() - 1;
    // The root first, so it keeps the name asked for.
    let mut order: Vec<usize> = vec![last];
    order.extend(0..last);
    for i in order {
        let wanted = if i == last { pascal_case(root) } else { pascal_case(&model.records[i].path) };
        let wanted = if reserved.contains(&wanted) { format!("{wanted}Record") } else { wanted };
        model.records[i].name = scope.unique(&wanted, "");
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn type_names_come_from_paths() {
        assert_eq!(pascal_case("delivery_id"), "DeliveryId");
        assert_eq!(pascal_case("pickup.at"), "PickupAt");
        assert_eq!(pascal_case("stops[]"), "StopsItem");
        assert_eq!(pascal_case("attributes{}"), "AttributesValue");
        assert_eq!(pascal_case("3d model"), "T3dModel");
        assert_eq!(pascal_case("ünïcode"), "NCode");
        assert_eq!(pascal_case("—"), "T");
    }

    #[test]
    fn snake_case_keeps_letters_and_digits() {
        assert_eq!(snake_case("deliveryId").as_deref(), Some("delivery_id"));
        assert_eq!(snake_case("zip code").as_deref(), Some("zip_code"));
        assert_eq!(snake_case("a.b").as_deref(), Some("a_b"));
        assert_eq!(snake_case("1st").as_deref(), Some("_1st"));
        assert_eq!(snake_case("日本"), None);
        assert_eq!(snake_case("HTTPCode").as_deref(), Some("httpcode"));
    }

    #[test]
    fn a_scope_numbers_repeats() {
        let mut s = Scope::default();
        assert_eq!(s.unique("a", "_"), "a");
        assert_eq!(s.unique("a", "_"), "a_2");
        assert_eq!(s.unique("a_2", "_"), "a_2_2");
    }
}
