//! Plan side of the trip detector: the settings in SI units and the f32/f64 constructors.

use super::config::{TripConfig, TripRaw};
use super::state::BLOCK_LOG2_MAX;
use super::table::{
    INVERSE_M_MAX, INVERSE_ONE, INVERSE_TABLE_ERROR_MAX, InverseTable, curve_time_f64,
    measure_table_error,
};
use crate::error::{Error, in_range, non_negative, positive};
use crate::trip::{InverseTime, Thermal};

/// The default block is at most `τ/BLOCK_TAU_FRACTION` of the thermal element.
pub const BLOCK_TAU_FRACTION: f64 = 8.0;

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

/// `t_s` in whole samples, rounded up. A ratio within 1 ppm above a whole number counts as
/// that number: f32 inputs such as 3 µs / 0.5 µs come out a few 1e-8 above 6 and must not
/// add a whole sample.
fn samples_ceil(param: &'static str, t_s: f32, ts: f32) -> Result<u16, Error> {
    let t = non_negative(param, t_s)?;
    let n = libm::ceil(f64::from(t) / f64::from(ts) * (1.0 - 1e-6));
    in_range(param, n as f32, 0.0, f32::from(u16::MAX))?;
    Ok(n as u16)
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

/// The default block ([*Blocks*](TripConfig#blocks)): the largest `k ≤ BLOCK_LOG2_MAX` with `K·T_s`
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

impl TripConfig {
    /// Coefficients from a plan (see [`TripConfig`]), with the default block
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

    /// [`TripConfig::new`] with blocks of `2^block_log2` samples ([*Blocks*](TripConfig#blocks)):
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
}
