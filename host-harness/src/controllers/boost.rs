//! Boost regulator: the [`lenz::drive::BoostLoop`] (integer PI voltage loop behind the duty
//! limiter) on a simulated PWM channel whose `max_duty_cycle` is the limiter's full scale.
//!
//! See [`lenz::drive::BoostLoop`] for the steps of a tick. This file plans it
//! ([`BoostPlan`] to [`lenz::drive::BoostLoopConfig`]); the harness side is
//! [`crate::sim_pins::BoostLoopDriver`].
//!
//! The limiter can be opened ([`BoostPlan::bypass_limiter`]) only to show, in a test, what it
//! protects against; firmware never does that.

use lenz::Error;
use lenz::boost::BoostStage;
use lenz::drive::{BoostLoopConfig, BoostLoopParams, BoostLoopRaw, DriveError};
use lenz::kernel::{DUTY_TABLE_LEN, DutyLimiterParams, DutyLimiterRaw};

use crate::closed_loop::{Actuation, Controller, Sensed, Telemetry};
use crate::sim_pins::{BoostLoopDriver, SimError, SimPwm};

/// Plan-side description of the regulator.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BoostPlan {
    /// The stage (for the duty limiter's tables).
    pub stage: BoostStage,
    /// Duty limiter parameters (input window, scaling, soft start, overvoltage, the PWM's full
    /// scale).
    pub limiter: DutyLimiterParams,
    /// Proportional gain, duty (0 ..= 1) per volt of error.
    pub kp_per_v: f32,
    /// Integral gain, duty per volt of error per tick.
    pub ki_per_v_tick: f32,
    /// Test only: the same loop with the limiter opened (every limit at full scale, no soft
    /// start, no overvoltage cut, no reading window).
    pub bypass_limiter: bool,
}

/// The regulator's configuration.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct BoostRegulatorConfig {
    driver: BoostLoopConfig,
}

impl BoostRegulatorConfig {
    /// Plans the regulator ([`BoostLoopConfig::new`]).
    ///
    /// # Errors
    ///
    /// The errors of [`BoostLoopConfig::new`].
    pub fn new(p: &BoostPlan) -> Result<Self, Error> {
        let planned = BoostLoopConfig::new(
            &p.stage,
            &BoostLoopParams {
                limiter: p.limiter,
                kp_per_v: p.kp_per_v,
                ki_per_v_tick: p.ki_per_v_tick,
            },
        )?;
        let driver = if p.bypass_limiter {
            let raw = planned.raw();
            let fs_q8 = i32::from(raw.limiter.full_scale) << 8;
            BoostLoopConfig::from_raw(BoostLoopRaw {
                limiter: DutyLimiterRaw {
                    vin_lo_counts: 0,
                    vin_hi_counts: u16::MAX,
                    // One table interval over the whole reading range.
                    shift: 16,
                    saturation_q8: [fs_q8; DUTY_TABLE_LEN],
                    gain_peak_q8: [fs_q8; DUTY_TABLE_LEN],
                    light_load_q8: [fs_q8; DUTY_TABLE_LEN],
                    min_off_q8: fs_q8,
                    min_on_counts: 0,
                    slew_q8: fs_q8,
                    vout_lo_counts: 0,
                    vout_hi_counts: u16::MAX,
                    ov_trip_counts: u16::MAX,
                    ov_resume_counts: u16::MAX,
                    ..raw.limiter
                },
                ..raw
            })
        } else {
            planned
        };
        Ok(Self { driver })
    }

    /// The loop's configuration.
    #[must_use]
    pub const fn driver(&self) -> &BoostLoopConfig {
        &self.driver
    }
}

/// The regulator on a simulated PWM channel.
#[derive(Debug)]
pub struct BoostRegulator(BoostLoopDriver<BoostLoopConfig, SimPwm>);

impl BoostRegulator {
    /// The regulator at duty 0.
    ///
    /// # Errors
    ///
    /// The loop's ([`lenz::drive::BoostLoop::new`]); it cannot fail on a channel of the
    /// limiter's full scale, which is what this builds.
    pub fn new(cfg: BoostRegulatorConfig) -> Result<Self, DriveError<SimError>> {
        let pwm = SimPwm::new(cfg.driver.limiter().full_scale());
        BoostLoopDriver::new(cfg.driver, pwm).map(Self)
    }

    /// The duty written last, counts.
    #[must_use]
    pub const fn duty_counts(&self) -> u16 {
        self.0.driver().duty_counts()
    }
}

impl Controller for BoostRegulator {
    fn tick(&mut self, s: &Sensed) -> Actuation {
        self.0.tick(s)
    }

    fn telemetry(&self) -> Telemetry {
        self.0.telemetry()
    }
}
