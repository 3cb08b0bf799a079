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

mod duty;
mod estimator;
mod monitor;
mod offtimer;
pub mod q;
mod trip;

pub use duty::{
    DUTY_TABLE_LEN, DutyLimiterConfig, DutyLimiterParams, DutyLimiterRaw, DutyLimiterState,
};
pub use estimator::{CURRENT_LIMIT_UA, EstimatorConfig, EstimatorRaw, EstimatorState, OffPath};
pub use monitor::{Fault, MonitorConfig, MonitorParams, MonitorRaw, MonitorState, SenseScale};
// The clamp's off path (extra resistance, voltage, supply coupling), shared with the drivers.
pub(crate) use offtimer::off_path_of;
pub use offtimer::{
    OffStatus, OffTimerState, PLANNED_TABLE_LEN, PlannedOffTimerConfig, PlannedOffTimerRaw,
    TrackingOffTimerConfig, TrackingOffTimerRaw,
};
pub use trip::{
    BLOCK_LOG2_MAX, BLOCK_TAU_FRACTION, Cause, INVERSE_M_MAX, INVERSE_M_MIN,
    INVERSE_TABLE_ERROR_MAX, INVERSE_TABLE_LEN, INVERSE_TABLE_OCTAVES, INVERSE_TABLE_STEPS,
    InverseTable, THETA_ONE_Q24, TripConfig, TripEvent, TripLog, TripParams, TripRaw, TripState,
    Verdict, theta_q24_from_f32,
};
