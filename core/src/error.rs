//! The one error type of the plan routines.
//!
//! Every plan constructor and routine validates its inputs and returns [`Error`] naming the
//! parameter and the problem. The runtime kernels never return errors: they saturate and fail
//! safe instead (see [`crate::kernel`]).

use core::fmt;

use crate::message::{Num, unit_of};

/// What was wrong with a plan input, and which input it was.
///
/// `param` is the parameter's name as written in this crate's API (for example
/// `"inductance_h"`), so a message can be traced to the argument that caused it.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum Error {
    /// The value is NaN or infinite.
    NotFinite {
        /// Parameter name.
        param: &'static str,
    },
    /// The value must be greater than zero.
    NotPositive {
        /// Parameter name.
        param: &'static str,
    },
    /// The value must be zero or greater.
    Negative {
        /// Parameter name.
        param: &'static str,
    },
    /// The value lies outside the allowed closed range `min..=max`.
    OutOfRange {
        /// Parameter name.
        param: &'static str,
        /// The offending value.
        value: f32,
        /// Smallest allowed value.
        min: f32,
        /// Largest allowed value.
        max: f32,
    },
    /// The requested target cannot be reached; `limit` is the nearest reachable value
    /// (for a current target, the steady current the coil settles at).
    Unreachable {
        /// Parameter name of the target.
        param: &'static str,
        /// The requested target.
        target: f32,
        /// The reachable limit in the same unit as the target.
        limit: f32,
    },
}

impl Error {
    /// The name of the parameter the error is about.
    #[must_use]
    pub const fn param(&self) -> &'static str {
        match self {
            Error::NotFinite { param }
            | Error::NotPositive { param }
            | Error::Negative { param }
            | Error::OutOfRange { param, .. }
            | Error::Unreachable { param, .. } => param,
        }
    }
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match *self {
            Error::NotFinite { param } => write!(f, "{param}: must be a finite number"),
            Error::NotPositive { param } => write!(f, "{param}: must be greater than zero"),
            Error::Negative { param } => write!(f, "{param}: must not be negative"),
            Error::OutOfRange {
                param,
                value,
                min,
                max,
            } => {
                let unit = unit_of(param);
                let num = |value| Num { value, unit };
                write!(f, "{param}: {} is out of range, ", num(value))?;
                match (min.is_finite(), max.is_finite()) {
                    (true, true) => write!(f, "allowed {} ..= {}", num(min), num(max)),
                    (true, false) => write!(f, "allowed from {}", num(min)),
                    (false, true) => write!(f, "allowed up to {}", num(max)),
                    (false, false) => f.write_str("no value is allowed"),
                }
            }
            Error::Unreachable {
                param,
                target,
                limit,
            } => {
                let unit = unit_of(param);
                write!(
                    f,
                    "{param}: target {} cannot be reached, the reachable limit is {}",
                    Num {
                        value: target,
                        unit
                    },
                    Num { value: limit, unit }
                )
            }
        }
    }
}

impl core::error::Error for Error {}

/// Checks that `value` is finite.
pub(crate) fn finite(param: &'static str, value: f32) -> Result<f32, Error> {
    if value.is_finite() {
        Ok(value)
    } else {
        Err(Error::NotFinite { param })
    }
}

/// Checks that `value` is finite and greater than zero.
pub(crate) fn positive(param: &'static str, value: f32) -> Result<f32, Error> {
    let v = finite(param, value)?;
    if v > 0.0 {
        Ok(v)
    } else {
        Err(Error::NotPositive { param })
    }
}

/// Checks that `value` is finite and zero or greater.
pub(crate) fn non_negative(param: &'static str, value: f32) -> Result<f32, Error> {
    let v = finite(param, value)?;
    if v >= 0.0 {
        Ok(v)
    } else {
        Err(Error::Negative { param })
    }
}

/// Checks that `value` is finite and within `min..=max`.
pub(crate) fn in_range(param: &'static str, value: f32, min: f32, max: f32) -> Result<f32, Error> {
    let v = finite(param, value)?;
    if v >= min && v <= max {
        Ok(v)
    } else {
        Err(Error::OutOfRange {
            param,
            value: v,
            min,
            max,
        })
    }
}

/// Checks that a computed result is finite; a non-finite result means the inputs together
/// exceed what f32 can represent, which is reported against `param`.
pub(crate) fn finite_result(param: &'static str, value: f32) -> Result<f32, Error> {
    finite(param, value)
}

#[cfg(test)]
mod tests {
    use super::*;
    extern crate std;
    use std::string::ToString;

    #[test]
    fn messages_name_parameter_and_problem() {
        let e = in_range("duty", 1.5, 0.0, 1.0).unwrap_err();
        assert_eq!(e.param(), "duty");
        assert_eq!(e.to_string(), "duty: 1.5 is out of range, allowed 0 ..= 1");
        let e = in_range("current_a", f32::MAX, 0.0, 1.0e5).unwrap_err();
        assert_eq!(
            e.to_string(),
            "current_a: 3.4028e38 A is out of range, allowed 0 A ..= 100000 A"
        );
        let e = Error::OutOfRange {
            param: "x",
            value: 2.0,
            min: f32::NEG_INFINITY,
            max: 1.0,
        };
        assert_eq!(e.to_string(), "x: 2 is out of range, allowed up to 1");
        assert_eq!(
            positive("inductance_h", 0.0).unwrap_err().to_string(),
            "inductance_h: must be greater than zero"
        );
        assert_eq!(
            positive("inductance_h", f32::NAN).unwrap_err(),
            Error::NotFinite {
                param: "inductance_h"
            }
        );
        assert_eq!(
            non_negative("diode_drop_v", -0.1).unwrap_err(),
            Error::Negative {
                param: "diode_drop_v"
            }
        );
        assert!(non_negative("diode_drop_v", 0.0).is_ok());
    }
}
