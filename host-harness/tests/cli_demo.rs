//! `lenz demo` from outside: the plan table, the demo scenarios, the report folder with an
//! index page linking every plot and waveform, and the final line naming where it is.

use std::path::Path;
use std::process::Command;

#[test]
fn demo_writes_the_report_folder() {
    let out_dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join("demo-report");
    let _ = std::fs::remove_dir_all(&out_dir);
    let out = Command::new(env!("CARGO_BIN_EXE_lenz"))
        .args(["demo", "--out", out_dir.to_str().expect("utf-8")])
        .output()
        .expect("lenz runs");
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8_lossy(&out.stdout);
    // The existing plan table comes first, then the plans and scenarios of the demo files.
    let plan = text.find("Worst-case coil plan").expect("plan table");
    let valve = text
        .find("valve.toml: demo scenarios in the closed loop")
        .expect("valve runs");
    let relay = text
        .find("relay.toml: demo scenarios in the closed loop")
        .expect("relay runs");
    let motor = text
        .find("motor.toml: demo scenarios in the closed loop")
        .expect("vent motor runs");
    assert!(plan < valve && valve < relay && relay < motor);
    let index = out_dir.join("index.html");
    let last = text.trim_end().lines().last().expect("a last line");
    assert_eq!(last, format!("Report written to {}", index.display()));
    let html = std::fs::read_to_string(&index).expect("index.html");
    // Every link of the page points at a file that exists or at a section of the page.
    let mut files = std::collections::BTreeSet::new();
    for part in html.split("href=\"").skip(1) {
        let target = part.split('"').next().expect("closing quote");
        if let Some(id) = target.strip_prefix('#') {
            assert!(
                html.contains(&format!("id=\"{id}\"")),
                "section {id} exists"
            );
        } else {
            assert!(out_dir.join(target).is_file(), "{target} exists");
            files.insert(target.to_string());
        }
    }
    // Every plot is also shown on the page.
    let mut images = 0;
    for part in html.split("<img src=\"").skip(1) {
        let target = part.split('"').next().expect("closing quote");
        assert!(out_dir.join(target).is_file(), "{target} exists");
        images += 1;
    }
    let links = files.len();
    let plots = std::fs::read_dir(out_dir.join("plots"))
        .expect("plots")
        .count();
    let csvs = std::fs::read_dir(out_dir.join("csv")).expect("csv").count();
    assert!(
        plots >= 10 && plots == csvs,
        "{plots} plots, {csvs} waveforms"
    );
    assert_eq!(
        links,
        plots + csvs + 2,
        "every plot, waveform, the JUnit file and the results linked"
    );
    let results: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out_dir.join("results.json")).expect("json"))
            .expect("valid JSON");
    assert_eq!(images, plots, "every plot shown inline");
    assert_eq!(results["scenarios"].as_array().map(Vec::len), Some(plots));
    assert_eq!(results["plans"].as_array().map(Vec::len), Some(4));
    assert!(html.contains("Worst-case plan") && html.contains("invented"));
}
