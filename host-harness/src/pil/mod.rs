//! Firmware in the loop: a thumb image (Rust or C, built on the `lenz-pil` runtime) runs on an
//! emulated Cortex-M (`qemu-system-arm`, machines as in [`crate::firmware::Target`]) in
//! lock-step with the plant, taking the control decisions of a scenario; the instructions of
//! its tick function are counted in every tick.
//!
//! - [`session`]: the emulator, the FIFOs and the exchange ([`lenz_pil::wire`]); the count's
//!   calibration; the wall-clock guards and the instruction limit.
//! - [`controller`]: the image as a [`crate::closed_loop::Controller`].
//! - [`run`]: a scenario of a file in the loop, with the `tick_budget` and `firmware_ran`
//!   properties.
//! - [`params`]: the parameter block sent to the image at start.
//! - [`elf`]: the image checked against the core before it runs.
//! - [`costs`]: instructions per tick and the budget.
//! - [`build`]: the example images of `pil/images`.
//!
//! # Errors and failures
//!
//! An image that cannot run is bad input (exit 2 in `lenz sim`): not a 32-bit Arm ELF, not
//! thumb, built for another architecture or the hardware float ABI on a core without an FPU,
//! no first frame within the start guard (not built on the runtime, or it crashed before),
//! or an init that refused the parameter block. An image that started and then misbehaves
//! (fault, panic, early exit, past the instruction limit, no answer within the wall-clock
//! guard, a malformed answer) fails the property `firmware_ran`; the run goes on with the
//! switch off, and an event names the tick, what it was sent and its last answer.

pub mod build;
pub mod controller;
pub mod costs;
pub mod elf;
pub mod params;
pub mod run;
pub mod session;

pub use controller::{Failure, FirmwareController};
pub use costs::{TickBudget, TickCosts};
pub use run::{FirmwareRun, PilOutcome, run_scenario};
pub use session::{Guards, Misbehaviour, Session};
