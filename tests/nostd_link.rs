//! Proves that nothing in lenz's dependency graph pulls in std: builds and runs the
//! `#![no_std]` `#![no_main]` probe in `tests/nostd-probe` (its own panic handler; std anywhere in
//! the graph fails the link with a duplicate `panic_impl`), with no features and with `defmt` and
//! `serde`; and shows the check can fail by building the probe with std linked on purpose.

use std::path::{Path, PathBuf};
use std::process::Command;

fn probe_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests")
        .join("nostd-probe")
}

fn build(features: &str) -> std::process::Output {
    let target_dir = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("target")
        .join("nostd-probe");
    let mut cmd = Command::new(std::env::var("CARGO").unwrap_or_else(|_| "cargo".into()));
    cmd.arg("build")
        .arg("--release")
        .arg("--manifest-path")
        .arg(probe_dir().join("Cargo.toml"))
        .arg("--target-dir")
        .arg(&target_dir);
    if !features.is_empty() {
        cmd.arg("--features").arg(features);
    }
    cmd.output().expect("cargo runs")
}

fn probe_binary() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("target")
        .join("nostd-probe")
        .join("release")
        .join("lenz-nostd-probe")
}

#[test]
fn lenz_links_into_a_no_std_binary_and_runs() {
    for features in ["", "defmt,serde"] {
        let out = build(features);
        assert!(
            out.status.success(),
            "no_std probe with features '{features}' failed to build:\n{}",
            String::from_utf8_lossy(&out.stderr)
        );
        let status = Command::new(probe_binary()).status().expect("probe runs");
        assert_eq!(status.code(), Some(0), "probe computed wrong results");
    }
}

#[test]
fn the_check_fails_when_std_is_linked() {
    let out = build("leak-std");
    assert!(
        !out.status.success(),
        "linking std must break the no_std probe"
    );
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("panic_impl"), "unexpected failure:\n{err}");
}
