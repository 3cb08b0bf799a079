//! The coil driver's configuration: the kernel configurations it wires together and its own
//! integer settings, planned from SI values or loaded from raw constants.

use crate::bounds::Range;
use crate::coil::Coil;
use crate::error::{Error, in_range, non_negative, positive};
use crate::kernel::{
    CURRENT_LIMIT_UA, EstimatorConfig, MonitorConfig, MonitorParams, MonitorRaw, MovementConfig,
    MovementRaw, SenseScale, TrackingOffTimerConfig, TrackingOffTimerRaw, TripConfig, TripParams,
    TripRaw,
};
use crate::turnoff::Clamp;

use super::hold::{HoldDuty, HoldEstimatorConfig, HoldEstimatorRaw, LoopModel};

const UA_PER_A: f32 = 1.0e6;
/// Longest pull-in time in ticks the plan accepts (about 28 h at 10 kHz).
const PULL_IN_TICKS_MAX: f32 = 1.0e9;
/// Q32 duty per µA for a gain of one duty per ampere: `2³²·10⁻⁶`.
const Q32_DUTY_PER_UA: f32 = 4_294.967_3;

/// What ends the pull-in (together with the minimum pull-in time).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub enum PullInSource {
    /// The estimator's current reaches the pull-in current.
    Estimate,
    /// The measured current (the current sense reading, inside its valid window) reaches it.
    Measured,
}

/// How the coil is held after the pull-in, plan side.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub enum Hold {
    /// PWM at a fixed duty (`1.0`: stay at full drive, as an on/off switch must).
    Duty {
        /// Duty, `0 < duty ≤ 1`.
        duty: f32,
    },
    /// PWM duty regulated so the measured current stays at `current_a`: a PI loop on the
    /// current sense reading (integer, anti-windup by conditional integration).
    Current {
        /// Hold current, A.
        current_a: f32,
        /// Proportional gain, duty per ampere of error.
        kp_per_a: f32,
        /// Integral gain, duty per ampere of error per tick.
        ki_per_a_tick: f32,
    },
}

/// How the hold is run, in the raw configuration.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub enum HoldMode {
    /// Fixed duty: the hold estimator's reference duty.
    Duty,
    /// Regulated current (PI), starting from the reference duty.
    Current,
}

/// Plan-side description of a coil driver, in SI units.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize))]
pub struct CoilDriverParams {
    /// The coil and its drive (switch, shunt, source resistance and drops).
    pub coil: Coil,
    /// Temperature the estimator is planned for (a board sensor, or the design's worst case),
    /// °C.
    pub temp_c: f32,
    /// Control tick: the period of [`CoilDriver::update`](super::CoilDriver::update), s.
    pub tick_s: f32,
    /// The clamp the coil's current decays through when the switch opens.
    pub clamp: Clamp,
    /// Supply range (for the hold's error bound and continuous-conduction check), V.
    pub supply_v: Range,
    /// Release current: below it the coil has dropped out and may be energized again, A.
    pub release_a: f32,
    /// Pull-in current, A.
    pub pull_in_a: f32,
    /// What must reach the pull-in current.
    pub pull_in_source: PullInSource,
    /// Shortest pull-in (armature travel), s.
    pub pull_in_min_s: f32,
    /// Longest pull-in: after it the driver holds even if the pull-in current was not reached
    /// (and says so: [`CoilDriver::pull_in_timed_out`](super::CoilDriver::pull_in_timed_out)), s.
    pub pull_in_max_s: f32,
    /// The hold.
    pub hold: Hold,
    /// Frequency of the PWM that drives the switch, Hz (at least the tick rate).
    pub pwm_frequency_hz: f32,
    /// Current sense: scale and valid window of the readings.
    pub current_sense: SenseScale,
    /// Supply voltage per supply ADC count, V.
    pub supply_v_per_count: f32,
    /// Supply reading at 0 V, counts.
    pub supply_zero_counts: f32,
    /// Plausibility monitor thresholds.
    pub monitor: MonitorParams,
    /// Trip detector (its sample period must be the tick).
    pub trip: TripParams,
}

/// The raw values of a [`CoilDriverConfig`], for constants emitted by the host tool
/// ([`CoilDriverConfig::from_raw`], [`CoilDriverConfig::raw`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct CoilDriverRaw {
    /// The off-timer, with the coil's estimator (on path: pull-in; off path: the decay).
    pub off_timer: TrackingOffTimerRaw,
    /// The hold estimator (the loop averaged over the PWM period).
    pub hold: HoldEstimatorRaw,
    /// The plausibility monitor (with the current sense scale).
    pub monitor: MonitorRaw,
    /// The trip detector.
    pub trip: TripRaw,
    /// Supply reading at 0 V, counts.
    pub supply_zero_counts: u16,
    /// Supply per count, mV, Q16.
    pub supply_mv_per_count_q16: i32,
    /// Pull-in current, µA.
    pub pull_in_ua: i32,
    /// What must reach the pull-in current.
    pub pull_in_source: PullInSource,
    /// Shortest pull-in, ticks.
    pub pull_in_min_ticks: u32,
    /// Longest pull-in, ticks.
    pub pull_in_max_ticks: u32,
    /// Fixed duty or regulated current.
    pub hold_mode: HoldMode,
    /// Hold current of the regulation, µA.
    pub hold_current_ua: i32,
    /// Proportional gain of the regulation, Q32 duty per µA.
    pub hold_kp_q32: i32,
    /// Integral gain of the regulation, Q32 duty per µA per tick.
    pub hold_ki_q32: i32,
    /// The armature movement detector, if the pull-in ends on the seating
    /// ([`CoilDriverConfig::with_movement`]).
    pub movement: Option<MovementRaw>,
}

/// The coil driver's configuration (shared by channels with the same coil and settings; can
/// live in flash, see [`CoilDriverConfig::from_raw`]).
///
/// A plain composition: the coil's [`EstimatorConfig`] inside the [`TrackingOffTimerConfig`]
/// (on path for the pull-in, the clamp's off path for the decay), the
/// [`HoldEstimatorConfig`] (PWM hold), the [`MonitorConfig`], the [`TripConfig`], and the
/// driver's own integer settings.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct CoilDriverConfig {
    off_timer: TrackingOffTimerConfig,
    hold: HoldEstimatorConfig,
    monitor: MonitorConfig,
    trip: TripConfig,
    supply_zero_counts: u16,
    supply_mv_per_count_q16: i32,
    pull_in_ua: i32,
    pull_in_source: PullInSource,
    pull_in_min_ticks: u32,
    pull_in_max_ticks: u32,
    hold_mode: HoldMode,
    hold_current_ua: i32,
    hold_kp_q32: i32,
    hold_ki_q32: i32,
    movement: Option<MovementConfig>,
}

fn ticks(param: &'static str, s: f32, tick: f32) -> Result<u32, Error> {
    let n = libm::ceilf(non_negative(param, s)? / tick * (1.0 - 1.0e-6));
    Ok(
        in_range(param, n, 0.0, PULL_IN_TICKS_MAX).map_err(|_| Error::OutOfRange {
            param,
            value: s,
            min: 0.0,
            max: PULL_IN_TICKS_MAX * tick,
        })? as u32,
    )
}

fn amps_to_ua(param: &'static str, a: f32) -> Result<i32, Error> {
    let limit = CURRENT_LIMIT_UA as f32 / UA_PER_A;
    let a = in_range(param, positive(param, a)?, 0.0, limit)?;
    Ok(libm::roundf(a * UA_PER_A) as i32)
}

fn gain_q32(param: &'static str, g: f32) -> Result<i32, Error> {
    let max = i32::MAX as f32 / Q32_DUTY_PER_UA;
    let g = in_range(param, non_negative(param, g)?, 0.0, max)?;
    Ok(libm::roundf(g * Q32_DUTY_PER_UA) as i32)
}

impl CoilDriverConfig {
    /// Plan side: the integer configuration of a coil driver.
    ///
    /// Checks beyond each kernel's own: the trip detector samples at the tick; the hold is
    /// averaged validly (continuous conduction, a PWM no slower than the tick, see
    /// [`HoldEstimatorConfig`]); a regulated hold current is reachable at the lowest supply; and
    /// the monitor's tolerance at the smallest hold current covers the hold estimate's error
    /// bound, so the averaging alone cannot raise a low-resistance fault.
    ///
    /// # Errors
    ///
    /// The errors of [`TrackingOffTimerConfig::new`] (an unclamped switch-off: `clamp`),
    /// [`MonitorConfig::new`], [`TripConfig::new`] and [`HoldEstimatorConfig`]'s plan; and, named:
    /// `sample_period_s` (not the tick), `supply_v_per_count`, `supply_zero_counts`, `pull_in_a`,
    /// `pull_in_min_s`, `pull_in_max_s` (below the minimum), `hold_duty`, `hold_current_a` (not
    /// positive, above the pull-in current, or unreachable at the lowest supply), `kp_per_a`,
    /// `ki_per_a_tick`, `abs_tol_a` (below what the hold's error bound needs).
    pub fn new(p: &CoilDriverParams) -> Result<Self, Error> {
        let tick = positive("tick_s", p.tick_s)?;
        let off_timer =
            TrackingOffTimerConfig::new(&p.coil, p.temp_c, tick, &p.clamp, p.release_a)?;
        let ts = positive("sample_period_s", p.trip.sample_period_s)?;
        if (ts - tick).abs() > 1.0e-6 * tick {
            return Err(Error::OutOfRange {
                param: "sample_period_s",
                value: ts,
                min: tick,
                max: tick,
            });
        }
        let trip = TripConfig::new(&p.trip)?;
        let monitor = MonitorConfig::new(p.current_sense, &p.monitor)?;
        let v_per_count = in_range(
            "supply_v_per_count",
            positive("supply_v_per_count", p.supply_v_per_count)?,
            1.0e-6,
            30.0,
        )?;
        let zero = in_range("supply_zero_counts", p.supply_zero_counts, 0.0, 65_535.0)?;
        let pull_in_ua = amps_to_ua("pull_in_a", p.pull_in_a)?;
        let pull_in_min_ticks = ticks("pull_in_min_s", p.pull_in_min_s, tick)?;
        let pull_in_max_ticks = ticks("pull_in_max_s", p.pull_in_max_s, tick)?;
        if pull_in_max_ticks < pull_in_min_ticks {
            return Err(Error::OutOfRange {
                param: "pull_in_max_s",
                value: p.pull_in_max_s,
                min: p.pull_in_min_s,
                max: PULL_IN_TICKS_MAX * tick,
            });
        }
        let lp = LoopModel::new(&p.coil, p.temp_c, &p.clamp)?;
        let (vs_lo, vs_hi) = (p.supply_v.min(), p.supply_v.max());
        // The largest current the estimator follows in hold: the pull-in current, or the
        // steady current at full drive and the highest supply if a hold duty of 1 allows it.
        let full_a = lp.mean_current_a(1.0, vs_hi);
        let (hold, hold_mode, hold_current_ua, kp, ki, held_min_a) = match p.hold {
            Hold::Duty { duty } => {
                let hold = HoldEstimatorConfig::with_fixed_duty(
                    &p.coil,
                    p.temp_c,
                    tick,
                    &p.clamp,
                    p.pwm_frequency_hz,
                    p.supply_v,
                    duty,
                    p.pull_in_a.max(full_a),
                )?;
                let held = lp
                    .mean_current_a(duty, vs_lo)
                    .min(lp.mean_current_a(duty, vs_hi));
                (hold, HoldMode::Duty, 0, 0, 0, held)
            }
            Hold::Current {
                current_a,
                kp_per_a,
                ki_per_a_tick,
            } => {
                let i_ua = amps_to_ua("hold_current_a", current_a)?;
                if current_a > p.pull_in_a {
                    return Err(Error::OutOfRange {
                        param: "hold_current_a",
                        value: current_a,
                        min: 0.0,
                        max: p.pull_in_a,
                    });
                }
                // Reachable at the lowest supply; planned around the middle of the range.
                let d_lo = lp.duty_for(current_a, vs_lo);
                if d_lo.is_nan() || d_lo > 1.0 {
                    return Err(Error::Unreachable {
                        param: "hold_current_a",
                        target: current_a,
                        limit: lp.mean_current_a(1.0, vs_lo),
                    });
                }
                let d_ref = lp.duty_for(current_a, p.supply_v.mid()).clamp(0.0, 1.0);
                let hold = HoldEstimatorConfig::new(
                    &lp,
                    tick,
                    p.pwm_frequency_hz,
                    p.supply_v,
                    HoldDuty::Regulated(d_ref),
                    p.pull_in_a.max(full_a),
                    current_a,
                    "hold_current_a",
                )?;
                (
                    hold,
                    HoldMode::Current,
                    i_ua,
                    gain_q32("kp_per_a", kp_per_a)?,
                    gain_q32("ki_per_a_tick", ki_per_a_tick)?,
                    current_a,
                )
            }
        };
        // measured > estimate + abs + rel·estimate raises a low-resistance fault: the tolerance
        // at the smallest hold current must cover the averaging's error bound.
        let bound_a = hold.error_bound_ua() as f32 / UA_PER_A;
        let tol_a = p.monitor.abs_tol_a + p.monitor.rel_tol * held_min_a;
        if tol_a.is_nan() || tol_a < bound_a {
            return Err(Error::OutOfRange {
                param: "abs_tol_a",
                value: p.monitor.abs_tol_a,
                min: bound_a - p.monitor.rel_tol * held_min_a,
                max: 2000.0,
            });
        }
        Ok(Self {
            off_timer,
            hold,
            monitor,
            trip,
            supply_zero_counts: libm::roundf(zero) as u16,
            supply_mv_per_count_q16: libm::roundf(v_per_count * 1000.0 * 65536.0) as i32,
            pull_in_ua,
            pull_in_source: p.pull_in_source,
            pull_in_min_ticks,
            pull_in_max_ticks,
            hold_mode,
            hold_current_ua,
            hold_kp_q32: kp,
            hold_ki_q32: ki,
            movement: None,
        })
    }

    /// From raw values (constants emitted by the host tool). Any values are safe to run: wrong
    /// ones make the driver wrong (and most likely fault it off), never panic.
    #[must_use]
    pub const fn from_raw(raw: CoilDriverRaw) -> Self {
        Self {
            off_timer: TrackingOffTimerConfig::from_raw(raw.off_timer),
            hold: HoldEstimatorConfig::from_raw(raw.hold),
            monitor: MonitorConfig::from_raw(raw.monitor),
            trip: TripConfig::from_raw(raw.trip),
            supply_zero_counts: raw.supply_zero_counts,
            supply_mv_per_count_q16: raw.supply_mv_per_count_q16,
            pull_in_ua: raw.pull_in_ua,
            pull_in_source: raw.pull_in_source,
            pull_in_min_ticks: raw.pull_in_min_ticks,
            pull_in_max_ticks: raw.pull_in_max_ticks,
            hold_mode: raw.hold_mode,
            hold_current_ua: raw.hold_current_ua,
            hold_kp_q32: raw.hold_kp_q32,
            hold_ki_q32: raw.hold_ki_q32,
            movement: match raw.movement {
                Some(m) => Some(MovementConfig::from_raw(m)),
                None => None,
            },
        }
    }

    /// The raw values: `CoilDriverConfig::from_raw(cfg.raw()) == cfg`.
    #[must_use]
    pub const fn raw(&self) -> CoilDriverRaw {
        CoilDriverRaw {
            off_timer: self.off_timer.raw(),
            hold: self.hold.raw(),
            monitor: self.monitor.raw(),
            trip: self.trip.raw(),
            supply_zero_counts: self.supply_zero_counts,
            supply_mv_per_count_q16: self.supply_mv_per_count_q16,
            pull_in_ua: self.pull_in_ua,
            pull_in_source: self.pull_in_source,
            pull_in_min_ticks: self.pull_in_min_ticks,
            pull_in_max_ticks: self.pull_in_max_ticks,
            hold_mode: self.hold_mode,
            hold_current_ua: self.hold_current_ua,
            hold_kp_q32: self.hold_kp_q32,
            hold_ki_q32: self.hold_ki_q32,
            movement: match &self.movement {
                Some(m) => Some(m.raw()),
                None => None,
            },
        }
    }

    /// The same configuration with the armature movement detector: the pull-in then ends when
    /// the detector reports the armature seated ([`Motion::Seated`](crate::kernel::Motion)),
    /// with the maximum pull-in time as the fallback (switch to hold, flagged as timed out), and
    /// [`Motion::NoMotion`](crate::kernel::Motion) at the detector's deadline latches
    /// [`CoilFault::Stuck`](super::CoilFault::Stuck). The pull-in current, its source and the
    /// minimum pull-in time are then not used. The detector needs full drive during the pull-in
    /// (the driver gives it) and a dip deeper than its hysteresis (see [`MovementConfig`]);
    /// plan its deadline below the maximum pull-in time, or the fallback comes first.
    ///
    /// The estimator's inductance is fixed, the moving armature's is not: during the pull-in
    /// the plausibility monitor is blanked (the trip detector and the detector's deadline
    /// watch it; an open coil shows no peak and ends in the stuck fault), and at the seating
    /// the estimate starts again from the measured current; after a switch-off it is blanked
    /// until the off-timer confirms the release and the detector has seen the drop-out (or
    /// passed its release deadline): the opening armature's inductance falls and its motion
    /// lifts the current above the seated coil's decay, and a plunger that drops out late
    /// (a low-resistance, high-inductance coil) does so after the off-timer's release. The
    /// estimate then starts again from the measured current. Plan the coil model with the
    /// seated armature's inductance, so the estimate in hold and in the decay after switch-off
    /// follows the seated coil. At each switch-off (without a latched fault) the detector
    /// watches the release: [`CoilDriver::motion`](super::CoilDriver::motion) then reports
    /// `Decaying`, `DroppedOut { tick }` (ticks from the first tick after the switch-off) or
    /// `NoDropOut`.
    ///
    /// Without it the driver behaves exactly as before.
    ///
    /// # Examples
    ///
    /// The demo valve (invented values) with a current trace that dips while the plunger
    /// moves and rises again from its valley at the seating (tick 45 of the pull-in):
    ///
    /// ```
    /// # use lenz::{CoilParams, Range, turnoff::Clamp};
    /// # use lenz::kernel::{MonitorParams, Motion, MovementConfig, MovementParams, SenseScale, TripParams};
    /// # use lenz::drive::{CoilDriver, CoilDriverConfig, CoilDriverParams, CoilPhase, CoilSense, Hold, PullInSource};
    /// # struct Pwm(u16);
    /// # impl embedded_hal::pwm::ErrorType for Pwm { type Error = core::convert::Infallible; }
    /// # impl embedded_hal::pwm::SetDutyCycle for Pwm {
    /// #     fn max_duty_cycle(&self) -> u16 { 1000 }
    /// #     fn set_duty_cycle(&mut self, d: u16) -> Result<(), Self::Error> { self.0 = d; Ok(()) }
    /// # }
    /// # let amps_per_count = 0.5e-3;
    /// # let params = CoilDriverParams {
    /// #     coil: CoilParams::new(0.120, 32.0).validate()?, temp_c: 20.0, tick_s: 100e-6,
    /// #     clamp: Clamp::Zener { zener_v: 24.0, forward_v: 0.7 },
    /// #     supply_v: Range::new("supply_v", 21.6, 26.4)?, release_a: 0.075, pull_in_a: 0.45,
    /// #     pull_in_source: PullInSource::Estimate, pull_in_min_s: 5e-3, pull_in_max_s: 50e-3,
    /// #     hold: Hold::Duty { duty: 0.75 }, pwm_frequency_hz: 20e3,
    /// #     current_sense: SenseScale::new(amps_per_count, 100.0, 10, 4085)?,
    /// #     supply_v_per_count: 0.01, supply_zero_counts: 0.0,
    /// #     monitor: MonitorParams {
    /// #         abs_tol_a: 0.05, rel_tol: 0.2, open_min_estimate_a: 0.1, open_max_a: 0.01,
    /// #         persistence: 5, stuck_samples: 1000, stuck_min_change_a: 0.05,
    /// #     },
    /// #     trip: TripParams {
    /// #         sample_period_s: 100e-6, amps_per_count, instantaneous_counts: 3000,
    /// #         full_scale_counts: 3995, blanking_s: 0.0, persistence_n: 1, persistence_m: 1,
    /// #         stuck_samples: 0, inverse: None, thermal: None, retries: 0, retry_delay_s: 0.0,
    /// #     },
    /// # };
    /// let detector = MovementConfig::new(&MovementParams {
    ///     tick_s: 100e-6, hysteresis_a: 0.02, persistence: 3, min_peak_a: 0.2,
    ///     min_release_a: 0.05, pull_in_deadline_s: 0.02, release_deadline_s: 0.04,
    /// })?;
    /// let cfg = CoilDriverConfig::new(&params)?.with_movement(detector);
    /// let mut valve = CoilDriver::new(&cfg, Pwm(0)).map_err(|(e, _)| e).unwrap();
    /// // Pull-in current at pull-in tick k, A: up to 0.36 A, down to 0.27 A at k = 45, up.
    /// let dip = |k: i32| if k <= 30 { 0.012 * k as f32 } else if k <= 45 {
    ///     0.36 - 0.006 * (k - 30) as f32 } else { 0.27 + 0.01 * (k - 45) as f32 };
    /// let mut held_at = None;
    /// for tick in 0..60 {
    ///     let i = dip((tick - 1).max(0));
    ///     let sense = CoilSense { current_counts: 100 + (i / amps_per_count) as u16, supply_counts: 2400 };
    ///     if valve.update(true, sense).unwrap() == CoilPhase::Hold && held_at.is_none() {
    ///         held_at = Some(tick);
    ///     }
    /// }
    /// assert_eq!(valve.motion(), Motion::Seated { tick: 45 });
    /// assert_eq!(held_at, Some(51)); // three samples above the valley decide
    /// # Ok::<(), lenz::Error>(())
    /// ```
    #[must_use]
    pub const fn with_movement(mut self, movement: MovementConfig) -> Self {
        self.movement = Some(movement);
        self
    }

    /// The armature movement detector, if configured.
    #[inline]
    #[must_use]
    pub const fn movement(&self) -> Option<&MovementConfig> {
        self.movement.as_ref()
    }

    /// The off-timer (with the coil's estimator).
    #[inline]
    #[must_use]
    pub const fn off_timer(&self) -> &TrackingOffTimerConfig {
        &self.off_timer
    }

    /// The coil's estimator: on path for the pull-in, the clamp's off path for the decay.
    #[inline]
    #[must_use]
    pub const fn estimator(&self) -> &EstimatorConfig {
        self.off_timer.estimator()
    }

    /// The hold estimator.
    #[inline]
    #[must_use]
    pub const fn hold(&self) -> &HoldEstimatorConfig {
        &self.hold
    }

    /// The plausibility monitor.
    #[inline]
    #[must_use]
    pub const fn monitor(&self) -> &MonitorConfig {
        &self.monitor
    }

    /// The trip detector.
    #[inline]
    #[must_use]
    pub const fn trip(&self) -> &TripConfig {
        &self.trip
    }

    /// Supply reading at 0 V, counts.
    #[inline]
    #[must_use]
    pub const fn supply_zero_counts(&self) -> u16 {
        self.supply_zero_counts
    }

    /// Supply per count, mV, Q16.
    #[inline]
    #[must_use]
    pub const fn supply_mv_per_count_q16(&self) -> i32 {
        self.supply_mv_per_count_q16
    }

    /// Pull-in current, µA.
    #[inline]
    #[must_use]
    pub const fn pull_in_ua(&self) -> i32 {
        self.pull_in_ua
    }

    /// What must reach the pull-in current.
    #[inline]
    #[must_use]
    pub const fn pull_in_source(&self) -> PullInSource {
        self.pull_in_source
    }

    /// Shortest pull-in, ticks.
    #[inline]
    #[must_use]
    pub const fn pull_in_min_ticks(&self) -> u32 {
        self.pull_in_min_ticks
    }

    /// Longest pull-in, ticks.
    #[inline]
    #[must_use]
    pub const fn pull_in_max_ticks(&self) -> u32 {
        self.pull_in_max_ticks
    }

    /// Fixed duty or regulated current.
    #[inline]
    #[must_use]
    pub const fn hold_mode(&self) -> HoldMode {
        self.hold_mode
    }

    /// Hold current of the regulation, µA.
    #[inline]
    #[must_use]
    pub const fn hold_current_ua(&self) -> i32 {
        self.hold_current_ua
    }

    /// Proportional gain of the regulation, Q32 duty per µA.
    #[inline]
    #[must_use]
    pub const fn hold_kp_q32(&self) -> i32 {
        self.hold_kp_q32
    }

    /// Integral gain of the regulation, Q32 duty per µA per tick.
    #[inline]
    #[must_use]
    pub const fn hold_ki_q32(&self) -> i32 {
        self.hold_ki_q32
    }

    /// The supply in mV for a supply reading (saturating, negative as 0).
    #[inline]
    #[must_use]
    pub fn supply_mv(&self, counts: u16) -> i32 {
        super::supply::supply_mv(
            counts,
            self.supply_zero_counts,
            self.supply_mv_per_count_q16,
        )
    }
}
