//! Valve (or relay) driver: the [`lenz::drive::CoilDriver`] on a simulated PWM channel.
//!
//! What the example firmware executes is the driver firmware links, unchanged: pull-in at full
//! drive until the estimate reaches the pull-in current and the minimum pull-in time has
//! passed (or a longest pull-in time, after which it holds anyway and says so), then PWM hold
//! at a fixed duty, with the current estimator, plausibility monitor, instantaneous trip and
//! tracking off-timer wired in. A trip or a monitor fault latches the switch off; a new demand
//! waits until the off-timer reports the release. See [`lenz::drive::CoilDriver`] for the
//! order of the steps in a tick, and [`lenz::drive::HoldEstimatorConfig`] for how the
//! estimate is formed during PWM hold for each clamp kind.
//!
//! This file only plans it: [`ValvePlan`] (the SI values a firmware engineer would write
//! down) to [`lenz::drive::CoilDriverParams`], and the PWM channel's resolution. The harness
//! side is [`crate::sim_pins::CoilDriverLoop`].

use lenz::drive::{CoilDriverConfig, CoilDriverParams, DriveError, Hold, PullInSource};
use lenz::kernel::{MonitorParams, MovementConfig, SenseScale, TripParams};
use lenz::turnoff::Clamp;
use lenz::{Coil, Error, Range};

use crate::closed_loop::{Actuation, AdcChannel, Controller, Sensed, Telemetry};
use crate::sim_pins::{CoilDriverLoop, SimError, SimPwm};

/// The PWM resolution of the example firmware: a 20 kHz PWM from a 20 MHz timer clock
/// (1000 counts per period; invented for the demo).
pub const PWM_MAX_DUTY: u16 = 1000;

/// How long after the minimum pull-in time the example firmware waits for the pull-in
/// current before it holds anyway, s.
pub const PULL_IN_GRACE_S: f32 = 0.030;

/// Readings this close to either end of the ADC range are not trusted (a sense line at a
/// rail), counts.
const SENSE_MARGIN_COUNTS: u16 = 10;

/// Plan-side description of the driver.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ValvePlan {
    /// The coil (with the switch and shunt resistance of its loop).
    pub coil: Coil,
    /// Temperature the estimator is planned for (board sensor), °C.
    pub temp_c: f32,
    /// Control tick, s.
    pub tick_s: f32,
    /// The clamp network (the estimator's and the off-timer's off path, and the average
    /// coil voltage in PWM hold).
    pub clamp: Clamp,
    /// Supply range, V (the hold estimate's error bound is planned over it).
    pub supply_v: Range,
    /// Release current: below it the valve has dropped out and may be re-energized, A.
    pub release_a: f32,
    /// Pull-in ends when the estimate reaches this, A.
    pub pull_in_a: f32,
    /// And not before this time, s (armature travel).
    pub pull_in_min_s: f32,
    /// Longest pull-in: hold anyway after it, s.
    pub pull_in_max_s: f32,
    /// Hold duty (0 < duty ≤ 1).
    pub hold_duty: f32,
    /// PWM frequency, Hz.
    pub pwm_frequency_hz: f32,
    /// The PWM channel's `max_duty_cycle`.
    pub pwm_max_duty: u16,
    /// Current sense channel (nominal, as the firmware assumes it).
    pub current_adc: AdcChannel,
    /// Supply sense channel (nominal).
    pub supply_adc: AdcChannel,
    /// Plausibility monitor thresholds.
    pub monitor: MonitorParams,
    /// Instantaneous overcurrent trip threshold, A (one sample at or above it trips and
    /// latches).
    pub trip_threshold_a: f32,
    /// The armature movement detector: with it the pull-in ends on the seating (the pull-in
    /// current and minimum time are then not used), a pull-in without seating by its deadline
    /// latches the stuck-armature fault, and the release is watched for the drop-out
    /// ([`CoilDriverConfig::with_movement`]). Plan `coil` with the seated inductance then.
    pub movement: Option<MovementConfig>,
}

/// The driver's configuration and the PWM resolution it runs on.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ValveDriverConfig {
    driver: CoilDriverConfig,
    pwm_max_duty: u16,
}

impl ValveDriverConfig {
    /// Plans the driver ([`CoilDriverConfig::new`]) and checks that the PWM resolution can set
    /// the hold duty.
    ///
    /// # Errors
    ///
    /// The errors of [`CoilDriverConfig::new`] and [`SenseScale::new`]; `trip_threshold_a`
    /// outside the current channel's range; `hold_duty` when `pwm_max_duty` cannot set it
    /// within 1 % of full scale.
    pub fn new(p: &ValvePlan) -> Result<Self, Error> {
        let amps_per_count = p.current_adc.units_per_count() as f32;
        let max_code = p.current_adc.max_code();
        let zero = p.current_adc.zero_counts() as f32;
        let current_sense = SenseScale::new(
            amps_per_count,
            zero,
            SENSE_MARGIN_COUNTS,
            max_code.saturating_sub(SENSE_MARGIN_COUNTS),
        )?;
        let full_scale = max_code.saturating_sub(zero.round() as u16);
        let threshold = (p.trip_threshold_a / amps_per_count).ceil();
        if !(threshold >= 1.0 && threshold < f32::from(full_scale)) {
            return Err(Error::OutOfRange {
                param: "trip_threshold_a",
                value: p.trip_threshold_a,
                min: amps_per_count,
                max: amps_per_count * f32::from(full_scale),
            });
        }
        let driver = CoilDriverConfig::new(&CoilDriverParams {
            coil: p.coil,
            temp_c: p.temp_c,
            tick_s: p.tick_s,
            clamp: p.clamp,
            supply_v: p.supply_v,
            release_a: p.release_a,
            pull_in_a: p.pull_in_a,
            pull_in_source: PullInSource::Estimate,
            pull_in_min_s: p.pull_in_min_s,
            pull_in_max_s: p.pull_in_max_s,
            hold: Hold::Duty { duty: p.hold_duty },
            pwm_frequency_hz: p.pwm_frequency_hz,
            current_sense,
            supply_v_per_count: p.supply_adc.units_per_count() as f32,
            supply_zero_counts: p.supply_adc.zero_counts() as f32,
            monitor: p.monitor,
            trip: TripParams {
                sample_period_s: p.tick_s,
                amps_per_count,
                instantaneous_counts: threshold as u16,
                full_scale_counts: full_scale,
                blanking_s: 0.0,
                persistence_n: 1,
                persistence_m: 1,
                stuck_samples: 0,
                inverse: None,
                thermal: None,
                retries: 0,
                retry_delay_s: 0.0,
            },
        })?;
        let driver = match p.movement {
            Some(m) => driver.with_movement(m),
            None => driver,
        };
        let cfg = Self {
            driver,
            pwm_max_duty: p.pwm_max_duty,
        };
        // The resolution check is the driver's own, on a channel of the planned resolution.
        if ValveDriver::new(cfg).is_err() {
            return Err(Error::OutOfRange {
                param: "hold_duty",
                value: p.hold_duty,
                min: 1.0 / f32::from(p.pwm_max_duty.max(1)),
                max: 1.0,
            });
        }
        Ok(cfg)
    }

    /// The driver's configuration.
    #[must_use]
    pub const fn driver(&self) -> &CoilDriverConfig {
        &self.driver
    }

    /// The PWM channel's `max_duty_cycle`.
    #[must_use]
    pub const fn pwm_max_duty(&self) -> u16 {
        self.pwm_max_duty
    }
}

/// The valve driver on a simulated PWM channel of the planned resolution.
#[derive(Debug)]
pub struct ValveDriver(CoilDriverLoop<CoilDriverConfig, SimPwm>);

impl ValveDriver {
    /// The driver in its safe state (duty 0).
    ///
    /// # Errors
    ///
    /// The driver's ([`lenz::drive::CoilDriver::new`]); a configuration from
    /// [`ValveDriverConfig::new`] has passed this check.
    pub fn new(cfg: ValveDriverConfig) -> Result<Self, DriveError<SimError>> {
        CoilDriverLoop::new(cfg.driver, SimPwm::new(cfg.pwm_max_duty)).map(Self)
    }

    /// The driver, as firmware sees it.
    #[must_use]
    pub const fn driver(&self) -> &lenz::drive::CoilDriver<CoilDriverConfig, SimPwm> {
        self.0.driver()
    }
}

impl Controller for ValveDriver {
    fn tick(&mut self, s: &Sensed) -> Actuation {
        self.0.tick(s)
    }

    fn telemetry(&self) -> Telemetry {
        self.0.telemetry()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::closed_loop::demo::{DIODE, sensors, valve_loop, valve_plant};

    fn plan(hold_duty: f32, pwm_max_duty: u16) -> ValvePlan {
        let s = sensors();
        ValvePlan {
            coil: lenz::CoilParams::new(0.120, 32.0)
                .with_switch_resistance_ohm(0.1)
                .with_shunt_resistance_ohm(0.010)
                .validate()
                .unwrap(),
            temp_c: 20.0,
            tick_s: 100e-6,
            clamp: Clamp::Diode { forward_v: 0.7 },
            supply_v: Range::new("supply_v", 21.6, 26.4).unwrap(),
            release_a: 0.075,
            pull_in_a: 0.54,
            pull_in_min_s: 0.030,
            pull_in_max_s: 0.060,
            hold_duty,
            pwm_frequency_hz: 20e3,
            pwm_max_duty,
            current_adc: s.current,
            supply_adc: s.supply,
            monitor: MonitorParams {
                abs_tol_a: 0.05,
                rel_tol: 0.2,
                open_min_estimate_a: 0.1,
                open_max_a: 0.02,
                persistence: 3,
                stuck_samples: 50,
                stuck_min_change_a: 0.1,
            },
            trip_threshold_a: 2.0,
            movement: None,
        }
    }

    /// The PWM's resolution must set the hold duty within 1 % of full scale: 20 steps set
    /// 0.45 exactly, 8 steps only 0.375 or 0.5, and 0 steps (raised to an on/off output) only 1.
    #[test]
    fn the_pwm_resolution_must_carry_the_hold_duty() {
        assert!(ValveDriverConfig::new(&plan(0.45, 20)).is_ok());
        for steps in [8, 0] {
            let e = ValveDriverConfig::new(&plan(0.45, steps)).unwrap_err();
            assert_eq!(e.param(), "hold_duty", "{steps} steps");
        }
        assert!(ValveDriverConfig::new(&plan(1.0, 1)).is_ok());
    }

    /// The duty register the driver writes in hold is the planned duty in the PWM's counts, and
    /// the simulated channel hands it to the plant as that fraction.
    #[test]
    fn hold_duty_in_counts() {
        let cfg = ValveDriverConfig::new(&plan(0.45, 20)).unwrap();
        let mut v = ValveDriver::new(cfg).unwrap();
        let mut plant = valve_plant(20.0, 24.0, DIODE);
        let r = crate::closed_loop::run(
            &mut plant,
            &mut v,
            &valve_loop(0.05, vec![(0.001, true)], vec![]),
        )
        .unwrap();
        assert_eq!(v.driver().duty_counts(), 9);
        assert_eq!(r.waveform.drive.last(), Some(&0.45));
    }
}
