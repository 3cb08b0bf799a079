//! The trip detector ([`TripConfig`]): raw settings, opaque configuration and state, the
//! verdict of a sample and the per-sample update.

use lenz::kernel::{
    Cause, INVERSE_TABLE_LEN, InverseTable, TripConfig, TripEvent, TripRaw, TripState, Verdict,
};

use crate::LenzStatus;
use crate::opaque::{Out, get, inner, inner_mut, opaque};

/// Words of `LenzTripConfig`.
pub const LENZ_TRIP_CONFIG_WORDS: usize = 176;
/// Words of `LenzTripState`.
pub const LENZ_TRIP_STATE_WORDS: usize = 8;
/// Entries of the inverse-time table.
pub const LENZ_INVERSE_TABLE_LEN: usize = 161;
const _: () = assert!(LENZ_INVERSE_TABLE_LEN == INVERSE_TABLE_LEN);
/// `1.0` of the thermal state in Q24: the thermal element trips at this value.
pub const LENZ_THETA_ONE_Q24: u32 = 16_777_216;
const _: () = assert!(LENZ_THETA_ONE_Q24 == lenz::kernel::THETA_ONE_Q24);

/// The inverse-time element's table (Rust: `lenz::kernel::InverseTable`). A disabled
/// element has every field 0 and `instant_reset` 1.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LenzInverseTable {
    /// `2³²/pickup_counts`: `M` in Q16 is `reading · m_scale_q32 >> 16`. Zero disables.
    pub m_scale_q32: u32,
    /// `2³²·T_s/t(M)` at `M = 2^o·(1 + s/32)` for entry `32·o + s`.
    pub rate_q32: [u32; LENZ_INVERSE_TABLE_LEN],
    /// `2³²·T_s/(TD·t_r)` of an inverse reset below pickup; ignored if `instant_reset`.
    pub reset_q32: u32,
    /// Nonzero: reset to zero at once below pickup (IEC curves).
    pub instant_reset: u8,
}

/// The raw settings of the trip detector, as a constant can hold them (Rust:
/// `lenz::kernel::TripRaw`).
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LenzTripRaw {
    /// Instantaneous threshold: a reading at or above it is over, counts.
    pub instantaneous_counts: u16,
    /// A reading at or above this is over too (a saturated ADC), counts.
    pub full_scale_counts: u16,
    /// Blanking after each switch-on, samples.
    pub blank_samples: u16,
    /// `N` of the `N`-of-`M` persistence filter (0 is taken as 1).
    pub persistence_n: u8,
    /// `M` of the `N`-of-`M` persistence filter (clamped to `1 ..= 32`).
    pub persistence_m: u8,
    /// Samples of an exactly constant reading with the switch on that count as a stuck
    /// sensor (0: off).
    pub stuck_samples: u16,
    /// Timed retries before the latch.
    pub retries: u8,
    /// Delay before each retry, samples.
    pub retry_samples: u16,
    /// `k` of the block of `K = 2^k` samples (clamped to 5).
    pub block_log2: u8,
    /// The inverse-time element (disabled: see `LenzInverseTable`).
    pub inverse_table: LenzInverseTable,
    /// `2^(24 + x2_shift)/(k·I_B in counts)²`: `x²` in Q24 is `mean r² · x2_mul >> x2_shift`.
    /// Zero disables the thermal element.
    pub x2_mul: u32,
    /// Shift of the thermal input scale.
    pub x2_shift: u8,
    /// `1 − exp(−K·T_s/τ)` of one block, Q32 (below `2³¹`).
    pub thermal_step_q32: u32,
    /// Measured relative error of the inverse-time table, parts per million (information
    /// only; 0 when not measured).
    pub table_error_ppm: u32,
}

/// Trip detector settings (opaque; fill with `lenz_trip_init`).
#[repr(C)]
pub struct LenzTripConfig {
    opaque: [u32; LENZ_TRIP_CONFIG_WORDS],
}

/// One channel's trip detector state (opaque; fill with `lenz_trip_state_init`).
#[repr(C)]
pub struct LenzTripState {
    opaque: [u32; LENZ_TRIP_STATE_WORDS],
}

opaque!(LenzTripConfig, TripConfig, LENZ_TRIP_CONFIG_WORDS);
opaque!(LenzTripState, TripState, LENZ_TRIP_STATE_WORDS);

/// Why the detector tripped (Rust: `lenz::kernel::Cause`).
#[repr(u8)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LenzCause {
    /// No trip (the verdict is not `LENZ_VERDICT_KIND_TRIP`).
    None = 0,
    /// `N` of the last `M` samples at or above the threshold (or at full scale).
    Instantaneous = 1,
    /// The inverse-time accumulator reached one.
    InverseTime = 2,
    /// The thermal state reached one.
    Thermal = 3,
    /// The reading stayed exactly constant with the switch on (stuck sensor).
    SensorFault = 4,
}

/// What the firmware may do after a sample (Rust: `lenz::kernel::Verdict`).
#[repr(u8)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum LenzVerdictKind {
    /// No trip: the switch may be on.
    Allow = 0,
    /// Tripped at this sample: switch off now (the event says why).
    Trip = 1,
    /// Off, waiting for the timed retry.
    Waiting = 2,
    /// Off until `lenz_trip_state_reset`.
    Latched = 3,
}

/// One trip (Rust: `lenz::kernel::TripEvent`); all zero when the verdict is not a trip.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LenzTripEvent {
    /// Sample count since the state was created (wraps), at the tripping sample.
    pub tick: u32,
    /// The reading that caused the trip, ADC counts.
    pub reading_counts: u16,
    /// Retries used before this trip.
    pub retry: u8,
    /// Why it tripped.
    pub cause: LenzCause,
}

/// The verdict of one sample. The switch may stay on only on `LENZ_VERDICT_KIND_ALLOW`.
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LenzVerdict {
    /// What the firmware may do.
    pub kind: LenzVerdictKind,
    /// The trip, for `LENZ_VERDICT_KIND_TRIP`; all zero otherwise.
    pub event: LenzTripEvent,
}

/// A channel's state as the firmware may read it (Rust: the getters of
/// `lenz::kernel::TripState`).
#[repr(C)]
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct LenzTripStateInfo {
    /// Samples seen (wraps).
    pub tick: u32,
    /// Thermal state, Q24 (`LENZ_THETA_ONE_Q24` trips); updated at the end of each block.
    pub theta_q24: u32,
    /// Inverse-time accumulator, Q32 fraction of one (trips when it would reach `2³²`);
    /// updated at the end of each block.
    pub inverse_q32: u32,
    /// Retries used since the last reset.
    pub retries: u8,
    /// Latched off until reset.
    pub latched: bool,
    /// Off and waiting for a retry.
    pub waiting: bool,
}

const NO_EVENT: LenzTripEvent = LenzTripEvent {
    tick: 0,
    reading_counts: 0,
    retry: 0,
    cause: LenzCause::None,
};

impl From<Cause> for LenzCause {
    fn from(c: Cause) -> Self {
        match c {
            Cause::Instantaneous => LenzCause::Instantaneous,
            Cause::InverseTime => LenzCause::InverseTime,
            Cause::Thermal => LenzCause::Thermal,
            Cause::SensorFault => LenzCause::SensorFault,
        }
    }
}

impl From<TripEvent> for LenzTripEvent {
    fn from(e: TripEvent) -> Self {
        LenzTripEvent {
            tick: e.tick,
            reading_counts: e.reading_counts,
            retry: e.retry,
            cause: e.cause.into(),
        }
    }
}

impl From<Verdict> for LenzVerdict {
    fn from(v: Verdict) -> Self {
        let (kind, event) = match v {
            Verdict::Allow => (LenzVerdictKind::Allow, NO_EVENT),
            Verdict::Trip(e) => (LenzVerdictKind::Trip, e.into()),
            Verdict::Waiting => (LenzVerdictKind::Waiting, NO_EVENT),
            Verdict::Latched => (LenzVerdictKind::Latched, NO_EVENT),
        };
        LenzVerdict { kind, event }
    }
}

impl From<&TripState> for LenzTripStateInfo {
    fn from(s: &TripState) -> Self {
        LenzTripStateInfo {
            tick: s.tick(),
            theta_q24: s.theta_q24(),
            inverse_q32: s.inverse_q32(),
            retries: s.retries(),
            latched: s.is_latched(),
            waiting: s.is_waiting(),
        }
    }
}

impl From<LenzInverseTable> for InverseTable {
    fn from(c: LenzInverseTable) -> Self {
        InverseTable {
            m_scale_q32: c.m_scale_q32,
            rate_q32: c.rate_q32,
            reset_q32: c.reset_q32,
            instant_reset: c.instant_reset != 0,
        }
    }
}

impl From<InverseTable> for LenzInverseTable {
    fn from(r: InverseTable) -> Self {
        LenzInverseTable {
            m_scale_q32: r.m_scale_q32,
            rate_q32: r.rate_q32,
            reset_q32: r.reset_q32,
            instant_reset: u8::from(r.instant_reset),
        }
    }
}

impl From<LenzTripRaw> for TripRaw {
    fn from(c: LenzTripRaw) -> Self {
        TripRaw {
            instantaneous_counts: c.instantaneous_counts,
            full_scale_counts: c.full_scale_counts,
            blank_samples: c.blank_samples,
            persistence_n: c.persistence_n,
            persistence_m: c.persistence_m,
            stuck_samples: c.stuck_samples,
            retries: c.retries,
            retry_samples: c.retry_samples,
            block_log2: c.block_log2,
            inverse_table: c.inverse_table.into(),
            x2_mul: c.x2_mul,
            x2_shift: c.x2_shift,
            thermal_step_q32: c.thermal_step_q32,
            table_error_ppm: c.table_error_ppm,
        }
    }
}

impl From<TripRaw> for LenzTripRaw {
    fn from(r: TripRaw) -> Self {
        LenzTripRaw {
            instantaneous_counts: r.instantaneous_counts,
            full_scale_counts: r.full_scale_counts,
            blank_samples: r.blank_samples,
            persistence_n: r.persistence_n,
            persistence_m: r.persistence_m,
            stuck_samples: r.stuck_samples,
            retries: r.retries,
            retry_samples: r.retry_samples,
            block_log2: r.block_log2,
            inverse_table: r.inverse_table.into(),
            x2_mul: r.x2_mul,
            x2_shift: r.x2_shift,
            thermal_step_q32: r.thermal_step_q32,
            table_error_ppm: r.table_error_ppm,
        }
    }
}

/// Fills `cfg_out` from raw settings (Rust: `TripConfig::from_raw`). Any values are
/// accepted: out-of-range persistence is clamped to `1 ..= 32`, the block to at most 5.
///
/// # Safety
///
/// Each pointer is null or valid: `raw` readable, `cfg_out` writable; they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_trip_init(
    cfg_out: *mut LenzTripConfig,
    raw: *const LenzTripRaw,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `raw` is readable by the contract above.
        let raw = unsafe { get(raw) }?;
        // SAFETY: `cfg_out` is writable by the contract above.
        let out = unsafe { Out::new(cfg_out) }?;
        out.set_inner(TripConfig::from_raw((*raw).into()));
        Ok(())
    })())
}

/// Writes the raw settings of `cfg` to `raw_out` (Rust: `TripConfig::raw`; a persistence
/// `N` of 0 reads back as 1, a block above 5 as 5).
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` initialised by `lenz_trip_init`, `raw_out` writable;
/// they do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_trip_raw(
    cfg: *const LenzTripConfig,
    raw_out: *mut LenzTripRaw,
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

/// Samples per block `K = 2^k` over which the inverse-time and thermal elements are updated
/// (Rust: `TripConfig::block_samples`); the sample that ends a block is the slowest.
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` initialised, `samples_out` writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_trip_block_samples(
    cfg: *const LenzTripConfig,
    samples_out: *mut u32,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `cfg` is initialised by the contract above.
        let cfg = unsafe { inner(cfg) }?;
        // SAFETY: `samples_out` is writable by the contract above.
        let out = unsafe { Out::new(samples_out) }?;
        out.set(cfg.block_samples());
        Ok(())
    })())
}

/// A channel whose winding starts at thermal state `theta_q24` (0 for a cold winding; Q24,
/// `LENZ_THETA_ONE_Q24` trips), untripped (Rust: `TripState::with_theta_q24`).
///
/// # Safety
///
/// `state_out` is null or writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_trip_state_init(
    state_out: *mut LenzTripState,
    theta_q24: u32,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `state_out` is writable by the contract above.
        let out = unsafe { Out::new(state_out) }?;
        out.set_inner(TripState::with_theta_q24(theta_q24));
        Ok(())
    })())
}

/// Clears a latch or a pending retry and the retry count; keeps the thermal state, the tick
/// and the block sums (the winding does not cool by a reset; Rust: `TripState::reset`).
///
/// # Safety
///
/// `state` is null or initialised by `lenz_trip_state_init`.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_trip_state_reset(state: *mut LenzTripState) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `state` is initialised by the contract above.
        unsafe { inner_mut(state) }?.reset();
        Ok(())
    })())
}

/// Reads the channel's tick, accumulators, retries and phase.
///
/// # Safety
///
/// Each pointer is null or valid: `state` initialised, `info_out` writable.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_trip_state_info(
    state: *const LenzTripState,
    info_out: *mut LenzTripStateInfo,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `state` is initialised by the contract above.
        let s = unsafe { inner(state) }?;
        // SAFETY: `info_out` is writable by the contract above.
        let out = unsafe { Out::new(info_out) }?;
        out.set(s.into());
        Ok(())
    })())
}

/// One sample (Rust: `TripConfig::update`): the ADC reading, counts (zero current at 0), and
/// the switch state the firmware commands for this sample (a rising edge starts the blanking
/// time). Writes the verdict.
///
/// # Safety
///
/// Each pointer is null or valid: `cfg` and `state` initialised, `verdict_out` writable; they
/// do not overlap.
#[unsafe(no_mangle)]
pub unsafe extern "C" fn lenz_trip_update(
    cfg: *const LenzTripConfig,
    state: *mut LenzTripState,
    reading_counts: u16,
    switch_on: bool,
    verdict_out: *mut LenzVerdict,
) -> LenzStatus {
    LenzStatus::of((|| {
        // SAFETY: `cfg` is initialised by the contract above.
        let cfg = unsafe { inner(cfg) }?;
        // SAFETY: `state` is initialised and not shared by the contract above.
        let s = unsafe { inner_mut(state) }?;
        // SAFETY: `verdict_out` is writable by the contract above.
        let out = unsafe { Out::new(verdict_out) }?;
        out.set(cfg.update(s, reading_counts, switch_on).into());
        Ok(())
    })())
}
