//! The C API gives exactly what the Rust kernels give: the same outputs tick by tick on any
//! raw configuration and any inputs, the raw values back exactly, and a status instead of
//! any access for null or misaligned pointers (nothing written then).
//!
//! The calls go through the `extern "C"` functions with uninitialised storage, as C code
//! makes them. Proptest seeds are fixed: every run draws the same cases.

#![allow(
    clippy::undocumented_unsafe_blocks,
    reason = "every unsafe call here passes pointers to live locals of the right type, or null"
)]

use std::mem::MaybeUninit;
use std::ptr;

use lenz::kernel::{
    DutyLimiterConfig, DutyLimiterState, EstimatorConfig, EstimatorState, MonitorConfig,
    MonitorState, OffTimerState, PlannedOffTimerConfig, TrackingOffTimerConfig, TripConfig,
    TripState,
};
use lenz_ffi::*;
use proptest::prelude::*;

mod common;
use common::{config, duty_raw, ok, storage};

/// A pointer one byte past a 4-aligned address: misaligned for every type of 2 or 4 bytes.
fn misaligned<T>(buf: &mut [u32; 256]) -> *mut T {
    buf.as_mut_ptr().cast::<u8>().wrapping_add(1).cast::<T>()
}

fn off_path() -> impl Strategy<Value = LenzOffPath> {
    (any::<i32>(), any::<i32>(), any::<i32>(), any::<u8>()).prop_map(|(s, g, c, k)| LenzOffPath {
        step_q31: s,
        conductance_q16: g,
        clamp_mv: c,
        supply_coupled: k,
    })
}

fn estimator_raw() -> impl Strategy<Value = LenzEstimatorRaw> {
    (any::<i32>(), any::<i32>(), any::<i32>(), off_path()).prop_map(|(s, g, d, off)| {
        LenzEstimatorRaw {
            on_step_q31: s,
            on_conductance_q16: g,
            switch_drop_mv: d,
            off,
        }
    })
}

fn monitor_raw() -> impl Strategy<Value = LenzMonitorRaw> {
    (
        (any::<i32>(), any::<i32>(), any::<u16>(), any::<u16>()),
        (any::<i32>(), any::<i32>(), any::<i32>(), any::<i32>()),
        (0u16..6, 0u16..8, any::<i32>()),
    )
        .prop_map(
            |((o, a, lo, hi), (abs, rel, omin, omax), (p, st, ch))| LenzMonitorRaw {
                scale: LenzSenseScale {
                    offset_counts: o,
                    ua_per_count_q16: a,
                    min_valid_counts: lo.min(hi),
                    max_valid_counts: lo.max(hi),
                },
                abs_tol_ua: abs,
                rel_tol_q16: rel,
                open_min_estimate_ua: omin,
                open_max_ua: omax,
                persistence: p,
                stuck_samples: st,
                stuck_min_change_ua: ch,
            },
        )
}

fn tracking_raw() -> impl Strategy<Value = LenzTrackingOffTimerRaw> {
    (estimator_raw(), any::<i32>(), any::<i32>(), 0u32..40).prop_map(|(e, t, m, s)| {
        LenzTrackingOffTimerRaw {
            estimator: e,
            threshold_ua: t,
            base_margin_ua: m,
            margin_shift: s,
        }
    })
}

fn planned_raw() -> impl Strategy<Value = LenzPlannedOffTimerRaw> {
    (
        prop::array::uniform16(any::<i32>()),
        prop::array::uniform16(prop_oneof![0u32..40, Just(u32::MAX), any::<u32>()]),
    )
        .prop_map(|(mut b, t)| {
            b.sort_unstable();
            LenzPlannedOffTimerRaw {
                breakpoints_ua: b,
                ticks: t,
            }
        })
}

fn trip_raw() -> impl Strategy<Value = LenzTripRaw> {
    (
        (any::<u16>(), any::<u16>(), 0u16..20, 0u8..40, 0u8..40),
        (0u16..8, 0u8..4, 0u16..10, 0u8..8),
        (
            any::<u32>(),
            prop::collection::vec(any::<u32>(), LENZ_INVERSE_TABLE_LEN),
            any::<u32>(),
            any::<u8>(),
        ),
        (any::<u32>(), 0u8..70, any::<u32>(), any::<u32>()),
    )
        .prop_map(
            |((inst, fs, blank, n, m), (stuck, retries, retry, block), inv, (x2, sh, th, ppm))| {
                let mut rate = [0u32; LENZ_INVERSE_TABLE_LEN];
                rate.copy_from_slice(&inv.1);
                LenzTripRaw {
                    instantaneous_counts: inst,
                    full_scale_counts: fs,
                    blank_samples: blank,
                    persistence_n: n,
                    persistence_m: m,
                    stuck_samples: stuck,
                    retries,
                    retry_samples: retry,
                    block_log2: block,
                    inverse_table: LenzInverseTable {
                        m_scale_q32: inv.0,
                        rate_q32: rate,
                        reset_q32: inv.2,
                        instant_reset: inv.3,
                    },
                    x2_mul: x2,
                    x2_shift: sh,
                    thermal_step_q32: th,
                    table_error_ppm: ppm,
                }
            },
        )
}

/// Readings near zero (where the stuck and below-pickup paths are) or anywhere.
fn reading() -> impl Strategy<Value = u16> {
    prop_oneof![0u16..4, any::<u16>()]
}

proptest! {
    #![proptest_config(config(0x6c65_6e7a_ff01, 256))]

    #[test]
    fn estimator_through_c_equals_rust(
        raw in estimator_raw(),
        start in any::<i32>(),
        steps in prop::collection::vec((any::<bool>(), any::<i32>()), 1..64),
    ) {
        let rust = EstimatorConfig::from_raw(raw.into());
        let mut rs = EstimatorState::with_current_ua(start);
        let mut c = storage::<LenzEstimatorConfig>();
        let mut cs = storage::<LenzEstimatorState>();
        ok(unsafe { lenz_estimator_init(c.as_mut_ptr(), &raw) });
        ok(unsafe { lenz_estimator_state_init(cs.as_mut_ptr(), start) });
        for (on, supply_mv) in steps {
            let want = rust.update(&mut rs, on, supply_mv);
            let (mut got, mut now) = (0, 0);
            ok(unsafe { lenz_estimator_update(c.as_ptr(), cs.as_mut_ptr(), on, supply_mv, &mut got) });
            ok(unsafe { lenz_estimator_state_current_ua(cs.as_ptr(), &mut now) });
            prop_assert_eq!(got, want);
            prop_assert_eq!(now, rs.current_ua());
        }
        let mut back = storage::<LenzEstimatorRaw>();
        ok(unsafe { lenz_estimator_raw(c.as_ptr(), back.as_mut_ptr()) });
        let back = unsafe { back.assume_init() };
        let mut want = raw;
        want.off.supply_coupled = u8::from(raw.off.supply_coupled != 0);
        prop_assert_eq!(back, want);
        ok(unsafe { lenz_estimator_state_reset(cs.as_mut_ptr()) });
        let mut now = -1;
        ok(unsafe { lenz_estimator_state_current_ua(cs.as_ptr(), &mut now) });
        prop_assert_eq!(now, 0);
    }

    #[test]
    fn monitor_through_c_equals_rust(
        raw in monitor_raw(),
        steps in prop::collection::vec((any::<i32>(), reading()), 1..64),
    ) {
        let rust = MonitorConfig::from_raw(raw.into());
        let mut rs = MonitorState::new();
        let mut c = storage::<LenzMonitorConfig>();
        let mut cs = storage::<LenzMonitorState>();
        ok(unsafe { lenz_monitor_init(c.as_mut_ptr(), &raw) });
        ok(unsafe { lenz_monitor_state_init(cs.as_mut_ptr()) });
        for (estimate_ua, counts) in steps {
            let want = LenzFault::from(rust.update(&mut rs, estimate_ua, counts));
            let (mut got, mut latched, mut measured) = (LenzFault::None, LenzFault::None, 0);
            ok(unsafe { lenz_monitor_update(c.as_ptr(), cs.as_mut_ptr(), estimate_ua, counts, &mut got) });
            ok(unsafe { lenz_monitor_state_fault(cs.as_ptr(), &mut latched) });
            ok(unsafe { lenz_monitor_measured_ua(c.as_ptr(), counts, &mut measured) });
            prop_assert_eq!(got, want);
            prop_assert_eq!(latched, LenzFault::from(rs.fault()));
            prop_assert_eq!(measured, rust.scale().to_ua(counts));
        }
        let mut back = storage::<LenzMonitorRaw>();
        ok(unsafe { lenz_monitor_raw(c.as_ptr(), back.as_mut_ptr()) });
        // The round trip is exact but for the documented normalisation: a raw persistence of 0
        // acts as (and is stored as) 1.
        let want_back = LenzMonitorRaw { persistence: raw.persistence.max(1), ..raw };
        prop_assert_eq!(unsafe { back.assume_init() }, want_back);
        ok(unsafe { lenz_monitor_state_reset(cs.as_mut_ptr()) });
        let mut latched = LenzFault::OpenCoil;
        ok(unsafe { lenz_monitor_state_fault(cs.as_ptr(), &mut latched) });
        prop_assert_eq!(latched, LenzFault::None);
    }

    #[test]
    fn tracking_offtimer_through_c_equals_rust(
        raw in tracking_raw(),
        steps in prop::collection::vec((prop::option::weighted(0.1, any::<i32>()), any::<i32>()), 1..64),
    ) {
        let rust = TrackingOffTimerConfig::from_raw(raw.into());
        let mut rs = OffTimerState::new();
        let mut c = storage::<LenzTrackingOffTimerConfig>();
        let mut cs = storage::<LenzOffTimerState>();
        ok(unsafe { lenz_tracking_offtimer_init(c.as_mut_ptr(), &raw) });
        ok(unsafe { lenz_offtimer_state_init(cs.as_mut_ptr()) });
        for (start, supply_mv) in steps {
            if let Some(i0) = start {
                rust.start(&mut rs, i0);
                ok(unsafe { lenz_tracking_offtimer_start(c.as_ptr(), cs.as_mut_ptr(), i0) });
                let mut margin = 0;
                ok(unsafe { lenz_tracking_offtimer_margin_ua(c.as_ptr(), i0, &mut margin) });
                prop_assert_eq!(margin, rust.margin_ua(i0));
            }
            let want = LenzOffStatus::from(rust.update(&mut rs, supply_mv));
            let (mut got, mut est) = (LenzOffStatus::NotYet, 0);
            ok(unsafe { lenz_tracking_offtimer_update(c.as_ptr(), cs.as_mut_ptr(), supply_mv, &mut got) });
            ok(unsafe { lenz_offtimer_state_estimate_ua(cs.as_ptr(), &mut est) });
            prop_assert_eq!(got, want);
            prop_assert_eq!(est, rs.estimate_ua());
        }
        let mut back = storage::<LenzTrackingOffTimerRaw>();
        ok(unsafe { lenz_tracking_offtimer_raw(c.as_ptr(), back.as_mut_ptr()) });
        let mut want = raw;
        want.estimator.off.supply_coupled = u8::from(raw.estimator.off.supply_coupled != 0);
        prop_assert_eq!(unsafe { back.assume_init() }, want);
    }

    #[test]
    fn planned_offtimer_through_c_equals_rust(
        raw in planned_raw(),
        steps in prop::collection::vec(prop::option::weighted(0.1, any::<i32>()), 1..64),
    ) {
        let rust = PlannedOffTimerConfig::from_raw(raw.into());
        let mut rs = OffTimerState::new();
        let mut c = storage::<LenzPlannedOffTimerConfig>();
        let mut cs = storage::<LenzOffTimerState>();
        ok(unsafe { lenz_planned_offtimer_init(c.as_mut_ptr(), &raw) });
        ok(unsafe { lenz_offtimer_state_init(cs.as_mut_ptr()) });
        for start in steps {
            if let Some(i0) = start {
                rust.start(&mut rs, i0);
                ok(unsafe { lenz_planned_offtimer_start(c.as_ptr(), cs.as_mut_ptr(), i0) });
            }
            let want = LenzOffStatus::from(rust.update(&mut rs));
            let (mut got, mut left) = (LenzOffStatus::NotYet, 0);
            ok(unsafe { lenz_planned_offtimer_update(c.as_ptr(), cs.as_mut_ptr(), &mut got) });
            ok(unsafe { lenz_offtimer_state_remaining_ticks(cs.as_ptr(), &mut left) });
            prop_assert_eq!(got, want);
            prop_assert_eq!(left, rs.remaining_ticks());
        }
        let mut back = storage::<LenzPlannedOffTimerRaw>();
        ok(unsafe { lenz_planned_offtimer_raw(c.as_ptr(), back.as_mut_ptr()) });
        prop_assert_eq!(unsafe { back.assume_init() }, raw);
        ok(unsafe { lenz_offtimer_state_reset(cs.as_mut_ptr()) });
        let mut got = LenzOffStatus::Released;
        ok(unsafe { lenz_planned_offtimer_update(c.as_ptr(), cs.as_mut_ptr(), &mut got) });
        prop_assert_eq!(got, LenzOffStatus::NotYet);
    }
}

proptest! {
    #![proptest_config(config(0x6c65_6e7a_ff02, 96))]

    #[test]
    fn duty_limiter_through_c_equals_rust(
        raw in duty_raw(any::<u16>()),
        steps in prop::collection::vec((any::<i32>(), any::<u16>(), any::<u16>()), 1..64),
    ) {
        let rust = DutyLimiterConfig::from_raw(raw.into());
        let mut rs = DutyLimiterState::new();
        let mut c = storage::<LenzDutyLimiterConfig>();
        let mut cs = storage::<LenzDutyLimiterState>();
        ok(unsafe { lenz_duty_limiter_init(c.as_mut_ptr(), &raw) });
        ok(unsafe { lenz_duty_limiter_state_init(cs.as_mut_ptr()) });
        for (request, vin, vout) in steps {
            let want = rust.update(&mut rs, request, vin, vout);
            let (mut got, mut ov, mut last, mut limit) = (0, false, 0, 0);
            ok(unsafe { lenz_duty_limiter_update(c.as_ptr(), cs.as_mut_ptr(), request, vin, vout, &mut got) });
            ok(unsafe { lenz_duty_limiter_state_overvoltage(cs.as_ptr(), &mut ov) });
            ok(unsafe { lenz_duty_limiter_state_last_q8(cs.as_ptr(), &mut last) });
            ok(unsafe { lenz_duty_limiter_limit_q8(c.as_ptr(), vin, &mut limit) });
            prop_assert_eq!(got, want);
            prop_assert_eq!(ov, rs.overvoltage());
            prop_assert_eq!(last, rs.last_q8());
            prop_assert_eq!(limit, rust.limit_q8(vin));
        }
        let mut back = storage::<LenzDutyLimiterRaw>();
        ok(unsafe { lenz_duty_limiter_raw(c.as_ptr(), back.as_mut_ptr()) });
        prop_assert_eq!(unsafe { back.assume_init() }, raw);
        ok(unsafe { lenz_duty_limiter_state_reset(cs.as_mut_ptr()) });
        let mut last = -1;
        ok(unsafe { lenz_duty_limiter_state_last_q8(cs.as_ptr(), &mut last) });
        prop_assert_eq!(last, 0);
    }

    #[test]
    fn trip_through_c_equals_rust(
        raw in trip_raw(),
        theta in prop_oneof![Just(0u32), any::<u32>()],
        steps in prop::collection::vec((reading(), prop::bool::weighted(0.8), prop::bool::weighted(0.02)), 1..200),
    ) {
        let rust = TripConfig::from_raw(raw.into());
        let mut rs = TripState::with_theta_q24(theta);
        let mut c = storage::<LenzTripConfig>();
        let mut cs = storage::<LenzTripState>();
        ok(unsafe { lenz_trip_init(c.as_mut_ptr(), &raw) });
        ok(unsafe { lenz_trip_state_init(cs.as_mut_ptr(), theta) });
        let mut block = 0;
        ok(unsafe { lenz_trip_block_samples(c.as_ptr(), &mut block) });
        prop_assert_eq!(block, rust.block_samples());
        for (r, on, reset) in steps {
            if reset {
                rs.reset();
                ok(unsafe { lenz_trip_state_reset(cs.as_mut_ptr()) });
            }
            let want = LenzVerdict::from(rust.update(&mut rs, r, on));
            let mut got = storage::<LenzVerdict>();
            let mut info = storage::<LenzTripStateInfo>();
            ok(unsafe { lenz_trip_update(c.as_ptr(), cs.as_mut_ptr(), r, on, got.as_mut_ptr()) });
            ok(unsafe { lenz_trip_state_info(cs.as_ptr(), info.as_mut_ptr()) });
            prop_assert_eq!(unsafe { got.assume_init() }, want);
            prop_assert_eq!(unsafe { info.assume_init() }, LenzTripStateInfo::from(&rs));
        }
        let mut back = storage::<LenzTripRaw>();
        ok(unsafe { lenz_trip_raw(c.as_ptr(), back.as_mut_ptr()) });
        // From the Rust round trip: N = 0 reads back as 1, blocks above 5 as 5, booleans 0/1.
        prop_assert_eq!(unsafe { back.assume_init() }, LenzTripRaw::from(rust.raw()));
        let mut again = raw;
        again.persistence_n = raw.persistence_n.max(1);
        again.block_log2 = raw.block_log2.min(5);
        again.inverse_table.instant_reset = u8::from(raw.inverse_table.instant_reset != 0);
        prop_assert_eq!(unsafe { back.assume_init() }, again);
    }
}

#[test]
fn trip_verdicts_carry_their_event() {
    // A plain instantaneous element (invented values): a reading over 3000 counts trips at
    // once, then the channel latches (no retries).
    let mut raw = LenzTripRaw {
        instantaneous_counts: 3000,
        full_scale_counts: 4095,
        blank_samples: 0,
        persistence_n: 1,
        persistence_m: 1,
        stuck_samples: 0,
        retries: 0,
        retry_samples: 0,
        block_log2: 0,
        inverse_table: LenzInverseTable {
            m_scale_q32: 0,
            rate_q32: [0; LENZ_INVERSE_TABLE_LEN],
            reset_q32: 0,
            instant_reset: 1,
        },
        x2_mul: 0,
        x2_shift: 0,
        thermal_step_q32: 0,
        table_error_ppm: 0,
    };
    let mut c = storage::<LenzTripConfig>();
    let mut s = storage::<LenzTripState>();
    let mut v = storage::<LenzVerdict>();
    let verdict = |c: &MaybeUninit<LenzTripConfig>,
                   s: &mut MaybeUninit<LenzTripState>,
                   v: &mut MaybeUninit<LenzVerdict>,
                   r: u16| {
        ok(unsafe { lenz_trip_update(c.as_ptr(), s.as_mut_ptr(), r, true, v.as_mut_ptr()) });
        unsafe { v.assume_init() }
    };
    ok(unsafe { lenz_trip_init(c.as_mut_ptr(), &raw) });
    ok(unsafe { lenz_trip_state_init(s.as_mut_ptr(), 0) });
    assert_eq!(
        verdict(&c, &mut s, &mut v, 100).kind,
        LenzVerdictKind::Allow
    );
    let trip = verdict(&c, &mut s, &mut v, 3500);
    assert_eq!(trip.kind, LenzVerdictKind::Trip);
    assert_eq!(
        trip.event,
        LenzTripEvent {
            tick: 1,
            reading_counts: 3500,
            retry: 0,
            cause: LenzCause::Instantaneous
        }
    );
    let latched = verdict(&c, &mut s, &mut v, 100);
    assert_eq!(latched.kind, LenzVerdictKind::Latched);
    assert_eq!(latched.event.cause, LenzCause::None);
    // A second configuration from the same constant, changed: the first is unaffected.
    raw.instantaneous_counts = 100;
    let mut c2 = storage::<LenzTripConfig>();
    ok(unsafe { lenz_trip_init(c2.as_mut_ptr(), &raw) });
    ok(unsafe { lenz_trip_state_reset(s.as_mut_ptr()) });
    assert_eq!(
        verdict(&c, &mut s, &mut v, 2000).kind,
        LenzVerdictKind::Allow
    );
    assert_eq!(
        verdict(&c2, &mut s, &mut v, 2000).kind,
        LenzVerdictKind::Trip
    );
}

/// Null pointers give `LENZ_STATUS_NULL_POINTER` and change nothing: for every pointer of
/// the per-tick calls, the state and out value are as before.
#[test]
fn null_pointers_are_rejected_and_change_nothing() {
    use LenzStatus::NullPointer;
    let raw = LenzEstimatorRaw {
        on_step_q31: 1 << 28,
        on_conductance_q16: 1 << 16,
        switch_drop_mv: 0,
        off: LenzOffPath {
            step_q31: 1 << 28,
            conductance_q16: 1 << 16,
            clamp_mv: 700,
            supply_coupled: 0,
        },
    };
    let mut c = storage::<LenzEstimatorConfig>();
    let mut s = storage::<LenzEstimatorState>();
    unsafe {
        assert_eq!(lenz_estimator_init(ptr::null_mut(), &raw), NullPointer);
        assert_eq!(
            lenz_estimator_init(c.as_mut_ptr(), ptr::null()),
            NullPointer
        );
        assert_eq!(lenz_estimator_state_init(ptr::null_mut(), 5), NullPointer);
        ok(lenz_estimator_init(c.as_mut_ptr(), &raw));
        ok(lenz_estimator_state_init(s.as_mut_ptr(), 1000));
        let mut out = 77;
        assert_eq!(
            lenz_estimator_update(ptr::null(), s.as_mut_ptr(), true, 12_000, &mut out),
            NullPointer
        );
        assert_eq!(
            lenz_estimator_update(c.as_ptr(), ptr::null_mut(), true, 12_000, &mut out),
            NullPointer
        );
        assert_eq!(
            lenz_estimator_update(c.as_ptr(), s.as_mut_ptr(), true, 12_000, ptr::null_mut()),
            NullPointer
        );
        assert_eq!(out, 77, "an out value was written on a failed call");
        ok(lenz_estimator_state_current_ua(s.as_ptr(), &mut out));
        assert_eq!(out, 1000, "the state moved on a failed call");
        assert_eq!(lenz_estimator_state_reset(ptr::null_mut()), NullPointer);
        assert_eq!(lenz_estimator_raw(c.as_ptr(), ptr::null_mut()), NullPointer);
        assert_eq!(
            lenz_estimator_state_current_ua(ptr::null(), &mut out),
            NullPointer
        );
        // The other kernels, one call each for every pointer argument.
        let mut f = LenzFault::None;
        let mut st = LenzOffStatus::NotYet;
        let (mut i, mut u, mut d, mut b) = (0i32, 0u32, 0u16, false);
        let mut v = storage::<LenzVerdict>();
        assert_eq!(lenz_monitor_init(ptr::null_mut(), ptr::null()), NullPointer);
        assert_eq!(lenz_monitor_raw(ptr::null(), ptr::null_mut()), NullPointer);
        assert_eq!(
            lenz_monitor_measured_ua(ptr::null(), 0, &mut i),
            NullPointer
        );
        assert_eq!(lenz_monitor_state_init(ptr::null_mut()), NullPointer);
        assert_eq!(lenz_monitor_state_reset(ptr::null_mut()), NullPointer);
        assert_eq!(lenz_monitor_state_fault(ptr::null(), &mut f), NullPointer);
        assert_eq!(
            lenz_monitor_update(ptr::null(), ptr::null_mut(), 0, 0, &mut f),
            NullPointer
        );
        assert_eq!(lenz_offtimer_state_init(ptr::null_mut()), NullPointer);
        assert_eq!(lenz_offtimer_state_reset(ptr::null_mut()), NullPointer);
        assert_eq!(
            lenz_offtimer_state_estimate_ua(ptr::null(), &mut i),
            NullPointer
        );
        assert_eq!(
            lenz_offtimer_state_remaining_ticks(ptr::null(), &mut u),
            NullPointer
        );
        assert_eq!(
            lenz_tracking_offtimer_init(ptr::null_mut(), ptr::null()),
            NullPointer
        );
        assert_eq!(
            lenz_tracking_offtimer_raw(ptr::null(), ptr::null_mut()),
            NullPointer
        );
        assert_eq!(
            lenz_tracking_offtimer_margin_ua(ptr::null(), 0, &mut i),
            NullPointer
        );
        assert_eq!(
            lenz_tracking_offtimer_start(ptr::null(), ptr::null_mut(), 0),
            NullPointer
        );
        assert_eq!(
            lenz_tracking_offtimer_update(ptr::null(), ptr::null_mut(), 0, &mut st),
            NullPointer
        );
        assert_eq!(
            lenz_planned_offtimer_init(ptr::null_mut(), ptr::null()),
            NullPointer
        );
        assert_eq!(
            lenz_planned_offtimer_raw(ptr::null(), ptr::null_mut()),
            NullPointer
        );
        assert_eq!(
            lenz_planned_offtimer_start(ptr::null(), ptr::null_mut(), 0),
            NullPointer
        );
        assert_eq!(
            lenz_planned_offtimer_update(ptr::null(), ptr::null_mut(), &mut st),
            NullPointer
        );
        assert_eq!(
            lenz_duty_limiter_init(ptr::null_mut(), ptr::null()),
            NullPointer
        );
        assert_eq!(
            lenz_duty_limiter_raw(ptr::null(), ptr::null_mut()),
            NullPointer
        );
        assert_eq!(
            lenz_duty_limiter_limit_q8(ptr::null(), 0, &mut i),
            NullPointer
        );
        assert_eq!(lenz_duty_limiter_state_init(ptr::null_mut()), NullPointer);
        assert_eq!(lenz_duty_limiter_state_reset(ptr::null_mut()), NullPointer);
        assert_eq!(
            lenz_duty_limiter_state_overvoltage(ptr::null(), &mut b),
            NullPointer
        );
        assert_eq!(
            lenz_duty_limiter_state_last_q8(ptr::null(), &mut i),
            NullPointer
        );
        assert_eq!(
            lenz_duty_limiter_update(ptr::null(), ptr::null_mut(), 0, 0, 0, &mut d),
            NullPointer
        );
        assert_eq!(lenz_trip_init(ptr::null_mut(), ptr::null()), NullPointer);
        assert_eq!(lenz_trip_raw(ptr::null(), ptr::null_mut()), NullPointer);
        assert_eq!(lenz_trip_block_samples(ptr::null(), &mut u), NullPointer);
        assert_eq!(lenz_trip_state_init(ptr::null_mut(), 0), NullPointer);
        assert_eq!(lenz_trip_state_reset(ptr::null_mut()), NullPointer);
        assert_eq!(
            lenz_trip_state_info(ptr::null(), ptr::null_mut()),
            NullPointer
        );
        assert_eq!(
            lenz_trip_update(ptr::null(), ptr::null_mut(), 0, true, v.as_mut_ptr()),
            NullPointer
        );
        assert_eq!((i, u, d, b), (0, 0, 0, false), "an out value was written");
    }
}

/// Misaligned pointers give `LENZ_STATUS_MISALIGNED` and nothing is written.
#[test]
fn misaligned_pointers_are_rejected() {
    let mut buf = [0u32; 256];
    let raw = LenzPlannedOffTimerRaw {
        breakpoints_ua: [0; LENZ_PLANNED_TABLE_LEN],
        ticks: [0; LENZ_PLANNED_TABLE_LEN],
    };
    let mut c = storage::<LenzPlannedOffTimerConfig>();
    let mut s = storage::<LenzOffTimerState>();
    unsafe {
        assert_eq!(
            lenz_planned_offtimer_init(misaligned(&mut buf), &raw),
            LenzStatus::Misaligned
        );
        assert_eq!(
            lenz_offtimer_state_init(misaligned(&mut buf)),
            LenzStatus::Misaligned
        );
        assert_eq!(
            lenz_estimator_state_current_ua(ptr::null(), misaligned(&mut buf)),
            LenzStatus::NullPointer,
            "a null pointer is reported before a misaligned one"
        );
        assert!(buf.iter().all(|w| *w == 0), "a rejected call wrote");
        ok(lenz_planned_offtimer_init(c.as_mut_ptr(), &raw));
        ok(lenz_offtimer_state_init(s.as_mut_ptr()));
        assert_eq!(
            lenz_offtimer_state_remaining_ticks(s.as_ptr(), misaligned(&mut buf)),
            LenzStatus::Misaligned
        );
        assert_eq!(
            lenz_planned_offtimer_start(c.as_ptr(), misaligned(&mut buf), 5),
            LenzStatus::Misaligned
        );
        assert!(buf.iter().all(|w| *w == 0), "a rejected call wrote");
    }
}

/// The opaque storage is exactly as large as the Rust value and aligned for it.
#[test]
fn opaque_storage_matches_the_rust_types() {
    fn fits<S, T>(name: &str) {
        assert_eq!(
            size_of::<S>(),
            size_of::<T>().next_multiple_of(4),
            "{name}: size"
        );
        assert!(align_of::<S>() >= align_of::<T>(), "{name}: alignment");
    }
    fits::<LenzEstimatorConfig, EstimatorConfig>("estimator config");
    fits::<LenzEstimatorState, EstimatorState>("estimator state");
    fits::<LenzMonitorConfig, MonitorConfig>("monitor config");
    fits::<LenzMonitorState, MonitorState>("monitor state");
    fits::<LenzTrackingOffTimerConfig, TrackingOffTimerConfig>("tracking config");
    fits::<LenzPlannedOffTimerConfig, PlannedOffTimerConfig>("planned config");
    fits::<LenzOffTimerState, OffTimerState>("off-timer state");
    fits::<LenzDutyLimiterConfig, DutyLimiterConfig>("duty config");
    fits::<LenzDutyLimiterState, DutyLimiterState>("duty state");
    fits::<LenzTripConfig, TripConfig>("trip config");
    fits::<LenzTripState, TripState>("trip state");
}
