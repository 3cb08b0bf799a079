//! A command's `--json` report as ordered figures.

use std::fmt;

use serde::Serialize;
use serde::de::{Deserialize, Deserializer, MapAccess, Visitor};
use serde_json::Value;

use crate::input_error::InputError;

/// A command's report as ordered `(key, value)` pairs (the order of its `--json` keys).
#[derive(Debug, Clone, PartialEq)]
pub struct Figures(pub Vec<(String, Value)>);

impl<'de> Deserialize<'de> for Figures {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct Ordered;
        impl<'de> Visitor<'de> for Ordered {
            type Value = Figures;
            fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
                f.write_str("a JSON object")
            }
            fn visit_map<A: MapAccess<'de>>(self, mut m: A) -> Result<Figures, A::Error> {
                let mut v = Vec::new();
                while let Some((k, x)) = m.next_entry::<String, Value>()? {
                    v.push((k, x));
                }
                Ok(Figures(v))
            }
        }
        d.deserialize_map(Ordered)
    }
}

/// The figures of a command's report, in the order of its keys.
///
/// # Errors
///
/// The report does not serialize to a JSON object (a bug, reported rather than hidden).
pub fn figures_of<T: Serialize>(report: &T) -> Result<Figures, InputError> {
    let text = serde_json::to_string(report).map_err(|e| InputError(e.to_string()))?;
    serde_json::from_str(&text).map_err(|e| InputError(e.to_string()))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn figures_keep_the_key_order() {
        #[derive(Serialize)]
        struct R {
            zeta: f32,
            alpha: &'static str,
        }
        let f = figures_of(&R {
            zeta: 1.0,
            alpha: "x",
        })
        .unwrap();
        let keys: Vec<&str> = f.0.iter().map(|(k, _)| k.as_str()).collect();
        assert_eq!(keys, ["zeta", "alpha"]);
    }
}
