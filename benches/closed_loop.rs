//! Host bench of the closed loop as `lenz sim` runs it (criterion), on one core:
//!
//! - the shipped demo valve's first scenario, "two open-close cycles" (220 ms simulated, 20 kHz
//!   PWM hold, 10 kHz control tick, ADC noise on three channels, the thermal model on), with
//!   its figure of merit: simulated seconds per wall-clock second ("× real time");
//! - the same valve with its open-close cycle repeated 1×, 10× and 100× (duration and event
//!   count both scale), so the cost per simulated second can be compared across lengths: a loop
//!   that rescanned its event list every tick would grow faster than linearly.
//!
//! Besides criterion's timings the bench prints the figures once, each the best of five
//! batches: × real time of the demo scenario, and the time per simulated second at each length
//! with its ratio to the 1× run
//! (not under `--profile-time`, which runs only the selected benchmark, for a profiler:
//! `valgrind --tool=callgrind <bench binary> --bench --profile-time 2 valve_two`).

use criterion::{BenchmarkId, Criterion, criterion_main};
use lenz_harness::scenario;
use lenz_harness::scenario::run::{Params, Record};
use std::hint::black_box;
use std::time::Instant;

const VALVE: &str = include_str!("../host-harness/scenarios/valve.toml");

/// One open-close cycle of the repeated scenario: on for 80 ms, off for 40 ms.
const CYCLE_S: f64 = 0.120;

fn valve_file() -> scenario::File {
    scenario::parse("valve.toml", VALVE).expect("the shipped valve file is valid")
}

/// The valve file with one scenario: `cycles` open-close cycles, each on at 5 ms into its
/// cycle and off 80 ms later, with the first scenario's checks.
fn repeated(cycles: u32) -> scenario::File {
    let mut text = String::from(VALVE);
    let cut = text
        .find("[[scenario]]")
        .expect("the valve file has scenarios");
    text.truncate(cut);
    text.push_str(&format!(
        "[[scenario]]\nname = \"{cycles} cycles\"\nduration = {}\n",
        f64::from(cycles) * CYCLE_S
    ));
    for k in 0..cycles {
        let t0 = f64::from(k) * CYCLE_S;
        text.push_str(&format!(
            "[[scenario.event]]\nat = {}\ncommand = \"on\"\n\
             [[scenario.event]]\nat = {}\ncommand = \"off\"\n",
            t0 + 0.005,
            t0 + 0.085
        ));
    }
    text.push_str(
        "[[scenario.check]]\nproperty = \"release-time\"\nmax = \"12ms\"\n\
         [[scenario.check]]\nproperty = \"estimator-error\"\nmax = \"50mA\"\n",
    );
    scenario::parse("repeated.toml", &text).expect("the repeated scenario is valid")
}

fn run(file: &scenario::File) -> bool {
    scenario::run::run(file, 0, &Params::NOMINAL, Record::None)
        .expect("the demo runs")
        .passed()
}

/// Seconds per run: the best of five batches of `reps` runs (the least disturbed by other
/// work on the machine).
fn seconds_per_run(file: &scenario::File, reps: u32) -> f64 {
    (0..5)
        .map(|_| {
            let t = Instant::now();
            for _ in 0..reps {
                assert!(black_box(run(file)), "the demo scenario holds");
            }
            t.elapsed().as_secs_f64() / f64::from(reps)
        })
        .fold(f64::INFINITY, f64::min)
}

fn figures() {
    let demo = valve_file();
    let _ = seconds_per_run(&demo, 1);
    let t = seconds_per_run(&demo, 20);
    println!(
        "demo valve 'two open-close cycles' (0.22 s simulated), one core: {:.0}x real time \
         ({:.2} ms per run)",
        0.22 / t,
        t * 1e3
    );
    let mut base = None;
    for cycles in [1u32, 10, 100] {
        let f = repeated(cycles);
        let reps = (100 / cycles).max(1);
        let per_sim_s = seconds_per_run(&f, reps) / (f64::from(cycles) * CYCLE_S);
        let b = *base.get_or_insert(per_sim_s);
        println!(
            "repeated valve cycles x{cycles} ({:.2} s simulated, {} events): {:.3} ms per \
             simulated second, {:.2} of the x1 cost",
            f64::from(cycles) * CYCLE_S,
            2 * cycles,
            per_sim_s * 1e3,
            per_sim_s / b
        );
    }
}

pub(crate) fn bench(c: &mut Criterion) {
    // Under `--profile-time` (for a profiler) only the benchmark itself runs.
    if !std::env::args().any(|a| a == "--profile-time") {
        figures();
    }
    let mut g = c.benchmark_group("closed_loop");
    g.sample_size(10);
    let demo = valve_file();
    g.bench_function("valve_two_open_close_cycles", |b| {
        b.iter(|| black_box(run(&demo)));
    });
    for cycles in [1u32, 10, 100] {
        let f = repeated(cycles);
        g.bench_with_input(BenchmarkId::new("repeated_cycles", cycles), &f, |b, f| {
            b.iter(|| black_box(run(f)));
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
