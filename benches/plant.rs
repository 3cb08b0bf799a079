//! Host bench of the plant simulator in the closed loop (criterion): the demo valve with its
//! driver, 20 kHz PWM and a 10 kHz control tick, on one core; and the same scenario with the
//! plant integrated by an outside general-purpose solver (`ode_solvers` Dop853), so the two
//! times form a ratio measured in one run.
//!
//! Besides criterion's timings the bench prints, once, the figure of merit: simulated seconds
//! per wall-clock second for both, and their ratio.

use criterion::{Criterion, criterion_main};
use lenz_harness::closed_loop::demo::{DIODE, valve_driver, valve_loop, valve_plant};
use lenz_harness::closed_loop::{Plant, Probe, run};
use lenz_harness::controllers::ValveDriver;
use lenz_harness::faults::Fault;
use ode_solvers::{Dop853, OutputType, System, Vector1};
use std::hint::black_box;
use std::time::Instant;

/// Demo valve (invented): 120 mH, 32 Ω, switch 0.1 Ω, shunt 10 mΩ, source 0.2 Ω, 24 V,
/// freewheel diode 0.7 V.
const L: f64 = 0.120;
const R_W: f64 = 32.0;
const R_ON_LOOP: f64 = 32.0 + 0.1 + 0.010 + 0.2;
const VS: f64 = 24.0;
const VF: f64 = 0.7;

struct Rl {
    on: bool,
}

impl System<f64, Vector1<f64>> for Rl {
    fn system(&self, _t: f64, y: &Vector1<f64>, dy: &mut Vector1<f64>) {
        dy[0] = if self.on {
            (VS - R_ON_LOOP * y[0]) / L
        } else {
            -(VF + R_W * y[0]) / L
        };
    }
}

/// The same valve integrated by Dop853 from edge to edge at relative tolerance 1e-12 (the
/// lenz plant is exact on this linear case); when the freewheel current would cross zero the
/// diode blocks and the current stays at zero. No thermal model (the lenz plant carries one).
struct ReferenceValve {
    t: f64,
    i: f64,
    on: bool,
    peak: f64,
}

fn dop(on: bool, i: f64, dt: f64) -> f64 {
    let mut s = Dop853::new(Rl { on }, 0.0, dt, dt, Vector1::new(i), 1e-12, 1e-14);
    s.set_output(OutputType::Sparse);
    match s.integrate() {
        Ok(_) => s.y_out().last().map_or(i, |y| y[0]),
        Err(_) => f64::NAN,
    }
}

impl Plant for ReferenceValve {
    fn advance_to(&mut self, t_s: f64) {
        let dt = t_s - self.t;
        if dt <= 0.0 {
            return;
        }
        if self.on {
            self.i = dop(true, self.i, dt);
        } else if self.i > 0.0 {
            let end = dop(false, self.i, dt);
            self.i = if end > 0.0 { end } else { 0.0 };
        }
        self.peak = self.peak.max(self.i);
        self.t = t_s;
    }
    fn set_switch(&mut self, on: bool) {
        self.on = on;
    }
    fn probe(&self) -> Probe {
        let v = if self.on {
            0.1 * self.i
        } else if self.i > 0.0 {
            VS + VF
        } else {
            VS
        };
        Probe {
            current_a: self.i,
            supply_v: VS - if self.on { 0.2 * self.i } else { 0.0 },
            output_v: v,
            switch_v: v,
        }
    }
    fn inject(&mut self, _fault: &Fault) -> bool {
        false
    }
    fn supply_v(&self) -> f64 {
        VS
    }
    fn set_supply_v(&mut self, _v: f64) -> bool {
        false
    }
    fn peak_switch_v(&self) -> f64 {
        VS + VF
    }
    fn peak_current_a(&self) -> f64 {
        self.peak
    }
}

/// One valve cycle: 0.2 s with the valve opened at 5 ms and closed at 150 ms.
const SIM_S: f64 = 0.2;

fn scenario() -> lenz_harness::closed_loop::LoopConfig {
    let mut cfg = valve_loop(SIM_S, vec![(0.005, true), (0.150, false)], vec![]);
    cfg.record_every = 0;
    cfg
}

fn with_plant() -> bool {
    let mut plant = valve_plant(20.0, 24.0, DIODE);
    plant.set_record_events(false);
    let mut ctrl = ValveDriver::new(valve_driver(20.0).expect("demo plan is valid"))
        .expect("demo plan is valid");
    run(&mut plant, &mut ctrl, &scenario())
        .expect("demo run")
        .passed()
}

fn with_reference() -> bool {
    let mut plant = reference_plant();
    let mut ctrl = ValveDriver::new(valve_driver(20.0).expect("demo plan is valid"))
        .expect("demo plan is valid");
    run(&mut plant, &mut ctrl, &scenario())
        .expect("demo run")
        .passed()
}

/// The plant alone through the same kind of edges: 30 ms on, then 20 kHz PWM at 45 % duty,
/// off at 150 ms, to 0.2 s (no controller, no ADC): the integrators' share of the loop.
fn plant_only<P: Plant>(p: &mut P) -> f64 {
    let period = 50e-6;
    p.set_switch(true);
    p.advance_to(0.030);
    let mut k = 0;
    loop {
        let t0 = 0.030 + k as f64 * period;
        if t0 >= 0.150 {
            break;
        }
        p.set_switch(true);
        p.advance_to(t0 + 0.45 * period);
        p.set_switch(false);
        p.advance_to(t0 + period);
        k += 1;
    }
    p.advance_to(SIM_S);
    p.probe().current_a
}

fn reference_plant() -> ReferenceValve {
    ReferenceValve {
        t: 0.0,
        i: 0.0,
        on: false,
        peak: 0.0,
    }
}

fn figure() {
    let reps = 5;
    let t = Instant::now();
    for _ in 0..reps {
        assert!(black_box(with_plant()));
    }
    let own = t.elapsed().as_secs_f64() / reps as f64;
    let t = Instant::now();
    for _ in 0..reps {
        black_box(with_reference());
    }
    let reference = t.elapsed().as_secs_f64() / reps as f64;
    println!(
        "demo valve closed loop (20 kHz PWM, 10 kHz tick), {SIM_S} s simulated: \
         lenz plant {:.1}x real time, Dop853 reference {:.1}x real time, ratio {:.1}",
        SIM_S / own,
        SIM_S / reference,
        reference / own
    );
    let t = Instant::now();
    for _ in 0..reps {
        let mut p = valve_plant(20.0, 24.0, DIODE);
        p.set_record_events(false);
        black_box(plant_only(&mut p));
    }
    let own = t.elapsed().as_secs_f64() / reps as f64;
    let t = Instant::now();
    for _ in 0..reps {
        black_box(plant_only(&mut reference_plant()));
    }
    let reference = t.elapsed().as_secs_f64() / reps as f64;
    println!(
        "demo valve plant alone (same edges, no controller): lenz plant {:.1}x real time, \
         Dop853 reference {:.1}x real time, ratio {:.1}",
        SIM_S / own,
        SIM_S / reference,
        reference / own
    );
}

pub(crate) fn bench(c: &mut Criterion) {
    figure();
    let mut g = c.benchmark_group("closed_loop_valve_0.2s");
    g.sample_size(10);
    g.bench_function("lenz_plant", |b| b.iter(|| black_box(with_plant())));
    g.bench_function("dop853_reference", |b| {
        b.iter(|| black_box(with_reference()))
    });
    g.bench_function("lenz_plant_alone", |b| {
        b.iter(|| {
            let mut p = valve_plant(20.0, 24.0, DIODE);
            p.set_record_events(false);
            black_box(plant_only(&mut p))
        })
    });
    g.bench_function("dop853_plant_alone", |b| {
        b.iter(|| black_box(plant_only(&mut reference_plant())))
    });
    g.finish();
}

// criterion's macros generate undocumented items.
#[allow(missing_docs)]
mod group {
    use super::bench;
    criterion::criterion_group!(benches, bench);
}
criterion_main!(group::benches);
