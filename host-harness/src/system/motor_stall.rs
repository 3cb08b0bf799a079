//! The speed estimator's error at a stalled rotor, bounded over the description's spreads, and
//! the verdicts that the bridge guard's reversal speed and the jam detector's jam speed clear
//! it.
//!
//! At stall (`ω = 0`, `di/dt = 0`, full duty) the back-EMF estimate of
//! `lenz::kernel::SpeedEstimatorConfig` (`ê = u − G₁·i₁ + G₀·i₀`, `G₁ − G₀ = R_p`, see its
//! module docs) reads the bus voltage `u = g_e·V_bus + o_v` and the current
//! `i_m = g_e·g_s·i + o_i`, while the true bus voltage is `V_bus = R·i`. So
//!
//! ```text
//!   ω̂_stall = ( g_e·(R − g_s·R_p)·i + o_v − R_p·o_i ) / k_p
//! ```
//!
//! with `R`, `R_p` the true and the planned loop resistance (winding plus bridge), `g_e` the
//! chains' gain error (`[system.sense] gain_error`), `g_s` the current chain's gain draw
//! (`[tolerances] sense_gain`), `o_v`, `o_i` the ADC offset (`[system.sense] offset`) seen
//! through the supply divider and the current sense, and `i = V/(R + R_s)` the stall current.
//! With the winding below the plan the estimate is negative: past the reversal speed the guard
//! takes it for a rotor turning backwards, stops and restarts the bridge, and each restart's
//! soft start blanks the jam detector again; above the plan it is positive, and past the jam
//! speed the detector never sees a stall. The bound is the largest `|ω̂_stall|` over the
//! highest supply, the temperature range (the firmware plans its model at the winding
//! temperature it is given, so only the part spread remains: `[tolerances] resistance`), plus
//! [`NOISE_SIGMAS`] standard deviations of the estimate's noise from the ADC noise,
//! `σ_ω = √(σ_v² + (G₁² + G₀²)·σ_i²)/k_p` (`lenz::kernel::noise_rms_rad_s`; one tick, no
//! filter; the detector and the guard act on single ticks).
//!
//! A jam locks a turning rotor at once. At that instant the current is still the running
//! current `i₀` and the winding's whole back-EMF `e₀ = u − R·i₀` drives its rise,
//! `L·di/dt = e₀`; the estimate's inductance term `L_p·di/dt` then reads `(L_p/L)·e₀`, and
//!
//! ```text
//!   ω̂_lock = ( g_e·(R − g_s·R_p)·i₀ + g_e·(1 − g_s·L_p/L)·e₀ + o_v − R_p·o_i ) / k_p
//! ```
//!
//! (from the estimate's form above with `u = R·i₀ + L·di/dt`). With the winding's inductance
//! below the plan's it is negative, `−(L_p/L − 1)·ω₀` for exact chains: a quarter of the
//! running speed at `L = 0.8·L_p`. It decays with the electrical time constant while the
//! current rises to the stall current; `ω̂` is linear in the current on the way, so the larger
//! of `|ω̂_lock|` and `|ω̂_stall|` bounds it throughout. Past the reversal speed it too makes
//! the guard take the locked rotor for one turning backwards, brake and restart it with a ramp
//! from zero, and the jam detector sees the jam current only when the ramp has brought it back
//! (a sweep of the demo vent with `reverse_speed = 90` detected 4 of 200 jams after 55 ms,
//! `--seed 11`). The lock bound is taken at the highest supply over the same temperatures and
//! resistance and gain draws, the inductance at the ends of `[tolerances] inductance`, the
//! running current at the description's load torque (`(b·V + k·T)/(k² + R·b)`, the plan's
//! loop with the source resistance). The reversal speed must clear the larger bound; the jam
//! speed the stall bound only (a positive lock error only delays the count by a few
//! electrical time constants).

use lenz::kernel::noise_rms_rad_s;
use lenz::motor::Motor;

use super::SetupError;
use super::plan::Verdict;
use crate::scenario::File;
use crate::scenario::run::{lenz_err, tolerance_half_width};

/// Noise margin in standard deviations of one tick's estimate: a Gaussian passes 6σ about
/// once in 10⁹ ticks (a day of a 10 kHz tick). Common practice, no source.
pub const NOISE_SIGMAS: f64 = 6.0;

/// Temperatures evaluated across the description's range.
const TEMPERATURE_POINTS: usize = 9;

/// The bound on the stalled rotor's speed estimate.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StallError {
    /// Largest `|ω̂_stall|` from the spreads alone, rad/s.
    pub bias_rad_s: f64,
    /// One standard deviation of one tick's estimate from the ADC noise, rad/s.
    pub noise_rms_rad_s: f64,
    /// Winding temperature of the largest bias, °C.
    pub at_temp_c: f64,
    /// Resistance factor (true over planned winding) of the largest bias.
    pub at_resistance_factor: f64,
    /// Largest `|ω̂_lock|` (module docs) from the spreads alone, rad/s.
    pub lock_rad_s: f64,
    /// Inductance factor (true over planned) of the largest lock error.
    pub lock_inductance_factor: f64,
}

impl StallError {
    /// The bias plus [`NOISE_SIGMAS`] noise deviations, rad/s.
    #[must_use]
    pub fn bound_rad_s(&self) -> f64 {
        self.bias_rad_s + NOISE_SIGMAS * self.noise_rms_rad_s
    }

    /// The larger of the stall bias and the lock error, plus [`NOISE_SIGMAS`] noise
    /// deviations, rad/s: the error while a jam locks the rotor and stalls it.
    #[must_use]
    pub fn jam_bound_rad_s(&self) -> f64 {
        self.bias_rad_s.max(self.lock_rad_s) + NOISE_SIGMAS * self.noise_rms_rad_s
    }
}

/// The bound of the module docs for the firmware's motor model `motor` (winding plus bridge,
/// as `super::motor::motor_model`) on the bus of `f`.
///
/// # Errors
///
/// A temperature of the range outside the copper model (named).
pub fn stall_error(f: &File, motor: &Motor) -> Result<StallError, SetupError> {
    let s = &f.system;
    let sense = &s.sense;
    let t = &f.tolerances;
    let dr = t.resistance.map_or(0.0, tolerance_half_width);
    let dg = t.sense_gain.map_or(0.0, tolerance_half_width);
    let g_e = 1.0 + sense.gain_error.get();
    // The firmware's scaling (the nominal chains): amperes and volts per ADC input volt.
    let nominal = super::sense::nominal(f);
    let amps_per_adc_v = 1.0 / nominal.current.volts_per_unit;
    let bus_per_adc_v = 1.0 / nominal.supply.volts_per_unit;
    let o_i = sense.offset.get().abs() * amps_per_adc_v;
    let o_v = sense.offset.get().abs() * bus_per_adc_v;
    let sigma_i = sense.noise.get() * nominal.current.units_per_count();
    let sigma_v = sense.noise.get() * nominal.supply.units_per_count();
    let v = s.supply.max.get();
    let r_s = s.supply.source_resistance.get();
    let k_p = f64::from(motor.torque_constant_nm_per_a());
    let tick = s.tick.get();
    let (t_lo, t_hi) = (s.temperature.min.get(), s.temperature.max.get());
    let dl = t.inductance.map_or(0.0, tolerance_half_width);
    let (b, load) = f
        .system
        .motor
        .map_or((0.0, 0.0), |m| (m.friction.get(), m.load_torque.get()));
    let mut worst = StallError {
        bias_rad_s: 0.0,
        noise_rms_rad_s: 0.0,
        at_temp_c: t_lo,
        at_resistance_factor: 1.0,
        lock_rad_s: 0.0,
        lock_inductance_factor: 1.0,
    };
    for n in 0..TEMPERATURE_POINTS {
        let temp = t_lo + (t_hi - t_lo) * n as f64 / (TEMPERATURE_POINTS - 1) as f64;
        let err = lenz_err(f, "system.temperature", None);
        let r_p = f64::from(motor.loop_resistance_ohm(temp as f32).map_err(&err)?);
        let winding = f64::from(motor.resistance_ohm(temp as f32).map_err(&err)?);
        let bridge = r_p - winding;
        let noise = f64::from(
            noise_rms_rad_s(
                motor,
                temp as f32,
                tick as f32,
                sigma_i as f32,
                sigma_v as f32,
            )
            .map_err(&err)?,
        );
        worst.noise_rms_rad_s = worst.noise_rms_rad_s.max(noise);
        for r_factor in [1.0 - dr, 1.0 + dr] {
            let r = winding * r_factor + bridge;
            let i = v / (r + r_s);
            // The running current and back-EMF the instant before a jam (module docs).
            let i0 = (b * v + k_p * load) / (k_p * k_p + (r + r_s) * b);
            let e0 = v - (r + r_s) * i0;
            for g_s in [1.0 - dg, 1.0 + dg] {
                let bias = ((g_e * (r - g_s * r_p) * i).abs() + o_v + r_p * o_i) / k_p;
                if bias > worst.bias_rad_s {
                    worst.bias_rad_s = bias;
                    worst.at_temp_c = temp;
                    worst.at_resistance_factor = r_factor;
                }
                for l_factor in [1.0 - dl, 1.0 + dl] {
                    let lock = ((g_e * (r - g_s * r_p) * i0 + g_e * (1.0 - g_s / l_factor) * e0)
                        .abs()
                        + o_v
                        + r_p * o_i)
                        / k_p;
                    if lock > worst.lock_rad_s {
                        worst.lock_rad_s = lock;
                        worst.lock_inductance_factor = l_factor;
                    }
                }
            }
        }
    }
    Ok(worst)
}

/// The verdicts: the reversal speed above the jam bound (stall or lock), the jam speed above
/// the stall bound.
#[must_use]
pub fn verdicts(e: &StallError, reverse_speed_rad_s: f64, jam_speed_rad_s: f64) -> Vec<Verdict> {
    let stall = format!(
        "bias {:.1} rad/s (winding ×{:.3} of the plan at {:.0} °C, highest supply)",
        e.bias_rad_s, e.at_resistance_factor, e.at_temp_c
    );
    let noise = format!("{NOISE_SIGMAS}σ noise ({:.2} rad/s RMS)", e.noise_rms_rad_s);
    vec![
        Verdict {
            check: "speed estimate's error at a jam (the rotor locked at full speed, then \
                    stalled) < reverse speed (else the guard restarts a jammed rotor and its \
                    soft start delays the jam detector)"
                .into(),
            value: Some(e.jam_bound_rad_s() as f32),
            limit: reverse_speed_rad_s as f32,
            unit: "rad/s",
            pass: e.jam_bound_rad_s() < reverse_speed_rad_s,
            note: Some(format!(
                "larger of the stall {stall} and the lock {:.1} rad/s (inductance ×{:.3} of the \
                 plan) + {noise}",
                e.lock_rad_s, e.lock_inductance_factor
            )),
        },
        Verdict {
            check: "speed estimate's stall error < jam speed (else the jam detector misses a jam)"
                .into(),
            value: Some(e.bound_rad_s() as f32),
            limit: jam_speed_rad_s as f32,
            unit: "rad/s",
            pass: e.bound_rad_s() < jam_speed_rad_s,
            note: Some(format!("{stall} + {noise}")),
        },
    ]
}
