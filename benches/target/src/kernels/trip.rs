//! Trip detector: [`TripConfig::update`], one ADC sample through every protection element.

use lenz::kernel::{Cause, InverseTable, TripConfig, TripEvent, TripRaw, TripState, Verdict};

use super::{Checker, Kernel};
use crate::bench::measure;

/// One generated sequence from a fresh [`TripState`].
pub struct Case {
    /// Settings (from the plan constructor on the host, or raw edge values).
    pub config: TripConfig,
    /// Per sample: reading in counts, switch on, and the host's verdict.
    pub steps: &'static [(u16, bool, Verdict)],
}

/// The straightforward f32 detector's parameters (SI units).
#[derive(Clone, Copy)]
pub struct Naive {
    /// Sampling period, s.
    pub sample_period_s: f32,
    /// Current per count, A.
    pub amps_per_count: f32,
    /// Instantaneous threshold, counts.
    pub instantaneous_counts: u16,
    /// Full-scale reading, counts.
    pub full_scale_counts: u16,
    /// Blanking after switch-on, samples.
    pub blank_samples: u16,
    /// `N` of the N-of-M filter.
    pub persistence_n: u8,
    /// `M` of the N-of-M filter.
    pub persistence_m: u8,
    /// Inverse-time pickup, A.
    pub pickup_a: f32,
    /// Time multiplier.
    pub multiplier: f32,
    /// Curve constant `k`, s.
    pub k_s: f32,
    /// Curve exponent `α`.
    pub alpha: f32,
    /// Curve constant `c`, s.
    pub c_s: f32,
    /// Reset constant `t_r`, s (0: resets at once).
    pub reset_s: f32,
    /// Thermal time constant, s.
    pub time_constant_s: f32,
    /// Thermal trip level `k·I_B`, A.
    pub trip_level_a: f32,
}

/// State of the straightforward detector.
#[derive(Clone, Copy)]
pub struct NaiveState {
    inverse: f32,
    theta: f32,
    history: u32,
    blank_left: u16,
    prev_on: bool,
    tripped: bool,
}

/// The straightforward detector at rest.
pub const NAIVE_STATE: NaiveState = NaiveState {
    inverse: 0.0,
    theta: 0.0,
    history: 0,
    blank_left: 0,
    prev_on: false,
    tripped: false,
};

include!(concat!(env!("OUT_DIR"), "/trip.rs"));

/// The per-sample function as a distinct symbol.
#[unsafe(no_mangle)]
#[inline(never)]
pub fn lenz_kernel_trip(cfg: &TripConfig, s: &mut TripState, x: (u16, bool)) -> Verdict {
    cfg.update(s, x.0, x.1)
}

/// The same elements written the straightforward way: the curve `TMS·(k/(M^α − 1) + c)` with
/// `powf` of the measured multiple and the thermal factor `exp(−T_s/τ)` each sample, in f32
/// amperes (retries left out: it latches at the first trip).
#[unsafe(no_mangle)]
#[inline(never)]
pub fn lenz_naive_trip(p: &Naive, s: &mut NaiveState, x: (u16, bool)) -> bool {
    if s.tripped {
        return true;
    }
    let (reading, on) = x;
    let i_a = f32::from(reading) * p.amps_per_count;
    if on && !s.prev_on {
        s.blank_left = p.blank_samples;
    }
    s.prev_on = on;
    let blanked = s.blank_left > 0;
    s.blank_left = s.blank_left.saturating_sub(1);
    let over = !blanked && (reading >= p.instantaneous_counts || reading >= p.full_scale_counts);
    let m_bits = u32::from(p.persistence_m.clamp(1, 32));
    let mask = if m_bits == 32 {
        u32::MAX
    } else {
        (1 << m_bits) - 1
    };
    s.history = ((s.history << 1) | u32::from(over)) & mask;
    let instantaneous = s.history.count_ones() >= u32::from(p.persistence_n);

    let m = i_a / p.pickup_a;
    if m > 1.0 {
        let t = p.multiplier * (p.k_s / (libm::powf(m, p.alpha) - 1.0) + p.c_s);
        s.inverse += p.sample_period_s / t;
    } else if p.reset_s > 0.0 {
        let back = p.sample_period_s * (1.0 - m * m) / (p.multiplier * p.reset_s);
        s.inverse = libm::fmaxf(s.inverse - back, 0.0);
    } else {
        s.inverse = 0.0;
    }

    let xt = i_a / p.trip_level_a;
    let b = libm::expf(-p.sample_period_s / p.time_constant_s);
    s.theta = b * s.theta + (1.0 - b) * xt * xt;

    s.tripped = instantaneous || s.inverse >= 1.0 || s.theta >= 1.0;
    s.tripped
}

fn empty(_: &TripConfig, _: &mut TripState, _: (u16, bool)) -> Verdict {
    Verdict::Allow
}

fn empty_naive(_: &Naive, _: &mut NaiveState, _: (u16, bool)) -> bool {
    false
}

fn check(c: &mut Checker) {
    for (n, case) in CASES.iter().enumerate() {
        let mut s = TripState::new();
        for (k, &(reading, on, want)) in case.steps.iter().enumerate() {
            let got = lenz_kernel_trip(&case.config, &mut s, (reading, on));
            c.compare(n, k, got, want);
        }
    }
}

fn cost(n: u32) -> [Option<u32>; 4] {
    let (t, e) = measure(
        lenz_kernel_trip,
        empty,
        &BENCH_CONFIG,
        TripState::new(),
        BENCH_INPUTS,
        n,
    );
    let (tn, en) = measure(
        lenz_naive_trip,
        empty_naive,
        &NAIVE,
        NAIVE_STATE,
        BENCH_INPUTS,
        n,
    );
    [t, e, tn, en]
}

/// The trip detector's entry in [`super::KERNELS`].
pub const KERNEL: Kernel = Kernel {
    name: "trip",
    state_bytes: size_of::<TripState>(),
    naive_state_bytes: size_of::<NaiveState>(),
    check,
    cost,
};

// Named by the generated constants.
const _: Option<(InverseTable, TripEvent, TripRaw, Cause)> = None;
