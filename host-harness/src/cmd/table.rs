//! Readable tables and engineering-notation numbers for the human output (defined in
//! [`crate::report::text`], so the reports need not import the commands).

pub use crate::report::text::{new_table, si};

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
