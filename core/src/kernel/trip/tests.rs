//! Unit tests of the trip detector.

use super::table::{INVERSE_ONE, Q16, curve_time_f64, msb_by_compares};
use super::*;
use crate::trip::{Curve, InverseTime, Thermal};
use proptest::prelude::*;
use std::vec::Vec;

fn params() -> TripParams {
    TripParams {
        sample_period_s: 1e-3,
        amps_per_count: 4e-3,
        instantaneous_counts: 3000,
        full_scale_counts: 4095,
        blanking_s: 0.0,
        persistence_n: 1,
        persistence_m: 1,
        stuck_samples: 0,
        inverse: None,
        thermal: None,
        retries: 0,
        retry_delay_s: 0.0,
    }
}

fn samples_to_trip(cfg: &TripConfig, reading: u16, limit: u32) -> Option<u32> {
    let mut s = TripState::new();
    (1..=limit).find(|_| matches!(cfg.update(&mut s, reading, true), Verdict::Trip(_)))
}

#[test]
fn state_fits_32_bytes_and_event_8() {
    assert!(core::mem::size_of::<TripState>() <= 32);
    assert_eq!(core::mem::size_of::<TripEvent>(), 8);
}

/// The raw values carry every field (the measured table error included), and the getters
/// read them.
#[test]
fn raw_round_trip() {
    let mut p = params();
    p.blanking_s = 3e-3;
    p.persistence_n = 2;
    p.persistence_m = 3;
    p.stuck_samples = 40;
    p.retries = 2;
    p.retry_delay_s = 20e-3;
    p.inverse = Some(InverseTime::new(Curve::IeeeVeryInverse, 2.0, 0.05).unwrap());
    p.thermal = Some(Thermal::new(0.5, 1.05, 2.5).unwrap());
    let cfg = TripConfig::new(&p).unwrap();
    assert_eq!(TripConfig::from_raw(cfg.raw()), cfg);
    let r = cfg.raw();
    assert!(r.table_error_ppm > 0 && r.x2_mul > 0 && r.thermal_step_q32 > 0);
    assert_eq!(
        (
            cfg.instantaneous_counts(),
            cfg.full_scale_counts(),
            cfg.blank_samples(),
            cfg.persistence_n(),
            cfg.persistence_m(),
            cfg.stuck_samples(),
            cfg.retries(),
            cfg.retry_samples()
        ),
        (3000, 4095, 3, 2, 3, 40, 2, 20)
    );
    assert_eq!(
        (cfg.x2_mul(), cfg.x2_shift(), cfg.table_error_ppm()),
        (r.x2_mul, r.x2_shift, r.table_error_ppm)
    );
}

#[test]
fn n_of_m_blanking_retry_and_latch() {
    let mut p = params();
    p.persistence_n = 2;
    p.persistence_m = 3;
    p.blanking_s = 3e-3;
    p.retries = 2;
    p.retry_delay_s = 5e-3;
    let cfg = TripConfig::new(&p).unwrap();
    let mut s = TripState::new();
    let mut log = TripLog::<2>::new();
    // Blanked: three samples over the threshold after switch-on do nothing.
    for _ in 0..3 {
        assert_eq!(
            cfg.update_logged(&mut s, &mut log, 3500, true),
            Verdict::Allow
        );
    }
    // Over, not over, over: 2 of 3 trips at the third.
    assert_eq!(cfg.update(&mut s, 3500, true), Verdict::Allow);
    assert_eq!(cfg.update(&mut s, 100, true), Verdict::Allow);
    let v = cfg.update_logged(&mut s, &mut log, 3500, true);
    assert!(matches!(
        v,
        Verdict::Trip(TripEvent {
            cause: Cause::Instantaneous,
            retry: 0,
            tick: 5,
            ..
        })
    ));
    // Waits five samples, then allows again.
    for _ in 0..4 {
        assert_eq!(cfg.update(&mut s, 0, false), Verdict::Waiting);
    }
    assert_eq!(cfg.update(&mut s, 0, false), Verdict::Allow);
    assert_eq!(s.retries(), 1);
    // Two more trips: the second retry, then the latch.
    let mut trips = 0;
    for _ in 0..200 {
        match cfg.update_logged(&mut s, &mut log, 4095, true) {
            Verdict::Trip(_) => trips += 1,
            Verdict::Latched => break,
            _ => {}
        }
    }
    assert_eq!(trips, 2);
    assert!(s.is_latched());
    assert_eq!(log.len(), 2);
    assert_eq!(log.latest().map(|e| e.retry), Some(2));
    s.reset();
    assert_eq!(cfg.update(&mut s, 0, false), Verdict::Allow);
}

#[test]
fn full_scale_and_stuck_count_as_faults() {
    let mut p = params();
    p.instantaneous_counts = u16::MAX;
    p.stuck_samples = 10;
    let cfg = TripConfig::new(&p).unwrap();
    assert_eq!(samples_to_trip(&cfg, 4095, 5), Some(1));
    assert_eq!(samples_to_trip(&cfg, 0xFFFF, 5), Some(1));
    let mut s = TripState::new();
    let mut got = None;
    for k in 0..20u32 {
        if let Verdict::Trip(e) = cfg.update(&mut s, 1234, true) {
            got = Some((k, e.cause));
            break;
        }
    }
    assert_eq!(got, Some((10, Cause::SensorFault)));
    assert!(s.is_latched());
    // A varying reading never counts as stuck.
    let mut s = TripState::new();
    for k in 0..1000u16 {
        assert_eq!(cfg.update(&mut s, 1000 + (k & 3), true), Verdict::Allow);
    }
}

#[test]
fn table_error_within_stated_bound_for_every_curve() {
    for c in Curve::ALL {
        for tms in [0.05f32, 1.0] {
            let mut p = params();
            p.inverse = Some(InverseTime::new(c, 2.5, tms).unwrap());
            let cfg = TripConfig::new(&p).unwrap();
            let e = cfg.inverse_table_error();
            assert!(e > 0.0 && e <= INVERSE_TABLE_ERROR_MAX, "{c:?}: {e}");
        }
    }
}

#[test]
fn ieee_reset_runs_back_and_iec_resets_at_once() {
    let mut p = params();
    p.inverse = Some(InverseTime::new(Curve::IeeeVeryInverse, 2.0, 1.0).unwrap());
    let cfg = TripConfig::new(&p).unwrap();
    let mut s = TripState::new();
    // Whole blocks (1024 and 1440 are multiples of every K up to 32).
    for _ in 0..1024 {
        cfg.update(&mut s, 1000, true); // 4 A = 2x pickup
    }
    let acc = s.inverse_q32();
    assert!(acc > 0);
    // 0.5x pickup: full reset takes 28.8 s = 28 800 samples; 1440 samples run back 5 %.
    for _ in 0..1440 {
        cfg.update(&mut s, 250, true);
    }
    let back = f64::from(acc - s.inverse_q32()) / INVERSE_ONE as f64;
    assert!((back - 0.05).abs() < 1e-4, "{back}");
    let mut p = params();
    p.inverse = Some(InverseTime::new(Curve::IecVeryInverse, 2.0, 1.0).unwrap());
    let cfg = TripConfig::new(&p).unwrap();
    let mut s = TripState::new();
    for _ in 0..cfg.block_samples() {
        cfg.update(&mut s, 1000, true);
    }
    assert!(s.inverse_q32() > 0);
    for _ in 0..cfg.block_samples() {
        cfg.update(&mut s, 400, true);
    }
    assert_eq!(s.inverse_q32(), 0);
}

/// The thermal and inverse-time updates as first written, with 64-bit products (the
/// reference for the 32-bit forms of the per-sample code).
fn m_q16_u64(t: &InverseTable, reading: u16) -> u32 {
    let m = (u64::from(reading) * u64::from(t.m_scale_q32)) >> 16;
    m.min(u64::from(u32::MAX)) as u32
}

fn increment_u64(t: &InverseTable, reading: u16) -> Option<u32> {
    let m = m_q16_u64(t, reading);
    if m < Q16 {
        return None;
    }
    let msb = 31 - m.leading_zeros();
    let octave = (msb - 16) as usize;
    if octave >= INVERSE_TABLE_OCTAVES {
        return Some(
            t.rate_q32
                .get(INVERSE_TABLE_LEN - 1)
                .copied()
                .unwrap_or(u32::MAX),
        );
    }
    let rem = m - (1 << msb);
    let shift = msb - 5;
    let step = (rem >> shift) as usize;
    let frac_q16 = (rem & ((1 << shift) - 1)) << (16 - shift);
    let idx = octave * INVERSE_TABLE_STEPS + step;
    let a = t.rate_q32.get(idx).copied().unwrap_or(u32::MAX);
    let b = t.rate_q32.get(idx + 1).copied().unwrap_or(a);
    let d = i64::from(b) - i64::from(a);
    let v = i64::from(a) + ((d * i64::from(frac_q16) + (1 << 15)) >> 16);
    Some(v.clamp(0, i64::from(u32::MAX)) as u32)
}

/// The compare form of the leading-one index agrees with `leading_zeros` wherever the
/// lookup uses it (computed: exhaustive over the five bits above 2¹⁶, random below).
#[test]
fn msb_by_compares_matches_leading_zeros() {
    let mut x = 0x9E37_79B9u32;
    for h in 1u32..=0xFFFF {
        for _ in 0..4 {
            x ^= x << 13;
            x ^= x >> 17;
            x ^= x << 5;
            let m = (h << 16) | (x & 0xFFFF);
            let want = 31 - m.leading_zeros();
            let got = msb_by_compares(m);
            assert!(
                got == want || (want >= 21 && got >= 21),
                "{m:#x}: {got} vs {want}"
            );
        }
    }
}

/// A u32 that is often an edge value.
fn edgy_u32() -> impl Strategy<Value = u32> {
    prop_oneof![
        any::<u32>(),
        Just(0u32),
        Just(u32::MAX),
        Just(1u32 << 31),
        Just((1u32 << 31) - 1),
        0u32..70_000,
        (u32::MAX - 70_000)..=u32::MAX,
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(1000))]
    /// The 32-bit form of the table lookup gives the same increment as the 64-bit
    /// formulation on any scale, table and reading (computed: exact integer identity).
    #[test]
    fn same_as_the_64_bit_formulation(
        scale in edgy_u32(), rates in proptest::collection::vec(edgy_u32(), INVERSE_TABLE_LEN),
        readings in proptest::collection::vec(any::<u16>(), 1..40),
    ) {
        let mut table = InverseTable::DISABLED;
        table.m_scale_q32 = scale;
        table.rate_q32.copy_from_slice(&rates);
        for r in readings {
            prop_assert_eq!(table.increment(r), increment_u64(&table, r));
            // A block of 2^k equal readings gives the same multiple as one reading.
            for k in 0..=u32::from(BLOCK_LOG2_MAX) {
                prop_assert_eq!(table.m_q16_of_sum(u32::from(r) << k, k), table.m_q16(r));
            }
        }
    }

    /// A block of `K` equal readings moves the inverse-time accumulator exactly as `K`
    /// per-sample updates (`K = 1`) do, up and down (computed: exact integer identity).
    #[test]
    fn block_equals_per_sample_updates_at_constant_current(
        ci in 0usize..7, k in 1u8..=BLOCK_LOG2_MAX, up in 500u16..4000, down in 0u16..500,
        blocks in 1u32..20,
    ) {
        let mut p = params();
        p.instantaneous_counts = u16::MAX;
        p.full_scale_counts = u16::MAX;
        p.inverse = Some(InverseTime::new(Curve::ALL[ci], 2.0, 1.0).unwrap());
        let one = TripConfig::with_block_log2(&p, 0).unwrap();
        let many = TripConfig::with_block_log2(&p, k).unwrap();
        let (mut a, mut b) = (TripState::new(), TripState::new());
        for reading in [up, down] {
            for _ in 0..(blocks << k) {
                let va = one.update(&mut a, reading, true);
                let vb = many.update(&mut b, reading, true);
                if matches!(va, Verdict::Trip(_)) || matches!(vb, Verdict::Trip(_)) {
                    return Ok(());
                }
                // Mid-block the block form has not moved yet: compare at the block ends.
                if b.tick() & ((1 << k) - 1) == 0 {
                    prop_assert_eq!(a.inverse_q32(), b.inverse_q32());
                }
            }
        }
    }
}

proptest! {
    // Long curves take up to a million samples per case: fewer cases.
    #![proptest_config(ProptestConfig::with_cases(48))]
    #[test]
    fn constant_current_matches_curve(ci in 0usize..7, m in INVERSE_M_MIN..INVERSE_M_MAX,
                                      tms in 0.02f32..1.0) {
        let el = InverseTime::new(Curve::ALL[ci], 2.5, tms).unwrap();
        let mut p = params();
        p.inverse = Some(el);
        p.instantaneous_counts = u16::MAX;
        p.full_scale_counts = u16::MAX;
        let cfg = TripConfig::new(&p).unwrap();
        let pickup = 2.5f64 / 4e-3;
        let reading = libm::round(pickup * f64::from(m)) as u16;
        let t = curve_time_f64(&el, f64::from(reading) / pickup).unwrap();
        let n = samples_to_trip(&cfg, reading, 10_000_000).unwrap();
        let err = f64::from(cfg.inverse_table_error());
        let got = f64::from(n) * 1e-3;
        // Within one block (K samples) plus the table error.
        let block = f64::from(cfg.block_samples()) * 1e-3;
        prop_assert!(got >= t * (1.0 - err) - 1e-9 && got <= t / (1.0 - err) + block,
            "{:?} reading {reading}: {got} vs {t}", Curve::ALL[ci]);
    }

    #[test]
    fn thermal_matches_f64_discrete_update(x in 1.05f64..15.0, ratio_exp in -5.0f64..-2.0,
                                          prior in 0.0f64..0.9) {
        // k·I_B = 1000 counts at 1 mA per count; τ = T_s / 10^ratio_exp.
        let ts = 1e-3f32;
        let tau = (f64::from(ts) / 10f64.powf(ratio_exp)) as f32;
        let mut p = params();
        p.instantaneous_counts = u16::MAX;
        p.full_scale_counts = u16::MAX;
        p.amps_per_count = 1e-3;
        p.thermal = Some(Thermal::new(tau, 1.0, 1.0).unwrap());
        let cfg = TripConfig::new(&p).unwrap();
        let reading = (x * 1000.0).round() as u16;
        let x2 = (f64::from(reading) / 1000.0).powi(2);
        let b = (-f64::from(ts) / f64::from(tau)).exp();
        let mut theta = prior * prior;
        let mut n_ref = 0u32;
        while theta < 1.0 {
            theta = b * theta + (1.0 - b) * x2;
            n_ref += 1;
        }
        let mut s = TripState::with_theta_q24(theta_q24_from_f32((prior * prior) as f32));
        let n = (1..=10_000_000u32)
            .find(|_| matches!(cfg.update(&mut s, reading, true), Verdict::Trip(_)))
            .unwrap();
        // The kernel trips at the end of the block in which the f64 update reaches one.
        let k = f64::from(cfg.block_samples());
        let (n, n_ref) = (f64::from(n), f64::from(n_ref));
        prop_assert!(n >= n_ref - 1.0 - 2e-4 * n_ref && n <= n_ref + k + 2e-4 * n_ref,
            "kernel {n} vs f64 {n_ref} (block {k})");
    }

    #[test]
    fn no_trip_below_pickup(ci in 0usize..7, frac in 0.0f64..1.0) {
        let el = InverseTime::new(Curve::ALL[ci], 2.5, 0.05).unwrap();
        let mut p = params();
        p.inverse = Some(el);
        p.thermal = Some(Thermal::new(1.0, 1.05, 2.5).unwrap());
        let cfg = TripConfig::new(&p).unwrap();
        // Below the pickup (625 counts) and below the thermal level (656 counts).
        let reading = (frac * 624.0) as u16;
        prop_assert_eq!(samples_to_trip(&cfg, reading, 20_000), None);
    }

    #[test]
    fn no_panic_on_any_input(raw in proptest::collection::vec(any::<u32>(), 12),
                             readings in proptest::collection::vec((any::<u16>(), any::<bool>()), 1..64)) {
        let mut table = InverseTable::DISABLED;
        table.m_scale_q32 = raw[8];
        for (k, r) in table.rate_q32.iter_mut().enumerate() {
            *r = raw[k % 12].rotate_left(k as u32);
        }
        table.reset_q32 = raw[9];
        table.instant_reset = raw[10] & 1 == 1;
        let cfg = TripConfig::from_raw(TripRaw {
            instantaneous_counts: raw[0] as u16,
            full_scale_counts: raw[1] as u16,
            blank_samples: raw[2] as u16,
            persistence_n: raw[3] as u8,
            persistence_m: raw[4] as u8,
            stuck_samples: raw[5] as u16,
            retries: raw[6] as u8,
            retry_samples: raw[7] as u16,
            block_log2: (raw[9] >> 24) as u8,
            inverse_table: table,
            x2_mul: raw[10],
            x2_shift: (raw[11] >> 24) as u8,
            thermal_step_q32: raw[11],
            table_error_ppm: raw[3],
        });
        let mut s = TripState::with_theta_q24(raw[11]);
        let mut log = TripLog::<3>::new();
        for (r, on) in &readings {
            let _ = cfg.update_logged(&mut s, &mut log, *r, *on);
        }
        prop_assert!(log.len() <= 3);
        let v: Vec<_> = log.iter().collect();
        prop_assert!(v.len() == log.len());
    }
}
