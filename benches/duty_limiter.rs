//! Host bench of one duty-limiter tick (criterion).

use criterion::{Criterion, criterion_main};
use lenz::{
    Range,
    boost::{BoostStageParams, LightLoad},
    kernel::{DutyLimiterConfig, DutyLimiterParams, DutyLimiterState},
};
use std::hint::black_box;

pub(crate) fn bench(c: &mut Criterion) {
    // Heater rail of the greenhouse demo (invented): 5 V -> 12 V, 500 kHz, 10 µH, 2 A inductor,
    // 12-bit ADCs, 1000-count PWM period, 10 kHz tick, 10 ms soft start.
    let stage = BoostStageParams::new(10e-6, 500e3)
        .with_inductor_resistance_ohm(0.040)
        .with_switch_resistance_ohm(0.025)
        .with_diode_drop_v(0.35)
        .with_saturation_current_a(2.0)
        .with_min_off_time_s(100e-9)
        .with_min_on_time_s(80e-9)
        .validate()
        .expect("demo stage is valid");
    let cfg = DutyLimiterConfig::new(
        &stage,
        &DutyLimiterParams {
            input_v: Range::new("input_v", 4.0, 6.0).expect("demo range is valid"),
            output_v: 12.0,
            max_load_current_a: 0.5,
            light_load: Some(LightLoad {
                min_load_current_a: 0.05,
                max_output_v: 20.0,
            }),
            input_v_per_count: 6.6 / 4096.0,
            output_v_per_count: 24.75 / 4096.0,
            adc_max_counts: 4095,
            duty_full_scale: 1000,
            soft_start_s: 10e-3,
            tick_s: 100e-6,
            overvoltage_v: 21.0,
            resume_v: 19.5,
            inductance_tol: 0.2,
            resistance_tol: 0.3,
        },
    )
    .expect("demo limiter is valid");
    let mut state = DutyLimiterState::new();
    let mut k = 0u16;
    c.bench_function("duty_limiter_tick", |b| {
        b.iter(|| {
            // Sweep the input over the window so every table segment is visited.
            k = k.wrapping_add(7) & 1023;
            black_box(cfg.update(
                &mut state,
                black_box(900),
                black_box(2600 + k),
                black_box(1986),
            ))
        });
    });
}

// criterion's macros generate undocumented items.
#[allow(missing_docs)]
mod group {
    use super::bench;
    criterion::criterion_group!(benches, bench);
}
criterion_main!(group::benches);
