//! The table of kernels run on target: one module per kernel, one line in [`KERNELS`].
//!
//! Each kernel module provides, by convention (the host looks the symbols up by name):
//! - `lenz_kernel_<name>`: the per-tick function, `#[inline(never)]` and `#[unsafe(no_mangle)]`
//!   so it is a distinct symbol for the disassembly check and the code size;
//! - `lenz_naive_<name>`: the same computation written the straightforward way with `f32` and
//!   libm, for the cost comparison;
//! - an [`Kernel`] entry with the vector check and the cost run.
//!
//! Its vectors come from `gen/<name>.rs` (run by the build script with the host build of lenz)
//! and are included from `OUT_DIR/<name>.rs`.

use core::fmt::Debug;

use crate::println;

pub mod duty;
pub mod estimator;
pub mod monitor;
pub mod offtimer;
pub mod offtimer_planned;
pub mod trip;
pub mod trip_block;

/// Every kernel the target images check and measure.
pub static KERNELS: &[Kernel] = &[
    estimator::KERNEL,
    monitor::KERNEL,
    duty::KERNEL,
    offtimer::KERNEL,
    offtimer_planned::KERNEL,
    trip::KERNEL,
    trip_block::KERNEL,
];

/// One kernel in the target images.
pub struct Kernel {
    /// Name, as in `gen/mod.rs`, `budget.json` and the symbols `lenz_kernel_<name>`.
    pub name: &'static str,
    /// `size_of` the per-channel state on this target, bytes.
    pub state_bytes: usize,
    /// `size_of` the per-channel state of the straightforward version, bytes.
    pub naive_state_bytes: usize,
    /// Runs every vector, reporting differences to the checker.
    pub check: fn(&mut Checker),
    /// Ticks of `n` calls: `[kernel, its empty loop, naive, its empty loop]`.
    pub cost: fn(n: u32) -> [Option<u32>; 4],
}

/// Compares results with the host's expectations and reports the first differences.
pub struct Checker {
    kernel: &'static str,
    /// Vectors compared.
    pub vectors: usize,
    /// Vectors that differed.
    pub failures: usize,
}

/// Differences printed per kernel (all are counted).
const MAX_PRINTED: usize = 10;

impl Checker {
    /// A checker for `kernel`.
    #[must_use]
    pub const fn new(kernel: &'static str) -> Self {
        Self {
            kernel,
            vectors: 0,
            failures: 0,
        }
    }

    /// Compares one result; `case` and `step` locate the vector in the generated set.
    pub fn compare<R: PartialEq + Debug>(&mut self, case: usize, step: usize, got: R, want: R) {
        if got != want {
            self.failures += 1;
            if self.failures <= MAX_PRINTED {
                println!(
                    "FAIL kernel={} vector={} case={} step={} got={:?} expected={:?}",
                    self.kernel, self.vectors, case, step, got, want
                );
            }
        }
        self.vectors += 1;
    }
}
