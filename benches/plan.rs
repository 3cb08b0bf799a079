//! Host benches of the plan routines (criterion): the f32 constructors of the kernel
//! configurations and the coil calculations they rest on, on the demo valve (invented values).

use criterion::{Criterion, criterion_main};
use lenz::{
    CoilParams,
    bounds::{CoilSpread, Range},
    kernel::{EstimatorConfig, MonitorConfig, MonitorParams, SenseScale},
};
use std::hint::black_box;

pub(crate) fn bench(c: &mut Criterion) {
    // Demo valve (invented): 120 mH, 32 Ω, diode 0.7 V, 24 V, 10 kHz tick.
    let params = CoilParams::new(0.120, 32.0).with_diode_drop_v(0.7);
    let coil = params.validate().expect("demo coil is valid");
    c.bench_function("coil_validate", |b| {
        b.iter(|| black_box(black_box(params).validate()))
    });
    c.bench_function("coil_current_after", |b| {
        b.iter(|| black_box(coil.current_after_a(24.0, black_box(60.0), 0.0, black_box(5e-3))))
    });
    c.bench_function("coil_time_to_current", |b| {
        b.iter(|| black_box(coil.time_to_current_s(24.0, black_box(60.0), 0.0, black_box(0.5))))
    });
    c.bench_function("coil_pwm_steady_state", |b| {
        b.iter(|| black_box(coil.pwm_steady_state(24.0, black_box(60.0), black_box(0.4), 20e3)))
    });
    c.bench_function("coil_temperature_from_steady_current", |b| {
        b.iter(|| black_box(coil.temperature_from_steady_current_c(24.0, black_box(0.6))))
    });
    c.bench_function("estimator_config_new", |b| {
        b.iter(|| {
            black_box(EstimatorConfig::new(
                &coil,
                black_box(60.0),
                black_box(100e-6),
            ))
        })
    });
    c.bench_function("estimator_config_with_clamp", |b| {
        b.iter(|| {
            black_box(EstimatorConfig::with_clamp(
                &coil,
                black_box(60.0),
                100e-6,
                100.0,
                0.7,
                false,
            ))
        })
    });
    let params_m = MonitorParams {
        abs_tol_a: 0.05,
        rel_tol: 0.2,
        open_min_estimate_a: 0.1,
        open_max_a: 0.02,
        persistence: 3,
        stuck_samples: 50,
        stuck_min_change_a: 0.1,
    };
    c.bench_function("monitor_config_new", |b| {
        b.iter(|| {
            let scale = SenseScale::new(black_box(4.028e-3), 100.0, 10, 4085);
            black_box(scale.and_then(|s| MonitorConfig::new(s, &params_m)))
        })
    });
    let spread = CoilSpread::new(
        params,
        Range::new("supply_v", 21.6, 26.4).expect("demo range is valid"),
        Range::new("temp_c", -20.0, 80.0).expect("demo range is valid"),
        0.1,
        0.07,
    )
    .expect("demo spread is valid");
    c.bench_function("worst_case_pull_in_time", |b| {
        b.iter(|| black_box(spread.pull_in_time_s(black_box(0.4))))
    });
}

// criterion's macros generate undocumented items.
#[allow(missing_docs)]
mod group {
    use super::bench;
    criterion::criterion_group!(benches, bench);
}
criterion_main!(group::benches);
