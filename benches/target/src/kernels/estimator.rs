//! Estimator: [`EstimatorConfig::update`], one tick of the RL current estimate.

use lenz::kernel::{EstimatorConfig, EstimatorRaw, EstimatorState, OffPath};

use super::{Checker, Kernel};
use crate::bench::measure;

/// One generated sequence: a configuration, a start current and the ticks.
pub struct Case {
    /// Coefficients (from the plan constructor on the host, or raw edge values).
    pub config: EstimatorConfig,
    /// Start current, µA.
    pub start_ua: i32,
    /// Per tick: switch on, supply in mV, and the host's result in µA.
    pub steps: &'static [(bool, i32, i32)],
}

/// The straightforward f32 estimator's parameters (SI units).
#[derive(Clone, Copy)]
pub struct Naive {
    /// Inductance, H.
    pub l_h: f32,
    /// Loop resistance while on, Ω.
    pub r_on_ohm: f32,
    /// Loop resistance while off, Ω.
    pub r_off_ohm: f32,
    /// Tick, s.
    pub tick_s: f32,
    /// Switch drop, V.
    pub switch_drop_v: f32,
    /// Clamp voltage, V.
    pub clamp_v: f32,
    /// Clamp across the switch.
    pub supply_coupled: bool,
}

include!(concat!(env!("OUT_DIR"), "/estimator.rs"));

/// The per-tick function as a distinct symbol.
#[unsafe(no_mangle)]
#[inline(never)]
pub fn lenz_kernel_estimator(cfg: &EstimatorConfig, s: &mut EstimatorState, x: (bool, i32)) -> i32 {
    cfg.update(s, x.0, x.1)
}

/// The same tick written the straightforward way: the exponential and the division by the
/// resistance are computed each tick, as they must be when the resistance follows a measured
/// temperature.
#[unsafe(no_mangle)]
#[inline(never)]
pub fn lenz_naive_estimator(p: &Naive, i_a: &mut f32, x: (bool, i32)) -> f32 {
    let supply_v = if x.1 > 0 { x.1 as f32 * 1.0e-3 } else { 0.0 };
    let (r, u) = if x.0 {
        (p.r_on_ohm, libm::fmaxf(supply_v - p.switch_drop_v, 0.0))
    } else {
        let coupled = if p.supply_coupled { supply_v } else { 0.0 };
        (p.r_off_ohm, coupled - p.clamp_v)
    };
    let a = libm::expf(-p.tick_s * r / p.l_h);
    let target = u / r;
    let i = target + (*i_a - target) * a;
    *i_a = if i > 0.0 { i } else { 0.0 };
    *i_a
}

fn empty(_: &EstimatorConfig, _: &mut EstimatorState, _: (bool, i32)) -> i32 {
    0
}

fn empty_naive(_: &Naive, _: &mut f32, _: (bool, i32)) -> f32 {
    0.0
}

fn check(c: &mut Checker) {
    for (n, case) in CASES.iter().enumerate() {
        let mut s = EstimatorState::with_current_ua(case.start_ua);
        for (k, &(on, supply_mv, want)) in case.steps.iter().enumerate() {
            let got = lenz_kernel_estimator(&case.config, &mut s, (on, supply_mv));
            c.compare(n, k, got, want);
        }
    }
}

fn cost(n: u32) -> [Option<u32>; 4] {
    let (t, e) = measure(
        lenz_kernel_estimator,
        empty,
        &BENCH_CONFIG,
        EstimatorState::new(),
        BENCH_INPUTS,
        n,
    );
    let (tn, en) = measure(
        lenz_naive_estimator,
        empty_naive,
        &NAIVE,
        0.0,
        BENCH_INPUTS,
        n,
    );
    [t, e, tn, en]
}

/// The estimator's entry in [`super::KERNELS`].
pub const KERNEL: Kernel = Kernel {
    name: "estimator",
    state_bytes: size_of::<EstimatorState>(),
    naive_state_bytes: size_of::<f32>(),
    check,
    cost,
};

// `OffPath` is named by the generated constants.
const _: Option<(EstimatorRaw, OffPath)> = None;
