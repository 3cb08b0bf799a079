//! Ranges and tolerances typed on the command line in place of a single value:
//! `10.8..13.2` (`MIN..MAX`), `45m±10%` or `45m+-10%` (a relative tolerance), `24±1.2` or
//! `24+-1.2` (an absolute tolerance in the flag's own unit).
//!
//! This module only splits the text: each number is read by the flag's own value parser (SI
//! prefixes and unit symbols as for a single value), through the `read` callback, so a range
//! accepts exactly what a single value of that flag accepts.

use std::fmt;

/// How a range was written.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Form {
    /// `MIN..MAX`.
    Bounds,
    /// `NOMINAL±TOL%` or `NOMINAL+-TOL%`.
    Relative,
    /// `NOMINAL±TOL` or `NOMINAL+-TOL` (same unit as the nominal).
    Absolute,
}

/// A range read from one flag's text.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Spread {
    /// Lower end, in the flag's unit.
    pub min: f64,
    /// Upper end, in the flag's unit.
    pub max: f64,
    /// How it was written.
    pub form: Form,
}

/// Why a range could not be read; the caller prefixes the flag.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct RangeError(pub String);

impl fmt::Display for RangeError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.0)
    }
}

/// The forms, for error messages.
pub const FORMS: &str = "MIN..MAX, NOMINAL±TOL% or NOMINAL±TOL (also +- for ±)";

/// Whether `text` is written as a range or tolerance rather than a single value.
#[must_use]
pub fn is_range(text: &str) -> bool {
    text.contains("..") || text.contains('±') || text.contains("+-")
}

/// Reads `text` as a range; `read` turns one number (as typed, with prefix and unit) into a
/// value in the flag's unit.
///
/// # Errors
///
/// A missing end or tolerance, an end or nominal `read` rejects, `MIN` above `MAX`, a negative
/// or non-finite tolerance.
pub fn parse(text: &str, read: impl Fn(&str) -> Result<f64, String>) -> Result<Spread, RangeError> {
    let err = |problem: String| RangeError(format!("'{text}' {problem}"));
    if let Some((lo, hi)) = text.split_once("..") {
        let (lo, hi) = (lo.trim(), hi.trim());
        if lo.is_empty() || hi.is_empty() {
            return Err(err(format!("is not a range: needs both ends ({FORMS})")));
        }
        let min = read(lo).map_err(|e| err(format!("has a bad lower end: {e}")))?;
        let max = read(hi).map_err(|e| err(format!("has a bad upper end: {e}")))?;
        if min > max {
            return Err(err(format!(
                "is an empty range: the lower end {lo} is above the upper end {hi}"
            )));
        }
        return Ok(Spread {
            min,
            max,
            form: Form::Bounds,
        });
    }
    let (nominal, tol) = text
        .split_once('±')
        .or_else(|| text.split_once("+-"))
        .ok_or_else(|| err(format!("is not a range ({FORMS})")))?;
    let (nominal, tol) = (nominal.trim(), tol.trim());
    if nominal.is_empty() || tol.is_empty() {
        return Err(err(format!(
            "is not a tolerance: needs a nominal value and a tolerance ({FORMS})"
        )));
    }
    let x = read(nominal).map_err(|e| err(format!("has a bad nominal value: {e}")))?;
    let (delta, form) = if let Some(pct) = tol.strip_suffix('%') {
        let p: f64 = pct
            .trim()
            .parse()
            .ok()
            .filter(|p: &f64| p.is_finite())
            .ok_or_else(|| err(format!("has a bad tolerance '{tol}': not a percentage")))?;
        (x.abs() * p / 100.0, Form::Relative)
    } else {
        let d = read(tol).map_err(|e| err(format!("has a bad tolerance: {e}")))?;
        (d, Form::Absolute)
    };
    if delta < 0.0 || tol.starts_with('-') {
        return Err(err(format!(
            "has a negative tolerance '{tol}': write the spread as a positive ± value"
        )));
    }
    let (min, max) = (x - delta, x + delta);
    if !min.is_finite() || !max.is_finite() {
        return Err(err("is not finite".to_string()));
    }
    Ok(Spread { min, max, form })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::si::{Unit, parse as si_parse};

    fn henry(s: &str) -> Result<f64, String> {
        si_parse(s, Unit::Henry).map_err(|e| e.to_string())
    }

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= 1e-12 * b.abs().max(1e-12)
    }

    #[test]
    fn the_three_forms() {
        let r = parse("10.8..13.2", henry).unwrap();
        assert!(close(r.min, 10.8) && close(r.max, 13.2) && r.form == Form::Bounds);
        let r = parse("45m±10%", henry).unwrap();
        assert!(close(r.min, 0.0405) && close(r.max, 0.0495) && r.form == Form::Relative);
        let r = parse("45mH+-10%", henry).unwrap();
        assert!(close(r.min, 0.0405) && close(r.max, 0.0495));
        let r = parse("45m±4.5m", henry).unwrap();
        assert!(close(r.min, 0.0405) && close(r.max, 0.0495) && r.form == Form::Absolute);
        let r = parse("-20..85", |s| {
            si_parse(s, Unit::Celsius).map_err(|e| e.to_string())
        })
        .unwrap();
        assert!(close(r.min, -20.0) && close(r.max, 85.0));
        // A negative nominal keeps min below max.
        let r = parse("-10±10%", henry).unwrap();
        assert!(close(r.min, -11.0) && close(r.max, -9.0));
        // A zero-width range is a range.
        let r = parse("5..5", henry).unwrap();
        assert!(close(r.min, 5.0) && close(r.max, 5.0));
    }

    #[test]
    fn bad_ranges_say_what_is_wrong() {
        let msg = |s: &str| parse(s, henry).unwrap_err().0;
        assert!(msg("..").contains("both ends"));
        assert!(msg("10..").contains("both ends"));
        assert!(msg("..13").contains("both ends"));
        assert!(msg("13.2..10.8").contains("empty range"));
        assert!(msg("45m±-10%").contains("negative tolerance"));
        assert!(msg("45m+--10%").contains("negative tolerance"));
        assert!(msg("45m±-4m").contains("negative tolerance"));
        assert!(msg("45m±").contains("needs a nominal"));
        assert!(msg("±10%").contains("needs a nominal"));
        assert!(msg("45m±x%").contains("not a percentage"));
        assert!(msg("45x..50m").contains("bad lower end"));
        assert!(msg("45m..50x").contains("bad upper end"));
        assert!(msg("45x±10%").contains("bad nominal"));
        assert!(msg("1e308±1e308").contains("not finite"));
        for s in ["..", "13.2..10.8", "45m±-10%"] {
            assert!(
                msg(s).starts_with(&format!("'{s}'")),
                "names the text typed"
            );
        }
    }

    proptest::proptest! {
        #[test]
        fn any_text_is_a_range_or_an_error(text in "\\PC{0,24}") {
            let _ = parse(&text, henry);
        }

        #[test]
        fn typed_ends_come_back(a in -1e6f64..1e6, b in -1e6f64..1e6) {
            let (lo, hi) = if a <= b { (a, b) } else { (b, a) };
            let r = parse(&format!("{lo}..{hi}"), henry).unwrap();
            proptest::prop_assert_eq!((r.min, r.max), (lo, hi));
            if lo < hi {
                let e = parse(&format!("{hi}..{lo}"), henry).unwrap_err();
                proptest::prop_assert!(e.0.contains("empty range"));
            }
        }
    }

    #[test]
    fn single_values_are_not_ranges() {
        for s in ["12", "45m", "-20", "1e-3", "4.7uF", "1.5"] {
            assert!(!is_range(s), "{s}");
        }
        for s in ["1..2", "45m±10%", "45m+-10%"] {
            assert!(is_range(s), "{s}");
        }
    }
}
