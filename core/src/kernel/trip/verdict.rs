//! What the trip detector reports: the verdict of a sample and the trip event.

#[cfg(doc)]
use super::state::TripState;

/// Why the detector tripped.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub enum Cause {
    /// `N` of the last `M` samples at or above the threshold (or at full scale).
    Instantaneous,
    /// The inverse-time accumulator reached one.
    InverseTime,
    /// The thermal state reached one.
    Thermal,
    /// The reading stayed exactly constant with the switch on (stuck sensor).
    SensorFault,
}

/// One trip, as the detector reports and logs it (8 bytes).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct TripEvent {
    /// Sample count since the state was created (wraps), at the tripping sample.
    pub tick: u32,
    /// The reading that caused the trip, ADC counts.
    pub reading_counts: u16,
    /// Retries used before this trip.
    pub retry: u8,
    /// Why it tripped.
    pub cause: Cause,
}

/// What the firmware may do after a sample.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub enum Verdict {
    /// No trip: the switch may be on.
    Allow,
    /// Tripped at this sample: switch off now.
    Trip(TripEvent),
    /// Off, waiting for the timed retry.
    Waiting,
    /// Off until [`TripState::reset`].
    Latched,
}

impl Verdict {
    /// `true` only for [`Verdict::Allow`].
    #[must_use]
    pub const fn switch_allowed(&self) -> bool {
        matches!(self, Verdict::Allow)
    }
}
