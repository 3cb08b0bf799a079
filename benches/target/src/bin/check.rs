//! On-target test image: every kernel on the host-generated vectors, compared bit for bit.
//!
//! Output (semihosting): one `FAIL kernel=<name> vector=<index> …` line per difference (the
//! first few per kernel), one `kernel=<name> vectors=<n> failures=<m> state_bytes=<b>` line per
//! kernel, then `DONE failures=<total>`. Exit status 0 only if nothing differed.
#![no_std]
#![no_main]
#![allow(unsafe_code)] // `no_mangle` on the entry point called by the runtime.

use lenz_target::kernels::{Checker, KERNELS};
use lenz_target::{check_kernel_table, println, semihosting};

/// Entry point, called by the reset handler.
#[unsafe(no_mangle)]
fn lenz_target_main() -> ! {
    check_kernel_table();
    let mut total = 0;
    for k in KERNELS {
        let mut c = Checker::new(k.name);
        (k.check)(&mut c);
        println!(
            "kernel={} vectors={} failures={} state_bytes={}",
            k.name, c.vectors, c.failures, k.state_bytes
        );
        if c.vectors == 0 {
            println!("FAIL kernel={} has no vectors", k.name);
            total += 1;
        }
        total += c.failures;
    }
    println!("DONE failures={total}");
    semihosting::exit(total == 0)
}
