//! Duty as a fraction (Q16) and as counts of a PWM's `max_duty_cycle`, without a division in
//! the tick.

/// `1.0` as a Q16 duty fraction.
pub const DUTY_ONE_Q16: u32 = 1 << 16;

/// A PWM's resolution: its `max_duty_cycle` and the Q32 reciprocal that turns counts into a
/// fraction with two 16×16 multiplies (the one division is made once, at construction).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(crate) struct DutyScale {
    max: u16,
    /// `round(2³²/max)`, at most `u32::MAX`.
    recip_q32: u32,
}

impl DutyScale {
    /// The scale of a PWM with `max_duty_cycle() == max`; `None` for 0.
    pub(crate) const fn new(max: u16) -> Option<Self> {
        if max == 0 {
            return None;
        }
        let m = max as u64;
        let r = ((1u64 << 32) + m / 2) / m;
        let recip_q32 = if r > u32::MAX as u64 {
            u32::MAX
        } else {
            r as u32
        };
        Some(Self { max, recip_q32 })
    }

    /// Full scale, counts.
    pub(crate) const fn max(&self) -> u16 {
        self.max
    }

    /// `round(d·max)` for a fraction `d_q16` in `0 ..= 1` (saturated), counts.
    #[inline]
    pub(crate) const fn counts(&self, d_q16: u32) -> u16 {
        let d = if d_q16 > DUTY_ONE_Q16 {
            DUTY_ONE_Q16
        } else {
            d_q16
        };
        // d ≤ 2¹⁶ and max < 2¹⁶: the product fits a u32, and the result is at most max.
        ((d * self.max as u32 + (1 << 15)) >> 16) as u16
    }

    /// `counts/max` as a Q16 fraction, rounded to nearest (exactly 2¹⁶ at full scale), with
    /// `counts` saturated to `max`.
    #[inline]
    pub(crate) const fn fraction_q16(&self, counts: u16) -> u32 {
        let c = if counts > self.max {
            self.max as u32
        } else {
            counts as u32
        };
        // counts·recip = hi·2¹⁶ + lo with both partial products below 2³² (16×16 bits each).
        let hi = c * (self.recip_q32 >> 16);
        let lo = c * (self.recip_q32 & 0xFFFF);
        let q = hi + ((lo + (1 << 15)) >> 16);
        if q > DUTY_ONE_Q16 { DUTY_ONE_Q16 } else { q }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Against the exact rational `counts/max` (computed: exact integer arithmetic).
    #[test]
    fn fraction_is_within_one_lsb_for_every_resolution() {
        assert!(DutyScale::new(0).is_none());
        for max in [1u16, 2, 3, 7, 100, 255, 1000, 1023, 4095, 30_000, 65_535] {
            let s = DutyScale::new(max).unwrap();
            assert_eq!(s.max(), max);
            assert_eq!(s.fraction_q16(max), DUTY_ONE_Q16, "{max}");
            assert_eq!(s.fraction_q16(0), 0);
            assert_eq!(s.counts(DUTY_ONE_Q16), max);
            assert_eq!(s.counts(u32::MAX), max);
            let step = (max / 97).max(1);
            let mut c = 0u16;
            loop {
                let exact = f64::from(c) * 65536.0 / f64::from(max);
                let got = f64::from(s.fraction_q16(c));
                assert!((got - exact).abs() <= 1.0, "{max} {c}: {got} vs {exact}");
                assert_eq!(s.counts(s.fraction_q16(c)), c, "{max} {c}");
                if c > max - step {
                    break;
                }
                c += step;
            }
        }
    }
}
