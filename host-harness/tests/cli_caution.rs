//! The caution paragraph is shown once per run, after the last table, by every command that
//! prints results for people (quick calculations with single values and with ranges, plan,
//! sim, sweep, demo), and never in `--json` output.

mod common;

use std::path::Path;

use common::lenz;

const CAUTION: &str = "CAUTION: switching an inductive load off";
const MOTOR_CAUTION: &str = "CAUTION: a motor draws";

fn valve() -> String {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("scenarios/valve.toml")
        .to_str()
        .expect("utf-8")
        .to_string()
}

fn runs() -> Vec<Vec<String>> {
    let v = valve();
    let demo_out = Path::new(env!("CARGO_TARGET_TMPDIR")).join("caution-demo");
    let coil = "coil --inductance 120m --resistance 32 --supply 24";
    let turnoff = "turnoff --inductance 120m --resistance 32 --current 0.75 --clamp zener:33:0.7";
    let boost = "boost --vin 5 --vout 12 --iout 0.5 --inductance 10u --frequency 500k";
    let trip_time = "trip-time --curve iec-si --pickup 1 --multiplier 0.1 --current 5";
    let trip_threshold = "trip-threshold --limit 20 --supply 13.2 --inductance 100u --delay 10u";
    let motor = "motor --supply 12 --resistance 1.5 --inductance 2m --torque-constant 0.03";
    let mut all: Vec<Vec<String>> = [coil, turnoff, boost, trip_time, trip_threshold, motor]
        .iter()
        .map(|s| s.split(' ').map(String::from).collect())
        .collect();
    // The same with a range on the first numeric flag.
    for (cmd, flag, range) in [
        (coil, "--supply", "21.6..26.4"),
        (turnoff, "--current", "0.5..0.8"),
        (boost, "--vin", "4.5..5.5"),
        (trip_time, "--current", "5..10"),
        (trip_threshold, "--supply", "10.8..13.2"),
        (motor, "--supply", "12±10%"),
    ] {
        let mut a: Vec<String> = cmd.split(' ').map(String::from).collect();
        let k = a.iter().position(|x| x == flag).expect("flag") + 1;
        a[k] = range.to_string();
        all.push(a);
    }
    all.push(vec!["plan".into(), v.clone()]);
    all.push(vec!["sim".into(), v.clone()]);
    all.push(vec![
        "sweep".into(),
        v,
        "--runs".into(),
        "4".into(),
        "--seed".into(),
        "3".into(),
    ]);
    all.push(vec![
        "demo".into(),
        "--out".into(),
        demo_out.to_str().expect("utf-8").into(),
    ]);
    all
}

#[test]
fn the_caution_is_shown_once_after_the_last_table() {
    for args in runs() {
        let a: Vec<&str> = args.iter().map(String::as_str).collect();
        let out = lenz(&a);
        assert_eq!(out.status.code(), Some(0), "{args:?}");
        let text = String::from_utf8_lossy(&out.stdout);
        assert_eq!(text.matches(CAUTION).count(), 1, "{args:?}:\n{text}");
        let motor = usize::from(args[0] == "motor");
        assert_eq!(text.matches(MOTOR_CAUTION).count(), motor, "{args:?}");
        let caution = text.find(CAUTION).expect("caution");
        let last_table = text.rfind('└').expect("a table");
        assert!(
            caution > last_table,
            "{args:?}: the caution follows every table"
        );
    }
}

#[test]
fn json_output_carries_no_caution() {
    for mut args in runs() {
        if args[0] == "demo" {
            args.truncate(1);
        }
        args.push("--json".into());
        let a: Vec<&str> = args.iter().map(String::as_str).collect();
        let out = lenz(&a);
        assert_eq!(out.status.code(), Some(0), "{args:?}");
        let text = String::from_utf8_lossy(&out.stdout);
        assert!(!text.contains("CAUTION"), "{args:?}");
        serde_json::from_str::<serde_json::Value>(&text).expect("one JSON value");
    }
}
