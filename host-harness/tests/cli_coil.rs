//! `lenz coil` from outside: the documented interface, JSON keys, values and exit codes.

mod common;
use common::{close, json, lenz, num};

/// Exit code 2, exactly one line on stderr mentioning `flag`, nothing on stdout.
fn assert_bad(args: &[&str], flag: &str) {
    let out = lenz(args);
    assert_eq!(out.status.code(), Some(2), "{args:?}");
    assert!(out.stdout.is_empty(), "stdout must be empty for {args:?}");
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(err.trim_end().lines().count(), 1, "one line: {err}");
    assert!(err.contains(flag), "'{err}' must name {flag}");
}

#[test]
fn reference_coil_json() {
    // CHECKS C1.1 (computed; first-order step table RLT): 40 mH, 24 Ω, 12 V.
    let v = json(&[
        "coil",
        "--inductance",
        "40m",
        "--resistance",
        "24",
        "--supply",
        "12",
        "--at",
        "1.666666667ms",
        "--target-current",
        "250mA",
        "--json",
    ]);
    assert!(close(num(&v, "tau_s"), 1.666666667e-3, 1e-6));
    assert!(close(num(&v, "steady_current_a"), 0.5, 1e-6));
    assert!(close(num(&v, "current_at_a"), 0.3160602794, 1e-5));
    assert!(close(num(&v, "time_to_target_s"), 1.155245301e-3, 1e-5));
    // Keys only present when asked for.
    let v = json(&[
        "coil",
        "--inductance",
        "40mH",
        "--resistance",
        "24",
        "--supply",
        "12",
        "--json",
    ]);
    assert!(v.get("current_at_a").is_none() && v.get("time_to_target_s").is_none());
}

#[test]
fn temperature_and_initial_current() {
    // CHECKS C1.5 demo relay at 85 °C (computed): pull-in to 75 mA in 5.655791491 ms.
    let v = json(&[
        "coil",
        "--inductance",
        "300m",
        "--resistance",
        "120",
        "--supply",
        "12",
        "--temperature",
        "85",
        "--target-current",
        "75m",
        "--json",
    ]);
    assert!(close(num(&v, "time_to_target_s"), 5.655791491e-3, 1e-4));
    // Negative temperature and a non-zero initial current: from 0.2 A at -40 °C towards
    // 12 V / 91.704 Ω = 130.856 mA (falling), CHECKS C1.5 resistance.
    let v = json(&[
        "coil",
        "--inductance",
        "0.3",
        "--resistance",
        "120",
        "--supply",
        "12",
        "--temperature",
        "-40",
        "--initial-current",
        "0.2",
        "--at",
        "1m",
        "--json",
    ]);
    let r = 91.704;
    let want = 12.0 / r + (0.2 - 12.0 / r) * (-1e-3 * r / 0.3f64).exp();
    assert!(close(num(&v, "current_at_a"), want, 1e-4));
}

#[test]
fn bad_and_unreachable_input() {
    let base = [
        "coil",
        "--inductance",
        "40m",
        "--resistance",
        "24",
        "--supply",
        "12",
    ];
    let with = |extra: &[&'static str]| -> Vec<&'static str> {
        base.iter().copied().chain(extra.iter().copied()).collect()
    };
    // Unreachable target: names the flag and reports the steady current 0.5 A with its unit
    // and four significant digits.
    let args = with(&["--target-current", "0.6"]);
    assert_bad(&args, "--target-current");
    let err = String::from_utf8_lossy(&lenz(&args).stderr).to_string();
    assert!(err.contains("500.0 mA"), "{err}");
    // A resistance that gives a steady current beyond the plan's range names the flags typed,
    // never the internal `current_a`.
    let args = [
        "coil",
        "--inductance",
        "120m",
        "--resistance",
        "1µ",
        "--supply",
        "24",
    ];
    assert_bad(&args, "--resistance");
    let err = String::from_utf8_lossy(&lenz(&args).stderr).to_string();
    assert!(!err.contains("current_a"), "{err}");
    assert!(err.contains("--supply 24.00 V"), "{err}");
    assert_bad(
        &[
            "coil",
            "--inductance",
            "-1",
            "--resistance",
            "24",
            "--supply",
            "12",
        ],
        "--inductance",
    );
    assert_bad(
        &[
            "coil",
            "--inductance",
            "40q",
            "--resistance",
            "24",
            "--supply",
            "12",
        ],
        "--inductance",
    );
    assert_bad(
        &["coil", "--inductance", "40m", "--supply", "12"],
        "--resistance",
    );
    assert_bad(&with(&["--temperature", "900"]), "--temperature");
    assert_bad(&with(&["--at", "-1"]), "--at");
    assert_bad(
        &[
            "coil",
            "--inductance",
            "nan",
            "--resistance",
            "24",
            "--supply",
            "12",
        ],
        "--inductance",
    );
}

#[test]
fn human_output_has_table_and_caution() {
    let out = lenz(&[
        "coil",
        "--inductance",
        "120m",
        "--resistance",
        "32",
        "--supply",
        "24",
    ]);
    assert!(out.status.success());
    let s = String::from_utf8_lossy(&out.stdout);
    assert!(s.contains("Time constant") && s.contains("3.750 ms"), "{s}");
    assert!(s.contains("CAUTION"), "{s}");
}

#[test]
fn demo_prints_worst_case_plan() {
    let report = std::path::Path::new(env!("CARGO_TARGET_TMPDIR")).join("demo-plan-report");
    let out = lenz(&["demo", "--out", report.to_str().unwrap()]);
    assert!(out.status.success());
    let s = String::from_utf8_lossy(&out.stdout);
    for needle in [
        "irrigation valve",
        "vent relay",
        "pull-in time",
        "stored energy",
        "invented",
    ] {
        assert!(s.contains(needle), "demo output lacks '{needle}'");
    }
    // The relay's longest pull-in: 11.4 V, 70 °C, L +10 %, R +5 %, with the loop of relay.toml
    // (switch 0.1 Ω, source 0.2 Ω, shunt 100 mΩ) in series (closed form, computed here).
    let v: serde_json::Value = serde_json::from_slice(&lenz(&["demo", "--json"]).stdout).unwrap();
    let relay_pull_in = v
        .as_array()
        .unwrap()
        .iter()
        .find(|f| f["coil"].as_str().unwrap().contains("relay") && f["figure"] == "pull-in time")
        .unwrap();
    let r: f64 = 126.0 * (1.0 + 0.00393 * 50.0) + 0.4;
    let i_inf = 11.4 / r;
    let want = 0.33 / r * (i_inf / (i_inf - 0.075)).ln();
    assert!(close(
        relay_pull_in["bound"]["max"].as_f64().unwrap(),
        want,
        1e-3
    ));
}
