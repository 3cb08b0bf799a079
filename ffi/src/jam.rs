//! The motor jam, overload and open-winding detector ([`JamConfig`]): raw thresholds, opaque
//! configuration and state, the per-tick update.

use lenz::kernel::{JamConfig, JamRaw, JamState, JamStatus, MotorFault};

use crate::LenzStatus;
use crate::opaque::{Out, get, inner, inner_mut, opaque};

/// Words of `LenzJamConfig`.
pub const LENZ_JAM_CONFIG_WORDS: usize = 8;
/// Words of `LenzJamState`.
pub const LENZ_JAM_STATE_WORDS: usize = 5;

/// The raw thresholds of the jam detector, as a constant can hold them (Rust:
/// `lenz::kernel::JamRaw`).
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LenzJamRaw {
    /// Jam current threshold, µA.
    pub jam_current_ua: i32,
    /// Jam speed threshold, mrad/s.
    pub jam_speed_mrad_s: i32,
    /// Consecutive ticks for a jam or an open winding.
    pub persist_ticks: u32,
    /// Ticks blanked after each start.
    pub blank_ticks: u32,
    /// Overload current threshold, µA; `INT32_MAX` for none.
    pub overload_current_ua: i32,
    /// Consecutive ticks for an overload.
    pub overload_ticks: u32,
    /// Open-winding current threshold, µA; negative for none.
    pub open_current_ua: i32,
    /// Smallest duty magnitude judged for an open winding, Q16.
    pub open_duty_q16: i32,
}

/// Jam detector thresholds (opaque; fill with `lenz_jam_init`). Read-only after init.
#[repr(C)]
pub struct LenzJamConfig {
    opaque: [u32; LENZ_JAM_CONFIG_WORDS],
}

/// One channel's jam detector state (opaque; fill with `lenz_jam_state_init`).
#[repr(C)]
pub struct LenzJamState {
    opaque: [u32; LENZ_JAM_STATE_WORDS],
}

opaque!(LenzJamConfig, JamConfig, LENZ_JAM_CONFIG_WORDS);
opaque!(LenzJamState, JamState, LENZ_JAM_STATE_WORDS);

/// The verdict of one tick (Rust: `lenz::kernel::JamStatus`, the fault's cause flattened in).
#[repr(u8)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LenzJamStatus {
    /// Not driven: nothing judged.
    Idle = 0,
    /// Within the start blanking.
    Blanking = 1,
    /// Driven and judged healthy this tick.
    Running = 2,
    /// Latched: current high and rotor (nearly) still.
    FaultJam = 3,
    /// Latched: current above the overload level for longer than allowed.
    FaultOverload = 4,
    /// Latched: no current although the bridge drives.
    FaultOpenWinding = 5,
}

impl From<JamStatus> for LenzJamStatus {
    fn from(s: JamStatus) -> Self {
        match s {
            JamStatus::Idle => LenzJamStatus::Idle,
            JamStatus::Blanking => LenzJamStatus::Blanking,
            JamStatus::Running => LenzJamStatus::Running,
            JamStatus::Fault(MotorFault::Jam) => LenzJamStatus::FaultJam,
            JamStatus::Fault(MotorFault::Overload) => LenzJamStatus::FaultOverload,
            JamStatus::Fault(MotorFault::OpenWinding) => LenzJamStatus::FaultOpenWinding,
        }
    }
}

impl From<LenzJamRaw> for JamRaw {
    fn from(c: LenzJamRaw) -> Self {
        JamRaw {
            jam_current_ua: c.jam_current_ua,
            jam_speed_mrad_s: c.jam_speed_mrad_s,
            persist_ticks: c.persist_ticks,
            blank_ticks: c.blank_ticks,
            overload_current_ua: c.overload_current_ua,
            overload_ticks: c.overload_ticks,
            open_current_ua: c.open_current_ua,
            open_duty_q16: c.open_duty_q16,
        }
    }
}

impl From<JamRaw> for LenzJamRaw {
    fn from(r: JamRaw) -> Self {
        LenzJamRaw {
            jam_current_ua: r.jam_current_ua,
            jam_speed_mrad_s: r.jam_speed_mrad_s,
            persist_ticks: r.persist_ticks,
            blank_ticks: r.blank_ticks,
            overload_current_ua: r.overload_current_ua,
            overload_ticks: r.overload_ticks,
            open_current_ua: r.open_current_ua,
            open_duty_q16: r.open_duty_q16,
        }
    }
}

/// Fills `cfg_out` from raw thresholds (Rust: `JamConfig::from_raw`). Any values are accepted.
///
/// # Safety
///
/// Each pointer is null or valid: `raw` readable, `cfg_out` writable; they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_jam_init(
    cfg_out: *mut LenzJamConfig,
    raw: *const LenzJamRaw,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `raw` is readable by the contract above.
        let raw = unsafe { get(raw) }?;
        // SAFETY: `cfg_out` is writable by the contract above.
        let out = unsafe { Out::new(cfg_out) }?;
        out.set_inner(JamConfig::from_raw((*raw).into()));
        Ok(())
    })())
}

/// Writes the raw thresholds of `cfg` to `raw_out` (Rust: `JamConfig::raw`).
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` initialised by `lenz_jam_init`, `raw_out` writable;
/// they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_jam_raw(
    cfg: *const LenzJamConfig,
    raw_out: *mut LenzJamRaw,
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

/// A channel not driven, no fault (Rust: `JamState::new`; also the reset after a fault).
///
/// # Safety
///
/// `state_out` is null or writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_jam_state_init(state_out: *mut LenzJamState) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `state_out` is writable by the contract above.
        let out = unsafe { Out::new(state_out) }?;
        out.set_inner(JamState::new());
        Ok(())
    })())
}

/// One tick (Rust: `JamConfig::update`): the bridge duty during the tick, Q16 signed by
/// direction (0: not driven), the winding current, µA, and the speed estimate, mrad/s; writes
/// the verdict (a fault repeats until `lenz_jam_state_init`).
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` and `state` initialised, `status_out` writable; they
/// do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_jam_update(
    cfg: *const LenzJamConfig,
    state: *mut LenzJamState,
    duty_q16: i32,
    current_ua: i32,
    speed_mrad_s: i32,
    status_out: *mut LenzJamStatus,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `cfg` is initialised by the contract above.
        let cfg = unsafe { inner(cfg) }?;
        // SAFETY: `state` is initialised and not shared by the contract above.
        let s = unsafe { inner_mut(state) }?;
        // SAFETY: `status_out` is writable by the contract above.
        let out = unsafe { Out::new(status_out) }?;
        out.set(cfg.update(s, duty_q16, current_ua, speed_mrad_s).into());
        Ok(())
    })())
}
