//! Values with SI prefixes and optional unit symbols, as typed on the command line and in
//! scenario files: `120m`, `120mH`, `4.7u`, `4.7µF`, `2k`, `2kohm`, `1e-3`, `-40`.

use std::fmt;

/// Why a value could not be read.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct SiError {
    /// The text that was given.
    pub text: String,
    /// What was wrong with it.
    pub problem: String,
}

impl fmt::Display for SiError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "'{}' {}", self.text, self.problem)
    }
}

impl std::error::Error for SiError {}

/// Unit symbols accepted after the prefix, per quantity.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Unit {
    /// Henry: `H`.
    Henry,
    /// Ohm: `ohm`, `Ohm`, `Ω`, `R`.
    Ohm,
    /// Volt: `V`.
    Volt,
    /// Ampere: `A`.
    Ampere,
    /// Second: `s`.
    Second,
    /// Hertz: `Hz`.
    Hertz,
    /// Farad: `F`.
    Farad,
    /// Joule: `J`.
    Joule,
    /// Watt: `W`.
    Watt,
    /// Degree Celsius: `C`, `°C` (no prefixes).
    Celsius,
    /// Newton metre (torque): `Nm`, `N·m`.
    NewtonMetre,
    /// Newton metre per ampere (torque constant, equal to V·s/rad): `Nm/A`, `N·m/A`, `Vs/rad`,
    /// `V·s/rad`.
    NewtonMetrePerAmpere,
    /// Kilogram square metre (inertia): `kgm2`, `kgm²`, `kg·m²`.
    KilogramSquareMetre,
    /// Newton metre second per radian (viscous friction): `Nms/rad`, `N·m·s/rad`, `Nms`.
    NewtonMetreSecondPerRadian,
    /// Metre: `m` (so `1.2mm` is 1.2 mm and `1.2m` is 1.2 m).
    Metre,
    /// Newton: `N`.
    Newton,
    /// Newton per metre (spring rate): `N/m`.
    NewtonPerMetre,
    /// Newton second per metre (viscous damping): `N·s/m`, `Ns/m`.
    NewtonSecondPerMetre,
    /// Kilogram: `kg`, or grams with `g` (`8g`, `500mg`).
    Kilogram,
    /// Metre per second: `m/s`.
    MetrePerSecond,
    /// A plain number (ratios, multipliers, counts).
    None,
}

impl Unit {
    fn symbols(self) -> &'static [&'static str] {
        match self {
            Unit::Henry => &["H"],
            Unit::Ohm => &["ohm", "Ohm", "ohms", "Ω", "R"],
            Unit::Volt => &["V"],
            Unit::Ampere => &["A"],
            Unit::Second => &["s"],
            Unit::Hertz => &["Hz"],
            Unit::Farad => &["F"],
            Unit::Joule => &["J"],
            Unit::Watt => &["W"],
            Unit::Celsius => &["°C", "C"],
            Unit::NewtonMetre => &["N·m", "Nm"],
            Unit::NewtonMetrePerAmpere => &["N·m/A", "Nm/A", "V·s/rad", "Vs/rad"],
            Unit::KilogramSquareMetre => &["kg·m²", "kgm²", "kgm2"],
            Unit::NewtonMetreSecondPerRadian => &["N·m·s/rad", "Nms/rad", "Nms"],
            Unit::Metre => &["m"],
            Unit::Newton => &["N"],
            Unit::NewtonPerMetre => &["N/m"],
            Unit::NewtonSecondPerMetre => &["N·s/m", "Ns/m"],
            Unit::Kilogram => &["kg"],
            Unit::MetrePerSecond => &["m/s"],
            Unit::None => &[],
        }
    }
}

fn prefix_factor(p: &str) -> Option<f64> {
    Some(match p {
        "" => 1.0,
        "p" => 1e-12,
        "n" => 1e-9,
        "u" | "µ" | "μ" => 1e-6,
        "m" => 1e-3,
        "k" => 1e3,
        "M" => 1e6,
        "G" => 1e9,
        _ => return None,
    })
}

/// Reads `text` as a value in `unit`: a number, then an optional SI prefix (p n u µ m k M G),
/// then an optional unit symbol. Temperatures take no prefix.
///
/// # Errors
///
/// Text that is not of that form, or whose value is not finite.
pub fn parse(text: &str, unit: Unit) -> Result<f64, SiError> {
    let err = |problem: &str| SiError {
        text: text.to_string(),
        problem: problem.to_string(),
    };
    let t = text.trim();
    let mut body = t;
    // Grams: the base unit of mass carries a prefix of its own.
    let mut scale = 1.0;
    if unit == Unit::Kilogram
        && !t.ends_with("kg")
        && let Some(stripped) = t.strip_suffix('g')
        && !stripped.is_empty()
    {
        body = stripped;
        scale = 1e-3;
    }
    for sym in unit.symbols() {
        if let Some(stripped) = t.strip_suffix(sym)
            && !stripped.is_empty()
        {
            body = stripped;
            break;
        }
    }
    // Split the number from the prefix: the longest leading part that parses as a number.
    let split = (1..=body.len())
        .rev()
        .filter(|&k| body.is_char_boundary(k))
        .find(|&k| {
            let head = &body[..k];
            // Reject forms Rust accepts but people do not type as values.
            !head.eq_ignore_ascii_case("inf")
                && !head.eq_ignore_ascii_case("nan")
                && !head.eq_ignore_ascii_case("infinity")
                && head.parse::<f64>().is_ok()
        })
        .ok_or_else(|| err("is not a number"))?;
    let number: f64 = body[..split].parse().map_err(|_| err("is not a number"))?;
    let prefix = &body[split..];
    if unit == Unit::Celsius && !prefix.is_empty() {
        return Err(err("is not a temperature in °C"));
    }
    let factor = prefix_factor(prefix).ok_or_else(|| err("has an unknown prefix or unit"))?;
    let value = number * factor * scale;
    if value.is_finite() {
        Ok(value)
    } else {
        Err(err("is not finite"))
    }
}

/// `value` in engineering notation with an SI prefix and four significant digits, followed by
/// `unit`: `0.00375, "s"` gives `3.750 ms`.
#[must_use]
pub fn format(value: f64, unit: &str) -> String {
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
    use super::*;

    #[test]
    fn prefixes_and_units() {
        let close = |a: f64, b: f64| (a - b).abs() <= 1e-12 * b.abs().max(1.0);
        assert!(close(parse("120m", Unit::Henry).unwrap(), 0.12));
        assert!(close(parse("120mH", Unit::Henry).unwrap(), 0.12));
        assert!(close(parse("4.7u", Unit::Farad).unwrap(), 4.7e-6));
        assert!(close(parse("4.7µF", Unit::Farad).unwrap(), 4.7e-6));
        assert!(close(parse("2k", Unit::Ohm).unwrap(), 2000.0));
        assert!(close(parse("2kohm", Unit::Ohm).unwrap(), 2000.0));
        assert!(close(parse("10ms", Unit::Second).unwrap(), 0.01));
        assert!(close(parse("1MHz", Unit::Hertz).unwrap(), 1e6));
        assert!(close(parse("1e-3", Unit::Second).unwrap(), 1e-3));
        assert!(close(parse("1.2mm", Unit::Metre).unwrap(), 1.2e-3));
        assert!(close(parse("8g", Unit::Kilogram).unwrap(), 8e-3));
        assert!(close(parse("0.008kg", Unit::Kilogram).unwrap(), 8e-3));
        assert!(close(
            parse("1.5kN/m", Unit::NewtonPerMetre).unwrap(),
            1500.0
        ));
        assert!(close(
            parse("2N·s/m", Unit::NewtonSecondPerMetre).unwrap(),
            2.0
        ));
        assert!(close(parse("5N", Unit::Newton).unwrap(), 5.0));
        assert!(close(parse("-40", Unit::Celsius).unwrap(), -40.0));
        assert!(close(parse("85C", Unit::Celsius).unwrap(), 85.0));
        assert!(close(parse("24", Unit::Volt).unwrap(), 24.0));
        assert!(close(parse("24V", Unit::Volt).unwrap(), 24.0));
        assert!(close(parse("20mNm", Unit::NewtonMetre).unwrap(), 0.02));
        assert!(close(
            parse("30mNm/A", Unit::NewtonMetrePerAmpere).unwrap(),
            0.03
        ));
        assert!(close(
            parse("20ukgm2", Unit::KilogramSquareMetre).unwrap(),
            2e-5
        ));
        assert!(close(
            parse("1uNms/rad", Unit::NewtonMetreSecondPerRadian).unwrap(),
            1e-6
        ));
    }

    #[test]
    fn rejects_garbage() {
        for bad in ["", "abc", "12x", "nan", "inf", "1e999", "12 m H", "mH"] {
            assert!(parse(bad, Unit::Henry).is_err(), "{bad}");
        }
        assert!(parse("1k", Unit::Celsius).is_err());
    }
}
