//! no_std probe: links lenz, runs a plan routine and a kernel, and returns 0 when the results
//! are plausible (checked further by the host test through the exit code).
#![no_std]
#![no_main]

#[cfg(feature = "leak-std")]
extern crate std;

use lenz::CoilParams;
use lenz::kernel::{EstimatorConfig, EstimatorState};

#[panic_handler]
fn panic(_: &core::panic::PanicInfo) -> ! {
    loop {}
}

fn run() -> Result<i32, lenz::Error> {
    // 40 mH, 24 Ω, 12 V: τ = 1.667 ms, steady 0.5 A, 0.225594182 A after 1 ms.
    let coil = CoilParams::new(0.040, 24.0).validate()?;
    let tau = coil.time_constant_s(20.0)?;
    let cfg = EstimatorConfig::new(&coil, 20.0, 100e-6)?;
    let mut s = EstimatorState::new();
    for _ in 0..10 {
        cfg.update(&mut s, true, 12_000);
    }
    let ok_tau = (tau - 1.666_666_7e-3).abs() < 1e-8;
    let ok_i = (s.current_ua() - 225_594).abs() < 100;
    Ok(if ok_tau && ok_i { 0 } else { 3 })
}

/// C entry point, called by the C runtime's start files.
#[unsafe(no_mangle)]
pub extern "C" fn main(_argc: i32, _argv: *const *const u8) -> i32 {
    run().unwrap_or(4)
}
