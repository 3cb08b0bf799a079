//! The boost duty loop: an integer PI output-voltage loop behind the duty limiter, driving the
//! boost switch's PWM.

use core::borrow::Borrow;

use embedded_hal::pwm::SetDutyCycle;

use crate::kernel::DutyLimiterState;
use crate::kernel::q::{clamp_i64, mul_wide};

use super::boost_config::BoostLoopConfig;
use super::error::DriveError;

/// The boost loop's per-channel state: 24 bytes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct BoostLoopState {
    lim: DutyLimiterState,
    /// Integrator, duty counts, Q16.
    integ_q16: i64,
    /// The duty last written successfully, counts.
    duty: u16,
    /// Latched off after an output error.
    faulted: bool,
    /// Writing duty 0 failed: retry every tick.
    off_pending: bool,
}

impl BoostLoopState {
    /// Duty 0, integrator empty, soft start from 0.
    #[must_use]
    pub const fn new() -> Self {
        Self {
            lim: DutyLimiterState::new(),
            integ_q16: 0,
            duty: 0,
            faulted: false,
            off_pending: false,
        }
    }
}

/// A boost stage's duty loop on its switch's PWM.
///
/// # Per tick
///
/// [`BoostLoop::update`] with `enable` and the input and output readings (the conversion of the
/// previous tick):
///
/// 1. error `e = target − v_out` in output counts;
/// 2. PI in Q16 duty counts: the integrator `I += k_i·e` (held in `0 ..= full scale`), the
///    request `(k_p·e + I) >> 16` saturated to `0 ..= full scale`;
/// 3. the duty limiter ([`DutyLimiterConfig`](crate::kernel::DutyLimiterConfig)) clamps the
///    request to the plan's limits at the measured input (inductor saturation, gain peak,
///    light-load overvoltage, minimum off and on time), ramps it by the soft start, and cuts it
///    at once on output overvoltage or a reading outside its window;
/// 4. anti-windup by conditional integration: when the limiter holds the duty below the
///    request and the error would raise it further, this tick's integration is undone;
/// 5. the duty is written when it changes.
///
/// `enable` false writes duty 0 and restarts the integrator and the soft start. Integer only:
/// no float, no division, no allocation, no panic.
///
/// # Faults
///
/// An output error latches the loop off (duty 0 is tried at once and retried every tick while
/// it fails) until [`BoostLoop::clear_fault`]; the error is returned from the tick that met it.
///
/// # Memory
///
/// RAM per channel: the state ([`BoostLoopState`], 24 bytes), the output handle `S` and the
/// configuration handle `C` (a reference, or the configuration, 424 bytes).
///
/// # Examples
///
/// ```
/// # use lenz::{Range, boost::BoostStageParams, kernel::DutyLimiterParams};
/// # use lenz::drive::{BoostLoop, BoostLoopConfig, BoostLoopParams};
/// # struct Pwm(u16);
/// # impl embedded_hal::pwm::ErrorType for Pwm { type Error = core::convert::Infallible; }
/// # impl embedded_hal::pwm::SetDutyCycle for Pwm {
/// #     fn max_duty_cycle(&self) -> u16 { 1000 }
/// #     fn set_duty_cycle(&mut self, d: u16) -> Result<(), Self::Error> { self.0 = d; Ok(()) }
/// # }
/// // Heater rail (invented demo values): 5 V to 12 V, 12-bit ADCs, 1000-count PWM, 10 kHz tick.
/// let stage = BoostStageParams::new(10e-6, 500e3)
///     .with_inductor_resistance_ohm(0.040)
///     .with_switch_resistance_ohm(0.025)
///     .with_diode_drop_v(0.35)
///     .with_saturation_current_a(2.0)
///     .with_min_off_time_s(100e-9)
///     .validate()?;
/// let cfg = BoostLoopConfig::new(&stage, &BoostLoopParams {
///     limiter: DutyLimiterParams {
///         input_v: Range::new("input_v", 4.5, 5.5)?,
///         output_v: 12.0,
///         max_load_current_a: 0.5,
///         light_load: None,
///         input_v_per_count: 6.6 / 4096.0,
///         output_v_per_count: 16.5 / 4096.0,
///         adc_max_counts: 4095,
///         duty_full_scale: 1000,
///         soft_start_s: 10e-3,
///         tick_s: 100e-6,
///         overvoltage_v: 14.0,
///         resume_v: 13.0,
///         inductance_tol: 0.2,
///         resistance_tol: 0.3,
///     },
///     kp_per_v: 0.02,
///     ki_per_v_tick: 0.002,
/// })?;
/// let mut boost = BoostLoop::new(&cfg, Pwm(7)).map_err(|(e, _)| e).unwrap();
/// assert_eq!(boost.output().0, 0); // safe state at once
/// let d = boost.update(true, 3103, 2482).unwrap(); // 5.0 V in, 10.0 V out: ramp up
/// assert!(d > 0);
/// assert_eq!(boost.update(true, 3103, 3500).unwrap(), 0); // 14.1 V: cut at once
/// # Ok::<(), lenz::Error>(())
/// ```
#[derive(Debug)]
pub struct BoostLoop<C, S> {
    cfg: C,
    out: S,
    state: BoostLoopState,
}

impl<C, S> BoostLoop<C, S>
where
    C: Borrow<BoostLoopConfig>,
    S: SetDutyCycle,
{
    /// Takes the PWM and sets duty 0 at once, then checks that its `max_duty_cycle` is the
    /// limiter's full scale (the limiter's tables are in those counts).
    ///
    /// # Errors
    ///
    /// The output's error on writing duty 0, or [`DriveError::Resolution`]; the output is
    /// handed back with the error.
    pub fn new(cfg: C, mut out: S) -> Result<Self, (DriveError<S::Error>, S)> {
        let max = out.max_duty_cycle();
        if let Err(e) = out.set_duty_cycle(0) {
            return Err((DriveError::Output(e), out));
        }
        if max != cfg.borrow().limiter().full_scale() {
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
            state: BoostLoopState::new(),
        })
    }

    /// The loop taken apart: the configuration handle, the output and the state, to keep the
    /// state apart between ticks ([`BoostLoop::from_parts`]). Writes nothing to the output.
    pub fn into_parts(self) -> (C, S, BoostLoopState) {
        (self.cfg, self.out, self.state)
    }

    /// A loop put back together from [`BoostLoop::into_parts`], for firmware that keeps each
    /// channel's state apart from the configuration and the output between ticks (the C API
    /// does: one call per tick). Writes nothing to the output.
    ///
    /// *NOTE*: `out` must be the output the state was made with (or one with the same
    /// `max_duty_cycle`, which [`BoostLoop::new`] checked against the limiter's full scale),
    /// and its duty must be the state's last written duty.
    pub const fn from_parts(cfg: C, out: S, state: BoostLoopState) -> Self {
        Self { cfg, out, state }
    }

    /// Gives the PWM back, as it is (this does not write duty 0).
    pub fn free(self) -> S {
        self.out
    }

    /// The configuration.
    pub fn config(&self) -> &BoostLoopConfig {
        self.cfg.borrow()
    }

    /// The PWM.
    pub const fn output(&self) -> &S {
        &self.out
    }

    /// The state, for inspection.
    pub const fn state(&self) -> &BoostLoopState {
        &self.state
    }

    /// The duty written last, counts.
    pub const fn duty_counts(&self) -> u16 {
        self.state.duty
    }

    /// `true` while latched off after an output error.
    pub const fn faulted(&self) -> bool {
        self.state.faulted
    }

    /// `true` while the limiter holds an output-overvoltage cut.
    pub const fn overvoltage(&self) -> bool {
        self.state.lim.overvoltage()
    }

    /// Clears the latch after an output error; the loop starts again from duty 0 through the
    /// soft start.
    pub fn clear_fault(&mut self) {
        self.state.faulted = false;
        self.state.integ_q16 = 0;
        self.state.lim.reset();
    }

    /// One control tick (see [`BoostLoop`]).
    ///
    /// # Returns
    ///
    /// The duty written for the next tick, counts.
    ///
    /// # Errors
    ///
    /// The output failed in this tick; the loop has latched off.
    pub fn update(
        &mut self,
        enable: bool,
        vin_counts: u16,
        vout_counts: u16,
    ) -> Result<u16, DriveError<S::Error>> {
        let cfg: &BoostLoopConfig = self.cfg.borrow();
        let st = &mut self.state;
        let target = if !enable || st.faulted {
            st.integ_q16 = 0;
            st.lim.reset();
            0
        } else {
            let lim = cfg.limiter();
            let fs = i64::from(lim.full_scale());
            let e = i32::from(cfg.target_counts()) - i32::from(vout_counts);
            let before = st.integ_q16;
            st.integ_q16 = clamp_i64(before + mul_wide(cfg.ki_q16(), e), 0, fs << 16);
            let request = clamp_i64((mul_wide(cfg.kp_q16(), e) + st.integ_q16) >> 16, 0, fs);
            let duty = lim.update(&mut st.lim, request as i32, vin_counts, vout_counts);
            // The limit in force is the allowed duty before the minimum-on-time skip (a
            // skipped pulse is not a limit to stop integrating for).
            if i64::from(st.lim.last_q8() >> 8) < request && e > 0 {
                st.integ_q16 = before;
            }
            duty
        };
        if target == st.duty && !st.off_pending {
            return Ok(target);
        }
        match self.out.set_duty_cycle(target) {
            Ok(()) => {
                st.duty = target;
                st.off_pending = false;
                Ok(target)
            }
            Err(e) => {
                st.faulted = true;
                st.integ_q16 = 0;
                st.lim.reset();
                if target == 0 {
                    st.off_pending = true;
                } else {
                    match self.out.set_duty_cycle(0) {
                        Ok(()) => {
                            st.duty = 0;
                            st.off_pending = false;
                        }
                        Err(_) => st.off_pending = true,
                    }
                }
                Err(DriveError::Output(e))
            }
        }
    }
}
