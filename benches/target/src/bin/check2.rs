//! Second on-target test image: the armature and motor kernels and the drivers' ticks
//! ([`lenz_target::kernels::CHECK2`]) on the host-generated vectors, compared bit for bit
//! (report format: [`lenz_target::check`]).
#![no_std]
#![no_main]
#![allow(unsafe_code)] // `no_mangle` on the entry point called by the runtime.

/// Entry point, called by the reset handler.
#[unsafe(no_mangle)]
fn lenz_target_main() -> ! {
    lenz_target::check::run(lenz_target::kernels::CHECK2)
}
