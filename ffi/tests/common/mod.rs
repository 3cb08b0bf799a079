//! Helpers shared by the C API's tests: proptest settings, status checks, storage as C
//! allocates it, and the duty limiter's raw values.

#![allow(dead_code)] // each test file uses its own subset.

use std::mem::MaybeUninit;

use lenz_ffi::{LenzDutyLimiterRaw, LenzStatus};
use proptest::prelude::*;
use proptest::test_runner::{Config as ProptestConfig, RngSeed};

/// `cases` cases from a fixed seed, no failure file (the cases are the same on every run).
pub fn config(seed: u64, cases: u32) -> ProptestConfig {
    ProptestConfig {
        cases,
        rng_seed: RngSeed::Fixed(seed),
        failure_persistence: None,
        ..ProptestConfig::default()
    }
}

#[track_caller]
pub fn ok(s: LenzStatus) {
    assert_eq!(s, LenzStatus::Ok);
}

/// Storage of a `T` as C allocates it: uninitialised until an init function fills it.
pub fn storage<T>() -> MaybeUninit<T> {
    MaybeUninit::uninit()
}

/// Raw duty-limiter values with `full_scale` drawn from `full_scale`.
pub fn duty_raw(
    full_scale: impl Strategy<Value = u16>,
) -> impl Strategy<Value = LenzDutyLimiterRaw> {
    (
        (any::<u16>(), any::<u16>(), 0u8..20),
        prop::array::uniform32(any::<i32>()),
        prop::array::uniform32(any::<i32>()),
        prop::array::uniform32(any::<i32>()),
        (any::<i32>(), any::<u16>(), full_scale, any::<i32>()),
        (any::<u16>(), any::<u16>(), any::<u16>(), any::<u16>()),
    )
        .prop_map(
            |((a, b, shift), sat, peak, light, (off, on, fs, slew), (vlo, vhi, ov, res))| {
                LenzDutyLimiterRaw {
                    vin_lo_counts: a.min(b),
                    vin_hi_counts: a.max(b),
                    shift,
                    saturation_q8: sat,
                    gain_peak_q8: peak,
                    light_load_q8: light,
                    min_off_q8: off,
                    min_on_counts: on,
                    full_scale: fs,
                    slew_q8: slew,
                    vout_lo_counts: vlo.min(vhi),
                    vout_hi_counts: vlo.max(vhi),
                    ov_trip_counts: ov,
                    ov_resume_counts: res,
                }
            },
        )
}
