//! The C API of the lenz integer kernels: a static library (`liblenz_ffi.a`) and its header
//! `include/lenz.h`, generated from this crate with cbindgen.
//!
//! Every kernel of [`lenz::kernel`] is here: the coil current estimator, the plausibility
//! monitor, the tracking and planned off-timers, the boost duty limiter, the trip detector,
//! the armature movement detector, the motor speed estimator, the jam detector and the
//! H-bridge guard; and the boost duty loop of [`lenz::drive`] (`lenz_boost_loop_…`: the duty
//! to write comes back from each tick, the firmware owns the PWM).
//! Each has the same C shape as its Rust original:
//!
//! | C | Rust | Memory |
//! |---|---|---|
//! | `LenzXxxRaw` | [`lenz::kernel::EstimatorRaw`] etc. | plain C struct, can be a `const` in flash |
//! | `LenzXxxConfig` | `XxxConfig` | opaque, sized; filled by `lenz_xxx_init(cfg_out, raw)` |
//! | `LenzXxxState` | `XxxState` | opaque, sized; one per channel, `lenz_xxx_state_init` |
//! | `lenz_xxx_update(cfg, state, inputs…, out)` | `XxxConfig::update` | the per-tick call |
//!
//! # Conventions for C callers
//!
//! - **Status.** Every function returns a [`LenzStatus`]: `LENZ_STATUS_OK`, or
//!   `LENZ_STATUS_NULL_POINTER` / `LENZ_STATUS_MISALIGNED` for a pointer argument that is null
//!   or not aligned for its type. On an error nothing is read or written. Results come back
//!   through out pointers (`…_out`), written only on success.
//! - **Ownership.** The caller owns all memory: configurations, states and out values live in
//!   the caller's variables (static, stack or heap); the library keeps no pointer after a call
//!   returns and allocates nothing. A configuration is read-only after `lenz_xxx_init` and can
//!   serve many channels; a state belongs to one channel. Pointers passed to one call must not
//!   overlap (a state and an out value, say).
//! - **Initialisation.** A configuration must be filled by its `lenz_xxx_init` and a state by
//!   its `lenz_xxx_state_init` before any other call uses it; the opaque bytes have no meaning
//!   to C and must not be written by C.
//! - **Concurrency.** No global state: calls on different states may run in different
//!   interrupts. Calls on the same state must not interleave (one interrupt owns a channel).
//! - **Units.** Integers in the kernels' units, named in each argument: currents in microamps
//!   (`_ua`), voltages in millivolts (`_mv`), ADC readings in counts (`_counts`), time in ticks
//!   or samples. Fixed-point coefficients carry their format in the name: `_q31` (signed, 31
//!   fractional bits), `_q16`, `_q8`, `_q24`, `_q32` (unsigned, 32 fractional bits).
//! - **Booleans in raw structs** are `uint8_t` (0 false, anything else true), so a constant
//!   written by hand or by a tool can never hold an invalid value; arguments use C99 `bool`.
//! - **No panic, no float, no division.** The kernels and this layer are integer-only and
//!   panic-free; `cargo xtask test` links every function into a Cortex-M image and checks that
//!   no panic path, soft-float or division helper is reachable.
//!
//! The design documentation of each kernel (algorithm, ranges, error bounds, cost) is on its
//! Rust configuration type in [`lenz::kernel`].
//!
//! # Building
//!
//! ```sh
//! cargo build -p lenz-ffi --release --target thumbv7m-none-eabi   # target/…/liblenz_ffi.a
//! ```
//!
//! `#![no_std]`. On bare-metal targets the library carries a panic handler (feature
//! `panic-handler`, on by default) that traps with `udf`; it is never reached. Hosted builds
//! (the tests) link `std` and use its handler.

#![no_std]

#[cfg(not(target_os = "none"))]
extern crate std;

mod boost_loop;
mod bridge;
mod duty;
mod estimator;
mod jam;
mod monitor;
mod movement;
mod offtimer;
mod opaque;
mod speed;
mod status;
mod trip;

pub use boost_loop::{
    LENZ_BOOST_LOOP_CONFIG_WORDS, LENZ_BOOST_LOOP_STATE_DWORDS, LENZ_BOOST_LOOP_STATE_WORDS,
    LenzBoostLoopConfig, LenzBoostLoopRaw, LenzBoostLoopState, lenz_boost_loop_init,
    lenz_boost_loop_raw, lenz_boost_loop_state_init, lenz_boost_loop_state_overvoltage,
    lenz_boost_loop_update,
};
pub use bridge::{
    LENZ_BRIDGE_GUARD_CONFIG_WORDS, LENZ_BRIDGE_GUARD_STATE_WORDS, LenzBridgeCommand,
    LenzBridgeGuardConfig, LenzBridgeGuardRaw, LenzBridgeGuardState, LenzBridgeMode,
    lenz_bridge_guard_init, lenz_bridge_guard_raw, lenz_bridge_guard_state_init,
    lenz_bridge_guard_update,
};
pub use jam::{
    LENZ_JAM_CONFIG_WORDS, LENZ_JAM_STATE_WORDS, LenzJamConfig, LenzJamRaw, LenzJamState,
    LenzJamStatus, lenz_jam_init, lenz_jam_raw, lenz_jam_state_init, lenz_jam_update,
};
pub use movement::{
    LENZ_MOVEMENT_CONFIG_WORDS, LENZ_MOVEMENT_STATE_WORDS, LenzMotion, LenzMotionKind,
    LenzMovementConfig, LenzMovementRaw, LenzMovementState, lenz_movement_init, lenz_movement_raw,
    lenz_movement_release, lenz_movement_start, lenz_movement_state_init, lenz_movement_update,
};
pub use speed::{
    LENZ_SPEED_ESTIMATOR_CONFIG_WORDS, LENZ_SPEED_ESTIMATOR_STATE_WORDS, LenzSpeedEstimatorConfig,
    LenzSpeedEstimatorRaw, LenzSpeedEstimatorState, lenz_speed_estimator_hold,
    lenz_speed_estimator_init, lenz_speed_estimator_raw, lenz_speed_estimator_state_init,
    lenz_speed_estimator_state_speed_mrad_s, lenz_speed_estimator_update,
};

pub use duty::{
    LENZ_DUTY_LIMITER_CONFIG_WORDS, LENZ_DUTY_LIMITER_STATE_WORDS, LENZ_DUTY_TABLE_LEN,
    LenzDutyLimiterConfig, LenzDutyLimiterRaw, LenzDutyLimiterState, lenz_duty_limiter_init,
    lenz_duty_limiter_limit_q8, lenz_duty_limiter_raw, lenz_duty_limiter_state_init,
    lenz_duty_limiter_state_last_q8, lenz_duty_limiter_state_overvoltage,
    lenz_duty_limiter_state_reset, lenz_duty_limiter_update,
};
pub use estimator::{
    LENZ_ESTIMATOR_CONFIG_WORDS, LENZ_ESTIMATOR_STATE_WORDS, LenzEstimatorConfig, LenzEstimatorRaw,
    LenzEstimatorState, LenzOffPath, lenz_estimator_init, lenz_estimator_raw,
    lenz_estimator_state_current_ua, lenz_estimator_state_init, lenz_estimator_state_reset,
    lenz_estimator_update,
};
pub use monitor::{
    LENZ_MONITOR_CONFIG_WORDS, LENZ_MONITOR_STATE_WORDS, LenzFault, LenzMonitorConfig,
    LenzMonitorRaw, LenzMonitorState, LenzSenseScale, lenz_monitor_init, lenz_monitor_measured_ua,
    lenz_monitor_raw, lenz_monitor_state_fault, lenz_monitor_state_init, lenz_monitor_state_reset,
    lenz_monitor_update,
};
pub use offtimer::{
    LENZ_OFFTIMER_STATE_WORDS, LENZ_PLANNED_OFFTIMER_CONFIG_WORDS, LENZ_PLANNED_TABLE_LEN,
    LENZ_TRACKING_OFFTIMER_CONFIG_WORDS, LenzOffStatus, LenzOffTimerState,
    LenzPlannedOffTimerConfig, LenzPlannedOffTimerRaw, LenzTrackingOffTimerConfig,
    LenzTrackingOffTimerRaw, lenz_offtimer_state_estimate_ua, lenz_offtimer_state_init,
    lenz_offtimer_state_remaining_ticks, lenz_offtimer_state_reset, lenz_planned_offtimer_init,
    lenz_planned_offtimer_raw, lenz_planned_offtimer_start, lenz_planned_offtimer_update,
    lenz_tracking_offtimer_init, lenz_tracking_offtimer_margin_ua, lenz_tracking_offtimer_raw,
    lenz_tracking_offtimer_start, lenz_tracking_offtimer_update,
};
pub use status::LenzStatus;
pub use trip::{
    LENZ_INVERSE_TABLE_LEN, LENZ_THETA_ONE_Q24, LENZ_TRIP_CONFIG_WORDS, LENZ_TRIP_STATE_WORDS,
    LenzCause, LenzInverseTable, LenzTripConfig, LenzTripEvent, LenzTripRaw, LenzTripState,
    LenzTripStateInfo, LenzVerdict, LenzVerdictKind, lenz_trip_block_samples, lenz_trip_init,
    lenz_trip_raw, lenz_trip_state_info, lenz_trip_state_init, lenz_trip_state_reset,
    lenz_trip_update,
};

/// Traps on the undefined instruction (a HardFault the firmware's handler sees) if a panic
/// were ever reached; `cargo xtask test` checks that none is reachable.
#[cfg(all(target_os = "none", feature = "panic-handler"))]
#[panic_handler]
fn panic(_: &core::panic::PanicInfo<'_>) -> ! {
    loop {
        #[cfg(target_arch = "arm")]
        // SAFETY: `udf` raises an undefined-instruction exception and touches no memory.
        unsafe {
            core::arch::asm!("udf #0", options(nomem, nostack));
        }
    }
}
