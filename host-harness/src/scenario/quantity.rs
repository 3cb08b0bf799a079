//! Physical values in scenario files: a TOML string with an SI prefix and an optional unit
//! symbol (`"120mH"`, `"4.7u"`, `"-40"`), or a plain TOML number in the base unit.
//!
//! Each wrapper carries its unit and its sign constraint in the type, so a wrong value is
//! rejected while the TOML deserializer still knows where it is: the error then points at the
//! value itself (file, line, column) rather than at the table around it.

use std::fmt;
use std::marker::PhantomData;

use serde::de::{self, Deserializer, Visitor};

use crate::si::{self, Unit};

/// A unit marker for the quantity wrappers.
pub trait UnitTag {
    /// The unit read by [`si::parse`].
    const UNIT: Unit;
    /// Symbol used in messages.
    const SYMBOL: &'static str;
}

macro_rules! units {
    ($($name:ident => $unit:expr, $sym:literal;)*) => {
        $(
            #[doc = concat!("Unit marker: ", $sym, ".")]
            #[derive(Debug, Clone, Copy, PartialEq, Eq)]
            pub struct $name;
            impl UnitTag for $name {
                const UNIT: Unit = $unit;
                const SYMBOL: &'static str = $sym;
            }
        )*
    };
}

units! {
    Henry => Unit::Henry, "H";
    Ohm => Unit::Ohm, "Ω";
    Volt => Unit::Volt, "V";
    Ampere => Unit::Ampere, "A";
    Second => Unit::Second, "s";
    Hertz => Unit::Hertz, "Hz";
    Farad => Unit::Farad, "F";
    Joule => Unit::Joule, "J";
    Celsius => Unit::Celsius, "°C";
    NewtonMetre => Unit::NewtonMetre, "N·m";
    NewtonMetrePerAmpere => Unit::NewtonMetrePerAmpere, "N·m/A";
    KilogramSquareMetre => Unit::KilogramSquareMetre, "kg·m²";
    NewtonMetreSecondPerRadian => Unit::NewtonMetreSecondPerRadian, "N·m·s/rad";
    Plain => Unit::None, "";
    Metre => Unit::Metre, "m";
    Newton => Unit::Newton, "N";
    NewtonPerMetre => Unit::NewtonPerMetre, "N/m";
    NewtonSecondPerMetre => Unit::NewtonSecondPerMetre, "N·s/m";
    Kilogram => Unit::Kilogram, "kg";
}

/// Largest magnitude a file value may have: the plan routines compute in `f32`, whose largest
/// finite value is 3.4028235e38; a round limit below it.
pub const F32_LIMIT: f64 = 1e38;
const F32_LIMIT_TEXT: &str = "1e38 ";
/// Smallest non-zero magnitude: the smallest normal `f32` is 1.1754944e-38; a round limit above.
pub const F32_SMALLEST: f64 = 1e-37;
const F32_SMALLEST_TEXT: &str = "1e-37 ";

/// Which values a wrapper admits.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Sign {
    Any,
    NonNegative,
    Positive,
}

fn read<'de, D: Deserializer<'de>, U: UnitTag>(d: D, sign: Sign) -> Result<f64, D::Error> {
    struct V<U>(Sign, PhantomData<U>);
    impl<U: UnitTag> V<U> {
        fn check<E: de::Error>(&self, v: f64, text: &str) -> Result<f64, E> {
            if !v.is_finite() {
                return Err(E::custom(format!("'{text}' is not finite")));
            }
            // The plan routines compute in f32: a value beyond its range would become
            // infinite or zero there and give wrong physics without an error.
            if v.abs() > F32_LIMIT {
                return Err(E::custom(format!(
                    "'{text}' is too large: the limit is {F32_LIMIT_TEXT}{} in magnitude",
                    U::SYMBOL
                )));
            }
            if v != 0.0 && v.abs() < F32_SMALLEST {
                return Err(E::custom(format!(
                    "'{text}' is too small: a value other than 0 must be at least \
                     {F32_SMALLEST_TEXT}{} in magnitude",
                    U::SYMBOL
                )));
            }
            match self.0 {
                Sign::Positive if v <= 0.0 => Err(E::custom(format!("'{text}' must be positive"))),
                Sign::NonNegative if v < 0.0 => {
                    Err(E::custom(format!("'{text}' must not be negative")))
                }
                _ => Ok(v),
            }
        }
    }
    impl<U: UnitTag> Visitor<'_> for V<U> {
        type Value = f64;
        fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
            if U::SYMBOL.is_empty() {
                f.write_str("a number")
            } else {
                write!(
                    f,
                    "a value in {} (a number, or a string such as \"4.7m{}\")",
                    U::SYMBOL,
                    U::SYMBOL
                )
            }
        }
        fn visit_str<E: de::Error>(self, s: &str) -> Result<f64, E> {
            let v = si::parse(s, U::UNIT).map_err(|e| {
                if U::SYMBOL.is_empty() {
                    E::custom(format!("{e} (expected a plain number)"))
                } else {
                    E::custom(format!("{e} (expected a value in {})", U::SYMBOL))
                }
            })?;
            self.check(v, s)
        }
        fn visit_f64<E: de::Error>(self, v: f64) -> Result<f64, E> {
            // As the user would have typed it: no 300-digit decimals.
            let text = if v != 0.0 && !(1e-3..1e6).contains(&v.abs()) {
                format!("{v:e}")
            } else {
                v.to_string()
            };
            self.check(v, &text)
        }
        fn visit_i64<E: de::Error>(self, v: i64) -> Result<f64, E> {
            self.check(v as f64, &v.to_string())
        }
        fn visit_u64<E: de::Error>(self, v: u64) -> Result<f64, E> {
            self.check(v as f64, &v.to_string())
        }
    }
    d.deserialize_any(V::<U>(sign, PhantomData))
}

macro_rules! wrapper {
    ($(#[$m:meta])* $name:ident, $sign:expr) => {
        $(#[$m])*
        #[derive(Clone, Copy, PartialEq)]
        pub struct $name<U>(pub f64, PhantomData<U>);

        impl<U> $name<U> {
            /// Wraps a value (not checked: for values built in code).
            #[must_use]
            pub const fn new(v: f64) -> Self {
                Self(v, PhantomData)
            }
            /// The value in the base unit.
            #[must_use]
            pub const fn get(self) -> f64 {
                self.0
            }
        }

        impl<U> fmt::Debug for $name<U> {
            fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
                self.0.fmt(f)
            }
        }

        impl<'de, U: UnitTag> serde::Deserialize<'de> for $name<U> {
            fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
                read::<D, U>(d, $sign).map(Self::new)
            }
        }

        impl<U> serde::Serialize for $name<U> {
            fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
                s.serialize_f64(self.0)
            }
        }
    };
}

wrapper!(
    /// Any finite value.
    Q,
    Sign::Any
);
wrapper!(
    /// A finite value ≥ 0.
    NonNeg,
    Sign::NonNegative
);
wrapper!(
    /// A finite value > 0.
    Pos,
    Sign::Positive
);

/// A count that the kernels hold in 16 bits (`persistence`, `stuck_samples`): a TOML integer
/// from 0 to 65 535. Anything else is an error at the value, never clamped.
///
/// # Errors
///
/// Not an integer, or outside `0 ..= 65535`.
pub fn count_u16<'de, D: Deserializer<'de>>(d: D) -> Result<u16, D::Error> {
    struct V;
    impl Visitor<'_> for V {
        type Value = u16;
        fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
            f.write_str("a whole number from 0 to 65535")
        }
        fn visit_i64<E: de::Error>(self, v: i64) -> Result<u16, E> {
            u16::try_from(v).map_err(|_| {
                E::custom(format!(
                    "{v} is out of range: a count from 0 to 65535 (the kernel holds it in 16 bits)"
                ))
            })
        }
        fn visit_u64<E: de::Error>(self, v: u64) -> Result<u16, E> {
            self.visit_i64(i64::try_from(v).unwrap_or(i64::MAX))
        }
    }
    d.deserialize_any(V)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[derive(Debug, serde::Deserialize)]
    struct T {
        l: Pos<Henry>,
        t: Q<Celsius>,
        r: NonNeg<Ohm>,
    }

    #[test]
    fn strings_and_numbers() {
        let t: T = toml::from_str("l = \"120mH\"\nt = -40\nr = 0.5").unwrap();
        assert!((t.l.get() - 0.12).abs() < 1e-15);
        assert!((t.t.get() + 40.0).abs() < 1e-15);
        assert!((t.r.get() - 0.5).abs() < 1e-15);
    }

    #[derive(Debug, serde::Deserialize)]
    struct C {
        #[serde(deserialize_with = "count_u16")]
        n: u16,
    }

    #[test]
    fn counts_are_not_clamped() {
        assert_eq!(toml::from_str::<C>("n = 65535").unwrap().n, 65535);
        let e = toml::from_str::<C>("n = 70000").unwrap_err();
        assert!(e.message().contains("70000 is out of range"), "{e}");
        let e = toml::from_str::<C>("n = -1").unwrap_err();
        assert!(e.message().contains("-1 is out of range"), "{e}");
        let e = toml::from_str::<C>("n = 1.5").unwrap_err();
        assert!(e.message().contains("a whole number"), "{e}");
    }

    #[test]
    fn rejects_values_beyond_the_f32_core() {
        let e = toml::from_str::<T>("l = 2e307\nt = 0\nr = 0").unwrap_err();
        assert!(e.message().contains("'2e307' is too large"), "{e}");
        assert!(e.message().contains("1e38 H"), "{e}");
        let e = toml::from_str::<T>("l = 1\nt = 0\nr = \"1e-40\"").unwrap_err();
        assert!(e.message().contains("too small"), "{e}");
        let e = toml::from_str::<T>("l = 1\nt = -1e39\nr = 0").unwrap_err();
        assert!(e.message().contains("too large"), "{e}");
        let t: T = toml::from_str("l = 1e37\nt = 0\nr = 0").unwrap();
        assert_eq!(t.l.get(), 1e37);
    }

    #[test]
    fn rejects_sign_and_garbage() {
        let e = toml::from_str::<T>("l = \"-1mH\"\nt = 0\nr = 0").unwrap_err();
        assert!(e.message().contains("must be positive"), "{e}");
        let e = toml::from_str::<T>("l = \"1xH\"\nt = 0\nr = 0").unwrap_err();
        assert!(e.message().contains("expected a value in H"), "{e}");
        let e = toml::from_str::<T>("l = 1\nt = 0\nr = -0.1").unwrap_err();
        assert!(e.message().contains("must not be negative"), "{e}");
        let e = toml::from_str::<T>("l = true\nt = 0\nr = 0").unwrap_err();
        assert!(e.message().contains("a value in H"), "{e}");
    }
}
