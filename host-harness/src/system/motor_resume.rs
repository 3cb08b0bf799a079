//! The bridge guard's resume margin for a description: how far the speed estimate that a
//! coasting rotor leaves behind can be off (`lenz::kernel::coasting_error_bound_rad_s`, whose
//! module docs derive it), with the description's spreads and sense errors.
//!
//! A forward (or reverse) command while the rotor still coasts that way starts the ramp at
//! the duty of the estimated back-EMF less this margin (`lenz::kernel::BridgeGuardConfig`,
//! "Soft start"), so an estimate within its bound never makes the restart worse than a start
//! from duty zero.
//!
//! Inputs taken from the description: the highest supply; the `[tolerances]` half-widths of
//! `inductance` and `resistance`; the readings' error `δu = |g_e|·V + o_v + R_p·(o_i +
//! (|g_e| + Δg_s)·I)` (gain error `[system.sense] gain_error` on both chains, the ADC offset
//! through each chain's scale, the current chain's gain spread `[tolerances] sense_gain`, at
//! the guard's current limit `I`); the ADC noise of one reading on each chain, at
//! [`super::motor_stall::NOISE_SIGMAS`].

use lenz::kernel::{CoastingErrorParams, coasting_error_bound_rad_s};
use lenz::motor::Motor;

use super::SetupError;
use super::motor_stall::NOISE_SIGMAS;
use crate::scenario::File;
use crate::scenario::run::{lenz_err, tolerance_half_width};

/// The margin for the firmware's motor model `motor` planned at `temp_c`, with brake probes
/// every `probe_interval_s` and the guard's `current_limit_a`, rad/s; `None` without probes
/// (the held estimate may be stale by any amount: every start ramps from zero).
///
/// # Errors
///
/// A value the bound rejects, named by the file's key where it has one.
pub fn resume_margin_rad_s(
    f: &File,
    motor: &Motor,
    temp_c: f32,
    probe_interval_s: f32,
    current_limit_a: f32,
    load_torque_nm: f32,
) -> Result<Option<f32>, SetupError> {
    let s = &f.system;
    let sense = &s.sense;
    let t = &f.tolerances;
    let nominal = super::sense::nominal(f);
    let rb = super::sense::reading_bounds(f);
    let (g_e, dg) = (rb.gain_error, rb.current_gain_spread);
    let (o_i, o_v) = (rb.current_offset_a, rb.supply_offset_v);
    let v = s.supply.max.get();
    let err = lenz_err(f, "controller.motor", None);
    let r_p = f64::from(motor.loop_resistance_ohm(temp_c).map_err(&err)?);
    let du = g_e * v + o_v + r_p * (o_i + (g_e + dg) * f64::from(current_limit_a));
    let bound = coasting_error_bound_rad_s(
        motor,
        &CoastingErrorParams {
            supply_v: v as f32,
            temp_c,
            tick_s: s.tick.get() as f32,
            probe_interval_s,
            load_torque_nm,
            current_limit_a,
            inductance_rel: t.inductance.map_or(0.0, tolerance_half_width) as f32,
            resistance_rel: t.resistance.map_or(0.0, tolerance_half_width) as f32,
            voltage_error_v: du as f32,
            current_noise_a: (sense.noise.get() * nominal.current.units_per_count()) as f32,
            supply_noise_v: (sense.noise.get() * nominal.supply.units_per_count()) as f32,
            noise_sigmas: NOISE_SIGMAS as f32,
        },
    )
    .map_err(&err)?;
    Ok(bound)
}
