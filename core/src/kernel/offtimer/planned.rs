//! The planned off-timer: a tick count chosen at switch-off from a table planned with the
//! closed forms of the switch-off.

use super::state::{NEVER, OffStatus, OffTimerState};
use super::{CURRENT_LIMIT_UA, UA_PER_A};
use crate::error::{Error, in_range, positive};
use crate::kernel::estimator::EstimatorState;
use crate::turnoff::SwitchOff;

/// Number of breakpoints in a [`PlannedOffTimerConfig`] table. With the breakpoints spaced
/// geometrically over a current ratio `r`, a count overstates the decay time by at most
/// `τ·ln(r)/16` plus two ticks.
pub const PLANNED_TABLE_LEN: usize = 16;
const N: usize = PLANNED_TABLE_LEN;

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

/// Planned off-timer (shared by channels): at switch-off it takes a tick count from a table
/// planned with the closed forms of [`crate::turnoff`] and counts it down. The table holds, for
/// [`PLANNED_TABLE_LEN`] breakpoint currents, the ticks the decay from that current takes; the
/// smallest breakpoint at or above the current at switch-off is taken, which is the safe side
/// because the decay time grows with the current. Works for every clamp kind, a ringing
/// switch-off included, but does not follow the supply.
///
/// # Fail safe
///
/// When unsure the timer says [`OffStatus::NotYet`]: before
/// [`start`](PlannedOffTimerConfig::start) is called, and forever after a switch-off above
/// the table's highest breakpoint (the plan did not cover it). Every count is rounded up and
/// has one tick added for the unknown phase between the switch opening and the first tick.
///
/// # Cost and state
///
/// A decrement and a compare per tick; a scan of the [`PLANNED_TABLE_LEN`] breakpoints at
/// switch-off. No float, no division, no panic. State: [`OffTimerState`], 20 bytes.
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
        state.release_at_ua = 0;
        state.remaining_ticks = remaining;
        state.armed = true;
    }

    /// Advances one tick with the switch open.
    ///
    /// # Returns
    ///
    /// [`OffStatus::Released`] once the planned count has elapsed (this tick included);
    /// [`OffStatus::NotYet`] before, always before [`PlannedOffTimerConfig::start`], and forever
    /// for a current above the planned range.
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
