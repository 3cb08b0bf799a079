//! `lenz boost` run as a binary against the boost check values of the reference sheet.
//!
//! Sources as named beside each check: Erickson & Maksimović, Fundamentals of Power Electronics,
//! 2nd ed., Ch. 3 and 5 ("EM"); TI SLVA372, Basic Calculation of a Boost Converter's Power
//! Stage; TOFF, the controller datasheet convention for the timing limits; "computed" = closed form
//! cross-checked numerically.

mod common;
use common::{json, lenz, num};

use serde_json::Value;

fn close(v: &Value, key: &str, want: f64, rtol: f64) {
    let got = num(v, key);
    assert!(
        (got - want).abs() <= rtol * want.abs(),
        "{key}: got {got}, want {want} (rel tol {rtol})"
    );
}

/// Heater rail of the reference sheet, section 3 (invented demo values).
const HEATER: &[&str] = &[
    "boost",
    "--vin",
    "5",
    "--vout",
    "12",
    "--iout",
    "0.5",
    "--inductance",
    "10u",
    "--frequency",
    "500k",
    "--diode-drop",
    "0.35",
    "--dcr",
    "40m",
    "--rds-on",
    "25m",
];

fn with(base: &[&'static str], extra: &[&'static str]) -> Vec<&'static str> {
    base.iter().chain(extra).copied().collect()
}

#[test]
fn heater_rail_ccm_values() {
    let v = json(&with(HEATER, &["--cout", "22u", "--esr", "5m", "--json"]));
    let keys: Vec<&str> = v.as_object().unwrap().keys().map(String::as_str).collect();
    let mut want_keys = vec![
        "mode",
        "duty",
        "average_inductor_current_a",
        "ripple_current_a",
        "peak_inductor_current_a",
        "k",
        "k_crit",
        "duty_max",
        "duty_max_reason",
        "output_ripple_v",
    ];
    want_keys.sort_unstable();
    let mut keys = keys;
    keys.sort_unstable();
    assert_eq!(keys, want_keys);
    assert_eq!(v["mode"], "ccm");
    // CHECKS C3.2, computed (loss model of EM Ch. 3, solved numerically).
    close(&v, "duty", 0.6007203716, 1e-5);
    // CHECKS C3.2, computed (EM Ch. 5 K and Kcrit at the loss-model duty).
    close(&v, "k", 0.4166666667, 1e-6);
    close(&v, "k_crit", 0.09576937767, 1e-5);
    // CHECKS C3.2, from memory: SLVA372 forms, computed.
    close(&v, "average_inductor_current_a", 1.252255223, 1e-5);
    close(&v, "ripple_current_a", 0.5909410537, 1e-5);
    close(&v, "peak_inductor_current_a", 1.54772575, 1e-5);
    // CHECKS C3.2: dV_C 27.30547144 mV + dV_ESR 7.738628748 mV (SLVA372 forms, computed).
    close(&v, "output_ripple_v", 27.30547144e-3 + 7.738628748e-3, 1e-5);
    // No timing limit given, no saturation current: the gain peak binds (CHECKS C3.4).
    assert_eq!(v["duty_max_reason"], "gain_peak");
    close(&v, "duty_max", 0.9481457103, 1e-6);
}

#[test]
fn gain_peak_binds_before_the_min_off_time() {
    // CHECKS C3.3 / C3.4 decision test: D_max = 1 − 100 ns · 500 kHz = 0.95 (published form:
    // TOFF) lies above the gain peak 0.9481457103 (computed), so the peak binds.
    let v = json(&with(HEATER, &["--min-off-time", "100n", "--json"]));
    assert_eq!(v["duty_max_reason"], "gain_peak");
    close(&v, "duty_max", 0.9481457103, 1e-6);
    assert!(v.get("output_ripple_v").is_none(), "no --cout, no ripple");
    // 250 ns: D_max = 0.875 (published form: TOFF) binds below the peak.
    let v = json(&with(HEATER, &["--min-off-time", "250n", "--json"]));
    assert_eq!(v["duty_max_reason"], "min_off_time");
    close(&v, "duty_max", 0.875, 1e-6);
}

#[test]
fn saturation_limit_binds_with_a_small_inductor_rating() {
    // The peak at the operating point is 1.54772575 A (CHECKS C3.2, computed); a 2.0 A part
    // leaves a margin of 0.2261371252 and its limit lies between the operating duty and the peak.
    let v = json(&with(HEATER, &["--isat", "2", "--json"]));
    assert_eq!(v["duty_max_reason"], "saturation");
    let d_max = num(&v, "duty_max");
    assert!(d_max > 0.6007203716 && d_max < 0.9481457103, "{d_max}");
    // Asking for more current than the 2 A part allows at 12 V is refused.
    let out = lenz(&[
        "boost",
        "--vin",
        "5",
        "--vout",
        "12",
        "--iout",
        "0.75",
        "--inductance",
        "10u",
        "--frequency",
        "500k",
        "--diode-drop",
        "0.35",
        "--dcr",
        "40m",
        "--rds-on",
        "25m",
        "--isat",
        "2",
        "--json",
    ]);
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("--vout") && err.contains("saturation"),
        "{err}"
    );
    assert!(out.stdout.is_empty());
}

#[test]
fn light_load_runs_in_dcm() {
    // CHECKS C3.5 (computed; EM Ch. 5): ideal stage, 5 V -> 12 V at 20 mA (R = 600 Ω).
    let v = json(&[
        "boost",
        "--vin",
        "5",
        "--vout",
        "12",
        "--iout",
        "20m",
        "--inductance",
        "10u",
        "--frequency",
        "500k",
        "--json",
    ]);
    assert_eq!(v["mode"], "dcm");
    close(&v, "k", 0.01666666667, 1e-6);
    close(&v, "k_crit", 0.1012731481, 1e-6);
    close(&v, "duty", 0.2366431913, 1e-6);
    close(&v, "peak_inductor_current_a", 0.2366431913, 1e-6);
    close(&v, "ripple_current_a", 0.2366431913, 1e-6);
    // Average inductor current = input current = P/V_g for the lossless stage.
    close(&v, "average_inductor_current_a", 12.0 * 0.02 / 5.0, 1e-6);
}

#[test]
fn ideal_stage_at_half_duty_doubles_less_the_diode_drop() {
    // Common practice, no source: an ideal boost at D = 0.5 gives twice its input, less the
    // diode drop (5 V in, 0.7 V diode: 9.3 V). Heavy load, so CCM.
    let v = json(&[
        "boost",
        "--vin",
        "5",
        "--vout",
        "9.3",
        "--iout",
        "2",
        "--inductance",
        "10u",
        "--frequency",
        "500k",
        "--diode-drop",
        "0.7",
        "--json",
    ]);
    assert_eq!(v["mode"], "ccm");
    close(&v, "duty", 0.5, 1e-6);
}

#[test]
fn output_above_the_peak_gain_is_refused_with_the_reachable_output() {
    // R = 50 V / 2.0833333 A = 24 Ω as in CHECKS C3.4: V_max = 48.34762521 V (computed).
    let out = lenz(&[
        "boost",
        "--vin",
        "5",
        "--vout",
        "50",
        "--iout",
        "2.0833333333",
        "--inductance",
        "10u",
        "--frequency",
        "500k",
        "--diode-drop",
        "0.35",
        "--dcr",
        "40m",
        "--rds-on",
        "25m",
        "--json",
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert!(out.stdout.is_empty());
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(err.contains("--vout") && err.contains("gain_peak"), "{err}");
    let reachable: f64 = err
        .split("reachable output is ")
        .nth(1)
        .and_then(|s| s.split(' ').next())
        .and_then(|s| s.parse().ok())
        .unwrap_or_else(|| panic!("no reachable output in {err}"));
    assert!((reachable - 48.34762521).abs() < 1e-3, "{reachable}");
}

#[test]
fn bad_input_names_the_flag() {
    for (flag, value) in [
        ("--inductance", "0"),
        ("--frequency", "-5"),
        ("--dcr", "-1"),
        ("--vin", "0"),
        ("--iout", "-1"),
        ("--min-off-time", "3u"),
    ] {
        let mut args = vec![
            "boost",
            "--vin",
            "5",
            "--vout",
            "12",
            "--iout",
            "0.5",
            "--inductance",
            "10u",
            "--frequency",
            "500k",
        ];
        if let Some(i) = args.iter().position(|a| *a == flag) {
            args[i + 1] = value;
        } else {
            args.extend([flag, value]);
        }
        args.push("--json");
        let out = lenz(&args);
        assert_eq!(out.status.code(), Some(2), "{flag} {value}");
        assert!(out.stdout.is_empty());
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(err.lines().count(), 1, "{err}");
        assert!(err.contains(flag), "{flag}: {err}");
    }
}

#[test]
fn human_output_shows_the_caution() {
    let out = lenz(HEATER);
    assert!(out.status.success());
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(
        text.contains("CAUTION") && text.contains("gain_peak"),
        "{text}"
    );
}

#[test]
fn output_below_the_input_is_refused_with_the_lowest_output() {
    // Common practice, no source: at zero duty a boost stage passes its input less the diode
    // drop (5 V − 0.35 V = 4.65 V); it cannot make less.
    let out = lenz(&[
        "boost",
        "--vin",
        "5",
        "--vout",
        "3",
        "--iout",
        "1",
        "--inductance",
        "10u",
        "--frequency",
        "500k",
        "--diode-drop",
        "0.35",
        "--json",
    ]);
    assert_eq!(out.status.code(), Some(2));
    assert!(out.stdout.is_empty());
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(
        err.contains("--vout") && err.contains("reachable output is 4.6500 V"),
        "{err}"
    );
}
