//! Host bench of one trip-detector sample (criterion): instantaneous with blanking and 2-of-3
//! persistence, IEC standard-inverse accumulator and thermal accumulator all enabled.

use criterion::{Criterion, criterion_main};
use lenz::{
    kernel::{TripConfig, TripLog, TripParams, TripState},
    trip::{Curve, InverseTime, Thermal},
};
use std::hint::black_box;

pub(crate) fn bench(c: &mut Criterion) {
    // Vent motor channel of the demo (invented): 10 kHz samples, 4.03 mA per count.
    let cfg = TripConfig::new(&TripParams {
        sample_period_s: 100e-6,
        amps_per_count: 4.028e-3,
        instantaneous_counts: 1986,
        full_scale_counts: 4095,
        blanking_s: 3e-6,
        persistence_n: 2,
        persistence_m: 3,
        stuck_samples: 1000,
        inverse: Some(
            InverseTime::new(Curve::IecStandardInverse, 2.5, 0.1).expect("demo curve is valid"),
        ),
        thermal: Some(Thermal::new(600.0, 1.05, 2.5).expect("demo thermal is valid")),
        retries: 3,
        retry_delay_s: 0.5,
    })
    .expect("demo trip detector is valid");
    let mut state = TripState::new();
    let mut log = TripLog::<8>::new();
    let mut k = 0u16;
    c.bench_function("trip_sample", |b| {
        b.iter(|| {
            // Readings sweep 300..1323 counts (1.2 A .. 5.3 A): below and above pickup.
            k = k.wrapping_add(1) & 1023;
            let v = cfg.update_logged(&mut state, &mut log, black_box(300 + k), black_box(true));
            if state.is_latched() {
                state.reset();
            }
            black_box(v)
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
