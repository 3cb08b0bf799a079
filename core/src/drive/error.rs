//! The drivers' error type: an output (PWM channel or pin) error, or a PWM whose resolution
//! does not fit the plan.

use core::fmt;
use embedded_hal::pwm;

/// What went wrong in a driver.
///
/// `E` is the error type of the switch output: a PWM channel's error, or [`PinError`] when a
/// plain pin drives the switch through [`OnOffSwitch`]. Every variant's [`kind`] gives one
/// [`DriveErrorKind`], whatever the output's own error type.
///
/// After an [`DriveError::Output`] in a tick the driver has already latched off: it tried to
/// switch the output off and keeps retrying that every tick until it succeeds.
///
/// [`kind`]: DriveError::kind
/// [`PinError`]: super::PinError
/// [`OnOffSwitch`]: super::OnOffSwitch
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[non_exhaustive]
pub enum DriveError<E> {
    /// The switch output reported an error.
    Output(E),
    /// At construction: the PWM's `max_duty_cycle` cannot carry the plan's duties (zero, a
    /// hold duty that would be off by more than 1 % of full scale, or a boost PWM whose full
    /// scale differs from the duty limiter's).
    Resolution {
        /// What the PWM reported.
        max_duty_cycle: u16,
    },
}

/// The kind of a [`DriveError`], independent of the output's error type.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[non_exhaustive]
pub enum DriveErrorKind {
    /// The switch output failed, with the output's own kind (a pin behind
    /// [`OnOffSwitch`](super::OnOffSwitch) reports [`pwm::ErrorKind::Other`]; its pin kind is
    /// on [`PinError::pin_kind`](super::PinError::pin_kind)).
    Output(pwm::ErrorKind),
    /// The PWM's resolution does not fit the plan.
    Resolution,
}

impl<E: pwm::Error> DriveError<E> {
    /// The kind of the error.
    #[must_use]
    pub fn kind(&self) -> DriveErrorKind {
        match self {
            DriveError::Output(e) => DriveErrorKind::Output(e.kind()),
            DriveError::Resolution { .. } => DriveErrorKind::Resolution,
        }
    }
}

impl<E: fmt::Debug> fmt::Display for DriveError<E> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            DriveError::Output(e) => {
                write!(
                    f,
                    "switch output failed ({e:?}); the driver has latched off"
                )
            }
            DriveError::Resolution { max_duty_cycle } => write!(
                f,
                "PWM max_duty_cycle {max_duty_cycle} cannot carry the planned duties"
            ),
        }
    }
}

impl<E: fmt::Debug> core::error::Error for DriveError<E> {}

// Written by hand: the output's error type need not implement `defmt::Format`, and
// embedded-hal's kinds implement it only for an older defmt major.
#[cfg(feature = "defmt")]
impl<E> defmt::Format for DriveError<E> {
    fn format(&self, f: defmt::Formatter<'_>) {
        match self {
            DriveError::Output(_) => defmt::write!(f, "DriveError::Output"),
            DriveError::Resolution { max_duty_cycle } => defmt::write!(
                f,
                "DriveError::Resolution {{ max_duty_cycle: {} }}",
                max_duty_cycle
            ),
        }
    }
}

#[cfg(feature = "defmt")]
impl defmt::Format for DriveErrorKind {
    fn format(&self, f: defmt::Formatter<'_>) {
        match self {
            DriveErrorKind::Output(_) => defmt::write!(f, "DriveErrorKind::Output"),
            DriveErrorKind::Resolution => defmt::write!(f, "DriveErrorKind::Resolution"),
        }
    }
}
