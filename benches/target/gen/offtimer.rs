//! Vectors of the off-timers. Tracking: demo coils and clamps (invented values) through the
//! plan constructor, started at switch-off currents from zero to beyond the estimator range and
//! ticked with a noisy supply until well after release; raw edge configurations (any estimator
//! coefficients, threshold, margin and shift). Planned: demo switch-offs (invented values)
//! through the plan constructor, started below, between and above the breakpoints; raw edge
//! tables.

use std::fmt::Write as _;

use lenz::CoilParams;
use lenz::kernel::{
    EstimatorRaw, OffPath, OffStatus, OffTimerState, PLANNED_TABLE_LEN, PlannedOffTimerConfig,
    PlannedOffTimerRaw, TrackingOffTimerConfig, TrackingOffTimerRaw,
};
use lenz::turnoff::{Clamp, SwitchOff};

use super::Rng;

/// `t` as a constant expression (the raw values' `Debug` form is a struct literal).
fn tracking_expr(t: &TrackingOffTimerConfig) -> String {
    format!("TrackingOffTimerConfig::from_raw({:?})", t.raw())
}

fn status_expr(s: OffStatus) -> String {
    format!("OffStatus::{s:?}")
}

/// Steps of switch-offs: `(start current or none, supply mV)`; a start comes before its tick.
type Steps = Vec<(Option<i32>, i32)>;

fn tracking_steps(rng: &mut Rng, supply_mv: i32, starts: &[i32], ticks: usize) -> Steps {
    let mut v = vec![(None, supply_mv), (None, supply_mv)]; // ticks before any start
    for &i0 in starts {
        for k in 0..ticks {
            let noise = rng.range(-supply_mv / 20, supply_mv / 20);
            v.push(((k == 0).then_some(i0), supply_mv + noise));
        }
    }
    v
}

struct TrackingCase {
    timer: TrackingOffTimerConfig,
    steps: Steps,
}

fn tracking_cases(rng: &mut Rng) -> (Vec<TrackingCase>, usize) {
    let coil = |l: f32, r: f32| {
        CoilParams::new(l, r)
            .with_diode_drop_v(0.7)
            .validate()
            .expect("demo coil is valid")
    };
    // Demo coils and clamps (invented values): valve with zener, relay with diode, valve
    // with a clamp across the switch, valve with resistor plus diode.
    let demos = [
        (
            coil(0.120, 32.0),
            Clamp::Zener {
                zener_v: 24.0,
                forward_v: 0.7,
            },
            0.075,
            24_000,
        ),
        (
            coil(0.040, 24.0),
            Clamp::Diode { forward_v: 0.7 },
            0.010,
            12_000,
        ),
        (
            coil(0.120, 32.0),
            Clamp::Switch { clamp_v: 36.0 },
            0.075,
            24_000,
        ),
        (
            coil(0.120, 32.0),
            Clamp::Resistor {
                resistance_ohm: 100.0,
                forward_v: 0.7,
            },
            0.050,
            24_000,
        ),
    ];
    let mut cases = Vec::new();
    for (coil, clamp, thr, supply_mv) in demos {
        let timer = TrackingOffTimerConfig::new(&coil, 20.0, 100e-6, &clamp, thr)
            .expect("demo timer is valid");
        let starts = [750_000, 500_000, 80_000, 0, -5, i32::MAX, 1 << 30];
        let steps = tracking_steps(rng, supply_mv, &starts, 45);
        cases.push(TrackingCase { timer, steps });
    }
    let demos = cases.len();
    for _ in 0..8 {
        let estimator = EstimatorRaw {
            on_step_q31: rng.any_i32(),
            on_conductance_q16: rng.any_i32(),
            switch_drop_mv: rng.any_i32(),
            off: OffPath {
                step_q31: rng.any_i32(),
                conductance_q16: rng.any_i32(),
                clamp_mv: rng.any_i32(),
                supply_coupled: rng.bool(),
            },
        };
        let timer = TrackingOffTimerConfig::from_raw(TrackingOffTimerRaw {
            estimator,
            threshold_ua: rng.any_i32(),
            base_margin_ua: rng.any_i32(),
            margin_shift: rng.range(0, 40) as u32,
        });
        let mut steps = vec![(None, rng.any_i32())];
        for k in 0..100 {
            let start = (k % 25 == 0).then(|| rng.any_i32());
            steps.push((start, rng.any_i32()));
        }
        cases.push(TrackingCase { timer, steps });
    }
    (cases, demos)
}

struct PlannedCase {
    timer: PlannedOffTimerConfig,
    steps: Vec<Option<i32>>,
}

/// `t` as a constant expression (the raw values' `Debug` form is a struct literal).
fn planned_expr(t: &PlannedOffTimerConfig) -> String {
    format!("PlannedOffTimerConfig::from_raw({:?})", t.raw())
}

fn planned_cases(rng: &mut Rng) -> Vec<PlannedCase> {
    // Demo switch-offs (invented values): relay with diode, valve with zener.
    let plans = [
        (
            SwitchOff::new(0.3, 120.0, 12.0, 0.1, Clamp::Diode { forward_v: 0.7 }),
            0.010,
            0.120,
        ),
        (
            SwitchOff::new(
                0.120,
                32.0,
                24.0,
                0.75,
                Clamp::Zener {
                    zener_v: 24.0,
                    forward_v: 0.7,
                },
            ),
            0.075,
            0.800,
        ),
    ];
    let mut cases = Vec::new();
    for (plan, thr, max) in plans {
        let plan = plan.expect("demo switch-off is valid");
        let timer =
            PlannedOffTimerConfig::new(&plan, thr, max, 100e-6).expect("demo table is valid");
        let mut steps = vec![None, None];
        let max_ua = (max * 1e6) as i32;
        for i0 in [max_ua, max_ua / 2, max_ua / 7, 0, -1, max_ua + 1, i32::MAX] {
            steps.push(Some(i0));
            // Up to the largest count, plus a little.
            let n = timer.ticks().iter().max().copied().unwrap_or(0).min(600) + 5;
            steps.extend((0..n).map(|_| None));
        }
        cases.push(PlannedCase { timer, steps });
    }
    for _ in 0..6 {
        let mut bp = [0i32; PLANNED_TABLE_LEN];
        let mut ticks = [0u32; PLANNED_TABLE_LEN];
        for (b, t) in bp.iter_mut().zip(ticks.iter_mut()) {
            *b = rng.any_i32();
            *t = match rng.range(0, 3) {
                0 => 0,
                1 => u32::MAX,
                _ => rng.range(0, 30) as u32,
            };
        }
        let timer = PlannedOffTimerConfig::from_raw(PlannedOffTimerRaw {
            breakpoints_ua: bp,
            ticks,
        });
        let mut steps = vec![None];
        for k in 0..150 {
            steps.push((k % 30 == 0).then(|| rng.any_i32()));
        }
        cases.push(PlannedCase { timer, steps });
    }
    cases
}

pub fn generate() -> String {
    let mut rng = Rng::new(0x6c65_6e7a_0003);
    let (tracking, demos) = tracking_cases(&mut rng);
    let mut src = String::from("// Generated by gen/offtimer.rs with the host build of lenz.\n\n");
    src.push_str(
        "/// Tracking: generated sequences.\npub static TRACKING_CASES: &[TrackingCase] = &[\n",
    );
    let (mut released, mut not_yet) = (false, false);
    for (n, c) in tracking.iter().enumerate() {
        if n < demos {
            let back = TrackingOffTimerConfig::from_raw(c.timer.raw());
            assert!(
                back == c.timer,
                "tracking timer constant differs from its plan"
            );
        }
        let mut s = OffTimerState::new();
        let _ = write!(
            src,
            "    TrackingCase {{ timer: {}, steps: &[",
            tracking_expr(&c.timer)
        );
        for &(start, supply_mv) in &c.steps {
            if let Some(i0) = start {
                c.timer.start(&mut s, i0);
            }
            let st = c.timer.update(&mut s, supply_mv);
            released |= st == OffStatus::Released;
            not_yet |= st == OffStatus::NotYet;
            let _ = write!(
                src,
                "({start:?}, {supply_mv}, {}, {}), ",
                status_expr(st),
                s.estimate_ua()
            );
        }
        src.push_str("] },\n");
    }
    src.push_str("];\n\n");
    assert!(released && not_yet, "tracking vectors miss a status");

    // Cost run: the first demo, started at the demo current.
    let bench = &tracking[0].timer;
    let _ = writeln!(
        src,
        "/// Tracking cost run: the first demo timer.\npub const TRACKING_BENCH: TrackingOffTimerConfig = {};\n/// Its switch-off current, µA.\npub const TRACKING_BENCH_START_UA: i32 = 750_000;\n",
        tracking_expr(bench)
    );
    src.push_str(
        "/// Supplies of the tracking cost run, mV.\npub static TRACKING_BENCH_INPUTS: &[i32] = &[",
    );
    for _ in 0..256 {
        let _ = write!(src, "{}, ", 24_000 + rng.range(-1200, 1200));
    }
    src.push_str("];\n\n");
    // The straightforward versions' parameters (the first demos; SI units).
    let coil = CoilParams::new(0.120, 32.0)
        .with_diode_drop_v(0.7)
        .validate()
        .expect("demo coil is valid");
    let r_off = coil
        .off_loop_resistance_ohm(20.0)
        .expect("valid temperature");
    let _ = writeln!(
        src,
        "/// The straightforward tracking version's parameters.\npub const TRACKING_NAIVE: TrackingNaive = TrackingNaive {{ l_h: {:?}, r_off_ohm: {:?}, tick_s: {:?}, clamp_v: {:?}, supply_coupled: false, threshold_a: {:?} }};",
        coil.inductance_h(),
        r_off,
        100e-6f32,
        24.7f32,
        0.075f32
    );
    src
}

pub fn generate_planned() -> String {
    let mut rng = Rng::new(0x6c65_6e7a_0004);
    let mut src = String::from("// Generated by gen/offtimer.rs with the host build of lenz.\n\n");
    let planned = planned_cases(&mut rng);
    src.push_str(
        "/// Planned: generated sequences.\npub static PLANNED_CASES: &[PlannedCase] = &[\n",
    );
    let (mut released, mut never) = (false, false);
    for c in &planned {
        let mut s = OffTimerState::new();
        let _ = write!(
            src,
            "    PlannedCase {{ timer: {}, steps: &[",
            planned_expr(&c.timer)
        );
        for &start in &c.steps {
            if let Some(i0) = start {
                c.timer.start(&mut s, i0);
            }
            let st = c.timer.update(&mut s);
            released |= st == OffStatus::Released;
            never |= s.remaining_ticks() == u32::MAX;
            let _ = write!(
                src,
                "({start:?}, {}, {}), ",
                status_expr(st),
                s.remaining_ticks()
            );
        }
        src.push_str("] },\n");
    }
    src.push_str("];\n\n");
    assert!(released && never, "planned vectors miss a status");

    let _ = writeln!(
        src,
        "/// Planned cost run: the first demo table.\npub const PLANNED_BENCH: PlannedOffTimerConfig = {};\n",
        planned_expr(&planned[0].timer)
    );
    let plan = SwitchOff::new(0.3, 120.0, 12.0, 0.1, Clamp::Diode { forward_v: 0.7 })
        .expect("demo switch-off is valid");
    let _ = writeln!(
        src,
        "/// The straightforward planned version's parameters.\npub const PLANNED_NAIVE: PlannedNaive = PlannedNaive {{ tick_s: {:?}, release_s: {:?} }};",
        100e-6f32,
        plan.time_to_current_s(0.010).expect("demo decay")
    );
    src
}
