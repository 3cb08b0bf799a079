//! The table of kernels run on target: one module per kernel, one line in [`KERNELS`].
//!
//! Each kernel module provides, by convention (the host looks the symbols up by name):
//! - `lenz_kernel_<name>`: the per-tick function, `#[inline(never)]` and `#[unsafe(no_mangle)]`
//!   so it is a distinct symbol for the disassembly check and the code size;
//! - `lenz_naive_<name>`: the same computation written the straightforward way with `f32` and
//!   libm, for the cost comparison;
//! - a [`Kernel`] entry with the vector check and the cost run, listed in [`KERNELS`] and in
//!   one test image's table ([`CHECK`] or [`CHECK2`]).
//!
//! Its vectors come from `gen/<name>.rs` (run by the build script with the host build of lenz)
//! and are included from `OUT_DIR/<name>.rs`.

use core::fmt::Debug;

use crate::println;

pub mod boost_driver;
pub mod bridge;
pub mod coil_driver;
pub mod duty;
pub mod estimator;
pub mod jam;
pub mod monitor;
pub mod movement;
pub mod offtimer;
pub mod offtimer_planned;
pub mod pwm;
pub mod speed;
pub mod trip;
pub mod trip_block;

/// Every kernel of the target images, in table order. A `const`: each image keeps only the
/// parts it uses (the vector checks link the vectors, which fill most of the flash; the cost
/// image needs only the cost runs).
pub const KERNELS: [Kernel; 13] = [
    estimator::KERNEL,
    monitor::KERNEL,
    duty::KERNEL,
    offtimer::KERNEL,
    offtimer_planned::KERNEL,
    trip::KERNEL,
    trip_block::KERNEL,
    movement::KERNEL,
    speed::KERNEL,
    jam::KERNEL,
    bridge::KERNEL,
    coil_driver::KERNEL,
    boost_driver::KERNEL,
];

/// Kernels checked by the first on-target test image, `check`: the coil and boost kernels.
pub static CHECK: &[Check] = &[
    estimator::KERNEL.check_entry(),
    monitor::KERNEL.check_entry(),
    duty::KERNEL.check_entry(),
    offtimer::KERNEL.check_entry(),
    offtimer_planned::KERNEL.check_entry(),
    trip::KERNEL.check_entry(),
    trip_block::KERNEL.check_entry(),
];

/// Kernels checked by the second on-target test image, `check2`: the armature and motor
/// kernels and the drivers' ticks. A second image because the vectors of all of them do not
/// fit the micro:bit's 256 KiB of flash together (the only Cortex-M0 machine of the emulator).
pub static CHECK2: &[Check] = &[
    movement::KERNEL.check_entry(),
    speed::KERNEL.check_entry(),
    jam::KERNEL.check_entry(),
    bridge::KERNEL.check_entry(),
    coil_driver::KERNEL.check_entry(),
    boost_driver::KERNEL.check_entry(),
];

/// The cost runs of every kernel, for the benchmark image.
pub static COSTS: [Cost; KERNELS.len()] = {
    let mut out = [KERNELS[0].cost_entry(); KERNELS.len()];
    let mut i = 0;
    while i < KERNELS.len() {
        out[i] = KERNELS[i].cost_entry();
        i += 1;
    }
    out
};

/// Every kernel's name, in table order.
pub static NAMES: [&str; KERNELS.len()] = {
    let mut out = [""; KERNELS.len()];
    let mut i = 0;
    while i < KERNELS.len() {
        out[i] = KERNELS[i].name;
        i += 1;
    }
    out
};

const fn same(a: &str, b: &str) -> bool {
    let (a, b) = (a.as_bytes(), b.as_bytes());
    if a.len() != b.len() {
        return false;
    }
    let mut i = 0;
    while i < a.len() {
        if a[i] != b[i] {
            return false;
        }
        i += 1;
    }
    true
}

const fn count_in(name: &str, list: &[Check]) -> usize {
    let mut n = 0;
    let mut i = 0;
    while i < list.len() {
        if same(name, list[i].name) {
            n += 1;
        }
        i += 1;
    }
    n
}

// Every kernel is checked by exactly one test image, and the images check nothing else.
const _: () = {
    assert!(CHECK.len() + CHECK2.len() == KERNELS.len());
    let mut i = 0;
    while i < KERNELS.len() {
        assert!(count_in(KERNELS[i].name, CHECK) + count_in(KERNELS[i].name, CHECK2) == 1);
        i += 1;
    }
};

/// One kernel in the target images.
#[derive(Clone, Copy)]
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

impl Kernel {
    /// The parts a test image needs.
    #[must_use]
    pub const fn check_entry(&self) -> Check {
        Check {
            name: self.name,
            state_bytes: self.state_bytes,
            run: self.check,
        }
    }

    /// The parts the benchmark image needs.
    #[must_use]
    pub const fn cost_entry(&self) -> Cost {
        Cost {
            name: self.name,
            state_bytes: self.state_bytes,
            naive_state_bytes: self.naive_state_bytes,
            run: self.cost,
        }
    }
}

/// A kernel's vector check, in a test image.
#[derive(Clone, Copy)]
pub struct Check {
    /// Name.
    pub name: &'static str,
    /// `size_of` the per-channel state on this target, bytes.
    pub state_bytes: usize,
    /// Runs every vector.
    pub run: fn(&mut Checker),
}

/// A kernel's cost run, in the benchmark image.
#[derive(Clone, Copy)]
pub struct Cost {
    /// Name.
    pub name: &'static str,
    /// `size_of` the per-channel state on this target, bytes.
    pub state_bytes: usize,
    /// `size_of` the per-channel state of the straightforward version, bytes.
    pub naive_state_bytes: usize,
    /// Ticks of `n` calls: `[kernel, its empty loop, naive, its empty loop]`.
    pub run: fn(n: u32) -> [Option<u32>; 4],
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
