//! Off-timers: after the switch opens, they report tick by tick whether the coil current has
//! fallen below a threshold (relay released, safe to re-energize or to reverse an H-bridge).
//! Two modes share one state, [`OffTimerState`]: [`TrackingOffTimerConfig`] follows the decay
//! with the estimator's exact off-state update; [`PlannedOffTimerConfig`] counts down a tick
//! count planned from the closed forms. Each is documented on its type.

mod planned;
mod state;
mod tracking;

#[cfg(test)]
mod tests;

pub use planned::{PLANNED_TABLE_LEN, PlannedOffTimerConfig, PlannedOffTimerRaw};
pub use state::{OffStatus, OffTimerState};
pub use tracking::{TrackingOffTimerConfig, TrackingOffTimerRaw};
// The clamp's off path (extra resistance, voltage, supply coupling), shared with the drivers.
pub(crate) use tracking::off_path_of;

/// Largest threshold or breakpoint current, µA (the estimator's range).
const CURRENT_LIMIT_UA: i32 = super::estimator::CURRENT_LIMIT_UA;
/// Microamps per ampere (plan side).
const UA_PER_A: f32 = 1.0e6;
