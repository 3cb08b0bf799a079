//! The plausibility monitor ([`MonitorConfig`]): raw thresholds, opaque configuration and
//! state, the per-sample update.

use lenz::kernel::{Fault, MonitorConfig, MonitorRaw, MonitorState, SenseScale};

use crate::LenzStatus;
use crate::opaque::{Out, get, inner, inner_mut, opaque};

/// Words of `LenzMonitorConfig`.
pub const LENZ_MONITOR_CONFIG_WORDS: usize = 9;
/// Words of `LenzMonitorState`.
pub const LENZ_MONITOR_STATE_WORDS: usize = 4;

/// Conversion of ADC counts to microamps, and the valid window of readings (Rust:
/// `lenz::kernel::SenseScale`).
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LenzSenseScale {
    /// Reading at zero current, counts.
    pub offset_counts: i32,
    /// Current per count, µA, Q16.
    pub ua_per_count_q16: i32,
    /// Lowest valid reading, counts.
    pub min_valid_counts: u16,
    /// Highest valid reading, counts.
    pub max_valid_counts: u16,
}

/// The raw thresholds of the monitor, as a constant can hold them (Rust:
/// `lenz::kernel::MonitorRaw`).
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LenzMonitorRaw {
    /// Sense scaling and valid window.
    pub scale: LenzSenseScale,
    /// Absolute part of the tolerance band, µA.
    pub abs_tol_ua: i32,
    /// Relative part of the tolerance band, Q16 (65536 = 100 %).
    pub rel_tol_q16: i32,
    /// Estimates at or above this expect a measurable current, µA.
    pub open_min_estimate_ua: i32,
    /// Measured currents at or below this count as none, µA.
    pub open_max_ua: i32,
    /// Consecutive samples before a fault is raised.
    pub persistence: u16,
    /// Consecutive unchanged readings before the sensor counts as stuck.
    pub stuck_samples: u16,
    /// Change of the estimate during a frozen reading that proves it stuck, µA.
    pub stuck_min_change_ua: i32,
}

/// Monitor thresholds (opaque; fill with `lenz_monitor_init`). Read-only after init.
#[repr(C)]
pub struct LenzMonitorConfig {
    opaque: [u32; LENZ_MONITOR_CONFIG_WORDS],
}

/// One channel's monitor state (opaque; fill with `lenz_monitor_state_init`).
#[repr(C)]
pub struct LenzMonitorState {
    opaque: [u32; LENZ_MONITOR_STATE_WORDS],
}

opaque!(LenzMonitorConfig, MonitorConfig, LENZ_MONITOR_CONFIG_WORDS);
opaque!(LenzMonitorState, MonitorState, LENZ_MONITOR_STATE_WORDS);

/// The monitor's finding (Rust: `Option<lenz::kernel::Fault>`).
#[repr(u8)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LenzFault {
    /// Plausible: no fault.
    None = 0,
    /// Current expected but none measured.
    OpenCoil = 1,
    /// More current than the healthy coil can draw: shorted turns or a shorted coil.
    LowResistance = 2,
    /// The reading does not change while the current should.
    SensorStuck = 3,
    /// The reading lies outside the valid ADC window.
    SensorOutOfRange = 4,
}

impl From<Option<Fault>> for LenzFault {
    fn from(f: Option<Fault>) -> Self {
        match f {
            None => LenzFault::None,
            Some(Fault::OpenCoil) => LenzFault::OpenCoil,
            Some(Fault::LowResistance) => LenzFault::LowResistance,
            Some(Fault::SensorStuck) => LenzFault::SensorStuck,
            Some(Fault::SensorOutOfRange) => LenzFault::SensorOutOfRange,
        }
    }
}

impl From<LenzSenseScale> for SenseScale {
    fn from(c: LenzSenseScale) -> Self {
        SenseScale {
            offset_counts: c.offset_counts,
            ua_per_count_q16: c.ua_per_count_q16,
            min_valid_counts: c.min_valid_counts,
            max_valid_counts: c.max_valid_counts,
        }
    }
}

impl From<SenseScale> for LenzSenseScale {
    fn from(r: SenseScale) -> Self {
        LenzSenseScale {
            offset_counts: r.offset_counts,
            ua_per_count_q16: r.ua_per_count_q16,
            min_valid_counts: r.min_valid_counts,
            max_valid_counts: r.max_valid_counts,
        }
    }
}

impl From<LenzMonitorRaw> for MonitorRaw {
    fn from(c: LenzMonitorRaw) -> Self {
        MonitorRaw {
            scale: c.scale.into(),
            abs_tol_ua: c.abs_tol_ua,
            rel_tol_q16: c.rel_tol_q16,
            open_min_estimate_ua: c.open_min_estimate_ua,
            open_max_ua: c.open_max_ua,
            persistence: c.persistence,
            stuck_samples: c.stuck_samples,
            stuck_min_change_ua: c.stuck_min_change_ua,
        }
    }
}

impl From<MonitorRaw> for LenzMonitorRaw {
    fn from(r: MonitorRaw) -> Self {
        LenzMonitorRaw {
            scale: r.scale.into(),
            abs_tol_ua: r.abs_tol_ua,
            rel_tol_q16: r.rel_tol_q16,
            open_min_estimate_ua: r.open_min_estimate_ua,
            open_max_ua: r.open_max_ua,
            persistence: r.persistence,
            stuck_samples: r.stuck_samples,
            stuck_min_change_ua: r.stuck_min_change_ua,
        }
    }
}

/// Fills `cfg_out` from raw thresholds (Rust: `MonitorConfig::from_raw`).
///
/// # Safety
///
/// Each pointer is null or valid: `raw` readable, `cfg_out` writable; they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_monitor_init(
    cfg_out: *mut LenzMonitorConfig,
    raw: *const LenzMonitorRaw,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `raw` is readable by the contract above.
        let raw = unsafe { get(raw) }?;
        // SAFETY: `cfg_out` is writable by the contract above.
        let out = unsafe { Out::new(cfg_out) }?;
        out.set_inner(MonitorConfig::from_raw((*raw).into()));
        Ok(())
    })())
}

/// Writes the raw thresholds of `cfg` to `raw_out` (Rust: `MonitorConfig::raw`).
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` initialised by `lenz_monitor_init`, `raw_out`
/// writable; they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_monitor_raw(
    cfg: *const LenzMonitorConfig,
    raw_out: *mut LenzMonitorRaw,
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

/// The current a reading stands for, µA, saturating (Rust: `SenseScale::to_ua` of the
/// configuration's scale).
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` initialised, `current_ua_out` writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_monitor_measured_ua(
    cfg: *const LenzMonitorConfig,
    counts: u16,
    current_ua_out: *mut i32,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `cfg` is initialised by the contract above.
        let cfg = unsafe { inner(cfg) }?;
        // SAFETY: `current_ua_out` is writable by the contract above.
        let out = unsafe { Out::new(current_ua_out) }?;
        out.set(cfg.scale().to_ua(counts));
        Ok(())
    })())
}

/// A channel with no fault and no history (Rust: `MonitorState::new`).
///
/// # Safety
///
/// `state_out` is null or writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_monitor_state_init(state_out: *mut LenzMonitorState) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `state_out` is writable by the contract above.
        let out = unsafe { Out::new(state_out) }?;
        out.set_inner(MonitorState::new());
        Ok(())
    })())
}

/// Clears the latched fault and the history (Rust: `MonitorState::reset`).
///
/// # Safety
///
/// `state` is null or initialised by `lenz_monitor_state_init`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_monitor_state_reset(state: *mut LenzMonitorState) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `state` is initialised by the contract above.
        unsafe { inner_mut(state) }?.reset();
        Ok(())
    })())
}

/// The latched fault, `LENZ_FAULT_NONE` while plausible (Rust: `MonitorState::fault`).
///
/// # Safety
///
/// Each pointer is null or valid: `state` initialised, `fault_out` writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_monitor_state_fault(
    state: *const LenzMonitorState,
    fault_out: *mut LenzFault,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `state` is initialised by the contract above.
        let s = unsafe { inner(state) }?;
        // SAFETY: `fault_out` is writable by the contract above.
        let out = unsafe { Out::new(fault_out) }?;
        out.set(s.fault().into());
        Ok(())
    })())
}

/// One sample (Rust: `MonitorConfig::update`): the estimator's current for the sampling
/// instant, µA, and the raw current reading, counts. Writes `LENZ_FAULT_NONE` while
/// plausible, else the first fault raised, from then on until `lenz_monitor_state_reset`.
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` and `state` initialised, `fault_out` writable; they
/// do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_monitor_update(
    cfg: *const LenzMonitorConfig,
    state: *mut LenzMonitorState,
    estimate_ua: i32,
    counts: u16,
    fault_out: *mut LenzFault,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `cfg` is initialised by the contract above.
        let cfg = unsafe { inner(cfg) }?;
        // SAFETY: `state` is initialised and not shared by the contract above.
        let s = unsafe { inner_mut(state) }?;
        // SAFETY: `fault_out` is writable by the contract above.
        let out = unsafe { Out::new(fault_out) }?;
        out.set(cfg.update(s, estimate_ua, counts).into());
        Ok(())
    })())
}
