//! What the coil driver reports: its phase and, when it has latched off, why.

use crate::kernel::{Cause, Fault};

/// The coil driver's phase after a tick.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub enum CoilPhase {
    /// Off, the coil released: a demand energizes it.
    Idle,
    /// Full drive until the pull-in current and the minimum pull-in time.
    PullIn,
    /// Held by the PWM duty (fixed or current-regulated).
    Hold,
    /// Off, the current still decaying (or a trip's retry delay running): a demand waits.
    Releasing,
    /// Latched off by a fault until [`CoilDriver::clear_fault`](super::CoilDriver::clear_fault).
    Faulted,
}

/// Why the coil driver latched off.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub enum CoilFault {
    /// The trip detector latched: instantaneous overcurrent, inverse time, thermal, or a stuck
    /// current reading with the switch on. With retries planned, the detector first retries
    /// (the driver switches off and waits, phase [`CoilPhase::Releasing`]) and latches after
    /// the last retry.
    Trip(Cause),
    /// The plausibility monitor raised a fault: open coil, low resistance (shorted turns),
    /// stuck or out-of-range current sense.
    Plausibility(Fault),
    /// The switch output reported an error (the driver tried to switch off).
    Output,
    /// The armature movement detector saw no seating by its deadline
    /// ([`Motion::NoMotion`](crate::kernel::Motion::NoMotion)): a stuck (or already closed, or
    /// too slow) armature. Only with the detector configured.
    Stuck,
}
