//! The armature movement detector's plan for a coil with `[system.coil.armature]`: what a
//! firmware engineer derives at init from the nominal armature, its plan bounds and the sense
//! chain (`lenz::kernel::MovementConfig`).
//!
//! - Hysteresis: 10 LSB of the current channel, or 7 × the channel's RMS noise if larger.
//!   Measured, not sourced: `host-harness/tests/movement_detector.rs` found 5 LSB clean at
//!   0.7 LSB RMS but false seats at 1.4 LSB RMS, and 10 LSB clean again (7 × 1.4 ≈ 10).
//! - Persistence: 3 samples (as in that sweep).
//! - Lowest pull-in peak: 80 % of the smallest minimum pull-in current of the plan
//!   (`lenz::armature::ArmatureSpread`, over the tolerances); lowest release minimum: 50 % of
//!   the smallest must-hold current (margins for the sense chain, common practice, no source).
//! - Pull-in deadline: the driver's longest pull-in time, so a pull-in without seating ends in
//!   the stuck-armature fault rather than a blind hold.
//! - Release deadline: five time constants of the seated coil in its off loop (the current has
//!   decayed below 1 %: if nothing moved by then, nothing will).
//! - The seated inductance `L(closed_gap)` (unsaturated reluctance form) is the inductance the
//!   firmware's estimator is planned with when the driver uses the detector (the estimate in
//!   hold and in the decay follows the seated coil; the monitor is blanked during the pull-in,
//!   see `lenz::drive::CoilDriverConfig::with_movement`).

use lenz::kernel::{MovementConfig, MovementParams};

use super::SetupError;
use crate::scenario::{Armature, File};

/// Hysteresis floor, LSB.
pub const HYSTERESIS_MIN_LSB: f32 = 10.0;
/// Hysteresis per LSB RMS of noise.
pub const HYSTERESIS_PER_NOISE_RMS: f32 = 7.0;
/// Consecutive samples to decide.
pub const PERSISTENCE: u16 = 3;
/// Lowest pull-in peak, as a fraction of the smallest minimum pull-in current.
pub const PEAK_FRACTION: f32 = 0.8;
/// Lowest release minimum, as a fraction of the smallest must-hold current.
pub const RELEASE_FRACTION: f32 = 0.5;
/// Release deadline in seated time constants.
pub const RELEASE_TIME_CONSTANTS: f32 = 5.0;

/// The movement detector's plan and the seated inductance it goes with.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MovementInputs {
    /// The SI values the detector was planned from.
    pub params: MovementParams,
    /// The detector.
    pub config: MovementConfig,
    /// Inductance of the seated armature (closed gap), H.
    pub seated_inductance_h: f32,
}

/// The detector's plan for armature `a` of `file`: `coil` is the nominal coil model, `tick_s`
/// the tick, `amps_per_count` the nominal current scale, `pull_in_max_s` the driver's longest
/// pull-in, `temp_c` the planning temperature.
///
/// # Errors
///
/// The armature plan or the detector rejects a value (named, under `system.coil.armature`).
pub fn movement_inputs(
    file: &File,
    a: &Armature,
    coil: &lenz::Coil,
    tick_s: f32,
    amps_per_count: f32,
    pull_in_max_s: f32,
    temp_c: f32,
) -> Result<MovementInputs, SetupError> {
    let bad = |e: lenz::Error| SetupError::new(format!("key `system.coil.armature`: {e}"));
    let l_tol = file
        .system
        .coil
        .map_or(0.0, |c| c.inductance_tolerance.get()) as f32;
    let spread = super::plan_armature::spread(file, a, l_tol).map_err(bad)?;
    let pull = spread.pull_in_current_a().map_err(bad)?;
    let hold = spread.hold_current_a().map_err(bad)?;
    let seated = super::plan_armature::seated_inductance_h(a).map_err(bad)?;
    let off_r = coil.off_loop_resistance_ohm(temp_c).map_err(bad)?;
    let noise = file.system.sense.noise.get() as f32;
    let lsb = (HYSTERESIS_PER_NOISE_RMS * noise).max(HYSTERESIS_MIN_LSB);
    let params = MovementParams {
        tick_s,
        hysteresis_a: lsb * amps_per_count,
        persistence: PERSISTENCE,
        min_peak_a: PEAK_FRACTION * pull.min,
        min_release_a: RELEASE_FRACTION * hold.min,
        pull_in_deadline_s: pull_in_max_s,
        release_deadline_s: RELEASE_TIME_CONSTANTS * seated / off_r,
    };
    let config = MovementConfig::new(&params).map_err(bad)?;
    Ok(MovementInputs {
        params,
        config,
        seated_inductance_h: seated,
    })
}
