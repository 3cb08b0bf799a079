//! `lenz motor` from outside: the documented interface, JSON keys, values and exit codes.

mod common;
use common::{assert_exit2, assert_key, json, lenz};

/// The vent motor of the reference sheet (CHECKS C5.1, values invented for the demo).
const C51: &[&str] = &[
    "motor",
    "--supply",
    "12",
    "--resistance",
    "1.5",
    "--inductance",
    "2m",
    "--torque-constant",
    "0.03",
];

fn with(extra: &[&'static str]) -> Vec<&'static str> {
    C51.iter().copied().chain(extra.iter().copied()).collect()
}

#[test]
fn reference_motor_json() {
    // CHECKS C5.1 (computed: closed forms; peaks cross-checked with scipy solve_ivp, rtol
    // 1e-11): J 2e-5, b 1e-6, load 0.02 N·m.
    let v = json(&with(&[
        "--inertia",
        "2e-5",
        "--friction",
        "1e-6",
        "--load-torque",
        "0.02",
        "--json",
    ]));
    assert_key(&v, "stall_current_a", 8.0, 1e-6);
    assert_key(&v, "stall_torque_nm", 0.24, 1e-6);
    assert_key(&v, "speed_rad_s", 366.057, 1e-5);
    assert_key(&v, "current_a", 0.678869, 1e-5);
    assert_key(&v, "electrical_time_constant_s", 2e-3 / 1.5, 1e-6);
    assert_key(&v, "mechanical_time_constant_s", 33.278e-3, 1e-4);
    assert_key(&v, "start_peak_current_a", 7.3027, 1e-4);
    assert_key(&v, "reversal_peak_current_a", 13.797, 1e-4);
    assert_key(&v, "brake_peak_current_a", 6.5593, 1e-4);
    assert_key(&v, "kinetic_energy_j", 1.33997, 1e-5);
    // Peaks are magnitudes: the reversal's current is negative, its key is not.
    assert!(v["reversal_peak_current_a"].as_f64().unwrap() > 0.0);
}

#[test]
fn mechanical_keys_only_with_inertia() {
    let v = json(&with(&["--json"]));
    for key in [
        "stall_current_a",
        "stall_torque_nm",
        "speed_rad_s",
        "current_a",
        "electrical_time_constant_s",
    ] {
        assert!(v.get(key).is_some(), "{key} missing: {v}");
    }
    for key in [
        "mechanical_time_constant_s",
        "start_peak_current_a",
        "reversal_peak_current_a",
        "brake_peak_current_a",
        "kinetic_energy_j",
    ] {
        assert!(v.get(key).is_none(), "{key} without --inertia: {v}");
    }
    // No load, no friction: no-load speed V/k, zero current (textbook steady state).
    assert_key(&v, "speed_rad_s", 400.0, 1e-6);
    assert_eq!(v["current_a"].as_f64(), Some(0.0));
}

#[test]
fn temperature_and_units() {
    // The winding follows copper (IEC 60028, α₂₀ = 0.00393 /K): at 85 °C R = 1.5·(1 + 0.00393·65).
    let v = json(&with(&["--temperature", "85", "--json"]));
    let r85 = 1.5 * (1.0 + 0.00393 * 65.0);
    assert_key(&v, "stall_current_a", 12.0 / r85, 1e-5);
    assert_key(&v, "electrical_time_constant_s", 2e-3 / r85, 1e-5);
    // Unit symbols and prefixes on the mechanical flags give the same result.
    let a = json(&with(&[
        "--inertia",
        "20ukgm2",
        "--friction",
        "1uNms/rad",
        "--load-torque",
        "20mNm",
        "--json",
    ]));
    let b = json(&[
        "motor",
        "--supply",
        "12V",
        "--resistance",
        "1500mohm",
        "--inductance",
        "2mH",
        "--torque-constant",
        "30mNm/A",
        "--inertia",
        "2e-5",
        "--friction",
        "1e-6",
        "--load-torque",
        "0.02",
        "--json",
    ]);
    for key in [
        "speed_rad_s",
        "start_peak_current_a",
        "reversal_peak_current_a",
    ] {
        assert_key(&a, key, b[key].as_f64().unwrap(), 1e-6);
    }
}

#[test]
fn stalling_load_exits_2_with_the_stall_torque() {
    let err = assert_exit2(&with(&["--load-torque", "0.3"]), "--load-torque");
    assert!(err.contains("stalls") && err.contains("0.24"), "{err}");
    // Exactly at the stall torque the rotor does not turn either.
    let err = assert_exit2(&with(&["--load-torque", "0.24"]), "stall");
    assert!(err.contains("0.24"), "{err}");
}

#[test]
fn bad_input_names_the_flag() {
    assert_exit2(&with(&["--inertia", "-1"]), "--inertia");
    assert_exit2(&with(&["--inertia", "0"]), "--inertia");
    assert_exit2(&with(&["--friction", "-1e-6"]), "--friction");
    assert_exit2(&with(&["--load-torque", "-0.01"]), "--load-torque");
    assert_exit2(&with(&["--temperature", "900"]), "--temperature");
    assert_exit2(&with(&["--load-torque", "abc"]), "--load-torque");
    assert_exit2(
        &[
            "motor",
            "--supply",
            "12",
            "--resistance",
            "1.5",
            "--inductance",
            "2m",
            "--torque-constant",
            "nan",
        ],
        "--torque-constant",
    );
    assert_exit2(
        &[
            "motor",
            "--supply",
            "0",
            "--resistance",
            "1.5",
            "--inductance",
            "2m",
            "--torque-constant",
            "0.03",
        ],
        "--supply",
    );
    assert_exit2(
        &[
            "motor",
            "--supply",
            "12",
            "--resistance",
            "-1.5",
            "--inductance",
            "2m",
            "--torque-constant",
            "0.03",
        ],
        "--resistance",
    );
    assert_exit2(
        &[
            "motor",
            "--supply",
            "12",
            "--resistance",
            "1.5",
            "--torque-constant",
            "0.03",
        ],
        "--inductance",
    );
}

#[test]
fn human_output_has_table_and_caution() {
    let out = lenz(&with(&["--inertia", "2e-5", "--load-torque", "0.02"]));
    assert!(out.status.success());
    let s = String::from_utf8_lossy(&out.stdout);
    for needle in [
        "Stall current",
        "8.000 A",
        "Reversal peak current",
        "Mechanical time constant",
        "CAUTION",
    ] {
        assert!(s.contains(needle), "'{needle}' missing: {s}");
    }
    let out = lenz(C51);
    let s = String::from_utf8_lossy(&out.stdout);
    assert!(s.contains("--inertia"), "{s}");
}
