//! The motor speed estimator ([`SpeedEstimatorConfig`]): raw coefficients, opaque
//! configuration and state, the per-tick update and the coasting tick.

use lenz::kernel::{SpeedEstimatorConfig, SpeedEstimatorRaw, SpeedEstimatorState};

use crate::LenzStatus;
use crate::opaque::{Out, get, inner, inner_mut, opaque};

/// Words of `LenzSpeedEstimatorConfig`.
pub const LENZ_SPEED_ESTIMATOR_CONFIG_WORDS: usize = 4;
/// Words of `LenzSpeedEstimatorState`.
pub const LENZ_SPEED_ESTIMATOR_STATE_WORDS: usize = 3;

/// The raw coefficients of the speed estimator, as a constant can hold them (Rust:
/// `lenz::kernel::SpeedEstimatorRaw`).
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LenzSpeedEstimatorRaw {
    /// `G₁ = R/(1 − a)`, weight of the current at the tick's end, mV per µA, Q24.
    pub gain_end_q24: i32,
    /// `G₀ = R·a/(1 − a)`, weight of the current at the tick's start, mV per µA, Q24.
    pub gain_start_q24: i32,
    /// `1/k`, mrad/s per mV, Q16.
    pub inv_k_q16: i32,
    /// Low-pass step `1 − e^(−T/τ)`, Q31; `INT32_MAX` for no filter.
    pub filter_q31: i32,
}

/// Speed estimator coefficients (opaque; fill with `lenz_speed_estimator_init`).
#[repr(C)]
pub struct LenzSpeedEstimatorConfig {
    opaque: [u32; LENZ_SPEED_ESTIMATOR_CONFIG_WORDS],
}

/// One channel's speed estimator state (opaque; fill with `lenz_speed_estimator_state_init`).
#[repr(C)]
pub struct LenzSpeedEstimatorState {
    opaque: [u32; LENZ_SPEED_ESTIMATOR_STATE_WORDS],
}

opaque!(
    LenzSpeedEstimatorConfig,
    SpeedEstimatorConfig,
    LENZ_SPEED_ESTIMATOR_CONFIG_WORDS
);
opaque!(
    LenzSpeedEstimatorState,
    SpeedEstimatorState,
    LENZ_SPEED_ESTIMATOR_STATE_WORDS
);

impl From<LenzSpeedEstimatorRaw> for SpeedEstimatorRaw {
    fn from(c: LenzSpeedEstimatorRaw) -> Self {
        SpeedEstimatorRaw {
            gain_end_q24: c.gain_end_q24,
            gain_start_q24: c.gain_start_q24,
            inv_k_q16: c.inv_k_q16,
            filter_q31: c.filter_q31,
        }
    }
}

impl From<SpeedEstimatorRaw> for LenzSpeedEstimatorRaw {
    fn from(r: SpeedEstimatorRaw) -> Self {
        LenzSpeedEstimatorRaw {
            gain_end_q24: r.gain_end_q24,
            gain_start_q24: r.gain_start_q24,
            inv_k_q16: r.inv_k_q16,
            filter_q31: r.filter_q31,
        }
    }
}

/// Fills `cfg_out` from raw coefficients (Rust: `SpeedEstimatorConfig::from_raw`). Any values
/// are accepted: the update saturates.
///
/// # Safety
///
/// Each pointer is null or valid: `raw` readable, `cfg_out` writable; they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_speed_estimator_init(
    cfg_out: *mut LenzSpeedEstimatorConfig,
    raw: *const LenzSpeedEstimatorRaw,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `raw` is readable by the contract above.
        let raw = unsafe { get(raw) }?;
        // SAFETY: `cfg_out` is writable by the contract above.
        let out = unsafe { Out::new(cfg_out) }?;
        out.set_inner(SpeedEstimatorConfig::from_raw((*raw).into()));
        Ok(())
    })())
}

/// Writes the raw coefficients of `cfg` to `raw_out` (Rust: `SpeedEstimatorConfig::raw`).
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` initialised by `lenz_speed_estimator_init`,
/// `raw_out` writable; they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_speed_estimator_raw(
    cfg: *const LenzSpeedEstimatorConfig,
    raw_out: *mut LenzSpeedEstimatorRaw,
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

/// Starts a channel at a known current, µA, and speed, mrad/s (0 and 0 for a motor at rest;
/// Rust: `SpeedEstimatorState::with_current_ua`).
///
/// # Safety
///
/// `state_out` is null or writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_speed_estimator_state_init(
    state_out: *mut LenzSpeedEstimatorState,
    current_ua: i32,
    speed_mrad_s: i32,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `state_out` is writable by the contract above.
        let out = unsafe { Out::new(state_out) }?;
        out.set_inner(SpeedEstimatorState::with_current_ua(
            current_ua,
            speed_mrad_s,
        ));
        Ok(())
    })())
}

/// The channel's present speed estimate, mrad/s (Rust: `SpeedEstimatorState::speed_mrad_s`).
///
/// # Safety
///
/// Each pointer is null or valid: `state` initialised, `speed_mrad_s_out` writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_speed_estimator_state_speed_mrad_s(
    state: *const LenzSpeedEstimatorState,
    speed_mrad_s_out: *mut i32,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `state` is initialised by the contract above.
        let s = unsafe { inner(state) }?;
        // SAFETY: `speed_mrad_s_out` is writable by the contract above.
        let out = unsafe { Out::new(speed_mrad_s_out) }?;
        out.set(s.speed_mrad_s());
        Ok(())
    })())
}

/// One driven or braked tick (Rust: `SpeedEstimatorConfig::update`): the duty held during the
/// tick that ends now, Q16 signed by direction (0 for a brake tick), the supply then, mV, and
/// the winding current at the end of the tick, µA; writes the speed estimate, mrad/s.
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` and `state` initialised, `speed_mrad_s_out`
/// writable; they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_speed_estimator_update(
    cfg: *const LenzSpeedEstimatorConfig,
    state: *mut LenzSpeedEstimatorState,
    duty_q16: i32,
    supply_mv: i32,
    current_ua: i32,
    speed_mrad_s_out: *mut i32,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `cfg` is initialised by the contract above.
        let cfg = unsafe { inner(cfg) }?;
        // SAFETY: `state` is initialised and not shared by the contract above.
        let s = unsafe { inner_mut(state) }?;
        // SAFETY: `speed_mrad_s_out` is writable by the contract above.
        let out = unsafe { Out::new(speed_mrad_s_out) }?;
        out.set(cfg.update(s, duty_q16, supply_mv, current_ua));
        Ok(())
    })())
}

/// A coasting tick, the applied voltage unknown (Rust: `SpeedEstimatorConfig::hold`): keeps
/// the estimate, records the current, µA; writes the kept estimate, mrad/s.
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` and `state` initialised, `speed_mrad_s_out`
/// writable; they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_speed_estimator_hold(
    cfg: *const LenzSpeedEstimatorConfig,
    state: *mut LenzSpeedEstimatorState,
    current_ua: i32,
    speed_mrad_s_out: *mut i32,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `cfg` is initialised by the contract above.
        let cfg = unsafe { inner(cfg) }?;
        // SAFETY: `state` is initialised and not shared by the contract above.
        let s = unsafe { inner_mut(state) }?;
        // SAFETY: `speed_mrad_s_out` is writable by the contract above.
        let out = unsafe { Out::new(speed_mrad_s_out) }?;
        out.set(cfg.hold(s, current_ua));
        Ok(())
    })())
}
