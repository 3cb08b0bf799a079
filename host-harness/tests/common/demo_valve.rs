//! The shipped demo valve file (`scenarios/valve.toml`, invented values, with its plunger in
//! `[system.coil.armature]`) with other scenarios: the shared set-up of the closed-loop
//! armature and detection tests.

// Each test file uses its own subset of these helpers.
#![allow(dead_code)]

/// The shipped valve file.
pub const VALVE: &str = include_str!("../../scenarios/valve.toml");

/// The valve file's system, controller and tolerances (everything before its scenarios),
/// followed by `scenarios`.
#[must_use]
pub fn valve_with(scenarios: &str) -> String {
    let (head, _) = VALVE
        .split_once("# -------")
        .expect("the scenario separator");
    assert!(
        head.contains("[system.coil.armature]"),
        "the shipped valve has its plunger"
    );
    format!("{head}\n{scenarios}")
}

/// The same without the armature section (a coil that does not move).
#[must_use]
pub fn valve_without_armature(scenarios: &str) -> String {
    without_armature(VALVE, scenarios)
}

/// The system, controller and tolerances of the shipped coil file `text` (everything before
/// its scenarios) without its `[system.coil.armature]` section, followed by `scenarios`.
#[must_use]
pub fn without_armature(text: &str, scenarios: &str) -> String {
    let (head, _) = text
        .split_once("# -------")
        .expect("the scenario separator");
    let (a, b) = head
        .split_once("[system.coil.armature]")
        .expect("the armature section");
    format!(
        "{a}{}\n{scenarios}",
        &b[b.find("\n[").expect("a table after it")..]
    )
}

/// One open-close cycle of the valve (on at 5 ms, off at 90 ms, 150 ms in all) followed by
/// `checks` (its `[[scenario.check]]` tables).
#[must_use]
pub fn open_close_cycle(checks: &str) -> String {
    format!(
        "\n[[scenario]]\nname = \"open and close\"\nduration = \"150ms\"\n\
         [[scenario.event]]\nat = \"5ms\"\ncommand = \"on\"\n\
         [[scenario.event]]\nat = \"90ms\"\ncommand = \"off\"\n{checks}"
    )
}
