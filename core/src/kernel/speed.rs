//! Motor speed from back-EMF: the applied bridge voltage (duty times the measured supply) less
//! the winding's resistive and inductive drop, divided by the torque constant, per tick.
//!
//! # Algorithm
//!
//! Over one tick `T` the bridge applies `u` (held) and the back-EMF `e = k·ω` is nearly
//! constant (the rotor's time constant is far longer than a tick). The armature equation
//! `L di/dt = u − e − R i` then integrates exactly (zero-order hold, as the coil estimator) to
//! `i₁ = a·i₀ + (1 − a)·(u − e)/R`, `a = e^(−T·R/L)`, which solved for the back-EMF gives
//!
//! ```text
//!   ê = u − G₁·i₁ + G₀·i₀,      G₁ = R/(1 − a),   G₀ = R·a/(1 − a)      (G₁ − G₀ = R)
//!   ω̂ = ê / k
//! ```
//!
//! with `i₀`, `i₁` the sensed currents at the start and the end of the tick (no derivative of
//! a noisy signal is formed; `G₁ ≈ L/T + R/2` weighs the current step exactly as the model
//! says). `u = d·V_supply` is the mean bridge voltage of a PWM tick with slow decay (the off
//! interval shorts the winding through the low-side switches, `u = 0` there); with fast
//! decay the off interval applies `−V_supply` and `u` would be `(2d − 1)·V_supply`. An
//! optional first-order low-pass `ω̃ += c·(ω̂ − ω̃)`, `c = 1 − e^(−T/τ_f)`, smooths ADC noise.
//!
//! # Sampling instant
//!
//! `i₁` must be the current **at the end of the tick** (and `i₀` at the end of the previous
//! one): the gains weigh the current step over exactly one tick, `G₁ ≈ L/T`, so a sample taken
//! `τ` before the tick's end, while the current still slews at up to `V/L`, moves the estimate
//! by up to about `G₁·(V/L)·τ/k ≈ V·τ/(T·k)` (the whole back-EMF range for `τ = T`). Trigger the
//! ADC at the end of the tick (the end of a PWM period when the tick holds whole periods) and
//! read it at the next tick; a sample early in the tick makes the estimate wrong by the
//! current's slew, not by noise. (The stall estimate does not depend on it: a stalled rotor at
//! full duty draws a steady current.)
//!
//! While the bridge coasts the applied voltage is not known (the diodes conduct against the
//! bus, or they block and the back-EMF leaves no trace in the current at all): such ticks call
//! [`SpeedEstimatorConfig::hold`], which keeps the last estimate and only records the current.
//! A brake tick (duty 0) is a measurement: the winding is shorted, `u = 0`. The bridge guard
//! ([`super::BridgeGuardConfig`]) inserts such brake ticks while it coasts a fast rotor down.
//!
//! # Fixed point
//!
//! Duty in Q16 (`±65 536` is `±1`, the sign is the direction), supply in mV, current in µA
//! (signed), `G₁`, `G₀` in mV per µA Q24, `1/k` in mrad/s per mV Q16, the filter step in Q31.
//! `u = (d·V + 2¹⁵) >> 16` mV; `ê` is formed in Q24 mV in 64 bits (each product exact), rounded
//! to mV and saturated to `i32`; `ω̂ = (ê·(1/k) + 2¹⁵) >> 16` mrad/s, saturated. The filter
//! carries the fraction below one mrad/s (error feedback, as the coil estimator). No float, no
//! division; four 32×32→64 multiplies per tick. State: 12 bytes.
//!
//! # Error bound
//!
//! With the plan's `R_p`, `L_p`, `k_p` and the motor's true `R`, `L`, `k`, the estimate of one
//! tick differs from the speed at its end by at most (derived from the two exact updates; the
//! true back-EMF over the tick is a weighted mean of its values, within `k·A·T` of the end
//! value)
//!
//! ```text
//!   |ω̂ − ω| ≤ ( |G₁ − G₁p|·ΔI + |R − R_p|·I + δu + q ) / k_p + |k − k_p|/k_p·W + A·T + A·T/c
//! ```
//!
//! where `I` bounds `|i|`, `ΔI` bounds `|i₁ − i₀|`, `W` bounds `|ω|`, `A` bounds `|dω/dt|`, `δu`
//! bounds the error of the applied voltage (supply reading, switch drops not in `R`, and the
//! PWM term below), `q = 1 mV + 2⁻²⁴·2·I_µA` mV the rounding of the fixed point (plus
//! 0.5 mrad/s at the output), and the last term (the filter's lag behind a speed changing at
//! `A`) only with a filter. [`SpeedEstimatorConfig::error_bound_rad_s`] evaluates it. The PWM
//! term: a tick of one PWM period starting with the on interval gives exactly
//! `i₁ = a·i₀ + (V/R)·a·(e^(d·x) − 1) − (1 − a)·e/R` (`x = T·R/L`) instead of the mean-voltage
//! form, so `δu_pwm = V·|d − a·(e^(d·x) − 1)/(1 − a)|`, about `V·x·d(1 − d)/2`
//! ([`SpeedEstimatorConfig::pwm_voltage_error_v`]).

use super::q::{mul_wide, q16_from_f32, q31_from_f32};
use crate::error::{Error, finite_result, in_range, non_negative, positive};
use crate::motor::Motor;

/// Duty of one, Q16.
pub const DUTY_ONE_Q16: i32 = 1 << 16;
/// Largest `G₁` accepted, mV per µA (the Q24 gains saturate at 128).
const GAIN_MAX_MV_PER_UA: f64 = 127.0;
/// Q24 one as f64.
const Q24: f64 = 16_777_216.0;

/// Raw coefficients of a [`SpeedEstimatorConfig`] (emitted constants can live in flash).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct SpeedEstimatorRaw {
    /// `G₁ = R/(1 − a)`, weight of the current at the tick's end. Units: mV per µA, Q24.
    pub gain_end_q24: i32,
    /// `G₀ = R·a/(1 − a)`, weight of the current at the tick's start. Units: mV per µA, Q24.
    pub gain_start_q24: i32,
    /// `1/k`. Units: mrad/s per mV, Q16.
    pub inv_k_q16: i32,
    /// Low-pass step `1 − e^(−T/τ_f)`, Q31; `i32::MAX` passes the estimate through unfiltered.
    pub filter_q31: i32,
}

/// Speed estimator coefficients (shared by channels); see the module docs of this file for
/// the algorithm, the fixed point and the error bound.
///
/// # Examples
///
/// ```
/// # use lenz::{motor::MotorParams, kernel::{SpeedEstimatorConfig, SpeedEstimatorState, DUTY_ONE_Q16}};
/// // Vent motor (invented): 1.5 Ω, 2 mH, 0.03 N·m/A, 10 kHz tick, no filter.
/// let m = MotorParams::new(2e-3, 1.5, 0.03).validate()?;
/// let cfg = SpeedEstimatorConfig::new(&m, 20.0, 100e-6, 0.0)?;
/// let mut s = SpeedEstimatorState::new();
/// // Full duty at 12 V with a steady 0.5 A: back-EMF 12 − 0.75 = 11.25 V, 375 rad/s.
/// for _ in 0..3 {
///     cfg.update(&mut s, DUTY_ONE_Q16, 12_000, 500_000);
/// }
/// assert!((s.speed_mrad_s() - 375_000).abs() <= 2);
/// # Ok::<(), lenz::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct SpeedEstimatorConfig {
    r: SpeedEstimatorRaw,
}

/// Per-channel speed estimator state: 12 bytes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct SpeedEstimatorState {
    last_current_ua: i32,
    speed_mrad_s: i32,
    frac: u32,
}

impl SpeedEstimatorState {
    /// The motor at rest: no current, no speed.
    #[must_use]
    pub const fn new() -> Self {
        Self::with_current_ua(0, 0)
    }

    /// A known starting point: the current sensed now, µA, and the speed, mrad/s (the filter
    /// starts from it).
    #[must_use]
    pub const fn with_current_ua(current_ua: i32, speed_mrad_s: i32) -> Self {
        Self {
            last_current_ua: current_ua,
            speed_mrad_s,
            frac: 0,
        }
    }

    /// Back to rest, [`SpeedEstimatorState::new`].
    pub fn reset(&mut self) {
        *self = Self::new();
    }

    /// The last speed estimate, mrad/s.
    #[must_use]
    pub const fn speed_mrad_s(&self) -> i32 {
        self.speed_mrad_s
    }
}

/// The terms of the error bound (module docs), each a bound over the run considered.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct SpeedErrorTerms {
    /// Largest current magnitude `I`. Units: A.
    pub current_max_a: f32,
    /// Largest current change over one tick `ΔI`. Units: A.
    pub current_step_max_a: f32,
    /// Largest speed magnitude `W`. Units: rad/s.
    pub speed_max_rad_s: f32,
    /// Largest acceleration magnitude `A`. Units: rad/s².
    pub accel_max_rad_s2: f32,
    /// Largest error of the applied voltage `δu` (supply reading, drops, PWM). Units: V.
    pub voltage_error_v: f32,
}

/// `R/(1 − a)` and `R·a/(1 − a)` in Ω for a tick, with `1 − a` by `expm1`.
fn gains(r: f64, l: f64, tick: f64) -> (f64, f64) {
    let x = tick * r / l;
    let one_minus_a = -libm::expm1(-x);
    let a = libm::exp(-x);
    (r / one_minus_a, r * a / one_minus_a)
}

impl SpeedEstimatorConfig {
    /// Coefficients for `motor` at `temp_c` (its loop resistance: winding at that temperature
    /// plus bridge), ticking every `tick_s`, with a low-pass of time constant `filter_s`
    /// (0: none).
    ///
    /// # Errors
    ///
    /// Bad temperature; `tick_s` not positive or so short that `R/(1 − a) ≈ L/T` exceeds
    /// 127 kΩ (the Q24 range), or above 1 s; `filter_s` negative or not finite; a torque
    /// constant whose inverse does not fit Q16 (below 3.1·10⁻⁵ N·m/A).
    pub fn new(motor: &Motor, temp_c: f32, tick_s: f32, filter_s: f32) -> Result<Self, Error> {
        let tick = f64::from(in_range("tick_s", positive("tick_s", tick_s)?, 0.0, 1.0)?);
        let filter = f64::from(in_range(
            "filter_s",
            non_negative("filter_s", filter_s)?,
            0.0,
            1.0e4,
        )?);
        let r = f64::from(motor.loop_resistance_ohm(temp_c)?);
        let l = f64::from(motor.inductance_h());
        let (g1, g0) = gains(r, l, tick);
        // Ω = V/A = 10⁻³ mV/µA.
        let (g1, g0) = (g1 * 1e-3, g0 * 1e-3);
        if !g1.is_finite() || g1 > GAIN_MAX_MV_PER_UA {
            return Err(Error::OutOfRange {
                param: "tick_s",
                value: tick_s,
                min: (l / (GAIN_MAX_MV_PER_UA * 1e3)) as f32,
                max: 1.0,
            });
        }
        let inv_k = 1.0 / f64::from(motor.torque_constant_nm_per_a());
        if inv_k * 65_536.0 >= f64::from(i32::MAX) {
            return Err(Error::OutOfRange {
                param: "torque_constant_nm_per_a",
                value: motor.torque_constant_nm_per_a(),
                min: (65_536.0 / f64::from(i32::MAX)) as f32,
                max: crate::motor::TORQUE_CONSTANT_MAX_NM_PER_A,
            });
        }
        let filter_q31 = if filter > 0.0 {
            q31_from_f32(-libm::expm1(-tick / filter) as f32).max(1)
        } else {
            i32::MAX
        };
        Ok(Self::from_raw(SpeedEstimatorRaw {
            gain_end_q24: libm::round(g1 * Q24) as i32,
            gain_start_q24: libm::round(g0 * Q24) as i32,
            inv_k_q16: q16_from_f32(inv_k as f32),
            filter_q31,
        }))
    }

    /// Coefficients from raw values (for emitted constants). Any values are safe: the update
    /// saturates and cannot overflow or panic.
    #[must_use]
    pub const fn from_raw(raw: SpeedEstimatorRaw) -> Self {
        Self { r: raw }
    }

    /// The raw coefficients.
    #[must_use]
    pub const fn raw(&self) -> SpeedEstimatorRaw {
        self.r
    }

    /// `G₁`, mV per µA, Q24.
    #[must_use]
    pub const fn gain_end_q24(&self) -> i32 {
        self.r.gain_end_q24
    }

    /// `G₀`, mV per µA, Q24.
    #[must_use]
    pub const fn gain_start_q24(&self) -> i32 {
        self.r.gain_start_q24
    }

    /// `1/k`, mrad/s per mV, Q16.
    #[must_use]
    pub const fn inv_k_q16(&self) -> i32 {
        self.r.inv_k_q16
    }

    /// Low-pass step, Q31 (`i32::MAX`: no filter).
    #[must_use]
    pub const fn filter_q31(&self) -> i32 {
        self.r.filter_q31
    }

    /// Advances one tick and returns the speed estimate, mrad/s.
    ///
    /// # Arguments
    ///
    /// - `duty_q16`: the duty held during the tick that ends now, signed by direction,
    ///   saturated to `±DUTY_ONE_Q16`.
    /// - `supply_mv`: the measured supply during that tick, mV; negative readings count as 0.
    /// - `current_ua`: the sensed winding current at the end of the tick, µA, signed (sampled
    ///   at the tick's end: see the module docs, "Sampling instant").
    ///
    /// # Returns
    ///
    /// The speed estimate (filtered when the configuration has a filter), mrad/s, saturated to
    /// the `i32` range.
    #[inline]
    pub fn update(
        &self,
        state: &mut SpeedEstimatorState,
        duty_q16: i32,
        supply_mv: i32,
        current_ua: i32,
    ) -> i32 {
        let duty = duty_q16.clamp(-DUTY_ONE_Q16, DUTY_ONE_Q16);
        let supply = if supply_mv > 0 { supply_mv } else { 0 };
        // |duty·supply| ≤ 2^47: the rounded voltage fits i32 after the shift.
        let u_mv = ((mul_wide(duty, supply) + (1 << 15)) >> 16) as i32;
        let i1 = current_ua;
        let i0 = state.last_current_ua;
        // Each product < 2^62; their difference saturates only for raw gains of opposite sign.
        let drop_q24 =
            mul_wide(self.r.gain_end_q24, i1).saturating_sub(mul_wide(self.r.gain_start_q24, i0));
        let e_q24 = (i64::from(u_mv) << 24).saturating_sub(drop_q24);
        let e_mv = sat_i32(e_q24.saturating_add(1 << 23) >> 24);
        let raw = sat_i32((mul_wide(e_mv, self.r.inv_k_q16) + (1 << 15)) >> 16);
        let c = self.r.filter_q31;
        let speed = if c == i32::MAX {
            state.frac = 0;
            raw
        } else {
            let prev = state.speed_mrad_s;
            let diff = sat_i32(i64::from(raw) - i64::from(prev));
            let acc = mul_wide(diff, c.max(0)) + i64::from(state.frac);
            // |diff·c| < 2^62: the whole part moves prev towards raw by at most |diff|.
            let whole = acc >> 31;
            state.frac = (acc as u32) & 0x7FFF_FFFF;
            sat_i32(i64::from(prev) + whole)
        };
        state.last_current_ua = i1;
        state.speed_mrad_s = speed;
        speed
    }

    /// A tick whose applied voltage is unknown (the bridge coasts): keeps the speed estimate,
    /// records the sensed current as the start of the next tick, and returns the estimate,
    /// mrad/s.
    #[inline]
    pub fn hold(&self, state: &mut SpeedEstimatorState, current_ua: i32) -> i32 {
        state.last_current_ua = current_ua;
        state.speed_mrad_s
    }

    /// The error bound of the module docs for this configuration, planned from `plan` at
    /// `plan_temp_c`, when the motor is actually `actual` at `actual_temp_c`, ticking every
    /// `tick_s` with a filter of time constant `filter_s` (the values the configuration was
    /// built with), rad/s.
    ///
    /// # Errors
    ///
    /// Bad temperatures or tick; any term negative or not finite.
    pub fn error_bound_rad_s(
        plan: &Motor,
        plan_temp_c: f32,
        actual: &Motor,
        actual_temp_c: f32,
        tick_s: f32,
        filter_s: f32,
        terms: &SpeedErrorTerms,
    ) -> Result<f32, Error> {
        let tick = f64::from(positive("tick_s", tick_s)?);
        let filter = f64::from(non_negative("filter_s", filter_s)?);
        let mut t = [0.0f64; 5];
        for (slot, (name, v)) in t.iter_mut().zip([
            ("current_max_a", terms.current_max_a),
            ("current_step_max_a", terms.current_step_max_a),
            ("speed_max_rad_s", terms.speed_max_rad_s),
            ("accel_max_rad_s2", terms.accel_max_rad_s2),
            ("voltage_error_v", terms.voltage_error_v),
        ]) {
            *slot = f64::from(non_negative(name, v)?);
        }
        let [i_max, di_max, w_max, a_max, du] = t;
        let rp = f64::from(plan.loop_resistance_ohm(plan_temp_c)?);
        let r = f64::from(actual.loop_resistance_ohm(actual_temp_c)?);
        let (g1p, _) = gains(rp, f64::from(plan.inductance_h()), tick);
        let (g1, _) = gains(r, f64::from(actual.inductance_h()), tick);
        let kp = f64::from(plan.torque_constant_nm_per_a());
        let k = f64::from(actual.torque_constant_nm_per_a());
        // Rounding: 0.5 mV (u) + 0.5 mV (ê) + half an LSB of each Q24 gain on |i| in µA.
        let q_v = 1e-3 + 2.0 * i_max * 1e6 / Q24 * 1e-3;
        let volts = libm::fabs(g1 - g1p) * di_max + libm::fabs(r - rp) * i_max + du + q_v;
        let lag = if filter > 0.0 {
            a_max * tick / -libm::expm1(-tick / filter)
        } else {
            0.0
        };
        let bound = volts / kp + libm::fabs(k - kp) / kp * w_max + a_max * tick + lag + 5e-4;
        finite_result("tick_s", bound as f32)
    }

    /// The PWM term `δu_pwm = V·|d − a·(e^(d·x) − 1)/(1 − a)|` of the module docs for a tick of
    /// one PWM period starting with the on interval, for the motor's actual `R`, `L` at
    /// `temp_c`, V.
    ///
    /// # Errors
    ///
    /// Bad temperature, `tick_s` not positive, `duty` outside `0 ..= 1`, supply negative.
    pub fn pwm_voltage_error_v(
        motor: &Motor,
        temp_c: f32,
        tick_s: f32,
        supply_v: f32,
        duty: f32,
    ) -> Result<f32, Error> {
        let tick = f64::from(positive("tick_s", tick_s)?);
        let d = f64::from(in_range("duty", duty, 0.0, 1.0)?);
        let v = f64::from(in_range(
            "supply_v",
            non_negative("supply_v", supply_v)?,
            0.0,
            crate::coil::SUPPLY_MAX_V,
        )?);
        let r = f64::from(motor.loop_resistance_ohm(temp_c)?);
        let x = tick * r / f64::from(motor.inductance_h());
        let one_minus_a = -libm::expm1(-x);
        let a = libm::exp(-x);
        let err = v * libm::fabs(d - a * libm::expm1(d * x) / one_minus_a);
        finite_result("tick_s", err as f32)
    }
}

/// Saturates an `i64` to the `i32` range.
#[inline(always)]
const fn sat_i32(x: i64) -> i32 {
    if x > i32::MAX as i64 {
        i32::MAX
    } else if x < i32::MIN as i64 {
        i32::MIN
    } else {
        x as i32
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::motor::MotorParams;
    use proptest::prelude::*;
    use proptest::test_runner::RngSeed;

    use crate::motor::test_vent::vent;

    /// The exact two-state update of the motor over one tick at constant applied voltage
    /// (f64, closed form of the second-order system via the plan's transient routine).
    fn true_tick(m: &Motor, v: f32, load: f32, i: f32, w: f32, tick: f32) -> (f32, f32) {
        m.state_after(v, 20.0, load, i, w, tick).unwrap()
    }

    #[test]
    fn state_size_is_as_documented() {
        // The kernel rule: at most 32 bytes of state per channel.
        assert_eq!(core::mem::size_of::<SpeedEstimatorState>(), 12);
    }

    #[test]
    fn start_up_tracks_the_true_speed() {
        // Step start at 12 V, load 0.02 N·m, 10 kHz tick, currents sampled exactly: the error
        // stays within the bound of the module docs with the plan equal to the motor.
        let m = vent();
        let tick = 100e-6;
        let cfg = SpeedEstimatorConfig::new(&m, 20.0, tick, 0.0).unwrap();
        let mut s = SpeedEstimatorState::new();
        let (mut i, mut w) = (0.0f32, 0.0f32);
        let mut worst = 0.0f32;
        let mut di_max = 0.0f32;
        for _ in 0..2000 {
            let (i1, w1) = true_tick(&m, 12.0, 0.02, i, w, tick);
            di_max = di_max.max((i1 - i).abs());
            let est = cfg.update(&mut s, DUTY_ONE_Q16, 12_000, (i1 * 1e6) as i32);
            worst = worst.max((est as f32 * 1e-3 - w1).abs());
            (i, w) = (i1, w1);
        }
        let bound = SpeedEstimatorConfig::error_bound_rad_s(
            &m,
            20.0,
            &m,
            20.0,
            tick,
            0.0,
            &SpeedErrorTerms {
                current_max_a: 8.0,
                current_step_max_a: di_max,
                speed_max_rad_s: 370.0,
                // Largest acceleration at the start: k·i_peak/J.
                accel_max_rad_s2: 0.03 * 7.31 / 2e-5,
                voltage_error_v: 0.0,
            },
        )
        .unwrap();
        assert!(worst <= bound, "{worst} > {bound}");
        // The bound is dominated by the acceleration term A·T = 1.1 rad/s; the estimate is
        // far better than a 1 % of the running speed.
        assert!(worst < 3.7, "{worst}");
        // Nearly settled after 6 τ_m (acceleration 60 rad/s²): within a few tens of mrad/s.
        assert!(
            (s.speed_mrad_s() as f32 * 1e-3 - w).abs() < 0.02,
            "{} vs {w}",
            s.speed_mrad_s()
        );
    }

    #[test]
    fn resistance_error_shows_as_the_bound_says() {
        // Plan at 20 °C, winding at 80 °C: R is 23.6 % higher; at the steady 0.679 A the
        // estimate is low by ΔR·i/k (computed: 0.354 Ω · 0.679 A / 0.03).
        let m = vent();
        let tick = 100e-6;
        let cfg = SpeedEstimatorConfig::new(&m, 20.0, tick, 0.0).unwrap();
        let ss = m.steady_state(12.0, 80.0, 0.02).unwrap();
        let mut s = SpeedEstimatorState::new();
        let i_ua = (ss.current_a * 1e6) as i32;
        let mut est = 0;
        for _ in 0..5 {
            est = cfg.update(&mut s, DUTY_ONE_Q16, 12_000, i_ua);
        }
        let dr = m.loop_resistance_ohm(80.0).unwrap() - 1.5;
        let want = ss.speed_rad_s + dr * ss.current_a / 0.03;
        assert!((est as f32 * 1e-3 - want).abs() < 0.01, "{est} vs {want}");
    }

    #[test]
    fn filter_settles_and_passes_through() {
        let m = vent();
        let cfg = SpeedEstimatorConfig::new(&m, 20.0, 100e-6, 5e-3).unwrap();
        let mut s = SpeedEstimatorState::new();
        // From rest, a step of the raw value settles by e^(-t/τ_f).
        let mut est = 0;
        for _ in 0..50 {
            est = cfg.update(&mut s, DUTY_ONE_Q16, 12_000, 0);
        }
        // 50 ticks = τ_f: 1 − e^-1 of 400 rad/s.
        let want = 400_000.0 * (1.0 - (-1.0f64).exp());
        assert!((f64::from(est) - want).abs() < 2.0, "{est} vs {want}");
    }

    #[test]
    fn pwm_term_is_small_at_short_ticks() {
        // x = T·R/L = 0.075: the term is about V·x·d(1 − d)/2 = 0.1125 V at d = 0.5.
        let e =
            SpeedEstimatorConfig::pwm_voltage_error_v(&vent(), 20.0, 100e-6, 12.0, 0.5).unwrap();
        assert!((e - 0.1125).abs() < 0.002, "{e}");
        assert_eq!(
            SpeedEstimatorConfig::pwm_voltage_error_v(&vent(), 20.0, 100e-6, 12.0, 1.0).unwrap(),
            0.0
        );
    }

    /// The update in i128 with plain clamps (the reference form of the module docs).
    fn wide_reference(
        c: &SpeedEstimatorConfig,
        s: &mut SpeedEstimatorState,
        d: i32,
        v: i32,
        i: i32,
    ) -> i32 {
        let r = c.raw();
        let d = i128::from(d.clamp(-DUTY_ONE_Q16, DUTY_ONE_Q16));
        let v = i128::from(v.max(0));
        let u = (d * v + (1 << 15)) >> 16;
        let i0 = s.last_current_ua;
        let drop = (i128::from(r.gain_end_q24) * i128::from(i)
            - i128::from(r.gain_start_q24) * i128::from(i0))
        .clamp(i128::from(i64::MIN), i128::from(i64::MAX));
        let e_q24 = ((u << 24) - drop).clamp(i128::from(i64::MIN), i128::from(i64::MAX));
        let e_q24 = (e_q24 + (1 << 23)).min(i128::from(i64::MAX));
        let lim = |x: i128| x.clamp(i128::from(i32::MIN), i128::from(i32::MAX));
        let e = lim(e_q24 >> 24);
        let raw = lim((e * i128::from(r.inv_k_q16) + (1 << 15)) >> 16);
        let out = if r.filter_q31 == i32::MAX {
            s.frac = 0;
            raw
        } else {
            let diff = lim(raw - i128::from(s.speed_mrad_s));
            let acc = diff * i128::from(r.filter_q31.max(0)) + i128::from(s.frac);
            s.frac = (acc.rem_euclid(1 << 31)) as u32;
            lim(i128::from(s.speed_mrad_s) + acc.div_euclid(1 << 31))
        };
        s.last_current_ua = i;
        s.speed_mrad_s = out as i32;
        out as i32
    }

    fn seeded(cases: u32) -> ProptestConfig {
        ProptestConfig {
            cases,
            rng_seed: RngSeed::Fixed(0x0053_5045_4544),
            ..ProptestConfig::default()
        }
    }

    proptest! {
        #![proptest_config(seeded(2000))]

        /// Arbitrary raw coefficients and inputs: never overflows, equals the wide reference.
        #[test]
        fn update_equals_wide_reference(
            g1 in any::<i32>(), g0 in any::<i32>(), ik in any::<i32>(), f in any::<i32>(),
            seq in proptest::collection::vec((any::<i32>(), any::<i32>(), any::<i32>()), 1..40),
        ) {
            let cfg = SpeedEstimatorConfig::from_raw(SpeedEstimatorRaw {
                gain_end_q24: g1, gain_start_q24: g0, inv_k_q16: ik, filter_q31: f,
            });
            let mut s = SpeedEstimatorState::new();
            let mut r = s;
            for (d, v, i) in seq {
                prop_assert_eq!(cfg.update(&mut s, d, v, i), wide_reference(&cfg, &mut r, d, v, i));
                prop_assert_eq!(s, r);
            }
        }
    }

    proptest! {
        #![proptest_config(seeded(200))]

        /// Against the f64 back-EMF of the exact update: with the plan equal to the motor and a
        /// constant speed the estimate is within the rounding terms of the bound.
        #[test]
        fn matches_f64_back_emf(
            l in 1e-4f32..0.1, r in 0.1f32..50.0, k in 1e-3f32..0.5, tick_exp in -5.0f32..-3.0,
            v in 5.0f32..60.0, d in 0.0f32..1.0, i0 in -5.0f32..5.0, w in -500.0f32..500.0,
        ) {
            let m = MotorParams::new(l, r, k).validate().unwrap();
            let tick = 10f32.powf(tick_exp);
            // L/T ≤ 10 kΩ here, inside the Q24 gain range.
            let cfg = SpeedEstimatorConfig::new(&m, 20.0, tick, 0.0).unwrap();
            // One tick of the RL circuit with the back-EMF k·w held (f64 closed form).
            let (r64, l64) = (f64::from(r), f64::from(l));
            let a = (-f64::from(tick) * r64 / l64).exp();
            let duty_q16 = (f64::from(d) * 65_536.0).round() as i32;
            let v_mv = (f64::from(v) * 1e3).round() as i32;
            let u = f64::from(duty_q16) / 65_536.0 * f64::from(v_mv) * 1e-3;
            let e = f64::from(k) * f64::from(w);
            let i0_ua = (f64::from(i0) * 1e6).round() as i32;
            let i1 = a * f64::from(i0_ua) * 1e-6 + (1.0 - a) * (u - e) / r64;
            let i1_ua = (i1 * 1e6).round() as i32;
            let mut s = SpeedEstimatorState::with_current_ua(i0_ua, 0);
            let est = f64::from(cfg.update(&mut s, duty_q16, v_mv, i1_ua)) * 1e-3;
            // Rounding of the sensed current to 1 µA shows up as G₁·0.5 µA + G₀·0.5 µA in
            // volts; plus the fixed-point rounding q of the module docs.
            let (g1, g0) = gains(r64, l64, f64::from(tick));
            let q = 1e-3 + 0.5e-6 * (g1 + g0) + 2.0 * 5.5 / Q24 + 0.5e-6 * 5.5e6 / Q24;
            let bound = q / f64::from(k) + 1e-3;
            prop_assert!((est - f64::from(w)).abs() <= bound, "{est} vs {w} (bound {bound})");
        }
    }
}
