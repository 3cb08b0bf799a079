//! Jam, overload and open-winding detector for a bridge-driven motor: per tick, from the
//! bridge duty, the sensed current and the speed estimate
//! ([`super::SpeedEstimatorConfig`]).
//!
//! # Decisions, per tick, in this order
//!
//! 1. **Latched**: after a fault the verdict stays [`JamStatus::Fault`] with its cause until
//!    [`JamState::reset`].
//! 2. **Not driven** (duty 0: coast or brake): nothing is counted; [`JamStatus::Idle`].
//! 3. **Start blanking**: at every start (the duty's sign changes from zero or from the other
//!    direction) the counters clear and the next `blank_ticks` ticks are not judged
//!    ([`JamStatus::Blanking`]). A healthy start draws up to its stall current while the rotor
//!    is still slow, which is exactly what a jam looks like; the blanking covers the time a
//!    start (with its soft-start ramp) takes to pass the jam speed at the slowest corner
//!    ([`crate::motor::Motor::ramp_time_to_speed_s`]).
//! 4. **Jam** (locked rotor): `|i| ≥ jam_current` while `|ω̂| ≤ jam_speed`, for
//!    `persist_ticks` consecutive ticks.
//! 5. **Overload**: `|i| ≥ overload_current` for `overload_ticks` consecutive ticks, whatever
//!    the speed (a load heavier than the winding is rated for; it heats up).
//! 6. **Open winding**: `|duty| ≥ open_min_duty` while `|i| ≤ open_current`, for
//!    `persist_ticks` consecutive ticks (a broken lead or brush: no current although the bridge
//!    drives). The speed estimate of such a motor reads the no-load speed, so a jam check alone
//!    would never see it.
//!
//! The first fault that fires is the cause. Magnitudes are taken with saturation (`i32::MIN`
//! counts as `i32::MAX`), so a saturated current reading counts as high: fail safe. No float,
//! no division, compares and saturating increments only. State: 20 bytes.

use crate::error::{Error, in_range, non_negative, positive};

/// What the detector found.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub enum MotorFault {
    /// Current high and rotor (nearly) still: a locked rotor.
    Jam,
    /// Current above the overload level for longer than allowed.
    Overload,
    /// No current although the bridge drives: an open winding, lead or brush.
    OpenWinding,
}

impl MotorFault {
    const fn code(self) -> u8 {
        match self {
            MotorFault::Jam => 1,
            MotorFault::Overload => 2,
            MotorFault::OpenWinding => 3,
        }
    }

    const fn from_code(code: u8) -> Option<MotorFault> {
        match code {
            1 => Some(MotorFault::Jam),
            2 => Some(MotorFault::Overload),
            3 => Some(MotorFault::OpenWinding),
            _ => None,
        }
    }
}

/// The verdict of one tick.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub enum JamStatus {
    /// Not driven: nothing judged.
    Idle,
    /// Within the start blanking.
    Blanking,
    /// Driven and judged healthy this tick.
    Running,
    /// A fault, latched until reset.
    Fault(MotorFault),
}

/// What the plan-side constructor needs.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct JamParams {
    /// Current at or above which a slow rotor counts as jammed. Units: A.
    pub jam_current_a: f32,
    /// Speed at or below which a high current counts as a jam. Units: rad/s.
    pub jam_speed_rad_s: f32,
    /// How long the jam (and open-winding) condition must persist. Units: s.
    pub persistence_s: f32,
    /// Blanking after each start. Units: s.
    pub blanking_s: f32,
    /// Overload current; `None` for no overload check. Units: A.
    pub overload_current_a: Option<f32>,
    /// How long an overload may last. Units: s.
    pub overload_s: f32,
    /// Current at or below which a driven winding counts as open; `None` for no check. Units: A.
    pub open_current_a: Option<f32>,
    /// Smallest duty magnitude (0 ..= 1) at which an open winding is judged.
    pub open_min_duty: f32,
    /// Tick period. Units: s.
    pub tick_s: f32,
}

/// Raw coefficients of a [`JamConfig`] (emitted constants can live in flash).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct JamRaw {
    /// Jam current threshold. Units: µA.
    pub jam_current_ua: i32,
    /// Jam speed threshold. Units: mrad/s.
    pub jam_speed_mrad_s: i32,
    /// Consecutive ticks for a jam or an open winding (at least 1).
    pub persist_ticks: u32,
    /// Ticks blanked after each start.
    pub blank_ticks: u32,
    /// Overload current threshold; `i32::MAX` for none. Units: µA.
    pub overload_current_ua: i32,
    /// Consecutive ticks for an overload (at least 1).
    pub overload_ticks: u32,
    /// Open-winding current threshold; negative for none. Units: µA.
    pub open_current_ua: i32,
    /// Smallest duty magnitude judged for an open winding, Q16.
    pub open_duty_q16: i32,
}

/// Jam detector coefficients (shared by channels); the decisions are in the module docs of
/// this file.
///
/// # Examples
///
/// ```
/// # use lenz::kernel::{JamConfig, JamParams, JamState, JamStatus, MotorFault, DUTY_ONE_Q16};
/// // Vent motor (invented): a jam is 5 A below 20 rad/s for 20 ms, 150 ms start blanking.
/// let cfg = JamConfig::new(&JamParams {
///     jam_current_a: 5.0,
///     jam_speed_rad_s: 20.0,
///     persistence_s: 20e-3,
///     blanking_s: 150e-3,
///     overload_current_a: None,
///     overload_s: 0.0,
///     open_current_a: None,
///     open_min_duty: 1.0,
///     tick_s: 1e-3,
/// })?;
/// let mut s = JamState::new();
/// assert_eq!(cfg.update(&mut s, DUTY_ONE_Q16, 7_000_000, 0), JamStatus::Blanking);
/// let mut last = JamStatus::Idle;
/// for _ in 0..200 {
///     last = cfg.update(&mut s, DUTY_ONE_Q16, 7_000_000, 0); // 7 A, rotor still
/// }
/// assert_eq!(last, JamStatus::Fault(MotorFault::Jam));
/// # Ok::<(), lenz::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct JamConfig {
    r: JamRaw,
}

/// Per-channel jam detector state: 20 bytes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct JamState {
    blank_left: u32,
    jam_count: u32,
    overload_count: u32,
    open_count: u32,
    last_sign: i8,
    fault: u8,
}

impl JamState {
    /// Not driven, no fault.
    #[must_use]
    pub const fn new() -> Self {
        Self {
            blank_left: 0,
            jam_count: 0,
            overload_count: 0,
            open_count: 0,
            last_sign: 0,
            fault: 0,
        }
    }

    /// Clears the latched fault and the counters (the next driven tick is a start).
    pub fn reset(&mut self) {
        *self = Self::new();
    }

    /// The latched fault, if any.
    #[must_use]
    pub const fn fault(&self) -> Option<MotorFault> {
        MotorFault::from_code(self.fault)
    }
}

fn ua(param: &'static str, a: f32) -> Result<i32, Error> {
    let v = in_range(param, a, 0.0, 2.0e3)?;
    Ok(libm::roundf(v * 1.0e6) as i32)
}

fn ticks(param: &'static str, s: f32, tick: f32, at_least: f32) -> Result<u32, Error> {
    let t = in_range(param, non_negative(param, s)?, 0.0, 1.0e6)?;
    let n = libm::ceil(f64::from(t) / f64::from(tick)).max(f64::from(at_least));
    if n > f64::from(u32::MAX) {
        return Err(Error::OutOfRange {
            param,
            value: s,
            min: 0.0,
            max: (f64::from(u32::MAX) * f64::from(tick)) as f32,
        });
    }
    Ok(n as u32)
}

impl JamConfig {
    /// Thresholds in kernel units, times rounded up to whole ticks (persistence at least one).
    ///
    /// # Errors
    ///
    /// `tick_s` not positive; currents negative, not finite or above 2 kA; the jam speed
    /// negative or above 2·10⁶ rad/s; times negative or longer than `u32::MAX` ticks;
    /// `open_min_duty` outside `0 ..= 1`.
    pub fn new(p: &JamParams) -> Result<Self, Error> {
        let tick = positive("tick_s", p.tick_s)?;
        let speed = in_range("jam_speed_rad_s", p.jam_speed_rad_s, 0.0, 2.0e6)?;
        let duty = in_range("open_min_duty", p.open_min_duty, 0.0, 1.0)?;
        Ok(Self::from_raw(JamRaw {
            jam_current_ua: ua("jam_current_a", p.jam_current_a)?,
            jam_speed_mrad_s: libm::round(f64::from(speed) * 1e3) as i32,
            persist_ticks: ticks("persistence_s", p.persistence_s, tick, 1.0)?,
            blank_ticks: ticks("blanking_s", p.blanking_s, tick, 0.0)?,
            overload_current_ua: match p.overload_current_a {
                Some(a) => ua("overload_current_a", a)?,
                None => i32::MAX,
            },
            overload_ticks: ticks("overload_s", p.overload_s, tick, 1.0)?,
            open_current_ua: match p.open_current_a {
                Some(a) => ua("open_current_a", a)?,
                None => -1,
            },
            open_duty_q16: libm::roundf(duty * 65_536.0) as i32,
        }))
    }

    /// Coefficients from raw values (for emitted constants). Any values are safe.
    #[must_use]
    pub const fn from_raw(raw: JamRaw) -> Self {
        Self { r: raw }
    }

    /// The raw coefficients.
    #[must_use]
    pub const fn raw(&self) -> JamRaw {
        self.r
    }

    /// Jam current threshold, µA.
    #[must_use]
    pub const fn jam_current_ua(&self) -> i32 {
        self.r.jam_current_ua
    }

    /// Jam speed threshold, mrad/s.
    #[must_use]
    pub const fn jam_speed_mrad_s(&self) -> i32 {
        self.r.jam_speed_mrad_s
    }

    /// Persistence of a jam or open winding, ticks.
    #[must_use]
    pub const fn persist_ticks(&self) -> u32 {
        self.r.persist_ticks
    }

    /// Start blanking, ticks.
    #[must_use]
    pub const fn blank_ticks(&self) -> u32 {
        self.r.blank_ticks
    }

    /// Overload current threshold, µA (`i32::MAX`: none).
    #[must_use]
    pub const fn overload_current_ua(&self) -> i32 {
        self.r.overload_current_ua
    }

    /// Persistence of an overload, ticks.
    #[must_use]
    pub const fn overload_ticks(&self) -> u32 {
        self.r.overload_ticks
    }

    /// Open-winding current threshold, µA (negative: none).
    #[must_use]
    pub const fn open_current_ua(&self) -> i32 {
        self.r.open_current_ua
    }

    /// Smallest duty judged for an open winding, Q16.
    #[must_use]
    pub const fn open_duty_q16(&self) -> i32 {
        self.r.open_duty_q16
    }

    /// Judges one tick.
    ///
    /// # Arguments
    ///
    /// - `duty_q16`: the bridge duty during the tick, signed by direction (0: not driven).
    /// - `current_ua`: the sensed winding current, µA.
    /// - `speed_mrad_s`: the speed estimate, mrad/s.
    ///
    /// # Returns
    ///
    /// The verdict (module docs).
    #[inline]
    pub fn update(
        &self,
        state: &mut JamState,
        duty_q16: i32,
        current_ua: i32,
        speed_mrad_s: i32,
    ) -> JamStatus {
        if let Some(f) = MotorFault::from_code(state.fault) {
            return JamStatus::Fault(f);
        }
        let sign = duty_q16.signum() as i8;
        if sign == 0 {
            state.last_sign = 0;
            state.jam_count = 0;
            state.overload_count = 0;
            state.open_count = 0;
            return JamStatus::Idle;
        }
        if sign != state.last_sign {
            state.last_sign = sign;
            state.blank_left = self.r.blank_ticks;
            state.jam_count = 0;
            state.overload_count = 0;
            state.open_count = 0;
        }
        if state.blank_left > 0 {
            state.blank_left -= 1;
            return JamStatus::Blanking;
        }
        let i = abs_sat(current_ua);
        let w = abs_sat(speed_mrad_s);
        let r = &self.r;
        state.jam_count = if i >= r.jam_current_ua && w <= r.jam_speed_mrad_s {
            state.jam_count.saturating_add(1)
        } else {
            0
        };
        state.overload_count = if i >= r.overload_current_ua {
            state.overload_count.saturating_add(1)
        } else {
            0
        };
        state.open_count = if abs_sat(duty_q16) >= r.open_duty_q16 && i <= r.open_current_ua {
            state.open_count.saturating_add(1)
        } else {
            0
        };
        let fault = if state.jam_count >= r.persist_ticks {
            Some(MotorFault::Jam)
        } else if state.overload_count >= r.overload_ticks {
            Some(MotorFault::Overload)
        } else if state.open_count >= r.persist_ticks {
            Some(MotorFault::OpenWinding)
        } else {
            None
        };
        match fault {
            Some(f) => {
                state.fault = f.code();
                JamStatus::Fault(f)
            }
            None => JamStatus::Running,
        }
    }
}

/// `|x|` saturated (`i32::MIN` gives `i32::MAX`).
#[inline(always)]
const fn abs_sat(x: i32) -> i32 {
    if x == i32::MIN { i32::MAX } else { x.abs() }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::kernel::DUTY_ONE_Q16;
    use proptest::prelude::*;
    use proptest::test_runner::RngSeed;

    fn params() -> JamParams {
        JamParams {
            jam_current_a: 5.0,
            jam_speed_rad_s: 20.0,
            persistence_s: 20e-3,
            blanking_s: 150e-3,
            overload_current_a: Some(2.0),
            overload_s: 2.0,
            open_current_a: Some(0.05),
            open_min_duty: 0.5,
            tick_s: 1e-3,
        }
    }

    #[test]
    fn state_size_is_as_documented() {
        // The kernel rule: at most 32 bytes of state per channel.
        assert_eq!(core::mem::size_of::<JamState>(), 20);
    }

    #[test]
    fn constructor_rounds_times_up_and_names_bad_input() {
        let c = JamConfig::new(&params()).unwrap();
        assert_eq!(c.persist_ticks(), 20);
        assert_eq!(c.blank_ticks(), 150);
        assert_eq!(c.overload_ticks(), 2000);
        assert_eq!(c.jam_speed_mrad_s(), 20_000);
        assert_eq!(c.open_duty_q16(), 32_768);
        let bad = |f: fn(&mut JamParams)| {
            let mut p = params();
            f(&mut p);
            JamConfig::new(&p).unwrap_err().param()
        };
        assert_eq!(bad(|p| p.tick_s = 0.0), "tick_s");
        assert_eq!(bad(|p| p.jam_current_a = f32::NAN), "jam_current_a");
        assert_eq!(bad(|p| p.persistence_s = -1.0), "persistence_s");
        assert_eq!(bad(|p| p.open_min_duty = 1.5), "open_min_duty");
        assert_eq!(
            bad(|p| p.overload_current_a = Some(-1.0)),
            "overload_current_a"
        );
    }

    #[test]
    fn start_is_blanked_and_a_jam_latches_after_its_persistence() {
        let c = JamConfig::new(&params()).unwrap();
        let mut s = JamState::new();
        // Inrush: 7 A at standstill during the 150 ms blanking is not a jam.
        for _ in 0..150 {
            assert_eq!(
                c.update(&mut s, DUTY_ONE_Q16, 7_000_000, 0),
                JamStatus::Blanking
            );
        }
        // Running normally.
        for _ in 0..100 {
            assert_eq!(
                c.update(&mut s, DUTY_ONE_Q16, 700_000, 366_000),
                JamStatus::Running
            );
        }
        // Jammed: current up, speed down; fires on the 20th tick exactly.
        for n in 1..=20 {
            let v = c.update(&mut s, DUTY_ONE_Q16, 7_500_000, 1_000);
            if n < 20 {
                assert_eq!(v, JamStatus::Running, "tick {n}");
            } else {
                assert_eq!(v, JamStatus::Fault(MotorFault::Jam));
            }
        }
        // Latched, whatever comes.
        assert_eq!(c.update(&mut s, 0, 0, 0), JamStatus::Fault(MotorFault::Jam));
        assert_eq!(s.fault(), Some(MotorFault::Jam));
        s.reset();
        assert_eq!(c.update(&mut s, 0, 0, 0), JamStatus::Idle);
    }

    #[test]
    fn a_brief_stall_and_a_reversal_do_not_trip() {
        let c = JamConfig::new(&params()).unwrap();
        let mut s = JamState::new();
        for _ in 0..150 {
            c.update(&mut s, DUTY_ONE_Q16, 7_000_000, 0);
        }
        // 19 ticks of jam, then recovery: the count restarts.
        for _ in 0..19 {
            assert_eq!(
                c.update(&mut s, DUTY_ONE_Q16, 7_500_000, 0),
                JamStatus::Running
            );
        }
        assert_eq!(
            c.update(&mut s, DUTY_ONE_Q16, 700_000, 300_000),
            JamStatus::Running
        );
        for _ in 0..19 {
            assert_eq!(
                c.update(&mut s, DUTY_ONE_Q16, 7_500_000, 0),
                JamStatus::Running
            );
        }
        // A reversal is a new start: blanked again.
        assert_eq!(
            c.update(&mut s, -DUTY_ONE_Q16, -9_000_000, 200_000),
            JamStatus::Blanking
        );
    }

    #[test]
    fn overload_and_open_winding_have_their_own_cause() {
        let c = JamConfig::new(&params()).unwrap();
        let mut s = JamState::new();
        for _ in 0..150 {
            c.update(&mut s, DUTY_ONE_Q16, 0, 0);
        }
        // Driven at full duty, no current: open after 20 ticks.
        let mut v = JamStatus::Idle;
        for _ in 0..20 {
            v = c.update(&mut s, DUTY_ONE_Q16, 10_000, 400_000);
        }
        assert_eq!(v, JamStatus::Fault(MotorFault::OpenWinding));
        // 2.5 A while turning at speed: an overload after 2 s.
        let mut s = JamState::new();
        for _ in 0..150 {
            c.update(&mut s, DUTY_ONE_Q16, 0, 0);
        }
        for n in 1..=2000 {
            v = c.update(&mut s, DUTY_ONE_Q16, 2_500_000, 300_000);
            assert_eq!(v == JamStatus::Running, n < 2000);
        }
        assert_eq!(v, JamStatus::Fault(MotorFault::Overload));
        // A saturated current reading counts as high (fail safe).
        let mut s = JamState::new();
        for _ in 0..150 {
            c.update(&mut s, DUTY_ONE_Q16, 0, 0);
        }
        for _ in 0..20 {
            v = c.update(&mut s, DUTY_ONE_Q16, i32::MIN, 0);
        }
        assert_eq!(v, JamStatus::Fault(MotorFault::Jam));
    }

    proptest! {
        #![proptest_config(ProptestConfig {
            cases: 2000,
            rng_seed: RngSeed::Fixed(0x004a_414d),
            ..ProptestConfig::default()
        })]

        /// Arbitrary raw coefficients and inputs never panic; a fault, once returned, stays;
        /// and the verdict equals a plain model of the rules written with i64 counters.
        #[test]
        fn matches_a_plain_model(
            ji in any::<i32>(), jw in any::<i32>(), pt in 0u32..40, bt in 0u32..40,
            oi in any::<i32>(), ot in 0u32..40, wi in any::<i32>(), wd in any::<i32>(),
            seq in proptest::collection::vec((
                prop_oneof![Just(0i32), Just(DUTY_ONE_Q16), Just(-DUTY_ONE_Q16), any::<i32>()],
                any::<i32>(), any::<i32>()), 1..120),
        ) {
            let c = JamConfig::from_raw(JamRaw {
                jam_current_ua: ji, jam_speed_mrad_s: jw, persist_ticks: pt, blank_ticks: bt,
                overload_current_ua: oi, overload_ticks: ot, open_current_ua: wi, open_duty_q16: wd,
            });
            let mut s = JamState::new();
            // Plain model.
            let (mut blank, mut jc, mut oc, mut wc, mut last, mut fault) = (0i64, 0i64, 0i64, 0i64, 0i64, None);
            for (d, i, w) in seq {
                let got = c.update(&mut s, d, i, w);
                let want = if let Some(f) = fault {
                    JamStatus::Fault(f)
                } else if d == 0 {
                    last = 0; jc = 0; oc = 0; wc = 0;
                    JamStatus::Idle
                } else {
                    let sg = i64::from(d.signum());
                    if sg != last { last = sg; blank = i64::from(bt); jc = 0; oc = 0; wc = 0; }
                    if blank > 0 {
                        blank -= 1;
                        JamStatus::Blanking
                    } else {
                        let (ia, wa, da) = (i64::from(i).abs().min(i64::from(i32::MAX)), i64::from(w).abs().min(i64::from(i32::MAX)), i64::from(d).abs().min(i64::from(i32::MAX)));
                        jc = if ia >= i64::from(ji) && wa <= i64::from(jw) { jc + 1 } else { 0 };
                        oc = if ia >= i64::from(oi) { oc + 1 } else { 0 };
                        wc = if da >= i64::from(wd) && ia <= i64::from(wi) { wc + 1 } else { 0 };
                        let f = if jc >= i64::from(pt) { Some(MotorFault::Jam) }
                            else if oc >= i64::from(ot) { Some(MotorFault::Overload) }
                            else if wc >= i64::from(pt) { Some(MotorFault::OpenWinding) }
                            else { None };
                        fault = f;
                        f.map_or(JamStatus::Running, JamStatus::Fault)
                    }
                };
                prop_assert_eq!(got, want);
            }
        }
    }
}
