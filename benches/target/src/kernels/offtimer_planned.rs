//! Planned off-timer: [`PlannedOffTimerConfig::update`], one tick of the count chosen at switch-off.

use lenz::kernel::{OffStatus, OffTimerState, PlannedOffTimerConfig, PlannedOffTimerRaw};

use super::{Checker, Kernel};
use crate::bench::measure;

/// One generated sequence from an idle [`OffTimerState`].
pub struct PlannedCase {
    /// Table (from the plan constructor on the host, or raw edge values).
    pub timer: PlannedOffTimerConfig,
    /// Per tick: a switch-off current to start from (before the tick), and the host's status
    /// and remaining ticks after the tick.
    pub steps: &'static [(Option<i32>, OffStatus, u32)],
}

/// The straightforward f32 planned timer's parameters.
#[derive(Clone, Copy)]
pub struct PlannedNaive {
    /// Tick, s.
    pub tick_s: f32,
    /// Decay time from the switch-off current to the threshold, s (closed form at switch-off).
    pub release_s: f32,
}

include!(concat!(env!("OUT_DIR"), "/offtimer_planned.rs"));

/// The per-tick function as a distinct symbol.
#[unsafe(no_mangle)]
#[inline(never)]
pub fn lenz_kernel_offtimer_planned(
    t: &PlannedOffTimerConfig,
    s: &mut OffTimerState,
    _: (),
) -> OffStatus {
    t.update(s)
}

/// The same tick written the straightforward way: elapsed time in f32 seconds against the
/// decay time computed at switch-off.
#[unsafe(no_mangle)]
#[inline(never)]
pub fn lenz_naive_offtimer_planned(p: &PlannedNaive, elapsed_s: &mut f32, _: ()) -> OffStatus {
    *elapsed_s += p.tick_s;
    if *elapsed_s >= p.release_s {
        OffStatus::Released
    } else {
        OffStatus::NotYet
    }
}

fn empty(_: &PlannedOffTimerConfig, _: &mut OffTimerState, _: ()) -> OffStatus {
    OffStatus::NotYet
}

fn empty_naive(_: &PlannedNaive, _: &mut f32, _: ()) -> OffStatus {
    OffStatus::NotYet
}

fn check(c: &mut Checker) {
    for (n, case) in PLANNED_CASES.iter().enumerate() {
        let mut s = OffTimerState::new();
        for (k, &(start, status, remaining)) in case.steps.iter().enumerate() {
            if let Some(i0) = start {
                case.timer.start(&mut s, i0);
            }
            let got = lenz_kernel_offtimer_planned(&case.timer, &mut s, ());
            c.compare(n, k, (got, s.remaining_ticks()), (status, remaining));
        }
    }
}

/// Ticks per call of the cost run (a count that does not run out during it).
const INPUTS: &[()] = &[(); 64];

fn cost(n: u32) -> [Option<u32>; 4] {
    let mut s = OffTimerState::new();
    // The highest breakpoint: the longest count, so the run measures the counting path.
    PLANNED_BENCH.start(&mut s, PLANNED_BENCH.breakpoints_ua()[15]);
    let (t, e) = measure(
        lenz_kernel_offtimer_planned,
        empty,
        &PLANNED_BENCH,
        s,
        INPUTS,
        n,
    );
    let (tn, en) = measure(
        lenz_naive_offtimer_planned,
        empty_naive,
        &PLANNED_NAIVE,
        0.0,
        INPUTS,
        n,
    );
    [t, e, tn, en]
}

/// The planned off-timer's entry in [`super::KERNELS`].
pub const KERNEL: Kernel = Kernel {
    name: "offtimer_planned",
    state_bytes: size_of::<OffTimerState>(),
    naive_state_bytes: size_of::<f32>(),
    check,
    cost,
};
