//! The coil current estimator ([`EstimatorConfig`]): raw coefficients, opaque configuration
//! and state, the per-tick update.

use lenz::kernel::{EstimatorConfig, EstimatorRaw, EstimatorState, OffPath};

use crate::LenzStatus;
use crate::opaque::{Out, get, inner, inner_mut, opaque};

/// Words of `LenzEstimatorConfig`.
pub const LENZ_ESTIMATOR_CONFIG_WORDS: usize = 7;
/// Words of `LenzEstimatorState`.
pub const LENZ_ESTIMATOR_STATE_WORDS: usize = 2;

/// The freewheel (switch-off) path of the estimator (Rust: `lenz::kernel::OffPath`).
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LenzOffPath {
    /// `1 − exp(−T·R_off/L)`, Q31.
    pub step_q31: i32,
    /// `1/R_off`, µA per mV, Q16.
    pub conductance_q16: i32,
    /// Constant voltage of the clamp opposing the current, mV.
    pub clamp_mv: i32,
    /// Nonzero for a clamp across the switch: the supply keeps driving the coil while off.
    pub supply_coupled: u8,
}

/// The raw coefficients of the estimator, as a constant can hold them (Rust: `lenz::kernel::EstimatorRaw`).
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LenzEstimatorRaw {
    /// `1 − exp(−T·R_on/L)` of the on path, Q31 (`0 ..= 2³¹ − 1` from a plan).
    pub on_step_q31: i32,
    /// `1/R_on`, µA per mV, Q16.
    pub on_conductance_q16: i32,
    /// Voltage across the closed switch, mV.
    pub switch_drop_mv: i32,
    /// The freewheel path.
    pub off: LenzOffPath,
}

/// Estimator coefficients (opaque; fill with `lenz_estimator_init`). Read-only after init; one
/// serves every channel with the same coil, temperature and tick.
#[repr(C)]
pub struct LenzEstimatorConfig {
    opaque: [u32; LENZ_ESTIMATOR_CONFIG_WORDS],
}

/// One channel's estimator state (opaque; fill with `lenz_estimator_state_init`).
#[repr(C)]
pub struct LenzEstimatorState {
    opaque: [u32; LENZ_ESTIMATOR_STATE_WORDS],
}

opaque!(
    LenzEstimatorConfig,
    EstimatorConfig,
    LENZ_ESTIMATOR_CONFIG_WORDS
);
opaque!(
    LenzEstimatorState,
    EstimatorState,
    LENZ_ESTIMATOR_STATE_WORDS
);

impl From<LenzOffPath> for OffPath {
    fn from(c: LenzOffPath) -> Self {
        OffPath {
            step_q31: c.step_q31,
            conductance_q16: c.conductance_q16,
            clamp_mv: c.clamp_mv,
            supply_coupled: c.supply_coupled != 0,
        }
    }
}

impl From<OffPath> for LenzOffPath {
    fn from(r: OffPath) -> Self {
        LenzOffPath {
            step_q31: r.step_q31,
            conductance_q16: r.conductance_q16,
            clamp_mv: r.clamp_mv,
            supply_coupled: u8::from(r.supply_coupled),
        }
    }
}

impl From<LenzEstimatorRaw> for EstimatorRaw {
    fn from(c: LenzEstimatorRaw) -> Self {
        EstimatorRaw {
            on_step_q31: c.on_step_q31,
            on_conductance_q16: c.on_conductance_q16,
            switch_drop_mv: c.switch_drop_mv,
            off: c.off.into(),
        }
    }
}

impl From<EstimatorRaw> for LenzEstimatorRaw {
    fn from(r: EstimatorRaw) -> Self {
        LenzEstimatorRaw {
            on_step_q31: r.on_step_q31,
            on_conductance_q16: r.on_conductance_q16,
            switch_drop_mv: r.switch_drop_mv,
            off: r.off.into(),
        }
    }
}

/// Fills `cfg_out` from raw coefficients (Rust: `EstimatorConfig::from_raw`). Any values are
/// accepted: raw values outside a plan's ranges may make the estimate wrong, never overflow.
///
/// # Safety
///
/// Each pointer is null (the call returns `LENZ_STATUS_NULL_POINTER`) or valid for its type:
/// `raw` readable, `cfg_out` writable; they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_estimator_init(
    cfg_out: *mut LenzEstimatorConfig,
    raw: *const LenzEstimatorRaw,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `raw` is readable by the contract above.
        let raw = unsafe { get(raw) }?;
        // SAFETY: `cfg_out` is writable by the contract above.
        let out = unsafe { Out::new(cfg_out) }?;
        out.set_inner(EstimatorConfig::from_raw((*raw).into()));
        Ok(())
    })())
}

/// Writes the raw coefficients of `cfg` to `raw_out` (Rust: `EstimatorConfig::raw`): exactly
/// those given to `lenz_estimator_init`, with booleans as 0 or 1.
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` initialised by `lenz_estimator_init`, `raw_out`
/// writable; they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_estimator_raw(
    cfg: *const LenzEstimatorConfig,
    raw_out: *mut LenzEstimatorRaw,
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

/// Starts a channel at `current_ua` (0 for a coil at rest; a measured current otherwise),
/// saturated to `0 ..= 2³⁰` µA (Rust: `EstimatorState::with_current_ua`).
///
/// # Safety
///
/// `state_out` is null or writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_estimator_state_init(
    state_out: *mut LenzEstimatorState,
    current_ua: i32,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `state_out` is writable by the contract above.
        let out = unsafe { Out::new(state_out) }?;
        out.set_inner(EstimatorState::with_current_ua(current_ua));
        Ok(())
    })())
}

/// Back to zero current (Rust: `EstimatorState::reset`).
///
/// # Safety
///
/// `state` is null or initialised by `lenz_estimator_state_init`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_estimator_state_reset(state: *mut LenzEstimatorState) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `state` is initialised by the contract above.
        unsafe { inner_mut(state) }?.reset();
        Ok(())
    })())
}

/// The channel's present estimate, µA (Rust: `EstimatorState::current_ua`).
///
/// # Safety
///
/// Each pointer is null or valid: `state` initialised, `current_ua_out` writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_estimator_state_current_ua(
    state: *const LenzEstimatorState,
    current_ua_out: *mut i32,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `state` is initialised by the contract above.
        let s = unsafe { inner(state) }?;
        // SAFETY: `current_ua_out` is writable by the contract above.
        let out = unsafe { Out::new(current_ua_out) }?;
        out.set(s.current_ua());
        Ok(())
    })())
}

/// One tick (Rust: `EstimatorConfig::update`): the switch state held during the tick that
/// ends now and the supply then, mV (negative readings count as 0 V); writes the estimate at
/// the end of the tick to `current_ua_out`, µA, in `0 ..= 2³⁰`.
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` and `state` initialised, `current_ua_out` writable;
/// they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_estimator_update(
    cfg: *const LenzEstimatorConfig,
    state: *mut LenzEstimatorState,
    switch_on: bool,
    supply_mv: i32,
    current_ua_out: *mut i32,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `cfg` is initialised by the contract above.
        let cfg = unsafe { inner(cfg) }?;
        // SAFETY: `state` is initialised and not shared by the contract above.
        let s = unsafe { inner_mut(state) }?;
        // SAFETY: `current_ua_out` is writable by the contract above.
        let out = unsafe { Out::new(current_ua_out) }?;
        out.set(cfg.update(s, switch_on, supply_mv));
        Ok(())
    })())
}
