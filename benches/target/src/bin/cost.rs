//! Benchmark image: raw SysTick tick counts for the calibration loop and for each kernel, its
//! empty loop, the straightforward f32 version and its empty loop (method: `bench` module).
//!
//! Output (semihosting): `calib n1=… t1=… n2=… t2=…`, then per kernel
//! `cost kernel=<name> calls=<n> kernel=<t> empty=<t> naive=<t> naive_empty=<t>
//! state_bytes=<b> naive_state_bytes=<b>`, then `DONE`. A counter wrap prints `FAIL …`.
#![no_std]
#![no_main]
#![allow(unsafe_code)] // `no_mangle` on the entry point called by the runtime.

use lenz_target::bench::{spin, start_timer, ticks};
use lenz_target::kernels::COSTS;
use lenz_target::{check_kernel_table, println, semihosting};

/// Calls per kernel and variant.
const CALLS: u32 = 2048;
const SPIN_1: u32 = 10_000;
const SPIN_2: u32 = 30_000;

fn or_fail(t: Option<u32>, what: &str) -> u32 {
    match t {
        Some(t) => t,
        None => {
            println!("FAIL {what}: the 24-bit timer wrapped during the measurement");
            semihosting::exit(false)
        }
    }
}

/// Entry point, called by the reset handler.
#[unsafe(no_mangle)]
fn lenz_target_main() -> ! {
    check_kernel_table();
    start_timer();
    let t1 = or_fail(ticks(|| spin(SPIN_1)), "calibration");
    let t2 = or_fail(ticks(|| spin(SPIN_2)), "calibration");
    println!("calib n1={SPIN_1} t1={t1} n2={SPIN_2} t2={t2}");
    for k in &COSTS {
        let [t, e, tn, en] = (k.run)(CALLS);
        println!(
            "cost kernel={} calls={CALLS} kernel={} empty={} naive={} naive_empty={} state_bytes={} naive_state_bytes={}",
            k.name,
            or_fail(t, k.name),
            or_fail(e, k.name),
            or_fail(tn, k.name),
            or_fail(en, k.name),
            k.state_bytes,
            k.naive_state_bytes
        );
    }
    println!("DONE");
    semihosting::exit(true)
}
