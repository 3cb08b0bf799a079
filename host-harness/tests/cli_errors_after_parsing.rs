//! Problems found after a file parsed (a plan or the plant rejects a value) are reported like
//! parse errors: `FILE:LINE:COL: key `KEY`: problem` at the value the user wrote, never with
//! an internal parameter name, from `lenz plan`, `lenz sim` and `lenz sweep` alike (exit 2, one
//! line on stderr, nothing on stdout). The bad files are the shipped valve file with one edit.

use std::path::{Path, PathBuf};
use std::process::Command;

const VALVE: &str = include_str!("../scenarios/valve.toml");
const INTERNAL: [&str; 6] = [
    "temp_c",
    "current_a",
    "offset_v",
    "supply_v",
    "r20_ohm",
    "resistance_ohm",
];

/// The valve file with `from` replaced by `to`, written to a fresh folder; with the edited
/// text.
fn bad_file(dir: &str, from: &str, to: &str) -> (PathBuf, String) {
    assert!(VALVE.contains(from), "the valve file has {from:?}");
    let text = VALVE.replacen(from, to, 1);
    let d = Path::new(env!("CARGO_TARGET_TMPDIR")).join(dir);
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).expect("temp dir");
    let p = d.join("valve.toml");
    std::fs::write(&p, &text).expect("write");
    (p, text)
}

/// `LINE:COL` of the first `needle` in `text`.
fn pos(text: &str, needle: &str) -> String {
    let at = text.find(needle).expect("needle");
    let line = text[..at].matches('\n').count() + 1;
    let col = at - text[..at].rfind('\n').map_or(0, |p| p + 1) + 1;
    format!("{line}:{col}")
}

/// Runs `lenz` with `args`; asserts exit 2, one line on stderr, nothing on stdout, and returns
/// the line.
fn fails(args: &[&str]) -> String {
    let out = Command::new(env!("CARGO_BIN_EXE_lenz"))
        .args(args)
        .output()
        .expect("lenz runs");
    assert_eq!(out.status.code(), Some(2), "{args:?}");
    assert!(out.stdout.is_empty(), "{args:?}: stdout not empty");
    let err = String::from_utf8(out.stderr).expect("utf-8");
    assert_eq!(err.lines().count(), 1, "{args:?}: {err}");
    for name in INTERNAL {
        assert!(!err.contains(name), "{args:?}: {err} names {name}");
    }
    err
}

#[test]
fn a_resistance_the_plant_rejects_is_reported_at_its_value() {
    let (p, text) = bad_file(
        "errors_after_parsing_resistance",
        "resistance = \"32ohm\"",
        "resistance = \"1n\"",
    );
    let f = p.to_str().expect("utf-8 path");
    let at = format!(
        "{f}:{}: key `system.coil.resistance`: ",
        pos(&text, "\"1n\"")
    );
    for args in [
        vec!["sim", f],
        vec!["plan", f],
        vec!["sweep", f, "--runs", "2"],
    ] {
        let err = fails(&args);
        assert!(err.starts_with(&format!("lenz: {at}")), "{args:?}: {err}");
        // The sweep reports the drawn value (within the file's tolerance of 1 nΩ).
        assert!(
            err.contains(" Ω is out of range, allowed 1e-6 Ω ..= 1e6 Ω"),
            "{err}"
        );
    }
}

#[test]
fn a_scenario_temperature_the_plant_rejects_names_the_scenario_key() {
    let (p, text) = bad_file(
        "errors_after_parsing_temperature",
        "temperature = -20",
        "temperature = 450",
    );
    let f = p.to_str().expect("utf-8 path");
    let err = fails(&["sim", f]);
    let at = format!("{f}:{}: ", pos(&text, "450"));
    assert!(err.contains(&at), "{err}");
    assert!(err.contains("key `scenario[1].temperature`"), "{err}");
    assert!(err.contains("450 °C is out of range"), "{err}");
}

#[test]
fn a_breakdown_below_the_supply_is_reported_at_the_switch() {
    let (p, text) = bad_file(
        "errors_after_parsing_breakdown",
        "breakdown = \"66V\"",
        "breakdown = \"20V\"",
    );
    let f = p.to_str().expect("utf-8 path");
    let err = fails(&["sim", f]);
    let at = format!(
        "{f}:{}: key `system.switch.breakdown`",
        pos(&text, "\"20V\"")
    );
    assert!(err.contains(&at), "{err}");
}
