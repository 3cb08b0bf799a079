//! `lenz turnoff` from the outside: runs the binary and checks its JSON against the switch-off
//! values (C2.x) of the project's reference sheet docs/references.md, and its exit codes.
//!
//! Sources: "computed" = closed form cross-checked numerically (the sheet's ODE script);
//! TOSH = Toshiba Electronic Devices & Storage, MOSFET FAQ "How to calculate the avalanche
//! energy" (only for the R = 0 form, not used here); RELAY = relay datasheet convention,
//! common practice.

mod common;
use common::{lenz, num};

use serde_json::Value;

/// Runs `lenz turnoff ARGS --json` for the demo valve (120 mH, 32 Ω, 0.75 A) and parses it.
fn valve_json(extra: &[&str]) -> Value {
    let mut args = vec![
        "turnoff",
        "--inductance",
        "120mH",
        "--resistance",
        "32",
        "--current",
        "0.75",
        "--json",
    ];
    args.extend_from_slice(extra);
    let out = lenz(&args);
    assert!(
        out.status.success(),
        "{args:?}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(out.stderr.is_empty());
    serde_json::from_slice(&out.stdout).expect("one JSON object")
}

fn close(v: &Value, key: &str, want: f64, rtol: f64) {
    let got = num(v, key);
    assert!(
        (got - want).abs() <= rtol * want.abs(),
        "{key}: got {got}, want {want} (rel tol {rtol})"
    );
}

#[test]
fn diode_c2_1() {
    // C2.1, computed: Vf 0.7 V, to 10 % 7.782754246 ms, to zero 13.3630432 ms, peak 24.7 V,
    // diode 1.764128401 mJ, coil R 31.9858716 mJ.
    let v = valve_json(&[
        "--clamp",
        "diode:700m",
        "--supply",
        "24",
        "--release-current",
        "75mA",
    ]);
    close(&v, "time_to_release_s", 7.782754246e-3, 1e-5);
    close(&v, "time_to_zero_s", 13.3630432e-3, 1e-5);
    close(&v, "peak_switch_voltage_v", 24.7, 1e-6);
    close(&v, "clamp_energy_j", 1.764128401e-3, 1e-5);
    close(&v, "resistance_energy_j", 31.9858716e-3, 1e-5);
    close(&v, "stored_energy_j", 33.75e-3, 1e-6);
    assert_eq!(num(&v, "supply_energy_j"), 0.0);
    // Ideal diode: exponential only, so the time to zero is null; to 10 %: 8.634694099 ms.
    let ideal = valve_json(&["--clamp", "diode:0", "--release-current", "0.075"]);
    assert!(ideal["time_to_zero_s"].is_null());
    close(&ideal, "time_to_release_s", 8.634694099e-3, 1e-6);
}

#[test]
fn zener_c2_2() {
    // C2.2, computed: Vz 47 V + 0.7 V: 1.344261523 / 1.528347561 ms, 25.48643991 mJ, 71.7 V.
    let v = valve_json(&[
        "--clamp",
        "zener:47:0.7",
        "--supply",
        "24V",
        "--release-current",
        "75m",
    ]);
    close(&v, "time_to_release_s", 1.344261523e-3, 1e-5);
    close(&v, "time_to_zero_s", 1.528347561e-3, 1e-5);
    close(&v, "clamp_energy_j", 25.48643991e-3, 1e-4);
    close(&v, "peak_switch_voltage_v", 71.7, 1e-6);
    // Without --release-current the key is absent.
    let no_rel = valve_json(&["--clamp", "zener:47:0.7", "--supply", "24"]);
    assert!(no_rel.get("time_to_release_s").is_none());
}

#[test]
fn switch_clamp_c2_3() {
    // C2.3, computed: Vcl 45 V from 24 V: t0 2.858025195 ms, t10 2.452224253 ms, switch
    // 42.16144345 mJ, supply 22.48610318 mJ.
    let v = valve_json(&[
        "--clamp",
        "switch:45",
        "--supply",
        "24",
        "--release-current",
        "75m",
    ]);
    close(&v, "time_to_zero_s", 2.858025195e-3, 1e-5);
    close(&v, "time_to_release_s", 2.452224253e-3, 1e-5);
    close(&v, "clamp_energy_j", 42.16144345e-3, 1e-5);
    close(&v, "supply_energy_j", 22.48610318e-3, 1e-5);
    close(&v, "peak_switch_voltage_v", 45.0, 1e-7);
    // Energy balance: clamp + resistance = stored + supply.
    let lhs = num(&v, "clamp_energy_j") + num(&v, "resistance_energy_j");
    let rhs = num(&v, "stored_energy_j") + num(&v, "supply_energy_j");
    assert!((lhs - rhs).abs() <= 1e-4 * rhs);
}

#[test]
fn resistor_c2_5() {
    // C2.5, computed: Rs 33 Ω + 0.7 V: t10 4.029544137 ms, t0 7.860252927 ms, 49.45 V,
    // clamp = Rs + diode = 16.67262729 + 0.9099765549 mJ, coil R 16.16739616 mJ.
    let v = valve_json(&[
        "--clamp",
        "resistor:33:0.7",
        "--supply",
        "24",
        "--release-current",
        "75m",
    ]);
    close(&v, "time_to_release_s", 4.029544137e-3, 1e-5);
    close(&v, "time_to_zero_s", 7.860252927e-3, 1e-5);
    close(&v, "peak_switch_voltage_v", 49.45, 1e-6);
    close(
        &v,
        "clamp_energy_j",
        (16.67262729 + 0.9099765549) * 1e-3,
        1e-5,
    );
    close(&v, "resistance_energy_j", 16.16739616e-3, 1e-5);
}

#[test]
fn unclamped_c2_6() {
    // C2.6, computed: valve with 100 pF: damped peak 25985.91385 V; ring-down to 10 % by the
    // energy event 17.27018 ms; exponential only, so no time to zero.
    let v = valve_json(&[
        "--clamp",
        "none:100p",
        "--supply",
        "24",
        "--release-current",
        "75m",
    ]);
    close(&v, "peak_switch_voltage_v", 25985.91385, 1e-5);
    close(&v, "time_to_release_s", 17.27018e-3, 2e-5);
    assert!(v["time_to_zero_s"].is_null());
    // The capacitance keeps ½ C Vs² = 28.8 nJ; the supply gives C Vs² = 57.6 nJ.
    close(&v, "clamp_energy_j", 28.8e-9, 1e-5);
    close(&v, "supply_energy_j", 57.6e-9, 1e-5);
}

#[test]
fn relay_c2_7_and_human_output() {
    // C2.7, computed; fraction: published RELAY. Diode + 24 V zener: to 10 % 0.8713344659 ms.
    let out = lenz(&[
        "turnoff",
        "--inductance",
        "0.3",
        "--resistance",
        "120",
        "--current",
        "100m",
        "--clamp",
        "zener:24:0.7",
        "--release-current",
        "10m",
        "--json",
    ]);
    assert!(out.status.success());
    let v: Value = serde_json::from_slice(&out.stdout).unwrap();
    close(&v, "time_to_release_s", 0.8713344659e-3, 1e-5);
    // Human output: the common-practice drop-out is stated, and the caution is shown.
    let human = lenz(&[
        "turnoff",
        "--inductance",
        "0.3",
        "--resistance",
        "120",
        "--current",
        "100m",
        "--clamp",
        "diode:0.7",
        "--supply",
        "12",
    ]);
    assert!(human.status.success());
    let text = String::from_utf8(human.stdout).unwrap();
    assert!(text.contains("common practice"), "{text}");
    assert!(text.contains("4.749 ms"), "{text}"); // C2.7 diode 0.7 V to 10 %: 4.749370268 ms
    assert!(text.contains("CAUTION"));
    let unclamped = lenz(&[
        "turnoff",
        "--inductance",
        "120m",
        "--resistance",
        "32",
        "--current",
        "0.75",
        "--clamp",
        "none:100p",
        "--supply",
        "24",
    ]);
    let text = String::from_utf8(unclamped.stdout).unwrap();
    assert!(text.contains("WARNING: unclamped"), "{text}");
    assert!(text.contains("25.99 kV"), "{text}");
}

fn expect_exit_2(args: &[&str], flag: &str) {
    let mut all = vec!["turnoff"];
    all.extend_from_slice(args);
    let out = lenz(&all);
    assert_eq!(out.status.code(), Some(2), "{all:?}");
    assert!(out.stdout.is_empty(), "{all:?}: stdout not empty");
    let err = String::from_utf8(out.stderr).unwrap();
    assert_eq!(err.lines().count(), 1, "{all:?}: {err}");
    assert!(err.contains(flag), "{all:?}: {err} does not name {flag}");
}

#[test]
fn bad_input_exits_2_with_one_line() {
    let base = [
        "--inductance",
        "120m",
        "--resistance",
        "32",
        "--current",
        "0.75",
    ];
    let with = |extra: &[&'static str]| -> Vec<&'static str> {
        let mut v = base.to_vec();
        v.extend_from_slice(extra);
        v
    };
    // A switch clamp at or below the supply.
    expect_exit_2(
        &with(&["--clamp", "switch:24", "--supply", "24"]),
        "--clamp",
    );
    expect_exit_2(
        &with(&["--clamp", "switch:20", "--supply", "24", "--json"]),
        "--clamp",
    );
    // switch: and none: need the supply.
    expect_exit_2(&with(&["--clamp", "switch:45", "--json"]), "--supply");
    expect_exit_2(&with(&["--clamp", "none:100p"]), "--supply");
    // Malformed or bad clamps and values.
    expect_exit_2(&with(&["--clamp", "diode"]), "--clamp");
    expect_exit_2(&with(&["--clamp", "zener:24"]), "--clamp");
    expect_exit_2(&with(&["--clamp", "diode:0.7:1"]), "--clamp");
    expect_exit_2(&with(&["--clamp", "spark:1"]), "--clamp");
    expect_exit_2(&with(&["--clamp", "diode:-0.7"]), "--clamp");
    expect_exit_2(&with(&["--clamp", "resistor:abc:0.7"]), "--clamp");
    // A zero or negative clamp resistor, as in a scenario file.
    expect_exit_2(&with(&["--clamp", "resistor:0:0.7"]), "--clamp RS");
    expect_exit_2(&with(&["--clamp", "resistor:-1:0.7"]), "--clamp");
    expect_exit_2(&with(&["--clamp", "none:0", "--supply", "24"]), "--clamp");
    expect_exit_2(
        &with(&["--clamp", "diode:0.7", "--supply", "-5"]),
        "--supply",
    );
    expect_exit_2(
        &with(&["--clamp", "diode:0.7", "--release-current", "0"]),
        "--release-current",
    );
    expect_exit_2(
        &[
            "--inductance",
            "0",
            "--resistance",
            "32",
            "--current",
            "0.75",
            "--clamp",
            "diode:0.7",
        ],
        "--inductance",
    );
    expect_exit_2(
        &[
            "--inductance",
            "1",
            "--resistance",
            "32",
            "--current",
            "-1",
            "--clamp",
            "diode:0.7",
        ],
        "--current",
    );
    // A missing required flag: clap's error, exit 2, one line naming the flag.
    expect_exit_2(
        &[
            "--inductance",
            "1",
            "--resistance",
            "32",
            "--clamp",
            "diode:0.7",
        ],
        "--current",
    );
}
