//! How far the speed estimate that a coasting rotor leaves behind can be off: the margin of
//! the bridge guard's resumed start ([`super::BridgeGuardParams::resume_margin_rad_s`]).
//!
//! # Derivation
//!
//! While the bridge coasts, the estimator holds its last value
//! ([`super::SpeedEstimatorConfig::hold`]); that value comes from the last driven tick of the
//! run, or from the last one-tick brake probe the guard inserts every `probe_interval`. Its
//! error is:
//!
//! 1. **One tick's error** ([`super::SpeedEstimatorConfig::error_bound_rad_s`], the bound of
//!    the estimator's module docs), at each corner of the inductance and resistance spreads
//!    around the plan (the firmware plans at the winding temperature it is given; only the
//!    part spread remains), with: the current `I` at most the guard's current limit or a
//!    probe's current, whichever is larger; the current step `ΔI` of one tick at most a
//!    probe's, `V·(1 − e^(−T·R/L))/R` from the no-load speed `V/k` (a run at its steady speed
//!    changes the current by far less per tick: an assumption, stated here); the speed at most
//!    `V/k`; the acceleration at most `(k·I + T_load + b·V/k)/J`; the applied voltage's error:
//!    the readings' (given) plus the PWM term at duty ½, its largest
//!    ([`super::SpeedEstimatorConfig::pwm_voltage_error_v`]). The torque constant's own spread
//!    does not enter: the resumed start matches the back-EMF `k_p·ω̂` the estimator computes,
//!    not the speed.
//! 2. **Staleness**: the rotor slows while the estimate is held, at most at
//!    `(b·V/k + T_load)/J`, for up to one probe interval (without probes the estimate may be
//!    stale by any amount: no bound).
//! 3. **Noise**: `n_σ` standard deviations of one tick's estimate from the ADC noise,
//!    `σ_ω = √(σ_v² + (G₁² + G₀²)·σ_i²)/k_p` ([`noise_rms_rad_s`]).

use crate::error::{Error, finite_result, in_range, non_negative, positive};
use crate::motor::{Motor, MotorParams};

use super::{SpeedErrorTerms, SpeedEstimatorConfig};

/// What [`coasting_error_bound_rad_s`] needs.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct CoastingErrorParams {
    /// The highest supply. Units: V.
    pub supply_v: f32,
    /// Winding temperature the estimator is planned for. Units: °C.
    pub temp_c: f32,
    /// Control tick. Units: s.
    pub tick_s: f32,
    /// Interval of the guard's brake probes while coasting (0: none, no bound). Units: s.
    pub probe_interval_s: f32,
    /// Load torque. Units: N·m.
    pub load_torque_nm: f32,
    /// The guard's current limit. Units: A.
    pub current_limit_a: f32,
    /// Half-width of the inductance spread, relative (0.2: ±20 %).
    pub inductance_rel: f32,
    /// Half-width of the winding resistance spread, relative.
    pub resistance_rel: f32,
    /// Error of the applied voltage from the readings (supply reading, and the current
    /// reading's error times the plan's loop resistance). Units: V.
    pub voltage_error_v: f32,
    /// ADC noise of one current reading, RMS. Units: A.
    pub current_noise_a: f32,
    /// ADC noise of one supply reading, RMS. Units: V.
    pub supply_noise_v: f32,
    /// Standard deviations of noise allowed for.
    pub noise_sigmas: f32,
}

/// One standard deviation of one tick's speed estimate (no filter) from ADC noise `σ_i` (A)
/// on the current and `σ_v` (V) on the supply, for the estimator planned from `plan` at
/// `temp_c` with tick `tick_s`: `√(σ_v² + (G₁² + G₀²)·σ_i²)/k_p`, rad/s.
///
/// # Errors
///
/// Bad temperature or tick; a noise negative or not finite.
pub fn noise_rms_rad_s(
    plan: &Motor,
    temp_c: f32,
    tick_s: f32,
    current_noise_a: f32,
    supply_noise_v: f32,
) -> Result<f32, Error> {
    let tick = f64::from(positive("tick_s", tick_s)?);
    let si = f64::from(non_negative("current_noise_a", current_noise_a)?);
    let sv = f64::from(non_negative("supply_noise_v", supply_noise_v)?);
    let r = f64::from(plan.loop_resistance_ohm(temp_c)?);
    let x = tick * r / f64::from(plan.inductance_h());
    let g1 = r / -libm::expm1(-x);
    let g0 = g1 - r;
    let k = f64::from(plan.torque_constant_nm_per_a());
    finite_result(
        "tick_s",
        (libm::sqrt(sv * sv + (g1 * g1 + g0 * g0) * si * si) / k) as f32,
    )
}

/// The bound of the module docs, rad/s; `None` without brake probes (`probe_interval_s` 0).
///
/// # Errors
///
/// Bad parameters, named; `plan` without an inertia; the estimator's errors.
pub fn coasting_error_bound_rad_s(
    plan: &Motor,
    p: &CoastingErrorParams,
) -> Result<Option<f32>, Error> {
    let probe = f64::from(non_negative("probe_interval_s", p.probe_interval_s)?);
    let v = f64::from(positive("supply_v", p.supply_v)?);
    let limit = f64::from(positive("current_limit_a", p.current_limit_a)?);
    let load = f64::from(non_negative("load_torque_nm", p.load_torque_nm)?);
    let dl = f64::from(in_range("inductance_rel", p.inductance_rel, 0.0, 0.9)?);
    let dr = f64::from(in_range("resistance_rel", p.resistance_rel, 0.0, 0.9)?);
    let du = f64::from(non_negative("voltage_error_v", p.voltage_error_v)?);
    let sigmas = f64::from(in_range("noise_sigmas", p.noise_sigmas, 0.0, 20.0)?);
    let tick = f64::from(positive("tick_s", p.tick_s)?);
    if probe == 0.0 {
        return Ok(None);
    }
    let k = f64::from(plan.torque_constant_nm_per_a());
    let j = f64::from(plan.inertia_kg_m2()?);
    let b = f64::from(plan.params().friction_nm_s_per_rad);
    let w0 = v / k;
    let decel = (b * w0 + load) / j;
    let mut worst = 0.0f64;
    for l_factor in [1.0 - dl, 1.0 + dl] {
        for r_factor in [1.0 - dr, 1.0 + dr] {
            let base: &MotorParams = plan.params();
            let mut q = *base;
            q.inductance_h = (f64::from(base.inductance_h) * l_factor) as f32;
            q.resistance_ohm = (f64::from(base.resistance_ohm) * r_factor) as f32;
            let actual = q.validate()?;
            let r = f64::from(actual.loop_resistance_ohm(p.temp_c)?);
            let x = tick * r / f64::from(actual.inductance_h());
            let probe_a = v / r * -libm::expm1(-x);
            let i = limit.max(probe_a);
            let pwm = f64::from(SpeedEstimatorConfig::pwm_voltage_error_v(
                &actual, p.temp_c, p.tick_s, p.supply_v, 0.5,
            )?);
            let bound = SpeedEstimatorConfig::error_bound_rad_s(
                plan,
                p.temp_c,
                &actual,
                p.temp_c,
                p.tick_s,
                0.0,
                &SpeedErrorTerms {
                    current_max_a: i as f32,
                    current_step_max_a: probe_a as f32,
                    speed_max_rad_s: w0 as f32,
                    accel_max_rad_s2: ((k * i + load + b * w0) / j) as f32,
                    voltage_error_v: (du + pwm) as f32,
                },
            )?;
            worst = worst.max(f64::from(bound));
        }
    }
    let noise = f64::from(noise_rms_rad_s(
        plan,
        p.temp_c,
        p.tick_s,
        p.current_noise_a,
        p.supply_noise_v,
    )?);
    let total = worst + decel * probe + sigmas * noise;
    finite_result("probe_interval_s", total as f32).map(Some)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn vent() -> Motor {
        crate::motor::test_vent::vent_params()
            .with_bridge_resistance_ohm(0.1)
            .validate()
            .unwrap()
    }

    fn params() -> CoastingErrorParams {
        CoastingErrorParams {
            supply_v: 13.2,
            temp_c: 20.0,
            tick_s: 100e-6,
            probe_interval_s: 5e-3,
            load_torque_nm: 0.02,
            current_limit_a: 4.0,
            inductance_rel: 0.0,
            resistance_rel: 0.0,
            voltage_error_v: 0.0,
            current_noise_a: 0.0,
            supply_noise_v: 0.0,
            noise_sigmas: 6.0,
        }
    }

    #[test]
    fn terms_add_up_as_derived() {
        let m = vent();
        // No spreads, no noise: one tick's rounding and acceleration terms, the PWM term at
        // duty ½ and the staleness (b·V/k + T)/J over one probe interval.
        let base = coasting_error_bound_rad_s(&m, &params()).unwrap().unwrap();
        let stale = (1e-6 * 13.2 / 0.03 + 0.02) / 2e-5 * 5e-3;
        // PWM term ≈ V·x·d(1 − d)/2 with x = T·R/L = 0.08: 13.2·0.08/8 = 0.132 V → 4.4 rad/s;
        // acceleration over one tick (0.03·4 + 0.02 + 4.4e-4)/2e-5·1e-4 = 0.7 rad/s.
        assert!(
            base > stale + 4.0 && base < stale + 6.5,
            "{base} vs {stale}"
        );
        // An inductance spread weighs the probe's current step: |G₁ − G₁p|·ΔI/k grows.
        let with_l = coasting_error_bound_rad_s(
            &m,
            &CoastingErrorParams {
                inductance_rel: 0.2,
                ..params()
            },
        )
        .unwrap()
        .unwrap();
        assert!(with_l > base + 50.0, "{with_l} vs {base}");
        // Noise: n_σ·σ_ω added as it is.
        let sigma = noise_rms_rad_s(&m, 20.0, 100e-6, 8e-3, 0.0).unwrap();
        let with_noise = coasting_error_bound_rad_s(
            &m,
            &CoastingErrorParams {
                current_noise_a: 8e-3,
                ..params()
            },
        )
        .unwrap()
        .unwrap();
        assert!((with_noise - base - 6.0 * sigma).abs() < 1e-3 * with_noise);
        // σ_ω by hand: G₁ = R/(1 − e^(−x)), G₀ = G₁ − R, R = 1.6 Ω, x = 0.08.
        let g1 = 1.6 / -(-0.08f64).exp_m1();
        let hand = ((g1 * g1 + (g1 - 1.6) * (g1 - 1.6)) * 64e-6f64).sqrt() / 0.03;
        assert!(
            (f64::from(sigma) - hand).abs() < 1e-4 * hand,
            "{sigma} {hand}"
        );
        // Without probes: no bound.
        let none = CoastingErrorParams {
            probe_interval_s: 0.0,
            ..params()
        };
        assert_eq!(coasting_error_bound_rad_s(&m, &none).unwrap(), None);
        // Bad input is named.
        let bad = CoastingErrorParams {
            inductance_rel: f32::NAN,
            ..params()
        };
        assert_eq!(
            coasting_error_bound_rad_s(&m, &bad).unwrap_err().param(),
            "inductance_rel"
        );
    }
}
