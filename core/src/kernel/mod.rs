//! Integer runtime kernels: the per-tick computations the firmware runs in its control
//! interrupt, with coefficients from a plan.
//!
//! | Kernel | Configuration | Per-channel state | Per tick |
//! |---|---|---|---|
//! | Coil current estimator | [`EstimatorConfig`] | [`EstimatorState`] (8 B) | [`EstimatorConfig::update`] |
//! | Plausibility monitor | [`MonitorConfig`] | [`MonitorState`] (16 B) | [`MonitorConfig::update`] |
//! | Off-timer, tracking | [`TrackingOffTimerConfig`] | [`OffTimerState`] (20 B) | [`TrackingOffTimerConfig::update`] |
//! | Off-timer, planned | [`PlannedOffTimerConfig`] | [`OffTimerState`] (20 B) | [`PlannedOffTimerConfig::update`] |
//! | Boost duty limiter | [`DutyLimiterConfig`] | [`DutyLimiterState`] (8 B) | [`DutyLimiterConfig::update`] |
//! | Trip detector | [`TripConfig`] | [`TripState`] (32 B) | [`TripConfig::update`] |
//!
//! Each configuration's documentation states the algorithm, the fixed-point formats, the input
//! ranges, the error bounds and the cost on Cortex-M.
//!
//! # One shape for every kernel
//!
//! - `XxxConfig` holds the coefficients and is used through `&self`: one configuration serves
//!   every channel with the same settings and can live in flash.
//! - `XxxState` is one channel's state, used through `&mut`: at most 32 bytes, `const fn new()`
//!   and `reset()`.
//! - `XxxConfig::update(&self, &mut XxxState, inputs…)` is the one per-tick call. Other
//!   operations have descriptive names (`start` of the off-timers at switch-off).
//! - Coefficients come either from the plan-side constructor `XxxConfig::new(…)`, which takes
//!   SI values in `f32`, validates them and returns `Result<_, Error>` naming a bad parameter
//!   (at firmware init on a chip with an FPU), or from constants: `XxxRaw` is a plain struct of
//!   the raw integer values, `const fn XxxConfig::from_raw(raw)` loads it (so the
//!   configuration can be a `const` or `static` in flash), `XxxConfig::raw()` gives it back
//!   exactly, and a `const fn` getter reads every field.
//!
//! ```
//! use lenz::kernel::{EstimatorConfig, EstimatorRaw, EstimatorState, OffPath};
//!
//! // Raw values of the demo valve's estimator (120 mH, 32 Ω, 0.7 V freewheel diode, 10 kHz
//! // tick; invented), as a constant: no float at run time. The step is (1 − e^(−T·R/L))·2³¹
//! // (56 509 423.0 in f64; the f32 plan rounds to one LSB above), the conductance
//! // 1000/32 µA per mV in Q16.
//! const VALVE: EstimatorConfig = EstimatorConfig::from_raw(EstimatorRaw {
//!     on_step_q31: 56_509_424,
//!     on_conductance_q16: 2_048_000,
//!     switch_drop_mv: 0,
//!     off: OffPath {
//!         step_q31: 56_509_424,
//!         conductance_q16: 2_048_000,
//!         clamp_mv: 700,
//!         supply_coupled: false,
//!     },
//! });
//! let coil = lenz::CoilParams::new(0.120, 32.0).with_diode_drop_v(0.7).validate()?;
//! assert_eq!(EstimatorConfig::new(&coil, 20.0, 100e-6)?, VALVE);
//!
//! let mut s = EstimatorState::new();
//! let i_ua = VALVE.update(&mut s, true, 24_000);
//! assert!(i_ua > 0);
//! # Ok::<(), lenz::Error>(())
//! ```
//!
//! # Rules for every kernel
//!
//! No float operation, no division, no panic, no allocation in the per-tick functions;
//! saturating arithmetic on physical quantities; an unreadable or out-of-range input is a
//! fault, never zero. Raw constants outside a plan's ranges may make a kernel wrong but never
//! make it overflow or panic.
//!
//! Units: currents in microamps (`_ua`), voltages in millivolts (`_mv`), ADC readings in counts.
//! Coefficient formats are in the field names (`_q31`: signed, 31 fractional bits;
//! `_q16`: 16 fractional bits; see [`q`]).

mod bridge;
mod duty;
mod estimator;
mod jam;
mod monitor;
mod movement;
mod offtimer;
pub mod q;
mod speed;
mod speed_margin;
mod trip;

pub use bridge::{
    BridgeCommand, BridgeGuardConfig, BridgeGuardParams, BridgeGuardRaw, BridgeGuardState,
    BridgeMode,
};
pub use duty::{
    DUTY_TABLE_LEN, DutyLimiterConfig, DutyLimiterParams, DutyLimiterRaw, DutyLimiterState,
};
pub use estimator::{CURRENT_LIMIT_UA, EstimatorConfig, EstimatorRaw, EstimatorState, OffPath};
pub use jam::{JamConfig, JamParams, JamRaw, JamState, JamStatus, MotorFault};
pub use monitor::{Fault, MonitorConfig, MonitorParams, MonitorRaw, MonitorState, SenseScale};
pub use movement::{Motion, MovementConfig, MovementParams, MovementRaw, MovementState};
// The clamp's off path (extra resistance, voltage, supply coupling), shared with the drivers.
pub(crate) use offtimer::off_path_of;
pub use offtimer::{
    OffStatus, OffTimerState, PLANNED_TABLE_LEN, PlannedOffTimerConfig, PlannedOffTimerRaw,
    TrackingOffTimerConfig, TrackingOffTimerRaw,
};
pub use speed::{
    DUTY_ONE_Q16, SpeedErrorTerms, SpeedEstimatorConfig, SpeedEstimatorRaw, SpeedEstimatorState,
};
pub use speed_margin::{CoastingErrorParams, coasting_error_bound_rad_s, noise_rms_rad_s};
pub use trip::{
    BLOCK_LOG2_MAX, BLOCK_TAU_FRACTION, Cause, INVERSE_M_MAX, INVERSE_M_MIN,
    INVERSE_TABLE_ERROR_MAX, INVERSE_TABLE_LEN, INVERSE_TABLE_OCTAVES, INVERSE_TABLE_STEPS,
    InverseTable, THETA_ONE_Q24, TripConfig, TripEvent, TripLog, TripParams, TripRaw, TripState,
    Verdict, theta_q24_from_f32,
};
