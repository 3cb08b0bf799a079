//! Integer trip detector: instantaneous trip with blanking and N-of-M persistence, an
//! inverse-time accumulator, a thermal accumulator, sensor-fault detection, and a
//! retry-then-latch policy; plus a fixed-capacity log of the last trips.
//!
//! # Per sample
//!
//! The firmware calls [`TripConfig::sample`] once per ADC sample with the reading (counts, zero
//! current at code 0) and the commanded switch state, and keeps the switch off unless the
//! returned [`Verdict`] allows it.
//!
//! 1. **Instantaneous.** A reading at or above the threshold code counts as *over*; so does a
//!    reading at or above the full-scale code (a saturated ADC hides the true current: fail
//!    safe). For `blank` samples after each switch-on (rising edge of `switch_on`) samples
//!    count as not over, which hides the turn-on spike. The last `M` over/not-over bits are
//!    kept in a shift register with a running count; the detector trips when at least `N` of
//!    the last `M` samples were over.
//! 2. **Inverse time.** The standard digital form of the integral equation
//!    `∫ dt/t(M) = 1` (IEEE Std C37.112-1996): each sample adds `T_s/t(M)` to an accumulator
//!    that trips at one. The increment comes from a precomputed table of `2³²·T_s/t(M)` (see
//!    *Table*), so the per-sample work is a multiply, shifts and one interpolation: no
//!    division. Below pickup an IEEE curve runs back by `T_s/t_r(M) = T_s(1 − M²)/(TD·t_r)`
//!    (computed directly: `1 − M²` is a polynomial); an IEC curve resets to zero.
//! 3. **Thermal.** The exact discrete update of the IEC 60255-149 thermal image
//!    (see [`crate::trip::thermal`]):
//!    `θ[n+1] = b·θ[n] + (1 − b)·x²` with `x = I/(k I_B)` and `b = exp(−T_s/τ)`, written as
//!    `θ += (1 − b)(x² − θ)`; it trips at `θ ≥ 1`. θ is Q24 (`1.0 = 2²⁴`, up to 256) and the
//!    fraction below one Q24 LSB is carried from sample to sample (error feedback), so tiny
//!    steps `(1 − b) ≈ 10⁻⁸` neither stall nor drift.
//! 4. **Sensor fault.** A reading that stays exactly the same for `stuck` samples while the
//!    switch is on counts as a stuck sensor: it trips and latches at once (no retry into an
//!    unknown current). Real readings of a live current carry noise of a count or more; set
//!    `stuck` above the longest flat stretch a healthy channel shows, or 0 to disable.
//! 5. **Retry, then latch.** After a trip the verdict is [`Verdict::Waiting`] for the retry
//!    delay (and, after a thermal trip, until θ is below one again), then [`Verdict::Allow`]
//!    once more. After the stated number of retries the next trip latches:
//!    [`Verdict::Latched`] until [`TripConfig::reset`]. The retry count clears only with
//!    `reset`.
//!
//! Trips are checked in the order sensor fault, instantaneous, inverse time, thermal; the
//! first that fires is the cause.
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
//! rate is linear in `M`). For a constant current the kernel therefore trips within one sample plus that
//! relative error of the curve's time. Rounding the increment to an integer adds
//! `0.5/increment`, included in the measured error; it stays small while `t(M)/T_s < 10⁶`.
//!
//! # Cost and state
//!
//! Per sample: at most five multiplies into 64 bits (`M` and `x` scaling, the interpolation,
//! `x²`, the thermal step), shifts, compares and adds; no float, no division, no panic (table
//! access by `.get()`). Host figure: about 24 ns per sample with every element enabled
//! (criterion bench `trip`, x86-64). `M` and `x` are truncated to Q16, which makes the kernel
//! trip marginally later (relative `2⁻¹⁶/(M − 1)` on the inverse-time rate near pickup,
//! included in the measured table error).
//!
//! On Cortex-M0 (no `CLZ`, no 32×32→64 multiply) `leading_zeros` and the 64-bit products are
//! short compiler-builtins routines; neither is a division.
//!
//! [`TripConfig::new`] builds the table and measures its error in f64 over every reading of
//! the documented range (about `19·pickup` curve evaluations): run it on the host or at
//! init, never per sample. State per channel: 32 bytes
//! ([`TripState`]). The configuration holds the table (161 `u32`, 644 bytes) and is shared by
//! channels with the same settings. A [`TripLog`] of `N` events takes `8·N` bytes plus two
//! words of bookkeeping (`8·N + 16` bytes on a 64-bit host, `8·N + 8` on a 32-bit target).

use heapless::HistoryBuf;

use crate::error::{Error, in_range, non_negative, positive};
use crate::trip::{InverseTime, Thermal};

/// Entries per octave of the inverse-time table.
pub const TABLE_STEPS: usize = 32;
/// Octaves of `M` covered by the table (`1 ≤ M < 2⁵`).
pub const TABLE_OCTAVES: usize = 5;
/// Number of table entries (the last one at `M = 32`).
pub const TABLE_LEN: usize = TABLE_STEPS * TABLE_OCTAVES + 1;
/// Lowest multiple of pickup of the documented range.
pub const INVERSE_M_MIN: f32 = 1.1;
/// Highest multiple of pickup of the documented range.
pub const INVERSE_M_MAX: f32 = 20.0;
/// The stated bound on the relative error of the inverse-time increment over the documented
/// range (module docs, *Table*).
pub const INVERSE_TABLE_ERROR_MAX: f32 = 2.0e-3;
/// `1.0` of the thermal state in Q24.
pub const THETA_ONE_Q24: u32 = 1 << 24;

const INVERSE_ONE: u64 = 1 << 32;
const Q16: u32 = 1 << 16;
/// Cap of the thermal input `x = I/(k I_B)` in Q16 (16.0): `x²` then fills the Q24 state.
const X_MAX_Q16: u64 = 16 << 16;

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
    /// Off until [`TripConfig::reset`].
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

/// Inverse-time part of the configuration.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct InverseTable {
    /// `2³²/pickup_counts`: `M` in Q16 is `reading · m_scale_q32 >> 16`. Zero disables.
    pub m_scale_q32: u32,
    /// `2³²·T_s/t(M)` at `M = 2^o·(1 + s/32)` for entry `32·o + s`.
    #[cfg_attr(feature = "serde", serde(with = "table_serde"))]
    pub rate_q32: [u32; TABLE_LEN],
    /// `2³²·T_s/(TD·t_r)` of an inverse reset below pickup; ignored if `instant_reset`.
    pub reset_q32: u32,
    /// Reset to zero at once below pickup (IEC curves).
    pub instant_reset: bool,
}

#[cfg(feature = "serde")]
mod table_serde {
    //! serde supports arrays up to 32 elements only; the table goes through a slice.
    use super::TABLE_LEN;
    use serde::{Deserialize, Deserializer, Serializer, de::Error};

    pub(super) fn serialize<S: Serializer>(t: &[u32; TABLE_LEN], s: S) -> Result<S::Ok, S::Error> {
        s.collect_seq(t.iter())
    }

    pub(super) fn deserialize<'de, D: Deserializer<'de>>(
        d: D,
    ) -> Result<[u32; TABLE_LEN], D::Error> {
        let v: heapless::Vec<u32, TABLE_LEN> = Deserialize::deserialize(d)?;
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
/// // 10 A = 2500 counts: the curve says 0.225 s, i.e. 225 samples.
/// let n = (1..1000)
///     .find(|_| matches!(cfg.sample(&mut s, 2500, true), Verdict::Trip(_)))
///     .unwrap();
/// assert!((224..=227).contains(&n));
/// # Ok::<(), lenz::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct TripConfig {
    instantaneous_counts: u16,
    full_scale_counts: u16,
    blank_samples: u16,
    persistence_n: u8,
    persistence_m: u8,
    stuck_samples: u16,
    retries: u8,
    retry_samples: u16,
    inverse: InverseTable,
    /// `2³²/(k I_B in counts)`: `x` in Q16 is `reading · x_scale_q32 >> 16`. Zero disables.
    x_scale_q32: u32,
    /// `1 − b = 1 − exp(−T_s/τ)` in Q32, below `2³¹`.
    thermal_step_q32: u32,
    /// Measured relative table error, parts per million.
    table_error_ppm: u32,
}

/// Per-channel trip detector state: 32 bytes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct TripState {
    inverse_q32: u32,
    theta_q24: u32,
    theta_frac: u32,
    tick: u32,
    history: u32,
    last_reading: u16,
    stuck_count: u16,
    blank_left: u16,
    retry_left: u16,
    over_count: u8,
    retries: u8,
    flags: u8,
}

const PHASE_MASK: u8 = 0b11;
const RUNNING: u8 = 0;
const WAITING: u8 = 1;
const LATCHED: u8 = 2;
const PREV_ON: u8 = 0b100;

impl TripState {
    /// A cold, untripped channel.
    #[must_use]
    pub const fn new() -> Self {
        Self {
            inverse_q32: 0,
            theta_q24: 0,
            theta_frac: 0,
            tick: 0,
            history: 0,
            last_reading: 0,
            stuck_count: 0,
            blank_left: 0,
            retry_left: 0,
            over_count: 0,
            retries: 0,
            flags: 0,
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

    /// Thermal state, Q24 (`THETA_ONE_Q24` trips).
    #[must_use]
    pub const fn theta_q24(&self) -> u32 {
        self.theta_q24
    }

    /// Inverse-time accumulator, Q32 fraction of one (trips when it would reach `2³²`).
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
        self.retries
    }

    /// Latched off until reset.
    #[must_use]
    pub const fn is_latched(&self) -> bool {
        self.flags & PHASE_MASK == LATCHED
    }

    /// Off and waiting for a retry.
    #[must_use]
    pub const fn is_waiting(&self) -> bool {
        self.flags & PHASE_MASK == WAITING
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

/// The multiple of pickup at table entry `idx`.
fn table_m(idx: usize) -> f64 {
    let octave = (idx / TABLE_STEPS) as i32;
    let step = (idx % TABLE_STEPS) as f64;
    libm::pow(2.0, f64::from(octave)) * (1.0 + step / TABLE_STEPS as f64)
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

impl InverseTable {
    /// A disabled inverse-time element.
    pub const DISABLED: InverseTable = InverseTable {
        m_scale_q32: 0,
        rate_q32: [0; TABLE_LEN],
        reset_q32: 0,
        instant_reset: true,
    };

    fn new(el: &InverseTime, sample_period_s: f32, amps_per_count: f32) -> Result<Self, Error> {
        let pickup_counts = el.pickup_a() / amps_per_count;
        let m_scale_q32 = recip_q32("pickup_a", pickup_counts)?;
        let ts = f64::from(sample_period_s);
        let mut rate_q32 = [0u32; TABLE_LEN];
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
        let m = (u64::from(reading) * u64::from(self.m_scale_q32)) >> 16;
        if m > u64::from(u32::MAX) {
            u32::MAX
        } else {
            m as u32
        }
    }

    /// The increment `2³²·T_s/t(M)` of a reading at or above pickup, `None` below pickup.
    #[inline]
    fn increment(&self, reading: u16) -> Option<u32> {
        let m = self.m_q16(reading);
        if m < Q16 {
            return None;
        }
        let msb = 31 - m.leading_zeros(); // 16 ..= 31
        let octave = (msb - 16) as usize;
        if octave >= TABLE_OCTAVES {
            return Some(
                self.rate_q32
                    .get(TABLE_LEN - 1)
                    .copied()
                    .unwrap_or(u32::MAX),
            );
        }
        let rem = m - (1 << msb);
        let shift = msb - 5; // 11 ..= 15 here
        let step = (rem >> shift) as usize;
        let frac_q16 = (rem & ((1 << shift) - 1)) << (16 - shift);
        let idx = octave * TABLE_STEPS + step;
        let a = self.rate_q32.get(idx).copied().unwrap_or(u32::MAX);
        let b = self.rate_q32.get(idx + 1).copied().unwrap_or(a);
        let d = i64::from(b) - i64::from(a);
        let v = i64::from(a) + ((d * i64::from(frac_q16) + (1 << 15)) >> 16);
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
    /// Coefficients from a plan (module docs).
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
        let (x_scale_q32, thermal_step_q32) = match &p.thermal {
            Some(th) => {
                let x = recip_q32("base_current_a", th.trip_level_a() / apc)?;
                let ratio = in_range("sample_period_s", ts / th.time_constant_s(), 1.0e-9, 0.5)?;
                let c = -libm::expm1(-f64::from(ratio));
                (x, libm::round(c * INVERSE_ONE as f64) as u32)
            }
            None => (0, 0),
        };
        Ok(Self {
            instantaneous_counts: p.instantaneous_counts,
            full_scale_counts: p.full_scale_counts,
            blank_samples,
            persistence_n: p.persistence_n,
            persistence_m: p.persistence_m,
            stuck_samples: p.stuck_samples,
            retries: p.retries,
            retry_samples,
            inverse,
            x_scale_q32,
            thermal_step_q32,
            table_error_ppm,
        })
    }

    /// Coefficients from raw values (for constants emitted by the host tool). The caller is
    /// responsible for their meaning; the per-sample update cannot overflow or panic on any
    /// values (out-of-range persistence is clamped to `1 ..= 32`).
    #[allow(clippy::too_many_arguments)] // one argument per register of the configuration
    #[must_use]
    pub const fn from_raw(
        instantaneous_counts: u16,
        full_scale_counts: u16,
        blank_samples: u16,
        persistence_n: u8,
        persistence_m: u8,
        stuck_samples: u16,
        retries: u8,
        retry_samples: u16,
        inverse: InverseTable,
        x_scale_q32: u32,
        thermal_step_q32: u32,
    ) -> Self {
        Self {
            instantaneous_counts,
            full_scale_counts,
            blank_samples,
            persistence_n,
            persistence_m,
            stuck_samples,
            retries,
            retry_samples,
            inverse,
            x_scale_q32,
            thermal_step_q32,
            table_error_ppm: 0,
        }
    }

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

    /// Thermal step `1 − b` in Q32.
    #[must_use]
    pub const fn thermal_step_q32(&self) -> u32 {
        self.thermal_step_q32
    }

    /// Largest relative error of the inverse-time increment over the documented range of
    /// multiples, as measured by [`TripConfig::new`] (0 for a `from_raw` configuration or
    /// without an inverse-time element).
    #[must_use]
    pub fn inverse_table_error(&self) -> f32 {
        self.table_error_ppm as f32 * 1e-6
    }

    /// The inverse-time increment of a reading, Q32 (`None` below pickup or disabled). The
    /// same lookup the per-sample update uses; exposed for checks.
    #[must_use]
    pub fn inverse_increment_q32(&self, reading: u16) -> Option<u32> {
        if self.inverse.m_scale_q32 == 0 {
            return None;
        }
        self.inverse.increment(reading)
    }

    /// Clears a latch or a pending retry and the retry count; the thermal state and the
    /// tick are kept (the winding does not cool by a reset).
    pub fn reset(&self, s: &mut TripState) {
        s.flags &= !PHASE_MASK;
        s.retries = 0;
        s.retry_left = 0;
        s.history = 0;
        s.over_count = 0;
        s.inverse_q32 = 0;
        s.stuck_count = 0;
    }

    /// One thermal update; `true` when θ is at or above one.
    #[inline]
    fn thermal(&self, s: &mut TripState, reading: u16) -> bool {
        if self.x_scale_q32 == 0 {
            return false;
        }
        let x_q16 = (u64::from(reading) * u64::from(self.x_scale_q32)) >> 16;
        let x_q16 = if x_q16 > X_MAX_Q16 { X_MAX_Q16 } else { x_q16 };
        let x2_q24 = (x_q16 * x_q16) >> 8;
        let x2_q24 = if x2_q24 > u64::from(u32::MAX) {
            i64::from(u32::MAX)
        } else {
            x2_q24 as i64
        };
        // |diff| < 2³² and the step < 2³¹: the product fits an i64.
        let diff = x2_q24 - i64::from(s.theta_q24);
        let step = i64::from(self.thermal_step_q32 & 0x7FFF_FFFF);
        let prod = diff * step;
        let frac = i64::from(s.theta_frac) + (prod & 0xFFFF_FFFF);
        let theta = i64::from(s.theta_q24) + (prod >> 32) + (frac >> 32);
        if theta < 0 {
            s.theta_q24 = 0;
            s.theta_frac = 0;
        } else if theta > i64::from(u32::MAX) {
            s.theta_q24 = u32::MAX;
            s.theta_frac = 0;
        } else {
            s.theta_q24 = theta as u32;
            s.theta_frac = (frac & 0xFFFF_FFFF) as u32;
        }
        s.theta_q24 >= THETA_ONE_Q24
    }

    /// One inverse-time update; `true` when the accumulator reaches one.
    #[inline]
    fn inverse(&self, s: &mut TripState, reading: u16) -> bool {
        let t = &self.inverse;
        if t.m_scale_q32 == 0 {
            return false;
        }
        match t.increment(reading) {
            Some(inc) => {
                let sum = u64::from(s.inverse_q32) + u64::from(inc);
                if sum >= INVERSE_ONE || inc == u32::MAX {
                    s.inverse_q32 = 0;
                    true
                } else {
                    s.inverse_q32 = sum as u32;
                    false
                }
            }
            None if t.instant_reset => {
                s.inverse_q32 = 0;
                false
            }
            None => {
                // Run back by T_s(1 − M²)/(TD t_r), M < 1 here.
                let m = u64::from(t.m_q16(reading));
                let one_minus_m2 = u64::from(Q16).saturating_sub((m * m) >> 16);
                let dec = (u64::from(t.reset_q32) * one_minus_m2) >> 16;
                s.inverse_q32 = (u64::from(s.inverse_q32).saturating_sub(dec)) as u32;
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
    pub fn sample(&self, s: &mut TripState, reading_counts: u16, switch_on: bool) -> Verdict {
        let tick = s.tick;
        s.tick = tick.wrapping_add(1);
        let hot = self.thermal(s, reading_counts);
        let inverse_trip = self.inverse(s, reading_counts);

        let rising = switch_on && s.flags & PREV_ON == 0;
        s.flags = if switch_on {
            s.flags | PREV_ON
        } else {
            s.flags & !PREV_ON
        };
        if switch_on && reading_counts == s.last_reading {
            s.stuck_count = s.stuck_count.saturating_add(1);
        } else {
            s.stuck_count = 0;
        }
        s.last_reading = reading_counts;

        match s.flags & PHASE_MASK {
            RUNNING => {}
            // The switch is held off here whatever the firmware commands, so the first
            // sample on after a retry is a switch-on and starts the blanking time.
            WAITING => {
                s.flags &= !PREV_ON;
                s.retry_left = s.retry_left.saturating_sub(1);
                if s.retry_left == 0 && !hot {
                    s.flags &= !PHASE_MASK;
                    s.retries = s.retries.saturating_add(1);
                    return Verdict::Allow;
                }
                return Verdict::Waiting;
            }
            _ => {
                s.flags &= !PREV_ON;
                return Verdict::Latched;
            }
        }

        if rising {
            s.blank_left = self.blank_samples;
        }
        let blanked = s.blank_left > 0;
        s.blank_left = s.blank_left.saturating_sub(1);
        let over = !blanked
            && (reading_counts >= self.instantaneous_counts
                || reading_counts >= self.full_scale_counts);
        let m = if self.persistence_m == 0 {
            1
        } else if self.persistence_m > 32 {
            32
        } else {
            u32::from(self.persistence_m)
        };
        let mask = if m == 32 { u32::MAX } else { (1u32 << m) - 1 };
        let leaving = (s.history >> (m - 1)) & 1;
        s.history = ((s.history << 1) | u32::from(over)) & mask;
        s.over_count = (u32::from(s.over_count) + u32::from(over))
            .saturating_sub(leaving)
            .min(32) as u8;
        let n = if self.persistence_n == 0 {
            1
        } else {
            self.persistence_n
        };

        let cause = if self.stuck_samples != 0 && s.stuck_count >= self.stuck_samples {
            Cause::SensorFault
        } else if s.over_count >= n {
            Cause::Instantaneous
        } else if inverse_trip {
            Cause::InverseTime
        } else if hot {
            Cause::Thermal
        } else {
            return Verdict::Allow;
        };
        let event = TripEvent {
            tick,
            reading_counts,
            retry: s.retries,
            cause,
        };
        s.history = 0;
        s.over_count = 0;
        if cause == Cause::SensorFault || s.retries >= self.retries {
            s.flags = (s.flags & !PHASE_MASK) | LATCHED;
        } else {
            s.flags = (s.flags & !PHASE_MASK) | WAITING;
            s.retry_left = self.retry_samples;
        }
        Verdict::Trip(event)
    }

    /// [`TripConfig::sample`], recording a trip in `log`.
    #[inline]
    pub fn sample_logged<const N: usize>(
        &self,
        s: &mut TripState,
        log: &mut TripLog<N>,
        reading_counts: u16,
        switch_on: bool,
    ) -> Verdict {
        let v = self.sample(s, reading_counts, switch_on);
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
        (1..=limit).find(|_| matches!(cfg.sample(&mut s, reading, true), Verdict::Trip(_)))
    }

    #[test]
    fn state_fits_32_bytes_and_event_8() {
        assert!(core::mem::size_of::<TripState>() <= 32);
        assert_eq!(core::mem::size_of::<TripEvent>(), 8);
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
                cfg.sample_logged(&mut s, &mut log, 3500, true),
                Verdict::Allow
            );
        }
        // Over, not over, over: 2 of 3 trips at the third.
        assert_eq!(cfg.sample(&mut s, 3500, true), Verdict::Allow);
        assert_eq!(cfg.sample(&mut s, 100, true), Verdict::Allow);
        let v = cfg.sample_logged(&mut s, &mut log, 3500, true);
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
            assert_eq!(cfg.sample(&mut s, 0, false), Verdict::Waiting);
        }
        assert_eq!(cfg.sample(&mut s, 0, false), Verdict::Allow);
        assert_eq!(s.retries(), 1);
        // Two more trips: the second retry, then the latch.
        let mut trips = 0;
        for _ in 0..200 {
            match cfg.sample_logged(&mut s, &mut log, 4095, true) {
                Verdict::Trip(_) => trips += 1,
                Verdict::Latched => break,
                _ => {}
            }
        }
        assert_eq!(trips, 2);
        assert!(s.is_latched());
        assert_eq!(log.len(), 2);
        assert_eq!(log.latest().map(|e| e.retry), Some(2));
        cfg.reset(&mut s);
        assert_eq!(cfg.sample(&mut s, 0, false), Verdict::Allow);
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
            if let Verdict::Trip(e) = cfg.sample(&mut s, 1234, true) {
                got = Some((k, e.cause));
                break;
            }
        }
        assert_eq!(got, Some((10, Cause::SensorFault)));
        assert!(s.is_latched());
        // A varying reading never counts as stuck.
        let mut s = TripState::new();
        for k in 0..1000u16 {
            assert_eq!(cfg.sample(&mut s, 1000 + (k & 3), true), Verdict::Allow);
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
        for _ in 0..1000 {
            cfg.sample(&mut s, 1000, true); // 4 A = 2x pickup
        }
        let acc = s.inverse_q32();
        assert!(acc > 0);
        // 0.5x pickup: full reset takes 28.8 s = 28 800 samples; 1440 samples run back 5 %.
        for _ in 0..1440 {
            cfg.sample(&mut s, 250, true);
        }
        let back = f64::from(acc - s.inverse_q32()) / INVERSE_ONE as f64;
        assert!((back - 0.05).abs() < 1e-4, "{back}");
        let mut p = params();
        p.inverse = Some(InverseTime::new(Curve::IecVeryInverse, 2.0, 1.0).unwrap());
        let cfg = TripConfig::new(&p).unwrap();
        let mut s = TripState::new();
        cfg.sample(&mut s, 1000, true);
        assert!(s.inverse_q32() > 0);
        cfg.sample(&mut s, 400, true);
        assert_eq!(s.inverse_q32(), 0);
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
            prop_assert!(got >= t * (1.0 - err) - 1e-9 && got <= t / (1.0 - err) + 1e-3,
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
                .find(|_| matches!(cfg.sample(&mut s, reading, true), Verdict::Trip(_)))
                .unwrap();
            prop_assert!(f64::from(n.abs_diff(n_ref)) <= 1.0 + 2e-4 * f64::from(n_ref),
                "kernel {n} vs f64 {n_ref}");
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
            let cfg = TripConfig::from_raw(raw[0] as u16, raw[1] as u16, raw[2] as u16,
                raw[3] as u8, raw[4] as u8, raw[5] as u16, raw[6] as u8, raw[7] as u16,
                table, raw[10], raw[11]);
            let mut s = TripState::with_theta_q24(raw[11]);
            let mut log = TripLog::<3>::new();
            for (r, on) in &readings {
                let _ = cfg.sample_logged(&mut s, &mut log, *r, *on);
            }
            prop_assert!(log.len() <= 3);
            let v: Vec<_> = log.iter().collect();
            prop_assert!(v.len() == log.len());
        }
    }
}
