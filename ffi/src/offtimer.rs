//! The off-timers ([`TrackingOffTimerConfig`], [`PlannedOffTimerConfig`]): raw values, opaque
//! configurations, the state both share, start at switch-off and the per-tick update.

use lenz::kernel::{
    OffStatus, OffTimerState, PLANNED_TABLE_LEN, PlannedOffTimerConfig, PlannedOffTimerRaw,
    TrackingOffTimerConfig, TrackingOffTimerRaw,
};

use crate::LenzStatus;
use crate::estimator::LenzEstimatorRaw;
use crate::opaque::{Out, get, inner, inner_mut, opaque};

/// Words of `LenzTrackingOffTimerConfig`.
pub const LENZ_TRACKING_OFFTIMER_CONFIG_WORDS: usize = 10;
/// Words of `LenzPlannedOffTimerConfig`.
pub const LENZ_PLANNED_OFFTIMER_CONFIG_WORDS: usize = 32;
/// Words of `LenzOffTimerState`.
pub const LENZ_OFFTIMER_STATE_WORDS: usize = 5;
/// Breakpoints of a planned off-timer table.
pub const LENZ_PLANNED_TABLE_LEN: usize = 16;
const _: () = assert!(LENZ_PLANNED_TABLE_LEN == PLANNED_TABLE_LEN);

/// The raw values of a tracking off-timer, as a constant can hold them (Rust:
/// `lenz::kernel::TrackingOffTimerRaw`).
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LenzTrackingOffTimerRaw {
    /// The estimator coefficients (only the off path is used).
    pub estimator: LenzEstimatorRaw,
    /// Release threshold, µA.
    pub threshold_ua: i32,
    /// Constant part of the margin below the threshold, µA.
    pub base_margin_ua: i32,
    /// The margin adds the current at switch-off shifted right by this many bits.
    pub margin_shift: u32,
}

/// The raw table of a planned off-timer, as a constant can hold it (Rust:
/// `lenz::kernel::PlannedOffTimerRaw`).
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LenzPlannedOffTimerRaw {
    /// Breakpoint currents, ascending, µA.
    pub breakpoints_ua: [i32; LENZ_PLANNED_TABLE_LEN],
    /// Ticks from switch-off to release for a current at or below each breakpoint.
    pub ticks: [u32; LENZ_PLANNED_TABLE_LEN],
}

/// Tracking off-timer values (opaque; fill with `lenz_tracking_offtimer_init`).
#[repr(C)]
pub struct LenzTrackingOffTimerConfig {
    opaque: [u32; LENZ_TRACKING_OFFTIMER_CONFIG_WORDS],
}

/// Planned off-timer table (opaque; fill with `lenz_planned_offtimer_init`).
#[repr(C)]
pub struct LenzPlannedOffTimerConfig {
    opaque: [u32; LENZ_PLANNED_OFFTIMER_CONFIG_WORDS],
}

/// One channel's off-timer state, either mode (opaque; fill with `lenz_offtimer_state_init`).
#[repr(C)]
pub struct LenzOffTimerState {
    opaque: [u32; LENZ_OFFTIMER_STATE_WORDS],
}

opaque!(
    LenzTrackingOffTimerConfig,
    TrackingOffTimerConfig,
    LENZ_TRACKING_OFFTIMER_CONFIG_WORDS
);
opaque!(
    LenzPlannedOffTimerConfig,
    PlannedOffTimerConfig,
    LENZ_PLANNED_OFFTIMER_CONFIG_WORDS
);
opaque!(LenzOffTimerState, OffTimerState, LENZ_OFFTIMER_STATE_WORDS);

/// What an off-timer says this tick (Rust: `lenz::kernel::OffStatus`).
#[repr(u8)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LenzOffStatus {
    /// The current may still be above the threshold (or the timer is unsure, or not started).
    NotYet = 0,
    /// The current is below the threshold.
    Released = 1,
}

impl From<OffStatus> for LenzOffStatus {
    fn from(s: OffStatus) -> Self {
        match s {
            OffStatus::NotYet => LenzOffStatus::NotYet,
            OffStatus::Released => LenzOffStatus::Released,
        }
    }
}

impl From<LenzTrackingOffTimerRaw> for TrackingOffTimerRaw {
    fn from(c: LenzTrackingOffTimerRaw) -> Self {
        TrackingOffTimerRaw {
            estimator: c.estimator.into(),
            threshold_ua: c.threshold_ua,
            base_margin_ua: c.base_margin_ua,
            margin_shift: c.margin_shift,
        }
    }
}

impl From<TrackingOffTimerRaw> for LenzTrackingOffTimerRaw {
    fn from(r: TrackingOffTimerRaw) -> Self {
        LenzTrackingOffTimerRaw {
            estimator: r.estimator.into(),
            threshold_ua: r.threshold_ua,
            base_margin_ua: r.base_margin_ua,
            margin_shift: r.margin_shift,
        }
    }
}

impl From<LenzPlannedOffTimerRaw> for PlannedOffTimerRaw {
    fn from(c: LenzPlannedOffTimerRaw) -> Self {
        PlannedOffTimerRaw {
            breakpoints_ua: c.breakpoints_ua,
            ticks: c.ticks,
        }
    }
}

impl From<PlannedOffTimerRaw> for LenzPlannedOffTimerRaw {
    fn from(r: PlannedOffTimerRaw) -> Self {
        LenzPlannedOffTimerRaw {
            breakpoints_ua: r.breakpoints_ua,
            ticks: r.ticks,
        }
    }
}

/// An idle timer: reports `LENZ_OFF_STATUS_NOT_YET` until started (Rust:
/// `OffTimerState::new`).
///
/// # Safety
///
/// `state_out` is null or writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_offtimer_state_init(state_out: *mut LenzOffTimerState) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `state_out` is writable by the contract above.
        let out = unsafe { Out::new(state_out) }?;
        out.set_inner(OffTimerState::new());
        Ok(())
    })())
}

/// Stops the timer; it reports `LENZ_OFF_STATUS_NOT_YET` until started again (Rust:
/// `OffTimerState::reset`).
///
/// # Safety
///
/// `state` is null or initialised by `lenz_offtimer_state_init`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_offtimer_state_reset(state: *mut LenzOffTimerState) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `state` is initialised by the contract above.
        unsafe { inner_mut(state) }?.reset();
        Ok(())
    })())
}

/// The tracking estimate of the current, µA (tracking mode; Rust:
/// `OffTimerState::estimate_ua`).
///
/// # Safety
///
/// Each pointer is null or valid: `state` initialised, `current_ua_out` writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_offtimer_state_estimate_ua(
    state: *const LenzOffTimerState,
    current_ua_out: *mut i32,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `state` is initialised by the contract above.
        let s = unsafe { inner(state) }?;
        // SAFETY: `current_ua_out` is writable by the contract above.
        let out = unsafe { Out::new(current_ua_out) }?;
        out.set(s.estimate_ua());
        Ok(())
    })())
}

/// Ticks left before release (planned mode), `UINT32_MAX` for never (Rust:
/// `OffTimerState::remaining_ticks`).
///
/// # Safety
///
/// Each pointer is null or valid: `state` initialised, `ticks_out` writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_offtimer_state_remaining_ticks(
    state: *const LenzOffTimerState,
    ticks_out: *mut u32,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `state` is initialised by the contract above.
        let s = unsafe { inner(state) }?;
        // SAFETY: `ticks_out` is writable by the contract above.
        let out = unsafe { Out::new(ticks_out) }?;
        out.set(s.remaining_ticks());
        Ok(())
    })())
}

/// Fills `cfg_out` from raw values (Rust: `TrackingOffTimerConfig::from_raw`).
///
/// # Safety
///
/// Each pointer is null or valid: `raw` readable, `cfg_out` writable; they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_tracking_offtimer_init(
    cfg_out: *mut LenzTrackingOffTimerConfig,
    raw: *const LenzTrackingOffTimerRaw,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `raw` is readable by the contract above.
        let raw = unsafe { get(raw) }?;
        // SAFETY: `cfg_out` is writable by the contract above.
        let out = unsafe { Out::new(cfg_out) }?;
        out.set_inner(TrackingOffTimerConfig::from_raw((*raw).into()));
        Ok(())
    })())
}

/// Writes the raw values of `cfg` to `raw_out` (Rust: `TrackingOffTimerConfig::raw`).
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` initialised by `lenz_tracking_offtimer_init`,
/// `raw_out` writable; they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_tracking_offtimer_raw(
    cfg: *const LenzTrackingOffTimerConfig,
    raw_out: *mut LenzTrackingOffTimerRaw,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `cfg` is initialised by the contract above.
        let cfg = unsafe { inner(cfg) }?;
        // SAFETY: `raw_out` is writable by the contract above.
        let out = unsafe { Out::new(raw_out) }?;
        out.set(cfg.raw().into());
        Ok(())
    })())
}

/// The margin below the threshold the estimate must reach after a switch-off from
/// `start_ua`: `base_margin_ua + (start_ua >> margin_shift)`, µA (Rust:
/// `TrackingOffTimerConfig::margin_ua`).
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` initialised, `margin_ua_out` writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_tracking_offtimer_margin_ua(
    cfg: *const LenzTrackingOffTimerConfig,
    start_ua: i32,
    margin_ua_out: *mut i32,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `cfg` is initialised by the contract above.
        let cfg = unsafe { inner(cfg) }?;
        // SAFETY: `margin_ua_out` is writable by the contract above.
        let out = unsafe { Out::new(margin_ua_out) }?;
        out.set(cfg.margin_ua(start_ua));
        Ok(())
    })())
}

/// Arms the timer at switch-off with the current then, µA, from the running estimator or a
/// measurement (Rust: `TrackingOffTimerConfig::start`).
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` and `state` initialised; they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_tracking_offtimer_start(
    cfg: *const LenzTrackingOffTimerConfig,
    state: *mut LenzOffTimerState,
    current_ua: i32,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `cfg` is initialised by the contract above.
        let cfg = unsafe { inner(cfg) }?;
        // SAFETY: `state` is initialised and not shared by the contract above.
        let s = unsafe { inner_mut(state) }?;
        cfg.start(s, current_ua);
        Ok(())
    })())
}

/// One tick with the switch open (Rust: `TrackingOffTimerConfig::update`): the supply during
/// the tick, mV (used by a clamp across the switch). Writes `LENZ_OFF_STATUS_RELEASED` when
/// the estimate lies at least the margin below the threshold, else
/// `LENZ_OFF_STATUS_NOT_YET` (always before `lenz_tracking_offtimer_start`).
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` and `state` initialised, `status_out` writable; they
/// do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_tracking_offtimer_update(
    cfg: *const LenzTrackingOffTimerConfig,
    state: *mut LenzOffTimerState,
    supply_mv: i32,
    status_out: *mut LenzOffStatus,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `cfg` is initialised by the contract above.
        let cfg = unsafe { inner(cfg) }?;
        // SAFETY: `state` is initialised and not shared by the contract above.
        let s = unsafe { inner_mut(state) }?;
        // SAFETY: `status_out` is writable by the contract above.
        let out = unsafe { Out::new(status_out) }?;
        out.set(cfg.update(s, supply_mv).into());
        Ok(())
    })())
}

/// Fills `cfg_out` from a raw table (Rust: `PlannedOffTimerConfig::from_raw`).
///
/// # Safety
///
/// Each pointer is null or valid: `raw` readable, `cfg_out` writable; they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_planned_offtimer_init(
    cfg_out: *mut LenzPlannedOffTimerConfig,
    raw: *const LenzPlannedOffTimerRaw,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `raw` is readable by the contract above.
        let raw = unsafe { get(raw) }?;
        // SAFETY: `cfg_out` is writable by the contract above.
        let out = unsafe { Out::new(cfg_out) }?;
        out.set_inner(PlannedOffTimerConfig::from_raw((*raw).into()));
        Ok(())
    })())
}

/// Writes the raw table of `cfg` to `raw_out` (Rust: `PlannedOffTimerConfig::raw`).
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` initialised by `lenz_planned_offtimer_init`,
/// `raw_out` writable; they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_planned_offtimer_raw(
    cfg: *const LenzPlannedOffTimerConfig,
    raw_out: *mut LenzPlannedOffTimerRaw,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `cfg` is initialised by the contract above.
        let cfg = unsafe { inner(cfg) }?;
        // SAFETY: `raw_out` is writable by the contract above.
        let out = unsafe { Out::new(raw_out) }?;
        out.set(cfg.raw().into());
        Ok(())
    })())
}

/// Arms the timer at switch-off with the current then, µA: counts down the ticks of the
/// smallest breakpoint at or above it; never releases above the highest breakpoint (Rust:
/// `PlannedOffTimerConfig::start`).
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` and `state` initialised; they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_planned_offtimer_start(
    cfg: *const LenzPlannedOffTimerConfig,
    state: *mut LenzOffTimerState,
    current_ua: i32,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `cfg` is initialised by the contract above.
        let cfg = unsafe { inner(cfg) }?;
        // SAFETY: `state` is initialised and not shared by the contract above.
        let s = unsafe { inner_mut(state) }?;
        cfg.start(s, current_ua);
        Ok(())
    })())
}

/// One tick with the switch open (Rust: `PlannedOffTimerConfig::update`). Writes
/// `LENZ_OFF_STATUS_RELEASED` once the planned count has elapsed (this tick included), else
/// `LENZ_OFF_STATUS_NOT_YET` (always before `lenz_planned_offtimer_start`, and forever for a
/// current above the planned range).
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` and `state` initialised, `status_out` writable; they
/// do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_planned_offtimer_update(
    cfg: *const LenzPlannedOffTimerConfig,
    state: *mut LenzOffTimerState,
    status_out: *mut LenzOffStatus,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `cfg` is initialised by the contract above.
        let cfg = unsafe { inner(cfg) }?;
        // SAFETY: `state` is initialised and not shared by the contract above.
        let s = unsafe { inner_mut(state) }?;
        // SAFETY: `status_out` is writable by the contract above.
        let out = unsafe { Out::new(status_out) }?;
        out.set(cfg.update(s).into());
        Ok(())
    })())
}
