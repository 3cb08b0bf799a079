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
    (mul_wide(x, c_q16) + (1 << 15)) >> 16
}

/// The exact product `a · b` of two `i32` as an `i64` (never overflows).
///
/// Cores with a 32×32→64 multiply (Cortex-M3/M4: `smull`) get the plain widening product.
/// ARMv6-M (Cortex-M0/M0+) has only a 32×32→32 `muls`, and the compiler turns an `i64`
/// product into a call of the general 64×64 library multiply (about 40 instructions with the
/// call). There the product is formed from 16-bit halves, `a = a_hi·2¹⁶ + a_lo` with `a_hi`
/// signed and `a_lo` unsigned:
///
/// ```text
/// a·b = a_hi·b_hi·2³² + (a_hi·b_lo + a_lo·b_hi)·2¹⁶ + a_lo·b_lo
/// ```
///
/// where each partial product fits 32 bits (`|a_hi·b_hi| ≤ 2³⁰`, `|a_hi·b_lo| < 2³¹`,
/// `a_lo·b_lo < 2³²` unsigned): four `muls` and a few adds, inline. ARMv6-M is recognised by
/// its lack of atomic read-modify-write (`target_has_atomic = "ptr"`), the one stable `cfg`
/// that tells it apart from ARMv7-M.
#[inline(always)]
#[must_use]
pub const fn mul_wide(a: i32, b: i32) -> i64 {
    if ARMV6M {
        mul_halves(a, b)
    } else {
        a as i64 * b as i64
    }
}

/// `true` when compiling for ARMv6-M (Cortex-M0/M0+): no 32×32→64 multiply, no `CLZ`. Recognised
/// by its lack of atomic read-modify-write (`target_has_atomic = "ptr"`), the one stable `cfg`
/// that tells it apart from ARMv7-M. Kernels pick cheaper instruction sequences for it; every
/// such sequence is exact and tested on the host against the general one.
pub(crate) const ARMV6M: bool = cfg!(all(target_arch = "arm", not(target_has_atomic = "ptr")));

/// `(u·g + round) >> 16` for `|u| < 2¹⁶` and `round < 2¹⁶`, exact, from two 32-bit products
/// (the ARMv6-M form of a Q16 product of a small integer; `round` is `2¹⁵` to round to
/// nearest, 0 to floor).
///
/// With `g = g_hi·2¹⁶ + g_lo` (`g_hi` signed, `g_lo` unsigned 16 bits) and `u ≥ 0`:
/// `u·g + round = u·g_hi·2¹⁶ + (u·g_lo + round)`, and the first term has no bits below 2¹⁶, so
/// the shift splits exactly: `u·g_hi + ((u·g_lo + round) >> 16)`. Here `|u·g_hi| < 2³¹` and
/// `u·g_lo + round < 2³²` (unsigned), and the sum lies strictly within the `i32` range. For
/// `u = −a < 0`, `⌊(−a·g + round)/2¹⁶⌋ = −⌊(a·g + 2¹⁶ − 1 − round)/2¹⁶⌋`, the same split.
///
/// The caller guarantees `|u| < 2¹⁶` and `round < 2¹⁶` (`debug_assert!`); the result is then
/// the exact `i32`.
#[inline(always)]
#[must_use]
pub const fn mul_q16_small(u: i32, g: i32, round: u32) -> i32 {
    debug_assert!(u > -(1 << 16) && u < (1 << 16) && round < (1 << 16));
    let g_hi = g >> 16;
    let g_lo = (g as u32) & 0xFFFF;
    if u >= 0 {
        u * g_hi + ((u as u32 * g_lo + round) >> 16) as i32
    } else {
        let a = -u;
        -(a * g_hi + ((a as u32 * g_lo + (0xFFFF - round)) >> 16) as i32)
    }
}

/// `(u·g + 2¹⁵) >> 16` for `|u| < 2¹⁶`: [`mul_q16_small`] rounding to nearest (half up).
#[inline(always)]
#[must_use]
pub const fn mul_q16_round_small(u: i32, g: i32) -> i32 {
    mul_q16_small(u, g, 1 << 15)
}

/// `⌊a·b / 2¹⁶⌋` of any `a` and `b < 2¹⁶`, exact (it fits a `u32`). On ARMv6-M from two 32-bit
/// products, `(a >> 16)·b + ((a & 0xFFFF)·b >> 16)` (the first term has no bits below 2¹⁶);
/// elsewhere one 32×32→64 unsigned multiply.
#[inline(always)]
#[must_use]
pub const fn mul_u32_q16_floor(a: u32, b: u32) -> u32 {
    debug_assert!(b < 1 << 16);
    if ARMV6M {
        (a >> 16) * b + (((a & 0xFFFF) * b) >> 16)
    } else {
        ((a as u64 * b as u64) >> 16) as u32
    }
}

/// `(d·f + round) >> 16` of any `d`, a fraction `f < 2¹⁶` (Q16, below one) and `round < 2¹⁶`,
/// exact; the result lies between 0 and `d`. On ARMv6-M from two 32-bit products,
/// `(d >> 16)·f + (((d & 0xFFFF)·f + round) >> 16)` (the first term has no bits below 2¹⁶,
/// `|(d >> 16)·f| < 2³¹`); elsewhere one 32×32→64 multiply.
#[inline(always)]
#[must_use]
pub const fn mul_frac_q16(d: i32, f_q16: u32, round: u32) -> i32 {
    debug_assert!(f_q16 < 1 << 16 && round < 1 << 16);
    if ARMV6M {
        (d >> 16) * f_q16 as i32 + (((((d as u32) & 0xFFFF) * f_q16) + round) >> 16) as i32
    } else {
        ((d as i64 * f_q16 as i64 + round as i64) >> 16) as i32
    }
}

/// `⌊d·f / 2¹⁶⌋`: [`mul_frac_q16`] rounding down.
#[inline(always)]
#[must_use]
pub const fn mul_frac_q16_floor(d: i32, f_q16: u32) -> i32 {
    mul_frac_q16(d, f_q16, 0)
}

/// The exact product of two `u32` as a `u64`: [`mul_wide`] for unsigned operands (on ARMv6-M
/// four 32-bit multiplies, inline, instead of the 64-bit library multiply).
#[inline(always)]
#[must_use]
pub const fn mul_wide_u32(a: u32, b: u32) -> u64 {
    if ARMV6M {
        let (a1, a0) = (a >> 16, a & 0xFFFF);
        let (b1, b0) = (b >> 16, b & 0xFFFF);
        let mid = (a1 * b0) as u64 + (a0 * b1) as u64;
        (((a1 * b1) as u64) << 32) + (mid << 16) + (a0 * b0) as u64
    } else {
        a as u64 * b as u64
    }
}

/// `p >> shift` saturated to the `u32` range, for `shift < 64`, from 32-bit shifts (a variable
/// 64-bit shift is a library call on ARMv6-M).
#[inline(always)]
#[must_use]
pub const fn shr_u64_sat(p: u64, shift: u32) -> u32 {
    debug_assert!(shift < 64);
    let (hi, lo) = ((p >> 32) as u32, p as u32);
    if shift >= 32 {
        hi >> (shift - 32)
    } else if shift == 0 {
        if hi != 0 { u32::MAX } else { lo }
    } else if hi >> shift != 0 {
        u32::MAX
    } else {
        (lo >> shift) | (hi << (32 - shift))
    }
}

/// [`mul_wide`] from 16-bit halves (the ARMv6-M form; exact on every target).
#[inline(always)]
const fn mul_halves(a: i32, b: i32) -> i64 {
    let (a_hi, a_lo) = (a >> 16, a & 0xFFFF);
    let (b_hi, b_lo) = (b >> 16, b & 0xFFFF);
    let hi = a_hi * b_hi;
    let mid = (a_hi * b_lo) as i64 + (a_lo * b_hi) as i64;
    let lo = (a_lo as u32 * b_lo as u32) as i64;
    (((hi as i64) << 32) + (mid << 16)) + lo
}

#[cfg(test)]
mod tests {
    use super::*;
    extern crate std;

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

    /// The two-product forms against the `i64` ones (computed: exact integer identity, over
    /// every `u` of the range against edge and pseudo-random `g`, with floor and rounding).
    #[test]
    fn small_products_are_exact() {
        let mut x = 0x9E37_79B9_7F4A_7C15u64;
        let mut gs = std::vec![
            0,
            1,
            -1,
            0xFFFF,
            0x1_0000,
            -0x1_0000,
            i32::MIN,
            i32::MAX,
            0x7FFF_8000
        ];
        for _ in 0..60 {
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            gs.push(x as i32);
        }
        for &g in &gs {
            for u in -0xFFFF..=0xFFFF {
                let want = (u as i64 * g as i64 + (1 << 15)) >> 16;
                assert_eq!(i64::from(mul_q16_round_small(u, g)), want, "{u} * {g}");
                let want = (u as i64 * g as i64) >> 16;
                assert_eq!(i64::from(mul_q16_small(u, g, 0)), want, "{u} * {g}");
            }
            // A fraction below one times any d, floored and rounded.
            let f = (g as u32) & 0xFFFF;
            for d in [0, 1, -1, 0xFFFF, -0x1_0000, i32::MIN, i32::MAX, g, g >> 7] {
                for round in [0u32, 1 << 15, 0xFFFF] {
                    let want = (i64::from(d) * i64::from(f) + i64::from(round)) >> 16;
                    assert_eq!(i64::from(mul_frac_q16(d, f, round)), want, "{d} * {f}");
                    let halves =
                        (d >> 16) * f as i32 + (((((d as u32) & 0xFFFF) * f) + round) >> 16) as i32;
                    assert_eq!(i64::from(halves), want, "{d} * {f}");
                }
            }
            // Unsigned wide products and saturating shifts.
            for a in [
                0u32,
                1,
                0xFFFF,
                u32::MAX,
                g as u32,
                (g as u32).rotate_left(9),
            ] {
                let b = (g as u32).rotate_left(17);
                let want = u64::from(a) * u64::from(b);
                assert_eq!(mul_wide_u32(a, b), want);
                let (a1, a0, b1, b0) = (a >> 16, a & 0xFFFF, b >> 16, b & 0xFFFF);
                let mid = u64::from(a1 * b0) + u64::from(a0 * b1);
                let halves = (u64::from(a1 * b1) << 32) + (mid << 16) + u64::from(a0 * b0);
                assert_eq!(halves, want);
                for sh in 0..64 {
                    let sat = (want >> sh).min(u64::from(u32::MAX)) as u32;
                    assert_eq!(shr_u64_sat(want, sh), sat, "{want} >> {sh}");
                }
            }
            // Unsigned floor: b < 2¹⁶ against a over edges and the pseudo-random values.
            let b = (g as u32) & 0xFFFF;
            for a in [
                0u32,
                1,
                0xFFFF,
                0x1_0000,
                1 << 31,
                (1 << 31) - 1,
                g as u32 >> 1,
            ] {
                let want = (u64::from(a) * u64::from(b)) >> 16;
                assert_eq!(u64::from(mul_u32_q16_floor(a, b)), want, "{a} * {b}");
                // The ARMv6-M form, written out (the function picks it only on that target).
                let halves = (a >> 16) * b + (((a & 0xFFFF) * b) >> 16);
                assert_eq!(u64::from(halves), want, "{a} * {b}");
            }
        }
    }

    /// The half-word product of ARMv6-M against the `i64` product (computed: exact integer
    /// identity, checked over the edges and a pseudo-random sweep).
    #[test]
    fn wide_product_is_exact() {
        let edges = [
            0,
            1,
            -1,
            0xFFFF,
            0x1_0000,
            -0x1_0000,
            i32::MIN,
            i32::MAX,
            i32::MIN + 1,
        ];
        for &a in &edges {
            for &b in &edges {
                assert_eq!(mul_wide(a, b), a as i64 * b as i64, "{a} * {b}");
                assert_eq!(mul_halves(a, b), a as i64 * b as i64, "{a} * {b}");
            }
        }
        let mut x = 0x2545_F491_4F6C_DD1Du64;
        for _ in 0..100_000 {
            x ^= x << 13;
            x ^= x >> 7;
            x ^= x << 17;
            let (a, b) = (x as i32, (x >> 32) as i32);
            assert_eq!(mul_halves(a, b), a as i64 * b as i64, "{a} * {b}");
        }
    }
}
