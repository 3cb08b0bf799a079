//! First on-target test image: the coil and boost kernels ([`lenz_target::kernels::CHECK`]) on
//! the host-generated vectors, compared bit for bit (report format: [`lenz_target::check`]).
#![no_std]
#![no_main]
#![allow(unsafe_code)] // `no_mangle` on the entry point called by the runtime.

/// Entry point, called by the reset handler.
#[unsafe(no_mangle)]
fn lenz_target_main() -> ! {
    lenz_target::check::run(lenz_target::kernels::CHECK)
}
