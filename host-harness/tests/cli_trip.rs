//! `lenz trip-time` and `lenz trip-threshold` from outside: the documented interface, JSON
//! keys, values and exit codes. Expected values are from the trip section of the project's
//! reference sheet, with their sources named beside each.

mod common;
use common::{assert_exit2, close, json, lenz, num};

fn trip_time(curve: &str, pickup: &str, tms: &str, current: &str) -> f64 {
    let v = json(&[
        "trip-time",
        "--curve",
        curve,
        "--pickup",
        pickup,
        "--multiplier",
        tms,
        "--current",
        current,
        "--json",
    ]);
    num(&v, "trip_time_s")
}

#[test]
fn trip_time_demo_case() {
    // IEC VI, Is 2.5 A, TMS 0.05, I 10 A: 0.225 s (IEC 60255-151:2009 type B constants).
    assert!(close(trip_time("iec-vi", "2.5", "0.05", "10"), 0.225, 1e-5));
}

#[test]
fn trip_time_curve_table() {
    // TMS = TD = 1, pickup 1 A; tabulated trip times (4 decimals) at M = 2, 5, 10.
    // IEC SI/VI/EI: IEC 60255-151:2009 types A–C; LTI: relay-manual long-time inverse
    // (not an IEC 60255-151 type); IEEE MI/VI/EI: IEEE Std C37.112-1996 (IEC 60255-151 D–F).
    let table: [(&str, [f64; 3]); 7] = [
        ("iec-si", [10.0290, 4.2797, 2.9706]),
        ("iec-vi", [13.5000, 3.3750, 1.5000]),
        ("iec-ei", [26.6667, 3.3333, 0.8081]),
        ("iec-lti", [120.0000, 30.0000, 13.3333]),
        ("ieee-mi", [3.8032, 1.6883, 1.2068]),
        ("ieee-vi", [7.0277, 1.3081, 0.6891]),
        ("ieee-ei", [9.5217, 1.2967, 0.4065]),
    ];
    for (curve, want) in table {
        for (m, w) in ["2", "5", "10"].iter().zip(want) {
            let t = trip_time(curve, "1", "1", m);
            // Published to 4 decimals: half a unit of the last digit.
            assert!(
                (t - w).abs() <= 5.5e-5 + 2e-5 * w,
                "{curve} M={m}: {t} vs {w}"
            );
        }
    }
}

#[test]
fn trip_time_never_trips_at_or_below_pickup() {
    for current in ["2.5", "1", "0"] {
        assert_exit2(
            &[
                "trip-time",
                "--curve",
                "ieee-mi",
                "--pickup",
                "2.5",
                "--multiplier",
                "1",
                "--current",
                current,
                "--json",
            ],
            "never trips",
        );
    }
    assert_exit2(
        &[
            "trip-time",
            "--curve",
            "iec-nope",
            "--pickup",
            "2.5",
            "--multiplier",
            "1",
            "--current",
            "5",
        ],
        "--curve",
    );
    assert_exit2(
        &[
            "trip-time",
            "--curve",
            "iec-si",
            "--pickup",
            "-1",
            "--multiplier",
            "1",
            "--current",
            "5",
        ],
        "--pickup",
    );
}

#[test]
fn trip_time_human_output_names_the_lti_origin() {
    let out = lenz(&[
        "trip-time",
        "--curve",
        "iec-lti",
        "--pickup",
        "1",
        "--multiplier",
        "1",
        "--current",
        "3",
    ]);
    assert!(out.status.success());
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("60.00 s"), "{text}");
    assert!(text.contains("not one of the six"), "{text}");
    assert!(text.contains("CAUTION"), "{text}");
}

#[test]
fn trip_threshold_motor_line() {
    // Vent motor line: I_abs 30 A, 12 V over L_min 2 µH, 2 µs: 30 − 6 A/µs · 2 µs = 18 A
    // (threshold rule, common practice, no source). Normal peak: stall 10 A.
    let v = json(&[
        "trip-threshold",
        "--limit",
        "30",
        "--supply",
        "12",
        "--inductance",
        "2u",
        "--delay",
        "2us",
        "--normal-peak",
        "10",
        "--json",
    ]);
    assert!(close(num(&v, "threshold_a"), 18.0, 1e-5));
    assert!(close(num(&v, "rise_during_delay_a"), 12.0, 1e-5));
    assert!(close(num(&v, "peak_at_interrupt_a"), 30.0, 1e-5));
    assert!(close(num(&v, "margin_a"), 8.0, 1e-5));
    // Without --normal-peak there is no margin.
    let v = json(&[
        "trip-threshold",
        "--limit",
        "30",
        "--supply",
        "12",
        "--inductance",
        "2u",
        "--delay",
        "2us",
        "--json",
    ]);
    assert!(v.get("margin_a").is_none(), "{v}");
}

#[test]
fn trip_threshold_adds_one_sample_period() {
    // 1 µs delay plus a 1 µs sample period is the same 2 µs worst case: 18 A.
    let v = json(&[
        "trip-threshold",
        "--limit",
        "30",
        "--supply",
        "12",
        "--inductance",
        "2u",
        "--delay",
        "1us",
        "--sample-period",
        "1us",
        "--json",
    ]);
    assert!(close(num(&v, "threshold_a"), 18.0, 1e-5));
    assert!(close(num(&v, "rise_during_delay_a"), 12.0, 1e-5));
}

#[test]
fn trip_threshold_nothing_fits() {
    // 3 µs worst case: 30 − 18 = 12 A, below the 15 A normal peak.
    let err = assert_exit2(
        &[
            "trip-threshold",
            "--limit",
            "30",
            "--supply",
            "12",
            "--inductance",
            "2u",
            "--delay",
            "2us",
            "--sample-period",
            "1us",
            "--normal-peak",
            "15",
            "--json",
        ],
        "no threshold fits",
    );
    assert!(err.contains("2.500 µs"), "longest delay that fits: {err}");
    assert!(err.contains("comparator"), "{err}");
    assert!(err.contains("inductance"), "{err}");
    // A delay so long the current passes the limit from zero.
    assert_exit2(
        &[
            "trip-threshold",
            "--limit",
            "30",
            "--supply",
            "12",
            "--inductance",
            "2u",
            "--delay",
            "1ms",
        ],
        "no threshold fits",
    );
    assert_exit2(
        &[
            "trip-threshold",
            "--limit",
            "30",
            "--supply",
            "0",
            "--inductance",
            "2u",
            "--delay",
            "1us",
        ],
        "--supply",
    );
}
