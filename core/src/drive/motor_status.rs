//! What the bridge motor driver reports when it has latched off, and the error of its three
//! outputs.

use embedded_hal::{digital, pwm};

use crate::kernel::MotorFault;

/// Why the bridge motor driver latched off.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub enum MotorDriverFault {
    /// The jam detector latched: a locked rotor, an overload, or an open winding.
    Motor(MotorFault),
    /// A current reading outside the sense's valid window (a broken or saturated sense).
    Sense,
    /// An output (the PWM or a leg's direction pin) reported an error.
    Output,
}

/// The error of one of the bridge's outputs: the PWM of the switching leg, or leg A's or leg
/// B's direction pin.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum BridgeError<P, A, B> {
    /// The PWM's error.
    Pwm(P),
    /// Leg A's direction pin's error.
    LegA(A),
    /// Leg B's direction pin's error.
    LegB(B),
}

impl<P: pwm::Error, A: digital::Error, B: digital::Error> pwm::Error for BridgeError<P, A, B> {
    /// The PWM's own kind; [`pwm::ErrorKind::Other`] for a pin.
    fn kind(&self) -> pwm::ErrorKind {
        match self {
            BridgeError::Pwm(e) => e.kind(),
            _ => pwm::ErrorKind::Other,
        }
    }
}
