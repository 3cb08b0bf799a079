//! Where a key of a scenario file is, for problems found after parsing (when the plans or the
//! plant reject a value): the dotted key path the messages use (`system.coil.resistance`,
//! `scenario[1].event[0].supply`) looked up in the spans of the TOML parser.

use toml::de::{DeTable, DeValue};

/// Byte offset of the value of `key` (a dotted path with `[n]` indices) in `text`; for a path
/// that ends at a table, the offset of the table's first value. `None` when the file does not
/// contain the key (a default was used) or does not parse.
#[must_use]
pub fn key_offset(text: &str, key: &str) -> Option<usize> {
    let root = DeTable::parse(text).ok()?;
    let mut span = root.span();
    let mut value: Option<&DeValue<'_>> = None;
    let mut table = Some(root.get_ref());
    for part in key.split('.') {
        let (name, index) = match part.split_once('[') {
            Some((n, rest)) => (n, Some(rest.trim_end_matches(']').parse::<usize>().ok()?)),
            None => (part, None),
        };
        let (_, v) = table?.iter().find(|(k, _)| k.get_ref().as_ref() == name)?;
        let mut v = v;
        if let Some(i) = index {
            let DeValue::Array(a) = v.get_ref() else {
                return None;
            };
            v = a.get(i)?;
        }
        span = v.span();
        value = Some(v.get_ref());
        table = match v.get_ref() {
            DeValue::Table(t) => Some(t),
            _ => None,
        };
    }
    match value {
        // A table is shown at its first key (a `[header]` table has no span of its own).
        Some(DeValue::Table(t)) => t
            .iter()
            .map(|(k, _)| k.span().start)
            .min()
            .or(Some(span.start)),
        _ => Some(span.start),
    }
}

#[cfg(test)]
mod tests {
    use super::key_offset;

    #[test]
    fn finds_values_tables_and_array_entries() {
        let text = "[system]\nname = \"x\"\n[system.coil]\nresistance = \"32\"\n\n[[scenario]]\n\
                    name = \"a\"\n[[scenario]]\nname = \"b\"\nsupply = 24\n";
        let at = |k| key_offset(text, k).map(|o| &text[o..]);
        assert!(at("system.coil.resistance").unwrap().starts_with("\"32\""));
        assert!(at("scenario[1].supply").unwrap().starts_with("24"));
        assert!(at("scenario[0].name").unwrap().starts_with("\"a\""));
        assert!(at("system.coil").unwrap().starts_with("resistance"));
        assert_eq!(key_offset(text, "system.coil.inductance"), None);
        assert_eq!(key_offset(text, "scenario[2].name"), None);
    }
}
