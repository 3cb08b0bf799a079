//! Fixed-point helpers shared by the kernels.
//!
//! Formats: `Q31` is an `i32` with 31 fractional bits (`1 << 31` would be 1.0 and is not
//! representable; the largest value is `1 − 2⁻³¹`). `Q16` is an `i32` with 16 fractional bits.
//! Products are formed in `i64` and shifted back once.

/// `1.0` in Q31 as an `i64` (not representable in `i32`).
pub const Q31_ONE: i64 = 1 << 31;
/// `1.0` in Q16.
pub const Q16_ONE: i64 = 1 << 16;

/// Plan side: `x` (expected in `0.0 ..= 1.0`) to Q31, rounded to nearest, saturating at the ends
/// of the representable range. NaN gives 0.
#[must_use]
pub fn q31_from_f32(x: f32) -> i32 {
    let scaled = x as f64 * Q31_ONE as f64;
    // `as` saturates and maps NaN to 0.
    libm::round(scaled) as i32
}

/// Plan side: `x` to Q16, rounded to nearest, saturating at the `i32` range. NaN gives 0.
#[must_use]
pub fn q16_from_f32(x: f32) -> i32 {
    libm::round(x as f64 * Q16_ONE as f64) as i32
}

/// Saturates an `i64` into `lo ..= hi`.
#[inline(always)]
#[must_use]
pub const fn clamp_i64(x: i64, lo: i64, hi: i64) -> i64 {
    if x < lo {
        lo
    } else if x > hi {
        hi
    } else {
        x
    }
}

/// `x · c_q16`, rounded to nearest, in the integer unit of `x` times the unit of `c`.
#[inline(always)]
#[must_use]
pub const fn mul_q16_round(x: i32, c_q16: i32) -> i64 {
    (x as i64 * c_q16 as i64 + (1 << 15)) >> 16
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn conversions_saturate_and_round() {
        assert_eq!(q31_from_f32(0.5), 1 << 30);
        assert_eq!(q31_from_f32(1.0), i32::MAX);
        assert_eq!(q31_from_f32(f32::NAN), 0);
        assert_eq!(q16_from_f32(1.5), 98_304);
        assert_eq!(mul_q16_round(3, 1 << 15), 2); // 1.5 rounds to 2
        assert_eq!(mul_q16_round(-3, 1 << 15), -1); // -1.5 rounds to -1 (half up)
        assert_eq!(clamp_i64(5, 0, 3), 3);
    }
}
