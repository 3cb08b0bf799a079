//! The current estimate during PWM hold (the loop averaged over the PWM period): see
//! [`HoldEstimatorConfig`].

use crate::bounds::Range;
use crate::coil::Coil;
use crate::error::{Error, in_range, positive};
use crate::kernel::q::{mul_wide, q16_from_f32, q31_from_f32};
use crate::kernel::{EstimatorConfig, EstimatorRaw, EstimatorState, OffPath, off_path_of};
use crate::turnoff::Clamp;

use super::duty::DUTY_ONE_Q16;

/// The constant "clamp" of the hold loop's off path: a signed average loop voltage `u` enters
/// the kernel as the non-negative "supply" `u + HOLD_LOOP_BIAS_MV` ([`HoldEstimatorConfig`] docs), mV.
pub const HOLD_LOOP_BIAS_MV: i32 = 1 << 30;

const LOOP_R_MIN_OHM: f32 = 0.05;
const LOOP_R_MAX_OHM: f32 = 50_000.0;
const STEP_RATIO_MIN: f32 = 1.0e-6;
const STEP_RATIO_MAX: f32 = 1.0e3;
/// Q24 `mV/µA` per ohm: `1 Ω = 10⁻³ mV/µA`.
const Q24_PER_OHM: f32 = 16_777.216;

/// The loop seen by the coil in each switch state, plan side ([`HoldEstimatorConfig`] docs).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct LoopModel {
    pub(crate) l_h: f32,
    pub(crate) r_on: f32,
    pub(crate) r_off: f32,
    switch_drop_v: f32,
    clamp_v: f32,
    coupled: bool,
}

impl LoopModel {
    /// The loops of `coil` at `temp_c` switching into `clamp`.
    pub(crate) fn new(coil: &Coil, temp_c: f32, clamp: &Clamp) -> Result<Self, Error> {
        let (extra, clamp_v, coupled) = off_path_of(clamp)?;
        Ok(Self {
            l_h: coil.inductance_h(),
            r_on: coil.on_loop_resistance_ohm(temp_c)?,
            r_off: coil.off_loop_resistance_ohm(temp_c)? + extra,
            switch_drop_v: coil.params().switch_drop_v,
            clamp_v,
            coupled,
        })
    }

    fn u_on(&self, vs: f32) -> f32 {
        (vs - self.switch_drop_v).max(0.0)
    }

    fn u_off(&self, vs: f32) -> f32 {
        if self.coupled {
            vs - self.clamp_v
        } else {
            -self.clamp_v
        }
    }

    fn r_avg(&self, d: f32) -> f32 {
        d * self.r_on + (1.0 - d) * self.r_off
    }

    /// `u_avg/R_avg` at duty `d` and supply `vs`, A.
    pub(crate) fn mean_current_a(&self, d: f32, vs: f32) -> f32 {
        (d * self.u_on(vs) + (1.0 - d) * self.u_off(vs)) / self.r_avg(d)
    }

    /// The duty whose averaged loop holds `i` at `vs` (may lie outside `0 ..= 1`: not held).
    pub(crate) fn duty_for(&self, i: f32, vs: f32) -> f32 {
        let (on, off) = (self.u_on(vs), self.u_off(vs));
        let den = on - off - i * (self.r_on - self.r_off);
        if den > 0.0 {
            (i * self.r_off - off) / den
        } else {
            f32::INFINITY
        }
    }

    /// `(u_on − u_off + (R_off − R_on)·i)·T_p/L`: the excursion `e_pp` over `D(1 − D)`, A.
    pub(crate) fn swing_a(&self, vs: f32, i: f32, period_s: f32) -> f32 {
        ((self.u_on(vs) - self.u_off(vs) + (self.r_off - self.r_on) * i) * period_s / self.l_h)
            .abs()
    }
}

/// How the hold's duty is chosen, for [`HoldEstimatorConfig::new`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) enum HoldDuty {
    /// A fixed duty.
    Fixed(f32),
    /// Regulated anywhere in `0 ..= 1`, planned around this duty.
    Regulated(f32),
}

/// The raw constants of a [`HoldEstimatorConfig`], for constants emitted by the host tool
/// ([`HoldEstimatorConfig::from_raw`], [`HoldEstimatorConfig::raw`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct HoldEstimatorRaw {
    /// `1 − exp(−T·R_ref/L)`, Q31.
    pub step_q31: i32,
    /// `1/R_ref`, µA per mV, Q16.
    pub conductance_q16: i32,
    /// The reference duty `D_ref`, Q16 fraction (65536 = 1).
    pub reference_duty_q16: u32,
    /// `R_on − R_off`, mV per µA, Q24 (signed).
    pub delta_r_q24: i32,
    /// The documented bound of the estimate's error in hold, µA ([`HoldEstimatorConfig`] docs).
    pub error_bound_ua: i32,
}

/// The hold estimator: the coil loop averaged over the PWM period, integrated by the estimator
/// kernel, for every clamp kind.
/// clamp kind.
///
/// # The loop in each switch state
///
/// While the switch conducts, the coil loop has the voltage `u_on = V_s − V_sw` and the
/// resistance `R_on` (winding, switch, source and shunt). While it is open the current
/// freewheels through the clamp, and the loop has:
///
/// | Clamp | `u_off` | `R_off` |
/// |---|---|---|
/// | freewheel diode | `−V_f` | `R_w` |
/// | diode plus zener across the coil | `−(V_z + V_f)` | `R_w` |
/// | clamp across the switch (`supply_coupled`) | `V_s − V_cl = −(V_cl − V_s)` | `R_w` |
/// | resistor plus diode | `−V_f` (the resistor's `R_s·i` is in the loop resistance) | `R_w + R_s` |
///
/// (`R_w` the winding at the planned temperature, the same off path as the estimator's and the
/// off-timer's, [`EstimatorConfig::off_path`]). So the off voltage is not `−V_f` in general: a
/// clamp across the switch keeps the supply in the loop (the coil sees `−(V_cl − V_s)`, which
/// moves with the supply), a zener clamp opposes the current with tens of volts, and a
/// resistor clamp's opposing voltage `V_f + R_s·i` grows with the current.
///
/// # Averaged over a PWM period
///
/// With duty `D` and a PWM period `T_p` well below the time constants, the current's mean over
/// each period follows (state-space averaging of the two linear loops)
///
/// ```text
/// L di/dt = u_avg − R_avg·i,    u_avg = D·u_on + (1 − D)·u_off,    R_avg = D·R_on + (1 − D)·R_off
/// ```
///
/// which the estimator integrates exactly over each tick as it does the plain on and off loops
/// (zero-order hold of the tick's supply reading and duty). The integer form, per tick:
///
/// 1. `u_on`, `u_off` in mV from the supply reading, the switch drop and the clamp of the
///    coil's [`EstimatorConfig`] (one source for both);
/// 2. `u_avg = u_off + D·(u_on − u_off)` with `D` the duty written to the PWM as a Q16 fraction
///    (one 32×32→64 multiply);
/// 3. the loop is integrated with the step and conductance of a reference resistance
///    `R_ref = R_avg(D_ref)` (`D_ref`: the hold duty, or the regulation's planned duty), and the
///    difference `R_avg(D) − R_ref = (D − D_ref)(R_on − R_off)` is carried as a voltage,
///    `u_eff = u_avg − (D − D_ref)(R_on − R_off)·i` with `i` the estimate at the start of the
///    tick (two more multiplies). At `D = D_ref` (always, in a fixed-duty hold) this is the
///    exact averaged update; at any other duty its steady state `u_avg/R_avg` is exact and its
///    rate is off by at most `T·|R_on − R_off|/L` relative (the plan requires
///    `T·max(R_on, R_off)/L ≤ 1` when the duty varies, so the update stays monotone);
/// 4. `u_eff` may be negative (a low duty with a zener or a clamp across the switch drives the
///    current down fast): it goes through the estimator kernel's off path, whose target is
///    signed and which blocks at zero current, with the constant [`HOLD_LOOP_BIAS_MV`] as its
///    "clamp" and `u_eff + HOLD_LOOP_BIAS_MV` as its "supply" (the kernel's supply input is
///    non-negative; the difference it forms is `u_eff` exactly).
///
/// # Error bound
///
/// The estimate follows the period mean; the true current zig-zags about it. Over one period
/// the current rises with slope `(u_on − R_on i)/L` for `D·T_p` and falls with
/// `(u_off − R_off i)/L` for `(1 − D)·T_p`, so its peak-to-peak excursion about the averaged
/// trajectory is, to first order in `T_p/τ`,
///
/// ```text
/// e_pp = D(1 − D)·(u_on − u_off + (R_off − R_on)·i)·T_p/L
/// ```
///
/// The plan ([`HoldEstimatorConfig::with_fixed_duty`], and the regulated plan of
/// [`CoilDriverConfig::new`](super::CoilDriverConfig::new)) takes its largest value over the supply range, over
/// currents from zero to the largest the driver holds or pulls in, and over the duties the hold
/// uses (`D(1 − D) ≤ 1/4` when the duty is regulated), adds `e_pp·T_p·max(R_on, R_off)/L` for
/// the second-order terms (the exponential segments, the difference between the mean of the
/// periodic solution and `u_avg/R_avg` when `R_on ≠ R_off`), and the integer part
/// (`2 mV·g_ref + 3 µA`: truncations of the average voltage and the duty fraction, the
/// kernel's rounding of the target and its sub-µA carried fraction). That is
/// [`HoldEstimatorConfig::error_bound_ua`]: the estimate lies within it of the true current at
/// any instant of a hold in continuous conduction, with the coil as planned (a different
/// temperature changes the coil, not the averaging; the plausibility monitor's tolerance covers
/// that) and the PWM synchronous with the tick (a duty written in a tick runs from the tick's
/// start). A free-running PWM takes a new duty up to one period late; each duty change then
/// adds up to `|ΔD|·(u_on − u_off + (R_off − R_on)·i)·T_p/L`, which decays with the loop's time
/// constant. The unit tests of the coil driver check both per clamp kind against an f64
/// simulation of the PWM-held coil (exact exponential segments, the diode blocking at zero):
/// on the demo valve with a 20 kHz PWM and a 10 kHz tick the worst error over a whole
/// pull-in, hold and release cycle is 40–50 % of the bound (diode, zener, switch clamps) and
/// about 25 % (resistor clamp, whose bound covers currents up to the full-drive steady state).
///
/// The averaging holds in continuous conduction only: if the current reached zero within a
/// PWM period the loop would sit at zero instead of seeing `u_off`. The plan therefore
/// requires the smallest mean current of the hold to exceed `e_pp` (the valley stays above
/// zero), and a PWM period no longer than the tick.
///
/// # Examples
///
/// ```
/// # use lenz::{CoilParams, Range, drive::HoldEstimatorConfig, kernel::{EstimatorConfig, EstimatorState}};
/// # use lenz::turnoff::Clamp;
/// // Demo valve (invented): 120 mH, 32 Ω; clamp across the switch at 45 V; hold at duty 0.68,
/// // 20 kHz PWM, 10 kHz tick, supply 21.6 ..= 26.4 V.
/// let coil = CoilParams::new(0.120, 32.0).validate()?;
/// let clamp = Clamp::Switch { clamp_v: 45.0 };
/// let est = EstimatorConfig::with_clamp(&coil, 20.0, 100e-6, 0.0, 45.0, true)?;
/// let hold = HoldEstimatorConfig::with_fixed_duty(
///     &coil, 20.0, 100e-6, &clamp, 20e3, Range::new("supply_v", 21.6, 26.4)?, 0.68, 0.45,
/// )?;
/// let mut s = EstimatorState::with_current_ua(450_000);
/// let d_q16 = (0.68f32 * 65536.0).round() as u32;
/// for _ in 0..1000 {
///     hold.update(&est, &mut s, d_q16, 24_000);
/// }
/// // Averaged loop: (0.68·24 + 0.32·(24 − 45))/32 = 0.3 A.
/// assert!((s.current_ua() - 300_000).abs() < 100);
/// assert!(hold.error_bound_ua() < 20_000);
/// # Ok::<(), lenz::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct HoldEstimatorConfig {
    averaged: EstimatorConfig,
    reference_duty_q16: u32,
    delta_r_q24: i32,
    error_bound_ua: i32,
}

impl HoldEstimatorConfig {
    /// Plan side: the hold of `coil` at `temp_c` into `clamp` at the fixed duty `duty`, ticking
    /// every `tick_s`, PWM at `pwm_frequency_hz`, supply within `supply_v`, currents up to
    /// `current_max_a` (the largest the driver pulls in or holds).
    ///
    /// # Errors
    ///
    /// The coil's and clamp's errors (an unclamped switch-off has no averaged loop: `clamp`);
    /// `duty` outside `0 < D ≤ 1` (`hold_duty`); a PWM period longer than the tick
    /// (`pwm_frequency_hz`); a loop resistance or `tick/τ` outside the estimator's ranges
    /// (`loop_resistance_ohm`, `tick_s`); a hold whose smallest mean current does not exceed its
    /// ripple, so the current would reach zero within a period (`hold_duty`).
    #[allow(clippy::too_many_arguments)]
    pub fn with_fixed_duty(
        coil: &Coil,
        temp_c: f32,
        tick_s: f32,
        clamp: &Clamp,
        pwm_frequency_hz: f32,
        supply_v: Range,
        duty: f32,
        current_max_a: f32,
    ) -> Result<Self, Error> {
        let lp = LoopModel::new(coil, temp_c, clamp)?;
        let d = in_range("hold_duty", duty, 0.0, 1.0)?;
        if d <= 0.0 {
            return Err(Error::NotPositive { param: "hold_duty" });
        }
        let held = lp
            .mean_current_a(d, supply_v.min())
            .min(lp.mean_current_a(d, supply_v.max()));
        Self::new(
            &lp,
            tick_s,
            pwm_frequency_hz,
            supply_v,
            HoldDuty::Fixed(d),
            current_max_a,
            held,
            "hold_duty",
        )
    }

    /// The plan behind both forms: `held_min_a` is the smallest mean current of the hold
    /// (checked against the ripple, reported as `held_param`).
    #[allow(clippy::too_many_arguments)]
    pub(crate) fn new(
        lp: &LoopModel,
        tick_s: f32,
        pwm_frequency_hz: f32,
        supply_v: Range,
        duty: HoldDuty,
        current_max_a: f32,
        held_min_a: f32,
        held_param: &'static str,
    ) -> Result<Self, Error> {
        let tick = positive("tick_s", tick_s)?;
        let f = positive("pwm_frequency_hz", pwm_frequency_hz)?;
        let period = 1.0 / f;
        if period > tick * (1.0 + 1.0e-6) {
            return Err(Error::OutOfRange {
                param: "pwm_frequency_hz",
                value: f,
                min: 1.0 / tick,
                max: f32::MAX,
            });
        }
        let i_max = in_range("current_max_a", current_max_a, 0.0, 1.0e3)?;
        let (d_ref, dd) = match duty {
            HoldDuty::Fixed(d) => (d, d * (1.0 - d)),
            HoldDuty::Regulated(d) => {
                // The update stays monotone for any duty only while T·R/L ≤ 1.
                let x = tick * lp.r_on.max(lp.r_off) / lp.l_h;
                if x.is_nan() || x > 1.0 {
                    return Err(Error::OutOfRange {
                        param: "tick_s",
                        value: tick,
                        min: 0.0,
                        max: lp.l_h / lp.r_on.max(lp.r_off),
                    });
                }
                (d, 0.25)
            }
        };
        let r_ref = in_range(
            "loop_resistance_ohm",
            lp.r_avg(d_ref),
            LOOP_R_MIN_OHM,
            LOOP_R_MAX_OHM,
        )?;
        let x = in_range(
            "tick_s",
            tick * r_ref / lp.l_h,
            STEP_RATIO_MIN,
            STEP_RATIO_MAX,
        )?;
        let mut swing = 0.0f32;
        for vs in [supply_v.min(), supply_v.max()] {
            for i in [0.0, i_max] {
                swing = swing.max(lp.swing_a(vs, i, period));
            }
        }
        let e_pp = dd * swing;
        if held_min_a.is_nan() || held_min_a <= e_pp {
            return Err(Error::OutOfRange {
                param: held_param,
                value: held_min_a,
                min: e_pp,
                max: f32::MAX,
            });
        }
        let second = period * lp.r_on.max(lp.r_off) / lp.l_h;
        let g_ua_per_mv = 1000.0 / r_ref;
        let bound_ua = (e_pp * (1.0 + second)) * 1.0e6 + 2.0 * g_ua_per_mv + 3.0;
        let bound_ua = in_range("hold_error_bound_ua", bound_ua, 0.0, 1.0e9)?;
        let delta_q24 = (lp.r_on - lp.r_off) * Q24_PER_OHM;
        let delta_q24 = in_range(
            "loop_resistance_ohm",
            delta_q24,
            -(i32::MAX as f32),
            i32::MAX as f32,
        )?;
        Ok(Self::from_raw(HoldEstimatorRaw {
            step_q31: q31_from_f32(-libm::expm1f(-x)),
            conductance_q16: q16_from_f32(g_ua_per_mv),
            reference_duty_q16: libm::roundf(d_ref * DUTY_ONE_Q16 as f32) as u32,
            delta_r_q24: libm::roundf(delta_q24) as i32,
            error_bound_ua: libm::ceilf(bound_ua) as i32,
        }))
    }

    /// From raw values (constants emitted by the host tool). Any values are safe to run;
    /// wrong ones only make the estimate wrong, never panic.
    #[must_use]
    pub const fn from_raw(raw: HoldEstimatorRaw) -> Self {
        let path = OffPath {
            step_q31: raw.step_q31,
            conductance_q16: raw.conductance_q16,
            clamp_mv: HOLD_LOOP_BIAS_MV,
            supply_coupled: true,
        };
        Self {
            averaged: EstimatorConfig::from_raw(EstimatorRaw {
                on_step_q31: raw.step_q31,
                on_conductance_q16: raw.conductance_q16,
                switch_drop_mv: 0,
                off: path,
            }),
            reference_duty_q16: raw.reference_duty_q16,
            delta_r_q24: raw.delta_r_q24,
            error_bound_ua: raw.error_bound_ua,
        }
    }

    /// The raw values: `HoldEstimatorConfig::from_raw(cfg.raw()) == cfg`.
    #[must_use]
    pub const fn raw(&self) -> HoldEstimatorRaw {
        HoldEstimatorRaw {
            step_q31: self.averaged.off_path().step_q31,
            conductance_q16: self.averaged.off_path().conductance_q16,
            reference_duty_q16: self.reference_duty_q16,
            delta_r_q24: self.delta_r_q24,
            error_bound_ua: self.error_bound_ua,
        }
    }

    /// `1 − exp(−T·R_ref/L)`, Q31.
    #[inline]
    #[must_use]
    pub const fn step_q31(&self) -> i32 {
        self.averaged.off_path().step_q31
    }

    /// `1/R_ref`, µA per mV, Q16.
    #[inline]
    #[must_use]
    pub const fn conductance_q16(&self) -> i32 {
        self.averaged.off_path().conductance_q16
    }

    /// The reference duty `D_ref`, Q16 fraction.
    #[inline]
    #[must_use]
    pub const fn reference_duty_q16(&self) -> u32 {
        self.reference_duty_q16
    }

    /// `R_on − R_off`, mV per µA, Q24.
    #[inline]
    #[must_use]
    pub const fn delta_r_q24(&self) -> i32 {
        self.delta_r_q24
    }

    /// The bound of the estimate's error in hold, µA ([`HoldEstimatorConfig`] docs).
    #[inline]
    #[must_use]
    pub const fn error_bound_ua(&self) -> i32 {
        self.error_bound_ua
    }

    /// The average voltage of the coil loop over a tick at duty `duty_q16` (type docs, steps
    /// 1–3), with the reference-resistance correction at the estimate `current_ua`, mV.
    #[inline]
    #[must_use]
    pub fn loop_mv(
        &self,
        coil: &EstimatorConfig,
        duty_q16: u32,
        supply_mv: i32,
        current_ua: i32,
    ) -> i32 {
        let vs = if supply_mv > 0 { supply_mv } else { 0 };
        let on = vs.saturating_sub(coil.switch_drop_mv());
        let on = if on > 0 { on } else { 0 };
        let path = coil.off_path();
        let coupled = if path.supply_coupled { vs } else { 0 };
        let off = coupled.saturating_sub(path.clamp_mv);
        let d = if duty_q16 > DUTY_ONE_Q16 {
            DUTY_ONE_Q16
        } else {
            duty_q16
        } as i32;
        // |d·(on − off)| < 2¹⁶·2³²: exact in i64; the average lies between off and on.
        let avg = off as i64 + (mul_wide(d, on.saturating_sub(off)) >> 16);
        // (D − D_ref)·i: |D − D_ref| ≤ 2¹⁶ (for a raw reference above one, saturate) and
        // |i| ≤ 2³⁰ give at most 2⁴⁶, so the shifted product fits an i32.
        let dd = d.saturating_sub(self.reference_duty_q16.min(DUTY_ONE_Q16) as i32);
        let w = (mul_wide(dd, current_ua) >> 16) as i32;
        let corr = mul_wide(w, self.delta_r_q24) >> 24;
        let u = avg - corr;
        let lim = HOLD_LOOP_BIAS_MV as i64;
        (if u < -lim {
            -lim
        } else if u > lim - 1 {
            lim - 1
        } else {
            u
        }) as i32
    }

    /// Advances the estimate `state` by one tick of PWM hold at duty `duty_q16` (the duty the
    /// PWM ran during the tick, as a Q16 fraction) and supply `supply_mv`, and returns it, µA.
    ///
    /// `coil` is the coil's estimator (its switch drop and off path give `u_on` and `u_off`).
    /// Integer only: five 32×32→64 multiplies, no division, no panic; the result is in
    /// `0 ..= CURRENT_LIMIT_UA`.
    #[inline]
    pub fn update(
        &self,
        coil: &EstimatorConfig,
        state: &mut EstimatorState,
        duty_q16: u32,
        supply_mv: i32,
    ) -> i32 {
        let u = self.loop_mv(coil, duty_q16, supply_mv, state.current_ua());
        // u ∈ [−bias, bias − 1]: the sum is in 0 ..= 2³¹ − 1 and the kernel's difference
        // (sum − bias) is u exactly.
        self.averaged
            .update(state, false, u.wrapping_add(HOLD_LOOP_BIAS_MV))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::CoilParams;
    use crate::kernel::CURRENT_LIMIT_UA;
    use proptest::prelude::*;

    fn valve() -> Coil {
        // Demo valve (invented): 120 mH, 32 Ω, 0.5 Ω switch, 0.1 Ω shunt.
        CoilParams::new(0.120, 32.0)
            .with_switch_resistance_ohm(0.5)
            .with_shunt_resistance_ohm(0.1)
            .with_switch_drop_v(0.05)
            .validate()
            .unwrap()
    }

    fn supply() -> Range {
        Range::new("supply_v", 21.6, 26.4).unwrap()
    }

    fn clamps() -> [Clamp; 4] {
        [
            Clamp::Diode { forward_v: 0.7 },
            Clamp::Zener {
                zener_v: 24.0,
                forward_v: 0.7,
            },
            Clamp::Switch { clamp_v: 45.0 },
            Clamp::Resistor {
                resistance_ohm: 100.0,
                forward_v: 0.7,
            },
        ]
    }

    fn estimator(coil: &Coil, clamp: &Clamp) -> EstimatorConfig {
        let (extra, v, coupled) = off_path_of(clamp).unwrap();
        EstimatorConfig::with_clamp(coil, 20.0, 100e-6, extra, v, coupled).unwrap()
    }

    #[test]
    fn raw_round_trip_and_const() {
        let lp = LoopModel::new(&valve(), 20.0, &clamps()[3]).unwrap();
        let d = lp.duty_for(0.3, 24.0);
        let c = HoldEstimatorConfig::new(
            &lp,
            100e-6,
            20e3,
            supply(),
            HoldDuty::Regulated(d),
            0.5,
            0.3,
            "hold_current_a",
        )
        .unwrap();
        assert_eq!(HoldEstimatorConfig::from_raw(c.raw()), c);
        const C: HoldEstimatorConfig = HoldEstimatorConfig::from_raw(HoldEstimatorRaw {
            step_q31: 1,
            conductance_q16: 2,
            reference_duty_q16: 3,
            delta_r_q24: 4,
            error_bound_ua: 5,
        });
        assert_eq!(
            (
                C.step_q31(),
                C.conductance_q16(),
                C.reference_duty_q16(),
                C.delta_r_q24(),
                C.error_bound_ua()
            ),
            (1, 2, 3, 4, 5)
        );
    }

    /// The average loop voltage against its f64 form `D·u_on + (1 − D)·u_off` for every clamp
    /// kind (computed: the averaging formula of the type docs evaluated in f64).
    #[test]
    fn loop_voltage_per_clamp_kind() {
        let coil = valve();
        for clamp in clamps() {
            let est = estimator(&coil, &clamp);
            let lp = LoopModel::new(&coil, 20.0, &clamp).unwrap();
            let hold = HoldEstimatorConfig::with_fixed_duty(
                &coil,
                20.0,
                100e-6,
                &clamp,
                20e3,
                supply(),
                0.75,
                0.5,
            )
            .unwrap();
            for vs in [21.6f64, 24.0, 26.4] {
                let d = f64::from(hold.reference_duty_q16()) / 65536.0;
                let on = vs - 0.05;
                let off = match clamp {
                    Clamp::Diode { forward_v } | Clamp::Resistor { forward_v, .. } => {
                        -f64::from(forward_v)
                    }
                    Clamp::Zener { zener_v, forward_v } => -f64::from(zener_v + forward_v),
                    Clamp::Switch { clamp_v } => vs - f64::from(clamp_v),
                    Clamp::Unclamped { .. } => unreachable!(),
                };
                let want_mv = (d * on + (1.0 - d) * off) * 1000.0;
                let got = hold.loop_mv(&est, hold.reference_duty_q16(), (vs * 1000.0) as i32, 0);
                assert!(
                    (f64::from(got) - want_mv).abs() <= 1.0,
                    "{clamp:?} {vs}: {got} vs {want_mv}"
                );
                // The f32 plan model agrees.
                let m = lp.mean_current_a(d as f32, vs as f32);
                let r_avg = d * f64::from(lp.r_on) + (1.0 - d) * f64::from(lp.r_off);
                assert!((f64::from(m) - want_mv / 1000.0 / r_avg).abs() < 1e-5);
            }
        }
    }

    /// A fixed-duty hold settles at `u_avg/R_avg` (computed: the averaged loop's steady state),
    /// within the integer part of the bound.
    #[test]
    fn settles_at_the_averaged_steady_state() {
        let coil = valve();
        for clamp in clamps() {
            let est = estimator(&coil, &clamp);
            let lp = LoopModel::new(&coil, 20.0, &clamp).unwrap();
            for d in [0.5f32, 0.75, 0.9, 1.0] {
                let Ok(hold) = HoldEstimatorConfig::with_fixed_duty(
                    &coil,
                    20.0,
                    100e-6,
                    &clamp,
                    20e3,
                    supply(),
                    d,
                    0.8,
                ) else {
                    continue;
                };
                let dq = hold.reference_duty_q16();
                let want = f64::from(lp.mean_current_a(dq as f32 / 65536.0, 24.0)) * 1e6;
                let mut s = EstimatorState::with_current_ua(600_000);
                for _ in 0..20_000 {
                    hold.update(&est, &mut s, dq, 24_000);
                }
                let tol = 2.0 * 1000.0 / f64::from(lp.r_avg(d)) + 3.0;
                assert!(
                    (f64::from(s.current_ua()) - want).abs() <= tol,
                    "{clamp:?} {d}: {} vs {want}",
                    s.current_ua()
                );
            }
        }
    }

    /// At any duty (the regulated form) the steady state is still `u_avg/R_avg`: the
    /// resistance correction is exact at rest (computed: the averaged loop's steady state).
    #[test]
    fn regulated_steady_state_is_exact_at_any_duty() {
        let coil = valve();
        let clamp = clamps()[3];
        let est = estimator(&coil, &clamp);
        let lp = LoopModel::new(&coil, 20.0, &clamp).unwrap();
        let hold = HoldEstimatorConfig::new(
            &lp,
            100e-6,
            20e3,
            supply(),
            HoldDuty::Regulated(lp.duty_for(0.3, 24.0)),
            0.5,
            0.3,
            "hold_current_a",
        )
        .unwrap();
        for d in [0.6f64, 0.8, 0.95] {
            let dq = (d * 65536.0).round() as u32;
            let want = f64::from(lp.mean_current_a(d as f32, 24.0)) * 1e6;
            let mut s = EstimatorState::new();
            for _ in 0..20_000 {
                hold.update(&est, &mut s, dq, 24_000);
            }
            assert!(
                (f64::from(s.current_ua()) - want).abs() <= 80.0,
                "{d}: {} vs {want}",
                s.current_ua()
            );
        }
    }

    #[test]
    fn plan_rejects_what_it_cannot_average() {
        let coil = valve();
        let diode = clamps()[0];
        let f = |duty: f32, pwm: f32| {
            HoldEstimatorConfig::with_fixed_duty(
                &coil,
                20.0,
                100e-6,
                &diode,
                pwm,
                supply(),
                duty,
                0.5,
            )
        };
        assert_eq!(f(0.0, 20e3).unwrap_err().param(), "hold_duty");
        assert_eq!(f(1.5, 20e3).unwrap_err().param(), "hold_duty");
        // A 2 kHz PWM is slower than the 10 kHz tick.
        assert_eq!(f(0.5, 2e3).unwrap_err().param(), "pwm_frequency_hz");
        // Duty 0.03: 20 mA mean, below its ripple bound: the diode would block each period.
        assert_eq!(f(0.03, 10e3).unwrap_err().param(), "hold_duty");
        let none = Clamp::Unclamped {
            capacitance_f: 1e-10,
        };
        assert_eq!(
            HoldEstimatorConfig::with_fixed_duty(
                &coil,
                20.0,
                100e-6,
                &none,
                20e3,
                supply(),
                0.5,
                0.5
            )
            .unwrap_err()
            .param(),
            "clamp"
        );
    }

    proptest! {
        #[test]
        fn update_never_overflows(
            step in any::<i32>(), g in any::<i32>(), dref in any::<u32>(), dr in any::<i32>(),
            drop in any::<i32>(), clamp in any::<i32>(), coupled in any::<bool>(),
            start in any::<i32>(),
            seq in proptest::collection::vec((any::<u32>(), any::<i32>()), 1..40),
        ) {
            let hold = HoldEstimatorConfig::from_raw(HoldEstimatorRaw {
                step_q31: step, conductance_q16: g, reference_duty_q16: dref,
                delta_r_q24: dr, error_bound_ua: 0,
            });
            let est = EstimatorConfig::from_raw(EstimatorRaw {
                on_step_q31: 0, on_conductance_q16: 0, switch_drop_mv: drop,
                off: OffPath { step_q31: 0, conductance_q16: 0, clamp_mv: clamp,
                               supply_coupled: coupled },
            });
            let mut s = EstimatorState::with_current_ua(start);
            for (d, v) in seq {
                let i = hold.update(&est, &mut s, d, v);
                prop_assert!((0..=CURRENT_LIMIT_UA).contains(&i));
            }
        }
    }
}
