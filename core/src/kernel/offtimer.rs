//! Off-timer: after the switch opens, reports tick by tick whether the coil current has fallen
//! below a threshold (relay released, safe to re-energize or to reverse an H-bridge).
//!
//! # Two modes
//!
//! - [`TrackingOffTimerConfig`] runs the estimator's exact off-state update
//!   ([`EstimatorConfig::with_clamp`], see [`OffPath`](super::OffPath)) with the clamp voltage,
//!   from the current at switch-off, and compares the estimate with the threshold every tick.
//!   It follows the measured supply (which matters for a clamp across the switch, where the
//!   coil sees `V_cl − V_s`).
//! - [`PlannedOffTimerConfig`] counts down a tick count chosen at switch-off from a table planned
//!   with the closed forms of [`crate::turnoff`]: for [`PLANNED_TABLE_LEN`] breakpoint currents, the ticks the
//!   decay from that current takes. At switch-off the smallest breakpoint at or above the actual
//!   current is taken, which is the safe side because the decay time grows with the current.
//!
//! # Fail safe
//!
//! When unsure the timer says [`OffStatus::NotYet`]:
//!
//! - before [`start`](TrackingOffTimerConfig::start) is called;
//! - in tracking mode the estimate must lie at least a margin below the threshold. The margin
//!   bounds the error of the integer update against the closed form: the rounding of the
//!   target current (`u·g` with `g` in Q16 and the clamp in whole millivolts), the sub-µA bias
//!   of the carried fraction, and the rounding of the Q31 step coefficient, whose effect grows
//!   with the current at switch-off (`(i₀ + |I_t|)·δ`, `δ` the relative coefficient error, taken
//!   as a right shift of `i₀`: no division). It is set by the plan constructor
//!   ([`TrackingOffTimerConfig::margin_ua`]);
//! - in planned mode a current above the table's highest breakpoint never releases (the plan
//!   did not cover it), and every count is rounded up and has one tick added for the unknown
//!   phase between the switch opening and the first tick.
//!
//! # Cost and state
//!
//! Tracking: one estimator update (two 32×32→64 multiplies) and a compare per tick. Planned: a
//! decrement per tick, a scan of [`PLANNED_TABLE_LEN`] entries at switch-off. No float, no division, no panic.
//! State: [`OffTimerState`], 20 bytes.

use super::estimator::{EstimatorConfig, EstimatorRaw, EstimatorState};
use super::q::clamp_i64;
use crate::coil::Coil;
use crate::error::{Error, in_range, positive};
use crate::turnoff::{Clamp, SwitchOff};

/// Largest threshold or breakpoint current, µA (the estimator's range).
const CURRENT_LIMIT_UA: i32 = super::estimator::CURRENT_LIMIT_UA;
const UA_PER_A: f32 = 1.0e6;

/// Number of breakpoints in a [`PlannedOffTimerConfig`] table. With the breakpoints spaced
/// geometrically over a current ratio `r`, a count overstates the decay time by at most
/// `τ·ln(r)/16` plus two ticks.
pub const PLANNED_TABLE_LEN: usize = 16;
const N: usize = PLANNED_TABLE_LEN;

/// What the off-timer says this tick.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub enum OffStatus {
    /// The current may still be above the threshold (or the timer is unsure).
    NotYet,
    /// The current is below the threshold.
    Released,
}

/// Per-channel off-timer state (both modes): 20 bytes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct OffTimerState {
    estimate: EstimatorState,
    margin_ua: i32,
    remaining_ticks: u32,
    armed: bool,
}

/// `remaining_ticks` value that never counts down: the current was above the planned range.
const NEVER: u32 = u32::MAX;

impl OffTimerState {
    /// An idle timer (reports [`OffStatus::NotYet`] until started).
    #[must_use]
    pub const fn new() -> Self {
        Self {
            estimate: EstimatorState::new(),
            margin_ua: 0,
            remaining_ticks: 0,
            armed: false,
        }
    }

    /// The tracking estimate of the current, µA (tracking mode).
    #[must_use]
    pub const fn estimate_ua(&self) -> i32 {
        self.estimate.current_ua()
    }

    /// Ticks left before release (planned mode); `u32::MAX` for never.
    #[must_use]
    pub const fn remaining_ticks(&self) -> u32 {
        self.remaining_ticks
    }

    /// Stops the timer; it reports [`OffStatus::NotYet`] until started again.
    pub fn reset(&mut self) {
        *self = Self::new();
    }
}

/// Off-path arguments of [`EstimatorConfig::with_clamp`] for a clamp kind:
/// `(extra resistance Ω, clamp voltage V, supply coupled)`.
pub(crate) fn off_path_of(clamp: &Clamp) -> Result<(f32, f32, bool), Error> {
    Ok(match *clamp {
        Clamp::Diode { forward_v } => (0.0, forward_v, false),
        Clamp::Zener { zener_v, forward_v } => (0.0, zener_v + forward_v, false),
        Clamp::Switch { clamp_v } => (0.0, clamp_v, true),
        Clamp::Resistor {
            resistance_ohm,
            forward_v,
        } => (resistance_ohm, forward_v, false),
        // A ring is not a first-order decay: use the planned timer.
        Clamp::Unclamped { .. } => return Err(Error::NotPositive { param: "clamp" }),
    })
}

/// The raw values of a [`TrackingOffTimerConfig`], for constants emitted by the host tool
/// ([`TrackingOffTimerConfig::from_raw`], [`TrackingOffTimerConfig::raw`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct TrackingOffTimerRaw {
    /// The estimator coefficients (only the off path is used).
    pub estimator: EstimatorRaw,
    /// Release threshold, µA.
    pub threshold_ua: i32,
    /// Constant part of the margin below the threshold, µA.
    pub base_margin_ua: i32,
    /// The margin adds the current at switch-off shifted right by this many bits.
    pub margin_shift: u32,
}

/// Tracking off-timer: the estimator's off-state update against a threshold.
///
/// # Examples
///
/// ```
/// # use lenz::{CoilParams, turnoff::Clamp, kernel::{OffStatus, OffTimerState, TrackingOffTimerConfig}};
/// // Demo valve (invented): 120 mH, 32 Ω, 0.75 A at switch-off, 24 V zener + 0.7 V diode.
/// let coil = CoilParams::new(0.120, 32.0).validate()?;
/// let clamp = Clamp::Zener { zener_v: 24.0, forward_v: 0.7 };
/// let timer = TrackingOffTimerConfig::new(&coil, 20.0, 100e-6, &clamp, 0.075)?;
/// let mut s = OffTimerState::new();
/// timer.start(&mut s, 750_000);
/// let mut ticks = 0;
/// while timer.update(&mut s, 24_000) == OffStatus::NotYet {
///     ticks += 1;
/// }
/// // Closed form: 2.198 ms to 75 mA, so release on the 22nd tick.
/// assert_eq!(ticks + 1, 22);
/// # Ok::<(), lenz::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct TrackingOffTimerConfig {
    estimator: EstimatorConfig,
    threshold_ua: i32,
    base_margin_ua: i32,
    margin_shift: u32,
}

impl TrackingOffTimerConfig {
    /// Plan side: a timer for `coil` at `temp_c`, ticking every `tick_s`, decaying through
    /// `clamp`, reporting release below `threshold_a`.
    ///
    /// # Errors
    ///
    /// The errors of [`EstimatorConfig::with_clamp`]; an [`Clamp::Unclamped`] clamp (`clamp`:
    /// a ring is not tracked, use [`PlannedOffTimerConfig`]); `threshold_a` not positive, or so small
    /// against the timer's margin that it could not be trusted (out of range, with the smallest
    /// usable threshold).
    pub fn new(
        coil: &Coil,
        temp_c: f32,
        tick_s: f32,
        clamp: &Clamp,
        threshold_a: f32,
    ) -> Result<Self, Error> {
        let (extra_r, clamp_v, coupled) = off_path_of(clamp)?;
        let estimator =
            EstimatorConfig::with_clamp(coil, temp_c, tick_s, extra_r, clamp_v, coupled)?;
        let threshold = positive("threshold_a", threshold_a)?;
        let r_off = coil.off_loop_resistance_ohm(temp_c)? + extra_r;
        let off = estimator.off_path();
        // Relative error of the Q31 step coefficient: rounding (2^-32 absolute) plus the f32
        // evaluation of expm1 and T·R/L (a few ulp).
        let c = off.step_q31 as f32 / (1u64 << 31) as f32;
        let delta = (1.0 / (1u64 << 32) as f32) / c + 4.0e-7;
        let mut shift = 0u32;
        while shift < 30 && (1.0 / (1u64 << (shift + 1)) as f32) >= delta {
            shift += 1;
        }
        // Target current error, µA: Q16 conductance rounding over the whole clamp voltage, the
        // final rounding, 0.5 mV clamp rounding times the conductance; plus the carried
        // fraction's bias and the coefficient error acting on the asymptote.
        let g_ua_per_mv = 1000.0 / r_off;
        let clamp_mv = off.clamp_mv as f32;
        let target_ua = clamp_mv * g_ua_per_mv;
        let base = 2.0
            + 0.5
            + clamp_mv / 131_072.0
            + 0.5 * g_ua_per_mv
            + target_ua / (1u64 << shift) as f32;
        let base_margin_ua = libm::ceilf(base) as i32;
        let threshold_ua = libm::floorf(threshold * UA_PER_A);
        let min_threshold_ua = 4.0 * base_margin_ua as f32;
        in_range(
            "threshold_a",
            threshold_ua,
            min_threshold_ua,
            CURRENT_LIMIT_UA as f32,
        )
        .map_err(|_| Error::OutOfRange {
            param: "threshold_a",
            value: threshold,
            min: min_threshold_ua / UA_PER_A,
            max: CURRENT_LIMIT_UA as f32 / UA_PER_A,
        })?;
        Ok(Self {
            estimator,
            threshold_ua: threshold_ua as i32,
            base_margin_ua,
            margin_shift: shift,
        })
    }

    /// From raw values (constants emitted by the host tool). Any values are safe to run; wrong
    /// ones only make the timer wrong, never panic.
    #[must_use]
    pub const fn from_raw(raw: TrackingOffTimerRaw) -> Self {
        Self {
            estimator: EstimatorConfig::from_raw(raw.estimator),
            threshold_ua: raw.threshold_ua,
            base_margin_ua: raw.base_margin_ua,
            margin_shift: raw.margin_shift,
        }
    }

    /// The raw values: `TrackingOffTimerConfig::from_raw(cfg.raw()) == cfg`.
    #[must_use]
    pub const fn raw(&self) -> TrackingOffTimerRaw {
        TrackingOffTimerRaw {
            estimator: self.estimator.raw(),
            threshold_ua: self.threshold_ua,
            base_margin_ua: self.base_margin_ua,
            margin_shift: self.margin_shift,
        }
    }

    /// Constant part of the margin, µA (see [`TrackingOffTimerConfig::margin_ua`]).
    #[must_use]
    pub const fn base_margin_ua(&self) -> i32 {
        self.base_margin_ua
    }

    /// The margin grows by the current at switch-off shifted right by this (see
    /// [`TrackingOffTimerConfig::margin_ua`]).
    #[must_use]
    pub const fn margin_shift(&self) -> u32 {
        self.margin_shift
    }

    /// Release threshold, µA.
    #[must_use]
    pub const fn threshold_ua(&self) -> i32 {
        self.threshold_ua
    }

    /// The margin below the threshold the estimate must reach after a switch-off from
    /// `start_ua`: `base_margin_ua + (start_ua >> margin_shift)`, µA.
    #[must_use]
    pub const fn margin_ua(&self, start_ua: i32) -> i32 {
        let start = if start_ua > 0 { start_ua } else { 0 };
        let scaled = match start.checked_shr(self.margin_shift) {
            Some(v) => v,
            None => 0,
        };
        self.base_margin_ua.saturating_add(scaled)
    }

    /// The estimator coefficients.
    #[must_use]
    pub const fn estimator(&self) -> &EstimatorConfig {
        &self.estimator
    }

    /// Arms the timer at switch-off with the current then, µA (from the running estimator or
    /// a measurement; saturated to the estimator's range).
    pub fn start(&self, state: &mut OffTimerState, current_ua: i32) {
        state.estimate = EstimatorState::with_current_ua(current_ua);
        state.margin_ua = self.margin_ua(current_ua);
        state.remaining_ticks = 0;
        state.armed = true;
    }

    /// Advances one tick with the switch open.
    ///
    /// # Arguments
    ///
    /// - `supply_mv`: the supply during the tick, mV (used by a clamp across the switch).
    ///
    /// # Returns
    ///
    /// [`OffStatus::Released`] when the estimate lies at least the margin below the threshold;
    /// [`OffStatus::NotYet`] otherwise, and always before [`TrackingOffTimerConfig::start`].
    #[inline]
    pub fn update(&self, state: &mut OffTimerState, supply_mv: i32) -> OffStatus {
        if !state.armed {
            return OffStatus::NotYet;
        }
        let i = self.estimator.update(&mut state.estimate, false, supply_mv);
        let with_margin = clamp_i64(
            i as i64 + state.margin_ua as i64,
            i32::MIN as i64,
            i32::MAX as i64,
        );
        if with_margin <= self.threshold_ua as i64 {
            OffStatus::Released
        } else {
            OffStatus::NotYet
        }
    }
}

/// The raw tables of a [`PlannedOffTimerConfig`], for constants emitted by the host tool
/// ([`PlannedOffTimerConfig::from_raw`], [`PlannedOffTimerConfig::raw`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct PlannedOffTimerRaw {
    /// Breakpoint currents, ascending, µA.
    pub breakpoints_ua: [i32; N],
    /// Ticks from switch-off to release for a current at or below each breakpoint.
    pub ticks: [u32; N],
}

/// Planned off-timer: a tick count chosen at switch-off from a table of [`PLANNED_TABLE_LEN`]
/// breakpoints.
///
/// # Examples
///
/// ```
/// # use lenz::{turnoff::{Clamp, SwitchOff}, kernel::{OffStatus, OffTimerState, PlannedOffTimerConfig}};
/// // Demo relay (invented): 0.3 H, 120 Ω, 12 V, 0.7 V diode; released below 10 mA.
/// let plan = SwitchOff::new(0.3, 120.0, 12.0, 0.1, Clamp::Diode { forward_v: 0.7 })?;
/// let timer = PlannedOffTimerConfig::new(&plan, 0.010, 0.120, 100e-6)?;
/// let mut s = OffTimerState::new();
/// timer.start(&mut s, 100_000);
/// let mut ticks = 1;
/// while timer.update(&mut s) == OffStatus::NotYet {
///     ticks += 1;
/// }
/// // Closed form from 100 mA: 4.749 ms; the breakpoint above it and the phase tick add some.
/// assert!(ticks >= 49 && ticks <= 60, "{ticks}");
/// # Ok::<(), lenz::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct PlannedOffTimerConfig {
    breakpoints_ua: [i32; N],
    ticks: [u32; N],
}

impl PlannedOffTimerConfig {
    /// Plan side: the table for switch-offs like `plan` (its coil, supply and clamp; its own
    /// initial current is ignored) from currents up to `max_current_a`, released below
    /// `threshold_a`, ticking every `tick_s`. Breakpoints are spaced geometrically from the
    /// threshold to `max_current_a` (the decay time is close to linear in `ln i₀`). For a
    /// worst case over tolerances, pass the slowest corner's plan (see
    /// [`crate::turnoff::TurnOffSpread`]).
    ///
    /// # Errors
    ///
    /// `threshold_a` not positive or `max_current_a` not above it,
    /// either beyond the kernel range (about 1073 A); `tick_s` not positive; a decay time of
    /// 2³¹ ticks or more (`tick_s` out of range) or one that cannot be computed.
    pub fn new(
        plan: &SwitchOff,
        threshold_a: f32,
        max_current_a: f32,
        tick_s: f32,
    ) -> Result<Self, Error> {
        let limit_a = CURRENT_LIMIT_UA as f32 / UA_PER_A;
        let thr = in_range(
            "threshold_a",
            positive("threshold_a", threshold_a)?,
            1.0 / UA_PER_A,
            limit_a,
        )?;
        let max = in_range("max_current_a", max_current_a, thr, limit_a)?;
        if max <= thr {
            return Err(Error::OutOfRange {
                param: "max_current_a",
                value: max,
                min: thr,
                max: limit_a,
            });
        }
        let tick = positive("tick_s", tick_s)?;
        let ratio = max / thr;
        let mut breakpoints_ua = [0i32; N];
        let mut ticks = [0u32; N];
        for (k, (bp, n)) in breakpoints_ua.iter_mut().zip(ticks.iter_mut()).enumerate() {
            let frac = (k + 1) as f32 / N as f32;
            let i_bp = if k + 1 == N {
                max
            } else {
                thr * libm::powf(ratio, frac)
            };
            let bp_ua = libm::ceilf(i_bp * UA_PER_A).min(CURRENT_LIMIT_UA as f32);
            *bp = bp_ua as i32;
            // The count covers every current up to this breakpoint (plus 1 µA of rounding);
            // the time is rounded up with a relative guard for the f32 closed form, and one
            // tick is added for the unknown phase of the first tick.
            let from_a = (bp_ua + 1.0) / UA_PER_A;
            let t = plan
                .with_initial_current_a(from_a)?
                .time_to_current_s(thr)?;
            let count = libm::ceilf(t * (1.0 + 1.0e-5) / tick) + 1.0;
            // Counts stay below 2^31, far from the `NEVER` marker.
            let count_max = (1u32 << 31) as f32;
            if !(count.is_finite() && count < count_max) {
                return Err(Error::OutOfRange {
                    param: "tick_s",
                    value: tick,
                    min: t / count_max,
                    max: f32::INFINITY,
                });
            }
            *n = count as u32;
        }
        Ok(Self {
            breakpoints_ua,
            ticks,
        })
    }

    /// From raw tables (constants emitted by the host tool). Any values are safe to run.
    #[must_use]
    pub const fn from_raw(raw: PlannedOffTimerRaw) -> Self {
        Self {
            breakpoints_ua: raw.breakpoints_ua,
            ticks: raw.ticks,
        }
    }

    /// The raw tables: `PlannedOffTimerConfig::from_raw(cfg.raw()) == cfg`.
    #[must_use]
    pub const fn raw(&self) -> PlannedOffTimerRaw {
        PlannedOffTimerRaw {
            breakpoints_ua: self.breakpoints_ua,
            ticks: self.ticks,
        }
    }

    /// The breakpoints, µA.
    #[must_use]
    pub const fn breakpoints_ua(&self) -> &[i32; N] {
        &self.breakpoints_ua
    }

    /// The tick counts of the breakpoints.
    #[must_use]
    pub const fn ticks(&self) -> &[u32; N] {
        &self.ticks
    }

    /// Arms the timer at switch-off with the current then, µA: counts down the ticks of the
    /// smallest breakpoint at or above it; never releases above the highest breakpoint.
    pub fn start(&self, state: &mut OffTimerState, current_ua: i32) {
        let mut remaining = NEVER;
        for (bp, n) in self.breakpoints_ua.iter().zip(self.ticks.iter()) {
            if current_ua <= *bp {
                remaining = *n;
                break;
            }
        }
        state.estimate = EstimatorState::new();
        state.margin_ua = 0;
        state.remaining_ticks = remaining;
        state.armed = true;
    }

    /// Advances one tick with the switch open.
    ///
    /// # Returns
    ///
    /// [`OffStatus::Released`] once the planned count has elapsed (this tick included);
    /// [`OffStatus::NotYet`] before, always before [`PlannedOffTimerConfig::start`], and forever for
    /// a current above the planned range.
    #[inline]
    pub fn update(&self, state: &mut OffTimerState) -> OffStatus {
        if !state.armed || state.remaining_ticks == NEVER {
            return OffStatus::NotYet;
        }
        state.remaining_ticks = state.remaining_ticks.saturating_sub(1);
        if state.remaining_ticks == 0 {
            OffStatus::Released
        } else {
            OffStatus::NotYet
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::CoilParams;
    use crate::kernel::OffPath;
    use proptest::prelude::*;

    #[test]
    fn state_fits_budget() {
        assert!(core::mem::size_of::<OffTimerState>() <= 32);
    }

    /// The raw values carry every field (for both modes).
    #[test]
    fn raw_round_trip() {
        let coil = CoilParams::new(0.120, 32.0).validate().unwrap();
        let clamp = Clamp::Zener {
            zener_v: 24.0,
            forward_v: 0.7,
        };
        let t = TrackingOffTimerConfig::new(&coil, 20.0, 1e-4, &clamp, 0.075).unwrap();
        assert_eq!(TrackingOffTimerConfig::from_raw(t.raw()), t);
        let raw = t.raw();
        assert_eq!(
            (t.threshold_ua(), t.base_margin_ua(), t.margin_shift()),
            (raw.threshold_ua, raw.base_margin_ua, raw.margin_shift)
        );
        assert_eq!(
            t.margin_ua(1 << 20),
            t.base_margin_ua() + ((1 << 20) >> t.margin_shift())
        );
        let plan = SwitchOff::new(0.12, 32.0, 24.0, 0.75, clamp).unwrap();
        let p = PlannedOffTimerConfig::new(&plan, 0.075, 0.8, 1e-4).unwrap();
        assert_eq!(PlannedOffTimerConfig::from_raw(p.raw()), p);
    }

    #[test]
    fn not_yet_before_start() {
        let coil = CoilParams::new(0.120, 32.0).validate().unwrap();
        let t =
            TrackingOffTimerConfig::new(&coil, 20.0, 1e-4, &Clamp::Diode { forward_v: 0.7 }, 0.075)
                .unwrap();
        let mut s = OffTimerState::new();
        for _ in 0..1000 {
            assert_eq!(t.update(&mut s, 24_000), OffStatus::NotYet);
        }
        let plan = SwitchOff::new(0.12, 32.0, 24.0, 0.75, Clamp::Diode { forward_v: 0.7 }).unwrap();
        let p = PlannedOffTimerConfig::new(&plan, 0.075, 0.8, 1e-4).unwrap();
        let mut s = OffTimerState::new();
        assert_eq!(p.update(&mut s), OffStatus::NotYet);
        // Above the planned range: never.
        p.start(&mut s, 900_000);
        for _ in 0..100_000 {
            assert_eq!(p.update(&mut s), OffStatus::NotYet);
        }
    }

    #[test]
    fn rejects_bad_plans() {
        let coil = CoilParams::new(0.120, 32.0).validate().unwrap();
        let d = Clamp::Diode { forward_v: 0.7 };
        let unclamped = Clamp::Unclamped {
            capacitance_f: 100e-12,
        };
        assert_eq!(
            TrackingOffTimerConfig::new(&coil, 20.0, 1e-4, &unclamped, 0.075)
                .unwrap_err()
                .param(),
            "clamp"
        );
        assert_eq!(
            TrackingOffTimerConfig::new(&coil, 20.0, 1e-4, &d, 1e-6)
                .unwrap_err()
                .param(),
            "threshold_a"
        );
        let plan = SwitchOff::new(0.12, 32.0, 24.0, 0.75, d).unwrap();
        assert_eq!(
            PlannedOffTimerConfig::new(&plan, 0.075, 0.05, 1e-4)
                .unwrap_err()
                .param(),
            "max_current_a"
        );
    }

    proptest! {
        #[test]
        fn raw_tables_never_panic(
            bps in proptest::array::uniform16(any::<i32>()),
            ticks in proptest::array::uniform16(any::<u32>()),
            start in any::<i32>(), n in 0usize..300,
        ) {
            let p = PlannedOffTimerConfig::from_raw(PlannedOffTimerRaw {
                breakpoints_ua: bps,
                ticks,
            });
            let mut s = OffTimerState::new();
            p.start(&mut s, start);
            for _ in 0..n {
                let _ = p.update(&mut s);
            }
        }

        #[test]
        fn raw_tracking_never_panics(
            step in any::<i32>(), g in any::<i32>(), clamp in any::<i32>(), coupled in any::<bool>(),
            thr in any::<i32>(), base in any::<i32>(), shift in any::<u32>(), start in any::<i32>(),
            supplies in proptest::collection::vec(any::<i32>(), 1..50),
        ) {
            let estimator = EstimatorRaw {
                on_step_q31: step, on_conductance_q16: g, switch_drop_mv: 0,
                off: OffPath {
                    step_q31: step, conductance_q16: g, clamp_mv: clamp, supply_coupled: coupled,
                },
            };
            let t = TrackingOffTimerConfig::from_raw(TrackingOffTimerRaw {
                estimator, threshold_ua: thr, base_margin_ua: base, margin_shift: shift,
            });
            let mut s = OffTimerState::new();
            t.start(&mut s, start);
            for v in supplies {
                let _ = t.update(&mut s, v);
            }
        }
    }
}
