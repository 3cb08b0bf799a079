//! Tracking off-timer: [`TrackingOffTimerConfig::update`], one estimator off-state update against the
//! release threshold.

use lenz::kernel::{
    EstimatorRaw, OffPath, OffStatus, OffTimerState, TrackingOffTimerConfig, TrackingOffTimerRaw,
};

use super::{Checker, Kernel};
use crate::bench::measure;

/// One generated sequence from an idle [`OffTimerState`].
pub struct TrackingCase {
    /// Timer (from the plan constructor on the host, or raw edge values).
    pub timer: TrackingOffTimerConfig,
    /// Per tick: a switch-off current to start from (before the tick), the supply in mV, and
    /// the host's status and estimate in µA after the tick.
    pub steps: &'static [(Option<i32>, i32, OffStatus, i32)],
}

/// The straightforward f32 tracking timer's parameters (SI units).
#[derive(Clone, Copy)]
pub struct TrackingNaive {
    /// Inductance, H.
    pub l_h: f32,
    /// Loop resistance while off, Ω.
    pub r_off_ohm: f32,
    /// Tick, s.
    pub tick_s: f32,
    /// Clamp voltage, V.
    pub clamp_v: f32,
    /// Clamp across the switch.
    pub supply_coupled: bool,
    /// Release threshold, A.
    pub threshold_a: f32,
}

include!(concat!(env!("OUT_DIR"), "/offtimer.rs"));

/// The per-tick function as a distinct symbol.
#[unsafe(no_mangle)]
#[inline(never)]
pub fn lenz_kernel_offtimer(
    t: &TrackingOffTimerConfig,
    s: &mut OffTimerState,
    supply_mv: i32,
) -> OffStatus {
    t.update(s, supply_mv)
}

/// The same tick written the straightforward way: the off-state decay with `exp(−T·R/L)`
/// computed each tick (the resistance follows a measured temperature), compared in amperes.
#[unsafe(no_mangle)]
#[inline(never)]
pub fn lenz_naive_offtimer(p: &TrackingNaive, i_a: &mut f32, supply_mv: i32) -> OffStatus {
    let supply_v = if supply_mv > 0 {
        supply_mv as f32 * 1.0e-3
    } else {
        0.0
    };
    let coupled = if p.supply_coupled { supply_v } else { 0.0 };
    let target = (coupled - p.clamp_v) / p.r_off_ohm;
    let a = libm::expf(-p.tick_s * p.r_off_ohm / p.l_h);
    let i = target + (*i_a - target) * a;
    *i_a = if i > 0.0 { i } else { 0.0 };
    if *i_a < p.threshold_a {
        OffStatus::Released
    } else {
        OffStatus::NotYet
    }
}

fn empty(_: &TrackingOffTimerConfig, _: &mut OffTimerState, _: i32) -> OffStatus {
    OffStatus::NotYet
}

fn empty_naive(_: &TrackingNaive, _: &mut f32, _: i32) -> OffStatus {
    OffStatus::NotYet
}

fn check(c: &mut Checker) {
    for (n, case) in TRACKING_CASES.iter().enumerate() {
        let mut s = OffTimerState::new();
        for (k, &(start, supply_mv, status, estimate_ua)) in case.steps.iter().enumerate() {
            if let Some(i0) = start {
                case.timer.start(&mut s, i0);
            }
            let got = lenz_kernel_offtimer(&case.timer, &mut s, supply_mv);
            c.compare(n, k, (got, s.estimate_ua()), (status, estimate_ua));
        }
    }
}

fn cost(n: u32) -> [Option<u32>; 4] {
    let mut s = OffTimerState::new();
    TRACKING_BENCH.start(&mut s, TRACKING_BENCH_START_UA);
    let (t, e) = measure(
        lenz_kernel_offtimer,
        empty,
        &TRACKING_BENCH,
        s,
        TRACKING_BENCH_INPUTS,
        n,
    );
    let (tn, en) = measure(
        lenz_naive_offtimer,
        empty_naive,
        &TRACKING_NAIVE,
        TRACKING_BENCH_START_UA as f32 * 1.0e-6,
        TRACKING_BENCH_INPUTS,
        n,
    );
    [t, e, tn, en]
}

/// The tracking off-timer's entry in [`super::KERNELS`].
pub const KERNEL: Kernel = Kernel {
    name: "offtimer",
    state_bytes: size_of::<OffTimerState>(),
    naive_state_bytes: size_of::<f32>(),
    check,
    cost,
};

// Named by the generated constants.
const _: Option<(EstimatorRaw, OffPath, TrackingOffTimerRaw)> = None;
