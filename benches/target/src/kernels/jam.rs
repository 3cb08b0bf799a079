//! Jam detector: [`JamConfig::update`], one tick of the jam, overload and open-winding checks.

use lenz::kernel::{JamConfig, JamRaw, JamState, JamStatus, MotorFault};

use super::{Checker, Kernel};
use crate::bench::measure;

/// One generated sequence from a fresh [`JamState`].
pub struct Case {
    /// Thresholds (from the plan constructor on the host, or raw edge values).
    pub config: JamConfig,
    /// Per tick: duty Q16, current µA, speed mrad/s, and the host's verdict.
    pub steps: &'static [(i32, i32, i32, JamStatus)],
}

/// The straightforward f32 detector's parameters (SI units).
#[derive(Clone, Copy)]
pub struct Naive {
    /// Jam current, A.
    pub jam_current_a: f32,
    /// Jam speed, rad/s.
    pub jam_speed_rad_s: f32,
    /// Jam and open-winding persistence, s.
    pub persistence_s: f32,
    /// Start blanking, s.
    pub blanking_s: f32,
    /// Overload current, A.
    pub overload_current_a: f32,
    /// Overload time, s.
    pub overload_s: f32,
    /// Open-winding current, A.
    pub open_current_a: f32,
    /// Smallest duty judged for an open winding.
    pub open_min_duty: f32,
    /// Tick, s.
    pub tick_s: f32,
}

/// State of the straightforward detector: times in f32 seconds.
#[derive(Clone, Copy)]
pub struct NaiveState {
    since_start_s: f32,
    jam_s: f32,
    overload_s: f32,
    open_s: f32,
    last_sign: i8,
    fault: u8,
}

include!(concat!(env!("OUT_DIR"), "/jam.rs"));

/// The per-tick function as a distinct symbol.
#[unsafe(no_mangle)]
#[inline(never)]
pub fn lenz_kernel_jam(cfg: &JamConfig, s: &mut JamState, x: (i32, i32, i32)) -> JamStatus {
    cfg.update(s, x.0, x.1, x.2)
}

/// The same tick written the straightforward way: amperes, rad/s and duty in f32, each
/// condition's time accumulated in f32 seconds; returns the fault code (0: none).
#[unsafe(no_mangle)]
#[inline(never)]
pub fn lenz_naive_jam(p: &Naive, s: &mut NaiveState, x: (i32, i32, i32)) -> u8 {
    if s.fault != 0 {
        return s.fault;
    }
    let duty = x.0 as f32 * (1.0 / 65_536.0);
    let sign = if duty > 0.0 {
        1
    } else if duty < 0.0 {
        -1
    } else {
        0
    };
    if sign == 0 || sign != s.last_sign {
        s.last_sign = sign;
        s.since_start_s = 0.0;
        s.jam_s = 0.0;
        s.overload_s = 0.0;
        s.open_s = 0.0;
        if sign == 0 {
            return 0;
        }
    }
    s.since_start_s += p.tick_s;
    if s.since_start_s <= p.blanking_s {
        return 0;
    }
    let i = libm::fabsf(x.1 as f32 * 1.0e-6);
    let w = libm::fabsf(x.2 as f32 * 1.0e-3);
    s.jam_s = if i >= p.jam_current_a && w <= p.jam_speed_rad_s {
        s.jam_s + p.tick_s
    } else {
        0.0
    };
    s.overload_s = if i >= p.overload_current_a {
        s.overload_s + p.tick_s
    } else {
        0.0
    };
    s.open_s = if libm::fabsf(duty) >= p.open_min_duty && i <= p.open_current_a {
        s.open_s + p.tick_s
    } else {
        0.0
    };
    s.fault = if s.jam_s >= p.persistence_s {
        1
    } else if s.overload_s >= p.overload_s {
        2
    } else if s.open_s >= p.persistence_s {
        3
    } else {
        0
    };
    s.fault
}

fn empty(_: &JamConfig, _: &mut JamState, _: (i32, i32, i32)) -> JamStatus {
    JamStatus::Idle
}

fn empty_naive(_: &Naive, _: &mut NaiveState, _: (i32, i32, i32)) -> u8 {
    0
}

fn check(c: &mut Checker) {
    for (n, case) in CASES.iter().enumerate() {
        let mut s = JamState::new();
        for (k, &(duty, current, speed, want)) in case.steps.iter().enumerate() {
            let got = lenz_kernel_jam(&case.config, &mut s, (duty, current, speed));
            c.compare(n, k, got, want);
        }
    }
}

fn cost(n: u32) -> [Option<u32>; 4] {
    // Past the start blanking: every check is judged each tick.
    let mut s = JamState::new();
    let first = BENCH_INPUTS[0];
    for _ in 0..=BENCH_CONFIG.blank_ticks() {
        BENCH_CONFIG.update(&mut s, first.0, first.1, first.2);
    }
    let (t, e) = measure(lenz_kernel_jam, empty, &BENCH_CONFIG, s, BENCH_INPUTS, n);
    let naive = NaiveState {
        since_start_s: 1.0,
        jam_s: 0.0,
        overload_s: 0.0,
        open_s: 0.0,
        last_sign: 1,
        fault: 0,
    };
    let (tn, en) = measure(lenz_naive_jam, empty_naive, &NAIVE, naive, BENCH_INPUTS, n);
    [t, e, tn, en]
}

/// The jam detector's entry in [`super::KERNELS`].
pub const KERNEL: Kernel = Kernel {
    name: "jam",
    state_bytes: size_of::<JamState>(),
    naive_state_bytes: size_of::<NaiveState>(),
    check,
    cost,
};

// Named by the generated constants.
const _: Option<(JamRaw, MotorFault)> = None;
