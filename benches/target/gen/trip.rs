//! Vectors of the trip detector: demo protection settings (invented values) through the plan
//! constructor, driven through blanking, N-of-M persistence, inverse time with both resets,
//! thermal, stuck sensor, retries and the latch; plus raw edge configurations (any registers
//! and any table) with any readings.

use std::fmt::Write as _;

use lenz::kernel::{InverseTable, TripConfig, TripParams, TripRaw, TripState, Verdict};
use lenz::trip::{Curve, InverseTime, Thermal};

use super::Rng;

/// `raw` as a constant expression (the raw values' `Debug` form is a struct literal).
fn expr(raw: &TripRaw) -> String {
    format!("TripConfig::from_raw({raw:?})")
}

/// Demo protection settings (invented values): 1 kHz samples, 4 mA per count, 12-bit ADC.
fn base() -> TripParams {
    TripParams {
        sample_period_s: 1e-3,
        amps_per_count: 4e-3,
        instantaneous_counts: 3000,
        full_scale_counts: 4095,
        blanking_s: 3e-3,
        persistence_n: 2,
        persistence_m: 3,
        stuck_samples: 40,
        inverse: None,
        thermal: None,
        retries: 2,
        retry_delay_s: 20e-3,
    }
}

fn demo_params() -> Vec<TripParams> {
    let el = |c, pickup_a, tms| InverseTime::new(c, pickup_a, tms).expect("demo curve is valid");
    let th = |tau, k, ib| Thermal::new(tau, k, ib).expect("demo thermal element is valid");
    vec![
        // Everything on: IEEE very inverse (reset runs back), thermal, stuck sensor.
        TripParams {
            inverse: Some(el(Curve::IeeeVeryInverse, 2.0, 0.05)),
            thermal: Some(th(0.5, 1.05, 2.5)),
            ..base()
        },
        // IEC very inverse (resets at once), no thermal, no stuck detection, one retry.
        TripParams {
            inverse: Some(el(Curve::IecVeryInverse, 2.5, 0.05)),
            stuck_samples: 0,
            retries: 1,
            ..base()
        },
        // Thermal only, short time constant, fast retries.
        TripParams {
            thermal: Some(th(0.05, 1.0, 2.0)),
            persistence_n: 1,
            persistence_m: 1,
            blanking_s: 0.0,
            retry_delay_s: 5e-3,
            ..base()
        },
        // IEC extremely inverse, persistence 5 of 32, long blanking, no retries.
        TripParams {
            inverse: Some(el(Curve::IecExtremelyInverse, 1.5, 0.1)),
            persistence_n: 5,
            persistence_m: 32,
            blanking_s: 10e-3,
            retries: 0,
            ..base()
        },
    ]
}

/// Readings of a coil: switched in bursts, levels below pickup, between pickup and the
/// instantaneous threshold, above it and at full scale, with a few counts of noise, and a
/// leading stretch (see below).
fn demo_inputs(rng: &mut Rng, lead: (u16, usize, bool), n: usize) -> Vec<(u16, bool)> {
    let mut v = Vec::with_capacity(n);
    // A leading stretch at one level with the switch on: with noise (to reach a slow element
    // first) or frozen (stuck sensor).
    let (lead_counts, lead_len, frozen) = lead;
    for _ in 0..lead_len {
        let noise = if frozen { 0 } else { rng.range(-3, 3) };
        v.push(((i32::from(lead_counts) + noise) as u16, true));
    }
    let mut level = 0i32;
    let mut on = true;
    let mut next = 0;
    for k in 0..n {
        if k == next {
            level = [0, 300, 700, 900, 1500, 2500, 3200, 4095][rng.range(0, 7) as usize];
            on = rng.range(0, 9) != 0;
            next = k + rng.range(20, 300) as usize;
        }
        let noise = rng.range(-3, 3);
        let r = if on {
            (level + noise).clamp(0, 4095)
        } else {
            0
        };
        v.push((r as u16, on));
    }
    v
}

fn verdict_expr(v: Verdict) -> String {
    match v {
        Verdict::Trip(e) => format!(
            "Verdict::Trip(TripEvent {{ tick: {}, reading_counts: {}, retry: {}, cause: Cause::{:?} }})",
            e.tick, e.reading_counts, e.retry, e.cause
        ),
        other => format!("Verdict::{other:?}"),
    }
}

/// Bench inputs: a healthy, noisy coil current around the inverse-time pickup (below it the
/// IEEE reset runs back, above it the accumulator rises) and below the thermal level, so
/// every element is evaluated on every sample and nothing trips.
fn bench_inputs(rng: &mut Rng) -> Vec<(u16, bool)> {
    (0..256)
        .map(|k| {
            let base = if (k / 32) % 2 == 0 { 470 } else { 530 };
            ((base + rng.range(-6, 6)) as u16, true)
        })
        .collect()
}

pub fn generate() -> String {
    let mut rng = Rng::new(0x6c65_6e7a_0005);
    let mut cases: Vec<(TripRaw, Vec<(u16, bool)>)> = Vec::new();
    let demos = demo_params();
    // Per demo: the leading stretch (stuck sensor, inverse time, thermal, inverse time).
    let leads = [
        (1234, 80, true),
        (2500, 260, false),
        (1500, 200, false),
        (1200, 300, false),
    ];
    for (p, lead) in demos.iter().zip(leads) {
        let cfg = TripConfig::new(p).expect("demo trip settings are valid");
        let raw = cfg.raw();
        // The emitted constant must be exactly the plan's configuration.
        assert!(
            TripConfig::from_raw(raw) == cfg,
            "trip constant differs from its plan"
        );
        // 560 steps after the lead (the Cortex-M0 flash holds every kernel's vectors).
        let inputs = demo_inputs(&mut rng, lead, 560);
        cases.push((raw, inputs));
    }
    // Raw edge configurations: any registers, any table, any readings.
    for _ in 0..8 {
        let mut table = InverseTable::DISABLED;
        table.m_scale_q32 = rng.any_i32() as u32;
        for r in table.rate_q32.iter_mut() {
            *r = rng.any_i32() as u32;
        }
        table.reset_q32 = rng.any_i32() as u32;
        table.instant_reset = rng.bool();
        let raw = TripRaw {
            instantaneous_counts: rng.range(0, 65535) as u16,
            full_scale_counts: rng.range(0, 65535) as u16,
            blank_samples: rng.range(0, 20) as u16,
            persistence_n: rng.range(0, 40) as u8,
            persistence_m: rng.range(0, 40) as u8,
            stuck_samples: rng.range(0, 6) as u16,
            retries: rng.range(0, 4) as u8,
            retry_samples: rng.range(0, 10) as u16,
            block_log2: rng.range(0, 7) as u8,
            inverse_table: table,
            x2_mul: rng.any_i32() as u32,
            x2_shift: rng.range(0, 70) as u8,
            thermal_step_q32: rng.any_i32() as u32,
            table_error_ppm: 0,
        };
        let inputs = (0..150)
            .map(|_| {
                let r = if rng.bool() {
                    rng.range(0, 3) as u16
                } else {
                    rng.range(0, 65535) as u16
                };
                (r, rng.range(0, 5) != 0)
            })
            .collect();
        cases.push((raw, inputs));
    }

    let mut src = String::from("// Generated by gen/trip.rs with the host build of lenz.\n\n");
    src.push_str("/// Generated sequences.\npub static CASES: &[Case] = &[\n");
    let mut seen = std::collections::BTreeSet::new();
    for (raw, inputs) in &cases {
        let cfg = TripConfig::from_raw(*raw);
        let mut s = TripState::new();
        let _ = write!(src, "    Case {{ config: {}, steps: &[", expr(raw));
        for &(r, on) in inputs {
            let v = cfg.update(&mut s, r, on);
            let e = verdict_expr(v);
            seen.insert(match v {
                Verdict::Trip(ev) => format!("{:?}", ev.cause),
                other => format!("{other:?}"),
            });
            let _ = write!(src, "({r}, {on}, {e}), ");
        }
        src.push_str("] },\n");
    }
    src.push_str("];\n\n");
    // The vectors must reach every verdict and every cause.
    for want in [
        "Allow",
        "Waiting",
        "Latched",
        "Instantaneous",
        "InverseTime",
        "Thermal",
        "SensorFault",
    ] {
        assert!(seen.contains(want), "trip vectors never give {want}");
    }

    // The cost run: the first demo setting, every element evaluated, no trip.
    let bench_p = &demos[0];
    let cfg = TripConfig::new(bench_p).expect("valid");
    let inputs = bench_inputs(&mut rng);
    let mut s = TripState::new();
    for k in 0..4096 {
        let (r, on) = inputs[k % inputs.len()];
        assert_eq!(
            cfg.update(&mut s, r, on),
            Verdict::Allow,
            "bench input trips"
        );
    }
    let _ = writeln!(
        src,
        "/// Configuration of the cost run (the first demo setting, every element on).\npub static BENCH_CONFIG: TripConfig = {};\n",
        expr(&cfg.raw())
    );
    src.push_str("/// Inputs of the cost run.\npub static BENCH_INPUTS: &[(u16, bool)] = &[");
    for (r, on) in &inputs {
        let _ = write!(src, "({r}, {on}), ");
    }
    src.push_str("];\n\n");
    let el = bench_p.inverse.expect("bench has an inverse element");
    let th = bench_p.thermal.expect("bench has a thermal element");
    let c = el.curve().constants();
    let _ = writeln!(
        src,
        "/// The straightforward version's parameters.\npub const NAIVE: Naive = Naive {{ sample_period_s: {:?}, amps_per_count: {:?}, instantaneous_counts: {}, full_scale_counts: {}, blank_samples: {}, persistence_n: {}, persistence_m: {}, pickup_a: {:?}, multiplier: {:?}, k_s: {:?}, alpha: {:?}, c_s: {:?}, reset_s: {:?}, time_constant_s: {:?}, trip_level_a: {:?} }};",
        bench_p.sample_period_s,
        bench_p.amps_per_count,
        bench_p.instantaneous_counts,
        bench_p.full_scale_counts,
        cfg.blank_samples(),
        bench_p.persistence_n,
        bench_p.persistence_m,
        el.pickup_a(),
        el.multiplier(),
        c.k_s,
        c.alpha,
        c.c_s,
        c.reset_s.unwrap_or(0.0),
        th.time_constant_s(),
        th.trip_level_a()
    );
    src
}

/// The block-ending sample alone: the demo settings with blocks of one sample (`K = 1`), so
/// every sample runs the full path and the block update (the worst single sample of the
/// default `K = 32`). Vectors: the second and the third demo through their
/// leading stretches (IEC very inverse, thermal only); cost run: the first demo setting on the trip cost run's inputs.
pub fn generate_block() -> String {
    let mut rng = Rng::new(0x6c65_6e7a_0006);
    let demos = demo_params();
    let mut src = String::from(
        "// Generated by gen/trip.rs (generate_block) with the host build of lenz.\n\n",
    );
    src.push_str("/// Generated sequences.\npub static CASES: &[Case] = &[\n");
    let mut seen = std::collections::BTreeSet::new();
    for (p, lead) in [
        (&demos[1], (2500, 260, false)),
        (&demos[2], (1500, 200, false)),
    ] {
        let cfg = TripConfig::with_block_log2(p, 0).expect("demo trip settings are valid");
        assert!(
            TripConfig::from_raw(cfg.raw()) == cfg,
            "trip constant differs from its plan"
        );
        let inputs = demo_inputs(&mut rng, lead, 60);
        let mut s = TripState::new();
        let _ = write!(src, "    Case {{ config: {}, steps: &[", expr(&cfg.raw()));
        for &(r, on) in &inputs {
            let v = cfg.update(&mut s, r, on);
            seen.insert(match v {
                Verdict::Trip(ev) => format!("{:?}", ev.cause),
                other => format!("{other:?}"),
            });
            let _ = write!(src, "({r}, {on}, {}), ", verdict_expr(v));
        }
        src.push_str("] },\n");
    }
    src.push_str("];\n\n");
    for want in ["Allow", "InverseTime", "Thermal"] {
        assert!(seen.contains(want), "block vectors never give {want}");
    }
    let cfg = TripConfig::with_block_log2(&demos[0], 0).expect("valid");
    let inputs = bench_inputs(&mut Rng::new(0x6c65_6e7a_0007));
    let mut s = TripState::new();
    for k in 0..4096 {
        let (r, on) = inputs[k % inputs.len()];
        assert_eq!(
            cfg.update(&mut s, r, on),
            Verdict::Allow,
            "bench input trips"
        );
    }
    let _ = writeln!(
        src,
        "/// Configuration of the cost run (the first demo setting, blocks of one sample).\npub static BENCH_CONFIG: TripConfig = {};\n",
        expr(&cfg.raw())
    );
    src.push_str(
        "/// Inputs of the cost run, `(switch on, reading)`.\npub static BENCH_INPUTS: &[(bool, u16)] = &[",
    );
    for (r, on) in &inputs {
        let _ = write!(src, "({on}, {r}), ");
    }
    src.push_str("];\n");
    src
}
