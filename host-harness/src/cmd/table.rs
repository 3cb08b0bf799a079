//! Readable tables and engineering-notation numbers for the human output.

use comfy_table::{ContentArrangement, Table, presets::UTF8_FULL_CONDENSED};

/// A table in the house style, with `header` as its first row.
#[must_use]
pub fn new_table(header: &[&str]) -> Table {
    let mut t = Table::new();
    t.load_preset(UTF8_FULL_CONDENSED)
        .set_content_arrangement(ContentArrangement::Dynamic)
        .set_header(header.iter().copied());
    t
}

pub use crate::si::format as si;

#[cfg(test)]
mod tests {
    use super::si;

    #[test]
    fn engineering_notation() {
        assert_eq!(si(0.00375, "s"), "3.750 ms");
        assert_eq!(si(0.75, "A"), "750.0 mA");
        assert_eq!(si(24.0, "V"), "24.00 V");
        assert_eq!(si(26004.77, "V"), "26.00 kV");
        assert_eq!(si(0.0, "J"), "0 J");
        assert_eq!(si(-0.7, "V"), "-700.0 mV");
        assert_eq!(si(999.99, "V"), "1.000 kV");
    }
}
