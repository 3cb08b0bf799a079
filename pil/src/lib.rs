//! Firmware-side runtime for running a lenz firmware image in the loop, on an emulated
//! Cortex-M (`qemu-system-arm`), in lock-step with the harness's plant (`lenz sim FILE
//! --firmware ELF --core m0|m3|m4f`).
//!
//! An image provides two functions, through [`Image`] and [`image!`]: `init` (from the
//! parameter block the harness sends) and `tick` (one control tick: readings in, actuation
//! out). The runtime brings everything else: the vector table and reset handler, the exchange
//! with the harness, the instruction count of every tick, the fault, limit and panic reports,
//! and the exit.
//!
//! # Exchange
//!
//! Semihosting (`bkpt 0xAB`, `-semihosting-config enable=on,target=native`) on two FIFOs that
//! the harness creates in the emulator's working folder: [`wire::IN_FIFO`] (host to image,
//! opened with `SYS_OPEN` mode `rb`) and [`wire::OUT_FIFO`] (image to host, mode `wb`). Each
//! call is one `read`/`write` of the host process on the FIFO, done by the emulator in the
//! virtual CPU's thread; the image blocks on the read until the harness has sent the tick.
//! Frames and sequence: [`wire`].
//!
//! # Instructions per tick
//!
//! Under `qemu-system-arm -icount shift=N` the virtual clock advances by exactly `2^N` ns per
//! executed instruction, and SysTick (processor clock) counts on that clock: a SysTick count
//! is a fixed multiple of executed instructions, the same in every run. For each tick the
//! runtime stops SysTick, loads the reload value the harness sent (the instruction limit),
//! clears the counter, starts it with its interrupt enabled, calls the tick function through
//! a function pointer, reads the counter and stops it again; the raw count `reload − value`
//! goes to the host with the actuation. At start-up it runs the same window around an
//! assembly loop of exactly two instructions per iteration (for 1000 and 3000 iterations) and
//! around an empty function (`bx lr`, one instruction), and sends the three counts in its
//! first frame. The host computes
//!
//! ```text
//! ticks per instruction k = (t₂ − t₁) / (2·(n₂ − n₁))
//! instructions of a tick  = round((raw − raw_empty) / k) + 1
//! ```
//!
//! so the count is everything executed from the first instruction of the image's tick entry
//! point (its trampoline included) to its return; the window's own instructions cancel. The
//! method is the one of the target images' cost runs (`benches/target/src/bench.rs`).
//!
//! # Stops
//!
//! A tick function still running when SysTick reaches zero is stopped by the SysTick
//! exception: the runtime reports [`wire::StopCause::Limit`] with the tick and the code
//! address it was at. Every other exception (hard fault, NMI, memory management, bus and usage
//! faults, SVCall, PendSV) reports [`wire::StopCause::Fault`] with its number, and a Rust
//! panic [`wire::StopCause::Panic`]; then the image exits with status 1. The harness guards
//! each tick by the wall clock as well, for an image that disables interrupts and hangs.
//!
//! # Building an image
//!
//! `#![no_std] #![no_main]`, a dependency on this crate, a build script that passes
//! `cargo::rustc-link-arg-bins=-Tlink.x` (the runtime puts `link.x` and the machine's
//! `memory.x` on the search path), and:
//!
//! ```text
//! struct Fw { /* … */ }
//! impl lenz_pil::Image for Fw {
//!     fn init(params: &[u8]) -> Result<Self, u16> { /* decode the parameter block */ }
//!     fn tick(&mut self, s: &lenz_pil::Sensed) -> lenz_pil::Actuation { /* … */ }
//! }
//! lenz_pil::image!(Fw);
//! ```
//!
//! See `pil/images/` for the examples. On the host this crate is only [`wire`] (the harness
//! uses it), with no unsafe code.

#![no_std]

pub mod wire;

pub use wire::{Actuation, Sensed};

#[cfg(all(target_arch = "arm", target_os = "none"))]
mod rt;
#[cfg(all(target_arch = "arm", target_os = "none"))]
mod runtime;
#[cfg(all(target_arch = "arm", target_os = "none"))]
mod semihosting;
#[cfg(all(target_arch = "arm", target_os = "none"))]
mod systick;

#[cfg(all(target_arch = "arm", target_os = "none"))]
pub use runtime::run;

/// A firmware image in the loop: its init and its control tick.
pub trait Image: Sized {
    /// Builds the image's state from the parameter block the harness sent (at most
    /// [`wire::PARAMS_MAX`] bytes). `Err(code)` ends the run; the harness reports the code.
    ///
    /// # Errors
    ///
    /// The image's own code for a block it cannot use.
    fn init(params: &[u8]) -> Result<Self, u16>;

    /// One control tick (the code whose instructions are counted).
    fn tick(&mut self, sensed: &Sensed) -> Actuation;
}

/// Defines the image's entry point (`lenz_pil_main`, called by the reset handler) for the
/// [`Image`] type given.
#[macro_export]
macro_rules! image {
    ($image:ty) => {
        /// The image's entry point: runs the exchange with the harness.
        #[unsafe(no_mangle)]
        pub extern "C" fn lenz_pil_main() -> ! {
            $crate::run::<$image>()
        }
    };
}
