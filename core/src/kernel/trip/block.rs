//! The arithmetic of the block update (once per block of `K = 2^k` samples), in 32-bit pieces:
//! the 64-bit products and variable shifts it needs are library calls on Cortex-M0. Each
//! function equals the `i64`/`u64` formulation it replaces for every input (unit tests below).

use super::table::Q16;
use crate::kernel::q::{mul_u32_q16_floor, mul_wide_u32, shr_u64_sat};

/// The block's mean of `r² >> 5` times 32, plus 16 (half the truncation, added back):
/// `(Σ(r² >> 5) << (5 − k)) + 16`, saturated to `u32`.
#[inline(always)]
pub(super) fn mean_square(sum_sq: u32, k: u32) -> u32 {
    debug_assert!(k <= 5);
    let sh = 5 - k;
    // Above u32::MAX >> sh the shift would push bits out of the word (never for a state made
    // by the detector: Σ(r² >> 5) < 2^(27 + k)).
    if sum_sq > u32::MAX >> sh {
        u32::MAX
    } else {
        (sum_sq << sh).saturating_add(16)
    }
}

/// `x²` in Q24 of a mean square: `mean_sq · x2_mul >> shift`, saturated to `u32`.
#[inline(always)]
pub(super) fn x2_q24(mean_sq: u32, x2_mul: u32, shift: u8) -> u32 {
    shr_u64_sat(mul_wide_u32(mean_sq, x2_mul), u32::from(shift & 63))
}

/// One exact thermal step `θ += (1 − b_K)(x² − θ)` of θ in Q24 with 16 fraction bits below it
/// (`theta·2¹⁶ + frac`, Q40), the step floored in Q40: returns the new `(theta, frac)`, held at
/// `(0, 0)` below zero and at `(u32::MAX, 0)` from `u32::MAX` up. `step_q32 < 2³¹`.
///
/// With `P = |x² − θ|·step` (below 2⁶³), the Q40 step is `⌊P/2¹⁶⌋` upward and `−⌈P/2¹⁶⌉`
/// downward; its bits 16 and up are the high word of `P` (of `P + 2¹⁶ − 1` downward) and bits 0
/// to 15 are the high half of the low word, carried into or borrowed from `frac`.
#[inline(always)]
pub(super) fn thermal_step(theta: u32, frac: u16, x2: u32, step_q32: u32) -> (u32, u16) {
    debug_assert!(step_q32 < 1 << 31);
    if x2 >= theta {
        let p = mul_wide_u32(x2 - theta, step_q32);
        let t = u32::from(frac) + ((p as u32) >> 16);
        // The high word is below 2³¹, so adding the carry cannot wrap.
        let up = ((p >> 32) as u32) + (t >> 16);
        match theta.checked_add(up) {
            Some(th) if th != u32::MAX => (th, t as u16),
            _ => (u32::MAX, 0),
        }
    } else {
        let p = mul_wide_u32(theta - x2, step_q32) + 0xFFFF;
        let t = i32::from(frac) - ((p as u32) >> 16) as i32;
        let down = ((p >> 32) as u32) + u32::from(t < 0);
        match theta.checked_sub(down) {
            // `t as u16` is t mod 2¹⁶: the fraction after the borrow.
            Some(th) if th != u32::MAX => (th, t as u16),
            Some(_) => (u32::MAX, 0),
            None => (0, 0),
        }
    }
}

/// `v << k` and whether bits were pushed out of the word (`k ≤ 5`).
#[inline(always)]
fn shl_checked(v: u32, k: u32) -> (u32, bool) {
    debug_assert!(k <= 5);
    (v << k, v.checked_shr(32 - k).unwrap_or(0) != 0)
}

/// The inverse-time accumulator after `K = 2^k` increments `inc` (Q32): `None` when it reaches
/// one (a trip; also for an increment of `u32::MAX`, a rate beyond the table).
#[inline(always)]
pub(super) fn inverse_up(acc_q32: u32, inc_q32: u32, k: u32) -> Option<u32> {
    let (add, lost) = shl_checked(inc_q32, k);
    match acc_q32.checked_add(add) {
        Some(total) if !lost && inc_q32 != u32::MAX => Some(total),
        _ => None,
    }
}

/// The inverse-time accumulator run back over `K = 2^k` samples below pickup by
/// `T_s(1 − M²)/(TD·t_r)` per sample (`reset_q32` is `2³²·T_s/(TD·t_r)`, `m_q16 < 2¹⁶`), held
/// at zero.
#[inline(always)]
pub(super) fn inverse_back(acc_q32: u32, reset_q32: u32, m_q16: u32, k: u32) -> u32 {
    debug_assert!(m_q16 < Q16);
    let one_minus_m2 = Q16 - ((m_q16 * m_q16) >> 16);
    let dec = if one_minus_m2 >= Q16 {
        reset_q32
    } else {
        mul_u32_q16_floor(reset_q32, one_minus_m2)
    };
    let (dec, lost) = shl_checked(dec, k);
    if lost || dec >= acc_q32 {
        0
    } else {
        acc_q32 - dec
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    /// The block update's arithmetic as first written, in i64/u64.
    fn thermal_step_i64(theta: u32, frac: u16, x2: u32, step: u32) -> (u32, u16) {
        let diff = i64::from(x2) - i64::from(theta);
        let q40 = ((i64::from(theta) << 16) | i64::from(frac)) + ((diff * i64::from(step)) >> 16);
        if q40 < 0 {
            (0, 0)
        } else if q40 >= i64::from(u32::MAX) << 16 {
            (u32::MAX, 0)
        } else {
            ((q40 >> 16) as u32, q40 as u16)
        }
    }

    fn edgy_u32() -> impl Strategy<Value = u32> {
        prop_oneof![
            any::<u32>(),
            Just(0u32),
            Just(u32::MAX),
            Just(u32::MAX - 1),
            0u32..70_000,
            (1u32 << 24)..(1u32 << 26),
            (u32::MAX - 70_000)..=u32::MAX,
        ]
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(4000))]
        /// Each 32-bit form equals the i64/u64 formulation (computed: exact integer identity,
        /// on edge and random values).
        #[test]
        fn same_as_the_64_bit_formulation(
            theta in edgy_u32(), frac in any::<u16>(), x2 in edgy_u32(),
            step in prop_oneof![0u32..(1 << 31), Just((1u32 << 31) - 1), 0u32..1000],
            sum_sq in edgy_u32(), k in 0u32..=5, mul in edgy_u32(), shift in any::<u8>(),
            acc in edgy_u32(), inc in edgy_u32(), reset in edgy_u32(), m in 0u32..(1 << 16),
        ) {
            prop_assert_eq!(thermal_step(theta, frac, x2, step), thermal_step_i64(theta, frac, x2, step));
            let mean = ((u64::from(sum_sq) << (5 - k)) + 16).min(u64::from(u32::MAX)) as u32;
            prop_assert_eq!(mean_square(sum_sq, k), mean);
            let x = (u64::from(mean) * u64::from(mul)) >> (shift & 63);
            prop_assert_eq!(x2_q24(mean, mul, shift), x.min(u64::from(u32::MAX)) as u32);
            let total = u64::from(acc) + (u64::from(inc) << k);
            let up = (total < 1 << 32 && inc != u32::MAX).then_some(total as u32);
            prop_assert_eq!(inverse_up(acc, inc, k), up);
            let om2 = u64::from(Q16.saturating_sub((m * m) >> 16));
            let dec = ((u64::from(reset) * om2) >> 16) << k;
            let back = if dec >= u64::from(acc) { 0 } else { acc - dec as u32 };
            prop_assert_eq!(inverse_back(acc, reset, m, k), back);
        }
    }
}
