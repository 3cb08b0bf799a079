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

/// `value` in engineering notation with an SI prefix and four significant digits, followed by
/// `unit`: `0.00375, "s"` gives `3.750 ms`.
#[must_use]
pub fn si(value: f64, unit: &str) -> String {
    if !value.is_finite() {
        return format!("{value} {unit}");
    }
    if value == 0.0 {
        return format!("0 {unit}");
    }
    const PREFIXES: [(f64, &str); 9] = [
        (1e9, "G"),
        (1e6, "M"),
        (1e3, "k"),
        (1.0, ""),
        (1e-3, "m"),
        (1e-6, "µ"),
        (1e-9, "n"),
        (1e-12, "p"),
        (1e-15, "f"),
    ];
    let mag = value.abs();
    if !(0.999_95e-15..999.95e9).contains(&mag) {
        // Beyond the prefixes: scientific notation, four significant digits.
        return format!("{value:.3e} {unit}");
    }
    let (scale, prefix) = PREFIXES
        .iter()
        .copied()
        .find(|(s, _)| mag >= *s * 0.999_95)
        .unwrap_or((1e-15, "f"));
    let x = value / scale;
    let digits = if x.abs() >= 99.995 {
        1
    } else if x.abs() >= 9.9995 {
        2
    } else {
        3
    };
    format!("{x:.digits$} {prefix}{unit}")
}

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
        // Beyond the prefixes: scientific notation, not `0.000 fA` or a 20-digit number.
        assert_eq!(si(1e-30, "A"), "1.000e-30 A");
        assert_eq!(si(3e38, "H"), "3.000e38 H");
    }
}
