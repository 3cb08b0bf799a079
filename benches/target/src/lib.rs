//! Target images of lenz for Cortex-M under emulation.
//!
//! Two binaries share this library:
//! - `check` and `check2` run the kernels of their tables ([`kernels::CHECK`],
//!   [`kernels::CHECK2`]; together every kernel in [`kernels::KERNELS`]) on the vectors the host
//!   generated (see `build.rs` and `gen/`) and compare each result with the host's, bit for bit.
//!   They print one `FAIL kernel=… vector=…` line per difference and exit with failure if there
//!   was any. Two images, because all the vectors do not fit the micro:bit's flash together.
//! - `cost` measures instructions per call of each kernel and of the same computation written
//!   the straightforward way with `f32` and libm (see [`bench`] for the method).
//!
//! Both report through semihosting ([`semihosting`]); the host side lives in `lenz-harness`
//! (`lenz cost`, and the target checks of `cargo xtask test`).
#![no_std]
// This crate is the firmware around the kernels: a vector table, a reset handler, the
// semihosting trap and memory-mapped timer registers need `unsafe`, `no_mangle` and
// `link_section`. The `lenz` crate itself stays free of unsafe code.
#![allow(unsafe_code)]

pub mod bench;
pub mod check;
pub mod kernels;
mod rt;
pub mod semihosting;

/// Names of the kernels the build script generated vectors for (checked against
/// [`kernels::KERNELS`] at start, so a kernel cannot be left out of the target runs).
pub mod generated {
    include!(concat!(env!("OUT_DIR"), "/generated.rs"));
}

/// Fails the run if [`kernels::KERNELS`] and the generated vector sets name different kernels.
pub fn check_kernel_table() {
    let same = kernels::NAMES.len() == generated::GENERATED.len()
        && kernels::NAMES
            .iter()
            .all(|k| generated::GENERATED.contains(k));
    if !same {
        println!("FAIL kernel table: src/kernels/mod.rs and gen/mod.rs list different kernels");
        semihosting::exit(false);
    }
}
