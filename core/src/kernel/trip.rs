//! Integer trip detector: instantaneous trip with blanking and N-of-M persistence, an
//! inverse-time accumulator, a thermal accumulator, sensor-fault detection, and a
//! retry-then-latch policy; plus a fixed-capacity log of the last trips.
//!
//! # Per sample
//!
//! The firmware calls [`TripConfig::update`] once per ADC sample with the reading (counts, zero
//! current at code 0) and the commanded switch state, and keeps the switch off unless the
//! returned [`Verdict`] allows it.
//!
//! 1. **Instantaneous.** A reading at or above the threshold code counts as *over*; so does a
//!    reading at or above the full-scale code (a saturated ADC hides the true current: fail
//!    safe). For `blank` samples after each switch-on (rising edge of `switch_on`) samples
//!    count as not over, which hides the turn-on spike. The last `M` over/not-over bits are
//!    kept in a shift register; the detector trips when at least `N` of the last `M` samples
//!    were over (the bits are counted only at a sample that is over, the only sample at which
//!    the count can reach `N`). Every sample is decided: this element resolves to one sample.
//! 2. **Inverse time.** The standard digital form of the integral equation
//!    `∫ dt/t(M) = 1` (IEEE Std C37.112-1996): each sample adds `T_s/t(M)` to an accumulator
//!    that trips at one. The increment comes from a precomputed table of `2³²·T_s/t(M)` (see
//!    *Table*): no division. Below pickup an IEEE curve runs back by
//!    `T_s/t_r(M) = T_s(1 − M²)/(TD·t_r)` (computed directly: `1 − M²` is a polynomial); an
//!    IEC curve resets to zero. The accumulator moves once per block of `K` samples (see
//!    *Blocks*) by `K` increments at the block's mean multiple.
//! 3. **Thermal.** The exact discrete update of the IEC 60255-149 thermal image
//!    (see [`crate::trip::thermal`]) over one block, `Δt = K·T_s`:
//!    `θ ← b_K·θ + (1 − b_K)·x̄²` with `x̄²` the block's mean of `(I/(k I_B))²` and
//!    `b_K = exp(−K·T_s/τ)`, written as `θ += (1 − b_K)(x̄² − θ)`; it trips at `θ ≥ 1`. θ is
//!    Q24 (`1.0 = 2²⁴`, up to 256) and 16 bits below one Q24 LSB are carried from block to
//!    block (error feedback), so tiny steps `(1 − b_K) ≈ 10⁻⁸` neither stall nor drift.
//! 4. **Sensor fault.** A reading that stays exactly the same for `stuck` samples while the
//!    switch is on counts as a stuck sensor: it trips and latches at once (no retry into an
//!    unknown current). Real readings of a live current carry noise of a count or more; set
//!    `stuck` above the longest flat stretch a healthy channel shows, or 0 to disable.
//! 5. **Retry, then latch.** After a trip the verdict is [`Verdict::Waiting`] for the retry
//!    delay (and, after a thermal trip, until θ is below one again), then [`Verdict::Allow`]
//!    once more. After the stated number of retries the next trip latches:
//!    [`Verdict::Latched`] until [`TripState::reset`]. The retry count clears only with
//!    `reset`. The block sums and both accumulators go on while waiting or latched (the
//!    winding cools).
//!
//! Trips are checked in the order sensor fault, instantaneous, inverse time, thermal; the
//! first that fires is the cause.
//!
//! # Blocks
//!
//! Heating goes with the mean of `I²` and the inverse-time integral with `T_s/t(M)` summed over
//! the samples; neither needs its full arithmetic at every sample. Each sample adds only the
//! reading `r` to a running sum `Σr` and `r² >> 5` (one 16×16 multiply) to `Σr²/32`; at the
//! last sample of each block of `K = 2^k` samples (`k ≤` [`BLOCK_LOG2_MAX`] = 5, so `Σr` fits
//! 21 bits and `Σ(r² >> 5)` 32 bits) the block update runs once:
//!
//! - inverse time: `M̄ = Σr·(2³²/pickup) >> (16 + k)` in Q16, exactly the `M` of a constant
//!   reading equal to the block's mean; the accumulator moves by `K·inc(M̄)` (or runs back by
//!   `K` decrements, or resets);
//! - thermal: `x̄² = (Σ(r² >> 5)·2^(5−k) + 16)·2^(24+s)/(k I_B)² >> s` in Q24, the block's mean
//!   square; the truncation of `r² >> 5` is at most 32 of `r²`'s units per sample, and adding
//!   16 back centres it, so `x̄²` is within `16/r²` relative of the true mean square
//!   (`< 4·10⁻⁵` at the trip level for `k·I_B ≥ 650` counts); the exact update above with
//!   `1 − b_K` precomputed.
//!
//! For a constant current the block update moves the inverse-time accumulator exactly as `K`
//! per-sample updates (unit test `block_equals_per_sample_updates_at_constant_current`), and
//! the thermal update over `K·T_s` is the exact result of `K` per-sample steps (up to the
//! fixed-point rounding). For a current that varies within a block, thermal sees the block's
//! mean square (within the truncation above), which is what heats the winding; inverse time
//! takes the increment at the block's mean multiple, which differs from the mean of per-sample
//! increments by the curvature of the rate `1/t(M)` over the block's spread of readings (none
//! for the IEC VI and LTI curves, whose rate is linear in `M`). Changes from block to block are
//! followed as they come.
//!
//! **Resolution.** The inverse-time and thermal elements are decided at block ends only: they
//! trip at the end of the block in which a per-sample update would have reached one, at most
//! `K − 1` samples later. For a constant current the inverse-time trip therefore comes within
//! one block (`K` samples) plus the stated table error of the curve's time (late, never
//! early), and the thermal trip within one block of the exact discrete update; a block that
//! starts hot (after [`TripState::reset`] or from [`TripState::with_theta_q24`]) trips at its
//! end. The instantaneous, stuck-sensor, blanking and retry logic stay per sample.
//!
//! **Choice of `K`** (plan side, [`TripConfig::new`]): the largest `K ≤ 32` with
//! `K·T_s` at most the curve's trip time at the lower of the instantaneous threshold and
//! [`INVERSE_M_MAX`] (above the threshold the instantaneous element trips first), and at most
//! `τ/`[`BLOCK_TAU_FRACTION`] (`τ/8`) of the thermal element, i.e. one block is at most the
//! shortest inverse-time trip the element has to make. [`TripConfig::with_block_log2`] takes
//! any `k ≤ 5` instead (`k = 0`: every sample, the finest resolution at the highest cost).
//!
//! # Table
//!
//! The reading is scaled to the multiple `M = reading/pickup` in Q16 (one multiply by
//! `2³²/pickup`, precomputed). The table covers `1 ≤ M < 32` in five octaves of 32 entries
//! each, spaced evenly within each octave; the octave comes from `leading_zeros` and the entry
//! and interpolation fraction from the bits below the leading one, so the spacing is finer
//! where the curves bend most (near pickup) and the lookup needs no division. Above `M = 32` the
//! last entry holds (the instantaneous element covers that region). Interpolation is linear in
//! the rate `1/t(M)`, which is smooth through pickup (`(M^α − 1)/k` near `M = 1`) where `t(M)`
//! itself is not.
//!
//! **Stated table error**: over the documented range of multiples
//! [`INVERSE_M_MIN`] ..= [`INVERSE_M_MAX`] the increment is within
//! [`INVERSE_TABLE_ERROR_MAX`] (0.2 %) of `2³²·T_s/t(M)` for all seven curves; the plan
//! constructor measures the actual error of each configuration over every reading in that
//! range ([`TripConfig::inverse_table_error`]) and rejects a configuration above the stated
//! bound (measured worst cases, 2.5 A pickup at 4 mA per count, 1 ms and 0.1 ms samples:
//! at most 0.11 % for the IEC SI, IEC EI and IEEE MI/VI/EI curves, 0.03 % for IEC VI and LTI, whose
//! rate is linear in `M`). For a constant current the kernel therefore trips within one block
//! (see *Blocks*) plus that relative error of the curve's time. Rounding the increment to an integer adds
//! `0.5/increment`, included in the measured error; it stays small while `t(M)/T_s < 10⁶`.
//!
//! # Cost and state
//!
//! The per-sample fast path, taken when the channel is running with the switch as at the last
//! sample, not blanking, the reading below the instantaneous threshold with no over bit in the
//! history, the stuck count short of its limit and the block not ending: the tick, the two
//! block sums (one multiply), six compares and the stuck count; no call. Every other sample
//! (switch edges, blanking, an over reading or history, a stuck reading near the limit, the
//! end of a block, waiting or latched) takes the full path, which is the same logic written out
//! plus the block update. The block update forms `M̄`, `x̄²` and the thermal step with 64-bit
//! products (on Cortex-M0 the library multiply `__aeabi_lmul`, no division) and one table
//! interpolation through [`super::q::mul_wide`]; Cortex-M0 has no `CLZ`, so there the table
//! octave comes from five compares. No float, no division, no panic (table access by `.get()`).
//!
//! Measured under emulation (`lenz cost`, the cost run of the target README: every element on,
//! switch on, readings with noise around the inverse-time pickup and below the thermal level,
//! `K = 32` by the rule above for its IEEE VI, TMS 0.05, τ 0.5 s, 1 kHz setting): on average
//! 67.3 instructions per sample on Cortex-M0, 41.8 on Cortex-M3 and 42.8 on Cortex-M4F (before
//! the blocks: 323.4, 180.0 and 177.7). The average is `(K − 1)/K` fast paths plus one full
//! path with the block update per block. The worst single call in normal operation is that
//! block-ending sample; it is not measured on its own, but the fast path's length in the
//! disassembly (about 55 instructions on Cortex-M0, 35 on Cortex-M3) and the averages put it
//! at roughly 430 instructions on Cortex-M0 (its 64-bit products are library multiplies) and
//! 200 to 250 on Cortex-M3/M4F: the firmware's sample period must allow for it once per block.
//! A trip, a switch edge or a stuck-sensor run near its limit also takes the full path.
//!
//! [`TripConfig::new`] builds the table and measures its error in f64 over every reading of
//! the documented range (about `19·pickup` curve evaluations): run it on the host or at
//! init, never per sample. State per channel: 32 bytes
//! ([`TripState`]). The configuration holds the table (161 `u32`, 644 bytes) and is shared by
//! channels with the same settings. A [`TripLog`] of `N` events takes `8·N` bytes plus two
//! words of bookkeeping (`8·N + 16` bytes on a 64-bit host, `8·N + 8` on a 32-bit target).

use heapless::HistoryBuf;

use super::q::mul_wide;
use crate::error::{Error, in_range, non_negative, positive};
use crate::trip::{InverseTime, Thermal};

/// Entries per octave of the inverse-time table.
pub const INVERSE_TABLE_STEPS: usize = 32;
/// Octaves of `M` covered by the table (`1 ≤ M < 2⁵`).
pub const INVERSE_TABLE_OCTAVES: usize = 5;
/// Number of table entries (the last one at `M = 32`).
pub const INVERSE_TABLE_LEN: usize = INVERSE_TABLE_STEPS * INVERSE_TABLE_OCTAVES + 1;
/// Lowest multiple of pickup of the documented range.
pub const INVERSE_M_MIN: f32 = 1.1;
/// Highest multiple of pickup of the documented range.
pub const INVERSE_M_MAX: f32 = 20.0;
/// The stated bound on the relative error of the inverse-time increment over the documented
/// range (module docs, *Table*).
pub const INVERSE_TABLE_ERROR_MAX: f32 = 2.0e-3;
/// `1.0` of the thermal state in Q24.
pub const THETA_ONE_Q24: u32 = 1 << 24;
/// Largest `k` of a block of `K = 2^k` samples: the block's sum of 16-bit readings then fits
/// 21 bits (module docs, *Blocks*).
pub const BLOCK_LOG2_MAX: u8 = 5;
/// The default block is at most `τ/BLOCK_TAU_FRACTION` of the thermal element.
pub const BLOCK_TAU_FRACTION: f64 = 8.0;

const INVERSE_ONE: u64 = 1 << 32;
const Q16: u32 = 1 << 16;

/// `reading · scale >> 16`, saturated to `u32`, from two 32-bit products (no 64-bit multiply,
/// which is a library call on Cortex-M0): with `scale = s_hi·2¹⁶ + s_lo`,
/// `reading·scale >> 16 = reading·s_hi + (reading·s_lo >> 16)` exactly (the first term has no
/// bits below 2¹⁶), and each product of a 16-bit by a 16-bit value fits a `u32`.
#[inline(always)]
const fn scale_q16(reading: u16, scale: u32) -> u32 {
    let r = reading as u32;
    let hi = r * (scale >> 16);
    let lo = (r * (scale & 0xFFFF)) >> 16;
    hi.saturating_add(lo)
}

/// The index of the leading one of `m ≥ 2¹⁶`, for the table lookup, where it matters only
/// up to 21 (every value from 21 on selects the last entry). Cores with `CLZ` use it;
/// ARMv6-M (no `CLZ`, `leading_zeros` is a library call) compares the five bits above 2¹⁶.
#[inline(always)]
const fn table_msb(m: u32) -> u32 {
    if cfg!(all(target_arch = "arm", not(target_has_atomic = "ptr"))) {
        msb_by_compares(m)
    } else {
        31 - m.leading_zeros()
    }
}

/// [`table_msb`] by compares (the ARMv6-M form; the same result on every target for the
/// indices below 21, and at least 21 above).
#[inline(always)]
const fn msb_by_compares(m: u32) -> u32 {
    let h = m >> 16;
    if h >= 32 {
        21
    } else {
        16 + (h >= 2) as u32 + (h >= 4) as u32 + (h >= 8) as u32 + (h >= 16) as u32
    }
}

/// `a · b` of an `i64` known to lie within `|a| < 2⁶²/|b|`: through [`mul_wide`] when `a`
/// fits an `i32` (the common case: four 32-bit multiplies on Cortex-M0), else in `i64`.
#[inline(always)]
const fn mul_i64_i32(a: i64, b: i32) -> i64 {
    if a >= i32::MIN as i64 && a <= i32::MAX as i64 {
        mul_wide(a as i32, b)
    } else {
        a * b as i64
    }
}

/// Why the detector tripped.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub enum Cause {
    /// `N` of the last `M` samples at or above the threshold (or at full scale).
    Instantaneous,
    /// The inverse-time accumulator reached one.
    InverseTime,
    /// The thermal state reached one.
    Thermal,
    /// The reading stayed exactly constant with the switch on (stuck sensor).
    SensorFault,
}

/// One trip, as the detector reports and logs it (8 bytes).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct TripEvent {
    /// Sample count since the state was created (wraps), at the tripping sample.
    pub tick: u32,
    /// The reading that caused the trip, ADC counts.
    pub reading_counts: u16,
    /// Retries used before this trip.
    pub retry: u8,
    /// Why it tripped.
    pub cause: Cause,
}

/// What the firmware may do after a sample.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub enum Verdict {
    /// No trip: the switch may be on.
    Allow,
    /// Tripped at this sample: switch off now.
    Trip(TripEvent),
    /// Off, waiting for the timed retry.
    Waiting,
    /// Off until [`TripState::reset`].
    Latched,
}

impl Verdict {
    /// `true` only for [`Verdict::Allow`].
    #[must_use]
    pub const fn switch_allowed(&self) -> bool {
        matches!(self, Verdict::Allow)
    }
}

/// Inputs of the trip detector plan.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct TripParams {
    /// Sampling period, s.
    pub sample_period_s: f32,
    /// Nominal current per ADC count, A (for example [`crate::trip::SenseChain::amps_per_lsb`]).
    pub amps_per_count: f32,
    /// Instantaneous threshold, counts (for example from
    /// [`crate::trip::SenseChain::code_at_or_below`]).
    pub instantaneous_counts: u16,
    /// Readings at or above this count as overcurrent (the ADC's largest code).
    pub full_scale_counts: u16,
    /// Blanking after switch-on, s (rounded up to whole samples as `retry_delay_s`).
    /// Counted from the first sample that sees the switch on, which comes up to one sample
    /// period after the switch closes: the detection delay of the plan covers that.
    pub blanking_s: f32,
    /// `N` of the `N`-of-`M` persistence filter.
    pub persistence_n: u8,
    /// `M` of the `N`-of-`M` persistence filter (`N ≤ M ≤ 32`).
    pub persistence_m: u8,
    /// Samples of an exactly constant reading with the switch on that count as a stuck
    /// sensor (0: off).
    pub stuck_samples: u16,
    /// The inverse-time element, if any.
    pub inverse: Option<InverseTime>,
    /// The thermal element, if any.
    pub thermal: Option<Thermal>,
    /// Timed retries before the latch.
    pub retries: u8,
    /// Delay before each retry, s (rounded up to whole samples).
    ///
    /// Times are rounded up to whole samples; a ratio within 1 ppm above a whole number of
    /// samples counts as that number (f32 rounding of the inputs).
    pub retry_delay_s: f32,
}

/// The raw values of a [`TripConfig`], for constants emitted by the host tool
/// ([`TripConfig::from_raw`], [`TripConfig::raw`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct TripRaw {
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
    /// `k` of the block of `K = 2^k` samples (clamped to [`BLOCK_LOG2_MAX`]).
    pub block_log2: u8,
    /// The inverse-time element ([`InverseTable::DISABLED`] for none).
    pub inverse_table: InverseTable,
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

/// Inverse-time part of the configuration.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct InverseTable {
    /// `2³²/pickup_counts`: `M` in Q16 is `reading · m_scale_q32 >> 16`. Zero disables.
    pub m_scale_q32: u32,
    /// `2³²·T_s/t(M)` at `M = 2^o·(1 + s/32)` for entry `32·o + s`.
    #[cfg_attr(feature = "serde", serde(with = "table_serde"))]
    pub rate_q32: [u32; INVERSE_TABLE_LEN],
    /// `2³²·T_s/(TD·t_r)` of an inverse reset below pickup; ignored if `instant_reset`.
    pub reset_q32: u32,
    /// Reset to zero at once below pickup (IEC curves).
    pub instant_reset: bool,
}

#[cfg(feature = "serde")]
mod table_serde {
    //! serde supports arrays up to 32 elements only; the table goes through a slice.
    use super::INVERSE_TABLE_LEN;
    use serde::{Deserialize, Deserializer, Serializer, de::Error};

    pub(super) fn serialize<S: Serializer>(
        t: &[u32; INVERSE_TABLE_LEN],
        s: S,
    ) -> Result<S::Ok, S::Error> {
        s.collect_seq(t.iter())
    }

    pub(super) fn deserialize<'de, D: Deserializer<'de>>(
        d: D,
    ) -> Result<[u32; INVERSE_TABLE_LEN], D::Error> {
        let v: heapless::Vec<u32, INVERSE_TABLE_LEN> = Deserialize::deserialize(d)?;
        v.into_array()
            .map_err(|_| D::Error::custom("inverse-time table of the wrong length"))
    }
}

/// Trip detector configuration (shared by channels with the same settings).
///
/// # Examples
///
/// ```
/// use lenz::kernel::{TripConfig, TripParams, TripState, Verdict, Cause};
/// use lenz::trip::{Curve, InverseTime};
/// // 1 kHz samples, 4 mA per count, IEC very inverse at 2.5 A, TMS 0.05.
/// let cfg = TripConfig::new(&TripParams {
///     sample_period_s: 1e-3,
///     amps_per_count: 4e-3,
///     instantaneous_counts: 4000,
///     full_scale_counts: 4095,
///     blanking_s: 0.0,
///     persistence_n: 1,
///     persistence_m: 1,
///     stuck_samples: 0,
///     inverse: Some(InverseTime::new(Curve::IecVeryInverse, 2.5, 0.05)?),
///     thermal: None,
///     retries: 0,
///     retry_delay_s: 0.0,
/// })?;
/// let mut s = TripState::new();
/// // 10 A = 2500 counts: the curve says 0.225 s, i.e. 225 samples; the kernel trips at the
/// // end of that block of 32 samples (the default block here), sample 256.
/// assert_eq!(cfg.block_samples(), 32);
/// let n = (1..1000)
///     .find(|_| matches!(cfg.update(&mut s, 2500, true), Verdict::Trip(_)))
///     .unwrap();
/// assert!((225..=225 + 32).contains(&n));
/// # Ok::<(), lenz::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
// Laid out as written: the fields of the fast path first, the two words adjacent (one
// load of both on Cortex-M3/M4F) and at small offsets (short loads on Cortex-M0).
#[repr(C)]
pub struct TripConfig {
    /// `stuck_limit − 1`: a count below it is short of the limit.
    stuck_fast: u32,
    /// `K − 1`: the block ends at a sample whose tick has these bits all set.
    block_mask: u32,
    /// The lower of the two: a reading at or above it is over.
    over_counts: u16,
    instantaneous_counts: u16,
    full_scale_counts: u16,
    blank_samples: u16,
    stuck_samples: u16,
    retry_samples: u16,
    /// `stuck_samples`, or above any count when 0 (off): one compare per sample.
    stuck_limit: u32,
    /// The last `M` bits of the persistence history.
    history_mask: u32,
    /// `N`, at least 1.
    persistence_n: u32,
    persistence_m: u8,
    retries: u8,
    /// `k` of the block of `K = 2^k` samples (at most [`BLOCK_LOG2_MAX`]).
    block_log2: u8,
    /// `x²` in Q24 is `(mean r²) · x2_mul >> x2_shift` (`2^(24+shift)/(k I_B in counts)²`).
    /// Zero disables the thermal element.
    x2_shift: u8,
    x2_mul: u32,
    /// `1 − b^K = 1 − exp(−K T_s/τ)` in Q32, below `2³¹`.
    thermal_step_q32: u32,
    /// Measured relative table error, parts per million.
    table_error_ppm: u32,
    inverse: InverseTable,
}

/// Per-channel trip detector state: 32 bytes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct TripState {
    tick: u32,
    history: u32,
    /// Bits 0..=20: the sum of the block's readings; bits 21..=22: phase (running, waiting,
    /// latched, blanking); bit 23: switch on
    /// at the previous sample; bits 24..=31: retries used. One word for the fast path.
    sum_ctl: u32,
    /// Sum of `r² >> 5` over the block.
    sum_sq: u32,
    inverse_q32: u32,
    theta_q24: u32,
    /// The last reading (bits 0..=15) and the low 16 bits of the tick at which the current
    /// run of equal readings with the switch on began (bits 16..=31): the stuck count is
    /// `tick − start` (mod 2¹⁶, held at 65535 once there), so a repeated reading stores
    /// nothing.
    sense: u32,
    /// Blanking samples left while blanking, retry delay left while waiting.
    timer: u16,
    /// θ below one Q24 LSB, Q16 of an LSB (error feedback).
    theta_frac: u16,
}

const SUM_MASK: u32 = (1 << 21) - 1;
const PHASE_MASK: u32 = 0b11 << 21;
const RUNNING: u32 = 0;
const WAITING: u32 = 1 << 21;
const LATCHED: u32 = 2 << 21;
const BLANKING: u32 = 3 << 21;
const PREV_ON: u32 = 1 << 23;
const RETRY_SHIFT: u32 = 24;

impl Default for TripState {
    fn default() -> Self {
        Self::new()
    }
}

impl TripState {
    /// A cold, untripped channel.
    #[must_use]
    pub const fn new() -> Self {
        Self {
            tick: 0,
            history: 0,
            sum_ctl: 0,
            sum_sq: 0,
            inverse_q32: 0,
            theta_q24: 0,
            // Last reading 0, run started at tick −1: a first reading of 0 counts one.
            sense: 0xFFFF_0000,
            timer: 0,
            theta_frac: 0,
        }
    }

    /// A channel whose winding starts at thermal state `theta_q24` (Q24, see
    /// [`theta_q24_from_f32`]), for example after a prior load.
    #[must_use]
    pub const fn with_theta_q24(theta_q24: u32) -> Self {
        let mut s = Self::new();
        s.theta_q24 = theta_q24;
        s
    }

    /// Thermal state, Q24 (`THETA_ONE_Q24` trips); updated at the end of each block.
    #[must_use]
    pub const fn theta_q24(&self) -> u32 {
        self.theta_q24
    }

    /// Inverse-time accumulator, Q32 fraction of one (trips when it would reach `2³²`);
    /// updated at the end of each block.
    #[must_use]
    pub const fn inverse_q32(&self) -> u32 {
        self.inverse_q32
    }

    /// Samples seen (wraps).
    #[must_use]
    pub const fn tick(&self) -> u32 {
        self.tick
    }

    /// Retries used since the last reset.
    #[must_use]
    pub const fn retries(&self) -> u8 {
        (self.sum_ctl >> RETRY_SHIFT) as u8
    }

    /// Latched off until reset.
    #[must_use]
    pub const fn is_latched(&self) -> bool {
        self.sum_ctl & PHASE_MASK == LATCHED
    }

    /// Off and waiting for a retry.
    #[must_use]
    pub const fn is_waiting(&self) -> bool {
        self.sum_ctl & PHASE_MASK == WAITING
    }

    /// Clears a latch or a pending retry and the retry count; the thermal state, the tick
    /// and the block sums are kept (the winding does not cool by a reset). For a cold channel
    /// start from [`TripState::new`].
    pub fn reset(&mut self) {
        let phase = self.sum_ctl & PHASE_MASK;
        if phase == WAITING || phase == LATCHED {
            // A pending retry ends; blanking in progress goes on.
            self.timer = 0;
            self.sum_ctl &= SUM_MASK | PREV_ON;
        } else {
            self.sum_ctl &= SUM_MASK | PREV_ON | PHASE_MASK;
        }
        self.history = 0;
        self.inverse_q32 = 0;
        // The stuck count restarts: the run begins at the last sample.
        self.sense = (self.sense & 0xFFFF) | (self.tick.wrapping_sub(1) << 16);
    }
}

/// Plan side: a thermal state to Q24 (rounded, saturating; NaN and negatives give 0).
#[must_use]
pub fn theta_q24_from_f32(theta: f32) -> u32 {
    libm::round(theta as f64 * f64::from(THETA_ONE_Q24)) as u32
}

/// `t_s` in whole samples, rounded up. A ratio within 1 ppm above a whole number counts as
/// that number: f32 inputs such as 3 µs / 0.5 µs come out a few 1e-8 above 6 and must not
/// add a whole sample.
fn samples_ceil(param: &'static str, t_s: f32, ts: f32) -> Result<u16, Error> {
    let t = non_negative(param, t_s)?;
    let n = libm::ceil(f64::from(t) / f64::from(ts) * (1.0 - 1e-6));
    in_range(param, n as f32, 0.0, f32::from(u16::MAX))?;
    Ok(n as u16)
}

/// `2³²/counts` for a scale, with `counts` at least 2 so that it fits a `u32`.
fn recip_q32(param: &'static str, counts: f32) -> Result<u32, Error> {
    in_range(param, counts, 2.0, 65_535.0)?;
    Ok(libm::round(INVERSE_ONE as f64 / f64::from(counts)) as u32)
}

/// `(2^(24+shift)/counts², shift)` with the multiplier in `2³¹ ..= 2³²−1` (full precision),
/// for `counts` of at least 2.
fn x2_scale(param: &'static str, counts: f32) -> Result<(u32, u8), Error> {
    in_range(param, counts, 2.0, 65_535.0)?;
    let c2 = f64::from(counts) * f64::from(counts);
    let mut shift = 0u8;
    while shift < 63 && libm::ldexp(1.0, 24 + i32::from(shift)) / c2 < 2_147_483_648.0 {
        shift += 1;
    }
    let mul = libm::round(libm::ldexp(1.0, 24 + i32::from(shift)) / c2);
    Ok((mul.min(f64::from(u32::MAX)) as u32, shift))
}

/// The multiple of pickup at table entry `idx`.
fn table_m(idx: usize) -> f64 {
    let octave = (idx / INVERSE_TABLE_STEPS) as i32;
    let step = (idx % INVERSE_TABLE_STEPS) as f64;
    libm::pow(2.0, f64::from(octave)) * (1.0 + step / INVERSE_TABLE_STEPS as f64)
}

/// f64 trip time of an element at multiple `m` (for the table and its error).
fn curve_time_f64(el: &InverseTime, m: f64) -> Option<f64> {
    if m.is_nan() || m <= 1.0 {
        return None;
    }
    let c = el.curve().constants();
    let denom = libm::expm1(f64::from(c.alpha) * libm::log(m));
    let t = f64::from(el.multiplier()) * (f64::from(c.k_s) / denom + f64::from(c.c_s));
    Some(t.max(f64::from(el.definite_min_s())))
}

fn rate_to_q32(ts: f64, t: Option<f64>) -> u32 {
    match t {
        Some(t) if t > 0.0 => {
            let r = libm::round(ts / t * INVERSE_ONE as f64);
            if r >= f64::from(u32::MAX) {
                u32::MAX
            } else {
                r as u32
            }
        }
        _ => 0,
    }
}

/// The default block (module docs, *Blocks*): the largest `k ≤ BLOCK_LOG2_MAX` with `K·T_s`
/// at most the shortest inverse-time trip time below the instantaneous threshold (at the
/// lower of that threshold and [`INVERSE_M_MAX`]) and at most `τ/`[`BLOCK_TAU_FRACTION`] of
/// the thermal element.
fn default_block_log2(p: &TripParams) -> u8 {
    let ts = f64::from(p.sample_period_s);
    let mut limit_s = f64::INFINITY;
    if let Some(el) = &p.inverse {
        let pickup = f64::from(el.pickup_a()) / f64::from(p.amps_per_count);
        let m_inst = f64::from(p.instantaneous_counts.min(p.full_scale_counts)) / pickup;
        let m = m_inst.min(f64::from(INVERSE_M_MAX));
        if let Some(t) = curve_time_f64(el, m) {
            limit_s = limit_s.min(t);
        }
    }
    if let Some(th) = &p.thermal {
        limit_s = limit_s.min(f64::from(th.time_constant_s()) / BLOCK_TAU_FRACTION);
    }
    let mut k = BLOCK_LOG2_MAX;
    while k > 0 && f64::from(1u32 << k) * ts > limit_s {
        k -= 1;
    }
    k
}

impl InverseTable {
    /// A disabled inverse-time element.
    pub const DISABLED: InverseTable = InverseTable {
        m_scale_q32: 0,
        rate_q32: [0; INVERSE_TABLE_LEN],
        reset_q32: 0,
        instant_reset: true,
    };

    fn new(el: &InverseTime, sample_period_s: f32, amps_per_count: f32) -> Result<Self, Error> {
        let pickup_counts = el.pickup_a() / amps_per_count;
        let m_scale_q32 = recip_q32("pickup_a", pickup_counts)?;
        let ts = f64::from(sample_period_s);
        let mut rate_q32 = [0u32; INVERSE_TABLE_LEN];
        for (idx, r) in rate_q32.iter_mut().enumerate() {
            *r = rate_to_q32(ts, curve_time_f64(el, table_m(idx)));
        }
        let c = el.curve().constants();
        let (reset_q32, instant_reset) = match c.reset_s {
            Some(tr) => (
                rate_to_q32(ts, Some(f64::from(el.multiplier()) * f64::from(tr))),
                false,
            ),
            None => (0, true),
        };
        Ok(Self {
            m_scale_q32,
            rate_q32,
            reset_q32,
            instant_reset,
        })
    }

    /// `M` in Q16 of a reading (saturating).
    #[inline]
    fn m_q16(&self, reading: u16) -> u32 {
        scale_q16(reading, self.m_scale_q32)
    }

    /// `M` in Q16 of the block whose readings sum to `sum` over `2^k` samples (saturating):
    /// `sum · m_scale >> (16 + k)`, the same as [`InverseTable::m_q16`] of a constant reading.
    #[inline]
    fn m_q16_of_sum(&self, sum: u32, k: u32) -> u32 {
        let m = (u64::from(sum) * u64::from(self.m_scale_q32)) >> (16 + k);
        if m > u64::from(u32::MAX) {
            u32::MAX
        } else {
            m as u32
        }
    }

    /// The increment `2³²·T_s/t(M)` of a reading at or above pickup, `None` below pickup.
    #[inline]
    fn increment(&self, reading: u16) -> Option<u32> {
        self.increment_m(self.m_q16(reading))
    }

    /// The increment `2³²·T_s/t(M)` at the multiple `m` (Q16), `None` below one.
    #[inline]
    fn increment_m(&self, m: u32) -> Option<u32> {
        if m < Q16 {
            return None;
        }
        let msb = table_msb(m); // 16 ..= 31
        let octave = (msb - 16) as usize;
        if octave >= INVERSE_TABLE_OCTAVES {
            return Some(
                self.rate_q32
                    .get(INVERSE_TABLE_LEN - 1)
                    .copied()
                    .unwrap_or(u32::MAX),
            );
        }
        let rem = m - (1 << msb);
        let shift = msb - 5; // 11 ..= 15 here
        let step = (rem >> shift) as usize;
        let frac_q16 = (rem & ((1 << shift) - 1)) << (16 - shift);
        let idx = octave * INVERSE_TABLE_STEPS + step;
        let a = self.rate_q32.get(idx).copied().unwrap_or(u32::MAX);
        let b = self.rate_q32.get(idx + 1).copied().unwrap_or(a);
        let d = i64::from(b) - i64::from(a);
        // frac_q16 < 2¹⁶, so |d·frac| < 2⁴⁸.
        let v = i64::from(a) + ((mul_i64_i32(d, frac_q16 as i32) + (1 << 15)) >> 16);
        Some(if v < 0 {
            0
        } else if v > i64::from(u32::MAX) {
            u32::MAX
        } else {
            v as u32
        })
    }
}

impl TripConfig {
    /// Coefficients from a plan (module docs), with the default block
    /// ([`TripConfig::with_block_log2`] for a chosen one).
    ///
    /// # Errors
    ///
    /// `sample_period_s` or `amps_per_count` not positive; `persistence_n`/`persistence_m`
    /// not `1 ≤ N ≤ M ≤ 32`; blanking or retry delay above 65535 samples; a pickup or trip
    /// level of less than 2 counts (`pickup_a`, `base_current_a`); a thermal step
    /// `T_s/τ` outside `1e-9 ..= 0.5` (`sample_period_s`); an inverse-time table whose
    /// measured error exceeds [`INVERSE_TABLE_ERROR_MAX`] ([`Error::Unreachable`],
    /// `param = "sample_period_s"`: a pickup of too few counts or a sampling period too long
    /// for the fastest trip times).
    pub fn new(p: &TripParams) -> Result<Self, Error> {
        Self::with_block_log2(p, default_block_log2(p))
    }

    /// [`TripConfig::new`] with blocks of `2^block_log2` samples (module docs, *Blocks*):
    /// `0` updates the inverse-time and thermal elements every sample.
    ///
    /// # Errors
    ///
    /// Those of [`TripConfig::new`]; `block_log2` above [`BLOCK_LOG2_MAX`]; with a thermal
    /// element, a block `K·T_s/τ` above 0.5 (`block_log2`).
    pub fn with_block_log2(p: &TripParams, block_log2: u8) -> Result<Self, Error> {
        let ts = positive("sample_period_s", p.sample_period_s)?;
        in_range("sample_period_s", ts, 1.0e-9, 1.0e3)?;
        let apc = positive("amps_per_count", p.amps_per_count)?;
        in_range("amps_per_count", apc, 1.0e-12, 1.0e6)?;
        in_range("persistence_m", f32::from(p.persistence_m), 1.0, 32.0)?;
        in_range(
            "persistence_n",
            f32::from(p.persistence_n),
            1.0,
            f32::from(p.persistence_m),
        )?;
        in_range(
            "block_log2",
            f32::from(block_log2),
            0.0,
            f32::from(BLOCK_LOG2_MAX),
        )?;
        let blank_samples = samples_ceil("blanking_s", p.blanking_s, ts)?;
        let retry_samples = samples_ceil("retry_delay_s", p.retry_delay_s, ts)?;
        let (inverse, table_error_ppm) = match &p.inverse {
            Some(el) => {
                let table = InverseTable::new(el, ts, apc)?;
                let err = measure_table_error(&table, el, ts, apc);
                if err.is_nan() || err > f64::from(INVERSE_TABLE_ERROR_MAX) {
                    return Err(Error::Unreachable {
                        param: "sample_period_s",
                        target: err as f32,
                        limit: INVERSE_TABLE_ERROR_MAX,
                    });
                }
                (table, libm::ceil(err * 1e6) as u32)
            }
            None => (InverseTable::DISABLED, 0),
        };
        let (x2_mul, x2_shift, thermal_step_q32) = match &p.thermal {
            Some(th) => {
                let (mul, shift) = x2_scale("base_current_a", th.trip_level_a() / apc)?;
                let ratio = in_range("sample_period_s", ts / th.time_constant_s(), 1.0e-9, 0.5)?;
                let block = f64::from(ratio) * f64::from(1u32 << block_log2);
                if block > 0.5 {
                    return Err(Error::OutOfRange {
                        param: "block_log2",
                        value: f32::from(block_log2),
                        min: 0.0,
                        max: libm::floor(libm::log2(0.5 / f64::from(ratio))).max(0.0) as f32,
                    });
                }
                let c = -libm::expm1(-block);
                (mul, shift, libm::round(c * INVERSE_ONE as f64) as u32)
            }
            None => (0, 0, 0),
        };
        Ok(Self::from_raw(TripRaw {
            instantaneous_counts: p.instantaneous_counts,
            full_scale_counts: p.full_scale_counts,
            blank_samples,
            persistence_n: p.persistence_n,
            persistence_m: p.persistence_m,
            stuck_samples: p.stuck_samples,
            retries: p.retries,
            retry_samples,
            block_log2,
            inverse_table: inverse,
            x2_mul,
            x2_shift,
            thermal_step_q32,
            table_error_ppm,
        }))
    }

    /// Coefficients from raw values (for constants emitted by the host tool). The caller is
    /// responsible for their meaning; the per-sample update cannot overflow or panic on any
    /// values (out-of-range persistence is clamped to `1 ..= 32`, the block to at most
    /// [`BLOCK_LOG2_MAX`]).
    #[must_use]
    pub const fn from_raw(raw: TripRaw) -> Self {
        let TripRaw {
            instantaneous_counts,
            full_scale_counts,
            blank_samples,
            persistence_n,
            persistence_m,
            stuck_samples,
            retries,
            retry_samples,
            block_log2,
            inverse_table,
            x2_mul,
            x2_shift,
            thermal_step_q32,
            table_error_ppm,
        } = raw;
        let m = if persistence_m == 0 {
            1
        } else if persistence_m > 32 {
            32
        } else {
            persistence_m as u32
        };
        let block_log2 = if block_log2 > BLOCK_LOG2_MAX {
            BLOCK_LOG2_MAX
        } else {
            block_log2
        };
        Self {
            instantaneous_counts,
            full_scale_counts,
            over_counts: if instantaneous_counts < full_scale_counts {
                instantaneous_counts
            } else {
                full_scale_counts
            },
            blank_samples,
            stuck_samples,
            retry_samples,
            stuck_limit: if stuck_samples == 0 {
                1 << 16
            } else {
                stuck_samples as u32
            },
            stuck_fast: if stuck_samples == 0 {
                0xFFFF
            } else {
                stuck_samples as u32 - 1
            },
            history_mask: if m == 32 { u32::MAX } else { (1u32 << m) - 1 },
            persistence_n: if persistence_n == 0 {
                1
            } else {
                persistence_n as u32
            },
            persistence_m,
            retries,
            block_log2,
            block_mask: (1u32 << block_log2) - 1,
            inverse: inverse_table,
            x2_mul,
            x2_shift,
            thermal_step_q32,
            table_error_ppm,
        }
    }

    /// The raw values: `TripConfig::from_raw(cfg.raw()) == cfg`.
    #[must_use]
    pub const fn raw(&self) -> TripRaw {
        TripRaw {
            instantaneous_counts: self.instantaneous_counts,
            full_scale_counts: self.full_scale_counts,
            blank_samples: self.blank_samples,
            persistence_n: self.persistence_n as u8,
            persistence_m: self.persistence_m,
            stuck_samples: self.stuck_samples,
            retries: self.retries,
            retry_samples: self.retry_samples,
            block_log2: self.block_log2,
            inverse_table: self.inverse,
            x2_mul: self.x2_mul,
            x2_shift: self.x2_shift,
            thermal_step_q32: self.thermal_step_q32,
            table_error_ppm: self.table_error_ppm,
        }
    }

    /// Instantaneous threshold, counts.
    #[must_use]
    pub const fn instantaneous_counts(&self) -> u16 {
        self.instantaneous_counts
    }

    /// Readings at or above this count as over (a saturated ADC), counts.
    #[must_use]
    pub const fn full_scale_counts(&self) -> u16 {
        self.full_scale_counts
    }

    /// `N` of the `N`-of-`M` persistence filter (at least 1).
    #[must_use]
    pub const fn persistence_n(&self) -> u8 {
        self.persistence_n as u8
    }

    /// `M` of the `N`-of-`M` persistence filter, as given (the history uses `1 ..= 32`).
    #[must_use]
    pub const fn persistence_m(&self) -> u8 {
        self.persistence_m
    }

    /// Samples of an exactly constant reading with the switch on that count as a stuck
    /// sensor (0: off).
    #[must_use]
    pub const fn stuck_samples(&self) -> u16 {
        self.stuck_samples
    }

    /// Timed retries before the latch.
    #[must_use]
    pub const fn retries(&self) -> u8 {
        self.retries
    }

    /// The inverse-time table.
    /// The inverse-time table.
    #[must_use]
    pub const fn inverse_table(&self) -> &InverseTable {
        &self.inverse
    }

    /// Blanking after switch-on, samples.
    #[must_use]
    pub const fn blank_samples(&self) -> u16 {
        self.blank_samples
    }

    /// Retry delay, samples.
    #[must_use]
    pub const fn retry_samples(&self) -> u16 {
        self.retry_samples
    }

    /// `k` of the block of `K = 2^k` samples over which the inverse-time and thermal
    /// elements are updated (module docs, *Blocks*).
    #[must_use]
    pub const fn block_log2(&self) -> u8 {
        self.block_log2
    }

    /// Samples per block, `K = 2^k`.
    #[must_use]
    pub const fn block_samples(&self) -> u32 {
        1 << self.block_log2
    }

    /// Thermal step of one block, `1 − exp(−K·T_s/τ)` in Q32.
    #[must_use]
    pub const fn thermal_step_q32(&self) -> u32 {
        self.thermal_step_q32
    }

    /// Thermal input scale: `x²` in Q24 is `mean r² · x2_mul >> x2_shift` (zero: no thermal
    /// element).
    #[must_use]
    pub const fn x2_mul(&self) -> u32 {
        self.x2_mul
    }

    /// Thermal input shift (see [`TripConfig::x2_mul`]).
    #[must_use]
    pub const fn x2_shift(&self) -> u8 {
        self.x2_shift
    }

    /// Largest relative error of the inverse-time increment over the documented range of
    /// multiples as measured by [`TripConfig::new`], parts per million, rounded up (0 when
    /// not measured or without an inverse-time element).
    #[must_use]
    pub const fn table_error_ppm(&self) -> u32 {
        self.table_error_ppm
    }

    /// Largest relative error of the inverse-time increment over the documented range of
    /// multiples, as measured by [`TripConfig::new`] (0 when not measured or without an
    /// inverse-time element).
    #[must_use]
    pub fn inverse_table_error(&self) -> f32 {
        self.table_error_ppm as f32 * 1e-6
    }

    /// The inverse-time increment of a reading, Q32 per sample (`None` below pickup or
    /// disabled). The same lookup the block update uses for the block's mean reading;
    /// exposed for checks.
    #[must_use]
    pub fn inverse_increment_q32(&self, reading: u16) -> Option<u32> {
        if self.inverse.m_scale_q32 == 0 {
            return None;
        }
        self.inverse.increment(reading)
    }

    /// `k`, at most [`BLOCK_LOG2_MAX`] whatever the field holds.
    #[inline(always)]
    fn k(&self) -> u32 {
        let k = u32::from(self.block_log2);
        if k > BLOCK_LOG2_MAX as u32 {
            BLOCK_LOG2_MAX as u32
        } else {
            k
        }
    }

    /// The end of a block (`tick + 1` a multiple of `K`): both accumulators over the
    /// block from its sums, which restart; the cause if one trips. Not inlined: one copy
    /// for its three callers, called once per block.
    #[inline(never)]
    fn block(&self, s: &mut TripState, ctl: u32) -> Option<Cause> {
        let k = self.k();
        // Σ(r² >> 5) over 2^k samples, times 2^(5−k): the mean square, less the truncation,
        // whose mean over noisy readings (16 of r² >> 5's units) is added back.
        let mean_sq = (u64::from(s.sum_sq) << (BLOCK_LOG2_MAX as u32 - k)) + 16;
        let mean_sq = if mean_sq > u64::from(u32::MAX) {
            u32::MAX
        } else {
            mean_sq as u32
        };
        s.sum_sq = 0;
        let inverse = self.inverse_block(s, ctl & SUM_MASK, k);
        let hot = self.thermal_block(s, mean_sq);
        if inverse {
            Some(Cause::InverseTime)
        } else if hot {
            Some(Cause::Thermal)
        } else {
            None
        }
    }

    /// A sample that ends a block and trips nothing else.
    #[cold]
    #[inline(never)]
    fn block_end(&self, s: &mut TripState, ctl: u32, tick: u32, reading_counts: u16) -> Verdict {
        let cause = self.block(s, ctl);
        let ctl = ctl & !SUM_MASK;
        match cause {
            Some(c) => self.trip(s, ctl, tick, reading_counts, c),
            None => {
                s.sum_ctl = ctl;
                Verdict::Allow
            }
        }
    }

    /// One thermal update over a block of mean square reading `mean_sq`; `true` when θ is at
    /// or above one.
    #[inline(always)]
    fn thermal_block(&self, s: &mut TripState, mean_sq: u32) -> bool {
        if self.x2_mul == 0 {
            return false;
        }
        let x2 = (u64::from(mean_sq) * u64::from(self.x2_mul)) >> (self.x2_shift & 63);
        let x2_q24 = if x2 > u64::from(u32::MAX) {
            i64::from(u32::MAX)
        } else {
            x2 as i64
        };
        // |diff| < 2³² and the step < 2³¹: the product fits an i64.
        let diff = x2_q24 - i64::from(s.theta_q24);
        let step = i64::from(self.thermal_step_q32 & 0x7FFF_FFFF);
        // θ with its 16 fraction bits (Q40) plus the step (Q56 → Q40, floored).
        let theta =
            ((i64::from(s.theta_q24) << 16) | i64::from(s.theta_frac)) + ((diff * step) >> 16);
        if theta < 0 {
            s.theta_q24 = 0;
            s.theta_frac = 0;
        } else if theta >= i64::from(u32::MAX) << 16 {
            s.theta_q24 = u32::MAX;
            s.theta_frac = 0;
        } else {
            s.theta_q24 = (theta >> 16) as u32;
            s.theta_frac = theta as u16;
        }
        s.theta_q24 >= THETA_ONE_Q24
    }

    /// One inverse-time update over a block whose readings sum to `sum`; `true` when the
    /// accumulator reaches one.
    #[inline(always)]
    fn inverse_block(&self, s: &mut TripState, sum: u32, k: u32) -> bool {
        let t = &self.inverse;
        if t.m_scale_q32 == 0 {
            return false;
        }
        let m = t.m_q16_of_sum(sum, k);
        match t.increment_m(m) {
            Some(inc) => {
                let total = u64::from(s.inverse_q32) + (u64::from(inc) << k);
                if total >= INVERSE_ONE || inc == u32::MAX {
                    s.inverse_q32 = 0;
                    true
                } else {
                    s.inverse_q32 = total as u32;
                    false
                }
            }
            None if t.instant_reset => {
                s.inverse_q32 = 0;
                false
            }
            None => {
                // Run back by K·T_s(1 − M²)/(TD t_r), M < 1 here (Q16 below 2¹⁶).
                let one_minus_m2 = Q16.saturating_sub((m * m) >> 16);
                let dec = ((u64::from(t.reset_q32) * u64::from(one_minus_m2)) >> 16) << k;
                s.inverse_q32 = if dec >= u64::from(s.inverse_q32) {
                    0
                } else {
                    s.inverse_q32 - dec as u32
                };
                false
            }
        }
    }

    /// Processes one sample.
    ///
    /// # Arguments
    ///
    /// - `reading_counts`: the ADC reading of this sample (zero current at 0).
    /// - `switch_on`: the switch state the firmware commands for this sample; a rising edge
    ///   starts the blanking time.
    ///
    /// # Returns
    ///
    /// The [`Verdict`]: the switch may stay on only on [`Verdict::Allow`].
    #[inline]
    pub fn update(&self, s: &mut TripState, reading_counts: u16, switch_on: bool) -> Verdict {
        let r = u32::from(reading_counts);
        let tick = s.tick;
        let next = tick.wrapping_add(1);
        s.tick = next;
        // The block sums: Σr in the low bits of the control word (2⁵ readings < 2²¹) and
        // Σ(r² >> 5) (r² < 2³², so 2⁵ terms fit). Wrapping only on a corrupted state.
        let ctl = s.sum_ctl.wrapping_add(r);
        s.sum_ctl = ctl;
        s.sum_sq = s.sum_sq.wrapping_add((r * r) >> BLOCK_LOG2_MAX);
        // Stuck sensor: the same reading again with the switch on continues the run (its
        // count `tick − start` is then 1 ..= limit − 1 on the fast path: not wrapped, not at
        // the limit); any other reading starts a new one.
        let sense = s.sense;
        let same = switch_on && sense & 0xFFFF == r;
        let stuck_ok =
            !same || (tick.wrapping_sub(sense >> 16) & 0xFFFF).wrapping_sub(1) < self.stuck_fast;
        // The common case, one test each: running (not blanking) with the switch as at the
        // last sample, nothing over and no over bit in the history, the stuck count short of
        // its limit, and not the end of a block. Everything else takes the full path.
        if (ctl >> 21) & 0b111 == u32::from(switch_on) << 2
            && reading_counts < self.over_counts
            && s.history == 0
            && stuck_ok
            && next & self.block_mask != 0
        {
            if !same {
                s.sense = r | (tick << 16);
            }
            return Verdict::Allow;
        }
        self.full(s, r | (u32::from(switch_on) << 16))
    }

    /// Everything of a sample after the tick and the block sums; `x` is the reading
    /// (bits 0..=15) and the switch state (bit 16).
    #[cold]
    #[inline(never)]
    fn full(&self, s: &mut TripState, x: u32) -> Verdict {
        let reading_counts = x as u16;
        let r = x & 0xFFFF;
        let switch_on = x >> 16 != 0;
        let tick = s.tick.wrapping_sub(1);
        let mut ctl = s.sum_ctl;
        let sense = s.sense;
        let stuck = if switch_on && sense & 0xFFFF == r {
            let count = tick.wrapping_sub(sense >> 16) & 0xFFFF;
            if count == 0 {
                // 65536 in a row: hold the count at 65535 (the run starts one tick later).
                s.sense = r | (tick.wrapping_sub(0xFFFF) << 16);
                0xFFFF
            } else {
                count
            }
        } else {
            s.sense = r | (tick << 16);
            0
        };
        let mut phase = ctl & PHASE_MASK;
        if phase == WAITING || phase == LATCHED {
            return self.held(s, ctl, tick);
        }
        if switch_on {
            if ctl & PREV_ON == 0 {
                // Rising edge: blanking starts.
                ctl |= PREV_ON;
                s.timer = self.blank_samples;
                if self.blank_samples != 0 {
                    phase = BLANKING;
                }
            }
        } else {
            ctl &= !PREV_ON;
        }
        let mut over = false;
        if phase == BLANKING {
            let left = s.timer.saturating_sub(1);
            s.timer = left;
            if left == 0 {
                phase = RUNNING;
            }
        } else {
            over = reading_counts >= self.over_counts;
        }
        ctl = (ctl & !PHASE_MASK) | phase;
        let history = ((s.history << 1) | u32::from(over)) & self.history_mask;
        s.history = history;

        let cause = if stuck >= self.stuck_limit {
            Cause::SensorFault
        } else if over && history.count_ones() >= self.persistence_n {
            Cause::Instantaneous
        } else if tick.wrapping_add(1) & self.block_mask == 0 {
            return self.block_end(s, ctl, tick, reading_counts);
        } else {
            s.sum_ctl = ctl;
            return Verdict::Allow;
        };
        self.fault(s, ctl, tick, reading_counts, cause)
    }

    /// A sample while waiting for a retry or latched. The switch is held off here whatever
    /// the firmware commands, so the first sample on after a retry is a switch-on and starts
    /// the blanking time. The accumulators go on (the winding cools).
    #[cold]
    #[inline(never)]
    fn held(&self, s: &mut TripState, ctl: u32, tick: u32) -> Verdict {
        let mut ctl = ctl & !PREV_ON;
        if tick.wrapping_add(1) & self.block_mask == 0 {
            let _ = self.block(s, ctl);
            ctl &= !SUM_MASK;
        }
        if ctl & PHASE_MASK == WAITING {
            let left = s.timer.saturating_sub(1);
            s.timer = left;
            if left == 0 && s.theta_q24 < THETA_ONE_Q24 {
                let retries = (ctl >> RETRY_SHIFT).saturating_add(1).min(0xFF);
                s.sum_ctl = (ctl & (SUM_MASK | PREV_ON)) | (retries << RETRY_SHIFT);
                return Verdict::Allow;
            }
            s.sum_ctl = ctl;
            return Verdict::Waiting;
        }
        s.sum_ctl = ctl;
        Verdict::Latched
    }

    /// A sensor-fault or instantaneous trip at this sample. A block that ends here is
    /// accounted first (its own trip, if any, is the lesser cause).
    #[cold]
    #[inline(never)]
    fn fault(
        &self,
        s: &mut TripState,
        ctl: u32,
        tick: u32,
        reading_counts: u16,
        cause: Cause,
    ) -> Verdict {
        let mut ctl = ctl;
        if tick.wrapping_add(1) & self.block_mask == 0 {
            let _ = self.block(s, ctl);
            ctl &= !SUM_MASK;
        }
        self.trip(s, ctl, tick, reading_counts, cause)
    }

    /// A trip at this sample: the event, and the phase that follows.
    #[inline(never)]
    fn trip(
        &self,
        s: &mut TripState,
        ctl: u32,
        tick: u32,
        reading_counts: u16,
        cause: Cause,
    ) -> Verdict {
        let retry = (ctl >> RETRY_SHIFT) as u8;
        s.history = 0;
        let phase = if cause == Cause::SensorFault || retry >= self.retries {
            LATCHED
        } else {
            s.timer = self.retry_samples;
            WAITING
        };
        s.sum_ctl = (ctl & !PHASE_MASK) | phase;
        Verdict::Trip(TripEvent {
            tick,
            reading_counts,
            retry,
            cause,
        })
    }

    /// [`TripConfig::update`], recording a trip in `log`.
    #[inline]
    pub fn update_logged<const N: usize>(
        &self,
        s: &mut TripState,
        log: &mut TripLog<N>,
        reading_counts: u16,
        switch_on: bool,
    ) -> Verdict {
        let v = self.update(s, reading_counts, switch_on);
        if let Verdict::Trip(e) = v {
            log.record(e);
        }
        v
    }
}

/// Largest relative error of the increment over the documented range (every reading).
fn measure_table_error(t: &InverseTable, el: &InverseTime, ts: f32, apc: f32) -> f64 {
    let pickup = f64::from(el.pickup_a()) / f64::from(apc);
    let lo = libm::ceil(pickup * f64::from(INVERSE_M_MIN));
    let hi = libm::floor(pickup * f64::from(INVERSE_M_MAX)).min(65_535.0);
    let mut worst = 0.0f64;
    let mut r = lo;
    while r <= hi {
        let reading = r as u16;
        let m = f64::from(reading) / pickup;
        let want =
            f64::from(ts) / curve_time_f64(el, m).unwrap_or(f64::INFINITY) * INVERSE_ONE as f64;
        let got = f64::from(t.increment(reading).unwrap_or(0));
        if want > 0.0 {
            let e = (got / want - 1.0).abs();
            if e > worst || e.is_nan() {
                worst = if e.is_nan() { f64::INFINITY } else { e };
            }
        }
        r += 1.0;
    }
    worst
}

/// Fixed-capacity log of the last `N` trips (oldest overwritten first), for diagnostics.
///
/// Size: `8·N` bytes of events plus the ring's write index and full flag.
///
/// # Examples
///
/// ```
/// use lenz::kernel::{Cause, TripEvent, TripLog};
/// let mut log = TripLog::<4>::new();
/// for tick in 0..6 {
///     log.record(TripEvent { tick, reading_counts: 4095, retry: 0, cause: Cause::Instantaneous });
/// }
/// assert_eq!(log.len(), 4);
/// assert_eq!(log.latest().map(|e| e.tick), Some(5));
/// assert_eq!(log.iter().next().map(|e| e.tick), Some(2));
/// ```
#[derive(Debug, Clone, PartialEq)]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct TripLog<const N: usize> {
    events: HistoryBuf<TripEvent, N>,
}

impl<const N: usize> Eq for TripLog<N> {}

impl<const N: usize> Default for TripLog<N> {
    fn default() -> Self {
        Self::new()
    }
}

impl<const N: usize> TripLog<N> {
    /// An empty log (`N > 0`, checked at compile time).
    #[must_use]
    pub const fn new() -> Self {
        Self {
            events: HistoryBuf::new(),
        }
    }

    /// Appends `event`, dropping the oldest when full.
    pub fn record(&mut self, event: TripEvent) {
        self.events.write(event);
    }

    /// The most recent trip.
    #[must_use]
    pub fn latest(&self) -> Option<&TripEvent> {
        self.events.recent()
    }

    /// The trips, oldest first.
    pub fn iter(&self) -> impl Iterator<Item = &TripEvent> {
        self.events.oldest_ordered()
    }

    /// Number of trips held.
    #[must_use]
    pub fn len(&self) -> usize {
        self.events.len()
    }

    /// No trip held.
    #[must_use]
    pub fn is_empty(&self) -> bool {
        self.events.is_empty()
    }

    /// Forgets every trip.
    pub fn clear(&mut self) {
        self.events.clear();
    }
}

#[cfg(feature = "defmt")]
impl<const N: usize> defmt::Format for TripLog<N> {
    fn format(&self, f: defmt::Formatter) {
        defmt::write!(f, "TripLog {{ len: {}, events: [", self.len());
        for e in self.iter() {
            defmt::write!(f, "{}, ", e);
        }
        defmt::write!(f, "] }}");
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::trip::Curve;
    use proptest::prelude::*;
    use std::vec::Vec;

    fn params() -> TripParams {
        TripParams {
            sample_period_s: 1e-3,
            amps_per_count: 4e-3,
            instantaneous_counts: 3000,
            full_scale_counts: 4095,
            blanking_s: 0.0,
            persistence_n: 1,
            persistence_m: 1,
            stuck_samples: 0,
            inverse: None,
            thermal: None,
            retries: 0,
            retry_delay_s: 0.0,
        }
    }

    fn samples_to_trip(cfg: &TripConfig, reading: u16, limit: u32) -> Option<u32> {
        let mut s = TripState::new();
        (1..=limit).find(|_| matches!(cfg.update(&mut s, reading, true), Verdict::Trip(_)))
    }

    #[test]
    fn state_fits_32_bytes_and_event_8() {
        assert!(core::mem::size_of::<TripState>() <= 32);
        assert_eq!(core::mem::size_of::<TripEvent>(), 8);
    }

    /// The raw values carry every field (the measured table error included), and the getters
    /// read them.
    #[test]
    fn raw_round_trip() {
        let mut p = params();
        p.blanking_s = 3e-3;
        p.persistence_n = 2;
        p.persistence_m = 3;
        p.stuck_samples = 40;
        p.retries = 2;
        p.retry_delay_s = 20e-3;
        p.inverse = Some(InverseTime::new(Curve::IeeeVeryInverse, 2.0, 0.05).unwrap());
        p.thermal = Some(Thermal::new(0.5, 1.05, 2.5).unwrap());
        let cfg = TripConfig::new(&p).unwrap();
        assert_eq!(TripConfig::from_raw(cfg.raw()), cfg);
        let r = cfg.raw();
        assert!(r.table_error_ppm > 0 && r.x2_mul > 0 && r.thermal_step_q32 > 0);
        assert_eq!(
            (
                cfg.instantaneous_counts(),
                cfg.full_scale_counts(),
                cfg.blank_samples(),
                cfg.persistence_n(),
                cfg.persistence_m(),
                cfg.stuck_samples(),
                cfg.retries(),
                cfg.retry_samples()
            ),
            (3000, 4095, 3, 2, 3, 40, 2, 20)
        );
        assert_eq!(
            (cfg.x2_mul(), cfg.x2_shift(), cfg.table_error_ppm()),
            (r.x2_mul, r.x2_shift, r.table_error_ppm)
        );
    }

    #[test]
    fn n_of_m_blanking_retry_and_latch() {
        let mut p = params();
        p.persistence_n = 2;
        p.persistence_m = 3;
        p.blanking_s = 3e-3;
        p.retries = 2;
        p.retry_delay_s = 5e-3;
        let cfg = TripConfig::new(&p).unwrap();
        let mut s = TripState::new();
        let mut log = TripLog::<2>::new();
        // Blanked: three samples over the threshold after switch-on do nothing.
        for _ in 0..3 {
            assert_eq!(
                cfg.update_logged(&mut s, &mut log, 3500, true),
                Verdict::Allow
            );
        }
        // Over, not over, over: 2 of 3 trips at the third.
        assert_eq!(cfg.update(&mut s, 3500, true), Verdict::Allow);
        assert_eq!(cfg.update(&mut s, 100, true), Verdict::Allow);
        let v = cfg.update_logged(&mut s, &mut log, 3500, true);
        assert!(matches!(
            v,
            Verdict::Trip(TripEvent {
                cause: Cause::Instantaneous,
                retry: 0,
                tick: 5,
                ..
            })
        ));
        // Waits five samples, then allows again.
        for _ in 0..4 {
            assert_eq!(cfg.update(&mut s, 0, false), Verdict::Waiting);
        }
        assert_eq!(cfg.update(&mut s, 0, false), Verdict::Allow);
        assert_eq!(s.retries(), 1);
        // Two more trips: the second retry, then the latch.
        let mut trips = 0;
        for _ in 0..200 {
            match cfg.update_logged(&mut s, &mut log, 4095, true) {
                Verdict::Trip(_) => trips += 1,
                Verdict::Latched => break,
                _ => {}
            }
        }
        assert_eq!(trips, 2);
        assert!(s.is_latched());
        assert_eq!(log.len(), 2);
        assert_eq!(log.latest().map(|e| e.retry), Some(2));
        s.reset();
        assert_eq!(cfg.update(&mut s, 0, false), Verdict::Allow);
    }

    #[test]
    fn full_scale_and_stuck_count_as_faults() {
        let mut p = params();
        p.instantaneous_counts = u16::MAX;
        p.stuck_samples = 10;
        let cfg = TripConfig::new(&p).unwrap();
        assert_eq!(samples_to_trip(&cfg, 4095, 5), Some(1));
        assert_eq!(samples_to_trip(&cfg, 0xFFFF, 5), Some(1));
        let mut s = TripState::new();
        let mut got = None;
        for k in 0..20u32 {
            if let Verdict::Trip(e) = cfg.update(&mut s, 1234, true) {
                got = Some((k, e.cause));
                break;
            }
        }
        assert_eq!(got, Some((10, Cause::SensorFault)));
        assert!(s.is_latched());
        // A varying reading never counts as stuck.
        let mut s = TripState::new();
        for k in 0..1000u16 {
            assert_eq!(cfg.update(&mut s, 1000 + (k & 3), true), Verdict::Allow);
        }
    }

    #[test]
    fn table_error_within_stated_bound_for_every_curve() {
        for c in Curve::ALL {
            for tms in [0.05f32, 1.0] {
                let mut p = params();
                p.inverse = Some(InverseTime::new(c, 2.5, tms).unwrap());
                let cfg = TripConfig::new(&p).unwrap();
                let e = cfg.inverse_table_error();
                assert!(e > 0.0 && e <= INVERSE_TABLE_ERROR_MAX, "{c:?}: {e}");
            }
        }
    }

    #[test]
    fn ieee_reset_runs_back_and_iec_resets_at_once() {
        let mut p = params();
        p.inverse = Some(InverseTime::new(Curve::IeeeVeryInverse, 2.0, 1.0).unwrap());
        let cfg = TripConfig::new(&p).unwrap();
        let mut s = TripState::new();
        // Whole blocks (1024 and 1440 are multiples of every K up to 32).
        for _ in 0..1024 {
            cfg.update(&mut s, 1000, true); // 4 A = 2x pickup
        }
        let acc = s.inverse_q32();
        assert!(acc > 0);
        // 0.5x pickup: full reset takes 28.8 s = 28 800 samples; 1440 samples run back 5 %.
        for _ in 0..1440 {
            cfg.update(&mut s, 250, true);
        }
        let back = f64::from(acc - s.inverse_q32()) / INVERSE_ONE as f64;
        assert!((back - 0.05).abs() < 1e-4, "{back}");
        let mut p = params();
        p.inverse = Some(InverseTime::new(Curve::IecVeryInverse, 2.0, 1.0).unwrap());
        let cfg = TripConfig::new(&p).unwrap();
        let mut s = TripState::new();
        for _ in 0..cfg.block_samples() {
            cfg.update(&mut s, 1000, true);
        }
        assert!(s.inverse_q32() > 0);
        for _ in 0..cfg.block_samples() {
            cfg.update(&mut s, 400, true);
        }
        assert_eq!(s.inverse_q32(), 0);
    }

    /// The thermal and inverse-time updates as first written, with 64-bit products (the
    /// reference for the 32-bit forms of the per-sample code).
    fn m_q16_u64(t: &InverseTable, reading: u16) -> u32 {
        let m = (u64::from(reading) * u64::from(t.m_scale_q32)) >> 16;
        m.min(u64::from(u32::MAX)) as u32
    }

    fn increment_u64(t: &InverseTable, reading: u16) -> Option<u32> {
        let m = m_q16_u64(t, reading);
        if m < Q16 {
            return None;
        }
        let msb = 31 - m.leading_zeros();
        let octave = (msb - 16) as usize;
        if octave >= INVERSE_TABLE_OCTAVES {
            return Some(
                t.rate_q32
                    .get(INVERSE_TABLE_LEN - 1)
                    .copied()
                    .unwrap_or(u32::MAX),
            );
        }
        let rem = m - (1 << msb);
        let shift = msb - 5;
        let step = (rem >> shift) as usize;
        let frac_q16 = (rem & ((1 << shift) - 1)) << (16 - shift);
        let idx = octave * INVERSE_TABLE_STEPS + step;
        let a = t.rate_q32.get(idx).copied().unwrap_or(u32::MAX);
        let b = t.rate_q32.get(idx + 1).copied().unwrap_or(a);
        let d = i64::from(b) - i64::from(a);
        let v = i64::from(a) + ((d * i64::from(frac_q16) + (1 << 15)) >> 16);
        Some(v.clamp(0, i64::from(u32::MAX)) as u32)
    }

    /// The compare form of the leading-one index agrees with `leading_zeros` wherever the
    /// lookup uses it (computed: exhaustive over the five bits above 2¹⁶, random below).
    #[test]
    fn msb_by_compares_matches_leading_zeros() {
        let mut x = 0x9E37_79B9u32;
        for h in 1u32..=0xFFFF {
            for _ in 0..4 {
                x ^= x << 13;
                x ^= x >> 17;
                x ^= x << 5;
                let m = (h << 16) | (x & 0xFFFF);
                let want = 31 - m.leading_zeros();
                let got = msb_by_compares(m);
                assert!(
                    got == want || (want >= 21 && got >= 21),
                    "{m:#x}: {got} vs {want}"
                );
            }
        }
    }

    /// A u32 that is often an edge value.
    fn edgy_u32() -> impl Strategy<Value = u32> {
        prop_oneof![
            any::<u32>(),
            Just(0u32),
            Just(u32::MAX),
            Just(1u32 << 31),
            Just((1u32 << 31) - 1),
            0u32..70_000,
            (u32::MAX - 70_000)..=u32::MAX,
        ]
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(1000))]
        /// The 32-bit form of the table lookup gives the same increment as the 64-bit
        /// formulation on any scale, table and reading (computed: exact integer identity).
        #[test]
        fn same_as_the_64_bit_formulation(
            scale in edgy_u32(), rates in proptest::collection::vec(edgy_u32(), INVERSE_TABLE_LEN),
            readings in proptest::collection::vec(any::<u16>(), 1..40),
        ) {
            let mut table = InverseTable::DISABLED;
            table.m_scale_q32 = scale;
            table.rate_q32.copy_from_slice(&rates);
            for r in readings {
                prop_assert_eq!(table.increment(r), increment_u64(&table, r));
                // A block of 2^k equal readings gives the same multiple as one reading.
                for k in 0..=u32::from(BLOCK_LOG2_MAX) {
                    prop_assert_eq!(table.m_q16_of_sum(u32::from(r) << k, k), table.m_q16(r));
                }
            }
        }

        /// A block of `K` equal readings moves the inverse-time accumulator exactly as `K`
        /// per-sample updates (`K = 1`) do, up and down (computed: exact integer identity).
        #[test]
        fn block_equals_per_sample_updates_at_constant_current(
            ci in 0usize..7, k in 1u8..=BLOCK_LOG2_MAX, up in 500u16..4000, down in 0u16..500,
            blocks in 1u32..20,
        ) {
            let mut p = params();
            p.instantaneous_counts = u16::MAX;
            p.full_scale_counts = u16::MAX;
            p.inverse = Some(InverseTime::new(Curve::ALL[ci], 2.0, 1.0).unwrap());
            let one = TripConfig::with_block_log2(&p, 0).unwrap();
            let many = TripConfig::with_block_log2(&p, k).unwrap();
            let (mut a, mut b) = (TripState::new(), TripState::new());
            for reading in [up, down] {
                for _ in 0..(blocks << k) {
                    let va = one.update(&mut a, reading, true);
                    let vb = many.update(&mut b, reading, true);
                    if matches!(va, Verdict::Trip(_)) || matches!(vb, Verdict::Trip(_)) {
                        return Ok(());
                    }
                    // Mid-block the block form has not moved yet: compare at the block ends.
                    if b.tick() & ((1 << k) - 1) == 0 {
                        prop_assert_eq!(a.inverse_q32(), b.inverse_q32());
                    }
                }
            }
        }
    }

    proptest! {
        // Long curves take up to a million samples per case: fewer cases.
        #![proptest_config(ProptestConfig::with_cases(48))]
        #[test]
        fn constant_current_matches_curve(ci in 0usize..7, m in INVERSE_M_MIN..INVERSE_M_MAX,
                                          tms in 0.02f32..1.0) {
            let el = InverseTime::new(Curve::ALL[ci], 2.5, tms).unwrap();
            let mut p = params();
            p.inverse = Some(el);
            p.instantaneous_counts = u16::MAX;
            p.full_scale_counts = u16::MAX;
            let cfg = TripConfig::new(&p).unwrap();
            let pickup = 2.5f64 / 4e-3;
            let reading = libm::round(pickup * f64::from(m)) as u16;
            let t = curve_time_f64(&el, f64::from(reading) / pickup).unwrap();
            let n = samples_to_trip(&cfg, reading, 10_000_000).unwrap();
            let err = f64::from(cfg.inverse_table_error());
            let got = f64::from(n) * 1e-3;
            // Within one block (K samples) plus the table error.
            let block = f64::from(cfg.block_samples()) * 1e-3;
            prop_assert!(got >= t * (1.0 - err) - 1e-9 && got <= t / (1.0 - err) + block,
                "{:?} reading {reading}: {got} vs {t}", Curve::ALL[ci]);
        }

        #[test]
        fn thermal_matches_f64_discrete_update(x in 1.05f64..15.0, ratio_exp in -5.0f64..-2.0,
                                              prior in 0.0f64..0.9) {
            // k·I_B = 1000 counts at 1 mA per count; τ = T_s / 10^ratio_exp.
            let ts = 1e-3f32;
            let tau = (f64::from(ts) / 10f64.powf(ratio_exp)) as f32;
            let mut p = params();
            p.instantaneous_counts = u16::MAX;
            p.full_scale_counts = u16::MAX;
            p.amps_per_count = 1e-3;
            p.thermal = Some(Thermal::new(tau, 1.0, 1.0).unwrap());
            let cfg = TripConfig::new(&p).unwrap();
            let reading = (x * 1000.0).round() as u16;
            let x2 = (f64::from(reading) / 1000.0).powi(2);
            let b = (-f64::from(ts) / f64::from(tau)).exp();
            let mut theta = prior * prior;
            let mut n_ref = 0u32;
            while theta < 1.0 {
                theta = b * theta + (1.0 - b) * x2;
                n_ref += 1;
            }
            let mut s = TripState::with_theta_q24(theta_q24_from_f32((prior * prior) as f32));
            let n = (1..=10_000_000u32)
                .find(|_| matches!(cfg.update(&mut s, reading, true), Verdict::Trip(_)))
                .unwrap();
            // The kernel trips at the end of the block in which the f64 update reaches one.
            let k = f64::from(cfg.block_samples());
            let (n, n_ref) = (f64::from(n), f64::from(n_ref));
            prop_assert!(n >= n_ref - 1.0 - 2e-4 * n_ref && n <= n_ref + k + 2e-4 * n_ref,
                "kernel {n} vs f64 {n_ref} (block {k})");
        }

        #[test]
        fn no_trip_below_pickup(ci in 0usize..7, frac in 0.0f64..1.0) {
            let el = InverseTime::new(Curve::ALL[ci], 2.5, 0.05).unwrap();
            let mut p = params();
            p.inverse = Some(el);
            p.thermal = Some(Thermal::new(1.0, 1.05, 2.5).unwrap());
            let cfg = TripConfig::new(&p).unwrap();
            // Below the pickup (625 counts) and below the thermal level (656 counts).
            let reading = (frac * 624.0) as u16;
            prop_assert_eq!(samples_to_trip(&cfg, reading, 20_000), None);
        }

        #[test]
        fn no_panic_on_any_input(raw in proptest::collection::vec(any::<u32>(), 12),
                                 readings in proptest::collection::vec((any::<u16>(), any::<bool>()), 1..64)) {
            let mut table = InverseTable::DISABLED;
            table.m_scale_q32 = raw[8];
            for (k, r) in table.rate_q32.iter_mut().enumerate() {
                *r = raw[k % 12].rotate_left(k as u32);
            }
            table.reset_q32 = raw[9];
            table.instant_reset = raw[10] & 1 == 1;
            let cfg = TripConfig::from_raw(TripRaw {
                instantaneous_counts: raw[0] as u16,
                full_scale_counts: raw[1] as u16,
                blank_samples: raw[2] as u16,
                persistence_n: raw[3] as u8,
                persistence_m: raw[4] as u8,
                stuck_samples: raw[5] as u16,
                retries: raw[6] as u8,
                retry_samples: raw[7] as u16,
                block_log2: (raw[9] >> 24) as u8,
                inverse_table: table,
                x2_mul: raw[10],
                x2_shift: (raw[11] >> 24) as u8,
                thermal_step_q32: raw[11],
                table_error_ppm: raw[3],
            });
            let mut s = TripState::with_theta_q24(raw[11]);
            let mut log = TripLog::<3>::new();
            for (r, on) in &readings {
                let _ = cfg.update_logged(&mut s, &mut log, *r, *on);
            }
            prop_assert!(log.len() <= 3);
            let v: Vec<_> = log.iter().collect();
            prop_assert!(v.len() == log.len());
        }
    }
}
