//! `lenz sim` from outside: every shipped scenario passes; exit codes 0 (all hold), 1 (a
//! property fails), 2 (bad input, one line on stderr, nothing on stdout); the CSV, SVG and
//! JUnit outputs.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn lenz(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_lenz"))
        .args(args)
        .output()
        .expect("lenz runs")
}

fn scenarios() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("scenarios")
}

fn shipped() -> Vec<PathBuf> {
    let mut v: Vec<PathBuf> = std::fs::read_dir(scenarios())
        .expect("scenarios folder")
        .map(|e| e.expect("entry").path())
        .filter(|p| p.extension().is_some_and(|x| x == "toml"))
        .collect();
    v.sort();
    v
}

fn tmp(name: &str) -> PathBuf {
    let d = Path::new(env!("CARGO_TARGET_TMPDIR")).join(name);
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).expect("temp dir");
    d
}

fn s(p: &Path) -> &str {
    p.to_str().expect("utf-8 path")
}

#[test]
fn every_shipped_scenario_passes() {
    let files = shipped();
    assert!(files.len() >= 2, "valve and relay at least: {files:?}");
    for f in &files {
        let out = lenz(&["sim", s(f), "--json"]);
        let v: serde_json::Value = serde_json::from_slice(&out.stdout)
            .unwrap_or_else(|e| panic!("{f:?}: {e}: {}", String::from_utf8_lossy(&out.stderr)));
        assert_eq!(out.status.code(), Some(0), "{f:?}: {v:#}");
        assert_eq!(v["passed"], true);
        let scs = v["scenarios"].as_array().expect("scenarios");
        assert!(!scs.is_empty());
        for sc in scs {
            let props = sc["properties"].as_array().expect("properties");
            assert!(!props.is_empty(), "{sc}");
            for p in props {
                assert_eq!(p["pass"], true, "{f:?}: {p}");
                let (val, lim) = (p["value"].as_f64(), p["limit"].as_f64());
                assert!(val.is_some() && lim.is_some(), "{p}");
                assert!(val <= lim, "{p}");
            }
        }
    }
}

#[test]
fn a_failing_property_exits_1_and_shows_in_junit() {
    let dir = tmp("sim-fail");
    let text = std::fs::read_to_string(scenarios().join("valve.toml")).expect("valve");
    // Demand a switch voltage the freewheel clamp cannot keep below: 24.7 V at switch-off.
    let bad = text.replacen(
        "property = \"peak-switch-voltage\"\nmax = \"60V\"",
        "property = \"peak-switch-voltage\"\nmax = \"20V\"",
        1,
    );
    assert_ne!(bad, text);
    let file = dir.join("tight.toml");
    std::fs::write(&file, bad).expect("write");
    let junit = dir.join("report/junit.xml");
    let out = lenz(&["sim", s(&file), "--junit", s(&junit)]);
    assert_eq!(out.status.code(), Some(1));
    let table = String::from_utf8_lossy(&out.stdout);
    assert!(table.contains("FAIL"), "{table}");
    assert!(table.contains("1 properties do not hold"), "{table}");
    let xml = std::fs::read_to_string(&junit).expect("junit written");
    assert!(xml.starts_with("<?xml"));
    assert!(xml.contains("failures=\"1\""), "{xml}");
    assert!(xml.contains(&format!(
        "<testcase classname=\"{}: two open-close cycles\" name=\"peak_switch_voltage\" \
         file=\"{}\" time=\"0\">",
        s(&file),
        s(&file)
    )));
    assert!(
        xml.contains("<failure message=\"peak_switch_voltage = 24.7"),
        "{xml}"
    );
    let cases = xml.matches("<testcase ").count();
    let passing_json = lenz(&["sim", s(&file), "--json"]);
    let v: serde_json::Value = serde_json::from_slice(&passing_json.stdout).expect("json");
    let props: usize = v["scenarios"]
        .as_array()
        .expect("scenarios")
        .iter()
        .map(|sc| sc["properties"].as_array().map_or(0, Vec::len))
        .sum();
    assert_eq!(cases, props, "one test case per scenario and property");
    assert_eq!(v["passed"], false);
}

#[test]
fn bad_input_exits_2_with_one_line() {
    let dir = tmp("sim-bad");
    let text = std::fs::read_to_string(scenarios().join("valve.toml")).expect("valve");
    let file = dir.join("bad.toml");
    std::fs::write(
        &file,
        text.replacen("hold_duty = 0.45", "hold_duty = 1.45", 1),
    )
    .expect("write");
    for args in [
        vec!["sim", s(&file)],
        vec!["sim", "no/such/file.toml"],
        vec!["sim"],
        vec!["sim", s(&file), "--replay", "7"],
    ] {
        let out = lenz(&args);
        assert_eq!(out.status.code(), Some(2), "{args:?}");
        assert!(out.stdout.is_empty(), "{args:?}");
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(err.trim_end().lines().count(), 1, "{err}");
    }
    let out = lenz(&["sim", s(&file)]);
    let err = String::from_utf8_lossy(&out.stderr);
    let line = text[..text.find("[controller.coil]").expect("table")]
        .matches('\n')
        .count()
        + 1;
    assert!(err.contains("bad.toml:"), "{err}");
    assert!(
        err.contains("key `controller.coil.hold_duty`: 1.45 is above 1"),
        "{err}"
    );
    // The controller table's header is the reported position (a check across its values).
    assert!(err.contains(&format!("bad.toml:{line}:")), "{err}");
}

#[test]
fn csv_and_plots() {
    let dir = tmp("sim-out");
    let valve = scenarios().join("valve.toml");
    let (csv, plot) = (dir.join("csv"), dir.join("plot"));
    let out = lenz(&["sim", s(&valve), "--csv", s(&csv), "--plot", s(&plot)]);
    assert_eq!(out.status.code(), Some(0));
    let c = std::fs::read_to_string(csv.join("valve--two-open-close-cycles.csv")).expect("csv");
    let mut lines = c.lines();
    assert_eq!(
        lines.next(),
        Some("t_s,current_a,estimate_a,switch_v,output_v,supply_v,drive,armature_gap_m")
    );
    // 220 ms at a 100 µs tick.
    assert_eq!(lines.clone().count(), 2200);
    let column = |k: usize| {
        lines
            .clone()
            .filter_map(move |l| l.split(',').nth(k)?.parse::<f64>().ok())
    };
    // The pull-in peak comes before the plunger's dip: the driver switches to hold when its
    // detector sees the seating, well below the 0.74 A a full pull-in would reach.
    let peak = column(1).fold(0.0, f64::max);
    assert!(peak > 0.45 && peak < 0.6, "pull-in peak {peak} A");
    // The plunger's gap between its stops (0.05 mm seated, 1.2 mm open), both visited.
    let (lo, hi) = column(7).fold((f64::INFINITY, 0.0f64), |(a, b), x| (a.min(x), b.max(x)));
    assert!(
        (lo - 0.05e-3).abs() < 1e-9 && (hi - 1.2e-3).abs() < 1e-9,
        "{lo} {hi}"
    );
    let svg =
        std::fs::read_to_string(plot.join("valve--shorted-turns-while-holding.svg")).expect("svg");
    assert!(svg.starts_with("<svg"));
    for text in [
        "coil current and the firmware",
        "estimate",
        "switch voltage",
        "output voltage",
        // The trip mark carries its cause when the firmware reports one ("trip: …").
        "\ntrip",
        "\nfault\n",
    ] {
        assert!(svg.contains(text), "plot has {text:?}");
    }
}

#[test]
fn replay_uses_the_sweep_parameters() {
    let valve = scenarios().join("valve.toml");
    let out = lenz(&["sim", s(&valve), "--replay", "7:3", "--json"]);
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).expect("json");
    assert_eq!(v["replay"]["seed"], 7);
    assert_eq!(v["replay"]["index"], 3);
    let l = v["replay"]["params"]["inductance"].as_f64().expect("L");
    assert!(
        l != 1.0 && (l - 1.0).abs() <= 0.1 + 1e-12,
        "L ×{l} within ±3σ = ±10 %"
    );
    let nominal = lenz(&["sim", s(&valve), "--json"]);
    assert_ne!(
        out.stdout, nominal.stdout,
        "other part values, other measurements"
    );
}

#[test]
fn several_files_in_one_table() {
    let (v, r) = (
        scenarios().join("valve.toml"),
        scenarios().join("relay.toml"),
    );
    let out = lenz(&["sim", s(&v), s(&r)]);
    assert_eq!(out.status.code(), Some(0));
    let t = String::from_utf8_lossy(&out.stdout);
    assert!(
        t.contains("File") && t.contains("valve.toml") && t.contains("relay.toml"),
        "{t}"
    );
    assert!(t.contains("All properties hold (11 scenarios)."), "{t}");
    assert!(t.contains("CAUTION"));
}
