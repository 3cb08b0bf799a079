//! The boost duty loop ([`BoostLoop`] of `lenz::drive`): raw settings, opaque configuration
//! and state, the per-tick update.
//!
//! In C the firmware owns the PWM: each tick returns the duty to write (counts of the
//! limiter's full scale), and the loop's output is a stand-in that takes every write. The
//! loop's own output-error latch is therefore never set here; a PWM error is the firmware's to
//! handle (switch off, then `lenz_boost_loop_state_init` to restart with the soft start).

use core::convert::Infallible;

use embedded_hal::pwm::{ErrorType, SetDutyCycle};
use lenz::drive::{BoostLoop, BoostLoopConfig, BoostLoopRaw, BoostLoopState};

use crate::LenzStatus;
use crate::duty::LenzDutyLimiterRaw;
use crate::opaque::{Out, get, inner, inner_mut, opaque};

/// Words of `LenzBoostLoopConfig`.
pub const LENZ_BOOST_LOOP_CONFIG_WORDS: usize = 106;
/// Words of `LenzBoostLoopState`.
pub const LENZ_BOOST_LOOP_STATE_WORDS: usize = 6;
/// The same storage in 64-bit words (the state holds a 64-bit integrator, so its storage is
/// aligned for one).
pub const LENZ_BOOST_LOOP_STATE_DWORDS: usize = 3;

/// The raw settings of the boost loop, as a constant can hold them (Rust:
/// `lenz::drive::BoostLoopRaw`).
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LenzBoostLoopRaw {
    /// The duty limiter behind the loop.
    pub limiter: LenzDutyLimiterRaw,
    /// The output reading of the wanted voltage, counts.
    pub target_counts: u16,
    /// Proportional gain, duty counts per output count, Q16.
    pub kp_q16: i32,
    /// Integral gain, duty counts per output count per tick, Q16.
    pub ki_q16: i32,
}

/// Boost loop settings (opaque; fill with `lenz_boost_loop_init`). Read-only after init.
#[repr(C)]
pub struct LenzBoostLoopConfig {
    opaque: [u32; LENZ_BOOST_LOOP_CONFIG_WORDS],
}

/// One channel's boost loop state (opaque; fill with `lenz_boost_loop_state_init`).
#[repr(C)]
pub struct LenzBoostLoopState {
    opaque: [u64; LENZ_BOOST_LOOP_STATE_DWORDS],
}

opaque!(
    LenzBoostLoopConfig,
    BoostLoopConfig,
    LENZ_BOOST_LOOP_CONFIG_WORDS
);
const _: () = assert!(2 * LENZ_BOOST_LOOP_STATE_DWORDS == LENZ_BOOST_LOOP_STATE_WORDS);
opaque!(
    LenzBoostLoopState,
    BoostLoopState,
    LENZ_BOOST_LOOP_STATE_WORDS
);

impl From<LenzBoostLoopRaw> for BoostLoopRaw {
    fn from(c: LenzBoostLoopRaw) -> Self {
        BoostLoopRaw {
            limiter: c.limiter.into(),
            target_counts: c.target_counts,
            kp_q16: c.kp_q16,
            ki_q16: c.ki_q16,
        }
    }
}

impl From<BoostLoopRaw> for LenzBoostLoopRaw {
    fn from(r: BoostLoopRaw) -> Self {
        LenzBoostLoopRaw {
            limiter: r.limiter.into(),
            target_counts: r.target_counts,
            kp_q16: r.kp_q16,
            ki_q16: r.ki_q16,
        }
    }
}

/// The loop's output in the C API: takes every write; the firmware writes the returned duty to
/// its PWM.
struct DutyOut {
    max: u16,
}

impl ErrorType for DutyOut {
    type Error = Infallible;
}

impl SetDutyCycle for DutyOut {
    fn max_duty_cycle(&self) -> u16 {
        self.max
    }

    fn set_duty_cycle(&mut self, _: u16) -> Result<(), Infallible> {
        Ok(())
    }
}

/// The loop of one channel for one call: `cfg` and the state, on the stand-in output of the
/// limiter's resolution (the resolution `BoostLoop::new` requires).
fn with_loop<R>(
    cfg: &BoostLoopConfig,
    state: &mut BoostLoopState,
    f: impl FnOnce(&mut BoostLoop<&BoostLoopConfig, DutyOut>) -> R,
) -> R {
    let out = DutyOut {
        max: cfg.limiter().full_scale(),
    };
    let mut lp = BoostLoop::from_parts(cfg, out, *state);
    let r = f(&mut lp);
    *state = lp.into_parts().2;
    r
}

/// Fills `cfg_out` from raw settings (Rust: `BoostLoopConfig::from_raw`). Any values are
/// accepted.
///
/// # Safety
///
/// Each pointer is null or valid: `raw` readable, `cfg_out` writable; they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_boost_loop_init(
    cfg_out: *mut LenzBoostLoopConfig,
    raw: *const LenzBoostLoopRaw,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `raw` is readable by the contract above.
        let raw = unsafe { get(raw) }?;
        // SAFETY: `cfg_out` is writable by the contract above.
        let out = unsafe { Out::new(cfg_out) }?;
        out.set_inner(BoostLoopConfig::from_raw((*raw).into()));
        Ok(())
    })())
}

/// Writes the raw settings of `cfg` to `raw_out` (Rust: `BoostLoopConfig::raw`).
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` initialised by `lenz_boost_loop_init`, `raw_out`
/// writable; they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_boost_loop_raw(
    cfg: *const LenzBoostLoopConfig,
    raw_out: *mut LenzBoostLoopRaw,
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

/// A channel at duty 0, integrator empty, soft start from 0 (Rust: `BoostLoopState::new`, the
/// state `BoostLoop::new` starts with).
///
/// # Safety
///
/// `state_out` is null or writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_boost_loop_state_init(
    state_out: *mut LenzBoostLoopState,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `state_out` is writable by the contract above.
        let out = unsafe { Out::new(state_out) }?;
        out.set_inner(BoostLoopState::new());
        Ok(())
    })())
}

/// One control tick (Rust: `BoostLoop::update`): `enable`, the input and output readings,
/// counts; writes the duty for the next tick, counts of the limiter's full scale (0 when
/// disabled, cut on overvoltage or a reading outside its window).
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` and `state` initialised, `duty_out` writable; they do
/// not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_boost_loop_update(
    cfg: *const LenzBoostLoopConfig,
    state: *mut LenzBoostLoopState,
    enable: bool,
    vin_counts: u16,
    vout_counts: u16,
    duty_out: *mut u16,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `cfg` is initialised by the contract above.
        let cfg = unsafe { inner(cfg) }?;
        // SAFETY: `state` is initialised and not shared by the contract above.
        let s = unsafe { inner_mut(state) }?;
        // SAFETY: `duty_out` is writable by the contract above.
        let out = unsafe { Out::new(duty_out) }?;
        // The stand-in output cannot fail, so the update cannot return an error.
        let duty = with_loop(cfg, s, |lp| lp.update(enable, vin_counts, vout_counts)).unwrap_or(0);
        out.set(duty);
        Ok(())
    })())
}

/// Whether the overvoltage cut is active (Rust: `BoostLoop::overvoltage`).
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` and `state` initialised, `overvoltage_out` writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_boost_loop_state_overvoltage(
    cfg: *const LenzBoostLoopConfig,
    state: *const LenzBoostLoopState,
    overvoltage_out: *mut bool,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `cfg` is initialised by the contract above.
        let cfg = unsafe { inner(cfg) }?;
        // SAFETY: `state` is initialised by the contract above.
        let mut s = *unsafe { inner(state) }?;
        // SAFETY: `overvoltage_out` is writable by the contract above.
        let out = unsafe { Out::new(overvoltage_out) }?;
        out.set(with_loop(cfg, &mut s, |lp| lp.overvoltage()));
        Ok(())
    })())
}
