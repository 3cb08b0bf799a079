//! The coil driver: pull-in, hold, safe switch-off and re-energize, faults, on one switch
//! output.

use core::borrow::Borrow;

use embedded_hal::pwm::SetDutyCycle;

use crate::kernel::q::{clamp_i64, mul_wide};
use crate::kernel::{
    Cause, EstimatorState, MonitorState, Motion, MovementState, OffStatus, OffTimerState,
    TripEvent, TripState, Verdict,
};

use super::coil_config::{CoilDriverConfig, HoldMode, PullInSource};
use super::coil_status::{CoilFault, CoilPhase};
use super::duty::{DUTY_ONE_Q16, DutyScale};
use super::error::DriveError;

/// Largest difference between the planned hold duty and the one the PWM can set, Q16 (1 % of
/// full scale).
const HOLD_DUTY_TOLERANCE_Q16: u32 = 655;

const RELEASED: u8 = 1;
const PULL_IN_TIMED_OUT: u8 = 2;
/// Writing duty 0 failed: retry every tick.
const OFF_PENDING: u8 = 4;
/// With the movement detector: the monitor is blanked from the switch-off until the off
/// timer has confirmed the release and the detector has left `Decaying` (drop-out seen or
/// its deadline passed).
const OFF_BLANKED: u8 = 8;

/// The readings of one control tick, as the ADC gave them (the conversion of the previous
/// tick: the current sample was taken while the switch was as it was then).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct CoilSense {
    /// Coil current reading, counts (zero current at the sense scale's offset).
    pub current_counts: u16,
    /// Supply reading, counts.
    pub supply_counts: u16,
}

/// The coil driver's per-channel state: the kernels' states and the driver's own (128 bytes;
/// see [`CoilDriver`] for the whole RAM per channel).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct CoilDriverState {
    est: EstimatorState,
    mon: MonitorState,
    trip: TripState,
    off: OffTimerState,
    /// Integrator of the current regulation, Q32 duty.
    integ_q32: i64,
    prev_estimate_ua: i32,
    pull_in_ticks: u32,
    last_trip: Option<TripEvent>,
    /// The duty last written successfully, counts.
    duty: u16,
    phase: CoilPhase,
    fault: Option<CoilFault>,
    flags: u8,
    /// The armature movement detector (idle when not configured).
    motion: MovementState,
}

impl CoilDriverState {
    /// Off, released, no fault, no history.
    #[must_use]
    pub const fn new() -> Self {
        Self {
            est: EstimatorState::new(),
            mon: MonitorState::new(),
            trip: TripState::new(),
            off: OffTimerState::new(),
            integ_q32: 0,
            prev_estimate_ua: 0,
            pull_in_ticks: 0,
            last_trip: None,
            duty: 0,
            phase: CoilPhase::Idle,
            fault: None,
            flags: RELEASED,
            motion: MovementState::new(),
        }
    }
}

impl Default for CoilDriverState {
    fn default() -> Self {
        Self::new()
    }
}

/// A coil (valve, relay, contactor) driver on one switch output.
///
/// # Per tick
///
/// The firmware calls [`CoilDriver::update`] from its control interrupt, once per tick, with
/// the application's demand and the tick's readings. In order:
///
/// 1. **Estimate**: the current estimator advances over the tick that ends now with the drive
///    the PWM had during it: the off path (duty 0: the decay through the clamp), the on path
///    (full drive), or the hold estimator (any other duty: the loop averaged over the PWM
///    period, see [`HoldEstimatorConfig`](super::HoldEstimatorConfig) for how the average coil
///    voltage is formed per clamp kind and the error bound).
/// 2. **Trip**: the current reading (offset removed) goes to the trip detector with the switch
///    state it was taken under. A trip switches off; the detector's retry policy decides when
///    it may come back, and its latch latches the driver.
/// 3. **Plausibility**: the reading is checked against the estimate for its instant (the
///    estimate of the previous tick). A fault latches the driver.
/// 4. **Release**: while off, the tracking off-timer follows the decay from the current at
///    switch-off.
/// 5. **Phase**: idle → (demand, coil released, trip allows) → pull-in at full drive until
///    the pull-in current (estimated or measured) and the minimum pull-in time (or the maximum
///    pull-in time) → hold (fixed duty, or the measured current regulated by a PI loop) →
///    (demand off, trip or fault) → releasing until the off-timer reports the current below
///    the release current → idle. A demand that comes while releasing waits: the coil is never
///    re-energized while it may still be held.
/// 6. **Output**: the duty is written only when it changes.
///
/// At switch-off the off-timer starts from the estimate (plus the hold estimate's error bound
/// when switching off from a PWM hold) or the measured current, whichever is higher (the safe
/// side: a later release).
///
/// Integer only in the tick: no float, no division, no allocation, no panic.
///
/// # Faults
///
/// A trip detector latch, a plausibility fault or an output error latches the driver off
/// ([`CoilPhase::Faulted`], cause in [`CoilDriver::fault`]) until
/// [`CoilDriver::clear_fault`]. An output error is returned from the tick that met it, after
/// the driver tried to write duty 0; if that write failed too, every following tick retries it
/// (and returns the error again until it succeeds). The kernels keep running while faulted, so
/// the estimate and the off-timer follow the decay.
///
/// # Memory
///
/// RAM per channel: the state ([`CoilDriverState`], 128 bytes, 16 of them the armature
/// movement detector's), the output handle `S`, the
/// configuration handle `C` (a reference: one pointer; or the configuration itself, 880 bytes,
/// most of it the trip detector's table), and 10 bytes of PWM resolution and hold duty,
/// padded to a multiple of 8 (144 bytes in all with a reference and a zero-sized output on a
/// 32-bit target).
/// The configuration is best kept in flash and shared:
/// `CoilDriver::new(&CONFIG, pwm)` with `static CONFIG: CoilDriverConfig =
/// CoilDriverConfig::from_raw(...)`.
///
/// # Examples
///
/// See the [module docs](super) for a complete pull-in, hold and switch-off cycle.
#[derive(Debug)]
pub struct CoilDriver<C, S> {
    cfg: C,
    out: S,
    scale: DutyScale,
    hold_counts: u16,
    state: CoilDriverState,
}

/// The current a reading stands for, if it lies in the sense's valid window, µA.
#[inline]
fn measured_ua(cfg: &CoilDriverConfig, counts: u16) -> Option<i32> {
    let s = cfg.monitor().scale();
    if counts < s.min_valid_counts || counts > s.max_valid_counts {
        None
    } else {
        Some(s.to_ua(counts))
    }
}

/// The trip detector's reading: counts above the zero-current offset (0 below it).
#[inline]
fn trip_reading(cfg: &CoilDriverConfig, counts: u16) -> u16 {
    let d = counts as i32 - cfg.monitor().scale().offset_counts;
    if d < 0 {
        0
    } else if d > u16::MAX as i32 {
        u16::MAX
    } else {
        d as u16
    }
}

impl<C, S> CoilDriver<C, S>
where
    C: Borrow<CoilDriverConfig>,
    S: SetDutyCycle,
{
    /// Takes the switch output and switches it off at once (duty 0), then checks that its
    /// resolution can set the hold duty within 1 % of full scale.
    ///
    /// # Errors
    ///
    /// The output's error on writing duty 0, or [`DriveError::Resolution`]; the output is
    /// handed back with the error (at duty 0 if that write succeeded).
    pub fn new(cfg: C, mut out: S) -> Result<Self, (DriveError<S::Error>, S)> {
        let max = out.max_duty_cycle();
        if let Err(e) = out.set_duty_cycle(0) {
            return Err((DriveError::Output(e), out));
        }
        let Some(scale) = DutyScale::new(max) else {
            return Err((
                DriveError::Resolution {
                    max_duty_cycle: max,
                },
                out,
            ));
        };
        let d_ref = cfg.borrow().hold().reference_duty_q16().min(DUTY_ONE_Q16);
        let hold_counts = scale.counts(d_ref);
        if hold_counts == 0
            || scale.fraction_q16(hold_counts).abs_diff(d_ref) > HOLD_DUTY_TOLERANCE_Q16
        {
            return Err((
                DriveError::Resolution {
                    max_duty_cycle: max,
                },
                out,
            ));
        }
        Ok(Self {
            cfg,
            out,
            scale,
            hold_counts,
            state: CoilDriverState::new(),
        })
    }

    /// Gives the output back, as it is.
    ///
    /// *NOTE*: this does not switch off; call [`CoilDriver::update`] with the demand off until
    /// the phase is [`CoilPhase::Idle`] first if the coil must be off and released.
    pub fn free(self) -> S {
        self.out
    }

    /// The configuration.
    pub fn config(&self) -> &CoilDriverConfig {
        self.cfg.borrow()
    }

    /// The switch output.
    pub const fn output(&self) -> &S {
        &self.out
    }

    /// The state (kernel states included), for inspection.
    pub const fn state(&self) -> &CoilDriverState {
        &self.state
    }

    /// The phase after the last tick.
    pub const fn phase(&self) -> CoilPhase {
        self.state.phase
    }

    /// The latched fault, if any.
    pub const fn fault(&self) -> Option<CoilFault> {
        self.state.fault
    }

    /// The estimated coil current after the last tick, µA.
    pub const fn estimate_ua(&self) -> i32 {
        self.state.est.current_ua()
    }

    /// The duty written last, counts of the output's `max_duty_cycle`.
    pub const fn duty_counts(&self) -> u16 {
        self.state.duty
    }

    /// The output's `max_duty_cycle`, read once at construction.
    pub const fn max_duty_cycle(&self) -> u16 {
        self.scale.max()
    }

    /// The hold duty the output is set to in a fixed-duty hold (the regulation's start), counts.
    pub const fn hold_counts(&self) -> u16 {
        self.hold_counts
    }

    /// The last trip the detector reported (also after a retry).
    pub const fn last_trip(&self) -> Option<TripEvent> {
        self.state.last_trip
    }

    /// `true` once the off-timer has confirmed the release after the last switch-off (and
    /// before the first switch-on).
    pub const fn released(&self) -> bool {
        self.state.flags & RELEASED != 0
    }

    /// What the armature movement detector said at its last update ([`Motion::Idle`] when it
    /// is not configured): after a pull-in that ended on the seating, `Seated` with the tick of
    /// the seating (counted from the first pull-in tick).
    pub const fn motion(&self) -> Motion {
        self.state.motion.motion()
    }

    /// `true` if the last pull-in ended at its maximum time without reaching the pull-in
    /// current (or, with the movement detector, without the seating).
    pub const fn pull_in_timed_out(&self) -> bool {
        self.state.flags & PULL_IN_TIMED_OUT != 0
    }

    /// Clears a latched fault: the monitor and trip detector start again (the detector keeps
    /// its thermal state). The coil is energized again only on demand and after the release.
    pub fn clear_fault(&mut self) {
        let st = &mut self.state;
        st.fault = None;
        st.mon.reset();
        st.trip.reset();
        st.phase = if st.flags & RELEASED != 0 {
            CoilPhase::Idle
        } else {
            CoilPhase::Releasing
        };
    }

    /// One control tick (see [`CoilDriver`]): `demand` is the application's wish to have the
    /// coil energized, `sense` the tick's readings.
    ///
    /// # Returns
    ///
    /// The phase after the tick.
    ///
    /// # Errors
    ///
    /// The output failed in this tick; the driver has latched off ([`CoilFault::Output`]).
    pub fn update(
        &mut self,
        demand: bool,
        sense: CoilSense,
    ) -> Result<CoilPhase, DriveError<S::Error>> {
        let cfg: &CoilDriverConfig = self.cfg.borrow();
        let st = &mut self.state;
        let max = self.scale.max();
        let supply_mv = cfg.supply_mv(sense.supply_counts);
        let est = cfg.estimator();

        // 1. The estimate, with the drive of the tick that ends now.
        let applied = st.duty;
        let estimate = if applied == 0 {
            est.update(&mut st.est, false, supply_mv)
        } else if applied >= max {
            est.update(&mut st.est, true, supply_mv)
        } else {
            cfg.hold().update(
                est,
                &mut st.est,
                self.scale.fraction_q16(applied),
                supply_mv,
            )
        };

        // 2. Overcurrent, on the sample taken with the switch as it was.
        let reading = trip_reading(cfg, sense.current_counts);
        let verdict = cfg.trip().update(&mut st.trip, reading, applied != 0);
        match verdict {
            Verdict::Trip(e) => {
                st.last_trip = Some(e);
                if st.trip.is_latched() && st.fault.is_none() {
                    st.fault = Some(CoilFault::Trip(e.cause));
                }
            }
            Verdict::Latched if st.fault.is_none() => {
                let cause = match st.last_trip {
                    Some(e) => e.cause,
                    None => Cause::Instantaneous,
                };
                st.fault = Some(CoilFault::Trip(cause));
            }
            _ => {}
        }

        // 3. Plausibility of that sample against the estimate for its instant. With the
        //    movement detector the armature moves during the pull-in and the release, and its
        //    inductance is then not the estimator's: the monitor is blanked from switch-on to
        //    the seating (the trip detector and the detector's deadline watch the pull-in) and
        //    from switch-off until both the off timer's release and the detector's drop-out
        //    (or its deadline), see `CoilDriverConfig::with_movement`: a plunger that drops
        //    out after the off timer's release lifts the current above the estimate.
        let blanked = cfg.movement().is_some()
            && (st.phase == CoilPhase::PullIn || st.flags & OFF_BLANKED != 0);
        if !blanked
            && let Some(f) =
                cfg.monitor()
                    .update(&mut st.mon, st.prev_estimate_ua, sense.current_counts)
            && st.fault.is_none()
        {
            st.fault = Some(CoilFault::Plausibility(f));
        }
        st.prev_estimate_ua = estimate;

        // 4. The decay after a switch-off.
        if applied == 0
            && st.flags & RELEASED == 0
            && cfg.off_timer().update(&mut st.off, supply_mv) == OffStatus::Released
        {
            st.flags |= RELEASED;
        }

        // 4b. The armature's drop-out after a switch-off, if the detector watches it.
        if applied == 0
            && let Some(m) = cfg.movement()
            && st.motion.motion() == Motion::Decaying
        {
            m.update(
                &mut st.motion,
                cfg.monitor().scale().to_ua(sense.current_counts),
            );
        }

        // 4c. The release is over (decay and drop-out): the monitor watches again, from an
        //     estimate that starts at the measured current (the drop-out's rise is not the
        //     estimator's), as at the seating.
        if st.flags & OFF_BLANKED != 0
            && st.flags & RELEASED != 0
            && st.motion.motion() != Motion::Decaying
        {
            st.flags &= !OFF_BLANKED;
            st.est =
                EstimatorState::with_current_ua(cfg.monitor().scale().to_ua(sense.current_counts));
            st.prev_estimate_ua = st.est.current_ua();
        }

        // 5. The phase and the duty for the next tick.
        let measured = measured_ua(cfg, sense.current_counts);
        let allowed = verdict.switch_allowed() && st.fault.is_none();
        let released = st.flags & RELEASED != 0;
        let mut target = 0u16;
        if allowed && demand {
            match st.phase {
                CoilPhase::Idle | CoilPhase::Releasing | CoilPhase::Faulted => {
                    if released {
                        st.phase = CoilPhase::PullIn;
                        st.pull_in_ticks = 0;
                        st.flags &= !(PULL_IN_TIMED_OUT | OFF_BLANKED);
                        if let Some(m) = cfg.movement() {
                            m.start(&mut st.motion);
                        }
                        target = max;
                    }
                }
                CoilPhase::PullIn => {
                    let n = st.pull_in_ticks.saturating_add(1);
                    st.pull_in_ticks = n;
                    let level = match cfg.pull_in_source() {
                        PullInSource::Estimate => Some(estimate),
                        PullInSource::Measured => measured,
                    };
                    let timed_out = n >= cfg.pull_in_max_ticks();
                    let (reached, done) = match cfg.movement() {
                        None => {
                            let reached = matches!(level, Some(i) if i >= cfg.pull_in_ua());
                            (reached, reached && n >= cfg.pull_in_min_ticks())
                        }
                        Some(m) => {
                            let i = cfg.monitor().scale().to_ua(sense.current_counts);
                            match m.update(&mut st.motion, i) {
                                Motion::Seated { .. } => {
                                    // The travel's back-EMF is over: the estimate starts
                                    // again from the measured current, on the seated coil.
                                    st.est = EstimatorState::with_current_ua(i);
                                    st.prev_estimate_ua = i;
                                    (true, true)
                                }
                                Motion::NoMotion => {
                                    st.fault = Some(CoilFault::Stuck);
                                    (false, false)
                                }
                                _ => (false, false),
                            }
                        }
                    };
                    if st.fault.is_some() {
                        // Stuck: off at once, latched.
                        target = 0;
                    } else if done || timed_out {
                        if !reached {
                            st.flags |= PULL_IN_TIMED_OUT;
                        }
                        st.phase = CoilPhase::Hold;
                        st.integ_q32 =
                            (cfg.hold().reference_duty_q16().min(DUTY_ONE_Q16) as i64) << 16;
                        target = self.hold_counts;
                    } else {
                        target = max;
                    }
                }
                CoilPhase::Hold => {
                    target = match cfg.hold_mode() {
                        HoldMode::Duty => self.hold_counts,
                        HoldMode::Current => {
                            let d_q16 = regulate(cfg, &mut st.integ_q32, measured);
                            self.scale.counts(d_q16)
                        }
                    };
                }
            }
        }

        // 6. The output, written only when it changes (or while a switch-off is pending).
        let mut result = Ok(());
        if target != st.duty || st.flags & OFF_PENDING != 0 {
            let before = st.duty;
            match self.out.set_duty_cycle(target) {
                Ok(()) => {
                    st.duty = target;
                    st.flags &= !OFF_PENDING;
                }
                Err(e) => {
                    if st.fault.is_none() {
                        st.fault = Some(CoilFault::Output);
                    }
                    result = Err(DriveError::Output(e));
                    if target == 0 {
                        st.flags |= OFF_PENDING;
                    } else {
                        match self.out.set_duty_cycle(0) {
                            Ok(()) => {
                                st.duty = 0;
                                st.flags &= !OFF_PENDING;
                            }
                            Err(_) => st.flags |= OFF_PENDING,
                        }
                    }
                }
            }
            if before != 0 && st.duty == 0 {
                // Switch-off: follow the decay from the safe side of the current now.
                let margin = if before < max {
                    cfg.hold().error_bound_ua()
                } else {
                    0
                };
                let mut start = estimate.saturating_add(margin);
                if let Some(m) = measured
                    && m > start
                {
                    start = m;
                }
                cfg.off_timer().start(&mut st.off, start);
                st.flags &= !RELEASED;
                // Watch the armature's drop-out (not after a stuck armature's fault, whose
                // verdict stays readable).
                if let Some(m) = cfg.movement()
                    && st.fault.is_none()
                {
                    m.release(&mut st.motion);
                    st.flags |= OFF_BLANKED;
                }
            }
        }
        if st.duty == 0 {
            st.phase = if st.fault.is_some() {
                CoilPhase::Faulted
            } else if st.flags & RELEASED == 0 || (demand && !allowed) {
                CoilPhase::Releasing
            } else {
                CoilPhase::Idle
            };
        } else if st.fault.is_some() {
            // The switch-off failed: the output may still be on.
            st.phase = CoilPhase::Faulted;
        }
        result.map(|()| st.phase)
    }
}

/// One step of the hold current's PI loop on the measured current; returns the duty, Q16.
///
/// Integrator and proportional term in Q32 duty; the integration is undone when the output is
/// saturated and the error would push it further (anti-windup). An unusable reading (outside
/// the sense window) holds the duty: the monitor faults on it after its persistence.
#[inline]
fn regulate(cfg: &CoilDriverConfig, integ_q32: &mut i64, measured: Option<i32>) -> u32 {
    const ONE_Q32: i64 = 1 << 32;
    let e = match measured {
        Some(m) => cfg.hold_current_ua().saturating_sub(m),
        None => 0,
    };
    let before = *integ_q32;
    let mut integ = clamp_i64(before + mul_wide(cfg.hold_ki_q32(), e), 0, ONE_Q32);
    let out = mul_wide(cfg.hold_kp_q32(), e) + integ;
    if (out > ONE_Q32 && e > 0) || (out < 0 && e < 0) {
        integ = before;
    }
    *integ_q32 = integ;
    (clamp_i64(out, 0, ONE_Q32) >> 16) as u32
}
