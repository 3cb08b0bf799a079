//! Bridge guard: [`BridgeGuardConfig::update`], one tick of the soft start, the brake before a
//! reversal and the dead time.

use lenz::kernel::{
    BridgeCommand, BridgeGuardConfig, BridgeGuardRaw, BridgeGuardState, BridgeMode,
};

use super::{Checker, Kernel};
use crate::bench::measure;

/// One generated sequence from a fresh [`BridgeGuardState`].
pub struct Case {
    /// Limits (from the plan constructor on the host, or raw edge values).
    pub config: BridgeGuardConfig,
    /// Per tick: request Q16, speed mrad/s, and the host's command.
    pub steps: &'static [(i32, i32, BridgeCommand)],
}

/// The straightforward f32 guard's parameters (SI units, duty as a fraction).
#[derive(Clone, Copy)]
pub struct Naive {
    /// Largest duty rise per tick.
    pub slew_per_tick: f32,
    /// Brake at or below this speed, rad/s.
    pub brake_speed_rad_s: f32,
    /// Reverse at or below this speed, rad/s.
    pub reverse_speed_rad_s: f32,
    /// Dead time, s.
    pub dead_time_s: f32,
    /// Brake probe interval while coasting, s.
    pub probe_interval_s: f32,
    /// Tick, s.
    pub tick_s: f32,
    /// Duty per rad/s of a restart in the rotation's direction, `k/V`.
    pub resume_duty_per_rad_s: f32,
    /// Speed margin taken off before, rad/s.
    pub resume_margin_rad_s: f32,
}

/// State of the straightforward guard.
#[derive(Clone, Copy)]
pub struct NaiveState {
    duty: f32,
    off_s: f32,
    /// 0 coast, 1 forward, 2 reverse, 3 brake.
    mode: u8,
}

include!(concat!(env!("OUT_DIR"), "/bridge.rs"));

/// The per-tick function as a distinct symbol.
#[unsafe(no_mangle)]
#[inline(never)]
pub fn lenz_kernel_bridge(
    cfg: &BridgeGuardConfig,
    s: &mut BridgeGuardState,
    x: (i32, i32),
) -> BridgeCommand {
    cfg.update(s, x.0, x.1)
}

/// The same tick written the straightforward way: duty as an f32 fraction, speed in rad/s,
/// the dead time and the probe interval as f32 seconds since the bridge went off; returns the
/// signed duty.
#[unsafe(no_mangle)]
#[inline(never)]
pub fn lenz_naive_bridge(p: &Naive, s: &mut NaiveState, x: (i32, i32)) -> f32 {
    let req = (x.0 as f32 * (1.0 / 65_536.0)).clamp(-1.0, 1.0);
    let w = x.1 as f32 * 1.0e-3;
    let stop = if libm::fabsf(w) <= p.brake_speed_rad_s {
        3
    } else {
        0
    };
    let target = if req == 0.0 {
        stop
    } else if req * w < 0.0 && libm::fabsf(w) > p.reverse_speed_rad_s {
        stop
    } else if req > 0.0 {
        1
    } else {
        2
    };
    let dead_over = s.off_s >= p.dead_time_s;
    let next = if target == s.mode {
        if s.mode == 0 && p.probe_interval_s > 0.0 && s.off_s >= p.probe_interval_s && dead_over {
            3
        } else {
            s.mode
        }
    } else if s.mode == 0 {
        if dead_over { target } else { 0 }
    } else if target == 0 || p.dead_time_s == 0.0 {
        target
    } else {
        0
    };
    if next != s.mode {
        let along = match next {
            1 => w,
            2 => -w,
            _ => 0.0,
        };
        s.duty = libm::fminf(
            libm::fmaxf(along - p.resume_margin_rad_s, 0.0) * p.resume_duty_per_rad_s,
            1.0,
        );
        if next == 0 {
            s.off_s = 0.0;
        }
    }
    s.duty = if next == 1 || next == 2 {
        libm::fminf(libm::fabsf(req), s.duty + p.slew_per_tick)
    } else {
        0.0
    };
    if next == 0 {
        s.off_s += p.tick_s;
    }
    s.mode = next;
    if next == 2 { -s.duty } else { s.duty }
}

fn empty(_: &BridgeGuardConfig, _: &mut BridgeGuardState, _: (i32, i32)) -> BridgeCommand {
    BridgeCommand {
        mode: BridgeMode::Coast,
        duty_q16: 0,
    }
}

fn empty_naive(_: &Naive, _: &mut NaiveState, _: (i32, i32)) -> f32 {
    0.0
}

fn check(c: &mut Checker) {
    for (n, case) in CASES.iter().enumerate() {
        let mut s = BridgeGuardState::new();
        for (k, &(req, speed, want)) in case.steps.iter().enumerate() {
            let got = lenz_kernel_bridge(&case.config, &mut s, (req, speed));
            c.compare(n, k, got, want);
        }
    }
}

fn cost(n: u32) -> [Option<u32>; 4] {
    let (t, e) = measure(
        lenz_kernel_bridge,
        empty,
        &BENCH_CONFIG,
        BridgeGuardState::new(),
        BENCH_INPUTS,
        n,
    );
    let naive = NaiveState {
        duty: 0.0,
        off_s: 1.0,
        mode: 0,
    };
    let (tn, en) = measure(
        lenz_naive_bridge,
        empty_naive,
        &NAIVE,
        naive,
        BENCH_INPUTS,
        n,
    );
    [t, e, tn, en]
}

/// The bridge guard's entry in [`super::KERNELS`].
pub const KERNEL: Kernel = Kernel {
    name: "bridge",
    state_bytes: size_of::<BridgeGuardState>(),
    naive_state_bytes: size_of::<NaiveState>(),
    check,
    cost,
};

// Named by the generated constants.
const _: Option<BridgeGuardRaw> = None;
