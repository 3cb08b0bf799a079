//! Valve (or relay) driver: pull-in at full voltage, then PWM hold.
//!
//! # Behaviour, per control tick
//!
//! 1. Read the supply (counts → mV by a Q16 factor: one multiply, no division).
//! 2. Advance the current estimator with the drive the previous tick applied. During PWM hold
//!    the estimator is fed the tick's average coil voltage `D·V_s − (1 − D)·V_f` on its on path
//!    (the ZOH of the average; the PWM ripple at 20 kHz is a few mA on the demo valve).
//! 3. Feed the delayed current sample (taken during the previous tick, offset removed) to the
//!    trip detector (instantaneous overcurrent, latching), and check it against the estimate for
//!    that tick with the plausibility monitor. A trip or any monitor fault latches the switch
//!    off until the driver is reset.
//! 4. State machine: `Idle` → (demand) → `PullIn` (switch on until the estimate reaches the
//!    pull-in current and the minimum pull-in time has passed) → `Hold` (PWM at the hold duty)
//!    → (demand off or trip) → `Releasing`: the tracking off-timer follows the decay from the
//!    estimate at switch-off through the clamp, and only when it reports the current below the
//!    release current does the driver return to `Idle` and accept a new demand. So the valve
//!    is never re-energized while it may still be held (or, on an H-bridge, never reversed
//!    into a flowing current).
//!
//! All per-tick arithmetic is integer; the plan ([`ValvePlan`]) is f32 at start-up.

use crate::closed_loop::{Actuation, AdcChannel, Controller, Sensed, Telemetry, TripCause};
use lenz::kernel::{
    EstimatorConfig, EstimatorState, MonitorConfig, MonitorParams, MonitorState, OffStatus,
    OffTimerState, SenseScale, TrackingOffTimerConfig, TripConfig, TripParams, TripState,
};
use lenz::turnoff::Clamp;
use lenz::{Coil, Error};

/// Plan-side description of the driver.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ValvePlan {
    /// The coil.
    pub coil: Coil,
    /// Temperature the estimator is planned for (board sensor), °C.
    pub temp_c: f32,
    /// Control tick, s.
    pub tick_s: f32,
    /// The clamp network (the estimator's and the off-timer's off path).
    pub clamp: Clamp,
    /// Release current: below it the valve has dropped out and may be re-energized, A.
    pub release_a: f32,
    /// Pull-in ends when the estimate reaches this, A.
    pub pull_in_a: f32,
    /// And not before this time, s (armature travel).
    pub pull_in_min_s: f32,
    /// Hold duty (0 ..= 1).
    pub hold_duty: f32,
    /// Current sense channel (nominal, as the firmware assumes it).
    pub current_adc: AdcChannel,
    /// Supply sense channel (nominal).
    pub supply_adc: AdcChannel,
    /// Plausibility monitor thresholds.
    pub monitor: MonitorParams,
    /// Instantaneous overcurrent trip threshold, A (one sample at or above it trips and
    /// latches).
    pub trip_threshold_a: f32,
}

/// Integer configuration of the driver (what the firmware keeps in flash or RAM).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ValveDriverConfig {
    estimator: EstimatorConfig,
    off_timer: TrackingOffTimerConfig,
    monitor: MonitorConfig,
    trip: TripConfig,
    current_zero_counts: u16,
    supply_mv_per_count_q16: i32,
    supply_zero_counts: i32,
    clamp_mv: i32,
    pull_in_ua: i32,
    pull_in_min_ticks: u32,
    hold_duty_q16: i32,
}

impl ValveDriverConfig {
    /// Plans the driver.
    ///
    /// # Errors
    ///
    /// The estimator's or monitor's plan errors, or a duty outside 0 ..= 1 (`hold_duty`), a
    /// negative pull-in time (`pull_in_min_s`) or a bad sense scale.
    pub fn new(p: &ValvePlan) -> Result<Self, Error> {
        let off_timer =
            TrackingOffTimerConfig::new(&p.coil, p.temp_c, p.tick_s, &p.clamp, p.release_a)?;
        // The off-timer's estimator has the same on path and the clamp's off path.
        let estimator = *off_timer.estimator();
        let scale = SenseScale::new(
            p.current_adc.units_per_count() as f32,
            p.current_adc.zero_counts() as f32,
            10,
            p.current_adc.max_code().saturating_sub(10),
        )?;
        let monitor = MonitorConfig::new(scale, &p.monitor)?;
        if !(0.0..=1.0).contains(&p.hold_duty) {
            return Err(Error::OutOfRange {
                param: "hold_duty",
                value: p.hold_duty,
                min: 0.0,
                max: 1.0,
            });
        }
        if !(p.pull_in_min_s >= 0.0 && p.pull_in_min_s < 100.0) {
            return Err(Error::OutOfRange {
                param: "pull_in_min_s",
                value: p.pull_in_min_s,
                min: 0.0,
                max: 100.0,
            });
        }
        let amps_per_count = p.current_adc.units_per_count() as f32;
        let zero = p.current_adc.zero_counts().round() as u16;
        let threshold = (p.trip_threshold_a / amps_per_count).ceil();
        if !(threshold >= 1.0 && threshold < f32::from(p.current_adc.max_code())) {
            return Err(Error::OutOfRange {
                param: "trip_threshold_a",
                value: p.trip_threshold_a,
                min: amps_per_count,
                max: amps_per_count * f32::from(p.current_adc.max_code().saturating_sub(zero)),
            });
        }
        let trip = TripConfig::new(&TripParams {
            sample_period_s: p.tick_s,
            amps_per_count,
            instantaneous_counts: threshold as u16,
            full_scale_counts: p.current_adc.max_code().saturating_sub(zero),
            blanking_s: 0.0,
            persistence_n: 1,
            persistence_m: 1,
            stuck_samples: 0,
            inverse: None,
            thermal: None,
            retries: 0,
            retry_delay_s: 0.0,
        })?;
        let mv_per_count = p.supply_adc.units_per_count() * 1000.0;
        Ok(Self {
            estimator,
            off_timer,
            monitor,
            trip,
            current_zero_counts: zero,
            supply_mv_per_count_q16: (mv_per_count * 65536.0).round() as i32,
            supply_zero_counts: p.supply_adc.zero_counts().round() as i32,
            clamp_mv: estimator.off_path().clamp_mv,
            pull_in_ua: (p.pull_in_a * 1e6).round() as i32,
            pull_in_min_ticks: (p.pull_in_min_s / p.tick_s).ceil() as u32,
            hold_duty_q16: (p.hold_duty * 65536.0).round() as i32,
        })
    }
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Phase {
    Idle,
    PullIn { ticks: u32 },
    Hold,
    Releasing,
}

/// What the switch did during the previous tick (for the estimator).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Applied {
    Off,
    On,
    Pwm,
}

/// The driver's per-channel state.
#[derive(Debug, Clone)]
pub struct ValveDriver {
    cfg: ValveDriverConfig,
    est: EstimatorState,
    mon: MonitorState,
    trip: TripState,
    off: OffTimerState,
    phase: Phase,
    applied: Applied,
    prev_estimate_ua: i32,
    tripped: bool,
}

impl ValveDriver {
    /// A driver in the safe state: switch off, no trip.
    #[must_use]
    pub fn new(cfg: ValveDriverConfig) -> Self {
        Self {
            cfg,
            est: EstimatorState::new(),
            mon: MonitorState::new(),
            trip: TripState::new(),
            off: OffTimerState::new(),
            phase: Phase::Idle,
            applied: Applied::Off,
            prev_estimate_ua: 0,
            tripped: false,
        }
    }

    /// `true` while the off-timer has not yet confirmed the release.
    #[must_use]
    pub fn releasing(&self) -> bool {
        self.phase == Phase::Releasing
    }

    /// The latched monitor fault, if any.
    #[must_use]
    pub fn fault(&self) -> Option<lenz::kernel::Fault> {
        self.mon.fault()
    }

    fn supply_mv(&self, counts: u16) -> i32 {
        let d = counts as i64 - self.cfg.supply_zero_counts as i64;
        ((d * self.cfg.supply_mv_per_count_q16 as i64) >> 16).clamp(0, i32::MAX as i64) as i32
    }
}

impl Controller for ValveDriver {
    fn tick(&mut self, s: &Sensed) -> Actuation {
        let c = self.cfg;
        let supply_mv = self.supply_mv(s.supply_counts);
        let estimate_ua = match self.applied {
            Applied::Off => c.estimator.update(&mut self.est, false, supply_mv),
            Applied::On => c.estimator.update(&mut self.est, true, supply_mv),
            Applied::Pwm => {
                // Average coil voltage of the tick: D·V_s − (1 − D)·V_f.
                let on = (supply_mv as i64 * c.hold_duty_q16 as i64) >> 16;
                let off = ((65536 - c.hold_duty_q16) as i64 * c.clamp_mv as i64) >> 16;
                let avg = (on - off).clamp(0, i32::MAX as i64) as i32;
                c.estimator.update(&mut self.est, true, avg)
            }
        };
        // The current sample was taken during the previous tick, with the switch as applied
        // then: overcurrent first, then plausibility against the estimate for that tick.
        let reading = s.current_counts.saturating_sub(c.current_zero_counts);
        let verdict = c
            .trip
            .update(&mut self.trip, reading, self.applied != Applied::Off);
        if !verdict.switch_allowed() {
            self.tripped = true;
        }
        if c.monitor
            .update(&mut self.mon, self.prev_estimate_ua, s.current_counts)
            .is_some()
        {
            self.tripped = true;
        }
        self.prev_estimate_ua = estimate_ua;

        if self.phase == Phase::Releasing
            && c.off_timer.update(&mut self.off, supply_mv) == OffStatus::Released
        {
            self.phase = Phase::Idle;
        }
        let energized = matches!(self.phase, Phase::PullIn { .. } | Phase::Hold);
        let (act, applied) = if self.tripped || !s.demand {
            if energized {
                // Switch-off: follow the decay from the present estimate.
                c.off_timer.start(&mut self.off, estimate_ua);
                self.phase = Phase::Releasing;
            }
            (Actuation::OFF, Applied::Off)
        } else {
            match self.phase {
                Phase::Releasing => (Actuation::OFF, Applied::Off),
                Phase::Idle => {
                    self.phase = Phase::PullIn { ticks: 0 };
                    (Actuation::ON, Applied::On)
                }
                Phase::PullIn { ticks } => {
                    if ticks >= c.pull_in_min_ticks && estimate_ua >= c.pull_in_ua {
                        self.phase = Phase::Hold;
                        (
                            Actuation::pwm(c.hold_duty_q16 as f64 / 65536.0),
                            Applied::Pwm,
                        )
                    } else {
                        self.phase = Phase::PullIn {
                            ticks: ticks.saturating_add(1),
                        };
                        (Actuation::ON, Applied::On)
                    }
                }
                Phase::Hold => (
                    Actuation::pwm(c.hold_duty_q16 as f64 / 65536.0),
                    Applied::Pwm,
                ),
            }
        };
        self.applied = applied;
        act
    }

    fn telemetry(&self) -> Telemetry {
        Telemetry {
            estimate_a: Some(self.est.current_ua() as f64 * 1e-6),
            tripped: self.tripped,
            trip_cause: self.tripped.then(|| {
                self.mon
                    .fault()
                    .map_or(TripCause::Instantaneous, TripCause::Plausibility)
            }),
        }
    }
}
