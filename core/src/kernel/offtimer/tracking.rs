//! The tracking off-timer: the estimator's off-state update against a threshold.

#[cfg(doc)]
use super::PlannedOffTimerConfig;
use super::state::{OffStatus, OffTimerState};
use super::{CURRENT_LIMIT_UA, UA_PER_A};
use crate::coil::Coil;
use crate::error::{Error, in_range, positive};
#[cfg(doc)]
use crate::kernel::estimator::OffPath;
use crate::kernel::estimator::{EstimatorConfig, EstimatorRaw, EstimatorState};
use crate::kernel::q::clamp_i64;
use crate::turnoff::Clamp;

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

/// Tracking off-timer (shared by channels): after the switch opens, runs the estimator's
/// exact off-state update ([`EstimatorConfig::with_clamp`], see [`OffPath`]) with the clamp
/// voltage from the current at switch-off, and reports tick by tick whether the current has
/// fallen below a threshold (relay released, safe to re-energize or to reverse an H-bridge).
/// It follows the measured supply, which matters for a clamp across the switch, where the
/// coil sees `V_cl − V_s`. A ringing switch-off (no clamp) is not first-order: use
/// [`PlannedOffTimerConfig`] there.
///
/// # Fail safe
///
/// When unsure the timer says [`OffStatus::NotYet`]: before
/// [`start`](TrackingOffTimerConfig::start) is called, and while the estimate lies less than a
/// margin below the threshold. The margin bounds the error of the integer update against the
/// closed form: the rounding of the target current (`u·g` with `g` in Q16 and the clamp in
/// whole millivolts), the sub-µA bias of the carried fraction, and the rounding of the Q31 step
/// coefficient, whose effect grows with the current at switch-off (`(i₀ + |I_t|)·δ`, `δ` the
/// relative coefficient error, taken as a right shift of `i₀`: no division). The plan
/// constructor sets it ([`TrackingOffTimerConfig::margin_ua`]) and refuses a threshold below
/// four margins.
///
/// # Cost and state
///
/// One estimator off-path update (two 32×32→64 multiplies) and one compare per tick against a
/// release level set at [`start`](TrackingOffTimerConfig::start); no float, no division, no
/// panic. Measured by `lenz cost`: 95.0 instructions per tick on Cortex-M0, 44.0 on
/// Cortex-M3, 40.0 on Cortex-M4F. State: [`OffTimerState`], 20 bytes.
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
    /// The errors of [`EstimatorConfig::with_clamp`]; an [`Clamp::Unclamped`] clamp (`clamp`: a
    /// ring is not tracked, use [`PlannedOffTimerConfig`]); `threshold_a` not positive, or so small
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
        // Released when `estimate + margin ≤ threshold`, the sum saturated at i32::MAX; with
        // the estimate in 0 ..= 2^30 that is `estimate ≤ threshold − margin` (exact in i64,
        // saturated), and always at a threshold of i32::MAX. One compare per tick.
        let margin = i64::from(self.margin_ua(current_ua));
        state.release_at_ua = if self.threshold_ua == i32::MAX {
            i32::MAX
        } else {
            clamp_i64(
                i64::from(self.threshold_ua) - margin,
                i32::MIN as i64,
                i32::MAX as i64,
            ) as i32
        };
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
        let i = self.estimator.update_off(&mut state.estimate, supply_mv);
        if i <= state.release_at_ua {
            OffStatus::Released
        } else {
            OffStatus::NotYet
        }
    }
}
