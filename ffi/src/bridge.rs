//! The H-bridge guard ([`BridgeGuardConfig`]): raw limits, opaque configuration and state,
//! the per-tick update.

use lenz::kernel::{
    BridgeCommand, BridgeGuardConfig, BridgeGuardRaw, BridgeGuardState, BridgeMode,
};

use crate::LenzStatus;
use crate::opaque::{Out, get, inner, inner_mut, opaque};

/// Words of `LenzBridgeGuardConfig`.
pub const LENZ_BRIDGE_GUARD_CONFIG_WORDS: usize = 6;
/// Words of `LenzBridgeGuardState`.
pub const LENZ_BRIDGE_GUARD_STATE_WORDS: usize = 2;

/// The raw limits of the bridge guard, as a constant can hold them (Rust:
/// `lenz::kernel::BridgeGuardRaw`).
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LenzBridgeGuardRaw {
    /// Largest duty rise per tick, Q16 (65536 or more: no soft start).
    pub slew_q16: i32,
    /// Brake allowed at or below this speed magnitude, mrad/s.
    pub brake_speed_mrad_s: i32,
    /// Reversal allowed at or below this speed magnitude, mrad/s.
    pub reverse_speed_mrad_s: i32,
    /// Ticks in coast between two driven modes.
    pub dead_ticks: u16,
    /// Coasting ticks between one-tick brake probes; 0 for none.
    pub probe_ticks: u16,
    /// Resume duty per speed `k/V` of a restart in the rotation's direction: duty Q16 per
    /// mrad/s, Q24 (0 or negative: every start ramps from zero).
    pub resume_duty_q24: i32,
    /// Speed margin taken off the estimate before the resume duty, mrad/s.
    pub resume_margin_mrad_s: i32,
}

/// Bridge guard limits (opaque; fill with `lenz_bridge_guard_init`). Read-only after init.
#[repr(C)]
pub struct LenzBridgeGuardConfig {
    opaque: [u32; LENZ_BRIDGE_GUARD_CONFIG_WORDS],
}

/// One channel's bridge guard state (opaque; fill with `lenz_bridge_guard_state_init`).
#[repr(C)]
pub struct LenzBridgeGuardState {
    opaque: [u32; LENZ_BRIDGE_GUARD_STATE_WORDS],
}

opaque!(
    LenzBridgeGuardConfig,
    BridgeGuardConfig,
    LENZ_BRIDGE_GUARD_CONFIG_WORDS
);
opaque!(
    LenzBridgeGuardState,
    BridgeGuardState,
    LENZ_BRIDGE_GUARD_STATE_WORDS
);

/// The bridge's switch pattern (Rust: `lenz::kernel::BridgeMode`).
#[repr(u8)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LenzBridgeMode {
    /// All switches off.
    Coast = 0,
    /// Leg A switching at the duty, leg B low side on.
    Forward = 1,
    /// Leg B switching at the duty, leg A low side on.
    Reverse = 2,
    /// Both low sides on.
    Brake = 3,
}

/// What the bridge does during the next tick (Rust: `lenz::kernel::BridgeCommand`).
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LenzBridgeCommand {
    /// Switch pattern.
    pub mode: LenzBridgeMode,
    /// Duty of the switching leg in forward and reverse, `0 ..= 65536` (Q16); 0 otherwise.
    pub duty_q16: i32,
}

impl From<BridgeCommand> for LenzBridgeCommand {
    fn from(c: BridgeCommand) -> Self {
        LenzBridgeCommand {
            mode: match c.mode {
                BridgeMode::Coast => LenzBridgeMode::Coast,
                BridgeMode::Forward => LenzBridgeMode::Forward,
                BridgeMode::Reverse => LenzBridgeMode::Reverse,
                BridgeMode::Brake => LenzBridgeMode::Brake,
            },
            duty_q16: c.duty_q16,
        }
    }
}

impl From<LenzBridgeGuardRaw> for BridgeGuardRaw {
    fn from(c: LenzBridgeGuardRaw) -> Self {
        BridgeGuardRaw {
            slew_q16: c.slew_q16,
            brake_speed_mrad_s: c.brake_speed_mrad_s,
            reverse_speed_mrad_s: c.reverse_speed_mrad_s,
            dead_ticks: c.dead_ticks,
            probe_ticks: c.probe_ticks,
            resume_duty_q24: c.resume_duty_q24,
            resume_margin_mrad_s: c.resume_margin_mrad_s,
        }
    }
}

impl From<BridgeGuardRaw> for LenzBridgeGuardRaw {
    fn from(r: BridgeGuardRaw) -> Self {
        LenzBridgeGuardRaw {
            slew_q16: r.slew_q16,
            brake_speed_mrad_s: r.brake_speed_mrad_s,
            reverse_speed_mrad_s: r.reverse_speed_mrad_s,
            dead_ticks: r.dead_ticks,
            probe_ticks: r.probe_ticks,
            resume_duty_q24: r.resume_duty_q24,
            resume_margin_mrad_s: r.resume_margin_mrad_s,
        }
    }
}

/// Fills `cfg_out` from raw limits (Rust: `BridgeGuardConfig::from_raw`). Any values are
/// accepted.
///
/// # Safety
///
/// Each pointer is null or valid: `raw` readable, `cfg_out` writable; they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_bridge_guard_init(
    cfg_out: *mut LenzBridgeGuardConfig,
    raw: *const LenzBridgeGuardRaw,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `raw` is readable by the contract above.
        let raw = unsafe { get(raw) }?;
        // SAFETY: `cfg_out` is writable by the contract above.
        let out = unsafe { Out::new(cfg_out) }?;
        out.set_inner(BridgeGuardConfig::from_raw((*raw).into()));
        Ok(())
    })())
}

/// Writes the raw limits of `cfg` to `raw_out` (Rust: `BridgeGuardConfig::raw`).
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` initialised by `lenz_bridge_guard_init`, `raw_out`
/// writable; they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_bridge_guard_raw(
    cfg: *const LenzBridgeGuardConfig,
    raw_out: *mut LenzBridgeGuardRaw,
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

/// A channel coasting for long enough (Rust: `BridgeGuardState::new`). Only for a bridge that
/// has really been off for at least the dead time.
///
/// # Safety
///
/// `state_out` is null or writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_bridge_guard_state_init(
    state_out: *mut LenzBridgeGuardState,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `state_out` is writable by the contract above.
        let out = unsafe { Out::new(state_out) }?;
        out.set_inner(BridgeGuardState::new());
        Ok(())
    })())
}

/// One tick (Rust: `BridgeGuardConfig::update`): the wanted duty, Q16 signed by direction (0:
/// stop), and the speed estimate, mrad/s; writes the command for the next tick.
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` and `state` initialised, `command_out` writable; they
/// do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_bridge_guard_update(
    cfg: *const LenzBridgeGuardConfig,
    state: *mut LenzBridgeGuardState,
    request_q16: i32,
    speed_mrad_s: i32,
    command_out: *mut LenzBridgeCommand,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `cfg` is initialised by the contract above.
        let cfg = unsafe { inner(cfg) }?;
        // SAFETY: `state` is initialised and not shared by the contract above.
        let s = unsafe { inner_mut(state) }?;
        // SAFETY: `command_out` is writable by the contract above.
        let out = unsafe { Out::new(command_out) }?;
        out.set(cfg.update(s, request_q16, speed_mrad_s).into());
        Ok(())
    })())
}
