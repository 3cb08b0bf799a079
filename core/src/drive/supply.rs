//! The supply reading in mV: one conversion shared by the drivers.

use crate::kernel::q::mul_wide;

/// The supply in mV for a reading of `counts`: `(counts − zero)·mv_per_count_q16 >> 16`,
/// saturated to `0 ..= i32::MAX` (a reading below the zero counts as 0 V).
#[inline]
#[must_use]
pub(crate) fn supply_mv(counts: u16, zero_counts: u16, mv_per_count_q16: i32) -> i32 {
    let d = counts as i32 - zero_counts as i32;
    let mv = mul_wide(d, mv_per_count_q16) >> 16;
    if mv < 0 {
        0
    } else if mv > i32::MAX as i64 {
        i32::MAX
    } else {
        mv as i32
    }
}
