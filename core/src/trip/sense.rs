//! Sense chain scaling: shunt, amplifier and ADC, each with its tolerance, to a trip threshold
//! in ADC counts with a guaranteed band.
//!
//! # Model
//!
//! A current `I` through the shunt `R_sh` gives `I·R_sh`; the amplifier adds its
//! input-referred offset `V_os` and multiplies by its gain `G`; the ADC with reference `V_ref`
//! and `N` bits reads `code = (I R_sh + V_os)·G·2^N / V_ref`. The detector trips at a reading
//! at or above its threshold code `c`, so the true current that trips at code `c` is
//!
//! ```text
//! I(c) = ( c·V_ref(1+δV)/2^N / (G(1+δG)) − V_os ) / ( R_sh(1+δR) )
//! ```
//!
//! with each part anywhere within its tolerance. Nominally one count is
//! `I_LSB = V_ref/(2^N R_sh G)` and the code for a wanted trip current `I_trip` is
//! `ceil(I_trip/I_LSB)`.
//!
//! # Worst case and probable case
//!
//! The guaranteed band of a code, the lowest and the highest true current that can trip at
//! it, comes from a corner search over the four tolerances ([`crate::bounds::worst_case`]):
//! `I(c)` is monotonic in each part, so the extremes sit at corners. To first order the
//! relative half-width of the band is the linear sum `δR + δG + δV + V_os/(I R_sh)` (the worst
//! case); the root-sum-square of the same terms is the *probable* spread of a production lot
//! with independent parts, not a guarantee (P. Semig, C. Wells, TI, "A Current Sensing
//! Tutorial — Part III: Accuracy", 2012).
//!
//! - [`SenseChain::code_at_or_below`]: the highest code whose band lies at or below a safe
//!   current: every part within tolerance trips at or below it (protection).
//! - [`SenseChain::code_at_or_above`]: the lowest code whose band lies at or above a normal
//!   current: no part within tolerance trips at or below it (no nuisance trip).

use crate::bounds::{Bound, Range, worst_case};
use crate::error::{Error, finite_result, in_range, non_negative, positive};

/// Parts of a sense chain with their tolerances (before validation).
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct SenseParams {
    /// Shunt resistance, Ω.
    pub shunt_ohm: f32,
    /// Relative shunt tolerance (0.01 for ±1 %).
    pub shunt_tol: f32,
    /// Amplifier gain, V/V.
    pub gain: f32,
    /// Relative gain tolerance.
    pub gain_tol: f32,
    /// Largest input-referred amplifier offset magnitude, V.
    pub offset_v: f32,
    /// ADC reference, V.
    pub vref_v: f32,
    /// Relative reference tolerance.
    pub vref_tol: f32,
    /// ADC resolution, bits (1 ..= 24).
    pub bits: u8,
}

/// A validated sense chain.
///
/// # Examples
///
/// ```
/// use lenz::trip::{SenseChain, SenseParams};
/// let chain = SenseChain::new(&SenseParams {
///     shunt_ohm: 0.010, shunt_tol: 0.01, gain: 20.0, gain_tol: 0.005,
///     offset_v: 150e-6, vref_v: 3.3, vref_tol: 0.01, bits: 12,
/// })?;
/// assert_eq!(chain.code_for_a(8.0)?, 1986);
/// let band = chain.band(1986)?;
/// assert!(band.min > 7.78 && band.max < 8.22);
/// # Ok::<(), lenz::Error>(())
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct SenseChain {
    p: SenseParams,
}

/// Corner of a band: actual shunt Ω, gain, offset V, reference V.
pub type SenseCorner = [f32; 4];

/// A threshold code with its guaranteed band.
#[derive(Debug, Clone, Copy, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[cfg_attr(feature = "serde", derive(serde::Serialize, serde::Deserialize))]
pub struct TripCode {
    /// Threshold code (trip at a reading at or above it).
    pub code: u32,
    /// Lowest and highest true current that trips at `code`, with the corners
    /// (`[shunt_ohm, gain, offset_v, vref_v]`).
    pub band: Bound<SenseCorner>,
}

impl SenseChain {
    /// Validates the parts.
    ///
    /// # Errors
    ///
    /// `shunt_ohm`, `gain`, `vref_v` not positive; tolerances outside `0 ..= 0.5`;
    /// `offset_v` negative or above 1 V; `bits` outside `1 ..= 24`.
    pub fn new(p: &SenseParams) -> Result<Self, Error> {
        in_range("shunt_ohm", positive("shunt_ohm", p.shunt_ohm)?, 0.0, 1.0e6)?;
        in_range("gain", positive("gain", p.gain)?, 0.0, 1.0e6)?;
        in_range("vref_v", positive("vref_v", p.vref_v)?, 0.0, 1.0e3)?;
        in_range("shunt_tol", p.shunt_tol, 0.0, 0.5)?;
        in_range("gain_tol", p.gain_tol, 0.0, 0.5)?;
        in_range("vref_tol", p.vref_tol, 0.0, 0.5)?;
        in_range("offset_v", non_negative("offset_v", p.offset_v)?, 0.0, 1.0)?;
        in_range("bits", f32::from(p.bits), 1.0, 24.0)?;
        Ok(Self { p: *p })
    }

    /// The parts.
    #[must_use]
    pub const fn params(&self) -> &SenseParams {
        &self.p
    }

    fn counts(&self) -> f32 {
        (1u32 << self.p.bits) as f32
    }

    /// Largest ADC code, `2^N − 1`.
    #[must_use]
    pub const fn max_code(&self) -> u32 {
        (1u32 << self.p.bits) - 1
    }

    /// Nominal current per count, `V_ref/(2^N R_sh G)`, A.
    #[must_use]
    pub fn amps_per_lsb(&self) -> f32 {
        self.p.vref_v / (self.counts() * self.p.shunt_ohm * self.p.gain)
    }

    /// Nominal full-scale current, `V_ref/(R_sh G)`, A.
    #[must_use]
    pub fn full_scale_a(&self) -> f32 {
        self.p.vref_v / (self.p.shunt_ohm * self.p.gain)
    }

    /// Nominal threshold code for `current_a`: `ceil(I/I_LSB)`.
    ///
    /// # Errors
    ///
    /// `current_a` not positive; [`Error::Unreachable`] (limit: the full-scale current) when
    /// the code exceeds the largest code.
    pub fn code_for_a(&self, current_a: f32) -> Result<u32, Error> {
        let i = positive("current_a", current_a)?;
        let code = libm::ceilf(i / self.amps_per_lsb());
        if code.is_nan() || code > self.max_code() as f32 {
            return Err(Error::Unreachable {
                param: "current_a",
                target: i,
                limit: self.max_code() as f32 * self.amps_per_lsb(),
            });
        }
        Ok(code as u32)
    }

    /// Nominal current at `code`, A.
    #[must_use]
    pub fn current_at_code_a(&self, code: u32) -> f32 {
        code as f32 * self.amps_per_lsb()
    }

    /// True current that trips at `code` with the parts at `corner`
    /// (`[shunt_ohm, gain, offset_v, vref_v]`), A.
    #[must_use]
    pub fn current_at_corner_a(&self, code: u32, corner: &SenseCorner) -> f32 {
        let [r, g, vos, vref] = *corner;
        (code as f32 * vref / self.counts() / g - vos) / r
    }

    /// Guaranteed band of `code` by corner search (module docs).
    ///
    /// # Errors
    ///
    /// `code` above the largest code (`code` out of range).
    pub fn band(&self, code: u32) -> Result<Bound<SenseCorner>, Error> {
        in_range("code", code as f32, 0.0, self.max_code() as f32)?;
        let p = &self.p;
        let ranges = [
            Range::tolerance("shunt_ohm", p.shunt_ohm, p.shunt_tol)?,
            Range::tolerance("gain", p.gain, p.gain_tol)?,
            Range::new("offset_v", -p.offset_v, p.offset_v)?,
            Range::tolerance("vref_v", p.vref_v, p.vref_tol)?,
        ];
        worst_case(&ranges, |c| Ok(self.current_at_corner_a(code, c)))
    }

    fn rel_terms(&self, current_a: f32) -> Result<[f32; 4], Error> {
        let i = positive("current_a", current_a)?;
        let p = &self.p;
        let os = finite_result("current_a", p.offset_v / (i * p.shunt_ohm))?;
        Ok([p.shunt_tol, p.gain_tol, p.vref_tol, os])
    }

    /// Worst-case relative tolerance at `current_a` by the linear sum of the part
    /// tolerances (module docs).
    ///
    /// # Errors
    ///
    /// `current_a` not positive, or so small that the offset term does not fit an `f32`.
    pub fn tolerance_linear_sum(&self, current_a: f32) -> Result<f32, Error> {
        finite_result("current_a", self.rel_terms(current_a)?.iter().sum())
    }

    /// Probable relative tolerance at `current_a`: root-sum-square of the part tolerances.
    ///
    /// # Errors
    ///
    /// `current_a` not positive, or so small that the offset term does not fit an `f32`.
    pub fn tolerance_rss(&self, current_a: f32) -> Result<f32, Error> {
        let terms = self.rel_terms(current_a)?;
        // Scaled by the largest term, so the squares cannot overflow (at a tiny current the
        // offset term alone can exceed the square root of f32::MAX).
        let big = terms.iter().fold(0.0f32, |m, x| m.max(x.abs()));
        if big == 0.0 {
            return Ok(0.0);
        }
        let sum: f32 = terms.iter().map(|x| (x / big) * (x / big)).sum();
        finite_result("current_a", big * libm::sqrtf(sum))
    }

    /// Binary search for the boundary code: the smallest code where `above(band)` holds, given
    /// that it is monotonic in the code.
    fn search(&self, above: impl Fn(&Bound<SenseCorner>) -> bool) -> Result<Option<u32>, Error> {
        let (mut lo, mut hi) = (0u32, self.max_code());
        if !above(&self.band(hi)?) {
            return Ok(None);
        }
        if above(&self.band(lo)?) {
            return Ok(Some(lo));
        }
        // Invariant: `above` fails at lo and holds at hi.
        while hi - lo > 1 {
            let mid = lo + (hi - lo) / 2;
            if above(&self.band(mid)?) {
                hi = mid;
            } else {
                lo = mid;
            }
        }
        Ok(Some(hi))
    }

    /// The highest code at which every part within tolerance trips at or below
    /// `safe_current_a` (band maximum ≤ the safe current), with its band.
    ///
    /// # Errors
    ///
    /// `safe_current_a` not positive; [`Error::Unreachable`] when even code 1 can trip above
    /// it (limit: the band maximum of code 1).
    pub fn code_at_or_below(&self, safe_current_a: f32) -> Result<TripCode, Error> {
        let safe = positive("safe_current_a", safe_current_a)?;
        let first_above = self.search(|b| b.max > safe)?;
        let code = match first_above {
            None => self.max_code(),
            Some(c) if c >= 2 => c - 1,
            Some(_) => {
                return Err(Error::Unreachable {
                    param: "safe_current_a",
                    target: safe,
                    limit: self.band(1)?.max,
                });
            }
        };
        Ok(TripCode {
            code,
            band: self.band(code)?,
        })
    }

    /// The lowest code at which no part within tolerance trips below `normal_current_a`
    /// (band minimum ≥ the normal current: no nuisance trip), with its band.
    ///
    /// # Errors
    ///
    /// `normal_current_a` not positive; [`Error::Unreachable`] when even the largest code can
    /// trip below it (limit: the band minimum of the largest code).
    pub fn code_at_or_above(&self, normal_current_a: f32) -> Result<TripCode, Error> {
        let normal = positive("normal_current_a", normal_current_a)?;
        match self.search(|b| b.min >= normal)? {
            Some(code) => Ok(TripCode {
                code,
                band: self.band(code)?,
            }),
            None => Err(Error::Unreachable {
                param: "normal_current_a",
                target: normal,
                limit: self.band(self.max_code())?.min,
            }),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn demo() -> SenseChain {
        SenseChain::new(&SenseParams {
            shunt_ohm: 0.010,
            shunt_tol: 0.01,
            gain: 20.0,
            gain_tol: 0.005,
            offset_v: 150e-6,
            vref_v: 3.3,
            vref_tol: 0.01,
            bits: 12,
        })
        .unwrap()
    }

    #[test]
    fn boundary_codes_are_tight() {
        let s = demo();
        let below = s.code_at_or_below(8.0).unwrap();
        assert!(below.band.max <= 8.0);
        assert!(s.band(below.code + 1).unwrap().max > 8.0);
        let above = s.code_at_or_above(8.0).unwrap();
        assert!(above.band.min >= 8.0);
        assert!(s.band(above.code - 1).unwrap().min < 8.0);
        assert!(s.code_at_or_above(100.0).is_err());
    }

    proptest! {
        #[test]
        fn no_panic_on_any_input(a in any::<f32>(), b in any::<f32>(), c in any::<f32>(),
                                 bits in any::<u8>(), code in any::<u32>(), i in any::<f32>()) {
            let p = SenseParams { shunt_ohm: a, shunt_tol: b, gain: c, gain_tol: b,
                                  offset_v: b, vref_v: a, vref_tol: b, bits };
            if let Ok(s) = SenseChain::new(&p) {
                let _ = s.band(code);
                let _ = s.code_for_a(i);
                let _ = s.tolerance_rss(i);
                let _ = s.tolerance_linear_sum(i);
            }
            let s = demo();
            let _ = s.band(code);
            let _ = s.code_for_a(i);
            let _ = s.code_at_or_below(i);
            let _ = s.code_at_or_above(i);
        }
    }
}
