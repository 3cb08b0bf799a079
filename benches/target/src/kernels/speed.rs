//! Speed estimator: [`SpeedEstimatorConfig::update`], one tick of the back-EMF speed estimate.

use lenz::kernel::{SpeedEstimatorConfig, SpeedEstimatorRaw, SpeedEstimatorState};

use super::{Checker, Kernel};
use crate::bench::measure;

/// One generated sequence.
pub struct Case {
    /// Coefficients (from the plan constructor on the host, or raw edge values).
    pub config: SpeedEstimatorConfig,
    /// Start current µA and speed mrad/s.
    pub start: (i32, i32),
    /// Per tick: the duty in Q16 (`None`: a coasting tick, [`SpeedEstimatorConfig::hold`]),
    /// the supply in mV, the current in µA, and the host's estimate in mrad/s.
    pub steps: &'static [(Option<i32>, i32, i32, i32)],
}

/// The straightforward f32 estimator's parameters (SI units).
#[derive(Clone, Copy)]
pub struct Naive {
    /// Inductance, H.
    pub l_h: f32,
    /// Loop resistance, Ω.
    pub r_ohm: f32,
    /// Torque constant, N·m/A.
    pub k_nm_per_a: f32,
    /// Tick, s.
    pub tick_s: f32,
    /// Low-pass time constant, s.
    pub filter_s: f32,
}

/// State of the straightforward estimator: the last current, A, and the speed, rad/s.
#[derive(Clone, Copy)]
pub struct NaiveState {
    i_a: f32,
    w_rad_s: f32,
}

include!(concat!(env!("OUT_DIR"), "/speed.rs"));

/// The per-tick function as a distinct symbol.
#[unsafe(no_mangle)]
#[inline(never)]
pub fn lenz_kernel_speed(
    cfg: &SpeedEstimatorConfig,
    s: &mut SpeedEstimatorState,
    x: (i32, i32, i32),
) -> i32 {
    cfg.update(s, x.0, x.1, x.2)
}

/// The same tick written the straightforward way: the exact one-tick solution's weights
/// `R/(1 − a)`, `a = e^(−T·R/L)`, the division by `k` and the filter step computed each tick,
/// as they must be when the resistance follows a measured winding temperature.
#[unsafe(no_mangle)]
#[inline(never)]
pub fn lenz_naive_speed(p: &Naive, s: &mut NaiveState, x: (i32, i32, i32)) -> f32 {
    let duty = (x.0 as f32 * (1.0 / 65_536.0)).clamp(-1.0, 1.0);
    let supply = libm::fmaxf(x.1 as f32 * 1.0e-3, 0.0);
    let i1 = x.2 as f32 * 1.0e-6;
    let a = libm::expf(-p.tick_s * p.r_ohm / p.l_h);
    let g1 = p.r_ohm / (1.0 - a);
    let e = duty * supply - g1 * i1 + g1 * a * s.i_a;
    let w = e / p.k_nm_per_a;
    let c = -libm::expm1f(-p.tick_s / p.filter_s);
    s.w_rad_s += c * (w - s.w_rad_s);
    s.i_a = i1;
    s.w_rad_s
}

fn empty(_: &SpeedEstimatorConfig, _: &mut SpeedEstimatorState, _: (i32, i32, i32)) -> i32 {
    0
}

fn empty_naive(_: &Naive, _: &mut NaiveState, _: (i32, i32, i32)) -> f32 {
    0.0
}

fn check(c: &mut Checker) {
    for (n, case) in CASES.iter().enumerate() {
        let mut s = SpeedEstimatorState::with_current_ua(case.start.0, case.start.1);
        for (k, &(duty, supply_mv, current_ua, want)) in case.steps.iter().enumerate() {
            let got = match duty {
                Some(d) => lenz_kernel_speed(&case.config, &mut s, (d, supply_mv, current_ua)),
                None => case.config.hold(&mut s, current_ua),
            };
            c.compare(n, k, got, want);
        }
    }
}

fn cost(n: u32) -> [Option<u32>; 4] {
    let (t, e) = measure(
        lenz_kernel_speed,
        empty,
        &BENCH_CONFIG,
        SpeedEstimatorState::new(),
        BENCH_INPUTS,
        n,
    );
    let naive = NaiveState {
        i_a: 0.0,
        w_rad_s: 0.0,
    };
    let (tn, en) = measure(
        lenz_naive_speed,
        empty_naive,
        &NAIVE,
        naive,
        BENCH_INPUTS,
        n,
    );
    [t, e, tn, en]
}

/// The speed estimator's entry in [`super::KERNELS`].
pub const KERNEL: Kernel = Kernel {
    name: "speed",
    state_bytes: size_of::<SpeedEstimatorState>(),
    naive_state_bytes: size_of::<NaiveState>(),
    check,
    cost,
};

// Named by the generated constants.
const _: Option<SpeedEstimatorRaw> = None;
