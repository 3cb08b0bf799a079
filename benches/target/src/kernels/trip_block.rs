//! Trip detector, block-ending sample: [`TripConfig::update`] with blocks of one sample, so
//! every call runs the full path and the inverse-time and thermal block update (the slowest
//! single sample of a detector with longer blocks, once per block).

use lenz::kernel::{Cause, InverseTable, TripConfig, TripEvent, TripRaw, TripState, Verdict};

use super::trip::{Case, NAIVE, NAIVE_STATE, Naive, NaiveState, lenz_naive_trip};
use super::{Checker, Kernel};
use crate::bench::measure;

include!(concat!(env!("OUT_DIR"), "/trip_block.rs"));

/// The per-sample function as a distinct symbol. Its input is `(switch on, reading)`, the
/// reverse of `lenz_kernel_trip`'s: identical functions would be folded into one symbol, and
/// the disassembly check and the code size look each kernel up by name.
#[unsafe(no_mangle)]
#[inline(never)]
pub fn lenz_kernel_trip_block(cfg: &TripConfig, s: &mut TripState, x: (bool, u16)) -> Verdict {
    cfg.update(s, x.1, x.0)
}

/// The straightforward version (the same as the trip detector's: it has no blocks).
#[unsafe(no_mangle)]
#[inline(never)]
pub fn lenz_naive_trip_block(p: &Naive, s: &mut NaiveState, x: (bool, u16)) -> bool {
    lenz_naive_trip(p, s, (x.1, x.0))
}

fn empty(_: &TripConfig, _: &mut TripState, _: (bool, u16)) -> Verdict {
    Verdict::Allow
}

fn empty_naive(_: &Naive, _: &mut NaiveState, _: (bool, u16)) -> bool {
    false
}

fn check(c: &mut Checker) {
    for (n, case) in CASES.iter().enumerate() {
        let mut s = TripState::new();
        for (k, &(reading, on, want)) in case.steps.iter().enumerate() {
            let got = lenz_kernel_trip_block(&case.config, &mut s, (on, reading));
            c.compare(n, k, got, want);
        }
    }
}

fn cost(n: u32) -> [Option<u32>; 4] {
    let (t, e) = measure(
        lenz_kernel_trip_block,
        empty,
        &BENCH_CONFIG,
        TripState::new(),
        BENCH_INPUTS,
        n,
    );
    let (tn, en) = measure(
        lenz_naive_trip_block,
        empty_naive,
        &NAIVE,
        NAIVE_STATE,
        BENCH_INPUTS,
        n,
    );
    [t, e, tn, en]
}

/// The block-ending sample's entry in [`super::KERNELS`].
pub const KERNEL: Kernel = Kernel {
    name: "trip_block",
    state_bytes: size_of::<TripState>(),
    naive_state_bytes: size_of::<NaiveState>(),
    check,
    cost,
};

// Named by the generated constants.
const _: Option<(InverseTable, TripEvent, TripRaw, Cause)> = None;
