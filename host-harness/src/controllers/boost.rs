//! Boost regulator: an integer PI voltage loop behind the duty limiter.
//!
//! # Behaviour, per control tick
//!
//! 1. Error `e = target − v_out` in output counts (the reading of the previous tick: the
//!    conversion delay).
//! 2. PI in Q16 duty counts: `request = (k_p·e + I) >> 16` with the integrator `I += k_i·e`.
//! 3. The duty limiter ([`lenz::kernel::DutyLimiterConfig::update`]) clamps the request to the
//!    plan's limits at the measured input (inductor saturation, gain peak, light-load
//!    overvoltage, minimum off and on time), ramps it by the soft start and cuts it on output
//!    overvoltage or an implausible reading.
//! 4. Anti-windup by conditional integration: when the limiter holds the duty below the
//!    request (soft start, a table limit) and the error would raise it further, this tick's
//!    integration is undone.
//!
//! The limiter can be bypassed ([`BoostPlan::bypass_limiter`]) only to show, in a test, what
//! it protects against; firmware never does that.

use crate::closed_loop::{Actuation, Controller, Sensed, Telemetry};
use lenz::Error;
use lenz::boost::BoostStage;
use lenz::kernel::{DutyLimiterConfig, DutyLimiterParams, DutyLimiterState};

/// Plan-side description of the regulator.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BoostPlan {
    /// The stage (for the duty limiter's tables).
    pub stage: BoostStage,
    /// Duty limiter parameters (input window, scaling, soft start, overvoltage).
    pub limiter: DutyLimiterParams,
    /// Proportional gain, duty (0 ..= 1) per volt of error.
    pub kp_per_v: f32,
    /// Integral gain, duty per volt of error per tick.
    pub ki_per_v_tick: f32,
    /// Test only: apply the PI output without the limiter.
    pub bypass_limiter: bool,
}

/// Integer configuration of the regulator.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct BoostRegulatorConfig {
    limiter: DutyLimiterConfig,
    target_counts: i32,
    kp_q16: i64,
    ki_q16: i64,
    full_scale: u16,
    bypass: bool,
}

impl BoostRegulatorConfig {
    /// Plans the regulator.
    ///
    /// # Errors
    ///
    /// The duty limiter's plan errors, or a gain that is negative or not finite (`kp_per_v`,
    /// `ki_per_v_tick`).
    pub fn new(p: &BoostPlan) -> Result<Self, Error> {
        let limiter = DutyLimiterConfig::new(&p.stage, &p.limiter)?;
        let fs = f32::from(p.limiter.duty_full_scale);
        // Gains in duty counts per output count, Q16.
        let per_count = p.limiter.output_v_per_count * fs * 65536.0;
        let gain = |name: &'static str, g: f32| -> Result<i64, Error> {
            if !g.is_finite() {
                return Err(Error::NotFinite { param: name });
            }
            if g < 0.0 {
                return Err(Error::Negative { param: name });
            }
            Ok((g * per_count).round() as i64)
        };
        Ok(Self {
            limiter,
            target_counts: (p.limiter.output_v / p.limiter.output_v_per_count).round() as i32,
            kp_q16: gain("kp_per_v", p.kp_per_v)?,
            ki_q16: gain("ki_per_v_tick", p.ki_per_v_tick)?,
            full_scale: p.limiter.duty_full_scale,
            bypass: p.bypass_limiter,
        })
    }
}

/// The regulator's state.
#[derive(Debug, Clone)]
pub struct BoostRegulator {
    cfg: BoostRegulatorConfig,
    lim: DutyLimiterState,
    integ_q16: i64,
    duty: u16,
}

impl BoostRegulator {
    /// A regulator at duty 0.
    #[must_use]
    pub fn new(cfg: BoostRegulatorConfig) -> Self {
        Self {
            cfg,
            lim: DutyLimiterState::new(),
            integ_q16: 0,
            duty: 0,
        }
    }

    /// The duty applied this tick, counts.
    #[must_use]
    pub fn duty_counts(&self) -> u16 {
        self.duty
    }
}

impl Controller for BoostRegulator {
    fn tick(&mut self, s: &Sensed) -> Actuation {
        let c = self.cfg;
        if !s.demand {
            self.integ_q16 = 0;
            self.lim = DutyLimiterState::new();
            self.duty = 0;
            return Actuation::OFF;
        }
        let fs_q16 = i64::from(c.full_scale) << 16;
        let e = i64::from(c.target_counts) - i64::from(s.output_counts);
        let before = self.integ_q16;
        self.integ_q16 = (self.integ_q16 + c.ki_q16 * e).clamp(0, fs_q16);
        let request = ((c.kp_q16 * e + self.integ_q16) >> 16).clamp(0, i64::from(c.full_scale));
        let duty = if c.bypass {
            request as u16
        } else {
            c.limiter.update(
                &mut self.lim,
                request as i32,
                s.supply_counts,
                s.output_counts,
            )
        };
        // The limit in force is the allowed duty before the minimum-on-time skip (a skipped
        // pulse is not a limit the integrator should stop for).
        let allowed = if c.bypass {
            request
        } else {
            i64::from(self.lim.last_q8() >> 8)
        };
        if allowed < request && e > 0 {
            self.integ_q16 = before;
        }
        self.duty = duty;
        Actuation::pwm(f64::from(duty) / f64::from(c.full_scale))
    }

    fn telemetry(&self) -> Telemetry {
        Telemetry {
            estimate_a: None,
            tripped: false,
            trip_cause: None,
        }
    }
}
