//! Host bench of one off-timer tick in both modes (criterion).

use criterion::{Criterion, criterion_main};
use lenz::{
    CoilParams,
    kernel::{OffTimerState, PlannedOffTimerConfig, TrackingOffTimerConfig},
    turnoff::{Clamp, SwitchOff},
};
use std::hint::black_box;

pub(crate) fn bench(c: &mut Criterion) {
    // Demo valve (invented): 120 mH, 32 Ω, 24 V, 24 V zener + 0.7 V diode, 10 kHz tick,
    // released below 75 mA.
    let coil = CoilParams::new(0.120, 32.0)
        .validate()
        .expect("demo coil is valid");
    let clamp = Clamp::Zener {
        zener_v: 24.0,
        forward_v: 0.7,
    };
    let tracking = TrackingOffTimerConfig::new(&coil, 20.0, 100e-6, &clamp, 0.075)
        .expect("demo timer is valid");
    let mut state = OffTimerState::new();
    let mut k = 0u32;
    c.bench_function("offtimer_tracking_tick", |b| {
        b.iter(|| {
            k = k.wrapping_add(1);
            if k & 31 == 0 {
                tracking.start(&mut state, black_box(750_000));
            }
            black_box(tracking.update(&mut state, black_box(24_000)))
        });
    });
    let plan = SwitchOff::new(0.120, 32.0, 24.0, 0.75, clamp).expect("demo plan is valid");
    let planned =
        PlannedOffTimerConfig::new(&plan, 0.075, 0.9, 100e-6).expect("demo table is valid");
    let mut ps = OffTimerState::new();
    let mut n = 0u32;
    c.bench_function("offtimer_planned_tick", |b| {
        b.iter(|| {
            n = n.wrapping_add(1);
            if n & 31 == 0 {
                planned.start(&mut ps, black_box(750_000));
            }
            black_box(planned.update(&mut ps))
        });
    });
    c.bench_function("offtimer_planned_start", |b| {
        b.iter(|| planned.start(&mut ps, black_box(750_000)));
    });
}

// criterion's macros generate undocumented items.
#[allow(missing_docs)]
mod group {
    use super::bench;
    criterion::criterion_group!(benches, bench);
}
criterion_main!(group::benches);
