//! Numbers and tables for people: engineering notation, the house table style.

use comfy_table::{ContentArrangement, Table, presets::UTF8_FULL_CONDENSED};

pub use crate::si::format as si;

/// A table in the house style, with `header` as its first row.
#[must_use]
pub fn new_table(header: &[&str]) -> Table {
    let mut t = Table::new();
    t.load_preset(UTF8_FULL_CONDENSED)
        .set_content_arrangement(ContentArrangement::Dynamic)
        .set_header(header.iter().copied());
    t
}

/// A value in engineering notation, or "never" for an infinite time.
pub fn value(v: f64, unit: &str) -> String {
    if v.is_infinite() && unit == "s" {
        "never".into()
    } else if matches!(unit, "trips" | "instructions" | "stops") {
        format!("{v:.0}")
    } else {
        si(v, unit)
    }
}

/// A figure's value for people: engineering notation, or four decimals for a ratio.
#[must_use]
pub fn num(v: f32, unit: &str) -> String {
    if unit.is_empty() {
        format!("{v:.4}")
    } else {
        si(v.into(), unit)
    }
}
