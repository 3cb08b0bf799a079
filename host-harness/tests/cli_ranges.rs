//! Quick calculations with ranges and tolerances, from outside: every figure's `min` and `max`
//! against single-value runs of the same command at the reported corners and at every corner of
//! the box, a closed form for the coil, the forms `MIN..MAX`, `NOMINAL±TOL%`, `NOMINAL+-TOL%`
//! and `NOMINAL±TOL`, and bad ranges (exit 2 naming the flag).

mod common;

use common::{assert_exit2, close, json, lenz};
use serde_json::Value;

/// A ranged run: the arguments without the ranged flags, and the ranged flags as typed.
struct Case {
    base: &'static [&'static str],
    ranged: &'static [(&'static str, &'static str)],
    /// The ends of each range, in the flag's base unit.
    ends: &'static [(f64, f64)],
}

impl Case {
    fn ranged_args(&self) -> Vec<String> {
        let mut v: Vec<String> = self.base.iter().map(|s| s.to_string()).collect();
        for (flag, text) in self.ranged {
            v.push(format!("--{flag}"));
            v.push((*text).to_string());
        }
        v.push("--json".into());
        v
    }

    /// The single-value run with each ranged flag at `values`.
    fn point_args(&self, values: &[f64]) -> Vec<String> {
        let mut v: Vec<String> = self.base.iter().map(|s| s.to_string()).collect();
        for ((flag, _), x) in self.ranged.iter().zip(values) {
            v.push(format!("--{flag}={x}"));
        }
        v.push("--json".into());
        v
    }

    fn run(args: &[String]) -> Value {
        let a: Vec<&str> = args.iter().map(String::as_str).collect();
        json(&a)
    }

    /// Every corner of the box.
    fn corners(&self) -> Vec<Vec<f64>> {
        let n = self.ends.len();
        (0..1usize << n)
            .map(|mask| {
                self.ends
                    .iter()
                    .enumerate()
                    .map(|(k, (lo, hi))| if mask >> k & 1 == 1 { *hi } else { *lo })
                    .collect()
            })
            .collect()
    }

    /// Checks every numeric figure of the ranged run against single-value runs: the value at
    /// the reported corner is the reported bound, and no corner of the box lies outside
    /// `min ..= max`. Returns the ranged report.
    fn check(&self) -> Value {
        let ranged = Self::run(&self.ranged_args());
        let obj = ranged.as_object().expect("a JSON object");
        let corner_values = |at: &Value| -> Vec<f64> {
            self.ranged
                .iter()
                .map(|(flag, _)| {
                    at[flag]
                        .as_f64()
                        .unwrap_or_else(|| panic!("{flag} in {at}"))
                })
                .collect()
        };
        let corners: Vec<Value> = self
            .corners()
            .iter()
            .map(|c| Self::run(&self.point_args(c)))
            .collect();
        let mut numbers = 0;
        for (key, v) in obj {
            let Some(min) = v.get("min").and_then(Value::as_f64) else {
                // Not a number: the same value at every corner, or a list of values.
                for c in &corners {
                    match v {
                        Value::Array(values) => assert!(values.contains(&c[key]), "{key}"),
                        single => assert_eq!(single, &c[key], "{key}"),
                    }
                }
                continue;
            };
            numbers += 1;
            let max = v["max"].as_f64().expect("max");
            assert!(min <= max, "{key}: {min} > {max}");
            for (end, bound) in [("min_at", min), ("max_at", max)] {
                let at = Self::run(&self.point_args(&corner_values(&v[end])));
                assert_eq!(
                    at[key].as_f64(),
                    Some(bound),
                    "{key}: the single-value run at {end} {} gives the bound",
                    v[end]
                );
            }
            for (c, out) in self.corners().iter().zip(&corners) {
                let x = out[key].as_f64().expect("a number at every corner");
                assert!(
                    min <= x && x <= max,
                    "{key} = {x} at corner {c:?} lies outside {min} ..= {max}"
                );
            }
        }
        assert!(numbers >= 3, "{ranged}");
        ranged
    }
}

const COIL: Case = Case {
    base: &["coil", "--resistance", "30"],
    ranged: &[
        ("inductance", "45m±10%"),
        ("supply", "10.8..13.2"),
        ("temperature", "-20..85"),
    ],
    ends: &[(0.0405, 0.0495), (10.8, 13.2), (-20.0, 85.0)],
};

#[test]
fn coil_bounds_are_single_runs_at_their_corners() {
    let v = COIL.check();
    // Closed form (copper α20 = 0.00393 /K, IEC28; computed): the highest steady current at the
    // highest supply with the coldest winding, the lowest at the lowest supply with the hottest.
    let r = |t: f64| 30.0 * (1.0 + 0.00393 * (t - 20.0));
    let i = &v["steady_current_a"];
    assert!(
        close(i["max"].as_f64().unwrap(), 13.2 / r(-20.0), 1e-5),
        "{i}"
    );
    assert!(
        close(i["min"].as_f64().unwrap(), 10.8 / r(85.0), 1e-5),
        "{i}"
    );
    assert_eq!(i["max_at"]["supply"].as_f64(), Some(13.2));
    assert_eq!(i["max_at"]["temperature"].as_f64(), Some(-20.0));
    // τ = L/R(T): largest with the most inductance and the coldest winding.
    let tau = &v["tau_s"];
    assert!(
        close(tau["max"].as_f64().unwrap(), 0.0495 / r(-20.0), 1e-5),
        "{tau}"
    );
    assert_eq!(tau["max_at"]["inductance"].as_f64(), Some(0.0495));
}

#[test]
fn the_ascii_and_absolute_tolerances_give_the_same_box() {
    let base = ["coil", "--resistance", "30", "--supply", "12", "--json"];
    let with = |l: &'static str| -> Value {
        let mut a = base.to_vec();
        a.extend(["--inductance", l]);
        json(&a)
    };
    let unicode = with("45m±10%");
    assert_eq!(with("45m+-10%"), unicode);
    assert_eq!(with("45mH±4.5m"), unicode);
    assert_eq!(with("40.5m..49.5m"), unicode);
    assert_eq!(
        unicode["tau_s"]["min_at"]["inductance"].as_f64(),
        Some(0.0405)
    );
}

#[test]
fn turnoff_bounds_are_single_runs_at_their_corners() {
    Case {
        base: &[
            "turnoff",
            "--resistance",
            "32",
            "--clamp",
            "zener:33:0.7",
            "--release-current",
            "75m",
        ],
        ranged: &[("inductance", "120m±10%"), ("current", "0.5..0.8")],
        ends: &[(0.108, 0.132), (0.5, 0.8)],
    }
    .check();
}

#[test]
fn boost_bounds_include_an_interior_ripple_peak() {
    let case = Case {
        base: &[
            "boost",
            "--vout",
            "12",
            "--frequency",
            "500k",
            "--diode-drop",
            "0.35",
            "--dcr",
            "40m",
            "--cout",
            "22u",
        ],
        ranged: &[
            ("vin", "4.5..5.5"),
            ("iout", "0.05..0.5"),
            ("inductance", "10u±20%"),
        ],
        ends: &[(4.5, 5.5), (0.05, 0.5), (8e-6, 12e-6)],
    };
    let v = case.check();
    // The ripple current peaks where the stage leaves DCM, inside the load range: above every
    // corner, at an interior load.
    let ripple = &v["ripple_current_a"];
    let iout = ripple["max_at"]["iout"].as_f64().unwrap();
    assert!(iout > 0.05 && iout < 0.5, "{ripple}");
    let corner_max = case
        .corners()
        .iter()
        .map(|c| {
            Case::run(&case.point_args(c))["ripple_current_a"]
                .as_f64()
                .unwrap()
        })
        .fold(f64::MIN, f64::max);
    assert!(
        ripple["max"].as_f64().unwrap() > corner_max,
        "{ripple} vs {corner_max}"
    );
    // The mode changes over the box, and both are listed.
    assert_eq!(v["mode"], serde_json::json!(["ccm", "dcm"]));
}

#[test]
fn trip_bounds_are_single_runs_at_their_corners() {
    let v = Case {
        base: &["trip-time", "--curve", "iec-si"],
        ranged: &[
            ("pickup", "1±5%"),
            ("multiplier", "0.1..0.2"),
            ("current", "5..10"),
        ],
        ends: &[(0.95, 1.05), (0.1, 0.2), (5.0, 10.0)],
    }
    .check();
    // IEC 60255-151 curve A (IEC151): t = TMS·0.14/((I/Is)^0.02 − 1); slowest at the smallest
    // multiple and the largest TMS.
    let slow = 0.2 * 0.14 / ((5.0f64 / 1.05).powf(0.02) - 1.0);
    assert!(
        close(v["trip_time_s"]["max"].as_f64().unwrap(), slow, 1e-4),
        "{v}"
    );
    Case {
        base: &["trip-threshold", "--limit", "20", "--delay", "10u"],
        ranged: &[("supply", "10.8..13.2"), ("inductance", "100u±20%")],
        ends: &[(10.8, 13.2), (80e-6, 120e-6)],
    }
    .check();
}

#[test]
fn motor_bounds_are_single_runs_at_their_corners() {
    Case {
        base: &[
            "motor",
            "--inductance",
            "2m",
            "--torque-constant",
            "0.03",
            "--inertia",
            "20u",
        ],
        ranged: &[("supply", "10.8..13.2"), ("resistance", "1.5±10%")],
        ends: &[(10.8, 13.2), (1.35, 1.65)],
    }
    .check();
}

#[test]
fn human_output_names_each_corner_and_ends_with_the_caution() {
    let out = lenz(&[
        "coil",
        "--resistance",
        "30",
        "--inductance",
        "45m±10%",
        "--supply",
        "10.8..13.2",
    ]);
    assert_eq!(out.status.code(), Some(0));
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.starts_with("lenz coil: worst case over --inductance 40.50 mH … 49.50 mH"));
    assert!(text.contains("steady current"), "{text}");
    assert!(
        text.contains("--inductance 40.50 mH, --supply 13.20 V"),
        "{text}"
    );
    assert!(text.trim_end().ends_with("licensed practice."), "{text}");
}

#[test]
fn bad_ranges_exit_2_naming_the_flag() {
    let coil = |flag: &'static str, value: &'static str| -> Vec<&'static str> {
        let mut a = vec!["coil"];
        for (f, v) in [
            ("--inductance", "45m"),
            ("--resistance", "30"),
            ("--supply", "12"),
        ] {
            if f != flag {
                a.extend([f, v]);
            }
        }
        a.extend([flag, value]);
        a
    };
    // Empty range, missing end, min above max, negative tolerance, a bad end.
    assert_exit2(
        &coil("--supply", "13.2..10.8"),
        "--supply: '13.2..10.8' is an empty range",
    );
    assert_exit2(&coil("--supply", ".."), "--supply: '..' is not a range");
    assert_exit2(&coil("--supply", "10.8.."), "--supply");
    assert_exit2(
        &coil("--inductance", "45m±-10%"),
        "--inductance: '45m±-10%' has a negative",
    );
    assert_exit2(&coil("--inductance", "45m+--10%"), "--inductance");
    assert_exit2(
        &coil("--inductance", "45x..50m"),
        "--inductance: '45x..50m' has a bad lower",
    );
    assert_exit2(&coil("--temperature", "-20..85k"), "--temperature");
    // A range whose corner the command rejects names the flag and the corner.
    let e = assert_exit2(&coil("--resistance", "-1..30"), "--resistance");
    assert!(e.contains("(at --resistance -1.000 Ω)"), "{e}");
    // Other commands name their flags the same way.
    assert_exit2(
        &[
            "boost",
            "--vin",
            "5..4",
            "--vout",
            "12",
            "--iout",
            "0.5",
            "--inductance",
            "10u",
            "--frequency",
            "500k",
        ],
        "--vin: '5..4' is an empty range",
    );
    assert_exit2(
        &[
            "trip-time",
            "--curve",
            "iec-si",
            "--pickup",
            "1±-5%",
            "--multiplier",
            "0.1",
            "--current",
            "5",
        ],
        "--pickup",
    );
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
            "0.03..",
            "--inertia",
            "20u",
        ],
        "--torque-constant",
    );
    assert_exit2(
        &[
            "turnoff",
            "--inductance",
            "120m",
            "--resistance",
            "32",
            "--current",
            "0.8..0.5",
            "--clamp",
            "diode:0.7",
        ],
        "--current",
    );
    // More than 8 ranged flags at once (at least 3^9 single-value runs) is refused.
    let e = assert_exit2(
        &[
            "boost",
            "--vin",
            "4.5..5.5",
            "--vout",
            "11..12",
            "--iout",
            "0.4..0.5",
            "--inductance",
            "10u±20%",
            "--frequency",
            "450k..550k",
            "--diode-drop",
            "0.3..0.4",
            "--dcr",
            "40m±20%",
            "--rds-on",
            "25m±20%",
            "--cout",
            "22u±20%",
        ],
        "at most 8 flags take ranges at once, 9 given",
    );
    assert!(e.contains("--vin") && e.contains("--cout"), "{e}");
    assert_exit2(
        &[
            "trip-threshold",
            "--limit",
            "20",
            "--supply",
            "13.2..10.8",
            "--inductance",
            "100u",
            "--delay",
            "10u",
        ],
        "--supply",
    );
}
