//! The per-channel state shared by both off-timers, and what they report.

#[cfg(doc)]
use super::{PlannedOffTimerConfig, TrackingOffTimerConfig};
use crate::kernel::estimator::EstimatorState;

/// What the off-timer says this tick.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub enum OffStatus {
    /// The current may still be above the threshold (or the timer is unsure).
    NotYet,
    /// The current is below the threshold.
    Released,
}

/// Per-channel off-timer state (both modes): 20 bytes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct OffTimerState {
    pub(super) estimate: EstimatorState,
    /// Tracking: the estimate at or below which the timer releases, µA (threshold less the
    /// margin).
    pub(super) release_at_ua: i32,
    pub(super) remaining_ticks: u32,
    pub(super) armed: bool,
}

/// `remaining_ticks` value that never counts down: the current was above the planned range.
pub(super) const NEVER: u32 = u32::MAX;

impl OffTimerState {
    /// An idle timer (reports [`OffStatus::NotYet`] until started).
    #[must_use]
    pub const fn new() -> Self {
        Self {
            estimate: EstimatorState::new(),
            release_at_ua: 0,
            remaining_ticks: 0,
            armed: false,
        }
    }

    /// The tracking estimate of the current, µA (tracking mode).
    #[must_use]
    pub const fn estimate_ua(&self) -> i32 {
        self.estimate.current_ua()
    }

    /// Ticks left before release (planned mode); `u32::MAX` for never.
    #[must_use]
    pub const fn remaining_ticks(&self) -> u32 {
        self.remaining_ticks
    }

    /// Stops the timer; it reports [`OffStatus::NotYet`] until started again.
    pub fn reset(&mut self) {
        *self = Self::new();
    }
}
