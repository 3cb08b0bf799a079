//! Instantaneous overcurrent threshold: how high the trip level may sit so that the current
//! when the switch actually opens is still within what the switch survives, and blanking after
//! switch-on.
//!
//! # Detection delay
//!
//! Between the current crossing the threshold and the switch opening, the firmware loses, in
//! the worst case:
//!
//! ```text
//! t_det = N·T_s + t_conv + t_fw + t_off
//! ```
//!
//! `T_s` the sampling period (the crossing can fall just after a sample: one full period until
//! the next; an `N`-of-`M` persistence filter needs `N` samples over the threshold, the first
//! of which may come a full period late), `t_conv` the ADC conversion, `t_fw` the firmware
//! latency to the gate command, `t_off` the gate driver and switch turn-off. A hardware
//! comparator replaces the first two terms with its own propagation delay.
//!
//! # Worst-case rise and the highest safe threshold
//!
//! - **Normal load** (the coil itself, or a saturated core at its minimum inductance): the
//!   current rises at most at `di/dt = V_max / L_min` (winding resistance ignored: it only
//!   slows the rise). The current at interruption is at most `I_trip + (V_max/L_min)·t_det`,
//!   so the highest safe threshold is
//!
//!   ```text
//!   I_trip = I_abs − (V_max / L_min) · t_det
//!   ```
//!
//!   (common practice, no source).
//! - **Shorted load**: only the wiring's residual inductance `L_loop` and loop resistance
//!   `R_loop` remain. `L di/dt = V − R i` integrates exactly to
//!   `i(t) = I_ss + (i₀ − I_ss)·e^(−t R/L)`, `I_ss = V/R`. Requiring `i(t_det) ≤ I_abs` from
//!   `i₀ = I_trip` gives the exact highest safe threshold
//!
//!   ```text
//!   I_trip = I_abs − (I_ss − I_abs) · (e^(t_det R/L) − 1)
//!   ```
//!
//!   which tends to the linear rule as `R → 0`. The tangent `i₀ + (V − i₀ R)/L · t` is a
//!   conservative linear bound on `i(t)` (the exponential is concave).
//!
//! The plan takes the lower of the two thresholds. It then compares it with the largest
//! normal current (inrush, PWM peaks: from the coil plan): the threshold must sit above it, or
//! normal operation trips. If it does not, nothing fits between the two, and
//! [`ThresholdParams::plan`] says so with [`Error::Unreachable`]; [`ThresholdParams::remedy`]
//! then gives the detection delay and the inductance that would make it fit.
//!
//! # Blanking
//!
//! The turn-on spike (diode reverse recovery, gate charge ringing) is hidden by ignoring the
//! comparison for `t_blank` after switch-on; `t_blank` must exceed the reverse-recovery and
//! ringing time, and `t_blank + t_det` must stay below the shortest on time or the detector
//! never sees a full pulse (leading-edge blanking as in TI PWM controller datasheets; numbers
//! common practice). A short that is present at switch-on grows unchecked for
//! `t_blank + t_det`: [`blanking_check`] gives that worst case.

use crate::error::{Error, finite, finite_result, in_range, non_negative, positive};

/// Largest current accepted by the threshold plans (switch limits, fault and initial
/// currents: a shorted load draws far more than a coil), A.
pub const FAULT_CURRENT_MAX_A: f32 = 1.0e6;
/// Largest supply accepted, V.
pub const SUPPLY_MAX_V: f32 = 1.0e5;
/// Smallest inductance accepted, H.
pub const INDUCTANCE_MIN_H: f32 = 1.0e-12;
/// Largest inductance accepted, H.
pub const INDUCTANCE_MAX_H: f32 = 1.0e4;
/// Largest delay or time accepted, s.
pub const TIME_MAX_S: f32 = 1.0e3;

/// The parts of the detection delay (module docs). All in seconds.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct DetectionDelay {
    /// Sampling period `T_s` (0 for a hardware comparator), s.
    pub sample_period_s: f32,
    /// Samples over the threshold needed to trip (`N` of an `N`-of-`M` filter; 1 without
    /// one).
    pub persistence_samples: u16,
    /// ADC conversion time (or comparator propagation delay), s.
    pub conversion_s: f32,
    /// Firmware latency from the sample to the gate command, s.
    pub firmware_s: f32,
    /// Gate driver and switch turn-off time, s.
    pub gate_off_s: f32,
}

impl DetectionDelay {
    /// A delay of `other_s` (conversion, firmware and turn-off together) plus one sampling
    /// period `sample_period_s` for the worst-case sample phase.
    #[must_use]
    pub const fn lumped(sample_period_s: f32, other_s: f32) -> Self {
        Self {
            sample_period_s,
            persistence_samples: 1,
            conversion_s: other_s,
            firmware_s: 0.0,
            gate_off_s: 0.0,
        }
    }

    /// Worst-case total `N·T_s + t_conv + t_fw + t_off`, s.
    ///
    /// # Errors
    ///
    /// Any part negative or not finite (named `sample_period_s`, `conversion_s`,
    /// `firmware_s`, `gate_off_s`), zero persistence, or a total above 1e3 s (`delay_s`).
    pub fn total_s(&self) -> Result<f32, Error> {
        let ts = non_negative("sample_period_s", self.sample_period_s)?;
        let conv = non_negative("conversion_s", self.conversion_s)?;
        let fw = non_negative("firmware_s", self.firmware_s)?;
        let off = non_negative("gate_off_s", self.gate_off_s)?;
        if self.persistence_samples == 0 {
            return Err(Error::NotPositive {
                param: "persistence_samples",
            });
        }
        let total = f32::from(self.persistence_samples) * ts + conv + fw + off;
        in_range("delay_s", total, 0.0, TIME_MAX_S)
    }
}

/// A shorted load: the supply across the wiring's residual inductance and loop resistance
/// (also usable for any RL loop, for example a motor at start).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct ShortedLoad {
    supply_v: f32,
    inductance_h: f32,
    resistance_ohm: f32,
}

impl ShortedLoad {
    /// `supply_v` across `inductance_h` (residual loop inductance) and `resistance_ohm` (loop
    /// resistance, may be zero).
    ///
    /// # Errors
    ///
    /// `supply_v` not in `0 < V ≤ 1e5`, `inductance_h` outside `1e-12 ..= 1e4` H,
    /// `resistance_ohm` negative or above 1e6 Ω.
    pub fn new(supply_v: f32, inductance_h: f32, resistance_ohm: f32) -> Result<Self, Error> {
        positive("supply_v", supply_v)?;
        in_range("supply_v", supply_v, 0.0, SUPPLY_MAX_V)?;
        in_range(
            "inductance_h",
            inductance_h,
            INDUCTANCE_MIN_H,
            INDUCTANCE_MAX_H,
        )?;
        non_negative("resistance_ohm", resistance_ohm)?;
        in_range("resistance_ohm", resistance_ohm, 0.0, 1.0e6)?;
        Ok(Self {
            supply_v,
            inductance_h,
            resistance_ohm,
        })
    }

    /// The current the loop settles at, `V/R`, A (infinite for `R = 0`).
    #[must_use]
    pub fn steady_current_a(&self) -> f32 {
        if self.resistance_ohm > 0.0 {
            self.supply_v / self.resistance_ohm
        } else {
            f32::INFINITY
        }
    }

    /// `di/dt = (V − i R)/L` at current `current_a`, A/s.
    ///
    /// # Errors
    ///
    /// `current_a` not finite or beyond ±1e6 A.
    pub fn di_dt_a_per_s(&self, current_a: f32) -> Result<f32, Error> {
        let i = in_range(
            "current_a",
            current_a,
            -FAULT_CURRENT_MAX_A,
            FAULT_CURRENT_MAX_A,
        )?;
        finite_result(
            "current_a",
            (self.supply_v - i * self.resistance_ohm) / self.inductance_h,
        )
    }

    fn check_time(t_s: f32) -> Result<f32, Error> {
        non_negative("t_s", t_s)?;
        in_range("t_s", t_s, 0.0, TIME_MAX_S)
    }

    /// Current `t_s` after `initial_a` (exact exponential), A.
    ///
    /// # Errors
    ///
    /// `initial_a` beyond ±1e6 A, `t_s` negative or above 1e3 s, or a result f32 cannot hold.
    pub fn current_after_a(&self, initial_a: f32, t_s: f32) -> Result<f32, Error> {
        let i0 = in_range(
            "initial_a",
            initial_a,
            -FAULT_CURRENT_MAX_A,
            FAULT_CURRENT_MAX_A,
        )?;
        let t = Self::check_time(t_s)?;
        let i = if self.resistance_ohm > 0.0 {
            let x = t * self.resistance_ohm / self.inductance_h;
            i0 + (self.steady_current_a() - i0) * -libm::expm1f(-x)
        } else {
            i0 + self.supply_v / self.inductance_h * t
        };
        finite_result("t_s", i)
    }

    /// The linear (tangent) bound `i₀ + (V − i₀ R)/L · t` on the current `t_s` after
    /// `initial_a`, A; never below the exact value.
    ///
    /// # Errors
    ///
    /// As [`ShortedLoad::current_after_a`].
    pub fn linear_bound_a(&self, initial_a: f32, t_s: f32) -> Result<f32, Error> {
        let i0 = in_range(
            "initial_a",
            initial_a,
            -FAULT_CURRENT_MAX_A,
            FAULT_CURRENT_MAX_A,
        )?;
        let t = Self::check_time(t_s)?;
        finite_result("t_s", i0 + self.di_dt_a_per_s(i0)? * t)
    }

    /// Time from `initial_a` to `target_a`, s.
    ///
    /// # Errors
    ///
    /// Currents beyond ±1e6 A or `target_a < initial_a` (`target_a` out of range);
    /// [`Error::Unreachable`] when `target_a` is at or above the steady current.
    pub fn time_to_current_s(&self, initial_a: f32, target_a: f32) -> Result<f32, Error> {
        let i0 = in_range(
            "initial_a",
            initial_a,
            -FAULT_CURRENT_MAX_A,
            FAULT_CURRENT_MAX_A,
        )?;
        let i1 = in_range("target_a", target_a, i0, FAULT_CURRENT_MAX_A)?;
        let t = if self.resistance_ohm > 0.0 {
            let iss = self.steady_current_a();
            if i1 >= iss {
                return Err(Error::Unreachable {
                    param: "target_a",
                    target: i1,
                    limit: iss,
                });
            }
            self.inductance_h / self.resistance_ohm * libm::log1pf((i1 - i0) / (iss - i1))
        } else {
            (i1 - i0) * self.inductance_h / self.supply_v
        };
        finite_result("target_a", t)
    }

    /// The exact highest threshold so that a current crossing it is at most `limit_a` after
    /// `delay_s` (module docs), A. Above the steady current the short never reaches the
    /// limit, and the result then exceeds `limit_a`.
    ///
    /// # Errors
    ///
    /// `limit_a` not in `0 < I ≤ 1e6`, `delay_s` negative or above 1e3 s.
    pub fn highest_threshold_a(&self, limit_a: f32, delay_s: f32) -> Result<f32, Error> {
        let lim = positive("limit_a", limit_a)?;
        in_range("limit_a", lim, 0.0, FAULT_CURRENT_MAX_A)?;
        let t = Self::check_time(delay_s)?;
        let thr = if self.resistance_ohm > 0.0 {
            let x = t * self.resistance_ohm / self.inductance_h;
            lim - (self.steady_current_a() - lim) * libm::expm1f(x)
        } else {
            lim - self.supply_v / self.inductance_h * t
        };
        finite_result("delay_s", thr)
    }

    /// The linear rule `I_abs − (V/L)·t_det` for this loop (resistance ignored), A.
    ///
    /// # Errors
    ///
    /// As [`ShortedLoad::highest_threshold_a`].
    pub fn linear_threshold_a(&self, limit_a: f32, delay_s: f32) -> Result<f32, Error> {
        let lim = positive("limit_a", limit_a)?;
        in_range("limit_a", lim, 0.0, FAULT_CURRENT_MAX_A)?;
        let t = Self::check_time(delay_s)?;
        finite_result("delay_s", lim - self.supply_v / self.inductance_h * t)
    }
}

/// Inputs of the instantaneous-threshold plan (module docs).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct ThresholdParams {
    /// Current the switch survives (`I_abs`), A.
    pub switch_limit_a: f32,
    /// Highest supply voltage, V.
    pub supply_max_v: f32,
    /// Smallest inductance of the normal load (saturated, hot, lowest tolerance), H.
    pub inductance_min_h: f32,
    /// Detection delay.
    pub delay: DetectionDelay,
    /// Largest normal current (inrush or PWM peak), A, if known.
    pub normal_peak_a: Option<f32>,
    /// A shorted-load case to cover as well, if any.
    pub shorted_load: Option<ShortedLoad>,
}

/// Which case set the threshold.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub enum LimitedBy {
    /// The normal load at its minimum inductance (linear rule).
    Load,
    /// The shorted load (exact exponential).
    ShortedLoad,
}

/// Result of the instantaneous-threshold plan.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct ThresholdPlan {
    /// The highest safe threshold, A.
    pub threshold_a: f32,
    /// Worst-case total detection delay, s.
    pub delay_s: f32,
    /// Worst-case `di/dt` of the normal load, `V_max/L_min`, A/s.
    pub di_dt_a_per_s: f32,
    /// How much the current rises from the threshold during the delay, A.
    pub rise_during_delay_a: f32,
    /// Worst-case current when the switch opens, A (at most the switch limit).
    pub peak_at_interrupt_a: f32,
    /// Threshold minus the largest normal current, A (if the normal current was given).
    pub margin_a: Option<f32>,
    /// The case that set the threshold.
    pub limited_by: LimitedBy,
}

/// What would make a threshold fit (see [`ThresholdParams::remedy`]).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct Remedy {
    /// Longest total detection delay that would fit (faster detection, or a hardware
    /// comparator with at most this delay), s.
    pub max_delay_s: f32,
    /// Smallest inductance (of the limiting case) that would fit at the present delay, H.
    pub min_inductance_h: f32,
    /// The case the remedy applies to.
    pub limited_by: LimitedBy,
}

impl ThresholdParams {
    fn validate(&self) -> Result<(f32, f32, f32, f32, Option<f32>), Error> {
        let lim = positive("switch_limit_a", self.switch_limit_a)?;
        in_range("switch_limit_a", lim, 0.0, FAULT_CURRENT_MAX_A)?;
        let v = positive("supply_max_v", self.supply_max_v)?;
        in_range("supply_max_v", v, 0.0, SUPPLY_MAX_V)?;
        let l = in_range(
            "inductance_min_h",
            self.inductance_min_h,
            INDUCTANCE_MIN_H,
            INDUCTANCE_MAX_H,
        )?;
        let t = self.delay.total_s()?;
        let normal = match self.normal_peak_a {
            Some(n) => Some(in_range(
                "normal_peak_a",
                non_negative("normal_peak_a", n)?,
                0.0,
                FAULT_CURRENT_MAX_A,
            )?),
            None => None,
        };
        Ok((lim, v, l, t, normal))
    }

    /// The highest safe threshold, the rise during the delay, the peak at interruption and
    /// the margin to the normal current.
    ///
    /// # Errors
    ///
    /// Bad inputs, named. [`Error::Unreachable`] with `param = "delay_s"` (target the delay,
    /// limit the longest delay that leaves a positive threshold) when the current can reach
    /// the switch limit from zero within the delay; with `param = "normal_peak_a"` (target the
    /// normal peak, limit the highest safe threshold: the largest normal peak that would fit)
    /// when no threshold fits above the normal current.
    ///
    /// # Examples
    ///
    /// ```
    /// use lenz::trip::{DetectionDelay, ThresholdParams};
    /// // 30 A switch, 12 V over 2 µH, 2 µs delay: 30 − 6 A/µs · 2 µs = 18 A.
    /// let p = ThresholdParams {
    ///     switch_limit_a: 30.0,
    ///     supply_max_v: 12.0,
    ///     inductance_min_h: 2e-6,
    ///     delay: DetectionDelay::lumped(0.0, 2e-6),
    ///     normal_peak_a: Some(10.0),
    ///     shorted_load: None,
    /// };
    /// let plan = p.plan()?;
    /// assert!((plan.threshold_a - 18.0).abs() < 1e-4);
    /// assert!((plan.margin_a.unwrap() - 8.0).abs() < 1e-4);
    /// # Ok::<(), lenz::Error>(())
    /// ```
    pub fn plan(&self) -> Result<ThresholdPlan, Error> {
        let (lim, v, l, t, normal) = self.validate()?;
        let di_dt = finite_result("inductance_min_h", v / l)?;
        let load_thr = finite_result("delay_s", lim - di_dt * t)?;
        let short_thr = match &self.shorted_load {
            Some(s) => Some(s.highest_threshold_a(lim, t)?),
            None => None,
        };
        let (threshold, limited_by) = match short_thr {
            Some(s) if s < load_thr => (s, LimitedBy::ShortedLoad),
            _ => (load_thr, LimitedBy::Load),
        };
        if threshold.is_nan() || threshold <= 0.0 {
            return Err(Error::Unreachable {
                param: "delay_s",
                target: t,
                limit: self.max_delay_s(lim, v, l, 0.0)?,
            });
        }
        let mut peak = threshold + di_dt * t;
        if let Some(s) = &self.shorted_load {
            peak = peak.max(s.current_after_a(threshold, t)?);
        }
        let peak = finite_result("delay_s", peak)?;
        let margin = normal.map(|n| threshold - n);
        if let (Some(n), Some(m)) = (normal, margin)
            && (m.is_nan() || m <= 0.0)
        {
            return Err(Error::Unreachable {
                param: "normal_peak_a",
                target: n,
                limit: threshold,
            });
        }
        Ok(ThresholdPlan {
            threshold_a: threshold,
            delay_s: t,
            di_dt_a_per_s: di_dt,
            rise_during_delay_a: peak - threshold,
            peak_at_interrupt_a: peak,
            margin_a: margin,
            limited_by,
        })
    }

    /// Longest delay for which a current starting at `from_a` stays within `lim` in both
    /// cases.
    fn max_delay_s(&self, lim: f32, v: f32, l: f32, from_a: f32) -> Result<f32, Error> {
        let mut t = (lim - from_a).max(0.0) * l / v;
        if let Some(s) = &self.shorted_load {
            let ts = match s.time_to_current_s(from_a, lim) {
                Ok(ts) => ts,
                Err(Error::Unreachable { .. }) => f32::INFINITY,
                Err(e) => return Err(e),
            };
            t = t.min(ts);
        }
        finite_result("delay_s", t)
    }

    /// What would make a threshold fit just above the normal peak (zero if none is given):
    /// the longest total delay, and the smallest inductance of the limiting case at the
    /// present delay (linear rule, conservative).
    ///
    /// # Errors
    ///
    /// Bad inputs, named; [`Error::Unreachable`] (`normal_peak_a`) when the normal peak is at
    /// or above the switch limit, which no delay or inductance fixes.
    pub fn remedy(&self) -> Result<Remedy, Error> {
        let (lim, v, l, t, normal) = self.validate()?;
        let n = normal.unwrap_or(0.0);
        if n.is_nan() || n >= lim {
            return Err(Error::Unreachable {
                param: "normal_peak_a",
                target: n,
                limit: lim,
            });
        }
        let max_delay_s = self.max_delay_s(lim, v, l, n)?;
        let mut limited_by = LimitedBy::Load;
        let mut min_l = v * t / (lim - n);
        if let Some(s) = &self.shorted_load {
            let ls = s.supply_v * t / (lim - n);
            if s.inductance_h < l {
                limited_by = LimitedBy::ShortedLoad;
                min_l = ls;
            }
        }
        Ok(Remedy {
            max_delay_s,
            min_inductance_h: finite_result("inductance_min_h", min_l)?,
            limited_by,
        })
    }
}

/// Worst case of blanking after switch-on (module docs).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct BlankingCheck {
    /// Current when the switch opens on a short present at switch-on, exact, A.
    pub peak_a: f32,
    /// The same by the linear bound `V/L·(t_blank + t_det)`, A.
    pub peak_linear_a: f32,
    /// `peak_a` is within the switch limit.
    pub within_limit: bool,
    /// `t_blank + t_det` is shorter than the shortest on time, so every pulse is seen.
    pub fits_min_on_time: bool,
}

/// The shortest on time of a PWM at `pwm_hz` with minimum duty `min_duty`, s.
///
/// # Errors
///
/// `pwm_hz` not positive, `min_duty` outside `0 ..= 1`.
pub fn min_on_time_s(pwm_hz: f32, min_duty: f32) -> Result<f32, Error> {
    let f = positive("pwm_hz", pwm_hz)?;
    let d = in_range("min_duty", min_duty, 0.0, 1.0)?;
    finite_result("pwm_hz", d / f)
}

/// The worst case a blanking time `blank_s` allows: a short present at switch-on grows for
/// `blank_s + delay_s` before the switch opens; checked against `switch_limit_a` and against
/// the shortest on time `min_on_time_s`.
///
/// # Errors
///
/// Negative or non-finite times, bad limit.
///
/// # Examples
///
/// ```
/// use lenz::trip::{ShortedLoad, blanking_check, min_on_time_s};
/// let short = ShortedLoad::new(12.0, 2e-6, 0.08)?;
/// let ton = min_on_time_s(20e3, 0.02)?; // 1 µs
/// let b = blanking_check(&short, 3e-6, 2e-6, 30.0, ton)?;
/// assert!((b.peak_a - 27.1904).abs() < 1e-3);
/// assert!(!b.fits_min_on_time);
/// # Ok::<(), lenz::Error>(())
/// ```
pub fn blanking_check(
    short: &ShortedLoad,
    blank_s: f32,
    delay_s: f32,
    switch_limit_a: f32,
    min_on_time_s: f32,
) -> Result<BlankingCheck, Error> {
    let blank = non_negative("blank_s", blank_s)?;
    let delay = non_negative("delay_s", delay_s)?;
    let lim = positive("switch_limit_a", switch_limit_a)?;
    let ton = non_negative("min_on_time_s", min_on_time_s)?;
    let total = finite("blank_s", blank + delay)?;
    let peak = short.current_after_a(0.0, total)?;
    Ok(BlankingCheck {
        peak_a: peak,
        peak_linear_a: short.linear_bound_a(0.0, total)?,
        within_limit: peak <= lim,
        fits_min_on_time: total < ton,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::testing::isclose;
    use proptest::prelude::*;

    fn motor_short() -> ShortedLoad {
        ShortedLoad::new(12.0, 2e-6, 0.08).unwrap()
    }

    #[test]
    fn shorted_threshold_round_trips() {
        let s = motor_short();
        let thr = s.highest_threshold_a(30.0, 2e-6).unwrap();
        let back = s.current_after_a(thr, 2e-6).unwrap();
        assert!(isclose(back as f64, 30.0, 1e-5, 0.0));
        // Exact with resistance is higher than the linear rule.
        assert!(thr > s.linear_threshold_a(30.0, 2e-6).unwrap());
    }

    #[test]
    fn nothing_fits_names_the_cause() {
        let mut p = ThresholdParams {
            switch_limit_a: 30.0,
            supply_max_v: 12.0,
            inductance_min_h: 2e-6,
            delay: DetectionDelay::lumped(1e-6, 2e-6),
            normal_peak_a: Some(15.0),
            shorted_load: None,
        };
        // 30 − 6·3 = 12 A < 15 A.
        match p.plan() {
            Err(Error::Unreachable {
                param: "normal_peak_a",
                target,
                limit,
            }) => {
                assert_eq!(target, 15.0);
                assert!(isclose(limit as f64, 12.0, 1e-5, 0.0));
            }
            other => panic!("{other:?}"),
        }
        let r = p.remedy().unwrap();
        assert!(isclose(r.max_delay_s as f64, 2.5e-6, 1e-5, 0.0));
        assert!(isclose(r.min_inductance_h as f64, 2.4e-6, 1e-5, 0.0));
        // With the remedy applied it fits.
        p.inductance_min_h = r.min_inductance_h * 1.01;
        assert!(p.plan().is_ok());
        p.delay = DetectionDelay::lumped(0.0, 1e-3);
        assert!(matches!(
            p.plan(),
            Err(Error::Unreachable {
                param: "delay_s",
                ..
            })
        ));
    }

    proptest! {
        #[test]
        fn peak_never_exceeds_limit(lim in 1.0f32..1000.0, v in 1.0f32..1000.0,
                                    l in 1e-7f32..1.0, t in 0.0f32..1e-3, r in 0.0f32..10.0) {
            let p = ThresholdParams {
                switch_limit_a: lim,
                supply_max_v: v,
                inductance_min_h: l,
                delay: DetectionDelay::lumped(0.0, t),
                normal_peak_a: None,
                shorted_load: Some(ShortedLoad::new(v, l * 0.5, r).unwrap()),
            };
            if let Ok(plan) = p.plan() {
                prop_assert!(plan.threshold_a > 0.0);
                prop_assert!(plan.peak_at_interrupt_a <= lim * (1.0 + 1e-4));
            }
        }

        #[test]
        fn no_panic_on_any_input(a in any::<f32>(), b in any::<f32>(), c in any::<f32>(),
                                 d in any::<f32>(), e in any::<f32>(), n in any::<u16>()) {
            let delay = DetectionDelay {
                sample_period_s: d,
                persistence_samples: n,
                conversion_s: e,
                firmware_s: 0.0,
                gate_off_s: 0.0,
            };
            let short = ShortedLoad::new(b, c, e).ok();
            let p = ThresholdParams {
                switch_limit_a: a,
                supply_max_v: b,
                inductance_min_h: c,
                delay,
                normal_peak_a: Some(e),
                shorted_load: short,
            };
            if let Ok(plan) = p.plan() {
                prop_assert!(plan.threshold_a.is_finite() && plan.peak_at_interrupt_a.is_finite());
            }
            let _ = p.remedy();
            if let Some(s) = short {
                let _ = s.current_after_a(a, d);
                let _ = s.linear_bound_a(a, d);
                let _ = s.time_to_current_s(a, d);
                let _ = s.highest_threshold_a(a, d);
                let _ = s.di_dt_a_per_s(a);
                let _ = blanking_check(&s, d, e, a, c);
            }
            let _ = min_on_time_s(a, b);
        }
    }
}
