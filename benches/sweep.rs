//! Host bench of `lenz sweep` throughput (criterion): Monte Carlo runs per second of the demo
//! valve's first scenario ("two open-close cycles": 220 ms of simulated time, 20 kHz PWM,
//! 10 kHz control tick, the valve driver in the closed loop) over the shipped tolerances, with
//! one and with two worker threads.
//!
//! Besides criterion's timings the bench prints, once, the figure of merit: runs per second
//! with 1 and 2 jobs and the speed-up, each the best of three sweeps of the same 256 runs.

use criterion::{Criterion, criterion_main};
use lenz_harness::scenario;
use lenz_harness::sweep::{Plan, sweep};
use std::hint::black_box;
use std::time::Instant;

const VALVE: &str = include_str!("../host-harness/scenarios/valve.toml");

fn valve_first_scenario() -> scenario::File {
    let mut f = scenario::parse("valve.toml", VALVE).expect("the shipped valve file is valid");
    f.scenarios.truncate(1);
    f
}

fn runs_per_second(file: &scenario::File, jobs: usize, runs: u64) -> f64 {
    let plan = Plan {
        file_name: "valve.toml",
        file_hash: "bench",
        file,
        seed: 1,
        runs,
        shard: None,
        jobs,
    };
    // The best of three (the least disturbed by other work on the machine).
    let dt = (0..3)
        .map(|_| {
            let t0 = Instant::now();
            let out = sweep(&plan, &|| {}).expect("sweep runs");
            assert_eq!(out.records.len() as u64, runs);
            t0.elapsed().as_secs_f64()
        })
        .fold(f64::INFINITY, f64::min);
    runs as f64 / dt
}

pub(crate) fn bench(c: &mut Criterion) {
    let file = valve_first_scenario();
    // The figure of merit, once (warm-up first).
    let _ = runs_per_second(&file, 2, 32);
    let one = runs_per_second(&file, 1, 256);
    let two = runs_per_second(&file, 2, 256);
    println!(
        "sweep throughput, demo valve 'two open-close cycles': {one:.0} runs/s with 1 job, \
         {two:.0} runs/s with 2 jobs, speed-up {:.2}",
        two / one
    );
    let mut g = c.benchmark_group("sweep_valve_32_runs");
    g.sample_size(10);
    for jobs in [1usize, 2] {
        g.bench_function(format!("jobs_{jobs}"), |b| {
            b.iter(|| {
                let plan = Plan {
                    file_name: "valve.toml",
                    file_hash: "bench",
                    file: &file,
                    seed: 1,
                    runs: 32,
                    shard: None,
                    jobs,
                };
                black_box(sweep(&plan, &|| {}).expect("sweep runs"))
            });
        });
    }
    g.finish();
}

// criterion's macros generate undocumented items.
#[allow(missing_docs)]
mod group {
    use super::bench;
    criterion::criterion_group!(benches, bench);
}
criterion_main!(group::benches);
