//! The boost duty limiter ([`DutyLimiterConfig`]): raw tables, opaque configuration and
//! state, the limit lookup and the per-tick update.

use lenz::kernel::{DUTY_TABLE_LEN, DutyLimiterConfig, DutyLimiterRaw, DutyLimiterState};

use crate::LenzStatus;
use crate::opaque::{Out, get, inner, inner_mut, opaque};

/// Words of `LenzDutyLimiterConfig`.
pub const LENZ_DUTY_LIMITER_CONFIG_WORDS: usize = 103;
/// Words of `LenzDutyLimiterState`.
pub const LENZ_DUTY_LIMITER_STATE_WORDS: usize = 2;
/// Nodes of each duty-limit table.
pub const LENZ_DUTY_TABLE_LEN: usize = 32;
const _: () = assert!(LENZ_DUTY_TABLE_LEN == DUTY_TABLE_LEN);

/// The raw coefficients of the duty limiter, as a constant can hold them (Rust:
/// `lenz::kernel::DutyLimiterRaw`).
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LenzDutyLimiterRaw {
    /// Lowest valid input reading and first table node, counts.
    pub vin_lo_counts: u16,
    /// Highest valid input reading, counts.
    pub vin_hi_counts: u16,
    /// Node spacing `2^shift` counts (at most 16 is used).
    pub shift: u8,
    /// Saturation limit at the nodes, duty counts Q8.
    pub saturation_q8: [i32; LENZ_DUTY_TABLE_LEN],
    /// Gain-peak limit at the nodes, duty counts Q8.
    pub gain_peak_q8: [i32; LENZ_DUTY_TABLE_LEN],
    /// Light-load overvoltage limit at the nodes, duty counts Q8.
    pub light_load_q8: [i32; LENZ_DUTY_TABLE_LEN],
    /// Minimum-off-time limit, duty counts Q8.
    pub min_off_q8: i32,
    /// Duties below this are output as 0, counts.
    pub min_on_counts: u16,
    /// Duty register value for duty 1.
    pub full_scale: u16,
    /// Soft-start rise per tick, duty counts Q8.
    pub slew_q8: i32,
    /// Lowest valid output reading, counts.
    pub vout_lo_counts: u16,
    /// Highest valid output reading, counts.
    pub vout_hi_counts: u16,
    /// Output reading that cuts switching, counts.
    pub ov_trip_counts: u16,
    /// Output reading at or below which switching resumes, counts.
    pub ov_resume_counts: u16,
}

/// Duty limiter coefficients (opaque; fill with `lenz_duty_limiter_init`).
#[repr(C)]
pub struct LenzDutyLimiterConfig {
    opaque: [u32; LENZ_DUTY_LIMITER_CONFIG_WORDS],
}

/// One channel's duty limiter state (opaque; fill with `lenz_duty_limiter_state_init`).
#[repr(C)]
pub struct LenzDutyLimiterState {
    opaque: [u32; LENZ_DUTY_LIMITER_STATE_WORDS],
}

opaque!(
    LenzDutyLimiterConfig,
    DutyLimiterConfig,
    LENZ_DUTY_LIMITER_CONFIG_WORDS
);
opaque!(
    LenzDutyLimiterState,
    DutyLimiterState,
    LENZ_DUTY_LIMITER_STATE_WORDS
);

impl From<LenzDutyLimiterRaw> for DutyLimiterRaw {
    fn from(c: LenzDutyLimiterRaw) -> Self {
        DutyLimiterRaw {
            vin_lo_counts: c.vin_lo_counts,
            vin_hi_counts: c.vin_hi_counts,
            shift: c.shift,
            saturation_q8: c.saturation_q8,
            gain_peak_q8: c.gain_peak_q8,
            light_load_q8: c.light_load_q8,
            min_off_q8: c.min_off_q8,
            min_on_counts: c.min_on_counts,
            full_scale: c.full_scale,
            slew_q8: c.slew_q8,
            vout_lo_counts: c.vout_lo_counts,
            vout_hi_counts: c.vout_hi_counts,
            ov_trip_counts: c.ov_trip_counts,
            ov_resume_counts: c.ov_resume_counts,
        }
    }
}

impl From<DutyLimiterRaw> for LenzDutyLimiterRaw {
    fn from(r: DutyLimiterRaw) -> Self {
        LenzDutyLimiterRaw {
            vin_lo_counts: r.vin_lo_counts,
            vin_hi_counts: r.vin_hi_counts,
            shift: r.shift,
            saturation_q8: r.saturation_q8,
            gain_peak_q8: r.gain_peak_q8,
            light_load_q8: r.light_load_q8,
            min_off_q8: r.min_off_q8,
            min_on_counts: r.min_on_counts,
            full_scale: r.full_scale,
            slew_q8: r.slew_q8,
            vout_lo_counts: r.vout_lo_counts,
            vout_hi_counts: r.vout_hi_counts,
            ov_trip_counts: r.ov_trip_counts,
            ov_resume_counts: r.ov_resume_counts,
        }
    }
}

/// Fills `cfg_out` from raw coefficients (Rust: `DutyLimiterConfig::from_raw`). Any values
/// are accepted; a table index outside the tables reads as limit 0.
///
/// # Safety
///
/// Each pointer is null or valid: `raw` readable, `cfg_out` writable; they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_duty_limiter_init(
    cfg_out: *mut LenzDutyLimiterConfig,
    raw: *const LenzDutyLimiterRaw,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `raw` is readable by the contract above.
        let raw = unsafe { get(raw) }?;
        // SAFETY: `cfg_out` is writable by the contract above.
        let out = unsafe { Out::new(cfg_out) }?;
        out.set_inner(DutyLimiterConfig::from_raw((*raw).into()));
        Ok(())
    })())
}

/// Writes the raw coefficients of `cfg` to `raw_out` (Rust: `DutyLimiterConfig::raw`).
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` initialised by `lenz_duty_limiter_init`, `raw_out`
/// writable; they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_duty_limiter_raw(
    cfg: *const LenzDutyLimiterConfig,
    raw_out: *mut LenzDutyLimiterRaw,
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

/// The duty limit at input reading `vin_counts`, duty counts Q8, 0 outside the window (Rust:
/// `DutyLimiterConfig::limit_q8`).
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` initialised, `limit_q8_out` writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_duty_limiter_limit_q8(
    cfg: *const LenzDutyLimiterConfig,
    vin_counts: u16,
    limit_q8_out: *mut i32,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `cfg` is initialised by the contract above.
        let cfg = unsafe { inner(cfg) }?;
        // SAFETY: `limit_q8_out` is writable by the contract above.
        let out = unsafe { Out::new(limit_q8_out) }?;
        out.set(cfg.limit_q8(vin_counts));
        Ok(())
    })())
}

/// Not switching, soft start from zero, no overvoltage latched (Rust:
/// `DutyLimiterState::new`).
///
/// # Safety
///
/// `state_out` is null or writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_duty_limiter_state_init(
    state_out: *mut LenzDutyLimiterState,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `state_out` is writable by the contract above.
        let out = unsafe { Out::new(state_out) }?;
        out.set_inner(DutyLimiterState::new());
        Ok(())
    })())
}

/// Back to not switching, soft start from zero, no overvoltage latched (Rust:
/// `DutyLimiterState::reset`).
///
/// # Safety
///
/// `state` is null or initialised by `lenz_duty_limiter_state_init`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_duty_limiter_state_reset(
    state: *mut LenzDutyLimiterState,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `state` is initialised by the contract above.
        unsafe { inner_mut(state) }?.reset();
        Ok(())
    })())
}

/// `true` while an overvoltage cut holds the duty at zero (Rust:
/// `DutyLimiterState::overvoltage`).
///
/// # Safety
///
/// Each pointer is null or valid: `state` initialised, `overvoltage_out` writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_duty_limiter_state_overvoltage(
    state: *const LenzDutyLimiterState,
    overvoltage_out: *mut bool,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `state` is initialised by the contract above.
        let s = unsafe { inner(state) }?;
        // SAFETY: `overvoltage_out` is writable by the contract above.
        let out = unsafe { Out::new(overvoltage_out) }?;
        out.set(s.overvoltage());
        Ok(())
    })())
}

/// The last allowed duty before the minimum-on-time skip, duty counts Q8 (Rust:
/// `DutyLimiterState::last_q8`).
///
/// # Safety
///
/// Each pointer is null or valid: `state` initialised, `duty_q8_out` writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_duty_limiter_state_last_q8(
    state: *const LenzDutyLimiterState,
    duty_q8_out: *mut i32,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `state` is initialised by the contract above.
        let s = unsafe { inner(state) }?;
        // SAFETY: `duty_q8_out` is writable by the contract above.
        let out = unsafe { Out::new(duty_q8_out) }?;
        out.set(s.last_q8());
        Ok(())
    })())
}

/// One tick (Rust: `DutyLimiterConfig::update`): the controller's duty request, counts
/// (saturated to `0 ..= full_scale`), and the input and output ADC readings, counts. Writes
/// the duty to apply, counts: 0 on out-of-range readings and during an overvoltage cut,
/// otherwise at most the request, the limit at `vin_counts` and the soft-start ramp, and
/// either 0 or at least `min_on_counts`.
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` and `state` initialised, `duty_out` writable; they do
/// not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_duty_limiter_update(
    cfg: *const LenzDutyLimiterConfig,
    state: *mut LenzDutyLimiterState,
    request: i32,
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
        out.set(cfg.update(s, request, vin_counts, vout_counts));
        Ok(())
    })())
}
