//! Armature movement detector: [`MovementConfig::update`], one current sample of a pull-in or a
//! release.

use lenz::kernel::{Motion, MovementConfig, MovementRaw, MovementState};

use super::{Checker, Kernel};
use crate::bench::measure;

/// What the check does before an update.
#[derive(Clone, Copy, PartialEq, Eq, Debug)]
pub enum Cmd {
    /// Nothing.
    None,
    /// [`MovementConfig::start`] (switch-on).
    Start,
    /// [`MovementConfig::release`] (switch-off).
    Release,
}

/// One generated sequence from an idle [`MovementState`].
pub struct Case {
    /// Thresholds (from the plan constructor on the host, or raw edge values).
    pub config: MovementConfig,
    /// Per tick: a start or release before the update, the current in µA, the host's verdict.
    pub steps: &'static [(Cmd, i32, Motion)],
}

/// The straightforward f32 detector's parameters (SI units).
#[derive(Clone, Copy)]
pub struct Naive {
    /// Tick, s.
    pub tick_s: f32,
    /// Hysteresis, A.
    pub hysteresis_a: f32,
    /// Consecutive samples to decide.
    pub persistence: u16,
    /// Smallest pull-in peak, A.
    pub min_peak_a: f32,
    /// Smallest release minimum, A.
    pub min_release_a: f32,
    /// Pull-in deadline, s.
    pub deadline_s: f32,
    /// Release deadline, s.
    pub release_deadline_s: f32,
}

/// State of the straightforward detector: time in seconds, the extreme in amperes.
#[derive(Clone, Copy)]
pub struct NaiveState {
    t_s: f32,
    extreme_a: f32,
    extreme_t_s: f32,
    count: u16,
    /// 1 waiting, 2 moving, 3 seated, 4 no motion.
    phase: u8,
}

include!(concat!(env!("OUT_DIR"), "/movement.rs"));

/// The per-tick function as a distinct symbol.
#[unsafe(no_mangle)]
#[inline(never)]
pub fn lenz_kernel_movement(
    cfg: &MovementConfig,
    s: &mut MovementState,
    current_ua: i32,
) -> Motion {
    cfg.update(s, current_ua)
}

/// The same pull-in tick written the straightforward way: the current in f32 amperes, the time
/// in f32 seconds against the deadline; returns the phase.
#[unsafe(no_mangle)]
#[inline(never)]
pub fn lenz_naive_movement(p: &Naive, s: &mut NaiveState, current_ua: i32) -> u8 {
    let i = current_ua as f32 * 1.0e-6;
    let t = s.t_s;
    s.t_s += p.tick_s;
    match s.phase {
        1 => {
            if i >= s.extreme_a {
                s.extreme_a = i;
                s.extreme_t_s = t;
                s.count = 0;
            } else if s.extreme_a >= p.min_peak_a && s.extreme_a - i > p.hysteresis_a {
                s.count += 1;
                if s.count >= p.persistence {
                    s.phase = 2;
                    s.extreme_a = i;
                    s.extreme_t_s = t;
                    s.count = 0;
                }
            } else {
                s.count = 0;
            }
        }
        2 => {
            if i <= s.extreme_a {
                s.extreme_a = i;
                s.extreme_t_s = t;
                s.count = 0;
            } else if i - s.extreme_a > p.hysteresis_a {
                s.count += 1;
                if s.count >= p.persistence {
                    s.phase = 3;
                }
            } else {
                s.count = 0;
            }
        }
        _ => {}
    }
    if s.phase <= 2 && s.t_s >= p.deadline_s {
        s.phase = 4;
    }
    s.phase
}

fn empty(_: &MovementConfig, _: &mut MovementState, _: i32) -> Motion {
    Motion::Idle
}

fn empty_naive(_: &Naive, _: &mut NaiveState, _: i32) -> u8 {
    0
}

fn check(c: &mut Checker) {
    for (n, case) in CASES.iter().enumerate() {
        let mut s = MovementState::new();
        for (k, &(cmd, current_ua, want)) in case.steps.iter().enumerate() {
            match cmd {
                Cmd::Start => case.config.start(&mut s),
                Cmd::Release => case.config.release(&mut s),
                Cmd::None => {}
            }
            let got = lenz_kernel_movement(&case.config, &mut s, current_ua);
            c.compare(n, k, got, want);
        }
    }
}

fn cost(n: u32) -> [Option<u32>; 4] {
    let mut s = MovementState::new();
    BENCH_CONFIG.start(&mut s);
    let (t, e) = measure(
        lenz_kernel_movement,
        empty,
        &BENCH_CONFIG,
        s,
        BENCH_INPUTS,
        n,
    );
    let naive = NaiveState {
        t_s: 0.0,
        extreme_a: f32::MIN,
        extreme_t_s: 0.0,
        count: 0,
        phase: 1,
    };
    let (tn, en) = measure(
        lenz_naive_movement,
        empty_naive,
        &NAIVE,
        naive,
        BENCH_INPUTS,
        n,
    );
    [t, e, tn, en]
}

/// The movement detector's entry in [`super::KERNELS`].
pub const KERNEL: Kernel = Kernel {
    name: "movement",
    state_bytes: size_of::<MovementState>(),
    naive_state_bytes: size_of::<NaiveState>(),
    check,
    cost,
};

// Named by the generated constants.
const _: Option<MovementRaw> = None;
