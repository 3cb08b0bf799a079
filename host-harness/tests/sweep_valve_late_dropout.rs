//! The two runs of the shipped valve's sweep (`--runs 200 --seed 7`) whose plunger drops out
//! after the driver's off-timer has confirmed the release (a low-resistance, high-inductance
//! coil): the drop-out's rise lifted the measured current above the seated coil's decaying
//! estimate once the monitor watched again, and the plausibility monitor tripped
//! (LowResistance) 13 to 20 ms after a switch-off. The driver now blanks the monitor until the
//! movement detector has seen the drop-out (`lenz::drive::CoilDriverConfig::with_movement`).
//! Replayed through `lenz sim --replay`, as a user would.

use std::path::Path;
use std::process::Command;

fn replay(run: &str) -> serde_json::Value {
    let valve = Path::new(env!("CARGO_MANIFEST_DIR")).join("scenarios/valve.toml");
    let out = Command::new(env!("CARGO_BIN_EXE_lenz"))
        .args(["sim", valve.to_str().expect("utf-8 path"), "--replay", run])
        .arg("--json")
        .output()
        .expect("lenz runs");
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).expect("json");
    assert_eq!(out.status.code(), Some(0), "{run}: {v:#}");
    v
}

#[test]
fn late_drop_outs_trip_nothing_and_are_reported() {
    for run in ["7:5", "7:183"] {
        let v = replay(run);
        assert_eq!(v["passed"], true, "{run}");
        let scenarios = v["scenarios"].as_array().expect("scenarios");
        let mut trips_checked = 0;
        let mut dropouts = 0;
        for sc in scenarios {
            for p in sc["properties"].as_array().expect("properties") {
                assert_eq!(p["pass"], true, "{run}: {} {p}", sc["scenario"]);
                match p["name"].as_str() {
                    Some("no_trip_in_normal_operation") => {
                        assert_eq!(p["value"], 0.0, "{run}: {}", sc["scenario"]);
                        trips_checked += 1;
                    }
                    Some("dropout_detection_latency") => {
                        // Every switch-off's drop-out was reported, within the file's limit.
                        let l = p["value"].as_f64().expect("latency");
                        assert!(l > 0.0 && l <= p["limit"].as_f64().expect("limit"), "{p}");
                        dropouts += 1;
                    }
                    _ => {}
                }
            }
        }
        assert!(
            trips_checked >= 3,
            "{run}: {trips_checked} scenarios checked trips"
        );
        assert!(dropouts >= 1, "{run}: the drop-out latency was measured");
    }
}
