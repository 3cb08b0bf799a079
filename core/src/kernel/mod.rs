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

mod bridge;
mod duty;
mod estimator;
mod jam;
mod monitor;
mod movement;
mod offtimer;
pub mod q;
mod speed;
mod trip;

pub use bridge::{
    BridgeCommand, BridgeGuardConfig, BridgeGuardParams, BridgeGuardRaw, BridgeGuardState,
    BridgeMode,
};
pub use duty::{
    DutyLimiterConfig, DutyLimiterParams, DutyLimiterRaw, DutyLimiterState,
    TABLE_LEN as DUTY_TABLE_LEN,
};
pub use estimator::{CURRENT_LIMIT_UA, EstimatorConfig, EstimatorState, OffPath};
pub use jam::{JamConfig, JamParams, JamRaw, JamState, JamStatus, MotorFault};
pub use monitor::{Fault, MonitorConfig, MonitorParams, MonitorState, SenseScale};
pub use movement::{Motion, MovementConfig, MovementParams, MovementRaw, MovementState};
pub use offtimer::{OffStatus, OffTimerState, PLANNED_POINTS, PlannedOffTimer, TrackingOffTimer};
pub use speed::{
    DUTY_ONE_Q16, SpeedErrorTerms, SpeedEstimatorConfig, SpeedEstimatorRaw, SpeedEstimatorState,
};
pub use trip::{
    Cause, INVERSE_M_MAX, INVERSE_M_MIN, INVERSE_TABLE_ERROR_MAX, InverseTable, TABLE_LEN,
    TABLE_OCTAVES, TABLE_STEPS, THETA_ONE_Q24, TripConfig, TripEvent, TripLog, TripParams,
    TripState, Verdict, theta_q24_from_f32,
};
