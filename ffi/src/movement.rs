//! The armature movement detector ([`MovementConfig`]): raw thresholds, opaque configuration
//! and state, start and release, the per-tick update.

use lenz::kernel::{Motion, MovementConfig, MovementRaw, MovementState};

use crate::LenzStatus;
use crate::opaque::{Out, get, inner, inner_mut, opaque};

/// Words of `LenzMovementConfig`.
pub const LENZ_MOVEMENT_CONFIG_WORDS: usize = 6;
/// Words of `LenzMovementState`.
pub const LENZ_MOVEMENT_STATE_WORDS: usize = 4;

/// The raw thresholds of the movement detector, as a constant can hold them (Rust:
/// `lenz::kernel::MovementRaw`).
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LenzMovementRaw {
    /// A fall below the peak, or a rise above a minimum, counts only beyond this, µA.
    pub hysteresis_ua: i32,
    /// Consecutive samples beyond the hysteresis needed to decide (0 acts as 1).
    pub persistence: u16,
    /// A pull-in peak below this is not the start of motion, µA.
    pub min_peak_ua: i32,
    /// A release minimum below this is not a drop-out, µA.
    pub min_release_ua: i32,
    /// Updates after start without seating before `LENZ_MOTION_KIND_NO_MOTION`, ticks.
    pub deadline_ticks: u32,
    /// Updates after release without drop-out before `LENZ_MOTION_KIND_NO_DROP_OUT`, ticks.
    pub release_deadline_ticks: u32,
}

/// Movement detector thresholds (opaque; fill with `lenz_movement_init`). Read-only after init.
#[repr(C)]
pub struct LenzMovementConfig {
    opaque: [u32; LENZ_MOVEMENT_CONFIG_WORDS],
}

/// One channel's movement detector state (opaque; fill with `lenz_movement_state_init`).
#[repr(C)]
pub struct LenzMovementState {
    opaque: [u32; LENZ_MOVEMENT_STATE_WORDS],
}

opaque!(
    LenzMovementConfig,
    MovementConfig,
    LENZ_MOVEMENT_CONFIG_WORDS
);
opaque!(LenzMovementState, MovementState, LENZ_MOVEMENT_STATE_WORDS);

/// What the detector says (Rust: the variants of `lenz::kernel::Motion`).
#[repr(u8)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LenzMotionKind {
    /// Not watching.
    Idle = 0,
    /// Pull-in: no motion seen yet.
    Waiting = 1,
    /// Pull-in: the current fell from its peak (the armature moves).
    Moving = 2,
    /// Pull-in: the armature seated at `tick` (the valley of the dip).
    Seated = 3,
    /// Pull-in: no seating by the deadline (stuck, already closed, or too slow): a fault.
    NoMotion = 4,
    /// Release: the current decays, no drop-out seen yet.
    Decaying = 5,
    /// Release: the armature left the closed stop at `tick` (the minimum before the rise).
    DroppedOut = 6,
    /// Release: no drop-out seen by the release deadline.
    NoDropOut = 7,
}

/// The detector's verdict (Rust: `lenz::kernel::Motion`).
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LenzMotion {
    /// The verdict.
    pub kind: LenzMotionKind,
    /// For `SEATED` and `DROPPED_OUT`: the tick of the event, counted from 0 at the first
    /// update after start or release; 0 otherwise.
    pub tick: u32,
}

impl From<Motion> for LenzMotion {
    fn from(m: Motion) -> Self {
        let (kind, tick) = match m {
            Motion::Idle => (LenzMotionKind::Idle, 0),
            Motion::Waiting => (LenzMotionKind::Waiting, 0),
            Motion::Moving => (LenzMotionKind::Moving, 0),
            Motion::Seated { tick } => (LenzMotionKind::Seated, tick),
            Motion::NoMotion => (LenzMotionKind::NoMotion, 0),
            Motion::Decaying => (LenzMotionKind::Decaying, 0),
            Motion::DroppedOut { tick } => (LenzMotionKind::DroppedOut, tick),
            Motion::NoDropOut => (LenzMotionKind::NoDropOut, 0),
        };
        LenzMotion { kind, tick }
    }
}

impl From<LenzMovementRaw> for MovementRaw {
    fn from(c: LenzMovementRaw) -> Self {
        MovementRaw {
            hysteresis_ua: c.hysteresis_ua,
            persistence: c.persistence,
            min_peak_ua: c.min_peak_ua,
            min_release_ua: c.min_release_ua,
            deadline_ticks: c.deadline_ticks,
            release_deadline_ticks: c.release_deadline_ticks,
        }
    }
}

impl From<MovementRaw> for LenzMovementRaw {
    fn from(r: MovementRaw) -> Self {
        LenzMovementRaw {
            hysteresis_ua: r.hysteresis_ua,
            persistence: r.persistence,
            min_peak_ua: r.min_peak_ua,
            min_release_ua: r.min_release_ua,
            deadline_ticks: r.deadline_ticks,
            release_deadline_ticks: r.release_deadline_ticks,
        }
    }
}

/// Fills `cfg_out` from raw thresholds (Rust: `MovementConfig::from_raw`). Any values are
/// accepted: wrong ones make the detector wrong, never overflow.
///
/// # Safety
///
/// Each pointer is null or valid: `raw` readable, `cfg_out` writable; they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_movement_init(
    cfg_out: *mut LenzMovementConfig,
    raw: *const LenzMovementRaw,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `raw` is readable by the contract above.
        let raw = unsafe { get(raw) }?;
        // SAFETY: `cfg_out` is writable by the contract above.
        let out = unsafe { Out::new(cfg_out) }?;
        out.set_inner(MovementConfig::from_raw((*raw).into()));
        Ok(())
    })())
}

/// Writes the raw thresholds of `cfg` to `raw_out` (Rust: `MovementConfig::raw`).
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` initialised by `lenz_movement_init`, `raw_out`
/// writable; they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_movement_raw(
    cfg: *const LenzMovementConfig,
    raw_out: *mut LenzMovementRaw,
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

/// An idle channel (Rust: `MovementState::new`).
///
/// # Safety
///
/// `state_out` is null or writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_movement_state_init(state_out: *mut LenzMovementState) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `state_out` is writable by the contract above.
        let out = unsafe { Out::new(state_out) }?;
        out.set_inner(MovementState::new());
        Ok(())
    })())
}

/// Starts watching a pull-in: call at switch-on, before the first update (Rust:
/// `MovementConfig::start`).
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` and `state` initialised; they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_movement_start(
    cfg: *const LenzMovementConfig,
    state: *mut LenzMovementState,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `cfg` is initialised by the contract above.
        let cfg = unsafe { inner(cfg) }?;
        // SAFETY: `state` is initialised and not shared by the contract above.
        let s = unsafe { inner_mut(state) }?;
        cfg.start(s);
        Ok(())
    })())
}

/// Starts watching a release: call at switch-off, before the first update (Rust:
/// `MovementConfig::release`).
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` and `state` initialised; they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_movement_release(
    cfg: *const LenzMovementConfig,
    state: *mut LenzMovementState,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `cfg` is initialised by the contract above.
        let cfg = unsafe { inner(cfg) }?;
        // SAFETY: `state` is initialised and not shared by the contract above.
        let s = unsafe { inner_mut(state) }?;
        cfg.release(s);
        Ok(())
    })())
}

/// One tick (Rust: `MovementConfig::update`): the coil current sampled this tick, µA; writes
/// the verdict (a decided verdict repeats until the next start, release or init).
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` and `state` initialised, `motion_out` writable; they
/// do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_movement_update(
    cfg: *const LenzMovementConfig,
    state: *mut LenzMovementState,
    current_ua: i32,
    motion_out: *mut LenzMotion,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `cfg` is initialised by the contract above.
        let cfg = unsafe { inner(cfg) }?;
        // SAFETY: `state` is initialised and not shared by the contract above.
        let s = unsafe { inner_mut(state) }?;
        // SAFETY: `motion_out` is writable by the contract above.
        let out = unsafe { Out::new(motion_out) }?;
        out.set(cfg.update(s, current_ua).into());
        Ok(())
    })())
}
