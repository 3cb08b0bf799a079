//! The trip detector's configuration: fields, raw constants and getters.

#[cfg(doc)]
use super::log::TripLog;
#[cfg(doc)]
use super::plan::BLOCK_TAU_FRACTION;
use super::state::BLOCK_LOG2_MAX;
#[cfg(doc)]
use super::state::TripState;
use super::table::InverseTable;
#[cfg(doc)]
use super::table::{INVERSE_M_MAX, INVERSE_M_MIN, INVERSE_TABLE_ERROR_MAX};
#[cfg(doc)]
use super::verdict::Verdict;

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

/// Trip detector configuration (shared by channels with the same settings): instantaneous
/// trip with blanking and N-of-M persistence, an inverse-time accumulator, a thermal
/// accumulator, sensor-fault detection, and a retry-then-latch policy. Trips can be kept in a
/// [`TripLog`].
///
/// # Per sample
///
/// The firmware calls [`TripConfig::update`] once per ADC sample with the reading (counts, zero
/// current at code 0) and the commanded switch state, and keeps the switch off unless the
/// returned [`Verdict`] allows it.
///
/// 1. **Instantaneous.** A reading at or above the threshold code counts as *over*; so does a
///    reading at or above the full-scale code (a saturated ADC hides the true current: fail
///    safe). For `blank` samples after each switch-on (rising edge of `switch_on`) samples
///    count as not over, which hides the turn-on spike. The last `M` over/not-over bits are
///    kept in a shift register; the detector trips when at least `N` of the last `M` samples
///    were over (the bits are counted only at a sample that is over, the only sample at which
///    the count can reach `N`). Every sample is decided: this element resolves to one sample.
/// 2. **Inverse time.** The standard digital form of the integral equation
///    `∫ dt/t(M) = 1` (IEEE Std C37.112-1996): each sample adds `T_s/t(M)` to an accumulator
///    that trips at one. The increment comes from a precomputed table of `2³²·T_s/t(M)` (see
///    *Table*): no division. Below pickup an IEEE curve runs back by
///    `T_s/t_r(M) = T_s(1 − M²)/(TD·t_r)` (computed directly: `1 − M²` is a polynomial); an
///    IEC curve resets to zero. The accumulator moves once per block of `K` samples (see
///    *Blocks*) by `K` increments at the block's mean multiple.
/// 3. **Thermal.** The exact discrete update of the IEC 60255-149 thermal image
///    (see [`crate::trip::thermal`]) over one block, `Δt = K·T_s`:
///    `θ ← b_K·θ + (1 − b_K)·x̄²` with `x̄²` the block's mean of `(I/(k I_B))²` and
///    `b_K = exp(−K·T_s/τ)`, written as `θ += (1 − b_K)(x̄² − θ)`; it trips at `θ ≥ 1`. θ is
///    Q24 (`1.0 = 2²⁴`, up to 256) and 16 bits below one Q24 LSB are carried from block to
///    block (error feedback), so tiny steps `(1 − b_K) ≈ 10⁻⁸` neither stall nor drift.
/// 4. **Sensor fault.** A reading that stays exactly the same for `stuck` samples while the
///    switch is on counts as a stuck sensor: it trips and latches at once (no retry into an
///    unknown current). Real readings of a live current carry noise of a count or more; set
///    `stuck` above the longest flat stretch a healthy channel shows, or 0 to disable.
/// 5. **Retry, then latch.** After a trip the verdict is [`Verdict::Waiting`] for the retry
///    delay (and, after a thermal trip, until θ is below one again), then [`Verdict::Allow`]
///    once more. After the stated number of retries the next trip latches:
///    [`Verdict::Latched`] until [`TripState::reset`]. The retry count clears only with
///    `reset`. The block sums and both accumulators go on while waiting or latched (the
///    winding cools).
///
/// Trips are checked in the order sensor fault, instantaneous, inverse time, thermal; the
/// first that fires is the cause.
///
/// # Blocks
///
/// Heating goes with the mean of `I²` and the inverse-time integral with `T_s/t(M)` summed over
/// the samples; neither needs its full arithmetic at every sample. Each sample adds only the
/// reading `r` to a running sum `Σr` and `r² >> 5` (one 16×16 multiply) to `Σr²/32`; at the
/// last sample of each block of `K = 2^k` samples (`k ≤` [`BLOCK_LOG2_MAX`] = 5, so `Σr` fits
/// 21 bits and `Σ(r² >> 5)` 32 bits) the block update runs once:
///
/// - inverse time: `M̄ = Σr·(2³²/pickup) >> (16 + k)` in Q16, exactly the `M` of a constant
///   reading equal to the block's mean; the accumulator moves by `K·inc(M̄)` (or runs back by
///   `K` decrements, or resets);
/// - thermal: `x̄² = (Σ(r² >> 5)·2^(5−k) + 16)·2^(24+s)/(k I_B)² >> s` in Q24, the block's mean
///   square; the truncation of `r² >> 5` is at most 32 of `r²`'s units per sample, and adding
///   16 back centres it, so `x̄²` is within `16/r²` relative of the true mean square
///   (`< 4·10⁻⁵` at the trip level for `k·I_B ≥ 650` counts); the exact update above with
///   `1 − b_K` precomputed.
///
/// For a constant current the block update moves the inverse-time accumulator exactly as `K`
/// per-sample updates (unit test `block_equals_per_sample_updates_at_constant_current`), and
/// the thermal update over `K·T_s` is the exact result of `K` per-sample steps (up to the
/// fixed-point rounding). For a current that varies within a block, thermal sees the block's
/// mean square (within the truncation above), which is what heats the winding; inverse time
/// takes the increment at the block's mean multiple, which differs from the mean of per-sample
/// increments by the curvature of the rate `1/t(M)` over the block's spread of readings (none
/// for the IEC VI and LTI curves, whose rate is linear in `M`). Changes from block to block are
/// followed as they come.
///
/// **Resolution.** The inverse-time and thermal elements are decided at block ends only: they
/// trip at the end of the block in which a per-sample update would have reached one, at most
/// `K − 1` samples later. For a constant current the inverse-time trip therefore comes within
/// one block (`K` samples) plus the stated table error of the curve's time (late, never
/// early), and the thermal trip within one block of the exact discrete update; a block that
/// starts hot (after [`TripState::reset`] or from [`TripState::with_theta_q24`]) trips at its
/// end. The instantaneous, stuck-sensor, blanking and retry logic stay per sample.
///
/// **Choice of `K`** (plan side, [`TripConfig::new`]): the largest `K ≤ 32` with
/// `K·T_s` at most the curve's trip time at the lower of the instantaneous threshold and
/// [`INVERSE_M_MAX`] (above the threshold the instantaneous element trips first), and at most
/// `τ/`[`BLOCK_TAU_FRACTION`] (`τ/8`) of the thermal element, i.e. one block is at most the
/// shortest inverse-time trip the element has to make. [`TripConfig::with_block_log2`] takes
/// any `k ≤ 5` instead (`k = 0`: every sample, the finest resolution at the highest cost).
///
/// # Table
///
/// The reading is scaled to the multiple `M = reading/pickup` in Q16 (one multiply by
/// `2³²/pickup`, precomputed). The table covers `1 ≤ M < 32` in five octaves of 32 entries
/// each, spaced evenly within each octave; the octave comes from `leading_zeros` and the entry
/// and interpolation fraction from the bits below the leading one, so the spacing is finer
/// where the curves bend most (near pickup) and the lookup needs no division. Above `M = 32` the
/// last entry holds (the instantaneous element covers that region). Interpolation is linear in
/// the rate `1/t(M)`, which is smooth through pickup (`(M^α − 1)/k` near `M = 1`) where `t(M)`
/// itself is not.
///
/// **Stated table error**: over the documented range of multiples [`INVERSE_M_MIN`] ..=
/// [`INVERSE_M_MAX`] the increment is within [`INVERSE_TABLE_ERROR_MAX`] (0.2 %) of `2³²·T_s/t(M)`
/// for all seven curves; the plan constructor measures the actual error of each configuration over
/// every reading in that range ([`TripConfig::inverse_table_error`]) and rejects a configuration
/// above the stated bound (measured worst cases, 2.5 A pickup at 4 mA per count, 1 ms and 0.1 ms
/// samples: at most 0.11 % for the IEC SI, IEC EI and IEEE MI/VI/EI curves, 0.03 % for IEC VI and
/// LTI, whose rate is linear in `M`). For a constant current the kernel therefore trips within one
/// block (see *Blocks*) plus that relative error of the curve's time. Rounding the increment to an
/// integer adds `0.5/increment`, included in the measured error; it stays small while
/// `t(M)/T_s < 10⁶`.
///
/// # Cost and state
///
/// The per-sample fast path, taken when the channel is running with the switch as at the last
/// sample, not blanking, the reading below the instantaneous threshold with no over bit in the
/// history and the stuck count short of its limit: the tick, the two block sums (one
/// multiply), five compares and the stuck count; no call. When such a sample ends a block, the
/// block update follows (one call, once per block). Every other sample (switch edges,
/// blanking, an over reading or history, a stuck reading near the limit, waiting or latched)
/// takes the full path, which is the same logic written out plus the block update where a
/// block ends. The block update forms `M̄`, `x̄²` and the thermal step from 32×32→64 products
/// and one table interpolation, written in 32-bit pieces: on Cortex-M0 four 32-bit multiplies
/// each instead of the 64-bit library multiply, and 32-bit shifts instead of the 64-bit
/// library shifts. Cortex-M0 has no `CLZ`, so there the table octave comes from five compares.
/// No float, no division, no panic (table access by `.get()` or after one index check).
///
/// Measured under emulation (`lenz cost`, the cost run of the target README: every element on,
/// switch on, readings with noise around the inverse-time pickup and below the thermal level,
/// `K = 32` by the rule above for its IEEE VI, TMS 0.05, τ 0.5 s, 1 kHz setting): on average
/// 55.5 instructions per sample on Cortex-M0 and 35.5 on Cortex-M3 and Cortex-M4F. The
/// average is `(K − 1)/K` fast paths plus one block-ending sample per block, the worst single
/// call in normal operation: measured on its own (`trip_block` in `lenz cost`, the same
/// setting with `K = 1`) 326.9 instructions on Cortex-M0 and 168.8 on Cortex-M3/M4F. The
/// firmware's sample period must allow for it once per block. A trip, a switch edge or a
/// stuck-sensor run near its limit takes the full path.
///
/// [`TripConfig::new`] builds the table and measures its error in f64 over every reading of
/// the documented range (about `19·pickup` curve evaluations): run it on the host or at
/// init, never per sample. State per channel: 32 bytes
/// ([`TripState`]). The configuration holds the table (161 `u32`, 644 bytes) and is shared by
/// channels with the same settings. A [`TripLog`] of `N` events takes `8·N` bytes plus two
/// words of bookkeeping (`8·N + 16` bytes on a 64-bit host, `8·N + 8` on a 32-bit target).
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
// Through the raw values, so a deserialized configuration is made by `from_raw` as any other
// (its derived fields and clamps included).
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
#[cfg_attr(feature = "serde", serde(from = "TripRaw", into = "TripRaw"))]
// Laid out as written: the fields of the fast path first, the two words adjacent (one
// load of both on Cortex-M3/M4F) and at small offsets (short loads on Cortex-M0).
#[repr(C)]
pub struct TripConfig {
    /// `stuck_limit − 1`: a count below it is short of the limit.
    pub(super) stuck_fast: u32,
    /// `K − 1`: the block ends at a sample whose tick has these bits all set.
    pub(super) block_mask: u32,
    /// The lower of the two: a reading at or above it is over.
    pub(super) over_counts: u16,
    pub(super) instantaneous_counts: u16,
    pub(super) full_scale_counts: u16,
    pub(super) blank_samples: u16,
    pub(super) stuck_samples: u16,
    pub(super) retry_samples: u16,
    /// `stuck_samples`, or above any count when 0 (off): one compare per sample.
    pub(super) stuck_limit: u32,
    /// The last `M` bits of the persistence history.
    pub(super) history_mask: u32,
    /// `N`, at least 1.
    pub(super) persistence_n: u32,
    pub(super) persistence_m: u8,
    pub(super) retries: u8,
    /// `k` of the block of `K = 2^k` samples (at most [`BLOCK_LOG2_MAX`]).
    pub(super) block_log2: u8,
    /// `x²` in Q24 is `(mean r²) · x2_mul >> x2_shift` (`2^(24+shift)/(k I_B in counts)²`).
    /// Zero disables the thermal element.
    pub(super) x2_shift: u8,
    pub(super) x2_mul: u32,
    /// `1 − b^K = 1 − exp(−K T_s/τ)` in Q32, below `2³¹`.
    pub(super) thermal_step_q32: u32,
    /// Measured relative table error, parts per million.
    pub(super) table_error_ppm: u32,
    pub(super) inverse: InverseTable,
}

impl TripConfig {
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
    /// elements are updated ([*Blocks*](TripConfig#blocks)).
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
}

impl From<TripRaw> for TripConfig {
    fn from(raw: TripRaw) -> Self {
        Self::from_raw(raw)
    }
}

impl From<TripConfig> for TripRaw {
    fn from(cfg: TripConfig) -> Self {
        cfg.raw()
    }
}
