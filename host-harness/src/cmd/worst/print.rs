//! The bounded figures for people (a table) and for programs (`--json`).

use serde::Serialize;
use serde_json::Value;

use super::{Bounded, Ranged};
use crate::cmd::table::{new_table, si};
use crate::worst::value_text;

/// A figure's name and unit from its JSON key: `steady_current_a` is "steady current" in A.
#[must_use]
pub fn name_and_unit(key: &str) -> (String, &'static str) {
    const SUFFIXES: &[(&str, &str)] = &[
        ("_a_per_s", "A/s"),
        ("_rad_s", "rad/s"),
        ("_ohm", "Ω"),
        ("_hz", "Hz"),
        ("_nm", "N·m"),
        ("_a", "A"),
        ("_s", "s"),
        ("_v", "V"),
        ("_j", "J"),
        ("_w", "W"),
        ("_c", "°C"),
        ("_f", "F"),
        ("_h", "H"),
    ];
    for (suffix, unit) in SUFFIXES {
        if let Some(stem) = key.strip_suffix(suffix) {
            return (stem.replace('_', " "), unit);
        }
    }
    (key.replace('_', " "), "")
}

fn number_text(x: f32, unit: &str) -> String {
    match unit {
        "" => format!("{x:.5}"),
        "°C" => format!("{x} °C"),
        u => si(x.into(), u),
    }
}

fn values_text(values: &[Value]) -> String {
    let parts: Vec<String> = values
        .iter()
        .map(|v| match v {
            Value::String(s) => s.clone(),
            Value::Null => "—".to_string(),
            other => other.to_string(),
        })
        .collect();
    if parts.len() > 1 {
        format!("{} (varies over the ranges)", parts.join(" or "))
    } else {
        parts.concat()
    }
}

/// The `--json` form: each numeric key an object with `min`, `max`, `min_at`, `max_at`
/// (corners keyed by flag name, in the flag's base unit); a key that is not a number keeps its
/// value when it is the same everywhere, else the list of its values. Keys in the report's
/// order; numbers as f32, as in the single-value output.
pub struct Json<'a> {
    /// The ranges.
    pub ranged: &'a Ranged,
    /// The bounded figures.
    pub figures: &'a [(String, Bounded)],
}

/// A corner: each ranged flag with its value there.
struct Corner<'a>(&'a Ranged, &'a [f32]);

impl Serialize for Corner<'_> {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        use serde::ser::SerializeMap;
        let mut m = s.serialize_map(Some(self.1.len()))?;
        for (f, x) in self.0.flags.iter().zip(self.1) {
            m.serialize_entry(&f.long, x)?;
        }
        m.end()
    }
}

impl Serialize for Json<'_> {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        use serde::ser::SerializeMap;
        #[derive(Serialize)]
        struct Number<'a> {
            min: f32,
            max: f32,
            min_at: Corner<'a>,
            max_at: Corner<'a>,
        }
        let mut m = s.serialize_map(Some(self.figures.len()))?;
        for (key, b) in self.figures {
            match b {
                Bounded::Number {
                    min,
                    max,
                    min_at,
                    max_at,
                } => m.serialize_entry(
                    key,
                    &Number {
                        min: *min,
                        max: *max,
                        min_at: Corner(self.ranged, min_at),
                        max_at: Corner(self.ranged, max_at),
                    },
                )?,
                Bounded::Values(values) if values.len() == 1 => {
                    m.serialize_entry(key, &values[0])?;
                }
                Bounded::Values(values) => m.serialize_entry(key, values)?,
            }
        }
        m.end()
    }
}

/// Prints the bounds table: a header naming the ranges, one row per figure.
pub fn table(r: &Ranged, figures: &[(String, Bounded)]) {
    let over: Vec<String> = r
        .flags
        .iter()
        .map(|f| {
            format!(
                "--{} {} … {}",
                f.long,
                value_text(f.spread.min, &f.unit),
                value_text(f.spread.max, &f.unit)
            )
        })
        .collect();
    outln!("lenz {}: worst case over {}", r.command, over.join(", "));
    let mut t = new_table(&["Figure", "Min", "at", "Max", "at"]);
    for (key, b) in figures {
        let (name, unit) = name_and_unit(key);
        match b {
            Bounded::Number {
                min,
                max,
                min_at,
                max_at,
            } => t.add_row(vec![
                name,
                number_text(*min, unit),
                r.corner_text(min_at),
                number_text(*max, unit),
                r.corner_text(max_at),
            ]),
            Bounded::Values(values) => t.add_row(vec![
                name,
                values_text(values),
                String::new(),
                String::new(),
                String::new(),
            ]),
        };
    }
    outln!("{t}");
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_and_units_from_keys() {
        assert_eq!(
            name_and_unit("steady_current_a"),
            ("steady current".into(), "A")
        );
        assert_eq!(name_and_unit("tau_s"), ("tau".into(), "s"));
        assert_eq!(name_and_unit("speed_rad_s"), ("speed".into(), "rad/s"));
        assert_eq!(name_and_unit("di_dt_a_per_s"), ("di dt".into(), "A/s"));
        assert_eq!(
            name_and_unit("stall_torque_nm"),
            ("stall torque".into(), "N·m")
        );
        assert_eq!(name_and_unit("resistance_ohm"), ("resistance".into(), "Ω"));
        assert_eq!(name_and_unit("k_crit"), ("k crit".into(), ""));
        assert_eq!(name_and_unit("duty"), ("duty".into(), ""));
    }
}
