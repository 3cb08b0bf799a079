//! Numbers in error messages: at most five significant digits, with the unit the parameter's
//! name carries (`current_a` → A), so a message never shows a 39-digit decimal or `inf`.

use core::fmt::{self, Write};

/// The unit symbol of a parameter from its name's suffix (the crate's naming convention:
/// `_a`, `_v`, `_s`, `_h`, `_ohm`…); empty for a dimensionless parameter.
pub(crate) fn unit_of(param: &str) -> &'static str {
    const SUFFIXES: [(&str, &str); 14] = [
        ("_ohm", " Ω"),
        ("_hz", " Hz"),
        ("_per_k", " /K"),
        ("_nm", " N·m"),
        ("_a", " A"),
        ("_v", " V"),
        ("_s", " s"),
        ("_h", " H"),
        ("_f", " F"),
        ("_c", " °C"),
        ("_j", " J"),
        ("_w", " W"),
        ("_m", " m"),
        ("_n", " N"),
    ];
    SUFFIXES
        .iter()
        .find(|(s, _)| param.ends_with(s))
        .map_or("", |(_, u)| u)
}

/// A value with its unit, shown with at most five significant digits: plain decimals from
/// 0.001 to below 1e6, scientific notation (`3.4028e38`) outside; trailing zeros dropped.
pub(crate) struct Num {
    pub value: f32,
    pub unit: &'static str,
}

/// A small stack buffer for one formatted number.
struct Buf {
    bytes: [u8; 64],
    len: usize,
}

impl Write for Buf {
    fn write_str(&mut self, s: &str) -> fmt::Result {
        let end = self.len.checked_add(s.len()).ok_or(fmt::Error)?;
        let dst = self.bytes.get_mut(self.len..end).ok_or(fmt::Error)?;
        dst.copy_from_slice(s.as_bytes());
        self.len = end;
        Ok(())
    }
}

impl Buf {
    fn as_str(&self) -> &str {
        self.bytes
            .get(..self.len)
            .and_then(|b| core::str::from_utf8(b).ok())
            .unwrap_or("")
    }
}

/// `digits` with the trailing zeros of its fraction (and a bare point) removed.
fn trim(digits: &str) -> &str {
    if digits.contains('.') {
        digits.trim_end_matches('0').trim_end_matches('.')
    } else {
        digits
    }
}

impl fmt::Display for Num {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let v = self.value;
        if !v.is_finite() {
            // Not expected in a message; said in words rather than as `inf`.
            return write!(f, "a value beyond the f32 range{}", self.unit);
        }
        let mag = v.abs();
        let mut buf = Buf {
            bytes: [0; 64],
            len: 0,
        };
        if v == 0.0 {
            buf.write_str("0")?;
        } else if (1e-3..999_995.0).contains(&mag) {
            // Decimal exponent of the leading digit, from -3 to 5 (below 999 995, which would
            // round to a seventh digit).
            let mut exp = -3i32;
            let mut p = 1e-2f32;
            while mag >= p && exp < 5 {
                exp += 1;
                p *= 10.0;
            }
            let decimals = usize::try_from(4 - exp).unwrap_or(0);
            write!(buf, "{v:.decimals$}")?;
        } else {
            write!(buf, "{v:.4e}")?;
        }
        let text = buf.as_str();
        match text.split_once('e') {
            Some((mantissa, exp)) => write!(f, "{}e{exp}", trim(mantissa))?,
            None => f.write_str(trim(text))?,
        }
        f.write_str(self.unit)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    extern crate std;
    use std::string::ToString;

    fn show(value: f32, unit: &'static str) -> std::string::String {
        Num { value, unit }.to_string()
    }

    #[test]
    fn five_significant_digits_and_a_unit() {
        assert_eq!(show(1.5, " A"), "1.5 A");
        assert_eq!(show(0.0, ""), "0");
        assert_eq!(show(1.0, ""), "1");
        assert_eq!(show(0.123_456_79, " V"), "0.12346 V");
        assert_eq!(show(12_345.678, " s"), "12346 s");
        assert_eq!(show(999_999.9, ""), "1e6");
        assert_eq!(show(f32::MAX, " A"), "3.4028e38 A");
        assert_eq!(show(-1e-6, " H"), "-1e-6 H");
        assert_eq!(show(0.001, ""), "0.001");
        assert_eq!(show(f32::MIN_POSITIVE, ""), "1.1755e-38");
        assert_eq!(show(f32::INFINITY, " A"), "a value beyond the f32 range A");
        assert_eq!(unit_of("current_a"), " A");
        assert_eq!(unit_of("r20_ohm"), " Ω");
        assert_eq!(unit_of("duty"), "");
        assert_eq!(unit_of("alpha20_per_k"), " /K");
    }
}
