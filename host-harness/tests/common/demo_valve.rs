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
    let text = valve_with(scenarios);
    let (a, b) = text
        .split_once("[system.coil.armature]")
        .expect("the armature section");
    format!("{a}{}", &b[b.find("\n[").expect("a table after it")..])
}
