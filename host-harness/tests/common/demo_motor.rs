//! The shipped demo motor file (`scenarios/motor.toml`, the vent motor, invented values): its
//! text, the built-in bridge driver as the firmware inputs plan it, and the printout of a
//! run's properties. Shared by the motor scenario, fault and jam tests.

// Each test file uses its own subset of these helpers.
#![allow(dead_code)]

use lenz_harness::System;
use lenz_harness::closed_loop::RunResult;
use lenz_harness::system::FirmwareInputs;

/// The shipped motor file.
#[must_use]
pub fn text() -> String {
    std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/scenarios/motor.toml"))
        .expect("the demo motor file")
}

/// The built-in bridge driver of `sys` as the firmware inputs `fw` plan it.
#[must_use]
pub fn driver(sys: &System, fw: &FirmwareInputs) -> lenz_harness::controllers::BridgeMotorDriver {
    let m = fw.motor().expect("a motor");
    let params = fw
        .motor_driver_params(sys.description(), &m.settings.expect("motor settings"))
        .expect("driver parameters");
    lenz_harness::controllers::BridgeMotorDriver::new(
        lenz::drive::MotorDriverConfig::new(&params).expect("a driver configuration"),
        1000,
    )
    .expect("the driver")
}

/// Prints the properties of run `name` (see them with `--nocapture`).
pub fn show(name: &str, r: &RunResult) {
    println!("{name}:");
    for p in &r.properties {
        println!(
            "  {:<28} {:>12.6} {} (limit {}) {}",
            p.name,
            p.value,
            p.unit,
            p.limit,
            if p.pass { "pass" } else { "FAIL" }
        );
    }
}
