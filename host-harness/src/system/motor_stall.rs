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
}

impl StallError {
    /// The bias plus [`NOISE_SIGMAS`] noise deviations, rad/s.
    #[must_use]
    pub fn bound_rad_s(&self) -> f64 {
        self.bias_rad_s + NOISE_SIGMAS * self.noise_rms_rad_s
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
    let mut worst = StallError {
        bias_rad_s: 0.0,
        noise_rms_rad_s: 0.0,
        at_temp_c: t_lo,
        at_resistance_factor: 1.0,
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
            for g_s in [1.0 - dg, 1.0 + dg] {
                let bias = ((g_e * (r - g_s * r_p) * i).abs() + o_v + r_p * o_i) / k_p;
                if bias > worst.bias_rad_s {
                    worst.bias_rad_s = bias;
                    worst.at_temp_c = temp;
                    worst.at_resistance_factor = r_factor;
                }
            }
        }
    }
    Ok(worst)
}

/// The verdicts: the reversal speed and the jam speed each above the bound.
#[must_use]
pub fn verdicts(e: &StallError, reverse_speed_rad_s: f64, jam_speed_rad_s: f64) -> Vec<Verdict> {
    let note = format!(
        "bias {:.1} rad/s (winding ×{:.3} of the plan at {:.0} °C, highest supply) + {NOISE_SIGMAS}σ \
         noise ({:.2} rad/s RMS)",
        e.bias_rad_s, e.at_resistance_factor, e.at_temp_c, e.noise_rms_rad_s
    );
    let bound = e.bound_rad_s();
    [
        (
            "speed estimate's stall error < reverse speed (else the guard restarts a jammed \
             rotor and its soft start blanks the jam detector)",
            reverse_speed_rad_s,
        ),
        (
            "speed estimate's stall error < jam speed (else the jam detector misses a jam)",
            jam_speed_rad_s,
        ),
    ]
    .into_iter()
    .map(|(check, limit)| Verdict {
        check: check.into(),
        value: Some(bound as f32),
        limit: limit as f32,
        unit: "rad/s",
        pass: bound < limit,
        note: Some(note.clone()),
    })
    .collect()
}
