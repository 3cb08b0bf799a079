//! Duty limiter: [`DutyLimiterConfig::update`], one boost duty request clamped to the plan's limits.

use lenz::kernel::{DutyLimiterConfig, DutyLimiterRaw, DutyLimiterState};

use super::{Checker, Kernel};
use crate::bench::measure;

/// One generated sequence from a fresh [`DutyLimiterState`].
pub struct Case {
    /// Tables and limits (from the plan constructor on the host, or raw edge values).
    pub config: DutyLimiterConfig,
    /// Per tick: request, input and output readings in counts, and the host's duty.
    pub steps: &'static [(i32, u16, u16, u16)],
}

/// The straightforward f32 limiter's parameters (SI units).
#[derive(Clone, Copy)]
pub struct Naive {
    /// Input volts per count.
    pub vin_per_count_v: f32,
    /// Output volts per count.
    pub vout_per_count_v: f32,
    /// Input window, V.
    pub vin_min_v: f32,
    /// Input window, V.
    pub vin_max_v: f32,
    /// Output window, V.
    pub vout_min_v: f32,
    /// Output window, V.
    pub vout_max_v: f32,
    /// Overvoltage cut, V.
    pub overvoltage_v: f32,
    /// Resume after a cut, V.
    pub resume_v: f32,
    /// Inductance, H.
    pub l_h: f32,
    /// Switching frequency, Hz.
    pub f_sw_hz: f32,
    /// Inductor plus switch resistance, Ω.
    pub r_loss_ohm: f32,
    /// Load resistance at the heaviest load, Ω.
    pub load_ohm: f32,
    /// Heaviest load current, A.
    pub load_a: f32,
    /// Load resistance at the lightest load, Ω.
    pub light_load_ohm: f32,
    /// Highest output allowed at the lightest load, V.
    pub light_load_max_v: f32,
    /// Inductor saturation current, A.
    pub saturation_a: f32,
    /// Minimum off time, s.
    pub min_off_s: f32,
    /// Minimum on time, s.
    pub min_on_s: f32,
    /// Duty register value for duty 1.
    pub full_scale: f32,
    /// Soft-start rise per tick, counts.
    pub slew_per_tick: f32,
}

/// State of the straightforward limiter.
#[derive(Clone, Copy)]
pub struct NaiveState {
    last: f32,
    tripped: bool,
}

/// A fresh straightforward limiter.
pub const NAIVE_STATE: NaiveState = NaiveState {
    last: 0.0,
    tripped: false,
};

include!(concat!(env!("OUT_DIR"), "/duty.rs"));

/// The per-tick function as a distinct symbol.
#[unsafe(no_mangle)]
#[inline(never)]
pub fn lenz_kernel_duty(
    cfg: &DutyLimiterConfig,
    s: &mut DutyLimiterState,
    x: (i32, u16, u16),
) -> u16 {
    cfg.update(s, x.0, x.1, x.2)
}

/// The same tick written the straightforward way in f32 volts: the limits recomputed from
/// the measured input with the ideal boost closed forms (saturation: the smaller root of
/// `a·D² − (a + I_sat)·D + I_sat − I_out = 0`, `a = V_in/(2 L f)`; gain peak
/// `1 − √(R_loss/R_load)`; light load in DCM `√(K·M(M − 1))`, `K = 2 L f/R`, `M = V_max/V_in`;
/// minimum off time), then the soft start and the minimum on time.
#[unsafe(no_mangle)]
#[inline(never)]
pub fn lenz_naive_duty(p: &Naive, s: &mut NaiveState, x: (i32, u16, u16)) -> u16 {
    let vin = f32::from(x.1) * p.vin_per_count_v;
    let vout = f32::from(x.2) * p.vout_per_count_v;
    if !(p.vin_min_v..=p.vin_max_v).contains(&vin) || !(p.vout_min_v..=p.vout_max_v).contains(&vout)
    {
        s.last = 0.0;
        return 0;
    }
    if s.tripped {
        if vout > p.resume_v {
            s.last = 0.0;
            return 0;
        }
        s.tripped = false;
    }
    if vout >= p.overvoltage_v {
        s.tripped = true;
        s.last = 0.0;
        return 0;
    }
    let a = vin / (2.0 * p.l_h * p.f_sw_hz);
    let b = a + p.saturation_a;
    let disc = libm::fmaxf(b * b - 4.0 * a * (p.saturation_a - p.load_a), 0.0);
    let saturation = (b - libm::sqrtf(disc)) / (2.0 * a);
    let gain_peak = 1.0 - libm::sqrtf(p.r_loss_ohm / p.load_ohm);
    let k = 2.0 * p.l_h * p.f_sw_hz / p.light_load_ohm;
    let m = p.light_load_max_v / vin;
    let light = libm::sqrtf(k * m * (m - 1.0));
    let min_off = 1.0 - p.min_off_s * p.f_sw_hz;
    let limit = libm::fminf(
        libm::fminf(saturation, gain_peak),
        libm::fminf(light, min_off),
    );
    let request = (x.0 as f32).clamp(0.0, p.full_scale);
    let out = libm::fminf(
        libm::fminf(limit * p.full_scale, request),
        s.last + p.slew_per_tick,
    )
    .clamp(0.0, p.full_scale);
    s.last = out;
    let whole = out as u16;
    if f32::from(whole) < p.min_on_s * p.f_sw_hz * p.full_scale {
        0
    } else {
        whole
    }
}

fn empty(_: &DutyLimiterConfig, _: &mut DutyLimiterState, _: (i32, u16, u16)) -> u16 {
    0
}

fn empty_naive(_: &Naive, _: &mut NaiveState, _: (i32, u16, u16)) -> u16 {
    0
}

fn check(c: &mut Checker) {
    for (n, case) in CASES.iter().enumerate() {
        let mut s = DutyLimiterState::new();
        for (k, &(request, vin, vout, want)) in case.steps.iter().enumerate() {
            let got = lenz_kernel_duty(&case.config, &mut s, (request, vin, vout));
            c.compare(n, k, got, want);
        }
    }
}

fn cost(n: u32) -> [Option<u32>; 4] {
    let (t, e) = measure(
        lenz_kernel_duty,
        empty,
        &BENCH_CONFIG,
        DutyLimiterState::new(),
        BENCH_INPUTS,
        n,
    );
    let (tn, en) = measure(
        lenz_naive_duty,
        empty_naive,
        &NAIVE,
        NaiveState {
            last: 0.0,
            tripped: false,
        },
        BENCH_INPUTS,
        n,
    );
    [t, e, tn, en]
}

/// The duty limiter's entry in [`super::KERNELS`].
pub const KERNEL: Kernel = Kernel {
    name: "duty",
    state_bytes: size_of::<DutyLimiterState>(),
    naive_state_bytes: size_of::<NaiveState>(),
    check,
    cost,
};

// Named by the generated constants.
const _: Option<DutyLimiterRaw> = None;
