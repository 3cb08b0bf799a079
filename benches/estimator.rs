//! Host bench of one estimator update and one monitor check (criterion).

use criterion::{Criterion, criterion_main};
use lenz::{
    CoilParams,
    kernel::{
        EstimatorConfig, EstimatorState, MonitorConfig, MonitorParams, MonitorState, SenseScale,
    },
};
use std::hint::black_box;

pub(crate) fn bench(c: &mut Criterion) {
    // Demo valve (invented): 120 mH, 32 Ω, diode 0.7 V, 10 kHz tick.
    let coil = CoilParams::new(0.120, 32.0)
        .with_diode_drop_v(0.7)
        .validate()
        .expect("demo coil is valid");
    let cfg = EstimatorConfig::new(&coil, 20.0, 100e-6).expect("demo coefficients are valid");
    let mut state = EstimatorState::new();
    let mut k = 0u32;
    c.bench_function("estimator_update", |b| {
        b.iter(|| {
            k = k.wrapping_add(1);
            let on = (k & 7) < 5;
            black_box(cfg.update(&mut state, black_box(on), black_box(24_000)))
        });
    });
    let scale = SenseScale::new(4.028e-3, 100.0, 10, 4085).expect("demo scale is valid");
    let mon = MonitorConfig::new(
        scale,
        &MonitorParams {
            abs_tol_a: 0.05,
            rel_tol: 0.2,
            open_min_estimate_a: 0.1,
            open_max_a: 0.02,
            persistence: 3,
            stuck_samples: 50,
            stuck_min_change_a: 0.1,
        },
    )
    .expect("demo monitor is valid");
    let mut ms = MonitorState::new();
    let mut n = 0u16;
    c.bench_function("monitor_check", |b| {
        b.iter(|| {
            // A healthy channel: readings scatter around the estimate, no fault latches.
            n = n.wrapping_add(1) & 7;
            black_box(mon.update(&mut ms, black_box(400_000), black_box(196 + n)))
        });
    });
    assert_eq!(ms.fault(), None, "the bench must measure the healthy path");
}

// criterion's macros generate undocumented items.
#[allow(missing_docs)]
mod group {
    use super::bench;
    criterion::criterion_group!(benches, bench);
}
criterion_main!(group::benches);
