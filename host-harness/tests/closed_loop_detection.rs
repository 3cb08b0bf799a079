//! The movement detector on the chip in the loop: the example valve driver with
//! `lenz::kernel::movement` (planned from `[system.coil.armature]` by
//! `lenz_harness::system::firmware_movement`) on the moving-armature plant that
//! `plant_coil_armature.rs` checks against Dop853. The demo valve file with the demo plunger
//! (invented values), the shipped monitor thresholds (no widening).
//! Label: computed (closed loop); the latencies are measured, printed with `--nocapture`.

use lenz_harness::scenario::{self, run};

const VALVE: &str = include_str!("../scenarios/valve.toml");

/// The armature section: the demo plunger (invented values, as in `closed_loop_armature.rs`).
const ARMATURE: &str = r#"
[system.coil.armature]
zero_gap_inductance = "360mH"
halving_gap = "0.6mm"
mass = "8g"
open_gap = "1.2mm"
closed_gap = "0.05mm"
spring_preload = "5N"
spring_rate = "1kN/m"
damping = "2N·s/m"
load = "1.5N"
restitution = 0.3
"#;

/// The valve file's system and controller with the armature (without its own, if it has
/// one), and `scenarios`.
fn file_text(scenarios: &str) -> String {
    let (head, _) = VALVE
        .split_once("# -------")
        .expect("the scenario separator");
    let head = match head.split_once("[system.coil.armature]") {
        Some((a, b)) => format!("{a}{}", &b[b.find("\n[").expect("a table after it")..]),
        None => head.to_string(),
    };
    let (before, after) = head
        .split_once("# One clamp kind")
        .expect("the clamp comment");
    format!("{before}{ARMATURE}\n# One clamp kind{after}\n{scenarios}")
}

const CYCLE: &str = r#"
[[scenario]]
name = "open and close"
duration = "150ms"
[[scenario.event]]
at = "5ms"
command = "on"
[[scenario.event]]
at = "90ms"
command = "off"
[[scenario.check]]
property = "seat-time"
max = "20ms"
[[scenario.check]]
property = "seat-detection-latency"
max = "2ms"
[[scenario.check]]
property = "dropout-detection-latency"
max = "5ms"
[[scenario.check]]
property = "false-detections"
[[scenario.check]]
property = "hold-current"
min = "0.2A"
"#;

fn value(r: &lenz_harness::closed_loop::RunResult, name: &str) -> f64 {
    r.property(name)
        .unwrap_or_else(|| panic!("{name} listed"))
        .value
}

fn show(r: &lenz_harness::closed_loop::RunResult) {
    for p in &r.properties {
        println!("{} = {} {} (limit {})", p.name, p.value, p.unit, p.limit);
    }
    for e in &r.events {
        println!("{:.4} ms {}", e.t_s * 1e3, e.what);
    }
}

#[test]
fn the_detector_driven_valve_seats_holds_and_reports() {
    let f = scenario::parse("det.toml", &file_text(CYCLE)).unwrap_or_else(|e| panic!("{e}"));
    let r = run::run(&f, 0, &run::Params::NOMINAL, run::Record::None).unwrap();
    show(&r);
    assert!(r.passed(), "{:?}", r.violations());
}
