//! Plausibility monitor: [`MonitorConfig::update`], one sample of estimate against measurement.

use lenz::kernel::{Fault, MonitorConfig, MonitorRaw, MonitorState, SenseScale};

use super::{Checker, Kernel};
use crate::bench::measure;

/// One generated sequence from a fresh [`MonitorState`].
pub struct Case {
    /// Thresholds (from the plan constructor on the host, or raw edge values).
    pub config: MonitorConfig,
    /// Per sample: estimate in µA, reading in counts, and the host's result.
    pub steps: &'static [(i32, u16, Option<Fault>)],
}

/// The straightforward f32 monitor's parameters (SI units).
#[derive(Clone, Copy)]
pub struct Naive {
    /// Reading at zero current, counts.
    pub offset_counts: f32,
    /// Current per count, A.
    pub a_per_count: f32,
    /// Lowest valid reading, counts.
    pub min_valid_counts: u16,
    /// Highest valid reading, counts.
    pub max_valid_counts: u16,
    /// Absolute tolerance, A.
    pub abs_tol_a: f32,
    /// Relative tolerance.
    pub rel_tol: f32,
    /// Estimates at or above this expect a measurable current, A.
    pub open_min_estimate_a: f32,
    /// Measured currents at or below this count as none, A.
    pub open_max_a: f32,
    /// Consecutive samples before a fault is raised.
    pub persistence: u16,
    /// Consecutive unchanged readings before the sensor counts as stuck.
    pub stuck_samples: u16,
    /// Change of the estimate during a frozen reading that proves it stuck, A.
    pub stuck_min_change_a: f32,
}

/// State of the straightforward monitor (the same counters, the frozen estimate in f32).
#[derive(Clone, Copy)]
pub struct NaiveState {
    estimate_at_freeze_a: f32,
    range_count: u16,
    same_count: u16,
    open_count: u16,
    low_r_count: u16,
    last_counts: u16,
    fault: Option<Fault>,
}

/// A fresh straightforward monitor.
pub const NAIVE_STATE: NaiveState = NaiveState {
    estimate_at_freeze_a: 0.0,
    range_count: 0,
    same_count: 0,
    open_count: 0,
    low_r_count: 0,
    last_counts: u16::MAX,
    fault: None,
};

include!(concat!(env!("OUT_DIR"), "/monitor.rs"));

/// The per-sample function as a distinct symbol.
#[unsafe(no_mangle)]
#[inline(never)]
pub fn lenz_kernel_monitor(
    cfg: &MonitorConfig,
    s: &mut MonitorState,
    x: (i32, u16),
) -> Option<Fault> {
    cfg.update(s, x.0, x.1)
}

fn decide_naive(p: &Naive, s: &mut NaiveState, est_a: f32, counts: u16) -> Option<Fault> {
    if counts < p.min_valid_counts || counts > p.max_valid_counts {
        s.range_count = s.range_count.saturating_add(1);
        return (s.range_count >= p.persistence).then_some(Fault::SensorOutOfRange);
    }
    s.range_count = 0;
    if counts == s.last_counts {
        s.same_count = s.same_count.saturating_add(1);
        let moved = libm::fabsf(est_a - s.estimate_at_freeze_a);
        if s.same_count >= p.stuck_samples && moved > p.stuck_min_change_a {
            return Some(Fault::SensorStuck);
        }
    } else {
        s.same_count = 0;
        s.last_counts = counts;
        s.estimate_at_freeze_a = est_a;
    }
    let measured_a = (counts as f32 - p.offset_counts) * p.a_per_count;
    let open = est_a >= p.open_min_estimate_a && measured_a <= p.open_max_a;
    s.open_count = if open {
        s.open_count.saturating_add(1)
    } else {
        0
    };
    if s.open_count >= p.persistence {
        return Some(Fault::OpenCoil);
    }
    let band = p.abs_tol_a + p.rel_tol * libm::fabsf(est_a);
    let high = measured_a > est_a + band;
    s.low_r_count = if high {
        s.low_r_count.saturating_add(1)
    } else {
        0
    };
    if s.low_r_count >= p.persistence {
        return Some(Fault::LowResistance);
    }
    None
}

/// The same decisions written the straightforward way, in f32 amperes.
#[unsafe(no_mangle)]
#[inline(never)]
pub fn lenz_naive_monitor(p: &Naive, s: &mut NaiveState, x: (f32, u16)) -> Option<Fault> {
    if s.fault.is_some() {
        return s.fault;
    }
    let raised = decide_naive(p, s, x.0, x.1);
    s.fault = raised;
    raised
}

fn empty(_: &MonitorConfig, _: &mut MonitorState, _: (i32, u16)) -> Option<Fault> {
    None
}

fn empty_naive(_: &Naive, _: &mut NaiveState, _: (f32, u16)) -> Option<Fault> {
    None
}

fn check(c: &mut Checker) {
    for (n, case) in CASES.iter().enumerate() {
        let mut s = MonitorState::new();
        for (k, &(estimate_ua, counts, want)) in case.steps.iter().enumerate() {
            let got = lenz_kernel_monitor(&case.config, &mut s, (estimate_ua, counts));
            c.compare(n, k, got, want);
        }
    }
}

fn cost(n: u32) -> [Option<u32>; 4] {
    let (t, e) = measure(
        lenz_kernel_monitor,
        empty,
        &BENCH_CONFIG,
        MonitorState::new(),
        BENCH_INPUTS,
        n,
    );
    let (tn, en) = measure(
        lenz_naive_monitor,
        empty_naive,
        &NAIVE,
        NAIVE_STATE,
        NAIVE_BENCH_INPUTS,
        n,
    );
    [t, e, tn, en]
}

/// The monitor's entry in [`super::KERNELS`].
pub const KERNEL: Kernel = Kernel {
    name: "monitor",
    state_bytes: size_of::<MonitorState>(),
    naive_state_bytes: size_of::<NaiveState>(),
    check,
    cost,
};

// `SenseScale` is named by the generated constants.
const _: Option<(MonitorRaw, SenseScale)> = None;
