//! The inverse-time table: its layout, the plan side that fills it and measures its error,
//! and the lookup of the increment at a multiple of pickup.
#[cfg(doc)]
use super::config::TripConfig;
use crate::error::{Error, in_range};
use crate::kernel::q::{mul_frac_q16, mul_wide_u32, shr_u64_sat};
use crate::trip::InverseTime;

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
/// range ([*Table*](TripConfig#table)).
pub const INVERSE_TABLE_ERROR_MAX: f32 = 2.0e-3;

/// `1.0` of the inverse-time accumulator and of the Q32 rates.
pub(super) const INVERSE_ONE: u64 = 1 << 32;
/// `1.0` in Q16.
pub(super) const Q16: u32 = 1 << 16;

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
pub(super) const fn table_msb(m: u32) -> u32 {
    if cfg!(all(target_arch = "arm", not(target_has_atomic = "ptr"))) {
        msb_by_compares(m)
    } else {
        31 - m.leading_zeros()
    }
}

/// [`table_msb`] by compares (the ARMv6-M form; the same result on every target for the
/// indices below 21, and at least 21 above).
#[inline(always)]
pub(super) const fn msb_by_compares(m: u32) -> u32 {
    let h = m >> 16;
    if h >= 32 {
        21
    } else {
        16 + (h >= 2) as u32 + (h >= 4) as u32 + (h >= 8) as u32 + (h >= 16) as u32
    }
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

/// `2³²/counts` for a scale, with `counts` at least 2 so that it fits a `u32`.
fn recip_q32(param: &'static str, counts: f32) -> Result<u32, Error> {
    in_range(param, counts, 2.0, 65_535.0)?;
    Ok(libm::round(INVERSE_ONE as f64 / f64::from(counts)) as u32)
}

/// The multiple of pickup at table entry `idx`.
pub(super) fn table_m(idx: usize) -> f64 {
    let octave = (idx / INVERSE_TABLE_STEPS) as i32;
    let step = (idx % INVERSE_TABLE_STEPS) as f64;
    libm::pow(2.0, f64::from(octave)) * (1.0 + step / INVERSE_TABLE_STEPS as f64)
}

/// f64 trip time of an element at multiple `m` (for the table and its error).
pub(super) fn curve_time_f64(el: &InverseTime, m: f64) -> Option<f64> {
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
        rate_q32: [0; INVERSE_TABLE_LEN],
        reset_q32: 0,
        instant_reset: true,
    };

    pub(super) fn new(
        el: &InverseTime,
        sample_period_s: f32,
        amps_per_count: f32,
    ) -> Result<Self, Error> {
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
    pub(super) fn m_q16(&self, reading: u16) -> u32 {
        scale_q16(reading, self.m_scale_q32)
    }

    /// `M` in Q16 of the block whose readings sum to `sum < 2²¹` over `2^k` samples
    /// (saturating): `sum · m_scale >> (16 + k)`, the same as [`InverseTable::m_q16`] of a
    /// constant reading. Formed as `(sum << (5 − k)) · m_scale >> 21`: one product (four
    /// 32-bit multiplies on Cortex-M0) and fixed shifts.
    #[inline(always)]
    pub(super) fn m_q16_of_sum(&self, sum: u32, k: u32) -> u32 {
        debug_assert!(sum < 1 << 21 && k <= 5);
        shr_u64_sat(mul_wide_u32(sum << (5 - k), self.m_scale_q32), 21)
    }

    /// The increment `2³²·T_s/t(M)` of a reading at or above pickup, `None` below pickup.
    #[inline]
    pub(super) fn increment(&self, reading: u16) -> Option<u32> {
        self.increment_m(self.m_q16(reading))
    }

    /// The increment `2³²·T_s/t(M)` at the multiple `m` (Q16), `None` below one.
    #[inline]
    pub(super) fn increment_m(&self, m: u32) -> Option<u32> {
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
        // a + ⌊(b − a)·frac/2¹⁶ + ½⌋ lies between a and b: exact in wrapping u32 arithmetic.
        // The wrapped difference is b − a itself when its sign agrees with b < a; otherwise
        // (|b − a| ≥ 2³¹, raw tables only) the i64 product is taken.
        let d = b.wrapping_sub(a) as i32;
        Some(if (d < 0) == (b < a) {
            a.wrapping_add(mul_frac_q16(d, frac_q16, 1 << 15) as u32)
        } else {
            let d = b as i64 - a as i64;
            (a as i64 + ((d * frac_q16 as i64 + (1 << 15)) >> 16)) as u32
        })
    }
}

/// Largest relative error of the increment over the documented range (every reading).
pub(super) fn measure_table_error(t: &InverseTable, el: &InverseTime, ts: f32, apc: f32) -> f64 {
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
