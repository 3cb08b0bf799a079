//! The bridge motor driver: a brushed DC motor on an H-bridge, started, run, reversed, braked
//! and coasted through the bridge guard, with the speed estimator and jam detector wired in.

use core::borrow::Borrow;

use embedded_hal::digital::OutputPin;
use embedded_hal::pwm::SetDutyCycle;

use crate::kernel::{BridgeCommand, BridgeGuardState, BridgeMode, JamState, JamStatus};
use crate::kernel::{DUTY_ONE_Q16, SpeedEstimatorState};

use super::duty::DutyScale;
use super::error::DriveError;
use super::motor_config::MotorDriverConfig;
use super::motor_status::{BridgeError, MotorDriverFault};

/// Leg A's direction pin is high.
const PIN_A: u8 = 1;
/// Leg B's direction pin is high.
const PIN_B: u8 = 2;
/// The safe state (PWM 0, both pins low) is not confirmed: retry it every tick.
const OFF_PENDING: u8 = 4;
/// The request that chose the command in force asked to drive (non-zero).
const REQ_DRIVE: u8 = 8;

/// The readings of one control tick, as the ADC gave them (the conversion of the previous
/// tick, taken with the bridge as it was then).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct MotorSense {
    /// Winding current reading, counts (zero current at the sense scale's offset; above it:
    /// current in the forward direction).
    pub current_counts: u16,
    /// Supply (bridge rail) reading, counts.
    pub supply_counts: u16,
}

/// The bridge motor driver's per-channel state: the kernels' states and the driver's own
/// (56 bytes; see [`MotorDriver`] for the whole RAM per channel).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct MotorDriverState {
    speed: SpeedEstimatorState,
    jam: JamState,
    guard: BridgeGuardState,
    /// The command in force during the tick that runs now (duty as the PWM sets it).
    applied: BridgeCommand,
    /// The duty last written successfully, counts.
    pwm: u16,
    /// Direction pin levels last written successfully (`PIN_A`, `PIN_B`).
    pins: u8,
    flags: u8,
    fault: Option<MotorDriverFault>,
}

impl MotorDriverState {
    /// At rest, coasting (all switches off), no fault.
    #[must_use]
    pub const fn new() -> Self {
        Self {
            speed: SpeedEstimatorState::new(),
            jam: JamState::new(),
            guard: BridgeGuardState::new(),
            applied: BridgeCommand {
                mode: BridgeMode::Coast,
                duty_q16: 0,
            },
            pwm: 0,
            pins: 0,
            flags: 0,
            fault: None,
        }
    }
}

impl Default for MotorDriverState {
    fn default() -> Self {
        Self::new()
    }
}

/// The error of a [`MotorDriver`]'s tick.
pub type MotorDriveError<P, A, B> = DriveError<
    BridgeError<
        <P as embedded_hal::pwm::ErrorType>::Error,
        <A as embedded_hal::digital::ErrorType>::Error,
        <B as embedded_hal::digital::ErrorType>::Error,
    >,
>;

/// A brushed DC motor on an H-bridge with one PWM (the bridge's enable: the switching leg's
/// duty) and one direction pin per leg.
///
/// # The bridge
///
/// | [`BridgeMode`] | leg A pin | leg B pin | PWM | winding sees |
/// |---|---|---|---|---|
/// | `Coast` | low | low | 0 | all switches off: the freewheel diodes |
/// | `Forward` | high | low | duty | `+V` for the duty, shorted (slow decay) for the rest |
/// | `Reverse` | low | high | duty | `−V` for the duty, shorted for the rest |
/// | `Brake` | low | low | full | both low sides on: shorted |
///
/// (The bridge inputs of the common driver stages: a direction input per leg, whose level
/// selects the leg's high or low side while the enable is on; all switches off while it is
/// off.) The PWM timer's own dead time guards the two switches of the switching leg within
/// each period; the bridge guard inserts `Coast` ticks at every mode change.
///
/// # Per tick
///
/// The firmware calls [`MotorDriver::update`] once per tick with the application's request
/// (a signed duty, Q16: `+65 536` full forward, `−65 536` full reverse, 0 stop) and the
/// tick's readings. In order:
///
/// 1. **Speed**: the back-EMF speed estimator advances over the tick that ends now with the
///    command that was in force (a `Brake` tick is a measurement at zero volts; a `Coast` tick
///    keeps the estimate, see [`SpeedEstimatorConfig`](crate::kernel::SpeedEstimatorConfig)).
/// 2. **Jam**: the jam detector judges the tick (start blanking, jam, overload, open
///    winding); a fault latches the driver. Its start blanking follows the application's
///    command, not the guard: a tick the guard held the bridge off (coast or brake) while the
///    request asked to drive leaves the detector as it was, so when the guard restarts the
///    bridge in the same direction the detector goes on counting where it stopped instead of
///    blanking again (a jammed rotor whose speed estimate strays past the reversal speed would
///    otherwise be restarted, and blanked, for ever). A stop request (0) or a new direction
///    starts a new blanking.
/// 3. **Sense**: a current reading outside the sense's valid window latches the driver
///    ([`MotorDriverFault::Sense`]).
/// 4. **Guard**: the bridge guard turns the request and the speed estimate into the next
///    command: soft start (the duty ramps up from zero at each start), stop (brake at or
///    below the brake speed, else coast with brake probes), reversal only after braking below
///    the reversal speed, dead time in `Coast` at every change.
/// 5. **Output**: only what changes is written. A change of the pins first sets the PWM to 0
///    (all off), then writes the pin going low, then the pin going high, then the new duty: the
///    bridge never drives while its direction changes.
///
/// The current reading of a tick must be sampled **at the end of the tick** that ended (the
/// ADC triggered at the end of the tick, the end of a PWM period, and read at the next tick):
/// the speed estimator weighs the current step over exactly one tick, and a sample taken early
/// in the tick is off by the current's slew (see
/// [`SpeedEstimatorConfig`](crate::kernel::SpeedEstimatorConfig), "Sampling instant").
///
/// Integer only in the tick: no float, no division, no allocation, no panic.
///
/// # Faults and the safe state
///
/// A jam detector fault, an invalid current reading or an output error latches the driver
/// off ([`MotorDriver::fault`] tells why) until [`MotorDriver::clear_fault`]. Off is the
/// **safe state: PWM 0 (every switch off), then both direction pins low**. If the PWM cannot
/// be set to 0, the pins low still turn a bridge whose enable is stuck on into a brake (both
/// low sides on) instead of a drive. An output error is returned from the tick that met it,
/// after the driver tried the safe state; if a write of the safe state failed, every following
/// tick retries it (and returns the error until it succeeds).
///
/// *CAUTION*: a rotor coasting after a fault returns its current, and then its kinetic energy
/// through any brake, to the supply rail: a supply that cannot sink current lets the bus
/// capacitor's voltage rise (see [`crate::motor`] for the bus rise of the plan).
///
/// # Memory
///
/// RAM per channel: the state ([`MotorDriverState`], 56 bytes), the configuration handle `C`
/// (a reference: one pointer; or the configuration itself, 92 bytes), the outputs (the PWM
/// and the two pins, zero-sized for most HALs' typed pins) and 8 bytes of PWM resolution,
/// padded to 4: 68 bytes in all with a reference and zero-sized outputs on a 32-bit target
/// (asserted by the unit tests).
///
/// # Examples
///
/// The demo vent motor (invented values) started forward on a PWM with 1000 steps; the
/// readings stand for a rotor at rest carrying 0.5 A:
///
/// ```
/// # use lenz::motor::MotorParams;
/// # use lenz::kernel::{BridgeGuardParams, BridgeMode, JamParams, SenseScale};
/// # use lenz::drive::{MotorDriver, MotorDriverConfig, MotorDriverParams, MotorSense};
/// # use core::convert::Infallible;
/// # struct Pwm(u16);
/// # impl embedded_hal::pwm::ErrorType for Pwm { type Error = Infallible; }
/// # impl embedded_hal::pwm::SetDutyCycle for Pwm {
/// #     fn max_duty_cycle(&self) -> u16 { 1000 }
/// #     fn set_duty_cycle(&mut self, d: u16) -> Result<(), Infallible> { self.0 = d; Ok(()) }
/// # }
/// # struct Pin(bool);
/// # impl embedded_hal::digital::ErrorType for Pin { type Error = Infallible; }
/// # impl embedded_hal::digital::OutputPin for Pin {
/// #     fn set_low(&mut self) -> Result<(), Infallible> { self.0 = false; Ok(()) }
/// #     fn set_high(&mut self) -> Result<(), Infallible> { self.0 = true; Ok(()) }
/// # }
/// let motor = MotorParams::new(2e-3, 1.5, 0.03).with_inertia_kg_m2(2e-5).validate()?;
/// let tick_s = 100e-6;
/// let cfg = MotorDriverConfig::new(&MotorDriverParams {
///     motor,
///     temp_c: 20.0,
///     tick_s,
///     speed_filter_s: 0.0,
///     guard: BridgeGuardParams {
///         supply_v: 13.2, temp_c: -20.0, max_temp_c: 60.0, load_torque_nm: 0.0, current_limit_a: 4.0, tick_s,
///         dead_time_s: 200e-6, reverse_speed_rad_s: 20.0, probe_interval_s: 5e-3,
///         resume_margin_rad_s: Some(40.0),
///     },
///     jam: JamParams {
///         jam_current_a: 3.0, jam_speed_rad_s: 20.0, persistence_s: 20e-3, blanking_s: 150e-3,
///         overload_current_a: None, overload_s: 0.0, open_current_a: None, open_min_duty: 1.0,
///         tick_s,
///     },
///     current_sense: SenseScale::new(2e-3, 2048.0, 10, 4085)?,
///     supply_v_per_count: 0.01,
///     supply_zero_counts: 0.0,
/// })?;
/// let mut vent = MotorDriver::new(&cfg, Pwm(7), Pin(true), Pin(true))
///     .map_err(|(e, _)| e)
///     .unwrap();
/// assert_eq!(vent.outputs().0 .0, 0); // all off at once
/// let sense = MotorSense { current_counts: 2048 + 250, supply_counts: 1200 };
/// let cmd = vent.update(65_536, sense).unwrap();
/// assert_eq!(cmd.mode, BridgeMode::Forward);
/// let (pwm, a, b) = vent.outputs();
/// assert!(a.0 && !b.0);
/// assert!(pwm.0 > 0 && pwm.0 < 1000); // soft start: the duty ramps up
/// assert_eq!(vent.fault(), None);
/// # Ok::<(), lenz::Error>(())
/// ```
#[derive(Debug)]
pub struct MotorDriver<C, P, A, B> {
    cfg: C,
    pwm: P,
    leg_a: A,
    leg_b: B,
    scale: DutyScale,
    state: MotorDriverState,
}

/// The pin levels and PWM counts of a mode at a duty.
#[inline]
fn pattern(scale: &DutyScale, cmd: &BridgeCommand) -> (u8, u16) {
    match cmd.mode {
        BridgeMode::Coast => (0, 0),
        BridgeMode::Forward => (PIN_A, scale.counts(cmd.duty_q16.max(0) as u32)),
        BridgeMode::Reverse => (PIN_B, scale.counts(cmd.duty_q16.max(0) as u32)),
        BridgeMode::Brake => (0, scale.max()),
    }
}

impl<C, P, A, B> MotorDriver<C, P, A, B>
where
    C: Borrow<MotorDriverConfig>,
    P: SetDutyCycle,
    A: OutputPin,
    B: OutputPin,
{
    /// Takes the PWM and the two direction pins and puts the bridge in its safe state at once:
    /// PWM 0, then leg A low, then leg B low.
    ///
    /// # Errors
    ///
    /// The first output error of those writes (the later writes are still tried), or
    /// [`DriveError::Resolution`] for a PWM with `max_duty_cycle() == 0`; the outputs are
    /// handed back with the error.
    #[allow(clippy::type_complexity)]
    pub fn new(
        cfg: C,
        mut pwm: P,
        mut leg_a: A,
        mut leg_b: B,
    ) -> Result<Self, (MotorDriveError<P, A, B>, (P, A, B))> {
        let max = pwm.max_duty_cycle();
        let mut first = pwm.set_duty_cycle(0).err().map(BridgeError::Pwm);
        if let Err(e) = leg_a.set_low() {
            first = first.or(Some(BridgeError::LegA(e)));
        }
        if let Err(e) = leg_b.set_low() {
            first = first.or(Some(BridgeError::LegB(e)));
        }
        if let Some(e) = first {
            return Err((DriveError::Output(e), (pwm, leg_a, leg_b)));
        }
        let Some(scale) = DutyScale::new(max) else {
            return Err((
                DriveError::Resolution {
                    max_duty_cycle: max,
                },
                (pwm, leg_a, leg_b),
            ));
        };
        Ok(Self {
            cfg,
            pwm,
            leg_a,
            leg_b,
            scale,
            state: MotorDriverState::new(),
        })
    }

    /// Gives the outputs back, as they are.
    ///
    /// *NOTE*: this does not stop the motor; call [`MotorDriver::update`] with a zero request
    /// until it has stopped first.
    pub fn free(self) -> (P, A, B) {
        (self.pwm, self.leg_a, self.leg_b)
    }

    /// The configuration.
    pub fn config(&self) -> &MotorDriverConfig {
        self.cfg.borrow()
    }

    /// The outputs: the PWM, leg A's pin, leg B's pin.
    pub const fn outputs(&self) -> (&P, &A, &B) {
        (&self.pwm, &self.leg_a, &self.leg_b)
    }

    /// The state (kernel states included), for inspection.
    pub const fn state(&self) -> &MotorDriverState {
        &self.state
    }

    /// The command in force after the last tick (duty as the PWM sets it, Q16).
    pub const fn command(&self) -> BridgeCommand {
        self.state.applied
    }

    /// The speed estimate after the last tick, mrad/s (positive forward).
    pub const fn speed_mrad_s(&self) -> i32 {
        self.state.speed.speed_mrad_s()
    }

    /// The latched fault, if any.
    pub const fn fault(&self) -> Option<MotorDriverFault> {
        self.state.fault
    }

    /// The PWM's `max_duty_cycle`, read once at construction.
    pub const fn max_duty_cycle(&self) -> u16 {
        self.scale.max()
    }

    /// Clears a latched fault: the jam detector starts again. The bridge keeps coasting until
    /// the next request (which starts through the dead time and the soft start).
    pub fn clear_fault(&mut self) {
        self.state.fault = None;
        self.state.jam.reset();
    }

    /// One control tick (see [`MotorDriver`]): `request_q16` is the application's signed duty
    /// (Q16, saturated to `±65 536`; 0 stops), `sense` the tick's readings.
    ///
    /// # Returns
    ///
    /// The command in force for the next tick (duty as the PWM sets it).
    ///
    /// # Errors
    ///
    /// An output failed in this tick (or the safe state is still not confirmed); the driver
    /// has latched off ([`MotorDriverFault::Output`]).
    pub fn update(
        &mut self,
        request_q16: i32,
        sense: MotorSense,
    ) -> Result<BridgeCommand, MotorDriveError<P, A, B>> {
        let cfg: &MotorDriverConfig = self.cfg.borrow();
        let st = &mut self.state;
        let supply_mv = cfg.supply_mv(sense.supply_counts);
        let cs = cfg.current_sense();
        let valid = sense.current_counts >= cs.min_valid_counts
            && sense.current_counts <= cs.max_valid_counts;
        let current_ua = cs.to_ua(sense.current_counts);

        // 1. Speed, with the command of the tick that ends now.
        let applied = st.applied;
        let speed = if applied.mode == BridgeMode::Coast {
            cfg.speed().hold(&mut st.speed, current_ua)
        } else {
            cfg.speed().update(
                &mut st.speed,
                applied.signed_duty_q16(),
                supply_mv,
                current_ua,
            )
        };

        // 2. Jam, overload, open winding; not judged while the guard holds a drive request off.
        let held_by_guard = applied.signed_duty_q16() == 0 && st.flags & REQ_DRIVE != 0;
        if !held_by_guard
            && let JamStatus::Fault(f) =
                cfg.jam()
                    .update(&mut st.jam, applied.signed_duty_q16(), current_ua, speed)
            && st.fault.is_none()
        {
            st.fault = Some(MotorDriverFault::Motor(f));
        }

        // 3. The sense itself.
        if !valid && st.fault.is_none() {
            st.fault = Some(MotorDriverFault::Sense);
        }

        // 4. The next command.
        let next = if st.fault.is_some() {
            st.guard.coast_tick();
            BridgeCommand {
                mode: BridgeMode::Coast,
                duty_q16: 0,
            }
        } else {
            cfg.guard().update(&mut st.guard, request_q16, speed)
        };

        // 5. The outputs.
        let (pins, counts) = pattern(&self.scale, &next);
        let mut first = None;
        if st.flags & OFF_PENDING == 0 {
            if pins != st.pins {
                if st.pwm != 0 {
                    match self.pwm.set_duty_cycle(0) {
                        Ok(()) => st.pwm = 0,
                        Err(e) => first = Some(BridgeError::Pwm(e)),
                    }
                }
                if first.is_none() {
                    first = write_pins(&mut self.leg_a, &mut self.leg_b, &mut st.pins, pins);
                }
            }
            if first.is_none() && counts != st.pwm {
                match self.pwm.set_duty_cycle(counts) {
                    Ok(()) => st.pwm = counts,
                    Err(e) => first = Some(BridgeError::Pwm(e)),
                }
            }
        }
        if first.is_some() || st.flags & OFF_PENDING != 0 {
            if st.fault.is_none() {
                st.fault = Some(MotorDriverFault::Output);
            }
            st.guard.coast_tick();
            let retry = safe_state(&mut self.pwm, &mut self.leg_a, &mut self.leg_b, st);
            first = first.or(retry);
        }

        // The request behind the command now in force (a latched driver drives nothing).
        if request_q16 != 0 && st.fault.is_none() {
            st.flags |= REQ_DRIVE;
        } else {
            st.flags &= !REQ_DRIVE;
        }
        // The command now in force, as the outputs were set.
        st.applied = if st.flags & OFF_PENDING != 0 || st.pwm == 0 {
            BridgeCommand {
                mode: BridgeMode::Coast,
                duty_q16: 0,
            }
        } else if st.pins == 0 {
            BridgeCommand {
                mode: BridgeMode::Brake,
                duty_q16: 0,
            }
        } else {
            let d = self.scale.fraction_q16(st.pwm).min(DUTY_ONE_Q16 as u32) as i32;
            BridgeCommand {
                mode: if st.pins == PIN_A {
                    BridgeMode::Forward
                } else {
                    BridgeMode::Reverse
                },
                duty_q16: d,
            }
        };
        match first {
            Some(e) => Err(DriveError::Output(e)),
            None => Ok(st.applied),
        }
    }
}

/// Writes the pins that change, the one going low first; returns the first error.
#[inline]
fn write_pins<A: OutputPin, B: OutputPin, P>(
    a: &mut A,
    b: &mut B,
    levels: &mut u8,
    want: u8,
) -> Option<BridgeError<P, A::Error, B::Error>> {
    let change = *levels ^ want;
    // Lows first: at most one pin is high in any pattern.
    if change & PIN_A != 0 && want & PIN_A == 0 {
        if let Err(e) = a.set_low() {
            return Some(BridgeError::LegA(e));
        }
        *levels &= !PIN_A;
    }
    if change & PIN_B != 0 && want & PIN_B == 0 {
        if let Err(e) = b.set_low() {
            return Some(BridgeError::LegB(e));
        }
        *levels &= !PIN_B;
    }
    if change & PIN_A != 0 && want & PIN_A != 0 {
        if let Err(e) = a.set_high() {
            return Some(BridgeError::LegA(e));
        }
        *levels |= PIN_A;
    }
    if change & PIN_B != 0 && want & PIN_B != 0 {
        if let Err(e) = b.set_high() {
            return Some(BridgeError::LegB(e));
        }
        *levels |= PIN_B;
    }
    None
}

/// The safe state: PWM 0, leg A low, leg B low, each tried whatever the others did. Sets or
/// clears `OFF_PENDING`; returns the first error.
#[inline]
fn safe_state<P: SetDutyCycle, A: OutputPin, B: OutputPin>(
    pwm: &mut P,
    a: &mut A,
    b: &mut B,
    st: &mut MotorDriverState,
) -> Option<BridgeError<P::Error, A::Error, B::Error>> {
    let mut first = None;
    match pwm.set_duty_cycle(0) {
        Ok(()) => st.pwm = 0,
        Err(e) => first = Some(BridgeError::Pwm(e)),
    }
    match a.set_low() {
        Ok(()) => st.pins &= !PIN_A,
        Err(e) => first = first.or(Some(BridgeError::LegA(e))),
    }
    match b.set_low() {
        Ok(()) => st.pins &= !PIN_B,
        Err(e) => first = first.or(Some(BridgeError::LegB(e))),
    }
    if first.is_some() {
        st.flags |= OFF_PENDING;
    } else {
        st.flags &= !OFF_PENDING;
    }
    first
}
