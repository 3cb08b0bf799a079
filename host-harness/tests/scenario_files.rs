//! Scenario files: every kind of error names the file, line and column, the key and the
//! problem. The bad files are the shipped valve file with one edit; the expected position is
//! found in the edited text itself.

use lenz_harness::scenario::{self, ScenarioError};

const VALVE: &str = include_str!("../scenarios/valve.toml");

/// The valve file with the first occurrence of `from` replaced by `to`.
fn edit(from: &str, to: &str) -> String {
    assert!(VALVE.contains(from), "the valve file has {from:?}");
    VALVE.replacen(from, to, 1)
}

/// Line (from 1) and column (from 1) of the first `needle` in `text`.
fn pos(text: &str, needle: &str) -> (usize, usize) {
    let at = text
        .find(needle)
        .unwrap_or_else(|| panic!("{needle:?} in the text"));
    let line = text[..at].matches('\n').count() + 1;
    let col = at - text[..at].rfind('\n').map_or(0, |p| p + 1) + 1;
    (line, col)
}

fn err(text: &str) -> ScenarioError {
    scenario::parse("bad.toml", text).expect_err("the file must be rejected")
}

#[test]
fn shipped_files_parse() {
    for (name, text) in [
        ("valve.toml", VALVE),
        ("relay.toml", include_str!("../scenarios/relay.toml")),
        ("boost.toml", include_str!("../scenarios/boost.toml")),
    ] {
        let f = scenario::parse(name, text).unwrap_or_else(|e| panic!("{e}"));
        assert!(!f.scenarios.is_empty());
    }
}

#[test]
fn unknown_key_is_an_error_at_its_position() {
    let text = edit(
        "inductance = \"120mH\"",
        "inductance = \"120mH\"\ninductanse = \"1\"",
    );
    let e = err(&text);
    let (line, col) = pos(&text, "inductanse =");
    assert_eq!((e.line, e.column), (line, col));
    assert_eq!(e.key, "system.coil.inductanse");
    assert!(e.problem.starts_with("unknown key `inductanse`"), "{e}");
    assert!(
        e.problem.contains("`inductance`"),
        "lists the accepted keys: {e}"
    );
    assert!(
        e.to_string().starts_with(&format!(
            "bad.toml:{line}:{col}: key `system.coil.inductanse`: unknown key"
        )),
        "{e}"
    );
}

#[test]
fn bad_si_value_names_the_unit() {
    let text = edit("inductance = \"120mH\"", "inductance = \"120xH\"");
    let e = err(&text);
    let (line, col) = pos(&text, "\"120xH\"");
    assert_eq!(
        e.to_string(),
        format!(
            "bad.toml:{line}:{col}: key `system.coil.inductance`: '120xH' has an unknown prefix or unit (expected a value in H)"
        )
    );
    // A number in the wrong unit is as bad as an unknown prefix.
    let text = edit("inductance = \"120mH\"", "inductance = \"120mA\"");
    assert!(err(&text).problem.contains("expected a value in H"));
    // A negative inductance.
    let text = edit("inductance = \"120mH\"", "inductance = \"-120mH\"");
    let e = err(&text);
    assert_eq!(e.problem, "'-120mH' must be positive");
    assert_eq!((e.line, e.column), pos(&text, "\"-120mH\""));
}

#[test]
fn missing_key_names_the_table_and_the_key() {
    let text = edit("resistance = \"32ohm\"", "");
    let e = err(&text);
    assert_eq!(e.key, "system.coil");
    assert_eq!(e.problem, "missing key `resistance`");
    assert_eq!(e.line, pos(&text, "[system.coil]").0);
}

#[test]
fn values_across_a_table_are_checked() {
    let text = edit("max = \"26.4V\"", "max = \"20V\"");
    let e = err(&text);
    assert_eq!(e.key, "system.supply");
    assert!(e.problem.contains("min ≤ nominal ≤ max"), "{e}");
    assert_eq!(e.line, pos(&text, "[system.supply]").0);
}

#[test]
fn limits_of_checks_take_the_property_unit() {
    // The first release-time limit, written in volts.
    let text = edit("max = \"35ms\"", "max = \"35mV\"");
    let e = err(&text);
    assert_eq!(e.key, "scenario[0].check[3].max");
    assert_eq!(
        e.problem,
        "'35mV' has an unknown prefix or unit (expected a value in s)"
    );
    let text = edit("property = \"release-time\"", "property = \"release-tme\"");
    let e = err(&text);
    assert_eq!(e.key, "scenario[0].check[3].property");
    assert!(
        e.problem.starts_with("unknown variant `release-tme`"),
        "{e}"
    );
    assert_eq!((e.line, e.column), pos(&text, "\"release-tme\""));
}

#[test]
fn events_are_checked_against_the_scenario() {
    let text = edit("at = \"85ms\"", "at = \"5s\"");
    let e = err(&text);
    assert_eq!(e.key, "scenario[0].event[1].at");
    assert_eq!(e.problem, "5 s is after the end of the scenario (0.22 s)");
    // Reported at the event's own table: the second [[scenario.event]] of the first scenario.
    let first = text.find("[[scenario.event]]").unwrap();
    let second = first + 1 + text[first + 1..].find("[[scenario.event]]").unwrap();
    assert_eq!(e.line, text[..second].matches('\n').count() + 1);

    let text = edit(
        "command = \"off\"",
        "command = \"off\"\nfault = \"open-coil\"",
    );
    let e = err(&text);
    assert_eq!(e.key, "scenario[0].event[1]");
    assert!(e.problem.contains("exactly one of the keys"), "{e}");
}

#[test]
fn syntax_errors_have_a_position() {
    let text = edit("tick = \"100us\"", "tick = \"100us");
    let e = err(&text);
    assert_eq!(e.line, pos(&text, "tick = ").0);
    assert!(e.key.is_empty());
    assert!(!e.problem.is_empty());
}

#[test]
fn unreadable_file() {
    let e = scenario::load(std::path::Path::new("no/such/file.toml")).unwrap_err();
    assert_eq!(e.line, 0);
    assert!(
        e.to_string()
            .starts_with("no/such/file.toml: cannot read the file"),
        "{e}"
    );
}

#[test]
fn values_beyond_the_f32_core_are_errors_at_their_position() {
    // Before: accepted, and the plans ran with an infinite value.
    let text = edit("thermal_resistance = 25", "thermal_resistance = 2e307");
    let e = err(&text);
    assert_eq!(e.key, "system.coil.thermal_resistance");
    assert!(e.problem.contains("'2e307' is too large"), "{e}");
    assert_eq!((e.line, e.column), pos(&text, "2e307"));
    let text = edit("switch_voltage = \"60V\"", "switch_voltage = 1e308");
    let e = err(&text);
    assert_eq!(e.key, "system.ratings.switch_voltage");
    assert!(e.problem.contains("too large"), "{e}");
    assert_eq!((e.line, e.column), pos(&text, "1e308"));
    let text = edit("release_time = \"35ms\"", "release_time = \"1e-40s\"");
    let e = err(&text);
    assert_eq!(e.key, "system.requirements.release_time");
    assert!(e.problem.contains("too small"), "{e}");
}

#[test]
fn an_events_supply_gets_the_scenarios_range_check() {
    let text = edit(
        "at = \"100ms\"\ncommand = \"off\"",
        "at = \"100ms\"\nsupply = \"200V\"",
    );
    let e = err(&text);
    assert!(
        e.key.starts_with("scenario[") && e.key.ends_with("].supply") && e.key.contains("event["),
        "{e}"
    );
    assert!(e.problem.contains("200.0 V is far outside"), "{e}");
    assert!(!e.problem.contains("inf"), "{e}");
}

#[test]
fn counts_beyond_16_bits_are_errors_not_clamped() {
    // Before: 70000 became 65535 without a word.
    let text = edit("persistence = 3", "persistence = 70000");
    let e = err(&text);
    assert_eq!(e.key, "controller.coil.monitor.persistence");
    assert!(e.problem.contains("70000 is out of range"), "{e}");
    assert_eq!((e.line, e.column), pos(&text, "70000"));
}
