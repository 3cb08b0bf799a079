//! `lenz sim` never reports success for a scenario that simulates or measures nothing or whose
//! events would have no effect: each is exit 2 with `file:line:col`, the key and the reason.
//! A command takes effect at the first control tick at or after its time (tick 100 µs here).

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn lenz(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_lenz"))
        .args(args)
        .output()
        .expect("lenz runs")
}

/// The valve file's system, controller and tolerances, without its scenarios (tick 100 µs).
fn head() -> String {
    let text =
        std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("scenarios/valve.toml"))
            .expect("valve");
    assert!(
        text.contains("tick = \"100us\""),
        "the tests assume a 100 µs tick"
    );
    text[..text.find("[[scenario]]").expect("a scenario")].to_string()
}

/// One scenario with these events (`(at, command)`) and one check.
fn scenario(duration: &str, events: &[(&str, &str)], check: &str) -> String {
    let mut s = format!("[[scenario]]\nname = \"timing\"\nduration = \"{duration}\"\n");
    for (at, c) in events {
        s.push_str(&format!(
            "[[scenario.event]]\nat = \"{at}\"\ncommand = \"{c}\"\n"
        ));
    }
    s.push_str(check);
    s
}

const PEAK: &str = "[[scenario.check]]\nproperty = \"peak-current\"\nmax = \"2A\"\n";
const RELEASE: &str = "[[scenario.check]]\nproperty = \"release-time\"\nmax = \"30ms\"\n";

fn file(name: &str, body: &str) -> (PathBuf, String) {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR")).join("sim-timing");
    std::fs::create_dir_all(&dir).expect("dir");
    let text = format!("{}{body}", head());
    let p = dir.join(format!("{name}.toml"));
    std::fs::write(&p, &text).expect("write");
    (p, text)
}

/// Line of the `n`-th occurrence of `needle` in the scenario of `text` (from 1).
fn line_of(text: &str, needle: &str, n: usize) -> usize {
    let from = text.find("name = \"timing\"").expect("the scenario");
    let at = from
        + text[from..]
            .match_indices(needle)
            .nth(n)
            .map(|(i, _)| i)
            .expect("needle");
    text[..at].matches('\n').count() + 1
}

/// Runs the file, expects exit 2 naming `key` at `line` with `reason` in the message.
fn rejected(name: &str, body: &str, line: impl Fn(&str) -> usize, key: &str, reason: &str) {
    let (p, text) = file(name, body);
    let out = lenz(&["sim", p.to_str().expect("utf-8")]);
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{name}: {err}");
    assert!(out.stdout.is_empty(), "{name}");
    let at = format!("{name}.toml:{}:1: key `{key}`: ", line(&text));
    assert!(err.contains(&at), "{name}: wanted {at:?} in {err}");
    assert!(err.contains(reason), "{name}: wanted {reason:?} in {err}");
}

#[test]
fn a_scenario_shorter_than_one_tick_is_rejected() {
    rejected(
        "short",
        &scenario("50us", &[], PEAK),
        |t| line_of(t, "name = \"timing\"", 0),
        "scenario[0].duration",
        "shorter than one control tick",
    );
}

#[test]
fn an_on_and_an_off_within_one_tick_lose_the_on() {
    // 5.01 ms and 5.08 ms both take effect at the tick of 5.1 ms.
    rejected(
        "lost",
        &scenario("20ms", &[("5.01ms", "on"), ("5.08ms", "off")], PEAK),
        |t| line_of(t, "[[scenario.event]]", 0),
        "scenario[0].event[0].command",
        "is lost",
    );
    // One tick apart, both are seen.
    let (p, _) = file(
        "one-tick-apart",
        &scenario("20ms", &[("5.01ms", "on"), ("5.11ms", "off")], PEAK),
    );
    let out = lenz(&["sim", p.to_str().expect("utf-8"), "--json"]);
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).expect("json");
    let events: Vec<&str> = v["scenarios"][0]["events"]
        .as_array()
        .expect("events")
        .iter()
        .filter_map(|e| e["what"].as_str())
        .collect();
    assert_eq!(events, ["demand on", "demand off"]);
    let t: Vec<f64> = v["scenarios"][0]["events"]
        .as_array()
        .expect("events")
        .iter()
        .filter_map(|e| e["t_s"].as_f64())
        .collect();
    assert!(
        (t[0] - 5.1e-3).abs() < 1e-9 && (t[1] - 5.2e-3).abs() < 1e-9,
        "{t:?}"
    );
}

#[test]
fn an_event_at_or_after_the_end_is_rejected() {
    rejected(
        "at-end",
        &scenario("20ms", &[("5ms", "on"), ("20ms", "off")], PEAK),
        |t| line_of(t, "[[scenario.event]]", 1),
        "scenario[0].event[1].at",
        "at or after the end",
    );
    // Before the end in time, but after the last tick: 19.95 ms takes effect at 20 ms.
    rejected(
        "past-last-tick",
        &scenario("19.95ms", &[("5ms", "on"), ("19.91ms", "off")], PEAK),
        |t| line_of(t, "[[scenario.event]]", 1),
        "scenario[0].event[1].command",
        "past the end of the run",
    );
}

#[test]
fn a_command_that_changes_nothing_is_rejected() {
    rejected(
        "off-at-start",
        &scenario("20ms", &[("5ms", "off")], PEAK),
        |t| line_of(t, "[[scenario.event]]", 0),
        "scenario[0].event[0].command",
        "already off",
    );
    rejected(
        "on-twice",
        &scenario("20ms", &[("2ms", "on"), ("5ms", "on")], PEAK),
        |t| line_of(t, "[[scenario.event]]", 1),
        "scenario[0].event[1].command",
        "already on",
    );
}

#[test]
fn a_check_that_would_measure_nothing_is_rejected() {
    let sag_at_start = "[[scenario]]\nname = \"timing\"\nduration = \"20ms\"\n\
        [[scenario.event]]\nat = \"0s\"\nsupply = \"18V\"\n\
        [[scenario.event]]\nat = \"2ms\"\ncommand = \"on\"\n\
        [[scenario.check]]\nproperty = \"estimator-error\"\nmax = \"50mA\"\n";
    rejected(
        "estimator-after-fault",
        sag_at_start,
        |t| line_of(t, "[[scenario.check]]", 0),
        "scenario[0].check[0].property",
        "nothing would be measured",
    );
    rejected(
        "release-without-off",
        &scenario("20ms", &[("2ms", "on")], RELEASE),
        |t| line_of(t, "[[scenario.check]]", 0),
        "scenario[0].check[0].property",
        "nothing would be measured",
    );
}
