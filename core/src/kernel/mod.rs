//! Integer runtime kernels.
//!
//! Rules for every kernel here: no float operation, no division, no panic, no allocation in
//! the per-tick functions; saturating arithmetic on physical quantities; configuration through
//! `&self`, per-channel state through `&mut`; coefficients computed by an f32 plan-side
//! constructor (at firmware init on a chip with an FPU, or emitted as constants by the host).
//!
//! Units: currents in microamps (`_ua`), voltages in millivolts (`_mv`), ADC readings in counts.
//! Coefficient formats are in the field names (`_q31`: signed, 31 fractional bits;
//! `_q16`: 16 fractional bits).

mod estimator;
mod monitor;
mod offtimer;
pub mod q;

pub use estimator::{EstimatorConfig, EstimatorState, OffPath};
pub use monitor::{Fault, MonitorConfig, MonitorParams, MonitorState, SenseScale};
pub use offtimer::{OffStatus, OffTimerState, PLANNED_POINTS, PlannedOffTimer, TrackingOffTimer};
